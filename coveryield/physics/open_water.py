"""Open-water evaporation with the heat stored in the water body.

A pond, lake or reservoir does not follow the day's weather as a canopy does: its water stores
heat in spring and summer and gives it back in autumn and winter, and its surface hardly changes
temperature between day and night. This module follows the equilibrium-temperature approach
(Edinger et al. 1968; de Bruin 1982; Finch 2001) with the wind function of McJannet et al.
(2008) for small water bodies:

1. The **wind function** f(u) = (2.33 + 1.65·u2)·L^-0.1 [mm d-1 kPa-1] gives the exchange of
   vapour (and, through γ, of sensible heat) between the water and the air measured at a land
   station, for a water body of fetch L: smaller ponds exchange more, because the air over
   them has not yet adjusted to the water.
2. The surface energy budget Q(T) = Rn(T) − H(T) − λE(T) of a water surface at temperature T
   is zero at the **equilibrium temperature** Te (where the water would neither gain nor lose
   heat). Te is found exactly (Newton's method on the full budget, not a linearisation), and
   K = −dQ/dT at Te is the heat-exchange coefficient.
3. A well-mixed water column of depth h approaches Te with the **time constant** τ = C/K,
   C = ρw·cw·h; over one day Tw moves by the exact solution of C·dTw/dt = K·(Te − Tw).
4. The heat stored, G = C·(Tw,end − Tw,start), is taken from the available energy, and the net
   radiation is that of the water at its own mean temperature of the day (it emits as a body at
   Tw, not at the air temperature); then the Penman equation for a wet surface with f(u).

Vapour-pressure deficit: FAO-56 eq. 12 averages e° at Tmax and Tmin because a crop's surface
warms and cools with the air through the day. A water surface keeps nearly one temperature
through the day, so the daily linearisation point of the Penman equation is the day's mean
temperature: es = e°(Tmean) (FAO-56 eq. 11 at Tmean; our derivation).

Wind: the station's wind at 2 m over grass (FAO-56 eq. 47) is what the wind function expects
(it was fitted to land-station wind); it is not moved up over the smoother water.

References
----------
.. [1] Edinger, J. E., Duttweiler, D. W. & Geyer, J. C. (1968). The response of water
   temperatures to meteorological conditions. Water Resour. Res., 4(5), 1137-1143 (the
   equilibrium temperature; from memory).
.. [2] de Bruin, H. A. R. (1982). Temperature and energy balance of a water reservoir determined
   from standard weather data of a land station. J. Hydrol., 59, 261-274 (from memory; the net
   radiation at the water temperature and the time constant as transcribed in secondary
   sources).
.. [3] Finch, J. W. (2001). A comparison between measured and modelled open water evaporation
   from a reservoir in south-east England. Hydrol. Processes, 15, 2771-2778 (from memory).
.. [4] McJannet, D. L., Webster, I. T., Stenson, M. P. & Sherman, B. S. (2008). Estimating open
   water evaporation for the Murray-Darling Basin. CSIRO Water for a Healthy Country report
   (the wind function f(u) = (2.33 + 1.65 u2) L^-0.1 in mm d-1 kPa-1, u2 the 2 m wind of a land
   station, L the fetch in m; the same form is used by several public lake-evaporation codes,
   secondary; the report itself not checked, authors and title from memory).
.. [5] Allen, R. G., Pereira, L. S., Raes, D. & Smith, M. (1998). FAO Irrigation and Drainage
   Paper 56, eqs. 8, 11, 13, 37-40, 47.
.. [6] Penman, H. L. (1948). Natural evaporation from open water, bare soil and grass. Proc.
   R. Soc. Lond. A, 193, 120-145 (the combination equation with a wind function).
"""

from __future__ import annotations

import sys

import numpy as np

