"""Bands on the dashboard headlines: estimated with progress, then moved by shares for free."""

from __future__ import annotations

import re

import pytest

from coveryield.dashboard import Dashboard

BAND = re.compile(r"\(([\u2212+\u00b1]?[\d,]+) to ([\u2212+\u00b1]?[\d,]+)\)")


def _value(text: str) -> float:
    return float(text.replace("\u2212", "-").replace("\u00b1", "").replace(",", ""))


@pytest.fixture(scope="module")
def banded(demo_comparison):
    """A dashboard whose bands were estimated with the button (a small ensemble, for speed)."""
    from coveryield.comparison import Comparison

    comparison = Comparison(demo_comparison.plan_file, demo_comparison.tiles)
    dash = Dashboard(comparison, read_only=True, plan_name="current")
    seen = []
    dash.uncertainty.progress.observe(lambda change: seen.append(change["new"]), names="value")
    dash.uncertainty.members.value = 12
    dash.uncertainty.button.click()
    dash.progress_seen = seen
    return dash


def test_no_bands_before_the_button(dashboard):
    if dashboard.state.has_ensemble:
        pytest.skip("the session comparison carries an ensemble")
    assert "cy-band" not in dashboard.headline.card('change').main.value
    assert "No bands yet" in dashboard.uncertainty.status.value


def test_button_fills_the_progress_bar_and_shows_bands(banded):
    assert banded.errors.widget.value == ""
    assert banded.progress_seen[-1] == 12
    assert banded.uncertainty.progress.max == 12
    assert "Bands from 12 parameter sets" in banded.uncertainty.status.value
    assert not banded.uncertainty.button.disabled
    assert BAND.search(banded.headline.card('yield').main.value)
    # at the start the edited plan is `current`: every member's change is 0, no band to show
    assert "cy-band" not in banded.headline.card('change').main.value
    banded.controls.zone_picker.value = "lower"
    banded.controls.sliders["pasture"].value = 30.0
    for widget in (banded.headline.card('yield').main, banded.headline.card('change').main,
                   banded.headline.card('dry').main):
        assert BAND.search(widget.value), widget.value


def test_headline_reads_figure_then_band_and_the_band_holds_it(banded):
    state = banded.state
    banded.controls.zone_picker.value = "upper"
    banded.controls.sliders["forest"].value = 85.0
    text = banded.headline.card('change').main.value
    figure = re.search(r"([\u2212+\u00b1][\d,]+\.\d) mm/yr", text)
    low, high = (_value(v) for v in BAND.search(text).groups())
    assert figure
    assert low <= _value(figure.group(1)) <= high
    p05, p50, p95 = state.bands["change_mm"]
    assert (round(p05), round(p95)) == (low, high)
    assert p05 <= p50 <= p95
    assert state.change.yield_mm < 0


def test_share_change_with_bands_never_runs_the_daily_loop(banded, monkeypatch):
    import coveryield.catchment
    import coveryield.comparison
    import coveryield.uncertainty.ensemble

    def forbidden(*args, **kwargs):
        raise AssertionError("the daily loop ran on a share change")

    for module, name in ((coveryield.catchment, "simulate_tiles"),
                         (coveryield.catchment, "simulate_catchment"),
                         (coveryield.comparison, "simulate_catchment"),
                         (coveryield.uncertainty.ensemble, "simulate_tiles"),
                         (coveryield.uncertainty.ensemble, "simulate_ensemble"),
                         (coveryield.uncertainty.ensemble, "tile_forcing")):
        monkeypatch.setattr(module, name, forbidden)
    before = dict(banded.state.bands)
    banded.controls.zone_picker.value = "middle"
    banded.controls.sliders["forest"].value = 45.0
    banded.controls.sliders["crop"].value = 5.0
    assert banded.errors.widget.value == ""
    assert banded.state.bands != before  # the band moved with the shares
    assert BAND.search(banded.headline.card('change').main.value)


def test_export_carries_the_bands(banded, tmp_path):
    import json

    from coveryield.dashboard.exports import export_tables

    folder = export_tables(banded.state, tmp_path / "plans.toml", "banded")
    record = json.loads((folder / "summary.json").read_text())
    bands = record["bands_mm_per_yr"]
    assert bands["members"] == 12
    assert bands["percentiles"] == [5, 50, 95]
    low, mid, high = bands["change_mm"]
    assert low <= mid <= high
