"""Reports: the printed comparison table and the output folder (written atomically).

Nothing here computes hydrology; it formats :class:`coveryield.comparison.Comparison` results.
"""

from __future__ import annotations

import json
import math
import os
import shutil
import tempfile
from collections.abc import Callable
from pathlib import Path

from coveryield.comparison import CAUTION, YIELD_DEFINITION, Comparison
from coveryield.errors import OutputError
from coveryield.physics.curves import CROSSCHECK_TYPICAL_OFFSET_PCT, ZHANG_CURVE_SENTENCE
from coveryield.report_html import render_report

#: Files written by :func:`write_outputs`, in order.
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
        f"{years[0]}-{years[-1]}; dry years (driest 10 % by rain): "
        + ", ".join(str(y) for y in sorted(result.dry_years)),
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
        "years. Q95: flow exceeded on 95 % of days.",
        f"yield: {YIELD_DEFINITION}",
        "7Q: mean annual lowest 7-day mean flow. BFI: baseflow index (Lyne & Hollick filter, "
        "alpha 0.925, 3 passes).",
        "evap vs Zhang: how much more the daily model evaporates than the Zhang curve for the "
        f"same cover mix; {low:+.0f} to {high:+.0f} % is usual for this model. * marks a plan "
        "outside that range or more than 6 points away from current's offset.",
        ZHANG_CURVE_SENTENCE,
        "",
        f"CAUTION: {CAUTION}",
    ]
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
            "",
            YIELD_DEFINITION,
            "Values are rounded to their unit's precision (flows 0.0001 m3/s, depths 0.01 mm).",
            "",
            f"CAUTION: {CAUTION}",
            "",
        ]
    )


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


def _staging_folder(target: Path) -> Path:
    """Make a hidden temporary folder beside ``target`` (same file system: renames are atomic)."""
    parent = target.resolve().parent
    try:
        parent.mkdir(parents=True, exist_ok=True)
        return Path(tempfile.mkdtemp(prefix=f".{target.name}-", dir=parent))
    except OSError as exc:
        raise OutputError(f"{target}: cannot write here ({exc.strerror})") from None


def write_new_folder(target: str | os.PathLike, write: Callable[[Path], None]) -> Path:
    """Create a NEW folder holding what ``write`` puts in it, all or nothing.

    ``write`` fills a hidden temporary folder beside ``target``, which is then renamed; on any
    failure the temporary folder is removed and ``target`` does not appear.

    Parameters
    ----------
    target : path
        Folder to create; must not exist.
    write : callable
        Called with the temporary folder's path.

    Returns
    -------
    pathlib.Path
        The new folder.

    Raises
    ------
    coveryield.errors.OutputError
        If ``target`` exists or cannot be written.
    """
    target = Path(target)
    if target.exists():
        raise OutputError(f"{target}: exists already; expected a new folder")
    staging = _staging_folder(target)
    try:
        write(staging)
        os.rename(staging, target)
    except OSError as exc:
        raise OutputError(f"{target}: writing failed ({exc}); nothing was written") from None
    finally:
        shutil.rmtree(staging, ignore_errors=True)
    return target


def write_outputs(result: Comparison, out_dir: str | os.PathLike, *, force: bool = False) -> Path:
    """Write the comparison tables into a folder, all or nothing.

    Every file is first written to a temporary folder beside ``out_dir``; only when all are
    complete are they moved into place, so a failure never leaves half an output.

    Parameters
    ----------
    result : Comparison
        The compared plans.
    out_dir : path
        Folder to create (or an empty folder). An existing non-empty folder is refused unless
        ``force`` is set, and even then only the files listed in :data:`OUTPUT_FILES` are replaced.
    force : bool
        Replace earlier coveryield outputs in ``out_dir``.

    Returns
    -------
    pathlib.Path
        The output folder.

    Raises
    ------
    coveryield.errors.OutputError
        If the folder holds other files, or cannot be written.
    """
    out = Path(out_dir)
    if out.exists() and not out.is_dir():
        raise OutputError(f"{out}: exists and is not a folder; expected a new or empty folder")
    if out.is_dir() and any(out.iterdir()) and not force:
        raise OutputError(
            f"{out}: folder is not empty; choose a new folder, or pass --force to replace "
            f"earlier coveryield outputs ({', '.join(OUTPUT_FILES)})"
        )
    if not out.exists():
        return write_new_folder(out, lambda folder: _write_all(result, folder))
    staging = _staging_folder(out)
    try:
        _write_all(result, staging)
        for name in OUTPUT_FILES:
            os.replace(staging / name, out / name)
    except OSError as exc:
        raise OutputError(f"{out}: writing outputs failed ({exc}); nothing was changed") from None
    finally:
        shutil.rmtree(staging, ignore_errors=True)
    return out