from .meteo import (
    KELVIN_OFFSET_K,
    LATENT_HEAT_MJ_PER_KG,
    _arr,
    _like,
    atmospheric_pressure,
    psychrometric_constant,
    saturation_vapour_pressure,
    slope_from_saturation,
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
#: Fetch of the built-in water: a pond of about 1 ha, 100 m across [m] (our choice, to match
#: "farm ponds and small reservoirs" 2 m deep).
WATER_FETCH_M = 100.0
#: Wind-function coefficients of McJannet et al. (2008): f(u) = (a + b·u2)·L^-0.1
#: [mm d-1 kPa-1, mm d-1 kPa-1 per m s-1, -].
WIND_FUNCTION_A = 2.33
WIND_FUNCTION_B = 1.65
WIND_FUNCTION_FETCH_EXPONENT = -0.1
#: Volumetric heat capacity of water, rho_w c_w near 15 °C (999 kg m-3 x 4.186e-3 MJ kg-1 K-1;
#: handbook values, from memory) [MJ m-3 K-1].
WATER_HEAT_CAPACITY_MJ_PER_M3_K = 4.18
#: Days of weather used to find the water temperature on the first day: the recursion runs over
#: them once and starts the record from the temperature it ends with [d].
SPIN_UP_DAYS = 365
_NEWTON_STEPS = 6


def small_water_wind_function(u2_ms, fetch_m=WATER_FETCH_M):
    """Wind function of a small water body, f(u) = (2.33 + 1.65·u2)·L^-0.1.

    Parameters
    ----------
    u2_ms : float or array_like
        Wind speed at 2 m at a land station (FAO-56 eq. 47) [m s-1]; negative values count as 0.
    fetch_m : float or array_like
        Fetch of the water body, its length along the wind (about the square root of its area
        for a compact pond) [m].

    Returns
    -------
    float or array_like
        f(u) [mm d-1 kPa-1]: evaporation per kPa of vapour-pressure difference between the water
        surface and the air. Multiply by λ for MJ m-2 d-1 kPa-1.

    Notes
    -----
    The intercept (2.33 at calm air) stands for free convection over water warmer than the
    air; the L^-0.1 factor carries the size effect: the air over a small pond has not adjusted
    to the water, so it is drier and exchanges more per unit area (Sweers 1976 made the
    same point with area^-0.05; from memory).

    References
    ----------
    McJannet et al. (2008), the wind function for small water bodies (secondary sources; see
    the module references).
    """
    u2 = np.maximum(_arr(u2_ms), 0.0)
    f = (WIND_FUNCTION_A + WIND_FUNCTION_B * u2) * _arr(fetch_m) ** WIND_FUNCTION_FETCH_EXPONENT
    return _like(f, u2_ms, fetch_m)


def _budget_and_slope(t_c, net_radiation_mj, ta_c, ea_kpa, gamma, transfer_mj, sigma):
    """Q(T) = Rn(T) − H(T) − λE(T) of a water surface at T [MJ m-2 d-1], and K = −dQ/dT."""
    t_kelvin = t_c + KELVIN_OFFSET_K
    cube = t_kelvin * t_kelvin * t_kelvin
    e0 = _arr(saturation_vapour_pressure(t_c))
    emitted_extra = sigma * (cube * t_kelvin - (ta_c + KELVIN_OFFSET_K) ** 4)
    gain = net_radiation_mj - emitted_extra - transfer_mj * (gamma * (t_c - ta_c) + e0 - ea_kpa)
    k = 4.0 * sigma * cube + transfer_mj * (gamma + slope_from_saturation(t_c, e0))
    return gain, k


def equilibrium_temperature(net_radiation_mj, t_c, ea_kpa, pressure_kpa, transfer_mj,
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
    transfer_mj : float or array_like
        λ·f(u), the wind function in energy units (:func:`small_water_wind_function` times
        2.45 MJ kg-1) [MJ m-2 d-1 kPa-1].
    sigma : float, optional
        Stefan-Boltzmann constant [MJ K-4 m-2 d-1].

    Returns
    -------
    te_c : float or array_like
        Equilibrium temperature Te [°C]: Q(Te) = 0.
    k_mj : float or array_like
        Heat-exchange coefficient K = −dQ/dT at Te [MJ m-2 d-1 K-1]: near Te the water gains
        K·(Te − Tw).

    Notes
    -----
    The net heat gain of a water surface at temperature T (emissivity 1, as de Bruin 1982)::

        Q(T) = Rn − σ[(T + 273.16)⁴ − (Ta + 273.16)⁴] − λf(u)·[γ(T − Ta) + e°(T) − ea]

    where Rn is the net radiation at air temperature, the second term the extra emission of a
    surface at T, and the last the sensible (γ·λf) and latent (λf) heat given to the air. Q
    falls with T and is concave, so Newton's method from T = Ta converges (after its first
    step, from above) to the one root Te; six steps leave |Q(Te)| below 1e-9 MJ m-2 d-1 for air
    at -15 to 45 °C, dewpoints up to 30 K lower, winds of 0-10 m s-1 and fetches of 1 m to
    100 km (tested).
    Edinger et al. (1968) and de Bruin (1982) linearise e°(T) about the wet-bulb temperature
    instead; e° being convex, that puts Te too warm: by 0.7 K on average and up to 2.4 K on
    the days of the dry test climate of ``tests/physics/test_open_water.py`` (0.1 K and 1.2 K
    in the wet one; our comparison), and the evaporation of the warmer water then no longer
    closes the energy budget. Solving the full budget is our choice.

    References
    ----------
    Edinger, Duttweiler & Geyer (1968); de Bruin (1982); McJannet et al. (2008); FAO-56 (Allen
    et al. 1998), eqs. 8, 11, 13 and 39.
    """
    ta = _arr(t_c)
    ea = _arr(ea_kpa)
    rn = _arr(net_radiation_mj)
    transfer = _arr(transfer_mj)
    gamma = _arr(psychrometric_constant(pressure_kpa))
    if "numba" in sys.modules and np.ndim(gamma) == 0:  # loaded already: no start-up cost
        te, k = _equilibrium_compiled(rn, ta, ea, transfer, float(gamma), float(sigma))
        return _like(te, net_radiation_mj, t_c), _like(k, net_radiation_mj, t_c)
    te = np.array(ta, dtype=float, copy=True)
    for _ in range(_NEWTON_STEPS):
        gain, k = _budget_and_slope(te, rn, ta, ea, gamma, transfer, sigma)
        te = te + gain / k
    _, k = _budget_and_slope(te, rn, ta, ea, gamma, transfer, sigma)
    return _like(te, net_radiation_mj, t_c), _like(k, net_radiation_mj, t_c)


def _equilibrium_compiled(rn, ta, ea, transfer, gamma, sigma):
    """:func:`equilibrium_temperature` by the compiled day loop, for inputs of any shape."""
    from .fused import equilibrium_series

    columns = [np.ascontiguousarray(a, dtype=float).ravel()
               for a in np.broadcast_arrays(rn, ta, ea, transfer)]
    te, k = equilibrium_series(*columns, gamma, sigma, _NEWTON_STEPS)
    shape = np.broadcast(rn, ta, ea, transfer).shape
    return te.reshape(shape), k.reshape(shape)


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
                           depth_m, albedo=WATER_ALBEDO, fetch_m=WATER_FETCH_M):
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
        Wind speed at 2 m over the station's grass (FAO-56 eq. 47) [m s-1]; the wind the wind
        function expects.
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
    fetch_m : float, optional
        Fetch of the water body, > 0 [m].

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
    Net radiation at air temperature Rn by FAO-56 eqs. 37-40 with the water's albedo; the wind
    function by :func:`small_water_wind_function`; Te and K by
    :func:`equilibrium_temperature`; the water temperature and stored heat G by
    :func:`water_temperature`. The day's mean water temperature follows from the same
    equation, C·(Tw,end − Tw,start) = K·(Te − T̄w) over one day, so T̄w = Te − G/K, and the net
    radiation of the water is Rn − σ[(T̄w + 273.16)⁴ − (Tmean + 273.16)⁴] (de Bruin 1982). Then
    the Penman equation for a wet surface (McJannet et al. 2008)::

        λE = [Δ(Rn,w − G) + γ·λf(u)·(e°(Tmean) − ea)] / (Δ + γ)

    with Δ at the day's mean air temperature.

    References
    ----------
    Penman (1948); de Bruin (1982); Finch (2001); McJannet et al. (2008); FAO-56 (Allen et al.
    1998), eqs. 8, 9, 11, 13, 37-40.
    """
    tmean = 0.5 * (_arr(tmax_c) + _arr(tmin_c))  # FAO-56 eq. 9
    ea = _arr(ea_kpa)
    pressure = float(atmospheric_pressure(elevation_m))
    gamma = float(psychrometric_constant(pressure))
    rso = clear_sky_radiation(lat_deg, doy, elevation_m)
    rn = _arr(net_radiation(net_shortwave_radiation(rs_mj, albedo),
                            net_longwave_radiation(tmax_c, tmin_c, ea, rs_mj, rso)))
    transfer = LATENT_HEAT_MJ_PER_KG * _arr(small_water_wind_function(u2_ms, fetch_m))
    te, k = equilibrium_temperature(rn, tmean, ea, pressure, transfer)
    tw, stored = water_temperature(np.atleast_1d(te), np.atleast_1d(k), depth_m)
    stored = stored.reshape(np.shape(rn))
    day_mean_tw = _arr(te) - stored / _arr(k)  # exact for the day's linear relaxation
    rn_water = rn - STEFAN_BOLTZMANN_FAO56 * (
        (day_mean_tw + KELVIN_OFFSET_K) ** 4 - (tmean + KELVIN_OFFSET_K) ** 4)
    es = _arr(saturation_vapour_pressure(tmean))  # FAO-56 eq. 11 at Tmean
    delta = slope_from_saturation(tmean, es)  # FAO-56 eq. 13
    deficit = es - ea
    latent = (delta * (rn_water - stored) + gamma * transfer * deficit) / (delta + gamma)
    return np.atleast_1d(latent / LATENT_HEAT_MJ_PER_KG), tw, stored


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

