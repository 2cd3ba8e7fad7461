"""Daily radiation terms of the FAO-56 chain: sun geometry, solar, clear-sky and net radiation.

Scalars, numpy arrays or pandas Series in; a Series in gives a Series out on the same index.
Day of year J runs 1-366; latitude is in decimal degrees, negative south.

References
----------
.. [1] Allen, R. G., Pereira, L. S., Raes, D., & Smith, M. (1998). Crop evapotranspiration.
   FAO Irrigation and Drainage Paper 56. Chapter 3, eqs. 21-25, 34-40 and 50.
.. [2] ASCE-EWRI (2005). The ASCE Standardized Reference Evapotranspiration Equation.
   Allen, R. G. et al. (eds.), eqs. 17-18 (cloudiness function bounds, Stefan-Boltzmann constant).
"""

from __future__ import annotations

import math

import numpy as np

from .meteo import KELVIN_OFFSET_K, _arr, _like

#: Solar constant [MJ m-2 min-1] (FAO-56 eq. 21).
SOLAR_CONSTANT_MJ_PER_M2_MIN = 0.0820
#: Stefan-Boltzmann constant per day as printed in FAO-56 [MJ K-4 m-2 d-1].
STEFAN_BOLTZMANN_FAO56 = 4.903e-9
#: Stefan-Boltzmann constant per day as printed in ASCE-EWRI (2005) [MJ K-4 m-2 d-1].
STEFAN_BOLTZMANN_ASCE = 4.901e-9
#: Albedo of the grass reference surface [-] (FAO-56 eq. 38).
REFERENCE_ALBEDO = 0.23
#: Angström coefficients recommended when none are calibrated [-] (FAO-56 eq. 35).
ANGSTROM_A = 0.25
ANGSTROM_B = 0.50
#: Days per year in the FAO-56 orbital terms [d].
_YEAR_DAYS = 365.0


def inverse_relative_distance(doy):
    """Inverse relative distance Earth-Sun.

    Parameters
    ----------
    doy : int or array_like
        Day of the year, 1-366 [day].

    Returns
    -------
    float or array_like
        dr [-].

    Notes
    -----
    dr = 1 + 0.033 cos(2 pi J / 365).

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 23.
    """
    dr = 1.0 + 0.033 * np.cos(2.0 * math.pi * _arr(doy) / _YEAR_DAYS)  # FAO-56 eq. 23
    return _like(dr, doy)


def solar_declination(doy):
    """Solar declination.

    Parameters
    ----------
    doy : int or array_like
        Day of the year, 1-366 [day].

    Returns
    -------
    float or array_like
        Declination delta [rad].

    Notes
    -----
    delta = 0.409 sin(2 pi J / 365 - 1.39).

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 24.
    """
    delta = 0.409 * np.sin(2.0 * math.pi * _arr(doy) / _YEAR_DAYS - 1.39)  # FAO-56 eq. 24
    return _like(delta, doy)


def sunset_hour_angle(lat_deg, declination_rad):
    """Sunset hour angle, clipped for polar day and polar night.

    Parameters
    ----------
    lat_deg : float or array_like
        Latitude, negative south [°].
    declination_rad : float or array_like
        Solar declination [rad].

    Returns
    -------
    float or array_like
        Sunset hour angle omega_s [rad]: 0 in polar night, pi in polar day.

    Notes
    -----
    omega_s = arccos(-tan(phi) tan(delta)); the argument is clipped to [-1, 1] so that the sun
    never sets (omega_s = pi) or never rises (omega_s = 0) beyond the polar circles.

    References
    ----------
    FAO-56 (Allen et al. 1998), eqs. 22 and 25.
    """
    phi = np.radians(_arr(lat_deg))  # FAO-56 eq. 22
    cos_ws = np.clip(-np.tan(phi) * np.tan(_arr(declination_rad)), -1.0, 1.0)
    ws = np.arccos(cos_ws)  # FAO-56 eq. 25
    return _like(ws, lat_deg, declination_rad)


