"""A one-page, self-contained HTML report of a plan comparison, with charts as inline SVG.

:func:`render_report` returns the page as a string; :mod:`coveryield.reports` writes it as
``report.html``. The page needs nothing from the network: styles are inline, charts are SVG
drawn by matplotlib (imported only when a report is rendered, so the command line stays fast).

All depths are mm per year over the whole catchment; volumes ML per year (1 mm over 1 km2 =
1 ML); flows m3 s-1. Every name that comes from a plan file is HTML-escaped.
"""

from __future__ import annotations

import html
import io
import math
import string
from collections.abc import Callable, Iterable

import numpy as np

from coveryield import palette
from coveryield.comparison import CAUTION, YIELD_DEFINITION, Comparison, PlanChange, PlanOutcome
from coveryield.palette import PLAN_STYLES
from coveryield.physics.curves import (
    CROSSCHECK_CHANGE_TOLERANCE_PCT,
    CROSSCHECK_TYPICAL_OFFSET_PCT,
    ZHANG_CURVE_SENTENCE,
    crosscheck_offset_pct,
)

__all__ = ["render_report", "PLAN_STYLES"]

_MONTHS = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")

_RC = {
    "svg.fonttype": "none",  # text stays text: smaller, searchable, prints sharp
    "font.family": "sans-serif",
    "font.size": 9.0,
    "axes.spines.top": False,
    "axes.spines.right": False,
    "axes.grid": True,
    "grid.color": "#dddddd",
    "grid.linewidth": 0.6,
    "legend.frameon": False,
}

_CSS = string.Template("""
body { font-family: "Segoe UI", "Helvetica Neue", Arial, sans-serif; color: $ink;
       max-width: 1060px; margin: 1.5em auto; padding: 0 1.2em; line-height: 1.4; }
h1 { font-size: 1.55em; margin: 0 0 .2em; }
h2 { font-size: 1.15em; margin: 1.6em 0 .4em; border-bottom: 1px solid #999; }
p.meta { margin: .1em 0; color: #333; }
.caution { border: 3px solid $edge; background: $bg; padding: .6em .9em; margin: 1em 0;
           font-weight: 600; }
table { border-collapse: collapse; font-size: .86em; margin: .4em 0 .6em; }
th, td { border: 1px solid #bbb; padding: .25em .45em; }
th { background: #f0f0f0; font-weight: 600; vertical-align: bottom; }
td.n { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
td.name { white-space: nowrap; }
td.changed { font-weight: 700; }
td.flag { font-weight: 700; color: $alert; }
tr.unused td { color: #777; }
td[rowspan] { vertical-align: top; }
.swatch { display: inline-block; width: .9em; height: .9em; margin-right: .35em;
          vertical-align: -.1em; border: 1px solid #555; }
figure { margin: .8em 0 1.2em; page-break-inside: avoid; break-inside: avoid; }
figure svg { width: 100%; height: auto; max-width: 1000px; display: block; }
figcaption { font-size: .88em; color: #333; margin-top: .2em; }
.note { font-size: .88em; color: #333; }
@media print {
  body { max-width: none; margin: 0; font-size: 10pt; }
  .caution { background: none; }
  th { background: none; }
  h2 { page-break-after: avoid; break-after: avoid; }
  table, figure { page-break-inside: avoid; break-inside: avoid; }
}
""").substitute(
    ink=palette.INK, edge=palette.CAUTION_EDGE, bg=palette.CAUTION_BG, alert=palette.ALERT
)


# ---- small formatters ----------------------------------------------------------------------


def _esc(text: object) -> str:
    return html.escape(str(text), quote=True)


def _missing(value: float | None) -> bool:
    return value is None or (isinstance(value, float) and math.isnan(value))


def _num(value: float | None, digits: int = 0) -> str:
    return "n/a" if _missing(value) else f"{value:,.{digits}f}"


