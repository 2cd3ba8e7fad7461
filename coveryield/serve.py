"""Serve the dashboard with Voila: one generated two-cell notebook, locked down, on 127.0.0.1.

``coveryield serve`` never serves a folder. It writes a notebook of two cells (import, show) into a
fresh temporary folder, passes the plan file, the read-only flag and the plan to start from to the
kernel through environment variables (:data:`PLAN_ENV`, :data:`READ_ONLY_ENV`,
:data:`START_PLAN_ENV`), points every Jupyter config, data, runtime and IPython folder at private
temporary folders so no stray configuration or start-up script applies, and runs Voila (through
:mod:`coveryield.voila_process`) with sources stripped, tracebacks hidden, theme and template
fixed, no file fetchable, every asset served from 127.0.0.1 (:data:`TEMPLATE_NAME`: Voila's page
without its two style sheets from a public CDN), one warm kernel kept ready (pre-heated: the page
is interactive in about a second), at most ``max_viewers`` kernels at once and idle kernels culled.

The building blocks (:func:`write_notebook`, :func:`voila_config`, :func:`voila_command`,
:func:`serve_environment`) are pure or only write into the folder given, so they can be tested
without starting a server; :func:`serve` runs the server until Ctrl-C or SIGTERM.
"""

from __future__ import annotations

import json
import os
import shutil
import signal
import socket
import subprocess
import sys
import tempfile
import time
import urllib.error
import urllib.request
from collections.abc import Callable, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from coveryield.errors import CoveryieldError, MissingExtraError

DEFAULT_PORT = 8866
HOST = "127.0.0.1"
NOTEBOOK_NAME = "dashboard.ipynb"
PLAN_ENV = "COVERYIELD_PLAN"
READ_ONLY_ENV = "COVERYIELD_READ_ONLY"
START_PLAN_ENV = "COVERYIELD_START_PLAN"
#: Seconds between checks for idle kernels, and idle time after which a kernel is shut down [s].
CULL_INTERVAL_S = 60
CULL_IDLE_TIMEOUT_S = 600
#: Most kernels at once, the warm one kept for the next viewer included: the most page views at
#: once. Each kernel is a Python process holding the comparison in memory.
DEFAULT_MAX_VIEWERS = 8
#: Flag of :mod:`coveryield.voila_process` carrying ``max_viewers``.
MAX_KERNELS_FLAG = "--coveryield-max-kernels"
#: What ``coveryield serve`` needs beyond the core install (the ``dashboard`` extra).
DASHBOARD_PACKAGES = ("voila", "ipywidgets", "bqplot", "ipykernel")
INSTALL_DASHBOARD = 'pip install "coveryield[dashboard]"'
#: Our Voila template: the lab page with every asset served locally.
TEMPLATE_NAME = "coveryield"
TEMPLATE_FILES = {
    "conf.json": json.dumps({"base_template": "lab"}) + "\n",
    # Voila's lab page asks a public CDN for two icon style sheets; the icons the page uses come
    # with Voila's own bundle, so the block is redrawn without them (super.super(): the page
    # Voila's lab template extends).
    "index.html.j2": """{%- extends 'lab/index.html.j2' -%}
{% import "spinner.macro.html.j2" as spinner %}
{%- block notebook_css -%}
  {% if frontend == "voila" %}
    {{ resources.include_js("static/voila-style.js") }}
  {% endif %}
  {{ spinner.css() }}
  <style>.jp-mod-noOutputs.jp-mod-noInput { display: none; }</style>
  {{ super.super() }}
{%- endblock notebook_css -%}
""",
    # Error pages (a refused path, a busy server) of our own: no style sheet from a CDN, and the
    # message said in words.
    "error.html": """<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<title>{{ status_code }}: {{ status_message | e }}</title>
<style>body { font-family: sans-serif; max-width: 40em; margin: 3em auto; padding: 0 1em;
color: #1a1a1a; line-height: 1.4; }</style></head>
<body><h1>{{ status_code }}: {{ status_message | e }}</h1>
{% if message %}<p>{{ message | e }}</p>{% endif %}
</body></html>
""",
}
#: The notebook's two cells: import, show.
CELLS = ("from coveryield.dashboard import show_dashboard", "show_dashboard()")
HEALTH_PATH = "/voila/static/voila.js"


def notebook_json() -> dict[str, Any]:
    """Return the served notebook as nbformat-4 JSON: two code cells, no outputs, no paths."""
    return {
        "nbformat": 4,
        "nbformat_minor": 5,
        "metadata": {
            "kernelspec": {"name": "python3", "display_name": "Python 3", "language": "python"},
            "language_info": {"name": "python"},
        },
        "cells": [
            {"cell_type": "code", "id": f"cell-{k}", "metadata": {}, "execution_count": None,
             "outputs": [], "source": source}
            for k, source in enumerate(CELLS, start=1)
        ],
    }


