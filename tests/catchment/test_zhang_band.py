"""Where the daily model's long-term evaporation lands against the Zhang (2001) curve.

Issue 10 item 4: forest and pasture on the (invented) demo weather with rain x 0.6 to 2.4. The
band measured here is the model's "usual offset" that the cross-check compares plans with
(coveryield.physics.curves.MODEL_OFFSET_MEASURED_PCT); README "Known limits" explains it.
"""

from __future__ import annotations

import pytest

import coveryield
from coveryield.physics.curves import MODEL_OFFSET_MEASURED_PCT

from .conftest import write_one_zone_plan

RAIN_FACTORS = (0.6, 1.0, 1.6, 2.4)


@pytest.fixture(scope="module")
def offsets(tmp_path_factory):
    rows = {}
    for factor in RAIN_FACTORS:
        folder = tmp_path_factory.mktemp(f"rain{factor}")
        table = coveryield.compare(write_one_zone_plan(folder, rain_factor=factor))
        table = table.cover_crosscheck_table().set_index("cover")
        for cover in ("forest", "pasture"):
            model, curve = table.loc[cover, "model_evap_mm"], table.loc[cover, "zhang_evap_mm"]
            rows[(factor, cover)] = (table.loc[cover, "rain_mm"], model, curve,
                                     100.0 * (model - curve) / curve)
    return rows


def test_model_offset_lies_in_the_documented_band(offsets, capsys):
    # Zhang, Dawes & Walker (2001), eq. 7, w = 2.0 (forest) and 0.5 (grass), fed with FAO-56
    # ETo; the curve itself fits 250 catchments to 6 % (abstract). The documented band is what
    # this test measures; printed for the README.
    with capsys.disabled():
        print("\nrain factor, cover: rain, model, Zhang [mm/yr], offset [%]")
        for (factor, cover), (rain, model, curve, offset) in offsets.items():
            print(f"  x{factor:<4} {cover:<8} {rain:6.0f} {model:6.0f} {curve:6.0f} {offset:+6.1f}")
    low, high = MODEL_OFFSET_MEASURED_PCT
    for key, (_, _, _, offset) in offsets.items():
        assert low <= offset <= high, key


def test_forest_minus_pasture_close_to_the_curves(offsets):
    # The cross-check's purpose: the model's forest-pasture contrast, the quantity a plan
    # changes, stays within 40 % of the curve's at every rain (ours: C)
    for factor in RAIN_FACTORS:
        _, forest_model, forest_curve, _ = offsets[(factor, "forest")]
        _, pasture_model, pasture_curve, _ = offsets[(factor, "pasture")]
        model_gap, curve_gap = forest_model - pasture_model, forest_curve - pasture_curve
        assert 0.6 * curve_gap <= model_gap <= 1.4 * curve_gap, factor
