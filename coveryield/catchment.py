"""Catchment layer: simulate every tile of a plan file once, then mix tiles by plan shares.

A tile is one cover in one zone. :func:`simulate_catchment` builds each zone's climate, the
cover's potential evaporation rates, its leaf area through the year and the engine parameters,
runs the daily loop once for all tiles, and keeps compact results (annual fluxes, daily yield and
drainage, monthly means, long-term means). :func:`mix_tiles` turns any set of shares into
catchment results as a weighted sum of those tile results — it never runs the daily loop again,
so a share change costs microseconds.

Yield, here and in every output, is the water the catchment delivers to its streams: quickflow
and drainage from the land plus the net balance of open water (rain on the water minus its
evaporation, negative when the water loses more than it receives). The two parts are also kept
apart (``land_yield_mm`` and ``open_water_net_mm``). Streamflow routes the quickflow through a
fast linear store, and the drainage and the open-water balance through the groundwater store (so
the net loss of ponds and lakes in a dry summer draws down the baseflow).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from coveryield.adjustments import adjusted_cover
from coveryield.climate import Climate, read_climate
from coveryield.errors import PlanFileError
from coveryield.forcing import cover_evaporation, reference_et
from coveryield.physics.curves import (
    ZHANG_W,
    fu_evaporation,
    fu_omega_matching_zhang,
    zhang_evaporation,
)
from coveryield.plans import PlanFile

if TYPE_CHECKING:
    from coveryield.engine.water_balance import TileParameters

# The engine (numba, ~0.15 s to load) is imported where it runs, never at import: a comparison
# read from the tile cache needs neither the daily loop nor, for the file's plans, the routing.


def simulate_tiles(*args, **kwargs):
    """Run the engine's daily loop: :func:`coveryield.engine.water_balance.simulate_tiles`."""
    from coveryield.engine.water_balance import simulate_tiles as daily_loop

    return daily_loop(*args, **kwargs)


