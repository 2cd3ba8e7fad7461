"""Timelines: the water yield of each plan year by year after planting, against ``current``.

A timeline runs N years from the start of a plan's schedule (:mod:`coveryield.schedules`).
Year t uses the weather of the t-th complete year of the climate record; when the record is
shorter than N years its years are used again in the same order (year n+1 has the weather of
the first year, and so on). In every year the plan's land is a mix of

* tiles of :func:`coveryield.catchment.simulate_catchment` (land not yet planted, land changed
  to a cover that does not grow, stands of ``current``), and
* stage tiles of :mod:`coveryield.stands` for stands growing after planting or felling,

weighted by area; the change is against ``current`` on the same year's weather. Nothing here
runs the daily loop: a new schedule, year or horizon is a new set of weights (the stage tiles
of stands not met before are simulated once, on first use).

All depths are mm over the whole catchment, volumes ML (1 mm over 1 km² = 1 ML). Results are
screening estimates, to be confirmed by licensed hydrological practice and local regulations.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from coveryield.engine.kernels import ANNUAL_NAMES
from coveryield.engine.water_balance import TileAnnual
from coveryield.errors import PlanFileError
from coveryield.schedules import (
    Cohort,
    Schedule,
    base_shares_by_year,
    check_fits_timeline,
    check_schedule,
    cohorts,
    schedule_for,
)
from coveryield.stands import StandKey, StandResults, stage_weights

if TYPE_CHECKING:  # pragma: no cover
    from coveryield.comparison import Comparison

__all__ = [
    "DEFAULT_YEARS",
    "TIMELINE_COLUMNS",
    "PlanTimeline",
    "Timeline",
    "build_timeline",
    "plan_timeline",
    "stand_keys",
]

#: Length of a timeline when none is asked for [yr].
DEFAULT_YEARS = 30
#: Longest timeline accepted [yr].
MAX_YEARS = 1000
#: Columns of :meth:`Timeline.table` (depths mm/yr over the catchment, volumes ML/yr).
TIMELINE_COLUMNS = (
    "plan",
    "year",
    "years_since_start",
    "weather_year",
    "yield_mm",
    "change_mm",
    "change_pct",
    "evap_mm",
    "rain_mm",
    "yield_ml",
    "change_ml",
    "mature_change_mm",
    "share_of_mature_pct",
    "planted_pct",
    "mean_stand_age_yr",
    "quickflow_mm",
    "drainage_mm",
    "interception_mm",
    "transpiration_mm",
    "soil_evap_mm",
    "open_water_mm",
    "open_water_net_mm",
    "storage_change_mm",
)
#: Annual net balance of open water (rain minus its evaporation) [mm over the catchment].
OPEN_WATER_NET = "open_water_net_mm"
#: Columns of a :attr:`PlanTimeline.table` (its index is ``years_since_start``).
_YEAR_COLUMNS = [c for c in TIMELINE_COLUMNS if c not in ("plan", "years_since_start")]
#: Periods summarised in reports, as (first, last) years since the start [yr]; the last one runs
#: to the end of the timeline.
SUMMARY_PERIODS = ((1, 5), (6, 10), (11, 20), (21, None))


@dataclass(frozen=True)
class PlanTimeline:
    """One plan, year by year after the start of its schedule.

    Attributes
    ----------
    name : str
        Plan name.
    schedule : Schedule or None
        The plantings (the file's, one given from Python, or the all-at-once schedule of a plan
        without one); None when the plan equals ``current``.
    origin : {"file", "at once", "given", "none"}
        Where the schedule came from: the plan file, the all-at-once schedule of a plan without
        one, given from Python, or none (the plan equals ``current``).
    table : pandas.DataFrame
        One row per year (index ``years_since_start``, 1 = the first), the columns of
        :data:`TIMELINE_COLUMNS` but ``plan``.
    mature_change_mm, mature_change_pct : float
        Change of the plan once every stand is mature, mean over the record (as ``compare``
        reports it) [mm yr⁻¹, %].
    """

    name: str
    schedule: Schedule | None
    origin: str
    table: pd.DataFrame
    mature_change_mm: float
    mature_change_pct: float

    @property
    def schedule_label(self) -> str:
        """A few words on where the schedule came from."""
        return {
            "file": "from the plan file",
            "at once": "all at once in year 1",
            "given": "given from Python",
            "none": "no change",
        }[self.origin]

    def period_change(self, first: int, last: int | None = None) -> tuple[float, float]:
        """Mean change over years ``first``..``last`` and its share of the mature change.

        Parameters
        ----------
        first, last : int
            Years since the start, inclusive (``last`` None: to the end) [yr].

        Returns
        -------
        change_mm : float
            Mean change against ``current`` [mm yr⁻¹].
        share_pct : float
            Sum of the changes over the sum of the mature plan's changes on the same weather
            years [%] (NaN if that is zero).
        """
        rows = self.table.loc[first:last]
        if rows.empty:
            return math.nan, math.nan
        mature = rows["mature_change_mm"].sum()
        share = 100.0 * rows["change_mm"].sum() / mature if abs(mature) > 1e-9 else math.nan
        return float(rows["change_mm"].mean()), float(share)


class Timeline:
    """Several plans' timelines over the same years and weather.

    Attributes
    ----------
    plans : dict of str -> PlanTimeline
        In the order asked for.
    current : pandas.DataFrame
        ``current`` year by year (same columns; changes are 0).
    n_years : int
        Length [yr].
    start_year : int
        Calendar year of the first year (label only) [-].
    record_years : numpy.ndarray
        Complete years of the climate record, cycled in order.
    """

    def __init__(
        self,
        plans: dict[str, PlanTimeline],
        current: pd.DataFrame,
        n_years: int,
        start_year: int,
        record_years: np.ndarray,
    ) -> None:
        self.plans = plans
        self.current = current
        self.n_years = n_years
        self.start_year = start_year
        self.record_years = record_years

    def __getitem__(self, name: str) -> PlanTimeline:
        """Return the timeline of one plan."""
        return self.plans[name]

    @property
    def plan_names(self) -> list[str]:
        """Plans in the timeline (``current`` not included)."""
        return list(self.plans)

    @property
    def cycles_weather(self) -> bool:
        """True when the timeline is longer than the record, so weather years repeat."""
        return self.n_years > len(self.record_years)

    def table(self) -> pd.DataFrame:
        """Every plan (``current`` first) year by year, columns :data:`TIMELINE_COLUMNS`."""
        frames = [self.current.assign(plan="current")]
        frames += [p.table.assign(plan=name) for name, p in self.plans.items()]
        table = pd.concat(frames).reset_index()
        return table[list(TIMELINE_COLUMNS)]


# --------------------------------------------------------------------------------------------
# building


def stand_keys(planted: Iterable[Cohort]) -> list[StandKey]:
    """Return the stands (zone, cover, young state) growing cohorts need, first seen first."""
    return list(dict.fromkeys(StandKey(c.zone, c.cover, c.start) for c in planted if c.grows))


def build_timeline(
    comparison: Comparison,
    plans: str | Iterable[str] | None = None,
    *,
    years: int = DEFAULT_YEARS,
    start_year: int | None = None,
    schedules: Mapping[str, Schedule] | None = None,
    progress: bool = False,
) -> Timeline:
    """Timelines of plans of a comparison (see :meth:`Comparison.timeline`)."""
    plan_file = comparison.plan_file
    names = _plan_names(comparison, plans)
    n_years = _check_years(years)
    chosen = {}
    for name in names:
        given = (schedules or {}).get(name)
        if given is not None:
            check_schedule(plan_file, name, given)
        chosen[name] = given if given is not None else schedule_for(plan_file, name)
        if chosen[name] is not None:
            check_fits_timeline(plan_file, name, chosen[name], n_years)
    planted = {n: cohorts(s, plan_file.covers) if s else [] for n, s in chosen.items()}
    stands = comparison.stand_results(
        [k for cohort_list in planted.values() for k in stand_keys(cohort_list)], progress=progress
    )
    first = int(comparison.years[0]) if start_year is None else int(start_year)
    result = {}
    for name in names:
        result[name] = plan_timeline(
            comparison,
            name,
            chosen[name],
            planted[name],
            stands,
            n_years,
            first,
            origin=_origin(plan_file, name, chosen[name], schedules),
        )
    return Timeline(
        result,
        _current_table(comparison, n_years, first),
        n_years,
        first,
        np.asarray(comparison.years),
    )


def plan_timeline(
    comparison: Comparison,
    name: str,
    schedule: Schedule | None,
    planted: list[Cohort],
    stands: StandResults,
    n_years: int,
    start_year: int,
    *,
    origin: str = "given",
) -> PlanTimeline:
    """One plan's timeline from its cohorts: weighted sums of tile and stage-tile years.

    Parameters
    ----------
    comparison : Comparison
        Tiles simulated once, and the plans' outcomes.
    name : str
        Plan name.
    schedule : Schedule or None
        The schedule the cohorts came from (kept for reports).
    planted : list of Cohort
        The cohorts (already checked).
    stands : StandResults
        Stage tiles holding every stand the cohorts need.
    n_years, start_year : int
        Length [yr] and calendar year of the first year [-].
    origin : str
        Where the schedule came from (see :class:`PlanTimeline`).

    Returns
    -------
    PlanTimeline
    """
    weather = _weather_index(comparison, n_years)
    fluxes = _mixed_fluxes(comparison, stands, planted, n_years, weather)
    frame = _frame(comparison, fluxes, weather, start_year)
    base = comparison.outcome("current").annual["yield_mm"].to_numpy()[weather]
    mature = comparison.outcome(name).annual["yield_mm"].to_numpy()[weather] - base
    change = frame["yield_mm"].to_numpy() - base
    frame["change_mm"] = change
    frame["change_pct"] = 100.0 * change / base
    frame["change_ml"] = change * comparison.tiles.area_km2
    frame["mature_change_mm"] = mature
    with np.errstate(divide="ignore", invalid="ignore"):
        frame["share_of_mature_pct"] = np.where(
            np.abs(mature) > 1e-9, 100.0 * change / mature, np.nan
        )
    frame["planted_pct"], frame["mean_stand_age_yr"] = _stand_area_and_age(
        comparison, planted, n_years
    )
    overall = comparison.change(comparison.outcome(name))
    return PlanTimeline(
        name, schedule, origin, frame[_YEAR_COLUMNS], overall.yield_mm, overall.yield_pct
    )


def _origin(plan_file, name: str, schedule: Schedule | None, given) -> str:
    if (given or {}).get(name) is not None:
        return "given"
    if schedule is None:
        return "none"
    return "file" if name in plan_file.schedules else "at once"


def _plan_names(comparison: Comparison, plans) -> list[str]:
    if plans is None:
        return [n for n in comparison.plan_names if n != "current"]
    names = [plans] if isinstance(plans, str) else list(plans)
    unknown = [n for n in names if n not in comparison.plan_file.plans or n == "current"]
    if unknown:
        others = ", ".join(n for n in comparison.plan_names if n != "current")
        asked = ", ".join(map(repr, unknown))
        raise PlanFileError(
            f"{comparison.plan_file.source}: no plan {asked} to follow over the "
            f"years; plans other than current: {others}"
        )
    return list(dict.fromkeys(names))


def _check_years(years) -> int:
    if (
        isinstance(years, bool)
        or not isinstance(years, (int, np.integer))
        or not (1 <= years <= MAX_YEARS)
    ):
        raise PlanFileError(
            f"timeline length {years!r} years: expected a whole number of years "
            f"from 1 to {MAX_YEARS}"
        )
    return int(years)


def _weather_index(comparison: Comparison, n_years: int) -> np.ndarray:
    """Row of the record's complete years used in each timeline year (cycled in order)."""
    return np.arange(n_years) % len(comparison.years)


