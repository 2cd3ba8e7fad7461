"""A server with room for two page views: a viewer who drops off is one line in the log, and a
third viewer gets a clear "busy" page instead of a new kernel (issue 12, item 7).

The viewer who drops off is a Chromium killed (SIGKILL) right after moving sliders, so the
kernel's replies meet a closed websocket; before the fix this logged a WebSocketClosedError
traceback per message. The limits are our own, no source.
"""

from __future__ import annotations

import os
import signal
import subprocess
import time

import pytest
import requests

from .conftest import (
    CHROMIUM,
    CHROMIUM_ARGS,
    WARM,
    _free_port,
    start_server,
    stop_server,
    wait_for_log,
)

pytestmark = [pytest.mark.browser, pytest.mark.slow]


@pytest.fixture(scope="module")
def small(tmp_path_factory):
    if not CHROMIUM.exists():
        pytest.skip(f"{CHROMIUM} is absent")
    server = start_server(tmp_path_factory.mktemp("small"), "--max-viewers", "2")
    wait_for_log(server, WARM)
    yield server
    stop_server(server)


def _drop_a_viewer(url: str) -> None:
    """Open the page in a Chromium of our own, move sliders, then kill that browser outright."""
    from playwright.sync_api import sync_playwright

    port = _free_port()
    chrome = subprocess.Popen([str(CHROMIUM), *CHROMIUM_ARGS, f"--remote-debugging-port={port}",
                               "about:blank"], stdout=subprocess.DEVNULL,
                              stderr=subprocess.DEVNULL, start_new_session=True)
    try:
        with sync_playwright() as p:
            deadline = time.monotonic() + 30
            while True:
                try:
                    browser = p.chromium.connect_over_cdp(f"http://127.0.0.1:{port}")
                    break
                except Exception:  # noqa: BLE001 - not listening yet
                    if time.monotonic() > deadline:
                        raise
                    time.sleep(0.3)
            page = browser.contexts[0].new_page()
            page.goto(url + "/", timeout=120_000)
            page.wait_for_selector(".cy-share-forest .widget-readout", timeout=120_000)
            page.wait_for_function("() => !document.querySelector('#loading')", timeout=60_000)
            readout = page.locator(".cy-share-forest .widget-readout")
            for value in ("20", "80", "30", "70"):
                readout.click()
                page.keyboard.press("Control+A")
                page.keyboard.type(value)
                page.keyboard.press("Enter")
            os.killpg(chrome.pid, signal.SIGKILL)
    finally:
        if chrome.poll() is None:
            os.killpg(chrome.pid, signal.SIGKILL)
        chrome.wait()


def test_a_dropped_viewer_is_one_line_and_a_third_viewer_is_told_busy(small):
    _drop_a_viewer(small.url)
    wait_for_log(small, "viewer disconnected from kernel", timeout_s=30)
    time.sleep(1.0)  # replies still on their way to the dead browser
    log = small.log()
    assert "Traceback" not in log, log[-4000:]
    assert "WebSocketClosedError" not in log, log[-4000:]
    assert log.count("viewer disconnected from kernel") == 1, log[-4000:]
    assert "Starting buffering" not in log, log[-4000:]

    # the dropped viewer's kernel still counts (until culled); the warm one takes viewer two
    second = requests.get(small.url + "/", timeout=120)
    assert second.status_code == 200
    third = requests.get(small.url + "/", timeout=120)
    assert third.status_code == 503
    assert "try again in a few minutes" in third.text
    assert "cdn" not in third.text.lower()
    assert "https://" not in third.text
    assert "refused a viewer: 2 of 2 kernels in use" in small.log()
