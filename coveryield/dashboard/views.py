"""Widget views of a :class:`~coveryield.dashboard.state.DashboardState`: controls, figures.

Each view builds its widgets once, binds them to the state with ``observe``, and afterwards only
assigns new data (marks inside ``hold_sync()``), never rebuilding a figure. Every callback runs
through :class:`Guard`: an exception becomes a short message in the error area (CSS class
``cy-error``) and its traceback goes to the server log, so nothing fails silently.

CSS classes for tests: ``cy-share-<cover>`` on each share slider, ``cy-hold-<cover>`` on each hold
checkbox, ``cy-yield-change`` on the change in mean annual yield, ``cy-error`` on the error area,
``cy-status`` on the manager's message line.
"""

from __future__ import annotations

import functools
import html
import re
import sys
import traceback
from collections.abc import Callable
from typing import Any

import bqplot
import ipywidgets as widgets
import numpy as np

from coveryield.dashboard import palette
from coveryield.dashboard.state import ALL_ZONES, ALL_ZONES_RULE, SHARE_RULE, DashboardState
from coveryield.errors import CoveryieldError

MONTHS = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")
#: Exceedance percentages at which the flow duration curves are drawn [%].
FDC_GRID_PCT = np.concatenate(
    [np.linspace(0.1, 1.0, 10), np.linspace(1.5, 99.0, 196), [99.5, 99.9]])
MINUS = "\u2212"


def css_name(cover: str) -> str:
    """Return the cover name as used in CSS classes (other than [A-Za-z0-9_-] becomes -)."""
    return re.sub(r"[^A-Za-z0-9_-]", "-", cover)


def signed(value: float, unit: str, digits: int = 1) -> str:
    """Format a change with its sign and unit, e.g. ``−23.4 mm/yr`` (``±0.0`` if it rounds to 0)."""
    text = f"{abs(value):,.{digits}f}"
    if float(text.replace(",", "")) == 0.0:
        return f"\u00b1{text} {unit}".rstrip()
    return f"{MINUS if value < 0 else '+'}{text} {unit}".rstrip()


def log_traceback() -> None:
    """Write the current exception's traceback to the server log.

    In a kernel, ``sys.stderr`` goes to the page only; ``sys.__stderr__`` is the kernel's own
    stream, which Voila passes on to its log. Outside a kernel ``sys.stderr`` is used.
    """
    stream = sys.stderr
    if type(stream).__module__.startswith("ipykernel") and sys.__stderr__ is not None:
        stream = sys.__stderr__
    stream.write(traceback.format_exc())
    stream.flush()


class Guard:
    """Run widget callbacks so that no exception vanishes.

    Parameters
    ----------
    state : DashboardState
        Receives a short message in :attr:`~DashboardState.error` when a callback fails.
    """

    def __init__(self, state: DashboardState) -> None:
        self.state = state
        self._recoveries: list[Callable[[], None]] = []

    def on_failure(self, recover: Callable[[], None]) -> None:
        """Register a function that puts widgets back in line with the state after a failure."""
        self._recoveries.append(recover)

    def __call__(self, action: str) -> Callable[[Callable[..., Any]], Callable[..., Any]]:
        """Decorate a callback; ``action`` names it in the message (e.g. ``"change the share"``)."""

        def decorate(func: Callable[..., Any]) -> Callable[..., Any]:
            @functools.wraps(func)
            def guarded(*args: Any, **kwargs: Any) -> Any:
                try:
                    return func(*args, **kwargs)
                except Exception as exc:  # noqa: BLE001 - every failure is reported, none hidden
                    log_traceback()
                    self._report(action, exc)
                    return None

            return guarded

        return decorate

    def _report(self, action: str, exc: Exception) -> None:
        detail = str(exc) if isinstance(exc, CoveryieldError) else f"{type(exc).__name__}: {exc}"
        detail = detail.strip().splitlines()[0] if detail.strip() else type(exc).__name__
        if len(detail) > 240:
            detail = detail[:237] + "..."
        for recover in self._recoveries:
            try:
                recover()
            except Exception:  # noqa: BLE001
                log_traceback()
        self.state.error = f"Could not {action}: {detail}"


