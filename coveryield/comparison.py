"""Plan comparison: every table a manager signs off, for each plan and its change against `current`.

:func:`compare` simulates the tiles of a plan file once; each plan (and any edited set of shares,
via :meth:`Comparison.evaluate`) is then a weighted sum of tile results. Results are returned as
plain objects holding pandas tables; nothing is printed or written here (see
:mod:`coveryield.reports`).

All depths are mm over the whole catchment; volumes in ML (1 mm over 1 km2 = 1 ML); flows in
m3 s-1. Results are screening estimates, to be confirmed by licensed hydrological practice and
local regulations.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass
from os import PathLike

import numpy as np
import pandas as pd

from coveryield.catchment import (
    MixedSeries,
    TileResults,
    mix_tiles,
    plan_climate,
    simulate_catchment,
)
from coveryield.physics.curves import CROSSCHECK_TOLERANCE
from coveryield.plans import PlanFile, load_plan, validate_shares

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
    "yield_mm",
    "storage_change_mm",
    "yield_ml",
)

#: Exceedance probabilities at which the flow duration curve is tabulated [%].
FDC_EXCEEDANCE_PCT = np.concatenate([[0.1, 0.5], np.arange(1.0, 100.0, 1.0), [99.5, 99.9]])

SECONDS_PER_YEAR = 365.25 * 86400.0


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
        Mean yield per calendar month (index 1-12) [mm month-1].
    flow_m3s : pandas.Series
        Daily streamflow: yield routed through the groundwater store [m3 s-1].
    fdc : pandas.DataFrame
        Flow duration curve (``exceedance_pct`` [%], ``flow_m3s`` [m3 s-1]).
    model_evap_mm, zhang_evap_mm, fu_evap_mm : float
        Mean annual evaporation: daily model, Zhang et al. (2001) curve, Fu's form [mm yr-1].
    area_km2 : float
        Catchment area [km2].
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
    def crosscheck_flag(self) -> bool:
        """True when the daily model and the Zhang curve differ by more than the tolerance."""
        return bool(
            abs(self.model_evap_mm - self.zhang_evap_mm) > CROSSCHECK_TOLERANCE * self.zhang_evap_mm
        )

    @property
    def crosscheck_note(self) -> str:
        """One sentence comparing the daily model with the Zhang curve."""
        diff = self.model_evap_mm - self.zhang_evap_mm
        pct = 100.0 * diff / self.zhang_evap_mm
        verdict = "differs by more than" if self.crosscheck_flag else "is within"
        return (
            f"Daily model evaporation {self.model_evap_mm:.0f} mm/yr vs Zhang curve "
            f"{self.zhang_evap_mm:.0f} mm/yr ({pct:+.0f} %): {verdict} the "
            f"{100 * CROSSCHECK_TOLERANCE:.0f} % tolerance."
        )


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
    """

    yield_mm: float
    yield_pct: float
    yield_ml: float
    dry10_mm: float
    driest_year_mm: float
    q95_m3s: float
    q95_pct: float


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
    climate : Climate, optional
        The climate record the tiles were simulated on; kept so that growing stands
        (:meth:`timeline`) need not read it again.
    """

    def __init__(self, plan_file: PlanFile, tiles: TileResults, *, climate=None):
        self.plan_file = plan_file
        self.tiles = tiles
        self.climate = climate
        self._stands = None
        rain = pd.Series(
            tiles.annual["rain_mm"] @ tiles.weights(plan_file.plans["current"]), index=tiles.years
        )
        n_dry = max(1, int(round(0.1 * len(rain))))
        #: Driest 10 % of complete years by catchment rain (at least one), driest first.
        self.dry_years: list[int] = [int(y) for y in rain.sort_values().index[:n_dry]]
        self.driest_year: int = self.dry_years[0]
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
        mixed: MixedSeries = mix_tiles(self.tiles, self.tiles.weights(shares))
        return PlanOutcome(
            name=name,
            shares={zone: dict(cover_shares) for zone, cover_shares in shares.items()},
            annual=self._annual_table(mixed),
            monthly_yield_mm=pd.Series(
                mixed.monthly_yield_mm, index=pd.RangeIndex(1, 13, name="month"), name="yield_mm"
            ),
            flow_m3s=pd.Series(mixed.flow_m3s, index=self.tiles.dates, name="flow_m3s"),
            fdc=flow_duration_curve(mixed.flow_m3s),
            model_evap_mm=mixed.model_evap_mm,
            zhang_evap_mm=mixed.zhang_evap_mm,
            fu_evap_mm=mixed.fu_evap_mm,
            area_km2=self.tiles.area_km2,
        )

    def _annual_table(self, mixed: MixedSeries) -> pd.DataFrame:
        a = mixed.annual
        evap = a["interception_mm"] + a["transpiration_mm"] + a["soil_evap_mm"] + a["open_water_mm"]
        yield_mm = a["quickflow_mm"] + a["drainage_mm"]
        derived = {
            "evap_mm": evap,
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
        return PlanChange(
            yield_mm=d_mean,
            yield_pct=_pct(d_mean, base.mean_yield_mm),
            yield_ml=d_mean * self.tiles.area_km2,
            dry10_mm=float(d_yield.loc[self.dry_years].mean()),
            driest_year_mm=float(d_yield.loc[self.driest_year]),
            q95_m3s=d_q95,
            q95_pct=_pct(d_q95, base.q95_m3s),
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
                "interception_mm",
                "transpiration_mm",
                "soil_evap_mm",
                "open_water_mm",
            ]
        ]

    def monthly_table(self) -> pd.DataFrame:
        """Mean yield per calendar month per plan [mm month-1], and change against `current`."""
        table = pd.DataFrame(
            {name: self.outcome(name).monthly_yield_mm for name in self.plan_names}
        )
        for name in self.plan_names[1:]:
            table[f"{name} change"] = table[name] - table["current"]
        return table

    def fdc_table(self) -> pd.DataFrame:
        """Flow duration curve per plan [m3 s-1] by exceedance [%]."""
        table = pd.DataFrame({"exceedance_pct": FDC_EXCEEDANCE_PCT})
        for name in self.plan_names:
            table[name] = self.outcome(name).fdc["flow_m3s"].to_numpy()
        return table

    def crosscheck_table(self) -> pd.DataFrame:
        """Mean annual evaporation per plan: daily model vs Zhang (2001) and Fu (1981) [mm yr-1]."""
        rows = []
        for name in self.plan_names:
            o = self.outcome(name)
            rows.append(
                {
                    "plan": name,
                    "model_evap_mm": o.model_evap_mm,
                    "zhang_evap_mm": o.zhang_evap_mm,
                    "fu_evap_mm": o.fu_evap_mm,
                    "differs": o.crosscheck_flag,
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
                "mean_flow_m3s": o.mean_flow_m3s,
                "q95_m3s": o.q95_m3s,
                "mean_evap_mm": float(o.annual["evap_mm"].mean()),
                "zhang_evap_mm": o.zhang_evap_mm,
                "fu_evap_mm": o.fu_evap_mm,
                "crosscheck_differs": o.crosscheck_flag,
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
                    }
                )
            plans[name] = entry
        spec = self.plan_file.catchment
        return {
            "catchment": {
                "name": spec.name,
                "area_km2": spec.area_km2,
                "years": [int(self.years[0]), int(self.years[-1])],
                "n_years": int(len(self.years)),
            },
            "dry_years": self.dry_years,
            "crosscheck_tolerance_pct": 100 * CROSSCHECK_TOLERANCE,
            "units": {
                "mm": "mm per year over the whole catchment",
                "ml": "ML per year",
                "m3s": "m3 per second",
            },
            "caution": CAUTION,
            "plans": plans,
        }


def compare(plan: PlanFile | str | PathLike, *, progress: bool = False) -> Comparison:
    """Compare every plan of a plan file.

    Parameters
    ----------
    plan : PlanFile or path
        A loaded plan file or the path of a TOML plan file.
    progress : bool
        Show progress on stderr while tiles are prepared.

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
    climate = plan_climate(plan_file)
    tiles = simulate_catchment(plan_file, climate=climate, progress=progress)
    return Comparison(plan_file, tiles, climate=climate)
