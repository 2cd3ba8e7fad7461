"""Benchmark: daily reference ET through the compiled kernel against refet, in one run.

Times, on the same 1,000,000 random days at one site and on one thread:

* ``reference_et_fused`` - the path ``coveryield.forcing.reference_et`` uses (input checks and
  conversion included) - and the bare numba kernel;
* the plain-numpy reference path (``fao56_reference_evaporation``), for information;
* ``refet.Daily(...).eto()`` (ASCE-EWRI 2005 short reference; a test oracle, never used by the
  package);

then prints ns/day for each and the speed ratio, and the wall time of a warm start: a fresh
Python process that imports ``coveryield.forcing`` and computes ``reference_et`` for a one-year
record (numba's on-disk cache already filled).

Run: ``cd /work/main && PYTHONPATH=. .venv/bin/python benchmarks/bench_reference_et.py``.
Speed is reported, never asserted.
"""

from __future__ import annotations

import os

os.environ.setdefault("NUMBA_NUM_THREADS", "1")

import subprocess  # noqa: E402
import sys  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402

import numpy as np  # noqa: E402

N_DAYS = 1_000_000
REPEATS = 7
LAT_DEG, ELEVATION_M = 47.3, 420.0
ROOT = Path(__file__).resolve().parents[1]

WARM_START = """
import sys
if sys.argv[1] == "hide-scipy":
    sys.modules["scipy"] = None  # as in a core install: scipy is no dependency of coveryield
import time
t0 = time.perf_counter()
import types
import numpy as np
import pandas as pd
import coveryield.forcing as forcing
t1 = time.perf_counter()
index = pd.date_range("2021-01-01", periods=365, freq="D", name="date")
daily = pd.DataFrame({"rain_mm": 1.0, "tmax_c": 20.0, "tmin_c": 10.0, "ea_kpa": 1.0,
                      "wind_ms": 2.0, "rs_mj": 15.0}, index=index)
site = types.SimpleNamespace(latitude_deg=47.3, elevation_m=420.0, wind_height_m=2.0)
forcing.reference_et(types.SimpleNamespace(daily=daily, site=site))
t2 = time.perf_counter()
print(f"{t1 - t0:.3f} {t2 - t1:.3f}")
"""


def random_days(n, seed=1):
    """Plausible random daily weather for one site (same generator rules as the tests)."""
    from coveryield.physics import meteo, radiation

    rng = np.random.default_rng(seed)
    doy = rng.integers(1, 367, n)
    tmin = rng.uniform(-10.0, 25.0, n)
    tmax = tmin + rng.uniform(2.0, 20.0, n)
    ea = meteo.saturation_vapour_pressure(tmin - rng.uniform(0.0, 15.0, n))
    rs = radiation.clear_sky_radiation(LAT_DEG, doy, ELEVATION_M) * rng.uniform(0.05, 1.05, n)
    u2 = rng.uniform(0.3, 8.0, n)
    return tmax, tmin, ea, rs, u2, doy


def best_seconds(func, repeats=REPEATS):
    """Shortest wall time of ``repeats`` calls [s] and the last result."""
    best = np.inf
    result = None
    for _ in range(repeats):
        t0 = time.perf_counter()
        result = func()
        best = min(best, time.perf_counter() - t0)
    return best, result


def warm_start_seconds(mode, repeats=3):
    """Best (import s, first-call s, whole-process s) of fresh interpreters, numba cache filled.

    ``mode`` "as-installed" runs in this environment; "hide-scipy" makes scipy unimportable,
    as in a core install: numba's first dispatch probes for BLAS by importing scipy.linalg when
    scipy is present, which costs several tenths of a second.
    """
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    command = [sys.executable, "-c", WARM_START, mode]
    subprocess.run(command, check=True, env=env, cwd=ROOT, capture_output=True)  # fills the cache
    best = (np.inf, np.inf, np.inf)
    for _ in range(repeats):
        t0 = time.perf_counter()
        out = subprocess.run(command, check=True, env=env, cwd=ROOT, capture_output=True, text=True)
        total = time.perf_counter() - t0
        imp, call = (float(x) for x in out.stdout.split())
        best = min(best, (imp, call, total), key=lambda t: t[2])
    return best


def main():
    import refet

    from coveryield.physics import evaporation, fused

    tmax, tmin, ea, rs, u2, doy = random_days(N_DAYS)
    method = evaporation.reference_method("asce-short")
    kernel_args = (
        tmax,
        tmin,
        ea,
        rs,
        u2,
        doy.astype(np.int64),
        LAT_DEG,
        ELEVATION_M,
        method.cn,
        method.cd,
        method.sigma,
        method.rs_rso_lower,
        method.slope_coefficient,
        method.vpd_floor,
    )

    fused.reference_et_fused(
        tmax[:10], tmin[:10], ea[:10], rs[:10], u2[:10], doy[:10], LAT_DEG, ELEVATION_M
    )
    t_api, ours = best_seconds(
        lambda: fused.reference_et_fused(
            tmax, tmin, ea, rs, u2, doy, LAT_DEG, ELEVATION_M, "asce-short"
        )
    )
    t_kernel, _ = best_seconds(lambda: fused.reference_et_kernel(*kernel_args))
    t_numpy, _ = best_seconds(
        lambda: evaporation.fao56_reference_evaporation(
            tmax, tmin, ea, rs, u2, doy, LAT_DEG, ELEVATION_M, "asce-short"
        ),
        repeats=3,
    )
    t_refet, theirs = best_seconds(
        lambda: refet.Daily(
            tmin=tmin,
            tmax=tmax,
            rs=rs,
            uz=u2,
            zw=2.0,
            elev=ELEVATION_M,
            lat=LAT_DEG,
            doy=doy,
            ea=ea,
            method="asce",
        ).eto(),
        repeats=3,
    )

    # refet adjusts u2 at zw = 2 m by eq. 47 (factor 1.0002); compare like with like for the check
    ours_same_wind = fused.reference_et_fused(
        tmax,
        tmin,
        ea,
        rs,
        u2 * 4.87 / np.log(67.8 * 2.0 - 5.42),
        doy,
        LAT_DEG,
        ELEVATION_M,
        "asce-short",
    )
    max_diff = float(np.max(np.abs(ours_same_wind - theirs)))

    per_day = 1e9 / N_DAYS
    threads = os.environ["NUMBA_NUM_THREADS"]
    print(f"reference ET on {N_DAYS:,} days, one site, NUMBA_NUM_THREADS={threads}")
    print(f"  coveryield fused (API path)  {t_api * per_day:8.1f} ns/day")
    print(f"  coveryield fused (kernel)    {t_kernel * per_day:8.1f} ns/day")
    print(f"  coveryield numpy path        {t_numpy * per_day:8.1f} ns/day")
    print(f"  refet.Daily(...).eto()       {t_refet * per_day:8.1f} ns/day")
    print(f"  speed-up, refet / fused API  {t_refet / t_api:8.1f} x   (target >= 4, aim 10)")
    print(f"  max |fused - refet|          {max_diff:.1e} mm/day")
    for mode in ("as-installed", "hide-scipy"):
        imp, call, total = warm_start_seconds(mode)
        print(
            f"warm start ({mode}): import coveryield.forcing {imp:.3f} s + first reference_et "
            f"(365 days) {call:.3f} s; whole process {total:.3f} s   (target < 1 s)"
        )


if __name__ == "__main__":
    main()
