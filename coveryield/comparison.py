"""Plan comparison: every table a manager signs off, for each plan and its change against `current`.

:func:`compare` simulates the tiles of a plan file once; each plan (and any edited set of shares,
via :meth:`Comparison.evaluate`) is then a weighted sum of tile results. Results are returned as
plain objects holding pandas tables; nothing is printed or written here (see
:mod:`coveryield.reports`).

All depths are mm over the whole catchment; volumes in ML (1 mm over 1 km2 = 1 ML); flows in
m3 s-1. Yield is the water the catchment delivers to its streams: quickflow and drainage from the
land (``land_yield_mm``) plus the net balance of open water (``open_water_net_mm``: rain on the
water minus its evaporation, negative when the water loses more than it receives). Results are
screening estimates, to be confirmed by licensed hydrological practice and local regulations.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass
from os import PathLike
from typing import TYPE_CHECKING

import numpy as np
import pandas as pd

from coveryield.catchment import (
    MixedSeries,
    TileResults,
    mix_tiles,
    plan_climate,
    simulate_catchment,
)
from coveryield.flow_metrics import (
    LOW_FLOW_WINDOW_DAYS,
    LYNE_HOLLICK_ALPHA,
    LYNE_HOLLICK_PASSES,
    annual_minimum_moving_mean,
    baseflow_index,
    days_below_per_year,
)
from coveryield.physics.curves import (
    CROSSCHECK_CHANGE_TOLERANCE_PCT,
    CROSSCHECK_TYPICAL_OFFSET_PCT,
    ZHANG_CURVE_SENTENCE,
    crosscheck_offset_pct,
    crosscheck_reason,
)
from coveryield.plans import PlanFile, load_plan, validate_shares
from coveryield.uncertainty.bands import BAND_PERCENTILES, band

if TYPE_CHECKING:  # the engine (numba) loads only when an ensemble is simulated
    from coveryield.uncertainty.ensemble import EnsembleResults

CAUTION = (
    "Screening estimate only: confirm with licensed hydrological practice and local regulations "
    "before any decision on water supply or land use."
)

#: Columns of the annual table [mm over the catchment per year; yield_ml in ML per year].
ANNUAL_COLUMNS = (
    "rain_mm",
    "evap_mm",
    "interception_mm",
    "transpiration_mm",
    "soil_evap_mm",
    "open_water_mm",
    "quickflow_mm",
    "drainage_mm",
    "land_yield_mm",
    "open_water_net_mm",
    "yield_mm",
    "storage_change_mm",
    "yield_ml",
)

#: What an ensemble band means and does not mean (reports and summary.json carry it).
ENSEMBLE_MEANING = (
    "Each band runs from the 5th to the 95th percentile of the figure over the ensemble's "
    "parameter sets: the spread of this model's answer when cover parameters vary over their "
    "documented ranges (and catchment factors over a calibration's range). It is not a "
    "confidence interval for the real catchment: the model's structure, the climate record and "
    "the ranges themselves add uncertainty that the band does not show."
)

#: Exceedance probabilities at which the flow duration curve is tabulated [%].
FDC_EXCEEDANCE_PCT = np.concatenate([[0.1, 0.5], np.arange(1.0, 100.0, 1.0), [99.5, 99.9]])

SECONDS_PER_YEAR = 365.25 * 86400.0

#: What "yield" means everywhere (tables, report, page, README).
YIELD_DEFINITION = (
    "Yield is the water the catchment delivers to its streams: quickflow and drainage from the "
    "land (land yield) plus the net balance of open water (rain on ponds and lakes minus their "
    "evaporation), which is negative in months when the water loses more than it receives."
)


def flow_duration_curve(flow_m3s: np.ndarray) -> pd.DataFrame:
    """Flow equalled or exceeded for a given share of days.

    Parameters
    ----------
    flow_m3s : numpy.ndarray
        Daily streamflow [m3 s-1].

    Returns
    -------
    pandas.DataFrame
        Columns ``exceedance_pct`` [%] and ``flow_m3s`` [m3 s-1]; Q95 is the row at 95 %.

    Notes
    -----
    The flow exceeded on p % of days is the (1 - p/100) quantile of the daily flows, linearly
    interpolated between order statistics (numpy's default quantile rule), from one sort.
    """
    ordered = np.sort(np.asarray(flow_m3s, dtype=float))
    position = (1.0 - FDC_EXCEEDANCE_PCT / 100.0) * (len(ordered) - 1)
    flows = np.interp(position, np.arange(len(ordered)), ordered)
    return pd.DataFrame({"exceedance_pct": FDC_EXCEEDANCE_PCT, "flow_m3s": flows})


@dataclass(frozen=True)
class PlanOutcome:
    """Everything the comparison reports for one set of shares.

    Attributes
    ----------
    name : str
        Plan name (``"edited"`` for shares not in the file).
    shares : dict
        Zone -> cover -> share [-].
    annual : pandas.DataFrame
        One row per complete year (index ``year``), columns :data:`ANNUAL_COLUMNS`.
    monthly_yield_mm : pandas.Series
        Mean yield per calendar month (index 1-12) [mm month-1]: land yield plus the open-water
        balance, negative in a month when open water loses more than the land yields.
    flow_m3s : pandas.Series
        Daily streamflow: quickflow routed through the fast store, drainage and the open-water
        balance through the groundwater store [m3 s-1].
    fdc : pandas.DataFrame
        Flow duration curve (``exceedance_pct`` [%], ``flow_m3s`` [m3 s-1]).
    model_evap_mm, zhang_evap_mm, fu_evap_mm : float
        Mean annual evaporation: daily model, Zhang et al. (2001) curve, Fu's form [mm yr-1].
    area_km2 : float
        Catchment area [km2].
    monthly_land_yield_mm, monthly_open_water_mm : pandas.Series
        The two parts of ``monthly_yield_mm`` (index 1-12) [mm month-1].
    monthly_flow_m3s : pandas.Series
        Mean streamflow per calendar month (index 1-12) [m3 s-1].
    q7_m3s : float
        Mean over the complete years of the year's lowest 7-day mean flow (7Q) [m3 s-1].
    baseflow_index : float
        Share of streamflow that the Lyne & Hollick filter (alpha 0.925, three passes) calls
        baseflow [-].
    days_below_per_year : float or None
        Days per year with flow below ``low_flow_m3s`` [d yr-1]; None without a threshold.
    low_flow_m3s : float or None
        The threshold flow of the plan file's ``[catchment]`` [m3 s-1].
    baseline_offset_pct : float or None
        Model-vs-Zhang offset of the baseline plan ``current`` [%]; None for ``current``.
    """

    name: str
    shares: dict
    annual: pd.DataFrame
    monthly_yield_mm: pd.Series
    flow_m3s: pd.Series
    fdc: pd.DataFrame
    model_evap_mm: float
    zhang_evap_mm: float
    fu_evap_mm: float
    area_km2: float
    monthly_land_yield_mm: pd.Series | None = None
    monthly_open_water_mm: pd.Series | None = None
    monthly_flow_m3s: pd.Series | None = None
    q7_m3s: float = float("nan")
    baseflow_index: float = float("nan")
    days_below_per_year: float | None = None
    low_flow_m3s: float | None = None
    baseline_offset_pct: float | None = None

    @property
    def mean_yield_mm(self) -> float:
        """Mean annual yield [mm yr-1 over the catchment]."""
        return float(self.annual["yield_mm"].mean())

    @property
    def mean_yield_ml(self) -> float:
        """Mean annual yield [ML yr-1]."""
        return self.mean_yield_mm * self.area_km2

    @property
    def mean_flow_m3s(self) -> float:
        """Mean annual yield as a mean flow [m3 s-1]."""
        return self.mean_yield_mm * self.area_km2 * 1000.0 / SECONDS_PER_YEAR

    @property
    def q95_m3s(self) -> float:
        """Flow exceeded on 95 % of days [m3 s-1]."""
        return float(self.fdc["flow_m3s"].to_numpy()[FDC_EXCEEDANCE_PCT == 95.0][0])

    @property
    def crosscheck_offset_pct(self) -> float:
        """How much more the daily model evaporates than the Zhang curve, 100·(model/curve − 1) [%]."""
        return crosscheck_offset_pct(self.model_evap_mm, self.zhang_evap_mm)

    @property
    def crosscheck_reason(self) -> str:
        """Why the cross-check is flagged, in words; empty when it is not flagged."""
        return crosscheck_reason(self.crosscheck_offset_pct, self.baseline_offset_pct)

    @property
    def crosscheck_flag(self) -> bool:
        """True when the offset leaves the model's usual range or moves from the baseline's."""
        return bool(self.crosscheck_reason)

    @property
    def crosscheck_note(self) -> str:
        """Two sentences: the model-vs-curve difference with its meaning, and the verdict."""
        offset = self.crosscheck_offset_pct
        more = "more" if offset >= 0 else "less"
        low, high = CROSSCHECK_TYPICAL_OFFSET_PCT
        text = (
            f"The daily model evaporates {self.model_evap_mm:,.0f} mm/yr, {abs(offset):.0f} % "
            f"{more} than the Zhang curve's {self.zhang_evap_mm:,.0f} mm/yr for this cover mix "
            f"({low:+.0f} to {high:+.0f} % is usual for this model"
        )
        if self.baseline_offset_pct is not None:
            text += f"; current plan {self.baseline_offset_pct:+.0f} %"
        text += ")."
        reason = self.crosscheck_reason
        return text + (f" Flagged: {reason}." if reason else " Not flagged.")


@dataclass(frozen=True)
class PlanChange:
    """Change of a plan against a baseline (normally `current`); negative = less water.

    Attributes
    ----------
    yield_mm : float
        Change in mean annual yield [mm yr-1].
    yield_pct : float
        Change in mean annual yield [% of the baseline].
    yield_ml : float
        Change in mean annual yield [ML yr-1].
    dry10_mm : float
        Mean change over the driest 10 % of years (by catchment rain) [mm yr-1].
    driest_year_mm : float
        Change in the single driest year [mm yr-1].
    q95_m3s : float
        Change in Q95, the flow exceeded on 95 % of days [m3 s-1].
    q95_pct : float
        Change in Q95 [% of the baseline].
    q7_m3s, q7_pct : float
        Change in the mean annual 7-day minimum flow [m3 s-1] and [% of the baseline].
    baseflow_index : float
        Change in the baseflow index [-].
    days_below_per_year : float or None
        Change in days per year below the low-flow threshold [d yr-1]; None without one.
    """

    yield_mm: float
    yield_pct: float
    yield_ml: float
    dry10_mm: float
    driest_year_mm: float
    q95_m3s: float
    q95_pct: float
    q7_m3s: float = float("nan")
    q7_pct: float = float("nan")
    baseflow_index: float = float("nan")
    days_below_per_year: float | None = None


def _pct(change: float, base: float) -> float:
    return float(100.0 * change / base) if base else float("nan")


class Comparison:
    """Plans of one catchment compared on tiles simulated once.

    Parameters
    ----------
    plan_file : PlanFile
        The catchment, zones, covers and plans.
    tiles : TileResults
        Every tile simulated once (see :func:`coveryield.catchment.simulate_catchment`).
    mixes : dict, optional
        Tile weights (a tuple, see :meth:`TileResults.weights`) -> :class:`MixedSeries` already
        computed for them (e.g. read from the tile cache); other weights are mixed on demand.
    ensemble : EnsembleResults, optional
        Parameter ensemble of the same tiles (see
        :func:`coveryield.uncertainty.ensemble.simulate_ensemble`); when given, headlines
        gain bands (:meth:`bands`). It may also be attached later (:attr:`ensemble`).
    climate : Climate, optional
        The climate record the tiles were simulated on; kept so that growing stands
        (:meth:`timeline`) need not read it again (read on demand when not given).
    """

    def __init__(self, plan_file: PlanFile, tiles: TileResults, mixes: dict | None = None,
                 ensemble: EnsembleResults | None = None, *, climate=None):
        self.plan_file = plan_file
        self.tiles = tiles
        self._mixes = dict(mixes or {})
        self.ensemble = ensemble
        self.climate = climate
        self._stands = None
        rain = pd.Series(
            tiles.annual["rain_mm"] @ tiles.weights(plan_file.plans["current"]), index=tiles.years
        )
        n_dry = max(1, int(round(0.1 * len(rain))))
        #: Driest 10 % of complete years by catchment rain (at least one), driest first.
        self.dry_years: list[int] = [int(y) for y in rain.sort_values().index[:n_dry]]
        self.driest_year: int = self.dry_years[0]
        #: Days of complete years, and their year code 0, 1, … (−1 for the other days).
        self._complete = tiles.month_of_day > 0
        codes = np.searchsorted(tiles.years, np.asarray(tiles.dates.year))
        self._year_code = np.where(self._complete, codes, -1)
        self._outcome = functools.lru_cache(maxsize=None)(self._plan_outcome)

    @property
    def plan_names(self) -> list[str]:
        """Plan names, ``current`` first."""
        names = list(self.plan_file.plans)
        return ["current"] + [n for n in names if n != "current"]

    @property
    def cover_names(self) -> list[str]:
        """Covers with a tile in every zone (those used by any plan)."""
        return list(self.tiles.covers)

    @property
    def zone_names(self) -> list[str]:
        """Zone names in file order."""
        return [zone.name for zone in self.plan_file.zones]

    @property
    def years(self) -> np.ndarray:
        """Complete calendar years of the record."""
        return self.tiles.years

    def _plan_outcome(self, name: str) -> PlanOutcome:
        return self._outcome_of(name, self.plan_file.plans[name])

    def outcome(self, name: str) -> PlanOutcome:
        """Results of a plan in the file (computed once, then cached)."""
        if name not in self.plan_file.plans:
            from coveryield.errors import PlanFileError

            raise PlanFileError(f"no plan named {name!r}; plans: {', '.join(self.plan_names)}")
        return self._outcome(name)

    def evaluate(self, shares: dict[str, dict[str, float]], name: str = "edited") -> PlanOutcome:
        """Results for any shares: a weighted sum of tile results, never a new daily loop.

        Parameters
        ----------
        shares : dict
            Zone -> cover -> share [-]; each zone's shares must sum to 1.
        name : str
            Label of the result.

        Returns
        -------
        PlanOutcome

        Raises
        ------
        coveryield.errors.PlanFileError
            If a zone is missing or unknown, a cover unknown, or shares do not sum to 1.
        """
        validate_shares(shares, self.plan_file.zones, self.plan_file.covers, plan_name=name)
        return self._outcome_of(name, shares)

    def _outcome_of(self, name: str, shares: dict) -> PlanOutcome:
        weights = self.tiles.weights(shares)
        mixed: MixedSeries | None = self._mixes.get(tuple(weights))
        if mixed is None:
            mixed = mix_tiles(self.tiles, weights)
        months = pd.RangeIndex(1, 13, name="month")
        flow = mixed.flow_m3s
        threshold = self.plan_file.catchment.low_flow_m3s
        baseline = None if name == "current" else self.outcome("current").crosscheck_offset_pct
        return PlanOutcome(
            name=name,
            shares={zone: dict(cover_shares) for zone, cover_shares in shares.items()},
            annual=self._annual_table(mixed),
            monthly_yield_mm=pd.Series(mixed.monthly_yield_mm, index=months, name="yield_mm"),
            flow_m3s=pd.Series(flow, index=self.tiles.dates, name="flow_m3s"),
            fdc=flow_duration_curve(flow),
            model_evap_mm=mixed.model_evap_mm,
            zhang_evap_mm=mixed.zhang_evap_mm,
            fu_evap_mm=mixed.fu_evap_mm,
            area_km2=self.tiles.area_km2,
            monthly_land_yield_mm=pd.Series(
                mixed.monthly_land_yield_mm, index=months, name="land_yield_mm"
            ),
            monthly_open_water_mm=pd.Series(
                mixed.monthly_open_water_mm, index=months, name="open_water_net_mm"
            ),
            monthly_flow_m3s=pd.Series(mixed.monthly_flow_m3s, index=months, name="flow_m3s"),
            q7_m3s=float(np.nanmean(annual_minimum_moving_mean(flow, self._year_code))),
            baseflow_index=baseflow_index(flow, self._complete),
            days_below_per_year=(
                None if threshold is None else days_below_per_year(flow, threshold, self._complete)
            ),
            low_flow_m3s=threshold,
            baseline_offset_pct=baseline,
        )

    def _annual_table(self, mixed: MixedSeries) -> pd.DataFrame:
        a = mixed.annual
        evap = a["interception_mm"] + a["transpiration_mm"] + a["soil_evap_mm"] + a["open_water_mm"]
        land_yield = a["quickflow_mm"] + a["drainage_mm"]
        yield_mm = land_yield + a["open_water_net_mm"]
        derived = {
            "evap_mm": evap,
            "land_yield_mm": land_yield,
            "yield_mm": yield_mm,
            "yield_ml": yield_mm * self.tiles.area_km2,
        }
        columns = np.column_stack([derived[c] if c in derived else a[c] for c in ANNUAL_COLUMNS])
        return pd.DataFrame(
            columns, columns=list(ANNUAL_COLUMNS), index=pd.Index(self.tiles.years, name="year")
        )

    def change(self, outcome: PlanOutcome, baseline: PlanOutcome | None = None) -> PlanChange:
        """Change of ``outcome`` against ``baseline`` (default: the `current` plan)."""
        base = self.outcome("current") if baseline is None else baseline
        d_yield = outcome.annual["yield_mm"] - base.annual["yield_mm"]
        d_mean = outcome.mean_yield_mm - base.mean_yield_mm
        d_q95 = outcome.q95_m3s - base.q95_m3s
        d_q7 = outcome.q7_m3s - base.q7_m3s
        days = (
            None
            if outcome.days_below_per_year is None or base.days_below_per_year is None
            else outcome.days_below_per_year - base.days_below_per_year
        )
        return PlanChange(
            yield_mm=d_mean,
            yield_pct=_pct(d_mean, base.mean_yield_mm),
            yield_ml=d_mean * self.tiles.area_km2,
            dry10_mm=float(d_yield.loc[self.dry_years].mean()),
            driest_year_mm=float(d_yield.loc[self.driest_year]),
            q95_m3s=d_q95,
            q95_pct=_pct(d_q95, base.q95_m3s),
            q7_m3s=d_q7,
            q7_pct=_pct(d_q7, base.q7_m3s),
            baseflow_index=outcome.baseflow_index - base.baseflow_index,
            days_below_per_year=days,
        )

    # ---- years after planting --------------------------------------------------------------

    def timeline(
        self,
        plans=None,
        *,
        years: int = 30,
        start_year: int | None = None,
        schedules=None,
        progress: bool = False,
    ):
        """Follow plans year by year after planting, against ``current`` on the same weather.

        Each year is a weighted sum of the tiles simulated once and of growing stands' stage
        tiles (simulated once on first use; see :mod:`coveryield.stands`), so a new schedule
        or horizon never re-runs the daily loop for stands already met.

        Parameters
        ----------
        plans : str or list of str, optional
            Plans to follow (default: every plan but ``current``).
        years : int
            Length of the timeline [yr]; the record's complete years are cycled in order when
            it is shorter.
        start_year : int, optional
            Calendar year of the first year, a label only (default: the record's first
            complete year).
        schedules : dict of str -> coveryield.schedules.Schedule, optional
            Schedules to use instead of the file's (checked as in a plan file); a plan without
            a schedule is made all at once in year 1.
        progress : bool
            Show progress on stderr while new stands are simulated.

        Returns
        -------
        coveryield.timeline.Timeline
            Per plan, a table by year: yield, change against ``current`` [mm/yr, %, ML/yr],
            the mature plan's change on the same weather, planted area and stand age.

        Raises
        ------
        coveryield.errors.PlanFileError
            Unknown plan, bad schedule, or a planting year outside the timeline.
        """
        from coveryield.timeline import build_timeline

        return build_timeline(
            self, plans, years=years, start_year=start_year, schedules=schedules, progress=progress
        )

    def stand_results(self, keys, *, progress: bool = False):
        """Stage tiles of the given stands, simulating only those not simulated before.

        Parameters
        ----------
        keys : iterable of coveryield.stands.StandKey
            (zone, planted cover, young-state cover) of each stand needed.
        progress : bool
            Show progress on stderr while new stands are simulated.

        Returns
        -------
        coveryield.stands.StandResults
            Holding at least the stands asked for.
        """
        from coveryield.stands import StandResults, simulate_stands

        keys = list(dict.fromkeys(keys))
        known = self._stands.keys if self._stands is not None else ()
        missing = [k for k in keys if k not in known]
        if missing:
            if self.climate is None:
                self.climate = plan_climate(self.plan_file)
            new = simulate_stands(self.plan_file, missing, climate=self.climate, progress=progress)
            self._stands = new if self._stands is None else self._stands.merged(new)
        if self._stands is None:  # no growing stand needed at all
            empty = {name: np.zeros((len(self.years), 0, 0)) for name in self.tiles.annual}
            return StandResults((), np.asarray(self.years), empty)
        return self._stands

    # ---- tables over all plans ------------------------------------------------------------

    def annual_table(self) -> pd.DataFrame:
        """Per plan and year: the water balance [mm over the catchment] and yield [ML]."""
        frames = [
            self.outcome(name).annual.reset_index().assign(plan=name) for name in self.plan_names
        ]
        table = pd.concat(frames, ignore_index=True)
        return table[
            [
                "plan",
                "year",
                "rain_mm",
                "evap_mm",
                "quickflow_mm",
                "drainage_mm",
                "yield_mm",
                "storage_change_mm",
                "yield_ml",
                "land_yield_mm",
                "open_water_net_mm",
                "interception_mm",
                "transpiration_mm",
                "soil_evap_mm",
                "open_water_mm",
            ]
        ]

    def monthly_table(self) -> pd.DataFrame:
        """Per plan and calendar month: mean yield and its parts [mm month-1], mean flow [m3 s-1].

        Returns
        -------
        pandas.DataFrame
            Index ``month`` 1-12; per plan the columns ``NAME yield_mm`` (land yield plus the
            open-water balance), ``NAME land_yield_mm``, ``NAME open_water_net_mm`` and
            ``NAME flow_m3s`` (mean routed streamflow), and for every plan but ``current`` the
            change of its yield, ``NAME change_mm``.
        """
        columns = {}
        base = self.outcome("current").monthly_yield_mm
        for name in self.plan_names:
            o = self.outcome(name)
            columns[f"{name} yield_mm"] = o.monthly_yield_mm
            columns[f"{name} land_yield_mm"] = o.monthly_land_yield_mm
            columns[f"{name} open_water_net_mm"] = o.monthly_open_water_mm
            columns[f"{name} flow_m3s"] = o.monthly_flow_m3s
            if name != "current":
                columns[f"{name} change_mm"] = o.monthly_yield_mm - base
        return pd.DataFrame(columns)

    def low_flow_table(self) -> pd.DataFrame:
        """Per plan: 7Q, baseflow index, days below the threshold, Q95, and their changes.

        Returns
        -------
        pandas.DataFrame
            One row per plan: ``q7_m3s`` (mean annual 7-day minimum flow) [m3 s-1],
            ``q7_change_pct`` [%], ``baseflow_index`` [-], ``baseflow_index_change`` [-],
            ``days_below_per_year`` and its change [d yr-1] (empty without ``low_flow_m3s``),
            ``q95_m3s`` [m3 s-1].
        """
        rows = []
        for name in self.plan_names:
            o = self.outcome(name)
            c = None if name == "current" else self.change(o)
            rows.append(
                {
                    "plan": name,
                    "q7_m3s": o.q7_m3s,
                    "q7_change_pct": np.nan if c is None else c.q7_pct,
                    "baseflow_index": o.baseflow_index,
                    "baseflow_index_change": np.nan if c is None else c.baseflow_index,
                    "days_below_per_year": o.days_below_per_year,
                    "days_below_change": None if c is None else c.days_below_per_year,
                    "q95_m3s": o.q95_m3s,
                }
            )
        return pd.DataFrame(rows)

    def fdc_table(self) -> pd.DataFrame:
        """Flow duration curve per plan [m3 s-1] by exceedance [%]."""
        table = pd.DataFrame({"exceedance_pct": FDC_EXCEEDANCE_PCT})
        for name in self.plan_names:
            table[name] = self.outcome(name).fdc["flow_m3s"].to_numpy()
        return table

    def crosscheck_table(self) -> pd.DataFrame:
        """Mean annual evaporation per plan: daily model vs Zhang (2001) and Fu (1981).

        Returns
        -------
        pandas.DataFrame
            One row per plan: ``model_evap_mm``, ``zhang_evap_mm``, ``fu_evap_mm`` [mm yr-1],
            ``offset_pct`` (model vs Zhang) [%], ``offset_change_pct`` (against ``current``)
            [percentage points], ``flagged`` and ``reason``.
        """
        base = self.outcome("current").crosscheck_offset_pct
        rows = []
        for name in self.plan_names:
            o = self.outcome(name)
            rows.append(
                {
                    "plan": name,
                    "model_evap_mm": o.model_evap_mm,
                    "zhang_evap_mm": o.zhang_evap_mm,
                    "fu_evap_mm": o.fu_evap_mm,
                    "offset_pct": o.crosscheck_offset_pct,
                    "offset_change_pct": o.crosscheck_offset_pct - base,
                    "flagged": o.crosscheck_flag,
                    "reason": o.crosscheck_reason,
                }
            )
        return pd.DataFrame(rows)

    def cover_crosscheck_table(self) -> pd.DataFrame:
        """Per tile: mean rain, reference evaporation, model and curve evaporation [mm yr-1]."""
        t = self.tiles
        return pd.DataFrame(
            {
                "zone": [z for z, _ in t.tiles],
                "cover": [c for _, c in t.tiles],
                "rain_mm": t.rain_mean_mm,
                "et0_mm": t.et0_mean_mm,
                "model_evap_mm": t.evap_mean_mm,
                "zhang_evap_mm": t.zhang_evap_mm,
                "fu_evap_mm": t.fu_evap_mm,
            }
        )

    def summary(self) -> dict:
        """Headline figures per plan, JSON-ready: ``{"plans": {NAME: {...}}, ...}``."""
        plans = {}
        for name in self.plan_names:
            o = self.outcome(name)
            entry = {
                "mean_yield_mm": o.mean_yield_mm,
                "mean_yield_ml": o.mean_yield_ml,
                "mean_land_yield_mm": float(o.annual["land_yield_mm"].mean()),
                "mean_open_water_net_mm": float(o.annual["open_water_net_mm"].mean()),
                "mean_flow_m3s": o.mean_flow_m3s,
                "q95_m3s": o.q95_m3s,
                "q7_m3s": o.q7_m3s,
                "baseflow_index": o.baseflow_index,
                "days_below_low_flow_per_year": o.days_below_per_year,
                "mean_evap_mm": float(o.annual["evap_mm"].mean()),
                "zhang_evap_mm": o.zhang_evap_mm,
                "fu_evap_mm": o.fu_evap_mm,
                "crosscheck_offset_pct": o.crosscheck_offset_pct,
                "crosscheck_differs": o.crosscheck_flag,
                "crosscheck_reason": o.crosscheck_reason,
                "monthly_yield_mm": [float(v) for v in o.monthly_yield_mm],
                "monthly_flow_m3s": [float(v) for v in o.monthly_flow_m3s],
            }
            if name != "current":
                c = self.change(o)
                entry.update(
                    {
                        "change_mm": c.yield_mm,
                        "change_pct": c.yield_pct,
                        "change_ml": c.yield_ml,
                        "dry_year_change_mm": c.dry10_mm,
                        "driest_year_change_mm": c.driest_year_mm,
                        "q95_change_m3s": c.q95_m3s,
                        "q95_change_pct": c.q95_pct,
                        "q7_change_m3s": c.q7_m3s,
                        "q7_change_pct": c.q7_pct,
                        "baseflow_index_change": c.baseflow_index,
                        "days_below_low_flow_change": c.days_below_per_year,
                    }
                )
            entry.update(self._band_entries(name))
            plans[name] = entry
        spec = self.plan_file.catchment
        extra = {} if self.ensemble is None else {"ensemble": self.ensemble_summary()}
        return {
            "catchment": {
                "name": spec.name,
                "area_km2": spec.area_km2,
                "years": [int(self.years[0]), int(self.years[-1])],
                "n_years": int(len(self.years)),
            },
            "dry_years": self.dry_years,
            "yield_definition": YIELD_DEFINITION,
            "crosscheck": {
                "curve": ZHANG_CURVE_SENTENCE,
                "typical_offset_pct": list(CROSSCHECK_TYPICAL_OFFSET_PCT),
                "change_tolerance_pct": CROSSCHECK_CHANGE_TOLERANCE_PCT,
            },
            "low_flows": {
                "q7": f"mean over the complete years of each year's lowest {LOW_FLOW_WINDOW_DAYS}"
                "-day mean flow",
                "baseflow_index": "share of streamflow called baseflow by the Lyne & Hollick "
                f"(1979) filter, alpha {LYNE_HOLLICK_ALPHA}, {LYNE_HOLLICK_PASSES} passes",
                "low_flow_m3s": spec.low_flow_m3s,
            },
            "units": {
                "mm": "mm per year over the whole catchment",
                "ml": "ML per year",
                "m3s": "m3 per second",
                "days": "days per year",
            },
            "caution": CAUTION,
            **extra,
            "plans": plans,
        }

    # ---- bands from a parameter ensemble ---------------------------------------------------

    def bands(self, shares: dict[str, dict[str, float]]) -> dict[str, tuple[float, float, float]]:
        """Bands of the headline figures for any shares (a weighted sum per member, no loop).

        Parameters
        ----------
        shares : dict
            Zone -> cover -> share [-].

        Returns
        -------
        dict of str -> (p05, p50, p95)
            ``mean_yield_mm``, ``change_mm`` and ``dry_year_change_mm`` [mm yr-1]; empty without
            an ensemble.
        """
        if self.ensemble is None:
            return {}
        members = self.ensemble.headline_members(
            self.tiles.weights(shares), self.tiles.weights(self.plan_file.plans["current"]),
            self.dry_years)
        return {key: band(values) for key, values in members.items()}

    def _band_entries(self, name: str) -> dict[str, float]:
        entries = {}
        for key, values in self.bands(self.plan_file.plans[name]).items():
            if name == "current" and key != "mean_yield_mm":
                continue
            for pct, value in zip(BAND_PERCENTILES, values, strict=True):
                entries[f"{key}_p{pct:02.0f}"] = value
        return entries

    def ensemble_summary(self) -> dict:
        """Describe what the ensemble varied and what its bands mean, JSON-ready."""
        e = self.ensemble
        return {
            "members": e.n_members,
            "seed": e.seed,
            "percentiles": list(BAND_PERCENTILES),
            "sampling": "Latin hypercube, uniform over each range (McKay et al. 1979)",
            "varied": {d.name: [d.low, d.high] for d in e.design.dimensions},
            "meaning": ENSEMBLE_MEANING,
        }

    def ensemble_table(self) -> pd.DataFrame:
        """One row per member and plan: headline figures [mm yr-1] and the values drawn."""
        if self.ensemble is None:
            raise ValueError("no ensemble: compare with ensemble=N first")
        base = self.tiles.weights(self.plan_file.plans["current"])
        frames = []
        for name in self.plan_names:
            members = self.ensemble.headline_members(
                self.tiles.weights(self.plan_file.plans[name]), base, self.dry_years)
            frame = pd.DataFrame(members, index=self.ensemble.parameters.index)
            frames.append(frame.assign(plan=name).join(self.ensemble.parameters))
        table = pd.concat(frames).reset_index()
        first = ["member", "plan", "mean_yield_mm", "change_mm", "dry_year_change_mm"]
        return table[first + [c for c in table.columns if c not in first]]


def compare(plan: PlanFile | str | PathLike, *, progress: bool = False, cache=None,
            ensemble: int | None = None, seed: int | None = None) -> Comparison:
    """Compare every plan of a plan file.

    Parameters
    ----------
    plan : PlanFile or path
        A loaded plan file or the path of a TOML plan file.
    progress : bool
        Show progress on stderr while tiles are prepared.
    cache : coveryield.tile_cache.TileCache or bool, optional
        Take the tile results from this on-disk cache when it holds them for exactly these
        inputs, else simulate and store them there. True uses the default cache folder; None or
        False (the default) neither reads nor writes a cache.
    ensemble : int, optional
        Also simulate this many parameter sets drawn by Latin hypercube, for bands on every
        headline (the central figures stay those of the plan file's parameters).
    seed : int, optional
        Seed of the ensemble's draws; the same seed gives the same bands.

    Returns
    -------
    Comparison
        Tiles simulated once; per-plan outcomes, changes and tables.

    Raises
    ------
    coveryield.errors.PlanFileError, coveryield.errors.ClimateFileError
        For a malformed plan or climate file.
    """
    plan_file = plan if isinstance(plan, PlanFile) else load_plan(plan)
    climate = None
    if cache:
        from coveryield.tile_cache import TileCache, cached_simulation

        cache = TileCache() if cache is True else cache
        tiles, mixes = cached_simulation(plan_file, cache, progress=progress)
    else:
        climate = plan_climate(plan_file)
        tiles, mixes = simulate_catchment(plan_file, climate=climate, progress=progress), None
    members = None
    if ensemble is not None:
        from coveryield.uncertainty.ensemble import simulate_ensemble

        members = simulate_ensemble(plan_file, ensemble, seed=seed, progress=progress,
                                    climate=climate)
    return Comparison(plan_file, tiles, mixes, members, climate=climate)
