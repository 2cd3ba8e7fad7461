"""Issue 12's browser test: open the page, wait until it is interactive, check the start state.

- the cards show the chosen plan's own figures (the first plan after `current`), computed here
  from the same plan file with the Python API;
- both lines are visible: the plan on screen and `current`, drawn on top of it;
- the report's dry-year bands are on the page;
- no request leaves 127.0.0.1 (the page, its scripts, styles, fonts and websockets).
The conventions checked are our own, no source.
"""

from __future__ import annotations

import re
from urllib.parse import urlsplit

import pytest

pytestmark = pytest.mark.browser

INTERACTIVE = """() => !document.querySelector('#loading')
    && document.querySelectorAll('.cy-share .widget-readout').length >= 4
    && document.querySelector('.cy-card-yield') !== null
    && document.querySelectorAll('.cy-chart-annual path.line').length > 0"""

ANNUAL_PATHS = """() => [...document.querySelectorAll('.cy-chart-annual path.line')].map(p => {
    const box = p.getBoundingClientRect();
    const style = getComputedStyle(p);
    return {stroke: style.stroke, fill: style.fill, width: box.width, height: box.height,
            strokeWidth: parseFloat(style.strokeWidth), visible: style.visibility !== 'hidden'
            && style.display !== 'none' && parseFloat(style.opacity) > 0};
})"""


def _rgb(hex_colour: str) -> str:
    r, g, b = (int(hex_colour[i:i + 2], 16) for i in (1, 3, 5))
    return f"rgb({r}, {g}, {b})"


def _figure(text: str, unit: str = "mm/yr") -> float:
    match = re.search(r"([\u2212+\u00b1-]?)([\d,]+\.\d) " + re.escape(unit), text)
    assert match, f"no figure in {unit} in {text!r}"
    sign = -1.0 if match.group(1) in ("\u2212", "-") else 1.0
    return sign * float(match.group(2).replace(",", ""))


@pytest.fixture(scope="module")
def expected(served):
    """The first plan after `current`, compared with the Python API on the served plan file."""
    import coveryield
    from coveryield.palette import CURRENT, DRY_BAND, plan_colours

    comparison = coveryield.compare(served.plan_dir / "plans.toml")
    name = comparison.plan_names[1]
    outcome = comparison.outcome(name)
    return {
        "name": name,
        "yield_mm": outcome.mean_yield_mm,
        "change": comparison.change(outcome),
        "dry_years": comparison.dry_years,
        "plan_rgb": _rgb(plan_colours(comparison.plan_names)[name]),
        "current_rgb": _rgb(CURRENT),
        "band_rgb": _rgb(DRY_BAND),
    }


def test_page_opens_interactive_on_a_plans_own_figures_offline(served, browser, expected,
                                                              artifacts):
    page = browser.new_page(viewport={"width": 1360, "height": 1500})
    requested: list[str] = []
    page.on("request", lambda r: requested.append(r.url))
    page.on("websocket", lambda ws: requested.append(ws.url))
    page.goto(served.url + "/", timeout=120_000)
    page.wait_for_function(INTERACTIVE, timeout=120_000)

    # the cards: the chosen plan's own figures, not +-0.0
    pickers = page.locator(".widget-dropdown select")
    assert pickers.nth(0).input_value() == expected["name"]
    assert expected["name"] in page.locator(".cy-card").first.inner_text().lower()
    assert _figure(page.locator(".cy-card-yield").inner_text()) == pytest.approx(
        expected["yield_mm"], abs=0.051)
    change = expected["change"]
    assert _figure(page.locator(".cy-card-change").inner_text()) == pytest.approx(
        change.yield_mm, abs=0.051)
    assert _figure(page.locator(".cy-card-dry").inner_text()) == pytest.approx(
        change.dry10_mm, abs=0.051)
    assert abs(change.yield_mm) > 0.05

    # both lines visible, current drawn after (on top of) the plan on screen, and thinner
    page.wait_for_timeout(600)  # let the chart's transition finish
    paths = page.evaluate(ANNUAL_PATHS)
    strokes = [p["stroke"] for p in paths]
    plan = strokes.index(expected["plan_rgb"])
    current = strokes.index(expected["current_rgb"])
    assert current > plan
    for k in (plan, current):
        assert paths[k]["visible"]
        assert paths[k]["width"] > 100
        assert paths[k]["height"] > 10
    assert paths[current]["strokeWidth"] < paths[plan]["strokeWidth"]
    bands = [p for p in paths if p["fill"] == expected["band_rgb"]]
    assert len(bands) == len(expected["dry_years"])
    assert all(b["width"] > 2 and b["height"] > 50 for b in bands)

    # interactive: a round trip through the kernel (choosing a zone redraws the total line)
    pickers.nth(1).select_option("upper")
    page.wait_for_function("() => document.body.innerText.includes('Total of zone upper')",
                           timeout=30_000)

    # nothing left 127.0.0.1
    hosts = {urlsplit(u).hostname for u in requested if not u.startswith(("data:", "blob:"))}
    assert hosts == {"127.0.0.1"}, sorted(u for u in requested if "127.0.0.1" not in u)
    page.screenshot(path=str(artifacts / "start-state.png"), full_page=True)
    page.close()