def extraterrestrial_radiation(lat_deg, doy):
    """Daily extraterrestrial radiation on a horizontal surface.

    Parameters
    ----------
    lat_deg : float or array_like
        Latitude, negative south [°].
    doy : int or array_like
        Day of the year, 1-366 [day].

    Returns
    -------
    float or array_like
        Ra [MJ m-2 d-1].

    Notes
    -----
    Ra = (24 60 / pi) Gsc dr [omega_s sin(phi) sin(delta) + cos(phi) cos(delta) sin(omega_s)].
    FAO-56 warns of reduced accuracy above 55° latitude.

    References
    ----------
    FAO-56 (Allen et al. 1998), eqs. 21-25.
    """
    phi = np.radians(_arr(lat_deg))  # FAO-56 eq. 22
    dr = _arr(inverse_relative_distance(doy))
    delta = _arr(solar_declination(doy))
    ws = _arr(sunset_hour_angle(lat_deg, delta))
    ra = (
        (24.0 * 60.0 / math.pi)
        * SOLAR_CONSTANT_MJ_PER_M2_MIN
        * dr
        * (ws * np.sin(phi) * np.sin(delta) + np.cos(phi) * np.cos(delta) * np.sin(ws))
    )  # FAO-56 eq. 21
    return _like(np.maximum(ra, 0.0), lat_deg, doy)


def daylight_hours(lat_deg, doy):
    """Maximum possible duration of sunshine.

    Parameters
    ----------
    lat_deg : float or array_like
        Latitude, negative south [°].
    doy : int or array_like
        Day of the year, 1-366 [day].

    Returns
    -------
    float or array_like
        Daylight hours N [h].

    Notes
    -----
    N = 24 omega_s / pi.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 34.
    """
    ws = _arr(sunset_hour_angle(lat_deg, _arr(solar_declination(doy))))
    n_hours = 24.0 / math.pi * ws  # FAO-56 eq. 34
    return _like(n_hours, lat_deg, doy)


def solar_radiation_from_sunshine(sun_hours, lat_deg, doy, a_s=ANGSTROM_A, b_s=ANGSTROM_B):
    """Solar radiation from measured sunshine duration (Angström formula).

    Parameters
    ----------
    sun_hours : float or array_like
        Actual duration of bright sunshine n [h].
    lat_deg : float or array_like
        Latitude, negative south [°].
    doy : int or array_like
        Day of the year, 1-366 [day].
    a_s : float, optional
        Fraction of Ra reaching the ground on overcast days [-].
    b_s : float, optional
        Extra fraction of Ra reaching the ground on clear days [-].

    Returns
    -------
    float or array_like
        Solar (shortwave) radiation Rs [MJ m-2 d-1].

    Notes
    -----
    Rs = (a_s + b_s n / N) Ra. Where N = 0 (polar night) Rs = 0.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 35.
    """
    ra = _arr(extraterrestrial_radiation(lat_deg, doy))
    n_max = _arr(daylight_hours(lat_deg, doy))
    with np.errstate(divide="ignore", invalid="ignore"):
        rel = np.where(n_max > 0.0, _arr(sun_hours) / n_max, 0.0)
    rs = (a_s + b_s * rel) * ra  # FAO-56 eq. 35
    return _like(rs, sun_hours, lat_deg, doy)


def solar_radiation_from_temperature(tmax_c, tmin_c, lat_deg, doy, krs=0.16):
    """Solar radiation from the daily temperature range (Hargreaves radiation formula).

    Parameters
    ----------
    tmax_c : float or array_like
        Daily maximum air temperature [°C].
    tmin_c : float or array_like
        Daily minimum air temperature [°C].
    lat_deg : float or array_like
        Latitude, negative south [°].
    doy : int or array_like
        Day of the year, 1-366 [day].
    krs : float, optional
        Adjustment coefficient: 0.16 interior, 0.19 coastal [°C-0.5].

    Returns
    -------
    float or array_like
        Solar radiation Rs [MJ m-2 d-1]; a negative range counts as 0.

    Notes
    -----
    Rs = kRs sqrt(Tmax - Tmin) Ra.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 50.
    """
    ra = _arr(extraterrestrial_radiation(lat_deg, doy))
    spread = np.maximum(_arr(tmax_c) - _arr(tmin_c), 0.0)
    rs = krs * np.sqrt(spread) * ra  # FAO-56 eq. 50
    return _like(rs, tmax_c, tmin_c, lat_deg, doy)


def clear_sky_radiation(lat_deg, doy, elevation_m):
    """Clear-sky solar radiation without calibrated Angström coefficients.

    Parameters
    ----------
    lat_deg : float or array_like
        Latitude, negative south [°].
    doy : int or array_like
        Day of the year, 1-366 [day].
    elevation_m : float or array_like
        Site elevation above sea level [m].

    Returns
    -------
    float or array_like
        Rso [MJ m-2 d-1].

    Notes
    -----
    Rso = (0.75 + 2e-5 z) Ra.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 37.
    """
    ra = _arr(extraterrestrial_radiation(lat_deg, doy))
    rso = (0.75 + 2.0e-5 * _arr(elevation_m)) * ra  # FAO-56 eq. 37
    return _like(rso, lat_deg, doy, elevation_m)


