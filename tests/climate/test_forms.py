"""Good files in each humidity and radiation form give the right ea and rs, checked against
FAO-56 (Allen et al. 1998) worked examples; the standard columns are always complete."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from coveryield.climate import (
    STANDARD_COLUMNS,
    ClimateAssumptionWarning,
    climate_from_frame,
    read_climate,
)

# FAO-56 Example 5: Tmin 18 °C, Tmax 25 °C, RHmax 82 %, RHmin 54 % (RHmean 68 %).
EX5 = "2021-06-01,0,25,18"
EX5_SITE = {"latitude_deg": 10.0, "elevation_m": 0.0}


def read_one(write_csv, header_extra: str, row_extra: str, row=EX5, site=EX5_SITE, **kwargs):
    """Read a one-day file with wind and measured radiation plus the given extra columns."""
    header = "date,rain_mm,tmax_c,tmin_c,wind_ms,solar_mj" + header_extra
    path = write_csv(f"{header}\n{row},2,20{row_extra}\n")
    return read_climate(path, **site, **kwargs)


@pytest.mark.parametrize(
    ("header_extra", "row_extra", "ea_kpa", "tolerance"),
    [
        # FAO-56 Example 5, eq. 17: ea = 1.70 kPa
        (",rh_max_pct,rh_min_pct", ",82,54", 1.70, 0.005),
        # FAO-56 Example 5, eq. 18 (RHmax only): ea = 1.69 kPa
        (",rh_max_pct", ",82", 1.69, 0.005),
        # FAO-56 Example 5, eq. 19 (RHmean 68 %): ea = 1.78 kPa
        (",rh_mean_pct", ",68", 1.78, 0.005),
        # FAO-56 Example 6 (eq. 14): Tdew 14.8 °C gives ea = 1.68 kPa
        (",tdew_c", ",14.8", 1.68, 0.005),
        # measured vapour pressure passes through unchanged
        (",vp_kpa", ",1.234", 1.234, 1e-12),
    ],
    ids=["rh_max_min", "rh_max_only", "rh_mean", "tdew", "vp"],
)
def test_humidity_forms_match_fao56_example5_and_6(write_csv, header_extra, row_extra,
                                                    ea_kpa, tolerance):
    climate = read_one(write_csv, header_extra, row_extra)
    assert climate.daily["ea_kpa"].iloc[0] == pytest.approx(ea_kpa, abs=tolerance)
    assert climate.fills.empty


def test_best_humidity_form_wins(write_csv):
    # tdew_c ranks above the RH columns, so FAO-56 Example 6's 1.68 kPa is used, not eq. 17.
    climate = read_one(write_csv, ",rh_max_pct,rh_min_pct,tdew_c", ",82,54,14.8")
    assert climate.daily["ea_kpa"].iloc[0] == pytest.approx(1.68, abs=0.005)
    assert any("from tdew_c" in note for note in climate.notes)


def test_no_humidity_column_takes_dew_point_as_tmin_with_a_warning(write_csv):
    # FAO-56 Example 5: e°(18 °C) = 2.064 kPa; eq. 48 sets ea = e°(Tmin).
    with pytest.warns(ClimateAssumptionWarning, match="no humidity column"):
        climate = read_one(write_csv, "", "")
    assert climate.daily["ea_kpa"].iloc[0] == pytest.approx(2.064, abs=0.001)
    assert any("eq. 48" in note for note in climate.notes)
    assert climate.fills["method"].tolist() == ["dew point taken as tmin (FAO-56 eq. 48)"]


def test_brussels_fao56_example18_ea_and_rs_from_rh_and_sunshine(write_csv):
    # FAO-56 Example 18, Brussels 50°48'N, 100 m, 6 July (J = 187): Tmax 21.5, Tmin 12.3,
    # RHmax 84, RHmin 63, n = 9.25 h -> ea = 1.409 kPa (eq. 17), Rs = 22.07 MJ m-2 d-1 (eq. 35).
    path = write_csv("date,rain_mm,tmax_c,tmin_c,rh_max_pct,rh_min_pct,wind_ms,sun_hours\n"
                     "2021-07-06,0,21.5,12.3,84,63,2.78,9.25\n")
    climate = read_climate(path, latitude_deg=50.8, elevation_m=100.0, wind_height_m=10.0)
    day = climate.daily.iloc[0]
    assert day["ea_kpa"] == pytest.approx(1.409, abs=0.0005)
    assert day["rs_mj"] == pytest.approx(22.07, abs=0.01)
    assert day["wind_ms"] == 2.78
    assert climate.site.wind_height_m == 10.0


def test_rio_fao56_example10_rs_from_sunshine(write_csv):
    # FAO-56 Example 10, Rio de Janeiro 22°54'S, May (J = 135), n = 7.1 h: Rs = 14.5 MJ m-2 d-1.
    path = write_csv("date,rain_mm,tmax_c,tmin_c,tdew_c,wind_ms,sun_hours\n"
                     "2021-05-15,0,25.1,19.1,17,2,7.1\n")
    climate = read_climate(path, latitude_deg=-(22 + 54 / 60), elevation_m=0.0)
    assert climate.daily["rs_mj"].iloc[0] == pytest.approx(14.5, abs=0.05)


def test_angstrom_coefficients_of_the_site_are_used(write_csv):
    # FAO-56 eq. 35 at Rio, J = 135, n = 0: Rs = as Ra; Ra = 25.1 MJ m-2 d-1 (FAO-56 Example 10).
    path = write_csv("date,rain_mm,tmax_c,tmin_c,tdew_c,wind_ms,sun_hours\n"
                     "2021-05-15,0,25.1,19.1,17,2,0\n")
    climate = read_climate(path, latitude_deg=-(22 + 54 / 60), elevation_m=0.0,
                           angstrom_a=0.20, angstrom_b=0.55)
    assert climate.daily["rs_mj"].iloc[0] == pytest.approx(0.20 * 25.1, abs=0.02)


def lyon(write_csv, **kwargs):
    """FAO-56 Example 15: Lyon 45°43'N, 200 m, 15 July (J = 196), Tmax 26.6, Tmin 14.8."""
    path = write_csv("date,rain_mm,tmax_c,tmin_c,tdew_c,wind_ms\n"
                     "2021-07-15,0,26.6,14.8,12,2\n")
    with pytest.warns(ClimateAssumptionWarning, match="no radiation column"):
        return read_climate(path, latitude_deg=45 + 43 / 60, elevation_m=200.0, **kwargs)


