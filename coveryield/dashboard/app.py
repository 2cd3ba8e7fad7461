"""The dashboard page: header, caution, controls beside headline cards, then a grid of charts.

:class:`Dashboard` is itself a widget (a ``VBox``): as the last expression of a notebook cell it
shows itself, and its :attr:`~Dashboard.state` can be driven from Python. The cards and charts are
the classes listed in :data:`coveryield.dashboard.cards.CARDS` and
:data:`coveryield.dashboard.charts.CHARTS` unless others are passed.
"""

from __future__ import annotations

import html
import os
from pathlib import Path
from typing import Any

import ipywidgets as widgets

from coveryield.dashboard import palette
from coveryield.comparison import YIELD_DEFINITION
from coveryield.dashboard.cards import Headline
from coveryield.dashboard.charts import Charts
from coveryield.dashboard.exports import CAUTION
from coveryield.dashboard.state import DashboardState
from coveryield.dashboard.uncertainty import EnsemblePanel
from coveryield.dashboard.views import ErrorArea, Guard, ManagerControls, ShareControls
from coveryield.serve import PLAN_ENV, READ_ONLY_ENV, START_PLAN_ENV  # light module, no widgets

TRUE_WORDS = ("1", "true", "yes", "on")


def _as_comparison(source: Any) -> tuple[Any, Path | None]:
    """Return a Comparison (given one, a PlanFile or a path) and the plan file path if known."""
    if hasattr(source, "evaluate") and hasattr(source, "outcome"):
        return source, _plan_path_of(source.plan_file)
    import coveryield

    if isinstance(source, (str, os.PathLike)):
        path = Path(source).resolve()
        return coveryield.compare(path), path
    return coveryield.compare(source), _plan_path_of(source)


def _plan_path_of(plan_file: Any) -> Path | None:
    for attr in ("path", "source", "source_path"):
        value = getattr(plan_file, attr, None)
        if isinstance(value, (str, os.PathLike)) and str(value):
            return Path(value)
    return None


class Dashboard(widgets.VBox):
    """Explore a plan's cover shares and see the water yield change at once.

    Parameters
    ----------
    source : Comparison, PlanFile, str or pathlib.Path
        The plans to explore: a comparison already made, or a plan file (compared here, which
        runs the daily simulation once).
    read_only : bool
        Leave out every control that writes files (stakeholder mode).
    plan_name : str, optional
        Plan to start from (default: the first plan after ``current``, so the page opens on
        that plan's own figures; ``current`` if it is the only plan).
    plan_path : str or pathlib.Path, optional
        The plan file's location, where saved plans and exports go (default: taken from
        ``source``).
    cards, charts : sequences of classes, optional
        The headline cards and the charts (default: ``cards.CARDS`` and ``charts.CHARTS``).

    Attributes
    ----------
    state : DashboardState
        The choices and results; set them from Python to drive the page.
    controls, headline, charts, errors, timeline : views
        The parts of the page; ``manager`` is None in read-only mode, ``timeline`` (years after
        planting) None when the file has no plan besides ``current``.
    uncertainty : EnsemblePanel
        Estimates bands on the headlines from a parameter ensemble, with a progress bar.
    """

    def __init__(self, source: Any, *, read_only: bool = False, plan_name: str | None = None,
                 plan_path: str | os.PathLike | None = None, cards=None, charts=None) -> None:
        comparison, known_path = _as_comparison(source)
        self.read_only = bool(read_only)
        self.plan_path = Path(plan_path) if plan_path is not None else known_path
        self.state = DashboardState(comparison, plan_name)
        self.guard = Guard(self.state)
        self.errors = ErrorArea(self.state)
        self.controls = ShareControls(self.state, self.guard)
        self.headline = Headline(self.state, self.guard, cards)
        self.charts = Charts(self.state, self.guard, charts)
        self.manager = None if self.read_only else ManagerControls(
            self.state, self.guard, self.plan_path)
        self.uncertainty = EnsemblePanel(self.state, self.guard)
        self.timeline = _timeline_view(comparison, self.guard)
        left = [self.controls.widget] + ([self.manager.widget] if self.manager else [])
        left.append(self.uncertainty.widget)
        super().__init__(
            [
                self._header(comparison),
                self._caution(),
                self.errors.widget,
                widgets.HBox([widgets.VBox(left, layout=widgets.Layout(flex="0 0 450px")),
                              self.headline.widget],
                             layout=widgets.Layout(flex_flow="row wrap", width="100%")),
                self.charts.widget,
                *([self.timeline.widget] if self.timeline is not None else []),
                self._footer(),
            ],
            layout=widgets.Layout(padding="8px 16px", max_width="1280px"),
        )
        self.add_class("cy-dashboard")

    @staticmethod
    def _header(comparison: Any) -> widgets.HTML:
        catchment = comparison.plan_file.catchment
        years = list(comparison.years)
        span = f"{years[0]}\u2013{years[-1]}" if years else ""
        zones = len(comparison.plan_file.zones)
        return widgets.HTML(
            f'<div style="color:{palette.INK}"><div style="font-size:24px;font-weight:600">'
            f"Water yield of land-cover plans: {html.escape(str(catchment.name))}</div>"
            f'<div style="color:{palette.MUTED};font-size:13px">'
            f"{catchment.area_km2:,.1f} km\u00b2 in {zones} zone{'s' if zones != 1 else ''}; "
            f"daily climate {span}. The page opens on a plan of the plan file; move the shares of "
            "the covers to see how the mean yield, dry years and flows change against the "
            "current plan.</div></div>"
        )

    @staticmethod
    def _caution() -> widgets.HTML:
        return widgets.HTML(
            f'<div class="cy-caution" style="background:{palette.CAUTION_BG};color:{palette.INK};'
            f'border-left:4px solid {palette.CAUTION_EDGE};padding:6px 10px;margin:6px 0;'
            f'font-size:13px"><b>Caution:</b> {html.escape(CAUTION)} '
            "Figures are means over the climate record; they are not a forecast.</div>"
        )

    @staticmethod
    def _footer() -> widgets.HTML:
        return widgets.HTML(
            f'<div style="color:{palette.MUTED};font-size:12px;margin-top:6px">'
            f"{html.escape(YIELD_DEFINITION)} Depths are over the whole catchment (mm) or "
            "volumes (ML; 1 ML = 1000 m\u00b3). Evaporation check: Zhang et al. (2001) curve and "
            f"Fu's form of the Budyko framework. {html.escape(CAUTION)}</div>"
        )


