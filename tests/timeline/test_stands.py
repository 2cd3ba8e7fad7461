"""Stage tiles of growing stands: parameters between young and mature, weights, closure."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import coveryield
from coveryield import stands
from coveryield.covers import BUILTIN_COVERS, derive_cover
from coveryield.stands import GROWTH_STAGES, StandKey, simulate_stands, stage_cover, stage_weights

from .conftest import DEMO, write_plan


def _numbers(cover):
    data = cover.model_dump(exclude={"name", "base", "description", "growth", "kc_calendar"})
    return data


def test_stage_zero_is_the_young_state_and_stage_one_the_mature_cover():
    forest, pasture = BUILTIN_COVERS["forest"], BUILTIN_COVERS["pasture"]
    assert _numbers(stage_cover(forest, pasture, 0.0)) == _numbers(pasture)
    assert _numbers(stage_cover(forest, pasture, 1.0)) == _numbers(forest)
    half = stage_cover(forest, pasture, 0.5)
    assert half.base == "forest"
    assert half.lai == pytest.approx(0.5 * (forest.lai + pasture.lai))
    assert half.height_m == pytest.approx(0.5 * (forest.height_m + pasture.height_m))
    assert half.curve_number["B"] == pytest.approx(0.5 * (55 + 61))


def test_the_canopy_store_of_a_stage_follows_its_leaf_area():
    # the store is sized from leaf area (0.2 mm per unit LAI, Dickinson 1984, as the covers
    # say); a measured store fixes capacity per LAI, which then moves from young to mature
    from coveryield.covers import derive_cover

    forest, pasture = BUILTIN_COVERS["forest"], BUILTIN_COVERS["pasture"]
    half = stage_cover(forest, pasture, 0.5)
    assert half.canopy_capacity_at(half.lai) == pytest.approx(0.2 * half.lai)
    measured = derive_cover("wet-pine", forest, {"canopy_capacity_mm": 2.4})  # 0.4 mm per LAI
    for g in (0.0, 0.25, 0.5, 1.0):
        stage = stage_cover(measured, pasture, g)
        per_lai = 0.2 + g * (0.4 - 0.2)
        assert stage.canopy_capacity_at(stage.lai) == pytest.approx(per_lai * stage.lai)


def test_stage_weights_mix_crowns_and_open_ground():
    g = np.array([0.0, 0.05, 0.33, 0.9, 1.0, np.nan])
    w = stage_weights(g)
    np.testing.assert_allclose(w[:5].sum(axis=1), 1.0)
    assert (w[5] == 0.0).all()
    assert w[0, 0] == 1.0
    # at a simulated stage: (1 - g) open ground (stage 0) + g trees of that size
    k = int(np.flatnonzero(GROWTH_STAGES == 0.05)[0])
    assert w[1, 0] == pytest.approx(0.95)
    assert w[1, k] == pytest.approx(0.05)
    assert w[4, -1] == pytest.approx(1.0)
    # between stages the tree part is split linearly: g = 0.33 lies 30 % of the way 0.3 -> 0.4
    lo, hi = np.searchsorted(GROWTH_STAGES, [0.3, 0.4])
    assert w[2, lo] == pytest.approx(0.33 * 0.7)
    assert w[2, hi] == pytest.approx(0.33 * 0.3)


@pytest.fixture(scope="module")
def one_zone_plan(tmp_path_factory):
    return coveryield.load_plan(write_plan(tmp_path_factory.mktemp("stands")))


def test_interpolated_stands_match_stands_simulated_at_their_exact_size(one_zone_plan, monkeypatch):
    # Our accuracy target for the stage grid (a design choice, no source): a stand interpolated
    # between stages differs from one simulated at its exact growth by under 1 % of the mature
    # change in the long-term mean and under 2 % in any single year.
    key = StandKey("all", "forest", "pasture")
    grid = simulate_stands(one_zone_plan, [key])
    exact_g = np.array([0.01, 0.03, 0.07, 0.12, 0.25, 0.45, 0.65, 0.85, 0.95])
    monkeypatch.setattr(stands, "GROWTH_STAGES", np.concatenate([[0.0], exact_g]))
    exact = simulate_stands(one_zone_plan, [key])
    monkeypatch.undo()
    y_grid = grid.annual["quickflow_mm"][:, 0] + grid.annual["drainage_mm"][:, 0]
    y_exact = exact.annual["quickflow_mm"][:, 0] + exact.annual["drainage_mm"][:, 0]
    mature_change = np.abs(y_grid[:, -1] - y_grid[:, 0]).mean()
    for j, g in enumerate(exact_g, start=1):
        direct = (1.0 - g) * y_exact[:, 0] + g * y_exact[:, j]
        interpolated = y_grid @ stage_weights(g)
        error = np.abs(interpolated - direct)
        assert error.mean() < 0.01 * mature_change, (g, error.mean(), mature_change)
        assert error.max() < 0.02 * mature_change, (g, error.max(), mature_change)


@pytest.fixture(scope="module")
def two_year_plan(tmp_path_factory):
    """The one-zone plan on the first two years of the demo weather (fast to simulate)."""
    folder = tmp_path_factory.mktemp("two-years")
    frame = pd.read_csv(DEMO / "climate.csv")
    frame[frame["date"] < "1993-01-01"].to_csv(folder / "climate.csv", index=False)
    return coveryield.load_plan(write_plan(folder))


covers_drawn = st.fixed_dictionaries(
    {
        "height_m": st.floats(2.0, 40.0),
        "lai": st.floats(1.0, 10.0),
        "canopy_capacity_mm": st.floats(0.0, 3.0),
        "rooting_depth_m": st.floats(0.3, 3.0),
        "rs_s_per_m": st.floats(20.0, 400.0),
        "albedo": st.floats(0.05, 0.3),
    }
)
young_drawn = st.fixed_dictionaries(
    {
        "height_m": st.floats(0.05, 1.0),
        "lai": st.floats(0.3, 4.0),
        "canopy_capacity_mm": st.floats(0.0, 1.0),
        "rooting_depth_m": st.floats(0.1, 1.5),
        "rs_s_per_m": st.floats(30.0, 300.0),
        "albedo": st.floats(0.1, 0.3),
    }
)


@settings(max_examples=25, deadline=None)
@given(covers_drawn, young_drawn)
def test_every_stage_tile_year_closes(two_year_plan, mature_values, young_values):
    # rain = evaporation + yield + storage change, to 1e-6 mm per tile-year (common practice,
    # no source: a water balance must close)
    mature = derive_cover("tree", "forest", mature_values)
    young = derive_cover("grass", "pasture", young_values)
    plan = two_year_plan.model_copy(
        update={"covers": {**two_year_plan.covers, "tree": mature, "grass": young}}
    )
    result = simulate_stands(plan, [StandKey("all", "tree", "grass")])
    a = result.annual
    evap = a["interception_mm"] + a["transpiration_mm"] + a["soil_evap_mm"] + a["open_water_mm"]
    residual = a["rain_mm"] - evap - a["quickflow_mm"] - a["drainage_mm"] - a["storage_change_mm"]
    assert np.abs(residual).max() <= 1e-6
    assert residual.shape == (2, 1, len(GROWTH_STAGES))
