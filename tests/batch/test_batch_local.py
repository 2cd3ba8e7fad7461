"""`coveryield batch` on a local Dask cluster: outputs, failures, exit status, resume."""

from __future__ import annotations

import filecmp
import os

import pandas as pd
import pytest

import coveryield
from coveryield.batchrun import layout
from coveryield.batchrun.runner import BatchFailureWarning, run_batch
from coveryield.cli import main
from coveryield.reports import OUTPUT_FILES

from .checks import assert_rows_equal_compare
from .conftest import GOOD

pytestmark = pytest.mark.slow


def compare_out(plan, folder):
    """What `compare --out` writes for one plan file."""
    assert main(["compare", str(plan), "--out", str(folder)]) == 0
    return folder


def test_local_cluster_batch_writes_tables_folders_and_failures(batch_dir, tmp_path, capsys):
    out = tmp_path / "out"
    status = main(["batch", str(batch_dir), "--out", str(out), "--workers", "2"])
    printed = capsys.readouterr()
    assert status == 3  # one plan file failed, the others ran

    table = pd.read_csv(out / "batch.csv", float_precision="round_trip")
    assert table["catchment"].unique().tolist() == ["Alpha Creek", "Beta Creek"]
    assert_rows_equal_compare(table, [batch_dir / f"{name}.toml" for name in GOOD])
    parquet = pd.read_parquet(out / "batch.parquet")
    pd.testing.assert_frame_equal(parquet, table, check_exact=True)

    failures = pd.read_csv(out / "failures.csv")
    assert failures["plan_file"].tolist() == [str(batch_dir / "broken.toml")]
    with pytest.raises(coveryield.CoveryieldError) as caught:
        coveryield.compare(batch_dir / "broken.toml")
    assert failures["message"].iloc[0] == str(caught.value)  # compare's own message

    for name in GOOD:  # each folder exactly as `compare --out` writes it
        reference = compare_out(batch_dir / f"{name}.toml", tmp_path / f"ref-{name}")
        written = sorted(p.name for p in (out / name).iterdir())
        assert written == sorted(p.name for p in reference.iterdir())
        same = [f for f in OUTPUT_FILES if f != "report.html"]  # svg ids are random per drawing
        match, mismatch, errors = filecmp.cmpfiles(out / name, reference, same, shallow=False)
        assert (mismatch, errors) == ([], [])
    assert not (out / "broken").exists()

    assert "2 of 3 catchments done" in printed.out
    assert "1 failed" in printed.out
    assert "CAUTION" in printed.out
    assert "broken.toml" in printed.err
    assert "sum to 1.1" in printed.err


def test_resume_redoes_a_half_written_catchment_and_keeps_the_rest(batch_dir, tmp_path, capsys):
    out = tmp_path / "out"
    assert main(["batch", str(batch_dir), "--out", str(out), "--workers", "1"]) == 3
    first = pd.read_csv(out / "batch.csv", float_precision="round_trip")
    # alpha half-written: its report missing and its summary cut short; a write left a leftover
    (out / "alpha" / "report.html").unlink()
    (out / "alpha" / "summary.json").write_text('{"catchment": ')
    leftover = out / ".alpha-interrupted"
    leftover.mkdir()
    (leftover / "annual.csv").write_text("year,")
    beta_summary = out / "beta" / "summary.json"
    beta_stamp = beta_summary.stat().st_mtime_ns
    capsys.readouterr()

    status = main(["batch", str(batch_dir), "--out", str(out), "--resume", "--workers", "1"])
    assert status == 3  # broken.toml still fails
    assert "(1 run now, 1 already complete), 1 failed" in capsys.readouterr().out
    assert sorted(p.name for p in (out / "alpha").iterdir()) == sorted(layout.catchment_files())
    assert beta_summary.stat().st_mtime_ns == beta_stamp  # complete: not touched
    assert not leftover.exists()
    again = pd.read_csv(out / "batch.csv", float_precision="round_trip")
    pd.testing.assert_frame_equal(again, first, check_exact=True)


def test_resume_redoes_a_catchment_whose_plan_file_changed(good_dir, tmp_path, threads_client):
    out = tmp_path / "out"
    run_batch(good_dir, client=threads_client, out=out)
    alpha_stamp = (out / "alpha" / "summary.json").stat().st_mtime_ns
    plan = good_dir / "beta.toml"
    plan.write_text(plan.read_text().replace('name = "Beta Creek"', 'name = "Beta Creek East"'))

    again = run_batch(good_dir, client=threads_client, out=out, resume=True)
    assert (again.n_ran, again.n_skipped) == (1, 1)
    assert (out / "alpha" / "summary.json").stat().st_mtime_ns == alpha_stamp
    table = pd.read_csv(out / "batch.csv", float_precision="round_trip")
    assert table["catchment"].unique().tolist() == ["Alpha Creek", "Beta Creek East"]
    assert_rows_equal_compare(table, [good_dir / "alpha.toml", plan])


def test_resume_with_nothing_left_starts_no_cluster(good_dir, tmp_path, threads_client):
    out = tmp_path / "out"
    run_batch(good_dir, client=threads_client, out=out)
    again = run_batch(good_dir, out=out, resume=True, scheduler="tcp://127.0.0.1:9")
    assert (again.n_ran, again.n_skipped, again.n_workers) == (0, 2, 0)


def test_api_returns_a_table_and_reports_failures(batch_dir, threads_client, tmp_path):
    with pytest.warns(BatchFailureWarning, match=r"1 of 3 plan files.*broken\.toml"):
        table = coveryield.batch(batch_dir, client=threads_client)
    assert table["plan_file"].map(os.path.basename).unique().tolist() == [
        "alpha.toml",
        "beta.toml",
    ]
    assert table.attrs["failures"]["plan_file"].tolist() == [str(batch_dir / "broken.toml")]
    assert_rows_equal_compare(table, [batch_dir / f"{name}.toml" for name in GOOD])
    assert not (tmp_path / "out").exists()  # nothing written without `out`


def test_a_list_of_files_and_a_progress_bar(good_dir, threads_client, capsys):
    files = [good_dir / "beta.toml", good_dir / "alpha.toml"]
    run = run_batch(files, client=threads_client, progress=True)
    assert run.table["catchment"].unique().tolist() == ["Beta Creek", "Alpha Creek"]  # as given
    assert "catchments: 100%" in capsys.readouterr().err
    assert len(run.task_seconds) == 2


def test_an_unexpected_error_in_one_catchment_does_not_stop_the_batch(
    good_dir, threads_client, monkeypatch
):
    import coveryield.comparison

    real_compare = coveryield.comparison.compare

    def compare_with_a_bug(plan, **kwargs):
        if "Beta" in plan.catchment.name:
            raise ZeroDivisionError("simulated bug")
        return real_compare(plan, **kwargs)

    monkeypatch.setattr(coveryield.comparison, "compare", compare_with_a_bug)
    run = run_batch(good_dir, client=threads_client)
    assert run.table["catchment"].unique().tolist() == ["Alpha Creek"]
    message = run.failures["message"].iloc[0]
    assert "ZeroDivisionError: simulated bug" in message
    assert "please report it" in message
