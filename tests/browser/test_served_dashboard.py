"""The served read-only dashboard in a real headless Chromium, and what an intruder cannot do."""

from __future__ import annotations

import re
from urllib.parse import quote

import pytest
import requests

pytestmark = pytest.mark.browser

SHARE_SUM = """() => {
    const boxes = [...document.querySelectorAll('.cy-share .widget-readout')];
    if (boxes.length === 0) return false;
    const total = boxes.reduce((s, b) => s + parseFloat(b.textContent), 0);
    return Math.abs(total - 100) <= 0.05 * boxes.length;
}"""


def _signed_mm(text: str) -> float:
    match = re.search(r"([\u2212+\u00b1-]?)([\d,]+\.\d) mm/yr", text)
    assert match, f"no signed mm/yr figure in {text!r}"
    return (-1.0 if match.group(1) in ("\u2212", "-") else 1.0) * float(
        match.group(2).replace(",", ""))


def test_dashboard_works_in_chromium(served, browser, artifacts):
    page = browser.new_page(viewport={"width": 1360, "height": 1500})
    messages = []
    page.on("console", lambda m: messages.append(f"{m.type}: {m.text}"))
    page.goto(served.url + "/", timeout=180_000)
    page.wait_for_selector(".cy-share-forest .widget-readout", timeout=180_000)
    page.wait_for_function("() => !document.querySelector('#loading')", timeout=60_000)
    sliders = page.locator(".cy-share")
    assert sliders.count() >= 4
    page.wait_for_function(SHARE_SUM, timeout=30_000)
    change = page.locator(".cy-yield-change")
    before = change.inner_text()
    assert _signed_mm(before) < 0.0  # opens on a planting plan (see test_start_state.py)

    readout = page.locator(".cy-share-forest .widget-readout")
    readout.click()
    page.keyboard.press("Control+A")
    page.keyboard.type("60")
    page.keyboard.press("Enter")
    page.wait_for_function(
        "(b) => document.querySelector('.cy-yield-change').innerText !== b", arg=before,
        timeout=30_000)
    page.wait_for_function(SHARE_SUM, timeout=30_000)
    after = change.inner_text()
    # more forest, less water: common practice, no source (see the widget tests)
    assert _signed_mm(after) < 0.0
    assert float(readout.inner_text()) == pytest.approx(60.0, abs=0.1)

    assert page.locator(".bqplot.figure svg").count() >= 4
    assert page.locator(".bqplot.figure rect.bar").count() > 0
    assert page.locator(".cy-error").inner_text().strip() == ""
    text = page.inner_text("body")
    assert "licensed hydrological practice" in text
    assert "Save as new plan" not in text
    assert "Export tables" not in text
    page.wait_for_timeout(500)  # let the charts finish their transitions
    page.screenshot(path=str(artifacts / "dashboard.png"), full_page=True)
    page.close()


def _get(served, path: str) -> requests.Response:
    return requests.get(served.url + path, timeout=120, allow_redirects=True)


PLAN_TEXT = "[catchment]"


@pytest.mark.parametrize("path", [
    "/tree", "/voila/tree", "/voila/tree/", "/voila/render/x.ipynb",
    "/voila/render/dashboard.ipynb",
    "/api/contents", "/voila/api/contents", "/voila/api/contents/dashboard.ipynb",
    "/dashboard.ipynb", "/voila/files/dashboard.ipynb", "/voila/files/plans.toml",
    "/voila/files/climate.csv", "/voila/files/x.py", "/voila/files/..%2Fconfig%2Fvoila.json",
    "/voila/files/..%2F..%2F..%2Fetc%2Fpasswd",
])
def test_intruder_gets_nothing(served, path):
    reply = _get(served, path)
    assert reply.status_code >= 400, (path, reply.status_code, reply.url)
    assert PLAN_TEXT not in reply.text
    assert "nbformat" not in reply.text
    assert "cdn" not in reply.text.lower()  # our error page: nothing asked of other hosts


def test_plan_file_by_absolute_path_and_traversal_is_refused(served):
    plan = str(served.plan_dir / "plans.toml")
    climate = str(served.plan_dir / "climate.csv")
    for target in (plan, climate):
        for path in ("/voila/files/" + quote(target, safe=""),
                     "/voila/files/" + "..%2F" * 8 + quote(target.lstrip("/"), safe=""),
                     "/voila/files" + target):
            reply = _get(served, path)
            assert reply.status_code >= 400, (path, reply.status_code)
            assert PLAN_TEXT not in reply.text
            assert "rain_mm" not in reply.text


def test_page_shows_no_source_and_ignores_theme_and_template(served):
    plain = _get(served, "/")
    assert plain.status_code == 200
    for leak in ("import coveryield", "show_dashboard", "Traceback", "COVERYIELD_PLAN"):
        assert leak not in plain.text
    dark = _get(served, "/?theme=dark")
    assert "JupyterLab Dark" not in dark.text
    assert "theme-dark" not in dark.text
    assert re.search(r'"theme":\s*"light"', dark.text) or "JupyterLab Light" in dark.text
    other = _get(served, "/?template=reveal")
    assert "reveal" not in other.text.lower()


def test_idle_kernels_are_culled_and_the_page_wrote_nothing(served):
    # runs after the browser session and the GET probes (file order)
    log = served.log()
    assert "Culling kernels with idle durations > 600 seconds" in log, log[-2000:]
    assert served.snapshot() == served.before
