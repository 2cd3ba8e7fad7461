"""The compiled kernel against a plain-Python reference, and the kernels without the compiler."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings

from coveryield.engine import kernels
from coveryield.engine.water_balance import simulate_tiles

from .cases import cases, make_case
from .reference import reference_run


def _compare(case):
    run = simulate_tiles(*case.args, lai=case.lai, keep_daily=True)
    daily, annual = reference_run(*case.args, lai=case.lai)
    for name, expected in daily.items():
        np.testing.assert_allclose(run.daily[name], expected, rtol=1e-9, atol=1e-9, err_msg=name)
    for name, expected in annual.items():
        np.testing.assert_allclose(
            getattr(run.annual, name), expected, rtol=1e-9, atol=1e-8, err_msg=name
        )
    np.testing.assert_allclose(
        run.daily_yield_mm, daily["quickflow_mm"] + daily["drainage_mm"], rtol=1e-9, atol=1e-9
    )
    np.testing.assert_allclose(run.daily_drainage_mm, daily["drainage_mm"], rtol=1e-9, atol=1e-9)


@settings(max_examples=60, deadline=None)
@given(cases())
def test_kernel_matches_plain_python_reference(case):
    _compare(case)


@pytest.mark.parametrize("n_tiles", [1, 7, 8, 9, 17, 255, 256, 257])
def test_reference_across_block_edges(n_tiles):
    # tiles are processed in blocks of kernels.BLOCK: check partial and full blocks
    _compare(make_case(seed=n_tiles, n_days=60, n_tiles=n_tiles, n_years=2))


@pytest.mark.parametrize("seed", [3, 4, 6])
def test_fast_and_daily_kernels_agree(seed):
    case = make_case(seed=seed, n_days=400, n_tiles=13, n_years=2)
    fast = simulate_tiles(*case.args, lai=case.lai)
    routed = simulate_tiles(*case.args, lai=case.lai, keep_daily_drainage=True)
    full = simulate_tiles(*case.args, lai=case.lai, keep_daily=True)
    assert fast.daily is None
    assert fast.daily_drainage_mm is None
    np.testing.assert_array_equal(fast.daily_yield_mm, full.daily_yield_mm)
    np.testing.assert_array_equal(routed.daily_drainage_mm, full.daily_drainage_mm)
    for name in kernels.ANNUAL_NAMES:
        np.testing.assert_array_equal(getattr(fast.annual, name), getattr(full.annual, name))
        np.testing.assert_array_equal(getattr(routed.annual, name), getattr(full.annual, name))


def test_py_func_runs_without_the_compiler():
    # the leaf physics as plain Python gives the compiled answer
    args = (12.0, 4.0, 1.8, 1 / 1.5, 0.3)
    assert kernels.canopy_day.py_func(*args) == pytest.approx(kernels.canopy_day(*args))
    assert kernels.curve_number_runoff.py_func(50.8, 63.5) == pytest.approx(
        kernels.curve_number_runoff(50.8, 63.5)
    )
    cover = 1.0 - math.exp(-0.5 * 2.88)
    lines = kernels.retention_lines(400.0, 169.0, 73.6, 150.0)  # S of AMC I, II, III; TAW
    day = (
        20.0,  # rain
        4.0,  # wet
        3.0,  # dry
        0.5,  # soil energy
        0.2 * 2.88,  # capacity: per lai x lai
        cover,
        1.0 / (1.0 - cover),
        1 / (24 * 1.5),
        *lines,
        150.0,
        1 / 75,
        19.0,  # TEW
        1 / 10.0,  # 1 / (TEW - REW)
        0.0,  # land
        0.2,
        100.0,
        5.0,  # surface depletion
    )
    assert kernels.tile_day.py_func(*day) == pytest.approx(kernels.tile_day(*day))
    # the whole run through .py_func (its inner helpers stay compiled)
    case = make_case(seed=5, n_days=30, n_tiles=3, n_years=1)
    from coveryield.engine.water_balance import _canopy_rows, _initial_state, _kernel_parameters

    outputs = []
    canopy = _canopy_rows(case.params.reference_lai().reshape(1, -1), case.params)
    for runner in (kernels.run_tiles, kernels.run_tiles.py_func):
        state = _initial_state(case.params)
        annual = np.zeros((8, 1, 3))
        daily_yield = np.empty((30, 3))
        runner(
            case.rain,
            case.wet,
            case.dry,
            case.soil,
            canopy,
            0,
            case.year_index,
            _kernel_parameters(case.params),
            state,
            annual,
            daily_yield,
            0,
            1,
        )
        outputs.append((annual, daily_yield, state))
    for compiled, plain in zip(*outputs, strict=True):
        np.testing.assert_allclose(compiled, plain, rtol=1e-12, atol=1e-12)
