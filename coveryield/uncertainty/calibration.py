"""Calibration: fit a few catchment-wide parameters to an observed flow record, then test them.

What is fitted (:data:`FIT_PARAMETERS`, each within a documented range):

* ``surface_resistance_factor`` and ``root_zone_factor`` (:mod:`coveryield.adjustments`): they
  change the tiles, so each trial value re-runs the daily loop of the `current` plan's tiles;
* ``recession_days`` and ``quickflow_recession_days`` (``[catchment]``): they only route the
  yield to streamflow (drainage through the groundwater store, quickflow through the fast
  store), so for each trial of the factors they are fitted at once on the tiles already
  simulated (a profile over the routing parameters; Nelder–Mead in two dimensions).

The objective is KGE′ (Kling et al. 2012) of daily flow on the calibration period. The search
works in log space (each range maps to 0..1): a Latin hypercube screening of the factors (seeded:
the same input gives the same answer), then Nelder–Mead from the best point (Nelder & Mead 1965,
``scipy.optimize.minimize``). Then, for each factor, the values on either side of the best one
at which KGE′ falls by :data:`RANGE_KGE_TOLERANCE` (the other factors held, the routing
re-fitted) make the factor's range, written into the calibrated plan file for ensembles.

Periods (split-sample test, Klemeš 1986): the first :data:`WARM_UP_DAYS` days of the climate
record are a warm-up and never scored (the soil starts half full). The observed days after it are
split at 1 January of ``split_year`` (default: the year that halves them); the fit uses the days
before, the test the days from then on. Missing observed days are left out, never filled.

References
----------
.. [1] Klemeš, V. (1986). Operational testing of hydrological simulation models. Hydrol. Sci. J.,
   31(1), 13-24 (the split-sample test).
.. [2] Kling, H., Fuchs, M. & Paulin, M. (2012). J. Hydrol., 424-425, 264-277, eq. 3 (KGE′).
.. [3] Nelder, J. A. & Mead, R. (1965). A simplex method for function minimization. Comput. J.,
   7(4), 308-313.
.. [4] Beven, K. & Binley, A. (1992). The future of distributed models: model calibration and
   uncertainty prediction. Hydrol. Process., 6, 279-298 (acceptable parameter sets within a
   tolerance of the best; our tolerance is our choice).
"""

from __future__ import annotations

import dataclasses
import math
import time
from dataclasses import dataclass

import numpy as np
import pandas as pd

from coveryield.adjustments import FACTORS
from coveryield.catchment import TileResults, mix_tiles, simulate_catchment
from coveryield.climate import Climate, read_climate
from coveryield.errors import CalibrationError, ObservedFlowError
from coveryield.metrics import fit_scores, kge_2012
from coveryield.observed import ObservedFlow
from coveryield.plans import BASELINE_PLAN, PlanFile

__all__ = ["FitParameter", "FIT_PARAMETERS", "Periods", "CalibrationResult", "calibrate",
           "split_periods", "WARM_UP_DAYS", "MIN_OBSERVED_DAYS", "MIN_PERIOD_DAYS",
           "RANGE_KGE_TOLERANCE"]

#: Days at the start of the climate record that are simulated but never scored [d].
WARM_UP_DAYS = 365
#: Observed days (after the warm-up) a calibration needs at least: two years [d].
MIN_OBSERVED_DAYS = 730
#: Observed days each of the calibration and validation periods needs at least [d].
MIN_PERIOD_DAYS = 365
#: A factor's range spans the values whose calibration KGE′ is within this of the best [-]
#: (our choice; common practice, no source).
RANGE_KGE_TOLERANCE = 0.05
#: Screening points per fitted factor before Nelder–Mead [-].
SCREEN_PER_FACTOR = 6
#: Nelder–Mead evaluations at most [-].
MAX_SIMPLEX_RUNS = 60
#: Bisection steps per side when a factor's range is sought [-].
RANGE_STEPS = 5


