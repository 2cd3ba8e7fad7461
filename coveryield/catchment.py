"""Catchment layer: simulate every tile of a plan file once, then mix tiles by plan shares.

A tile is one cover in one zone. :func:`simulate_catchment` builds each zone's climate, the
cover's potential evaporation rates and the engine parameters, runs the daily loop once for all
tiles, and keeps compact results (annual fluxes, daily yield, monthly means, long-term means).
:func:`mix_tiles` turns any set of shares into catchment results as a weighted sum of those tile
results — it never runs the daily loop again, so a share change costs microseconds.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from coveryield.climate import Climate, read_climate
from coveryield.engine.kernels import ANNUAL_NAMES
from coveryield.engine.routing import (
    mm_per_day_to_m3_per_s,
    route_series,
    weighted_column_sum,
)
from coveryield.engine.water_balance import TileParameters, simulate_tiles
from coveryield.errors import PlanFileError
from coveryield.forcing import cover_evaporation, reference_et
from coveryield.physics.curves import (
    ZHANG_W,
    fu_evaporation,
    fu_omega_matching_zhang,
    zhang_evaporation,
)
from coveryield.plans import PlanFile


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
        Recession constant of the groundwater store used to route yield to streamflow [day].
    years : numpy.ndarray
        Complete calendar years of the record, one row per year in ``annual``.
    annual : dict of str -> numpy.ndarray
        Per flux in :data:`coveryield.engine.kernels.ANNUAL_NAMES`, array (n_years, n_tiles)
        [mm yr-1 over the tile].
    dates : pandas.DatetimeIndex
        Every simulated day.
    daily_yield_mm : numpy.ndarray
        Quickflow plus drainage, (n_days, n_tiles), stored column-major so that each tile's
        series is contiguous for the weighted sums [mm d-1 over the tile].
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
    years: np.ndarray
    annual: dict[str, np.ndarray]
    dates: pd.DatetimeIndex
    daily_yield_mm: np.ndarray
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
        Catchment yield per day [mm d-1].
    flow_m3s : numpy.ndarray
        Streamflow: daily yield routed through the linear groundwater store [m3 s-1].
    monthly_yield_mm : numpy.ndarray
        Mean yield per calendar month, (12,) [mm month-1].
    model_evap_mm, zhang_evap_mm, fu_evap_mm : float
        Mean annual evaporation from the daily model, the Zhang et al. (2001) curve and Fu's form,
        each as the area-weighted sum over tiles [mm yr-1].
    """

    annual: dict[str, np.ndarray]
    daily_yield_mm: np.ndarray
    flow_m3s: np.ndarray
    monthly_yield_mm: np.ndarray
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
    annual = {name: values @ weights for name, values in tiles.annual.items()}
    daily_yield = weighted_column_sum(tiles.daily_yield_mm, weights)
    routed_mm = route_series(daily_yield, tiles.recession_days)
    return MixedSeries(
        annual=annual,
        daily_yield_mm=daily_yield,
        flow_m3s=mm_per_day_to_m3_per_s(routed_mm, tiles.area_km2),
        monthly_yield_mm=tiles.monthly_yield_mm @ weights,
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
        Canopy capacity [mm], root-zone capacity = rooting depth x 1000 x available water
        capacity [mm] (FAO-56 eq. 82), depletion fraction [-], curve number of the zone's soil
        group [-], water flag, rain intensity [mm h-1].
    """
    zones = {zone.name: zone for zone in plan_file.zones}
    covers = [plan_file.covers[cover] for _, cover in tiles]
    soils = [zones[zone] for zone, _ in tiles]
    n = len(tiles)
    return TileParameters(
        canopy_capacity_mm=np.array([c.canopy_capacity_mm for c in covers]),
        root_zone_capacity_mm=np.array(
            [
                1000.0 * c.rooting_depth_m * z.awc_m3_per_m3
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
    from tqdm.auto import tqdm

    climates = zone_climates(plan_file, climate)
    cover_names = plan_file.covers_used()
    tiles = [(zone.name, cover) for zone in plan_file.zones for cover in cover_names]
    dates = next(iter(climates.values())).daily.index
    n_days = len(dates)
    rain, wet, dry, soil = (np.empty((n_days, len(tiles))) for _ in range(4))
    et0_by_zone = {}
    for k, (zone, cover_name) in enumerate(
        tqdm(tiles, desc="potential evaporation per tile", unit="tile", disable=not progress)
    ):
        zone_climate = climates[zone]
        if zone not in et0_by_zone:
            et0_by_zone[zone] = reference_et(zone_climate).to_numpy()
        rates = cover_evaporation(
            zone_climate, plan_file.covers[cover_name], et0_mm=et0_by_zone[zone]
        )
        rain[:, k] = zone_climate.daily["rain_mm"].to_numpy()
        wet[:, k] = rates["wet_mm"].to_numpy()
        dry[:, k] = rates["dry_mm"].to_numpy()
        soil[:, k] = rates["soil_mm"].to_numpy()

    year_codes, year_values = pd.factorize(dates.year, sort=True)
    run = simulate_tiles(
        rain, wet, dry, soil, tile_parameters(plan_file, tiles), year_codes.astype(np.int64)
    )
    keep = np.isin(np.asarray(year_values), complete_years(dates))
    if not keep.any():
        raise PlanFileError(
            f"{plan_file.catchment.climate}: the climate record holds no complete calendar year; "
            "expected at least one year from 1 January to 31 December"
        )
    annual = {name: getattr(run.annual, name)[keep] for name in ANNUAL_NAMES}
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
        years=np.asarray(year_values)[keep],
        annual=annual,
        dates=dates,
        daily_yield_mm=np.asfortranarray(run.daily_yield_mm),
        monthly_yield_mm=monthly_means(run.daily_yield_mm[in_complete], dates[in_complete]),
        rain_mean_mm=rain_mean,
        et0_mean_mm=et0_mean,
        evap_mean_mm=evap_mean,
        zhang_evap_mm=zhang,
        fu_evap_mm=fu,
        notes=tuple(next(iter(climates.values())).notes),
    )


def monthly_means(daily_mm: np.ndarray, dates: pd.DatetimeIndex) -> np.ndarray:
    """Mean total per calendar month over the years of ``dates``, shape (12, n_tiles) [mm]."""
    frame = pd.DataFrame(daily_mm, index=dates)
    totals = frame.groupby([dates.year, dates.month]).sum()
    return totals.groupby(level=1).mean().reindex(range(1, 13)).to_numpy()


def annual_mean(daily_mm: np.ndarray, dates: pd.DatetimeIndex, keep: np.ndarray) -> float:
    """Mean annual total of a daily series over the kept (complete-year) days [mm yr-1]."""
    totals = pd.Series(daily_mm[keep]).groupby(np.asarray(dates.year)[keep]).sum()
    return float(totals.mean())
