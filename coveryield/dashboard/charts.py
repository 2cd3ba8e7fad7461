"""Charts of the dashboard: bqplot figures comparing the plan on screen with ``current``.

A chart is a small class: a ``key``, a figure built once in ``__init__`` (marks and axes), and
:meth:`Chart.update`, which only assigns new data to the marks inside ``hold_sync()``; it never
rebuilds the figure. A legend line under the figure is redrawn with the data (the plan on screen
changes its name and colour when another plan is chosen). :class:`Charts` lays out the charts
listed in :data:`CHARTS` in a two-column grid and updates them all when the outcome changes.

Colours come from :mod:`coveryield.palette` (the report's): ``current`` is drawn last, thinner and
darker, so it stays visible where the two lines coincide.

To add a chart: subclass :class:`Chart`, build the marks in ``__init__`` (call
``super().__init__(state)`` first, then :meth:`Chart.set_figure`), assign the data in
:meth:`Chart.update` and the legend in :meth:`Chart.legend_entries`, and append the class to
:data:`CHARTS` (or pass ``charts=`` to :class:`~coveryield.dashboard.Dashboard`).
"""

from __future__ import annotations

import html
from typing import Any

import bqplot
import ipywidgets as widgets
import numpy as np

from coveryield.dashboard import palette
from coveryield.dashboard.state import DashboardState
from coveryield.dashboard.views import Guard

MONTHS = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")
#: Exceedance percentages at which the flow duration curves are drawn [%].
FDC_GRID_PCT = np.concatenate(
    [np.linspace(0.1, 1.0, 10), np.linspace(1.5, 99.0, 196), [99.5, 99.9]])
#: Line widths [px]: the plan on screen under a thinner ``current``.
EDITED_WIDTH, CURRENT_WIDTH = 4.0, 2.0


def legend_html(entries: list[tuple[str, str, str]]) -> str:
    """Build a one-line legend: (label, colour, kind) with kind ``line``, ``box`` or ``band``."""
    shapes = {
        "line": "width:18px;height:3px;margin-bottom:4px",
        "box": "width:11px;height:11px",
        "band": "width:14px;height:11px;border:1px solid #bbb",
    }
    items = "".join(
        f'<span style="margin:0 14px 0 0;white-space:nowrap"><span style="display:inline-block;'
        f'{shapes[kind]};background:{colour};vertical-align:middle;margin-right:5px"></span>'
        f"{html.escape(label)}</span>"
        for label, colour, kind in entries
    )
    return (f'<div class="cy-legend" style="text-align:center;font-size:13px;color:{palette.INK};'
            f'margin-top:-6px">{items}</div>')


def nice_ceiling(value: float) -> float:
    """Return the next round number above ``value`` (1 to 8 times a power of ten) [-]."""
    if not np.isfinite(value) or value <= 0.0:
        return 1.0
    power = 10.0 ** np.floor(np.log10(value))
    for step in (1.0, 1.2, 1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0):
        if step * power >= value:
            return float(step * power)
    return float(10.0 * power)


class Chart:
    """One figure with a legend line under it; :meth:`update` assigns data only.

    Parameters
    ----------
    state : DashboardState
        Where the data come from.
    """

    #: Short name: CSS class ``cy-chart-<key>`` on the chart, key in ``Charts.charts``.
    key = "chart"
    title = ""
    #: A sentence under the legend (plain text), if the chart needs one.
    note = ""

    def __init__(self, state: DashboardState) -> None:
        self.state = state
        self.legend = widgets.HTML()
        self.figure: bqplot.Figure | None = None
        self.widget = widgets.VBox([self.legend])

    def set_figure(self, marks: list, axes: list) -> None:
        """Build the figure once (called by subclasses at the end of ``__init__``)."""
        self.figure = bqplot.Figure(
            marks=marks, axes=axes, title=self.title,
            fig_margin={"top": 50, "bottom": 55, "left": 70, "right": 20},
            layout=widgets.Layout(width="100%", height="330px"),
            title_style={"font-size": "15px"},
        )
        self.widget.children = [self.figure, self.legend] + ([self.note_widget()] if self.note else [])
        self.widget.add_class(f"cy-chart-{self.key}")

    def note_widget(self) -> widgets.HTML:
        """The chart's note under its legend (CSS class ``cy-note-<key>``)."""
        return widgets.HTML(
            f'<div class="cy-note-{self.key}" style="color:{palette.MUTED};font-size:12px;'
            f'line-height:1.35">{html.escape(self.note)}</div>')

    @property
    def marks(self) -> list:
        """The figure's marks."""
        return list(self.figure.marks) if self.figure is not None else []

    def plan_entries(self) -> list[tuple[str, str, str]]:
        """Legend entries of the two plans (the plan on screen first)."""
        return [(self.state.edited_label, self.state.edited_colour, "line"),
                ("current", palette.CURRENT, "line")]

    def legend_entries(self) -> list[tuple[str, str, str]]:
        """Legend entries (label, colour, kind); default: the two plans."""
        return self.plan_entries()

    def draw(self) -> None:
        """Assign the data (subclasses)."""
        raise NotImplementedError

    def update(self) -> None:
        """Assign new data to the marks and redraw the legend."""
        self.draw()
        self.legend.value = legend_html(self.legend_entries())


