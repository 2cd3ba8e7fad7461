"""Compiled evaporation kernels: the FAO-56 chain fused into one pass over the days.

:func:`reference_et_kernel` and :func:`reference_et_dated_kernel` compute the same numbers as
:func:`coveryield.physics.evaporation.fao56_reference_evaporation`, and
:func:`canopy_evaporation_kernel` the dry- and wet-canopy Penman-Monteith rates of the numpy
chain in :mod:`coveryield.forcing` (agreement to 1e-9 mm d-1 is tested), each in a
single numba loop:

* pressure and gamma are computed once per site, 1/Rso (FAO-56 eqs. 21, 37) once per day of
  year in a 366-entry table;
* the day of year comes from the record's int64 dates inside the kernel (days since 1970-01-01
  by the civil-calendar algorithm of Hinnant 2013): a record of consecutive days is filled year
  by year with slices of the table, any other dates day by day. Nothing per day is built in
  pandas or Python;
* each day's three saturation exponentials (at Tmax, Tmin and Tmean) use a branch-free
  polynomial (:func:`_exp_poly`, relative error below 3e-14), so the day loop vectorizes (numba
  offers no vector exp without Intel's SVML); the rare days whose exponent falls outside the
  polynomial's range, or is NaN, are redone with ``math.exp`` in a second loop;
* the output array first holds each day's 1/Rso, then the day loop replaces it with the result:
  no temporary array of the record's length (a fresh one costs page faults on every call).

The compiled code is cached on disk (``cache=True``), so only the first run after installation
pays for compilation. The cache is keyed on this file: after changing a constant imported from
another module, clear ``__pycache__`` here.

References
----------
.. [1] Allen, R. G., Pereira, L. S., Raes, D., & Smith, M. (1998). FAO Irrigation and Drainage
   Paper 56, eqs. 3, 4, 6-13, 21-25, 37-40; Annex 3 eq. 3-5.
.. [2] ASCE-EWRI (2005). The ASCE Standardized Reference Evapotranspiration Equation, eqs. 1-18.
.. [3] Monteith, J. L. (1965). Evaporation and environment. Symp. Soc. Exp. Biol. 19, 205-234.
.. [4] Hinnant, H. (2013). chrono-Compatible Low-Level Date Algorithms, ``civil_from_days``
   (proleptic Gregorian calendar from a day count; public domain).
"""

from __future__ import annotations

import functools
import math

import numpy as np
from numba import njit

from .evaporation import SECONDS_PER_DAY, reference_method
from .meteo import (
    AIR_DENSITY_FACTOR,
    KELVIN_OFFSET_K,
    LATENT_HEAT_MJ_PER_KG,
    PSYCHROMETRIC_FACTOR_PER_C,
    RADIATION_TO_EVAPORATION_MM_PER_MJ,
    SATURATION_A_KPA,
    SATURATION_B,
    SATURATION_C_C,
    SEA_LEVEL_PRESSURE_KPA,
    SPECIFIC_HEAT_AIR_MJ_PER_KG_C,
)
from .radiation import REFERENCE_ALBEDO, SOLAR_CONSTANT_MJ_PER_M2_MIN, STEFAN_BOLTZMANN_FAO56

_DAYS_IN_TABLE = 366
#: Days from 0000-03-01 to 1970-01-01 in the proleptic Gregorian calendar (Hinnant 2013) [d].
_EPOCH_FROM_MARCH_0000_D = 719468
#: Days in 400 Gregorian years [d].
_DAYS_PER_ERA = 146097
#: Days from 1 March to 31 December, i.e. day of a March-based year on which 1 January falls [d].
_MARCH_TO_JANUARY_D = 306
#: Slope of the saturation curve, 4098 x 0.6108 (FAO-56 eq. 13) [kPa °C].
_FAO56_SLOPE_COEFFICIENT = 4098.0 * SATURATION_A_KPA


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


# ------------------------------------------------------------------------------------ calendar


@njit(cache=True, inline="always")
def _leap(year):  # pragma: no cover - compiled
    """1 for a leap year of the Gregorian calendar, else 0."""
    return 1 if (year % 4 == 0 and year % 100 != 0) or year % 400 == 0 else 0


