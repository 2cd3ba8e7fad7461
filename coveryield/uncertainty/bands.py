"""Bands of ensemble figures: which percentiles, and how they are taken (no engine import).

Kept apart from :mod:`coveryield.uncertainty.ensemble` so that a comparison without an ensemble
does not load the compiled engine just to know what a band is.
"""

from __future__ import annotations

import numpy as np

__all__ = ["BAND_PERCENTILES", "band"]

#: Percentiles reported as a band: lower end, middle, upper end [%].
BAND_PERCENTILES = (5.0, 50.0, 95.0)


def band(values) -> tuple[float, float, float]:
    """Take the 5th, 50th and 95th percentiles of member values.

    Parameters
    ----------
    values : array_like
        One value per member [any unit].

    Returns
    -------
    tuple of float
        (p05, p50, p95) [unit of ``values``], by numpy's linear interpolation between order
        statistics.
    """
    p05, p50, p95 = np.percentile(np.asarray(values, dtype=float), BAND_PERCENTILES)
    return float(p05), float(p50), float(p95)
