"""A catalogue of malformed climate files, each answered by a message naming line/date, column,
value and what was expected; all problems of a file are reported at once."""

from __future__ import annotations

import pytest

from coveryield.climate import MAX_PROBLEMS_LISTED, climate_from_frame, read_climate
from coveryield.errors import ClimateFileError, CoveryieldError

# Brussels, FAO-56 (Allen et al. 1998) Example 18: 50°48'N, 100 m.
SITE = {"latitude_deg": 50.8, "elevation_m": 100.0}
HEADER = "date,rain_mm,tmax_c,tmin_c,rh_max_pct,rh_min_pct,wind_ms,sun_hours"
GOOD = "2021-07-0{d},0.0,21.5,12.3,84,63,2.8,9.2"


def rows(*changed: str, n: int = 4) -> str:
    """A header and n good days in July 2021, with some lines replaced ('3:...' = line 3)."""
    lines = [HEADER] + [GOOD.format(d=d) for d in range(1, n + 1)]
    for change in changed:
        number, text = change.split(":", 1)
        lines[int(number) - 1] = text
    return "\n".join(lines) + "\n"


# (id, file text, substrings the message must contain)
CATALOGUE = [
    ("empty file", "", ["the file is empty", "expected a header"]),
    ("only blank lines and comments", "# station 7\n\n", ["the file is empty"]),
    ("header only", HEADER + "\n", ["no data rows", "expected at least 1 day"]),
    ("missing required column",
     "date,rain_mm,tmax_c\n2021-07-01,0,20\n",
     ["header", "'tmin_c' is missing", "expected columns date, rain_mm, tmax_c, tmin_c"]),
    ("semicolon separated", "date;rain_mm;tmax_c;tmin_c\n2021-07-01;0;20;10\n",
     ["line 1", "separated by ';'", "expected comma-separated"]),
    ("duplicate column",
     "date,rain_mm,tmax_c,tmin_c,tmax_c\n2021-07-01,0,20,10,21\n",
     ["line 1", "'tmax_c' appears twice", "expected each column once"]),
    ("computed column given", "date,rain_mm,tmax_c,tmin_c,ea_kpa\n2021-07-01,0,20,10,1.2\n",
     ["'ea_kpa' is computed", "'vp_kpa'"]),
    ("date not ISO", rows("3:2021/07/02,0.0,21.5,12.3,84,63,2.8,9.2"),
     ["line 3", "date = '2021/07/02' is not a date", "expected YYYY-MM-DD"]),
    ("date not in the calendar", rows("3:2021-02-30,0.0,21.5,12.3,84,63,2.8,9.2"),
     ["line 3", "'2021-02-30' is not a calendar date", "expected YYYY-MM-DD"]),
    ("duplicate date", rows("4:2021-07-02,0.0,21.5,12.3,84,63,2.8,9.2"),
     ["line 4 (2021-07-02)", "date 2021-07-02 repeats line 3", "expected one row per day"]),
    ("dates out of order", rows("3:2021-07-03,0.0,21.5,12.3,84,63,2.8,9.2",
                                "4:2021-07-02,0.0,21.5,12.3,84,63,2.8,9.2"),
     ["line 4 (2021-07-02)", "is earlier than 2021-07-03 on line 3",
      "expected dates in increasing order"]),
    ("missing days", rows("4:2021-07-06,0.0,21.5,12.3,84,63,2.8,9.2", n=3),
     ["line 3 (2021-07-02)", "missing days 2021-07-03 to 2021-07-05 (3 days)",
      "expected one row per day"]),
    ("not a number", rows("3:2021-07-02,0.0,abc,12.3,84,63,2.8,9.2"),
     ["line 3 (2021-07-02)", "tmax_c = 'abc' is not a number", "expected a number in °C"]),
    ("decimal comma", rows('3:2021-07-02,"1,5",21.5,12.3,84,63,2.8,9.2'),
     ["line 3 (2021-07-02)", "rain_mm = '1,5' is not a number", "expected a number in mm"]),
    ("wrong number of fields", rows("3:2021-07-02,0.0,21.5,12.3,84,63"),
     ["line 3", "6 fields", "expected 8 as in the header"]),
    ("tmin above tmax", rows("3:2021-07-02,0.0,11.0,12.3,84,63,2.8,9.2"),
     ["line 3 (2021-07-02)", "tmin_c = 12.3 is above tmax_c = 11.0",
      "expected tmin_c <= tmax_c"]),
    ("temperature implausible", rows("2:2021-07-01,0.0,75,12.3,84,63,2.8,9.2"),
     ["line 2 (2021-07-01)", "tmax_c = 75", "expected -60...60 °C"]),
    ("temperature sentinel", rows("2:2021-07-01,0.0,21.5,-99.9,84,63,2.8,9.2"),
     ["line 2 (2021-07-01)", "tmin_c = -99.9", "expected -60...60 °C"]),
    ("relative humidity above 100", rows("5:2021-07-04,0.0,21.5,12.3,104,63,2.8,9.2"),
     ["line 5 (2021-07-04)", "rh_max_pct = 104", "expected 0...100 %"]),
    ("rh min above rh max", rows("5:2021-07-04,0.0,21.5,12.3,60,63,2.8,9.2"),
     ["line 5 (2021-07-04)", "rh_min_pct = 63 is above rh_max_pct = 60",
      "expected rh_min_pct <= rh_max_pct"]),
    ("negative rain", rows("2:2021-07-01,-2.5,21.5,12.3,84,63,2.8,9.2"),
     ["line 2 (2021-07-01)", "rain_mm = -2.5 is negative", "expected 0...2000 mm"]),
    ("negative wind", rows("2:2021-07-01,0,21.5,12.3,84,63,-1,9.2"),
     ["line 2 (2021-07-01)", "wind_ms = -1 is negative", "expected 0...60 m/s"]),
    ("negative sunshine", rows("2:2021-07-01,0,21.5,12.3,84,63,2.8,-3"),
     ["line 2 (2021-07-01)", "sun_hours = -3 is negative", "expected 0...24 h"]),
    # FAO-56 Example 18: N = 16.1 h at Brussels on 6 July (J = 187).
    ("sunshine longer than the day", rows("5:2021-07-04,0,21.5,12.3,84,63,2.8,17.5"),
     ["line 5 (2021-07-04)", "sun_hours = 17.5 is longer than the day", "16.1 h",
      "expected at most the day length"]),
    ("rain missing", rows("3:2021-07-02,,21.5,12.3,84,63,2.8,9.2",
                          "4:2021-07-03, ,21.5,12.3,84,63,2.8,9.2"),
     ["rain_mm is empty from line 3 (2021-07-02) to line 4 (2021-07-03) (2 days)",
      "rain is never assumed", "neighbouring gauge"]),
    ("long temperature gap", rows(*[f"{k}:2021-07-0{k - 1},0,,12.3,84,63,2.8,9.2"
                                    for k in range(3, 8)], "8:2021-07-07,0,21,12,84,63,2.8,9",
                                  n=7),
     ["tmax_c empty from line 3 (2021-07-02) to line 7 (2021-07-06) (5 days)",
      "expected gaps of at most 3 days", "--fill-long-gaps"]),
]