def write_notebook(folder: Path) -> Path:
    """Write the two-cell notebook into ``folder`` (which must exist) and return its path."""
    path = Path(folder) / NOTEBOOK_NAME
    path.write_text(json.dumps(notebook_json(), indent=1), encoding="utf-8")
    return path


def voila_config() -> dict[str, Any]:
    """Voila settings of the served dashboard (written as ``voila.json`` in a private folder).

    Sources stripped and tracebacks hidden; theme and template cannot be changed from the URL;
    no file under ``/voila/files/`` matches the allow list (and every file the deny list);
    our template (no CDN); one pre-heated kernel; kernels use Unix sockets in the private runtime
    folder (no TCP port); kernels idle for :data:`CULL_IDLE_TIMEOUT_S` are shut down, checked
    every :data:`CULL_INTERVAL_S`.
    """
    return {
        "VoilaConfiguration": {
            "strip_sources": True,
            "show_tracebacks": False,
            "allow_theme_override": "NO",
            "allow_template_override": "NO",
            "template": TEMPLATE_NAME,
            "theme": "light",
            "file_allowlist": [],
            "file_denylist": [".*"],
            "classic_tree": False,
            # one kernel kept warm: it has run the dashboard before anyone asks for the page
            "preheat_kernel": True,
            "default_pool_size": 1,
        },
        "Voila": {
            "ip": HOST, "port_retries": 0, "open_browser": False,
            # a viewer who disconnects is one line in the log, not a traceback per message
            "kernel_websocket_connection_class":
                "coveryield.voila_process.QuietDisconnectConnection",
            # ping timeout = ping interval [ms]: no start-up warning about the defaults
            "tornado_settings": {"ws_ping_timeout": 30000},
        },
        # kernels talk over Unix sockets in the private runtime folder, not TCP ports
        "KernelManager": {"transport": "ipc"},
        "MappingKernelManager": {
            "cull_interval": CULL_INTERVAL_S,
            "cull_idle_timeout": CULL_IDLE_TIMEOUT_S,
            "cull_connected": False,
        },
    }


def _flag_value(value: Any) -> str:
    return str(value) if not isinstance(value, bool) else ("True" if value else "False")


def voila_command(notebook: Path, port: int, config_dir: Path, runtime_dir: Path,
                  python: str | None = None,
                  max_viewers: int = DEFAULT_MAX_VIEWERS) -> list[str]:
    """Build the Voila command line: the notebook, the port, every scalar setting repeated.

    Voila runs through :mod:`coveryield.voila_process` (kernel cap, quiet disconnects). The
    scalar settings of :func:`voila_config` are given on the command line too (it wins over any
    config file); the lists and tables live in ``voila.json`` in ``config_dir``, the only folder
    Voila is told to search.
    """
    command = [python or sys.executable, "-m", "coveryield.voila_process",
               f"{MAX_KERNELS_FLAG}={int(max_viewers)}", str(notebook), "--no-browser",
               f"--port={int(port)}", f"--Voila.ip={HOST}", "--Voila.port_retries=0",
               f"--Voila.config_file_paths={config_dir}",
               f"--Voila.connection_dir_root={runtime_dir}"]
    for section, settings in voila_config().items():
        for key, value in settings.items():
            if isinstance(value, (list, dict)) or (section, key) in {
                ("Voila", "ip"), ("Voila", "port_retries"), ("Voila", "open_browser"),
            }:
                continue
            command.append(f"--{section}.{key}={_flag_value(value)}")
    return command


def _package_parent() -> str:
    return str(Path(__file__).resolve().parent.parent)


