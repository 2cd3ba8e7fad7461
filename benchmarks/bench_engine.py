"""Speed of the tile water-balance engine, measured in one run and printed as ratios.

Prints nanoseconds per tile-day for a dozen tiles and for 4,000 tiles × 30 years (11,000 days),
warm (the first, compiling call is excluded; best of several repeats), the cost of streaming the
four float64 inputs alone for context, and, for information, weighted sums over tiles against
the daily loop alone (the share-change target itself is in ``bench_catchment.py``).

The 4,000-tile target is checked on wall time with the tiles split over every core this process
may use (what ``simulate_tiles`` does by default, see ``coveryield.engine.threads``), and shown
again on one core (``threads=1``), which every other variant below also uses. It is checked on
the daily loop with its output allocated outside it
(``simulate_tiles(..., out=buffer)``, one buffer reused across repeats, as an ensemble or a
repeated run does), on float64 forcing as the catchment builds it today, and checked again on
float32 forcing (half the bytes to read; the engine widens each value). For context it also
prints the same call with a fresh output array (whose first touch costs page faults inside the
loop), with a float32 daily yield, and with the annual sums only. Every variant is timed in the same rounds, interleaved, so that a noisy neighbour on
a shared machine slows all of them alike; the best round of each counts.

Run: ``PYTHONPATH=. .venv/bin/python benchmarks/bench_engine.py [--small]`` from the repository.
"""

from __future__ import annotations

import argparse
import dataclasses
import time

import numpy as np
from numba import njit

from coveryield.engine.threads import threads_for
from coveryield.engine.water_balance import TileParameters, simulate_tiles

N_DAYS = 11_000
TARGET_NS_MANY = 3.0
TARGET_NS_DOZEN = 20.0
ROUNDS_MANY = 8  # interleaved rounds of the 4,000-tile variants; the best of each counts


