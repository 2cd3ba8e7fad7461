"""Evaporative forcing: joins a climate record and a cover to the evaporation physics.

Two functions, both returning daily series on the climate record's date index:

* :func:`reference_et` - grass (or alfalfa) reference evaporation, FAO-56 eq. 6.
* :func:`cover_evaporation` - the three potential rates the engine needs for one cover: the dry
  canopy, the wet canopy (which drives interception loss) and the soil surface.

Reference evaporation and the dry and wet canopy rates are computed by the compiled kernels of
:mod:`coveryield.physics.fused`, which take the day of year from the record's dates inside the
loop; the equivalent numpy chains here serve records too short to be worth loading the compiler
runtime when nothing else has loaded it (see :func:`_compiled_path`). The two agree to
1e-9 mm/d (``tests/physics/test_fused.py``, ``tests/physics/test_forcing.py``).

References
----------
.. [1] Allen, R. G., Pereira, L. S., Raes, D., & Smith, M. (1998). Crop evapotranspiration.
   FAO Irrigation and Drainage Paper 56. Eqs. 3, 4, 6, 47 and 58 (ETc = Kc ETo).
.. [2] Monteith, J. L. (1965). Evaporation and environment. Symp. Soc. Exp. Biol. 19, 205-234.
.. [3] de Bruin, H. A. R. (1982). J. Hydrol. 59, 261-274; Finch, J. W. (2001). Hydrol.
   Processes 15, 2771-2778; McJannet et al. (2008) (open water with heat storage and the wind
   function of small water bodies; see coveryield.physics.open_water).
"""

from __future__ import annotations

import functools
import sys

import numpy as np
import pandas as pd

from .errors import ClimateFileError
from .physics.evaporation import (
    aerodynamic_resistance,
    fao56_reference_evaporation,
    penman_monteith,
)
from .physics.meteo import atmospheric_pressure, mean_saturation_vapour_pressure
from .physics.open_water import open_water_evaporation
from .physics.soil_evaporation import (
    maximum_crop_coefficient,
    minimum_relative_humidity,
    soil_evaporation_energy,
)
from .physics.radiation import (
    clear_sky_radiation,
    net_longwave_radiation,
    net_radiation,
    net_shortwave_radiation,
)
from .physics.wind import reference_height, wind_above_canopy, wind_speed_at_2m

#: Columns of ``climate.daily`` this module reads.
REQUIRED_COLUMNS = ("tmax_c", "tmin_c", "ea_kpa", "wind_ms", "rs_mj")
#: Lowest wind speed used for a cover's aerodynamic resistance, which is infinite in calm air
#: [m s-1] (FAO-56 advises about 0.5 m s-1 as a lower limit; from memory).
MIN_WIND_FOR_RESISTANCE_MS = 0.5
#: Records at least this long use the compiled kernels even when the compiler runtime is not
#: loaded yet [days]. Below it, and with numba not imported, the numpy chain takes a few
#: milliseconds, less than loading the compiler runtime (~0.25 s), which keeps a command-line
#: start fast.
COMPILED_MIN_DAYS = 100_000
#: Output columns of :func:`cover_evaporation`.
EVAPORATION_COLUMNS = ("dry_mm", "wet_mm", "soil_mm")
_EVAPORATION_INDEX = pd.Index(EVAPORATION_COLUMNS)


def _compiled_path(n_days):
    """Tell whether the compiled kernels should compute a record of ``n_days`` days.

    Always once numba is imported (loading a cached kernel then costs milliseconds), and for
    long records (:data:`COMPILED_MIN_DAYS`) in any case. Both paths give the same numbers.
    """
    return n_days >= COMPILED_MIN_DAYS or "numba" in sys.modules


def _daily_inputs(climate):
    """Take the date index and the columns the physics needs; one clear error if absent."""
    daily = climate.daily
    try:
        columns = {c: daily[c].to_numpy(dtype=float) for c in REQUIRED_COLUMNS}
    except KeyError:
        missing = [c for c in REQUIRED_COLUMNS if c not in daily.columns]
        raise ClimateFileError(
            f"climate record lacks column(s) {', '.join(missing)}; "
            f"expected {', '.join(REQUIRED_COLUMNS)}"
        ) from None
    return daily.index, columns


def _dates(index):
    """Return the record's dates as datetime64 values (local calendar dates if zoned)."""
    dates = index if isinstance(index, pd.DatetimeIndex) else pd.DatetimeIndex(index)
    if dates.tz is not None:
        dates = dates.tz_localize(None)
    return dates.to_numpy()


def _day_of_year(index, compiled):
    """Day of year 1-366 of each date of the index [day]."""
    if compiled:
        from .physics.fused import day_of_year

        return day_of_year(_dates(index))
    return pd.DatetimeIndex(_dates(index)).dayofyear.to_numpy()