@dataclass(frozen=True)
class TileResults:
    """Results of every tile of a catchment, simulated once.

    Attributes
    ----------
    tiles : tuple of (str, str)
        (zone, cover) of each tile, in column order of every array below.
    zone_area_share : dict
        Zone name -> share of the catchment area [-].
    area_km2 : float
        Catchment area [km2].
    recession_days : float
        Recession constant of the groundwater store that routes drainage and the open-water
        balance to streamflow [day].
    quickflow_recession_days : float
        Recession constant of the fast store that routes quickflow to streamflow [day].
    is_water : numpy.ndarray of bool
        True for each open-water tile [-].
    years : numpy.ndarray
        Complete calendar years of the record, one row per year in ``annual``.
    annual : dict of str -> numpy.ndarray
        Per flux in :data:`coveryield.engine.kernels.ANNUAL_NAMES`, array (n_years, n_tiles)
        [mm yr-1 over the tile]; ``quickflow_mm`` is the land's only, and
        ``open_water_net_mm`` holds rain minus evaporation of open-water tiles.
    dates : pandas.DatetimeIndex
        Every simulated day.
    daily_yield_mm : numpy.ndarray
        Quickflow plus drainage (rain minus evaporation for open water), (n_days, n_tiles),
        stored column-major so that each tile's series is contiguous for the weighted sums
        [mm d-1 over the tile].
    daily_slow_mm : numpy.ndarray
        The part of the daily yield that feeds the groundwater store: drainage below the root
        zone, and for open water its whole balance (rain − evaporation); laid out as
        ``daily_yield_mm`` [mm d-1 over the tile].
    month_of_day : numpy.ndarray of int
        Calendar month (1-12) of each day in a complete year, 0 for the other days [-].
    monthly_yield_mm : numpy.ndarray
        Mean yield per calendar month over complete years, (12, n_tiles) [mm month-1].
    rain_mean_mm, et0_mean_mm, evap_mean_mm : numpy.ndarray
        Long-term means per tile over complete years [mm yr-1]: rain, reference evaporation of
        the tile's zone, and the daily model's actual evaporation.
    zhang_evap_mm, fu_evap_mm : numpy.ndarray
        Mean annual evaporation per tile by the Zhang et al. (2001) curve and Fu's form from the
        tile's mean rain and reference evaporation [mm yr-1]. Open water has no such curve: its
        entries repeat the daily model's evaporation.
    """

    tiles: tuple[tuple[str, str], ...]
    zone_area_share: dict[str, float]
    area_km2: float
    recession_days: float
    quickflow_recession_days: float
    is_water: np.ndarray
    years: np.ndarray
    annual: dict[str, np.ndarray]
    dates: pd.DatetimeIndex
    daily_yield_mm: np.ndarray
    daily_slow_mm: np.ndarray
    month_of_day: np.ndarray
    monthly_yield_mm: np.ndarray
    rain_mean_mm: np.ndarray
    et0_mean_mm: np.ndarray
    evap_mean_mm: np.ndarray
    zhang_evap_mm: np.ndarray
    fu_evap_mm: np.ndarray
    notes: tuple[str, ...] = field(default=())

    @property
    def covers(self) -> tuple[str, ...]:
        """Cover names present among the tiles, in first-seen order."""
        return tuple(dict.fromkeys(cover for _, cover in self.tiles))

    def weights(self, shares: dict[str, dict[str, float]]) -> np.ndarray:
        """Catchment-area weight of each tile for a set of shares.

        Parameters
        ----------
        shares : dict
            Zone -> cover -> share of the zone [-]. Covers absent from a zone count as 0.

        Returns
        -------
        numpy.ndarray
            Weight per tile: zone area share x cover share [-]; sums to 1 for valid shares.
        """
        index = {tile: k for k, tile in enumerate(self.tiles)}
        weights = np.zeros(len(self.tiles))
        for zone, cover_shares in shares.items():
            for cover, share in cover_shares.items():
                if share == 0:
                    continue
                k = index.get((zone, cover))
                if k is None:
                    raise PlanFileError(
                        f"zone {zone!r}, cover {cover!r}: no such tile was simulated; "
                        f"known covers: {', '.join(self.covers)}"
                    )
                weights[k] = self.zone_area_share[zone] * share
        return weights


@dataclass(frozen=True)
class MixedSeries:
    """Catchment results of one set of shares (a weighted sum of tile results).

    Attributes
    ----------
    annual : dict of str -> numpy.ndarray
        Per flux, (n_years,) [mm yr-1 over the catchment].
    daily_yield_mm : numpy.ndarray
        Catchment yield per day (land yield plus the open-water balance) [mm d-1].
    flow_m3s : numpy.ndarray
        Streamflow: quickflow routed through the fast store, drainage and the open-water balance
        through the groundwater store [m3 s-1].
    monthly_yield_mm : numpy.ndarray
        Mean yield per calendar month, (12,) [mm month-1].
    monthly_land_yield_mm, monthly_open_water_mm : numpy.ndarray
        Its two parts: quickflow plus drainage from the land, and rain minus evaporation of open
        water (negative in months when the water loses more than it receives), (12,)
        [mm month-1].
    monthly_flow_m3s : numpy.ndarray
        Mean streamflow per calendar month, (12,) [m3 s-1].
    model_evap_mm, zhang_evap_mm, fu_evap_mm : float
        Mean annual evaporation from the daily model, the Zhang et al. (2001) curve and Fu's form,
        each as the area-weighted sum over tiles [mm yr-1].
    """

    annual: dict[str, np.ndarray]
    daily_yield_mm: np.ndarray
    flow_m3s: np.ndarray
    monthly_yield_mm: np.ndarray
    monthly_land_yield_mm: np.ndarray
    monthly_open_water_mm: np.ndarray
    monthly_flow_m3s: np.ndarray
    model_evap_mm: float
    zhang_evap_mm: float
    fu_evap_mm: float


