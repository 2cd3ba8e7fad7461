"""The demo comparison end to end: API tables, mixing properties, the compare command."""

from __future__ import annotations

import json
import subprocess
import sys

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from coveryield.cli import main
from coveryield.errors import PlanFileError

from .conftest import DEMO


def test_demo_has_current_and_three_afforestation_options(demo_result):
    assert demo_result.plan_names[0] == "current"
    assert len(demo_result.plan_names) >= 4
    assert len(demo_result.years) == 30


def test_every_plan_year_closes(demo_result):
    # rain = evaporation + yield + storage change, mm over the catchment (mass balance)
    for name in demo_result.plan_names:
        a = demo_result.outcome(name).annual
        residual = a["rain_mm"] - a["evap_mm"] - a["yield_mm"] - a["storage_change_mm"]
        assert np.abs(residual).max() < 1e-6


def test_evaporation_parts_add_up(demo_result):
    a = demo_result.outcome("current").annual
    parts = a[["interception_mm", "transpiration_mm", "soil_evap_mm", "open_water_mm"]].sum(axis=1)
    np.testing.assert_allclose(parts, a["evap_mm"], atol=1e-9)


def test_units_of_the_headline_figures(demo_result):
    o = demo_result.outcome("current")
    area_km2 = demo_result.plan_file.catchment.area_km2
    # 1 mm over 1 km2 = 1,000 m3 = 1 ML (definition)
    assert o.mean_yield_ml == pytest.approx(o.mean_yield_mm * area_km2)
    assert o.mean_flow_m3s == pytest.approx(o.mean_yield_mm * area_km2 * 1e3 / (365.25 * 86400))
    # the routed flow carries the same water as the yield, apart from what stays in the store
    routed_mm_per_yr = o.flow_m3s.mean() * 86400 * 365.25 / (area_km2 * 1e3)
    assert routed_mm_per_yr == pytest.approx(o.mean_yield_mm, rel=0.02)


def test_monthly_yields_sum_to_the_annual_mean(demo_result):
    o = demo_result.outcome("current")
    assert o.monthly_yield_mm.sum() == pytest.approx(o.mean_yield_mm, rel=1e-9)


def test_dry_years_are_the_driest_tenth(demo_result):
    rain = demo_result.outcome("current").annual["rain_mm"]
    assert len(demo_result.dry_years) == 3
    assert set(demo_result.dry_years) == set(rain.nsmallest(3).index)


def test_afforestation_options_reduce_yield(demo_result):
    for name in demo_result.plan_names[1:]:
        change = demo_result.change(demo_result.outcome(name))
        assert change.yield_mm < 0
        assert change.yield_ml == pytest.approx(change.yield_mm * demo_result.tiles.area_km2)


def test_fdc_is_monotone_and_q95_matches(demo_result):
    fdc = demo_result.outcome("current").fdc
    assert np.all(np.diff(fdc["flow_m3s"]) <= 0)
    q95 = fdc.loc[fdc["exceedance_pct"] == 95.0, "flow_m3s"].iloc[0]
    assert q95 == pytest.approx(demo_result.outcome("current").q95_m3s)


share = st.floats(0.0, 1.0)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.lists(share, min_size=3, max_size=3), min_size=3, max_size=3))
def test_any_shares_summing_to_one_conserve_mass(demo_result, raw):
    covers = ["pasture", "forest", "water"]
    shares = {}
    for zone, values in zip(demo_result.zone_names, raw, strict=True):
        values = np.asarray(values) + 1e-3
        values = values / values.sum()
        shares[zone] = dict(zip(covers, values.tolist(), strict=True))
        shares[zone][covers[-1]] = 1.0 - sum(values[:-1])
    a = demo_result.evaluate(shares).annual
    residual = a["rain_mm"] - a["evap_mm"] - a["yield_mm"] - a["storage_change_mm"]
    assert np.abs(residual).max() < 1e-6


def test_bad_shares_are_refused_with_plan_zone_and_sum(demo_result):
    with pytest.raises(PlanFileError, match=r"upper.*0\.9"):
        demo_result.evaluate(
            {
                "upper": {"pasture": 0.5, "forest": 0.4},
                "middle": {"pasture": 1.0},
                "lower": {"pasture": 1.0},
            }
        )


def test_compare_command_writes_the_tables(tmp_path, capsys):
    out = tmp_path / "results"
    assert main(["compare", str(DEMO / "plans.toml"), "--out", str(out)]) == 0
    printed = capsys.readouterr().out
    for expected in ("plant-upper", "mm/yr", "ML/yr", "CAUTION"):
        assert expected in printed
    annual = pd.read_csv(out / "annual.csv")
    assert list(annual.columns[:9]) == [
        "plan",
        "year",
        "rain_mm",
        "evap_mm",
        "quickflow_mm",
        "drainage_mm",
        "yield_mm",
        "storage_change_mm",
        "yield_ml",
    ]
    summary = json.loads((out / "summary.json").read_text())
    assert set(summary["plans"]["current"]) >= {"mean_yield_mm", "mean_yield_ml"}
    for name, entry in summary["plans"].items():
        if name != "current":
            assert {"change_mm", "change_pct", "dry_year_change_mm"} <= set(entry)


def test_compare_refuses_a_non_empty_folder_and_leaves_it_alone(tmp_path, capsys):
    out = tmp_path / "results"
    out.mkdir()
    (out / "notes.txt").write_text("mine")
    assert main(["compare", str(DEMO / "plans.toml"), "--out", str(out)]) == 2
    assert "not empty" in capsys.readouterr().err
    assert [p.name for p in out.iterdir()] == ["notes.txt"]


def test_bad_plan_exits_2_with_one_message_and_nothing_written(tmp_path):
    bad = tmp_path / "plans.toml"
    text = (
        (DEMO / "plans.toml")
        .read_text()
        .replace(
            "upper = { pasture = 0.12, forest = 0.85, water = 0.03 }",
            "upper = { pasture = 0.12, forest = 0.95, water = 0.03 }",
            1,
        )
    )
    bad.write_text(text.replace('climate = "climate.csv"', f'climate = "{DEMO / "climate.csv"}"'))
    out = tmp_path / "results"
    proc = subprocess.run(
        [sys.executable, "-m", "coveryield.cli", "compare", str(bad), "--out", str(out)],
        capture_output=True,
        text=True,
    )
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr
    assert "plant-upper" in proc.stderr
    assert "1.1" in proc.stderr
    assert not out.exists()


def test_bad_climate_file_exits_2_naming_line_and_column(tmp_path, capsys):
    (tmp_path / "plans.toml").write_text((DEMO / "plans.toml").read_text())
    lines = (DEMO / "climate.csv").read_text().splitlines()[:400]
    date, _rain, *rest = lines[49].split(",")
    lines[49] = ",".join([date, "abc", *rest])
    (tmp_path / "climate.csv").write_text("\n".join(lines) + "\n")
    out = tmp_path / "results"
    assert main(["compare", str(tmp_path / "plans.toml"), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert "line 50" in err
    assert "rain_mm" in err
    assert "'abc'" in err
    assert not out.exists()
