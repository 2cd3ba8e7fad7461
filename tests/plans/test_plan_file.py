"""Reading, editing and writing plan files (the happy paths and the writer's safety rules)."""

from __future__ import annotations

import os
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from coveryield.covers import BUILTIN_COVERS
from coveryield.errors import OutputError, PlanFileError
from coveryield.plans import PlanFile, load_plan, validate_shares, write_plan_file

DEMO_PLAN = Path(__file__).resolve().parents[2] / "demo_data" / "plans.toml"


def same_content(a: PlanFile, b: PlanFile) -> bool:
    return a.model_dump(exclude={"source"}) == b.model_dump(exclude={"source"})


def test_example_plan_loads(write_plan):
    path = write_plan()
    plan_file = load_plan(path)
    assert plan_file.source == path.resolve()
    assert plan_file.catchment.name == "Example Creek"
    assert plan_file.catchment.area_km2 == 42.0
    assert plan_file.catchment.climate == (path.parent / "climate.csv").resolve()
    assert plan_file.catchment.wind_height_m == 2.0
    assert [z.name for z in plan_file.zones] == ["upper", "lower"]
    upper, lower = plan_file.zones
    assert (upper.rain_factor, upper.temperature_offset_c) == (1.15, -1.5)
    # defaults of an unspecified zone
    assert (lower.rain_factor, lower.temperature_offset_c, lower.soil, lower.soil_group) == (
        1.0, 0.0, "loam", "B")
    assert plan_file.plans["plant-upper"]["upper"] == {"pasture": 0.3, "forest": 0.6, "water": 0.1}


def test_catchment_defaults(write_plan, example_text):
    text = "\n".join(line for line in example_text.splitlines() if not line.startswith(
        ("wind_height_m", "coastal", "recession_days", "rain_rate_mm_per_h")))
    catchment = load_plan(write_plan(text)).catchment
    assert (catchment.wind_height_m, catchment.coastal, catchment.recession_days,
            catchment.rain_rate_mm_per_h) == (2.0, False, 30.0, 1.5)


def test_derived_cover_keeps_base_parameters(write_plan):
    covers = load_plan(write_plan()).covers
    young, forest = covers["young-pine"], BUILTIN_COVERS["forest"]
    assert list(covers)[:4] == list(BUILTIN_COVERS)
    assert (young.base, young.height_m, young.lai) == ("forest", 6.0, 3.0)
    assert young.rooting_depth_m == forest.rooting_depth_m
    assert young.albedo == forest.albedo


def test_derived_cover_may_override_part_of_a_table(write_plan, example_text):
    text = example_text.replace('[covers.young-pine]', '[covers.winter-crop]\nbase = "crop"\n'
                                'kc_calendar = { planting_doy_north = 280 }\n'
                                'curve_number = { D = 90 }\n[covers.young-pine]')
    crop = load_plan(write_plan(text)).covers["winter-crop"]
    builtin = BUILTIN_COVERS["crop"]
    assert crop.kc_calendar.planting_doy_north == 280
    assert crop.kc_calendar.stage_days == builtin.kc_calendar.stage_days
    assert crop.curve_number == {**builtin.curve_number, "D": 90.0}


def test_plan_may_size_its_water_bodies(write_plan, example_text):
    # a reservoir 2 km long and 8 m deep, derived from the built-in pond
    text = example_text.replace("[plans.current]", '[covers.reservoir]\nbase = "water"\n'
                                "water_fetch_m = 2000\nwater_depth_m = 8\n[plans.current]")
    reservoir = load_plan(write_plan(text)).covers["reservoir"]
    assert (reservoir.base, reservoir.water_fetch_m, reservoir.water_depth_m) == (
        "water", 2000.0, 8.0)
    assert BUILTIN_COVERS["water"].water_fetch_m == 100.0


def test_derived_cover_may_derive_from_a_derived_cover(write_plan, example_text):
    text = example_text.replace("[plans.current]", '[covers.sapling]\nbase = "young-pine"\n'
                                "height_m = 2\n[plans.current]")
    sapling = load_plan(write_plan(text)).covers["sapling"]
    assert (sapling.base, sapling.height_m, sapling.lai) == ("forest", 2.0, 3.0)


