"""The batch table's rows and the output folder's rules, without a cluster."""

from __future__ import annotations

import json
import math

import numpy as np

import pytest

import coveryield
from coveryield.batchrun import layout
from coveryield.batchrun.rows import REQUIRED_COLUMNS, batch_table, summary_rows
from coveryield.errors import BatchError, OutputError
from coveryield.reports import rounded_record

from .conftest import make_batch_folder


@pytest.fixture(scope="module")
def alpha(tmp_path_factory):
    folder = make_batch_folder(tmp_path_factory.mktemp("rows"), broken=False)
    return coveryield.compare(folder / "alpha.toml")


def test_rows_carry_every_summary_figure_unchanged(alpha):
    summary = alpha.summary()
    rows = summary_rows(summary, "alpha.toml")
    assert [row["plan"] for row in rows] == alpha.plan_names
    for row in rows:
        figures = summary["plans"][row["plan"]]
        for key, value in figures.items():
            if isinstance(value, (list, dict)):
                continue  # monthly series stay in the catchment's own folder
            if value is None or value == "":
                assert np.isnan(row[key]), key  # missing text reads back the same from CSV
                continue
            assert row[key] == value, key  # the same float, not recomputed
        assert row["catchment"] == "Alpha Creek"
        assert row["plan_file"] == "alpha.toml"
        assert row["area_km2"] == 48.0
        assert (row["first_year"], row["last_year"], row["n_years"]) == (1991, 1993, 3)


def test_table_has_the_required_columns_in_a_fixed_order(alpha):
    table = batch_table(summary_rows(alpha.summary(), "alpha.toml"))
    assert set(REQUIRED_COLUMNS) <= set(table.columns)
    assert list(table.columns[:3]) == ["catchment", "plan_file", "plan"]
    assert list(table.columns[-4:]) == ["area_km2", "first_year", "last_year", "n_years"]
    current = table[table["plan"] == "current"].iloc[0]
    assert math.isnan(current["change_mm"])  # no change of `current` against itself
    change = alpha.change(alpha.outcome("plant-upper"))
    row = table[table["plan"] == "plant-upper"].iloc[0]
    assert row["change_mm"] == change.yield_mm
    assert row["q95_change_pct"] == change.q95_pct


def test_an_empty_table_still_names_every_required_column():
    assert set(REQUIRED_COLUMNS) <= set(batch_table([]).columns)


def test_plan_files_are_found_below_the_folder_but_not_hidden_or_in_out(tmp_path):
    (tmp_path / "north").mkdir()
    (tmp_path / ".git").mkdir()
    (tmp_path / "out").mkdir()
    for name in ("a.toml", "north/b.toml", ".git/c.toml", "out/d.toml", ".e.toml", "f.txt"):
        (tmp_path / name).write_text("")
    found = layout.find_plan_files(tmp_path, skip=tmp_path / "out")
    assert [p.relative_to(tmp_path).as_posix() for p in found] == ["a.toml", "north/b.toml"]
    assert layout.output_names(found, tmp_path) == ["a", "north/b"]


def test_a_folder_without_plan_files_is_a_usage_error(tmp_path):
    with pytest.raises(BatchError, match=r"no plan files \(\*\.toml\)"):
        layout.find_plan_files(tmp_path)
    with pytest.raises(BatchError, match="does not exist"):
        layout.find_plan_files(tmp_path / "missing")


def test_output_names_that_would_clash_are_refused(tmp_path):
    (tmp_path / "north").mkdir()
    north, inner = tmp_path / "north.toml", tmp_path / "north" / "b.toml"
    with pytest.raises(BatchError, match="inside the folder of"):
        layout.output_names([north, inner], tmp_path)
    with pytest.raises(BatchError, match="listed twice"):
        layout.output_names([north, north], tmp_path)
    with pytest.raises(BatchError, match="batch table"):
        layout.output_names([tmp_path / "batch.csv.toml"], tmp_path)


def test_out_must_be_new_empty_or_an_earlier_batch(tmp_path):
    assert layout.check_out(tmp_path / "new", resume=False) == tmp_path / "new"
    assert not (tmp_path / "new").exists()  # checking creates nothing
    mine = tmp_path / "mine"
    mine.mkdir()
    (mine / "notes.txt").write_text("keep me")
    with pytest.raises(OutputError, match="not empty.*--resume"):
        layout.check_out(mine, resume=False)
    with pytest.raises(OutputError, match="holds no earlier batch"):
        layout.check_out(mine, resume=True)
    layout.create_out(tmp_path / "earlier")
    (tmp_path / "earlier" / "batch.csv").write_text("")
    assert layout.check_out(tmp_path / "earlier", resume=True) == tmp_path / "earlier"


def test_a_folder_is_complete_only_with_every_file_and_a_readable_summary(alpha, tmp_path):
    target = layout.write_catchment(alpha, tmp_path / "alpha")
    assert sorted(p.name for p in target.iterdir()) == sorted(layout.catchment_files())
    assert layout.read_summary(target)["catchment"]["name"] == "Alpha Creek"
    (target / "summary.json").write_text('{"catchment": {"name": "Alpha')
    assert layout.read_summary(target) is None
    layout.write_catchment(alpha, target)  # redone in place: ours, incomplete
    # summary.json holds the summary rounded by unit, as `compare --out` writes it
    assert json.loads((target / "summary.json").read_text()) == json.loads(
        json.dumps(rounded_record(alpha.summary()))
    )
    (target / "report.html").unlink()
    assert layout.read_summary(target) is None


def test_a_catchment_folder_with_foreign_files_is_never_replaced(alpha, tmp_path):
    target = tmp_path / "alpha"
    target.mkdir()
    (target / "notes.txt").write_text("mine")
    with pytest.raises(OutputError, match="did not write"):
        layout.write_catchment(alpha, target)
    assert [p.name for p in target.iterdir()] == ["notes.txt"]


def test_only_hidden_leftovers_of_our_own_files_are_swept(tmp_path):
    leftover = tmp_path / ".alpha-k2j4h5"
    leftover.mkdir()
    (leftover / "annual.csv").write_text("partial")
    foreign = tmp_path / ".cache"
    foreign.mkdir()
    (foreign / "other.bin").write_text("x")
    assert layout.sweep_leftovers(tmp_path, ["alpha"]) == [leftover]
    assert foreign.is_dir()


def test_the_fingerprint_follows_plan_and_climate(tmp_path):
    folder = make_batch_folder(tmp_path, broken=False)
    plan, climate = folder / "alpha.toml", folder / "climate.csv"
    first = layout.input_fingerprint(plan, climate)
    assert layout.input_fingerprint(plan, climate) == first
    climate.write_text(climate.read_text().replace("1991-01-01,0.0", "1991-01-01,0.1", 1))
    assert layout.input_fingerprint(plan, climate) != first
