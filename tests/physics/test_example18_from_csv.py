"""FAO-56 Example 18 end to end: a one-day CSV read by ``coveryield.read_climate`` (wind at 10 m,
sunshine hours, RH max/min), then ``coveryield.reference_et`` through the compiled kernel.

Source: Allen et al. (1998), FAO-56, Example 18 (Brussels, 50°48'N, 100 m, 6 July): ETo = 3.9 mm/d,
compared to +-0.05 as the example rounds its intermediates.
"""

from __future__ import annotations

import pytest

import coveryield

from .helpers import assert_printed

CSV = """date,rain_mm,tmax_c,tmin_c,rh_max_pct,rh_min_pct,wind_ms,sun_hours
2001-07-06,0.0,21.5,12.3,84,63,{wind},9.25
"""


def test_example_18_through_read_climate(tmp_path):
    path = tmp_path / "brussels.csv"
    path.write_text(CSV.format(wind=10.0 / 3.6), encoding="utf-8")  # 10 km/h at 10 m
    climate = coveryield.read_climate(
        path, latitude_deg=50.0 + 48.0 / 60.0, elevation_m=100.0, wind_height_m=10.0
    )
    day = climate.daily.iloc[0]
    assert_printed(day["ea_kpa"], "1.409")  # FAO-56 Example 18, eq. 17
    assert_printed(day["rs_mj"], "22.07")  # FAO-56 Example 18, eq. 35
    et0 = coveryield.reference_et(climate)
    assert et0.index[0].dayofyear == 187
    assert_printed(et0.iloc[0], "3.9")  # FAO-56 Example 18
    assert et0.iloc[0] == pytest.approx(3.9, abs=0.05)
