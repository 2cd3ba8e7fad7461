"""The on-disk tile cache: hits, misses on every input that decides the tiles, damaged entries,
unwritable folders, atomic writes, warnings kept with an entry, and the CLI around it."""

from __future__ import annotations

import dataclasses
import os
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import coveryield
import coveryield.catchment as catchment
import coveryield.comparison as comparison
from coveryield import tile_cache
from coveryield.cli import main
from coveryield.climate import ClimateAssumptionWarning
from coveryield.tile_cache import TileCache, TileCacheWarning

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
YEARS = 3


def write_plan(folder: Path, *, rain_factor=1.0, young_height_m=6.0, extra_plan="",
               drop_wind=False) -> Path:
    """A small two-zone plan on the first three years of the (invented) demo weather."""
    folder.mkdir(parents=True, exist_ok=True)
    lines = (DEMO / "climate.csv").read_text().splitlines()
    kept = lines[: 1 + 365 * YEARS + 1]
    if drop_wind:
        header = kept[0].split(",")
        col = header.index("wind_ms")
        kept = [",".join(c for i, c in enumerate(row.split(",")) if i != col) for row in kept]
    (folder / "climate.csv").write_text("\n".join(kept) + "\n")
    plan = folder / "plans.toml"
    plan.write_text(f"""
[catchment]
name = "Cache Test"
area_km2 = 12.0
latitude_deg = -41.3
elevation_m = 300
climate = "climate.csv"
recession_days = 60

[[zones]]
name = "hill"
area_share = 0.6
rain_factor = {rain_factor}
temperature_offset_c = -1.0
soil = "loam"

[[zones]]
name = "flat"
area_share = 0.4
soil = "sandy_loam"

[covers.young-pine]
base = "forest"
height_m = {young_height_m}

[plans.current]
hill = {{ pasture = 1.0 }}
flat = {{ pasture = 1.0 }}

[plans.plant-hill]
hill = {{ forest = 0.7, young-pine = 0.3 }}
flat = {{ pasture = 1.0 }}
{extra_plan}
""")
    return plan


@pytest.fixture
def cache(tmp_path):
    return TileCache(tmp_path / "cache")


@pytest.fixture
def plan(tmp_path):
    return write_plan(tmp_path / "data")


def forbid_simulation(monkeypatch):
    def forbidden(*args, **kwargs):
        raise AssertionError("simulated although the cache held the results")

    monkeypatch.setattr(catchment, "simulate_catchment", forbidden)
    monkeypatch.setattr(catchment, "simulate_tiles", forbidden)
    monkeypatch.setattr(catchment, "mix_tiles", forbidden)
    monkeypatch.setattr(comparison, "mix_tiles", forbidden)


def assert_same_comparison(a, b):
    assert a.summary() == b.summary()
    pd.testing.assert_frame_equal(a.annual_table(), b.annual_table())
    pd.testing.assert_frame_equal(a.fdc_table(), b.fdc_table())
    for f in dataclasses.fields(a.tiles):
        x, y = getattr(a.tiles, f.name), getattr(b.tiles, f.name)
        if isinstance(x, dict) and x and isinstance(next(iter(x.values())), np.ndarray):
            assert x.keys() == y.keys()
            for key in x:
                np.testing.assert_array_equal(x[key], y[key])
        elif isinstance(x, np.ndarray):
            np.testing.assert_array_equal(x, y)
            assert x.flags.f_contiguous == y.flags.f_contiguous
        elif isinstance(x, pd.Index):
            pd.testing.assert_index_equal(x, y)
        else:
            assert x == y, f.name


# ------------------------------------------------------------------------------------- hits


def test_second_compare_is_read_from_the_cache_and_identical(plan, cache, monkeypatch):
    first = coveryield.compare(plan, cache=cache)
    assert len(cache.entries()) == 1
    forbid_simulation(monkeypatch)
    second = coveryield.compare(plan, cache=cache)
    assert_same_comparison(first, second)


def test_cached_result_equals_an_uncached_one(plan, cache):
    coveryield.compare(plan, cache=cache)
    assert_same_comparison(coveryield.compare(plan), coveryield.compare(plan, cache=cache))


