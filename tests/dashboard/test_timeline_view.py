"""The years-after-planting view without a browser: controls, figures, marks, and no daily loop."""

from __future__ import annotations

import numpy as np
import pytest


@pytest.fixture
def view(dashboard):
    return dashboard.timeline


def _no_daily_loop(monkeypatch):
    import coveryield.catchment
    import coveryield.comparison
    import coveryield.engine.kernels as kernels
    import coveryield.stands

    def forbidden(*args, **kwargs):
        raise AssertionError("the daily loop ran for a change in the years-after-planting view")

    for name in ("run_tiles", "run_tiles_annual", "run_tiles_daily"):
        monkeypatch.setattr(kernels, name, forbidden)
    for module, name in (
        (coveryield.catchment, "simulate_tiles"),
        (coveryield.comparison, "simulate_catchment"),
        (coveryield.stands, "simulate_tiles"),
        (coveryield.stands, "simulate_stands"),
    ):
        monkeypatch.setattr(module, name, forbidden)


def test_view_starts_on_the_first_scheduled_plan(dashboard, view):
    assert view.state.plan_name == "plant-upper"  # the demo's first plan with a schedule
    assert "cy-timeline" in view.widget._dom_classes
    assert "cy-timeline-year" in view.year._dom_classes
    assert "YEAR 1 OF 40" in view.figures.value
    assert view.year.max == 40
    assert "from the plan file" in view.figures.value
    assert len(view.path.x) == 40
    assert dashboard.errors.widget.value == ""


def test_year_and_schedule_moves_never_run_the_daily_loop(dashboard, view, monkeypatch):
    _no_daily_loop(monkeypatch)
    view.year.value = 12
    assert "YEAR 12 OF 40" in view.figures.value
    assert list(view.rule.x) == [12, 12]
    view.first_year.value = 4
    view.spread.value = 1
    view.felling.value = 20
    view.plan_picker.value = "plant-upper-and-middle"
    view.year.value = 33
    assert dashboard.errors.widget.value == ""


def test_first_planting_year_moves_the_path(view):
    before = np.array(view.path.y[0], copy=True)
    view.first_year.value = 5
    table = view.state.timeline.table
    assert (table.loc[1:4, "change_mm"].abs() < 1e-9).all()  # nothing planted yet
    assert table.loc[5, "planted_pct"] > 0.0
    assert not np.allclose(view.path.y[0], before)
    assert "re-timed here" in view.figures.value


def test_spread_and_felling_change_the_stands(view):
    view.spread.value = 1  # the whole programme in its first year
    table = view.state.timeline.table
    assert table.loc[1, "planted_pct"] == pytest.approx(35.0 * 0.6)  # upper zone 35 %, 60 % of it
    view.felling.value = 20
    table = view.state.timeline.table
    assert table.loc[21, "mean_stand_age_yr"] == pytest.approx(0.5)  # felled and replanted
    assert table.loc[21, "change_mm"] > table.loc[20, "change_mm"]  # more water after felling


def test_plan_choice_resets_the_timing(view):
    view.spread.value = 3
    view.plan_picker.value = "riparian-strips"
    assert view.state.spread_years == -1
    assert view.spread.value == -1
    assert "all at once in year 1" in view.figures.value


def test_marks_are_updated_in_place(view):
    marks = list(view.figure.marks)
    view.first_year.value = 3
    view.year.value = 7
    assert list(view.figure.marks) == marks


def test_a_failed_re_timing_shows_a_message_and_keeps_the_controls_in_line(
    dashboard, view, monkeypatch
):
    from coveryield.errors import PlanFileError

    def refuse(*args, **kwargs):
        raise PlanFileError("schedules.plant-upper: refused for the test")

    before = view.state.timeline
    monkeypatch.setattr(view.state.comparison, "timeline", refuse)
    view.first_year.value = 6
    assert "refused for the test" in dashboard.errors.widget.value
    assert view.state.first_year == 1  # back to the timing the chart shows
    assert view.first_year.value == 1
    assert view.state.timeline is before
