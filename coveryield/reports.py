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
from typing import TYPE_CHECKING

from coveryield.comparison import CAUTION, Comparison
from coveryield.errors import OutputError
from coveryield.physics.curves import CROSSCHECK_TOLERANCE
from coveryield.report_html import render_report

if TYPE_CHECKING:
    import pandas as pd

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
    "daily_flow.csv",
    "ensemble.csv",
)
#: Files written only in some runs (``ensemble.csv`` with ``--ensemble``).
OPTIONAL_OUTPUT_FILES = ("ensemble.csv",)


def _signed(value: float, digits: int = 1) -> str:
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return "n/a"
    text = f"{value:+,.{digits}f}"
    return text.replace("-", "\u2212")


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
        f"{years[0]}-{years[-1]}; dry years (driest 10 % by rain): "
        + ", ".join(str(y) for y in sorted(result.dry_years)),
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
        "years. Q95: flow exceeded on 95 % of days.",
        "evap vs Zhang: daily model against the Zhang et al. (2001) curve for the same mix; "
        "* marks a difference above the stated tolerance "
        f"({100 * CROSSCHECK_TOLERANCE:.0f} %).",
    ]
    if result.ensemble is not None:
        lines += ["", *band_lines(result)]
    lines += ["", f"CAUTION: {CAUTION}"]
    return "\n".join(lines)


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
            "monthly.csv       mean yield per calendar month, mm/month, and change",
            "flow_duration.csv streamflow (m3/s) exceeded on a given % of days, per plan",
            "crosscheck.csv    mean annual evaporation: daily model vs Zhang (2001) and Fu (1981)",
            "tiles.csv         the same per zone and cover (tile), with mean rain and ET0",
            "report.html       one-page report with charts (self-contained; open in a browser)",
            "daily_flow.csv    routed streamflow at the outlet per plan and day, m3/s",
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
        + ["", f"CAUTION: {CAUTION}", ""]
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
    result.annual_table().to_csv(folder / "annual.csv", index=False, float_format="%.3f")
    (folder / "summary.json").write_text(json.dumps(result.summary(), indent=2) + "\n")
    result.monthly_table().to_csv(folder / "monthly.csv", float_format="%.3f")
    result.fdc_table().to_csv(folder / "flow_duration.csv", index=False, float_format="%.5f")
    result.crosscheck_table().to_csv(folder / "crosscheck.csv", index=False, float_format="%.2f")
    result.cover_crosscheck_table().to_csv(folder / "tiles.csv", index=False, float_format="%.2f")
    (folder / "README.txt").write_text(_readme_text(result))
    (folder / "report.html").write_text(render_report(result), encoding="utf-8")
    daily_flow_table(result).to_csv(folder / "daily_flow.csv", index=False, float_format="%.5f")
    if result.ensemble is not None:
        result.ensemble_table().to_csv(folder / "ensemble.csv", index=False, float_format="%.4f")


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
            if (staging / name).exists():
                os.replace(staging / name, out / name)
            elif name in OPTIONAL_OUTPUT_FILES and (out / name).is_file():
                os.remove(out / name)  # an earlier run's file that this run does not make
    except OSError as exc:
        raise OutputError(f"{out}: writing outputs failed ({exc}); nothing was changed") from None
    finally:
        shutil.rmtree(staging, ignore_errors=True)
    return out
