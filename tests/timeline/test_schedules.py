"""Schedules in plan files: reading, writing back, cohorts, ages, one clear message per mistake."""

from __future__ import annotations

import numpy as np
import pytest

from coveryield.errors import PlanFileError
from coveryield.plans import load_plan, write_plan_file
from coveryield.schedules import (
    Cohort,
    Planting,
    Schedule,
    base_shares_by_year,
    check_fits_timeline,
    cohorts,
    implicit_schedule,
    young_state,
)

from .conftest import DEMO

DEMO_TEXT = (DEMO / "plans.toml").read_text(encoding="utf-8")


@pytest.fixture
def write_demo(tmp_path):
    """Write the demo plan text (edited) beside a stub climate file; return its path."""

    def write(text: str = DEMO_TEXT):
        (tmp_path / "climate.csv").write_text("date,rain_mm\n", encoding="utf-8")
        path = tmp_path / "plans.toml"
        path.write_text(text, encoding="utf-8")
        return path

    return write


def test_demo_schedules_are_read(write_demo):
    plan_file = load_plan(write_demo())
    staged = plan_file.schedules["plant-upper"]
    assert [p.zone for p in staged.plantings] == ["upper"]
    planting = staged.plantings[0]
    assert (planting.share_each_year, planting.year, planting.last_year) == (0.10, 1, 6)
    assert planting.total_share == pytest.approx(0.60)
    both = plan_file.schedules["plant-upper-and-middle"]
    assert both.plantings[1].share_each_year == pytest.approx(0.10)  # share = 0.4 over 4 years
    assert {p.rotation_years for p in both.plantings} == {25}
    assert plan_file.covers["young-pine"].growth is None  # growth = false: a fixed stage
    assert plan_file.covers["riparian-natives"].growth is not None  # inherits forest's


def test_schedules_survive_writing_and_reading_back(write_demo, tmp_path):
    plan_file = load_plan(write_demo())
    copy = write_plan_file(plan_file, tmp_path / "copy.toml")
    again = load_plan(copy)
    assert again.schedules == plan_file.schedules
    assert again.covers == plan_file.covers


def test_growth_table_on_a_derived_cover_updates_the_parents(write_demo):
    text = DEMO_TEXT.replace(
        "[covers.riparian-natives]",
        '[covers.fast-gum]\nbase = "forest"\n[covers.fast-gum.growth]\nmaturity_years = 8\n'
        "rotation_years = 12\n\n[covers.riparian-natives]",
    )
    growth = load_plan(write_demo(text)).covers["fast-gum"].growth
    assert (growth.maturity_years, growth.shape, growth.rotation_years) == (8.0, 1.5, 12)


def test_cohorts_one_per_planting_year_with_the_covers_rotation(write_demo):
    plan_file = load_plan(write_demo())
    planted = cohorts(plan_file.schedules["plant-upper-and-middle"], plan_file.covers)
    assert [c.planted_year for c in planted] == [1, 2, 3, 4, 5, 6, 7, 8, 9, 10]
    assert {c.start for c in planted} == {"pasture"}  # planted into pasture: starts from it
    assert all(c.rotation_years == 25 for c in planted)


def test_ages_at_mid_year_with_rotation_and_harvest():
    years = np.arange(1, 13)
    plain = Cohort("z", "forest", "pasture", "pasture", 0.1, planted_year=3)
    np.testing.assert_array_equal(plain.ages(years)[:2], [np.nan, np.nan])
    assert plain.ages(years)[2] == 0.5  # planting year: half a year old at mid-year
    assert plain.ages(years)[11] == 9.5
    felled = Cohort("z", "forest", "pasture", "pasture", 0.1, planted_year=1, rotation_years=4)
    np.testing.assert_array_equal(
        felled.ages(years)[:9], [0.5, 1.5, 2.5, 3.5, 0.5, 1.5, 2.5, 3.5, 0.5]
    )
    once = Cohort("z", "forest", "pasture", "pasture", 0.1, planted_year=1, harvest_year=6)
    np.testing.assert_array_equal(once.ages(years)[4:7], [4.5, 0.5, 1.5])