class ShareControls:
    """Plan and zone pickers, one share slider (in %) and hold checkbox per cover, and reset."""

    def __init__(self, state: DashboardState, guard: Guard) -> None:
        self.state = state
        self.guard = guard
        self._syncing = False
        self.plan_picker = widgets.Dropdown(
            options=state.plan_names, value=state.plan_name, description="Start from plan",
            style={"description_width": "136px"}, layout=widgets.Layout(width="356px"),
        )
        self.zone_picker = widgets.Dropdown(
            options=state.zone_choices, value=state.zone, description="Zone",
            style={"description_width": "136px"}, layout=widgets.Layout(width="356px"),
        )
        self.sliders: dict[str, widgets.FloatSlider] = {}
        self.holds: dict[str, widgets.Checkbox] = {}
        rows = [self._cover_row(cover) for cover in state.cover_names]
        self.total = widgets.HTML(layout=widgets.Layout(margin="0 0 0 4px"))
        self.reset_button = widgets.Button(
            description="Reset to plan", icon="undo", tooltip="Shares of the chosen plan",
            layout=widgets.Layout(width="150px"),
        )
        self.rule = widgets.HTML(
            f'<div class="cy-rule" style="color:{palette.MUTED};font-size:12px;'
            f'line-height:1.35">{html.escape(SHARE_RULE)}<br>{html.escape(ALL_ZONES_RULE)}</div>',
            layout=widgets.Layout(width="420px"),
        )
        self.widget = widgets.VBox(
            [self.plan_picker, self.zone_picker, *rows,
             widgets.HBox([self.reset_button, self.total]), self.rule],
            layout=widgets.Layout(width="440px"),
        )
        self.plan_picker.observe(guard("switch plans")(self._plan_picked), names="value")
        self.zone_picker.observe(guard("switch zones")(self._zone_picked), names="value")
        self.reset_button.on_click(guard("reset the shares")(self._reset_clicked))
        state.observe(guard("show the shares")(self._state_changed), names=["shares", "zone"])
        state.observe(guard("show the held covers")(self._held_changed), names="held")
        guard.on_failure(self.sync)
        self.sync()

    def _cover_row(self, cover: str) -> widgets.HBox:
        colour = palette.cover_colours(self.state.cover_names)[cover]
        swatch = widgets.HTML(
            f'<span style="display:inline-block;width:12px;height:12px;background:{colour};'
            f'border:1px solid {palette.INK};margin-top:9px"></span>',
            layout=widgets.Layout(width="18px"),
        )
        slider = widgets.FloatSlider(
            value=0.0, min=0.0, max=100.0, step=0.1, description=cover, readout_format=".1f",
            continuous_update=False, style={"description_width": "118px"},
            layout=widgets.Layout(width="345px"),
        )
        slider.add_class(f"cy-share-{css_name(cover)}")
        slider.add_class("cy-share")
        unit = widgets.HTML('<span style="line-height:28px">%</span>',
                            layout=widgets.Layout(width="16px"))
        hold = widgets.Checkbox(value=False, description="hold", indent=False,
                                layout=widgets.Layout(width="56px"))
        hold.add_class(f"cy-hold-{css_name(cover)}")
        slider.observe(self.guard(f"change the {cover} share")(
            functools.partial(self._slider_moved, cover)), names="value")
        hold.observe(self.guard(f"hold {cover}")(
            functools.partial(self._hold_ticked, cover)), names="value")
        self.sliders[cover] = slider
        self.holds[cover] = hold
        return widgets.HBox([swatch, slider, unit, hold])

    def sync(self) -> None:
        """Show the state's shares, zone, plan and held covers on the controls."""
        shown = self.state.displayed_shares()
        self._syncing = True
        try:
            self.plan_picker.value = self.state.plan_name
            self.zone_picker.value = self.state.zone
            for cover, slider in self.sliders.items():
                slider.value = round(100.0 * shown[cover], 6)
                self.holds[cover].value = cover in self.state.held
                slider.disabled = cover in self.state.held
        finally:
            self._syncing = False
        total = 100.0 * sum(shown.values())
        where = "the catchment" if self.state.zone == ALL_ZONES else f"zone {self.state.zone}"
        self.total.value = (
            f'<span style="color:{palette.MUTED};font-size:12px;line-height:32px">'
            f"Total of {where}: {total:.1f} %</span>"
        )

    def _slider_moved(self, cover: str, change: dict) -> None:
        if self._syncing:
            return
        self.state.error = ""
        self.state.set_share(cover, float(change["new"]) / 100.0)
        self.sync()

    def _hold_ticked(self, cover: str, change: dict) -> None:
        if self._syncing:
            return
        self.state.set_held(cover, bool(change["new"]))

    def _plan_picked(self, change: dict) -> None:
        if self._syncing:
            return
        self.state.error = ""
        self.state.plan_name = change["new"]

    def _zone_picked(self, change: dict) -> None:
        if self._syncing:
            return
        self.state.error = ""
        self.state.zone = change["new"]

    def _reset_clicked(self, _button: widgets.Button) -> None:
        self.state.error = ""
        self.state.reset()

    def _state_changed(self, _change: dict) -> None:
        self.sync()

    def _held_changed(self, _change: dict) -> None:
        self.sync()


