"""The dashboard without a browser: set widgets from Python, check state, labels and marks."""

from __future__ import annotations

import re

import numpy as np
import pytest

from coveryield.dashboard.state import ALL_ZONES


def _number(text: str) -> float:
    """The signed number in a headline such as '−23.4 mm/yr' (the minus sign is U+2212)."""
    match = re.search(r"([\u2212+\u00b1-]?)([\d,]+\.\d+) mm/yr", text)
    assert match, f"no signed mm/yr figure in {text!r}"
    sign = -1.0 if match.group(1) in ("\u2212", "-") else 1.0
    return sign * float(match.group(2).replace(",", ""))


def _zone_sum_pct(dash, zone):
    return 100.0 * sum(dash.state.shares[zone].values())


def test_page_has_the_hooks_tests_and_people_rely_on(dashboard):
    for cover, slider in dashboard.controls.sliders.items():
        assert f"cy-share-{cover}" in slider._dom_classes
    assert "cy-yield-change" in dashboard.headline.card("change").main._dom_classes
    assert "cy-error" in dashboard.errors.widget._dom_classes
    assert dashboard.errors.widget.value == ""
    assert dashboard.manager is None  # read-only: no saving, no exports
    text = " ".join(getattr(w, "value", "") for w in _all_widgets(dashboard)
                    if isinstance(getattr(w, "value", None), str))
    assert "licensed hydrological practice" in text
    assert "add up to 100 %" in text
    assert "all zones" in text
    assert "Zhang curve" in text


def _all_widgets(widget):
    yield widget
    for child in getattr(widget, "children", ()):
        yield from _all_widgets(child)


def test_starting_from_current_the_change_is_zero_with_unit(demo_comparison):
    from coveryield.dashboard import Dashboard

    dash = Dashboard(demo_comparison, read_only=True, plan_name="current")
    assert re.search(r"\u00b10\.0 mm/yr", dash.headline.card("change").main.value)


def test_moving_forest_up_in_one_zone_rebalances_and_lowers_the_yield(dashboard):
    # Forest evaporates more than pasture (more interception and deeper roots): common practice,
    # no source; the demo catchment is built so that planting the upper zone lowers the yield.
    dash = dashboard
    dash.controls.zone_picker.value = "upper"
    annual = dash.charts.chart("annual")
    before_y = np.array(annual.edited.y, copy=True)
    before_current = np.array(annual.current.y, copy=True)
    before_makeup = np.array(dash.charts.chart("makeup").bars.y, copy=True)
    dash.controls.sliders["forest"].value = 95.0
    assert dash.state.shares["upper"]["forest"] == pytest.approx(0.95)
    for zone in dash.state.zone_names:
        assert _zone_sum_pct(dash, zone) == pytest.approx(100.0, abs=1e-9)
    shown = sum(s.value for s in dash.controls.sliders.values())
    assert shown == pytest.approx(100.0, abs=1e-6)
    change_text = dash.headline.card("change").main.value
    change = _number(change_text)
    assert change < 0
    assert "\u2212" in change_text
    assert change == pytest.approx(dash.state.change.yield_mm, abs=0.05)
    assert not np.allclose(annual.edited.y, before_y)
    np.testing.assert_allclose(annual.current.y, before_current)  # current unchanged
    assert not np.allclose(dash.charts.chart("makeup").bars.y, before_makeup)
    assert dash.errors.widget.value == ""


def test_held_cover_keeps_its_share(dashboard):
    dash = dashboard
    dash.controls.zone_picker.value = "lower"
    crop = dash.state.shares["lower"]["crop"]
    dash.controls.holds["crop"].value = True
    assert dash.controls.sliders["crop"].disabled
    dash.controls.sliders["pasture"].value = 10.0
    assert dash.state.shares["lower"]["crop"] == crop
    assert dash.state.shares["lower"]["pasture"] == pytest.approx(0.10)
    assert _zone_sum_pct(dash, "lower") == pytest.approx(100.0)
    # pasture cannot go above what the covers not held can give
    dash.controls.sliders["pasture"].value = 100.0
    assert dash.state.shares["lower"]["pasture"] == pytest.approx(1.0 - crop)
    assert dash.controls.sliders["pasture"].value == pytest.approx(100.0 * (1.0 - crop))


def test_reset_returns_to_the_chosen_plan(dashboard):
    dash = dashboard
    dash.controls.plan_picker.value = "plant-upper-and-middle"
    planned = dash.state.plan_shares("plant-upper-and-middle")
    assert dash.state.shares == planned
    assert _number(dash.headline.card("change").main.value) < 0
    dash.controls.zone_picker.value = "middle"
    dash.controls.sliders["forest"].value = 60.0
    assert dash.state.shares != planned
    dash.controls.reset_button.click()
    assert dash.state.shares == planned
    forest_pct = 100.0 * planned["middle"]["forest"]
    assert dash.controls.sliders["forest"].value == pytest.approx(forest_pct)


def test_all_zones_mode_changes_every_zone(dashboard):
    dash = dashboard
    dash.controls.zone_picker.value = ALL_ZONES
    before = {z: dict(s) for z, s in dash.state.shares.items()}
    shown = dash.controls.sliders["pasture"].value
    dash.controls.sliders["pasture"].value = shown / 2.0
    for zone in dash.state.zone_names:
        assert dash.state.shares[zone]["pasture"] == pytest.approx(
            before[zone]["pasture"] / 2.0, abs=0.001)
        assert _zone_sum_pct(dash, zone) == pytest.approx(100.0)
    weights = dash.state.zone_weights
    mean = sum(weights[z] * dash.state.shares[z]["pasture"] for z in weights)
    assert 100.0 * mean == pytest.approx(shown / 2.0, abs=0.15)


