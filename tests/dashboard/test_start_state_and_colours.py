"""Issue 12, item 5: the page agrees with the report and opens on a plan's own figures.

- one palette: a plan has the same colour on the page as in report.html (current too);
- on load the page shows a named plan (the first after `current`), not +-0.0 everywhere;
- `current` is drawn after (on top of) the plan on screen, thinner, so it stays visible;
- "all zones" never puts a cover into a zone without it, and says so on the page;
- the report's dry-year bands are on the page too;
- a new card or chart is one small class.
Conventions of our own, no source; the figures are checked against the comparison itself.
"""

from __future__ import annotations

import re
import subprocess
import sys

import pytest

from coveryield.dashboard.state import ALL_ZONES


def _number(text: str) -> float:
    match = re.search(r"([\u2212+\u00b1-]?)([\d,]+\.\d+) mm/yr", text)
    assert match, text
    return (-1.0 if match.group(1) in ("\u2212", "-") else 1.0) * float(
        match.group(2).replace(",", ""))


def test_the_page_opens_on_the_first_plan_after_current_with_its_own_figures(dashboard):
    comparison = dashboard.state.comparison
    first = comparison.plan_names[1]
    assert dashboard.state.plan_name == first
    assert dashboard.controls.plan_picker.value == first
    outcome = comparison.outcome(first)
    change = comparison.change(outcome)
    cards = dashboard.headline
    assert _number(cards.card("yield").main.value) == pytest.approx(outcome.mean_yield_mm, abs=0.05)
    assert _number(cards.card("change").main.value) == pytest.approx(change.yield_mm, abs=0.05)
    assert _number(cards.card("dry").main.value) == pytest.approx(change.dry10_mm, abs=0.05)
    assert change.yield_mm != pytest.approx(0.0, abs=0.05)  # not +-0.0 everywhere
    assert first in cards.card("yield").head.value


def test_plan_colours_on_the_page_are_the_reports(dashboard):
    from coveryield.dashboard import Dashboard
    from coveryield.report_html import render_report

    comparison = dashboard.state.comparison
    report = render_report(comparison)
    swatch = {name: re.search(r'background:(#[0-9a-fA-F]{6})"></span>' + re.escape(name) + "<",
                              report).group(1) for name in comparison.plan_names}
    assert len(set(swatch.values())) == len(swatch)
    for name in comparison.plan_names[1:]:
        dash = Dashboard(comparison, read_only=True, plan_name=name)
        for key in ("annual", "fdc"):
            chart = dash.charts.chart(key)
            assert chart.current.colors == [swatch["current"]]
            assert chart.edited.colors == [swatch[name]]
        assert dash.charts.chart("monthly").bars.colors == [swatch[name], swatch["current"]]
        assert swatch[name] in dash.headline.card("yield").main.value
    # started from current, the edit takes a colour no plan uses
    dash = Dashboard(comparison, read_only=True, plan_name="current")
    assert dash.charts.chart("annual").edited.colors[0] not in swatch.values()


def test_current_is_drawn_on_top_of_the_plan_on_screen_and_thinner(dashboard):
    for key in ("annual", "fdc"):
        chart = dashboard.charts.chart(key)
        marks = list(chart.figure.marks)
        assert marks.index(chart.current) > marks.index(chart.edited)
        assert chart.current.stroke_width < chart.edited.stroke_width
    legend = dashboard.charts.chart("annual").legend.value
    assert "current" in legend
    assert dashboard.state.plan_name in legend


def test_dry_year_bands_are_on_the_page(dashboard):
    comparison = dashboard.state.comparison
    chart = dashboard.charts.chart("annual")
    assert chart.bands in chart.figure.marks
    assert chart.figure.marks.index(chart.bands) == 0  # behind the lines
    left = sorted(float(x[0]) for x in chart.bands.x)
    assert left == sorted(y - 0.5 for y in comparison.dry_years)
    top = float(chart.y_scale.max)
    assert all(max(y) == top for y in chart.bands.y)  # full height of the axis
    assert "driest 10 % of years" in chart.legend.value