def _plan_lines(x: Any, scales: dict, **kwargs) -> tuple[bqplot.Lines, bqplot.Lines]:
    """Build the plan on screen (wide) and ``current`` (thin, drawn after: on top)."""
    edited = bqplot.Lines(x=x, y=np.zeros(len(x)), scales=scales, stroke_width=EDITED_WIDTH,
                          colors=[palette.EDITED_FROM_CURRENT], opacities=[0.9], **kwargs)
    current = bqplot.Lines(x=x, y=np.zeros(len(x)), scales=scales, stroke_width=CURRENT_WIDTH,
                           colors=[palette.CURRENT], **kwargs)
    return edited, current


class AnnualChart(Chart):
    """Yield year by year, with grey bands on the driest 10 % of years (as in the report)."""

    key = "annual"
    title = "Yield year by year"

    def __init__(self, state: DashboardState) -> None:
        super().__init__(state)
        years = np.asarray(state.comparison.years, dtype=float)
        sx, self.y_scale = bqplot.LinearScale(), bqplot.LinearScale(min=0.0, max=1.0)
        scales = {"x": sx, "y": self.y_scale}
        dry = np.asarray(state.comparison.dry_years, dtype=float)
        self.dry_x = np.stack([dry - 0.5, dry - 0.5, dry + 0.5, dry + 0.5], axis=1)
        self.bands = bqplot.Lines(
            x=self.dry_x, y=np.zeros_like(self.dry_x), scales=scales, fill="inside",
            colors=[palette.DRY_BAND] * len(dry), fill_colors=[palette.DRY_BAND] * len(dry),
            fill_opacities=[1.0] * len(dry), stroke_width=0.0, close_path=True,
        )
        self.edited, self.current = _plan_lines(years, scales, marker="circle", marker_size=14)
        self.set_figure([self.bands, self.edited, self.current], [
            bqplot.Axis(scale=sx, label="Year", tick_format="d"),
            bqplot.Axis(scale=self.y_scale, orientation="vertical", label="Yield (mm/yr)",
                        tick_format=",d", label_offset="50px"),
        ])

    def legend_entries(self) -> list[tuple[str, str, str]]:  # noqa: D102
        return [*self.plan_entries(),
                ("driest 10 % of years (by rain)", palette.DRY_BAND, "band")]

    def draw(self) -> None:  # noqa: D102
        edited = self.state.outcome.annual["yield_mm"].to_numpy(float)
        base = self.state.baseline.annual["yield_mm"].to_numpy(float)
        top = nice_ceiling(np.nanmax(np.concatenate([edited, base]), initial=0.0) * 1.05)
        low = min(np.nanmin(np.concatenate([edited, base]), initial=0.0), 0.0)
        with self.y_scale.hold_sync():
            self.y_scale.min = -nice_ceiling(-low * 1.05) if low < 0.0 else 0.0
            self.y_scale.max = top
        with self.bands.hold_sync():
            self.bands.y = np.tile([self.y_scale.min, top, top, self.y_scale.min],
                                   (len(self.dry_x), 1))
        with self.edited.hold_sync():
            self.edited.y = edited
            self.edited.colors = [self.state.edited_colour]
        with self.current.hold_sync():
            self.current.y = base


