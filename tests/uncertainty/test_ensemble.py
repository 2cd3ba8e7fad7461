"""Ensembles: ordered bands that hold the central figure, widen with the ranges, repeat by seed."""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest

import coveryield
from coveryield.cli import main
from coveryield.comparison import Comparison
from coveryield.covers import BUILTIN_COVERS, PARAMETER_RANGES
from coveryield.uncertainty.ensemble import simulate_ensemble
from coveryield.uncertainty.sampling import EnsembleDesign

N = 24
HEADLINES = ("mean_yield_mm", "change_mm", "dry_year_change_mm")


@pytest.fixture(scope="module")
def result(small_plan, small_climate):
    tiles = coveryield.compare(small_plan).tiles
    ensemble = simulate_ensemble(small_plan, N, seed=7, climate=small_climate)
    return Comparison(small_plan, tiles, ensemble=ensemble)


def _central(result, name):
    outcome = result.outcome(name)
    change = result.change(outcome)
    return {"mean_yield_mm": outcome.mean_yield_mm, "change_mm": change.yield_mm,
            "dry_year_change_mm": change.dry10_mm}


def test_bands_are_ordered_and_hold_the_central_figure(result):
    for name in result.plan_names[1:]:
        bands = result.bands(result.plan_file.plans[name])
        central = _central(result, name)
        for key in HEADLINES:
            p05, p50, p95 = bands[key]
            assert p05 <= p50 <= p95, (name, key)
            assert p05 <= central[key] <= p95, (name, key, central[key], bands[key])


def test_summary_carries_every_band(result):
    summary = result.summary()
    assert summary["ensemble"]["members"] == N
    assert summary["ensemble"]["seed"] == 7
    assert "not a confidence interval" in summary["ensemble"]["meaning"]
    for name, entry in summary["plans"].items():
        keys = HEADLINES if name != "current" else ("mean_yield_mm",)
        for key in keys:
            assert entry[f"{key}_p05"] <= entry[f"{key}_p50"] <= entry[f"{key}_p95"]
        # the central figures stay those of the plan file's parameters
        assert entry["mean_yield_mm"] == pytest.approx(result.outcome(name).mean_yield_mm)
    json.dumps(summary)  # JSON-ready


def test_zero_width_ranges_collapse_every_member_to_the_central_figure(small_plan, small_climate,
                                                                        result):
    design = EnsembleDesign.for_plan(small_plan).scaled(0.0)
    ensemble = simulate_ensemble(small_plan, 3, seed=1, design=design, climate=small_climate)
    collapsed = Comparison(small_plan, result.tiles, ensemble=ensemble)
    for name in result.plan_names:
        central = _central(result, name)
        for key, (p05, _, p95) in collapsed.bands(small_plan.plans[name]).items():
            assert p05 == pytest.approx(central[key], abs=1e-9)
            assert p95 == pytest.approx(central[key], abs=1e-9)


def test_wider_ranges_give_wider_bands(small_plan, small_climate, result):
    widths = []
    for width in (0.25, 0.5, 1.0):
        design = EnsembleDesign.for_plan(small_plan).scaled(width)
        ensemble = simulate_ensemble(small_plan, N, seed=7, design=design, climate=small_climate)
        bands = Comparison(small_plan, result.tiles, ensemble=ensemble).bands(small_plan.plans["plant"])
        widths.append([bands[key][2] - bands[key][0] for key in HEADLINES])
    widths = np.array(widths)
    assert (np.diff(widths, axis=0) > 0).all(), widths


def test_same_seed_same_numbers_other_seed_other_numbers(small_plan, small_climate, result):
    again = simulate_ensemble(small_plan, N, seed=7, climate=small_climate)
    np.testing.assert_array_equal(again.annual_yield_mm, result.ensemble.annual_yield_mm)
    pd.testing.assert_frame_equal(again.parameters, result.ensemble.parameters)
    other = simulate_ensemble(small_plan, N, seed=8, climate=small_climate)
    assert not np.allclose(other.annual_yield_mm, result.ensemble.annual_yield_mm)


