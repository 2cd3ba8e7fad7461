"""Open-water evaporation with the heat stored in the water body.

A pond, lake or reservoir does not follow the day's weather as a canopy does: its water stores
heat in spring and summer and gives it back in autumn and winter, and its surface hardly changes
temperature between day and night. This module follows the equilibrium-temperature approach
(Edinger et al. 1968; de Bruin 1982; Finch 2001):

1. The **wet-bulb temperature** Tn of the air (the temperature at which a wet surface would
   neither gain nor lose sensible plus latent heat).
2. The surface energy budget, linearised about Tn, gives the **equilibrium temperature** Te
   (where the water would neither gain nor lose heat) and a heat-exchange coefficient K.
3. A well-mixed water column of depth h approaches Te with the **time constant** τ = C/K,
   C = ρw·cw·h; over one day Tw moves by the exact solution of C·dTw/dt = K·(Te − Tw).
4. The heat stored, G = C·(Tw,end − Tw,start), is taken from the available energy of the
   Penman–Monteith equation with rs = 0.

The derivation of steps 2 and 3 (our own, written out in :func:`equilibrium_temperature`) uses
the same linearisation of the saturation curve as the Penman–Monteith equation itself.

Wind and roughness: the station wind at 2 m over grass is used as the wind at 2 m over the water
(a pond or lake is too small for the smoother surface to speed the wind up: its internal
boundary layer stays shallow, common practice, no source); momentum roughness z0m = 1 mm and
heat and vapour roughness z0h = 0.1·z0m, the ratio FAO-56 eq. 4 takes (over water the scalar
roughness is, if anything, smaller; Brutsaert 1982, from memory).

Vapour-pressure deficit: FAO-56 eq. 12 averages e° at Tmax and Tmin because a crop's surface
warms and cools with the air through the day. A water surface keeps nearly one temperature
through the day, so the daily linearisation point of the Penman–Monteith equation is the
day's mean temperature: es = e°(Tmean) (FAO-56 eq. 11 at Tmean; our derivation).

References
----------
.. [1] Edinger, J. E., Duttweiler, D. W. & Geyer, J. C. (1968). The response of water
   temperatures to meteorological conditions. Water Resour. Res., 4(5), 1137-1143 (the
   equilibrium temperature; from memory).
.. [2] de Bruin, H. A. R. (1982). Temperature and energy balance of a water reservoir determined
   from standard weather data of a land station. J. Hydrol., 59, 261-274 (from memory).
.. [3] Finch, J. W. (2001). A comparison between measured and modelled open water evaporation
   from a reservoir in south-east England. Hydrol. Processes, 15, 2771-2778 (from memory).
.. [4] Allen, R. G., Pereira, L. S., Raes, D. & Smith, M. (1998). FAO Irrigation and Drainage
   Paper 56, eqs. 3, 4, 8, 11, 13, 37-40.
.. [5] Brutsaert, W. (1982). Evaporation into the Atmosphere. Reidel, ch. 4-5 (roughness of
   water surfaces; from memory).
"""

from __future__ import annotations

import sys

import numpy as np

from .evaporation import SECONDS_PER_DAY, VON_KARMAN, penman_monteith
from .meteo import (
    KELVIN_OFFSET_K,
    SPECIFIC_HEAT_AIR_MJ_PER_KG_C,
    _arr,
    _like,
    air_density,
    atmospheric_pressure,
    psychrometric_constant,
    saturation_vapour_pressure,
    slope_from_saturation,
    vapour_pressure_slope,
)
from .radiation import (
    STEFAN_BOLTZMANN_FAO56,
    clear_sky_radiation,
    net_longwave_radiation,
    net_radiation,
    net_shortwave_radiation,
)

#: Albedo of open water, daily mean [-] (0.08: Oke 1987 via a secondary source).
WATER_ALBEDO = 0.08
#: Momentum roughness length of a pond or lake surface [m] (about 1 mm; common practice).
WATER_ROUGHNESS_M = 0.001
#: Heat and vapour roughness as a fraction of the momentum roughness (FAO-56 eq. 4) [-].
WATER_HEAT_ROUGHNESS_RATIO = 0.1
#: Height at which the wind over the water is taken (the station wind at 2 m) [m].
WATER_WIND_HEIGHT_M = 2.0
#: Volumetric heat capacity of water, rho_w c_w near 15 °C (999 kg m-3 x 4.186e-3 MJ kg-1 K-1;
#: handbook values, from memory) [MJ m-3 K-1].
WATER_HEAT_CAPACITY_MJ_PER_M3_K = 4.18
#: Days of weather used to find the water temperature on the first day: the recursion runs over
#: them once and starts the record from the temperature it ends with [d].
SPIN_UP_DAYS = 365
#: Lowest wind speed used for the resistance, which is infinite in calm air [m s-1].
MIN_WIND_MS = 0.5
_NEWTON_STEPS = 8


