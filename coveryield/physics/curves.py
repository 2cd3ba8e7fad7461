"""Long-term (mean annual) evaporation curves of the Budyko family, used as a cross-check.

Each curve gives mean annual actual evaporation from mean annual rain and a potential
evaporation through the aridity index ``phi = E0 / P``. They describe long-term averages of whole
catchments, not single years.

References
----------
.. [1] Zhang, L., Dawes, W. R., & Walker, G. R. (2001). Response of mean annual
   evapotranspiration to vegetation changes at catchment scale. Water Resources Research,
   37(3), 701-708. Eq. 7 (the curve) and the plant-available-water coefficient w.
.. [2] Fu, B. P. (1981). On the calculation of the evaporation from land surface. Scientia
   Atmospherica Sinica, 5, 23-31 (in Chinese); form as quoted by Zhang et al. (2004).
.. [3] Budyko, M. I. (1974). Climate and Life. Academic Press.
"""

from __future__ import annotations

import functools

import numpy as np

#: Zhang et al. (2001) plant-available-water coefficient w [-]: 2.0 for forest, 0.5 for grass
#: and herbaceous cover (crops count as herbaceous).
ZHANG_W = {"forest": 2.0, "pasture": 0.5, "crop": 0.5}

#: What the curve is, in one sentence (shown beside every cross-check).
ZHANG_CURVE_SENTENCE = (
    "The Zhang et al. (2001) curve is an empirical relation, fitted to 250 catchments worldwide, "
    "that gives long-term mean annual evaporation from mean annual rain and potential "
    "evaporation, for forest or for grass."
)
#: Mean absolute error of the Zhang curve over its 250 catchments, 42 mm or 6 % (Zhang, Dawes &
#: Walker 2001, abstract) [%].
ZHANG_MEAN_ABSOLUTE_ERROR_PCT = 6.0
#: Where the daily model's long-term evaporation lies against the Zhang curve, fed with FAO-56
#: reference evaporation, for the built-in forest and pasture on the demo weather with rain
#: x 0.6 to 2.4: (model - curve)/curve, lowest and highest [%]. Measured, and kept in step, by
#: tests/catchment/test_zhang_band.py; README "Known limits" explains the offset.
MODEL_OFFSET_MEASURED_PCT = (21.0, 33.0)
#: The model's usual offset: the measured range widened on each side by the curve's own mean
#: absolute error. A plan whose offset lies outside it is flagged [%].
CROSSCHECK_TYPICAL_OFFSET_PCT = (
    MODEL_OFFSET_MEASURED_PCT[0] - ZHANG_MEAN_ABSOLUTE_ERROR_PCT,
    MODEL_OFFSET_MEASURED_PCT[1] + ZHANG_MEAN_ABSOLUTE_ERROR_PCT,
)
#: A plan whose offset differs from its baseline's (``current``) by more than this is flagged:
#: the model then disagrees with the curve about the plan's change, not only about the level.
#: The curve's mean absolute error is the yardstick (our choice) [percentage points].
CROSSCHECK_CHANGE_TOLERANCE_PCT = ZHANG_MEAN_ABSOLUTE_ERROR_PCT