def _mixed_fluxes(
    comparison: Comparison,
    stands: StandResults,
    planted: list[Cohort],
    n_years: int,
    weather: np.ndarray,
) -> dict[str, np.ndarray]:
    """Each annual flux of the plan in each timeline year [mm over the catchment]."""
    tiles = comparison.tiles
    base = _tile_weights_by_year(
        tiles, base_shares_by_year(comparison.plan_file.plans["current"], planted, n_years), n_years
    )
    stand = np.zeros((n_years, len(stands.keys), stands.annual["rain_mm"].shape[2]))
    years = np.arange(1, n_years + 1)
    covers = comparison.plan_file.covers
    for cohort in planted:
        if not cohort.grows:
            continue
        growth = covers[cohort.cover].growth.fraction(cohort.ages(years))
        area = tiles.zone_area_share[cohort.zone] * cohort.share
        key = stands.index(StandKey(cohort.zone, cohort.cover, cohort.start))
        stand[:, key, :] += area * stage_weights(growth)
    fluxes = {
        name: np.einsum("yt,yt->y", base, tiles.annual[name][weather])
        + np.einsum("yks,yks->y", stand, stands.annual[name][weather])
        for name in ANNUAL_NAMES
    }
    # open water's net balance (rain - evaporation of water tiles; no stand is open water) is
    # part of the yield, as in `compare` (see coveryield.comparison.YIELD_DEFINITION)
    fluxes[OPEN_WATER_NET] = np.einsum("yt,yt->y", base, tiles.annual[OPEN_WATER_NET][weather])
    return fluxes


