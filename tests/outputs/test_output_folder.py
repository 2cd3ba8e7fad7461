"""Output folders: inputs and files coveryield did not write are never replaced, checks come first.

Issue 12, items 1, 2 and 8: `compare --out . --force` once replaced a climate file called
`annual.csv`; "folder is not empty" came after the whole simulation; the printed list of files
left two out; the folder was created drwx------ whatever the umask. The rules checked here are
common practice for tools that write into a user's folders, no source.
"""

from __future__ import annotations

import json
import os
import stat

import pytest

from coveryield.cli import main
from coveryield.errors import OutputError
from coveryield.output_folder import MANIFEST_NAME, check_output_folder, write_new_folder
from coveryield.reports import OUTPUT_FILES

from .conftest import copy_demo


def _snapshot(folder):
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir()) if p.is_file()}


def _compare(plan, *args):
    return main(["compare", str(plan), *map(str, args)])


@pytest.fixture
def no_simulation(monkeypatch):
    """Fail the test if any simulation starts (the folder check must come first)."""
    import coveryield.comparison

    def forbidden(*_args, **_kwargs):
        raise AssertionError("the simulation ran before the output folder was checked")

    monkeypatch.setattr(coveryield.comparison, "simulate_catchment", forbidden)


def test_force_never_replaces_the_climate_file_named_like_an_output(
    tmp_path, capsys, no_simulation
):
    # the reported case: the climate record is called annual.csv and --out is the plan's folder
    plan = copy_demo(tmp_path, climate_name="annual.csv")
    before = _snapshot(tmp_path)
    assert _compare(plan, "--out", tmp_path, "--force") == 2
    err = capsys.readouterr().err
    assert "annual.csv" in err
    assert "climate file" in err
    assert "never replaces an input" in err
    assert "Traceback" not in err
    assert _snapshot(tmp_path) == before


def test_force_never_replaces_an_input_even_if_the_manifest_lists_it(tmp_path, capsys):
    from coveryield.output_folder import sha256_of

    plan = copy_demo(tmp_path, climate_name="annual.csv")
    climate = tmp_path / "annual.csv"
    entry = {"bytes": climate.stat().st_size, "sha256": sha256_of(climate)}
    (tmp_path / MANIFEST_NAME).write_text(json.dumps({"files": {"annual.csv": entry}}))
    before = _snapshot(tmp_path)
    assert _compare(plan, "--out", tmp_path, "--force") == 2
    assert "climate file" in capsys.readouterr().err
    assert _snapshot(tmp_path) == before


def test_force_never_replaces_a_file_coveryield_did_not_write(
    plan_dir, tmp_path, capsys, no_simulation
):
    out = tmp_path / "results"
    out.mkdir()
    (out / "summary.json").write_text('{"mine": true}\n')
    assert _compare(plan_dir / "plans.toml", "--out", out, "--force") == 2
    err = capsys.readouterr().err
    assert f"{out / 'summary.json'}" in err
    assert "did not write" in err
    assert _snapshot(out) == {"summary.json": b'{"mine": true}\n'}


def test_force_replaces_only_coveryields_own_unchanged_outputs(plan_dir, tmp_path, capsys):
    out = tmp_path / "results"
    assert _compare(plan_dir / "plans.toml", "--out", out) == 0
    (out / "notes.txt").write_text("my notes")
    first = json.loads((out / MANIFEST_NAME).read_text())["files"]
    assert set(first) == set(OUTPUT_FILES)
    assert _compare(plan_dir / "plans.toml", "--out", out, "--force") == 0
    assert (out / "notes.txt").read_text() == "my notes"  # left alone
    assert set(json.loads((out / MANIFEST_NAME).read_text())["files"]) == set(OUTPUT_FILES)
    assert not [p for p in out.iterdir() if p.name.startswith(".")]  # no staging left

    (out / "annual.csv").write_text("edited by hand\n")
    capsys.readouterr()
    assert _compare(plan_dir / "plans.toml", "--out", out, "--force") == 2
    err = capsys.readouterr().err
    assert "annual.csv" in err
    assert "changed since coveryield wrote it" in err
    assert (out / "annual.csv").read_text() == "edited by hand\n"


