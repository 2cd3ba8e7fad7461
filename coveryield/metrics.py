"""Goodness-of-fit scores of a simulated flow series against an observed one.

Pure functions: two equal-length arrays in (simulated first, observed second, as in most
hydrological libraries), one number out. Missing days are the caller's business: pass only the
days where both series have a value (:func:`paired` drops the others).

========================= ===================================================== ==============
score                     definition                                            perfect
========================= ===================================================== ==============
:func:`nse`               1 − Σ(s − o)² / Σ(o − ō)²  (Nash & Sutcliffe 1970)    1
:func:`kge_2009`          1 − √[(r − 1)² + (α − 1)² + (β − 1)²], α = σs/σo      1
:func:`kge_2012`          as above with γ = CVs/CVo instead of α (KGE′)         1
:func:`bias_pct`          100 (Σs − Σo) / Σo                                    0
:func:`log_nse`           NSE of ln(q + ε), ε = ō/100                           1
========================= ===================================================== ==============

References
----------
.. [1] Nash, J. E. & Sutcliffe, J. V. (1970). River flow forecasting through conceptual models,
   part I: a discussion of principles. J. Hydrol., 10(3), 282-290, eq. 1 (the efficiency).
.. [2] Gupta, H. V., Kling, H., Yilmaz, K. K. & Martinez, G. F. (2009). Decomposition of the mean
   squared error and NSE performance criteria. J. Hydrol., 377, 80-91, eqs. 9 and 10.
.. [3] Kling, H., Fuchs, M. & Paulin, M. (2012). Runoff conditions in the upper Danube basin
   under an ensemble of climate change scenarios. J. Hydrol., 424-425, 264-277, eqs. 3-5.
.. [4] Pushpalatha, R., Perrin, C., Le Moine, N. & Andréassian, V. (2012). A review of efficiency
   criteria suitable for evaluating low-flow simulations. J. Hydrol., 420-421, 171-182 (the
   offset of one hundredth of the mean flow before taking logarithms; from memory).
"""

from __future__ import annotations

import numpy as np

__all__ = ["nse", "kge_2009", "kge_2012", "kge_parts", "bias_pct", "log_nse", "paired",
           "fit_scores", "SCORE_NAMES"]

#: Keys of :func:`fit_scores`, in the order reports show them.
SCORE_NAMES = ("kge", "kge_2009", "nse", "log_nse", "bias_pct", "r", "beta", "gamma", "n_days")
#: Offset of the log-flow NSE as a share of the mean observed flow [-] (Pushpalatha et al. 2012,
#: from memory).
LOG_OFFSET_SHARE = 0.01


def _pair(simulated, observed) -> tuple[np.ndarray, np.ndarray]:
    """Both series as float arrays of one length with at least two values and finite entries."""
    s = np.asarray(simulated, dtype=np.float64).ravel()
    o = np.asarray(observed, dtype=np.float64).ravel()
    if s.shape != o.shape:
        raise ValueError(f"simulated has {s.size} values, observed {o.size}: expected the same")
    if s.size < 2:
        raise ValueError(f"{s.size} paired values: expected at least 2")
    if not (np.isfinite(s).all() and np.isfinite(o).all()):
        raise ValueError("expected finite values only (drop missing days with `paired`)")
    return s, o


def paired(simulated, observed) -> tuple[np.ndarray, np.ndarray]:
    """Keep the days on which both series have a finite value.

    Parameters
    ----------
    simulated, observed : array_like
        Daily series of one length; NaN marks a missing day [any unit, the same for both].

    Returns
    -------
    simulated, observed : numpy.ndarray
        The values of the days both series have [unit of the input].
    """
    s = np.asarray(simulated, dtype=np.float64).ravel()
    o = np.asarray(observed, dtype=np.float64).ravel()
    if s.shape != o.shape:
        raise ValueError(f"simulated has {s.size} values, observed {o.size}: expected the same")
    keep = np.isfinite(s) & np.isfinite(o)
    return s[keep], o[keep]


def nse(simulated, observed) -> float:
    """Nash–Sutcliffe efficiency.

    Parameters
    ----------
    simulated, observed : array_like
        Paired values, no missing days [any unit, the same for both].

    Returns
    -------
    float
        NSE [-]: 1 is a perfect fit, 0 is no better than the observed mean, −inf < NSE ≤ 1.

    References
    ----------
    Nash & Sutcliffe (1970), eq. 1.
    """
    s, o = _pair(simulated, observed)
    spread = np.sum((o - o.mean()) ** 2)
    if spread == 0.0:
        raise ValueError("observed values are all equal: NSE is undefined")
    return float(1.0 - np.sum((s - o) ** 2) / spread)  # Nash & Sutcliffe (1970) eq. 1