def net_shortwave_radiation(rs_mj, albedo=REFERENCE_ALBEDO):
    """Net shortwave radiation absorbed by a surface.

    Parameters
    ----------
    rs_mj : float or array_like
        Incoming solar radiation [MJ m-2 d-1].
    albedo : float or array_like, optional
        Surface albedo (0.23 for the grass reference) [-].

    Returns
    -------
    float or array_like
        Rns [MJ m-2 d-1].

    Notes
    -----
    Rns = (1 - albedo) Rs.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 38.
    """
    rns = (1.0 - _arr(albedo)) * _arr(rs_mj)  # FAO-56 eq. 38
    return _like(rns, rs_mj, albedo)


def cloudiness_factor(rs_mj, rso_mj, lower=-np.inf):
    """Cloudiness function of the net longwave formula, 1.35 Rs/Rso - 0.35.

    Parameters
    ----------
    rs_mj : float or array_like
        Solar radiation [MJ m-2 d-1].
    rso_mj : float or array_like
        Clear-sky solar radiation [MJ m-2 d-1].
    lower : float, optional
        Lower bound on Rs/Rso: none for FAO-56, 0.3 for ASCE-EWRI (2005) [-].

    Returns
    -------
    float or array_like
        fcd [-].

    Notes
    -----
    Rs/Rso is capped at 1.0 (FAO-56 eq. 39 note) and, in the ASCE standard, floored at 0.3.
    Where Rso = 0 (polar night) the ratio is taken as 1.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 39; ASCE-EWRI (2005), eq. 18.
    """
    rs = _arr(rs_mj)
    rso = _arr(rso_mj)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(rso > 0.0, rs / np.where(rso > 0.0, rso, 1.0), 1.0)
    ratio = np.clip(ratio, lower, 1.0)
    fcd = 1.35 * ratio - 0.35  # FAO-56 eq. 39 (cloudiness term)
    return _like(fcd, rs_mj, rso_mj)


def net_longwave_radiation(
    tmax_c, tmin_c, ea_kpa, rs_mj, rso_mj, sigma=STEFAN_BOLTZMANN_FAO56, rs_rso_lower=-np.inf
):
    """Net outgoing longwave radiation.

    Parameters
    ----------
    tmax_c : float or array_like
        Daily maximum air temperature [°C].
    tmin_c : float or array_like
        Daily minimum air temperature [°C].
    ea_kpa : float or array_like
        Actual vapour pressure [kPa].
    rs_mj : float or array_like
        Solar radiation [MJ m-2 d-1].
    rso_mj : float or array_like
        Clear-sky solar radiation [MJ m-2 d-1].
    sigma : float, optional
        Stefan-Boltzmann constant: 4.903e-9 (FAO-56) or 4.901e-9 (ASCE) [MJ K-4 m-2 d-1].
    rs_rso_lower : float, optional
        Lower bound on Rs/Rso (ASCE-EWRI 2005 uses 0.3) [-].

    Returns
    -------
    float or array_like
        Rnl, positive for a loss [MJ m-2 d-1].

    Notes
    -----
    Rnl = sigma (Tmax,K^4 + Tmin,K^4)/2 (0.34 - 0.14 sqrt(ea)) (1.35 Rs/Rso - 0.35),
    with T,K = T + 273.16.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 39; ASCE-EWRI (2005), eq. 17.
    """
    tmax_k4 = (_arr(tmax_c) + KELVIN_OFFSET_K) ** 4
    tmin_k4 = (_arr(tmin_c) + KELVIN_OFFSET_K) ** 4
    fcd = _arr(cloudiness_factor(rs_mj, rso_mj, rs_rso_lower))
    rnl = (
        sigma * 0.5 * (tmax_k4 + tmin_k4) * (0.34 - 0.14 * np.sqrt(_arr(ea_kpa))) * fcd
    )  # FAO-56 eq. 39
    return _like(rnl, tmax_c, tmin_c, ea_kpa, rs_mj, rso_mj)


def net_radiation(rns_mj, rnl_mj):
    """Net radiation at the surface.

    Parameters
    ----------
    rns_mj : float or array_like
        Net shortwave radiation [MJ m-2 d-1].
    rnl_mj : float or array_like
        Net outgoing longwave radiation [MJ m-2 d-1].

    Returns
    -------
    float or array_like
        Rn = Rns - Rnl [MJ m-2 d-1].

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 40.
    """
    rn = _arr(rns_mj) - _arr(rnl_mj)  # FAO-56 eq. 40
    return _like(rn, rns_mj, rnl_mj)
