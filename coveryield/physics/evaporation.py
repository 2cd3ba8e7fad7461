"""Penman-Monteith evaporation: resistances, general equation, reference ET, Penman open water.

Reference ET comes as FAO-56 grass and ASCE-EWRI (2005) short and tall references.

Scalars, numpy arrays or pandas Series in; a Series in gives a Series out on the same index.
This is the plain-numpy reference path; :mod:`coveryield.physics.fused` computes the same
reference ET in one compiled pass.

References
----------
.. [1] Allen, R. G., Pereira, L. S., Raes, D., & Smith, M. (1998). Crop evapotranspiration.
   FAO Irrigation and Drainage Paper 56. Eqs. 3, 4, 6 and Chapter 3.
.. [2] ASCE-EWRI (2005). The ASCE Standardized Reference Evapotranspiration Equation.
   Allen, R. G. et al. (eds.). Eq. 1 and Table 1 (Cn, Cd), eqs. 17-18.
.. [3] Monteith, J. L. (1965). Evaporation and environment. Symp. Soc. Exp. Biol. 19, 205-234.
.. [4] Shuttleworth, W. J. (1993). Evaporation. In Maidment, D. R. (ed.), Handbook of Hydrology,
   ch. 4 (SI form of the Penman equation).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .meteo import (
    LATENT_HEAT_MJ_PER_KG,
    RADIATION_TO_EVAPORATION_MM_PER_MJ,
    SATURATION_A_KPA,
    SATURATION_B,
    SATURATION_C_C,
    SPECIFIC_HEAT_AIR_MJ_PER_KG_C,
    _arr,
    _like,
    air_density,
    atmospheric_pressure,
    mean_saturation_vapour_pressure,
    psychrometric_constant,
    vapour_pressure_slope,
)
from .radiation import (
    REFERENCE_ALBEDO,
    STEFAN_BOLTZMANN_ASCE,
    STEFAN_BOLTZMANN_FAO56,
    clear_sky_radiation,
    net_longwave_radiation,
    net_radiation,
    net_shortwave_radiation,
)
from .wind import DISPLACEMENT_PER_HEIGHT, ROUGHNESS_PER_HEIGHT

#: von Kármán constant [-].
VON_KARMAN = 0.41
#: Seconds per day, converts a flux per second to per day [s d-1].
SECONDS_PER_DAY = 86400.0
#: Heat-and-vapour roughness as a fraction of the momentum roughness (FAO-56 eq. 4) [-].
HEAT_ROUGHNESS_PER_MOMENTUM = 0.1


@dataclass(frozen=True)
class ReferenceMethod:
    """Constants that set one standardized reference-ET variant.

    Attributes
    ----------
    cn : float
        Numerator constant [K mm s3 Mg-1 d-1].
    cd : float
        Denominator constant [s m-1].
    sigma : float
        Stefan-Boltzmann constant [MJ K-4 m-2 d-1].
    rs_rso_lower : float
        Lower bound on Rs/Rso in the cloudiness function [-].
    slope_coefficient : float
        Coefficient A of Delta = A exp(17.27 T/(T+237.3)) / (T+237.3)^2 [kPa °C].
    vpd_floor : float
        Lowest vapour pressure deficit used [kPa] (-inf: none).
    """

    cn: float
    cd: float
    sigma: float
    rs_rso_lower: float
    slope_coefficient: float
    vpd_floor: float


#: The reference methods: FAO-56 grass (eq. 6) and the ASCE-EWRI (2005) daily short and tall
#: references. ASCE prints 2503 for 4098 x 0.6108, sigma = 4.901e-9, bounds Rs/Rso to
#: [0.3, 1.0] and uses a non-negative VPD. Both use T + 273.16 in the longwave term
#: (FAO-56 eq. 39; ASCE-EWRI 2005 eq. 17, from memory).
REFERENCE_METHODS: dict[str, ReferenceMethod] = {
    "fao56": ReferenceMethod(
        900.0, 0.34, STEFAN_BOLTZMANN_FAO56, -np.inf, 4098.0 * SATURATION_A_KPA, -np.inf
    ),
    "asce-short": ReferenceMethod(900.0, 0.34, STEFAN_BOLTZMANN_ASCE, 0.3, 2503.0, 0.0),
    "asce-tall": ReferenceMethod(1600.0, 0.38, STEFAN_BOLTZMANN_ASCE, 0.3, 2503.0, 0.0),
}


def reference_method(method):
    """Look up a :class:`ReferenceMethod` by name ("fao56", "asce-short", "asce-tall").

    Parameters
    ----------
    method : str
        Method name.

    Returns
    -------
    ReferenceMethod

    Raises
    ------
    ValueError
        If the name is unknown.
    """
    try:
        return REFERENCE_METHODS[method]
    except KeyError:
        raise ValueError(
            f"unknown reference-ET method {method!r}; expected one of "
            f"{', '.join(REFERENCE_METHODS)}"
        ) from None


def aerodynamic_resistance(wind_ms, wind_height_m, canopy_height_m):
    """Aerodynamic resistance between a canopy and the measurement height (neutral profile).

    Parameters
    ----------
    wind_ms : float or array_like
        Wind speed at ``wind_height_m`` over the canopy [m s-1].
    wind_height_m : float or array_like
        Height of wind, temperature and humidity measurement (zm = zh) [m].
    canopy_height_m : float or array_like
        Canopy height h, > 0 [m].

    Returns
    -------
    float or array_like
        ra [s m-1]. NaN where z <= d + z0m (the log profile is undefined below that height:
        move the wind above the canopy first, see :mod:`coveryield.physics.wind`); inf where the
        wind is 0.

    Notes
    -----
    ra = ln((zm - d)/z0m) ln((zh - d)/z0h) / (k^2 uz), with d = 2/3 h, z0m = 0.123 h,
    z0h = 0.1 z0m and k = 0.41.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 4.
    """
    z = _arr(wind_height_m)
    h = _arr(canopy_height_m)
    d = DISPLACEMENT_PER_HEIGHT * h
    z0m = ROUGHNESS_PER_HEIGHT * h
    z0h = HEAT_ROUGHNESS_PER_MOMENTUM * z0m
    valid = (z - d) > z0m
    with np.errstate(divide="ignore", invalid="ignore"):
        ln_m = np.log(np.where(valid, (z - d) / z0m, np.nan))
        ln_h = np.log(np.where(valid, (z - d) / z0h, np.nan))
        ra = ln_m * ln_h / (VON_KARMAN**2 * _arr(wind_ms))  # FAO-56 eq. 4
    return _like(ra, wind_ms, wind_height_m, canopy_height_m)


def penman_monteith(
    net_radiation_mj, soil_heat_mj, tmean_c, es_kpa, ea_kpa, pressure_kpa, ra_s_per_m, rs_s_per_m
):
    """Evaporation from a surface by the general Penman-Monteith equation.

    Parameters
    ----------
    net_radiation_mj : float or array_like
        Net radiation Rn [MJ m-2 d-1].
    soil_heat_mj : float or array_like
        Soil heat flux G (0 for daily steps) [MJ m-2 d-1].
    tmean_c : float or array_like
        Mean air temperature [°C].
    es_kpa : float or array_like
        Saturation vapour pressure [kPa].
    ea_kpa : float or array_like
        Actual vapour pressure [kPa].
    pressure_kpa : float or array_like
        Atmospheric pressure [kPa].
    ra_s_per_m : float or array_like
        Aerodynamic resistance [s m-1].
    rs_s_per_m : float or array_like
        Bulk surface resistance (0 for a wet surface) [s m-1].

    Returns
    -------
    float or array_like
        Evaporation [mm d-1] (= kg m-2 d-1).

    Notes
    -----
    lambda E = [Delta (Rn - G) + 86400 rho_a cp (es - ea)/ra] / [Delta + gamma (1 + rs/ra)],
    with rho_a from the ideal gas law (FAO-56 Annex 3 eq. 3-5), cp = 1.013e-3 MJ kg-1 °C-1 and
    lambda = 2.45 MJ kg-1. An infinite ra (calm) leaves the radiation term only.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 3; Monteith (1965).
    """
    delta = _arr(vapour_pressure_slope(tmean_c))
    gamma = _arr(psychrometric_constant(pressure_kpa))
    rho = _arr(air_density(pressure_kpa, tmean_c, ea_kpa))
    ra = _arr(ra_s_per_m)
    rs = _arr(rs_s_per_m)
    available = _arr(net_radiation_mj) - _arr(soil_heat_mj)
    aerodynamic = (
        SECONDS_PER_DAY * rho * SPECIFIC_HEAT_AIR_MJ_PER_KG_C * (_arr(es_kpa) - _arr(ea_kpa)) / ra
    )
    latent = (delta * available + aerodynamic) / (delta + gamma * (1.0 + rs / ra))  # FAO-56 eq. 3
    return _like(
        latent / LATENT_HEAT_MJ_PER_KG,
        net_radiation_mj,
        soil_heat_mj,
        tmean_c,
        es_kpa,
        ea_kpa,
        pressure_kpa,
        ra_s_per_m,
        rs_s_per_m,
    )


def standardized_penman_monteith(
    net_radiation_mj,
    soil_heat_mj,
    tmean_c,
    u2_ms,
    es_kpa,
    ea_kpa,
    pressure_kpa,
    cn=900.0,
    cd=0.34,
    slope_coefficient=4098.0 * SATURATION_A_KPA,
):
    """Compute reference evaporation from its terms (FAO-56 eq. 6 / ASCE-EWRI eq. 1).

    Parameters
    ----------
    net_radiation_mj : float or array_like
        Net radiation of the reference surface [MJ m-2 d-1].
    soil_heat_mj : float or array_like
        Soil heat flux [MJ m-2 d-1].
    tmean_c : float or array_like
        Mean daily air temperature at 2 m [°C].
    u2_ms : float or array_like
        Wind speed at 2 m [m s-1].
    es_kpa : float or array_like
        Saturation vapour pressure [kPa].
    ea_kpa : float or array_like
        Actual vapour pressure [kPa].
    pressure_kpa : float or array_like
        Atmospheric pressure [kPa].
    cn : float, optional
        Numerator constant: 900 short (grass), 1600 tall (alfalfa) [K mm s3 Mg-1 d-1].
    cd : float, optional
        Denominator constant: 0.34 short, 0.38 tall [s m-1].
    slope_coefficient : float, optional
        4098 x 0.6108 (FAO-56 eq. 13) or 2503 (ASCE-EWRI eq. 5) [kPa °C].

    Returns
    -------
    float or array_like
        Reference evaporation [mm d-1].

    Notes
    -----
    ETo = [0.408 Delta (Rn - G) + gamma Cn/(T + 273) u2 (es - ea)] / [Delta + gamma (1 + Cd u2)].

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 6; ASCE-EWRI (2005), eq. 1 and Table 1.
    """
    t = _arr(tmean_c)
    tc = t + SATURATION_C_C
    delta = slope_coefficient * np.exp(SATURATION_B * t / tc) / tc**2  # FAO-56 eq. 13
    gamma = _arr(psychrometric_constant(pressure_kpa))
    u2 = _arr(u2_ms)
    radiative = (
        RADIATION_TO_EVAPORATION_MM_PER_MJ * delta * (_arr(net_radiation_mj) - _arr(soil_heat_mj))
    )
    advective = gamma * cn / (t + 273.0) * u2 * (_arr(es_kpa) - _arr(ea_kpa))
    eto = (radiative + advective) / (delta + gamma * (1.0 + cd * u2))  # FAO-56 eq. 6
    return _like(eto, net_radiation_mj, soil_heat_mj, tmean_c, u2_ms, es_kpa, ea_kpa, pressure_kpa)


def fao56_reference_evaporation(
    tmax_c, tmin_c, ea_kpa, rs_mj, u2_ms, doy, lat_deg, elevation_m, method="fao56"
):
    """Daily reference evaporation from daily weather through the whole FAO-56 chain.

    Parameters
    ----------
    tmax_c : float or array_like
        Daily maximum air temperature [°C].
    tmin_c : float or array_like
        Daily minimum air temperature [°C].
    ea_kpa : float or array_like
        Actual vapour pressure [kPa].
    rs_mj : float or array_like
        Incoming solar radiation [MJ m-2 d-1].
    u2_ms : float or array_like
        Wind speed at 2 m over grass [m s-1].
    doy : int or array_like
        Day of the year, 1-366 [day].
    lat_deg : float or array_like
        Latitude, negative south [°].
    elevation_m : float or array_like
        Site elevation [m].
    method : {"fao56", "asce-short", "asce-tall"}, optional
        Reference variant: FAO-56 grass; ASCE-EWRI short (grass, Cn 900, Cd 0.34) or tall
        (alfalfa, Cn 1600, Cd 0.38), with the ASCE constants (see :data:`REFERENCE_METHODS`).

    Returns
    -------
    float or array_like
        Reference evaporation [mm d-1].

    Notes
    -----
    Tmean (eq. 9), P (7), es (12), Rso (37), Rns with albedo 0.23 (38), Rnl (39), Rn (40),
    G = 0 (42), then eq. 6 with the method's Cn and Cd.

    References
    ----------
    FAO-56 (Allen et al. 1998), eqs. 6-13, 21-25, 37-40 and 42; ASCE-EWRI (2005), eqs. 1-18.
    """
    m = reference_method(method)
    tmean = 0.5 * (_arr(tmax_c) + _arr(tmin_c))  # FAO-56 eq. 9
    pressure = _arr(atmospheric_pressure(elevation_m))
    es = _arr(mean_saturation_vapour_pressure(tmax_c, tmin_c))
    ea = _arr(ea_kpa)
    ea_for_vpd = es - np.maximum(es - ea, m.vpd_floor)
    rso = clear_sky_radiation(lat_deg, doy, elevation_m)
    rns = net_shortwave_radiation(rs_mj, REFERENCE_ALBEDO)
    rnl = net_longwave_radiation(
        tmax_c, tmin_c, ea, rs_mj, rso, sigma=m.sigma, rs_rso_lower=m.rs_rso_lower
    )
    rn = _arr(net_radiation(rns, rnl))
    eto = standardized_penman_monteith(
        rn,
        0.0,
        tmean,
        u2_ms,
        es,
        ea_for_vpd,
        pressure,
        cn=m.cn,
        cd=m.cd,
        slope_coefficient=m.slope_coefficient,
    )
    return _like(eto, tmax_c, tmin_c, ea_kpa, rs_mj, u2_ms, doy)


def penman_open_water(net_radiation_mj, tmean_c, es_kpa, ea_kpa, pressure_kpa, u2_ms):
    """Open-water evaporation by the Penman (1948) equation in Shuttleworth's SI form.

    Parameters
    ----------
    net_radiation_mj : float or array_like
        Net radiation of the water surface [MJ m-2 d-1].
    tmean_c : float or array_like
        Mean air temperature [°C].
    es_kpa : float or array_like
        Saturation vapour pressure [kPa].
    ea_kpa : float or array_like
        Actual vapour pressure [kPa].
    pressure_kpa : float or array_like
        Atmospheric pressure [kPa].
    u2_ms : float or array_like
        Wind speed at 2 m [m s-1].

    Returns
    -------
    float or array_like
        Evaporation [mm d-1].

    Notes
    -----
    E = [Delta Rn + gamma 6.43 (1 + 0.536 u2) (es - ea)] / [lambda (Delta + gamma)].

    References
    ----------
    Shuttleworth (1993), Handbook of Hydrology ch. 4 (Penman 1948 wind function in SI units).
    """
    delta = _arr(vapour_pressure_slope(tmean_c))
    gamma = _arr(psychrometric_constant(pressure_kpa))
    drying = 6.43 * (1.0 + 0.536 * _arr(u2_ms)) * (_arr(es_kpa) - _arr(ea_kpa))
    e = (delta * _arr(net_radiation_mj) + gamma * drying) / (
        LATENT_HEAT_MJ_PER_KG * (delta + gamma)
    )  # Shuttleworth (1993)
    return _like(e, net_radiation_mj, tmean_c, es_kpa, ea_kpa, pressure_kpa, u2_ms)