def reference_et(climate, method="fao56"):
    """Daily reference evaporation for a climate record.

    Parameters
    ----------
    climate : Climate
        Record with ``daily`` (DatetimeIndex; columns ``tmax_c`` [°C], ``tmin_c`` [°C],
        ``ea_kpa`` [kPa], ``rs_mj`` [MJ m-2 d-1], ``wind_ms`` [m s-1]) and ``site``
        (``latitude_deg`` [°], ``elevation_m`` [m], ``wind_height_m`` [m]).
    method : {"fao56", "asce-short", "asce-tall"}, optional
        FAO-56 grass reference (eq. 6) or the ASCE-EWRI (2005) short or tall reference.

    Returns
    -------
    pandas.Series
        Reference evaporation ``et0_mm`` [mm d-1] on the record's date index.

    Notes
    -----
    Wind is brought to 2 m by FAO-56 eq. 47, then the whole chain runs in the compiled kernel,
    which takes the day of year from the dates (or in numpy, see :func:`_compiled_path`).

    References
    ----------
    FAO-56 (Allen et al. 1998), eqs. 6 and 47; ASCE-EWRI (2005), eq. 1.
    """
    index, col = _daily_inputs(climate)
    site = climate.site
    if _compiled_path(len(index)):
        from .physics.fused import reference_et_dated

        et0 = reference_et_dated(
            col["tmax_c"],
            col["tmin_c"],
            col["ea_kpa"],
            col["rs_mj"],
            col["wind_ms"],
            _wind_factor_to_2m(float(site.wind_height_m)),
            _dates(index),
            site.latitude_deg,
            site.elevation_m,
            method,
        )
    else:
        et0 = fao56_reference_evaporation(
            col["tmax_c"],
            col["tmin_c"],
            col["ea_kpa"],
            col["rs_mj"],
            wind_speed_at_2m(col["wind_ms"], site.wind_height_m),  # FAO-56 eq. 47
            _day_of_year(index, compiled=False),
            site.latitude_deg,
            site.elevation_m,
            method,
        )
    return pd.Series(et0, index=index, name="et0_mm")


@functools.lru_cache(maxsize=64)
def _wind_factor_to_2m(wind_height_m):
    """u2 / uz for wind measured at ``wind_height_m`` over grass (FAO-56 eq. 47) [-]."""
    return float(wind_speed_at_2m(1.0, wind_height_m))


@functools.lru_cache(maxsize=256)
def canopy_wind_terms(station_wind_height_m, canopy_height_m):
    """Wind and aerodynamic terms of a cover that do not change from day to day.

    Parameters
    ----------
    station_wind_height_m : float
        Height of the station's wind measurement over grass [m].
    canopy_height_m : float
        Height of the cover's canopy [m].

    Returns
    -------
    wind_factor : float
        Wind at the cover's reference height per unit station wind [-] (the log profiles of
        :func:`coveryield.physics.wind.wind_above_canopy` are linear in the wind).
    inv_ra_per_wind : float
        1 / (ra u) at the reference height (FAO-56 eq. 4, ra is inversely proportional to
        the wind u there) [-].

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 4 and its notes (d = 2/3 h, z0m = 0.123 h); Wieringa (1986)
    for the blending height (see :mod:`coveryield.physics.wind`).
    """
    z_ref = reference_height(canopy_height_m)
    wind_factor = wind_above_canopy(1.0, station_wind_height_m, canopy_height_m, z_ref)
    ra_times_wind = aerodynamic_resistance(1.0, z_ref, canopy_height_m)  # FAO-56 eq. 4, u = 1
    return float(wind_factor), float(1.0 / ra_times_wind)


def canopy_rates_numpy(col, doy, site, cover):
    """Penman-Monteith rates of a cover's canopy, dry (cover's rs) and wet (rs = 0) [mm d-1].

    The numpy chain, step by step through :mod:`coveryield.physics`; the compiled kernel
    :func:`coveryield.physics.fused.canopy_evaporation_kernel` computes the same numbers. Dew
    (negative rates) is set to 0.
    """
    tmax, tmin, ea, rs = col["tmax_c"], col["tmin_c"], col["ea_kpa"], col["rs_mj"]
    tmean = 0.5 * (tmax + tmin)  # FAO-56 eq. 9
    pressure = atmospheric_pressure(site.elevation_m)
    es = mean_saturation_vapour_pressure(tmax, tmin)
    rso = clear_sky_radiation(site.latitude_deg, doy, site.elevation_m)
    rn = net_radiation(
        net_shortwave_radiation(rs, cover.albedo), net_longwave_radiation(tmax, tmin, ea, rs, rso)
    )  # FAO-56 eqs. 37-40, cover albedo
    wind = np.maximum(col["wind_ms"], MIN_WIND_FOR_RESISTANCE_MS)
    z_ref = reference_height(cover.height_m)
    u_ref = wind_above_canopy(wind, site.wind_height_m, cover.height_m, z_ref)
    ra = aerodynamic_resistance(u_ref, z_ref, cover.height_m)  # FAO-56 eq. 4 above the canopy
    dry = penman_monteith(rn, 0.0, tmean, es, ea, pressure, ra, cover.rs_s_per_m)  # FAO-56 eq. 3
    wet = penman_monteith(rn, 0.0, tmean, es, ea, pressure, ra, 0.0)  # FAO-56 eq. 3, rs = 0
    return np.maximum(dry, 0.0), np.maximum(wet, 0.0)


