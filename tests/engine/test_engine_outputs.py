"""Output options of the engine: a caller's buffer, float32 daily yield, annual sums only.

Each option must leave the annual results bit for bit as the default run gives them; only the
daily yield's storage changes.
"""

from __future__ import annotations

import numpy as np
import pytest

from coveryield.engine import kernels
from coveryield.engine.water_balance import simulate_tiles

from .cases import make_case

# IEEE 754 binary32 has a 24-bit significand: rounding a value to float32 moves it by at most
# 2**-24 of its magnitude (IEEE 754-2008, binary32 format; common knowledge).
FLOAT32_UNIT_ROUNDOFF = 2.0**-24


def _case():
    # 2 years, 300 tiles: a full block of kernels.BLOCK (256), a partial block, land and water
    return make_case(seed=11, n_days=730, n_tiles=300, n_years=2)


def _args(case):
    return case.args


def _assert_same_annual(run, expected):
    for name in kernels.ANNUAL_NAMES:
        np.testing.assert_array_equal(
            getattr(run.annual, name), getattr(expected.annual, name), err_msg=name
        )


def test_reused_output_buffer_gives_the_same_results():
    case = _case()
    expected = simulate_tiles(*_args(case))
    buffer = np.full(case.rain.shape, -99.0)  # stale content must be overwritten everywhere
    for _ in range(2):
        run = simulate_tiles(*_args(case), out=buffer)
        assert run.daily_yield_mm is buffer
        np.testing.assert_array_equal(buffer, expected.daily_yield_mm)
        _assert_same_annual(run, expected)


def test_float32_daily_yield_is_the_float64_one_rounded():
    case = _case()
    expected = simulate_tiles(*_args(case))
    run = simulate_tiles(*_args(case), daily_dtype=np.float32)
    assert run.daily_yield_mm.dtype == np.float32
    np.testing.assert_array_equal(run.daily_yield_mm, expected.daily_yield_mm.astype(np.float32))
    _assert_same_annual(run, expected)
    buffer = np.empty(case.rain.shape, dtype=np.float32)
    assert simulate_tiles(*_args(case), out=buffer).daily_yield_mm is buffer
    np.testing.assert_array_equal(buffer, run.daily_yield_mm)


def test_float32_daily_yield_keeps_the_balance_closed():
    case = _case()
    run = simulate_tiles(*_args(case), daily_dtype=np.float32)
    # the annual balance is summed in float64 from unrounded days: closed to 1e-6 mm
    assert np.abs(run.annual.closure_error_mm()).max() < 1e-6
    # the rounded days still add up to the annual yield within the float32 rounding bound
    for year in range(2):
        days = case.year_index == year
        daily = run.daily_yield_mm[days].astype(np.float64)
        bound = days.sum() * np.abs(daily).max(axis=0) * FLOAT32_UNIT_ROUNDOFF + 1e-9
        assert np.all(np.abs(daily.sum(axis=0) - run.annual.yield_mm[year]) <= bound)


def test_annual_only_run_gives_the_same_annual_sums():
    case = _case()
    run = simulate_tiles(*_args(case), keep_daily_yield=False)
    assert run.daily_yield_mm is None
    assert run.daily is None
    _assert_same_annual(run, simulate_tiles(*_args(case)))


def test_open_water_and_interception_are_kept_apart():
    # the kernel sums them in one row; the annual split must follow the tile's cover
    case = _case()
    water = case.params.is_water
    assert water.any()
    assert (~water).any()
    annual = simulate_tiles(*_args(case)).annual
    assert np.all(annual.open_water_mm[:, ~water] == 0.0)
    assert np.all(annual.interception_mm[:, water] == 0.0)
    assert np.all(annual.open_water_mm[:, water] > 0.0)
    assert np.all(annual.interception_mm[:, ~water] > 0.0)


@pytest.mark.parametrize(
    "options",
    [{}, {"keep_daily_yield": False}, {"daily_dtype": np.float32}, {"keep_daily": True}],
)
@pytest.mark.parametrize("value", [-0.5, np.inf, np.nan])
def test_invalid_input_is_reported_with_every_output_option(options, value):
    case = _case()
    wet = case.wet.copy()
    wet[400, 280] = value  # a day after the first year's start, a tile in the second block
    with pytest.raises(ValueError, match=r"wet_mm\[day 400, tile 280\]"):
        simulate_tiles(case.rain, wet, case.dry, case.soil, case.params, case.year_index, **options)


def test_unusable_output_options_are_rejected():
    case = _case()
    shape = case.rain.shape
    with pytest.raises(ValueError, match="out: shape"):
        simulate_tiles(*_args(case), out=np.empty((shape[0] - 1, shape[1])))
    with pytest.raises(ValueError, match="out: dtype int64"):
        simulate_tiles(*_args(case), out=np.empty(shape, dtype=np.int64))
    with pytest.raises(ValueError, match=r"out: dtype float64, expected float32 \(daily_dtype\)"):
        simulate_tiles(*_args(case), out=np.empty(shape), daily_dtype=np.float32)
    with pytest.raises(ValueError, match="C-contiguous"):
        simulate_tiles(*_args(case), out=np.empty(shape[::-1]).T)
    with pytest.raises(ValueError, match="daily_dtype: float16"):
        simulate_tiles(*_args(case), daily_dtype=np.float16)
    with pytest.raises(ValueError, match="keep_daily=True needs keep_daily_yield=True"):
        simulate_tiles(*_args(case), keep_daily=True, keep_daily_yield=False)
    with pytest.raises(ValueError, match="out: given with keep_daily_yield=False"):
        simulate_tiles(*_args(case), out=np.empty(shape), keep_daily_yield=False)
