"""A catalogue of broken plan files: each must give ONE PlanFileError naming key path and value."""

from __future__ import annotations

import pytest

from coveryield.errors import PlanFileError
from coveryield.plans import load_plan

# (id, text to replace in the example plan, replacement, fragments the message must contain)
BAD_PLANS = [
    ("negative-area", "area_km2 = 42.0", "area_km2 = -5.0",
     ["catchment.area_km2 = -5.0", "greater than 0"]),
    ("latitude-out-of-range", "latitude_deg = -41.2", "latitude_deg = 95",
     ["catchment.latitude_deg = 95", "from -90 to 90"]),
    ("elevation-as-text", "elevation_m = 350", 'elevation_m = "350"',
     ['catchment.elevation_m = "350"', "a number"]),
    ("climate-file-missing", 'climate = "climate.csv"', 'climate = "nowhere.csv"',
     ['catchment.climate = "nowhere.csv"', "no climate file", "relative to the plan file"]),
    ("unknown-catchment-key", "area_km2 = 42.0", "area_km2 = 42.0\narea = 3",
     ["catchment.area = 3", "unknown key", "area_km2"]),
    ("catchment-name-missing", 'name = "Example Creek"\n', "",
     ["catchment.name", "required key is missing", "non-empty text"]),
    ("coastal-not-boolean", "coastal = false", 'coastal = "yes"',
     ['catchment.coastal = "yes"', "true or false"]),
    ("wind-height-zero", "wind_height_m = 2", "wind_height_m = 0",
     ["catchment.wind_height_m = 0", "from 0.5 to 100"]),
    ("zero-area-share", "area_share = 0.4", "area_share = 0.0",
     ["zones.upper.area_share = 0.0", "greater than 0"]),
    ("area-shares-do-not-sum", "area_share = 0.6", "area_share = 0.5",
     ["zones.*.area_share", "sum to 0.9", "upper 0.4 + lower 0.5", "expected 1"]),
    ("area-share-missing", "area_share = 0.6\n", "",
     ["zones.lower.area_share", "required key is missing"]),
    ("duplicate-zone-names", 'name = "lower"', 'name = "upper"',
     ['zones.upper = "upper"', "used 2 times"]),
    ("unknown-soil", 'soil = "loam"', 'soil = "peat"',
     ['zones.upper.soil = "peat"', "sandy_loam"]),
    ("unknown-soil-group", 'soil_group = "B"', 'soil_group = "E"',
     ['zones.upper.soil_group = "E"', 'one of "A", "B", "C", "D"']),
    ("rain-factor-too-large", "rain_factor = 1.15", "rain_factor = 9",
     ["zones.upper.rain_factor = 9", "from 0.2 to 5"]),
    ("unknown-zone-key", "rain_factor = 1.15", "rain_factor = 1.15\nslope_deg = 12",
     ["zones.upper.slope_deg = 12", "unknown key", "temperature_offset_c"]),
    ("baseline-missing", "[plans.current]", "[plans.today]",
     ["plans.current", "baseline", "plans found: today, plant-upper"]),
    ("plan-shares-do-not-sum", "upper = { pasture = 0.7, forest = 0.2, water = 0.1 }",
     "upper = { pasture = 0.7, forest = 0.3, water = 0.1 }",
     ["plans.current.upper = { pasture = 0.7, forest = 0.3, water = 0.1 }", "sum to 1.1"]),
    ("plan-misses-a-zone", "lower = { pasture = 0.5, crop = 0.5 }\n", "",
     ["plans.current", "missing zone(s) lower"]),
    ("plan-names-unknown-zone", "[plans.plant-upper]",
     "[plans.plant-upper]\nmiddle = { pasture = 1.0 }",
     ["plans.plant-upper.middle = { pasture = 1.0 }", "unknown zone", "upper, lower"]),
    ("unknown-cover", "upper = { pasture = 0.3, forest = 0.6, water = 0.1 }",
     "upper = { pasture = 0.3, pine = 0.6, water = 0.1 }",
     ["plans.plant-upper.upper.pine = 0.6", "unknown cover", "young-pine"]),
    ("negative-share", "upper = { pasture = 0.3, forest = 0.6, water = 0.1 }",
     "upper = { pasture = 1.0, forest = -0.1, water = 0.1 }",
     ["plans.plant-upper.upper.forest = -0.1", "from 0 to 1"]),
    ("share-as-text", "upper = { pasture = 0.3, forest = 0.6, water = 0.1 }",
     'upper = { pasture = 0.3, forest = "0.6", water = 0.1 }',
     ['plans.plant-upper.upper.forest = "0.6"', "a number from 0 to 1"]),
    ("zone-shares-not-a-table", "lower = { pasture = 0.5, crop = 0.5 }\n[plans.plant-upper]",
     "lower = 0.5\n[plans.plant-upper]",
     ["plans.current.lower = 0.5", "table of cover shares"]),
    ("derived-cover-unknown-base", 'base = "forest"', 'base = "jungle"',
     ['covers.young-pine.base = "jungle"', "unknown base cover", "forest, pasture, crop, water"]),
    ("derived-cover-without-base", 'base = "forest"\n', "",
     ["covers.young-pine.base", "missing", "derives from"]),
    ("derived-cover-unknown-parameter", "lai = 3", "leaf_area = 3",
     ["covers.young-pine.leaf_area = 3", "unknown cover parameter", "rooting_depth_m"]),
    ("derived-cover-out-of-range", "lai = 3", "lai = 3\nalbedo = 1.5",
     ["covers.young-pine.albedo = 1.5", "a number from 0 to 1"]),
    ("water-fetch-zero", "[covers.young-pine]",
     '[covers.reservoir]\nbase = "water"\nwater_fetch_m = 0\n[covers.young-pine]',
     ["covers.reservoir.water_fetch_m = 0", "1"]),
    ("derived-cover-redefines-builtin", "[covers.young-pine]", "[covers.forest]",
     ["covers.forest", "built-in cover"]),
    ("unknown-section", "[catchment]", "[options]\nfast = true\n[catchment]",
     ["options", "unknown section", "catchment, zones, covers, plans"]),
]