def _card(title: str) -> tuple[widgets.VBox, widgets.HTML, widgets.HTML]:
    heading = widgets.HTML(
        f'<div style="font-size:12px;color:{palette.MUTED};text-transform:uppercase;'
        f'letter-spacing:0.04em">{title}</div>'
    )
    main = widgets.HTML()
    detail = widgets.HTML()
    box = widgets.VBox(
        [heading, main, detail],
        layout=widgets.Layout(border="1px solid #D5D9DE", padding="6px 12px", margin="0 0 8px 0",
                              width="100%"),
    )
    return box, main, detail


class Headline:
    """Figures that change with every move: mean yield, change in dry years, evaporation check."""

    def __init__(self, state: DashboardState, guard: Guard) -> None:
        self.state = state
        yield_box, self.yield_main, self.yield_detail = _card("Mean annual yield, edited plan")
        change_box, self.change_main, self.change_detail = _card("Change against current")
        dry_box, self.dry_main, self.dry_detail = _card("Driest 10 % of years")
        evap_box, self.evap_main, self.evap_detail = _card("Evaporation cross-check")
        self.change_main.add_class("cy-yield-change")
        self.widget = widgets.VBox([yield_box, change_box, dry_box, evap_box],
                                   layout=widgets.Layout(flex="1 1 380px", max_width="640px",
                                                         margin="0 0 0 16px"))
        state.observe(guard("show the headline figures")(self.update),
                      names=["outcome", "bands"])
        self.update()

    def _band(self, key: str, signed_figure: bool = True) -> str:
        """`` (−61 to −33)``: the 5-95 % band of a headline, or nothing without an ensemble."""
        if key not in self.state.bands:
            return ""
        low, _, high = self.state.bands[key]
        if low == high:  # e.g. no change from current in any member: nothing to show
            return ""
        fmt = (lambda v: signed(v, "", 0)) if signed_figure else (lambda v: f"{v:,.0f}")
        return (f' <span class="cy-band" style="font-size:15px;font-weight:400;'
                f'color:{palette.MUTED}" title="5th to 95th percentile over the parameter '
                f'ensemble">({fmt(low)} to {fmt(high)})</span>')

    def update(self, _change: dict | None = None) -> None:
        """Write the edited plan's figures (and its change against ``current``)."""
        edited, base, change = self.state.outcome, self.state.baseline, self.state.change
        big = f'style="font-size:22px;font-weight:600;color:{palette.EDITED}"'
        small = f'style="font-size:12px;color:{palette.MUTED}"'
        self.yield_main.value = (
            f"<span {big}>{edited.mean_yield_mm:,.1f} mm/yr</span>"
            f"{self._band('mean_yield_mm', signed_figure=False)}"
            f" <span {small}>({edited.mean_yield_ml:,.0f} ML/yr)</span>"
        )
        self.yield_detail.value = (
            f"<span {small}>current: {base.mean_yield_mm:,.1f} mm/yr "
            f"({base.mean_yield_ml:,.0f} ML/yr)</span>"
        )
        self.change_main.value = (f'<span {big}>{signed(change.yield_mm, "mm/yr")}</span>'
                                  f"{self._band('change_mm')}")
        self.change_detail.value = (
            f"<span {small}>{signed(change.yield_pct, '%')}, "
            f"{signed(change.yield_ml, 'ML/yr', 0)}; low flow Q95 "
            f"{signed(change.q95_pct, '%')}</span>"
        )
        years = ", ".join(str(y) for y in self.state.comparison.dry_years)
        self.dry_main.value = (f'<span {big}>{signed(change.dry10_mm, "mm/yr")}</span>'
                               f"{self._band('dry_year_change_mm')}")
        self.dry_detail.value = (
            f"<span {small}>mean change in {years}; driest year "
            f"{signed(change.driest_year_mm, 'mm')}</span>"
        )
        note = html.escape(str(edited.crosscheck_note))
        flag = (f'<br><span style="color:{palette.ALERT}">\u26a0 {note}</span>'
                if edited.crosscheck_flag else f"<br><span {small}>{note}</span>")
        self.evap_main.value = (
            f'<span style="font-size:15px">daily model <b>{edited.model_evap_mm:,.0f}</b> mm/yr'
            f" \u00b7 Zhang curve <b>{edited.zhang_evap_mm:,.0f}</b> mm/yr</span>"
        )
        self.evap_detail.value = (
            f"<span {small}>Fu's form {edited.fu_evap_mm:,.0f} mm/yr; mean annual evaporation "
            f"of this cover mix</span>{flag}"
        )


