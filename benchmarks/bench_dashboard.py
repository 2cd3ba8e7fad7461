"""Server time of one share change in the dashboard, against the 0.1 s "instant" target.

A share change (slider value set in Python -> state re-evaluated -> every mark updated) is timed
over repeated moves on the demo catchment, and compared with re-simulating the plans
(``coveryield.compare``), which the dashboard must never do on a move. Prints; asserts nothing.

Run: ``PYTHONPATH=. .venv/bin/python benchmarks/bench_dashboard.py``
"""

from __future__ import annotations

import statistics
import time

INSTANT_S = 0.1  # response felt as instant (common practice in UI design, no source)


def main(repeats: int = 30) -> None:
    import coveryield
    from coveryield.dashboard import Dashboard

    plan = coveryield.demo_plan_path()
    start = time.perf_counter()
    coveryield.compare(plan)  # first run: includes compiling the kernels, reading files
    first_s = time.perf_counter() - start
    start = time.perf_counter()
    comparison = coveryield.compare(plan)
    compare_s = time.perf_counter() - start

    dash = Dashboard(comparison, read_only=True)
    zone = dash.state.zone_names[0]
    dash.controls.zone_picker.value = zone
    slider = dash.controls.sliders["forest"]
    values = [20.0 + (k % 2) * 40.0 + 0.1 * k for k in range(repeats)]
    move_s, evaluate_s = [], []
    for value in values:
        start = time.perf_counter()
        slider.value = value  # -> evaluate, headline, four marks assigned inside hold_sync()
        move_s.append(time.perf_counter() - start)
        assert dash.errors.widget.value == "", dash.errors.widget.value
    shares = dash.state.shares
    from coveryield.dashboard.state import engine_shares

    for _ in range(repeats):
        start = time.perf_counter()
        comparison.evaluate(engine_shares(shares))
        evaluate_s.append(time.perf_counter() - start)

    median = statistics.median(move_s)
    worst = max(move_s)
    print(f"demo catchment: {len(comparison.years)} years, {len(dash.state.zone_names)} zones, "
          f"{len(dash.state.cover_names)} covers")
    print(f"re-simulating all plans (coveryield.compare): {compare_s:8.3f} s "
          f"(first run in a fresh process, as in a new kernel: {first_s:.3f} s)")
    print(f"share change, all marks updated: median {median * 1000:7.1f} ms, "
          f"worst {worst * 1000:7.1f} ms over {repeats} moves")
    print(f"  of which evaluate() alone:     median "
          f"{statistics.median(evaluate_s) * 1000:7.1f} ms")
    print(f"against the {INSTANT_S:.1f} s target: median is {median / INSTANT_S:.2f} x the target "
          f"({'within' if median <= INSTANT_S else 'ABOVE'} it)")
    print(f"re-simulating would take {compare_s / median:,.0f} x longer than a share change")


if __name__ == "__main__":
    main()
