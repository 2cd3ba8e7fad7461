"""A one-page, self-contained HTML report of timelines after planting, charts as inline SVG.

:func:`render_timeline_report` returns the page as a string; the ``timeline`` command writes it
as ``report.html``. Styles, plan colours and the caution are those of the comparison report
(:mod:`coveryield.report_html`), so a plan has the same colour in both. All depths are mm per
year over the whole catchment; volumes ML per year. Every name from a plan file is escaped.
"""

from __future__ import annotations

from coveryield.comparison import CAUTION, Comparison
from coveryield.report_html import _CSS, _RC, _esc, _num, _signed, _style, _svg, _swatch, _td
from coveryield.stands import GROWTH_STAGES
from coveryield.timeline import SUMMARY_PERIODS, Timeline

__all__ = ["render_timeline_report"]

#: Share of the mature change drawn as a guide on the share chart [%] (the level of the test
#: "at least 80 % by year 25" after Brown et al. 2005).
GUIDE_SHARE_PCT = 80.0


def _plan_index(result: Comparison, name: str) -> int:
    """Position of a plan in the comparison (its colour in every report)."""
    return result.plan_names.index(name)


def _periods(timeline: Timeline) -> list[tuple[int, int, str]]:
    out = []
    for first, last in SUMMARY_PERIODS:
        end = timeline.n_years if last is None else min(last, timeline.n_years)
        if first <= end:
            label = f"years {first}\u2013{end}" if end > first else f"year {first}"
            out.append((first, end, label))
    return out


def _headline_table(result: Comparison, timeline: Timeline) -> str:
    periods = _periods(timeline)
    head = (
        '<tr><th rowspan="2">plan</th><th rowspan="2">schedule</th>'
        '<th colspan="3">change once mature<br>(mean over the record)</th>'
        + "".join(f'<th colspan="2">{label}</th>' for _, _, label in periods)
        + '<th rowspan="2">in growing stands<br>at the end<br>% of catchment</th></tr>'
        "<tr><th>mm/yr</th><th>%</th><th>ML/yr</th>"
        + "<th>mm/yr</th><th>% of mature</th>" * len(periods)
        + "</tr>"
    )
    rows = []
    for name, plan in timeline.plans.items():
        cells = [
            _td(_swatch(_plan_index(result, name)) + _esc(name), "name"),
            _td(plan.schedule_label, "name"),
            _td(_signed(plan.mature_change_mm, 1)),
            _td(_signed(plan.mature_change_pct, 1)),
            _td(_signed(plan.mature_change_mm * result.tiles.area_km2)),
        ]
        for first, last, _ in periods:
            change, share = plan.period_change(first, last)
            cells += [_td(_signed(change, 1)), _td(_num(share))]
        cells.append(_td(_num(plan.table["planted_pct"].iloc[-1], 1)))
        rows.append("<tr>" + "".join(cells) + "</tr>")
    return "<table>" + head + "".join(rows) + "</table>"


def _schedule_table(timeline: Timeline) -> str:
    head = (
        "<tr><th>plan</th><th>zone</th><th>cover planted</th><th>replaces</th>"
        "<th>share of zone<br>per year, %</th><th>planting years</th>"
        "<th>felled at age<br>years</th><th>harvest year</th></tr>"
    )
    rows = []
    for name, plan in timeline.plans.items():
        if plan.schedule is None:
            continue
        for p in plan.schedule.plantings:
            years = f"{p.year}" if p.years == 1 else f"{p.year}\u2013{p.last_year}"
            rows.append(
                "<tr>"
                + "".join(
                    [
                        _td(_esc(name), "name"),
                        _td(_esc(p.zone), "name"),
                        _td(_esc(p.cover), "name"),
                        _td(_esc(p.replaces), "name"),
                        _td(_num(100.0 * p.share_each_year, 1)),
                        _td(years),
                        _td(_num(p.rotation_years) if p.rotation_years else "\u2013"),
                        _td(str(p.harvest_year) if p.harvest_year else "\u2013"),
                    ]
                )
                + "</tr>"
            )
    return "<table>" + head + "".join(rows) + "</table>"


def _growth_table(result: Comparison, timeline: Timeline) -> str:
    covers = result.plan_file.covers
    planted = {
        p.cover
        for plan in timeline.plans.values()
        if plan.schedule is not None
        for p in plan.schedule.plantings
        if covers[p.cover].growth is not None
    }
    head = (
        "<tr><th>cover</th><th>95 % grown at<br>years</th><th>Chapman–Richards p</th>"
        "<th>growth at 2 / 5 / 10 / 20 years<br>%</th><th>felled at age<br>years</th>"
        "<th>young state</th></tr>"
    )
    rows = []
    for name in sorted(planted):
        g = covers[name].growth
        at = " / ".join(f"{100.0 * float(g.fraction(a - 0.5)):.0f}" for a in (2, 5, 10, 20))
        rows.append(
            "<tr>"
            + "".join(
                [
                    _td(_esc(name), "name"),
                    _td(_num(g.maturity_years, 1)),
                    _td(_num(g.shape, 2)),
                    _td(at),
                    _td(
                        str(g.rotation_years)
                        if g.rotation_years
                        else "never (unless the schedule says)",
                        "name",
                    ),
                    _td(
                        _esc(g.start) if g.start else "the cover replaced if grass, else pasture",
                        "name",
                    ),
                ]
            )
            + "</tr>"
        )
    return "<table>" + head + "".join(rows) + "</table>" if rows else ""


