"""Fixtures: a one-zone catchment on the (invented) demo weather, pasture planted in forest."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

import coveryield

DEMO = Path(__file__).resolve().parents[2] / "demo_data"

#: One zone, all pasture today; `forest-100` plants all of it, at once or by a schedule.
ONE_ZONE = """
[catchment]
name = "Test Run"
area_km2 = 10.0
latitude_deg = -41.3
elevation_m = 300
climate = "climate.csv"
wind_height_m = 2
recession_days = 90

[[zones]]
name = "all"
area_share = 1.0
soil = "loam"
soil_group = "B"

[plans.current]
all = { pasture = 1.0 }

[plans.forest-100]
all = { forest = 1.0 }

[plans.forest-50]
all = { pasture = 0.5, forest = 0.5 }
"""


def write_plan(folder: Path, extra: str = "", text: str = ONE_ZONE) -> Path:
    """Write a plan file (``text`` + ``extra``) beside a copy of the demo climate."""
    if not (folder / "climate.csv").exists():
        shutil.copy(DEMO / "climate.csv", folder / "climate.csv")
    path = folder / "plans.toml"
    path.write_text(text + extra, encoding="utf-8")
    return path


@pytest.fixture(scope="session")
def one_zone(tmp_path_factory):
    """The one-zone catchment compared once (no schedules: plantings at once in year 1)."""
    return coveryield.compare(write_plan(tmp_path_factory.mktemp("one-zone")))


@pytest.fixture(scope="session")
def demo():
    """The demo catchment compared once."""
    return coveryield.compare(DEMO / "plans.toml")
