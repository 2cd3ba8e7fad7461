"""The years-after-planting view's choices and result: plain Python, no widget module.

:class:`TimelineState` holds the plan followed, how its schedule is re-timed (first planting year,
spread of each planting, felling age) and the year looked at. A change of plan or timing asks the
comparison for a new timeline, which only re-weights tiles simulated once (the stands of every
plan are simulated once when the state is built); a change of year only picks a row.
"""

from __future__ import annotations

from typing import Any

from traitlets import Any as AnyTrait
from traitlets import HasTraits, Int, Unicode, observe

from coveryield.schedules import Schedule, schedule_for

#: Timelines in the dashboard run at least this many years [yr].
MIN_YEARS = 40
#: Room left after a plan's own schedule for re-timing and regrowth [yr]: the first planting
#: year moves by at most :data:`MAX_SHIFT` and a planting spreads over at most :data:`MAX_SPREAD`
#: years, which leaves at least 8 years after the last planting.
SPARE_YEARS = 30
MAX_SHIFT = 9
MAX_SPREAD = 12
#: "As planned" for the spread and the felling age.
AS_PLANNED = -1
#: Felling age meaning "never felled" [yr].
NEVER = 0


class TimelineState(HasTraits):
    """The plan followed over the years, its re-timing and the year shown.

    Parameters
    ----------
    comparison : coveryield.comparison.Comparison
        The plans compared, tiles simulated once.
    plan_name : str, optional
        Plan to start with (default: the first plan with a schedule in the file, else the first
        plan other than ``current``).

    Attributes
    ----------
    plan_name : str
        Plan followed.
    first_year : int
        First planting year of the (re-timed) programme, 1 = the first year [-].
    spread_years : int
        Every planting spread evenly over this many years; :data:`AS_PLANNED` keeps the plan's.
    felling_age : int
        Stands felled and replanted at this age [yr]; :data:`NEVER`, or :data:`AS_PLANNED`.
    year : int
        Year looked at, 1 = the first [-].
    timeline : coveryield.timeline.PlanTimeline
        The result for the choices above; assigned last, so observers see it complete.
    """

    plan_name = Unicode()
    first_year = Int(1)
    spread_years = Int(AS_PLANNED)
    felling_age = Int(AS_PLANNED)
    year = Int(1)
    timeline = AnyTrait(allow_none=True)

    def __init__(self, comparison: Any, plan_name: str | None = None) -> None:
        super().__init__()
        self.comparison = comparison
        plan_file = comparison.plan_file
        self.plan_names = [n for n in comparison.plan_names if n != "current"]
        if not self.plan_names:
            raise ValueError("the plan file has no plan besides current to follow over the years")
        scheduled = [n for n in self.plan_names if n in plan_file.schedules]
        chosen = plan_name or (scheduled or self.plan_names)[0]
        if chosen not in self.plan_names:
            raise KeyError(f"plan {chosen!r} is not in the plan file (or is current)")
        longest = max(self._horizon(n) for n in self.plan_names)
        comparison.timeline(self.plan_names, years=longest)  # every stand simulated, once
        self._syncing = False
        self.plan_name = chosen  # -> _plan_chosen -> recompute

    @property
    def planned(self) -> Schedule | None:
        """The plan's own schedule (the file's, or all at once in year 1)."""
        return schedule_for(self.comparison.plan_file, self.plan_name)

    @property
    def n_years(self) -> int:
        """Length of the timeline for the plan followed [yr]."""
        return self._horizon(self.plan_name)

    def _horizon(self, plan_name: str) -> int:
        planned = schedule_for(self.comparison.plan_file, plan_name)
        return max(MIN_YEARS, (planned.last_year if planned else 0) + SPARE_YEARS)

    @property
    def first_year_range(self) -> tuple[int, int]:
        """Earliest and latest first planting year the view offers [-]."""
        planned = self.planned
        first = planned.first_year if planned else 1
        return 1, first + MAX_SHIFT

    def edited_schedule(self) -> Schedule | None:
        """Return the plan's schedule re-timed by the first year, spread and felling age.

        None if the plan equals ``current``.
        """
        schedule = self.planned
        if schedule is None:
            return None
        if self.spread_years != AS_PLANNED:
            schedule = schedule.spread_over(self.spread_years)
        if self.felling_age != AS_PLANNED:
            schedule = schedule.with_rotation(self.felling_age or None)
        return schedule.shifted(self.first_year)

    @observe("plan_name")
    def _plan_chosen(self, _change: dict) -> None:
        if self._syncing:
            return
        planned = self.planned
        with self.hold_trait_notifications():
            self._syncing = True
            try:
                self.first_year = planned.first_year if planned else 1
                self.spread_years = AS_PLANNED
                self.felling_age = AS_PLANNED
                self.year = min(self.year, self.n_years)
            finally:
                self._syncing = False
        self.recompute()

    @observe("first_year", "spread_years", "felling_age")
    def _timing_changed(self, _change: dict) -> None:
        if not self._syncing:
            self.recompute()

    def recompute(self) -> None:
        """Ask the comparison for the timeline of the current choices (weighted sums only).

        If that fails (e.g. a re-timed schedule the plan file's rules refuse), the timing goes
        back to the one the shown timeline was made with and the error is raised again.
        """
        try:
            schedule = self.edited_schedule()
            given = {self.plan_name: schedule} if self._retimed() else None
            result = self.comparison.timeline(self.plan_name, years=self.n_years, schedules=given)
        except Exception:
            self._restore()
            raise
        self._applied = (self.plan_name, self.first_year, self.spread_years, self.felling_age)
        self.timeline = result[self.plan_name]

    def _restore(self) -> None:
        applied = getattr(self, "_applied", None)
        if applied is None:
            return
        self._syncing = True
        try:
            self.plan_name, self.first_year, self.spread_years, self.felling_age = applied
        finally:
            self._syncing = False

    @property
    def schedule_label(self) -> str:
        """A few words on the schedule shown."""
        return "re-timed here" if self._retimed() else self.timeline.schedule_label

    def _retimed(self) -> bool:
        planned = self.planned
        return planned is not None and (
            self.spread_years != AS_PLANNED
            or self.felling_age != AS_PLANNED
            or self.first_year != planned.first_year
        )

    def row(self) -> Any:
        """Return the table row of the year looked at (a pandas Series)."""
        table = self.timeline.table
        return table.loc[min(max(self.year, 1), len(table))]