def test_all_zones_scales_only_zones_that_have_the_cover_and_says_so(dashboard):
    dash = dashboard
    before = {z: dict(s) for z, s in dash.state.shares.items()}
    without = [z for z, s in before.items() if s["forest"] == 0.0]
    assert without, "the demo has a zone without forest"
    dash.controls.zone_picker.value = ALL_ZONES
    dash.controls.sliders["forest"].value = dash.controls.sliders["forest"].value + 10.0
    for zone in without:
        assert dash.state.shares[zone]["forest"] == 0.0
    with_forest = [z for z in before if z not in without]
    factors = {z: dash.state.shares[z]["forest"] / before[z]["forest"] for z in with_forest}
    unconstrained = [f for z, f in factors.items() if dash.state.shares[z]["forest"] < 0.999]
    assert max(unconstrained) == pytest.approx(min(unconstrained), abs=0.01)
    rule = dash.controls.rule.value
    assert "A zone without the cover keeps none" in rule


def test_raising_a_cover_that_no_zone_has_says_what_to_do(demo_comparison):
    from coveryield.dashboard import Dashboard

    dash = Dashboard(demo_comparison, read_only=True, plan_name="current")
    absent = [c for c in dash.state.cover_names
              if all(dash.state.shares[z][c] == 0.0 for z in dash.state.zone_names)]
    assert absent, "the demo has a cover only some plans use"
    cover = absent[0]
    dash.controls.zone_picker.value = ALL_ZONES
    dash.controls.sliders[cover].value = 10.0
    assert "choose a zone" in dash.errors.widget.value
    assert dash.controls.sliders[cover].value == 0.0
    dash.controls.zone_picker.value = dash.state.zone_names[0]
    dash.controls.sliders[cover].value = 10.0
    assert dash.state.shares[dash.state.zone_names[0]][cover] == pytest.approx(0.10)
    assert dash.errors.widget.value == ""


def test_a_new_card_and_chart_are_one_small_class_each(demo_comparison):
    import bqplot
    import numpy as np

    from coveryield.dashboard import Dashboard
    from coveryield.dashboard.cards import CARDS, Card
    from coveryield.dashboard.charts import CHARTS, Chart

    class RainCard(Card):
        key = "rain"
        title = "Mean annual rain"

        def figures(self):
            rain = self.state.outcome.annual["rain_mm"].mean()
            return self.big(f"{rain:,.0f} mm/yr"), ""

    class EvapChart(Chart):
        key = "evap"
        title = "Evaporation year by year"

        def __init__(self, state):
            super().__init__(state)
            sx, sy = bqplot.LinearScale(), bqplot.LinearScale()
            self.line = bqplot.Lines(x=np.asarray(state.comparison.years, float),
                                     y=np.zeros(len(state.comparison.years)),
                                     scales={"x": sx, "y": sy})
            self.set_figure([self.line], [bqplot.Axis(scale=sx), bqplot.Axis(scale=sy,
                                                                              orientation="vertical")])

        def draw(self):
            self.line.y = self.state.outcome.annual["evap_mm"].to_numpy(float)

    dash = Dashboard(demo_comparison, read_only=True, cards=(*CARDS, RainCard),
                     charts=(*CHARTS, EvapChart))
    assert "mm/yr" in dash.headline.card("rain").main.value
    before = np.array(dash.charts.chart("evap").line.y, copy=True)
    dash.controls.zone_picker.value = "upper"
    dash.controls.sliders["pasture"].value = 60.0
    assert not np.allclose(dash.charts.chart("evap").line.y, before)
    assert dash.errors.widget.value == ""


def test_the_palette_lives_below_the_dashboard():
    # the report (outputs layer) imports the palette without any widget library
    code = ("import sys, coveryield.report_html, coveryield.palette; "
            "bad = [m for m in sys.modules if m.startswith(('ipywidgets', 'bqplot', "
            "'coveryield.dashboard'))]; print(bad); sys.exit(1 if bad else 0)")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert proc.returncode == 0, proc.stdout + proc.stderr
