"""Batch runs on Dask: 48 demo catchments on 1 and on 2 local workers, measured in one run.

The 48 catchments are copies of the invented demo catchment, each with its own weather from the
demo weather generator (``demo_data/make_weather.py``, seeds 1..48, 30 years each). Each batch
writes every catchment's full outputs (tables and HTML report), as ``coveryield batch`` does.

Printed:

* the batch's wall time on a local cluster of 1 and of 2 single-threaded worker processes (the
  cluster already started; each worker's first task pays its imports and the loading of the
  compiled kernels), and the speed-up (target >= 1.7 x on 2 cores);
* the cost per catchment in the batch against one warm ``compare`` + its outputs in this
  process;
* whether the workers loaded the numba kernels from the on-disk cache (``cache=True``) or
  compiled them, counted from numba's own per-kernel statistics on each worker.

Asserts nothing (these machines are noisy). Run: ``PYTHONPATH=. .venv/bin/python
benchmarks/bench_batch.py``.
"""

from __future__ import annotations

import importlib.util
import os
import statistics
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
N_CATCHMENTS = 48
SPEEDUP_TARGET = 1.7


def load_weather_generator():
    """The demo weather generator (a stand-alone script, not part of the package)."""
    spec = importlib.util.spec_from_file_location(
        "make_weather", ROOT / "demo_data" / "make_weather.py"
    )
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


def make_catchments(folder: Path, n: int) -> list[Path]:
    """``n`` copies of the demo plan file, each reading the weather of its own seed."""
    generator = load_weather_generator()
    plan_text = (ROOT / "demo_data" / "plans.toml").read_text()
    plans = []
    for seed in range(1, n + 1):
        weather = folder / "weather" / f"seed-{seed:02d}"
        generator.write_demo_data(weather, seed)
        text = plan_text.replace(
            'climate = "climate.csv"', f'climate = "weather/seed-{seed:02d}/climate.csv"', 1
        )
        text = text.replace(
            'name = "Brindlewater Creek"', f'name = "Brindlewater Creek {seed:02d}"', 1
        )
        path = folder / f"catchment-{seed:02d}.toml"
        path.write_text(text)
        plans.append(path)
    return plans


def numba_cache_counts() -> tuple[int, int]:
    """Kernels of coveryield loaded from numba's on-disk cache, and compiled, in this process."""
    from numba.core.registry import CPUDispatcher

    hits = misses = 0
    for name, module in list(sys.modules.items()):
        if not name.startswith("coveryield"):
            continue
        for obj in vars(module).values():
            if isinstance(obj, CPUDispatcher):
                hits += sum(obj.stats.cache_hits.values())
                misses += sum(obj.stats.cache_misses.values())
    return hits, misses


def single_compare_s(plan: Path, scratch: Path, repeats: int = 3) -> float:
    """Best wall time of one warm ``compare`` from the files plus writing its outputs [s]."""
    import coveryield
    from coveryield.reports import write_outputs

    best = float("inf")
    for k in range(repeats):
        start = time.perf_counter()
        write_outputs(coveryield.compare(plan), scratch / f"single-{k}")
        best = min(best, time.perf_counter() - start)
    return best


def timed_batch(plans: list[Path], out: Path, n_workers: int) -> dict:
    """Start a local cluster as the batch command does, run the batch, read numba's statistics."""
    from coveryield.batchrun.runner import dask_client, run_batch

    start = time.perf_counter()
    with dask_client(workers=n_workers, n_tasks=len(plans)) as client:
        client.wait_for_workers(n_workers)
        started_s = time.perf_counter() - start
        driver_cpu_s = time.process_time()
        run = run_batch(plans, client=client, out=out, root=plans[0].parent)
        driver_cpu_s = time.process_time() - driver_cpu_s
        cache = client.run(numba_cache_counts)
    if len(run.failures):
        raise SystemExit(f"batch failed: {run.failures.to_string()}")
    return {
        "start_s": started_s,
        "batch_s": run.seconds,
        "driver_cpu_s": driver_cpu_s,
        "run": run,
        "cache": cache,
    }


def load_average() -> float:
    """One-minute load average of the machine (NaN where the platform has none)."""
    return os.getloadavg()[0] if hasattr(os, "getloadavg") else float("nan")


def print_batch(n_workers: int, r: dict, single_s: float, load: float) -> None:
    per_catchment_s = r["batch_s"] / N_CATCHMENTS
    tasks = r["run"].task_seconds
    label = f"{n_workers} worker{'s' if n_workers > 1 else ' '}"
    print(
        f"{label}: batch {r['batch_s']:6.1f} s = {per_catchment_s * 1e3:4.0f} ms per catchment "
        f"= {per_catchment_s / single_s:4.2f} x one compare   (load average before: {load:.1f})"
    )
    print(
        f"    cluster start {r['start_s']:.1f} s (not in the batch time); CPU of this process "
        f"(client and scheduler) during the batch {r['driver_cpu_s']:.1f} s; task on its worker: "
        f"median {statistics.median(tasks) * 1e3:.0f} ms, first on each worker (imports, "
        f"kernels from disk) up to {max(tasks[:n_workers]) * 1e3:.0f} ms"
    )
    for address, (hits, misses) in sorted(r["cache"].items()):
        verdict = "loaded from the on-disk cache" if misses == 0 and hits > 0 else "COMPILED"
        print(f"    worker {address}: numba {hits} cache hits, {misses} compiled: {verdict}")


def main() -> None:
    import coveryield

    cores = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count()
    with tempfile.TemporaryDirectory(prefix="coveryield-bench-batch-") as tmp:
        scratch = Path(tmp)
        start = time.perf_counter()
        plans = make_catchments(scratch / "catchments", N_CATCHMENTS)
        print(
            f"{N_CATCHMENTS} demo catchments (30 years, weather seeds 1-{N_CATCHMENTS}) made in "
            f"{time.perf_counter() - start:.1f} s; {cores} cores"
        )
        coveryield.compare(plans[0])  # compiles the kernels once, or loads them from the cache
        single_s = single_compare_s(plans[0], scratch)
        print(f"one warm compare + its outputs, in this process: {single_s * 1e3:.0f} ms")

        results, loads = {}, []
        for n_workers in (1, 2):
            loads.append(load_average())
            results[n_workers] = timed_batch(plans, scratch / f"out-{n_workers}", n_workers)
            print_batch(n_workers, results[n_workers], single_s, loads[-1])

        same = results[1]["run"].table.equals(results[2]["run"].table)
        print(f"batch tables on 1 and 2 workers identical: {same}")
        speedup = results[1]["batch_s"] / results[2]["batch_s"]
        verdict = "met" if speedup >= SPEEDUP_TARGET else "NOT met"
        print(
            f"  speed-up 2 workers vs 1: {speedup:5.2f} x   target >= {SPEEDUP_TARGET} x: {verdict}"
        )
        if max(loads) > 0.5:
            print(
                f"  note: other work was running (load average up to {max(loads):.1f} on "
                f"{cores} cores before a batch): the 2-worker batch could not have both cores"
            )


if __name__ == "__main__":  # worker processes re-import this file: start nothing at import
    main()