@pytest.mark.parametrize(("text", "expected"), [(t, e) for _, t, e in CATALOGUE],
                         ids=[name for name, _, _ in CATALOGUE])
def test_malformed_file_is_answered_by_the_right_message(write_csv, text, expected):
    path = write_csv(text)
    with pytest.raises(ClimateFileError) as info:
        read_climate(path, **SITE)
    message = str(info.value)
    assert message.startswith(str(path))
    for part in expected:
        assert part in message, f"{part!r} not in:\n{message}"


def test_catalogue_is_large_enough():
    assert len(CATALOGUE) >= 15


def test_missing_file_names_the_path(tmp_path):
    path = tmp_path / "nowhere.csv"
    with pytest.raises(ClimateFileError, match=r"nowhere\.csv: file not found"):
        read_climate(path, **SITE)


def test_folder_instead_of_file(tmp_path):
    with pytest.raises(ClimateFileError, match="is a folder"):
        read_climate(tmp_path, **SITE)


def test_not_utf8_text(tmp_path):
    path = tmp_path / "binary.csv"
    path.write_bytes(b"date,rain_mm\n\xff\xfe\x00\x81")
    with pytest.raises(ClimateFileError, match="is not UTF-8 text"):
        read_climate(path, **SITE)


def test_solar_radiation_far_above_clear_sky_is_refused(write_csv):
    # FAO-56 Example 18: Rso = 30.90 MJ m-2 d-1 at Brussels on 6 July (J = 187), so
    # 1.1 Rso = 34.0; 33 is accepted, 35 is refused.
    header = "date,rain_mm,tmax_c,tmin_c,rh_max_pct,rh_min_pct,wind_ms,solar_mj"
    ok = write_csv(f"{header}\n2021-07-06,0,21.5,12.3,84,63,2.8,33\n", "ok.csv")
    assert read_climate(ok, **SITE).daily["rs_mj"].iloc[0] == 33.0
    bad = write_csv(f"{header}\n2021-07-06,0,21.5,12.3,84,63,2.8,35\n", "bad.csv")
    with pytest.raises(ClimateFileError) as info:
        read_climate(bad, **SITE)
    message = str(info.value)
    assert "line 2 (2021-07-06): solar_mj = 35 is far above clear-sky radiation" in message
    assert "Rso = 30.9" in message