def test_zone_lookup_and_soil_water(write_plan):
    plan_file = load_plan(write_plan())
    assert plan_file.zone("lower").area_share == 0.6
    # loam: middle of FAO-56 Table 19 range 0.13-0.18 m3/m3 (from memory)
    assert plan_file.zone("upper").awc_m3_per_m3 == pytest.approx(0.155)
    with pytest.raises(PlanFileError, match="no zone \"middle\"; zones are: upper, lower"):
        plan_file.zone("middle")


def test_plan_names_and_covers_used(write_plan, example_text):
    text = example_text.replace("[plans.plant-upper]", "[plans.young]\n"
                                "upper = { pasture = 0.3, young-pine = 0.6, water = 0.1 }\n"
                                "lower = { pasture = 0.5, crop = 0.5, forest = 0.0 }\n"
                                "[plans.plant-upper]")
    plan_file = load_plan(write_plan(text))
    assert plan_file.plan_names == ("current", "young", "plant-upper")
    # built-ins first in their own order, then derived covers; zero shares do not count
    assert plan_file.covers_used() == ("forest", "pasture", "crop", "water", "young-pine")
    with pytest.raises(PlanFileError, match="no plan \"later\""):
        plan_file.plan("later")


def test_baseline_listed_first_even_if_written_last(write_plan, example_text):
    current = example_text[example_text.index("[plans.current]"):
                           example_text.index("[plans.plant-upper]")]
    text = example_text.replace(current, "") + current
    assert load_plan(write_plan(text)).plan_names == ("current", "plant-upper")


def test_round_trip_through_toml(write_plan, tmp_path):
    plan_file = load_plan(write_plan())
    again_path = tmp_path / "again.toml"
    again_path.write_text(plan_file.to_toml(), encoding="utf-8")
    again = load_plan(again_path)
    assert again == plan_file.model_copy(update={"source": again_path.resolve()})


def test_round_trip_into_another_folder_keeps_the_climate_file(write_plan, tmp_path):
    plan_file = load_plan(write_plan())
    target = tmp_path / "elsewhere" / "deeper" / "copy.toml"
    target.parent.mkdir(parents=True)
    written = write_plan_file(plan_file, target)
    assert written == target
    again = load_plan(target)
    assert same_content(again, plan_file)
    assert 'climate = "../../climate.csv"' in target.read_text(encoding="utf-8")


def test_demo_plan_file_loads_and_round_trips(tmp_path):
    plan_file = load_plan(DEMO_PLAN)
    assert plan_file.catchment.wind_height_m == 2.0  # the demo wind is measured at 2 m
    assert len(plan_file.plan_names) >= 4
    assert plan_file.plan_names[0] == "current"
    assert plan_file.covers["young-pine"].base == "forest"
    assert plan_file.catchment.climate.name == "climate.csv"
    copy = tmp_path / "demo-copy.toml"
    write_plan_file(plan_file, copy)
    assert same_content(load_plan(copy), plan_file)


def test_with_plan_adds_a_checked_plan(write_plan):
    plan_file = load_plan(write_plan())
    shares = {"upper": {"forest": 0.9, "water": 0.1}, "lower": {"pasture": 0.5, "crop": 0.5}}
    edited = plan_file.with_plan("all-forest", shares)
    assert edited.plans["all-forest"] == shares
    assert "all-forest" not in plan_file.plans  # the original is unchanged
    assert edited.plan_names[-1] == "all-forest"
    with pytest.raises(PlanFileError, match="exists already"):
        edited.with_plan("all-forest", shares)
    assert edited.with_plan("all-forest", shares, replace=True).plans == edited.plans
    bad = {"upper": {"forest": 0.9}, "lower": {"pasture": 0.5, "crop": 0.5}}
    with pytest.raises(PlanFileError, match=r"plans.all-forest.upper = \{ forest = 0.9 \}: "
                                            r"cover shares sum to 0.9"):
        plan_file.with_plan("all-forest", bad)
    with pytest.raises(PlanFileError, match="non-empty plan name"):
        plan_file.with_plan("  ", shares)