def mix_tiles(tiles: TileResults, weights: np.ndarray) -> MixedSeries:
    """Catchment results for tile weights, as a weighted sum of tile results (no daily loop).

    Parameters
    ----------
    tiles : TileResults
        Results of every tile, simulated once.
    weights : numpy.ndarray
        Catchment-area weight of each tile [-] (see :meth:`TileResults.weights`).

    Returns
    -------
    MixedSeries
        Catchment results [mm over the catchment; flow in m3 s-1].
    """
    from coveryield.engine.routing import mix_and_route, mm_per_day_to_m3_per_s

    annual = {name: values @ weights for name, values in tiles.annual.items()}
    daily_yield, routed_mm, monthly_routed_mm = mix_and_route(
        tiles.daily_yield_mm,
        tiles.daily_slow_mm,
        np.ascontiguousarray(weights, dtype=np.float64),
        float(tiles.quickflow_recession_days),
        float(tiles.recession_days),
        tiles.month_of_day,
    )
    flow = mm_per_day_to_m3_per_s(routed_mm, tiles.area_km2)
    water_weights = np.where(tiles.is_water, weights, 0.0)
    monthly_open_water = tiles.monthly_yield_mm @ water_weights
    monthly_yield = tiles.monthly_yield_mm @ weights
    return MixedSeries(
        annual=annual,
        daily_yield_mm=daily_yield,
        flow_m3s=flow,
        monthly_yield_mm=monthly_yield,
        monthly_land_yield_mm=monthly_yield - monthly_open_water,
        monthly_open_water_mm=monthly_open_water,
        monthly_flow_m3s=mm_per_day_to_m3_per_s(monthly_routed_mm, tiles.area_km2),
        model_evap_mm=float(tiles.evap_mean_mm @ weights),
        zhang_evap_mm=float(tiles.zhang_evap_mm @ weights),
        fu_evap_mm=float(tiles.fu_evap_mm @ weights),
    )


def curve_evaporation(rain_mean_mm, et0_mean_mm, evap_mean_mm, bases):
    """Mean annual evaporation per tile by the Zhang (2001) curve and Fu's (1981) form.

    Parameters
    ----------
    rain_mean_mm, et0_mean_mm, evap_mean_mm : numpy.ndarray
        Mean annual rain, reference evaporation and daily-model evaporation per tile [mm yr-1].
    bases : list of str
        Built-in cover kind per tile; forest uses w = 2.0, grass and crops w = 0.5.

    Returns
    -------
    zhang_mm, fu_mm : numpy.ndarray
        Curve estimates per tile [mm yr-1]; open water repeats the model's evaporation.
    """
    w = np.array([ZHANG_W.get(base, np.nan) for base in bases])
    omega = np.array([fu_omega_matching_zhang(float(v)) if np.isfinite(v) else np.nan for v in w])
    on_curve = np.isfinite(w)
    with np.errstate(invalid="ignore"):
        zhang = np.where(on_curve, zhang_evaporation(rain_mean_mm, et0_mean_mm, w), evap_mean_mm)
        fu = np.where(on_curve, fu_evaporation(rain_mean_mm, et0_mean_mm, omega), evap_mean_mm)
    return zhang, fu


# --------------------------------------------------------------------------------------------
# Building and simulating the tiles


def plan_climate(plan_file: PlanFile) -> Climate:
    """Read the catchment's climate record from the file the plan file names.

    Parameters
    ----------
    plan_file : PlanFile
        The catchment (climate file, latitude [deg], elevation [m], wind height [m], coastal).

    Returns
    -------
    Climate
        The checked daily record.
    """
    spec = plan_file.catchment
    return read_climate(
        spec.climate,
        latitude_deg=spec.latitude_deg,
        elevation_m=spec.elevation_m,
        wind_height_m=spec.wind_height_m,
        coastal=spec.coastal,
    )


