"""Shared fixtures: the example plan file from the plan-file specification."""

from __future__ import annotations

from pathlib import Path

import pytest

#: The example plan of the plan-file format specification (with one derived cover).
EXAMPLE_PLAN = """\
[catchment]
name = "Example Creek"
area_km2 = 42.0
latitude_deg = -41.2
elevation_m = 350
climate = "climate.csv"
wind_height_m = 2
coastal = false
recession_days = 30
rain_rate_mm_per_h = 1.5
[[zones]]
name = "upper"
area_share = 0.4
rain_factor = 1.15
temperature_offset_c = -1.5
soil = "loam"
soil_group = "B"
[[zones]]
name = "lower"
area_share = 0.6
[covers.young-pine]
base = "forest"
height_m = 6
lai = 3
[plans.current]
upper = { pasture = 0.7, forest = 0.2, water = 0.1 }
lower = { pasture = 0.5, crop = 0.5 }
[plans.plant-upper]
upper = { pasture = 0.3, forest = 0.6, water = 0.1 }
lower = { pasture = 0.5, crop = 0.5 }
"""


@pytest.fixture
def example_text() -> str:
    return EXAMPLE_PLAN


@pytest.fixture
def write_plan(tmp_path):
    """Write plan text (default: the example) next to a stub climate file; return its path."""

    def write(text: str = EXAMPLE_PLAN, name: str = "plans.toml") -> Path:
        (tmp_path / "climate.csv").write_text("date,rain_mm\n", encoding="utf-8")
        path = tmp_path / name
        path.write_text(text, encoding="utf-8")
        return path

    return write
