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

#: Relative difference between the daily model and the Zhang curve above which a result is
#: flagged [-]. Zhang et al. (2001) report a mean absolute error of 6 % over 250 catchments; a
#: difference beyond 2.5 times that is worth a second look.
CROSSCHECK_TOLERANCE = 0.15


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