def _tile_weights_by_year(tiles, shares: dict, n_years: int) -> np.ndarray:
    """Catchment-area weight of each tile in each year, shape (n_years, n_tiles) [-]."""
    return np.array(
        [
            tiles.weights(
                {
                    z: {c: float(v[t]) for c, v in by_cover.items() if abs(v[t]) > 1e-12}
                    for z, by_cover in shares.items()
                }
            )
            for t in range(n_years)
        ]
    )


def _frame(
    comparison: Comparison, fluxes: dict, weather: np.ndarray, start_year: int
) -> pd.DataFrame:
    n_years = len(weather)
    engine_fluxes = {n: fluxes[n] for n in ANNUAL_NAMES}
    balance = TileAnnual(**engine_fluxes)  # the engine's own definitions of evaporation, yield
    evap = balance.evap_mm
    yield_mm = balance.yield_mm + fluxes[OPEN_WATER_NET]  # land yield + open-water balance
    frame = pd.DataFrame(
        {
            "year": start_year + np.arange(n_years),
            "weather_year": np.asarray(comparison.years)[weather],
            "yield_mm": yield_mm,
            "evap_mm": evap,
            "rain_mm": fluxes["rain_mm"],
            "yield_ml": yield_mm * comparison.tiles.area_km2,
            **{n: fluxes[n] for n in ANNUAL_NAMES if n != "rain_mm"},
            OPEN_WATER_NET: fluxes[OPEN_WATER_NET],
        },
        index=pd.RangeIndex(1, n_years + 1, name="years_since_start"),
    )
    return frame


