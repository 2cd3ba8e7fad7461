"""Cost of a share change against a full simulation, and of a warm 30-year demo comparison.

Measured in one run on the demo catchment (warm: kernels compiled and cached first):

* full simulation: every tile's potential evaporation plus the daily loop
  (``simulate_catchment`` with the climate record already read), and a whole
  ``coveryield.compare`` from the files;
* a share change: the weighted sum of tile results and routing (``mix_tiles``), and the same with
  every table a plan outcome holds (``Comparison.evaluate``).

Prints ratios against the targets; asserts nothing (these machines are noisy).
Run: ``PYTHONPATH=. .venv/bin/python benchmarks/bench_catchment.py``
"""

from __future__ import annotations

import time

SHARE_CHANGE_TARGET = 1000.0  # a share change at least 1,000x cheaper than re-simulating
SHARE_CHANGE_TARGET_MS = 1.0  # and, since the simulation itself got faster, under 1 ms
WARM_COMPARE_TARGET_S = 1.0  # a warm 30-year demo comparison well under 1 s


def best_of(func, repeats: int) -> float:
    """Shortest wall time of ``repeats`` calls [s]."""
    best = float("inf")
    for _ in range(repeats):
        start = time.perf_counter()
        func()
        best = min(best, time.perf_counter() - start)
    return best


def main() -> None:
    import coveryield
    from coveryield.catchment import mix_tiles, simulate_catchment, zone_climates
    from coveryield.climate import read_climate
    from coveryield.plans import load_plan

    plan_file = load_plan(coveryield.demo_plan_path())
    spec = plan_file.catchment
    climate = read_climate(
        spec.climate,
        latitude_deg=spec.latitude_deg,
        elevation_m=spec.elevation_m,
        wind_height_m=spec.wind_height_m,
    )
    result = coveryield.compare(plan_file)  # warm-up: compiles or loads the cached kernels
    zone_climates(plan_file, climate)
    shares = plan_file.plans["plant-upper"]
    weights = result.tiles.weights(shares)

    full_s = best_of(lambda: simulate_catchment(plan_file, climate=climate), 5)
    compare_s = best_of(lambda: coveryield.compare(plan_file), 5)
    mix_s = best_of(lambda: mix_tiles(result.tiles, weights), 200)
    evaluate_s = best_of(lambda: result.evaluate(shares), 200)

    n_tiles, n_days = len(result.tiles.tiles), len(result.tiles.dates)
    print(f"demo catchment: {n_tiles} tiles x {n_days} days ({len(result.years)} years), warm")
    print(f"full simulation (potential evaporation + daily loop): {full_s * 1e3:9.1f} ms")
    print(
        f"whole comparison from the files (coveryield.compare): {compare_s * 1e3:9.1f} ms  "
        f"target < {WARM_COMPARE_TARGET_S:.0f} s: "
        f"{'met' if compare_s < WARM_COMPARE_TARGET_S else 'NOT met'}"
    )
    print(f"share change, weighted sum + routing (mix_tiles):     {mix_s * 1e3:9.3f} ms")
    print(f"share change with every table (Comparison.evaluate):  {evaluate_s * 1e3:9.3f} ms")
    ratio = full_s / mix_s
    verdict = "met" if ratio >= SHARE_CHANGE_TARGET else "NOT met"
    print(
        f"  full simulation / share change (weighted sum): {ratio:9,.0f} x   "
        f"target >= {SHARE_CHANGE_TARGET:,.0f} x: {verdict}"
    )
    print(
        f"  share change (weighted sum + both routing stores): {mix_s * 1e3:9.3f} ms   "
        f"target < {SHARE_CHANGE_TARGET_MS:g} ms: "
        f"{'met' if mix_s * 1e3 < SHARE_CHANGE_TARGET_MS else 'NOT met'}  (the ratio above falls "
        "as the full simulation gets faster; this one does not)"
    )
    print(
        f"  full simulation / share change with pandas tables: {full_s / evaluate_s:9,.0f} x   "
        "(information: building the tables is the dashboard's cost, see bench_dashboard.py)"
    )


if __name__ == "__main__":
    main()