@dataclass(frozen=True)
class FitParameter:
    """One fitted parameter, its range and where it lives in a plan file.

    Attributes
    ----------
    name : str
        Key in the plan file and in ``calibration.json``.
    section : {"adjustments", "catchment"}
        Plan-file table that holds it.
    low, high : float
        Search range (log scale) [unit].
    unit : str
        Unit.
    acts_on : str
        What it changes, in words.
    why : str
        Why this range.
    """

    name: str
    section: str
    low: float
    high: float
    unit: str
    acts_on: str
    why: str

    @property
    def routing_only(self) -> bool:
        """True when it only routes yield to flow (a field of TileResults): no re-simulation."""
        return self.section == "catchment" and self.name in TileResults.__dataclass_fields__

    def to_unit(self, value: float) -> float:
        """Position of ``value`` in the log range, 0..1 [-]."""
        return (math.log(value) - math.log(self.low)) / (math.log(self.high) - math.log(self.low))

    def from_unit(self, u: float) -> float:
        """Value at position ``u`` (clipped to 0..1) of the log range [unit]."""
        u = min(max(float(u), 0.0), 1.0)
        return math.exp(math.log(self.low) + u * (math.log(self.high) - math.log(self.low)))


#: The parameters a calibration fits.
FIT_PARAMETERS: tuple[FitParameter, ...] = (
    *(FitParameter(name, "adjustments", info.low, info.high, "-", info.acts_on, info.why)
      for name, info in FACTORS.items()),
    FitParameter("recession_days", "catchment", 5.0, 365.0, "d",
                 "the recession constant of the groundwater store that routes drainage and the "
                 "open-water balance to streamflow",
                 "from a store that empties within a week or two (shallow, fractured rock) to "
                 "one that holds a year's drainage (deep groundwater); common practice, no "
                 "source"),
    FitParameter("quickflow_recession_days", "catchment", 0.3, 10.0, "d",
                 "the recession constant of the fast store that routes quickflow to streamflow",
                 "storm runoff of small catchments passes within hours to a few days; common "
                 "practice, no source"),
)


@dataclass(frozen=True)
class Periods:
    """Days scored in the calibration and validation periods (observed days only).

    Attributes
    ----------
    calibration, validation : pandas.DatetimeIndex
        Observed days of each period.
    split_year : int
        The validation period starts on 1 January of this year.
    """

    calibration: pd.DatetimeIndex
    validation: pd.DatetimeIndex
    split_year: int

    def describe(self, name: str) -> dict:
        """First and last day and number of days of one period, JSON-ready."""
        days = getattr(self, name)
        return {"start": f"{days[0]:%Y-%m-%d}", "end": f"{days[-1]:%Y-%m-%d}",
                "n_days": int(len(days))}


