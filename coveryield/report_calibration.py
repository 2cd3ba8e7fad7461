"""Outputs of a calibration: its JSON, the calibrated plan file, the daily fit and a report.

``calibration.json``, ``calibrated.toml``, ``fit_flow.csv`` and a one-page ``report.html`` with
the fit charts (observed against simulated hydrograph, flow duration curves). Nothing here
computes hydrology.

Flows are m3 s-1; scores are dimensionless except the bias [%].
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd

from coveryield.comparison import CAUTION, flow_duration_curve
from coveryield.plans import write_plan_file
from coveryield.report_html import _CSS, _RC, _esc, _num, _signed, _svg, _td
from coveryield.uncertainty.calibration import (
    RANGE_KGE_TOLERANCE,
    WARM_UP_DAYS,
    CalibrationResult,
)

__all__ = ["CALIBRATION_FILES", "calibration_json", "fit_table", "render_calibration_report",
           "calibration_lines", "write_calibration_outputs"]

#: Files written by :func:`write_calibration_outputs`.
CALIBRATION_FILES = ("calibration.json", "calibrated.toml", "fit_flow.csv", "report.html",
                     "README.txt")

_OBSERVED = "#222222"
_SIMULATED = "#0072b2"
_START = "#d55e00"
_EXTRA_CSS = "td.text { max-width: 26em; font-size: .95em; }\n"
_SCORES = (("kge", "KGE′ (Kling 2012)", 3), ("kge_2009", "KGE (Gupta 2009)", 3),
           ("nse", "NSE", 3), ("log_nse", "NSE of log flows", 3), ("bias_pct", "bias %", 1))


def calibration_json(result: CalibrationResult) -> dict:
    """``calibration.json``: scores per period, parameters, periods, gaps and the caution."""
    return {**result.to_json(), "caution": CAUTION}


def fit_table(result: CalibrationResult) -> pd.DataFrame:
    """Daily observed and simulated flow of the `current` plan [m3 s-1], with the period.

    Returns
    -------
    pandas.DataFrame
        ``date``, ``period`` (warm-up, calibration, validation or not scored), ``observed_m3s``
        (empty on missing days), ``simulated_m3s`` (calibrated), ``start_m3s`` (the plan
        file's own parameters).
    """
    dates = result.simulated_m3s.index
    period = np.full(len(dates), "not scored", dtype=object)
    period[: min(WARM_UP_DAYS, len(dates))] = "warm-up"
    period[dates.isin(result.periods.calibration)] = "calibration"
    period[dates.isin(result.periods.validation)] = "validation"
    return pd.DataFrame({
        "date": dates.strftime("%Y-%m-%d"),
        "period": period,
        "observed_m3s": result.observed.flow_m3s.reindex(dates).to_numpy(),
        "simulated_m3s": result.simulated_m3s.to_numpy(),
        "start_m3s": result.start_m3s.to_numpy(),
    })


def _at_bound(p: dict) -> bool:
    low, high = p["bounds"]
    return abs(p["value"] - low) <= 1e-3 * low or abs(p["value"] - high) <= 1e-3 * high


def calibration_lines(result: CalibrationResult) -> list[str]:
    """Plain-text summary for the terminal: scores before and after, fitted values."""
    lines = [f"{'period':<12}{'days':>6}  {'':<7}{'KGE′':>7}{'NSE':>7}{'logNSE':>8}{'bias %':>8}"]
    for name in ("calibration", "validation"):
        days = len(getattr(result.periods, name))
        for label, scores in (("before", result.start_scores[name]),
                              ("fitted", result.scores[name])):
            lines.append(f"{name if label == 'before' else '':<12}"
                         f"{days if label == 'before' else '':>6}  {label:<7}"
                         f"{scores['kge']:>7.3f}{scores['nse']:>7.3f}{scores['log_nse']:>8.3f}"
                         f"{scores['bias_pct']:>+8.1f}")
    lines += ["", f"{'parameter':<28}{'start':>9}{'fitted':>9}   acceptable range (KGE′ within "
              f"{RANGE_KGE_TOLERANCE:g} of the best)"]
    for p in result.parameters:
        accepted = "-" if p["range"] is None else f"{p['range'][0]:.3g} to {p['range'][1]:.3g}"
        edge = "  at the edge of its search range" if _at_bound(p) else ""
        lines.append(f"{p['name'] + ' [' + p['unit'] + ']':<28}{p['start']:>9.3g}"
                     f"{p['value']:>9.3g}   {accepted}{edge}")
    lines += ["", f"split-sample test: calibration before {result.periods.split_year}, "
              f"validation from {result.periods.split_year}; first {WARM_UP_DAYS} days of the "
              f"climate record not scored (warm-up); {result.n_runs} simulations in "
              f"{result.seconds:.1f} s", *result.observed.gap_lines()]
    return lines


# ---- the HTML page -------------------------------------------------------------------------


def _score_table(result: CalibrationResult) -> str:
    head = ("<tr><th>period</th><th>days</th><th>parameters</th>"
            + "".join(f"<th>{_esc(label)}</th>" for _, label, _ in _SCORES) + "</tr>")
    rows = []
    for name in ("calibration", "validation"):
        span = result.periods.describe(name)
        for k, (label, scores) in enumerate((("plan file's", result.start_scores[name]),
                                             ("fitted", result.scores[name]))):
            cells = ([f'<td class="name" rowspan="2">{name}<br>{span["start"]} to '
                      f'{span["end"]}</td>', _td(_num(span["n_days"]))] if k == 0
                     else [_td("")])
            cells.append(_td(label, "name"))
            cells += [_td(_signed(scores[key], digits) if key == "bias_pct"
                          else f"{scores[key]:.{digits}f}") for key, _, digits in _SCORES]
            rows.append("<tr>" + "".join(cells) + "</tr>")
    return "<table>" + head + "".join(rows) + "</table>"


def _parameter_table(result: CalibrationResult) -> str:
    head = ("<tr><th>parameter</th><th>acts on</th><th>plan file's</th><th>fitted</th>"
            "<th>search range</th><th>acceptable range<br>(KGE′ within "
            f"{RANGE_KGE_TOLERANCE:g} of the best)</th></tr>")
    rows = []
    for p in result.parameters:
        unit = "" if p["unit"] == "-" else f" {p['unit']}"
        accepted = ("–" if p["range"] is None else
                    f"{p['range'][0]:.3g} to {p['range'][1]:.3g}{unit}")
        fitted = f"{p['value']:.3g}{unit}" + (" \u26a0 at the edge" if _at_bound(p) else "")
        rows.append("<tr>" + "".join([
            _td(f"<code>{_esc(p['name'])}</code>", "name"), _td(_esc(p["acts_on"]), "text"),
            _td(f"{p['start']:.3g}{unit}"), _td(fitted, "n flag" if _at_bound(p) else "n"),
            _td(f"{p['bounds'][0]:g} to {p['bounds'][1]:g}{unit}"), _td(accepted)]) + "</tr>")
    return "<table>" + head + "".join(rows) + "</table>"


def _hydrograph(fig, result: CalibrationResult) -> None:
    ax = fig.add_subplot()
    observed = result.observed.flow_m3s.reindex(result.simulated_m3s.index)
    split = pd.Timestamp(year=result.periods.split_year, month=1, day=1)
    first = result.periods.calibration[0]
    ax.axvspan(result.simulated_m3s.index[0], first, color="#eeeeee", zorder=0,
               label="not scored (warm-up)")
    ax.axvline(split, color="#777777", linewidth=0.9, linestyle="--")
    ax.annotate("calibration \u2190 | \u2192 validation", (split, 1.0),
                xycoords=("data", "axes fraction"), ha="center", va="bottom", fontsize=8)
    ax.plot(observed.index, observed.to_numpy(), color=_OBSERVED, linewidth=0.5,
            label="observed")
    ax.plot(result.simulated_m3s.index, result.simulated_m3s.to_numpy(), color=_SIMULATED,
            linewidth=0.5, alpha=0.85, label="simulated, fitted")
    ax.set_yscale("log")
    positive = observed[observed > 0]
    if len(positive):  # days the store runs (nearly) dry would stretch the log axis for ever
        ax.set_ylim(bottom=float(positive.min()) / 5.0)
    ax.set_ylabel("streamflow [m³/s], log scale")
    ax.legend(loc="upper left", bbox_to_anchor=(1.0, 1.0), fontsize=8)


def _detail(fig, result: CalibrationResult) -> None:
    ax = fig.add_subplot()
    days = result.periods.validation
    year = int(days[0].year) if days[0].dayofyear == 1 else int(days[0].year) + 1
    if year not in set(days.year):
        year = int(days[0].year)
    window = result.simulated_m3s.index[result.simulated_m3s.index.year == year]
    observed = result.observed.flow_m3s.reindex(window)
    ax.plot(window, observed.to_numpy(), color=_OBSERVED, linewidth=1.2, label="observed")
    ax.plot(window, result.simulated_m3s.reindex(window).to_numpy(), color=_SIMULATED,
            linewidth=1.2, label="simulated, fitted")
    ax.plot(window, result.start_m3s.reindex(window).to_numpy(), color=_START, linewidth=1.0,
            linestyle=":", label="simulated, plan file's parameters")
    ax.set_ylabel("streamflow [m³/s]")
    ax.set_title(f"one validation year in detail: {year}", fontsize=9)
    ax.set_ylim(bottom=0)
    ax.legend(loc="upper left", bbox_to_anchor=(1.0, 1.0), fontsize=8)


def _fdc(fig, result: CalibrationResult) -> None:
    ax = fig.add_subplot()
    for name, dashes in (("calibration", "-"), ("validation", "--")):
        days = getattr(result.periods, name)
        for series, colour, label in ((result.observed.flow_m3s, _OBSERVED, "observed"),
                                      (result.simulated_m3s, _SIMULATED, "simulated")):
            curve = flow_duration_curve(series.reindex(days).to_numpy())
            flow = curve["flow_m3s"].to_numpy()
            ax.plot(curve["exceedance_pct"], np.where(flow > 0, flow, np.nan), color=colour,
                    linestyle=dashes, linewidth=1.3, label=f"{label}, {name}")
    ax.set_yscale("log")
    positive = result.observed.flow_m3s[result.observed.flow_m3s > 0]
    if len(positive):
        ax.set_ylim(bottom=float(positive.min()) / 5.0)
    ax.set_xlim(0, 100)
    ax.set_xlabel("share of days the flow is equalled or exceeded [%]")
    ax.set_ylabel("streamflow [m³/s], log scale")
    ax.legend(loc="upper left", bbox_to_anchor=(1.0, 1.0), fontsize=8)


def _figures(result: CalibrationResult) -> str:
    import matplotlib
    from matplotlib.figure import Figure

    specs = [
        (_hydrograph, (9.0, 3.3), "Observed and simulated daily streamflow of the current plan, "
         "whole record, log scale. Grey: warm-up, not scored; dashed line: split between the "
         "calibration and the validation period."),
        (_detail, (9.0, 3.0), "One year of the validation period in detail (linear scale), "
         "with the flow of the plan file's own parameters for comparison."),
        (_fdc, (9.0, 3.3), "Flow duration curves of observed and simulated flow, on the observed "
         "days of each period."),
    ]
    parts = []
    with matplotlib.rc_context(_RC):
        for draw, size, caption in specs:
            fig = Figure(figsize=size, layout="constrained")
            draw(fig, result)
            parts.append(f'<figure role="img" aria-label="{_esc(caption)}">{_svg(fig)}'
                         f"<figcaption>{_esc(caption)}</figcaption></figure>")
            fig.clear()
    return "".join(parts)


def render_calibration_report(result: CalibrationResult) -> str:
    """One self-contained HTML page: scores, parameters, fit charts, method and caution."""
    spec = result.plan_file.catchment
    name = _esc(spec.name)
    caution = f'<div class="caution">Caution: {_esc(CAUTION)}</div>'
    gaps = "<br>".join(_esc(line) for line in result.observed.gap_lines())
    parts = [
        "<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{name}: calibration against observed flow</title>",
        f"<style>{_CSS}{_EXTRA_CSS}</style></head><body>",
        f"<h1>{name}: calibration against observed flow</h1>",
        f'<p class="meta">Plan file: <code>{_esc(result.start_plan.source)}</code> · observed '
        f"flow: <code>{_esc(result.observed.source)}</code> · {result.n_runs} simulations in "
        f"{result.seconds:.1f} s</p>",
        caution,
        "<h2>Fit scores</h2>", _score_table(result),
        '<p class="note">Daily flow of the <code>current</code> plan at the outlet, scored on the '
        "observed days only (missing days are never filled). KGE′ (Kling et al. 2012) is the "
        "objective; 1 is a perfect fit for every score except the bias (0). A constant flow "
        "equal to the observed mean scores KGE 1 − √2 ≈ −0.41 and NSE 0.</p>",
        "<h2>Fitted parameters</h2>", _parameter_table(result),
        '<p class="note">A value at the edge of its search range (\u26a0) means the fit wanted '
        "more than the range allows: read it as a sign that the model lacks a process this "
        "catchment has, or that the data disagree, not as a measured value. The acceptable "
        "range is what <code>compare --ensemble</code> draws each factor from when this "
        "calibrated plan file is used.</p>",
        "<h2>Fit charts</h2>", _figures(result),
        "<h2>How this was computed</h2>",
        f"<p>Split-sample test (Klemeš 1986): the parameters were fitted on the days before "
        f"{result.periods.split_year} and tested, unchanged, on the days from "
        f"{result.periods.split_year}. The first {WARM_UP_DAYS} days of the climate record are "
        "simulated but not scored (the soil starts half full). The surface-resistance and "
        "root-zone factors were screened by Latin hypercube and refined by Nelder–Mead; for "
        "each trial the recession constant was fitted on the same simulation, since it only "
        "routes the yield. All searches run in log space within the stated ranges.</p>",
        f'<p class="note">{gaps}</p>',
        caution, "</body></html>",
    ]
    return "\n".join(parts) + "\n"


def _readme(result: CalibrationResult) -> str:
    return "\n".join([
        f"coveryield calibration: {result.plan_file.catchment.name}",
        f"plan file: {result.start_plan.source}",
        f"observed flow: {result.observed.source}",
        "",
        "calibration.json  scores (KGE', KGE, NSE, log-flow NSE, bias %) per period, before and",
        "                  after the fit; fitted parameters with their ranges; observed gaps",
        "calibrated.toml   the plan file with the fitted values (a new file; yours is unchanged):",
        "                  `coveryield compare calibrated.toml` reproduces the fitted flow",
        "fit_flow.csv      daily observed and simulated flow of the current plan, m3/s",
        "report.html       scores, parameters and fit charts (open in a browser)",
        "",
        f"CAUTION: {CAUTION}",
        "",
    ])


def _write_all(result: CalibrationResult, folder: Path) -> None:
    (folder / "calibration.json").write_text(
        json.dumps(calibration_json(result), indent=2) + "\n", encoding="utf-8")
    write_plan_file(result.plan_file, folder / "calibrated.toml")
    fit_table(result).to_csv(folder / "fit_flow.csv", index=False, float_format="%.5f")
    (folder / "report.html").write_text(render_calibration_report(result), encoding="utf-8")
    (folder / "README.txt").write_text(_readme(result), encoding="utf-8")


#: Files :func:`write_calibration_outputs` writes (the folder's manifest comes on top).
CALIBRATION_FILES = ("calibration.json", "calibrated.toml", "fit_flow.csv", "report.html",
                     "README.txt")


def write_calibration_outputs(result: CalibrationResult, out_dir, *, force: bool = False,
                              inputs=None) -> Path:
    """Write the calibration's files into a folder, all or nothing.

    Parameters
    ----------
    result : CalibrationResult
        The calibration.
    out_dir : OutputFolder or path
        A folder checked with :func:`coveryield.output_folder.check_output_folder` before the
        work (the command line does this), or a path, checked here: new or empty, or with
        ``force`` one holding coveryield's own earlier outputs.
    force : bool
        Replace coveryield's own, unchanged earlier outputs (ignored for a checked folder).
    inputs : mapping, optional
        Role -> path of the run's inputs, never replaced (default: the plan file and its
        climate file).

    Returns
    -------
    pathlib.Path
        The folder.

    Raises
    ------
    coveryield.errors.OutputError
        If the folder cannot take the outputs, or cannot be written.
    """
    from coveryield.output_folder import as_output_folder

    inputs = result.plan_file.input_files() if inputs is None else inputs
    target = as_output_folder(out_dir, CALIBRATION_FILES, force=force, inputs=inputs)
    return target.write(lambda folder: _write_all(result, folder))
