"""Reports: the printed comparison table and the output folder (written atomically).

Nothing here computes hydrology; it formats :class:`coveryield.comparison.Comparison` results.
"""

from __future__ import annotations

import json
import math
import os
from collections.abc import Mapping
from pathlib import Path

from coveryield.comparison import CAUTION, Comparison
from coveryield.output_folder import (
    MANIFEST_NAME,
    OutputFolder,
    check_output_folder,
    write_new_folder,
)
from coveryield.physics.curves import CROSSCHECK_TOLERANCE
from coveryield.report_html import render_report

__all__ = ["OUTPUT_FILES", "comparison_table", "write_outputs", "write_new_folder"]

#: Files written by :func:`write_outputs`, in order (the folder's manifest comes on top).
OUTPUT_FILES = (
    "annual.csv",
    "summary.json",
    "monthly.csv",
    "flow_duration.csv",
    "crosscheck.csv",
    "tiles.csv",
    "README.txt",
    "report.html",
)


def _signed(value: float, digits: int = 1) -> str:
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "n/a"
    text = f"{value:+,.{digits}f}"
    return text.replace("-", "\u2212")


def dry_years_text(result: Comparison) -> str:
    """Format the dry years, driest first (the order of ``summary.json`` and the dashboard)."""
    return ", ".join(str(y) for y in result.dry_years)


def comparison_table(result: Comparison) -> str:
    """Format a readable plain-text comparison of every plan against `current`.

    Parameters
    ----------
    result : Comparison
        The compared plans.

    Returns
    -------
    str
        Several lines of text, units in every header, caution at the end.
    """
    spec = result.plan_file.catchment
    years = result.years
    lines = [
        f"{spec.name}: {spec.area_km2:g} km2, {len(years)} complete years "
        f"{years[0]}-{years[-1]}; dry years (driest 10 % by rain, driest first): "
        + dry_years_text(result),
        "",
    ]
    header = (
        f"{'plan':<24}{'yield':>9}{'yield':>10}{'flow':>8}{'change':>9}{'change':>8}"
        f"{'change':>10}{'dry 10%':>9}{'driest':>9}{'Q95':>8}{'Q95':>8}{'evap':>7}{'Zhang':>7}"
    )
    units = (
        f"{'':<24}{'mm/yr':>9}{'ML/yr':>10}{'m3/s':>8}{'mm/yr':>9}{'%':>8}"
        f"{'ML/yr':>10}{'mm/yr':>9}{'mm/yr':>9}{'m3/s':>8}{'chg %':>8}{'mm/yr':>7}{'mm/yr':>7}"
    )
    lines += [header, units, "-" * len(header)]
    for name in result.plan_names:
        o = result.outcome(name)
        row = (
            f"{name[:23]:<24}{o.mean_yield_mm:>9.0f}{o.mean_yield_ml:>10,.0f}"
            f"{o.mean_flow_m3s:>8.3f}"
        )
        if name == "current":
            row += f"{'':>9}{'':>8}{'':>10}{'':>9}{'':>9}{o.q95_m3s:>8.3f}{'':>8}"
        else:
            c = result.change(o)
            row += (
                f"{_signed(c.yield_mm):>9}{_signed(c.yield_pct):>8}{_signed(c.yield_ml, 0):>10}"
                f"{_signed(c.dry10_mm):>9}{_signed(c.driest_year_mm):>9}{o.q95_m3s:>8.3f}"
                f"{_signed(c.q95_pct, 0):>8}"
            )
        flag = " *" if o.crosscheck_flag else ""
        row += f"{o.model_evap_mm:>7.0f}{o.zhang_evap_mm:>7.0f}{flag}"
        lines.append(row)
    lines += [
        "",
        "change: against `current` (negative = less water). dry 10%: mean change over the dry "
        f"years. driest: change in the single driest year ({result.driest_year}). Q95: flow "
        "exceeded on 95 % of days.",
        "evap vs Zhang: daily model against the Zhang et al. (2001) curve for the same mix; "
        "* marks a difference above the stated tolerance "
        f"({100 * CROSSCHECK_TOLERANCE:.0f} %).",
        "",
        f"CAUTION: {CAUTION}",
    ]
    return "\n".join(lines)


def _readme_text(result: Comparison) -> str:
    return "\n".join(
        [
            f"coveryield comparison: {result.plan_file.catchment.name}",
            f"plan file: {result.plan_file.source}",
            "",
            "annual.csv        per plan and year; mm over the whole catchment, yield_ml in ML",
            "summary.json      mean annual yield (mm, ML/yr, m3/s) and changes against `current`",
            "monthly.csv       mean yield per calendar month, mm/month, and change",
            "flow_duration.csv streamflow (m3/s) exceeded on a given % of days, per plan",
            "crosscheck.csv    mean annual evaporation: daily model vs Zhang (2001) and Fu (1981)",
            "tiles.csv         the same per zone and cover (tile), with mean rain and ET0",
            "report.html       one-page report with charts (self-contained; open in a browser)",
            f"{MANIFEST_NAME}  what coveryield wrote here, with checksums; --force replaces",
            "                  only these files, and only while unchanged",
            "",
            f"CAUTION: {CAUTION}",
            "",
        ]
    )


def _write_all(result: Comparison, folder: Path) -> None:
    result.annual_table().to_csv(folder / "annual.csv", index=False, float_format="%.3f")
    (folder / "summary.json").write_text(json.dumps(result.summary(), indent=2) + "\n")
    result.monthly_table().to_csv(folder / "monthly.csv", float_format="%.3f")
    result.fdc_table().to_csv(folder / "flow_duration.csv", index=False, float_format="%.5f")
    result.crosscheck_table().to_csv(folder / "crosscheck.csv", index=False, float_format="%.2f")
    result.cover_crosscheck_table().to_csv(folder / "tiles.csv", index=False, float_format="%.2f")
    (folder / "README.txt").write_text(_readme_text(result))
    (folder / "report.html").write_text(render_report(result), encoding="utf-8")


def _declared(target: OutputFolder | str | os.PathLike, force: bool, inputs) -> OutputFolder:
    if isinstance(target, OutputFolder):
        return target
    return check_output_folder(target, OUTPUT_FILES, force=force, inputs=inputs)


def write_outputs(
    result: Comparison,
    out_dir: OutputFolder | str | os.PathLike,
    *,
    force: bool = False,
    inputs: Mapping[str, str | os.PathLike] | None = None,
) -> Path:
    """Write the comparison tables and the report into a folder, all or nothing.

    Every file is first written to a staging folder; only when all are complete are they moved
    into place, so a failure never leaves half an output. The folder's manifest
    (:data:`~coveryield.output_folder.MANIFEST_NAME`) lists what was written.

    Parameters
    ----------
    result : Comparison
        The compared plans.
    out_dir : OutputFolder or path
        A folder checked with :func:`~coveryield.output_folder.check_output_folder` before the
        work (the command line does this), or a path, checked here: a new or empty folder, or
        with ``force`` one holding coveryield's own earlier outputs.
    force : bool
        Replace coveryield's own, unchanged earlier outputs (never an input, never a file
        coveryield did not write). Ignored when ``out_dir`` is already checked.
    inputs : mapping, optional
        Role -> path of the run's inputs; default: the plan file and its climate file.

    Returns
    -------
    pathlib.Path
        The output folder.

    Raises
    ------
    coveryield.errors.OutputError
        If the folder cannot take the outputs, or cannot be written.
    """
    if inputs is None:
        inputs = result.plan_file.input_files()
    target = _declared(out_dir, force, inputs)
    return target.write(lambda folder: _write_all(result, folder))
