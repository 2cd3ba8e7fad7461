"""The dashboard's colours: one named palette, chosen to stay distinguishable with colour-blindness.

The two plans compared are drawn in a blue and an orange of clearly different lightness (the pair
that stays apart under the common red-green deficiencies, and in greyscale). Covers get hues that
differ in lightness as well as hue, so that neighbouring blocks in a stacked bar never rely on
red-versus-green alone. The hex values are our own.
"""

from __future__ import annotations

#: The plan being edited on screen.
EDITED = "#1D5D9B"
#: The baseline plan ``current``.
CURRENT = "#E08A1E"
#: Text and axes.
INK = "#2B2B2B"
#: Secondary text (rules, notes).
MUTED = "#5E6670"
#: Messages about problems.
ALERT = "#A4262C"
#: Background of the caution banner.
CAUTION_BG = "#FFF4DB"

#: One colour per built-in cover.
COVER_COLOURS: dict[str, str] = {
    "forest": "#1E6B52",  # dark blue-green
    "pasture": "#B7CF5A",  # light yellow-green
    "crop": "#C2702F",  # mid brown-orange
    "water": "#6FB7E6",  # light sky blue
}

#: Colours for covers a plan file defines beyond the built-in ones (used in turn).
EXTRA_COVER_COLOURS: tuple[str, ...] = (
    "#7A5AA6",  # violet
    "#D46A8C",  # rose
    "#4A4A4A",  # charcoal
    "#E3C14A",  # straw
    "#3C8C8C",  # teal
    "#9C6B4E",  # clay
)


def cover_colours(cover_names: list[str]) -> dict[str, str]:
    """Assign a colour to each cover, built-in covers keeping their own.

    Parameters
    ----------
    cover_names : list of str
        Cover names in display order [-].

    Returns
    -------
    dict
        Cover name -> hex colour string.
    """
    colours: dict[str, str] = {}
    extras = iter(EXTRA_COVER_COLOURS * (1 + len(cover_names) // len(EXTRA_COVER_COLOURS)))
    for name in cover_names:
        colours[name] = COVER_COLOURS.get(name) or next(extras)
    return colours
