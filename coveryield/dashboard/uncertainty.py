"""The uncertainty panel: estimate bands on the headlines from a parameter ensemble, with progress.

Clicking the button simulates N parameter sets once (tiles of every member, annual sums; see
:func:`coveryield.uncertainty.ensemble.simulate_ensemble`) while a progress bar fills; from then
on every share change moves the bands with the figures, as a weighted sum per member, never a
new daily loop. The seed is fixed, so everyone who opens the page sees the same bands.

CSS classes for tests: ``cy-ensemble-run`` (button), ``cy-ensemble-progress``,
``cy-ensemble-status``, ``cy-ensemble-members`` (number of parameter sets).
"""

from __future__ import annotations

import html

import ipywidgets as widgets

from coveryield.dashboard import palette
from coveryield.dashboard.state import DashboardState

#: Seed of the dashboard's ensembles: the same bands for everyone on the same plan file.
DASHBOARD_SEED = 1
#: Parameter sets drawn when the button is pressed, unless changed on the page.
DEFAULT_MEMBERS = 100

BAND_NOTE = (
    "Bands (in brackets beside each figure) run from the 5th to the 95th percentile over "
    "parameter sets drawn across the covers' documented ranges: how far this model's answer "
    "moves with its parameters. They are not a confidence interval for the real catchment."
)


class EnsemblePanel:
    """Number of parameter sets, a button, a progress bar and a status line."""

    def __init__(self, state: DashboardState, guard) -> None:
        self.state = state
        self.members = widgets.BoundedIntText(
            value=DEFAULT_MEMBERS, min=10, max=1000, step=10, description="Parameter sets",
            style={"description_width": "110px"}, layout=widgets.Layout(width="200px"))
        self.members.add_class("cy-ensemble-members")
        self.button = widgets.Button(description="Estimate bands", icon="sliders",
                                     tooltip="Simulate the parameter sets once (takes a while)",
                                     layout=widgets.Layout(width="160px"))
        self.button.add_class("cy-ensemble-run")
        self.progress = widgets.IntProgress(value=0, min=0, max=1, description="",
                                            layout=widgets.Layout(width="400px",
                                                                  visibility="hidden"))
        self.progress.add_class("cy-ensemble-progress")
        self.status = widgets.HTML()
        self.status.add_class("cy-ensemble-status")
        note = widgets.HTML(f'<div style="color:{palette.MUTED};font-size:12px;line-height:1.35">'
                            f"{html.escape(BAND_NOTE)}</div>",
                            layout=widgets.Layout(width="420px"))
        self.widget = widgets.VBox(
            [widgets.HTML(f'<b style="color:{palette.INK}">Uncertainty</b>'),
             widgets.HBox([self.members, self.button]), self.progress, self.status, note],
            layout=widgets.Layout(border="1px solid #D5D9DE", padding="6px", width="430px",
                                  margin="10px 0 0 0"))
        self.button.on_click(guard("estimate the bands")(self._run_clicked))
        self._show_status()

    def _show_status(self) -> None:
        ensemble = getattr(self.state.comparison, "ensemble", None)
        if ensemble is None:
            self.status.value = (f'<span style="color:{palette.MUTED};font-size:12px">No bands '
                                 "yet: press the button to simulate the parameter sets.</span>")
            return
        self.status.value = (f'<span style="font-size:12px">Bands from {ensemble.n_members} '
                             f"parameter sets (Latin hypercube, seed {ensemble.seed}); moving a "
                             "share moves them at once.</span>")

    def _on_progress(self, done: int, total: int) -> None:
        self.progress.max = total
        self.progress.value = done
        self.status.value = (f'<span style="font-size:12px">Simulating parameter sets: {done} '
                             f"of {total}</span>")

    def _run_clicked(self, _button: widgets.Button) -> None:
        from coveryield.uncertainty.ensemble import simulate_ensemble

        self.state.error = ""
        self.button.disabled = True
        self.progress.layout.visibility = "visible"
        try:
            ensemble = simulate_ensemble(self.state.plan_file, int(self.members.value),
                                         seed=DASHBOARD_SEED, on_progress=self._on_progress)
            self.state.attach_ensemble(ensemble)
        finally:
            self.button.disabled = False
            self.progress.layout.visibility = "hidden"
            self._show_status()