def test_a_non_empty_folder_is_refused_before_any_simulation(
    plan_dir, tmp_path, capsys, no_simulation
):
    out = tmp_path / "results"
    out.mkdir()
    (out / "notes.txt").write_text("mine")
    assert _compare(plan_dir / "plans.toml", "--out", out) == 2
    captured = capsys.readouterr()
    assert "not empty" in captured.err
    assert captured.out == ""  # no table printed: nothing was computed


@pytest.mark.parametrize("make", ["file", "readonly"])
def test_unusable_targets_are_refused_before_any_simulation(
    plan_dir, tmp_path, capsys, make, no_simulation, monkeypatch
):
    if make == "file":
        target = tmp_path / "results"
        target.write_text("a file")
        expected = "not a folder"
    else:
        locked = tmp_path / "locked"
        locked.mkdir(mode=0o555)
        target = locked / "results"
        expected = "no permission"
        if os.geteuid() == 0:  # root writes anywhere: let os.access answer as for a user
            import coveryield.output_folder as of

            real = of.os.access
            monkeypatch.setattr(
                of.os, "access", lambda p, mode: False if p == locked else real(p, mode)
            )
    assert _compare(plan_dir / "plans.toml", "--out", target) == 2
    assert expected in capsys.readouterr().err


def test_compare_lists_every_file_it_wrote(plan_dir, tmp_path, capsys):
    out = tmp_path / "results"
    assert _compare(plan_dir / "plans.toml", "--out", out) == 0
    line = [x for x in capsys.readouterr().out.splitlines() if x.startswith("wrote")][0]
    written = {p.name for p in out.iterdir()} - {MANIFEST_NAME}
    assert f"wrote {len(written)} files" in line
    for name in written:
        assert name in line
    assert MANIFEST_NAME in line


@pytest.mark.parametrize("umask", [0o022, 0o027])
def test_new_folders_follow_the_umask(tmp_path, umask):
    previous = os.umask(umask)
    try:
        folder = write_new_folder(tmp_path / "out", lambda f: (f / "a.txt").write_text("a"))
    finally:
        os.umask(previous)
    # a new folder gets 0o777 minus the umask, as mkdir(1) gives (POSIX mkdir)
    assert stat.S_IMODE(folder.stat().st_mode) == 0o777 & ~umask
    assert stat.S_IMODE((folder / MANIFEST_NAME).stat().st_mode) == 0o666 & ~umask


def test_a_failure_midway_leaves_the_folder_replaceable(plan_dir, tmp_path, monkeypatch):
    out = tmp_path / "results"
    assert _compare(plan_dir / "plans.toml", "--out", out) == 0
    real_replace = os.replace
    calls = []

    def flaky(src, dst):
        calls.append(dst)
        if len(calls) == 4:
            raise OSError(28, "No space left on device")
        return real_replace(src, dst)

    import coveryield.output_folder

    monkeypatch.setattr(coveryield.output_folder.os, "replace", flaky)
    assert _compare(plan_dir / "plans.toml", "--out", out, "--force") == 2
    monkeypatch.setattr(coveryield.output_folder.os, "replace", real_replace)
    assert _compare(plan_dir / "plans.toml", "--out", out, "--force") == 0


def test_the_check_is_reusable_by_other_writers(tmp_path):
    out = tmp_path / "run"
    target = check_output_folder(out, ["a.csv", "b.json"], inputs={"observed flow": None})
    target.write(lambda f: [(f / n).write_text(n) for n in ("a.csv", "b.json")])
    assert json.loads((out / MANIFEST_NAME).read_text())["files"].keys() == {"a.csv", "b.json"}
    with pytest.raises(OutputError, match="not empty"):
        check_output_folder(out, ["a.csv"])
    again = check_output_folder(out, ["a.csv", "b.json"], force=True)
    again.write(lambda f: [(f / n).write_text(n + "2") for n in ("a.csv", "b.json")])
    assert (out / "a.csv").read_text() == "a.csv2"
    observed = tmp_path / "flow.csv"
    observed.write_text("date,flow_m3s\n")
    os.link(observed, out / "c.csv")
    with pytest.raises(OutputError, match="observed flow"):
        check_output_folder(out, ["c.csv"], force=True, inputs={"observed flow": observed})


def test_a_foreign_manifest_is_reported_not_trusted(tmp_path):
    out = tmp_path / "run"
    out.mkdir()
    (out / "a.csv").write_text("x")
    (out / MANIFEST_NAME).write_text("not json")
    with pytest.raises(OutputError, match="not a manifest coveryield can read"):
        check_output_folder(out, ["a.csv"], force=True)
