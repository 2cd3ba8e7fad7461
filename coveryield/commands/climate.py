"""``coveryield climate FILE --lat DEG --elev M``: check a daily climate record and summarise it."""

from __future__ import annotations

import argparse
import sys
import warnings


def add_parser(subparsers) -> None:
    """Register the ``climate`` command."""
    parser = subparsers.add_parser(
        "climate",
        help="check a daily climate file and summarise it",
        description="Check a daily climate CSV (date, rain_mm, tmax_c, tmin_c and optional "
        "humidity, wind and radiation columns), list every problem at once, and summarise the "
        "record: period, filled values, mean annual rain and reference evaporation (FAO-56).",
    )
    parser.add_argument("file", metavar="FILE", help="daily climate file (CSV)")
    parser.add_argument("--lat", type=float, required=True, metavar="DEG",
                        help="station latitude in degrees, negative south")
    parser.add_argument("--elev", type=float, required=True, metavar="M",
                        help="station elevation in m above sea level")
    parser.add_argument("--wind-height", type=float, default=2.0, metavar="M",
                        help="height of the wind_ms measurement in m (default 2)")
    parser.add_argument("--coastal", action="store_true",
                        help="coastal station: Hargreaves radiation coefficient 0.19, not 0.16")
    parser.add_argument("--max-gap", type=int, default=3, metavar="DAYS",
                        help="longest run of missing days filled by interpolation (default 3)")
    parser.add_argument("--fill-long-gaps", action="store_true",
                        help="fill longer gaps from the record's day-of-year climatology")
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Read and check the file, print the check and the summary; warnings go to stderr."""
    from coveryield.climate import read_climate
    from coveryield.forcing import reference_et

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        climate = read_climate(args.file, latitude_deg=args.lat, elevation_m=args.elev,
                               wind_height_m=args.wind_height, max_gap_days=args.max_gap,
                               fill_long_gaps=args.fill_long_gaps, coastal=args.coastal)
        et0_mm = reference_et(climate)
    for warning in caught:
        print(f"warning: {warning.message}", file=sys.stderr)
    print("\n".join(summary_lines(climate, float(et0_mm.sum()))))
    return 0


def summary_lines(climate, et0_total_mm: float) -> list[str]:
    """Lines of the check and the summary of a climate record.

    Parameters
    ----------
    climate : coveryield.climate.Climate
        A checked record.
    et0_total_mm : float
        FAO-56 reference evaporation summed over the record [mm].

    Returns
    -------
    list of str
        Plain lines: check, notes, period, fills per column and method, annual figures.
    """
    first, last = climate.period
    lines = [f"check: OK ({climate.source})"]
    lines += [f"  - {note}" for note in climate.notes]
    lines.append(f"period: {first:%Y-%m-%d} to {last:%Y-%m-%d} "
                 f"({climate.n_days} days, {climate.years:.2f} years)")
    if climate.years < 1.0:
        lines.append("  - the record is shorter than a year: annual figures are scaled up "
                     f"from {climate.n_days} days")
    if climate.fills.empty:
        lines.append("fills: none")
    else:
        lines.append("fills (column, method, days):")
        counts = climate.fills.groupby(["column", "method"], sort=False).size()
        for (column, method), count in counts.items():
            lines.append(f"  {column:<8} {method:<58} {count:>6}")
    rain = climate.mean_annual_rain_mm
    et0 = et0_total_mm / climate.years
    lines.append(f"mean annual rain: {rain:.0f} mm/yr")
    lines.append(f"mean annual reference evaporation (FAO-56 Penman-Monteith): {et0:.0f} mm/yr")
    ratio = f"{et0 / rain:.2f}" if rain > 0 else "undefined (no rain in the record)"
    lines.append(f"aridity ratio ET0/P: {ratio}")
    return lines