def test_chunking_changes_nothing_and_a_member_is_a_plain_simulation(small_plan, small_climate,
                                                                     result):
    # one member per chunk (a tiny memory budget) against the default chunks
    one_by_one = simulate_ensemble(small_plan, N, seed=7, climate=small_climate, memory_mb=1e-6)
    np.testing.assert_allclose(one_by_one.annual_yield_mm, result.ensemble.annual_yield_mm,
                               rtol=0, atol=1e-9)
    member = result.ensemble.design.member_plan(small_plan, result.ensemble.parameters.iloc[2])
    plain = coveryield.compare(member)
    for name in plain.plan_names:
        weights = plain.tiles.weights(small_plan.plans[name])
        yields = result.ensemble.member_yields(weights)[2]
        np.testing.assert_allclose(yields, plain.outcome(name).annual["yield_mm"], atol=1e-9)


def test_latin_hypercube_uses_every_slice_of_every_range(result):
    # McKay et al. (1979): with N draws each range is cut into N slices, each used once
    for dim in result.ensemble.design.dimensions:
        values = result.ensemble.parameters[dim.name].to_numpy()
        slices = np.floor((values - dim.low) / (dim.high - dim.low) * N).astype(int)
        assert sorted(slices) == list(range(N)), dim.name


def test_derived_covers_follow_their_base_relatively(small_plan, result):
    row = result.ensemble.parameters.iloc[0]
    member = result.ensemble.design.member_plan(small_plan, row)
    forest, young = small_plan.covers["forest"], small_plan.covers["young-pine"]
    ratio = member.covers["forest"].height_m / forest.height_m
    assert member.covers["young-pine"].height_m == pytest.approx(young.height_m * ratio)
    assert row["forest.height_m"] == pytest.approx(member.covers["forest"].height_m)
    ranges = PARAMETER_RANGES["forest"]["height_m"]
    assert ranges.low <= member.covers["forest"].height_m <= ranges.high


def test_every_range_holds_its_builtin_value_and_names_a_source():
    for cover, ranges in PARAMETER_RANGES.items():
        for parameter, spread in ranges.items():
            assert spread.low < spread.high
            assert spread.low <= getattr(BUILTIN_COVERS[cover], parameter) <= spread.high
            assert spread.source


def test_a_calibrated_range_is_drawn_from(small_plan):
    calibrated = small_plan.model_copy(update={"adjustments": small_plan.adjustments.model_copy(
        update={"surface_resistance_factor": 1.2,
                "ranges": {"surface_resistance_factor": (1.1, 1.4)}})})
    design = EnsembleDesign.for_plan(calibrated)
    assert "surface_resistance_factor" in design.names
    drawn = design.sample(10, seed=3)["surface_resistance_factor"]
    assert drawn.between(1.1, 1.4).all()
    member = design.member_plan(calibrated, drawn.to_frame().iloc[0].reindex(design.names,
                                                                           fill_value=np.nan))
    assert member.adjustments.surface_resistance_factor == pytest.approx(drawn.iloc[0])