def _signed(value: float | None, digits: int = 0) -> str:
    if _missing(value):
        return "n/a"
    return f"{value:+,.{digits}f}".replace("-", "\u2212")


def _td(text: str, cls: str = "n") -> str:
    return f'<td class="{cls}">{text}</td>'


def _style(index: int) -> tuple:
    return palette.plan_style(index)


def _swatch(index: int) -> str:
    return f'<span class="swatch" style="background:{_style(index)[0]}"></span>'


def _offset_cell(offset_pct: float, reason: str = "") -> str:
    """Model vs Zhang difference [% of Zhang]; marked ⚠ (with the reason as a tooltip) if flagged."""
    if _missing(offset_pct):
        return _td("n/a")
    if reason:
        return (
            f'<td class="n flag" title="{_esc(reason)}">\u26a0 {_signed(offset_pct)}</td>'
        )
    return _td(_signed(offset_pct))


# ---- tables --------------------------------------------------------------------------------


def _headline_table(result: Comparison) -> str:
    group = (
        '<tr><th rowspan="2">plan</th><th colspan="3">mean annual yield</th>'
        '<th colspan="3">change against current</th><th colspan="2">change in dry years</th>'
        '<th colspan="3">low flow</th><th colspan="3">mean annual evaporation</th></tr>'
    )
    units = (
        "<tr><th>mm/yr</th><th>ML/yr</th><th>m³/s</th>"
        "<th>mm/yr</th><th>%</th><th>ML/yr</th>"
        "<th>driest 10 % of years<br>mm/yr</th><th>driest year<br>mm/yr</th>"
        "<th>Q95<br>m³/s</th><th>Q95 change<br>m³/s</th><th>Q95 change<br>%</th>"
        "<th>daily model<br>mm/yr</th><th>Zhang curve<br>mm/yr</th>"
        "<th>model vs Zhang<br>% more</th></tr>"
    )
    rows = []
    for i, name in enumerate(result.plan_names):
        o = result.outcome(name)
        cells = [
            _td(_swatch(i) + _esc(name), "name"),
            _td(_num(o.mean_yield_mm)),
            _td(_num(o.mean_yield_ml)),
            _td(_num(o.mean_flow_m3s, 3)),
        ]
        if name == "current":
            cells += [_td("baseline", "name")] + [_td("")] * 4 + [_td(_num(o.q95_m3s, 3))]
            cells += [_td("")] * 2
        else:
            c: PlanChange = result.change(o)
            cells += [
                _td(_signed(c.yield_mm)),
                _td(_signed(c.yield_pct, 1)),
                _td(_signed(c.yield_ml)),
                _td(_signed(c.dry10_mm)),
                _td(_signed(c.driest_year_mm)),
                _td(_num(o.q95_m3s, 3)),
                _td(_signed(c.q95_m3s, 3)),
                _td(_signed(c.q95_pct, 1)),
            ]
        cells += [
            _td(_num(o.model_evap_mm)),
            _td(_num(o.zhang_evap_mm)),
            _offset_cell(o.crosscheck_offset_pct, o.crosscheck_reason),
        ]
        rows.append("<tr>" + "".join(cells) + "</tr>")
    return "<table>" + group + units + "".join(rows) + "</table>"


def _low_flow_table(result: Comparison) -> str:
    threshold = result.plan_file.catchment.low_flow_m3s
    below = (
        f"days below {threshold:g} m³/s<br>d/yr" if threshold is not None else "days below<br>d/yr"
    )
    head = (
        "<tr><th>plan</th><th>7Q<br>m³/s</th><th>7Q change<br>%</th><th>baseflow index<br>–</th>"
        f"<th>BFI change<br>–</th><th>{below}</th><th>change<br>d/yr</th><th>Q95<br>m³/s</th>"
        "</tr>"
    )
    rows = []
    for i, name in enumerate(result.plan_names):
        o = result.outcome(name)
        c = None if name == "current" else result.change(o)
        days = None if o.days_below_per_year is None else o.days_below_per_year
        cells = [
            _td(_swatch(i) + _esc(name), "name"),
            _td(_num(o.q7_m3s, 3)),
            _td("" if c is None else _signed(c.q7_pct, 1)),
            _td(_num(o.baseflow_index, 2)),
            _td("" if c is None else _signed(c.baseflow_index, 3)),
            _td(_num(days, 1)),
            _td("" if c is None else _signed(c.days_below_per_year, 1)),
            _td(_num(o.q95_m3s, 3)),
        ]
        rows.append("<tr>" + "".join(cells) + "</tr>")
    return "<table>" + head + "".join(rows) + "</table>"


