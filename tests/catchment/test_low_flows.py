"""Low flows per plan (7Q, baseflow index, days below a threshold), two-store routing, yield terms."""

from __future__ import annotations

import json

import numpy as np
import pytest

import coveryield
from coveryield.cli import main
from coveryield.flow_metrics import (
    annual_minimum_moving_mean,
    baseflow_index,
    days_below_per_year,
    lyne_hollick_baseflow,
)

from .conftest import DEMO, write_one_zone_plan


def test_lyne_hollick_one_pass_by_hand():
    # Lyne & Hollick (1979): f_t = a f_(t-1) + (1 + a)/2 (q_t - q_(t-1)), 0 <= f_t <= q_t,
    # baseflow q - f; a = 0.925 (Nathan & McMahon 1990, from memory). Recomputed by hand (C):
    # q = 1, 5, 3, 2: f = 0, 3.85, 1.71125, 0.6579..., b = 1, 1.15, 1.28875, 1.3420...
    a = 0.925
    q = np.array([1.0, 5.0, 3.0, 2.0])
    f1 = 0.5 * (1 + a) * 4.0
    f2 = a * f1 + 0.5 * (1 + a) * (-2.0)
    f3 = a * f2 + 0.5 * (1 + a) * (-1.0)
    np.testing.assert_allclose(lyne_hollick_baseflow(q, a, passes=1), q - [0.0, f1, f2, f3])


def test_python_and_compiled_filter_passes_agree():
    # the plain-Python pass (used while the compiler runtime is not loaded, e.g. a comparison
    # read from the tile cache) and its compiled twin are the same code: same numbers
    from coveryield import flow_metrics

    rng = np.random.default_rng(5)
    flow = np.exp(rng.normal(0.0, 1.0, 4000))
    for reverse in (False, True):
        python = flow_metrics._lyne_hollick_pass_python(flow, 0.925, reverse)
        compiled = flow_metrics._compiled_pass()(flow, 0.925, reverse)
        np.testing.assert_allclose(python, compiled, rtol=1e-13, atol=0.0)


def test_baseflow_index_properties():
    # a steady flow is all baseflow; a flashy series has a smaller index than a smooth one;
    # baseflow never exceeds the flow (design of the filter, Lyne & Hollick 1979)
    assert baseflow_index(np.full(200, 2.0)) == pytest.approx(1.0)
    rng = np.random.default_rng(1)
    flashy = 0.2 + rng.exponential(1.0, 2000) * (rng.random(2000) < 0.1) * 20
    smooth = np.convolve(flashy, np.ones(60) / 60, mode="same") + 0.2
    assert baseflow_index(flashy) < baseflow_index(smooth)
    base = lyne_hollick_baseflow(flashy)
    assert (base >= 0).all()
    assert (base <= flashy + 1e-12).all()


def test_annual_seven_day_minimum_by_hand():
    # two 10-day "years"; a window belongs to the year of its last day and may reach back into
    # the year before (documented rule): year 0's lowest window is days 3-9 (all 1), year 1's
    # the window ending on its first day, six 1s and one 9 (computed by hand)
    flow = np.array([5, 5, 5, 1, 1, 1, 1, 1, 1, 1, 9, 9, 9, 9, 9, 9, 9, 2, 2, 2], dtype=float)
    codes = np.repeat([0, 1], 10)
    minima = annual_minimum_moving_mean(flow, codes)
    assert minima[0] == pytest.approx(1.0)
    assert minima[1] == pytest.approx((6 * 1 + 9) / 7)


def test_days_below_threshold_per_year():
    flow = np.array([0.5, 2.0, 0.1, 3.0] * 365)
    assert days_below_per_year(flow, 1.0, np.ones(flow.size, bool)) == pytest.approx(
        730 / (1460 / 365.25)
    )


@pytest.fixture(scope="module")
def one_zone(tmp_path_factory):
    folder = tmp_path_factory.mktemp("lowflow")
    plan = write_one_zone_plan(folder)
    text = plan.read_text().replace(
        "recession_days = 90", "recession_days = 90\nquickflow_recession_days = 3\n"
        "low_flow_m3s = 0.05"
    )
    plan.write_text(text)
    return coveryield.compare(plan)


