"""Generate the invented demo weather and streamflow of the fictional Brindlewater Creek catchment.

Everything this script writes is invented. Brindlewater Creek is not a real place; the numbers
are drawn from a seeded random generator tuned to look like a rain-dominated, maritime,
mid-latitude southern-hemisphere valley (latitude -41.3 deg, station at 300 m, about 1,100 mm of
rain a year, wet winters and dry summers). The same seed always gives the same files.

Run it from the repository root::

    python demo_data/make_weather.py            # writes demo_data/climate.csv and observed_flow.csv
    python demo_data/make_weather.py --out /tmp/x --seed 7

The generator stands alone on purpose (numpy and pandas only, no coveryield import), so the demo
data does not change when the package changes.

How each variable is made
-------------------------
* Rain occurrence: a first-order two-state Markov chain. The chance of a wet day after a dry day
  (p01) and after a wet day (p11) follow a seasonal cycle, so winter has more and longer wet spells.
* Rain amount on a wet day: 0.2 mm plus a gamma variate (shape < 1, so many small falls and a few
  large storms), with a seasonal mean.
* Wet and dry years: a yearly wetness multiplier from an AR(1) process on its logarithm, blended
  smoothly from year to year, scales both how often and how much it rains.
* Temperature: seasonal cycles (warmest late January, coolest late July) plus correlated AR(1)
  anomalies; wet days have cooler maxima and milder minima.
* Humidity: a dewpoint a little below the minimum temperature (closer on wet days); RHmax and
  RHmin are the dewpoint's vapour pressure over the saturation vapour pressure at Tmin and Tmax,
  so RHmin < RHmax <= 100 by construction.
* Sunshine: a beta-distributed fraction of the astronomical daylight hours N (FAO-56 eq. 34),
  lower on wet days, so sunshine never exceeds N.
* Wind speed at 2 m above short grass: gamma distributed, windiest in spring, windier on wet days.
* Streamflow: a toy rainfall-runoff transformation (soil bucket with a seasonal loss feeding a
  fast, a slow and a very slow linear reservoir) with multiplicative noise and a few gaps. It is
  only meant to look like a gauged record for trying out calibration; it is not a model result.

References
----------
Allen, R. G., Pereira, L. S., Raes, D., & Smith, M. (1998). Crop evapotranspiration. FAO
Irrigation and Drainage Paper 56. Eqs. 11, 22, 24, 25 and 34 (used for humidity and daylight).
"""

from __future__ import annotations

import argparse
from pathlib import Path

import numpy as np
import pandas as pd

HERE = Path(__file__).resolve().parent

#: Invented catchment and station facts (must match demo_data/plans.toml).
LATITUDE_DEG = -41.3
ELEVATION_M = 300.0
AREA_KM2 = 48.0
WIND_HEIGHT_M = 2.0
SEED = 20240611
START, END = "1991-01-01", "2020-12-31"

DAYS_PER_YEAR = 365.25
JAN_PEAK_DOY = 25     # warmest time of year in the southern hemisphere (late January)
JUL_PEAK_DOY = 196    # wettest / coolest time of year (mid-July)


def seasonal(doy, mean, amplitude, peak_doy):
    """Annual cosine cycle with its maximum on ``peak_doy`` [same unit as mean]."""
    return mean + amplitude * np.cos(2.0 * np.pi * (np.asarray(doy) - peak_doy) / DAYS_PER_YEAR)


def daylight_hours(doy, latitude_deg):
    """Astronomical day length N [h] from FAO-56 eqs. 22, 24, 25 and 34."""
    phi = np.pi / 180.0 * latitude_deg                                   # eq. 22
    delta = 0.409 * np.sin(2.0 * np.pi * np.asarray(doy) / 365.0 - 1.39)  # eq. 24
    omega_s = np.arccos(np.clip(-np.tan(phi) * np.tan(delta), -1.0, 1.0))  # eq. 25
    return 24.0 / np.pi * omega_s                                         # eq. 34


def saturation_vapour_pressure(t_c):
    """Saturation vapour pressure [kPa] at air temperature ``t_c`` [°C], FAO-56 eq. 11."""
    return 0.6108 * np.exp(17.27 * t_c / (t_c + 237.3))  # eq. 11


