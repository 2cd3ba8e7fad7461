"""The compiled reference-ET kernel against the plain-numpy reference path (same equations)."""

from __future__ import annotations

import numpy as np
import pytest

from coveryield.physics import evaporation, fused, radiation
from coveryield.physics.wind import wind_speed_at_2m

from .helpers import random_days

METHODS = ["fao56", "asce-short", "asce-tall"]


@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize(
    ("lat_deg", "elevation_m"),
    [(-45.0, 20.0), (0.0, 2500.0), (51.5, 150.0), (78.0, 10.0), (-89.0, 2800.0)],
)
def test_kernel_matches_numpy_path(method, lat_deg, elevation_m):
    # The fused kernel and evaporation.fao56_reference_evaporation implement the same FAO-56 /
    # ASCE-EWRI equations; they must agree to 1e-9 mm/d, including polar day and night.
    d = random_days(3000, seed=int(abs(lat_deg) * 10 + elevation_m))
    doy = np.arange(3000) % 366 + 1
    rso = radiation.clear_sky_radiation(lat_deg, doy, elevation_m)
    rs = rso * np.random.default_rng(3).uniform(0.05, 1.1, 3000)
    expected = evaporation.fao56_reference_evaporation(
        d["tmax"], d["tmin"], d["ea"], rs, d["u2"], doy, lat_deg, elevation_m, method=method
    )
    got = fused.reference_et_fused(
        d["tmax"], d["tmin"], d["ea"], rs, d["u2"], doy, lat_deg, elevation_m, method
    )
    np.testing.assert_allclose(got, expected, rtol=0, atol=1e-9)


def test_radiation_table_matches_numpy():
    ra, rso = fused.radiation_tables(-33.9, 400.0)
    doy = np.arange(1, 367)
    np.testing.assert_allclose(
        ra, radiation.extraterrestrial_radiation(-33.9, doy), rtol=0, atol=1e-12
    )
    np.testing.assert_allclose(
        rso, radiation.clear_sky_radiation(-33.9, doy, 400.0), rtol=0, atol=1e-12
    )


def test_kernel_python_function_agrees_with_compiled():
    # numba's .py_func runs the kernel without the compiler: the same numbers on a small case
    d = random_days(40, seed=5)
    doy = d["doy"].astype(np.int64)
    args = (
        d["tmax"],
        d["tmin"],
        d["ea"],
        d["rs"],
        d["u2"],
        doy,
        40.0,
        300.0,
        900.0,
        0.34,
        4.903e-9,
        -np.inf,
        4098.0 * 0.6108,
        -np.inf,
    )
    np.testing.assert_allclose(
        fused.reference_et_kernel.py_func(*args),
        fused.reference_et_kernel(*args),
        rtol=0,
        atol=1e-12,
    )


def test_nan_inputs_give_nan_only_on_their_day():
    d = random_days(10, seed=9)
    tmax = d["tmax"].copy()
    rs = d["rs"].copy()
    tmax[2] = np.nan
    rs[5] = np.nan
    got = fused.reference_et_fused(tmax, d["tmin"], d["ea"], rs, d["u2"], d["doy"], 10.0, 0.0)
    assert np.isnan(got[[2, 5]]).all()
    assert np.isfinite(np.delete(got, [2, 5])).all()


def test_empty_input_gives_empty_output():
    empty = np.array([])
    assert fused.reference_et_fused(
        empty, empty, empty, empty, empty, empty.astype(int), 0.0, 0.0
    ).shape == (0,)


@pytest.mark.parametrize(("doy", "lat"), [([0, 10], 10.0), ([1, 367], 10.0), ([1, 2], 95.0)])
def test_out_of_domain_day_or_latitude_raises(doy, lat):
    ones = np.ones(2)
    with pytest.raises(ValueError, match="must lie in"):
        fused.reference_et_fused(
            ones * 20, ones * 10, ones, ones * 15, ones * 2, np.array(doy), lat, 0.0
        )