def test_moving_the_data_folder_keeps_the_entry(tmp_path, cache, monkeypatch):
    # the key holds the climate file's contents, not its path
    coveryield.compare(write_plan(tmp_path / "here"), cache=cache)
    moved = write_plan(tmp_path / "elsewhere")
    forbid_simulation(monkeypatch)
    coveryield.compare(moved, cache=cache)


def test_new_shares_reuse_the_tiles_and_add_their_mix_to_the_entry(tmp_path, cache, monkeypatch):
    coveryield.compare(write_plan(tmp_path / "a"), cache=cache)
    more = write_plan(
        tmp_path / "a", extra_plan='[plans.half]\nhill = { pasture = 0.5, forest = 0.5 }\n'
        'flat = { pasture = 1.0 }'
    )
    monkeypatch.setattr(catchment, "simulate_catchment", _forbidden)
    result = coveryield.compare(more, cache=cache)  # tiles from the cache, one new mix
    assert "half" in result.summary()["plans"]
    assert len(cache.entries()) == 1
    monkeypatch.setattr(catchment, "mix_tiles", _forbidden)
    monkeypatch.setattr(comparison, "mix_tiles", _forbidden)
    coveryield.compare(more, cache=cache)  # the new mix was stored with the entry
    monkeypatch.undo()
    fewer = write_plan(tmp_path / "a")  # "half" gone again: nothing new, entry unchanged
    coveryield.compare(fewer, cache=cache)
    entry = cache.load(cache.key(coveryield.load_plan(fewer)))
    assert len(entry.mixes) == 3  # current, plant-hill, half
    edited = write_plan(
        tmp_path / "a", extra_plan='[plans.third]\nhill = { pasture = 0.2, forest = 0.8 }\n'
        'flat = { pasture = 1.0 }'
    )
    coveryield.compare(edited, cache=cache)
    entry = cache.load(cache.key(coveryield.load_plan(edited)))
    assert len(entry.mixes) == 3  # current, plant-hill, third: the stale "half" was dropped


def _forbidden(*args, **kwargs):
    raise AssertionError("recomputed although the cache held the result")


# ----------------------------------------------------------------------------------- misses


@pytest.mark.parametrize(
    "change",
    ["climate value", "zone rain factor", "cover parameter", "covers used", "package source",
     "adjustments"],
)
def test_every_input_that_decides_the_tiles_changes_the_key(tmp_path, cache, monkeypatch, change):
    base = write_plan(tmp_path / "base")
    key = cache.key(coveryield.load_plan(base))
    if change == "climate value":
        text = (tmp_path / "base" / "climate.csv").read_text().replace(",0.0,", ",0.1,", 1)
        (tmp_path / "base" / "climate.csv").write_text(text)
        changed = base
    elif change == "zone rain factor":
        changed = write_plan(tmp_path / "other", rain_factor=1.1)
    elif change == "cover parameter":
        changed = write_plan(tmp_path / "other", young_height_m=7.0)
    elif change == "covers used":
        changed = write_plan(tmp_path / "other", extra_plan='[plans.crops]\n'
                             'hill = { crop = 1.0 }\nflat = { pasture = 1.0 }')
    elif change == "adjustments":  # catchment-wide factors, e.g. from `coveryield calibrate`
        changed = write_plan(tmp_path / "other", extra_plan="[adjustments]\nroot_zone_factor = 1.2")
    else:
        monkeypatch.setattr(tile_cache, "package_source_sha256", lambda: "edited source")
        changed = base
    assert cache.key(coveryield.load_plan(changed)) != key


def test_plan_shares_and_names_do_not_change_the_key(tmp_path, cache):
    base = cache.key(coveryield.load_plan(write_plan(tmp_path / "a")))
    other = write_plan(tmp_path / "b", extra_plan='[plans.more-forest]\n'
                       'hill = { forest = 1.0 }\nflat = { pasture = 1.0 }')
    assert cache.key(coveryield.load_plan(other)) == base


