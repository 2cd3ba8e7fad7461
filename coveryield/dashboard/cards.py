"""Headline cards: the figures that change with every move of a share.

A card is a small class: a ``key`` (used in the CSS class ``cy-card-<key>`` of its main figure),
a heading, and :meth:`Card.figures`, which returns the main figure and a line of detail as HTML
from the :class:`~coveryield.dashboard.state.DashboardState`. :class:`Headline` stacks the cards
listed in :data:`CARDS` and redraws them all when the edited plan's outcome changes.

To add a card: subclass :class:`Card`, write :meth:`Card.figures` (units in every figure), and
append the class to :data:`CARDS` (or pass ``cards=`` to :class:`~coveryield.dashboard.Dashboard`).
"""

from __future__ import annotations

import html

import ipywidgets as widgets

from coveryield.dashboard import palette
from coveryield.dashboard.state import DashboardState
from coveryield.physics.curves import ZHANG_CURVE_SENTENCE
from coveryield.dashboard.views import Guard, signed

SMALL = f'style="font-size:12px;color:{palette.MUTED}"'


class Card:
    """One card: a heading, a main figure and a line of detail, redrawn by :meth:`update`.

    Parameters
    ----------
    state : DashboardState
        Where the figures come from.
    """

    #: Short name: CSS class ``cy-card-<key>`` on the main figure, key in ``Headline.cards``.
    key = "card"
    #: Heading (override :meth:`heading` for one that changes).
    title = ""

    def __init__(self, state: DashboardState) -> None:
        self.state = state
        self.head = widgets.HTML()
        self.main = widgets.HTML()
        self.detail = widgets.HTML()
        self.main.add_class(f"cy-card-{self.key}")
        self.widget = widgets.VBox(
            [self.head, self.main, self.detail],
            layout=widgets.Layout(border=f"1px solid {palette.RULE}", padding="6px 12px",
                                  margin="0 0 8px 0", width="100%"),
        )
        self.widget.add_class("cy-card")

    def heading(self) -> str:
        """Return the card's heading as plain text."""
        return self.title

    def figures(self) -> tuple[str, str]:
        """Return the main figure and the detail line as HTML (units in both)."""
        raise NotImplementedError

    def big(self, text: str) -> str:
        """Format a main figure in the colour of the plan on screen."""
        return (f'<span style="font-size:22px;font-weight:600;color:{self.state.edited_colour}">'
                f"{text}</span>")

    def band(self, key: str, signed_figure: bool = True) -> str:
        """`` (−61 to −33)``: the 5-95 % band of a headline, or nothing without an ensemble.

        ``key`` is one of ``state.bands`` (``mean_yield_mm``, ``change_mm``,
        ``dry_year_change_mm``) [mm yr-1].
        """
        if key not in self.state.bands:
            return ""
        low, _, high = self.state.bands[key]
        if low == high:  # e.g. no change from current in any member: nothing to show
            return ""
        fmt = (lambda v: signed(v, "", 0)) if signed_figure else (lambda v: f"{v:,.0f}")
        return (f' <span class="cy-band" style="font-size:15px;font-weight:400;'
                f'color:{palette.MUTED}" title="5th to 95th percentile over the parameter '
                f'ensemble">({fmt(low)} to {fmt(high)})</span>')

    def update(self) -> None:
        """Redraw heading and figures from the state."""
        self.head.value = (
            f'<div style="font-size:12px;color:{palette.MUTED};text-transform:uppercase;'
            f'letter-spacing:0.04em">{html.escape(self.heading())}</div>'
        )
        self.main.value, self.detail.value = self.figures()


class YieldCard(Card):
    """Mean annual yield of the plan on screen, and of ``current``."""

    key = "yield"

    def heading(self) -> str:  # noqa: D102
        return f"Mean annual yield: {self.state.edited_label}"

    def figures(self) -> tuple[str, str]:  # noqa: D102
        edited, base = self.state.outcome, self.state.baseline
        return (
            self.big(f"{edited.mean_yield_mm:,.1f} mm/yr")
            + self.band("mean_yield_mm", signed_figure=False)
            + f" <span {SMALL}>({edited.mean_yield_ml:,.0f} ML/yr)</span>",
            f"<span {SMALL}>current: {base.mean_yield_mm:,.1f} mm/yr "
            f"({base.mean_yield_ml:,.0f} ML/yr)</span>",
        )