def _figure(title: str, marks: list, axes: list) -> bqplot.Figure:
    return bqplot.Figure(
        marks=marks, axes=axes, title=title, legend_location="top-right",
        fig_margin={"top": 50, "bottom": 55, "left": 70, "right": 20},
        layout=widgets.Layout(width="100%", height="330px"),
        title_style={"font-size": "15px"},
        legend_style={"fill": "white", "stroke": "#D5D9DE"},
    )


class Charts:
    """Four bqplot figures comparing the edited plan with ``current``, updated by data only."""

    def __init__(self, state: DashboardState, guard: Guard) -> None:
        self.state = state
        plan_colours = [palette.CURRENT, palette.EDITED]
        plan_labels = ["current", "edited plan"]
        years = np.asarray(state.comparison.years, dtype=float)

        sx, sy = bqplot.LinearScale(), bqplot.LinearScale()
        self.annual = bqplot.Lines(
            x=years, y=np.zeros((2, len(years))), scales={"x": sx, "y": sy},
            colors=plan_colours, labels=plan_labels, stroke_width=2, marker="circle",
            marker_size=18,
        )
        self.annual_figure = _figure("Yield year by year", [self.annual], [
            bqplot.Axis(scale=sx, label="Year", tick_format="d"),
            bqplot.Axis(scale=sy, orientation="vertical", label="Yield (mm/yr)", tick_format=",d",
                        label_offset="50px"),
        ])

        mx, my = bqplot.OrdinalScale(), bqplot.LinearScale(min=0.0, max=1.0)
        self.monthly_scale = my
        self.monthly = bqplot.Bars(
            x=list(MONTHS), y=np.zeros((2, 12)), scales={"x": mx, "y": my}, type="grouped",
            colors=plan_colours, labels=plan_labels, padding=0.2,
        )
        self.monthly_figure = _figure("Mean monthly yield", [self.monthly], [
            bqplot.Axis(scale=mx, label="Month"),
            bqplot.Axis(scale=my, orientation="vertical", label="Yield (mm/month)",
                        label_offset="50px"),
        ])

        fx, fy = bqplot.LinearScale(min=0.0, max=100.0), bqplot.LogScale()
        self.fdc = bqplot.Lines(
            x=FDC_GRID_PCT, y=np.ones((2, len(FDC_GRID_PCT))), scales={"x": fx, "y": fy},
            colors=plan_colours, labels=plan_labels, stroke_width=2,
        )
        self.fdc_figure = _figure("Flow duration curve", [self.fdc], [
            bqplot.Axis(scale=fx, label="Time the flow is equalled or exceeded (%)"),
            bqplot.Axis(scale=fy, orientation="vertical", label="Streamflow (m\u00b3/s)",
                        tick_format=".2g", label_offset="50px"),
        ])

        zx, zy = bqplot.OrdinalScale(), bqplot.LinearScale(min=0.0, max=100.0)
        cover_colours = palette.cover_colours(state.cover_names)
        self.zone_labels = [f"{zone} {tag}" for zone in state.zone_names
                            for tag in ("(current)", "(edited)")]
        self.makeup = bqplot.Bars(
            x=self.zone_labels, y=np.zeros((len(state.cover_names), len(self.zone_labels))),
            scales={"x": zx, "y": zy}, type="stacked", padding=0.25,
            colors=[cover_colours[c] for c in state.cover_names], labels=state.cover_names,
            stroke="white", stroke_width=0.5,
        )
        self.makeup_figure = _figure("Cover make-up of each zone", [self.makeup], [
            bqplot.Axis(scale=zx, label="Zone"),
            bqplot.Axis(scale=zy, orientation="vertical", label="Share of zone (%)",
                        label_offset="50px"),
        ])

        self.figures = [self.annual_figure, self.monthly_figure, self.fdc_figure,
                        self.makeup_figure]
        self.marks = [self.annual, self.monthly, self.fdc, self.makeup]
        plan_legend = legend(dict(zip(plan_labels, plan_colours, strict=True)), line=True)
        cover_legend = legend(cover_colours)
        self.widget = widgets.GridBox(
            [widgets.VBox([figure, plan_legend if figure is not self.makeup_figure
                           else cover_legend]) for figure in self.figures],
            layout=widgets.Layout(grid_template_columns="repeat(2, minmax(0, 1fr))",
                                  grid_gap="4px 12px", width="100%"),
        )
        state.observe(guard("redraw the charts")(self.update), names="outcome")
        self.update()

    def update(self, _change: dict | None = None) -> None:
        """Assign the edited plan's and ``current``'s data to the marks (no figure rebuilt)."""
        edited, base = self.state.outcome, self.state.baseline
        with self.annual.hold_sync():
            self.annual.y = np.vstack([
                base.annual["yield_mm"].to_numpy(float), edited.annual["yield_mm"].to_numpy(float)
            ])
        monthly = np.vstack([_months(base.monthly_yield_mm), _months(edited.monthly_yield_mm)])
        with self.monthly_scale.hold_sync():
            # fixed domain set from the data (the scale's own domain did not follow the data)
            self.monthly_scale.max = _nice_ceiling(np.nanmax(monthly, initial=0.0) * 1.05)
            low = np.nanmin(monthly, initial=0.0)
            self.monthly_scale.min = -_nice_ceiling(-low * 1.05) if low < 0.0 else 0.0
        with self.monthly.hold_sync():
            self.monthly.y = monthly
        with self.fdc.hold_sync():
            self.fdc.y = np.vstack([_fdc_on_grid(base.fdc), _fdc_on_grid(edited.fdc)])
        with self.makeup.hold_sync():
            self.makeup.y = self._makeup()

    def _makeup(self) -> np.ndarray:
        current = self.state.plan_shares("current")
        columns = []
        for zone in self.state.zone_names:
            columns.append([100.0 * current[zone][c] for c in self.state.cover_names])
            columns.append([100.0 * self.state.shares[zone][c] for c in self.state.cover_names])
        return np.asarray(columns, dtype=float).T


