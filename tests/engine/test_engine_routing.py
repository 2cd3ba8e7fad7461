"""Linear-store routing and discharge conversion."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from coveryield.engine.routing import linear_reservoir, mm_per_day_to_m3_per_s


@settings(max_examples=200, deadline=None)
@given(
    seed=st.integers(0, 2**32 - 1),
    n_days=st.integers(1, 200),
    k=st.floats(0.05, 200.0),
    start=st.floats(-50.0, 200.0),
)
def test_mass_is_conserved_and_outflow_never_negative(seed, n_days, k, start):
    rng = np.random.default_rng(seed)
    inflow = rng.normal(1.0, 5.0, n_days)  # includes negative inflow (open-water losses)
    outflow, store = linear_reservoir(inflow, k, start, return_store=True)
    # Σ out + final store = Σ in + initial store
    assert outflow.sum() + store[-1] == pytest.approx(inflow.sum() + start, abs=1e-9)
    assert (outflow >= -1e-12).all()
    # a store in deficit that is not refilled within the day releases nothing
    previous = np.concatenate([[start], store[:-1]])
    assert (outflow[(previous <= 0) & (previous + inflow <= 0)] == 0).all()


def test_recession_is_exponential_decay():
    # no inflow: S(t) = S0 e^(-t/k), so the outflow of day d is S0 e^(-d/k) (1 - e^(-1/k))
    k, start = 12.0, 40.0
    outflow, store = linear_reservoir(np.zeros(30), k, start, return_store=True)
    days = np.arange(30)
    np.testing.assert_allclose(store, start * np.exp(-(days + 1) / k), rtol=1e-12)
    np.testing.assert_allclose(
        outflow, start * np.exp(-days / k) * (1 - np.exp(-1 / k)), rtol=1e-12
    )


def test_constant_inflow_reaches_steady_state():
    outflow = linear_reservoir(np.full(400, 3.0), 10.0, 0.0)
    assert outflow[-1] == pytest.approx(3.0, rel=1e-12)
    # default start is the steady state of the mean inflow: no transient
    np.testing.assert_allclose(linear_reservoir(np.full(50, 3.0), 10.0), 3.0, rtol=1e-12)


def test_deficit_refills_before_any_outflow():
    # -5 mm on an empty store leaves a 5 mm deficit; 2 mm/d refills it in 2.5 days
    inflow = np.array([-5.0, 2.0, 2.0, 2.0, 2.0])
    outflow, store = linear_reservoir(inflow, 4.0, 0.0, return_store=True)
    np.testing.assert_array_equal(outflow[:3], 0.0)
    np.testing.assert_allclose(store[:3], [-5.0, -3.0, -1.0])
    assert 0.0 < outflow[3] < 2.0 * 0.5  # refilled half-way through day 3
    assert outflow.sum() + store[-1] == pytest.approx(inflow.sum())


def test_columns_are_routed_independently():
    rng = np.random.default_rng(0)
    inflow = rng.exponential(2.0, (100, 3))
    together = linear_reservoir(inflow, [1.0, 5.0, 20.0], 0.0)
    for j, k in enumerate([1.0, 5.0, 20.0]):
        np.testing.assert_allclose(together[:, j], linear_reservoir(inflow[:, j], k, 0.0))


def test_bad_recession_is_rejected():
    with pytest.raises(ValueError, match="recession_days"):
        linear_reservoir(np.ones(3), 0.0)


def test_mm_per_day_to_m3_per_s():
    # 1 mm/d over 86.4 km² is 86,400 m³/d = 1 m³/s (arithmetic)
    assert mm_per_day_to_m3_per_s(1.0, 86.4) == pytest.approx(1.0)
    np.testing.assert_allclose(mm_per_day_to_m3_per_s(np.array([0.0, 2.0]), 43.2), [0.0, 1.0])


def test_route_series_matches_linear_reservoir():
    # the lean single-series form used on share changes gives the general routine's answer
    from coveryield.engine.routing import route_series

    rng = np.random.default_rng(7)
    inflow = rng.gamma(0.5, 2.0, 2000) - 0.8  # many negative days, so deficits occur
    np.testing.assert_allclose(route_series(inflow, 25.0), linear_reservoir(inflow, 25.0),
                               rtol=0, atol=1e-12)


def test_weighted_column_sum_is_a_matrix_vector_product():
    from coveryield.engine.routing import weighted_column_sum

    rng = np.random.default_rng(3)
    values = np.asfortranarray(rng.normal(size=(500, 7)))
    weights = np.array([0.2, 0.0, 0.3, 0.0, 0.5, 0.0, 0.0])
    np.testing.assert_allclose(weighted_column_sum(values, weights), values @ weights,
                               rtol=0, atol=1e-12)


def test_mix_and_route_matches_the_separate_steps():
    # the fused share-change path gives the answer of the weighted sums, two linear stores and
    # a monthly mean computed apart (design property)
    from coveryield.engine.routing import mix_and_route, route_series, weighted_column_sum

    rng = np.random.default_rng(5)
    n_days = 800
    drainage = np.asfortranarray(rng.gamma(0.5, 2.0, (n_days, 5)))
    yields = np.asfortranarray(drainage + rng.gamma(0.3, 3.0, (n_days, 5)) - 0.5)
    weights = np.array([0.3, 0.0, 0.2, 0.4, 0.1])
    months = (np.arange(n_days) // 30) % 12 + 1
    months[:10] = 0  # days left out of the monthly means
    mixed, routed, monthly = mix_and_route(yields, drainage, weights, 2.0, 60.0, months)
    y = weighted_column_sum(yields, weights)
    d = weighted_column_sum(drainage, weights)
    np.testing.assert_allclose(mixed, y, rtol=0, atol=1e-12)
    expected = route_series(y - d, 2.0) + route_series(d, 60.0)
    np.testing.assert_allclose(routed, expected, rtol=0, atol=1e-12)
    for m in range(1, 13):
        np.testing.assert_allclose(monthly[m - 1], expected[months == m].mean(), rtol=1e-12)