class ChangeCard(Card):
    """Change in mean annual yield against ``current`` (CSS class ``cy-yield-change`` too)."""

    key = "change"
    title = "Change against current"

    def __init__(self, state: DashboardState) -> None:
        super().__init__(state)
        self.main.add_class("cy-yield-change")

    def figures(self) -> tuple[str, str]:  # noqa: D102
        change = self.state.change
        return (
            self.big(signed(change.yield_mm, "mm/yr")) + self.band("change_mm"),
            f"<span {SMALL}>{signed(change.yield_pct, '%')}, "
            f"{signed(change.yield_ml, 'ML/yr', 0)}; low flow Q95 "
            f"{signed(change.q95_pct, '%')}</span>",
        )


class DryYearsCard(Card):
    """Change over the driest 10 % of years (by rain, driest first) and in the driest one."""

    key = "dry"
    title = "Driest 10 % of years"

    def figures(self) -> tuple[str, str]:  # noqa: D102
        change, comparison = self.state.change, self.state.comparison
        years = ", ".join(str(y) for y in comparison.dry_years)
        return (
            self.big(signed(change.dry10_mm, "mm/yr")) + self.band("dry_year_change_mm"),
            f"<span {SMALL}>mean change in {years} (driest first); in the driest year, "
            f"{comparison.dry_years[0]}: {signed(change.driest_year_mm, 'mm')}</span>",
        )


class EvaporationCard(Card):
    """The daily model's mean annual evaporation beside the Zhang curve and Fu's form."""

    key = "evaporation"
    title = "Evaporation cross-check"

    def figures(self) -> tuple[str, str]:  # noqa: D102
        edited = self.state.outcome
        note = html.escape(str(edited.crosscheck_note))
        flag = (f'<br><span style="color:{palette.ALERT}">\u26a0 {note}</span>'
                if edited.crosscheck_flag else f"<br><span {SMALL}>{note}</span>")
        return (
            f'<span style="font-size:15px">daily model <b>{edited.model_evap_mm:,.0f}</b> mm/yr'
            f" \u00b7 Zhang curve <b>{edited.zhang_evap_mm:,.0f}</b> mm/yr</span>",
            f"<span {SMALL}>Fu's form {edited.fu_evap_mm:,.0f} mm/yr; mean annual evaporation "
            f"of this cover mix. {html.escape(ZHANG_CURVE_SENTENCE)}</span>{flag}",
        )


class LowFlowCard(Card):
    """Low flows of the plan on screen: 7Q and its change, baseflow index, days below."""

    key = "low-flows"
    title = "Low flows"

    def __init__(self, state: DashboardState) -> None:
        super().__init__(state)
        self.main.add_class("cy-low-flows")

    def figures(self) -> tuple[str, str]:  # noqa: D102
        edited, base, change = self.state.outcome, self.state.baseline, self.state.change
        days = ""
        if edited.days_below_per_year is not None:
            days = (f" \u00b7 {edited.days_below_per_year:,.0f} d/yr below "
                    f"{edited.low_flow_m3s:g} m\u00b3/s")
        detail = (
            f"current 7Q {base.q7_m3s:,.3f} m\u00b3/s; baseflow index "
            f"{edited.baseflow_index:.2f} (current {base.baseflow_index:.2f}){days}. "
            "7Q: mean of each year's lowest 7-day mean flow."
        )
        return (
            self.big(f"7Q {edited.q7_m3s:,.3f} m\u00b3/s")
            + f" <span {SMALL}>({signed(change.q7_pct, '%')} against current)</span>",
            f"<span {SMALL}>{html.escape(detail)}</span>",
        )


#: The cards of the page, top to bottom.
CARDS: tuple[type[Card], ...] = (YieldCard, ChangeCard, DryYearsCard, EvaporationCard,
                                  LowFlowCard)


class Headline:
    """The column of cards; every card is redrawn when the edited plan's outcome changes.

    Parameters
    ----------
    state : DashboardState
        Where the figures come from.
    guard : Guard
        Reports a failing redraw on the page and in the log.
    cards : sequence of Card subclasses, optional
        The cards, top to bottom (default :data:`CARDS`).

    Attributes
    ----------
    cards : dict
        Card key -> card.
    """

    def __init__(self, state: DashboardState, guard: Guard, cards=None) -> None:
        self.state = state
        self.cards = {card.key: card for card in (cls(state) for cls in (cards or CARDS))}
        self.widget = widgets.VBox([c.widget for c in self.cards.values()],
                                   layout=widgets.Layout(flex="1 1 380px", max_width="640px",
                                                         margin="0 0 0 16px"))
        state.observe(guard("show the headline figures")(self.update),
                      names=["outcome", "bands"])
        self.update()

    def card(self, key: str) -> Card:
        """Return the card of that key."""
        return self.cards[key]

    def update(self, _change: dict | None = None) -> None:
        """Redraw every card."""
        for card in self.cards.values():
            card.update()
