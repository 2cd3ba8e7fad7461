"""Reports: the printed comparison table and the output folder (written atomically).

Nothing here computes hydrology; it formats :class:`coveryield.comparison.Comparison` results.
"""

from __future__ import annotations

import json
import math
import os
from collections.abc import Mapping
from pathlib import Path
from typing import TYPE_CHECKING

from coveryield.comparison import CAUTION, YIELD_DEFINITION, Comparison
from coveryield.output_folder import (
    MANIFEST_NAME,
    OutputFolder,
    check_output_folder,
    write_new_folder,
)
from coveryield.physics.curves import CROSSCHECK_TYPICAL_OFFSET_PCT, ZHANG_CURVE_SENTENCE
from coveryield.report_html import render_report

__all__ = ["OUTPUT_FILES", "comparison_table", "output_files", "write_outputs", "write_new_folder"]

if TYPE_CHECKING:
    import pandas as pd

#: Files written by :func:`write_outputs` in every run, in order (the folder's manifest comes on
#: top).
OUTPUT_FILES = (
    "annual.csv",
    "summary.json",
    "monthly.csv",
    "flow_duration.csv",
    "crosscheck.csv",
    "tiles.csv",
    "README.txt",
    "report.html",
    "daily_flow.csv",
)
#: Written with an ensemble only (``compare --ensemble N``).
ENSEMBLE_FILE = "ensemble.csv"


def output_files(*, ensemble: bool) -> tuple[str, ...]:
    """Files :func:`write_outputs` writes: :data:`OUTPUT_FILES`, and ``ensemble.csv`` if asked."""
    return OUTPUT_FILES + ((ENSEMBLE_FILE,) if ensemble else ())


#: Decimals kept in the output files per unit suffix of a name: flows to 0.1 L/s, depths to
#: 0.01 mm, volumes to 1 ML, percentages to 0.01 %; smaller values print as zero (common
#: practice, no source).
OUTPUT_DECIMALS = {"_m3s": 4, "_mm": 2, "_ml": 0, "_pct": 2, "_index": 4, "_year": 2}
_DEFAULT_DECIMALS = 6


def decimals_for(name: str) -> int:
    """Decimals an output value named ``name`` is rounded to (by its unit suffix)."""
    for suffix, decimals in OUTPUT_DECIMALS.items():
        if name.endswith(suffix) or f"{suffix}_" in name or f"{suffix} " in name:
            return decimals
    return _DEFAULT_DECIMALS


def rounded(value, decimals: int):
    """``value`` rounded to ``decimals``, with −0.0 made 0.0 (so 1e-33 and −1e-33 print as 0)."""
    if isinstance(value, float) and math.isfinite(value):
        return round(value, decimals) + 0.0
    return value


def rounded_record(record, name: str = ""):
    """A JSON-ready copy of ``record`` with every float rounded by the unit suffix of its key."""
    if isinstance(record, dict):
        return {key: rounded_record(value, str(key)) for key, value in record.items()}
    if isinstance(record, (list, tuple)):
        return [rounded_record(value, name) for value in record]
    if isinstance(record, float):
        return rounded(record, decimals_for(name))
    return record


def rounded_frame(frame, decimals: int | None = None):
    """A copy of a table with each float column rounded by the unit suffix of its name.

    Parameters
    ----------
    frame : pandas.DataFrame
        The table.
    decimals : int, optional
        Decimals for every float column instead (e.g. a table of flows named by plan).
    """
    out = frame.copy()
    for column in out.columns:
        if out[column].dtype.kind == "f":
            digits = decimals_for(str(column)) if decimals is None else decimals
            out[column] = out[column].round(digits) + 0.0
    return out


def _signed(value: float, digits: int = 1) -> str:
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "n/a"
    text = f"{value:+,.{digits}f}"
    if float(text.replace(",", "")) == 0.0:
        text = f"{0.0:.{digits}f}"
    return text.replace("-", "\u2212")


def dry_years_text(result: Comparison) -> str:
    """Format the dry years, driest first (the order of ``summary.json`` and the dashboard)."""
    return ", ".join(str(y) for y in result.dry_years)


def _plain(value: float | None, digits: int) -> str:
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "n/a"
    return f"{rounded(float(value), digits):,.{digits}f}"


