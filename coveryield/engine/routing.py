"""Routing of daily yield through a linear store, and unit conversion to discharge."""

from __future__ import annotations

import math

import numpy as np
from numba import njit

_SECONDS_PER_DAY = 86400.0


@njit(cache=True)
def _route_day(store, inflow, recession_days, decay):
    """Advance a linear store by one day; return (outflow, store at the end) [mm].

    Exact solution of dS/dt = I − max(S, 0)/k with I constant over the day: a store below zero
    (a deficit left by negative inflow) releases nothing until it refills. ``decay`` is
    exp(−1/k), computed once per series.
    """
    k = recession_days
    if store >= 0.0:
        end = inflow * k + (store - inflow * k) * decay  # S(1), equilibrium I·k
        if end >= 0.0:  # always so for I >= 0; for I < 0 the store lasts the whole day
            return store + inflow - end, end
        # losing water (I < 0), the store empties within the day
        empty_at = k * math.log1p(store / (-inflow * k))  # t where S(t) = 0
        return store + inflow * empty_at, inflow * (1.0 - empty_at)
    if inflow <= 0.0 or store + inflow <= 0.0:  # deficit not refilled today: no outflow
        return 0.0, store + inflow
    refilled_at = -store / inflow  # t where the deficit is refilled
    rest = 1.0 - refilled_at
    end = inflow * k * (1.0 - math.exp(-rest / k))  # filling from 0 for the rest of the day
    return inflow * rest - end, end


@njit(cache=True)
def _route(inflow, recession_days, initial_store, outflow, store, keep_store):
    """Route every column of ``inflow`` (n_days, n_series); fill ``outflow`` (and ``store``)."""
    n_days, n_series = inflow.shape
    for j in range(n_series):
        s = initial_store[j]
        k = recession_days[j]
        decay = math.exp(-1.0 / k)
        gain = k * (1.0 - decay)
        for d in range(n_days):
            i = inflow[d, j]
            end = s * decay + i * gain  # S(1) = I·k + (S0 − I·k)·e^(−1/k), rearranged
            if s >= 0.0 and end >= 0.0:  # the usual day: the store stays positive
                q = s + i - end
                s = end
            else:
                q, s = _route_day(s, i, k, decay)
            outflow[d, j] = q
            if keep_store:
                store[d, j] = s


@njit(cache=True)
def route_series(inflow_mm, recession_days):
    """Route one daily series, starting from the steady state of its mean inflow.

    The lean form of :func:`linear_reservoir` for one finite series (no checks, no store
    output), used on every share change.

    Parameters
    ----------
    inflow_mm : numpy.ndarray, shape (n_days,)
        Daily inflow, finite, may be negative [mm d⁻¹].
    recession_days : float
        Recession constant k, > 0 [d].

    Returns
    -------
    numpy.ndarray, shape (n_days,)
        Outflow of each day, ≥ 0 [mm d⁻¹].
    """
    columns = inflow_mm.reshape(inflow_mm.shape[0], 1)
    k = np.full(1, recession_days)
    start = k * max(inflow_mm.mean(), 0.0) if inflow_mm.shape[0] else np.zeros(1)
    outflow = np.empty_like(columns)
    _route(columns, k, start, outflow, np.empty((0, 1)), False)
    return outflow[:, 0]


@njit(cache=True)
def mix_and_route(daily_yield, daily_slow, weights, quick_days, slow_days, month_of_day):
    """Mix tile series by weight and route them through a fast and a slow store, in one pass.

    Parameters
    ----------
    daily_yield, daily_slow : numpy.ndarray, shape (n_days, n_tiles)
        Each tile's daily yield and the part of it that feeds the groundwater store (drainage;
        for open water its whole balance, rain − evaporation), fastest in Fortran
        (column-major) order [mm d-1]. The rest, yield − slow, is quickflow.
    weights : numpy.ndarray, shape (n_tiles,)
        Area weight of each tile [-]; tiles of weight 0 are skipped.
    quick_days, slow_days : float
        Recession constants of the fast store (quickflow) and of the groundwater store
        (drainage and the open-water balance), > 0 [d].
    month_of_day : numpy.ndarray of int64, shape (n_days,)
        Calendar month 1-12 of each day to average, 0 for days left out [-].

    Returns
    -------
    yield_mm : numpy.ndarray, shape (n_days,)
        Mixed daily yield [mm d-1].
    routed_mm : numpy.ndarray, shape (n_days,)
        Outflow of the two stores together [mm d-1].
    monthly_routed_mm : numpy.ndarray, shape (12,)
        Mean routed outflow per calendar month [mm d-1]; NaN for a month without days.

    Notes
    -----
    The same arithmetic as :func:`weighted_column_sum` and :func:`route_series` (each store
    starts at the steady state of its mean inflow), fused so that a share change touches each
    tile series once.
    """
    n_days = daily_yield.shape[0]
    mixed = weighted_column_sum(daily_yield, weights)
    slow = weighted_column_sum(daily_slow, weights)
    quick = mixed - slow
    routed = np.empty(n_days)
    sq = quick_days * max(quick.mean(), 0.0) if n_days else 0.0  # steady-state starts
    ss = slow_days * max(slow.mean(), 0.0) if n_days else 0.0
    decay_q, decay_s = math.exp(-1.0 / quick_days), math.exp(-1.0 / slow_days)
    gain_q, gain_s = quick_days * (1.0 - decay_q), slow_days * (1.0 - decay_s)
    sums = np.zeros(13)
    counts = np.zeros(13)
    run_month = month_of_day[0] if n_days else 0
    run_sum = 0.0  # sum over the current run of days of one month, kept in a register
    run_days = 0
    for d in range(n_days):  # the two stores side by side: independent chains run together
        iq = quick[d]
        is_ = slow[d]
        end_q = sq * decay_q + iq * gain_q
        end_s = ss * decay_s + is_ * gain_s
        if sq >= 0.0 and end_q >= 0.0:
            out_q = sq + iq - end_q
            sq = end_q
        else:
            out_q, sq = _route_day(sq, iq, quick_days, decay_q)
        if ss >= 0.0 and end_s >= 0.0:
            out_s = ss + is_ - end_s
            ss = end_s
        else:
            out_s, ss = _route_day(ss, is_, slow_days, decay_s)
        routed[d] = out_q + out_s
        m = month_of_day[d]
        if m != run_month:
            sums[run_month] += run_sum
            counts[run_month] += run_days
            run_month, run_sum, run_days = m, 0.0, 0
        run_sum += out_q + out_s
        run_days += 1
    sums[run_month] += run_sum
    counts[run_month] += run_days
    monthly = np.empty(12)
    for m in range(12):
        monthly[m] = sums[m + 1] / counts[m + 1] if counts[m + 1] > 0 else np.nan
    return mixed, routed, monthly


