"""The dashboard's colours: the one palette of :mod:`coveryield.palette`.

Nothing is defined here, so the page and the report cannot disagree; the names are re-exported
for the dashboard's views.
"""

from __future__ import annotations

from coveryield.palette import (  # noqa: F401 - re-exported
    ALERT,
    CAUTION_BG,
    CAUTION_EDGE,
    COVER_COLOURS,
    CURRENT,
    DRY_BAND,
    EDITED_FROM_CURRENT,
    EXTRA_COVER_COLOURS,
    INK,
    MUTED,
    RULE,
    cover_colours,
    edited_colour,
    plan_colours,
)