def crosscheck_offset_pct(model_mm, curve_mm):
    """Difference of the daily model from a curve, as a share of the curve.

    Parameters
    ----------
    model_mm, curve_mm : float or array_like
        Mean annual evaporation from the daily model and from the curve [mm yr-1].

    Returns
    -------
    float or array_like
        100·(model − curve)/curve [%]; NaN where the curve gives 0.
    """
    model = np.asarray(model_mm, dtype=float)
    curve = np.asarray(curve_mm, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        offset = np.where(curve != 0.0, 100.0 * (model - curve) / curve, np.nan)
    return float(offset) if offset.ndim == 0 else offset


def crosscheck_reason(offset_pct, baseline_offset_pct=None):
    """Why a cross-check is flagged, in words; empty when it is not.

    Parameters
    ----------
    offset_pct : float
        The plan's model-vs-curve offset [%].
    baseline_offset_pct : float, optional
        The baseline plan's offset [%]; None for the baseline itself.

    Returns
    -------
    str
        "" (not flagged), or why: outside the model's usual offset
        (:data:`CROSSCHECK_TYPICAL_OFFSET_PCT`), or moved from the baseline's by more than
        :data:`CROSSCHECK_CHANGE_TOLERANCE_PCT` points.
    """
    low, high = CROSSCHECK_TYPICAL_OFFSET_PCT
    reasons = []
    if not np.isfinite(offset_pct):
        return ""
    if not low <= offset_pct <= high:
        reasons.append(f"outside this model's usual offset ({low:+.0f} to {high:+.0f} %)")
    if baseline_offset_pct is not None and np.isfinite(baseline_offset_pct):
        moved = offset_pct - baseline_offset_pct
        if abs(moved) > CROSSCHECK_CHANGE_TOLERANCE_PCT:
            reasons.append(
                f"{abs(moved):.0f} points {'above' if moved > 0 else 'below'} the baseline's "
                f"offset ({baseline_offset_pct:+.0f} %): the model and the curve disagree about "
                "this plan's change"
            )
    return "; ".join(reasons)


def aridity_index(pet_mm, rain_mm):
    """Aridity index, mean annual potential evaporation over mean annual rain.

    Parameters
    ----------
    pet_mm : array_like
        Mean annual potential evaporation [mm yr-1].
    rain_mm : array_like
        Mean annual rain [mm yr-1].

    Returns
    -------
    array_like
        phi = E0 / P [-].
    """
    return np.asarray(pet_mm, dtype=float) / np.asarray(rain_mm, dtype=float)


def zhang_evaporation(rain_mm, pet_mm, w):
    """Mean annual evaporation by the Zhang et al. (2001) curve.

    Parameters
    ----------
    rain_mm : array_like
        Mean annual rain [mm yr-1].
    pet_mm : array_like
        Mean annual potential evaporation [mm yr-1].
    w : array_like
        Plant-available-water coefficient [-] (2.0 forest, 0.5 grass).

    Returns
    -------
    array_like
        Mean annual actual evaporation [mm yr-1].

    Notes
    -----
    E/P = (1 + w phi) / (1 + w phi + 1/phi), with phi = E0/P.

    References
    ----------
    Zhang, Dawes & Walker (2001), eq. 7.
    """
    phi = aridity_index(pet_mm, rain_mm)
    ratio = (1.0 + w * phi) / (1.0 + w * phi + 1.0 / phi)  # Zhang et al. (2001) eq. 7
    return ratio * np.asarray(rain_mm, dtype=float)


def fu_evaporation(rain_mm, pet_mm, omega):
    """Mean annual evaporation by Fu's (1981) form of the Budyko curve.

    Parameters
    ----------
    rain_mm : array_like
        Mean annual rain [mm yr-1].
    pet_mm : array_like
        Mean annual potential evaporation [mm yr-1].
    omega : array_like
        Shape parameter, > 1 [-]; about 2.6 reproduces Budyko's curve.

    Returns
    -------
    array_like
        Mean annual actual evaporation [mm yr-1].

    Notes
    -----
    E/P = 1 + phi - (1 + phi**omega)**(1/omega).

    References
    ----------
    Fu (1981), as quoted by Zhang et al. (2004).
    """
    phi = aridity_index(pet_mm, rain_mm)
    ratio = 1.0 + phi - (1.0 + phi**omega) ** (1.0 / omega)  # Fu (1981)
    return ratio * np.asarray(rain_mm, dtype=float)


def budyko_evaporation(rain_mm, pet_mm):
    """Mean annual evaporation by Budyko's (1974) curve.

    Parameters
    ----------
    rain_mm : array_like
        Mean annual rain [mm yr-1].
    pet_mm : array_like
        Mean annual potential evaporation [mm yr-1].

    Returns
    -------
    array_like
        Mean annual actual evaporation [mm yr-1].

    Notes
    -----
    E/P = [phi tanh(1/phi) (1 - exp(-phi))]**0.5.

    References
    ----------
    Budyko (1974).
    """
    phi = aridity_index(pet_mm, rain_mm)
    ratio = np.sqrt(phi * np.tanh(1.0 / phi) * (1.0 - np.exp(-phi)))  # Budyko (1974)
    return ratio * np.asarray(rain_mm, dtype=float)


@functools.lru_cache(maxsize=16)
def fu_omega_matching_zhang(w: float) -> float:
    """Fu's omega that best matches the Zhang curve with coefficient ``w``.

    The two curves are fitted in least squares over aridity indices 0.2-3 (the range of most
    catchments), so that Fu's form can be shown beside Zhang's for the same cover.

    Parameters
    ----------
    w : float
        Zhang et al. (2001) plant-available-water coefficient [-].

    Returns
    -------
    float
        Fu's omega [-].
    """
    phi = np.linspace(0.2, 3.0, 57)
    target = zhang_evaporation(1.0, phi, w)
    # Least squares over a fine grid of omega (step 0.001): exact enough for a cross-check and
    # keeps the package free of an optimiser import at start-up.
    omega = np.arange(1.05, 10.0, 0.001)
    misfit = ((fu_evaporation(1.0, phi[None, :], omega[:, None]) - target) ** 2).sum(axis=1)
    return float(omega[np.argmin(misfit)])
