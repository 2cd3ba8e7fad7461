"""The engine's faster paths give the results of the plain ones.

float32 forcing, canopy rows computed a year at a time, and the SCS retention taken as the larger
of two lines: each is checked against the straightforward form, with a stated tolerance where
the values may differ.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings

from coveryield.engine import kernels, water_balance
from coveryield.engine.water_balance import (
    dry_curve_number,
    retention_mm,
    simulate_tiles,
    wet_curve_number,
)

from .cases import cases, make_case

# IEEE 754 binary32 has a 24-bit significand: rounding a value to float32 moves it by at most
# 2**-24 of its magnitude (IEEE 754-2008, binary32 format; common knowledge).
FLOAT32_UNIT_ROUNDOFF = 2.0**-24

#: Agreement asked of a run on float32 forcing with the float64 run on the same values. Every
#: step of the day is continuous in its inputs (min, max, the runoff curve, the stores), so an
#: input moved by 2**-24 of itself moves a flux by about as much times the sum of what feeds
#: it; 1e-4 mm per day and 2e-3 mm per year leave a wide margin over that (our choice).
FLOAT32_DAILY_ATOL_MM = 1e-4
FLOAT32_ANNUAL_ATOL_MM = 2e-3
FLOAT32_RTOL = 1e-5


def _float32(*arrays):
    return [np.asarray(a, dtype=np.float32) for a in arrays]


def test_float32_forcing_agrees_with_float64_within_tolerance():
    case = make_case(seed=21, n_days=1460, n_tiles=40, n_years=4)
    forcing32 = _float32(case.rain, case.wet, case.dry, case.soil)
    # the float64 run on the very values the float32 arrays hold, and on the unrounded ones
    widened = [a.astype(np.float64) for a in forcing32]
    run32 = simulate_tiles(*forcing32, case.params, case.year_index, lai=case.lai)
    same_values = simulate_tiles(*widened, case.params, case.year_index, lai=case.lai)
    unrounded = simulate_tiles(*case.args, lai=case.lai)
    # float32 storage changes nothing but the stored forcing: same values, same results
    np.testing.assert_array_equal(run32.daily_yield_mm, same_values.daily_yield_mm)
    for name in kernels.ANNUAL_NAMES:
        np.testing.assert_array_equal(
            getattr(run32.annual, name), getattr(same_values.annual, name), err_msg=name
        )
    # against the unrounded forcing: within the stated tolerance
    np.testing.assert_allclose(
        run32.daily_yield_mm,
        unrounded.daily_yield_mm,
        rtol=FLOAT32_RTOL,
        atol=FLOAT32_DAILY_ATOL_MM,
    )
    for name in kernels.ANNUAL_NAMES:
        np.testing.assert_allclose(
            getattr(run32.annual, name),
            getattr(unrounded.annual, name),
            rtol=FLOAT32_RTOL,
            atol=FLOAT32_ANNUAL_ATOL_MM,
            err_msg=name,
        )


@settings(max_examples=40, deadline=None)
@given(cases())
def test_float32_forcing_keeps_each_tile_year_closed(case):
    forcing32 = _float32(case.rain, case.wet, case.dry, case.soil)
    run = simulate_tiles(*forcing32, case.params, case.year_index, lai=case.lai)
    # the balance is kept in float64 on the widened inputs: closure to 1e-6 mm per tile-year
    assert np.abs(run.annual.closure_error_mm()).max() <= 1e-6
    # the rain sums are those of the float32 values
    rain32 = forcing32[0].astype(np.float64)
    n_years = len(run.annual.rain_mm)
    by_year = np.array([rain32[case.year_index == y].sum(axis=0) for y in range(n_years)])
    np.testing.assert_allclose(run.annual.rain_mm, by_year, rtol=1e-12, atol=1e-9)


def test_mixed_forcing_dtypes_run_in_float64():
    case = make_case(seed=2, n_days=100, n_tiles=5, n_years=1)
    rain32 = case.rain.astype(np.float32)
    mixed = simulate_tiles(rain32, case.wet, case.dry, case.soil, case.params, case.year_index)
    widened = simulate_tiles(
        rain32.astype(np.float64), case.wet, case.dry, case.soil, case.params, case.year_index
    )
    np.testing.assert_array_equal(mixed.daily_yield_mm, widened.daily_yield_mm)


def test_float32_forcing_reports_a_bad_value():
    case = make_case(seed=3, n_days=60, n_tiles=4, n_years=1)
    dry = case.dry.astype(np.float32)
    dry[17, 2] = -1.0
    with pytest.raises(ValueError, match=r"dry_mm\[day 17, tile 2\] = -1.0"):
        simulate_tiles(
            *_float32(case.rain, case.wet), dry, case.soil.astype(np.float32), case.params,
            case.year_index,
        )


def _daily_lai_case():
    rng = np.random.default_rng(7)
    n_days, n_tiles = 5 * 365 + 1, 9
    years = np.repeat(np.arange(5), 365)
    years = np.append(years, 4)
    params = water_balance.TileParameters(
        canopy_capacity_mm=rng.uniform(0.2, 2.0, n_tiles),
        root_zone_capacity_mm=rng.uniform(50, 200, n_tiles),
        depletion_fraction=np.full(n_tiles, 0.5),
        curve_number=rng.uniform(60, 90, n_tiles),
        is_water=np.arange(n_tiles) == 4,
        leaf_area_index=np.full(n_tiles, 3.0),
    )
    shape = (n_days, n_tiles)
    rain = np.where(rng.random(shape) < 0.5, rng.exponential(6.0, shape), 0.0)
    wet, dry, soil = (rng.uniform(0.0, 5.0, shape) for _ in range(3))
    lai = rng.uniform(0.0, 6.0, shape)
    return (rain, wet, dry, soil, params, years), lai


@pytest.mark.parametrize("chunk_days", [1, 400, 800])
def test_canopy_rows_a_year_at_a_time_give_the_whole_record_result(monkeypatch, chunk_days):
    args, lai = _daily_lai_case()
    monkeypatch.setattr(water_balance, "CANOPY_CHUNK_DAYS", 10**9)
    whole = simulate_tiles(*args, lai=lai, keep_daily=True)
    monkeypatch.setattr(water_balance, "CANOPY_CHUNK_DAYS", chunk_days)
    chunked = simulate_tiles(*args, lai=lai, keep_daily=True)
    np.testing.assert_array_equal(chunked.daily_yield_mm, whole.daily_yield_mm)
    for name in kernels.ANNUAL_NAMES:
        np.testing.assert_array_equal(
            getattr(chunked.annual, name), getattr(whole.annual, name), err_msg=name
        )
    for name in kernels.DAILY_NAMES:
        np.testing.assert_array_equal(chunked.daily[name], whole.daily[name], err_msg=name)


def test_a_bad_leaf_area_in_a_later_year_is_named_by_its_day(monkeypatch):
    args, lai = _daily_lai_case()
    monkeypatch.setattr(water_balance, "CANOPY_CHUNK_DAYS", 1)  # one year per chunk
    lai = lai.copy()
    lai[1000, 6] = np.nan
    with pytest.raises(ValueError, match=r"lai\[day 1000, tile 6\] = nan"):
        simulate_tiles(*args, lai=lai)


def test_retention_curve_is_convex_for_every_curve_number():
    # store_retention takes the larger of its two lines, which is the piecewise-linear curve
    # through S(AMC I), S(AMC II), S(AMC III) only where S(I) - S(II) >= S(II) - S(III)
    cn = np.linspace(0.5, 100.0, 20_000)
    s1, s2, s3 = (retention_mm(f(cn)) for f in (dry_curve_number, lambda c: c, wet_curve_number))
    assert np.all((s1 - s2) - (s2 - s3) >= -1e-9 * (1.0 + np.abs(s1)))  # rounding at CN 100


@pytest.mark.parametrize("cn", [35.0, 61.0, 80.0, 98.0])
def test_retention_lines_meet_the_three_antecedent_classes(cn):
    taw = 120.0
    conversions = (dry_curve_number, lambda c: c, wet_curve_number)
    s1, s2, s3 = (float(retention_mm(f(cn))) for f in conversions)
    lines = kernels.retention_lines(s1, s2, s3, taw)
    for store, expected in ((0.0, s1), (0.5 * taw, s2), (taw, s3), (0.25 * taw, 0.5 * (s1 + s2))):
        assert kernels.store_retention(store, *lines) == pytest.approx(expected, rel=1e-12)