def water_aerodynamic_resistance(u2_ms, height_m=WATER_WIND_HEIGHT_M,
                                 roughness_m=WATER_ROUGHNESS_M,
                                 heat_roughness_ratio=WATER_HEAT_ROUGHNESS_RATIO):
    """Aerodynamic resistance over open water (neutral log profile, d = 0).

    Parameters
    ----------
    u2_ms : float or array_like
        Wind speed at ``height_m`` over the water [m s-1].
    height_m : float, optional
        Height of wind, temperature and humidity [m].
    roughness_m : float, optional
        Momentum roughness length z0m [m].
    heat_roughness_ratio : float, optional
        z0h / z0m [-].

    Returns
    -------
    float or array_like
        ra = ln(z/z0m)·ln(z/z0h) / (k²·u) [s m-1]; about 448/u at z = 2 m, z0m = 1 mm,
        z0h = 0.1 mm.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 4 with d = 0 (no canopy) and z0h = 0.1 z0m.
    """
    z = _arr(height_m)
    with np.errstate(divide="ignore"):
        ra = (
            np.log(z / roughness_m)
            * np.log(z / (heat_roughness_ratio * roughness_m))
            / (VON_KARMAN**2 * _arr(u2_ms))
        )  # FAO-56 eq. 4, d = 0
    return _like(ra, u2_ms)


def wet_bulb_temperature(t_c, ea_kpa, pressure_kpa):
    """Wet-bulb temperature from air temperature and vapour pressure.

    Parameters
    ----------
    t_c : float or array_like
        Air temperature [°C].
    ea_kpa : float or array_like
        Actual vapour pressure [kPa].
    pressure_kpa : float or array_like
        Atmospheric pressure [kPa].

    Returns
    -------
    float or array_like
        Tn [°C], the root of e°(Tn) − γ·(T − Tn) = ea.

    Notes
    -----
    The psychrometer equation (FAO-56 eq. 15) with the psychrometric constant of eq. 8, solved
    by Newton's method from Tn = T (eight steps; the function is convex and increasing, so the
    steps converge from above to well below 1e-9 °C).

    References
    ----------
    FAO-56 (Allen et al. 1998), eqs. 8, 11, 13 and 15.
    """
    t = _arr(t_c)
    ea = _arr(ea_kpa)
    gamma = _arr(psychrometric_constant(pressure_kpa))
    tn = np.array(t, dtype=float, copy=True)
    for _ in range(_NEWTON_STEPS):
        e0 = _arr(saturation_vapour_pressure(tn))
        residual = e0 - gamma * (t - tn) - ea  # FAO-56 eq. 15
        tn = tn - residual / (slope_from_saturation(tn, e0) + gamma)  # Δ: FAO-56 eq. 13
    return _like(tn, t_c, ea_kpa)


