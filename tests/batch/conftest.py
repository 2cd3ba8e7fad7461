"""Shared fixtures: a folder of short catchments (3 years of the invented demo weather).

Two good plan files that differ in name, area and rain, and one whose shares do not sum to 1.
The weather is cut to three years so that every catchment runs in a fraction of a second.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

DEMO = Path(__file__).resolve().parents[2] / "demo_data"

#: Header plus 1991-1993 (365 + 366 + 365 days) of the demo climate.
SHORT_CLIMATE_LINES = 1 + 1096

GOOD = ("alpha", "beta")


def short_climate(folder: Path) -> Path:
    lines = (DEMO / "climate.csv").read_text().splitlines(keepends=True)[:SHORT_CLIMATE_LINES]
    path = folder / "climate.csv"
    path.write_text("".join(lines))
    return path


def demo_plan_text(name: str, *, area_km2: float = 48.0, rain_factor: float = 1.2) -> str:
    text = (DEMO / "plans.toml").read_text()
    text = text.replace('name = "Brindlewater Creek"', f'name = "{name}"', 1)
    text = text.replace("area_km2 = 48.0", f"area_km2 = {area_km2}", 1)
    return text.replace("rain_factor = 1.2", f"rain_factor = {rain_factor}", 1)


def broken_plan_text() -> str:
    return demo_plan_text("Broken Creek").replace(
        "upper = { pasture = 0.12, forest = 0.85, water = 0.03 }",
        "upper = { pasture = 0.12, forest = 0.95, water = 0.03 }",
        1,
    )


def make_batch_folder(folder: Path, *, broken: bool = True) -> Path:
    """alpha.toml, beta.toml (and broken.toml) beside a 3-year climate file."""
    folder.mkdir(parents=True, exist_ok=True)
    short_climate(folder)
    (folder / "alpha.toml").write_text(demo_plan_text("Alpha Creek"))
    (folder / "beta.toml").write_text(demo_plan_text("Beta Creek", area_km2=20.5, rain_factor=1.35))
    if broken:
        (folder / "broken.toml").write_text(broken_plan_text())
    return folder


@pytest.fixture
def batch_dir(tmp_path):
    return make_batch_folder(tmp_path / "catchments")


@pytest.fixture
def good_dir(tmp_path):
    return make_batch_folder(tmp_path / "catchments", broken=False)


@pytest.fixture(scope="module")
def threads_client():
    """An in-process Dask cluster: quick to start, and tests can patch what its tasks run.

    One thread: reports draw with matplotlib, whose style settings are process-wide (a batch
    proper runs one single-threaded worker per process).
    """
    from distributed import Client, LocalCluster

    with (
        LocalCluster(
            n_workers=1,
            threads_per_worker=1,
            processes=False,
            dashboard_address=None,
            silence_logs=50,
        ) as cluster,
        Client(cluster, set_as_default=False) as client,
    ):
        yield client


def copy_tree(source: Path, target: Path) -> Path:
    shutil.copytree(source, target)
    return target
