"""Cost of a 30-year timeline against a plain comparison, and of moves in the timeline view.

Measured in one run on the demo catchment (warm: kernels compiled and cached first):

* a plain ``coveryield.compare`` of the demo from its files, against the same followed by a
  30-year timeline of every plan (the demo's staged programmes included), i.e. what the
  ``timeline`` command computes before writing; target: at most 3 times the comparison;
* server time of moving the year slider and of re-timing the programme (first planting year,
  spread, felling age) in the dashboard's years-after-planting view; target: under 50 ms.

Prints ratios and "met"/"NOT met"; asserts nothing (these machines are noisy).
Run: ``PYTHONPATH=. .venv/bin/python benchmarks/bench_timeline.py``
"""

from __future__ import annotations

import statistics
import time

TIMELINE_TARGET = 3.0  # a 30-year timeline costs at most 3x a plain comparison
MOVE_TARGET_S = 0.050  # a move in the view answers within 50 ms of server time


def best_of(func, repeats: int) -> float:
    """Shortest wall time of ``repeats`` calls [s]."""
    best = float("inf")
    for _ in range(repeats):
        start = time.perf_counter()
        func()
        best = min(best, time.perf_counter() - start)
    return best


def timed_moves(control, values) -> list[float]:
    """Server time of setting a widget to each value in turn [s]."""
    times = []
    for value in values:
        start = time.perf_counter()
        control.value = value
        times.append(time.perf_counter() - start)
    return times


def main() -> None:
    import coveryield
    from coveryield.dashboard import Dashboard

    plan = coveryield.demo_plan_path()
    coveryield.compare(plan).timeline(years=30)  # warm-up: compile or load cached kernels

    def compare_only():
        coveryield.compare(plan)

    def compare_and_timeline():
        coveryield.compare(plan).timeline(years=30)

    compare_s = best_of(compare_only, 5)
    timeline_s = best_of(compare_and_timeline, 5)
    ratio = timeline_s / compare_s
    print("demo catchment, 30-year timeline of every plan (two staged programmes), warm")
    print(f"plain comparison (coveryield.compare from the files):     {compare_s * 1e3:8.1f} ms")
    print(f"comparison + 30-year timeline of every plan:              {timeline_s * 1e3:8.1f} ms")
    print(
        f"  ratio {ratio:5.2f} x   target <= {TIMELINE_TARGET:.0f} x: "
        f"{'met' if ratio <= TIMELINE_TARGET else 'NOT met'}"
    )

    dash = Dashboard(coveryield.compare(plan), read_only=True)
    view = dash.timeline
    year_s = timed_moves(view.year, [5 + (k * 7) % 35 for k in range(40)])
    retime_s = timed_moves(view.first_year, [1 + (k % 9) for k in range(1, 21)])
    retime_s += timed_moves(view.spread, [1, 2, 3, 4, 6, 8, -1] * 2)
    retime_s += timed_moves(view.felling, [20, 25, 30, 0, -1] * 2)
    assert dash.errors.widget.value == "", dash.errors.widget.value
    for label, times in (("move the year", year_s), ("re-time the programme", retime_s)):
        median, worst = statistics.median(times), max(times)
        verdict = "met" if median < MOVE_TARGET_S else "NOT met"
        print(
            f"dashboard, {label:<22} median {median * 1e3:6.1f} ms, worst {worst * 1e3:6.1f} ms "
            f"over {len(times)} moves   target < {MOVE_TARGET_S * 1e3:.0f} ms: {verdict}"
        )


if __name__ == "__main__":
    main()