def test_failing_callback_shows_a_message_and_logs_the_traceback(dashboard, monkeypatch, capsys):
    from coveryield.errors import PlanFileError

    def broken(shares, name="edited"):
        raise PlanFileError("plans.edited.upper: something the engine refused")

    monkeypatch.setattr(dashboard.state.comparison, "evaluate", broken)
    before = {z: dict(s) for z, s in dashboard.state.shares.items()}
    dashboard.controls.zone_picker.value = "upper"
    dashboard.controls.sliders["forest"].value = 70.0
    message = dashboard.errors.widget.value
    assert "Could not change the forest share" in message
    assert "something the engine refused" in message
    assert "Traceback" not in message
    err = capsys.readouterr().err
    assert "Traceback (most recent call last)" in err
    assert "PlanFileError" in err
    assert dashboard.state.shares == before  # nothing half-applied; slider put back
    assert dashboard.controls.sliders["forest"].value == pytest.approx(
        100.0 * before["upper"]["forest"])
    monkeypatch.undo()
    dashboard.controls.sliders["forest"].value = 70.0
    assert dashboard.errors.widget.value == ""


def test_share_change_never_runs_the_daily_loop(dashboard, monkeypatch):
    import coveryield.catchment
    import coveryield.comparison

    def forbidden(*args, **kwargs):
        raise AssertionError("the daily loop ran on a share change")

    for module, name in ((coveryield.catchment, "simulate_tiles"),
                         (coveryield.catchment, "simulate_catchment"),
                         (coveryield.comparison, "simulate_catchment")):
        if hasattr(module, name):
            monkeypatch.setattr(module, name, forbidden)
    calls = []
    evaluate = dashboard.state.comparison.evaluate
    monkeypatch.setattr(dashboard.state.comparison, "evaluate",
                        lambda shares, *a, **k: calls.append(shares) or evaluate(shares, *a, **k))
    dashboard.controls.zone_picker.value = "middle"
    dashboard.controls.sliders["forest"].value = 45.0
    dashboard.controls.sliders["crop"].value = 5.0
    assert dashboard.errors.widget.value == ""
    assert len(calls) == 2


def test_marks_are_updated_in_place_not_rebuilt(dashboard):
    figures = list(dashboard.charts.figures)
    marks = [list(f.marks) for f in figures]
    dashboard.controls.zone_picker.value = "upper"
    dashboard.controls.sliders["pasture"].value = 20.0
    assert dashboard.charts.figures == figures
    assert [list(f.marks) for f in figures] == marks


def test_fdc_axis_is_logarithmic_and_axes_carry_units(dashboard):
    import bqplot

    assert isinstance(dashboard.charts.chart("fdc").edited.scales["y"], bqplot.LogScale)
    labels = [a.label for f in dashboard.charts.figures for a in f.axes]
    for unit in ("(mm/yr)", "(mm/month)", "(m\u00b3/s)", "(%)"):
        assert any(unit in label for label in labels), unit


def test_show_dashboard_reads_plan_and_read_only_from_the_environment(demo_plan, monkeypatch):
    from coveryield.dashboard import show_dashboard

    monkeypatch.setenv("COVERYIELD_PLAN", str(demo_plan))
    monkeypatch.setenv("COVERYIELD_READ_ONLY", "1")
    dash = show_dashboard()
    assert dash.read_only
    assert dash.manager is None
    assert dash.state.plan_file.catchment.name
    monkeypatch.setenv("COVERYIELD_READ_ONLY", "0")
    assert show_dashboard().manager is not None


def test_low_flow_card_and_monthly_streamflow_follow_the_edit(dashboard):
    # issue 10: 7Q, baseflow index, days below the threshold and monthly streamflow on the page
    dash = dashboard
    card = dash.headline.cards["low-flows"]
    chart = dash.charts.chart("monthly-flow")
    assert "7Q" in card.main.value
    assert "baseflow index" in card.detail.value
    assert "d/yr below 0.1" in card.detail.value  # the demo's low_flow_m3s
    current_before = np.array(chart.current.y, copy=True)
    np.testing.assert_allclose(np.array(chart.edited.y),
                               dash.state.outcome.monthly_flow_m3s.to_numpy())
    np.testing.assert_allclose(current_before, dash.state.baseline.monthly_flow_m3s.to_numpy())
    edited_before = np.array(chart.edited.y, copy=True)
    dash.controls.zone_picker.value = "upper"
    dash.controls.sliders["forest"].value = min(100.0, dash.controls.sliders["forest"].value + 30)
    np.testing.assert_allclose(np.array(chart.current.y), current_before)  # current unchanged
    # planting lowers the flow (Farley et al. 2005)
    assert np.array(chart.edited.y).mean() < edited_before.mean()
    assert "\u2212" in card.main.value


def test_page_says_what_yield_and_the_curve_are(dashboard):
    # issue 12 items 3 and 4: the yield definition beside the monthly chart and in the footer,
    # and one sentence on what the Zhang curve is
    text = " ".join(getattr(w, "value", "") for w in _all_widgets(dashboard)
                    if isinstance(getattr(w, "value", None), str))
    assert "open-water balance" in text
    assert "can be negative" in text
    assert "empirical relation, fitted to 250 catchments" in text
