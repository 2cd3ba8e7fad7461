"""Fixtures of the output-folder tests: a copy of the demo catchment on a few years of weather."""

from __future__ import annotations

from pathlib import Path

import pytest

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
#: Four complete years of the invented demo weather keep each `compare` to a fraction of a second.
DAYS = 4 * 365 + 1


def copy_demo(folder: Path, climate_name: str = "climate.csv") -> Path:
    """Copy the demo plan file and a four-year climate file (named ``climate_name``) to folder."""
    folder.mkdir(parents=True, exist_ok=True)
    lines = (DEMO / "climate.csv").read_text().splitlines()[: DAYS + 1]
    (folder / climate_name).write_text("\n".join(lines) + "\n")
    plan = (DEMO / "plans.toml").read_text()
    plan = plan.replace('climate = "climate.csv"', f'climate = "{climate_name}"', 1)
    (folder / "plans.toml").write_text(plan)
    return folder / "plans.toml"


@pytest.fixture
def plan_dir(tmp_path) -> Path:
    """A folder holding plans.toml and climate.csv (four years)."""
    copy_demo(tmp_path / "catchment")
    return tmp_path / "catchment"
