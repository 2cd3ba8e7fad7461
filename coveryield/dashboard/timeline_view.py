"""The years-after-planting view: pick a plan, re-time its planting, slide through the years.

Built once; afterwards only data is assigned to the marks (inside ``hold_sync()``). Every
callback runs through the dashboard's :class:`~coveryield.dashboard.views.Guard`. CSS classes
for tests: ``cy-timeline`` on the view, ``cy-timeline-year`` on the year slider,
``cy-timeline-figures`` on the figures of the year shown.
"""

from __future__ import annotations

import html
from typing import Any

import bqplot
import ipywidgets as widgets
import numpy as np

from coveryield.dashboard import palette
from coveryield.dashboard.timeline_state import (
    AS_PLANNED,
    MAX_SPREAD,
    NEVER,
    TimelineState,
)
from coveryield.dashboard.views import Guard, signed
from coveryield.report_html import PLAN_STYLES

#: Felling ages offered [yr].
FELLING_AGES = (15, 20, 25, 30, 35, 40, 50, 60)

INTRO = (
    "How the water changes year by year while new plantings grow. Each year is compared with "
    "the current plan on the same year's weather; the dashed line is the change once every "
    "stand is mature. Planted stands grow along a Chapman\u2013Richards curve; soil water is "
    "not carried over from one year's stand to the next (see the report for the assumptions)."
)


class TimelineView:
    """Controls, the figures of one year, and the path chart of a :class:`TimelineState`."""

    def __init__(self, state: TimelineState, guard: Guard) -> None:
        self.state = state
        self._syncing = False
        label = {"description_width": "170px"}
        wide = widgets.Layout(width="400px")
        self.plan_picker = widgets.Dropdown(
            options=state.plan_names,
            value=state.plan_name,
            description="Plan",
            style=label,
            layout=wide,
        )
        low, high = state.first_year_range
        self.first_year = widgets.IntSlider(
            value=state.first_year,
            min=low,
            max=high,
            description="First planting in year",
            style=label,
            continuous_update=False,
            layout=wide,
        )
        self.spread = widgets.Dropdown(
            options=[("as planned", AS_PLANNED), ("all in one year", 1)]
            + [(f"over {n} years", n) for n in range(2, MAX_SPREAD + 1)],
            value=AS_PLANNED,
            description="Each planting spread",
            style=label,
            layout=wide,
        )
        self.felling = widgets.Dropdown(
            options=[("as planned", AS_PLANNED), ("never", NEVER)]
            + [(f"at {age} years", age) for age in FELLING_AGES],
            value=AS_PLANNED,
            description="Fell and replant",
            style=label,
            layout=wide,
        )
        self.year = widgets.IntSlider(
            value=state.year,
            min=1,
            max=state.n_years,
            description="Year shown",
            style=label,
            continuous_update=True,
            layout=wide,
        )
        self.year.add_class("cy-timeline-year")
        self.figures = widgets.HTML(
            layout=widgets.Layout(flex="1 1 360px", max_width="620px", margin="0 0 0 16px")
        )
        self.figures.add_class("cy-timeline-figures")
        self._build_chart()
        controls = widgets.VBox(
            [self.plan_picker, self.first_year, self.spread, self.felling, self.year],
            layout=widgets.Layout(width="420px"),
        )
        self.widget = widgets.VBox(
            [
                widgets.HTML(
                    f'<div style="font-size:18px;font-weight:600;color:{palette.INK};'
                    'margin-top:12px">Years after planting</div>'
                    f'<div style="color:{palette.MUTED};font-size:13px;max-width:1100px">'
                    f"{html.escape(INTRO)}</div>"
                ),
                widgets.HBox(
                    [controls, self.figures],
                    layout=widgets.Layout(flex_flow="row wrap", width="100%"),
                ),
                self.figure,
                widgets.HTML(
                    f'<div style="color:{palette.MUTED};font-size:12px;text-align:center">'
                    "Coloured line: this plan, each year on its own weather \u00b7 grey line: the "
                    "mature plan on the same weather \u00b7 dashed: the mature plan, mean over "
                    "the record \u00b7 upright line: the year shown.</div>"
                ),
            ]
        )
        self.widget.add_class("cy-timeline")
        self.plan_picker.observe(guard("follow the plan")(self._plan_picked), names="value")
        for control, trait in (
            (self.first_year, "first_year"),
            (self.spread, "spread_years"),
            (self.felling, "felling_age"),
            (self.year, "year"),
        ):
            control.observe(guard("re-time the planting")(self._setter(trait)), names="value")
        state.observe(guard("draw the years after planting")(self.update), names="timeline")
        state.observe(guard("show the year")(self.show_year), names="year")
        guard.on_failure(self.sync)
        self.update()

    def _build_chart(self) -> None:
        sx, sy = bqplot.LinearScale(), bqplot.LinearScale()
        self.scales = (sx, sy)
        self.path = bqplot.Lines(
            x=[1.0],
            y=[[0.0], [0.0]],
            scales={"x": sx, "y": sy},
            colors=[plan_colour(self.state), palette.MUTED],
            stroke_width=2,
            marker="circle",
            marker_size=14,
            labels=["this plan", "mature plan, same weather"],
        )
        self.mature = bqplot.Lines(
            x=[0.0, 1.0],
            y=[0.0, 0.0],
            scales={"x": sx, "y": sy},
            colors=[palette.INK],
            line_style="dashed",
            stroke_width=1.5,
        )
        self.zero = bqplot.Lines(
            x=[0.0, 1.0],
            y=[0.0, 0.0],
            scales={"x": sx, "y": sy},
            colors=["#BBBBBB"],
            stroke_width=1,
        )
        self.rule = bqplot.Lines(
            x=[1.0, 1.0],
            y=[0.0, 0.0],
            scales={"x": sx, "y": sy},
            colors=[palette.CURRENT],
            stroke_width=2,
        )
        self.figure = bqplot.Figure(
            marks=[self.zero, self.mature, self.path, self.rule],
            axes=[
                bqplot.Axis(scale=sx, label="Years since the start", tick_format="d"),
                bqplot.Axis(
                    scale=sy,
                    orientation="vertical",
                    label="Change against current (mm/yr)",
                    tick_format=",d",
                    label_offset="50px",
                ),
            ],
            title="Change in water yield after planting",
            fig_margin={"top": 50, "bottom": 55, "left": 70, "right": 20},
            layout=widgets.Layout(width="100%", height="340px"),
            title_style={"font-size": "15px"},
        )

    def _setter(self, trait: str):
        def set_trait(change: dict) -> None:
            if not self._syncing:
                setattr(self.state, trait, int(change["new"]))

        return set_trait

    def _plan_picked(self, change: dict) -> None:
        if not self._syncing:
            self.state.plan_name = change["new"]
            self.sync()

    def sync(self) -> None:
        """Show the state's choices on the controls."""
        self._syncing = True
        try:
            self.plan_picker.value = self.state.plan_name
            low, high = self.state.first_year_range
            self.first_year.min, self.first_year.max = low, high
            self.first_year.value = self.state.first_year
            self.spread.value = self.state.spread_years
            self.felling.value = self.state.felling_age
            self.year.max = self.state.n_years
            self.year.value = self.state.year
        finally:
            self._syncing = False

    def update(self, _change: dict | None = None) -> None:
        """Assign the new path to the marks (no figure rebuilt) and show the year."""
        table = self.state.timeline.table
        x = table.index.to_numpy(dtype=float)
        ends = [0.5, x[-1] + 0.5]
        mature = float(self.state.timeline.mature_change_mm)
        with self.path.hold_sync():
            self.path.colors = [plan_colour(self.state), palette.MUTED]
            self.path.x = x
            self.path.y = np.vstack(
                [table["change_mm"].to_numpy(float), table["mature_change_mm"].to_numpy(float)]
            )
        with self.mature.hold_sync():
            self.mature.x, self.mature.y = ends, [mature, mature]
        with self.zero.hold_sync():
            self.zero.x, self.zero.y = ends, [0.0, 0.0]
        if self.year.max != len(table):
            self.sync()
        self.show_year()

    def show_year(self, _change: dict | None = None) -> None:
        """Write the figures of the year shown and move the rule on the chart."""
        state, row = self.state, self.state.row()
        table = state.timeline.table
        low = float(min(table["change_mm"].min(), table["mature_change_mm"].min(), 0.0))
        high = float(max(table["change_mm"].max(), table["mature_change_mm"].max(), 0.0))
        with self.rule.hold_sync():
            self.rule.x, self.rule.y = [row.name, row.name], [low, high]
        self.figures.value = year_figures(state, row)