def comparison_table(result: Comparison) -> str:
    """Format a readable plain-text comparison of every plan against `current`.

    Parameters
    ----------
    result : Comparison
        The compared plans.

    Returns
    -------
    str
        Two tables (yield, then low flows and the evaporation cross-check), units in every
        header, notes and the caution at the end.
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
        f"{'change':>10}{'dry 10%':>9}{'driest':>9}{'Q95':>8}{'Q95':>8}"
    )
    units = (
        f"{'':<24}{'mm/yr':>9}{'ML/yr':>10}{'m3/s':>8}{'mm/yr':>9}{'%':>8}"
        f"{'ML/yr':>10}{'mm/yr':>9}{'mm/yr':>9}{'m3/s':>8}{'chg %':>8}"
    )
    lines += [header, units, "-" * len(header)]
    for name in result.plan_names:
        o = result.outcome(name)
        row = (
            f"{name[:23]:<24}{o.mean_yield_mm:>9.0f}{o.mean_yield_ml:>10,.0f}"
            f"{_plain(o.mean_flow_m3s, 3):>8}"
        )
        if name == "current":
            row += f"{'':>9}{'':>8}{'':>10}{'':>9}{'':>9}{_plain(o.q95_m3s, 3):>8}{'':>8}"
        else:
            c = result.change(o)
            row += (
                f"{_signed(c.yield_mm):>9}{_signed(c.yield_pct):>8}{_signed(c.yield_ml, 0):>10}"
                f"{_signed(c.dry10_mm):>9}{_signed(c.driest_year_mm):>9}"
                f"{_plain(o.q95_m3s, 3):>8}{_signed(c.q95_pct, 0):>8}"
            )
        lines.append(row)
    lines += [""] + _low_flow_lines(result)
    lines += [""] + _monthly_lines(result)
    low, high = CROSSCHECK_TYPICAL_OFFSET_PCT
    lines += [
        "",
        "change: against `current` (negative = less water). dry 10%: mean change over the dry "
        f"years. driest: change in the single driest year ({result.driest_year}). Q95: flow "
        "exceeded on 95 % of days.",
        f"yield: {YIELD_DEFINITION}",
        "7Q: mean annual lowest 7-day mean flow. BFI: baseflow index (Lyne & Hollick filter, "
        "alpha 0.925, 3 passes).",
        "evap vs Zhang: how much more the daily model evaporates than the Zhang curve for the "
        f"same cover mix; {low:+.0f} to {high:+.0f} % is usual for this model. * marks a plan "
        "outside that range or more than 6 points away from current's offset.",
        ZHANG_CURVE_SENTENCE,
    ]
    if result.ensemble is not None:
        lines += ["", *band_lines(result)]
    lines += ["", f"CAUTION: {CAUTION}"]
    return "\n".join(lines)


def _monthly_lines(result: Comparison) -> list[str]:
    """The third table: mean yield [mm/month] and routed streamflow [m3/s] per calendar month."""
    months = "JFMAMJJASOND"
    lines = [
        f"{'per calendar month':<24}{'':<11}" + "".join(f"{m:>7}" for m in months),
        "-" * (35 + 7 * 12),
    ]
    for name in result.plan_names:
        o = result.outcome(name)
        lines.append(f"{name[:23]:<24}{'mm/month':<11}"
                     + "".join(f"{rounded(float(v), 1):>7.1f}" for v in o.monthly_yield_mm))
        lines.append(f"{'':<24}{'m3/s':<11}"
                     + "".join(f"{rounded(float(v), 3):>7.3f}" for v in o.monthly_flow_m3s))
    return lines


def _low_flow_lines(result: Comparison) -> list[str]:
    """The second table: low flows and the evaporation cross-check per plan."""
    threshold = result.plan_file.catchment.low_flow_m3s
    below = f"<{threshold:g}" if threshold is not None else "below"
    header = (
        f"{'plan':<24}{'7Q':>8}{'7Q':>8}{'BFI':>7}{'BFI':>8}{below:>9}{'days':>7}"
        f"{'evap':>8}{'Zhang':>8}{'vs Zhang':>10}"
    )
    units = (
        f"{'':<24}{'m3/s':>8}{'chg %':>8}{'-':>7}{'chg':>8}{'d/yr':>9}{'chg':>7}"
        f"{'mm/yr':>8}{'mm/yr':>8}{'%':>10}"
    )
    lines = [header, units, "-" * len(header)]
    for name in result.plan_names:
        o = result.outcome(name)
        c = None if name == "current" else result.change(o)
        days = "n/a" if o.days_below_per_year is None else f"{o.days_below_per_year:.1f}"
        flag = " *" if o.crosscheck_flag else ""
        lines.append(
            f"{name[:23]:<24}{_plain(o.q7_m3s, 3):>8}"
            f"{'' if c is None else _signed(c.q7_pct, 0):>8}{o.baseflow_index:>7.2f}"
            f"{'' if c is None else _signed(c.baseflow_index, 2):>8}{days:>9}"
            f"{'' if c is None or c.days_below_per_year is None else _signed(c.days_below_per_year):>7}"
            f"{o.model_evap_mm:>8.0f}{o.zhang_evap_mm:>8.0f}"
            f"{_signed(o.crosscheck_offset_pct, 0):>10}{flag}"
        )
    if threshold is None:
        lines.append("(days below: set low_flow_m3s in [catchment] to count days below a flow)")
    return lines


def band_text(central: float, low: float, high: float, digits: int = 0,
              signed: bool = True) -> str:
    """Format a figure with its band, e.g. ``−48 (−61 to −33)`` (the minus sign is U+2212)."""
    def fmt(value: float) -> str:
        return _signed(value, digits) if signed else f"{value:,.{digits}f}"

    return f"{fmt(central)} ({fmt(low)} to {fmt(high)})"


def band_lines(result: Comparison) -> list[str]:
    """Lines giving each plan's headline figures with their 5-95 % ensemble band [mm/yr]."""
    e = result.ensemble
    lines = [
        f"Bands: 5th to 95th percentile over {e.n_members} parameter sets (Latin hypercube, "
        f"seed {e.seed}); central figures use the plan file's parameters. mm/yr.",
        f"{'plan':<24}{'mean yield':>24}{'change':>24}{'change in dry years':>26}",
    ]
    for name in result.plan_names:
        o = result.outcome(name)
        b = result.bands(result.plan_file.plans[name])
        mean = band_text(o.mean_yield_mm, *_ends(b["mean_yield_mm"]), signed=False)
        row = f"{name[:23]:<24}{mean:>24}"
        if name != "current":
            c = result.change(o)
            row += (f"{band_text(c.yield_mm, *_ends(b['change_mm'])):>24}"
                    f"{band_text(c.dry10_mm, *_ends(b['dry_year_change_mm'])):>26}")
        lines.append(row)
    lines.append("A band shows how far the model's answer moves with its parameters; it is not a "
                 "confidence interval for the real catchment.")
    return lines


