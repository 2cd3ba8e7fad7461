"""Schedules: in which years a plan's land-cover changes happen, and when stands are felled.

A plan (``[plans.NAME]``) gives the cover shares once every change is made and every stand is
mature. A schedule of the same name says how the catchment gets there from ``current``, year by
year::

    [schedules.plant-upper]
    description = "Plant 60 % of the upper zone's pasture in pine, 10 % a year for six years"

    [[schedules.plant-upper.plantings]]
    zone = "upper"
    cover = "forest"           # the cover planted (or sown)
    replaces = "pasture"       # the cover whose share it takes
    share_per_year = 0.10      # share of the zone changed in each planting year (0-1) ...
    # share = 0.60             # ... or the total, spread evenly over the planting years
    year = 1                   # first planting year: 1 = the first year of the timeline
    years = 6                  # successive planting years (default 1)
    rotation_years = 28        # optional: fell and replant stands at this age (overrides the
                               # cover's own rotation)
    harvest_year = 25          # optional: fell every stand of this entry in that year

A planting of a cover that grows (one deriving from forest, with a growth trajectory) starts a
stand in each planting year that grows from a young state to the cover's mature parameters
(see :mod:`coveryield.stands`); a planting of any other cover switches the share at the start of
the planting year. Stands of ``current`` and the land a schedule does not touch stay as they
are. Felling (rotation or harvest year) restarts a stand from its young state.

Rules (checked, all problems reported at once, with key path, value and expectation):

* the schedule belongs to a plan of the same name (not ``current``);
* zones and covers exist; ``cover`` differs from ``replaces``; rotation and harvest only for a
  cover that grows; the harvest comes after the entry's last planting year;
* applied in year order to ``current``, no planting takes more of a cover than the zone holds
  at that time ("shares that would exceed the zone");
* after the last planting the shares are those of the plan.

A plan without a schedule is taken as made all at once in year 1 (:func:`implicit_schedule`).
Whether every planting year lies inside the timeline is checked when a timeline of a given
length is built (:func:`check_fits_timeline`).

Years are counted from 1 (the first year of the timeline). A stand's age in a year is taken at
mid-year: 0.5 years in its planting year.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np
from pydantic import BaseModel, ConfigDict, Field, ValidationError, model_validator

from coveryield.errors import PlanFileError

if TYPE_CHECKING:  # pragma: no cover
    from coveryield.covers import Cover
    from coveryield.plans import PlanFile

__all__ = [
    "Planting",
    "Schedule",
    "Cohort",
    "cohorts",
    "implicit_schedule",
    "schedule_for",
    "check_schedule",
    "check_fits_timeline",
    "young_state",
    "base_shares_by_year",
    "FALLBACK_START",
]

#: Young state of a stand planted on land that is not grass (crop, water, felled forest): the
#: ground is taken as grass until the trees close over it (our choice, documented).
FALLBACK_START = "pasture"
#: Shares must agree within this [-] (as in plan files).
TOLERANCE = 1e-6


class Planting(BaseModel):
    """One entry of a schedule: a cover planted in place of another, in one or more years.

    Parameters
    ----------
    zone : str
        Zone planted.
    cover : str
        Cover planted (or sown).
    replaces : str
        Cover whose share the planting takes.
    share : float, optional
        Share of the zone changed in total, spread evenly over the planting years [-].
    share_per_year : float, optional
        Share of the zone changed in each planting year [-]. Give ``share`` or this, not both.
    year : int
        First planting year, 1 = the first year of the timeline [-].
    years : int
        Number of successive planting years [-], default 1.
    rotation_years : int, optional
        Fell and replant the stands at this age [yr]; default: the planted cover's own rotation.
    harvest_year : int, optional
        Fell every stand of this entry in that year (after its last planting year) [-]; any
        rotation counts from there.
    """

    model_config = ConfigDict(frozen=True, extra="forbid", strict=True)

    zone: str = Field(min_length=1)
    cover: str = Field(min_length=1)
    replaces: str = Field(min_length=1)
    share: float | None = Field(None, gt=0.0, le=1.0)
    share_per_year: float | None = Field(None, gt=0.0, le=1.0)
    year: int = Field(ge=1, le=10_000)
    years: int = Field(1, ge=1, le=500)
    rotation_years: int | None = Field(None, ge=2, le=500)
    harvest_year: int | None = Field(None, ge=1, le=10_000)

    @model_validator(mode="after")
    def _consistent(self) -> Planting:
        if (self.share is None) == (self.share_per_year is None):
            raise ValueError(
                "give either share (the total, spread evenly over the planting years) or "
                "share_per_year, not " + ("both" if self.share is not None else "neither")
            )
        if self.share_per_year is not None and self.share_per_year * self.years > 1.0 + TOLERANCE:
            raise ValueError(
                f"share_per_year = {self.share_per_year:g} for {self.years} years changes "
                f"{self.share_per_year * self.years:g} of the zone; expected at most 1 in total"
            )
        if self.harvest_year is not None and self.harvest_year <= self.last_year:
            raise ValueError(
                f"harvest_year = {self.harvest_year} is not after the planting (years "
                f"{self.year} to {self.last_year}); expected a year from {self.last_year + 1} on"
            )
        if self.cover == self.replaces:
            raise ValueError(f'cover and replaces are both "{self.cover}"; expected two covers')
        return self

    @property
    def share_each_year(self) -> float:
        """Share of the zone changed in each planting year [-]."""
        if self.share_per_year is not None:
            return self.share_per_year
        return float(self.share) / self.years

    @property
    def total_share(self) -> float:
        """Share of the zone changed over all planting years [-]."""
        return self.share_each_year * self.years

    @property
    def last_year(self) -> int:
        """Last planting year [-]."""
        return self.year + self.years - 1

    @property
    def last_event_year(self) -> int:
        """Last year in which this entry plants or fells (by its harvest year) [-]."""
        return max(self.last_year, self.harvest_year or 0)


class Schedule(BaseModel):
    """The plantings that lead from ``current`` to a plan, year by year.

    Parameters
    ----------
    description : str
        Free text shown in reports.
    plantings : tuple of Planting
        The entries, in any order.
    """

    model_config = ConfigDict(frozen=True, extra="forbid")

    description: str = ""
    plantings: tuple[Planting, ...] = Field(min_length=1)

    @property
    def first_year(self) -> int:
        """First planting year of any entry [-]."""
        return min(p.year for p in self.plantings)

    @property
    def last_year(self) -> int:
        """Last year in which any entry plants or fells by a harvest year [-]."""
        return max(p.last_event_year for p in self.plantings)

    def shifted(self, first_year: int) -> Schedule:
        """Return the programme moved so that its first planting falls in ``first_year`` [-]."""
        offset = int(first_year) - self.first_year
        return self._with_each(
            lambda p: {
                "year": p.year + offset,
                "harvest_year": None if p.harvest_year is None else p.harvest_year + offset,
            }
        )

    def spread_over(self, years: int) -> Schedule:
        """Every entry's total share planted evenly over ``years`` years from its first year.

        A harvest year that would no longer follow the last planting is moved to the year after
        it.
        """
        years = int(years)

        def respace(p: Planting) -> dict:
            last = p.year + years - 1
            harvest = p.harvest_year if p.harvest_year is None else max(p.harvest_year, last + 1)
            return {
                "share": p.total_share,
                "share_per_year": None,
                "years": years,
                "harvest_year": harvest,
            }

        return self._with_each(respace)

    def with_rotation(self, rotation_years: int | None) -> Schedule:
        """Every entry felled and replanted at ``rotation_years`` (None: never felled)."""
        return self._with_each(lambda p: {"rotation_years": rotation_years, "harvest_year": None})

    def _with_each(self, change) -> Schedule:
        plantings = tuple(
            Planting.model_validate({**p.model_dump(), **change(p)}) for p in self.plantings
        )
        return self.model_copy(update={"plantings": plantings})


@dataclass(frozen=True)
class Cohort:
    """Land changed in one planting year by one schedule entry.

    Attributes
    ----------
    zone, cover, replaces : str
        Where, what is planted, and what it replaces.
    start : str or None
        For a cover that grows: the cover whose parameters the stand starts from; None for a
        cover that does not grow (the share simply switches).
    share : float
        Share of the zone [-].
    planted_year : int
        Planting year, 1 = the first year of the timeline [-].
    rotation_years : int or None
        Felling age [yr].
    harvest_year : int or None
        Year of a one-off felling [-].
    """

    zone: str
    cover: str
    replaces: str
    start: str | None
    share: float
    planted_year: int
    rotation_years: int | None = None
    harvest_year: int | None = None

    @property
    def grows(self) -> bool:
        """True when the planted cover grows (the cohort is a stand of changing age)."""
        return self.start is not None

    def ages(self, years: np.ndarray) -> np.ndarray:
        """Stand age at mid-year in each timeline year; NaN before planting [yr].

        Parameters
        ----------
        years : numpy.ndarray of int
            Timeline years, 1 = the first [-].

        Returns
        -------
        numpy.ndarray
            (year − last felling or planting) mod rotation + 0.5 [yr].
        """
        years = np.asarray(years)
        last = np.full(years.shape, self.planted_year)
        if self.harvest_year is not None:
            last = np.where(years >= self.harvest_year, self.harvest_year, last)
        age = (years - last).astype(float)
        if self.rotation_years is not None:
            age = np.mod(age, self.rotation_years)
        return np.where(years >= self.planted_year, age + 0.5, np.nan)


# --------------------------------------------------------------------------------------------
# cohorts and shares


def young_state(cover: Cover, replaces: str, covers: Mapping[str, Cover]) -> str:
    """Name of the cover a new stand of ``cover`` starts from.

    Parameters
    ----------
    cover : Cover
        The cover planted (with a growth trajectory).
    replaces : str
        The cover the planting replaces.
    covers : mapping
        Every known cover by name.

    Returns
    -------
    str
        ``cover.growth.start`` if set; else ``replaces`` when it derives from pasture and has no
        crop calendar; else :data:`FALLBACK_START`.
    """
    if cover.growth is not None and cover.growth.start is not None:
        return cover.growth.start
    if _is_grass(covers.get(replaces)):
        return replaces
    return FALLBACK_START


def _is_grass(cover: Cover | None) -> bool:
    return cover is not None and cover.base == "pasture" and cover.kc_calendar is None


def cohorts(schedule: Schedule, covers: Mapping[str, Cover]) -> list[Cohort]:
    """Expand a schedule into one cohort per entry and planting year.

    Parameters
    ----------
    schedule : Schedule
        The plantings.
    covers : mapping
        Every known cover by name (the planted covers' growth decides rotation and start).

    Returns
    -------
    list of Cohort
        In entry order, then by planting year.
    """
    out = []
    for p in schedule.plantings:
        cover = covers[p.cover]
        growth = cover.growth
        start = young_state(cover, p.replaces, covers) if growth is not None else None
        rotation = p.rotation_years or (growth.rotation_years if growth is not None else None)
        out += [
            Cohort(
                p.zone,
                p.cover,
                p.replaces,
                start,
                p.share_each_year,
                year,
                rotation if start is not None else None,
                p.harvest_year,
            )
            for year in range(p.year, p.last_year + 1)
        ]
    return out


def base_shares_by_year(
    current: Mapping[str, Mapping[str, float]], planted: list[Cohort], n_years: int
) -> dict[str, dict[str, np.ndarray]]:
    """Shares of each cover held by land that is not a growing stand, in every timeline year.

    Parameters
    ----------
    current : mapping
        Zone -> cover -> share in ``current`` [-].
    planted : list of Cohort
        The schedule's cohorts.
    n_years : int
        Length of the timeline [yr].

    Returns
    -------
    dict
        Zone -> cover -> array of n_years shares [-]: ``current`` minus what the cohorts planted
        so far replaced, plus the covers switched in by cohorts that do not grow. Growing stands
        are not included (they are held by stand tiles).
    """
    years = np.arange(1, n_years + 1)
    shares = {
        z: {c: np.full(n_years, float(s)) for c, s in zone.items()} for z, zone in current.items()
    }
    for cohort in planted:
        zone = shares[cohort.zone]
        done = np.where(years >= cohort.planted_year, cohort.share, 0.0)
        zone.setdefault(cohort.replaces, np.zeros(n_years))
        zone[cohort.replaces] = zone[cohort.replaces] - done
        if not cohort.grows:
            zone[cohort.cover] = zone.get(cohort.cover, np.zeros(n_years)) + done
    return shares


def implicit_schedule(plan_file: PlanFile, plan_name: str) -> Schedule | None:
    """Return the schedule of a plan that has none: every change made at once in year 1.

    In each zone, the share every cover gains is taken from the covers that lose share, in
    proportion to what each loses.

    Parameters
    ----------
    plan_file : PlanFile
        The plan file.
    plan_name : str
        A plan other than ``current``.

    Returns
    -------
    Schedule or None
        None when the plan equals ``current``.
    """
    current, plan = plan_file.plans["current"], plan_file.plans[plan_name]
    plantings = []
    for zone in (z.name for z in plan_file.zones):
        names = list(dict.fromkeys([*current[zone], *plan[zone]]))
        change = {c: plan[zone].get(c, 0.0) - current[zone].get(c, 0.0) for c in names}
        gains = {c: d for c, d in change.items() if d > TOLERANCE}
        losses = {c: -d for c, d in change.items() if d < -TOLERANCE}
        lost = math.fsum(losses.values())
        for cover, gain in gains.items():
            for replaced, loss in losses.items():
                share = min(gain * loss / lost, 1.0)
                plantings.append(
                    Planting(zone=zone, cover=cover, replaces=replaced, share=share, year=1)
                )
    if not plantings:
        return None
    return Schedule(
        description="every change made at once in year 1 (no schedule in the file)",
        plantings=tuple(plantings),
    )


def schedule_for(plan_file: PlanFile, plan_name: str) -> Schedule | None:
    """Return the file's schedule for a plan, else the all-at-once one (None: no change)."""
    return plan_file.schedules.get(plan_name) or implicit_schedule(plan_file, plan_name)


# --------------------------------------------------------------------------------------------
# checks


def check_schedule(plan_file: PlanFile, plan_name: str, schedule: Schedule) -> None:
    """Check a schedule given from Python (e.g. an edited one) as a plan file would be checked.

    Raises
    ------
    PlanFileError
        Listing every problem (key path ``schedules.NAME...``, value, expectation).
    """
    from coveryield.plans import _problem_message

    problems = schedule_problems(plan_name, schedule, plan_file.plans, plan_file.covers)
    if problems:
        raise PlanFileError(_problem_message(plan_file.source, problems))


def check_fits_timeline(
    plan_file: PlanFile, plan_name: str, schedule: Schedule, n_years: int
) -> None:
    """Check that every planting and harvest year lies inside a timeline of ``n_years`` years.

    Raises
    ------
    PlanFileError
        Naming each entry, key and year outside 1..n_years.
    """
    from coveryield.plans import _key, _problem_message

    problems = []
    for number, p in enumerate(schedule.plantings, start=1):
        where = f"schedules.{_key(plan_name)}.plantings[{number}]"
        if p.last_year > n_years:
            key, value = ("year", p.year) if p.year > n_years else ("years", p.years)
            span = "" if p.years == 1 else f" (plants in years {p.year} to {p.last_year})"
            problems.append(
                (
                    f"{where}.{key}",
                    value,
                    f"planting year outside the timeline of "
                    f"{n_years} years{span}; expected planting years from 1 to "
                    f"{n_years} (or a longer timeline, --years)",
                )
            )
        if p.harvest_year is not None and p.harvest_year > n_years:
            problems.append(
                (
                    f"{where}.harvest_year",
                    p.harvest_year,
                    "harvest year outside "
                    f"the timeline of {n_years} years; expected 1 to {n_years}",
                )
            )
    if problems:
        raise PlanFileError(_problem_message(plan_file.source, problems))


def growth_start_problems(covers: Mapping[str, Cover]) -> list:
    """Problems with ``growth.start`` of derived covers: it must name a grass cover."""
    from coveryield.covers import BUILTIN_COVERS
    from coveryield.plans import _key

    problems = []
    for name, cover in covers.items():
        start = cover.growth.start if cover.growth is not None else None
        if name in BUILTIN_COVERS or start is None or _is_grass(covers.get(start)):
            continue
        grass = [n for n, c in covers.items() if _is_grass(c)]
        problems.append(
            (
                f"covers.{_key(name)}.growth.start",
                start,
                "expected a cover that derives from pasture without a crop calendar "
                f"(the ground a new stand starts from): {', '.join(grass)}",
            )
        )
    return problems


def schedule_problems(name: str, schedule: Schedule, plans: Mapping, covers: Mapping) -> list:
    """Problems of one checked-in-itself schedule against the plans and covers."""
    from coveryield.plans import _key

    where = f"schedules.{_key(name)}"
    if name == "current":
        return [
            (
                where,
                _absent(),
                "the baseline has no schedule; a schedule belongs to the plan "
                "it leads to from current",
            )
        ]
    if name not in plans:
        return [
            (
                where,
                _absent(),
                f"no plan of that name; a schedule belongs to the plan it "
                f"leads to ({', '.join(p for p in plans if p != 'current')})",
            )
        ]
    problems = []
    zones = list(plans["current"])
    for number, p in enumerate(schedule.plantings, start=1):
        problems += _reference_problems(f"{where}.plantings[{number}]", p, zones, covers)
    if problems:
        return problems
    planted = cohorts(schedule, covers)
    return _exceed_problems(where, schedule, planted, plans["current"]) or _end_state_problems(
        name, where, planted, plans
    )


def _absent():
    from coveryield.plans import _NO_VALUE

    return _NO_VALUE


def _reference_problems(where: str, p: Planting, zones: list[str], covers: Mapping) -> list:
    problems = []
    known = ", ".join(covers)
    if p.zone not in zones:
        problems.append((f"{where}.zone", p.zone, f"unknown zone; zones are: {', '.join(zones)}"))
    for key in ("cover", "replaces"):
        if getattr(p, key) not in covers:
            problems.append(
                (f"{where}.{key}", getattr(p, key), f"unknown cover; known covers: {known}")
            )
    cover = covers.get(p.cover)
    if cover is not None and cover.growth is None:
        for key in ("rotation_years", "harvest_year"):
            if getattr(p, key) is not None:
                problems.append(
                    (
                        f"{where}.{key}",
                        getattr(p, key),
                        f"{p.cover} does not grow "
                        "(no growth trajectory), so it is never felled; expected a cover "
                        "that derives from forest with a growth trajectory",
                    )
                )
    return problems


def _exceed_problems(where: str, schedule: Schedule, planted: list[Cohort], current) -> list:
    n_years = schedule.last_year
    shares = base_shares_by_year(current, planted, n_years)
    problems = []
    for zone, by_cover in shares.items():
        for cover, series in by_cover.items():
            short = np.flatnonzero(series < -TOLERANCE)
            if short.size == 0:
                continue
            year = int(short[0]) + 1
            taken = math.fsum(
                c.share
                for c in planted
                if c.zone == zone and c.replaces == cover and c.planted_year <= year
            )
            problems.append(
                (
                    where,
                    _absent(),
                    f"by year {year} the plantings take {taken:.6g} of "
                    f"zone {zone} from {cover}, but only {taken + series[year - 1]:.6g} "
                    "was there; shares would exceed the zone (expected at most what "
                    "the zone holds at the time)",
                )
            )
    return problems


def _end_state_problems(name: str, where: str, planted: list[Cohort], plans) -> list:
    from coveryield.plans import _key, _show

    final = {z: dict(s) for z, s in plans["current"].items()}
    for c in planted:
        zone = final[c.zone]
        zone[c.replaces] = zone.get(c.replaces, 0.0) - c.share
        zone[c.cover] = zone.get(c.cover, 0.0) + c.share
    problems = []
    for zone, shares in plans[name].items():
        covers = dict.fromkeys([*shares, *final[zone]])
        if all(abs(final[zone].get(c, 0.0) - shares.get(c, 0.0)) <= TOLERANCE for c in covers):
            continue
        reached = {c: round(v, 6) for c, v in final[zone].items() if abs(v) > TOLERANCE}
        problems.append(
            (
                where,
                _absent(),
                f"after every planting zone {zone} has "
                f"{_show(reached)}, but plans.{_key(name)}.{_key(zone)} is "
                f"{_show(shares)}; a schedule's plantings must lead from "
                "plans.current to the plan of the same name",
            )
        )
    return problems


# --------------------------------------------------------------------------------------------
# reading (called by coveryield.plans)


def read_schedules(
    data: Mapping[str, Any], plans: Mapping, covers: Mapping, problems: list
) -> dict[str, Schedule]:
    """Read the ``[schedules.NAME]`` tables of a plan file, adding any problem to ``problems``.

    Parameters
    ----------
    data : mapping
        The parsed plan file.
    plans : mapping
        The plans read so far (empty if they had problems: then only the tables are checked).
    covers : mapping
        The covers read.
    problems : list
        Problems found so far; appended to.

    Returns
    -------
    dict
        Plan name -> Schedule, for the schedules without problems.
    """
    from coveryield.plans import _key

    section = data.get("schedules", {})
    if not isinstance(section, Mapping):
        problems.append(("schedules", section, "expected [schedules.NAME] tables"))
        return {}
    schedules = {}
    for name, raw in section.items():
        where = f"schedules.{_key(name)}"
        found = len(problems)
        schedule = _read_one(where, raw, problems)
        if schedule is not None and plans:
            problems += schedule_problems(name, schedule, plans, covers)
        if schedule is not None and len(problems) == found:
            schedules[name] = schedule
    return schedules


def _read_one(where: str, raw: Any, problems: list) -> Schedule | None:
    """One [schedules.NAME] table checked in itself, or None (its problems added)."""
    from coveryield.plans import _NO_VALUE, _key, _pydantic_problems

    items = raw.get("plantings") if isinstance(raw, Mapping) else None
    if not isinstance(items, list) or not items:
        problems.append(
            (
                where,
                raw if not isinstance(raw, Mapping) else _NO_VALUE,
                f"expected a [{where}] table with at least one [[{where}.plantings]] "
                "entry (zone, cover, replaces, share or share_per_year, year)",
            )
        )
        return None
    found = len(problems)
    for key, value in raw.items():
        if key not in Schedule.model_fields:
            problems.append(
                (f"{where}.{_key(key)}", value, "unknown key; allowed keys: description, plantings")
            )
    if not isinstance(raw.get("description", ""), str):
        problems.append((f"{where}.description", raw["description"], "expected text"))
    plantings = []
    for number, item in enumerate(items, start=1):
        entry = f"{where}.plantings[{number}]"
        if not isinstance(item, Mapping):
            problems.append((entry, item, "expected a [[...plantings]] table"))
            continue
        try:
            plantings.append(Planting.model_validate(item))
        except ValidationError as exc:
            problems += _pydantic_problems(exc, Planting, entry)
    if len(problems) > found:
        return None
    return Schedule(description=raw.get("description", ""), plantings=tuple(plantings))
