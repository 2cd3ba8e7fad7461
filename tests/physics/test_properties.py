"""Property tests (hypothesis) on the Penman-Monteith forms.

Wind: write FAO-56 eq. 6 as ETo(u) = (A + B u) / (C + D u) with A = 0.408 Delta (Rn - G),
B = gamma 900/(T + 273) (es - ea), C = Delta + gamma and D = 0.34 gamma. Then
dETo/du = (B C - A D) / (C + D u)^2, whose sign does not depend on u, so

    dETo/du > 0  <=>  B C > A D
                 <=>  900/(T + 273) (es - ea) (Delta + gamma) > 0.34 x 0.408 Delta (Rn - G)

(gamma > 0 cancels). Wind raises ETo only where the deficit term outweighs the radiation term.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from coveryield.physics import evaporation, meteo, radiation, wind

from .helpers import random_days

temperature = st.floats(-10.0, 40.0)
deficit = st.floats(0.0, 4.0)
net_rad = st.floats(-5.0, 30.0)
pressure = st.floats(60.0, 105.0)
wind_speed = st.floats(0.1, 10.0)


def _eto(rn, t, u2, vpd, p, ea=1.0):
    return evaporation.standardized_penman_monteith(rn, 0.0, t, u2, ea + vpd, ea, p)


@given(
    t=temperature, vpd=deficit, extra=st.floats(0.01, 2.0), rn=net_rad, p=pressure, u2=wind_speed
)
def test_eto_rises_with_vapour_pressure_deficit(t, vpd, extra, rn, p, u2):
    # FAO-56 eq. 6: the deficit term gamma 900/(T+273) u2 (es - ea) grows with es - ea, u2 > 0
    assert _eto(rn, t, u2, vpd + extra, p) > _eto(rn, t, u2, vpd, p)


@given(
    t=temperature, vpd=deficit, rn=net_rad, extra=st.floats(0.01, 10.0), p=pressure, u2=wind_speed
)
def test_eto_rises_with_net_radiation(t, vpd, rn, extra, p, u2):
    # FAO-56 eq. 6: the radiation term 0.408 Delta (Rn - G) grows with Rn
    assert _eto(rn + extra, t, u2, vpd, p) > _eto(rn, t, u2, vpd, p)


def _wind_condition(t, vpd, rn, p):
    """Left and right sides of the derived condition for dETo/du2 > 0 (module notes)."""
    delta = meteo.vapour_pressure_slope(t)
    gamma = meteo.psychrometric_constant(p)
    lhs = 900.0 / (t + 273.0) * vpd * (delta + gamma)
    rhs = 0.34 * 0.408 * delta * rn
    return lhs, rhs


@settings(max_examples=300)
@given(
    t=temperature, vpd=deficit, rn=net_rad, p=pressure, u_low=wind_speed, du=st.floats(0.05, 5.0)
)
def test_wind_raises_eto_only_where_deficit_term_outweighs_radiation(t, vpd, rn, p, u_low, du):
    lhs, rhs = _wind_condition(t, vpd, rn, p)
    assume(abs(lhs - rhs) > 1e-6 * (abs(lhs) + abs(rhs) + 1e-3))
    change = _eto(rn, t, u_low + du, vpd, p) - _eto(rn, t, u_low, vpd, p)
    if lhs > rhs:
        assert change > 0
    else:
        assert change < 0


def test_wind_condition_both_sides_occur():
    # a humid sunny day (small deficit, large Rn): more wind lowers ETo
    lhs, rhs = _wind_condition(25.0, 0.1, 20.0, 101.3)
    assert lhs < rhs
    assert _eto(20.0, 25.0, 4.0, 0.1, 101.3) < _eto(20.0, 25.0, 1.0, 0.1, 101.3)
    # a dry day: more wind raises ETo
    lhs, rhs = _wind_condition(25.0, 2.0, 10.0, 101.3)
    assert lhs > rhs
    assert _eto(10.0, 25.0, 4.0, 2.0, 101.3) > _eto(10.0, 25.0, 1.0, 2.0, 101.3)


@given(
    rs_low=st.floats(0.0, 500.0),
    extra=st.floats(1.0, 500.0),
    t=temperature,
    vpd=st.floats(0.05, 4.0),
    rn=st.floats(0.0, 30.0),
    ra=st.floats(5.0, 300.0),
)
def test_penman_monteith_falls_with_surface_resistance(rs_low, extra, t, vpd, rn, ra):
    # FAO-56 eq. 3: rs only enters the denominator gamma (1 + rs/ra); positive numerator -> falls
    e = [
        evaporation.penman_monteith(rn, 0.0, t, 1.0 + vpd, 1.0, 100.0, ra, rs)
        for rs in (rs_low, rs_low + extra)
    ]
    assert e[1] < e[0]


def test_general_equation_with_reference_parameters_reproduces_eq_6():
    # FAO-56 eq. 6 is eq. 3 with h = 0.12 m, rs = 70 s/m, albedo 0.23 and ra = 208/u2 and rounded
    # constants (FAO-56 Chapter 2); the two must agree within 2 % (of ETo, or of 1 mm/d if smaller).
    d = random_days(3000, seed=42)
    tmean = 0.5 * (d["tmax"] + d["tmin"])
    p = meteo.atmospheric_pressure(d["elev"])
    es = meteo.mean_saturation_vapour_pressure(d["tmax"], d["tmin"])
    rn = radiation.net_radiation(
        radiation.net_shortwave_radiation(d["rs"]),
        radiation.net_longwave_radiation(d["tmax"], d["tmin"], d["ea"], d["rs"], d["rso"]),
    )
    eq6 = evaporation.standardized_penman_monteith(rn, 0.0, tmean, d["u2"], es, d["ea"], p)
    eq3 = evaporation.penman_monteith(rn, 0.0, tmean, es, d["ea"], p, 208.0 / d["u2"], 70.0)
    assert np.all(np.abs(eq3 - eq6) <= 0.02 * np.maximum(np.abs(eq6), 1.0))


@given(st.lists(st.floats(-20.0, 40.0), min_size=1, max_size=30))
def test_series_in_gives_series_out_on_the_same_index(values):
    index = pd.date_range("2020-02-27", periods=len(values), freq="D", name="date")
    t = pd.Series(values, index=index)
    for result in (
        meteo.saturation_vapour_pressure(t),
        meteo.vapour_pressure_slope(t),
        meteo.mean_saturation_vapour_pressure(t + 5.0, t),
        meteo.actual_vapour_pressure_from_rh_max_min(t + 5.0, t, 90.0, 50.0),
        radiation.net_longwave_radiation(t + 5.0, t, 1.0, 15.0, 20.0),
        evaporation.fao56_reference_evaporation(
            t + 8.0, t, 0.8, 18.0, 2.0, index.dayofyear, 45.0, 200.0
        ),
        evaporation.penman_monteith(10.0, 0.0, t, 3.0, 1.0, 100.0, 50.0, 70.0),
        wind.wind_speed_at_2m(t.abs(), 10.0),
    ):
        assert isinstance(result, pd.Series)
        assert result.index.equals(index)


@pytest.mark.parametrize(
    ("func", "args"),
    [
        (meteo.saturation_vapour_pressure, (20.0,)),
        (radiation.extraterrestrial_radiation, (45.0, 100)),
        (evaporation.aerodynamic_resistance, (2.0, 2.0, 0.12)),
        (evaporation.fao56_reference_evaporation, (25.0, 15.0, 1.2, 20.0, 2.0, 180, 40.0, 100.0)),
    ],
)
def test_scalars_in_give_a_float_out(func, args):
    assert isinstance(func(*args), float)


def test_arrays_in_give_arrays_out():
    t = np.array([0.0, 10.0, 20.0])
    out = meteo.saturation_vapour_pressure(t)
    assert isinstance(out, np.ndarray)
    assert out.shape == (3,)
