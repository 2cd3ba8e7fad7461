"""The timeline command: outputs, the report, and bad input answered with exit 2 and no files."""

from __future__ import annotations

import html
import re
import shutil

import pandas as pd
import pytest

from coveryield.cli import main
from coveryield.comparison import CAUTION
from coveryield.timeline import TIMELINE_COLUMNS

from .conftest import DEMO

DEMO_TEXT = (DEMO / "plans.toml").read_text(encoding="utf-8")


@pytest.fixture(scope="module")
def written(tmp_path_factory):
    out = tmp_path_factory.mktemp("timeline") / "out"
    assert main(["timeline", str(DEMO / "plans.toml"), "--years", "40", "--out", str(out)]) == 0
    return out


def test_outputs_are_written(written):
    assert sorted(p.name for p in written.iterdir()) == [
        "README.txt",
        "report.html",
        "timeline.csv",
        "written-by-coveryield.json",
    ]
    table = pd.read_csv(written / "timeline.csv")
    assert list(table.columns) == list(TIMELINE_COLUMNS)
    assert table["plan"].iloc[0] == "current"
    assert set(table["plan"]) == {
        "current",
        "plant-upper",
        "plant-upper-young",
        "plant-upper-and-middle",
        "riparian-strips",
    }
    assert table.groupby("plan").size().eq(40).all()
    assert table.loc[table["years_since_start"] == 31, "weather_year"].eq(1991).all()
    readme = (written / "README.txt").read_text(encoding="utf-8")
    assert "cycled" in readme
    assert CAUTION in readme


def test_report_has_caution_charts_units_and_no_external_references(written):
    page = (written / "report.html").read_text(encoding="utf-8")
    caution = html.escape(CAUTION)
    assert page.find(caution) < page.find("<table") < page.rfind(caution)
    assert page.count("<svg") == 3
    for text in (
        "change against current [mm/yr]",
        "once mature",
        "years since the start",
        "mm/yr",
        "% of catchment",
        "Chapman",
        "Soil water is not carried over",
        "used again in the same order",
    ):
        assert text in page, text
    # the only addresses an inline SVG may carry are its namespace declarations (W3C)
    addresses = set(re.findall(r"https?://[^\s\"'<>)]+", page))
    assert addresses <= {"http://www.w3.org/2000/svg", "http://www.w3.org/1999/xlink"}
    assert "<script" not in page


def test_summary_printed_and_plans_filtered(tmp_path, capsys):
    assert (
        main(["timeline", str(DEMO / "plans.toml"), "--plan", "plant-upper", "--years", "12"]) == 0
    )
    out = capsys.readouterr().out
    assert "plant-upper " in out
    assert "riparian-strips" not in out
    assert "yrs 11-12" in out
    assert "licensed hydrological practice" in out
    assert not any(tmp_path.iterdir())


def test_an_empty_folder_is_used_and_a_full_one_refused(tmp_path, capsys):
    empty = tmp_path / "empty"
    empty.mkdir()
    assert main(["timeline", str(DEMO / "plans.toml"), "--years", "12", "--out", str(empty)]) == 0
    assert (empty / "timeline.csv").exists()
    full = tmp_path / "full"
    full.mkdir()
    (full / "mine.txt").write_text("keep me")
    assert main(["timeline", str(DEMO / "plans.toml"), "--years", "12", "--out", str(full)]) == 2
    assert "folder is not empty" in capsys.readouterr().err
    assert [p.name for p in full.iterdir()] == ["mine.txt"]


STAGED = "share_per_year = 0.10\nyear = 1\nyears = 6\n\n[schedules.plant-upper-and-middle]"

BAD_INPUTS = [
    (
        "planting-year-outside-the-timeline",
        "year = 7",
        "year = 35",
        [],
        ["schedules.plant-upper-and-middle.plantings[2].year = 35", "outside the timeline of 30"],
    ),
    (
        "planting-outside-a-short-timeline",
        "",
        "",
        ["--years", "8"],
        ["plantings[2].years = 4", "outside the timeline of 8 years"],
    ),
    (
        "shares-exceed-the-zone",
        STAGED,
        STAGED.replace("0.10", "0.15"),
        [],
        ["schedules.plant-upper", "exceed the zone"],
    ),
    (
        "harvest-before-planting",
        STAGED,
        STAGED.replace("years = 6", "years = 6\nharvest_year = 3"),
        [],
        ["schedules.plant-upper.plantings[1]", "harvest_year = 3", "not after the planting"],
    ),
    (
        "non-forest-cover-given-a-trajectory",
        "[covers.riparian-natives]",
        '[covers.tall-grass]\nbase = "pasture"\ngrowth = { maturity_years = 3 }\n'
        "[covers.riparian-natives]",
        [],
        ["covers.tall-grass.growth", "only for covers that derive from forest"],
    ),
]


@pytest.mark.parametrize(
    ("replace", "by", "options", "fragments"),
    [c[1:] for c in BAD_INPUTS],
    ids=[c[0] for c in BAD_INPUTS],
)
def test_bad_input_exit_2_one_message_nothing_written(
    tmp_path, capsys, replace, by, options, fragments
):
    shutil.copy(DEMO / "climate.csv", tmp_path / "climate.csv")
    plan = tmp_path / "plans.toml"
    plan.write_text(DEMO_TEXT.replace(replace, by, 1), encoding="utf-8")
    out = tmp_path / "out"
    assert main(["timeline", str(plan), *options, "--out", str(out)]) == 2
    captured = capsys.readouterr()
    assert captured.err.startswith("coveryield timeline: error: ")
    assert "Traceback" not in captured.err
    assert "has 1 problem" in captured.err
    for fragment in fragments:
        assert fragment in captured.err, (fragment, captured.err)
    assert not out.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["climate.csv", "plans.toml"]