def test_package_source_hash_sees_an_edited_module(tmp_path):
    package = tmp_path / "pkg"
    package.mkdir()
    (package / "a.py").write_text("X = 1\n")
    (package / "__pycache__").mkdir()
    (package / "__pycache__" / "a.cpython.pyc").write_bytes(b"compiled")
    before = tile_cache.package_source_sha256(package)
    tile_cache._SOURCE_DIGEST.clear()
    (package / "__pycache__" / "a.cpython.pyc").write_bytes(b"other compiled")
    assert tile_cache.package_source_sha256(package) == before  # caches do not count
    tile_cache._SOURCE_DIGEST.clear()
    (package / "a.py").write_text("X = 2\n")
    assert tile_cache.package_source_sha256(package) != before


# ---------------------------------------------------------------------- damaged or missing


def _damage(path: Path, how: str, other: Path | None = None) -> None:
    if how == "garbage":
        path.write_bytes(b"this is not a cache entry")
    elif how == "truncated":
        path.write_bytes(path.read_bytes()[: path.stat().st_size // 2])
    elif how == "other inputs":
        os.replace(other, path)
    elif how == "a folder":
        path.unlink()
        path.mkdir()


@pytest.mark.parametrize("how", ["garbage", "truncated", "other inputs", "a folder"])
def test_a_damaged_entry_is_ignored_with_a_note_and_replaced(tmp_path, cache, how):
    plan = write_plan(tmp_path / "a")
    expected = coveryield.compare(plan, cache=cache)
    path = cache.path(cache.key(coveryield.load_plan(plan)))
    other = None
    if how == "other inputs":
        coveryield.compare(write_plan(tmp_path / "b", rain_factor=1.3), cache=cache)
        other = next(p for p in cache.entries() if p != path)
    _damage(path, how, other)
    with pytest.warns(TileCacheWarning) as notes:
        got = coveryield.compare(plan, cache=cache)
    assert f"tile cache entry {path} is un" in str(notes[0].message)
    assert_same_comparison(expected, got)
    if how != "a folder":  # the damaged entry was replaced by a good one
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            assert cache.load(cache.key(coveryield.load_plan(plan))) is not None


def test_an_unwritable_cache_costs_only_a_note(tmp_path, plan):
    blocker = tmp_path / "not-a-folder"
    blocker.write_text("a file where the cache folder should be")
    with pytest.warns(TileCacheWarning, match="could not write the tile cache"):
        result = coveryield.compare(plan, cache=TileCache(blocker / "tiles"))
    assert_same_comparison(coveryield.compare(plan), result)


def test_a_failed_write_leaves_neither_entry_nor_temporary_file(plan, cache, monkeypatch):
    def failing_replace(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(tile_cache.os, "replace", failing_replace)
    with pytest.warns(TileCacheWarning, match="No space left"):
        coveryield.compare(plan, cache=cache)
    assert list(cache.folder.iterdir()) == []


def test_an_unreadable_climate_file_is_reported_by_the_reader_not_the_cache(tmp_path, cache):
    plan_file = coveryield.load_plan(write_plan(tmp_path / "a"))
    (tmp_path / "a" / "climate.csv").unlink()
    with pytest.raises(coveryield.ClimateFileError, match="climate.csv"):
        coveryield.compare(plan_file, cache=cache)
    assert cache.entries() == []


# -------------------------------------------------------------------------- warnings replay


def test_climate_warnings_are_raised_on_a_hit_as_on_a_miss(tmp_path, cache):
    plan = write_plan(tmp_path / "a", drop_wind=True)
    with pytest.warns(ClimateAssumptionWarning, match="no wind_ms column"):
        coveryield.compare(plan, cache=cache)
    with pytest.warns(ClimateAssumptionWarning, match="no wind_ms column"):
        coveryield.compare(plan, cache=cache)


# ---------------------------------------------------------------------------- housekeeping


def test_prune_deletes_least_recently_used_entries_and_stale_temporaries(tmp_path, cache):
    coveryield.compare(write_plan(tmp_path / "a"), cache=cache)
    coveryield.compare(write_plan(tmp_path / "b", rain_factor=1.2), cache=cache)
    old, new = cache.entries()
    os.utime(old, (1_000_000, 1_000_000))
    stale = cache.folder / ".partial-x.npz"
    stale.write_bytes(b"left over")
    os.utime(stale, (1_000_000, 1_000_000))
    assert cache.prune(max_total_bytes=new.stat().st_size) == 1
    assert cache.entries() == [new]
    assert not stale.exists()


def test_clear_deletes_entries_and_nothing_else(plan, cache):
    coveryield.compare(plan, cache=cache)
    mine = cache.folder / "notes.txt"
    mine.write_text("not coveryield's")
    assert cache.clear() == 1
    assert cache.entries() == []
    assert mine.exists()


def test_default_folder_follows_the_environment_variable(tmp_path, monkeypatch):
    monkeypatch.setenv("COVERYIELD_CACHE_DIR", str(tmp_path / "elsewhere"))
    assert TileCache().folder == tmp_path / "elsewhere" / "tiles"
    monkeypatch.delenv("COVERYIELD_CACHE_DIR")
    import platformdirs

    expected = Path(platformdirs.user_cache_dir("coveryield", appauthor=False)) / "tiles"
    assert TileCache().folder == expected  # only computed, never created here


# ------------------------------------------------------------------------------------ CLI


def test_compare_command_uses_the_cache_and_no_cache_bypasses_it(tmp_path, monkeypatch, capsys):
    monkeypatch.setenv("COVERYIELD_CACHE_DIR", str(tmp_path / "root"))
    plan = write_plan(tmp_path / "data")
    assert main(["compare", str(plan), "--no-cache"]) == 0
    uncached = capsys.readouterr().out
    assert not (tmp_path / "root").exists()
    assert main(["compare", str(plan)]) == 0
    assert capsys.readouterr().out == uncached
    assert len(TileCache().entries()) == 1
    forbid_simulation(monkeypatch)
    assert main(["compare", str(plan)]) == 0
    assert capsys.readouterr().out == uncached


def test_compare_command_notes_a_damaged_entry_and_answers(tmp_path, monkeypatch, capsys):
    monkeypatch.setenv("COVERYIELD_CACHE_DIR", str(tmp_path / "root"))
    plan = write_plan(tmp_path / "data")
    assert main(["compare", str(plan)]) == 0
    good = capsys.readouterr().out
    (entry,) = TileCache().entries()
    entry.write_bytes(b"\x00" * 100)
    assert main(["compare", str(plan)]) == 0
    out, err = capsys.readouterr()
    assert out == good
    assert err.startswith("note: tile cache entry")
    assert "Traceback" not in err


def test_cache_command_shows_and_clears(tmp_path, monkeypatch, capsys):
    monkeypatch.setenv("COVERYIELD_CACHE_DIR", str(tmp_path / "root"))
    assert main(["compare", str(write_plan(tmp_path / "data"))]) == 0
    capsys.readouterr()
    assert main(["cache"]) == 0
    shown = capsys.readouterr().out
    assert str(tmp_path / "root" / "tiles") in shown
    assert "entries: 1 (" in shown
    assert main(["cache", "--clear"]) == 0
    assert "removed 1 cached result(s)" in capsys.readouterr().out
    assert TileCache().entries() == []


NO_COMPILER = """
import sys
from coveryield.cli import main
assert main(["compare", sys.argv[1]]) == 0
print("numba loaded:", "numba" in sys.modules)
"""


def test_a_cache_hit_answers_without_loading_the_compiler(tmp_path):
    # issue 11: a warm `compare` answers fast; the compiler runtime (numba, which also loads
    # scipy.linalg, ~0.25 s together) is not needed when the tiles and mixes come from the cache
    import subprocess
    import sys

    plan_path = write_plan(tmp_path / "a")
    env = dict(os.environ, COVERYIELD_CACHE_DIR=str(tmp_path / "cache"))
    run = [sys.executable, "-c", NO_COMPILER, str(plan_path)]
    first = subprocess.run(run, capture_output=True, text=True, env=env, timeout=300)
    assert first.returncode == 0, first.stderr[-2000:]
    assert "numba loaded: True" in first.stdout  # a miss simulates
    second = subprocess.run(run, capture_output=True, text=True, env=env, timeout=300)
    assert second.returncode == 0, second.stderr[-2000:]
    assert "numba loaded: False" in second.stdout