def test_sunshine_day_length_matches_fao56_example9(write_csv):
    # FAO-56 Example 9: N = 11.7 h at 20°S on 3 September (J = 246).
    header = "date,rain_mm,tmax_c,tmin_c,tdew_c,wind_ms,sun_hours"
    ok = write_csv(f"{header}\n2021-09-03,0,25,15,10,2,11.7\n", "ok.csv")
    read_climate(ok, latitude_deg=-20.0, elevation_m=0.0)
    bad = write_csv(f"{header}\n2021-09-03,0,25,15,10,2,12.0\n", "bad.csv")
    with pytest.raises(ClimateFileError, match=r"11\.7 h at latitude -20°"):
        read_climate(bad, latitude_deg=-20.0, elevation_m=0.0)


def test_every_problem_is_reported_at_once(write_csv):
    path = write_csv(rows("2:2021-07-01,-1,21.5,12.3,84,63,2.8,9.2",
                          "3:2021-07-02,0,abc,12.3,84,63,2.8,9.2",
                          "5:2021-07-04,0,21.5,12.3,84,63,2.8,30"))
    with pytest.raises(ClimateFileError) as info:
        read_climate(path, **SITE)
    message = str(info.value)
    assert message.splitlines()[0] == f"{path}: 3 problems in the climate record:"
    assert "line 2 (2021-07-01): rain_mm = -1" in message
    assert "line 3 (2021-07-02): tmax_c = 'abc'" in message
    assert "line 5 (2021-07-04): sun_hours = 30" in message
    # listed in file order
    assert message.index("line 2") < message.index("line 3") < message.index("line 5")


def test_long_problem_list_is_capped(write_csv):
    lines = [HEADER] + [f"2021-07-{d:02d},-1,21.5,12.3,84,63,2.8,9.2" for d in range(1, 31)]
    path = write_csv("\n".join(lines) + "\n")
    with pytest.raises(ClimateFileError) as info:
        read_climate(path, **SITE)
    listed = [line for line in str(info.value).splitlines() if line.startswith("  - ")]
    assert len(listed) == MAX_PROBLEMS_LISTED
    assert str(info.value).splitlines()[-1] == f"  ... and {30 - MAX_PROBLEMS_LISTED} more"


def test_line_numbers_count_comment_lines(write_csv):
    path = write_csv("# station 7\n" + rows("3:2021-07-02,0.0,abc,12.3,84,63,2.8,9.2"))
    with pytest.raises(ClimateFileError, match=r"line 4 \(2021-07-02\): tmax_c = 'abc'"):
        read_climate(path, **SITE)


def test_site_out_of_range_is_a_user_error(write_csv):
    path = write_csv(rows())
    with pytest.raises(CoveryieldError, match=r"latitude_deg = 95 is outside -90\.\.\.90"):
        read_climate(path, latitude_deg=95, elevation_m=100)
    with pytest.raises(ClimateFileError, match="wind_height_m"):
        read_climate(path, latitude_deg=50, elevation_m=100, wind_height_m=0)
    with pytest.raises(ClimateFileError, match="max_gap_days"):
        read_climate(path, latitude_deg=50, elevation_m=100, max_gap_days=-1)


def test_frame_problems_name_rows():
    import pandas as pd

    frame = pd.DataFrame({"date": ["2021-07-01", "2021-07-02"], "rain_mm": [0.0, 1.0],
                          "tmax_c": [20.0, 9.0], "tmin_c": [10.0, 10.0]})
    with pytest.raises(ClimateFileError) as info:
        climate_from_frame(frame, source="test frame", **SITE)
    assert str(info.value).startswith("test frame:")
    assert "row 2 (2021-07-02): tmin_c = 10.0 is above tmax_c = 9.0" in str(info.value)
