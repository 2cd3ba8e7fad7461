"""The ``coveryield climate`` command: summary and exit 0 on a good file; one message, exit 2 and
no traceback on a bad one; warnings as plain lines on stderr."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from coveryield.cli import main

REPO = Path(__file__).resolve().parents[2]
ARGS = ["--lat", "45", "--elev", "200"]


@pytest.fixture
def two_year_file(tmp_path) -> Path:
    """Two invented years: 2 mm of rain every day, a mild seasonal temperature cycle."""
    days = pd.date_range("2019-01-01", "2020-12-31")
    season = 12.0 + 8.0 * np.sin(2 * np.pi * (days.dayofyear.to_numpy() - 110) / 365)
    frame = pd.DataFrame({"date": days.strftime("%Y-%m-%d"), "rain_mm": 2.0,
                          "tmax_c": np.round(season + 6, 1), "tmin_c": np.round(season - 4, 1),
                          "tdew_c": np.round(season - 6, 1), "wind_ms": 2.5, "sun_hours": 5.0})
    frame.loc[100, "tmax_c"] = np.nan  # one day to interpolate
    path = tmp_path / "station.csv"
    frame.to_csv(path, index=False)
    return path


def test_good_file_prints_check_and_summary(two_year_file, capsys):
    assert main(["climate", str(two_year_file), *ARGS]) == 0
    out, err = capsys.readouterr()
    assert out.startswith(f"check: OK ({two_year_file})")
    assert "period: 2019-01-01 to 2020-12-31 (731 days, 2.00 years)" in out
    assert "tmax_c   linear interpolation" in out
    assert "mean annual rain: 730 mm/yr" in out  # 2 mm x 731 d / 2.001 yr
    assert "mean annual reference evaporation (FAO-56 Penman-Monteith):" in out
    assert "aridity ratio ET0/P:" in out
    assert err == ""


def test_assumptions_are_plain_warning_lines_on_stderr(tmp_path, capsys):
    path = tmp_path / "bare.csv"
    path.write_text("date,rain_mm,tmax_c,tmin_c\n2021-07-01,0,25,12\n2021-07-02,3,24,13\n",
                    encoding="utf-8")
    assert main(["climate", str(path), *ARGS, "--coastal"]) == 0
    out, err = capsys.readouterr()
    lines = err.splitlines()
    assert len(lines) == 3
    assert all(line.startswith("warning: ") for line in lines)
    assert "ClimateAssumptionWarning" not in err
    assert "warnings.warn" not in err
    assert "krs = 0.19" in err  # --coastal
    assert "FAO-56 eq. 48" in out  # assumptions also listed with the check


def test_bad_file_exits_2_with_one_message(tmp_path, capsys):
    path = tmp_path / "bad.csv"
    path.write_text("date,rain_mm,tmax_c,tmin_c\n2021-07-01,0,25,12\n2021-07-03,-1,24,13\n",
                    encoding="utf-8")
    assert main(["climate", str(path), *ARGS]) == 2
    out, err = capsys.readouterr()
    assert out == ""
    assert err.startswith(f"coveryield climate: error: {path}: 2 problems")
    assert "missing days 2021-07-02" in err
    assert "rain_mm = -1 is negative" in err
    assert "Traceback" not in err


def test_long_gap_options_reach_the_reader(tmp_path, capsys):
    path = tmp_path / "gap.csv"
    rows = [f"2021-07-{d:02d},0,{'' if d in (3, 4) else 25},12,9,2,8" for d in range(1, 8)]
    path.write_text("date,rain_mm,tmax_c,tmin_c,tdew_c,wind_ms,sun_hours\n"
                    + "\n".join(rows) + "\n", encoding="utf-8")
    assert main(["climate", str(path), *ARGS, "--max-gap", "1"]) == 2
    assert "expected gaps of at most 1 days" in capsys.readouterr().err
    assert main(["climate", str(path), *ARGS, "--max-gap", "1", "--fill-long-gaps"]) == 0
    out, err = capsys.readouterr()
    assert "day-of-year climatology" in out
    assert err.startswith("warning: tmax_c: 2 day(s)")


def test_subprocess_shows_no_traceback(tmp_path):
    path = tmp_path / "bad.csv"
    path.write_text("date,rain_mm,tmax_c\n2021-07-01,abc,25\n", encoding="utf-8")
    env = {**os.environ, "PYTHONPATH": str(REPO)}
    done = subprocess.run([sys.executable, "-m", "coveryield.cli", "climate", str(path), *ARGS],
                          capture_output=True, text=True, cwd=REPO, env=env, timeout=300,
                          check=False)
    assert done.returncode == 2
    assert "Traceback" not in done.stderr
    assert done.stderr.startswith(f"coveryield climate: error: {path}: 2 problems")
    assert "'tmin_c' is missing" in done.stderr
    assert "rain_mm = 'abc'" in done.stderr