def _compiled_canopy_inputs(index, col, site, cover):
    """Arguments the compiled canopy kernels share: the record, the site and the cover's terms."""
    wind_factor, inv_ra_per_wind = canopy_wind_terms(
        float(site.wind_height_m), float(cover.height_m)
    )
    record = (col["tmax_c"], col["tmin_c"], col["ea_kpa"], col["rs_mj"], col["wind_ms"],
              _dates(index), site.latitude_deg, site.elevation_m)
    terms = {
        "albedo": cover.albedo,
        "rs_s_per_m": cover.rs_s_per_m,
        "wind_factor": wind_factor,
        "inv_ra_per_wind": inv_ra_per_wind,
        "min_wind_ms": MIN_WIND_FOR_RESISTANCE_MS,
    }
    return record, terms


def _canopy_rates(index, col, site, cover, rates, compiled):
    """Fill columns 0 and 1 of ``rates`` with the dry and wet canopy rates [mm d-1]."""
    if not compiled:
        doy = _day_of_year(index, compiled=False)
        rates[:, 0], rates[:, 1] = canopy_rates_numpy(col, doy, site, cover)
        return
    from .physics.fused import canopy_evaporation_dated

    record, terms = _compiled_canopy_inputs(index, col, site, cover)
    canopy_evaporation_dated(*record, **terms, dry_mm=rates[:, 0], wet_mm=rates[:, 1])


def _land_rates_compiled(index, col, site, cover, rates, et0_mm):
    """Fill the three rates of a land cover without a crop calendar in one compiled pass."""
    from .physics.fused import cover_rates_dated

    record, terms = _compiled_canopy_inputs(index, col, site, cover)
    cover_rates_dated(
        *record,
        **terms,
        wind_factor_2m=_wind_factor_to_2m(float(site.wind_height_m)),
        height_m=cover.height_m,
        et0_mm=et0_mm,
        dry_mm=rates[:, 0],
        wet_mm=rates[:, 1],
        soil_mm=rates[:, 2],
    )


def _open_water_rate(col, doy, site, cover):
    """Open-water evaporation with the water body's heat storage [mm d-1]."""
    evaporation, _, _ = open_water_evaporation(
        col["tmax_c"],
        col["tmin_c"],
        col["ea_kpa"],
        col["rs_mj"],
        wind_speed_at_2m(col["wind_ms"], site.wind_height_m),  # FAO-56 eq. 47
        doy,
        site.latitude_deg,
        site.elevation_m,
        depth_m=cover.water_depth_m,
        albedo=cover.albedo,
        fetch_m=cover.water_fetch_m,
    )
    return evaporation


def _soil_energy(col, doy, site, cover, et0, dry):
    """Energy left for soil evaporation, (Kc,max ETo - E_dry)+ (FAO-56 eqs. 71-72) [mm d-1]."""
    height = cover.height_m
    if cover.kc_calendar is not None:  # a crop's height follows its season; bare soil: 0
        height = height * cover.kc_calendar.development(doy, site.latitude_deg)
    with np.errstate(divide="ignore", invalid="ignore"):
        kcb = np.where(et0 > 0.0, dry / et0, 0.0)  # the cover's dry rate stands in for Kcb ETo
    kc_max = maximum_crop_coefficient(
        wind_speed_at_2m(col["wind_ms"], site.wind_height_m),
        minimum_relative_humidity(col["ea_kpa"], col["tmax_c"]),
        height,
        kcb,
    )  # FAO-56 eq. 72
    return soil_evaporation_energy(et0, dry, kc_max)  # FAO-56 eq. 71, Kr = 1


