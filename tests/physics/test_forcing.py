"""The forcing layer: climate record + cover -> daily reference ET and cover evaporation rates.

Climates here are tiny stand-ins with ``daily`` and ``site`` only (the attributes forcing reads).
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from coveryield import forcing
from coveryield.covers import BUILTIN_COVERS, derive_cover
from coveryield.errors import ClimateFileError
from coveryield.physics import evaporation, meteo, open_water, radiation, wind

from .helpers import stand_in_climate

LAT, ELEV = 47.0, 300.0


def _daily(n_days=730, seed=1, start="2021-01-01"):
    """Two years of invented plausible weather with a seasonal cycle."""
    rng = np.random.default_rng(seed)
    index = pd.date_range(start, periods=n_days, freq="D", name="date")
    doy = index.dayofyear.to_numpy()
    season = np.cos(2 * np.pi * (doy - 200) / 365.0)
    tmin = 5.0 + 8.0 * season + rng.normal(0, 2, n_days)
    tmax = tmin + rng.uniform(3, 14, n_days)
    ea = meteo.saturation_vapour_pressure(tmin - rng.uniform(0, 5, n_days))
    rs = radiation.clear_sky_radiation(LAT, doy, ELEV) * rng.uniform(0.2, 1.0, n_days)
    wind_ms = rng.uniform(0.5, 7.0, n_days)
    rain = rng.exponential(2.0, n_days)
    return pd.DataFrame(
        {
            "rain_mm": rain,
            "tmax_c": tmax,
            "tmin_c": tmin,
            "ea_kpa": ea,
            "wind_ms": wind_ms,
            "rs_mj": rs,
        },
        index=index,
    )


@pytest.fixture(scope="module")
def climate():
    return stand_in_climate(_daily(), LAT, ELEV, wind_height_m=10.0)


@pytest.mark.parametrize("method", ["fao56", "asce-short", "asce-tall"])
def test_reference_et_is_the_chain_on_the_record(climate, method):
    d = climate.daily
    et0 = forcing.reference_et(climate, method=method)
    assert isinstance(et0, pd.Series)
    assert et0.name == "et0_mm"
    assert et0.index.equals(d.index)
    u2 = wind.wind_speed_at_2m(d["wind_ms"].to_numpy(), 10.0)  # FAO-56 eq. 47
    expected = evaporation.fao56_reference_evaporation(
        d["tmax_c"].to_numpy(),
        d["tmin_c"].to_numpy(),
        d["ea_kpa"].to_numpy(),
        d["rs_mj"].to_numpy(),
        u2,
        d.index.dayofyear.to_numpy(),
        LAT,
        ELEV,
        method,
    )
    np.testing.assert_allclose(et0.to_numpy(), expected, rtol=0, atol=1e-9)


def test_cover_evaporation_frame_shape(climate):
    for cover in BUILTIN_COVERS.values():
        frame = forcing.cover_evaporation(climate, cover)
        assert list(frame.columns) == ["dry_mm", "wet_mm", "soil_mm"]
        assert frame.index.equals(climate.daily.index)
        assert (frame >= 0).all().all()
        assert frame.notna().all().all()


def test_reference_like_grass_cover_reproduces_et0():
    # FAO-56 eq. 6 is eq. 3 for 0.12 m grass, rs = 70 s/m, albedo 0.23 with wind at 2 m; a cover
    # with those parameters must give ETo within 2 % (or 0.02 mm/d), the eq. 3 vs eq. 6 rounding.
    clim = stand_in_climate(_daily(seed=3), LAT, ELEV, wind_height_m=2.0)
    grass = derive_cover(
        "reference grass", "pasture", {"height_m": 0.12, "rs_s_per_m": 70.0, "albedo": 0.23}
    )
    et0 = forcing.reference_et(clim).clip(lower=0)
    dry = forcing.cover_evaporation(clim, grass)["dry_mm"]
    assert np.all(np.abs(dry - et0) <= np.maximum(0.02 * et0, 0.02))


def test_forest_wet_canopy_evaporates_much_faster_than_dry(climate):
    # Penman-Monteith with rs = 0 vs rs = 100 s/m over a 20 m forest (ra ~ 5-20 s/m): the wet rate
    # is several times the dry one (fact sheet §3a, from memory: "several times")
    frame = forcing.cover_evaporation(climate, BUILTIN_COVERS["forest"])
    et0 = forcing.reference_et(climate)
    assert (frame["wet_mm"] >= frame["dry_mm"]).all()
    positive = frame["dry_mm"] > 0.2
    assert (frame["wet_mm"][positive] / frame["dry_mm"][positive]).median() > 2.0
    assert frame["wet_mm"].sum() > 1.5 * et0.clip(lower=0).sum()


def test_soil_energy_is_what_the_canopy_leaves_of_kc_max(climate):
    # FAO-56 eqs. 71-72: soil evaporation gets (Kc,max - Kcb) ETo, with the cover's dry rate for
    # Kcb ETo; Kc,max >= Kcb + 0.05 (eq. 72), so the soil always gets at least 0.05 ETo, and
    # Kc,max is about 1.2 when the climate adjustment is small (eq. 72, FAO reference 1.2).
    et0 = forcing.reference_et(climate).clip(lower=0).to_numpy()
    for name in ("forest", "pasture"):
        frame = forcing.cover_evaporation(climate, BUILTIN_COVERS[name])
        kc_max = (frame["soil_mm"] + frame["dry_mm"]).to_numpy() / np.where(et0 > 0, et0, np.nan)
        wet_days = et0 > 0.5
        assert (frame["soil_mm"].to_numpy()[wet_days] >= 0.05 * et0[wet_days] - 1e-9).all()
        assert np.nanmedian(kc_max[wet_days]) == pytest.approx(1.2, abs=0.15)


def test_forest_uses_wind_moved_above_the_canopy(climate):
    # one day recomputed by hand from the documented chain: station wind (10 m, over grass) ->
    # blending height -> 1.5 h over the forest; FAO-56 eq. 4 there; eq. 3 with the cover's rs
    forest = BUILTIN_COVERS["forest"]
    day = climate.daily.iloc[[180]]
    one = stand_in_climate(day, LAT, ELEV, wind_height_m=10.0)
    got = forcing.cover_evaporation(one, forest)["dry_mm"].iloc[0]
    r = day.iloc[0]
    u30 = wind.wind_over_surface(r.wind_ms, 10.0, 30.0, 2.0 / 3.0 * 20.0, 0.123 * 20.0)
    ra = evaporation.aerodynamic_resistance(u30, 30.0, 20.0)
    doy = day.index.dayofyear[0]
    rn = (1 - 0.12) * r.rs_mj - radiation.net_longwave_radiation(
        r.tmax_c, r.tmin_c, r.ea_kpa, r.rs_mj, radiation.clear_sky_radiation(LAT, doy, ELEV)
    )
    expected = evaporation.penman_monteith(
        rn,
        0.0,
        0.5 * (r.tmax_c + r.tmin_c),
        meteo.mean_saturation_vapour_pressure(r.tmax_c, r.tmin_c),
        r.ea_kpa,
        meteo.atmospheric_pressure(ELEV),
        ra,
        forest.rs_s_per_m,
    )
    assert got == pytest.approx(max(expected, 0.0), rel=1e-12)


def test_crop_follows_its_kcb_calendar(climate):
    crop = BUILTIN_COVERS["crop"]
    frame = forcing.cover_evaporation(climate, crop)
    et0 = forcing.reference_et(climate).clip(lower=0).to_numpy()
    doy = climate.daily.index.dayofyear.to_numpy()
    kcb, in_season = crop.kc_calendar.kc(doy, latitude_deg=LAT)
    assert in_season.any()
    assert (~in_season).any()
    # FAO-56 eq. 69: transpiration Kcb ETo in season, none outside it (no canopy)
    np.testing.assert_allclose(frame["dry_mm"][in_season], (kcb * et0)[in_season], atol=1e-12)
    assert (frame["dry_mm"][~in_season] == 0).all()
    assert (frame["wet_mm"][~in_season] == 0).all()
    # bare soil outside the season: Kc,max ETo with h = 0, Kc,max = 1.2 + 0 or Kcb + 0.05
    # (FAO-56 eq. 72), so 1.2 ETo
    np.testing.assert_allclose(frame["soil_mm"][~in_season], 1.2 * et0[~in_season], atol=1e-12)
    # leaf area follows the season: 0 outside it, the cover's LAI in mid-season (our rule)
    lai = crop.leaf_area_index(doy, LAT)
    assert (lai[~in_season] == 0).all()
    assert lai.max() == pytest.approx(crop.lai)
    # passing a precomputed ETo gives the same frame
    pd.testing.assert_frame_equal(
        frame, forcing.cover_evaporation(climate, crop, et0_mm=forcing.reference_et(climate))
    )


def test_open_water_rates(climate):
    water = BUILTIN_COVERS["water"]
    frame = forcing.cover_evaporation(climate, water)
    d = climate.daily
    expected, _, _ = open_water.open_water_evaporation(
        d["tmax_c"].to_numpy(),
        d["tmin_c"].to_numpy(),
        d["ea_kpa"].to_numpy(),
        d["rs_mj"].to_numpy(),
        wind.wind_speed_at_2m(d["wind_ms"].to_numpy(), 10.0),  # FAO-56 eq. 47, not moved up
        d.index.dayofyear.to_numpy(),
        LAT,
        ELEV,
        depth_m=water.water_depth_m,
        albedo=0.08,
    )
    np.testing.assert_allclose(frame["dry_mm"], expected.clip(0), atol=1e-12)
    assert (frame["dry_mm"] == frame["wet_mm"]).all()
    assert (frame["soil_mm"] == 0).all()


def test_missing_column_is_a_clear_error():
    clim = stand_in_climate(_daily(30).drop(columns=["ea_kpa"]), LAT, ELEV)
    with pytest.raises(ClimateFileError, match="ea_kpa"):
        forcing.reference_et(clim)


def test_negative_rates_are_clipped_to_zero():
    # polar night, humid and cold: negative net radiation gives dew (negative PM), reported as 0
    index = pd.date_range("2021-12-15", periods=5, freq="D", name="date")
    daily = pd.DataFrame(
        {
            "rain_mm": 0.0,
            "tmax_c": -20.0,
            "tmin_c": -25.0,
            "ea_kpa": meteo.saturation_vapour_pressure(-25.0),
            "wind_ms": 1.0,
            "rs_mj": 0.0,
        },
        index=index,
    )
    clim = stand_in_climate(daily, 75.0, 10.0)
    assert (forcing.reference_et(clim) < 0).all()
    frame = forcing.cover_evaporation(clim, BUILTIN_COVERS["pasture"])
    assert (frame == 0).all().all()


@pytest.mark.parametrize("method", ["fao56", "asce-short", "asce-tall"])
def test_compiled_and_numpy_paths_of_reference_et_agree(climate, monkeypatch, method):
    # the path only picks the implementation, never the answer (design property)
    monkeypatch.setattr(forcing, "_compiled_path", lambda n_days: False)
    numpy_path = forcing.reference_et(climate, method)
    monkeypatch.setattr(forcing, "_compiled_path", lambda n_days: True)
    compiled = forcing.reference_et(climate, method)
    np.testing.assert_allclose(compiled.to_numpy(), numpy_path.to_numpy(), rtol=0, atol=1e-9)
    pd.testing.assert_index_equal(compiled.index, numpy_path.index)


def _paths_of(climate, cover, monkeypatch):
    """cover_evaporation through the numpy chain and through the compiled kernel."""
    monkeypatch.setattr(forcing, "_compiled_path", lambda n_days: False)
    numpy_path = forcing.cover_evaporation(climate, cover)
    monkeypatch.setattr(forcing, "_compiled_path", lambda n_days: True)
    compiled = forcing.cover_evaporation(climate, cover)
    return numpy_path, compiled


@pytest.mark.parametrize(
    "cover",
    [
        *BUILTIN_COVERS.values(),
        derive_cover("tall-open", "forest", {"height_m": 45.0, "rs_s_per_m": 400.0}),
        derive_cover("shrub", "forest", {"height_m": 1.5, "albedo": 0.2, "rs_s_per_m": 0.0}),
        derive_cover("short-grass", "pasture", {"height_m": 0.05, "rs_s_per_m": 5000.0}),
    ],
    ids=lambda c: c.name,
)
@pytest.mark.parametrize(
    ("lat", "elev", "wind_height"), [(47.0, 300.0, 10.0), (-70.0, 2500.0, 2.0)]
)
def test_compiled_and_numpy_paths_of_cover_evaporation_agree(
    monkeypatch, cover, lat, elev, wind_height
):
    # the fused dry/wet canopy kernel implements the same FAO-56 eqs. 3, 4, 37-40 as the numpy
    # chain (design property); calm days, a missing day and polar night included
    daily = _daily(n_days=1500, seed=7, start="1967-02-01")
    daily.iloc[10, daily.columns.get_loc("wind_ms")] = 0.0
    daily.iloc[20, daily.columns.get_loc("tmax_c")] = np.nan
    clim = stand_in_climate(daily, lat, elev, wind_height_m=wind_height)
    numpy_path, compiled = _paths_of(clim, cover, monkeypatch)
    pd.testing.assert_index_equal(compiled.index, numpy_path.index)
    assert list(compiled.columns) == list(numpy_path.columns)
    np.testing.assert_allclose(compiled.to_numpy(), numpy_path.to_numpy(), rtol=0, atol=1e-9)
    assert compiled["dry_mm"].isna().iloc[20] == numpy_path["dry_mm"].isna().iloc[20]


def test_compiled_canopy_rates_fall_back_to_exact_exp(monkeypatch):
    # temperatures far outside any climate take math.exp in the kernel: still the numpy numbers
    daily = _daily(n_days=30, seed=2)
    daily.iloc[3, daily.columns.get_loc("tmin_c")] = -160.0
    daily.iloc[3, daily.columns.get_loc("tmax_c")] = -150.0
    clim = stand_in_climate(daily, LAT, ELEV)
    numpy_path, compiled = _paths_of(clim, BUILTIN_COVERS["forest"], monkeypatch)
    np.testing.assert_allclose(compiled.to_numpy(), numpy_path.to_numpy(), rtol=1e-12, atol=1e-9)


def test_cover_evaporation_columns_are_contiguous_float64(climate):
    # the engine reads each rate as one column: the frame holds one Fortran-ordered block
    frame = forcing.cover_evaporation(climate, BUILTIN_COVERS["pasture"])
    assert (frame.dtypes == np.float64).all()
    assert frame["dry_mm"].to_numpy().flags.c_contiguous


@pytest.mark.parametrize("name", ["forest", "pasture"])
def test_compiled_cover_rates_take_a_given_et0_as_the_numpy_chain_does(monkeypatch, name):
    # ETo computed inside the one-pass kernel or passed in: the same three rates (FAO-56 eqs.
    # 6, 71, 72 in both paths; design property), to 1e-9 mm/d
    clim = stand_in_climate(_daily(n_days=800, seed=11), LAT, ELEV)
    et0 = forcing.reference_et(clim)
    monkeypatch.setattr(forcing, "_compiled_path", lambda n_days: False)
    numpy_path = forcing.cover_evaporation(clim, BUILTIN_COVERS[name], et0_mm=et0)
    monkeypatch.setattr(forcing, "_compiled_path", lambda n_days: True)
    given = forcing.cover_evaporation(clim, BUILTIN_COVERS[name], et0_mm=et0)
    inside = forcing.cover_evaporation(clim, BUILTIN_COVERS[name])
    np.testing.assert_allclose(given.to_numpy(), numpy_path.to_numpy(), rtol=0, atol=1e-9)
    np.testing.assert_allclose(inside.to_numpy(), given.to_numpy(), rtol=0, atol=1e-9)
    assert (given["soil_mm"] > 0).any()
