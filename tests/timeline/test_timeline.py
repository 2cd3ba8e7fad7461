"""Timelines after planting against published responses, and the rules of the design."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from coveryield.errors import PlanFileError
from coveryield.schedules import Cohort, Planting, Schedule
from coveryield.timeline import TIMELINE_COLUMNS, plan_timeline, stand_keys


@pytest.fixture(scope="module")
def at_once(one_zone):
    """All pasture planted in forest in year 1, 90 years (the 30-year record three times)."""
    return one_zone.timeline("forest-100", years=90)["forest-100"].table


def test_small_change_in_year_two_most_of_it_by_year_25(at_once):
    # Brown et al. (2005, J. Hydrol. 310): after planting grassland most paired catchments reach
    # a new equilibrium in about 5-25 years and the change in the first one or two years is
    # small. Checked on the same weather year: under 30 % of the mature change in year 2, at
    # least 80 % in year 25.
    share = at_once["share_of_mature_pct"]
    assert share.loc[2] < 30.0
    assert share.loc[25] >= 80.0
    assert share.loc[1] < share.loc[10] < share.loc[25]


def test_fully_grown_planting_gives_the_mature_plans_change(one_zone, at_once):
    # By design (no source): once every stand is mature the plan is the plan `compare` reports.
    # Years 61-90 hold the whole record once more, with stands 60-90 years old.
    mature = one_zone.change(one_zone.outcome("forest-100")).yield_mm
    late = at_once.loc[61:90]
    assert late["change_mm"].mean() == pytest.approx(mature, rel=0.01)
    np.testing.assert_allclose(late["change_mm"], late["mature_change_mm"], rtol=0.01)


def test_staged_demo_programme_ends_at_the_mature_plan(demo):
    plan = demo.timeline("plant-upper", years=90)["plant-upper"]
    late = plan.table.loc[61:90, "change_mm"].mean()
    assert late == pytest.approx(plan.mature_change_mm, rel=0.01)
    assert plan.mature_change_mm == pytest.approx(demo.change(demo.outcome("plant-upper")).yield_mm)


def test_felling_raises_the_yield_which_recovers_as_the_stand_regrows(one_zone, at_once):
    # Bosch & Hewlett (1982; from memory): yield rises after clear-felling; Brown et al. (2005):
    # the rise fades as the stand regrows. Compared on the same weather with the unfelled stand.
    felled = Schedule(
        plantings=(
            Planting(
                zone="all", cover="forest", replaces="pasture", share=1.0, year=1, harvest_year=31
            ),
        )
    )
    table = one_zone.timeline("forest-100", years=90, schedules={"forest-100": felled})[
        "forest-100"
    ].table
    rise = (table["yield_mm"] - at_once["yield_mm"]).loc[25:90]
    assert (rise.loc[25:30] == 0.0).all()  # before felling: the same stand
    mature = -at_once["mature_change_mm"]
    assert rise.loc[31] > 0.7 * mature.loc[31]  # nearly the whole forest effect comes back
    assert (rise.loc[31:90] >= -1e-9).all()
    assert rise.loc[46:55].mean() < 0.25 * rise.loc[31:35].mean()  # mostly recovered in 15-25 yr
    assert rise.loc[71:90].mean() < 0.03 * rise.loc[31:35].mean()


def test_rotation_fells_again_and_again(one_zone):
    rotated = Schedule(
        plantings=(
            Planting(
                zone="all", cover="forest", replaces="pasture", share=1.0, year=1, rotation_years=20
            ),
        )
    )
    table = one_zone.timeline("forest-100", years=60, schedules={"forest-100": rotated})[
        "forest-100"
    ].table
    np.testing.assert_allclose(table.loc[[1, 21, 41], "mean_stand_age_yr"], 0.5)
    shares = table["share_of_mature_pct"]
    assert shares.loc[21] < 0.5 * shares.loc[20]
    assert shares.loc[41] < 0.5 * shares.loc[40]


def test_weather_years_are_cycled_in_order(one_zone):
    timeline = one_zone.timeline("forest-50", years=45, start_year=2030)
    table = timeline["forest-50"].table
    record = list(one_zone.years)
    assert timeline.cycles_weather
    assert table.loc[1, "weather_year"] == record[0]
    assert table.loc[31, "weather_year"] == record[0]
    assert table.loc[45, "weather_year"] == record[14]
    assert list(table["year"]) == list(range(2030, 2075))
    current = timeline.current
    np.testing.assert_allclose(current.loc[31, "yield_mm"], current.loc[1, "yield_mm"])
    compare_current = one_zone.outcome("current").annual["yield_mm"].to_numpy()
    np.testing.assert_allclose(current["yield_mm"].to_numpy()[:30], compare_current)


def test_change_is_linear_in_the_share_planted(one_zone):
    # Tiles are mixed by area, so planting half the area gives half the change, year by year
    # (a property of the design, no source).
    timeline = one_zone.timeline(["forest-50", "forest-100"], years=30)
    np.testing.assert_allclose(
        timeline["forest-50"].table["change_mm"],
        0.5 * timeline["forest-100"].table["change_mm"],
        rtol=1e-9,
        atol=1e-9,
    )


def test_every_timeline_year_closes(demo):
    # rain = evaporation + yield + storage change over the catchment (1e-6 mm; common practice)
    table = demo.timeline(years=60).table()
    residual = table["rain_mm"] - table["evap_mm"] - table["yield_mm"] - table["storage_change_mm"]
    assert np.abs(residual).max() <= 1e-6
    assert list(table.columns) == list(TIMELINE_COLUMNS)
    assert list(table["plan"].unique()) == demo.plan_names


cohorts_drawn = st.lists(
    st.tuples(
        st.floats(0.01, 0.2),
        st.integers(1, 25),
        st.one_of(st.none(), st.integers(2, 40)),
        st.one_of(st.none(), st.integers(1, 30)),
    ),
    min_size=1,
    max_size=5,
)


@settings(max_examples=40, deadline=None)
@given(cohorts_drawn)
def test_closure_holds_for_any_cohorts(one_zone, drawn):
    planted = [
        Cohort(
            "all",
            "forest",
            "pasture",
            "pasture",
            share,
            year,
            rotation,
            None if harvest is None else year + harvest,
        )
        for share, year, rotation, harvest in drawn
    ]
    stands = one_zone.stand_results(stand_keys(planted))
    table = plan_timeline(one_zone, "forest-100", None, planted, stands, 30, 2000).table
    residual = table["rain_mm"] - table["evap_mm"] - table["yield_mm"] - table["storage_change_mm"]
    assert np.abs(residual).max() <= 1e-6
    expected_area = 100.0 * sum(share for share, year, *_ in drawn if year <= 30)
    assert table["planted_pct"].iloc[-1] == pytest.approx(expected_area)


def test_new_schedules_and_horizons_never_rerun_the_daily_loop(demo, monkeypatch):
    import coveryield.engine.kernels as kernels

    demo.timeline(years=30)  # every stand the file needs, simulated once

    def forbidden(*args, **kwargs):
        raise AssertionError("the daily loop ran for a schedule change")

    for name in ("run_tiles", "run_tiles_annual", "run_tiles_daily"):
        monkeypatch.setattr(kernels, name, forbidden)
    schedule = demo.plan_file.schedules["plant-upper"]
    for edited in (schedule.spread_over(3), schedule.shifted(5), schedule.with_rotation(18)):
        demo.timeline("plant-upper", years=45, schedules={"plant-upper": edited})
    demo.timeline(years=12)


def test_unknown_plan_and_bad_lengths_are_refused(demo):
    with pytest.raises(PlanFileError, match="no plan 'plant-everything'"):
        demo.timeline("plant-everything")
    with pytest.raises(PlanFileError, match="no plan 'current'"):
        demo.timeline("current")
    for years in (0, 2.5, True):
        with pytest.raises(PlanFileError, match="expected a whole number of years"):
            demo.timeline(years=years)


def test_a_schedule_given_from_python_is_checked_like_the_file(demo):
    bad = Schedule(
        plantings=(Planting(zone="upper", cover="forest", replaces="pasture", share=0.8, year=1),)
    )
    with pytest.raises(PlanFileError, match="exceed the zone"):
        demo.timeline("plant-upper", schedules={"plant-upper": bad})
