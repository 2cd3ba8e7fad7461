"""The invented demo data: plausible, internally consistent and reproducible from its seed."""

from __future__ import annotations

import importlib.util
from pathlib import Path

import numpy as np
import pandas as pd
import pyet
import pytest

from coveryield.plans import load_plan

DEMO = Path(__file__).resolve().parents[2] / "demo_data"
COLUMNS = ["date", "rain_mm", "tmax_c", "tmin_c", "rh_max_pct", "rh_min_pct", "wind_ms",
           "sun_hours"]


def load_generator():
    spec = importlib.util.spec_from_file_location("make_weather", DEMO / "make_weather.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    return module


@pytest.fixture(scope="module")
def climate() -> pd.DataFrame:
    frame = pd.read_csv(DEMO / "climate.csv")
    frame.index = pd.to_datetime(frame["date"])
    return frame


@pytest.fixture(scope="module")
def flow() -> pd.DataFrame:
    frame = pd.read_csv(DEMO / "observed_flow.csv")
    frame.index = pd.to_datetime(frame["date"])
    return frame


def test_files_are_small():
    for name in ("climate.csv", "observed_flow.csv"):
        assert (DEMO / name).stat().st_size < 1_000_000


def test_files_are_reproduced_by_the_seeded_generator(tmp_path):
    generator = load_generator()
    generator.write_demo_data(tmp_path)
    for name in ("climate.csv", "observed_flow.csv"):
        assert (tmp_path / name).read_bytes() == (DEMO / name).read_bytes(), name


def test_another_seed_gives_other_weather():
    generator = load_generator()
    one, _ = generator.make_weather(1)
    two, _ = generator.make_weather(2)
    assert not one["rain_mm"].equals(two["rain_mm"])


def test_thirty_complete_years(climate):
    assert list(climate.columns) == COLUMNS
    assert climate.index[0] == pd.Timestamp("1991-01-01")
    assert climate.index[-1] == pd.Timestamp("2020-12-31")
    assert (climate.index.to_series().diff().dropna() == pd.Timedelta(days=1)).all()
    assert not climate[COLUMNS[1:]].isna().any().any()
    # values are written with one decimal
    assert np.allclose(climate[COLUMNS[1:]] * 10, np.round(climate[COLUMNS[1:]] * 10))


def test_values_pass_sanity_checks(climate):
    assert (climate["rain_mm"] >= 0).all()
    assert (climate["tmin_c"] < climate["tmax_c"]).all()
    assert climate["tmax_c"].between(-10, 40).all()
    assert climate["tmin_c"].between(-15, 30).all()
    assert (climate["rh_min_pct"] > 0).all()
    assert (climate["rh_min_pct"] < climate["rh_max_pct"]).all()
    assert (climate["rh_max_pct"] <= 100).all()
    assert (climate["wind_ms"] > 0).all()
    assert (climate["wind_ms"] < 25).all()
    assert (climate["sun_hours"] >= 0).all()


def test_sunshine_never_exceeds_daylight(climate):
    # daylight hours by FAO-56 eq. 34, computed by pyet (test oracle)
    daylight_h = pyet.rad_utils.daylight_hours(climate.index, np.radians(-41.3))
    assert (climate["sun_hours"].to_numpy() <= np.asarray(daylight_h) + 1e-9).all()


def test_southern_hemisphere_seasons(climate):
    monthly = climate.groupby(climate.index.month)[["tmax_c", "tmin_c", "sun_hours"]].mean()
    assert monthly.loc[1, "tmax_c"] - monthly.loc[7, "tmax_c"] > 8  # warm January, cool July
    assert monthly.loc[1, "sun_hours"] > 1.5 * monthly.loc[7, "sun_hours"]
    rain = climate.groupby(climate.index.month)["rain_mm"].sum() / 30
    summer, winter = rain[[12, 1, 2]].sum(), rain[[6, 7, 8]].sum()
    assert winter > 1.5 * summer  # dry summers


def test_annual_rain_with_dry_and_wet_years(climate):
    annual = climate["rain_mm"].groupby(climate.index.year).sum()
    assert 1000 <= annual.mean() <= 1300
    assert annual.min() < 0.75 * annual.mean()
    assert annual.max() > 1.25 * annual.mean()


def test_wet_and_dry_spells(climate):
    wet = climate["rain_mm"] > 0
    before = wet.shift(1, fill_value=False)
    p_wet_after_wet = (wet & before).sum() / before.sum()
    p_wet_after_dry = (wet & ~before).sum() / (~before).sum()
    assert p_wet_after_wet > p_wet_after_dry + 0.2  # rain days cluster (Markov chain)


def test_wet_days_are_cooler_damper_and_duller(climate):
    wet = climate["rain_mm"] > 1
    anomaly = climate[COLUMNS[2:]] - climate[COLUMNS[2:]].groupby(climate.index.month).transform(
        "mean")
    assert anomaly.loc[wet, "tmax_c"].mean() < -0.5
    assert anomaly.loc[wet, "rh_min_pct"].mean() > 5
    assert anomaly.loc[wet, "sun_hours"].mean() < -1


def test_reference_evaporation_is_plausible(climate):
    # FAO-56 Penman-Monteith ET0 (eq. 6) computed by pyet (test oracle), Angstrom radiation from
    # sunshine hours; the demo aims at ~800-1000 mm a year.
    tmean = (climate["tmax_c"] + climate["tmin_c"]) / 2
    et0 = pyet.pm_fao56(tmean, climate["wind_ms"], tmax=climate["tmax_c"], tmin=climate["tmin_c"],
                        rhmax=climate["rh_max_pct"], rhmin=climate["rh_min_pct"], elevation=300,
                        lat=np.radians(-41.3), n=climate["sun_hours"])
    annual = et0.groupby(climate.index.year).sum()
    assert 800 <= annual.mean() <= 1000


def test_observed_flow_is_an_incomplete_plausible_record(climate, flow):
    assert list(flow.columns) == ["date", "flow_m3s"]
    assert flow.index.equals(climate.index)
    gaps = flow["flow_m3s"].isna()
    assert 10 < gaps.sum() < 0.05 * len(flow)
    assert (flow["flow_m3s"].dropna() > 0).all()
    runoff_mm_per_year = flow["flow_m3s"].mean() * 86400 / (48.0 * 1e3) * 365.25
    rain_mm_per_year = climate["rain_mm"].sum() / 30
    assert 0.2 < runoff_mm_per_year / rain_mm_per_year < 0.7
    monthly = flow["flow_m3s"].groupby(flow.index.month).mean()
    assert monthly[[6, 7, 8]].mean() > 3 * monthly[[1, 2, 3]].mean()


def test_plan_file_matches_the_generator():
    generator = load_generator()
    catchment = load_plan(DEMO / "plans.toml").catchment
    assert catchment.latitude_deg == generator.LATITUDE_DEG
    assert catchment.elevation_m == generator.ELEVATION_M
    assert catchment.area_km2 == generator.AREA_KM2
    assert catchment.wind_height_m == generator.WIND_HEIGHT_M
    assert catchment.climate == (DEMO / "climate.csv").resolve()
