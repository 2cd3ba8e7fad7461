"""Gap filling recorded in ``fills``, extra columns kept, and the zone adjustment."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from coveryield.climate import Climate, ClimateAssumptionWarning, Site, climate_from_frame
from coveryield.errors import ClimateFileError
from coveryield.physics.meteo import dewpoint_from_vapour_pressure, saturation_vapour_pressure

SITE = {"latitude_deg": 45.0, "elevation_m": 200.0}


def record(days: int = 10, start: str = "2021-07-01", **overrides) -> pd.DataFrame:
    """A complete synthetic record (invented weather) with every measured column."""
    index = pd.date_range(start, periods=days)
    t = np.arange(days, dtype=float)
    frame = pd.DataFrame({
        "date": index.strftime("%Y-%m-%d"),
        "rain_mm": np.where(t % 3 == 0, 4.0, 0.0),
        "tmax_c": 25.0 + t,
        "tmin_c": 12.0 + t / 2,
        "tdew_c": 9.0 + t / 4,
        "wind_ms": 2.0 + t / 10,
        "solar_mj": 20.0 + t / 5,
        "sun_hours": np.full(days, 9.0),
        "rh_mean_pct": np.full(days, 60.0),
    })
    for column, changes in overrides.items():
        for position, value in changes.items():
            frame.loc[position, column] = value
    return frame


def test_short_interior_gap_is_interpolated_and_listed():
    frame = record(tmax_c={3: np.nan, 4: np.nan})
    climate = climate_from_frame(frame, **SITE)
    assert climate.daily["tmax_c"].iloc[3:5].tolist() == pytest.approx([28.0, 29.0])
    fills = climate.fills
    assert fills["date"].dt.strftime("%Y-%m-%d").tolist() == ["2021-07-04", "2021-07-05"]
    assert set(fills["column"]) == {"tmax_c"}
    assert set(fills["method"]) == {"linear interpolation"}
    assert fills["value"].tolist() == pytest.approx([28.0, 29.0])
    assert "tmax_c: 2 day(s) filled by linear interpolation" in climate.notes


def test_gap_at_the_edge_takes_the_nearest_value():
    frame = record(wind_ms={0: np.nan, 9: np.nan})
    climate = climate_from_frame(frame, **SITE)
    assert climate.daily["wind_ms"].iloc[[0, -1]].tolist() == pytest.approx([2.1, 2.8])
    assert set(climate.fills["method"]) == {"nearest value (edge of record)"}


def test_per_day_fallback_to_a_lesser_form_is_listed():
    # tdew_c missing on one day: that day uses sun-free rh_mean_pct (FAO-56 eq. 19) instead.
    frame = record(tdew_c={5: np.nan}, solar_mj={6: np.nan})
    climate = climate_from_frame(frame, **SITE)
    methods = dict(zip(climate.fills["column"], climate.fills["method"], strict=False))
    assert methods["ea_kpa"] == "per-day fallback: from rh_mean_pct (FAO-56 eq. 19)"
    assert methods["rs_mj"] == "per-day fallback: from sun_hours (Angström, FAO-56 eq. 35)"
    es = (saturation_vapour_pressure(30.0) + saturation_vapour_pressure(14.5)) / 2  # eq. 12
    assert climate.daily["ea_kpa"].iloc[5] == pytest.approx(0.60 * es)  # FAO-56 eq. 19


def test_humidity_gap_with_no_form_that_day_is_interpolated():
    frame = record(tdew_c={5: np.nan}).drop(columns="rh_mean_pct")
    climate = climate_from_frame(frame, **SITE)
    ea = climate.daily["ea_kpa"]
    assert ea.iloc[5] == pytest.approx((ea.iloc[4] + ea.iloc[6]) / 2)
    assert climate.fills["method"].tolist() == ["linear interpolation"]


def test_max_gap_days_is_respected():
    frame = record(tmin_c={3: np.nan, 4: np.nan, 5: np.nan})
    with pytest.raises(ClimateFileError, match=r"tmin_c empty from row 4 .* \(3 days\)"):
        climate_from_frame(frame, max_gap_days=2, **SITE)
    assert len(climate_from_frame(frame, max_gap_days=3, **SITE).fills) == 3


def test_long_gap_filled_from_day_of_year_climatology_when_asked():
    # three invented years with the same seasonal cycle; a 20-day gap in the second year
    days = pd.date_range("2019-01-01", "2021-12-31")
    doy = days.dayofyear.to_numpy()
    seasonal = 15.0 + 10.0 * np.sin(2 * np.pi * (doy - 100) / 365)
    frame = pd.DataFrame({"date": days.strftime("%Y-%m-%d"), "rain_mm": 1.0,
                          "tmax_c": seasonal + 5, "tmin_c": seasonal - 5, "tdew_c": seasonal - 7,
                          "wind_ms": 2.0, "solar_mj": 8.0})
    gap = (days >= "2020-06-01") & (days < "2020-06-21")
    frame.loc[gap, "tmax_c"] = np.nan
    with pytest.raises(ClimateFileError, match="20 days"):
        climate_from_frame(frame, **SITE)
    with pytest.warns(ClimateAssumptionWarning, match="climatology"):
        climate = climate_from_frame(frame, fill_long_gaps=True, **SITE)
    filled = climate.daily.loc[gap, "tmax_c"].to_numpy()
    truth = (seasonal + 5)[gap]
    assert np.abs(filled - truth).max() < 0.5  # a ±15-day window smooths the peak a little
    assert (climate.fills["method"] == "day-of-year climatology").sum() == 20


def test_rain_is_never_filled_even_with_fill_long_gaps():
    frame = record(rain_mm={4: np.nan})
    with pytest.raises(ClimateFileError, match=r"row 5 \(2021-07-05\).*rain_mm is empty"):
        climate_from_frame(frame, fill_long_gaps=True, **SITE)


def test_fills_empty_with_fixed_columns_when_nothing_filled():
    climate = climate_from_frame(record(), **SITE)
    assert climate.fills.empty
    assert list(climate.fills.columns) == ["date", "column", "method", "value"]


def test_extra_columns_are_kept(write_csv):
    path = write_csv("date,rain_mm,tmax_c,tmin_c,tdew_c,wind_ms,solar_mj,pan_mm,observer\n"
                     "2021-07-01,0,25,12,9,2,20,5.5,Ana\n2021-07-02,1,26,13,10,2,21,,Ben\n")
    from coveryield.climate import read_climate

    climate = read_climate(path, **SITE)
    daily = climate.daily
    assert list(daily.columns) == ["rain_mm", "tmax_c", "tmin_c", "ea_kpa", "wind_ms", "rs_mj",
                                   "tdew_c", "solar_mj", "pan_mm", "observer"]
    assert daily["pan_mm"].iloc[0] == 5.5
    assert np.isnan(daily["pan_mm"].iloc[1])
    assert daily["observer"].tolist() == ["Ana", "Ben"]


# ----------------------------------------------------------------------------- adjusted()


@pytest.fixture
def station() -> Climate:
    return climate_from_frame(record(), **SITE, source="station.csv")


def test_adjusted_scales_rain_and_shifts_temperature_and_dew_point(station):
    zone = station.adjusted(rain_factor=1.2, temperature_offset_c=-1.5)
    before, after = station.daily, zone.daily
    assert after["rain_mm"].to_numpy() == pytest.approx(1.2 * before["rain_mm"].to_numpy())
    assert after["tmax_c"].to_numpy() == pytest.approx(before["tmax_c"].to_numpy() - 1.5)
    assert after["tmin_c"].to_numpy() == pytest.approx(before["tmin_c"].to_numpy() - 1.5)
    shift = (dewpoint_from_vapour_pressure(after["ea_kpa"])
             - dewpoint_from_vapour_pressure(before["ea_kpa"]))
    assert shift.to_numpy() == pytest.approx(np.full(len(shift), -1.5))
    pd.testing.assert_series_equal(after["rs_mj"], before["rs_mj"])
    pd.testing.assert_series_equal(after["wind_ms"], before["wind_ms"])
    assert len(zone.notes) == len(station.notes) + 1
    assert "adjusted" in zone.notes[-1]
    assert zone.site == station.site
    assert "station.csv" in zone.source
    assert before["rain_mm"].iloc[0] == 4.0  # the station itself is unchanged


def test_adjusted_identity_and_bad_arguments(station):
    assert station.adjusted() is station
    with pytest.raises(ClimateFileError, match=r"station\.csv: .*rain_factor = -0\.5"):
        station.adjusted(rain_factor=-0.5)
    with pytest.raises(ClimateFileError, match="temperature_offset_c"):
        station.adjusted(temperature_offset_c=float("nan"))


@settings(max_examples=30, deadline=None)
@given(factor=st.floats(0.1, 3.0), offset=st.floats(-5.0, 5.0))
def test_adjusted_round_trip(factor, offset):
    station = climate_from_frame(record(days=5), **SITE)
    back = station.adjusted(rain_factor=factor, temperature_offset_c=offset).adjusted(
        rain_factor=1 / factor, temperature_offset_c=-offset)
    cols = ["rain_mm", "tmax_c", "tmin_c", "ea_kpa"]
    np.testing.assert_allclose(back.daily[cols].to_numpy(), station.daily[cols].to_numpy(),
                               rtol=1e-9, atol=1e-9)


def test_properties(station):
    assert station.n_days == 10
    assert station.years == pytest.approx(10 / 365.25)
    assert station.mean_annual_rain_mm == pytest.approx(16.0 / (10 / 365.25))
    assert station.period[0] == pd.Timestamp("2021-07-01")


def test_site_checks_angstrom_sum():
    with pytest.raises(ClimateFileError, match="angstrom_a \\+ angstrom_b"):
        Site(45.0, 100.0, angstrom_a=0.5, angstrom_b=0.6)