@pytest.mark.parametrize(("old", "new", "fragments"),
                         [pytest.param(o, n, f, id=i) for i, o, n, f in BAD_PLANS])
def test_bad_plan_gives_one_clear_error(write_plan, example_text, old, new, fragments):
    assert old in example_text, "catalogue entry must edit the example"
    path = write_plan(example_text.replace(old, new, 1))
    with pytest.raises(PlanFileError) as info:
        load_plan(path)
    message = str(info.value)
    assert str(path) in message
    for fragment in fragments:
        assert fragment in message, f"{fragment!r} not in:\n{message}"
    assert info.value.__cause__ is None  # no chained traceback


def test_all_problems_are_listed_together(write_plan, example_text):
    text = (example_text.replace("area_km2 = 42.0", "area_km2 = 0")
            .replace('soil = "loam"', 'soil = "peat"')
            .replace("forest = 0.6", "forest = 0.7"))
    with pytest.raises(PlanFileError) as info:
        load_plan(write_plan(text))
    message = str(info.value)
    assert "has 3 problems" in message
    assert "catchment.area_km2 = 0" in message
    assert 'zones.upper.soil = "peat"' in message
    assert "plans.plant-upper.upper" in message
    assert "sum to 1.1" in message


def test_toml_syntax_error_names_the_line(write_plan, example_text):
    path = write_plan(example_text.replace("lai = 3", "lai = = 3"))
    with pytest.raises(PlanFileError) as info:
        load_plan(path)
    message = str(info.value)
    line = example_text.splitlines().index("lai = 3") + 1
    assert "not valid TOML" in message
    assert f"line {line}" in message
    assert "lai = = 3" in message
    assert info.value.__cause__ is None
    assert info.value.__suppress_context__


def test_missing_plan_file(tmp_path):
    with pytest.raises(PlanFileError, match="Plan file not found: .*absent.toml"):
        load_plan(tmp_path / "absent.toml")


def test_plan_file_that_is_not_utf8(tmp_path):
    path = tmp_path / "plans.toml"
    path.write_bytes(b'[catchment]\nname = "\xff"\n')
    with pytest.raises(PlanFileError, match="not UTF-8"):
        load_plan(path)


def test_zone_without_name_is_counted_from_one(write_plan, example_text):
    path = write_plan(example_text.replace('name = "lower"\n', ""))
    with pytest.raises(PlanFileError) as info:
        load_plan(path)
    assert "zones[2].name" in str(info.value)
    assert "counted from 1" in str(info.value)


def test_optional_number_is_described_as_a_number(tmp_path):
    # an optional numeric key (canopy_capacity_mm may be left out) still says "a number"
    from coveryield.plans import plan_from_dict

    data = {
        "catchment": {"name": "x", "area_km2": 1.0, "latitude_deg": 0.0, "elevation_m": 0.0,
                      "climate": str(tmp_path / "none.csv")},
        "zones": [{"name": "a", "area_share": 1.0}],
        "covers": {"p": {"base": "pasture", "canopy_capacity_mm": 20.0}},
        "plans": {"current": {"a": {"pasture": 1.0}}},
    }
    with pytest.raises(PlanFileError, match=r"canopy_capacity_mm = 20.0: expected a number from 0"):
        plan_from_dict(data, source=tmp_path / "plans.toml")
