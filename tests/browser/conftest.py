"""A served read-only dashboard (`coveryield serve --read-only`) and a headless Chromium page.

The server runs as a subprocess on a free port (found by binding port 0), with private temporary
JUPYTER_* folders, serving a COPY of the demo catchment so the test can check that the page wrote
nothing into the plan's folder. It is stopped with SIGTERM at the end of the session.
"""

from __future__ import annotations

import os
import shutil
import signal
import socket
import subprocess
import sys
import time
import urllib.error
import urllib.request
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]
CHROMIUM = Path("/usr/bin/chromium")
# Flags for Debian's chromium in a container without GPU or network.
CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                 "--disable-background-networking", "--disable-component-update",
                 "--disable-sync"]
ARTIFACTS = REPO / "test-artifacts"


def pytest_collection_modifyitems(items):
    if CHROMIUM.exists():
        return
    skip = pytest.mark.skip(reason=f"{CHROMIUM} is absent: install Debian's chromium "
                                   "(`make browser`) to run the browser tests")
    for item in items:
        if "browser" in item.keywords:
            item.add_marker(skip)


def _free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as probe:
        probe.bind(("127.0.0.1", 0))
        return int(probe.getsockname()[1])


def _snapshot(folder: Path) -> dict[str, int]:
    return {str(p.relative_to(folder)): p.stat().st_mtime_ns for p in sorted(folder.rglob("*"))}


class Served:
    """A running `coveryield serve --read-only`: its URL, log, plan folder and process."""

    def __init__(self, url, log_path, plan_dir, process, before):
        self.url, self.log_path, self.plan_dir = url, log_path, plan_dir
        self.process, self.before = process, before

    def log(self) -> str:
        return self.log_path.read_text(errors="replace")

    def snapshot(self) -> dict[str, int]:
        return _snapshot(self.plan_dir)


#: Logged once the warm kernel has run the dashboard (coveryield.voila_process.WARM_READY).
WARM = "warm kernel ready:"


def wait_for_log(server: Served, text: str, timeout_s: float = 120.0) -> None:
    """Wait until ``text`` appears in the server's log (fail with the log's end if it does not)."""
    deadline = time.monotonic() + timeout_s
    while text not in server.log():
        if server.process.poll() is not None or time.monotonic() > deadline:
            pytest.fail(f"{text!r} not in the log:\n" + server.log()[-3000:])
        time.sleep(0.2)


def start_server(root: Path, *extra: str) -> Served:
    """Serve a copy of the demo catchment read-only on a free port; return once it answers."""
    plan_dir = root / "catchment"
    shutil.copytree(REPO / "demo_data", plan_dir,
                    ignore=shutil.ignore_patterns("__pycache__", "*.py"))
    before = _snapshot(plan_dir)
    port = _free_port()
    env = dict(os.environ)
    env["PYTHONPATH"] = os.pathsep.join(p for p in (str(REPO), env.get("PYTHONPATH", "")) if p)
    for name in ("JUPYTER_CONFIG_DIR", "JUPYTER_DATA_DIR", "JUPYTER_RUNTIME_DIR"):
        folder = root / name.lower()
        folder.mkdir()
        env[name] = str(folder)
    log_path = root / "serve.log"
    with open(log_path, "wb") as log:
        process = subprocess.Popen(
            [sys.executable, "-m", "coveryield.cli", "serve", str(plan_dir / "plans.toml"),
             "--port", str(port), "--read-only", *extra],
            cwd=root, env=env, stdout=log, stderr=subprocess.STDOUT,
        )
    url = f"http://127.0.0.1:{port}"
    deadline = time.monotonic() + 90
    while True:
        try:
            with urllib.request.urlopen(url + "/voila/static/voila.js", timeout=2) as reply:
                if reply.status == 200:
                    break
        except (urllib.error.URLError, OSError):
            pass
        if process.poll() is not None or time.monotonic() > deadline:
            process.kill()
            pytest.fail("coveryield serve did not come up:\n" + log_path.read_text()[-3000:])
        time.sleep(0.3)
    return Served(url, log_path, plan_dir, process, before)


def stop_server(server: Served) -> None:
    """SIGTERM, then check it stopped cleanly and said so."""
    server.process.send_signal(signal.SIGTERM)
    try:
        server.process.wait(timeout=30)
    except subprocess.TimeoutExpired:
        server.process.kill()
        server.process.wait()
        pytest.fail("coveryield serve did not stop within 30 s of SIGTERM")
    assert server.process.returncode == 0, server.log()[-3000:]
    assert "coveryield: stopped" in server.log()


@pytest.fixture(scope="session")
def served(tmp_path_factory):
    """The read-only dashboard, its warm kernel ready (room for the session's page views)."""
    if not CHROMIUM.exists():
        pytest.skip(f"{CHROMIUM} is absent")
    server = start_server(tmp_path_factory.mktemp("served"), "--max-viewers", "16")
    wait_for_log(server, WARM)
    yield server
    stop_server(server)


@pytest.fixture(scope="session")
def browser():
    from playwright.sync_api import sync_playwright

    with sync_playwright() as p:
        chromium = p.chromium.launch(executable_path=str(CHROMIUM), args=CHROMIUM_ARGS)
        yield chromium
        chromium.close()


@pytest.fixture(scope="session")
def artifacts() -> Path:
    ARTIFACTS.mkdir(exist_ok=True)
    return ARTIFACTS
