"""What the manager's buttons write: a new plan file, and an export folder of tables.

Both only ever create new paths next to the plan file; an existing file or folder is never
replaced (:class:`~coveryield.errors.OutputError` names it instead).
"""

from __future__ import annotations

import datetime as dt
import json
import re
from collections.abc import Mapping
from pathlib import Path
from typing import Any

from coveryield.comparison import CAUTION
from coveryield.errors import OutputError, PlanFileError
from coveryield.output_folder import write_new_folder

PLAN_NAME_PATTERN = re.compile(r"[A-Za-z][A-Za-z0-9_-]{0,39}")


def check_plan_name(name: str, existing: list[str]) -> str:
    """Return a new plan's name stripped, or raise PlanFileError saying what a name may be."""
    name = name.strip()
    if not PLAN_NAME_PATTERN.fullmatch(name):
        raise PlanFileError(
            f"plan name {name!r}: expected a letter followed by up to 39 letters, digits, "
            "'_' or '-'"
        )
    if name in existing:
        raise PlanFileError(f"plan name {name!r}: the plan file already has a plan of that name")
    return name


def new_plan_path(plan_path: Path, name: str) -> Path:
    """Where a saved plan goes: ``<plan file stem>-<name>.toml`` beside the plan file."""
    return plan_path.with_name(f"{plan_path.stem}-{name}.toml")


def save_plan(plan_file: Any, plan_path: Path, name: str,
              shares: Mapping[str, Mapping[str, float]]) -> Path:
    """Write the plan file with one plan added to a NEW file beside it; return its path.

    Parameters
    ----------
    plan_file : coveryield.plans.PlanFile
        The plan file loaded.
    plan_path : pathlib.Path
        Where it was loaded from.
    name : str
        Name of the new plan.
    shares : mapping
        Zone -> (cover -> share) of the new plan [-].

    Returns
    -------
    pathlib.Path
        The new file.
    """
    from coveryield.plans import write_plan_file

    name = check_plan_name(name, list(plan_file.plans))
    target = new_plan_path(Path(plan_path), name)
    if target.exists():
        raise OutputError(f"{target}: exists already; choose another plan name")
    write_plan_file(plan_file.with_plan(name, {z: dict(s) for z, s in shares.items()}), target)
    return target


def summary_record(state: Any, plan_label: str) -> dict[str, Any]:
    """Return the edited plan's headline figures as a JSON-ready dict (units in key names)."""
    outcome, change = state.outcome, state.change
    return {
        "catchment": state.plan_file.catchment.name,
        "plan": plan_label,
        "started_from": state.plan_name,
        "shares": state.shares,
        "mean_yield_mm": outcome.mean_yield_mm,
        "mean_yield_ml_per_yr": outcome.mean_yield_ml,
        "mean_flow_m3s": outcome.mean_flow_m3s,
        "q95_m3s": outcome.q95_m3s,
        "change_against_current": {
            "yield_mm": change.yield_mm,
            "yield_pct": change.yield_pct,
            "yield_ml_per_yr": change.yield_ml,
            "dry10_mm": change.dry10_mm,
            "driest_year_mm": change.driest_year_mm,
            "q95_m3s": change.q95_m3s,
            "q95_pct": change.q95_pct,
        },
        "dry_years": [int(y) for y in state.comparison.dry_years],
        "evaporation_mm_per_yr": {
            "daily_model": outcome.model_evap_mm,
            "zhang_curve": outcome.zhang_evap_mm,
            "fu_form": outcome.fu_evap_mm,
            "crosscheck_flag": bool(outcome.crosscheck_flag),
            "crosscheck_note": outcome.crosscheck_note,
        },
        **_band_record(state),
        "caution": CAUTION,
    }


def _band_record(state: Any) -> dict[str, Any]:
    """Bands of the edited plan's headlines, when the page has estimated them."""
    bands = getattr(state, "bands", None)
    if not bands:
        return {}
    ensemble = state.comparison.ensemble
    return {"bands_mm_per_yr": {
        "percentiles": [5, 50, 95],
        "members": ensemble.n_members,
        "seed": ensemble.seed,
        **{key: list(values) for key, values in bands.items()},
    }}


def export_tables(state: Any, plan_path: Path, label: str = "edited",
                  now: dt.datetime | None = None) -> Path:
    """Write ``annual.csv`` and ``summary.json`` of the edited plan into a NEW folder.

    The folder ``<plan file stem>-export-<label>-<YYYYmmdd-HHMMSS>`` appears complete or not at
    all: the files are written into a hidden temporary folder beside it, which is then renamed.

    Parameters
    ----------
    state : DashboardState
        Holds the edited plan's outcome.
    plan_path : pathlib.Path
        The plan file; the folder goes beside it.
    label : str
        Word in the folder name.
    now : datetime.datetime, optional
        Time stamp for the name (default: now).

    Returns
    -------
    pathlib.Path
        The new folder.
    """
    plan_path = Path(plan_path)
    stamp = (now or dt.datetime.now()).strftime("%Y%m%d-%H%M%S")
    safe_label = re.sub(r"[^A-Za-z0-9_-]", "-", label) or "edited"
    target = plan_path.with_name(f"{plan_path.stem}-export-{safe_label}-{stamp}")
    if target.exists():
        raise OutputError(f"{target}: exists already; wait a second and export again")

    def write(folder: Path) -> None:
        state.outcome.annual.to_csv(folder / "annual.csv", float_format="%.3f")
        with open(folder / "summary.json", "w", encoding="utf-8") as handle:
            json.dump(summary_record(state, label), handle, indent=2, default=float)

    return write_new_folder(target, write)