def test_low_flows_fall_with_afforestation(one_zone):
    # Farley et al. (2005): afforestation lowers low flows proportionally more than mean flow
    full = one_zone.change(one_zone.outcome("forest-100"))
    assert full.q7_pct < full.yield_pct < 0.0
    assert full.days_below_per_year > 0.0


def test_routed_flow_carries_the_yield(one_zone):
    # two linear stores conserve mass: over 30 years the routed flow carries the yield, apart
    # from what the stores hold at the ends (design property)
    o = one_zone.outcome("current")
    routed_mm_per_yr = o.flow_m3s.mean() * 86400 * 365.25 / (o.area_km2 * 1e3)
    assert routed_mm_per_yr == pytest.approx(o.mean_yield_mm, rel=0.02)
    assert o.monthly_flow_m3s.mean() == pytest.approx(o.flow_m3s.mean(), rel=0.02)
    assert 0.0 < o.baseflow_index < 1.0
    assert o.days_below_per_year is not None


def test_quickflow_store_sharpens_the_high_end(demo_result):
    # quickflow no longer waits in the 90-day groundwater store: with the fast store the
    # highest flows rise and the flow duration curve steepens, while the median and low flows
    # barely move (issue 10's aim; design property). Demo: Q0.1 about 4.1 vs 2.0 m3/s.
    import dataclasses

    from coveryield.comparison import Comparison

    one_store = Comparison(
        demo_result.plan_file, dataclasses.replace(demo_result.tiles, quickflow_recession_days=90.0)
    )
    fast = demo_result.outcome("current").fdc.set_index("exceedance_pct")["flow_m3s"]
    slow = one_store.outcome("current").fdc.set_index("exceedance_pct")["flow_m3s"]
    assert fast[0.1] > 1.5 * slow[0.1]
    assert fast[50.0] == pytest.approx(slow[50.0], rel=0.2)
    assert fast[95.0] == pytest.approx(slow[95.0], rel=0.2)


def test_yield_is_land_yield_plus_open_water_balance(demo_result):
    # issue 12 item 4: the negative summer months come from open water only, reported as its
    # own term; yield = land yield + open-water balance everywhere
    o = demo_result.outcome("current")
    a = o.annual
    np.testing.assert_allclose(a["yield_mm"], a["land_yield_mm"] + a["open_water_net_mm"])
    assert (o.monthly_land_yield_mm >= 0).all()
    assert (o.monthly_open_water_mm < 0).any()
    negative = o.monthly_yield_mm < 0
    assert negative.any()
    assert (o.monthly_open_water_mm[negative] < 0).all()


def test_outputs_carry_low_flows_and_yield_terms_rounded(tmp_path, capsys):
    out = tmp_path / "results"
    assert main(["compare", str(DEMO / "plans.toml"), "--out", str(out)]) == 0
    printed = capsys.readouterr().out
    for expected in ("7Q", "BFI", "open water", "The Zhang et al. (2001) curve is",
                     "per calendar month", "m3/s"):
        assert expected in printed
    summary = json.loads((out / "summary.json").read_text())
    current = summary["plans"]["current"]
    for key in ("q7_m3s", "baseflow_index", "days_below_low_flow_per_year",
                "mean_land_yield_mm", "mean_open_water_net_mm", "crosscheck_offset_pct"):
        assert key in current
    assert "q7_change_pct" in summary["plans"]["plant-upper"]
    assert len(current["monthly_flow_m3s"]) == 12
    assert len(current["monthly_yield_mm"]) == 12
    assert "open water" in summary["yield_definition"]
    monthly = (out / "monthly.csv").read_text()
    assert "current flow_m3s" in monthly
    assert "current open_water_net_mm" in monthly
    # very small values print as zero: no exponent notation anywhere in the outputs
    for name in ("summary.json", "monthly.csv", "flow_duration.csv", "annual.csv"):
        text = (out / name).read_text()
        assert "e-" not in text.replace("e-mail", ""), name
        assert "-0.0," not in text and "-0.0\n" not in text, name


def test_printed_table_without_a_threshold_says_how_to_set_one(afforestation):
    from coveryield.reports import comparison_table

    text = comparison_table(afforestation)
    assert "set low_flow_m3s in [catchment]" in text
    assert afforestation.outcome("current").days_below_per_year is None
