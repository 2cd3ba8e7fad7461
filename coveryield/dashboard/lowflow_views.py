"""Low flows on the page: a card with 7Q, baseflow index and days below, and monthly streamflow.

:class:`LowFlowViews` follows the same rules as :mod:`coveryield.dashboard.views`: widgets are
built once, bound to the :class:`~coveryield.dashboard.state.DashboardState` with ``observe``,
and afterwards only receive new data. CSS classes for tests: ``cy-low-flows`` on the card's
figures, ``cy-monthly-flow`` on the monthly streamflow figure.
"""

from __future__ import annotations

import html

import bqplot
import ipywidgets as widgets
import numpy as np

from coveryield.comparison import YIELD_DEFINITION
from coveryield.dashboard import palette
from coveryield.dashboard.state import DashboardState
from coveryield.dashboard.views import MONTHS, Guard, _card, _figure, legend, signed


class LowFlowViews:
    """Low-flow figures of the edited plan against ``current``, and mean monthly streamflow."""

    def __init__(self, state: DashboardState, guard: Guard) -> None:
        self.state = state
        box, self.main, self.detail = _card("Low flows")
        self.main.add_class("cy-low-flows")
        sx, sy = bqplot.OrdinalScale(), bqplot.LinearScale(min=0.0)
        colours = [palette.CURRENT, palette.EDITED]
        labels = ["current", "edited plan"]
        self.monthly_flow = bqplot.Lines(
            x=list(MONTHS), y=np.zeros((2, 12)), scales={"x": sx, "y": sy}, colors=colours,
            labels=labels, stroke_width=2, marker="circle", marker_size=18,
            line_style="solid",
        )
        self.figure = _figure("Mean monthly streamflow", [self.monthly_flow], [
            bqplot.Axis(scale=sx, label="Month"),
            bqplot.Axis(scale=sy, orientation="vertical", label="Streamflow (m\u00b3/s)",
                        tick_format=".2f", label_offset="50px"),
        ])
        self.figure.add_class("cy-monthly-flow")
        note = widgets.HTML(
            f'<div style="color:{palette.MUTED};font-size:12px;line-height:1.35">'
            f"{html.escape(YIELD_DEFINITION)} Streamflow routes quickflow through a fast store, "
            "drainage and the open-water balance through the groundwater store.</div>"
        )
        self.widget = widgets.VBox(
            [box, widgets.VBox([self.figure, legend(dict(zip(labels, colours, strict=True)),
                                                    line=True), note])],
            layout=widgets.Layout(width="100%"),
        )
        state.observe(guard("show the low flows")(self.update), names="outcome")
        self.update()

    def update(self, _change: dict | None = None) -> None:
        """Write the edited plan's low-flow figures and monthly streamflow."""
        edited, base, change = self.state.outcome, self.state.baseline, self.state.change
        big = f'style="font-size:18px;font-weight:600;color:{palette.EDITED}"'
        small = f'style="font-size:12px;color:{palette.MUTED}"'
        days = ""
        if edited.days_below_per_year is not None:
            days = (
                f" \u00b7 {edited.days_below_per_year:,.0f} d/yr below "
                f"{edited.low_flow_m3s:g} m\u00b3/s"
            )
        self.main.value = (
            f"<span {big}>7Q {edited.q7_m3s:,.3f} m\u00b3/s</span>"
            f" <span {small}>({signed(change.q7_pct, '%')} against current)</span>"
        )
        detail = (
            f"current 7Q {base.q7_m3s:,.3f} m\u00b3/s; baseflow index "
            f"{edited.baseflow_index:.2f} (current {base.baseflow_index:.2f}){days}. "
            "7Q: mean of each year's lowest 7-day mean flow."
        )
        self.detail.value = f"<span {small}>{html.escape(detail)}</span>"
        flows = np.vstack([base.monthly_flow_m3s.to_numpy(float),
                           edited.monthly_flow_m3s.to_numpy(float)])
        with self.monthly_flow.hold_sync():
            self.monthly_flow.y = flows