def make_inputs(n_tiles, n_days=N_DAYS, seed=0):
    """Invented forcing and parameters: a wet temperate climate, a mix of covers."""
    rng = np.random.default_rng(seed)
    shape = (n_days, n_tiles)
    season = 0.5 * (1.0 - np.cos(2.0 * np.pi * (np.arange(n_days) % 365) / 365.0))[:, None]
    rain = np.where(rng.random(shape) < 0.55, rng.gamma(0.8, 9.0, shape), 0.0)
    wet = (2.0 + 4.0 * season) * rng.uniform(0.8, 1.2, shape)
    dry = (0.5 + 3.0 * season) * rng.uniform(0.8, 1.2, shape)
    soil = np.where(rng.random(shape) < 0.2, 0.3 * wet, 0.0)
    params = TileParameters(
        canopy_capacity_mm=rng.uniform(0.2, 2.0, n_tiles),
        root_zone_capacity_mm=rng.uniform(60.0, 300.0, n_tiles),
        depletion_fraction=rng.uniform(0.4, 0.7, n_tiles),
        curve_number=rng.uniform(55.0, 90.0, n_tiles),
        is_water=rng.random(n_tiles) < 0.05,
    )
    years = np.minimum(np.arange(n_days) // 365, (n_days - 1) // 365)
    return rain, wet, dry, soil, params, years


def best_time(func, repeats):
    """Best wall time of ``repeats`` calls [s]."""
    best = np.inf
    for _ in range(repeats):
        start = time.perf_counter()
        func()
        best = min(best, time.perf_counter() - start)
    return best


@njit(cache=True)
def _stream_inputs(a, b, c, d):
    total = 0.0
    n_days, n_tiles = a.shape
    for i in range(n_days):
        for j in range(n_tiles):
            total += a[i, j] + b[i, j] + c[i, j] + d[i, j]
    return total


def report(label, measured, target, better="lower"):
    ok = measured <= target if better == "lower" else measured >= target
    sign = "≤" if better == "lower" else "≥"
    print(
        f"  {label:<46} {measured:>12.2f}   target {sign} {target:>8.1f}   "
        f"{'met' if ok else 'NOT met'}"
    )


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--small", action="store_true", help="skip the 4,000-tile case")
    args = parser.parse_args(argv)

    print(f"Engine benchmark, {N_DAYS} days, warm, best of several runs")
    dozen = make_inputs(12)
    simulate_tiles(*dozen)  # compile (excluded)
    seconds_dozen = best_time(lambda: simulate_tiles(*dozen), 20)
    ns_dozen = seconds_dozen / (N_DAYS * 12) * 1e9
    report("12 tiles: ns per tile-day", ns_dozen, TARGET_NS_DOZEN)

    run = simulate_tiles(*dozen)
    weights = np.full(12, 1.0 / 12)
    annual_yield, daily_yield = run.annual.yield_mm, run.daily_yield_mm
    seconds_annual = best_time(lambda: annual_yield @ weights, 2000)
    seconds_both = best_time(lambda: (annual_yield @ weights, daily_yield @ weights), 500)
    print(
        f"  daily loop alone vs weighted sums (information): re-simulate 12 tiles "
        f"{seconds_dozen * 1e3:.2f} ms; weighted sums: annual {seconds_annual * 1e6:.1f} µs "
        f"({seconds_dozen / seconds_annual:,.0f}x), annual + daily {seconds_both * 1e6:.1f} µs "
        f"({seconds_dozen / seconds_both:,.0f}x)"
    )
    print(
        "    the share-change target (>= 1,000x) is measured in bench_catchment.py against a "
        "full simulation: potential evaporation + daily loop"
    )

    if not args.small:
        many = make_inputs(4000)
        n_days, n_tiles = many[0].shape
        reused64 = np.empty((n_days, n_tiles))
        reused32 = np.empty((n_days, n_tiles), dtype=np.float32)
        rng = np.random.default_rng(1)
        season = 0.5 * (1.0 - np.cos(2.0 * np.pi * (np.arange(n_days) % 365) / 365.0))
        daily_lai = np.ascontiguousarray(
            np.outer(season, rng.uniform(1.0, 6.0, n_tiles))
        )  # leaf area per day and tile, as crops have
        leafy = dataclasses.replace(many[4], leaf_area_index=np.full(n_tiles, 3.0))
        forcing32 = [a.astype(np.float32) for a in many[:4]]
        cores = threads_for(10**6)
        one = {"threads": 1}
        variants = {
            "all cores, out= reused, float64": lambda: simulate_tiles(*many, out=reused64),
            "all cores, float32 forcing": lambda: simulate_tiles(
                *forcing32, *many[4:], out=reused64
            ),
            "out= reused, float64": lambda: simulate_tiles(*many, out=reused64, **one),
            "float32 forcing, out= reused, float64": lambda: simulate_tiles(
                *forcing32, *many[4:], out=reused64, **one
            ),
            "out= reused, sparse canopy, daily LAI": lambda: simulate_tiles(
                *many[:4], leafy, many[5], lai=daily_lai, out=reused64, **one
            ),
            "with daily drainage (catchment routing)": lambda: simulate_tiles(
                *many, keep_daily_drainage=True, **one
            ),
            "fresh output, float64": lambda: simulate_tiles(*many, **one),
            "out= reused, float32": lambda: simulate_tiles(*many, out=reused32, **one),
            "fresh output, float32": lambda: simulate_tiles(*many, daily_dtype=np.float32, **one),
            "annual sums only": lambda: simulate_tiles(*many, keep_daily_yield=False, **one),
            "reading the four float64 inputs alone": lambda: _stream_inputs(*many[:4]),
        }
        best = {name: np.inf for name in variants}
        for func in variants.values():
            func()  # compile, touch the reused buffers (excluded)
        for _ in range(ROUNDS_MANY):
            for name, func in variants.items():
                best[name] = min(best[name], best_time(func, 1))
        ns = {name: seconds / (n_days * n_tiles) * 1e9 for name, seconds in best.items()}
        report(
            f"4,000 tiles, {cores} core(s): ns per tile-day",
            ns["all cores, out= reused, float64"],
            TARGET_NS_MANY,
        )
        report("  the same on float32 forcing", ns["all cores, float32 forcing"], TARGET_NS_MANY)
        report("  one core (threads=1)", ns["out= reused, float64"], TARGET_NS_MANY)
        report(
            "  one core, float32 forcing",
            ns["float32 forcing, out= reused, float64"],
            TARGET_NS_MANY,
        )
        print(
            f"    speed-up on {cores} core(s): "
            f"{ns['out= reused, float64'] / ns['all cores, out= reused, float64']:.2f}x "
            "(the rows below are on one core)"
        )
        for name, value in ns.items():
            print(f"    ({name}: {value:.2f} ns per tile-day)")


if __name__ == "__main__":
    main()
