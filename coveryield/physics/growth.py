"""Growth of a planted stand over the years: the Chapman–Richards curve.

The Chapman–Richards function is the usual empirical shape of tree and stand growth (height,
basal area, canopy): it starts at zero, rises (after a slow start when the exponent p > 1) and
levels off at the asymptote. Written as a fraction of the asymptote,

    g(a) = (1 − exp(−k·a))^p                         (Richards 1959, eq. 1 with A = 1)

with the age a [yr], the rate k [yr⁻¹] and the shape exponent p [-]. p = 1 is the monomolecular
curve (fastest at the start, no lag); larger p delays the rise and makes the curve S-shaped.

Instead of k a user gives the maturity age M: the age at which the stand reaches a stated
fraction q of its mature state (:data:`MATURITY_FRACTION`, 95 %), which fixes
k = −ln(1 − q^(1/p)) / M.

References
----------
.. [1] Richards, F. J. (1959). A flexible growth function for empirical use. Journal of
   Experimental Botany, 10(2), 290–300. (from memory)
.. [2] Chapman, D. G. (1961). Statistical problems in dynamics of exploited fisheries
   populations. Proc. Fourth Berkeley Symposium on Mathematical Statistics and Probability, 4,
   153–168. (from memory)
"""

from __future__ import annotations

import numpy as np

#: Fraction of the mature state reached at the maturity age [-] (our convention: 95 %, the
#: usual way of putting a finite age on an approach that never quite ends).
MATURITY_FRACTION = 0.95


def chapman_richards_rate(maturity_years, shape, fraction=MATURITY_FRACTION):
    """Rate constant k that makes the Chapman–Richards curve reach ``fraction`` at the maturity age.

    Parameters
    ----------
    maturity_years : float or array_like
        Age at which the curve reaches ``fraction`` of its asymptote, > 0 [yr].
    shape : float or array_like
        Shape exponent p, > 0 [-].
    fraction : float, optional
        Fraction of the asymptote reached at ``maturity_years``, 0 < q < 1 [-]; default 0.95.

    Returns
    -------
    float or numpy.ndarray
        Rate constant k [yr⁻¹].

    Notes
    -----
    Solves (1 − exp(−k·M))^p = q for k: k = −ln(1 − q^(1/p)) / M.

    References
    ----------
    Richards (1959), eq. 1 (from memory).
    """
    m = np.asarray(maturity_years, dtype=float)
    p = np.asarray(shape, dtype=float)
    rate = -np.log1p(-(fraction ** (1.0 / p))) / m  # (1 − e^(−kM))^p = q solved for k
    return float(rate) if rate.ndim == 0 else rate


def chapman_richards(age_years, rate_per_year, shape):
    """Fraction of the mature state reached at an age, by the Chapman–Richards curve.

    Parameters
    ----------
    age_years : float or array_like
        Age since planting, ≥ 0 (negative ages count as 0) [yr].
    rate_per_year : float or array_like
        Rate constant k, > 0 [yr⁻¹] (see :func:`chapman_richards_rate`).
    shape : float or array_like
        Shape exponent p, > 0 [-].

    Returns
    -------
    float or numpy.ndarray
        g = (1 − exp(−k·a))^p, from 0 at planting toward 1 [-].

    References
    ----------
    Richards (1959), eq. 1 with the asymptote set to 1; Chapman (1961) (both from memory).
    """
    age = np.maximum(np.asarray(age_years, dtype=float), 0.0)
    g = (-np.expm1(-np.asarray(rate_per_year, dtype=float) * age)) ** np.asarray(shape, float)
    return float(g) if np.ndim(g) == 0 else g  # g = (1 − e^(−k·a))^p, Richards (1959) eq. 1