def _timeline_view(comparison: Any, guard: Guard) -> Any:
    """Build the years-after-planting view (None when the file has no plan besides current)."""
    if len(comparison.plan_names) < 2:
        return None
    from coveryield.dashboard.timeline_state import TimelineState
    from coveryield.dashboard.timeline_view import TimelineView

    return TimelineView(TimelineState(comparison), guard)


def env_read_only(default: bool = False) -> bool:
    """Read-only flag from the COVERYIELD_READ_ONLY environment variable."""
    value = os.environ.get(READ_ONLY_ENV)
    return default if value is None else value.strip().lower() in TRUE_WORDS


def env_plan_path() -> Path:
    """Plan file from the COVERYIELD_PLAN environment variable, else the demo catchment's."""
    value = os.environ.get(PLAN_ENV)
    if value:
        return Path(value)
    import coveryield

    return Path(coveryield.demo_plan_path())


def env_start_plan() -> str | None:
    """Plan to start from, from the COVERYIELD_START_PLAN environment variable (None: default)."""
    return os.environ.get(START_PLAN_ENV) or None


def show_dashboard(plan: Any = None, *, read_only: bool | None = None,
                   plan_name: str | None = None) -> Dashboard:
    """Build the dashboard; as the last expression of a cell it shows itself.

    Parameters
    ----------
    plan : Comparison, PlanFile, str or pathlib.Path, optional
        The plans to explore (default: the file named by COVERYIELD_PLAN, else the demo
        catchment).
    read_only : bool, optional
        Leave out the controls that write files (default: COVERYIELD_READ_ONLY, else False).
    plan_name : str, optional
        Plan to start from (default: COVERYIELD_START_PLAN, else the first plan after
        ``current``).

    Returns
    -------
    Dashboard
        The page, a widget.
    """
    source = env_plan_path() if plan is None else plan
    ro = env_read_only() if read_only is None else bool(read_only)
    return Dashboard(source, read_only=ro, plan_name=plan_name or env_start_plan())
