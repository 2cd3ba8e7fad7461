"""Reference evaporation in one compiled pass over days (the FAO-56 chain fused).

:func:`reference_et_kernel` computes the same numbers as
:func:`coveryield.physics.evaporation.fao56_reference_evaporation` (agreement to 1e-9 mm d-1 is
tested) but in a single numba loop: pressure and gamma are computed once per site, extraterrestrial
and clear-sky radiation once per day of year in 366-entry tables, and each day then costs three
exponentials, a square root and a handful of arithmetic. The exponentials use a branch-free
polynomial (:func:`_exp_poly`, relative error ~1e-14) so the loop vectorizes; numba offers no
vector exp without Intel's SVML. The compiled code is cached on disk (``cache=True``), so only
the first run after installation pays for compilation. The cache is keyed on this file: after
changing a constant imported from another module, clear ``__pycache__`` here.

References
----------
.. [1] Allen, R. G., Pereira, L. S., Raes, D., & Smith, M. (1998). FAO Irrigation and Drainage
   Paper 56, eqs. 6-13, 21-25, 37-40.
.. [2] ASCE-EWRI (2005). The ASCE Standardized Reference Evapotranspiration Equation, eqs. 1-18.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from .evaporation import reference_method
from .meteo import (
    KELVIN_OFFSET_K,
    PSYCHROMETRIC_FACTOR_PER_C,
    RADIATION_TO_EVAPORATION_MM_PER_MJ,
    SATURATION_A_KPA,
    SATURATION_B,
    SATURATION_C_C,
    SEA_LEVEL_PRESSURE_KPA,
)
from .radiation import REFERENCE_ALBEDO, SOLAR_CONSTANT_MJ_PER_M2_MIN

_DAYS_IN_TABLE = 366


@njit(cache=True)
def radiation_tables(lat_deg, elevation_m):  # pragma: no cover - compiled
    """Extraterrestrial and clear-sky radiation for day of year 1-366 at one site.

    Parameters
    ----------
    lat_deg : float
        Latitude, negative south [°].
    elevation_m : float
        Site elevation [m].

    Returns
    -------
    ra : numpy.ndarray, shape (366,)
        Ra for day j+1 at index j [MJ m-2 d-1] (FAO-56 eq. 21).
    rso : numpy.ndarray, shape (366,)
        Rso = (0.75 + 2e-5 z) Ra (FAO-56 eq. 37) [MJ m-2 d-1].
    """
    phi = lat_deg * math.pi / 180.0  # FAO-56 eq. 22
    ra = np.empty(_DAYS_IN_TABLE)
    rso = np.empty(_DAYS_IN_TABLE)
    clear = 0.75 + 2.0e-5 * elevation_m  # FAO-56 eq. 37
    for j in range(_DAYS_IN_TABLE):
        doy = j + 1.0
        dr = 1.0 + 0.033 * math.cos(2.0 * math.pi * doy / 365.0)  # FAO-56 eq. 23
        delta = 0.409 * math.sin(2.0 * math.pi * doy / 365.0 - 1.39)  # FAO-56 eq. 24
        x = -math.tan(phi) * math.tan(delta)
        x = min(max(x, -1.0), 1.0)
        ws = math.acos(x)  # FAO-56 eq. 25, clipped for polar day/night
        r = (
            (24.0 * 60.0 / math.pi)
            * SOLAR_CONSTANT_MJ_PER_M2_MIN
            * dr
            * (
                ws * math.sin(phi) * math.sin(delta)
                + math.cos(phi) * math.cos(delta) * math.sin(ws)
            )
        )  # FAO-56 eq. 21
        ra[j] = max(r, 0.0)
        rso[j] = clear * ra[j]
    return ra, rso


#: Inverse factorials 1/k!, k = 0..17, the Taylor coefficients of exp.
_TAYLOR = tuple(1.0 / math.factorial(k) for k in range(18))
#: Exponents 17.27 T / (T + 237.3) inside this range use the polynomial exp (T from about
#: -110 to +130 °C); others, rare, are recomputed with math.exp [-].
EXP_ARG_MIN, EXP_ARG_MAX = -16.0, 8.0
#: Days per block: the day-of-year lookups of one block are gathered before the main loop [d].
_BLOCK_DAYS = 2048
#: Floating-point freedoms the compiler may use (no "nnan"/"ninf": NaN still propagates).
_FASTMATH = {"contract", "arcp", "nsz", "reassoc"}


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _exp_poly(x):  # pragma: no cover - compiled
    """exp(x) for -16 <= x <= 8 as (Taylor polynomial of exp(x/16), degree 17)^16.

    Relative error about 1e-14 (tested against math.exp); branch-free, so the day loop vectorizes
    where a call to the C library exp would not.
    """
    y = x * 0.0625
    p = _TAYLOR[17]
    p = p * y + _TAYLOR[16]
    p = p * y + _TAYLOR[15]
    p = p * y + _TAYLOR[14]
    p = p * y + _TAYLOR[13]
    p = p * y + _TAYLOR[12]
    p = p * y + _TAYLOR[11]
    p = p * y + _TAYLOR[10]
    p = p * y + _TAYLOR[9]
    p = p * y + _TAYLOR[8]
    p = p * y + _TAYLOR[7]
    p = p * y + _TAYLOR[6]
    p = p * y + _TAYLOR[5]
    p = p * y + _TAYLOR[4]
    p = p * y + _TAYLOR[3]
    p = p * y + _TAYLOR[2]
    p = p * y + _TAYLOR[1]
    p = p * y + _TAYLOR[0]
    p = p * p
    p = p * p
    p = p * p
    return p * p


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _reference_day(
    tmax,
    tmin,
    ea,
    rs,
    u2,
    rso,
    e_max,
    e_min,
    e_mean,
    gamma,
    cn,
    cd,
    sigma,
    rs_rso_lower,
    slope_coefficient,
    vpd_floor,
):  # pragma: no cover - compiled
    """Eq. 6 for one day given exp(17.27 T/(T+237.3)) at Tmax, Tmin and Tmean [mm d-1]."""
    tmean = 0.5 * (tmax + tmin)  # FAO-56 eq. 9
    es = 0.5 * SATURATION_A_KPA * (e_max + e_min)  # FAO-56 eqs. 11-12
    tc = tmean + SATURATION_C_C
    delta = slope_coefficient * e_mean / (tc * tc)  # FAO-56 eq. 13
    vpd = es - ea
    vpd = vpd if vpd > vpd_floor else vpd_floor
    ratio = rs / rso if rso > 0.0 else 1.0
    ratio = ratio if ratio < 1.0 else 1.0
    ratio = ratio if ratio > rs_rso_lower else rs_rso_lower
    kmax = tmax + KELVIN_OFFSET_K
    kmin = tmin + KELVIN_OFFSET_K
    kmax2 = kmax * kmax
    kmin2 = kmin * kmin
    rnl = (
        sigma
        * 0.5
        * (kmax2 * kmax2 + kmin2 * kmin2)
        * (0.34 - 0.14 * math.sqrt(ea))
        * (1.35 * ratio - 0.35)
    )  # FAO-56 eq. 39
    rn = (1.0 - REFERENCE_ALBEDO) * rs - rnl  # FAO-56 eqs. 38, 40
    return (
        RADIATION_TO_EVAPORATION_MM_PER_MJ * delta * rn + gamma * cn / (tmean + 273.0) * u2 * vpd
    ) / (delta + gamma * (1.0 + cd * u2))  # FAO-56 eq. 6, G = 0


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _exponent(t):  # pragma: no cover - compiled
    """17.27 T / (T + 237.3), the exponent of FAO-56 eq. 11 [-]."""
    return SATURATION_B * t / (t + SATURATION_C_C)


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH)
def reference_et_kernel(
    tmax_c,
    tmin_c,
    ea_kpa,
    rs_mj,
    u2_ms,
    doy,
    lat_deg,
    elevation_m,
    cn,
    cd,
    sigma,
    rs_rso_lower,
    slope_coefficient,
    vpd_floor,
):  # pragma: no cover - compiled
    """Daily reference evaporation for one site, the FAO-56 chain fused into one loop.

    Parameters
    ----------
    tmax_c, tmin_c : numpy.ndarray of float64
        Daily maximum and minimum air temperature [°C].
    ea_kpa : numpy.ndarray of float64
        Actual vapour pressure [kPa].
    rs_mj : numpy.ndarray of float64
        Incoming solar radiation [MJ m-2 d-1].
    u2_ms : numpy.ndarray of float64
        Wind speed at 2 m [m s-1].
    doy : numpy.ndarray of int64
        Day of the year, 1-366 (not checked here) [day].
    lat_deg : float
        Latitude, negative south [°].
    elevation_m : float
        Site elevation [m].
    cn, cd : float
        Numerator [K mm s3 Mg-1 d-1] and denominator [s m-1] constants of eq. 6.
    sigma : float
        Stefan-Boltzmann constant [MJ K-4 m-2 d-1].
    rs_rso_lower : float
        Lower bound on Rs/Rso (-inf for FAO-56, 0.3 for ASCE) [-].
    slope_coefficient : float
        Coefficient of the vapour-pressure slope, 4098 x 0.6108 or 2503 [kPa °C].
    vpd_floor : float
        Lowest vapour pressure deficit (-inf or 0) [kPa].

    Returns
    -------
    numpy.ndarray of float64
        Reference evaporation [mm d-1]; NaN where an input is NaN.

    Notes
    -----
    Same equations as :func:`coveryield.physics.evaporation.fao56_reference_evaporation`.
    Days are taken in blocks: the block's Rso values are first gathered from the day-of-year
    table, then a branch-free loop (polynomial exp, selects for the bounds) computes eq. 6 and
    vectorizes. Days whose exponent lies outside the polynomial's range are redone with math.exp.
    """
    n = tmax_c.shape[0]
    out = np.empty(n)
    ra_table, rso_table = radiation_tables(lat_deg, elevation_m)
    pressure = (
        SEA_LEVEL_PRESSURE_KPA * ((293.0 - 0.0065 * elevation_m) / 293.0) ** 5.26
    )  # FAO-56 eq. 7
    gamma = PSYCHROMETRIC_FACTOR_PER_C * pressure  # FAO-56 eq. 8
    rso_block = np.empty(_BLOCK_DAYS)
    outside = 0
    for start in range(0, n, _BLOCK_DAYS):
        stop = min(start + _BLOCK_DAYS, n)
        for i in range(start, stop):
            rso_block[i - start] = rso_table[doy[i] - 1]  # FAO-56 eqs. 21, 37 by table
        for i in range(start, stop):
            tmax = tmax_c[i]
            tmin = tmin_c[i]
            x_max = _exponent(tmax)
            x_min = _exponent(tmin)
            x_mean = _exponent(0.5 * (tmax + tmin))
            outside += (
                (x_max < EXP_ARG_MIN)
                | (x_max > EXP_ARG_MAX)
                | (x_min < EXP_ARG_MIN)
                | (x_min > EXP_ARG_MAX)
                | (x_mean < EXP_ARG_MIN)
                | (x_mean > EXP_ARG_MAX)
            )
            out[i] = _reference_day(
                tmax,
                tmin,
                ea_kpa[i],
                rs_mj[i],
                u2_ms[i],
                rso_block[i - start],
                _exp_poly(x_max),
                _exp_poly(x_min),
                _exp_poly(x_mean),
                gamma,
                cn,
                cd,
                sigma,
                rs_rso_lower,
                slope_coefficient,
                vpd_floor,
            )
    if outside:
        for i in range(n):
            tmax = tmax_c[i]
            tmin = tmin_c[i]
            x_max = _exponent(tmax)
            x_min = _exponent(tmin)
            x_mean = _exponent(0.5 * (tmax + tmin))
            if (
                (x_max < EXP_ARG_MIN)
                | (x_max > EXP_ARG_MAX)
                | (x_min < EXP_ARG_MIN)
                | (x_min > EXP_ARG_MAX)
                | (x_mean < EXP_ARG_MIN)
                | (x_mean > EXP_ARG_MAX)
            ):
                out[i] = _reference_day(
                    tmax,
                    tmin,
                    ea_kpa[i],
                    rs_mj[i],
                    u2_ms[i],
                    rso_table[doy[i] - 1],
                    math.exp(x_max),
                    math.exp(x_min),
                    math.exp(x_mean),
                    gamma,
                    cn,
                    cd,
                    sigma,
                    rs_rso_lower,
                    slope_coefficient,
                    vpd_floor,
                )
    return out


def reference_et_fused(
    tmax_c, tmin_c, ea_kpa, rs_mj, u2_ms, doy, lat_deg, elevation_m, method="fao56"
):
    """Daily reference evaporation for one site through the compiled kernel.

    Parameters
    ----------
    tmax_c, tmin_c : array_like
        Daily maximum and minimum air temperature [°C].
    ea_kpa : array_like
        Actual vapour pressure [kPa].
    rs_mj : array_like
        Incoming solar radiation [MJ m-2 d-1].
    u2_ms : array_like
        Wind speed at 2 m [m s-1].
    doy : array_like of int
        Day of the year, 1-366 [day].
    lat_deg : float
        Latitude, -90 to 90, negative south [°].
    elevation_m : float
        Site elevation [m].
    method : {"fao56", "asce-short", "asce-tall"}, optional
        Reference variant (see :data:`coveryield.physics.evaporation.REFERENCE_METHODS`).

    Returns
    -------
    numpy.ndarray
        Reference evaporation [mm d-1].

    Raises
    ------
    ValueError
        If a day of year lies outside 1-366, the latitude outside -90 to 90, the arrays differ
        in length, or the method is unknown.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 6 and chain; ASCE-EWRI (2005), eq. 1.
    """
    m = reference_method(method)
    arrays = [
        np.ascontiguousarray(a, dtype=np.float64).reshape(-1)
        for a in (tmax_c, tmin_c, ea_kpa, rs_mj, u2_ms)
    ]
    days = np.ascontiguousarray(doy, dtype=np.int64).reshape(-1)
    n = days.shape[0]
    if any(a.shape[0] != n for a in arrays):
        raise ValueError(f"inputs differ in length: {[a.shape[0] for a in arrays] + [n]}")
    if n and (days.min() < 1 or days.max() > _DAYS_IN_TABLE):
        raise ValueError(f"day of year must lie in 1-366, got {days.min()}..{days.max()}")
    if not -90.0 <= float(lat_deg) <= 90.0:
        raise ValueError(f"latitude must lie in -90..90 degrees, got {lat_deg}")
    return reference_et_kernel(
        *arrays,
        days,
        float(lat_deg),
        float(elevation_m),
        m.cn,
        m.cd,
        m.sigma,
        m.rs_rso_lower,
        m.slope_coefficient,
        m.vpd_floor,
    )