def zone_climates(plan_file: PlanFile, climate: Climate | None = None) -> dict[str, Climate]:
    """Each zone's climate: the catchment record with the zone's rain factor and temperature offset.

    Parameters
    ----------
    plan_file : PlanFile
        The catchment, zones and plans.
    climate : Climate, optional
        The catchment's climate record; read from the plan file's climate file when omitted.

    Returns
    -------
    dict of str -> Climate
        Zone name -> adjusted climate.
    """
    if climate is None:
        climate = plan_climate(plan_file)
    return {
        zone.name: climate.adjusted(
            rain_factor=zone.rain_factor, temperature_offset_c=zone.temperature_offset_c
        )
        for zone in plan_file.zones
    }


def tile_parameters(plan_file: PlanFile, tiles: list[tuple[str, str]]) -> TileParameters:
    """Engine parameters of each tile from its cover and its zone's soil.

    Parameters
    ----------
    plan_file : PlanFile
        The catchment, zones and covers.
    tiles : list of (str, str)
        (zone, cover) per tile.

    Returns
    -------
    TileParameters
        Canopy capacity at the cover's leaf area [mm] and that leaf area [m2 m-2], extinction
        coefficient [-], root-zone capacity = rooting depth x 1000 x available water capacity
        [mm] (FAO-56 eq. 82) times the plan file's ``root_zone_factor``, depletion fraction [-],
        curve number of the zone's soil group [-], water flag, rain intensity [mm h-1], and the
        surface layer's REW and TEW from the zone's soil texture [mm] (FAO-56 Table 19).
    """
    from coveryield.engine.water_balance import TileParameters

    zones = {zone.name: zone for zone in plan_file.zones}
    covers = [plan_file.covers[cover] for _, cover in tiles]
    soils = [zones[zone] for zone, _ in tiles]
    n = len(tiles)
    surface = np.array([z.surface_layer_mm for z in soils]).reshape(n, 2)
    taw_factor = plan_file.adjustments.root_zone_factor
    return TileParameters(
        canopy_capacity_mm=np.array([c.canopy_capacity_at(c.lai) for c in covers]),
        leaf_area_index=np.array([c.lai for c in covers]),
        extinction_coefficient=np.array([c.extinction_coefficient for c in covers]),
        readily_evaporable_mm=surface[:, 0],
        total_evaporable_mm=surface[:, 1],
        root_zone_capacity_mm=np.array(
            [
                taw_factor * 1000.0 * c.rooting_depth_m * z.awc_m3_per_m3  # FAO-56 eq. 82
                for c, z in zip(covers, soils, strict=True)
            ]
        ),
        depletion_fraction=np.array([c.depletion_fraction for c in covers]),
        curve_number=np.array(
            [c.curve_number[z.soil_group] for c, z in zip(covers, soils, strict=True)]
        ),
        is_water=np.array([c.is_water for c in covers]),
        rain_rate_mm_per_h=np.full(n, plan_file.catchment.rain_rate_mm_per_h),
    )


def complete_years(dates: pd.DatetimeIndex) -> np.ndarray:
    """Calendar years that the record covers from 1 January to 31 December."""
    counts = pd.Series(1, index=dates).groupby(dates.year).sum()
    lengths = np.where(
        [pd.Timestamp(year=int(y), month=12, day=31).dayofyear == 366 for y in counts.index],
        366,
        365,
    )
    return counts.index[counts.to_numpy() == lengths].to_numpy()


def plan_tiles(plan_file: PlanFile) -> list[tuple[str, str]]:
    """Every tile a plan file needs: each zone x each cover used by any plan, zone-major."""
    cover_names = plan_file.covers_used()
    return [(zone.name, cover) for zone in plan_file.zones for cover in cover_names]


