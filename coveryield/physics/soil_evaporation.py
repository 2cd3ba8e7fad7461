"""Energy available for evaporation from the soil surface (FAO-56 chapter 7, dual coefficient).

FAO-56 splits a surface's evaporation into transpiration Kcb·ETo and soil evaporation Ke·ETo
(eq. 69). The soil can evaporate no more than the energy the canopy leaves, (Kc,max − Kcb)·ETo,
and no more than its exposed share allows, few·Kc,max·ETo (eq. 71). Kc,max, the most any wetted
cropped surface evaporates (eq. 72), rises a little with wind, dry air and canopy height.

Here every cover's transpiration is its Penman–Monteith dry-canopy rate, so that rate stands in
for Kcb·ETo. :func:`soil_evaporation_energy` returns (Kc,max·ETo − E_dry)⁺; the engine applies
the exposed-share cap and the drying of the surface layer (Kr, eqs. 73-77) day by day.

References
----------
.. [1] Allen, R. G., Pereira, L. S., Raes, D., & Smith, M. (1998). Crop evapotranspiration.
   FAO Irrigation and Drainage Paper 56, chapter 7, eqs. 69-77; eq. 10 (relative humidity).
"""

from __future__ import annotations

import numpy as np

from .meteo import _arr, _like, saturation_vapour_pressure

#: Ranges within which FAO-56 applies its climate adjustment of crop coefficients (eqs. 62 and
#: 72): wind 1-6 m s-1 at 2 m, minimum relative humidity 20-80 % (from memory).
ADJUSTMENT_WIND_RANGE_MS = (1.0, 6.0)
ADJUSTMENT_RH_MIN_RANGE_PCT = (20.0, 80.0)


def minimum_relative_humidity(ea_kpa, tmax_c):
    """Daily minimum relative humidity, reached at the daily maximum temperature.

    Parameters
    ----------
    ea_kpa : float or array_like
        Actual vapour pressure [kPa].
    tmax_c : float or array_like
        Daily maximum air temperature [°C].

    Returns
    -------
    float or array_like
        RHmin = 100·ea / e°(Tmax) [%].

    References
    ----------
    FAO-56 (Allen et al. 1998), eqs. 10 and 11.
    """
    rh = 100.0 * _arr(ea_kpa) / _arr(saturation_vapour_pressure(tmax_c))  # FAO-56 eq. 10
    return _like(rh, ea_kpa, tmax_c)


def maximum_crop_coefficient(u2_ms, rh_min_pct, height_m, kcb):
    """Upper limit of evaporation plus transpiration from a wetted surface, Kc,max.

    Parameters
    ----------
    u2_ms : float or array_like
        Wind speed at 2 m [m s-1]; limited to 1-6 m s-1.
    rh_min_pct : float or array_like
        Daily minimum relative humidity [%]; limited to 20-80 %.
    height_m : float or array_like
        Canopy height [m] (0 for bare soil).
    kcb : float or array_like
        Basal crop coefficient of the day [-].

    Returns
    -------
    float or array_like
        Kc,max = max(1.2 + [0.04(u2 − 2) − 0.004(RHmin − 45)]·(h/3)^0.3, Kcb + 0.05) [-].

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 72.
    """
    u2 = np.clip(_arr(u2_ms), *ADJUSTMENT_WIND_RANGE_MS)
    rh = np.clip(_arr(rh_min_pct), *ADJUSTMENT_RH_MIN_RANGE_PCT)
    climate = (0.04 * (u2 - 2.0) - 0.004 * (rh - 45.0)) * (_arr(height_m) / 3.0) ** 0.3
    kc_max = np.maximum(1.2 + climate, _arr(kcb) + 0.05)  # FAO-56 eq. 72
    return _like(kc_max, u2_ms, rh_min_pct, kcb)


def soil_evaporation_energy(et0_mm, transpiration_mm, kc_max):
    """Soil evaporation the energy allows once the canopy has transpired.

    Parameters
    ----------
    et0_mm : float or array_like
        Reference evaporation ETo [mm d-1].
    transpiration_mm : float or array_like
        Potential transpiration of the cover (Kcb·ETo, or the cover's dry-canopy
        Penman–Monteith rate) [mm d-1].
    kc_max : float or array_like
        Kc,max of the day [-].

    Returns
    -------
    float or array_like
        (Kc,max·ETo − transpiration)⁺ [mm d-1]; 0 where ETo ≤ 0.

    Notes
    -----
    FAO-56 eq. 71: Ke = min(Kr·(Kc,max − Kcb), few·Kc,max). This is the first term for Kr = 1
    in mm; the engine applies Kr and the exposed share.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 71.
    """
    et0 = np.maximum(_arr(et0_mm), 0.0)
    energy = np.maximum(_arr(kc_max) * et0 - _arr(transpiration_mm), 0.0)  # FAO-56 eq. 71
    return _like(energy, et0_mm, transpiration_mm)