def equilibrium_temperature(net_radiation_mj, t_c, ea_kpa, pressure_kpa, ra_s_per_m,
                            sigma=STEFAN_BOLTZMANN_FAO56):
    """Equilibrium temperature of a water surface and its heat-exchange coefficient.

    Parameters
    ----------
    net_radiation_mj : float or array_like
        Net radiation of the water surface taken at air temperature (FAO-56 eqs. 37-40 with
        the water's albedo) [MJ m-2 d-1].
    t_c : float or array_like
        Daily mean air temperature [°C].
    ea_kpa : float or array_like
        Actual vapour pressure [kPa].
    pressure_kpa : float
        Atmospheric pressure [kPa].
    ra_s_per_m : float or array_like
        Aerodynamic resistance over the water [s m-1].
    sigma : float, optional
        Stefan-Boltzmann constant [MJ K-4 m-2 d-1].

    Returns
    -------
    te_c : float or array_like
        Equilibrium temperature Te [°C].
    k_mj : float or array_like
        Heat-exchange coefficient K [MJ m-2 d-1 K-1]: the water gains K·(Te − Tw).

    Notes
    -----
    The net heat gain of a water surface at temperature T is Q(T) = Rn(T) − H(T) − λE(T), with
    H = ρcp(T − Ta)/ra and λE = ρcp(e°(T) − ea)/(γ·ra). At the wet-bulb temperature Tn,
    e°(Tn) − ea = γ(Ta − Tn), so H + λE = 0 there. Linearising about Tn, with
    e°(T) ≈ e°(Tn) + Δn(T − Tn) and the surface's emission σ(T + 273.16)⁴ likewise::

        Q(T) ≈ Rn(Tn) − K·(T − Tn),   K = 4σ(Tn + 273.16)³ + (ρcp/ra)·(Δn + γ)/γ
        Rn(Tn) ≈ Rn(Ta) + 4σ(Ta + 273.16)³·(Ta − Tn)
        Te = Tn + Rn(Tn)/K            (Q(Te) = 0)

    (ρcp/ra converted to a daily flux with 86 400 s d-1.) This is the equilibrium temperature of
    Edinger et al. (1968) in the form used by de Bruin (1982); the linearisation is ours.

    References
    ----------
    Edinger, Duttweiler & Geyer (1968); de Bruin (1982); FAO-56 (Allen et al. 1998), eqs. 8,
    13, 39 and Annex 3 eq. 3-5.
    """
    t = _arr(t_c)
    tn = _arr(wet_bulb_temperature(t, ea_kpa, pressure_kpa))
    gamma = _arr(psychrometric_constant(pressure_kpa))
    delta_n = _arr(vapour_pressure_slope(tn))
    rho = _arr(air_density(pressure_kpa, t, ea_kpa))
    transfer = SECONDS_PER_DAY * rho * SPECIFIC_HEAT_AIR_MJ_PER_KG_C / _arr(ra_s_per_m)
    k = 4.0 * sigma * (tn + KELVIN_OFFSET_K) ** 3 + transfer * (delta_n + gamma) / gamma
    rn_at_tn = _arr(net_radiation_mj) + 4.0 * sigma * (t + KELVIN_OFFSET_K) ** 3 * (t - tn)
    te = tn + rn_at_tn / k  # Q(Te) = 0
    return _like(te, net_radiation_mj, t_c), _like(k, net_radiation_mj, t_c)


def water_temperature(te_c, k_mj, depth_m, initial_c=None):
    """Daily mean temperature of a well-mixed water column and the heat it stores each day.

    Parameters
    ----------
    te_c : array_like, shape (n_days,)
        Equilibrium temperature of each day [°C].
    k_mj : array_like, shape (n_days,)
        Heat-exchange coefficient of each day, > 0 [MJ m-2 d-1 K-1].
    depth_m : float
        Mean depth of the mixed water column, > 0 [m].
    initial_c : float, optional
        Water temperature at the start [°C]. Default: found by running the first
        :data:`SPIN_UP_DAYS` days once from Te of the first day and taking the temperature they
        end with (the record's own first year stands in for the year before it).

    Returns
    -------
    tw_c : numpy.ndarray, shape (n_days,)
        Water temperature at the end of each day [°C].
    stored_mj : numpy.ndarray, shape (n_days,)
        Heat stored in the water over each day, C·(Tw,end − Tw,start); negative when the water
        gives heat back [MJ m-2 d-1].

    Notes
    -----
    C·dTw/dt = K·(Te − Tw) with C = ρw·cw·h and Te, K constant over the day has the exact
    solution Tw,end = Te + (Tw,start − Te)·exp(−K/C) (one day): the water approaches Te with the
    time constant τ = C/K [d] (de Bruin 1982; Finch 2001).
    """
    te = np.asarray(te_c, dtype=float)
    decay = np.exp(-np.asarray(k_mj, dtype=float) / (WATER_HEAT_CAPACITY_MJ_PER_M3_K * depth_m))
    if te.size == 0:
        return np.empty(0), np.empty(0)
    if "numba" in sys.modules:  # loaded already: the compiled loop costs no start-up
        from .fused import relax_series

        tw, initial_c = relax_series(te, decay, SPIN_UP_DAYS, float(initial_c or 0.0),
                                     initial_c is not None)
    else:
        tw, initial_c = _relax_series_python(te, decay, initial_c)
    start = np.concatenate([[float(initial_c)], tw[:-1]])
    stored = WATER_HEAT_CAPACITY_MJ_PER_M3_K * depth_m * (tw - start)
    return tw, stored