def kge_parts(simulated, observed) -> tuple[float, float, float, float]:
    """Compute the three parts of the Kling–Gupta efficiencies.

    Parameters
    ----------
    simulated, observed : array_like
        Paired values, no missing days [any unit, the same for both].

    Returns
    -------
    r, alpha, beta, gamma : float
        Pearson correlation; ratio of standard deviations σs/σo; ratio of means μs/μo; ratio of
        coefficients of variation (σs/μs)/(σo/μo) [-]. Population standard deviations (the
        ratios do not depend on the choice).

    References
    ----------
    Gupta et al. (2009), eqs. 9-10; Kling et al. (2012), eqs. 4-5.
    """
    s, o = _pair(simulated, observed)
    mean_s, mean_o = s.mean(), o.mean()
    sd_s, sd_o = s.std(), o.std()
    if sd_o == 0.0 or mean_o == 0.0:
        raise ValueError("observed values are all equal or average 0: KGE is undefined")
    r = 0.0 if sd_s == 0.0 else float(np.corrcoef(s, o)[0, 1])
    alpha = sd_s / sd_o  # Gupta et al. (2009) eq. 9
    beta = mean_s / mean_o  # Gupta et al. (2009) eq. 10
    gamma = (sd_s / mean_s) / (sd_o / mean_o) if mean_s != 0.0 else np.inf  # Kling (2012) eq. 5
    return r, float(alpha), float(beta), float(gamma)


def kge_2009(simulated, observed) -> float:
    """Kling–Gupta efficiency in its first form (variability as the ratio of deviations).

    Parameters
    ----------
    simulated, observed : array_like
        Paired values, no missing days [any unit, the same for both].

    Returns
    -------
    float
        KGE [-], 1 for a perfect fit; the observed mean as a simulation scores 1 − √2 ≈ −0.41.

    References
    ----------
    Gupta et al. (2009), eq. 9.
    """
    r, alpha, beta, _ = kge_parts(simulated, observed)
    return float(1.0 - np.sqrt((r - 1) ** 2 + (alpha - 1) ** 2 + (beta - 1) ** 2))  # eq. 9


def kge_2012(simulated, observed) -> float:
    """Kling–Gupta efficiency KGE′ (variability as the ratio of coefficients of variation).

    The form used to calibrate: bias and variability ratios do not move together when the
    simulated flow is scaled.

    Parameters
    ----------
    simulated, observed : array_like
        Paired values, no missing days [any unit, the same for both].

    Returns
    -------
    float
        KGE′ [-], 1 for a perfect fit.

    References
    ----------
    Kling et al. (2012), eq. 3.
    """
    r, _, beta, gamma = kge_parts(simulated, observed)
    return float(1.0 - np.sqrt((r - 1) ** 2 + (gamma - 1) ** 2 + (beta - 1) ** 2))  # eq. 3


def bias_pct(simulated, observed) -> float:
    """Volume bias of the simulation.

    Parameters
    ----------
    simulated, observed : array_like
        Paired values, no missing days [any unit, the same for both].

    Returns
    -------
    float
        100 (Σs − Σo)/Σo [%]: positive when the simulation carries too much water.

    Notes
    -----
    Common practice, no source.
    """
    s, o = _pair(simulated, observed)
    total = o.sum()
    if total == 0.0:
        raise ValueError("observed values sum to 0: the bias in % is undefined")
    return float(100.0 * (s.sum() - total) / total)


def log_nse(simulated, observed, offset_share: float = LOG_OFFSET_SHARE) -> float:
    """Nash–Sutcliffe efficiency of the logarithms of the flows (weights low flows).

    Parameters
    ----------
    simulated, observed : array_like
        Paired flows, ≥ 0, no missing days [any unit, the same for both].
    offset_share : float, optional
        ε as a share of the mean observed flow, added before taking logarithms so that zero
        flows are allowed [-].

    Returns
    -------
    float
        NSE of ln(s + ε) against ln(o + ε) [-].

    References
    ----------
    Nash & Sutcliffe (1970), eq. 1; the offset ε = ō/100 after Pushpalatha et al. (2012)
    (from memory).
    """
    s, o = _pair(simulated, observed)
    if (s < 0).any() or (o < 0).any():
        raise ValueError("expected flows >= 0 for the log-flow NSE")
    epsilon = offset_share * o.mean()
    if epsilon <= 0.0:
        raise ValueError("observed flows are all 0: the log-flow NSE is undefined")
    return nse(np.log(s + epsilon), np.log(o + epsilon))


def fit_scores(simulated, observed) -> dict[str, float]:
    """Every score of one period, for reports (missing days dropped first).

    Parameters
    ----------
    simulated, observed : array_like
        Daily flows of one period; NaN marks a missing day [m3 s-1, or any unit for both].

    Returns
    -------
    dict
        ``kge`` (KGE′, Kling et al. 2012), ``kge_2009`` (Gupta et al. 2009), ``nse``,
        ``log_nse``, ``bias_pct`` [%], the parts ``r``, ``beta``, ``gamma`` [-] and ``n_days``,
        the number of days scored.
    """
    s, o = paired(simulated, observed)
    r, _, beta, gamma = kge_parts(s, o)
    return {
        "kge": kge_2012(s, o),
        "kge_2009": kge_2009(s, o),
        "nse": nse(s, o),
        "log_nse": log_nse(s, o),
        "bias_pct": bias_pct(s, o),
        "r": r,
        "beta": beta,
        "gamma": gamma,
        "n_days": int(s.size),
    }