def test_hargreaves_radiation_matches_fao56_example15(write_csv):
    # FAO-56 Example 15: Rs = 22.3 MJ m-2 d-1 with krs = 0.16.
    climate = lyon(write_csv)
    assert climate.daily["rs_mj"].iloc[0] == pytest.approx(22.3, abs=0.05)
    assert climate.site.krs == 0.16
    assert "Hargreaves" in climate.fills["method"].iloc[0]


def test_hargreaves_coastal_and_given_krs(write_csv):
    # FAO-56 eq. 50 is linear in krs: 0.19 coastal gives 22.3 * 0.19 / 0.16 (recomputed).
    coastal = lyon(write_csv, coastal=True).daily["rs_mj"].iloc[0]
    assert coastal == pytest.approx(22.29 * 0.19 / 0.16, abs=0.06)
    given = lyon(write_csv, coastal=True, krs=0.17).daily["rs_mj"].iloc[0]
    assert given == pytest.approx(coastal * 0.17 / 0.19, rel=1e-12)


def test_no_wind_column_assumes_2_ms_at_2_m(write_csv):
    path = write_csv("date,rain_mm,tmax_c,tmin_c,tdew_c,solar_mj\n"
                     "2021-07-15,0,26.6,14.8,12,20\n2021-07-16,0,26.6,14.8,12,20\n")
    with pytest.warns(ClimateAssumptionWarning, match="no wind_ms column"):
        climate = read_climate(path, latitude_deg=45.0, elevation_m=200.0, wind_height_m=10.0)
    assert climate.daily["wind_ms"].tolist() == [2.0, 2.0]
    assert climate.site.wind_height_m == 2.0  # the assumed wind counts as measured at 2 m
    assert (climate.fills["column"] == "wind_ms").sum() == 2


def test_standard_columns_complete_and_index_named_date(write_csv):
    path = write_csv("date,rain_mm,tmax_c,tmin_c,tdew_c,wind_ms,solar_mj\n"
                     "2021-07-15,0,26.6,14.8,12,2,\n2021-07-16,3,25,14,,2,20\n"
                     "2021-07-17,0,24,13,11,,21\n")
    climate = read_climate(path, latitude_deg=45.0, elevation_m=200.0)
    assert list(climate.daily.columns[:6]) == list(STANDARD_COLUMNS)
    assert climate.daily.index.name == "date"
    assert isinstance(climate.daily.index, pd.DatetimeIndex)
    assert not climate.daily[list(STANDARD_COLUMNS)].isna().any().any()


def test_frame_with_datetime_index_reads_like_a_file(write_csv):
    frame = pd.DataFrame(
        {"rain_mm": [0.0, 1.5], "tmax_c": [21.5, 22.0], "tmin_c": [12.3, 13.0],
         "rh_max_pct": [84.0, 80.0], "rh_min_pct": [63.0, 60.0], "wind_ms": [2.78, 3.0],
         "sun_hours": [9.25, 5.0]},
        index=pd.date_range("2021-07-06", periods=2, name="day"))
    from_frame = climate_from_frame(frame, latitude_deg=50.8, elevation_m=100.0)
    path = write_csv("date,rain_mm,tmax_c,tmin_c,rh_max_pct,rh_min_pct,wind_ms,sun_hours\n"
                     "2021-07-06,0,21.5,12.3,84,63,2.78,9.25\n2021-07-07,1.5,22,13,80,60,3,5\n")
    from_file = read_climate(path, latitude_deg=50.8, elevation_m=100.0)
    pd.testing.assert_frame_equal(from_frame.daily, from_file.daily)
    assert from_frame.source == "<frame>"


def test_whitespace_case_and_missing_markers(write_csv):
    path = write_csv("\ufeff Date , Rain_mm ,TMAX_C,tmin_c,tdew_c,wind_ms,solar_mj\n"
                     " 2021-07-15 , 0.5 , 26.6 ,14.8,NA,2,20\n"
                     "2021-07-16,0,25,14,11,2,20\n")
    climate = read_climate(path, latitude_deg=45.0, elevation_m=200.0)
    assert climate.daily["rain_mm"].tolist() == [0.5, 0.0]
    assert climate.daily["tmax_c"].iloc[0] == 26.6
    assert np.isnan(climate.daily["tdew_c"].iloc[0])  # the file's own column, kept as read
