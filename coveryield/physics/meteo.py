"""Atmospheric quantities of the FAO-56 meteorological chain.

Pressure, psychrometric constant, saturation and actual vapour pressure, the slope of the
saturation curve, and air density. Every function takes scalars, numpy arrays or pandas Series
(a Series in gives a Series out on the same index) and computes with numpy.

References
----------
.. [1] Allen, R. G., Pereira, L. S., Raes, D., & Smith, M. (1998). Crop evapotranspiration:
   guidelines for computing crop water requirements. FAO Irrigation and Drainage Paper 56.
   Chapter 3, eqs. 7-19 and 48; Annex 3 (air density, eq. 3-5).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

#: Latent heat of vaporisation used throughout FAO-56 [MJ kg-1].
LATENT_HEAT_MJ_PER_KG = 2.45
#: 1/lambda as printed in FAO-56 eqs. 6 and 20 (and ASCE-EWRI 2005 eq. 1) [mm m2 MJ-1].
RADIATION_TO_EVAPORATION_MM_PER_MJ = 0.408
#: Specific heat of moist air at constant pressure [MJ kg-1 °C-1].
SPECIFIC_HEAT_AIR_MJ_PER_KG_C = 1.013e-3
#: Ratio of the molecular weights of water vapour and dry air [-].
MOLECULAR_WEIGHT_RATIO = 0.622
#: FAO-56 eq. 8 factor cp / (epsilon * lambda), as printed [°C-1].
PSYCHROMETRIC_FACTOR_PER_C = 0.665e-3
#: Inverse specific gas constant of dry air, 1/0.287 as rounded in FAO-56 Annex 3 [kg K kJ-1].
AIR_DENSITY_FACTOR = 3.486
#: Kelvin offset used by FAO-56 for absolute temperatures in radiation and density [K].
KELVIN_OFFSET_K = 273.16
#: Standard sea-level pressure in FAO-56 eq. 7 [kPa].
SEA_LEVEL_PRESSURE_KPA = 101.3
#: Magnus-Tetens coefficients of FAO-56 eq. 11: e° = A exp(B T / (T + C)).
SATURATION_A_KPA = 0.6108
SATURATION_B = 17.27
SATURATION_C_C = 237.3


def _like(result, *inputs):
    """Shape ``result`` like the inputs (Series index, float for 0-d, else an array).

    A Series takes the index of the first Series among ``inputs``.
    """
    for value in inputs:
        if isinstance(value, pd.Series):
            return pd.Series(np.asarray(result, dtype=float), index=value.index)
    result = np.asarray(result, dtype=float)
    return float(result) if result.ndim == 0 else result


def _arr(value):
    """Plain float numpy view of a scalar, array or Series."""
    return np.asarray(value, dtype=float)


def atmospheric_pressure(elevation_m):
    """Mean atmospheric pressure at a site from its elevation.

    Parameters
    ----------
    elevation_m : float or array_like
        Site elevation above sea level [m].

    Returns
    -------
    float or array_like
        Atmospheric pressure [kPa].

    Notes
    -----
    P = 101.3 ((293 - 0.0065 z) / 293)^5.26, a standard atmosphere at 20 °C.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 7.
    """
    z = _arr(elevation_m)
    p = SEA_LEVEL_PRESSURE_KPA * ((293.0 - 0.0065 * z) / 293.0) ** 5.26  # FAO-56 eq. 7
    return _like(p, elevation_m)


def psychrometric_constant(pressure_kpa):
    """Psychrometric constant from atmospheric pressure.

    Parameters
    ----------
    pressure_kpa : float or array_like
        Atmospheric pressure [kPa].

    Returns
    -------
    float or array_like
        Psychrometric constant gamma [kPa °C-1].

    Notes
    -----
    gamma = cp P / (epsilon lambda) = 0.665e-3 P (the printed rounding of FAO-56 is used).

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 8.
    """
    gamma = PSYCHROMETRIC_FACTOR_PER_C * _arr(pressure_kpa)  # FAO-56 eq. 8
    return _like(gamma, pressure_kpa)


def saturation_vapour_pressure(t_c):
    """Saturation vapour pressure over water at an air temperature.

    Parameters
    ----------
    t_c : float or array_like
        Air temperature [°C].

    Returns
    -------
    float or array_like
        Saturation vapour pressure e°(T) [kPa].

    Notes
    -----
    e°(T) = 0.6108 exp(17.27 T / (T + 237.3)).

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 11.
    """
    t = _arr(t_c)
    e0 = SATURATION_A_KPA * np.exp(SATURATION_B * t / (t + SATURATION_C_C))  # FAO-56 eq. 11
    return _like(e0, t_c)


def mean_saturation_vapour_pressure(tmax_c, tmin_c):
    """Daily mean saturation vapour pressure from the temperature extremes.

    Parameters
    ----------
    tmax_c : float or array_like
        Daily maximum air temperature [°C].
    tmin_c : float or array_like
        Daily minimum air temperature [°C].

    Returns
    -------
    float or array_like
        Mean saturation vapour pressure es [kPa].

    Notes
    -----
    es = (e°(Tmax) + e°(Tmin)) / 2; using e°(Tmean) instead would underestimate es.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 12.
    """
    es = 0.5 * (
        _arr(saturation_vapour_pressure(tmax_c)) + _arr(saturation_vapour_pressure(tmin_c))
    )  # FAO-56 eq. 12
    return _like(es, tmax_c, tmin_c)


def vapour_pressure_slope(t_c):
    """Slope of the saturation vapour pressure curve at an air temperature.

    Parameters
    ----------
    t_c : float or array_like
        Air temperature, the daily mean for daily steps [°C].

    Returns
    -------
    float or array_like
        Slope Delta [kPa °C-1].

    Notes
    -----
    Delta = 4098 e°(T) / (T + 237.3)^2.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 13.
    """
    t = _arr(t_c)
    return _like(slope_from_saturation(t, _arr(saturation_vapour_pressure(t))), t_c)


def slope_from_saturation(t_c, e0_kpa):
    """Slope Δ of the saturation curve at ``t_c`` from e°(``t_c``) already computed [kPa °C-1].

    Parameters
    ----------
    t_c : float or array_like
        Temperature [°C].
    e0_kpa : float or array_like
        Saturation vapour pressure at that temperature, :func:`saturation_vapour_pressure`
        [kPa].

    Returns
    -------
    float or array_like
        Δ = 4098·e°/(T + 237.3)² [kPa °C-1] (one exp fewer than :func:`vapour_pressure_slope`,
        the same value).

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 13.
    """
    return 4098.0 * e0_kpa / (t_c + SATURATION_C_C) ** 2  # FAO-56 eq. 13


def actual_vapour_pressure_from_dewpoint(tdew_c):
    """Actual vapour pressure from the dewpoint temperature.

    Parameters
    ----------
    tdew_c : float or array_like
        Dewpoint temperature [°C].

    Returns
    -------
    float or array_like
        Actual vapour pressure ea [kPa].

    Notes
    -----
    ea = e°(Tdew).

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 14.
    """
    return saturation_vapour_pressure(tdew_c)  # FAO-56 eq. 14


def actual_vapour_pressure_from_rh_max_min(tmax_c, tmin_c, rh_max_pct, rh_min_pct):
    """Actual vapour pressure from daily maximum and minimum relative humidity.

    Parameters
    ----------
    tmax_c : float or array_like
        Daily maximum air temperature [°C].
    tmin_c : float or array_like
        Daily minimum air temperature [°C].
    rh_max_pct : float or array_like
        Daily maximum relative humidity [%].
    rh_min_pct : float or array_like
        Daily minimum relative humidity [%].

    Returns
    -------
    float or array_like
        Actual vapour pressure ea [kPa].

    Notes
    -----
    ea = (e°(Tmin) RHmax/100 + e°(Tmax) RHmin/100) / 2.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 17.
    """
    ea = 0.5 * (
        _arr(saturation_vapour_pressure(tmin_c)) * _arr(rh_max_pct) / 100.0
        + _arr(saturation_vapour_pressure(tmax_c)) * _arr(rh_min_pct) / 100.0
    )  # FAO-56 eq. 17
    return _like(ea, tmax_c, tmin_c, rh_max_pct, rh_min_pct)


def actual_vapour_pressure_from_rh_max(tmin_c, rh_max_pct):
    """Actual vapour pressure from the daily maximum relative humidity alone.

    Parameters
    ----------
    tmin_c : float or array_like
        Daily minimum air temperature [°C].
    rh_max_pct : float or array_like
        Daily maximum relative humidity [%].

    Returns
    -------
    float or array_like
        Actual vapour pressure ea [kPa].

    Notes
    -----
    ea = e°(Tmin) RHmax / 100.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 18.
    """
    ea = _arr(saturation_vapour_pressure(tmin_c)) * _arr(rh_max_pct) / 100.0  # FAO-56 eq. 18
    return _like(ea, tmin_c, rh_max_pct)


def actual_vapour_pressure_from_rh_mean(tmax_c, tmin_c, rh_mean_pct):
    """Actual vapour pressure from the daily mean relative humidity (least preferred).

    Parameters
    ----------
    tmax_c : float or array_like
        Daily maximum air temperature [°C].
    tmin_c : float or array_like
        Daily minimum air temperature [°C].
    rh_mean_pct : float or array_like
        Daily mean relative humidity [%].

    Returns
    -------
    float or array_like
        Actual vapour pressure ea [kPa].

    Notes
    -----
    ea = RHmean/100 (e°(Tmax) + e°(Tmin)) / 2.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 19.
    """
    ea = (
        _arr(rh_mean_pct) / 100.0 * _arr(mean_saturation_vapour_pressure(tmax_c, tmin_c))
    )  # FAO-56 eq. 19
    return _like(ea, tmax_c, tmin_c, rh_mean_pct)


def actual_vapour_pressure_from_tmin(tmin_c):
    """Actual vapour pressure when humidity is missing: dewpoint taken as the minimum temperature.

    Parameters
    ----------
    tmin_c : float or array_like
        Daily minimum air temperature [°C].

    Returns
    -------
    float or array_like
        Actual vapour pressure ea [kPa].

    Notes
    -----
    ea = e°(Tmin); suited to humid sites where the air nears saturation at night.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 48.
    """
    return saturation_vapour_pressure(tmin_c)  # FAO-56 eq. 48


def dewpoint_from_vapour_pressure(ea_kpa):
    """Dewpoint temperature from actual vapour pressure (inverse of the saturation curve).

    Parameters
    ----------
    ea_kpa : float or array_like
        Actual vapour pressure, > 0 [kPa].

    Returns
    -------
    float or array_like
        Dewpoint temperature [°C]; NaN where ea <= 0.

    Notes
    -----
    With x = ln(ea / 0.6108): Tdew = 237.3 x / (17.27 - x), solving eq. 11 for T.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 11 inverted (eq. 14 read backwards).
    """
    ea = _arr(ea_kpa)
    with np.errstate(divide="ignore", invalid="ignore"):
        x = np.log(np.where(ea > 0.0, ea, np.nan) / SATURATION_A_KPA)
        tdew = SATURATION_C_C * x / (SATURATION_B - x)  # FAO-56 eq. 11 inverted
    return _like(tdew, ea_kpa)


def air_density(pressure_kpa, t_c, ea_kpa):
    """Density of moist air from the ideal gas law with the virtual temperature.

    Parameters
    ----------
    pressure_kpa : float or array_like
        Atmospheric pressure [kPa].
    t_c : float or array_like
        Air temperature [°C].
    ea_kpa : float or array_like
        Actual vapour pressure [kPa].

    Returns
    -------
    float or array_like
        Mean air density at constant pressure rho_a [kg m-3].

    Notes
    -----
    rho_a = P / (R Tkv) = 3.486 P / Tkv with Tkv = (T + 273.16) / (1 - 0.378 ea / P),
    the virtual temperature [K] and R = 0.287 kJ kg-1 K-1.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 3 notes (Box 6) and Annex 3, eq. 3-5.
    """
    p = _arr(pressure_kpa)
    tkv = (_arr(t_c) + KELVIN_OFFSET_K) / (
        1.0 - 0.378 * _arr(ea_kpa) / p
    )  # FAO-56 Annex 3, virtual T
    rho = AIR_DENSITY_FACTOR * p / tkv  # FAO-56 Annex 3 eq. 3-5
    return _like(rho, pressure_kpa, t_c, ea_kpa)