def serve_environment(plan_path: Path, read_only: bool, private: Mapping[str, Path],
                      base: Mapping[str, str] | None = None,
                      start_plan: str | None = None) -> dict[str, str]:
    """Environment of the Voila process (inherited by its kernels).

    Parameters
    ----------
    plan_path : pathlib.Path
        Plan file, passed as an absolute path in ``COVERYIELD_PLAN``.
    read_only : bool
        Passed as ``COVERYIELD_READ_ONLY`` = ``1`` or ``0``.
    private : mapping
        Folders for ``config``, ``data``, ``runtime`` and ``ipython``.
    base : mapping, optional
        Environment to start from (default: this process's).
    start_plan : str, optional
        Plan the page starts from, passed as ``COVERYIELD_START_PLAN`` (default: the first plan
        after ``current``).

    Returns
    -------
    dict
        The environment; the package's parent folder is put first on PYTHONPATH so the kernel
        imports this very package.
    """
    env = dict(os.environ if base is None else base)
    for name in ("JUPYTER_PATH", "JUPYTER_CONFIG_PATH", "JUPYTER_NO_CONFIG",
                 "JUPYTER_PREFER_ENV_PATH", "PYTHONSTARTUP", START_PLAN_ENV):
        env.pop(name, None)
    if start_plan:
        env[START_PLAN_ENV] = start_plan
    env.update({
        PLAN_ENV: str(Path(plan_path).resolve()),
        READ_ONLY_ENV: "1" if read_only else "0",
        "JUPYTER_CONFIG_DIR": str(private["config"]),
        "JUPYTER_DATA_DIR": str(private["data"]),
        "JUPYTER_RUNTIME_DIR": str(private["runtime"]),
        "IPYTHONDIR": str(private["ipython"]),
        "PYTHONUNBUFFERED": "1",
    })
    paths = [_package_parent(), *[p for p in env.get("PYTHONPATH", "").split(os.pathsep) if p]]
    env["PYTHONPATH"] = os.pathsep.join(dict.fromkeys(paths))
    return env


def missing_dashboard_packages() -> list[str]:
    """Return the packages of :data:`DASHBOARD_PACKAGES` that cannot be imported here."""
    import importlib.util

    missing = []
    for name in DASHBOARD_PACKAGES:
        try:
            found = importlib.util.find_spec(name) is not None
        except (ImportError, ValueError):
            found = False
        if not found:
            missing.append(name)
    return missing


def check_dashboard_extras() -> None:
    """Raise :class:`MissingExtraError` naming the missing packages and the install command."""
    missing = missing_dashboard_packages()
    if missing:
        names = " and ".join(f"'{m}'" for m in missing)
        raise MissingExtraError(
            f"the dashboard needs the package{'s' if len(missing) > 1 else ''} {names}, not "
            f"installed in this Python ({sys.executable}); install the dashboard extras with: "
            f"{INSTALL_DASHBOARD}"
        )


def write_template(data_dir: Path) -> Path:
    """Write :data:`TEMPLATE_FILES` as Voila template :data:`TEMPLATE_NAME` under ``data_dir``."""
    folder = Path(data_dir) / "voila" / "templates" / TEMPLATE_NAME
    folder.mkdir(parents=True, exist_ok=True)
    for name, text in TEMPLATE_FILES.items():
        (folder / name).write_text(text, encoding="utf-8")
    return folder


def check_port_free(port: int) -> None:
    """Raise CoveryieldError if ``port`` on 127.0.0.1 cannot be bound."""
    if not 1 <= int(port) <= 65535:
        raise CoveryieldError(f"--port {port}: expected a port number from 1 to 65535")
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as probe:
        try:
            probe.bind((HOST, int(port)))
        except OSError as exc:
            raise CoveryieldError(
                f"port {port} on {HOST} is in use ({exc.strerror}); choose another with --port"
            ) from None


def free_port() -> int:
    """Return a port on 127.0.0.1 that was free a moment ago (bound as port 0, read back)."""
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as probe:
        probe.bind((HOST, 0))
        return int(probe.getsockname()[1])


def is_up(url: str, timeout_s: float = 1.0) -> bool:
    """Whether Voila answers its health probe (its static ``voila.js``) at ``url``."""
    try:
        with urllib.request.urlopen(url.rstrip("/") + HEALTH_PATH, timeout=timeout_s) as reply:
            return reply.status == 200
    except (urllib.error.URLError, OSError):
        return False


@dataclass
class ServeSetup:
    """Everything prepared for one Voila run (all inside one private temporary folder)."""

    root: Path
    notebook: Path
    command: list[str]
    env: dict[str, str]
    url: str

    def cleanup(self) -> None:
        """Remove the private temporary folder."""
        shutil.rmtree(self.root, ignore_errors=True)


