"""The years-after-planting view of the served dashboard, in a real headless Chromium."""

from __future__ import annotations

import pytest

pytestmark = pytest.mark.browser


def test_year_slider_moves_the_figures_and_the_path_is_drawn(served, browser, artifacts):
    page = browser.new_page(viewport={"width": 1360, "height": 1500})
    page.goto(served.url + "/", timeout=180_000)
    page.wait_for_selector(".cy-timeline-year .widget-readout", timeout=180_000)
    figures = page.locator(".cy-timeline-figures")
    assert "YEAR 1 OF" in figures.inner_text()
    readout = page.locator(".cy-timeline-year .widget-readout")
    readout.click()
    page.keyboard.press("Control+A")
    page.keyboard.type("25")
    page.keyboard.press("Enter")
    page.wait_for_function(
        "() => document.querySelector('.cy-timeline-figures').innerText.includes('YEAR 25 OF')",
        timeout=30_000,
    )
    text = figures.inner_text()
    for words in ("mm/yr", "against current", "mean age"):
        assert words in text
    timeline = page.locator(".cy-timeline")
    assert timeline.locator(".bqplot.figure svg").count() >= 1
    assert timeline.locator("path.line").count() >= 2
    assert page.locator(".cy-error").inner_text().strip() == ""
    page.wait_for_timeout(500)
    timeline.screenshot(path=str(artifacts / "dashboard-timeline.png"))
    page.close()
