"""Where the invented demo catchment lives (``demo_data/`` at the top of the repository)."""

from __future__ import annotations

import os
from pathlib import Path

from coveryield.errors import CoveryieldError


def demo_data_dir() -> Path:
    """Folder of the invented demo catchment.

    ``COVERYIELD_DEMO_DIR`` overrides the default, which is ``demo_data/`` beside the package
    folder (a clone of the repository, installed editable as ``make`` does).
    """
    override = os.environ.get("COVERYIELD_DEMO_DIR")
    return Path(override) if override else Path(__file__).resolve().parent.parent / "demo_data"


def demo_plan_path() -> Path:
    """Path of the demo plan file (``demo_data/plans.toml``)."""
    path = demo_data_dir() / "plans.toml"
    if not path.is_file():
        raise CoveryieldError(
            f"{path}: demo plan file not found; run from a clone of the coveryield repository "
            "or set COVERYIELD_DEMO_DIR to the folder holding plans.toml"
        )
    return path
