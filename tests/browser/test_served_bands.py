"""The served dashboard's uncertainty panel in a real headless Chromium: progress, then bands."""

from __future__ import annotations

import re

import pytest

pytestmark = pytest.mark.browser


def test_bands_are_estimated_with_progress_in_chromium(served, browser, artifacts):
    page = browser.new_page(viewport={"width": 1360, "height": 1500})
    page.goto(served.url + "/", timeout=180_000)
    page.wait_for_selector(".cy-ensemble-run", timeout=180_000)
    page.wait_for_function("() => !document.querySelector('#loading')", timeout=60_000)
    assert "No bands yet" in page.locator(".cy-ensemble-status").inner_text()
    members = page.locator(".cy-ensemble-members input")
    members.fill("10")
    members.press("Enter")
    page.locator(".cy-ensemble-run").click()
    page.wait_for_function(
        "() => document.querySelector('.cy-ensemble-status').innerText.includes('Bands from')",
        timeout=180_000)
    status = page.locator(".cy-ensemble-status").inner_text()
    assert "Bands from 10 parameter sets" in status
    band = re.compile(r"\([\u2212+\u00b1]?[\d,]+ to [\u2212+\u00b1]?[\d,]+\)")
    assert band.fullmatch(page.locator(".cy-band").first.inner_text().strip())
    # the edited plan is still `current`: no change in any member, so no band on the change yet
    readout = page.locator(".cy-share-forest .widget-readout")
    readout.click()
    page.keyboard.press("Control+A")
    page.keyboard.type("60")
    page.keyboard.press("Enter")
    page.wait_for_selector(".cy-yield-change .cy-band", timeout=30_000)
    change = page.locator(".cy-yield-change").inner_text()
    assert re.search(r"mm/yr " + band.pattern, change), change
    assert page.locator(".cy-error").inner_text().strip() == ""
    page.screenshot(path=str(artifacts / "dashboard-bands.png"), full_page=True)
    page.close()