@njit(cache=True)
def weighted_column_sum(values, weights):
    """Weighted sum of the columns of a 2-D array, skipping zero weights.

    Parameters
    ----------
    values : numpy.ndarray, shape (n_rows, n_columns)
        Values, fastest in Fortran (column-major) order [any unit].
    weights : numpy.ndarray, shape (n_columns,)
        Weight of each column [-].

    Returns
    -------
    numpy.ndarray, shape (n_rows,)
        ``values @ weights`` [unit of ``values``].
    """
    out = np.zeros(values.shape[0])
    for j in range(values.shape[1]):
        w = weights[j]
        if w != 0.0:
            column = values[:, j]
            for d in range(values.shape[0]):
                out[d] += w * column[d]
    return out


def linear_reservoir(inflow_mm, recession_days, initial_store_mm=None, *, return_store=False):
    """Route a daily inflow series through a linear store.

    Parameters
    ----------
    inflow_mm : array_like, shape (n_days,) or (n_days, n_series)
        Daily inflow, may be negative (e.g. open-water losses) [mm d⁻¹].
    recession_days : float or array_like, shape (n_series,)
        Recession constant k of the store, > 0 [d].
    initial_store_mm : float or array_like, optional
        Store at the start [mm]. Default: the steady state of the mean inflow,
        k·max(mean inflow, 0), so that a long record starts without a fill-up transient.
    return_store : bool, optional
        Also return the store at the end of each day.

    Returns
    -------
    outflow_mm : ndarray, same shape as ``inflow_mm``
        Outflow of each day, ≥ 0 [mm d⁻¹].
    store_mm : ndarray, same shape as ``inflow_mm``
        Store at the end of each day [mm]; only with ``return_store``.

    Notes
    -----
    The store obeys dS/dt = I − Q with Q = max(S, 0)/k and I constant over each day, solved
    exactly: for S ≥ 0 and I ≥ 0, S(1) = I·k + (S0 − I·k)·e^(−1/k) and Q = S0 + I − S(1). A
    negative inflow may empty the store within the day, after which it goes negative (a deficit);
    a negative store releases nothing (outflow 0) until inflow refills it, then drains again.
    Mass is conserved exactly: Σ outflow + final store = Σ inflow + initial store.

    References
    ----------
    Zoch, R. T. (1934). On the relation between rainfall and stream flow. Mon. Weather Rev.,
    62, 315–322 (the linear store; citation from memory). The piecewise exact solution and the
    deficit rule are our own; common practice, no source.
    """
    inflow = np.asarray(inflow_mm, dtype=np.float64)
    one_series = inflow.ndim == 1
    if inflow.ndim not in (1, 2):
        raise ValueError(f"inflow_mm: shape {inflow.shape}, expected (n_days,) or (n_days, n)")
    columns = np.ascontiguousarray(inflow.reshape(inflow.shape[0], -1))
    n_series = columns.shape[1]
    k = np.broadcast_to(np.asarray(recession_days, dtype=np.float64), (n_series,)).copy()
    if not (np.isfinite(k).all() and (k > 0).all()):
        raise ValueError(f"recession_days = {recession_days!r}: expected a finite value > 0 d")
    if not np.isfinite(columns.sum()):  # a finite sum means every value is finite
        raise ValueError("inflow_mm: expected finite values (found NaN or infinity)")
    if initial_store_mm is None:
        mean = columns.mean(axis=0) if columns.shape[0] else np.zeros(n_series)
        start = k * np.maximum(mean, 0.0)
    else:
        start = np.broadcast_to(np.asarray(initial_store_mm, dtype=np.float64), (n_series,))
        start = start.copy()
    outflow = np.empty_like(columns)
    store = np.empty_like(columns) if return_store else np.empty((0, n_series))
    _route(columns, k, start, outflow, store, return_store)
    if one_series:
        outflow, store = outflow[:, 0], store[:, 0]
    return (outflow, store) if return_store else outflow


def mm_per_day_to_m3_per_s(q_mm, area_km2):
    """Convert a depth per day over an area to a discharge.

    Parameters
    ----------
    q_mm : array_like
        Depth per day over the area [mm d⁻¹].
    area_km2 : float or array_like
        Area [km²].

    Returns
    -------
    ndarray or float
        Discharge [m³ s⁻¹].

    Notes
    -----
    Q = q·10⁻³ m × A·10⁶ m² / 86 400 s = q·A / 86.4.
    """
    return np.asarray(q_mm, dtype=np.float64) * (np.asarray(area_km2) * (1000.0 / _SECONDS_PER_DAY))