def plan_colour(state: TimelineState) -> str:
    """Return the colour of the plan followed: its colour in every report."""
    index = state.comparison.plan_names.index(state.plan_name)
    return PLAN_STYLES[index % len(PLAN_STYLES)][0]


def year_figures(state: TimelineState, row: Any) -> str:
    """HTML of the figures of one year of a timeline (units in every figure)."""
    big = f'style="font-size:22px;font-weight:600;color:{plan_colour(state)}"'
    small = f'style="font-size:12px;color:{palette.MUTED}"'
    plan = state.timeline
    share = row["share_of_mature_pct"]
    share_text = "" if not np.isfinite(share) else f" ({share:.0f} % of the change once mature)"
    age = row["mean_stand_age_yr"]
    stands = (
        f"{row['planted_pct']:.1f} % of the catchment in planted stands, mean age {age:.1f} years"
        if np.isfinite(age)
        else "no stand planted yet"
    )
    return (
        f'<div style="border:1px solid #D5D9DE;padding:6px 12px;color:{palette.INK}">'
        f"<div {small}>YEAR {int(row.name)} OF {len(plan.table)} \u00b7 {int(row['year'])} "
        f"(weather of {int(row['weather_year'])})</div>"
        f"<div><span {big}>{signed(row['change_mm'], 'mm/yr')}</span> "
        f"<span {small}>against current{html.escape(share_text)}</span></div>"
        f"<div {small}>yield {row['yield_mm']:,.1f} mm/yr ({row['yield_ml']:,.0f} ML/yr); "
        f"change {signed(row['change_ml'], 'ML/yr', 0)}; once mature "
        f"{signed(row['mature_change_mm'], 'mm/yr')} on this weather, "
        f"{signed(plan.mature_change_mm, 'mm/yr')} on average</div>"
        f"<div {small}>{stands}; schedule: {html.escape(state.schedule_label)}</div></div>"
    )