def split_periods(observed: ObservedFlow, dates: pd.DatetimeIndex,
                  split_year: int | None = None) -> Periods:
    """Choose the scored days: observed, inside the climate record, after the warm-up, split.

    Parameters
    ----------
    observed : ObservedFlow
        The observed record.
    dates : pandas.DatetimeIndex
        Days of the climate record (the simulation).
    split_year : int, optional
        First year of the validation period (default: the year that halves the observed days).

    Returns
    -------
    Periods

    Raises
    ------
    ObservedFlowError
        When the record does not overlap the climate record after its warm-up, or holds fewer
        than :data:`MIN_OBSERVED_DAYS` observed days there.
    CalibrationError
        When a period holds fewer than :data:`MIN_PERIOD_DAYS` observed days.
    """
    flow = observed.flow_m3s
    scored_from = dates[min(WARM_UP_DAYS, len(dates) - 1)]
    inside = flow.index[(flow.index >= scored_from) & (flow.index <= dates[-1])
                        & flow.notna().to_numpy()]
    record = f"{flow.index[0]:%Y-%m-%d} to {flow.index[-1]:%Y-%m-%d}"
    climate = (f"the climate record {dates[0]:%Y-%m-%d} to {dates[-1]:%Y-%m-%d}, scored from "
               f"{scored_from:%Y-%m-%d} after a warm-up of {WARM_UP_DAYS} days")
    if len(inside) == 0:
        raise ObservedFlowError(f"{observed.source}: the observed record ({record}) does not "
                                f"overlap {climate}; expected observed days inside it")
    if len(inside) < MIN_OBSERVED_DAYS:
        raise ObservedFlowError(
            f"{observed.source}: only {len(inside)} observed days ({record}) overlap {climate}; "
            f"expected at least {MIN_OBSERVED_DAYS} (2 years) to calibrate and validate")
    if split_year is None:
        split_year = int(inside[len(inside) // 2].year)
    split = pd.Timestamp(year=int(split_year), month=1, day=1)
    periods = Periods(inside[inside < split], inside[inside >= split], int(split_year))
    for name, days in (("calibration", periods.calibration), ("validation", periods.validation)):
        if len(days) < MIN_PERIOD_DAYS:
            raise CalibrationError(
                f"split year {split_year}: the {name} period holds {len(days)} observed days "
                f"(observed days scored run {inside[0]:%Y-%m-%d} to {inside[-1]:%Y-%m-%d}); "
                f"expected at least {MIN_PERIOD_DAYS} in each period; choose another --split")
    return periods


@dataclass(frozen=True)
class CalibrationResult:
    """A calibration and its split-sample test.

    Attributes
    ----------
    plan_file : PlanFile
        The calibrated plan file (every plan of the input, fitted values and ranges set).
    start_plan : PlanFile
        The plan file calibrated from.
    parameters : tuple of dict
        Per fitted parameter: ``name``, ``section``, ``unit``, ``start``, ``value``, ``bounds``
        (search range), ``range`` (values within the KGE′ tolerance, factors only, else None).
    periods : Periods
        The scored days.
    observed : ObservedFlow
        The observed record.
    simulated_m3s, start_m3s : pandas.Series
        Routed flow of the `current` plan on every day of the climate record, calibrated and
        with the starting parameters [m3 s-1].
    scores, start_scores : dict
        ``calibration`` and ``validation`` -> :func:`coveryield.metrics.fit_scores`.
    n_runs : int
        Simulations of the tiles (each a daily loop over the `current` plan's tiles).
    seconds : float
        Wall time of the calibration [s].
    """

    plan_file: PlanFile
    start_plan: PlanFile
    parameters: tuple[dict, ...]
    periods: Periods
    observed: ObservedFlow
    simulated_m3s: pd.Series
    start_m3s: pd.Series
    scores: dict
    start_scores: dict
    n_runs: int
    seconds: float

    def to_json(self) -> dict:
        """Everything ``calibration.json`` holds (the report adds the caution)."""
        return {
            "objective": "KGE' (Kling et al. 2012) of daily flow on the calibration period",
            "calibration": {**self.periods.describe("calibration"),
                            **self.scores["calibration"]},
            "validation": {**self.periods.describe("validation"), **self.scores["validation"]},
            "parameters": {p["name"]: {k: v for k, v in p.items() if k != "name"}
                           for p in self.parameters},
            "before": self.start_scores,
            "split_year": self.periods.split_year,
            "warm_up_days": WARM_UP_DAYS,
            "range_kge_tolerance": RANGE_KGE_TOLERANCE,
            "observed": {"file": self.observed.source, "n_observed": self.observed.n_observed,
                         "n_missing": self.observed.n_missing,
                         "gaps": [[f"{g.start:%Y-%m-%d}", f"{g.end:%Y-%m-%d}", int(g.n_days)]
                                  for g in self.observed.gaps.itertuples(index=False)]},
            "runs": self.n_runs,
            "seconds": round(self.seconds, 2),
            "units": {"flow": "m3/s", "bias_pct": "%", "recession_days": "days"},
        }


class _Fit:
    """The objective: simulate the `current` tiles for trial factors, re-fit routing, score."""

    def __init__(self, plan_file, climate, observed, periods, parameters, bar):
        self.plan = plan_file.model_copy(
            update={"plans": {BASELINE_PLAN: plan_file.plans[BASELINE_PLAN]}})
        self.climate = climate
        self.outer = [p for p in parameters if not p.routing_only]
        self.routing = [p for p in parameters if p.routing_only]
        self.bar = bar
        self.runs = 0
        self.cache: dict[tuple, tuple[float, dict]] = {}
        self.weights = None
        self.dates = None
        self.observed_m3s = None
        self.cal_rows = None
        self._periods = periods
        self._observed = observed

    # ---- building and scoring ------------------------------------------------------------

    def variant(self, values: dict[str, float]) -> PlanFile:
        """Return the (`current`-only) plan file with trial values."""
        return with_values(self.plan, values)

    def simulate(self, values: dict[str, float]) -> TileResults:
        tiles = simulate_catchment(self.variant(values), climate=self.climate)
        self.runs += 1
        if self.bar is not None:
            self.bar.update(1)
        if self.weights is None:
            self.weights = tiles.weights(self.plan.plans[BASELINE_PLAN])
            self.dates = tiles.dates
            self.observed_m3s = self._observed.flow_m3s.reindex(tiles.dates).to_numpy()
            self.cal_rows = tiles.dates.get_indexer(self._periods.calibration)
        return tiles

    def flow(self, tiles: TileResults, routing: dict[str, float]) -> np.ndarray:
        routed = dataclasses.replace(tiles, **routing) if routing else tiles
        return mix_tiles(routed, self.weights).flow_m3s

    def loss(self, flow: np.ndarray) -> float:
        rows = self.cal_rows
        return 1.0 - kge_2012(flow[rows], self.observed_m3s[rows])

    def best_routing(self, tiles: TileResults, start: dict[str, float]) -> tuple[float, dict]:
        """Fit the routing parameters on simulated tiles; (loss, values)."""
        from scipy.optimize import minimize, minimize_scalar

        if not self.routing:
            return self.loss(self.flow(tiles, {})), {}

        def loss_at(u) -> float:
            u = np.atleast_1d(u)
            values = {p.name: p.from_unit(x) for p, x in zip(self.routing, u, strict=True)}
            return self.loss(self.flow(tiles, values))

        if len(self.routing) == 1:
            fit = minimize_scalar(loss_at, bounds=(0.0, 1.0), method="bounded",
                                  options={"xatol": 1e-3})
            u_best = np.atleast_1d(fit.x)
        else:
            u0 = [p.to_unit(start[p.name]) for p in self.routing]
            fit = minimize(loss_at, u0, method="Nelder-Mead", bounds=[(0, 1)] * len(u0),
                           options={"xatol": 1e-3, "fatol": 1e-5, "maxfev": 200})
            u_best = fit.x
        values = {p.name: p.from_unit(x) for p, x in zip(self.routing, u_best, strict=True)}
        return float(loss_at(u_best)), values

    def evaluate(self, u_outer, routing_start: dict[str, float]) -> tuple[float, dict]:
        """Loss and routing values for factors at unit positions ``u_outer`` (cached)."""
        u = tuple(round(float(min(max(x, 0.0), 1.0)), 12) for x in np.atleast_1d(u_outer))
        if u not in self.cache:
            values = {p.name: p.from_unit(x) for p, x in zip(self.outer, u, strict=True)}
            tiles = self.simulate({**routing_start, **values})
            self.cache[u] = self.best_routing(tiles, routing_start)
        return self.cache[u]


def with_values(plan_file: PlanFile, values: dict[str, float],
                ranges: dict[str, tuple[float, float]] | None = None) -> PlanFile:
    """Set parameter values in their plan-file tables (adjustments or catchment).

    Parameters
    ----------
    plan_file : PlanFile
        The plan file.
    values : dict of str -> float
        Parameter name -> value (:data:`FIT_PARAMETERS` names) [unit of each].
    ranges : dict, optional
        Factor name -> (low, high) to record in ``[adjustments] ranges`` [-].

    Returns
    -------
    PlanFile
        A copy; the input is unchanged.
    """
    sections = {p.name: p.section for p in FIT_PARAMETERS}
    adjust = {k: float(v) for k, v in values.items() if sections.get(k) == "adjustments"}
    catchment = {k: float(v) for k, v in values.items() if sections.get(k) == "catchment"}
    adjustments = plan_file.adjustments.model_copy(update=adjust)
    if ranges is not None:
        adjustments = adjustments.model_copy(update={"ranges": dict(ranges)})
    adjustments = type(adjustments).model_validate(adjustments.model_dump())  # check ranges
    return plan_file.model_copy(update={
        "adjustments": adjustments,
        "catchment": plan_file.catchment.model_copy(update=catchment),
    })


def _start_values(plan_file: PlanFile, parameters) -> dict[str, float]:
    return {p.name: float(getattr(getattr(plan_file, p.section), p.name)) for p in parameters}


def calibrate(
    plan_file: PlanFile,
    observed: ObservedFlow,
    *,
    split_year: int | None = None,
    climate: Climate | None = None,
    parameters: tuple[FitParameter, ...] = FIT_PARAMETERS,
    progress: bool = False,
    seed: int = 0,
) -> CalibrationResult:
    """Fit the parameters to the observed flow of the `current` plan; test on the other period.

    Parameters
    ----------
    plan_file : PlanFile
        The catchment; its `current` plan is the land use during the observed record.
    observed : ObservedFlow
        Observed daily flow at the outlet (see :func:`coveryield.observed.read_observed_flow`).
    split_year : int, optional
        First year of the validation period (default: the year that halves the observed days).
    climate : Climate, optional
        The catchment's climate record (read from the plan's climate file when omitted).
    parameters : tuple of FitParameter
        What to fit (default :data:`FIT_PARAMETERS`); start values are the plan file's.
    progress : bool
        Show a tqdm progress bar of the simulations on stderr.
    seed : int
        Seed of the screening draws (the same input and seed give the same fit).

    Returns
    -------
    CalibrationResult

    Raises
    ------
    ObservedFlowError, CalibrationError
        When the observed record does not overlap the climate record, is too short, or a
        period is too short.
    """
    from tqdm.auto import tqdm

    started = time.perf_counter()
    if climate is None:
        spec = plan_file.catchment
        climate = read_climate(spec.climate, latitude_deg=spec.latitude_deg,
                               elevation_m=spec.elevation_m, wind_height_m=spec.wind_height_m,
                               coastal=spec.coastal)
    periods = split_periods(observed, climate.daily.index, split_year)
    start = _start_values(plan_file, parameters)
    n_outer = sum(not p.routing_only for p in parameters)
    budget = 2 + SCREEN_PER_FACTOR * n_outer + MAX_SIMPLEX_RUNS * (n_outer > 0) \
        + 2 * (RANGE_STEPS + 1) * n_outer
    with tqdm(total=budget, desc="calibration runs", unit="run", disable=not progress) as bar:
        fit = _Fit(plan_file, climate, observed, periods, parameters, bar)
        u_best, (loss, routing) = _search(fit, start, seed)
        ranges = _factor_ranges(fit, u_best, loss, routing)
        bar.total = bar.n
        bar.refresh()
    fitted = {**{p.name: p.from_unit(x) for p, x in zip(fit.outer, u_best, strict=True)},
              **routing}
    calibrated = with_values(plan_file, fitted, ranges)
    simulated = _current_flow(calibrated, climate)
    start_flow = _current_flow(plan_file, climate)
    scores = _period_scores(simulated, observed, periods)
    start_scores = _period_scores(start_flow, observed, periods)
    rows = tuple({"name": p.name, "section": p.section, "unit": p.unit, "start": start[p.name],
                  "value": fitted[p.name], "bounds": [p.low, p.high],
                  "range": list(ranges[p.name]) if p.name in ranges else None,
                  "acts_on": p.acts_on} for p in parameters)
    return CalibrationResult(
        plan_file=calibrated, start_plan=plan_file, parameters=rows, periods=periods,
        observed=observed, simulated_m3s=simulated, start_m3s=start_flow, scores=scores,
        start_scores=start_scores, n_runs=fit.runs + 2, seconds=time.perf_counter() - started)


def _search(fit: _Fit, start: dict[str, float], seed: int):
    """Screen the factors by Latin hypercube, then Nelder–Mead from the best point."""
    from scipy.optimize import minimize
    from scipy.stats import qmc

    routing_start = {p.name: start[p.name] for p in fit.routing}
    u_start = np.array([p.to_unit(start[p.name]) for p in fit.outer])
    if not fit.outer:
        return u_start, fit.evaluate(u_start, routing_start)
    sampler = qmc.LatinHypercube(d=len(fit.outer), rng=np.random.default_rng(seed))
    candidates = [u_start, *sampler.random(SCREEN_PER_FACTOR * len(fit.outer))]
    losses = [fit.evaluate(u, routing_start)[0] for u in candidates]
    best = candidates[int(np.argmin(losses))]
    result = minimize(lambda u: fit.evaluate(u, routing_start)[0], best, method="Nelder-Mead",
                      bounds=[(0.0, 1.0)] * len(best),
                      options={"maxfev": MAX_SIMPLEX_RUNS, "xatol": 5e-3, "fatol": 1e-4,
                               "initial_simplex": _simplex(best, 0.15)})
    u_best = np.clip(result.x, 0.0, 1.0)
    return u_best, fit.evaluate(u_best, routing_start)


def _simplex(centre: np.ndarray, step: float) -> np.ndarray:
    """Build a start simplex around ``centre`` in the unit cube, edges of length ``step``."""
    vertices = [centre]
    for k in range(len(centre)):
        vertex = centre.copy()
        vertex[k] = centre[k] + step if centre[k] + step <= 1.0 else centre[k] - step
        vertices.append(vertex)
    return np.array(vertices)


def _factor_ranges(fit: _Fit, u_best, best_loss, routing) -> dict[str, tuple[float, float]]:
    """Per factor: values either side of the best within the KGE′ tolerance (others held)."""
    ranges = {}
    limit = best_loss + RANGE_KGE_TOLERANCE  # loss = 1 - KGE'
    for k, parameter in enumerate(fit.outer):
        ends = []
        for edge in (0.0, 1.0):
            inside, outside = float(u_best[k]), edge
            trial = np.array(u_best, dtype=float)
            trial[k] = edge
            if fit.evaluate(trial, routing)[0] <= limit:
                ends.append(edge)
                continue
            for _ in range(RANGE_STEPS):
                trial[k] = 0.5 * (inside + outside)
                if fit.evaluate(trial, routing)[0] <= limit:
                    inside = trial[k]
                else:
                    outside = trial[k]
            ends.append(inside)
        value = parameter.from_unit(u_best[k])
        low, high = parameter.from_unit(ends[0]), parameter.from_unit(ends[1])
        ranges[parameter.name] = (min(low, value), max(high, value))
    return ranges


def _current_flow(plan_file: PlanFile, climate: Climate) -> pd.Series:
    """Routed flow of the `current` plan, computed as ``coveryield compare`` computes it."""
    shares = plan_file.plans[BASELINE_PLAN]
    tiles = simulate_catchment(plan_file.model_copy(update={"plans": {BASELINE_PLAN: shares}}),
                               climate=climate)
    flow = mix_tiles(tiles, tiles.weights(shares)).flow_m3s
    return pd.Series(flow, index=tiles.dates, name="flow_m3s")


def _period_scores(flow: pd.Series, observed: ObservedFlow, periods: Periods) -> dict:
    out = {}
    for name in ("calibration", "validation"):
        days = getattr(periods, name)
        out[name] = fit_scores(flow.reindex(days).to_numpy(),
                               observed.flow_m3s.reindex(days).to_numpy())
    return out