def yearly_wetness(dates, rng, *, sd_log=0.17, phi=0.35):
    """Slowly varying wetness multiplier [-], mean about 1, one AR(1) value per year.

    The yearly values sit at mid-year and are interpolated linearly in between, so wet and dry
    years fade into each other instead of switching on 1 January.
    """
    years = np.arange(dates.year.min() - 1, dates.year.max() + 2)
    log_w = np.empty(years.size)
    log_w[0] = rng.normal(0.0, sd_log)
    innovation_sd = sd_log * np.sqrt(1.0 - phi**2)
    for i in range(1, years.size):
        log_w[i] = phi * log_w[i - 1] + rng.normal(0.0, innovation_sd)
    mid_year = pd.to_datetime([f"{y}-07-02" for y in years]).to_julian_date().to_numpy()
    log_daily = np.interp(dates.to_julian_date().to_numpy(), mid_year, log_w)
    return np.exp(log_daily - 0.5 * sd_log**2)


def rain_occurrence(doy, wetness, rng):
    """Wet-day flags from a two-state Markov chain with seasonal transition probabilities."""
    p01 = np.clip(seasonal(doy, 0.30, 0.09, JUL_PEAK_DOY) * wetness, 0.02, 0.95)
    p11 = np.clip(seasonal(doy, 0.63, 0.07, JUL_PEAK_DOY) * wetness**0.3, 0.05, 0.95)
    u = rng.random(doy.size)
    wet = np.zeros(doy.size, dtype=bool)
    previous = False
    for i in range(doy.size):
        previous = u[i] < (p11[i] if previous else p01[i])
        wet[i] = previous
    return wet


def rain_amounts(wet, doy, wetness, rng, *, shape=0.75):
    """Daily rain [mm]: 0 on dry days, 0.2 mm plus a gamma variate on wet days."""
    mean_mm = seasonal(doy, 7.6, 1.0, JUL_PEAK_DOY) * np.sqrt(wetness)
    amount = 0.2 + rng.gamma(shape, (mean_mm - 0.2) / shape)
    return np.where(wet, amount, 0.0)


def ar1_pair(n, rng, *, phi=0.65, sd=(2.1, 1.9), correlation=0.55):
    """Two correlated AR(1) anomaly series with stationary standard deviations ``sd`` [°C]."""
    cov = np.array([[1.0, correlation], [correlation, 1.0]])
    shocks = rng.multivariate_normal([0.0, 0.0], cov, size=n) * np.sqrt(1.0 - phi**2)
    out = np.empty((n, 2))
    out[0] = rng.multivariate_normal([0.0, 0.0], cov)
    for i in range(1, n):
        out[i] = phi * out[i - 1] + shocks[i]
    return out[:, 0] * sd[0], out[:, 1] * sd[1]


def temperatures(doy, wet, rng):
    """Daily maximum and minimum air temperature [°C], with tmin at least 1 °C below tmax."""
    anomaly_max, anomaly_min = ar1_pair(doy.size, rng)
    tmax = seasonal(doy, 15.0, 5.3, JAN_PEAK_DOY) + anomaly_max - 1.8 * wet
    tmin = seasonal(doy, 6.6, 3.9, JAN_PEAK_DOY + 10) + anomaly_min + 0.9 * wet
    return tmax, np.minimum(tmin, tmax - 1.0)


def humidity(tmax, tmin, wet, doy, rng):
    """Daily maximum and minimum relative humidity [%] from a dewpoint below tmin."""
    mean_depression_c = np.where(wet, 0.5, seasonal(doy, 1.9, 0.9, JAN_PEAK_DOY))
    tdew = tmin - rng.gamma(2.0, mean_depression_c / 2.0)
    e_dew = saturation_vapour_pressure(tdew)
    rh_max = 100.0 * e_dew / saturation_vapour_pressure(tmin)
    rh_min = 100.0 * e_dew / saturation_vapour_pressure(tmax)
    return rh_max, rh_min


def sunshine(doy, wet, rng, *, concentration=3.0):
    """Bright sunshine hours [h], a beta-distributed fraction of the daylight hours."""
    mean_fraction = np.where(wet, 0.20, seasonal(doy, 0.58, 0.07, JAN_PEAK_DOY))
    fraction = rng.beta(mean_fraction * concentration, (1.0 - mean_fraction) * concentration)
    return fraction * daylight_hours(doy, LATITUDE_DEG)


def wind_speed(doy, wet, rng, *, shape=3.5):
    """Daily mean wind speed at 2 m [m s-1], gamma distributed, windiest in spring (October)."""
    mean_ms = seasonal(doy, 2.7, 0.35, 288) * np.where(wet, 1.15, 1.0)
    return np.maximum(rng.gamma(shape, mean_ms / shape), 0.2)