def test_young_state_rules(write_demo):
    covers = load_plan(write_demo()).covers
    forest = covers["forest"]
    assert young_state(forest, "pasture", covers) == "pasture"
    assert young_state(forest, "crop", covers) == "pasture"  # not grass: the fallback
    assert young_state(forest, "forest", covers) == "pasture"  # felled forest regrows from grass
    started = forest.model_copy(
        update={"growth": forest.growth.model_copy(update={"start": "pasture"})}
    )
    assert young_state(started, "crop", covers) == "pasture"


def test_plan_without_schedule_is_made_at_once_in_year_one(write_demo):
    plan_file = load_plan(write_demo())
    schedule = implicit_schedule(plan_file, "riparian-strips")
    assert {(p.zone, p.cover, p.replaces, p.year, p.years) for p in schedule.plantings} == {
        ("middle", "riparian-natives", "pasture", 1, 1),
        ("lower", "riparian-natives", "pasture", 1, 1),
    }
    assert all(p.total_share == pytest.approx(0.10) for p in schedule.plantings)
    assert (
        implicit_schedule(plan_file.with_plan("same", plan_file.plans["current"]), "same") is None
    )


def test_base_shares_follow_the_plantings(write_demo):
    plan_file = load_plan(write_demo())
    planted = cohorts(plan_file.schedules["plant-upper"], plan_file.covers)
    shares = base_shares_by_year(plan_file.plans["current"], planted, 8)
    np.testing.assert_allclose(
        shares["upper"]["pasture"], [0.62, 0.52, 0.42, 0.32, 0.22, 0.12, 0.12, 0.12]
    )
    np.testing.assert_allclose(shares["upper"]["forest"], 0.25)  # stands are held apart


def test_respacing_shifting_and_rotation_keep_the_total():
    schedule = Schedule(
        plantings=(
            Planting(
                zone="z", cover="forest", replaces="pasture", share_per_year=0.1, year=2, years=6
            ),
        )
    )
    spread = schedule.spread_over(3)
    assert spread.plantings[0].share_each_year == pytest.approx(0.2)
    assert spread.plantings[0].total_share == pytest.approx(0.6)
    assert schedule.shifted(5).plantings[0].year == 5
    assert schedule.with_rotation(30).plantings[0].rotation_years == 30


# ---- mistakes: one message each, with key path, value and what was expected -------------

STAGED = "share_per_year = 0.10\nyear = 1\nyears = 6\n\n[schedules.plant-upper-and-middle]"