def _shares_table(result: Comparison) -> str:
    names = result.plan_names
    plans = result.plan_file.plans
    head = (
        "<tr><th>zone</th><th>cover</th>"
        + "".join(f"<th>{_swatch(i)}{_esc(n)}<br>share %</th>" for i, n in enumerate(names))
        + "</tr>"
    )
    rows = []
    for zone in result.zone_names:
        covers = [
            c
            for c in result.plan_file.covers
            if any(plans[n].get(zone, {}).get(c, 0.0) > 0.0 for n in names)
        ]
        for k, cover in enumerate(covers):
            base = plans["current"].get(zone, {}).get(cover, 0.0)
            first = f'<td class="name" rowspan="{len(covers)}">{_esc(zone)}</td>'
            cells = [first] if k == 0 else []
            cells.append(_td(_esc(cover), "name"))
            for n in names:
                share = plans[n].get(zone, {}).get(cover, 0.0)
                text = _num(100.0 * share) if share > 0.0 else "–"
                cells.append(_td(text, "n changed" if abs(share - base) > 1e-9 else "n"))
            rows.append("<tr>" + "".join(cells) + "</tr>")
    return "<table>" + head + "".join(rows) + "</table>"


def _tile_table(result: Comparison) -> str:
    t = result.cover_crosscheck_table()
    head = (
        "<tr><th>zone</th><th>cover</th><th>rain<br>mm/yr</th><th>reference ET0<br>mm/yr</th>"
        "<th>daily model<br>mm/yr</th><th>Zhang curve<br>mm/yr</th><th>Fu curve<br>mm/yr</th>"
        "<th>model vs Zhang<br>% more</th></tr>"
    )
    plans = result.plan_file.plans.values()
    rows = []
    for r in t.itertuples(index=False):
        used = any(shares.get(r.zone, {}).get(r.cover, 0.0) > 0.0 for shares in plans)
        cells = [
            _td(_esc(r.zone), "name"),
            _td(_esc(r.cover) + ("" if used else " (in no plan)"), "name"),
            _td(_num(r.rain_mm)),
            _td(_num(r.et0_mm)),
            _td(_num(r.model_evap_mm)),
            _td(_num(r.zhang_evap_mm)),
            _td(_num(r.fu_evap_mm)),
            _td(_signed(crosscheck_offset_pct(r.model_evap_mm, r.zhang_evap_mm))),
        ]
        rows.append(("<tr>" if used else '<tr class="unused">') + "".join(cells) + "</tr>")
    return "<table>" + head + "".join(rows) + "</table>"


def _band_cell(central: float, band: tuple[float, float, float], signed: bool = True) -> str:
    fmt = _signed if signed else _num
    return _td(f"{fmt(central)} <small>({fmt(band[0])} to {fmt(band[2])})</small>")


