"""Run every benchmark script in this folder, one after another, and print what each reports.

Each script times coveryield and its comparison in the same run and prints ratios; nothing here
asserts a speed (these machines are noisy).
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent


def main() -> int:
    env = dict(os.environ, NUMBA_NUM_THREADS="1", PYTHONPATH=str(HERE.parent))
    failed = []
    for script in sorted(HERE.glob("bench_*.py")):
        print(f"\n=== {script.name} ===", flush=True)
        if subprocess.call([sys.executable, str(script)], env=env) != 0:
            failed.append(script.name)
    if failed:
        print(f"\nfailed: {', '.join(failed)}")
    return 1 if failed else 0


if __name__ == "__main__":
    sys.exit(main())