# ---- charts --------------------------------------------------------------------------------


def _path_chart(fig, result: Comparison, timeline: Timeline) -> None:
    ax = fig.add_subplot()
    for name, plan in timeline.plans.items():
        colour, marker, dashes, _ = _style(_plan_index(result, name))
        x = plan.table.index.to_numpy()
        ax.plot(
            x,
            plan.table["change_mm"],
            color=colour,
            marker=marker,
            markersize=3.5,
            linewidth=1.5,
            label=f"{name}",
        )
        ax.axhline(
            plan.mature_change_mm,
            color=colour,
            linestyle=(0, (6, 3)),
            linewidth=1.0,
            label=f"{name}: once mature",
        )
    ax.axhline(0.0, color="#222222", linewidth=0.8)
    ax.set_xlim(0.3, timeline.n_years + 0.7)
    ax.set_xlabel(f"years since the start (year 1 = {timeline.start_year})")
    ax.set_ylabel("change against current [mm/yr]")
    ax.legend(loc="upper left", bbox_to_anchor=(1.0, 1.0), fontsize=7.5)


def _share_chart(fig, result: Comparison, timeline: Timeline) -> None:
    ax = fig.add_subplot()
    for name, plan in timeline.plans.items():
        colour, marker, dashes, _ = _style(_plan_index(result, name))
        ax.plot(
            plan.table.index,
            plan.table["share_of_mature_pct"],
            color=colour,
            linestyle=dashes,
            marker=marker,
            markersize=3.0,
            linewidth=1.3,
            label=name,
        )
    ax.axhline(100.0, color="#222222", linewidth=0.8)
    ax.axhline(GUIDE_SHARE_PCT, color="#777777", linewidth=0.8, linestyle=":")
    ax.set_xlim(0.3, timeline.n_years + 0.7)
    ax.set_ylim(-5.0, 125.0)
    ax.set_xlabel(f"years since the start (year 1 = {timeline.start_year})")
    ax.set_ylabel("share of the mature change [%]")
    ax.legend(loc="upper left", bbox_to_anchor=(1.0, 1.0), fontsize=7.5)


def _growing(timeline: Timeline) -> dict:
    """Return the plans whose schedule plants growing stands."""
    return {n: p for n, p in timeline.plans.items() if p.table["planted_pct"].max() > 0.0}


def _planted_chart(fig, result: Comparison, timeline: Timeline) -> None:
    ax = fig.add_subplot()
    for name, plan in _growing(timeline).items():
        colour, _, dashes, _ = _style(_plan_index(result, name))
        ax.step(
            plan.table.index,
            plan.table["planted_pct"],
            where="mid",
            color=colour,
            linestyle=dashes,
            linewidth=1.5,
            label=f"{name}: planted area",
        )
    ax.set_xlim(0.3, timeline.n_years + 0.7)
    ax.set_ylim(bottom=0.0)
    ax.set_xlabel(f"years since the start (year 1 = {timeline.start_year})")
    ax.set_ylabel("area in planted stands [% of catchment]")
    right = ax.twinx()
    for name, plan in _growing(timeline).items():
        colour = _style(_plan_index(result, name))[0]
        right.plot(
            plan.table.index,
            plan.table["mean_stand_age_yr"],
            color=colour,
            linestyle=":",
            linewidth=1.0,
            label=f"{name}: mean stand age",
        )
    right.set_ylabel("mean stand age [years], dotted")
    right.set_ylim(bottom=0.0)
    right.grid(False)
    handles, labels = ax.get_legend_handles_labels()
    more = right.get_legend_handles_labels()
    ax.legend(
        handles + more[0],
        labels + more[1],
        loc="upper left",
        bbox_to_anchor=(1.08, 1.0),
        fontsize=7.5,
    )


def _charts(result: Comparison, timeline: Timeline) -> list[tuple[str, str]]:
    """Render the charts: (caption, svg) pairs."""
    import matplotlib
    from matplotlib.figure import Figure

    specs = [
        (
            _path_chart,
            "Change in water yield against current, year by year after the start "
            "(solid, each year on its own weather) and once every stand is mature (dashed: the "
            "change a comparison of the mature plan reports, mean over the record); "
            "negative = less water.",
        ),
        (
            _share_chart,
            "The same change as a share of the mature plan's change on the same "
            f"year's weather; dotted guide at {GUIDE_SHARE_PCT:.0f} %. A felling shows as a drop.",
        ),
        (
            _planted_chart,
            "Catchment area in growing stands the schedule planted (steps) and "
            "their mean age (dotted, right axis).",
        ),
    ]
    if not _growing(timeline):
        specs = specs[:2]
    out = []
    with matplotlib.rc_context(_RC):
        for draw, caption in specs:
            fig = Figure(figsize=(9.0, 3.4), layout="constrained")
            draw(fig, result, timeline)
            out.append((caption, _svg(fig)))
            fig.clear()
    return out


