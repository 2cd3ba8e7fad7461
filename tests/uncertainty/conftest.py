"""Small, fast catchments for the calibration and ensemble tests (invented demo weather)."""

from __future__ import annotations

from pathlib import Path

import pytest

DEMO = Path(__file__).resolve().parents[2] / "demo_data"

#: A one-zone catchment with a derived cover, on the first years of the demo weather.
SMALL_PLAN = """\
[catchment]
name = "Small Test Creek"
area_km2 = 10.0
latitude_deg = -41.3
elevation_m = 300
climate = "climate.csv"
recession_days = 60

[[zones]]
name = "all"
area_share = 1.0
soil = "loam"
soil_group = "B"

[covers.young-pine]
base = "forest"
height_m = 6
canopy_capacity_mm = 0.9

[plans.current]
all = { pasture = 0.7, forest = 0.3 }

[plans.plant]
all = { pasture = 0.2, forest = 0.8 }

[plans.plant-young]
all = { pasture = 0.2, forest = 0.3, young-pine = 0.5 }
"""


def write_small_catchment(folder: Path, *, last_year: int = 1998) -> Path:
    """Write the small plan file and the demo weather of 1991..last_year; return the plan."""
    lines = (DEMO / "climate.csv").read_text().splitlines()
    kept = [lines[0]] + [line for line in lines[1:] if line[:4] <= str(last_year)]
    (folder / "climate.csv").write_text("\n".join(kept) + "\n")
    plan = folder / "plans.toml"
    plan.write_text(SMALL_PLAN)
    return plan


@pytest.fixture(scope="session")
def small_plan_path(tmp_path_factory) -> Path:
    return write_small_catchment(tmp_path_factory.mktemp("small"))


@pytest.fixture(scope="session")
def small_plan(small_plan_path):
    from coveryield.plans import load_plan

    return load_plan(small_plan_path)


@pytest.fixture(scope="session")
def small_climate(small_plan):
    from coveryield.climate import read_climate

    spec = small_plan.catchment
    return read_climate(spec.climate, latitude_deg=spec.latitude_deg,
                        elevation_m=spec.elevation_m)