def test_compare_command_with_ensemble(small_plan_path, tmp_path, capsys):
    out = tmp_path / "out"
    assert main(["compare", str(small_plan_path), "--ensemble", "12", "--seed", "3", "--out",
                 str(out)]) == 0
    printed = capsys.readouterr().out
    assert "5th to 95th percentile over 12 parameter sets" in printed
    summary = json.loads((out / "summary.json").read_text())
    for key in ("change_mm_p05", "change_mm_p50", "change_mm_p95", "mean_yield_mm_p05",
                "dry_year_change_mm_p95"):
        assert key in summary["plans"]["plant"]
    table = pd.read_csv(out / "ensemble.csv")
    assert len(table) == 12 * 3  # one row per member and plan
    assert list(table.columns[:5]) == ["member", "plan", "mean_yield_mm", "change_mm",
                                       "dry_year_change_mm"]
    p05 = np.percentile(table.loc[table["plan"] == "plant", "change_mm"], 5)
    # summary.json rounds depths to 0.01 mm
    assert p05 == pytest.approx(summary["plans"]["plant"]["change_mm_p05"], abs=0.006)
    html = (out / "report.html").read_text()
    assert "Uncertainty bands" in html
    assert "Error bars: 5th to 95th percentile" in html
    assert "not a confidence interval" in html
    flow = pd.read_csv(out / "daily_flow.csv")
    assert list(flow.columns) == ["date", "plan", "flow_m3s"]
    assert set(flow["plan"]) == {"current", "plant", "plant-young"}
    # the same seed gives the same numbers, run again as a whole
    again = tmp_path / "again"
    assert main(["compare", str(small_plan_path), "--ensemble", "12", "--seed", "3", "--out",
                 str(again)]) == 0
    assert (again / "ensemble.csv").read_text() == (out / "ensemble.csv").read_text()


@pytest.mark.parametrize(("args", "fragment"), [
    (["--ensemble", "1"], "expected at least 2 parameter sets"),
    (["--seed", "4"], "only used with --ensemble"),
])
def test_bad_ensemble_options_exit_2(small_plan_path, capsys, args, fragment):
    assert main(["compare", str(small_plan_path), *args]) == 2
    assert fragment in capsys.readouterr().err


def test_covers_command_lists_the_ensemble_ranges(capsys):
    assert main(["covers"]) == 0
    text = capsys.readouterr().out
    spread = PARAMETER_RANGES["forest"]["rs_s_per_m"]
    assert f"forest.rs_s_per_m [s m-1]: {spread.low:g} to {spread.high:g}" in text
    assert "Ensemble ranges" in text


def test_ensemble_progress_bar_and_callback(small_plan, small_climate, capsys):
    seen = []
    simulate_ensemble(small_plan, 3, seed=1, climate=small_climate, memory_mb=1e-6,
                      progress=True, on_progress=lambda done, total: seen.append((done, total)))
    assert seen == [(1, 3), (2, 3), (3, 3)]
    assert "ensemble members" in capsys.readouterr().err


def test_no_bands_without_an_ensemble(small_plan_path, tmp_path):
    out = tmp_path / "plain"
    assert main(["compare", str(small_plan_path), "--out", str(out)]) == 0
    summary = json.loads((out / "summary.json").read_text())
    assert "ensemble" not in summary
    assert not any(key.endswith("_p05") for key in summary["plans"]["plant"])
    assert not (out / "ensemble.csv").exists()
    assert "Uncertainty bands" not in (out / "report.html").read_text()


def test_collapsed_members_follow_a_crops_seasonal_leaf_area(tmp_path):
    # a crop's leaf area follows its season in the central run (daily LAI); members must use the
    # same daily path, or a zero-width ensemble would not reproduce the central figure
    from tests.uncertainty.conftest import write_small_catchment

    path = write_small_catchment(tmp_path, last_year=1994)
    path.write_text(path.read_text() + '\n[plans.crops]\nall = { pasture = 0.2, crop = 0.8 }\n')
    plan = coveryield.load_plan(path)
    result = coveryield.compare(plan)
    design = EnsembleDesign.for_plan(plan).scaled(0.0)
    ensemble = simulate_ensemble(plan, 2, seed=3, design=design)
    collapsed = Comparison(plan, result.tiles, ensemble=ensemble)
    central = _central(result, "crops")
    for key, (p05, _, p95) in collapsed.bands(plan.plans["crops"]).items():
        assert p05 == pytest.approx(central[key], abs=1e-9), key
        assert p95 == pytest.approx(central[key], abs=1e-9), key