# ---- the page ------------------------------------------------------------------------------


def _weather_sentence(timeline: Timeline) -> str:
    record = timeline.record_years
    span = f"{record[0]}\u2013{record[-1]}"
    if timeline.cycles_weather:
        return (
            f"Each year takes the weather of one complete year of the record ({span}, "
            f"{len(record)} years) in order; the timeline is longer, so from year "
            f"{len(record) + 1} the record's years are used again in the same order."
        )
    return f"Each year takes the weather of one complete year of the record ({span}), in order."


def _assumptions(result: Comparison, timeline: Timeline) -> str:
    stages = ", ".join(f"{g:g}" for g in GROWTH_STAGES)
    items = [
        "Planted stands grow along the Chapman–Richards curve g = (1 − e<sup>−k·age</sup>)"
        "<sup>p</sup> of their cover (table above). At growth g a share g of the planted ground "
        "is under tree crowns whose parameters (leaf area, height, canopy store, rooting depth, "
        "surface resistance, albedo, curve number) lie a share g of the way from the young "
        "state to the mature cover; the rest of the ground stays in the young state (the cover "
        "replaced if that is grass, otherwise pasture). A stand's age is taken at mid-year: "
        "0.5 years in its planting year. Felling restarts it from the young state.",
        f"Each stand is simulated once at the growth stages {stages} (each held at that size "
        "through the record) and a stand of any age is interpolated between them; the daily "
        "water balance is never re-run for a new schedule.",
        "Soil water is not carried over from one year's stand to the next year's larger "
        "stand: each growth stage keeps its own soil store through the record, so the store "
        "on 1 January is that of a stand that always had that size. The error is largest in the "
        "years of planting and felling, and where the root zone does not refill every winter "
        "(on the invented demo weather, carrying the soil over moved a stand's annual yield by "
        "under 2 % of its mature change). Every year still closes: rain = evaporation + yield + "
        "storage change.",
        _weather_sentence(timeline),
        "Forest and other covers of current stay as they are (mature, never felled) unless "
        "the schedule replaces them. Changes of covers that do not grow take effect at the "
        "start of their year. Only annual totals are followed; flows and low flows are in the "
        "comparison report.",
    ]
    return "<ul>" + "".join(f"<li>{item}</li>" for item in items) + "</ul>"


def render_timeline_report(result: Comparison, timeline: Timeline) -> str:
    """Render timelines as one self-contained, print-friendly HTML page.

    Parameters
    ----------
    result : Comparison
        The comparison the timelines were built on (mature changes, names, colours).
    timeline : Timeline
        From :meth:`Comparison.timeline`.

    Returns
    -------
    str
        An HTML5 document: caution, headline table [mm/yr, %], three inline SVG charts, the
        schedules and growth curves, the assumptions and the caution again. No external
        references.
    """
    spec = result.plan_file.catchment
    name = _esc(spec.name)
    caution = f'<div class="caution">Caution: {_esc(CAUTION)}</div>'
    figures = "".join(
        f'<figure role="img" aria-label="{_esc(caption)}">{svg}'
        f"<figcaption>{_esc(caption)}</figcaption></figure>"
        for caption, svg in _charts(result, timeline)
    )
    last = timeline.start_year + timeline.n_years - 1
    parts = [
        "<!DOCTYPE html>",
        '<html lang="en"><head><meta charset="utf-8">',
        '<meta name="viewport" content="width=device-width, initial-scale=1">',
        f"<title>{name}: water yield in the years after planting</title>",
        f"<style>{_CSS}</style></head><body>",
        f"<h1>{name}: water yield in the years after planting</h1>",
        f'<p class="meta">Catchment area {spec.area_km2:,.4g} km² · {timeline.n_years} years, '
        f"{timeline.start_year}\u2013{last} (year 1 = {timeline.start_year}) · "
        f"{_esc(_weather_sentence(timeline))}</p>",
        f'<p class="meta">Plan file: <code>{_esc(result.plan_file.source)}</code></p>',
        caution,
        "<h2>Headline figures</h2>",
        _headline_table(result, timeline),
        '<p class="note">Changes are against <code>current</code> on the same year\'s weather, '
        "in mm per year over the whole catchment (1 mm over 1 km² = 1 ML); negative means less "
        "water. \u201c% of mature\u201d is the period's change over the mature plan's change on "
        "the same weather years.</p>",
        "<h2>Charts</h2>",
        figures,
        "<h2>Schedules</h2>",
        _schedule_table(timeline),
        "".join(
            f'<p class="note"><b>{_esc(n)}</b>: {_esc(p.schedule.description)}</p>'
            for n, p in timeline.plans.items()
            if p.schedule is not None and p.schedule.description
        ),
        "<h2>Growth of the planted covers</h2>",
        _growth_table(result, timeline),
        "<h2>Assumptions</h2>",
        _assumptions(result, timeline),
        caution,
        "</body></html>",
    ]
    return "\n".join(parts) + "\n"
