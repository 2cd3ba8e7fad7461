"""Cross-checks against general reference libraries from PyPI used as test oracles only:
``refet`` (ASCE-EWRI 2005 standardized reference ET) and ``pyet`` (Penman-Monteith, FAO-56)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from coveryield.physics import evaporation, meteo, wind
from coveryield.physics.fused import reference_et_fused

from .helpers import random_days

refet = pytest.importorskip("refet")
pyet = pytest.importorskip("pyet")

N_DAYS = 2000


@pytest.fixture(scope="module")
def days():
    return random_days(N_DAYS)


def _refet_daily(d, wind_height_m):
    return refet.Daily(
        tmin=d["tmin"],
        tmax=d["tmax"],
        rs=d["rs"],
        uz=d["u2"],
        zw=wind_height_m,
        elev=d["elev"],
        lat=d["lat"],
        doy=d["doy"],
        ea=d["ea"],
        method="asce",
    )


@pytest.mark.parametrize("wind_height_m", [2.0, 10.0])
@pytest.mark.parametrize(("method", "surface"), [("asce-short", "eto"), ("asce-tall", "etr")])
def test_asce_methods_match_refet(days, wind_height_m, method, surface):
    # ASCE-EWRI (2005) eq. 1 as implemented by refet.Daily(method="asce"): the same constants
    # (Cn/Cd 900/0.34 and 1600/0.38, sigma 4.901e-9, Delta coefficient 2503, Rs/Rso in [0.3, 1],
    # simple Rso, eq. 47 wind), so only floating-point order differs: tolerance 1e-9 mm/d.
    d = days
    expected = getattr(_refet_daily(d, wind_height_m), surface)()
    u2 = wind.wind_speed_at_2m(d["u2"], wind_height_m)
    got = evaporation.fao56_reference_evaporation(
        d["tmax"], d["tmin"], d["ea"], d["rs"], u2, d["doy"], d["lat"], d["elev"], method=method
    )
    np.testing.assert_allclose(got, expected, rtol=0, atol=1e-9)


def test_fused_kernel_matches_refet_per_site(days):
    # refet (ASCE-EWRI 2005, short reference) against the compiled kernel, one site at a time
    d = days
    expected = _refet_daily(d, 2.0).eto()
    for i in range(0, 50):
        got = reference_et_fused(
            d["tmax"][i : i + 1],
            d["tmin"][i : i + 1],
            d["ea"][i : i + 1],
            d["rs"][i : i + 1],
            wind.wind_speed_at_2m(d["u2"][i : i + 1], 2.0),
            d["doy"][i : i + 1],
            d["lat"][i],
            d["elev"][i],
            method="asce-short",
        )
        assert got[0] == pytest.approx(expected[i], abs=1e-9)


def test_fao56_method_against_refet_short(days):
    # FAO-56 eq. 6 vs ASCE-EWRI short reference (refet). The standards differ only in sigma
    # (4.903e-9 vs 4.901e-9, 0.04 % of Rnl, Rnl <= ~15 MJ m-2 d-1 -> <= 0.0025 mm/d), the Delta
    # coefficient (4098 x 0.6108 vs 2503, 2e-5 relative) and ASCE's floor Rs/Rso >= 0.3. On days
    # where the floor is inactive the two must agree within 0.003 mm/d.
    d = days
    expected = _refet_daily(d, 2.0).eto()
    u2 = wind.wind_speed_at_2m(d["u2"], 2.0)
    got = evaporation.fao56_reference_evaporation(
        d["tmax"], d["tmin"], d["ea"], d["rs"], u2, d["doy"], d["lat"], d["elev"], method="fao56"
    )
    floor_inactive = d["rs"] / d["rso"] >= 0.3
    assert floor_inactive.sum() > 1000
    np.testing.assert_allclose(got[floor_inactive], expected[floor_inactive], rtol=0, atol=0.003)


def _series(values, n):
    return pd.Series(values, index=pd.date_range("2001-01-01", periods=n, freq="D"))


@pytest.mark.parametrize("rs_s_per_m", [30.0, 70.0, 200.0])
def test_general_penman_monteith_matches_pyet(days, rs_s_per_m):
    # pyet.pm (Monteith 1965 / FAO-56 eq. 3) with net radiation, r_s and ra = 208/u2 given.
    # pyet uses lambda = 2.501 - 0.002361 T (FAO-56 Annex 3 eq. 3-1) where FAO-56 eq. 3 is used
    # here with lambda = 2.45; both terms of eq. 3 are divided by lambda, so E x lambda must agree.
    # rho_a (3.486 P / Tkv), gamma (0.665e-3 P) and Delta are the same formulas: tolerance 1e-9.
    d = days
    n = len(d["tmin"])
    tmean = 0.5 * (d["tmax"] + d["tmin"])
    rn = np.random.default_rng(7).uniform(-3.0, 25.0, n)
    pressure = meteo.atmospheric_pressure(d["elev"])
    expected = pyet.pm(
        _series(tmean, n),
        _series(d["u2"], n),
        rn=_series(rn, n),
        tmax=_series(d["tmax"], n),
        tmin=_series(d["tmin"], n),
        ea=_series(d["ea"], n),
        pressure=_series(pressure, n),
        r_s=rs_s_per_m,
        ra_method=0,
        clip_zero=False,
    ).to_numpy()
    es = meteo.mean_saturation_vapour_pressure(d["tmax"], d["tmin"])
    got = evaporation.penman_monteith(
        rn, 0.0, tmean, es, d["ea"], pressure, 208.0 / d["u2"], rs_s_per_m
    )
    pyet_lambda = 2.501 - 0.002361 * tmean
    np.testing.assert_allclose(
        got * meteo.LATENT_HEAT_MJ_PER_KG, expected * pyet_lambda, rtol=1e-9, atol=1e-9
    )


@pytest.mark.parametrize("canopy_height_m", [0.12, 0.5, 1.0])
def test_penman_monteith_with_eq4_resistance_matches_pyet(days, canopy_height_m):
    # pyet.pm with ra_method=1 (FAO-56 eq. 4 at zm = zh = 2 m). pyet rounds d = 0.667 h where
    # FAO-56 has 2/3 h; at h <= 1 m and z = 2 m that moves ra by < 0.02 %, so E x lambda must
    # agree within 0.05 %, plus 1e-3 MJ m-2 d-1 (0.0004 mm/d) where negative Rn nearly cancels the
    # aerodynamic term and a relative tolerance means little.
    d = days
    n = len(d["tmin"])
    tmean = 0.5 * (d["tmax"] + d["tmin"])
    rn = np.random.default_rng(11).uniform(-3.0, 25.0, n)
    pressure = meteo.atmospheric_pressure(d["elev"])
    expected = pyet.pm(
        _series(tmean, n),
        _series(d["u2"], n),
        rn=_series(rn, n),
        tmax=_series(d["tmax"], n),
        tmin=_series(d["tmin"], n),
        ea=_series(d["ea"], n),
        pressure=_series(pressure, n),
        r_s=70.0,
        ra_method=1,
        croph=canopy_height_m,
        clip_zero=False,
    ).to_numpy()
    es = meteo.mean_saturation_vapour_pressure(d["tmax"], d["tmin"])
    ra = evaporation.aerodynamic_resistance(d["u2"], 2.0, canopy_height_m)
    got = evaporation.penman_monteith(rn, 0.0, tmean, es, d["ea"], pressure, ra, 70.0)
    pyet_lambda = 2.501 - 0.002361 * tmean
    np.testing.assert_allclose(
        got * meteo.LATENT_HEAT_MJ_PER_KG, expected * pyet_lambda, rtol=5e-4, atol=1e-3
    )


def test_aerodynamic_resistance_matches_pyet():
    # pyet.meteo_utils.calc_res_aero(ra_method=1), FAO-56 eq. 4; pyet's d = 0.667 h vs 2/3 h
    # gives < 0.02 % difference for h <= 1 m at z = 2 m.
    from pyet.meteo_utils import calc_res_aero

    for h in (0.12, 0.3, 0.5, 1.0):
        expected = calc_res_aero(2.5, croph=h, zw=2.0, zh=2.0, ra_method=1)
        assert evaporation.aerodynamic_resistance(2.5, 2.0, h) == pytest.approx(expected, rel=2e-4)
