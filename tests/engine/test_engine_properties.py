"""Properties of the tile water balance on random climates and parameters (hypothesis)."""

from __future__ import annotations

import numpy as np
from hypothesis import given, settings

from coveryield.engine.water_balance import simulate_tiles

from .cases import cases

ROUNDING_MM = 1e-9  # allowance for floating-point rounding in a single daily flux


def _run(case):
    return simulate_tiles(*case.args, lai=case.lai, keep_daily=True)


@settings(max_examples=150, deadline=None)
@given(cases(max_days=60))
def test_each_tile_year_closes(case):
    annual = _run(case).annual
    # rain = interception + transpiration + soil evap + open water + quickflow + drainage + ΔS
    assert np.abs(annual.closure_error_mm()).max() <= 1e-6


@settings(max_examples=150, deadline=None)
@given(cases())
def test_stores_stay_within_capacity(case):
    daily = _run(case).daily
    # the canopy holds at most the day's capacity, which scales with the day's leaf area
    if case.lai is None:
        capacity = case.params.canopy_capacity_mm
    else:
        capacity = case.params.canopy_capacity_mm * case.lai / case.params.leaf_area_index
    capacity = np.where(case.params.is_water, 0.0, capacity) + ROUNDING_MM
    taw = np.where(case.params.is_water, 0.0, case.params.root_zone_capacity_mm)
    assert (daily["canopy_store_mm"] >= 0).all()
    assert (daily["canopy_store_mm"] <= capacity).all()
    assert (daily["soil_store_mm"] >= 0).all()
    assert (daily["soil_store_mm"] <= taw).all()
    # the surface layer's depletion stays within 0..TEW (FAO-56 eq. 77 constraint)
    tew = np.where(case.params.is_water, 0.0, case.params.total_evaporable_mm)
    assert (daily["surface_depletion_mm"] >= 0).all()
    assert (daily["surface_depletion_mm"] <= tew + ROUNDING_MM).all()


@settings(max_examples=150, deadline=None)
@given(cases())
def test_fluxes_never_exceed_their_potential(case):
    daily = _run(case).daily
    land = ~case.params.is_water
    assert (daily["interception_mm"] <= case.wet + ROUNDING_MM).all()
    assert (daily["transpiration_mm"] <= case.dry + ROUNDING_MM).all()
    # FAO-56 eq. 71: soil evaporation takes only the energy the canopy leaves of Kc,max·ETo
    # (soil + dry in the forcing): interception + transpiration + soil evaporation stays within
    # it whenever the soil evaporates at all
    canopy = daily["interception_mm"] + daily["transpiration_mm"]
    left = np.maximum(case.soil + case.dry - canopy, 0.0)
    assert (daily["soil_evap_mm"] <= left + ROUNDING_MM).all()
    for name in (
        "interception_mm",
        "throughfall_mm",
        "transpiration_mm",
        "soil_evap_mm",
        "drainage_mm",
    ):
        assert (daily[name] >= 0).all(), name
    assert (daily["quickflow_mm"][:, land] >= 0).all()
    assert (daily["quickflow_mm"] <= daily["throughfall_mm"] + ROUNDING_MM)[:, land].all()


@settings(max_examples=100, deadline=None)
@given(cases())
def test_water_tile_yield_is_rain_minus_evaporation(case):
    run = _run(case)
    water = case.params.is_water
    np.testing.assert_allclose(
        run.daily_yield_mm[:, water], (case.rain - case.wet)[:, water], rtol=0, atol=1e-12
    )
    annual = run.annual
    np.testing.assert_allclose(
        annual.yield_mm[:, water], (annual.rain_mm - annual.evap_mm)[:, water], rtol=0, atol=1e-9
    )
    np.testing.assert_array_equal(annual.storage_change_mm[:, water], 0.0)


@settings(max_examples=100, deadline=None)
@given(cases())
def test_annual_sums_are_sums_of_the_days(case):
    run = _run(case)
    n_years = int(case.year_index[-1]) + 1
    for name in (
        "interception_mm",
        "transpiration_mm",
        "soil_evap_mm",
        "open_water_mm",
        "quickflow_mm",
        "drainage_mm",
    ):
        by_year = np.array(
            [run.daily[name][case.year_index == y].sum(axis=0) for y in range(n_years)]
        )
        np.testing.assert_allclose(getattr(run.annual, name), by_year, rtol=1e-12, atol=1e-9)