def tile_forcing(
    plan_file: PlanFile,
    climates: dict[str, Climate],
    et0_by_zone: dict[str, np.ndarray],
    tiles: list[tuple[str, str]],
    *,
    progress: bool = False,
    out: tuple[np.ndarray, ...] | None = None,
) -> tuple[np.ndarray, ...]:
    """Rain and the potential evaporation rates of every tile, time-major for the engine.

    Parameters
    ----------
    plan_file : PlanFile
        Covers and adjustments (the surface-resistance factor is applied here).
    climates : dict of str -> Climate
        Each zone's climate (see :func:`zone_climates`).
    et0_by_zone : dict of str -> numpy.ndarray
        Each zone's FAO-56 reference evaporation [mm d-1].
    tiles : list of (str, str)
        (zone, cover) per tile.
    progress : bool
        Show a progress bar on stderr.
    out : tuple of 4 numpy.ndarray, optional
        Arrays (or views) of shape (n_days, n_tiles) to fill and return, e.g. one ensemble
        member's columns of the wide arrays the engine runs all members on.

    Returns
    -------
    rain_mm, wet_mm, dry_mm, soil_mm : numpy.ndarray
        Each (n_days, n_tiles) [mm d-1]: gross rain, wet-canopy, dry-canopy and bare-soil
        potential evaporation (see :func:`coveryield.forcing.cover_evaporation`).
    """
    from tqdm.auto import tqdm

    n_days = len(next(iter(climates.values())).daily.index)
    shape = (n_days, len(tiles))
    if out is not None and any(a.shape != shape for a in out):
        raise ValueError(f"out: shapes {[a.shape for a in out]}, expected 4 of {shape}")
    arrays = out if out is not None else tuple(np.empty(shape) for _ in range(4))
    # filled tile by tile in a tile-major buffer (rows written in order), then turned time-major
    # in one copy per array: writing each tile as a strided column of the time-major arrays
    # missed the cache on every value (an ensemble calls this once per member)
    by_tile = np.empty((4, len(tiles), n_days))
    for k, (zone, cover_name) in enumerate(
        tqdm(tiles, desc="potential evaporation per tile", unit="tile", disable=not progress)
    ):
        cover = adjusted_cover(plan_file.covers[cover_name], plan_file.adjustments)
        rates = cover_evaporation(climates[zone], cover, et0_mm=et0_by_zone[zone])
        by_tile[0, k] = climates[zone].daily["rain_mm"].to_numpy()
        for row, name in enumerate(("wet_mm", "dry_mm", "soil_mm"), start=1):
            by_tile[row, k] = rates[name].to_numpy()
    for array, rows in zip(arrays, by_tile, strict=True):
        np.copyto(array, rows.T)
    return arrays