def legend(colours: dict[str, str], line: bool = False) -> widgets.HTML:
    """Build a one-line legend for under a chart: a swatch (or short line) and name per entry."""
    shape = "width:18px;height:3px;margin-bottom:4px" if line else "width:11px;height:11px"
    items = "".join(
        f'<span style="margin:0 14px 0 0;white-space:nowrap"><span style="display:inline-block;'
        f'{shape};background:{colour};vertical-align:middle;margin-right:5px"></span>'
        f"{html.escape(name)}</span>"
        for name, colour in colours.items()
    )
    return widgets.HTML(f'<div style="text-align:center;font-size:13px;color:{palette.INK};'
                        f'margin-top:-6px">{items}</div>')


def _nice_ceiling(value: float) -> float:
    """Return the next round number above ``value`` (1 to 8 times a power of ten) [-]."""
    if not np.isfinite(value) or value <= 0.0:
        return 1.0
    power = 10.0 ** np.floor(np.log10(value))
    for step in (1.0, 1.2, 1.5, 2.0, 2.5, 3.0, 4.0, 5.0, 6.0, 8.0, 10.0):
        if step * power >= value:
            return float(step * power)
    return float(10.0 * power)


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


class ManagerControls:
    """Save the edited plan as a new plan file, export its tables (absent in read-only mode)."""

    def __init__(self, state: DashboardState, guard: Guard, plan_path: Any) -> None:
        from pathlib import Path

        self.state = state
        self.plan_path = Path(plan_path) if plan_path is not None else None
        self.name_box = widgets.Text(
            placeholder="new plan name", description="Plan name",
            style={"description_width": "80px"}, layout=widgets.Layout(width="260px"),
        )
        self.save_button = widgets.Button(description="Save as new plan", icon="save",
                                          layout=widgets.Layout(width="160px"))
        self.export_button = widgets.Button(description="Export tables", icon="download",
                                            layout=widgets.Layout(width="160px"))
        self.status = widgets.HTML(layout=widgets.Layout(width="420px"))
        self.status.add_class("cy-status")
        self.save_button.on_click(guard("save the plan")(self._save_clicked))
        self.export_button.on_click(guard("export the tables")(self._export_clicked))
        self.widget = widgets.VBox(
            [widgets.HTML(f'<b style="color:{palette.INK}">Manager</b>'),
             widgets.HBox([self.name_box, self.save_button]), self.export_button, self.status],
            layout=widgets.Layout(border="1px solid #D5D9DE", padding="6px", width="430px",
                                  margin="10px 0 0 0"),
        )

    def _where(self) -> Any:
        if self.plan_path is None:
            from coveryield.errors import OutputError

            raise OutputError("the plan file's location is unknown; pass plan_path to save")
        return self.plan_path

    def _save_clicked(self, _button: widgets.Button) -> None:
        from coveryield.dashboard.exports import save_plan
        from coveryield.dashboard.state import engine_shares

        self.state.error = ""
        self.status.value = ""
        path = save_plan(self.state.plan_file, self._where(), self.name_box.value,
                         engine_shares(self.state.shares))
        self.status.value = (f"Saved plan to <code>{html.escape(path.name)}</code> beside the "
                             "plan file.")

    def _export_clicked(self, _button: widgets.Button) -> None:
        from coveryield.dashboard.exports import export_tables

        self.state.error = ""
        self.status.value = ""
        label = self.name_box.value.strip() or "edited"
        folder = export_tables(self.state, self._where(), label)
        self.status.value = ("Wrote annual.csv and summary.json to "
                             f"<code>{html.escape(folder.name)}</code> beside the plan file.")


class ErrorArea:
    """Shows :attr:`DashboardState.error` (CSS class ``cy-error``); empty when all is well."""

    def __init__(self, state: DashboardState) -> None:
        self.widget = widgets.HTML("")
        self.widget.add_class("cy-error")
        state.observe(self._show, names="error")
        self._show({"new": state.error})

    def _show(self, change: dict) -> None:
        message = change["new"]
        self.widget.value = (
            f'<div style="color:{palette.ALERT};border:1px solid {palette.ALERT};padding:4px 8px;'
            f'margin:4px 0">\u26a0 {html.escape(message)}</div>' if message else ""
        )