def prepare(plan_path: str | os.PathLike, port: int = DEFAULT_PORT, read_only: bool = False,
            *, base_env: Mapping[str, str] | None = None, start_plan: str | None = None,
            max_viewers: int = DEFAULT_MAX_VIEWERS) -> ServeSetup:
    """Create the private folders, the notebook and ``voila.json``; return the command to run.

    Parameters
    ----------
    plan_path : str or path
        The plan file to serve (must exist).
    port : int
        Port on 127.0.0.1.
    read_only : bool
        Stakeholder mode: no control that writes files.
    base_env : mapping, optional
        Environment to start from.
    start_plan : str, optional
        Plan the page starts from (default: the first plan after ``current``).
    max_viewers : int
        Most kernels (page views) at once, the warm one kept for the next viewer included.

    Returns
    -------
    ServeSetup
    """
    plan = Path(plan_path).expanduser().resolve()
    if not plan.is_file():
        raise CoveryieldError(f"{plan}: plan file not found")
    if int(max_viewers) < 1:
        raise CoveryieldError(f"--max-viewers {max_viewers}: expected 1 or more page views")
    root = Path(tempfile.mkdtemp(prefix="coveryield-serve-"))
    private = {name: root / name for name in ("served", "config", "data", "runtime", "ipython")}
    for folder in private.values():
        folder.mkdir(mode=0o700)
    notebook = write_notebook(private["served"])
    write_template(private["data"])
    (private["config"] / "voila.json").write_text(json.dumps(voila_config(), indent=1),
                                                  encoding="utf-8")
    return ServeSetup(
        root=root, notebook=notebook,
        command=voila_command(notebook, port, private["config"], private["runtime"],
                              max_viewers=max_viewers),
        env=serve_environment(plan, read_only, private, base_env, start_plan),
        url=f"http://{HOST}:{int(port)}/",
    )


def _check_start_plan(plan_path: str | os.PathLike, start_plan: str) -> None:
    """Refuse a start plan the plan file does not have (one message listing its plans)."""
    from coveryield.plans import load_plan

    load_plan(plan_path).plan(start_plan)


def start(setup: ServeSetup, log: Any = None) -> subprocess.Popen:
    """Start Voila in the notebook's folder, in its own session (Ctrl-C reaches only us)."""
    return subprocess.Popen(
        setup.command, env=setup.env, cwd=setup.notebook.parent, start_new_session=True,
        stdout=log, stderr=log,
    )


def stop(process: subprocess.Popen, timeout_s: float = 20.0) -> int:
    """Stop Voila with SIGTERM (it shuts its kernels down), SIGKILL if it hangs; return its code."""
    if process.poll() is None:
        process.send_signal(signal.SIGTERM)
        try:
            process.wait(timeout=timeout_s)
        except subprocess.TimeoutExpired:
            process.kill()
            process.wait()
    return int(process.returncode)


def serve(plan_path: str | os.PathLike, port: int = DEFAULT_PORT, read_only: bool = False, *,
          echo: Callable[[str], None] = print, startup_timeout_s: float = 60.0,
          start_plan: str | None = None, max_viewers: int = DEFAULT_MAX_VIEWERS) -> int:
    """Serve the dashboard until Ctrl-C or SIGTERM; return an exit status.

    Parameters
    ----------
    plan_path : str or path
        Plan file to show.
    port : int
        Port on 127.0.0.1.
    read_only : bool
        Stakeholder mode: the page writes nothing.
    echo : callable
        Where messages go (default: print).
    startup_timeout_s : float
        How long to wait for Voila to answer [s].
    start_plan : str, optional
        Plan the page starts from (default: the first plan after ``current``).
    max_viewers : int
        Most page views (kernels) at once, the warm one kept for the next viewer included.

    Returns
    -------
    int
        0 after a clean stop; Voila's exit status if it stopped on its own.
    """
    check_dashboard_extras()
    if start_plan is not None:
        _check_start_plan(plan_path, start_plan)
    check_port_free(port)
    setup = prepare(plan_path, port, read_only, start_plan=start_plan, max_viewers=max_viewers)
    stopping = {"signal": None}

    def on_signal(signum: int, _frame: Any) -> None:
        stopping["signal"] = signum

    previous = {sig: signal.signal(sig, on_signal) for sig in (signal.SIGINT, signal.SIGTERM)}
    process = start(setup)
    try:
        mode = "read-only" if read_only else "manager mode (can save plans and exports)"
        echo(f"coveryield: serving the dashboard of {Path(plan_path).resolve()} ({mode}; at most "
             f"{max_viewers} page views at once)")
        echo(f"coveryield: address {setup.url}  (Ctrl-C to stop)")
        deadline = time.monotonic() + startup_timeout_s
        ready = False
        while stopping["signal"] is None and process.poll() is None:
            if not ready and is_up(setup.url, timeout_s=0.5):
                ready = True
                echo(f"coveryield: ready at {setup.url}")
            elif not ready and time.monotonic() > deadline:
                echo(f"coveryield: Voila did not answer within {startup_timeout_s:.0f} s")
                break
            time.sleep(0.25)
        if process.poll() is not None and stopping["signal"] is None:
            echo(f"coveryield: Voila stopped with exit status {process.returncode}")
            return int(process.returncode) or 1
        return 0 if ready or stopping["signal"] is not None else 1
    finally:
        stop(process)
        setup.cleanup()
        for sig, handler in previous.items():
            signal.signal(sig, handler)
        if stopping["signal"] is not None:
            echo("coveryield: stopped")