def simulate_catchment(
    plan_file: PlanFile, *, climate: Climate | None = None, progress: bool = False
) -> TileResults:
    """Simulate every tile (each zone x each cover used by any plan) once.

    Parameters
    ----------
    plan_file : PlanFile
        The catchment, zones, covers and plans.
    climate : Climate, optional
        The catchment's climate record (read from the plan's climate file when omitted).
    progress : bool
        Show a progress bar on stderr while potential evaporation is computed per tile.

    Returns
    -------
    TileResults
        Compact results of every tile, ready for :func:`mix_tiles`.
    """
    from coveryield.engine.kernels import ANNUAL_NAMES

    climates = zone_climates(plan_file, climate)
    tiles = plan_tiles(plan_file)
    dates = next(iter(climates.values())).daily.index
    lai = daily_leaf_area(plan_file, tiles, dates)
    et0_by_zone = {zone: reference_et(c).to_numpy() for zone, c in climates.items()}
    rain, wet, dry, soil = tile_forcing(plan_file, climates, et0_by_zone, tiles,
                                        progress=progress)

    year_codes, year_values = pd.factorize(dates.year, sort=True)
    run = simulate_tiles(
        rain,
        wet,
        dry,
        soil,
        tile_parameters(plan_file, tiles),
        year_codes.astype(np.int64),
        lai=lai,
        keep_daily_drainage=True,
    )
    keep = np.isin(np.asarray(year_values), complete_years(dates))
    if not keep.any():
        raise PlanFileError(
            f"{plan_file.catchment.climate}: the climate record holds no complete calendar year; "
            "expected at least one year from 1 January to 31 December"
        )
    is_water = np.array([plan_file.covers[cover].is_water for _, cover in tiles])
    annual = {name: getattr(run.annual, name)[keep] for name in ANNUAL_NAMES}
    annual["open_water_net_mm"] = np.where(is_water, annual["quickflow_mm"], 0.0)
    annual["quickflow_mm"] = np.where(is_water, 0.0, annual["quickflow_mm"])
    in_complete = np.isin(dates.year, np.asarray(year_values)[keep])
    rain_mean = annual["rain_mm"].mean(axis=0)
    et0_mean = np.array([annual_mean(et0_by_zone[zone], dates, in_complete) for zone, _ in tiles])
    evap_mean = run.annual.evap_mm[keep].mean(axis=0)
    zhang, fu = curve_evaporation(
        rain_mean, et0_mean, evap_mean, [plan_file.covers[cover].base for _, cover in tiles]
    )
    return TileResults(
        tiles=tuple(tiles),
        zone_area_share={zone.name: zone.area_share for zone in plan_file.zones},
        area_km2=plan_file.catchment.area_km2,
        recession_days=plan_file.catchment.recession_days,
        quickflow_recession_days=plan_file.catchment.quickflow_recession_days,
        is_water=is_water,
        years=np.asarray(year_values)[keep],
        annual=annual,
        dates=dates,
        daily_yield_mm=np.asfortranarray(run.daily_yield_mm),
        daily_slow_mm=np.asfortranarray(
            np.where(is_water, run.daily_yield_mm, run.daily_drainage_mm)
        ),
        month_of_day=np.where(in_complete, dates.month, 0).astype(np.int64),
        monthly_yield_mm=monthly_means(run.daily_yield_mm[in_complete], dates[in_complete]),
        rain_mean_mm=rain_mean,
        et0_mean_mm=et0_mean,
        evap_mean_mm=evap_mean,
        zhang_evap_mm=zhang,
        fu_evap_mm=fu,
        notes=tuple(next(iter(climates.values())).notes),
    )


def daily_leaf_area(plan_file: PlanFile, tiles, dates: pd.DatetimeIndex) -> np.ndarray | None:
    """Leaf area index of each tile and day, or None when every tile keeps its own all year.

    Parameters
    ----------
    plan_file : PlanFile
        The catchment and covers.
    tiles : list of (str, str)
        (zone, cover) per tile.
    dates : pandas.DatetimeIndex
        Every simulated day.

    Returns
    -------
    numpy.ndarray, shape (n_days, n_tiles), or None
        Leaf area index [m2 m-2] (crops follow their season); None if no cover varies.
    """
    covers = [plan_file.covers[cover] for _, cover in tiles]
    if all(c.kc_calendar is None for c in covers):
        return None
    doy = dates.dayofyear.to_numpy()
    latitude = plan_file.catchment.latitude_deg
    return np.column_stack([c.leaf_area_index(doy, latitude) for c in covers])


def monthly_means(daily_mm: np.ndarray, dates: pd.DatetimeIndex) -> np.ndarray:
    """Mean total per calendar month over the years of ``dates``, shape (12, n_tiles) [mm]."""
    frame = pd.DataFrame(daily_mm, index=dates)
    totals = frame.groupby([dates.year, dates.month]).sum()
    return totals.groupby(level=1).mean().reindex(range(1, 13)).to_numpy()


def annual_mean(daily_mm: np.ndarray, dates: pd.DatetimeIndex, keep: np.ndarray) -> float:
    """Mean annual total of a daily series over the kept (complete-year) days [mm yr-1]."""
    totals = pd.Series(daily_mm[keep]).groupby(np.asarray(dates.year)[keep]).sum()
    return float(totals.mean())