BAD_SCHEDULES = [
    # shares that would exceed the zone
    (
        "exceeds-the-zone",
        STAGED,
        STAGED.replace("0.10", "0.15"),
        [
            "schedules.plant-upper",
            "by year 5",
            "0.75 of zone upper from pasture",
            "only 0.72",
            "exceed the zone",
        ],
    ),
    # a harvest before planting
    (
        "harvest-before-planting",
        STAGED,
        STAGED.replace("years = 6", "years = 6\nharvest_year = 4"),
        [
            "schedules.plant-upper.plantings[1]",
            "harvest_year = 4",
            "not after the planting",
            "from 7 on",
        ],
    ),
    # a non-forest cover given a trajectory
    (
        "growth-on-grass",
        "[covers.riparian-natives]",
        '[covers.tall-grass]\nbase = "pasture"\n[covers.tall-grass.growth]\nmaturity_years = 3\n'
        "[covers.riparian-natives]",
        [
            "covers.tall-grass.growth = { maturity_years = 3 }",
            "only for covers that derive from forest",
            "derives from pasture",
        ],
    ),
    (
        "plantings-miss-the-plan",
        STAGED,
        STAGED.replace("0.10", "0.05"),
        [
            "schedules.plant-upper",
            "after every planting zone upper has",
            "pasture = 0.42",
            "plans.plant-upper.upper is",
            "lead from plans.current",
        ],
    ),
    (
        "unknown-zone",
        'zone = "upper"',
        'zone = "uper"',
        [
            'schedules.plant-upper.plantings[1].zone = "uper"',
            "unknown zone",
            "upper, middle, lower",
        ],
    ),
    (
        "unknown-cover",
        'cover = "forest"',
        'cover = "pine"',
        ['schedules.plant-upper.plantings[1].cover = "pine"', "unknown cover", "young-pine"],
    ),
    (
        "share-and-share-per-year",
        "share_per_year = 0.10\nyear = 1\nyears = 6\n\n[schedules.",
        "share_per_year = 0.10\nshare = 0.6\nyear = 1\nyears = 6\n\n[schedules.",
        ["schedules.plant-upper.plantings[1]", "either share", "not both"],
    ),
    (
        "year-as-text",
        "year = 7",
        'year = "7"',
        ['schedules.plant-upper-and-middle.plantings[2].year = "7"', "a whole number"],
    ),
    (
        "year-zero",
        "year = 7",
        "year = 0",
        ["schedules.plant-upper-and-middle.plantings[2].year = 0", "from 1"],
    ),
    (
        "unknown-planting-key",
        "year = 7",
        "year = 7\nspacing_m = 3",
        ["plantings[2].spacing_m = 3", "unknown key", "rotation_years"],
    ),
    (
        "schedule-for-unknown-plan",
        "schedules.plant-upper",
        "schedules.plant-uper",
        ["schedules.plant-uper", "no plan of that name", "plant-upper, plant-upper-young"],
    ),
    (
        "schedule-for-current",
        "schedules.plant-upper",
        "schedules.current",
        ["schedules.current", "the baseline has no schedule"],
    ),
    (
        "rotation-on-a-fixed-cover",
        'cover = "forest"\nreplaces = "pasture"\nshare = 0.40',
        'cover = "young-pine"\nreplaces = "pasture"\nshare = 0.40',
        ["plantings[2].rotation_years = 25", "young-pine does not grow"],
    ),
    (
        "growth-start-not-grass",
        "[covers.riparian-natives]",
        '[covers.gum]\nbase = "forest"\ngrowth = { start = "crop" }\n[covers.riparian-natives]',
        ['covers.gum.growth.start = "crop"', "derives from pasture"],
    ),
    (
        "unknown-growth-key",
        "[covers.riparian-natives]",
        '[covers.gum]\nbase = "forest"\ngrowth = { maturity = 9 }\n[covers.riparian-natives]',
        ["covers.gum.growth.maturity = 9", "unknown key", "maturity_years, shape"],
    ),
    (
        "no-plantings",
        "[[schedules.plant-upper.plantings]]",
        "[schedules.plant-upper.extra]",
        ["schedules.plant-upper", "at least one [[schedules.plant-upper.plantings]]"],
    ),
]


@pytest.mark.parametrize(
    ("replace", "by", "fragments"),
    [case[1:] for case in BAD_SCHEDULES],
    ids=[c[0] for c in BAD_SCHEDULES],
)
def test_bad_schedule_gives_one_clear_message(write_demo, replace, by, fragments):
    assert replace in DEMO_TEXT
    # a schedule's name is in its table header and in its plantings' headers: rename both
    count = 2 if replace == "schedules.plant-upper" else 1
    with pytest.raises(PlanFileError) as caught:
        load_plan(write_demo(DEMO_TEXT.replace(replace, by, count)))
    message = str(caught.value)
    assert "Traceback" not in message
    assert "plans.toml has 1 problem:" in message  # one message, not a cascade
    for fragment in fragments:
        assert fragment in message, (fragment, message)


def test_planting_year_outside_the_timeline(write_demo):
    plan_file = load_plan(write_demo())
    schedule = plan_file.schedules["plant-upper-and-middle"]
    check_fits_timeline(plan_file, "plant-upper-and-middle", schedule, 10)  # years 1 to 10: fine
    with pytest.raises(PlanFileError) as caught:
        check_fits_timeline(plan_file, "plant-upper-and-middle", schedule, 9)
    message = str(caught.value)
    for fragment in (
        "schedules.plant-upper-and-middle.plantings[2].years = 4",
        "outside the timeline of 9 years",
        "years 7 to 10",
        "from 1 to 9",
    ):
        assert fragment in message


def test_schedule_problems_are_listed_with_problems_elsewhere(write_demo):
    text = DEMO_TEXT.replace("area_km2 = 48.0", "area_km2 = -48.0").replace("year = 7", "year = 0")
    with pytest.raises(PlanFileError) as caught:
        load_plan(write_demo(text.replace(STAGED, STAGED.replace("0.10", "0.15"), 1)))
    message = str(caught.value)
    assert "has 3 problems" in message
    for fragment in ("catchment.area_km2 = -48.0", "plantings[2].year = 0", "exceed the zone"):
        assert fragment in message
