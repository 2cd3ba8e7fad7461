"""Low-flow statistics of a daily streamflow series: 7-day minimum, baseflow index, days below.

Pure functions on numpy arrays, used by :mod:`coveryield.comparison` for every plan. Flows are
m3 s-1; a year is a calendar year, and only complete years count (the caller passes a year code
per day, -1 for days outside complete years).

References
----------
.. [1] Lyne, V. & Hollick, M. (1979). Stochastic time-variable rainfall-runoff modelling.
   Institute of Engineers Australia National Conference, Perth, 89-93 (the digital filter).
.. [2] Nathan, R. J. & McMahon, T. A. (1990). Evaluation of automated techniques for base flow
   and recession analyses. Water Resour. Res., 26(7), 1465-1473 (alpha = 0.925, three passes;
   from memory).
.. [3] Smakhtin, V. U. (2001). Low flow hydrology: a review. J. Hydrol., 240, 147-186 (the
   annual 7-day minimum and its mean as low-flow indices; from memory).
"""

from __future__ import annotations

import functools
import sys

import numpy as np

#: Filter parameter of the Lyne & Hollick filter (Nathan & McMahon 1990; from memory) [-].
LYNE_HOLLICK_ALPHA = 0.925
#: Passes of the filter: forward, backward, forward (Nathan & McMahon 1990; from memory) [-].
LYNE_HOLLICK_PASSES = 3
#: Length of the moving window of the annual low-flow index [d].
LOW_FLOW_WINDOW_DAYS = 7


#: Records at least this long are filtered by the compiled pass even when the compiler runtime is
#: not loaded yet [days]; shorter ones (and any record once numba is loaded) choose as
#: :func:`_filter_pass` says. Both give the same numbers.
COMPILED_MIN_DAYS = 200_000


def _lyne_hollick_pass_python(flow, alpha, reverse):
    """One pass of the filter over ``flow``; returns the baseflow (0 ≤ baseflow ≤ flow)."""
    n = flow.shape[0]
    base = np.empty(n)
    quick = 0.0
    previous = 0.0
    for step in range(n):
        i = n - 1 - step if reverse else step
        q = flow[i]
        if step == 0:
            quick = 0.0
        else:
            quick = alpha * quick + 0.5 * (1.0 + alpha) * (q - previous)  # Lyne & Hollick
        quick = min(max(quick, 0.0), q)  # 0 ≤ baseflow ≤ flow
        base[i] = q - quick
        previous = q
    return base


@functools.lru_cache(maxsize=1)
def _compiled_pass():
    """The same pass compiled (numba, cached on disk)."""
    from numba import njit

    return njit(cache=True)(_lyne_hollick_pass_python)


def _filter_pass(n_days):
    """The compiled pass once numba is loaded (or for very long records), else plain Python.

    A comparison read from the tile cache need not load the compiler runtime (~0.25 s) for
    a few short filter passes (~10 ms each in Python).
    """
    if n_days >= COMPILED_MIN_DAYS or "numba" in sys.modules:
        return _compiled_pass()
    return _lyne_hollick_pass_python


def lyne_hollick_baseflow(flow_m3s, alpha=LYNE_HOLLICK_ALPHA, passes=LYNE_HOLLICK_PASSES):
    """Baseflow separated from a daily streamflow series by the Lyne & Hollick filter.

    Parameters
    ----------
    flow_m3s : array_like, shape (n_days,)
        Daily streamflow, ≥ 0 [m3 s-1].
    alpha : float, optional
        Filter parameter, 0 < alpha < 1 [-].
    passes : int, optional
        Number of passes, alternately forward and backward [-].

    Returns
    -------
    numpy.ndarray
        Baseflow of each day, 0 ≤ baseflow ≤ flow [m3 s-1].

    Notes
    -----
    Quickflow f_t = alpha·f_(t−1) + (1 + alpha)/2·(q_t − q_(t−1)), kept within 0..q_t; baseflow is
    q − f. Each pass filters the previous pass's baseflow; the first quickflow of a pass is 0.

    References
    ----------
    Lyne & Hollick (1979); Nathan & McMahon (1990).
    """
    base = np.ascontiguousarray(flow_m3s, dtype=np.float64)
    one_pass = _filter_pass(base.shape[0])
    for k in range(passes):
        base = one_pass(base, float(alpha), k % 2 == 1)
    return base


def baseflow_index(flow_m3s, keep=None, alpha=LYNE_HOLLICK_ALPHA, passes=LYNE_HOLLICK_PASSES):
    """Baseflow index: the share of streamflow that the filter calls baseflow.

    Parameters
    ----------
    flow_m3s : array_like, shape (n_days,)
        Daily streamflow [m3 s-1].
    keep : array_like of bool, optional
        Days to count (e.g. complete years); the filter runs over the whole series.
    alpha, passes
        As for :func:`lyne_hollick_baseflow`.

    Returns
    -------
    float
        BFI = Σ baseflow / Σ flow over the kept days [-]; NaN without flow.
    """
    flow = np.asarray(flow_m3s, dtype=float)
    base = lyne_hollick_baseflow(flow, alpha, passes)
    mask = np.ones(flow.shape, bool) if keep is None else np.asarray(keep, bool)
    total = flow[mask].sum()
    return float(base[mask].sum() / total) if total > 0 else float("nan")


def annual_minimum_moving_mean(flow_m3s, year_code, window_days=LOW_FLOW_WINDOW_DAYS):
    """Lowest mean flow over ``window_days`` consecutive days in each year.

    Parameters
    ----------
    flow_m3s : array_like, shape (n_days,)
        Daily streamflow [m3 s-1].
    year_code : array_like of int, shape (n_days,)
        0, 1, 2, … for the days of each counted year (non-decreasing), −1 for days not counted.
    window_days : int, optional
        Window length [d].

    Returns
    -------
    numpy.ndarray, shape (n_years,)
        Annual minimum of the moving mean [m3 s-1]; a window belongs to the year of its last
        day and may start in the days before it.
    """
    flow = np.asarray(flow_m3s, dtype=float)
    codes = np.asarray(year_code)
    n_years = int(codes.max()) + 1 if codes.size else 0
    cumulative = np.concatenate([[0.0], np.cumsum(flow)])
    ends = np.arange(window_days, flow.size + 1)  # window of days end-window .. end-1
    means = (cumulative[ends] - cumulative[ends - window_days]) / window_days
    owner = codes[ends - 1]
    out = np.full(n_years, np.nan)
    counted = owner >= 0
    np.fmin.at(out, owner[counted], means[counted])
    return out


def days_below_per_year(flow_m3s, threshold_m3s, keep):
    """Mean number of days per year with flow below a threshold.

    Parameters
    ----------
    flow_m3s : array_like, shape (n_days,)
        Daily streamflow [m3 s-1].
    threshold_m3s : float
        Threshold flow [m3 s-1].
    keep : array_like of bool, shape (n_days,)
        Days of the counted (complete) years.

    Returns
    -------
    float
        Days below per year [d yr-1] (days kept / 365.25 years).
    """
    flow = np.asarray(flow_m3s, dtype=float)
    mask = np.asarray(keep, bool)
    n_years = mask.sum() / 365.25
    return float((flow[mask] < threshold_m3s).sum() / n_years) if n_years else float("nan")