def _ends(values: tuple[float, float, float]) -> tuple[float, float]:
    return values[0], values[2]


def _readme_text(result: Comparison) -> str:
    return "\n".join(
        [
            f"coveryield comparison: {result.plan_file.catchment.name}",
            f"plan file: {result.plan_file.source}",
            "",
            "annual.csv        per plan and year; mm over the whole catchment, yield_ml in ML",
            "summary.json      mean annual yield (mm, ML/yr, m3/s) and changes against `current`",
            "monthly.csv       per calendar month: yield, land yield and open-water balance"
            " (mm/month), mean streamflow (m3/s)",
            "flow_duration.csv streamflow (m3/s) exceeded on a given % of days, per plan",
            "crosscheck.csv    mean annual evaporation: daily model vs Zhang (2001) and Fu (1981),"
            " offset %",
            "tiles.csv         the same per zone and cover (tile), with mean rain and ET0",
            "report.html       one-page report with charts (self-contained; open in a browser)",
            "daily_flow.csv    routed streamflow at the outlet per plan and day, m3/s",
            f"{MANIFEST_NAME}  what coveryield wrote here, with checksums; --force replaces",
            "                  only these files, and only while unchanged",
        ]
        + (
            [
                "ensemble.csv      one row per parameter set and plan: headline figures (mm/yr)",
                "                  and the parameter values drawn; the bands in summary.json",
                "                  (_p05, _p50, _p95) are percentiles over these rows",
            ]
            if result.ensemble is not None
            else []
        )
        + [
            "",
            YIELD_DEFINITION,
            "Values are rounded to their unit's precision (flows 0.0001 m3/s, depths 0.01 mm).",
            "",
            f"CAUTION: {CAUTION}",
            "",
        ]
    )


def daily_flow_table(result: Comparison) -> pd.DataFrame:
    """Routed streamflow at the outlet, long format: ``date``, ``plan``, ``flow_m3s`` [m3 s-1]."""
    import pandas as pd

    frames = [
        pd.DataFrame({"date": result.tiles.dates.strftime("%Y-%m-%d"), "plan": name,
                      "flow_m3s": result.outcome(name).flow_m3s.to_numpy()})
        for name in result.plan_names
    ]
    return pd.concat(frames, ignore_index=True)


def _write_all(result: Comparison, folder: Path) -> None:
    rounded_frame(result.annual_table()).to_csv(folder / "annual.csv", index=False)
    summary = rounded_record(result.summary())
    (folder / "summary.json").write_text(json.dumps(summary, indent=2) + "\n")
    rounded_frame(result.monthly_table()).to_csv(folder / "monthly.csv")
    flows = rounded_frame(result.fdc_table(), decimals=OUTPUT_DECIMALS["_m3s"])
    flows.to_csv(folder / "flow_duration.csv", index=False)
    rounded_frame(result.crosscheck_table()).to_csv(folder / "crosscheck.csv", index=False)
    rounded_frame(result.cover_crosscheck_table()).to_csv(folder / "tiles.csv", index=False)
    (folder / "README.txt").write_text(_readme_text(result))
    (folder / "report.html").write_text(render_report(result), encoding="utf-8")
    daily_flow_table(result).to_csv(folder / "daily_flow.csv", index=False, float_format="%.5f")
    if result.ensemble is not None:
        result.ensemble_table().to_csv(folder / ENSEMBLE_FILE, index=False, float_format="%.4f")


def _declared(target: OutputFolder | str | os.PathLike, force: bool, inputs,
              *, ensemble: bool) -> OutputFolder:
    if isinstance(target, OutputFolder):
        return target
    return check_output_folder(target, output_files(ensemble=ensemble), force=force,
                               inputs=inputs, retire=() if ensemble else (ENSEMBLE_FILE,))


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
    target = _declared(out_dir, force, inputs, ensemble=result.ensemble is not None)
    return target.write(lambda folder: _write_all(result, folder))
