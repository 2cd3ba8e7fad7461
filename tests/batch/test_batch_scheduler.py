"""`coveryield batch --scheduler`: the same run on a separately started Dask cluster.

The test starts `dask scheduler` and one `dask worker` as their own processes on 127.0.0.1
(free ports chosen by the scheduler, address passed through a scheduler file), runs the command
in a subprocess against them, and stops both processes (by their process groups) afterwards.
"""

from __future__ import annotations

import os
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pandas as pd
import pytest

from .checks import assert_rows_equal_compare
from .conftest import GOOD

pytestmark = pytest.mark.slow

START_TIMEOUT_S = 60.0


def dask_command() -> list[str]:
    beside = Path(sys.executable).with_name("dask")
    found = str(beside) if beside.exists() else shutil.which("dask")
    if found is None:
        pytest.fail("the `dask` command (installed with dask[distributed]) is missing")
    return [found]


def start(args: list[str], log: Path) -> subprocess.Popen:
    with log.open("w") as stream:
        return subprocess.Popen(
            args, stdout=stream, stderr=subprocess.STDOUT, start_new_session=True
        )


def stop(proc: subprocess.Popen) -> None:
    if proc.poll() is not None:
        return
    os.killpg(proc.pid, signal.SIGTERM)
    try:
        proc.wait(timeout=15)
    except subprocess.TimeoutExpired:
        os.killpg(proc.pid, signal.SIGKILL)
        proc.wait(timeout=15)


def wait_for_file(path: Path, proc: subprocess.Popen, log: Path) -> None:
    deadline = time.monotonic() + START_TIMEOUT_S
    while not path.exists():
        if proc.poll() is not None or time.monotonic() > deadline:
            pytest.fail(f"the Dask scheduler did not start:\n{log.read_text()}")
        time.sleep(0.1)


@pytest.fixture
def dask_cluster(tmp_path):
    """`dask scheduler` + one `dask worker` on 127.0.0.1; yields the scheduler's address."""
    from distributed import Client

    scheduler_file = tmp_path / "scheduler.json"
    processes = []
    try:
        scheduler_log = tmp_path / "scheduler.log"
        processes.append(
            start(
                [
                    *dask_command(),
                    "scheduler",
                    "--host",
                    "127.0.0.1",
                    "--port",
                    "0",
                    "--no-dashboard",
                    "--scheduler-file",
                    str(scheduler_file),
                    "--idle-timeout",
                    "300",
                ],
                scheduler_log,
            )
        )
        wait_for_file(scheduler_file, processes[0], scheduler_log)
        processes.append(
            start(
                [
                    *dask_command(),
                    "worker",
                    "--scheduler-file",
                    str(scheduler_file),
                    "--host",
                    "127.0.0.1",
                    "--nthreads",
                    "1",
                    "--no-nanny",
                    "--no-dashboard",
                    "--death-timeout",
                    "60",
                    "--local-directory",
                    str(tmp_path / "worker"),
                ],
                tmp_path / "worker.log",
            )
        )
        with Client(
            scheduler_file=str(scheduler_file), timeout=START_TIMEOUT_S, set_as_default=False
        ) as client:
            client.wait_for_workers(1, timeout=START_TIMEOUT_S)
            address = client.scheduler.address
        yield address
    finally:
        for proc in reversed(processes):
            stop(proc)


def test_batch_runs_on_a_running_scheduler(dask_cluster, good_dir, tmp_path):
    assert dask_cluster.startswith("tcp://127.0.0.1:")
    out = tmp_path / "out"
    proc = subprocess.run(
        [
            sys.executable,
            "-m",
            "coveryield.cli",
            "batch",
            str(good_dir),
            "--out",
            str(out),
            "--scheduler",
            dask_cluster,
        ],
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert proc.returncode == 0, proc.stderr
    assert "2 of 2 catchments done" in proc.stdout
    assert "on 1 worker" in proc.stdout
    table = pd.read_csv(out / "batch.csv", float_precision="round_trip")
    assert_rows_equal_compare(table, [good_dir / f"{name}.toml" for name in GOOD])
    assert pd.read_csv(out / "failures.csv").empty
