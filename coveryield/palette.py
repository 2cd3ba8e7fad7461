"""One palette for every output, so report and dashboard agree.

A plan, a cover or a band has the same colour in the report and on the dashboard.

Plans are coloured by their place in the plan file (``current`` first) from :data:`PLAN_STYLES`,
whose hues are the colour-universal-design set of Okabe & Ito (2008), chosen to stay apart under
the common colour-vision deficiencies (from memory); markers, dashes and hatches keep plans
apart in greyscale print too (common practice, no source). ``current`` is the near-black first
entry everywhere. On the dashboard the plan being edited keeps the colour of the plan it started
from; an edit started from ``current`` takes :data:`EDITED_FROM_CURRENT`, a hue no plan uses.

Covers have fixed colours (:data:`COVER_COLOURS`, our own choice) that differ in lightness as well
as hue, so neighbouring blocks never rely on red against green alone.

This module is in the outputs layer so that the report (:mod:`coveryield.report_html`) and the
dashboard (:mod:`coveryield.dashboard`) can both import it; it imports nothing.
"""

from __future__ import annotations

from collections.abc import Sequence

#: Colour, matplotlib marker, matplotlib line style and bar hatch per plan, in plan order
#: (``current`` first), cycled if there are more plans.
PLAN_STYLES: tuple[tuple[str, str, object, str], ...] = (
    ("#222222", "o", "-", ""),
    ("#0072b2", "s", "--", "//"),
    ("#d55e00", "^", "-.", "\\\\"),
    ("#009e73", "D", ":", "xx"),
    ("#cc79a7", "v", (0, (5, 1, 1, 1, 1, 1)), ".."),
    ("#e69f00", "P", (0, (8, 2)), "--"),
    ("#56b4e9", "X", (0, (2, 2)), "++"),
)
#: The baseline plan ``current`` (the first plan style).
CURRENT = PLAN_STYLES[0][0]
#: A plan edited on the dashboard starting from ``current`` (a hue outside the plan styles).
EDITED_FROM_CURRENT = "#6a3d9a"

#: Text and axes.
INK = "#1a1a1a"
#: Secondary text (rules, notes).
MUTED = "#5e6670"
#: Messages about problems, and flags.
ALERT = "#a33a00"
#: The caution box: border and background.
CAUTION_EDGE = "#a33a00"
CAUTION_BG = "#fff4ec"
#: Bands marking the driest 10 % of years behind annual charts.
DRY_BAND = "#e6e6e6"
#: Borders of cards and table cells.
RULE = "#d5d9de"

#: One colour per built-in cover.
COVER_COLOURS: dict[str, str] = {
    "forest": "#1e6b52",  # dark blue-green
    "pasture": "#b7cf5a",  # light yellow-green
    "crop": "#c2702f",  # mid brown-orange
    "water": "#6fb7e6",  # light sky blue
}
#: Colours for covers a plan file defines beyond the built-in ones (used in turn).
EXTRA_COVER_COLOURS: tuple[str, ...] = (
    "#7a5aa6",  # violet
    "#d46a8c",  # rose
    "#4a4a4a",  # charcoal
    "#e3c14a",  # straw
    "#3c8c8c",  # teal
    "#9c6b4e",  # clay
)


def plan_style(index: int) -> tuple[str, str, object, str]:
    """Colour, marker, line style and hatch of the plan at ``index`` in plan order."""
    return PLAN_STYLES[index % len(PLAN_STYLES)]


def plan_colours(plan_names: Sequence[str]) -> dict[str, str]:
    """Plan name -> colour, for plans in file order (``current`` first).

    Parameters
    ----------
    plan_names : sequence of str
        Plan names, ``current`` first (as :attr:`Comparison.plan_names`).

    Returns
    -------
    dict
        Plan name -> hex colour string.
    """
    return {name: plan_style(i)[0] for i, name in enumerate(plan_names)}


def edited_colour(plan_names: Sequence[str], started_from: str) -> str:
    """Colour of a plan edited on the dashboard, started from plan ``started_from``."""
    if started_from == plan_names[0]:
        return EDITED_FROM_CURRENT
    return plan_colours(plan_names).get(started_from, EDITED_FROM_CURRENT)


def cover_colours(cover_names: Sequence[str]) -> dict[str, str]:
    """Assign a colour to each cover, built-in covers keeping their own.

    Parameters
    ----------
    cover_names : sequence of str
        Cover names in display order.

    Returns
    -------
    dict
        Cover name -> hex colour string.
    """
    extras = iter(EXTRA_COVER_COLOURS * (1 + len(cover_names) // len(EXTRA_COVER_COLOURS)))
    return {name: COVER_COLOURS.get(name) or next(extras) for name in cover_names}
