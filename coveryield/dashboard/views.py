"""Widget views of a :class:`~coveryield.dashboard.state.DashboardState`: the controls.

Also what every view shares (:class:`Guard`, :func:`signed`, :class:`ErrorArea`).

The headline cards live in :mod:`coveryield.dashboard.cards`, the charts in
:mod:`coveryield.dashboard.charts`. Each view builds its widgets once, binds them to the state with
``observe``, and afterwards only assigns new values, never rebuilding a widget. Every callback
runs through :class:`Guard`: an exception becomes a short message in the error area (CSS class
``cy-error``) and its traceback goes to the server log, so nothing fails silently.

CSS classes for tests: ``cy-share-<cover>`` on each share slider, ``cy-hold-<cover>`` on each hold
checkbox, ``cy-card-<key>`` on each card's main figure (``cy-yield-change`` on the change in mean
annual yield), ``cy-chart-<key>`` on each chart, ``cy-error`` on the error area, ``cy-status`` on
the manager's message line.
"""

from __future__ import annotations

import functools
import html
import re
import sys
import traceback
from collections.abc import Callable
from typing import Any

import ipywidgets as widgets

from coveryield.dashboard import palette
from coveryield.dashboard.state import ALL_ZONES, ALL_ZONES_RULE, SHARE_RULE, DashboardState
from coveryield.errors import CoveryieldError

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