def invented_streamflow(rain_mm, doy, rng, *, area_km2=AREA_KM2, bucket_mm=150.0,
                        quick_share=0.35, deep_share=0.1, quick_days=1.5, slow_days=30.0,
                        deep_days=400.0):
    """Toy daily streamflow [m3 s-1] from rain: bucket with seasonal loss, three linear stores.

    Not a hydrological model: a transformation that gives a record with plausible looking
    peaks, recessions and low summer flows, used as invented "observations".
    """
    loss_mm = seasonal(doy, 2.0, 1.3, JAN_PEAK_DOY)  # invented seasonal loss demand
    soil, quick, slow, deep = 0.4 * bucket_mm, 0.0, 8.0, 40.0  # a dry-ish summer start
    flow_mm = np.empty(rain_mm.size)
    for i, rain in enumerate(rain_mm):
        soil = soil + rain - loss_mm[i] * soil / bucket_mm
        excess = max(soil - bucket_mm, 0.0)
        soil -= excess
        quick += quick_share * excess
        deep += deep_share * excess
        slow += (1.0 - quick_share - deep_share) * excess
        out_quick, out_slow, out_deep = quick / quick_days, slow / slow_days, deep / deep_days
        quick -= out_quick
        slow -= out_slow
        deep -= out_deep
        flow_mm[i] = out_quick + out_slow + out_deep
    noise = np.exp(rng.normal(0.0, 0.08, rain_mm.size))
    return flow_mm * noise * area_km2 * 1e3 / 86400.0  # mm/d over km2 -> m3/s


def punch_gaps(values, rng, *, n_long=4, n_single=12):
    """Blank a few runs of days (a gauge outage) and some single days [same unit as values]."""
    values = values.copy()
    for _ in range(n_long):
        length = int(rng.integers(3, 45))
        start = int(rng.integers(0, values.size - length))
        values[start:start + length] = np.nan
    values[rng.choice(values.size, n_single, replace=False)] = np.nan
    return values


def make_weather(seed: int = SEED) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Build the invented climate and streamflow tables (rounded as written to CSV)."""
    rng = np.random.default_rng(seed)
    dates = pd.date_range(START, END, freq="D")
    doy = dates.dayofyear.to_numpy()
    wetness = yearly_wetness(dates, rng)
    wet = rain_occurrence(doy, wetness, rng)
    rain = np.round(rain_amounts(wet, doy, wetness, rng), 1)
    tmax, tmin = temperatures(doy, wet, rng)
    tmax, tmin = np.round(tmax, 1), np.round(tmin, 1)
    rh_max, rh_min = humidity(tmax, tmin, wet, doy, rng)
    rh_max = np.minimum(np.round(rh_max, 1), 100.0)
    rh_min = np.minimum(np.round(rh_min, 1), rh_max - 1.0)
    # floor, not round, so the rounded value never exceeds the daylight hours
    sun = np.floor(sunshine(doy, wet, rng) * 10.0) / 10.0
    wind = np.round(wind_speed(doy, wet, rng), 1)
    climate = pd.DataFrame({
        "date": dates.strftime("%Y-%m-%d"), "rain_mm": rain, "tmax_c": tmax, "tmin_c": tmin,
        "rh_max_pct": rh_max, "rh_min_pct": rh_min, "wind_ms": wind, "sun_hours": sun,
    })
    flow = punch_gaps(np.round(invented_streamflow(rain, doy, rng), 3), rng)
    observed = pd.DataFrame({"date": climate["date"], "flow_m3s": flow})
    return climate, observed


def write_demo_data(out_dir: Path = HERE, seed: int = SEED) -> tuple[Path, Path]:
    """Write ``climate.csv`` and ``observed_flow.csv`` into ``out_dir``; return their paths."""
    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    climate, observed = make_weather(seed)
    climate_path, flow_path = out_dir / "climate.csv", out_dir / "observed_flow.csv"
    climate.to_csv(climate_path, index=False, float_format="%.1f", lineterminator="\n")
    observed.to_csv(flow_path, index=False, float_format="%.3f", na_rep="", lineterminator="\n")
    return climate_path, flow_path


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", type=Path, default=HERE, help="output folder (default: demo_data)")
    parser.add_argument("--seed", type=int, default=SEED, help=f"random seed (default {SEED})")
    args = parser.parse_args(argv)
    for path in write_demo_data(args.out, args.seed):
        print(f"wrote {path}")


if __name__ == "__main__":
    main()