def test_unknown_method_and_length_mismatch_raise():
    ones = np.ones(2)
    with pytest.raises(ValueError, match="unknown reference-ET method"):
        fused.reference_et_fused(
            ones, ones, ones, ones, ones, [1, 2], 0.0, 0.0, method="hargreaves"
        )
    with pytest.raises(ValueError, match="differ in length"):
        fused.reference_et_fused(ones, ones, ones, ones, np.ones(3), [1, 2], 0.0, 0.0)


def test_polynomial_exp_matches_math_exp_over_its_range():
    # the vectorizable exp of the kernel against the C library exp (numpy), relative 1e-13
    x = np.linspace(fused.EXP_ARG_MIN, fused.EXP_ARG_MAX, 100_001)
    got = np.array([fused._exp_poly(v) for v in x[::97]])
    np.testing.assert_allclose(got, np.exp(x[::97]), rtol=1e-13, atol=0)


def test_days_outside_the_polynomial_range_fall_back_to_exact_exp():
    # temperatures far outside any climate (exponent beyond -16..8) are redone with math.exp and
    # still match the numpy path; the ordinary days around them are untouched
    d = random_days(8, seed=13)
    tmax, tmin = d["tmax"].copy(), d["tmin"].copy()
    tmin[1], tmax[1] = -160.0, -150.0  # exponent about -30
    tmin[4], tmax[4] = 290.0, 300.0  # exponent about +9.6
    expected = evaporation.fao56_reference_evaporation(
        tmax, tmin, d["ea"], d["rs"], d["u2"], d["doy"], 30.0, 0.0
    )
    got = fused.reference_et_fused(tmax, tmin, d["ea"], d["rs"], d["u2"], d["doy"], 30.0, 0.0)
    np.testing.assert_allclose(got, expected, rtol=1e-12, atol=1e-9)


# ---------------------------------------------------------------- day of year from int64 dates


def test_day_of_year_matches_python_datetime_over_eight_centuries():
    # Python's datetime.date uses the proleptic Gregorian calendar (Python documentation,
    # datetime module); the kernel's civil-calendar arithmetic must agree on every day,
    # before and after 1970, across the 1700/1800/1900 non-leap and 2000/2400 leap centuries
    import datetime

    first, last = datetime.date(1650, 1, 1), datetime.date(2450, 12, 31)
    days = np.arange(first.toordinal(), last.toordinal() + 1)
    expected = [datetime.date.fromordinal(int(d)).timetuple().tm_yday for d in days]
    dates = (days - datetime.date(1970, 1, 1).toordinal()).astype("datetime64[D]")
    np.testing.assert_array_equal(fused.day_of_year(dates), expected)


@pytest.mark.parametrize("unit", ["D", "h", "s", "ms", "us", "ns"])
def test_day_of_year_takes_any_unit_down_to_nanoseconds(unit):
    import datetime

    dates = np.array(
        ["1899-02-27", "1900-03-01", "2000-02-29", "2000-12-31", "2024-07-01"],
        dtype="datetime64[D]",
    )
    expected = [datetime.date.fromisoformat(str(d)).timetuple().tm_yday for d in dates]
    np.testing.assert_array_equal(fused.day_of_year(dates.astype(f"datetime64[{unit}]")), expected)


def test_day_of_year_of_gappy_unordered_and_midday_dates():
    # not one day apart: each date is converted on its own; times of day fall in their date
    import datetime

    text = ["2001-03-01T12:00", "1999-12-31T23:59", "2004-02-29T00:00", "1969-12-31T06:00"]
    dates = np.array(text, dtype="datetime64[m]")
    expected = [datetime.datetime.fromisoformat(t).timetuple().tm_yday for t in text]
    np.testing.assert_array_equal(fused.day_of_year(dates), expected)


@pytest.mark.parametrize(
    ("dates", "match"),
    [
        (np.array(["2001-01", "2001-02"], dtype="datetime64[M]"), "a day or finer"),
        (np.array(["2001-01-01", "NaT"], dtype="datetime64[D]"), "NaT"),
        (np.array([1.0, 2.0]), "datetime64"),
    ],
)
def test_unusable_dates_raise(dates, match):
    with pytest.raises(ValueError, match=match):
        fused.dates_as_counts(dates)