class MonthlyChart(Chart):
    """Mean yield per calendar month, two bars a month."""

    key = "monthly"
    title = "Mean monthly yield"
    note = ("Monthly yield includes the open-water balance (rain on ponds and lakes minus their "
            "evaporation), so a month can be negative when the water loses more than the land "
            "yields.")

    def __init__(self, state: DashboardState) -> None:
        super().__init__(state)
        mx, self.y_scale = bqplot.OrdinalScale(), bqplot.LinearScale(min=0.0, max=1.0)
        self.bars = bqplot.Bars(
            x=list(MONTHS), y=np.zeros((2, 12)), scales={"x": mx, "y": self.y_scale},
            type="grouped", colors=[palette.EDITED_FROM_CURRENT, palette.CURRENT], padding=0.2,
        )
        self.set_figure([self.bars], [
            bqplot.Axis(scale=mx, label="Month"),
            bqplot.Axis(scale=self.y_scale, orientation="vertical", label="Yield (mm/month)",
                        label_offset="50px"),
        ])

    def legend_entries(self) -> list[tuple[str, str, str]]:  # noqa: D102
        return [(label, colour, "box") for label, colour, _ in self.plan_entries()]

    def draw(self) -> None:  # noqa: D102
        monthly = np.vstack([_months(self.state.outcome.monthly_yield_mm),
                             _months(self.state.baseline.monthly_yield_mm)])
        with self.y_scale.hold_sync():
            # a fixed domain set from the data (the scale's own domain did not follow the data)
            self.y_scale.max = nice_ceiling(np.nanmax(monthly, initial=0.0) * 1.05)
            low = np.nanmin(monthly, initial=0.0)
            self.y_scale.min = -nice_ceiling(-low * 1.05) if low < 0.0 else 0.0
        with self.bars.hold_sync():
            self.bars.y = monthly
            self.bars.colors = [self.state.edited_colour, palette.CURRENT]


class FlowDurationChart(Chart):
    """Flow duration curves on a log flow axis."""

    key = "fdc"
    title = "Flow duration curve"

    def __init__(self, state: DashboardState) -> None:
        super().__init__(state)
        fx, fy = bqplot.LinearScale(min=0.0, max=100.0), bqplot.LogScale()
        self.edited, self.current = _plan_lines(FDC_GRID_PCT, {"x": fx, "y": fy})
        self.set_figure([self.edited, self.current], [
            bqplot.Axis(scale=fx, label="Time the flow is equalled or exceeded (%)"),
            bqplot.Axis(scale=fy, orientation="vertical", label="Streamflow (m\u00b3/s)",
                        tick_format=".2g", label_offset="50px"),
        ])

    def draw(self) -> None:  # noqa: D102
        with self.edited.hold_sync():
            self.edited.y = _fdc_on_grid(self.state.outcome.fdc)
            self.edited.colors = [self.state.edited_colour]
        with self.current.hold_sync():
            self.current.y = _fdc_on_grid(self.state.baseline.fdc)


class MakeupChart(Chart):
    """Cover shares of every zone, ``current`` beside the plan on screen (stacked bars)."""

    key = "makeup"
    title = "Cover make-up of each zone: now (current) and plan (on screen)"

    def __init__(self, state: DashboardState) -> None:
        super().__init__(state)
        zx, zy = bqplot.OrdinalScale(), bqplot.LinearScale(min=0.0, max=100.0)
        self.colours = palette.cover_colours(state.cover_names)
        self.zone_labels = [f"{zone}\u00a0{tag}" for zone in state.zone_names
                            for tag in ("now", "plan")]
        self.bars = bqplot.Bars(
            x=self.zone_labels, y=np.zeros((len(state.cover_names), len(self.zone_labels))),
            scales={"x": zx, "y": zy}, type="stacked", padding=0.25,
            colors=[self.colours[c] for c in state.cover_names], labels=state.cover_names,
            stroke="white", stroke_width=0.5,
        )
        self.set_figure([self.bars], [
            bqplot.Axis(scale=zx, label="Zone"),
            bqplot.Axis(scale=zy, orientation="vertical", label="Share of zone (%)",
                        label_offset="50px"),
        ])

    def legend_entries(self) -> list[tuple[str, str, str]]:  # noqa: D102
        return [(cover, colour, "box") for cover, colour in self.colours.items()]

    def draw(self) -> None:  # noqa: D102
        current = self.state.plan_shares("current")
        columns = []
        for zone in self.state.zone_names:
            columns.append([100.0 * current[zone][c] for c in self.state.cover_names])
            columns.append([100.0 * self.state.shares[zone][c] for c in self.state.cover_names])
        with self.bars.hold_sync():
            self.bars.y = np.asarray(columns, dtype=float).T


