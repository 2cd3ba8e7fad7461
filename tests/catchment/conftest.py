"""Shared fixtures: the demo comparison (computed once) and a one-zone afforestation plan."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

import coveryield

DEMO = Path(__file__).resolve().parents[2] / "demo_data"


@pytest.fixture(scope="session")
def demo_result():
    return coveryield.compare(DEMO / "plans.toml")


def write_one_zone_plan(folder: Path, *, rain_factor: float = 1.0) -> Path:
    """A single-zone catchment on the (invented) demo weather: pasture converted to forest."""
    shutil.copy(DEMO / "climate.csv", folder / "climate.csv")
    plan = folder / "plans.toml"
    plan.write_text(f"""
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
rain_factor = {rain_factor}
soil = "loam"
soil_group = "B"

[plans.current]
all = {{ pasture = 1.0 }}

[plans.forest-10]
all = {{ pasture = 0.9, forest = 0.1 }}

[plans.forest-50]
all = {{ pasture = 0.5, forest = 0.5 }}

[plans.forest-100]
all = {{ forest = 1.0 }}
""")
    return plan


@pytest.fixture(scope="session")
def afforestation(tmp_path_factory):
    folder = tmp_path_factory.mktemp("afforestation")
    return coveryield.compare(write_one_zone_plan(folder))
