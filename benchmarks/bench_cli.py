"""Benchmark: ``coveryield compare`` of the demo as a whole process, as a user would time it.

Each figure is the best wall time of a few fresh processes (interpreter start, imports, reading
the plan, the comparison, printing), with numba's compiled kernels already on disk ("warm"):

* tile cache hit - the plan and climate unchanged since the last run (target < 1.0 s, goal
  0.8 s);
* tile cache miss - ``--no-cache``: the climate file is read and every tile simulated;
* cache hit writing the output folder with the HTML report (``--out``, loads matplotlib);
* ``coveryield --help`` - the floor of any command.

The cache lives in a temporary folder (COVERYIELD_CACHE_DIR), never the user's. Prints the
times and the hit/miss ratio measured in this one run; asserts nothing (machines are noisy).
Run: ``PYTHONPATH=. .venv/bin/python benchmarks/bench_cli.py``.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DEMO_PLAN = ROOT / "demo_data" / "plans.toml"
TARGET_S, GOAL_S = 1.0, 0.8
REPEATS = 5


def best_wall_seconds(arguments, env, repeats=REPEATS, before=None):
    """Best wall time of ``repeats`` fresh ``coveryield`` processes [s] (each must exit 0)."""
    command = [sys.executable, "-m", "coveryield.cli", *arguments]
    best = float("inf")
    for _ in range(repeats):
        if before is not None:
            before()
        start = time.perf_counter()
        subprocess.run(command, check=True, env=env, cwd=ROOT, capture_output=True)
        best = min(best, time.perf_counter() - start)
    return best


def main() -> None:
    with tempfile.TemporaryDirectory(prefix="coveryield-bench-") as scratch:
        env = dict(os.environ, COVERYIELD_CACHE_DIR=str(Path(scratch) / "cache"))
        env["PYTHONPATH"] = os.pathsep.join(filter(None, [str(ROOT), env.get("PYTHONPATH")]))
        compare = ["compare", str(DEMO_PLAN)]
        subprocess.run(  # compiles (or loads) the kernels and fills the tile cache
            [sys.executable, "-m", "coveryield.cli", *compare],
            check=True,
            env=env,
            cwd=ROOT,
            capture_output=True,
        )
        out = Path(scratch) / "out"
        hit = best_wall_seconds(compare, env)
        miss = best_wall_seconds([*compare, "--no-cache"], env)
        report = best_wall_seconds(
            [*compare, "--out", str(out)], env, before=lambda: shutil.rmtree(out, True)
        )
        help_s = best_wall_seconds(["--help"], env)

    verdict = "met" if hit < TARGET_S else "NOT met"
    goal = "met" if hit < GOAL_S else "not met"
    print(f"coveryield compare (demo, 30 years), whole process, warm, best of {REPEATS}:")
    print(
        f"  tile cache hit                      {hit:6.3f} s   target < {TARGET_S} s: "
        f"{verdict}; goal < {GOAL_S} s: {goal}"
    )
    print(f"  tile cache miss (--no-cache)        {miss:6.3f} s   ({miss / hit:.1f} x the hit)")
    print(f"  cache hit with --out (HTML report)  {report:6.3f} s   (information)")
    print(f"  coveryield --help                   {help_s:6.3f} s   (information)")


if __name__ == "__main__":
    main()
