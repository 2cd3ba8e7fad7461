"""Helpers shared by the physics tests (no check values live here)."""

from __future__ import annotations

import types

import numpy as np
import pandas as pd


def assert_printed(value, printed: str, slack: float = 0.0):
    """Assert ``value`` rounds to ``printed`` (half a unit of its last digit, plus ``slack``)."""
    decimals = len(printed.split(".")[1]) if "." in printed else 0
    half_unit = 0.5 * 10.0 ** (-decimals)
    target = float(printed)
    assert abs(float(value) - target) <= half_unit + slack + 1e-12, (
        f"{value!r} does not round to {printed} (tolerance {half_unit + slack:g})"
    )


def random_days(n: int, seed: int = 20240601, latitude_limit: float = 60.0) -> dict:
    """Random but physically plausible daily weather at random sites.

    Temperatures -10..35 °C with a 2-20 °C daily range, dewpoint 0-15 °C below Tmin, wind
    0.3-8 m/s at 2 m, solar radiation 5-105 % of the clear-sky value.
    """
    from coveryield.physics import meteo, radiation

    rng = np.random.default_rng(seed)
    lat = rng.uniform(-latitude_limit, latitude_limit, n)
    doy = rng.integers(1, 367, n)
    elev = rng.uniform(0.0, 3000.0, n)
    tmin = rng.uniform(-10.0, 25.0, n)
    tmax = tmin + rng.uniform(2.0, 20.0, n)
    tdew = tmin - rng.uniform(0.0, 15.0, n)
    ea = meteo.saturation_vapour_pressure(tdew)
    rso = radiation.clear_sky_radiation(lat, doy, elev)
    rs = rso * rng.uniform(0.05, 1.05, n)
    u2 = rng.uniform(0.3, 8.0, n)
    return dict(lat=lat, doy=doy, elev=elev, tmin=tmin, tmax=tmax, ea=ea, rs=rs, rso=rso, u2=u2)


def stand_in_climate(
    daily: pd.DataFrame, latitude_deg: float, elevation_m: float, wind_height_m: float = 2.0
):
    """A tiny stand-in for ``coveryield.climate`` records: ``.daily`` and ``.site`` only."""
    site = types.SimpleNamespace(
        latitude_deg=latitude_deg, elevation_m=elevation_m, wind_height_m=wind_height_m
    )
    return types.SimpleNamespace(daily=daily, site=site)