def _band_section(result: Comparison) -> list[str]:
    """Headlines with their ensemble bands (nothing without an ensemble)."""
    if result.ensemble is None:
        return []
    from coveryield.comparison import ENSEMBLE_MEANING

    e = result.ensemble
    head = (
        "<tr><th>plan</th><th>mean annual yield<br>mm/yr</th><th>change against current<br>"
        "mm/yr</th><th>change in the driest 10 % of years<br>mm/yr</th></tr>"
    )
    rows = []
    for i, name in enumerate(result.plan_names):
        o = result.outcome(name)
        b = result.bands(result.plan_file.plans[name])
        cells = [_td(_swatch(i) + _esc(name), "name"), _band_cell(o.mean_yield_mm,
                                                                  b["mean_yield_mm"], False)]
        if name == "current":
            cells += [_td("baseline", "name"), _td("")]
        else:
            c = result.change(o)
            cells += [_band_cell(c.yield_mm, b["change_mm"]),
                      _band_cell(c.dry10_mm, b["dry_year_change_mm"])]
        rows.append("<tr>" + "".join(cells) + "</tr>")
    varied = ", ".join(f"<code>{_esc(d.name)}</code> {d.low:.3g}–{d.high:.3g}"
                       for d in e.design.dimensions)
    return [
        "<h2>Uncertainty bands</h2>",
        "<table>" + head + "".join(rows) + "</table>",
        f'<p class="note">Central figure (the plan file\'s parameters), then in brackets the 5th '
        f"to 95th percentile over {e.n_members} parameter sets drawn by Latin hypercube "
        f"(seed {_esc(e.seed)}), uniformly over: {varied}. {_esc(ENSEMBLE_MEANING)}</p>",
    ]


# ---- charts --------------------------------------------------------------------------------


def _svg(fig) -> str:
    """Return the figure as an inline ``<svg>`` element (no XML prolog, no metadata block)."""
    buffer = io.StringIO()
    fig.savefig(
        buffer,
        format="svg",
        metadata={"Creator": None, "Date": None, "Format": None, "Type": None},
    )
    text = buffer.getvalue()
    return text[text.index("<svg") :]


def _plot_lines(ax, result: Comparison, xy: Callable[[PlanOutcome], tuple], **kwargs) -> None:
    for i, name in enumerate(result.plan_names):
        colour, marker, dashes, _ = _style(i)
        x, y = xy(result.outcome(name))
        ax.plot(
            x,
            y,
            color=colour,
            marker=marker,
            linestyle=dashes,
            label=name,
            linewidth=2.0 if name == "current" else 1.4,
            markersize=4,
            **kwargs,
        )


def _annual_chart(fig, result: Comparison) -> None:
    ax = fig.add_subplot()
    for k, year in enumerate(sorted(result.dry_years)):
        ax.axvspan(
            year - 0.5,
            year + 0.5,
            color=palette.DRY_BAND,
            zorder=0,
            label="driest 10 % of years (by rain)" if k == 0 else None,
        )
    _plot_lines(ax, result, lambda o: (o.annual.index.to_numpy(), o.annual["yield_mm"].to_numpy()))
    ax.set_xlabel("calendar year")
    ax.set_ylabel("water yield [mm/yr over the catchment]")
    ax.set_xlim(result.years[0] - 0.7, result.years[-1] + 0.7)
    ax.legend(loc="upper left", bbox_to_anchor=(1.0, 1.0), fontsize=8)


def _monthly_chart(fig, result: Comparison) -> None:
    left, right = fig.subplots(1, 2, gridspec_kw={"width_ratios": (1.25, 1.0)})
    months = np.arange(1, 13)
    _plot_lines(left, result, lambda o: (months, o.monthly_land_yield_mm.to_numpy()))
    for i, name in enumerate(result.plan_names):
        left.plot(
            months,
            result.outcome(name).monthly_open_water_mm.to_numpy(),
            color=_style(i)[0],
            linestyle=":",
            linewidth=1.0,
            label="open-water balance" if i == 0 else None,
        )
    left.axhline(0.0, color="#222222", linewidth=0.8)
    left.set_xticks(months, [m[0] for m in _MONTHS])
    left.set_xlabel("calendar month")
    left.set_ylabel("mean depth [mm/month]")
    left.set_title("land yield (solid) and open-water balance (dotted)", fontsize=8.5)
    _plot_lines(right, result, lambda o: (months, o.monthly_flow_m3s.to_numpy()))
    right.set_xticks(months, [m[0] for m in _MONTHS])
    right.set_xlabel("calendar month")
    right.set_ylabel("mean streamflow [m³/s]")
    right.set_ylim(bottom=0)
    right.set_title("routed streamflow", fontsize=8.5)
    right.legend(loc="upper left", bbox_to_anchor=(1.0, 1.0), fontsize=8)