# ------------------------------------------------------- dated kernels against the numpy chain


def _record(n_days, start, lat_deg, elevation_m, seed):
    """Random plausible weather on consecutive dates from ``start`` (the tests' generator)."""
    d = random_days(n_days, seed=seed)
    dates = np.datetime64(start, "D") + np.arange(n_days)
    doy = fused.day_of_year(dates)
    rso = radiation.clear_sky_radiation(lat_deg, doy, elevation_m)
    rs = rso * np.random.default_rng(seed).uniform(0.05, 1.1, n_days)
    wind = d["u2"] * 1.3
    return d, dates, doy, rs, wind


@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize(
    ("lat_deg", "elevation_m", "start"),
    [
        (-45.0, 20.0, "1899-11-20"),
        (51.5, 150.0, "1995-06-01"),
        (78.0, 10.0, "2023-12-30"),
        (-89.0, 2800.0, "1700-01-01"),
    ],
)
def test_dated_reference_kernel_matches_numpy_path(method, lat_deg, elevation_m, start):
    # same equations as evaporation.fao56_reference_evaporation with eq. 47 for a 10 m wind;
    # agreement to 1e-9 mm/d across leap years, polar day and night, before and after 1970
    d, dates, doy, rs, wind = _record(4000, start, lat_deg, elevation_m, seed=11)
    factor = float(wind_speed_at_2m(1.0, 10.0))
    expected = evaporation.fao56_reference_evaporation(
        d["tmax"],
        d["tmin"],
        d["ea"],
        rs,
        wind_speed_at_2m(wind, 10.0),
        doy,
        lat_deg,
        elevation_m,
        method=method,
    )
    got = fused.reference_et_dated(
        d["tmax"],
        d["tmin"],
        d["ea"],
        rs,
        wind,
        factor,
        dates.astype("datetime64[ns]"),
        lat_deg,
        elevation_m,
        method,
    )
    np.testing.assert_allclose(got, expected, rtol=0, atol=1e-9)


def test_dated_reference_kernel_on_gappy_dates_matches_numpy_path():
    # a record with gaps of 1-40 days is taken day by day, not year by year
    d, _, _, rs, wind = _record(600, "2003-05-05", 35.0, 400.0, seed=3)
    gaps = np.random.default_rng(4).integers(1, 41, 600)
    dates = np.datetime64("1960-01-01") + np.cumsum(gaps)
    doy = fused.day_of_year(dates)
    expected = evaporation.fao56_reference_evaporation(
        d["tmax"], d["tmin"], d["ea"], rs, wind, doy, 35.0, 400.0
    )
    got = fused.reference_et_dated(
        d["tmax"], d["tmin"], d["ea"], rs, wind, 1.0, dates, 35.0, 400.0, "fao56"
    )
    np.testing.assert_allclose(got, expected, rtol=0, atol=1e-9)


def test_dated_reference_kernel_falls_back_to_exact_exp_and_keeps_nan():
    d, dates, doy, rs, wind = _record(10, "2010-01-01", 30.0, 0.0, seed=13)
    tmax, tmin = d["tmax"].copy(), d["tmin"].copy()
    tmin[1], tmax[1] = -160.0, -150.0  # exponent about -30
    tmin[4], tmax[4] = 290.0, 300.0  # exponent about +9.6
    tmax[7] = np.nan
    expected = evaporation.fao56_reference_evaporation(
        tmax, tmin, d["ea"], rs, wind, doy, 30.0, 0.0
    )
    got = fused.reference_et_dated(tmax, tmin, d["ea"], rs, wind, 1.0, dates, 30.0, 0.0, "fao56")
    assert np.isnan(got[7])
    assert np.isnan(expected[7])
    np.testing.assert_allclose(got, expected, rtol=1e-12, atol=1e-9)