def _relax_series_python(te, decay, initial_c):
    """Plain-Python twin of :func:`coveryield.physics.fused.relax_series` (same numbers)."""
    te_list, decay_list = te.tolist(), decay.tolist()
    if initial_c is None:
        initial_c = te_list[0]
        spin = min(SPIN_UP_DAYS, len(te_list))
        for target, factor in zip(te_list[:spin], decay_list[:spin], strict=True):
            initial_c = target + (initial_c - target) * factor  # exact one-day step
    tw = np.empty(len(te_list))
    previous = float(initial_c)
    for i, (target, factor) in enumerate(zip(te_list, decay_list, strict=True)):
        previous = target + (previous - target) * factor  # exact one-day step
        tw[i] = previous
    return tw, initial_c


def open_water_evaporation(tmax_c, tmin_c, ea_kpa, rs_mj, u2_ms, doy, lat_deg, elevation_m,
                           depth_m, albedo=WATER_ALBEDO, roughness_m=WATER_ROUGHNESS_M):
    """Daily evaporation of a pond, lake or reservoir, with its heat storage.

    Parameters
    ----------
    tmax_c, tmin_c : array_like, shape (n_days,)
        Daily maximum and minimum air temperature [°C].
    ea_kpa : array_like
        Actual vapour pressure [kPa].
    rs_mj : array_like
        Incoming solar radiation [MJ m-2 d-1].
    u2_ms : array_like
        Wind speed at 2 m over the station's grass (FAO-56 eq. 47) [m s-1]; used unchanged as
        the wind at 2 m over the water.
    doy : array_like of int
        Day of the year, 1-366 [day].
    lat_deg : float
        Latitude, negative south [°].
    elevation_m : float
        Site elevation [m].
    depth_m : float
        Mean depth of the mixed water column, > 0 [m].
    albedo : float, optional
        Albedo of the water [-].
    roughness_m : float, optional
        Momentum roughness length of the water surface [m].

    Returns
    -------
    evaporation_mm : numpy.ndarray
        Evaporation [mm d-1]; negative values (condensation) are left to the caller.
    water_temperature_c : numpy.ndarray
        Mean water temperature at the end of each day [°C].
    stored_mj : numpy.ndarray
        Heat stored in the water each day [MJ m-2 d-1].

    Notes
    -----
    Net radiation by FAO-56 eqs. 37-40 with the water's albedo; ra by
    :func:`water_aerodynamic_resistance` (wind at least :data:`MIN_WIND_MS`); heat storage by
    :func:`equilibrium_temperature` and :func:`water_temperature`; then FAO-56 eq. 3 with
    rs = 0, available energy Rn − G and es = e°(Tmean) (see the module notes)::

        λE = [Δ(Rn − G) + 86 400·ρa·cp·(e°(Tmean) − ea)/ra] / (Δ + γ)

    References
    ----------
    de Bruin (1982); Finch (2001); FAO-56 (Allen et al. 1998), eqs. 3, 4, 11, 37-40.
    """
    tmean = 0.5 * (_arr(tmax_c) + _arr(tmin_c))  # FAO-56 eq. 9
    ea = _arr(ea_kpa)
    pressure = float(atmospheric_pressure(elevation_m))
    rso = clear_sky_radiation(lat_deg, doy, elevation_m)
    rn = _arr(net_radiation(net_shortwave_radiation(rs_mj, albedo),
                            net_longwave_radiation(tmax_c, tmin_c, ea, rs_mj, rso)))
    ra = _arr(water_aerodynamic_resistance(np.maximum(_arr(u2_ms), MIN_WIND_MS),
                                           roughness_m=roughness_m))
    te, k = equilibrium_temperature(rn, tmean, ea, pressure, ra)
    tw, stored = water_temperature(np.atleast_1d(te), np.atleast_1d(k), depth_m)
    es = _arr(saturation_vapour_pressure(tmean))  # FAO-56 eq. 11 at Tmean (module notes)
    evap = penman_monteith(rn, stored.reshape(np.shape(rn)), tmean, es, ea, pressure, ra, 0.0)
    return np.atleast_1d(_arr(evap)), tw, stored


def time_constant_days(k_mj, depth_m):
    """Time constant τ = ρw·cw·h / K with which a water column follows its equilibrium [d].

    Parameters
    ----------
    k_mj : float or array_like
        Heat-exchange coefficient [MJ m-2 d-1 K-1].
    depth_m : float
        Depth of the mixed water column [m].

    Returns
    -------
    float or array_like
        τ [d].
    """
    return _like(WATER_HEAT_CAPACITY_MJ_PER_M3_K * depth_m / _arr(k_mj), k_mj)