def _fdc_chart(fig, result: Comparison) -> None:
    ax = fig.add_subplot()

    def points(o: PlanOutcome) -> tuple:
        flow = o.fdc["flow_m3s"].to_numpy()
        return o.fdc["exceedance_pct"].to_numpy(), np.where(flow > 0.0, flow, np.nan)

    _plot_lines(ax, result, points, markevery=10)
    if any((result.outcome(n).fdc["flow_m3s"] > 0).any() for n in result.plan_names):
        ax.set_yscale("log")
    ax.axvline(95.0, color="#777777", linewidth=0.8, linestyle=":")
    ax.annotate(
        "Q95",
        (95.0, 1.0),
        xycoords=("data", "axes fraction"),
        ha="right",
        va="top",
        fontsize=8,
        color="#444444",
        xytext=(-3, -3),
        textcoords="offset points",
    )
    ax.set_xlim(0, 100)
    ax.set_xlabel("share of days the flow is equalled or exceeded [%]")
    ax.set_ylabel("streamflow [m³/s], log scale")
    ax.grid(True, which="minor", color="#eeeeee", linewidth=0.4)
    ax.legend(loc="upper left", bbox_to_anchor=(1.0, 1.0), fontsize=8)


def _change_chart(fig, result: Comparison) -> None:
    ax = fig.add_subplot()
    names = result.plan_names[1:]
    x = np.arange(len(names))
    width = 0.38
    for j, name in enumerate(names):
        colour, _, _, hatch = _style(j + 1)
        c = result.change(result.outcome(name))
        bands = result.bands(result.plan_file.plans[name])
        bars = (
            (-width / 2, c.yield_mm, colour, bands.get("change_mm")),
            (width / 2, c.dry10_mm, "white", bands.get("dry_year_change_mm")),
        )
        for offset, value, fill, band in bars:
            ax.bar(
                x[j] + offset,
                value,
                width * 0.95,
                color=fill,
                edgecolor=colour,
                hatch=hatch if fill == "white" else None,
                linewidth=1.2,
            )
            if band is not None:  # 5-95 % of the ensemble; the bar is the central figure
                ax.errorbar(
                    x[j] + offset + 0.3 * width,  # beside the bar's value label
                    value,
                    yerr=[[max(value - band[0], 0.0)], [max(band[2] - value, 0.0)]],
                    fmt="none",
                    ecolor="#222222",
                    elinewidth=1.0,
                    capsize=4,
                )
            ax.annotate(
                _signed(value),
                (x[j] + offset, value),
                ha="center",
                va="bottom" if value >= 0 else "top",
                fontsize=7.5,
                xytext=(0, 2 if value >= 0 else -2),
                textcoords="offset points",
            )
    ax.axhline(0.0, color="#222222", linewidth=0.8)
    crowded = len(names) > 5
    ax.set_xticks(
        x,
        names,
        rotation=20 if crowded else 0,
        ha="right" if crowded else "center",
        rotation_mode="anchor",
    )
    ax.set_ylabel("change against current [mm/yr]")
    ax.margins(y=0.15)
    ax.grid(False, axis="x")
    from matplotlib.patches import Patch

    ax.legend(
        handles=[
            Patch(facecolor="#777777", edgecolor="#777777", label="mean over all years"),
            Patch(
                facecolor="white",
                edgecolor="#777777",
                hatch="//",
                label="mean over the driest 10 % of years",
            ),
        ],
        loc="upper left",
        bbox_to_anchor=(1.0, 1.0),
        fontsize=8,
    )