def cover_evaporation(climate, cover, et0_mm=None):
    """Daily potential evaporation rates of one cover under a climate record.

    Parameters
    ----------
    climate : Climate
        Record as for :func:`reference_et`.
    cover : Cover
        Land cover (``albedo`` [-], ``height_m`` [m], ``rs_s_per_m`` [s m-1], ``is_water``,
        ``kc_calendar`` [-], ``water_depth_m`` [m], ``water_fetch_m`` [m]).
    et0_mm : pandas.Series, optional
        FAO-56 reference evaporation on the same index [mm d-1]; computed when not given
        (pass it to save time when several covers share one record).

    Returns
    -------
    pandas.DataFrame
        On the record's date index, three potential rates, all in mm d-1:

        ===========  ======  ================================================================
        column       unit    what it is
        ===========  ======  ================================================================
        ``dry_mm``   mm d-1  dry-canopy transpiration at full supply, per unit ground area
        ``wet_mm``   mm d-1  evaporation of a fully wet canopy (rain held on leaves), per
                             unit canopy-covered area
        ``soil_mm``  mm d-1  energy left for soil evaporation, per unit ground area
        ===========  ======  ================================================================

        ``dry_mm``: Penman-Monteith (eq. 3) with the cover's albedo, surface resistance and an
        aerodynamic resistance (eq. 4) taken at the cover's reference height with the station
        wind moved above the canopy; for a cover with a Kcb calendar, Kcb(doy) ETo in season
        and 0 outside it.

        ``wet_mm``: the same with rs = 0, the rate at which rain held on leaves evaporates.
        For a tall, rough canopy it is large: with rs = 0 and an aerodynamic resistance of only
        about 5-20 s m-1 (against 70-200 s m-1 for grass), the vapour-pressure-deficit term of
        eq. 3, no longer held back by stomata, dominates, so on warm, dry, windy days it reaches
        12-20 mm d-1, several times the dry-canopy rate. That is expected, not an error (wet
        forest canopies evaporating several times faster than dry ones is well documented, e.g.
        Calder 1990; quoted from memory): it applies only while leaves are wet, and the store
        (``canopy_capacity_mm``, or 0.2 mm per unit LAI) bounds each day's interception loss to
        a few mm. 0 outside a crop's season (no canopy).

        ``soil_mm``: (Kc,max·ETo − dry_mm)⁺, FAO-56 eq. 71's (Kc,max − Kcb)·ETo with the dry
        rate standing in for Kcb·ETo and Kc,max from eq. 72. The engine limits it by the
        exposed share of the ground and by the drying of the surface layer (eqs. 71-77).

        For open water, dry_mm = wet_mm = open-water evaporation with heat storage
        (:mod:`coveryield.physics.open_water`) and soil_mm = 0.
        Negative rates (dew) are set to 0 (common practice, no source).

    References
    ----------
    FAO-56 (Allen et al. 1998), eqs. 3, 4, 6, 69-72; Monteith (1965); de Bruin (1982).
    Calder, I. R. (1990), Evaporation in the Uplands, Wiley (wet-canopy evaporation and
    interception loss of forest; cited from memory).
    """
    index, col = _daily_inputs(climate)
    site = climate.site
    compiled = _compiled_path(len(index))
    # columns contiguous (Fortran order); np.empty reuses freed memory where np.zeros would
    # take fresh pages from the system, whose first writes cost more than filling a column
    rates = np.empty((len(index), len(EVAPORATION_COLUMNS)), order="F")
    if compiled and not cover.is_water and cover.kc_calendar is None:
        _land_rates_compiled(index, col, site, cover, rates, et0_mm)  # dew already set to 0
        return pd.DataFrame(rates, index=index, columns=_EVAPORATION_INDEX, copy=False)
    rates[:, 2] = 0.0  # bare soil: none unless a branch below sets it
    if cover.is_water:
        water = _open_water_rate(col, _day_of_year(index, compiled), site, cover)
        rates[:, 0] = water
        rates[:, 1] = water
    else:
        _canopy_rates(index, col, site, cover, rates, compiled)
        et0 = np.clip(
            reference_et(climate).to_numpy() if et0_mm is None else np.asarray(et0_mm, float),
            0.0,
            None,
        )
        doy = _day_of_year(index, compiled)
        if cover.kc_calendar is not None:
            kcb, in_season = cover.kc_calendar.kc(doy, latitude_deg=site.latitude_deg)
            rates[:, 0] = np.where(in_season, kcb * et0, 0.0)  # FAO-56 eq. 69, Kcb ETo
            rates[:, 1] = np.where(in_season, rates[:, 1], 0.0)
        rates[:, 2] = _soil_energy(col, doy, site, cover, et0, np.maximum(rates[:, 0], 0.0))
    np.maximum(rates, 0.0, out=rates)  # dew is not evaporation (NaN stays NaN)
    return pd.DataFrame(rates, index=index, columns=_EVAPORATION_INDEX, copy=False)