class MonthlyFlowChart(Chart):
    """Mean routed streamflow at the outlet per calendar month."""

    key = "monthly-flow"
    title = "Mean monthly streamflow"
    note = ("Streamflow at the outlet: quickflow routed through a fast store, drainage and the "
            "open-water balance through the groundwater store (the yield itself is defined "
            "below the charts).")

    def __init__(self, state: DashboardState) -> None:
        super().__init__(state)
        sx, sy = bqplot.OrdinalScale(), bqplot.LinearScale(min=0.0)
        self.edited, self.current = _plan_lines(list(MONTHS), {"x": sx, "y": sy},
                                                marker="circle", marker_size=18)
        self.set_figure([self.edited, self.current], [
            bqplot.Axis(scale=sx, label="Month"),
            bqplot.Axis(scale=sy, orientation="vertical", label="Streamflow (m\u00b3/s)",
                        tick_format=".2f", label_offset="50px"),
        ])
        self.figure.add_class("cy-monthly-flow")

    def draw(self) -> None:  # noqa: D102
        with self.edited.hold_sync():
            self.edited.y = self.state.outcome.monthly_flow_m3s.to_numpy(float)
            self.edited.colors = [self.state.edited_colour]
        with self.current.hold_sync():
            self.current.y = self.state.baseline.monthly_flow_m3s.to_numpy(float)


#: The charts of the page, in reading order (two per row).
CHARTS: tuple[type[Chart], ...] = (AnnualChart, MonthlyChart, FlowDurationChart, MakeupChart,
                                   MonthlyFlowChart)


class Charts:
    """The grid of charts; every chart is updated when the edited plan's outcome changes.

    Parameters
    ----------
    state : DashboardState
        Where the data come from.
    guard : Guard
        Reports a failing redraw on the page and in the log.
    charts : sequence of Chart subclasses, optional
        The charts in reading order (default :data:`CHARTS`).

    Attributes
    ----------
    charts : dict
        Chart key -> chart.
    """

    def __init__(self, state: DashboardState, guard: Guard, charts=None) -> None:
        self.state = state
        self.charts = {chart.key: chart for chart in (cls(state) for cls in (charts or CHARTS))}
        self.widget = widgets.GridBox(
            [chart.widget for chart in self.charts.values()],
            layout=widgets.Layout(grid_template_columns="repeat(2, minmax(0, 1fr))",
                                  grid_gap="4px 12px", width="100%"),
        )
        state.observe(guard("redraw the charts")(self.update), names="outcome")
        self.update()

    def chart(self, key: str) -> Chart:
        """Return the chart of that key."""
        return self.charts[key]

    @property
    def figures(self) -> list[bqplot.Figure]:
        """Every chart's figure, in reading order."""
        return [chart.figure for chart in self.charts.values()]

    def update(self, _change: dict | None = None) -> None:
        """Assign new data to every chart (no figure rebuilt)."""
        for chart in self.charts.values():
            chart.update()


def _months(monthly: Any) -> np.ndarray:
    """Mean monthly yield in calendar order Jan..Dec [mm/month]."""
    return np.asarray([float(monthly.get(m, np.nan)) for m in range(1, 13)], dtype=float)


def _fdc_on_grid(fdc: Any) -> np.ndarray:
    """Flow duration curve read at :data:`FDC_GRID_PCT`; zero flows become NaN (log axis) [m3/s]."""
    order = np.argsort(fdc["exceedance_pct"].to_numpy(float))
    pct = fdc["exceedance_pct"].to_numpy(float)[order]
    flow = fdc["flow_m3s"].to_numpy(float)[order]
    on_grid = np.interp(FDC_GRID_PCT, pct, flow)
    return np.where(on_grid > 0.0, on_grid, np.nan)