@njit(cache=True)
def day_of_year_and_length(day):  # pragma: no cover - compiled
    """Day of the year and the length of that year for a day count from 1970-01-01.

    Parameters
    ----------
    day : int
        Days since 1970-01-01 (negative before) [d].

    Returns
    -------
    doy : int
        Day of the year, 1-366 [day].
    year_days : int
        Length of that calendar year, 365 or 366 [d].

    References
    ----------
    Hinnant (2013), ``civil_from_days``: 400-year eras of the proleptic Gregorian calendar,
    years counted from 1 March so that the leap day ends the year.
    """
    z = day + _EPOCH_FROM_MARCH_0000_D
    era = z // _DAYS_PER_ERA  # floor division: also right before 1970
    day_of_era = z - era * _DAYS_PER_ERA  # 0 .. 146096
    year_of_era = (
        day_of_era - day_of_era // 1460 + day_of_era // 36524 - day_of_era // 146096
    ) // 365  # 0 .. 399
    march_year = year_of_era + era * 400
    from_march = day_of_era - (365 * year_of_era + year_of_era // 4 - year_of_era // 100)
    if from_march >= _MARCH_TO_JANUARY_D:  # January or February: the next calendar year
        year = march_year + 1
        doy = from_march - _MARCH_TO_JANUARY_D + 1
    else:
        year = march_year
        doy = from_march + 60 + _leap(year)  # 1 March is day 60 (61 in a leap year)
    return doy, 365 + _leap(year)


@njit(cache=True)
def _one_day_apart(dates, units_per_day):  # pragma: no cover - compiled
    """Tell whether every date follows the one before by one day (a vectorized check)."""
    apart = True
    for i in range(1, dates.shape[0]):
        apart &= dates[i] - dates[i - 1] == units_per_day
    return apart


@njit(cache=True)
def _daily_table_values(table, doy, dates, units_per_day, out):  # pragma: no cover - compiled
    """out[i] = table[day of year of day i - 1] for a table over day of year 1-366.

    The day of year is ``doy[i]`` when ``dates`` is empty, else that of ``dates[i]``. A record
    of consecutive days is filled year by year, each year one slice of the table; other dates
    day by day.
    """
    n = out.shape[0]
    if dates.shape[0] == 0:
        for i in range(n):
            out[i] = table[doy[i] - 1]
    elif _one_day_apart(dates, units_per_day):
        i = 0
        while i < n:
            first_doy, year_days = day_of_year_and_length(dates[i] // units_per_day)
            run = min(year_days - first_doy + 1, n - i)
            shift = first_doy - 1 - i
            for d in range(i, i + run):
                out[d] = table[d + shift]
            i += run
    else:
        for i in range(n):
            out[i] = table[day_of_year_and_length(dates[i] // units_per_day)[0] - 1]


@njit(cache=True, inline="always")
def _table_value(table, doy, dates, units_per_day, i):  # pragma: no cover - compiled
    """table[day of year of day i - 1], the day of year as in :func:`_daily_table_values`."""
    if dates.shape[0] == 0:
        return table[doy[i] - 1]
    return table[day_of_year_and_length(dates[i] // units_per_day)[0] - 1]


#: NaT as an int64 count.
_NAT = np.datetime64("NaT").view(np.int64)
_DOY_TABLE = np.arange(1, _DAYS_IN_TABLE + 1, dtype=np.int64)
_NO_DATES = np.empty(0, dtype=np.int64)


@njit(cache=True)
def day_of_year_kernel(dates, units_per_day):  # pragma: no cover - compiled
    """Day of the year of each date.

    Parameters
    ----------
    dates : numpy.ndarray of int64
        Instants as counts of a unit since 1970-01-01T00:00 (a datetime64 array viewed as int64).
    units_per_day : int
        Units in one day (86,400,000,000,000 for nanoseconds).

    Returns
    -------
    numpy.ndarray of int64
        Day of the year, 1-366 [day].
    """
    out = np.empty(dates.shape[0], dtype=np.int64)
    _daily_table_values(_DOY_TABLE, _NO_DATES, dates, units_per_day, out)
    return out


# ----------------------------------------------------------------------------- saturation terms

#: Inverse factorials 1/k!, k = 0..9, the Taylor coefficients of exp.
_TAYLOR = tuple(1.0 / math.factorial(k) for k in range(10))
#: Exponents 17.27 T / (T + 237.3) inside this range use the polynomial exp (T from about
#: -75 to +96 °C, beyond any accepted climate record); others are recomputed with math.exp [-].
EXP_ARG_MIN, EXP_ARG_MAX = -8.0, 5.0
#: Floating-point freedoms the compiler may use (no "nnan"/"ninf": NaN still propagates).
_FASTMATH = {"contract", "arcp", "nsz", "reassoc"}


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _exp_poly(x):  # pragma: no cover - compiled
    """exp(x) for -8 <= x <= 5 as (Taylor polynomial of exp(x/64), degree 9)^64.

    Relative error below 3e-14 (tested against math.exp); branch-free, so the day loop
    vectorizes where a call to the C library exp would not.
    """
    y = x * 0.015625
    p = _TAYLOR[9]
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
    p = p * p
    p = p * p
    return p * p


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _exponents(tmax, tmin):  # pragma: no cover - compiled
    """17.27 T/(T + 237.3) at Tmax, Tmin and Tmean (FAO-56 eqs. 9, 11), and 1/(Tmean + 237.3)."""
    tmean = 0.5 * (tmax + tmin)  # FAO-56 eq. 9
    inv_mean = 1.0 / (tmean + SATURATION_C_C)
    return (
        SATURATION_B * tmax / (tmax + SATURATION_C_C),
        SATURATION_B * tmin / (tmin + SATURATION_C_C),
        SATURATION_B * tmean * inv_mean,
        inv_mean,
    )


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _outside(x_max, x_min, x_mean):  # pragma: no cover - compiled
    """Tell whether the polynomial exp misses one of the exponents (also for NaN)."""
    low = min(x_max, x_min, x_mean)
    high = max(x_max, x_min, x_mean)
    return (low < EXP_ARG_MIN) | (high > EXP_ARG_MAX) | (low != low) | (high != high)


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _saturation(exp_max, exp_min, exp_mean, inv_mean, slope_coefficient):  # pragma: no cover
    """Return es (FAO-56 eqs. 11-12) [kPa] and Delta at Tmean (eq. 13) [kPa °C-1]."""
    es = 0.5 * SATURATION_A_KPA * (exp_max + exp_min)  # FAO-56 eqs. 11-12
    delta = slope_coefficient * exp_mean * inv_mean * inv_mean  # FAO-56 eq. 13
    return es, delta


# --------------------------------------------------------------------------------- day physics


@njit(cache=True)
def inverse_clear_sky_table(lat_deg, elevation_m):  # pragma: no cover - compiled
    """1 / Rso for day of year 1-366 at one site, 0 where Rso = 0 (polar night) [m2 d MJ-1].

    Parameters
    ----------
    lat_deg : float
        Latitude, negative south [°].
    elevation_m : float
        Site elevation [m].

    Returns
    -------
    numpy.ndarray, shape (366,)
        1 / Rso of day j+1 at index j (Rso by FAO-56 eqs. 21 and 37).
    """
    rso = radiation_tables(lat_deg, elevation_m)[1]
    inverse = np.zeros(_DAYS_IN_TABLE)
    for j in range(_DAYS_IN_TABLE):
        if rso[j] > 0.0:
            inverse[j] = 1.0 / rso[j]
    return inverse


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _net_longwave(tmax, tmin, ea, rs, inv_rso, sigma, rs_rso_lower):  # pragma: no cover
    """Rnl [MJ m-2 d-1] (FAO-56 eq. 39; ASCE-EWRI 2005 eq. 17)."""
    ratio = rs * inv_rso if inv_rso > 0.0 else 1.0  # Rso = 0 in polar night: ratio taken as 1
    ratio = ratio if ratio < 1.0 else 1.0
    ratio = ratio if ratio > rs_rso_lower else rs_rso_lower
    kmax = tmax + KELVIN_OFFSET_K
    kmin = tmin + KELVIN_OFFSET_K
    kmax2 = kmax * kmax
    kmin2 = kmin * kmin
    return (
        sigma
        * 0.5
        * (kmax2 * kmax2 + kmin2 * kmin2)
        * (0.34 - 0.14 * math.sqrt(ea))
        * (1.35 * ratio - 0.35)
    )  # FAO-56 eq. 39


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _net_radiation(
    tmax, tmin, ea, rs, inv_rso, albedo, sigma, rs_rso_lower
):  # pragma: no cover - compiled
    """Rn = (1 - albedo) Rs - Rnl [MJ m-2 d-1] (FAO-56 eqs. 38-40; ASCE-EWRI 2005 eq. 18)."""
    rnl = _net_longwave(tmax, tmin, ea, rs, inv_rso, sigma, rs_rso_lower)
    return (1.0 - albedo) * rs - rnl  # FAO-56 eqs. 38, 40


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _reference_day(
    tmax, tmin, ea, rs, u2, inv_rso, es, delta, gamma, cn, cd, sigma, rs_rso_lower, vpd_floor
):  # pragma: no cover - compiled
    """Eq. 6 for one day given its es and Delta [mm d-1]."""
    rn = _net_radiation(tmax, tmin, ea, rs, inv_rso, REFERENCE_ALBEDO, sigma, rs_rso_lower)
    return _reference_day_rn(tmax, tmin, ea, u2, rn, es, delta, gamma, cn, cd, vpd_floor)


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _reference_day_rn(tmax, tmin, ea, u2, rn, es, delta, gamma, cn, cd, vpd_floor):  # pragma: no cover
    """Eq. 6 for one day given its net radiation, es and Delta [mm d-1]."""
    tmean = 0.5 * (tmax + tmin)  # FAO-56 eq. 9
    vpd = es - ea
    vpd = vpd if vpd > vpd_floor else vpd_floor
    t_kelvin = tmean + 273.0
    # FAO-56 eq. 6, G = 0, multiplied through by T + 273: one division for both denominators
    return (RADIATION_TO_EVAPORATION_MM_PER_MJ * delta * rn * t_kelvin + gamma * cn * u2 * vpd) / (
        t_kelvin * (delta + gamma * (1.0 + cd * u2))
    )


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _site_psychrometric_constant(elevation_m):  # pragma: no cover - compiled
    """Pressure (FAO-56 eq. 7) [kPa] and psychrometric constant (eq. 8) [kPa °C-1] of a site."""
    pressure = SEA_LEVEL_PRESSURE_KPA * ((293.0 - 0.0065 * elevation_m) / 293.0) ** 5.26
    return pressure, PSYCHROMETRIC_FACTOR_PER_C * pressure


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH)
def _reference_days(
    tmax_c,
    tmin_c,
    ea_kpa,
    rs_mj,
    wind_ms,
    wind_factor,
    doy,
    dates,
    units_per_day,
    inv_rso_table,
    elevation_m,
    cn,
    cd,
    sigma,
    rs_rso_lower,
    slope_coefficient,
    vpd_floor,
):  # pragma: no cover - compiled
    """Compute reference evaporation of every day [mm d-1], day of year from doy or dates.

    The output array first receives 1/Rso of each day (no second array of the record's length:
    a fresh one costs page faults on every call), then one vectorized loop replaces it with
    ETo using the polynomial exp; only if some day's exponent lies outside the polynomial's
    range (or is NaN), those days are redone with ``math.exp``.
    """
    n = tmax_c.shape[0]
    out = np.empty(n)
    _daily_table_values(inv_rso_table, doy, dates, units_per_day, out)  # FAO-56 eqs. 21, 37
    _, gamma = _site_psychrometric_constant(elevation_m)
    outside = 0
    for d in range(n):
        tmax = tmax_c[d]
        tmin = tmin_c[d]
        x_max, x_min, x_mean, inv_mean = _exponents(tmax, tmin)
        outside += _outside(x_max, x_min, x_mean)
        es, delta = _saturation(
            _exp_poly(x_max), _exp_poly(x_min), _exp_poly(x_mean), inv_mean, slope_coefficient
        )
        out[d] = _reference_day(
            tmax,
            tmin,
            ea_kpa[d],
            rs_mj[d],
            wind_factor * wind_ms[d],  # FAO-56 eq. 47 as a factor
            out[d],  # 1/Rso of the day
            es,
            delta,
            gamma,
            cn,
            cd,
            sigma,
            rs_rso_lower,
            vpd_floor,
        )
    if outside:
        for d in range(n):
            tmax = tmax_c[d]
            tmin = tmin_c[d]
            x_max, x_min, x_mean, inv_mean = _exponents(tmax, tmin)
            if _outside(x_max, x_min, x_mean):
                es, delta = _saturation(
                    math.exp(x_max), math.exp(x_min), math.exp(x_mean), inv_mean, slope_coefficient
                )
                out[d] = _reference_day(
                    tmax,
                    tmin,
                    ea_kpa[d],
                    rs_mj[d],
                    wind_factor * wind_ms[d],
                    _table_value(inv_rso_table, doy, dates, units_per_day, d),
                    es,
                    delta,
                    gamma,
                    cn,
                    cd,
                    sigma,
                    rs_rso_lower,
                    vpd_floor,
                )
    return out


@njit(cache=True)
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
    """Daily reference evaporation for one site from a day-of-year array.

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
    Same equations as :func:`coveryield.physics.evaporation.fao56_reference_evaporation`; see
    the module notes for the loop structure.
    """
    return _reference_days(
        tmax_c,
        tmin_c,
        ea_kpa,
        rs_mj,
        u2_ms,
        1.0,
        doy,
        _NO_DATES,
        1,
        inverse_clear_sky_table(lat_deg, elevation_m),
        elevation_m,
        cn,
        cd,
        sigma,
        rs_rso_lower,
        slope_coefficient,
        vpd_floor,
    )


@njit(cache=True)
def reference_et_dated_kernel(
    tmax_c,
    tmin_c,
    ea_kpa,
    rs_mj,
    wind_ms,
    wind_factor,
    dates,
    units_per_day,
    inv_rso_table,
    elevation_m,
    cn,
    cd,
    sigma,
    rs_rso_lower,
    slope_coefficient,
    vpd_floor,
):  # pragma: no cover - compiled
    """Daily reference evaporation for one site from the record's dates and station wind.

    Parameters
    ----------
    tmax_c, tmin_c, ea_kpa, rs_mj : numpy.ndarray of float64
        As for :func:`reference_et_kernel` [°C, °C, kPa, MJ m-2 d-1].
    wind_ms : numpy.ndarray of float64
        Station wind speed [m s-1].
    wind_factor : float
        u2 / wind_ms, FAO-56 eq. 47 for the station's measurement height [-].
    dates : numpy.ndarray of int64
        The record's dates as counts of a unit since 1970-01-01 (datetime64 viewed as int64).
    units_per_day : int
        Units of ``dates`` in one day.
    inv_rso_table : numpy.ndarray, shape (366,)
        :func:`inverse_clear_sky_table` of the site [m2 d MJ-1].
    elevation_m, cn, cd, sigma, rs_rso_lower, slope_coefficient, vpd_floor
        As for :func:`reference_et_kernel`.

    Returns
    -------
    numpy.ndarray of float64
        Reference evaporation [mm d-1].
    """
    return _reference_days(
        tmax_c,
        tmin_c,
        ea_kpa,
        rs_mj,
        wind_ms,
        wind_factor,
        _NO_DATES,
        dates,
        units_per_day,
        inv_rso_table,
        elevation_m,
        cn,
        cd,
        sigma,
        rs_rso_lower,
        slope_coefficient,
        vpd_floor,
    )


# ------------------------------------------------------------------------------ canopy rates


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _canopy_day(
    tmax,
    tmin,
    ea,
    rs,
    wind,
    inv_rso,
    es,
    delta,
    pressure,
    gamma,
    albedo,
    rs_s_per_m,
    wind_factor,
    inv_ra_per_wind,
    min_wind,
):  # pragma: no cover - compiled
    """Dry- and wet-canopy Penman-Monteith evaporation of one day, dew set to 0 [mm d-1]."""
    rn = _net_radiation(tmax, tmin, ea, rs, inv_rso, albedo, STEFAN_BOLTZMANN_FAO56, -np.inf)
    return _canopy_day_rn(tmax, tmin, ea, wind, rn, es, delta, pressure, gamma, rs_s_per_m,
                          wind_factor, inv_ra_per_wind, min_wind)


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _canopy_day_rn(
    tmax, tmin, ea, wind, rn, es, delta, pressure, gamma, rs_s_per_m, wind_factor,
    inv_ra_per_wind, min_wind,
):  # pragma: no cover - compiled
    """:func:`_canopy_day` given the cover's net radiation Rn [MJ m-2 d-1]."""
    tmean = 0.5 * (tmax + tmin)  # FAO-56 eq. 9
    wind = min_wind if wind < min_wind else wind  # calm air: ra would be infinite; NaN stays
    inv_ra = wind * wind_factor * inv_ra_per_wind  # 1 / ra, FAO-56 eq. 4 above the canopy
    t_kelvin = tmean + KELVIN_OFFSET_K
    rho_t = AIR_DENSITY_FACTOR * (pressure - 0.378 * ea)  # rho_a (T + 273.16), Annex 3 eq. 3-5
    dry_denominator = delta + gamma * (1.0 + rs_s_per_m * inv_ra)  # the cover's rs
    wet_denominator = delta + gamma  # rs = 0
    # FAO-56 eq. 3 multiplied through by T + 273.16; one division for all three denominators
    ratio = (
        delta * rn * t_kelvin
        + SECONDS_PER_DAY * rho_t * SPECIFIC_HEAT_AIR_MJ_PER_KG_C * (es - ea) * inv_ra
    ) / (t_kelvin * dry_denominator * wet_denominator * LATENT_HEAT_MJ_PER_KG)
    dry = wet_denominator * ratio  # FAO-56 eq. 3, the cover's rs
    wet = dry_denominator * ratio  # FAO-56 eq. 3, rs = 0
    dry = 0.0 if dry < 0.0 else dry  # dew is not evaporation (NaN stays NaN)
    wet = 0.0 if wet < 0.0 else wet
    return dry, wet


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH)
def canopy_evaporation_kernel(
    tmax_c,
    tmin_c,
    ea_kpa,
    rs_mj,
    wind_ms,
    dates,
    units_per_day,
    inv_rso_table,
    elevation_m,
    albedo,
    rs_s_per_m,
    wind_factor,
    inv_ra_per_wind,
    min_wind_ms,
    dry_mm,
    wet_mm,
):  # pragma: no cover - compiled
    """Dry- and wet-canopy evaporation of one cover by Penman-Monteith, filled in place.

    Parameters
    ----------
    tmax_c, tmin_c : numpy.ndarray of float64
        Daily maximum and minimum air temperature [°C].
    ea_kpa : numpy.ndarray of float64
        Actual vapour pressure [kPa].
    rs_mj : numpy.ndarray of float64
        Incoming solar radiation [MJ m-2 d-1].
    wind_ms : numpy.ndarray of float64
        Station wind speed over grass [m s-1].
    dates : numpy.ndarray of int64
        The record's dates as counts of a unit since 1970-01-01 (datetime64 viewed as int64).
    units_per_day : int
        Units of ``dates`` in one day.
    inv_rso_table : numpy.ndarray, shape (366,)
        :func:`inverse_clear_sky_table` of the site [m2 d MJ-1].
    elevation_m : float
        Site elevation [m].
    albedo : float
        Albedo of the cover [-] (FAO-56 eq. 38).
    rs_s_per_m : float
        Bulk surface resistance of the dry canopy [s m-1].
    wind_factor : float
        Wind at the cover's reference height per unit station wind [-].
    inv_ra_per_wind : float
        1 / (ra u) at the reference height, so that ra = 1 / (inv_ra_per_wind u) with u the
        wind there (FAO-56 eq. 4: ra u = ln((z - d)/z0m) ln((z - d)/z0h) / k^2) [-].
    min_wind_ms : float
        Station wind used at least, since ra is infinite in calm air [m s-1].
    dry_mm, wet_mm : numpy.ndarray of float64
        Outputs, one per day: evaporation of the dry canopy (the cover's rs) and of the wet
        canopy (rs = 0), negative values (dew) set to 0 [mm d-1].

    Notes
    -----
    FAO-56 eq. 3 with G = 0, the cover's albedo in eq. 38, the FAO-56 Stefan-Boltzmann constant
    and Rs/Rso capped at 1 in eq. 39, air density by Annex 3 eq. 3-5. Both rates share every
    term but the denominator. Loop structure as for :func:`_reference_days`: ``dry_mm`` first
    holds 1/Rso of each day.
    """
    n = tmax_c.shape[0]
    _daily_table_values(inv_rso_table, _NO_DATES, dates, units_per_day, dry_mm)  # 1/Rso first
    pressure, gamma = _site_psychrometric_constant(elevation_m)
    outside = 0
    for d in range(n):
        tmax = tmax_c[d]
        tmin = tmin_c[d]
        x_max, x_min, x_mean, inv_mean = _exponents(tmax, tmin)
        outside += _outside(x_max, x_min, x_mean)
        es, delta = _saturation(
            _exp_poly(x_max),
            _exp_poly(x_min),
            _exp_poly(x_mean),
            inv_mean,
            _FAO56_SLOPE_COEFFICIENT,
        )
        dry_mm[d], wet_mm[d] = _canopy_day(
            tmax,
            tmin,
            ea_kpa[d],
            rs_mj[d],
            wind_ms[d],
            dry_mm[d],  # 1/Rso of the day, replaced by the dry rate
            es,
            delta,
            pressure,
            gamma,
            albedo,
            rs_s_per_m,
            wind_factor,
            inv_ra_per_wind,
            min_wind_ms,
        )
    if outside:
        for d in range(n):
            tmax = tmax_c[d]
            tmin = tmin_c[d]
            x_max, x_min, x_mean, inv_mean = _exponents(tmax, tmin)
            if _outside(x_max, x_min, x_mean):
                es, delta = _saturation(
                    math.exp(x_max),
                    math.exp(x_min),
                    math.exp(x_mean),
                    inv_mean,
                    _FAO56_SLOPE_COEFFICIENT,
                )
                dry_mm[d], wet_mm[d] = _canopy_day(
                    tmax,
                    tmin,
                    ea_kpa[d],
                    rs_mj[d],
                    wind_ms[d],
                    _table_value(inv_rso_table, _NO_DATES, dates, units_per_day, d),
                    es,
                    delta,
                    pressure,
                    gamma,
                    albedo,
                    rs_s_per_m,
                    wind_factor,
                    inv_ra_per_wind,
                    min_wind_ms,
                )


# ------------------------------------------------------------------ a land cover's three rates


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _soil_energy_day(et0, dry, wind2, ea, exp_max, height_factor):  # pragma: no cover - compiled
    """(Kc,max ETo - E_dry)+ of one day, FAO-56 eqs. 10, 71 and 72 [mm d-1]; NaN stays NaN."""
    et0 = 0.0 if et0 < 0.0 else et0
    u2 = 1.0 if wind2 < 1.0 else wind2  # eq. 72 applies for u2 in 1-6 m s-1
    u2 = 6.0 if u2 > 6.0 else u2
    rh_min = 100.0 * ea / (SATURATION_A_KPA * exp_max)  # FAO-56 eq. 10 at Tmax
    rh_min = 20.0 if rh_min < 20.0 else rh_min  # and RHmin in 20-80 %
    rh_min = 80.0 if rh_min > 80.0 else rh_min
    kc_climate = 1.2 + (0.04 * (u2 - 2.0) - 0.004 * (rh_min - 45.0)) * height_factor  # eq. 72
    # (Kc,max ETo - E_dry) with Kc,max = max(kc_climate, Kcb + 0.05) and Kcb ETo = E_dry
    # (eqs. 71-72), multiplied out so that no division by ETo is needed
    energy = kc_climate * et0 - dry
    wetted = 0.05 * et0
    energy = wetted if wetted > energy else energy
    return 0.0 if energy < 0.0 else energy


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _cover_day(
    tmax, tmin, ea, rs, wind, inv_rso, exp_max, es, delta, pressure, gamma, et0_given, et0_in,
    albedo, rs_s_per_m, wind_factor, inv_ra_per_wind, min_wind, wind_factor_2m, height_factor,
    cn, cd, sigma, rs_rso_lower, vpd_floor,
):  # pragma: no cover - compiled
    """Dry, wet and soil rates of one day of a land cover [mm d-1] (ETo computed if not given)."""
    wind2 = wind_factor_2m * wind  # FAO-56 eq. 47 as a factor
    rnl = _net_longwave(tmax, tmin, ea, rs, inv_rso, sigma, rs_rso_lower)  # shared by both
    if et0_given:
        et0 = et0_in
    else:
        rn_grass = (1.0 - REFERENCE_ALBEDO) * rs - rnl  # FAO-56 eqs. 38, 40
        et0 = _reference_day_rn(tmax, tmin, ea, wind2, rn_grass, es, delta, gamma, cn, cd,
                                vpd_floor)  # FAO-56 eq. 6
    rn = (1.0 - albedo) * rs - rnl  # the cover's albedo
    dry, wet = _canopy_day_rn(tmax, tmin, ea, wind, rn, es, delta, pressure, gamma, rs_s_per_m,
                              wind_factor, inv_ra_per_wind, min_wind)
    return dry, wet, _soil_energy_day(et0, dry, wind2, ea, exp_max, height_factor)


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _cover_days(
    tmax_c, tmin_c, ea_kpa, rs_mj, wind_ms, pressure, gamma, et0_given, et0_mm, albedo,
    rs_s_per_m, wind_factor, inv_ra_per_wind, min_wind_ms, wind_factor_2m, height_factor, cn, cd,
    sigma, rs_rso_lower, vpd_floor, dry_mm, wet_mm, soil_mm,
):  # pragma: no cover - compiled
    """The vectorizable day loop of :func:`cover_rates_kernel`; returns the count of days whose
    exponents the polynomial exp does not cover. ``soil_mm`` holds 1/Rso on entry."""
    outside = 0
    for d in range(tmax_c.shape[0]):
        tmax = tmax_c[d]
        tmin = tmin_c[d]
        x_max, x_min, x_mean, inv_mean = _exponents(tmax, tmin)
        outside += _outside(x_max, x_min, x_mean)
        exp_max = _exp_poly(x_max)
        es, delta = _saturation(exp_max, _exp_poly(x_min), _exp_poly(x_mean), inv_mean,
                                _FAO56_SLOPE_COEFFICIENT)
        dry_mm[d], wet_mm[d], soil_mm[d] = _cover_day(
            tmax, tmin, ea_kpa[d], rs_mj[d], wind_ms[d], soil_mm[d], exp_max, es, delta,
            pressure, gamma, et0_given, et0_mm[d], albedo, rs_s_per_m, wind_factor,
            inv_ra_per_wind, min_wind_ms, wind_factor_2m, height_factor, cn, cd, sigma,
            rs_rso_lower, vpd_floor,
        )
    return outside


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH)
def cover_rates_kernel(
    tmax_c, tmin_c, ea_kpa, rs_mj, wind_ms, dates, units_per_day, inv_rso_table, elevation_m,
    et0_mm, albedo, rs_s_per_m, wind_factor, inv_ra_per_wind, min_wind_ms, wind_factor_2m,
    height_factor, cn, cd, sigma, rs_rso_lower, vpd_floor, dry_mm, wet_mm, soil_mm,
):  # pragma: no cover - compiled
    """Dry canopy, wet canopy and soil-surface rates of a land cover, filled in place.

    As :func:`canopy_evaporation_kernel`, plus in the same pass the energy left for soil
    evaporation, (Kc,max ETo - E_dry)+ with Kc,max from FAO-56 eq. 72 (u2 and RHmin limited to
    1-6 m s-1 and 20-80 %, RHmin by eq. 10 at Tmax) and ETo from ``et0_mm`` or, when that is
    empty, from FAO-56 eq. 6 with ``cn``, ``cd``, ``sigma``, ``rs_rso_lower`` and ``vpd_floor``
    of the FAO-56 grass reference. ``wind_factor_2m`` brings the station wind to 2 m (eq. 47);
    ``height_factor`` is (h/3)^0.3 of the cover's height h [-]. ``soil_mm`` first holds 1/Rso.
    Net longwave radiation is computed once a day for the grass reference and the cover: with
    the FAO-56 ``sigma`` and no lower bound on Rs/Rso it is the same term in both (eq. 39).
    """
    n = tmax_c.shape[0]
    et0_given = et0_mm.shape[0] == n
    _daily_table_values(inv_rso_table, _NO_DATES, dates, units_per_day, soil_mm)  # 1/Rso first
    pressure, gamma = _site_psychrometric_constant(elevation_m)
    if et0_given:  # two loops, so that neither tests the flag day by day
        outside = _cover_days(
            tmax_c, tmin_c, ea_kpa, rs_mj, wind_ms, pressure, gamma, True, et0_mm, albedo,
            rs_s_per_m, wind_factor, inv_ra_per_wind, min_wind_ms, wind_factor_2m,
            height_factor, cn, cd, sigma, rs_rso_lower, vpd_floor, dry_mm, wet_mm, soil_mm,
        )
    else:
        outside = _cover_days(
            tmax_c, tmin_c, ea_kpa, rs_mj, wind_ms, pressure, gamma, False, soil_mm, albedo,
            rs_s_per_m, wind_factor, inv_ra_per_wind, min_wind_ms, wind_factor_2m,
            height_factor, cn, cd, sigma, rs_rso_lower, vpd_floor, dry_mm, wet_mm, soil_mm,
        )
    if outside:
        for d in range(n):
            tmax = tmax_c[d]
            tmin = tmin_c[d]
            x_max, x_min, x_mean, inv_mean = _exponents(tmax, tmin)
            if _outside(x_max, x_min, x_mean):
                exp_max = math.exp(x_max)
                es, delta = _saturation(exp_max, math.exp(x_min), math.exp(x_mean), inv_mean,
                                        _FAO56_SLOPE_COEFFICIENT)
                dry_mm[d], wet_mm[d], soil_mm[d] = _cover_day(
                    tmax, tmin, ea_kpa[d], rs_mj[d], wind_ms[d],
                    _table_value(inv_rso_table, _NO_DATES, dates, units_per_day, d), exp_max, es,
                    delta, pressure, gamma, et0_given, et0_mm[d] if et0_given else 0.0, albedo,
                    rs_s_per_m, wind_factor, inv_ra_per_wind, min_wind_ms, wind_factor_2m,
                    height_factor, cn, cd, sigma, rs_rso_lower, vpd_floor,
                )


# ------------------------------------------------------------------------------ entry points


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
    arrays = float_arrays(tmax_c, tmin_c, ea_kpa, rs_mj, u2_ms)
    days = np.ascontiguousarray(doy, dtype=np.int64).reshape(-1)
    n = days.shape[0]
    if any(a.shape[0] != n for a in arrays):
        raise ValueError(f"inputs differ in length: {[a.shape[0] for a in arrays] + [n]}")
    if n and (days.min() < 1 or days.max() > _DAYS_IN_TABLE):
        raise ValueError(f"day of year must lie in 1-366, got {days.min()}..{days.max()}")
    check_latitude(lat_deg)
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


def float_arrays(*values):
    """Each value as a contiguous 1-D float64 array (no copy when it already is one)."""
    return [np.ascontiguousarray(v, dtype=np.float64).reshape(-1) for v in values]


def check_latitude(lat_deg):
    """Raise ValueError unless -90 <= lat_deg <= 90 [°]."""
    if not -90.0 <= float(lat_deg) <= 90.0:
        raise ValueError(f"latitude must lie in -90..90 degrees, got {lat_deg}")


def dates_as_counts(dates):
    """View datetime64 dates as int64 counts since 1970-01-01; also give counts per day.

    Parameters
    ----------
    dates : array_like of datetime64
        Dates (any unit from a day to nanoseconds); no NaT.

    Returns
    -------
    counts : numpy.ndarray of int64
        A view of the dates, no copy when they are contiguous.
    units_per_day : int
        Counts in one day (86,400,000,000,000 for nanoseconds, 1 for days).

    Raises
    ------
    ValueError
        If the dates are not datetime64, have a unit coarser than a day, or hold NaT.
    """
    values = np.ascontiguousarray(dates).reshape(-1)
    units_per_day = _units_per_day(values.dtype)
    counts = values.view(np.int64)
    if (counts == _NAT).any():  # faster than np.isnat on the dates
        raise ValueError("dates must not hold NaT (missing dates)")
    return counts, units_per_day


@functools.lru_cache(maxsize=16)
def _units_per_day(dtype):
    """Count the units of a datetime64 dtype in a day (ValueError if not a day or finer)."""
    if dtype.kind != "M":
        raise ValueError(f"dates must be datetime64 values, got dtype {dtype}")
    unit, count = np.datetime_data(dtype)
    try:
        units_per_day = np.timedelta64(1, "D") // np.timedelta64(count, unit)
    except TypeError:  # months or years: no fixed length in days
        raise ValueError(f"dates must have a unit of a day or finer, got {unit!r}") from None
    if units_per_day < 1 or np.timedelta64(units_per_day * count, unit) != np.timedelta64(1, "D"):
        raise ValueError(f"dates must have a unit that divides a day, got {count}{unit}")
    return int(units_per_day)


def day_of_year(dates):
    """Day of the year of each date (proleptic Gregorian calendar), compiled.

    Parameters
    ----------
    dates : array_like of datetime64
        Dates, see :func:`dates_as_counts`.

    Returns
    -------
    numpy.ndarray of int64
        Day of the year, 1-366 [day].

    References
    ----------
    Hinnant (2013), ``civil_from_days``.
    """
    counts, units_per_day = dates_as_counts(dates)
    return day_of_year_kernel(counts, units_per_day)


def reference_et_dated(
    tmax_c, tmin_c, ea_kpa, rs_mj, wind_ms, wind_factor, dates, lat_deg, elevation_m, method
):
    """Daily reference evaporation for one site from station wind and dates, compiled.

    Parameters
    ----------
    tmax_c, tmin_c : array_like
        Daily maximum and minimum air temperature [°C].
    ea_kpa : array_like
        Actual vapour pressure [kPa].
    rs_mj : array_like
        Incoming solar radiation [MJ m-2 d-1].
    wind_ms : array_like
        Station wind speed [m s-1].
    wind_factor : float
        u2 / wind_ms for the station's measurement height (FAO-56 eq. 47) [-].
    dates : array_like of datetime64
        Date of each day (see :func:`dates_as_counts`); the day of year is taken from it.
    lat_deg : float
        Latitude, -90 to 90, negative south [°].
    elevation_m : float
        Site elevation [m].
    method : {"fao56", "asce-short", "asce-tall"}
        Reference variant (see :data:`coveryield.physics.evaporation.REFERENCE_METHODS`).

    Returns
    -------
    numpy.ndarray
        Reference evaporation [mm d-1].

    References
    ----------
    FAO-56 (Allen et al. 1998), eqs. 6 and 47; ASCE-EWRI (2005), eq. 1.
    """
    m = reference_method(method)
    arrays = _same_length(float_arrays(tmax_c, tmin_c, ea_kpa, rs_mj, wind_ms), dates)
    counts, units_per_day = dates_as_counts(dates)
    return reference_et_dated_kernel(
        *arrays,
        float(wind_factor),
        counts,
        units_per_day,
        site_inverse_clear_sky(lat_deg, elevation_m),
        float(elevation_m),
        m.cn,
        m.cd,
        m.sigma,
        m.rs_rso_lower,
        m.slope_coefficient,
        m.vpd_floor,
    )


def canopy_evaporation_dated(
    tmax_c,
    tmin_c,
    ea_kpa,
    rs_mj,
    wind_ms,
    dates,
    lat_deg,
    elevation_m,
    *,
    albedo,
    rs_s_per_m,
    wind_factor,
    inv_ra_per_wind,
    min_wind_ms,
    dry_mm=None,
    wet_mm=None,
):
    """Dry- and wet-canopy Penman-Monteith evaporation of one cover, compiled.

    Parameters
    ----------
    tmax_c, tmin_c, ea_kpa, rs_mj, wind_ms, dates, lat_deg, elevation_m
        As for :func:`reference_et_dated` (``wind_ms`` is the station wind over grass).
    albedo : float
        Albedo of the cover [-].
    rs_s_per_m : float
        Bulk surface resistance of the dry canopy [s m-1].
    wind_factor : float
        Wind at the cover's reference height per unit station wind [-].
    inv_ra_per_wind : float
        1 / (ra u) at the reference height (FAO-56 eq. 4) [-].
    min_wind_ms : float
        Station wind used at least [m s-1].
    dry_mm, wet_mm : numpy.ndarray of float64, optional
        Contiguous arrays to fill (e.g. two columns of a Fortran-ordered table), sharing no
        memory with the inputs; new ones when omitted.

    Returns
    -------
    dry_mm, wet_mm : numpy.ndarray
        Evaporation of the dry canopy (the cover's rs) and of the wet canopy (rs = 0), dew set
        to 0 [mm d-1].

    References
    ----------
    FAO-56 (Allen et al. 1998), eqs. 3, 4 and 37-40; Monteith (1965).
    """
    arrays = _same_length(float_arrays(tmax_c, tmin_c, ea_kpa, rs_mj, wind_ms), dates)
    counts, units_per_day = dates_as_counts(dates)
    n = counts.shape[0]
    dry_mm = np.empty(n) if dry_mm is None else dry_mm
    wet_mm = np.empty(n) if wet_mm is None else wet_mm
    canopy_evaporation_kernel(
        *arrays,
        counts,
        units_per_day,
        site_inverse_clear_sky(lat_deg, elevation_m),
        float(elevation_m),
        float(albedo),
        float(rs_s_per_m),
        float(wind_factor),
        float(inv_ra_per_wind),
        float(min_wind_ms),
        dry_mm,
        wet_mm,
    )
    return dry_mm, wet_mm


def cover_rates_dated(
    tmax_c, tmin_c, ea_kpa, rs_mj, wind_ms, dates, lat_deg, elevation_m, *, albedo, rs_s_per_m,
    wind_factor, inv_ra_per_wind, min_wind_ms, wind_factor_2m, height_m, et0_mm=None,
    dry_mm=None, wet_mm=None, soil_mm=None,
):
    """Dry canopy, wet canopy and soil-surface rates of a land cover in one compiled pass.

    Parameters
    ----------
    tmax_c, tmin_c, ea_kpa, rs_mj, wind_ms, dates, lat_deg, elevation_m, albedo, rs_s_per_m,
    wind_factor, inv_ra_per_wind, min_wind_ms, dry_mm, wet_mm
        As for :func:`canopy_evaporation_dated` (°C, kPa, MJ m-2 d-1, station wind m s-1, °,
        m, -, s m-1, -, -, m s-1, mm d-1).
    wind_factor_2m : float
        Wind at 2 m over grass per unit station wind (FAO-56 eq. 47) [-].
    height_m : float
        Canopy height of the cover, for Kc,max (FAO-56 eq. 72) [m].
    et0_mm : array_like, optional
        FAO-56 grass reference evaporation of the same days [mm d-1]; computed in the same pass
        (FAO-56 eq. 6) when omitted.
    soil_mm : numpy.ndarray of float64, optional
        Contiguous array to fill with the soil-surface rate; new when omitted.

    Returns
    -------
    dry_mm, wet_mm, soil_mm : numpy.ndarray
        Dry-canopy and wet-canopy Penman-Monteith rates (dew set to 0) and the energy left for
        soil evaporation, (Kc,max ETo - E_dry)+ [mm d-1].

    References
    ----------
    FAO-56 (Allen et al. 1998), eqs. 3, 4, 6, 10, 37-40, 47, 71 and 72; Monteith (1965).
    """
    arrays = _same_length(float_arrays(tmax_c, tmin_c, ea_kpa, rs_mj, wind_ms), dates)
    counts, units_per_day = dates_as_counts(dates)
    n = counts.shape[0]
    et0 = np.empty(0) if et0_mm is None else np.ascontiguousarray(et0_mm, dtype=np.float64)
    if et0_mm is not None and et0.shape != (n,):
        raise ValueError(f"et0_mm has {et0.shape} values; expected ({n},), one per day")
    dry_mm = np.empty(n) if dry_mm is None else dry_mm
    wet_mm = np.empty(n) if wet_mm is None else wet_mm
    soil_mm = np.empty(n) if soil_mm is None else soil_mm
    m = reference_method("fao56")
    cover_rates_kernel(
        *arrays, counts, units_per_day, site_inverse_clear_sky(lat_deg, elevation_m),
        float(elevation_m), et0, float(albedo), float(rs_s_per_m), float(wind_factor),
        float(inv_ra_per_wind), float(min_wind_ms), float(wind_factor_2m),
        float((float(height_m) / 3.0) ** 0.3), float(m.cn), float(m.cd), float(m.sigma),
        float(m.rs_rso_lower), float(m.vpd_floor), dry_mm, wet_mm, soil_mm,
    )
    return dry_mm, wet_mm, soil_mm


def _same_length(arrays, dates):
    """Return ``arrays`` if each is as long as ``dates``; else raise ValueError."""
    n = len(dates)
    if any(a.shape[0] != n for a in arrays):
        raise ValueError(f"inputs differ in length: {[a.shape[0] for a in arrays] + [n]}")
    return arrays


@functools.lru_cache(maxsize=64)
def _inverse_clear_sky_cached(lat_deg, elevation_m):
    return inverse_clear_sky_table(lat_deg, elevation_m)


def site_inverse_clear_sky(lat_deg, elevation_m):
    """:func:`inverse_clear_sky_table` of a site, computed once per site and kept.

    The table is shared between calls: read it, never write to it (it stays writable so that
    the kernels need one compiled version for it and for tables made inside them).

    Raises
    ------
    ValueError
        If the latitude lies outside -90..90 degrees.
    """
    check_latitude(lat_deg)
    return _inverse_clear_sky_cached(float(lat_deg), float(elevation_m))


@njit(cache=True, error_model="numpy")
def relax_series(te_c, decay, spin_days, initial_c, use_initial):  # pragma: no cover - compiled
    """Compiled day loop of :func:`coveryield.physics.open_water.water_temperature`.

    Parameters
    ----------
    te_c : ndarray, shape (n_days,)
        Equilibrium temperature of each day [°C].
    decay : ndarray, shape (n_days,)
        exp(−K/C) of each day [-].
    spin_days : int
        Days run once to find the start temperature when ``use_initial`` is False [d].
    initial_c : float
        Start temperature when ``use_initial`` is True [°C].
    use_initial : bool
        Take ``initial_c`` as the start, else run the spin-up from Te of the first day.

    Returns
    -------
    tw_c : ndarray, shape (n_days,)
        Water temperature at the end of each day [°C].
    start_c : float
        Temperature at the start of the first day [°C].

    Notes
    -----
    Tw,end = Te + (Tw,start − Te)·exp(−K/C), the exact one-day step; the same operations in the
    same order as the plain-Python loop, so the same numbers bit for bit.
    """
    n = te_c.shape[0]
    start = initial_c
    if not use_initial:
        start = te_c[0]
        for i in range(min(spin_days, n)):
            start = te_c[i] + (start - te_c[i]) * decay[i]
    tw = np.empty(n)
    previous = start
    for i in range(n):
        previous = te_c[i] + (previous - te_c[i]) * decay[i]
        tw[i] = previous
    return tw, start


# ------------------------------------------------------------------------------- open water


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH)
def equilibrium_series(net_radiation_mj, ta_c, ea_kpa, transfer_mj, gamma, sigma,
                       steps):  # pragma: no cover - compiled
    """Compiled :func:`coveryield.physics.open_water.equilibrium_temperature` of every day.

    Parameters
    ----------
    net_radiation_mj, ta_c, ea_kpa, transfer_mj : ndarray, shape (n_days,)
        Net radiation at air temperature [MJ m-2 d-1], mean air temperature [°C], actual
        vapour pressure [kPa] and λ·f(u) [MJ m-2 d-1 kPa-1] of each day.
    gamma : float
        Psychrometric constant [kPa °C-1].
    sigma : float
        Stefan-Boltzmann constant [MJ K-4 m-2 d-1].
    steps : int
        Newton steps from T = Ta.

    Returns
    -------
    te_c, k_mj : ndarray, shape (n_days,)
        Equilibrium temperature [°C] and heat-exchange coefficient −dQ/dT there
        [MJ m-2 d-1 K-1].

    Notes
    -----
    The same Newton steps as the numpy form, one step over all days at a time so that the day
    loop vectorizes with the polynomial exp (FAO-56 eq. 11 for e°, eq. 13 from e° for its
    slope). If a temperature ever leaves the polynomial's range (or is NaN) the days are redone
    with ``math.exp``. Agreement with the numpy form to 1e-9 °C is tested.
    """
    n = ta_c.shape[0]
    te = ta_c.copy()
    k = np.empty(n)
    air_emission = np.empty(n)
    for i in range(n):
        air_kelvin = ta_c[i] + KELVIN_OFFSET_K
        air_emission[i] = sigma * air_kelvin * air_kelvin * air_kelvin * air_kelvin
    if _newton_sweeps(te, k, net_radiation_mj, ta_c, air_emission, ea_kpa, transfer_mj, gamma,
                      sigma, steps, False):  # a temperature left the polynomial's range
        te[:] = ta_c
        _newton_sweeps(te, k, net_radiation_mj, ta_c, air_emission, ea_kpa, transfer_mj, gamma,
                       sigma, steps, True)
    return te, k


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH)
def _newton_sweeps(te, k, rn, ta, air_emission, ea, transfer, gamma, sigma, steps,
                   exact):  # pragma: no cover - compiled
    """Newton steps over all days in place; returns how many exponents missed the polynomial."""
    outside = 0
    for step in range(steps + 1):
        for i in range(te.shape[0]):
            t = te[i]
            inv = 1.0 / (t + SATURATION_C_C)
            x = SATURATION_B * t * inv
            outside += (x < EXP_ARG_MIN) | (x > EXP_ARG_MAX) | (x != x)
            e0 = SATURATION_A_KPA * (math.exp(x) if exact else _exp_poly(x))  # FAO-56 eq. 11
            te[i], k[i] = _budget_newton_step(t, e0, inv, rn[i], ta[i], air_emission[i], ea[i],
                                              transfer[i], gamma, sigma, step < steps)
    return outside


@njit(cache=True, error_model="numpy", fastmath=_FASTMATH, inline="always")
def _budget_newton_step(t, e0, inv, rn, ta, air_emission, ea, transfer, gamma, sigma,
                        move):  # pragma: no cover - compiled
    """One Newton step on the water surface's budget Q(T); returns (T, −dQ/dT at the old T)."""
    t_kelvin = t + KELVIN_OFFSET_K
    cube = t_kelvin * t_kelvin * t_kelvin
    slope_k = 4.0 * sigma * cube + transfer * (gamma + 4098.0 * e0 * inv * inv)  # eq. 13
    if not move:
        return t, slope_k
    gain = rn - (sigma * cube * t_kelvin - air_emission) - transfer * (gamma * (t - ta) + e0 - ea)
    return t + gain / slope_k, slope_k
