"""[adjustments] in plan files: read, checked, written back, and applied to every tile."""

from __future__ import annotations

import numpy as np
import pytest

from coveryield.catchment import tile_parameters
from coveryield.errors import PlanFileError
from coveryield.forcing import cover_evaporation
from coveryield.plans import load_plan, plan_from_dict, write_plan_file

from .conftest import SMALL_PLAN, write_small_catchment


def _with_adjustments(tmp_path, table: str):
    plan = write_small_catchment(tmp_path, last_year=1992)
    plan.write_text(SMALL_PLAN + "\n[adjustments]\n" + table + "\n")
    return plan


def test_defaults_when_absent(small_plan):
    a = small_plan.adjustments
    assert a.is_default
    assert (a.surface_resistance_factor, a.root_zone_factor, a.ranges) == (1.0, 1.0, {})
    assert "[adjustments]" not in small_plan.to_toml()


def test_read_and_written_back(tmp_path):
    plan = load_plan(_with_adjustments(tmp_path, (
        "surface_resistance_factor = 1.25\nroot_zone_factor = 0.8\n"
        "ranges = { surface_resistance_factor = [1.1, 1.4], root_zone_factor = [0.7, 1] }")))
    a = plan.adjustments
    assert a.surface_resistance_factor == 1.25
    assert a.root_zone_factor == 0.8
    assert a.ranges == {"surface_resistance_factor": (1.1, 1.4), "root_zone_factor": (0.7, 1.0)}
    out = write_plan_file(plan, tmp_path / "again.toml")
    assert load_plan(out).adjustments == a


@pytest.mark.parametrize(("table", "fragments"), [
    ("surface_resistance_factor = 3.0",
     ["adjustments.surface_resistance_factor = 3.0", "a number from 0.5 to 2"]),
    ("root_zone_factor = \"deep\"", ["adjustments.root_zone_factor", "a number"]),
    ("canopy_factor = 1.2", ["adjustments.canopy_factor", "unknown key"]),
    ("surface_resistance_factor = 1.5\nranges = { surface_resistance_factor = [0.6, 1.2] }",
     ["ranges.surface_resistance_factor = [0.6, 1.2]", "low <= surface_resistance_factor (1.5)"]),
    ("ranges = { interception_factor = [0.6, 1.2] }",
     ["ranges.interception_factor: unknown factor"]),
])
def test_bad_adjustments_give_one_clear_error(tmp_path, table, fragments):
    path = _with_adjustments(tmp_path, table)
    with pytest.raises(PlanFileError) as info:
        load_plan(path)
    message = str(info.value)
    assert str(path.resolve()) in message
    for fragment in fragments:
        assert fragment in message, message


def test_adjustments_must_be_a_table(small_plan_path):
    from coveryield.plans import tomllib

    data = tomllib.loads(small_plan_path.read_text())
    data["adjustments"] = 3
    with pytest.raises(PlanFileError, match="adjustments = 3: expected an \\[adjustments\\]"):
        plan_from_dict(data, source=small_plan_path)


def test_root_zone_factor_scales_the_capacity(small_plan):
    # TAW = 1000 x rooting depth x available water capacity (FAO-56 eq. 82), times the factor
    tiles = [("all", "pasture"), ("all", "forest")]
    base = tile_parameters(small_plan, tiles).root_zone_capacity_mm
    awc = small_plan.zones[0].awc_m3_per_m3
    expected = [1000 * small_plan.covers[c].rooting_depth_m * awc for _, c in tiles]
    np.testing.assert_allclose(base, expected, rtol=1e-12)
    adjusted = small_plan.model_copy(update={
        "adjustments": small_plan.adjustments.model_copy(update={"root_zone_factor": 0.6})})
    np.testing.assert_allclose(tile_parameters(adjusted, tiles).root_zone_capacity_mm,
                               0.6 * base, rtol=1e-12)


def test_surface_resistance_factor_lowers_dry_canopy_evaporation(small_plan, small_climate):
    # A larger rs lowers Penman-Monteith evaporation (FAO-56 eq. 3: rs in the denominator); the
    # wet canopy (rs = 0) is unchanged.
    from coveryield.adjustments import adjusted_cover

    adjustments = small_plan.adjustments.model_copy(update={"surface_resistance_factor": 1.5})
    forest = small_plan.covers["forest"]
    slower = adjusted_cover(forest, adjustments)
    assert slower.rs_s_per_m == pytest.approx(1.5 * forest.rs_s_per_m)
    before = cover_evaporation(small_climate, forest)
    after = cover_evaporation(small_climate, slower)
    assert (after["dry_mm"] <= before["dry_mm"] + 1e-12).all()
    assert after["dry_mm"].sum() < 0.95 * before["dry_mm"].sum()
    np.testing.assert_allclose(after["wet_mm"], before["wet_mm"])