def _stand_area_and_age(
    comparison: Comparison, planted: list[Cohort], n_years: int
) -> tuple[np.ndarray, np.ndarray]:
    """Catchment area in growing stands planted by the schedule [%] and their mean age [yr]."""
    years = np.arange(1, n_years + 1)
    area = np.zeros(n_years)
    age_area = np.zeros(n_years)
    for cohort in planted:
        if not cohort.grows:
            continue
        ages = cohort.ages(years)
        weight = comparison.tiles.zone_area_share[cohort.zone] * cohort.share
        standing = np.isfinite(ages)
        area += np.where(standing, weight, 0.0)
        age_area += np.where(standing, weight * np.nan_to_num(ages), 0.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        mean_age = np.where(area > 0, age_area / area, np.nan)
    return 100.0 * area, mean_age


def _current_table(comparison: Comparison, n_years: int, start_year: int) -> pd.DataFrame:
    weather = _weather_index(comparison, n_years)
    annual = comparison.tiles.annual
    weights = comparison.tiles.weights(comparison.plan_file.plans["current"])
    fluxes = {name: annual[name][weather] @ weights for name in (*ANNUAL_NAMES, OPEN_WATER_NET)}
    frame = _frame(comparison, fluxes, weather, start_year)
    for column in ("change_mm", "change_pct", "change_ml", "mature_change_mm", "planted_pct"):
        frame[column] = 0.0
    frame["share_of_mature_pct"] = np.nan
    frame["mean_stand_age_yr"] = np.nan
    return frame[_YEAR_COLUMNS]