def _charts(result: Comparison) -> list[tuple[str, str]]:
    """Render the four charts: (caption, svg) pairs."""
    import matplotlib
    from matplotlib.figure import Figure

    # A bare Figure draws with matplotlib's own renderers: no GUI, and no pyplot state to
    # switch or close (a notebook's backend is left alone).
    specs = [
        (
            _annual_chart,
            (9.0, 3.3),
            "Annual water yield, year by year, per plan. Grey bands: the driest 10 % of years "
            "by catchment rain.",
        ),
        (
            _monthly_chart,
            (9.0, 3.2),
            "Left: mean water yield per calendar month. Solid lines: land yield (quickflow plus "
            "drainage, never negative). Dotted lines: the net balance of open water, rain on "
            "ponds and lakes minus their evaporation, negative in months when the water loses "
            "more than it receives. The yield in the tables is their sum. Right: mean "
            "streamflow per month, routed through the fast and groundwater stores.",
        ),
        (
            _fdc_chart,
            (9.0, 3.3),
            "Flow duration curve per plan: daily streamflow (quickflow through the fast store, "
            "drainage and the open-water balance through the groundwater store) against the "
            "share of days it is equalled or exceeded; log flow axis.",
        ),
        (
            _change_chart,
            (9.0, 3.3),
            "Change in mean annual yield against current (solid bars) and over the driest 10 % of "
            "years (hatched bars); negative = less water."
            + (
                " Error bars: 5th to 95th percentile over the parameter ensemble."
                if result.ensemble is not None
                else ""
            ),
        ),
    ]
    out = []
    with matplotlib.rc_context(_RC):
        for draw, size, caption in specs:
            fig = Figure(figsize=size, layout="constrained")
            draw(fig, result)
            out.append((caption, _svg(fig)))
            fig.clear()
    return out


# ---- the page ------------------------------------------------------------------------------


def _paragraphs(items: Iterable[str]) -> str:
    return "".join(f"<p>{p}</p>" for p in items)


def _method_text(spec) -> str:
    """Paragraphs on how the figures were computed; ``spec`` is the plan's catchment."""
    return _paragraphs(
        [
            "Reference evaporation and the meteorology (vapour pressure, net radiation, "
            "psychrometric constant) follow FAO-56 (Allen et al. 1998), computed daily from "
            "the climate record and adjusted per zone for rain and temperature. Each cover's "
            "evaporation uses the Penman–Monteith equation with that cover's albedo, height, "
            "leaf area and surface resistance, separately for the dry canopy, the wet canopy "
            "(rain caught on leaves: interception loss, on the share of ground the canopy "
            "covers) and the soil surface (FAO-56's two-stage surface layer on the exposed "
            "share). Open water evaporates with the heat its water stores (an equilibrium-"
            "temperature method after de Bruin 1982 and Finch 2001).",
            "A daily soil-water balance is run once for every tile (one cover in one zone); "
            "what the soil cannot hold leaves as quickflow or drainage. "
            f"{_esc(YIELD_DEFINITION)} A plan's results are the tiles mixed by their area "
            "shares, so every plan is compared on the same weather. Daily streamflow routes "
            "quickflow through a fast linear store (recession "
            f"constant {spec.quickflow_recession_days:g} days), and drainage and the open-water "
            f"balance through a groundwater store ({spec.recession_days:g} days); the flow "
            "duration curve, Q95, "
            "the 7-day low flow (7Q: the mean over the years of each year's lowest 7-day mean "
            "flow) and the baseflow index (Lyne &amp; Hollick 1979 filter, alpha 0.925, three "
            "passes) are taken from it.",
        ]
    )


