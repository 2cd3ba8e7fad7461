"""Cost of a 200-member ensemble against a single comparison, and of calibrating the demo.

Whole processes, as a user runs them (start-up, reading, simulation, outputs), measured in one
run after a warm-up run of each (compiled kernels cached on disk):

* ``coveryield compare demo_data/plans.toml`` against the same with ``--ensemble 200 --seed 1``;
  target: the ensemble costs at most 10 times the single comparison;
* ``coveryield calibrate demo_data/plans.toml --observed demo_data/observed_flow.csv``;
  target: under a minute.

Prints the ratios and "met"/"NOT met"; asserts nothing (these machines are noisy).
Run: ``.venv/bin/python benchmarks/bench_uncertainty.py``
"""

from __future__ import annotations

import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parents[1]
PLAN = REPO / "demo_data" / "plans.toml"
OBSERVED = REPO / "demo_data" / "observed_flow.csv"
ENSEMBLE_MEMBERS = 200
ENSEMBLE_TARGET_RATIO = 10.0
CALIBRATION_TARGET_S = 60.0


def run_s(args: list[str]) -> float:
    """Wall time of one whole ``coveryield`` process [s]; fails loudly on a non-zero exit."""
    start = time.perf_counter()
    subprocess.run([sys.executable, "-m", "coveryield.cli", *args], check=True,
                   stdout=subprocess.DEVNULL, cwd=REPO)
    return time.perf_counter() - start


def best_of(args: list[str], repeats: int) -> float:
    return min(run_s(args) for _ in range(repeats))


def main() -> None:
    single = ["compare", str(PLAN)]
    ensemble = [*single, "--ensemble", str(ENSEMBLE_MEMBERS), "--seed", "1"]
    run_s(single)  # warm-up: compile or load the cached kernels
    run_s([*single, "--ensemble", "2", "--seed", "1"])
    single_s = best_of(single, 3)
    ensemble_s = best_of(ensemble, 2)
    ratio = ensemble_s / single_s
    print(f"demo comparison, whole process:                 {single_s:6.2f} s")
    print(f"demo comparison with a {ENSEMBLE_MEMBERS}-member ensemble:      {ensemble_s:6.2f} s")
    print(f"  ratio {ratio:5.1f} x   target <= {ENSEMBLE_TARGET_RATIO:.0f} x: "
          f"{'met' if ratio <= ENSEMBLE_TARGET_RATIO else 'NOT met'}")
    with tempfile.TemporaryDirectory() as folder:
        calibrate_s = run_s(["calibrate", str(PLAN), "--observed", str(OBSERVED), "--out",
                             os.path.join(folder, "cal")])
    verdict = "met" if calibrate_s < CALIBRATION_TARGET_S else "NOT met"
    print(f"demo calibration, whole process:                {calibrate_s:6.2f} s   target < "
          f"{CALIBRATION_TARGET_S:.0f} s: {verdict}")


if __name__ == "__main__":
    main()