def test_with_plan_then_write_then_read(write_plan, tmp_path):
    plan_file = load_plan(write_plan())
    shares = {"upper": {"young-pine": 0.9, "water": 0.1}, "lower": {"pasture": 1.0}}
    edited = plan_file.with_plan("my plan", shares)  # a name that needs quoting in TOML
    path = write_plan_file(edited, tmp_path / "edited.toml")
    assert '[plans."my plan"]' in path.read_text(encoding="utf-8")
    assert load_plan(path).plans["my plan"] == shares


def test_validate_shares_accepts_names(write_plan):
    validate_shares({"a": {"forest": 0.25, "pasture": 0.75}}, ["a"], BUILTIN_COVERS,
                    plan_name="p")
    with pytest.raises(PlanFileError, match="plans.p: missing zone.s. b"):
        validate_shares({"a": {"forest": 1.0}}, ["a", "b"], ["forest"], plan_name="p")


def test_writer_refuses_to_overwrite(write_plan, tmp_path):
    plan_file = load_plan(write_plan())
    target = tmp_path / "exists.toml"
    target.write_text("keep me", encoding="utf-8")
    with pytest.raises(OutputError, match="exists already; refusing to overwrite"):
        write_plan_file(plan_file, target)
    assert target.read_text(encoding="utf-8") == "keep me"


def test_writer_needs_an_existing_folder(write_plan, tmp_path):
    with pytest.raises(OutputError, match="does not exist"):
        write_plan_file(load_plan(write_plan()), tmp_path / "missing" / "x.toml")


@pytest.mark.parametrize("failing", ["fsync", "replace"])
def test_writer_leaves_no_partial_file(write_plan, tmp_path, monkeypatch, failing):
    plan_file = load_plan(write_plan())
    before = sorted(p.name for p in tmp_path.iterdir())

    def fail(*args, **kwargs):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, failing, fail)
    with pytest.raises(OutputError, match="No space left on device"):
        write_plan_file(plan_file, tmp_path / "new.toml")
    monkeypatch.undo()
    assert sorted(p.name for p in tmp_path.iterdir()) == before  # no target, no temp file


shares_strategy = st.lists(st.integers(min_value=0, max_value=50), min_size=4, max_size=4).filter(
    lambda parts: sum(parts) > 0)


@settings(max_examples=40, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(upper=shares_strategy, lower=shares_strategy)
def test_any_valid_plan_round_trips(write_plan, tmp_path_factory, upper, lower):
    """Property: shares that sum to 1 are accepted and survive writing and reading back."""
    plan_file = load_plan(write_plan())
    names = ["forest", "pasture", "young-pine", "water"]
    shares = {zone: {n: p / sum(parts) for n, p in zip(names, parts, strict=True)}
              for zone, parts in (("upper", upper), ("lower", lower))}
    edited = plan_file.with_plan("random", shares)
    path = write_plan_file(edited, tmp_path_factory.mktemp("rt") / "plan.toml")
    assert load_plan(path).plans["random"] == edited.plans["random"]


def test_round_trip_of_nested_overrides_and_quoted_names(write_plan, example_text, tmp_path):
    text = example_text.replace("[covers.young-pine]", "[covers.winter-crop]\nbase = \"crop\"\n"
                                'description = "two\\nlines \\"quoted\\" ü"\n'
                                "kc_calendar = { planting_doy_north = 280 }\n"
                                "curve_number = { D = 90 }\n"
                                '[covers."odd name"]\nbase = "water"\nalbedo = 0.06\n'
                                "[covers.young-pine]")
    plan_file = load_plan(write_plan(text))
    copy = write_plan_file(plan_file, tmp_path / "copy.toml")
    assert same_content(load_plan(copy), plan_file)
    assert '[covers."odd name"]' in copy.read_text(encoding="utf-8")