def render_report(result: Comparison) -> str:
    """Render a plan comparison as one self-contained, print-friendly HTML page.

    Parameters
    ----------
    result : Comparison
        The compared plans (see :func:`coveryield.compare`).

    Returns
    -------
    str
        An HTML5 document: title, caution, headline table [mm/yr, ML/yr, m3/s], cover shares
        [%], four inline SVG charts, the evaporation cross-check per tile [mm/yr], the method
        and the caution again. No external references (scripts, styles, fonts or images).
    """
    spec = result.plan_file.catchment
    years = result.years
    name = _esc(spec.name)
    low, high = CROSSCHECK_TYPICAL_OFFSET_PCT
    usual = f"{low:+.0f} to {high:+.0f} %".replace("-", "\u2212")
    caution = f'<div class="caution">Caution: {_esc(CAUTION)}</div>'
    figures = "".join(
        f'<figure role="img" aria-label="{_esc(caption)}">{svg}'
        f"<figcaption>{_esc(caption)}</figcaption></figure>"
        for caption, svg in _charts(result)
    )
    dry = ", ".join(str(y) for y in result.dry_years)
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{name}: water yield of land-use plans</title>",
        f"<style>{_CSS}</style></head><body>",
        f"<h1>{name}: water yield of land-use plans</h1>",
        f'<p class="meta">Catchment area {spec.area_km2:,.4g} km² · {len(years)} complete years '
        f"{years[0]}–{years[-1]} · driest 10 % of years by rain, driest first: {dry}</p>",
        f'<p class="meta">Plan file: <code>{_esc(result.plan_file.source)}</code></p>',
        caution,
        "<h2>Headline figures</h2>",
        _headline_table(result),
        '<p class="note">Depths are mm per year over the whole catchment (1 mm over 1 km² = '
        f"1 ML). {_esc(YIELD_DEFINITION)} Changes are against <code>current</code>; negative "
        "means less water. Driest 10 % of years: the mean change over the years with the least "
        "catchment rain; driest year: the change in the single year with the least rain "
        f"({result.driest_year}). Q95 is the flow equalled or exceeded on 95 % of days. "
        "<i>Model vs Zhang</i> is how much more the daily model evaporates than the Zhang "
        f"curve for the same cover mix. {_esc(ZHANG_CURVE_SENTENCE)} For this model "
        f"{usual} is usual; \u26a0 marks a plan outside that range or more than "
        f"{CROSSCHECK_CHANGE_TOLERANCE_PCT:.0f} points away from current's offset (then the "
        "model and the curve disagree about the plan's change).</p>",
        *_band_section(result),
        "<h2>Low flows</h2>",
        _low_flow_table(result),
        '<p class="note">7Q: the mean over the complete years of each year\'s lowest 7-day '
        "mean flow. Baseflow index: the share of streamflow that the Lyne &amp; Hollick (1979) "
        "digital filter (alpha 0.925, three passes) calls baseflow. Days below: mean number "
        "of days a year with flow below the plan file's <code>low_flow_m3s</code>"
        + ("" if spec.low_flow_m3s is not None else " (not set in this plan file)")
        + ".</p>",
        "<h2>Cover shares per zone</h2>",
        _shares_table(result),
        '<p class="note">Share of each zone\'s area [%]; bold: different from '
        "<code>current</code>; – : not present.</p>",
        "<h2>Charts</h2>",
        figures,
        "<h2>Evaporation cross-check per tile</h2>",
        _tile_table(result),
        '<p class="note">Mean annual evaporation of each tile (one cover in one zone) from the '
        "daily model, set beside two annual curves from rain and potential evaporation: the "
        "Zhang et al. (2001) curve for forest or grass and Fu's (1981) form of the Budyko curve "
        f"(plain numbers, no flags). {_esc(ZHANG_CURVE_SENTENCE)} The daily model usually lies "
        f"{usual} above it for forest and pasture (README, Known limits, explains why); a "
        "difference outside that range deserves a second look at the cover's parameters or the "
        "climate record, but does not by itself make the daily model wrong: the curves know "
        "nothing of soils, rain timing or interception. Grey rows: tiles simulated but used by "
        "no plan.</p>",
        "<h2>How this was computed</h2>",
        _method_text(spec),
        caution,
        "</body></html>",
    ]
    return "\n".join(parts) + "\n"
