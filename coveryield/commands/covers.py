"""``coveryield covers [PLAN.toml]``: cover parameters with units, typical ranges, sources."""

from __future__ import annotations

import argparse

#: Parameters shown, in order (see coveryield.covers.Cover).
SHOWN = (
    "albedo",
    "height_m",
    "rs_s_per_m",
    "lai",
    "canopy_capacity_mm",
    "rooting_depth_m",
    "depletion_fraction",
    "extinction_coefficient",
    "curve_number",
    "water_depth_m",
    "water_fetch_m",
)


def add_parser(subparsers) -> None:
    """Register the ``covers`` command."""
    parser = subparsers.add_parser(
        "covers",
        help="list the covers' parameters with units, typical ranges and sources",
        description="List the built-in covers (and a plan file's own covers) with every "
        "parameter, its unit, typical range and published source.",
    )
    parser.add_argument(
        "plan", metavar="PLAN.toml", nargs="?", help="also list the covers this plan file defines"
    )
    parser.set_defaults(run=run)


def _value(cover, name: str) -> str:
    value = getattr(cover, name)
    if name == "curve_number":
        return " ".join(f"{group}{cn:g}" for group, cn in value.items())
    if name == "canopy_capacity_mm" and value is None:  # sized from the leaf area
        return f"{cover.canopy_capacity_at(cover.lai):.2g} (LAI)"
    return f"{value:g}"


def cover_lines(covers: dict) -> list[str]:
    """Format the parameter table of ``covers`` (name -> Cover) as lines of text."""
    from coveryield.covers import PARAMETER_INFO

    names = list(covers)
    width = max(12, *(len(n) + 2 for n in names))
    lines = [f"{'parameter':<24}{'unit':<8}" + "".join(f"{n:>{width}}" for n in names)]
    lines.append(
        f"{'(derives from)':<24}{'':<8}" + "".join(f"{covers[n].base:>{width}}" for n in names)
    )
    for name in SHOWN:
        unit = PARAMETER_INFO[name][0]
        cells = "".join(f"{_value(covers[n], name):>{width}}" for n in names)
        if name == "curve_number":  # four groups do not fit a column: own lines
            lines.append(f"{name:<24}{unit:<8}(hydrologic soil groups A-D)")
            lines += [f"{'':<4}{n:<24}{_value(covers[n], name)}" for n in names]
            continue
        lines.append(f"{name:<24}{unit:<8}{cells}")
    crops = [n for n in names if covers[n].kc_calendar is not None]
    for n in crops:
        cal = covers[n].kc_calendar
        lines.append(
            f"{n}: Kcb calendar planting day {cal.planting_doy_north} (north; +182 south), "
            f"stages {'/'.join(map(str, cal.stage_days))} d, basal Kcb "
            f"{cal.kcb_ini:g}/{cal.kcb_mid:g}/{cal.kcb_end:g} (FAO-56 Tables 11 and 17)"
        )
    lines.append("(LAI): canopy store sized from the leaf area, 0.2 mm per unit LAI "
                 "(Dickinson 1984); water_depth_m and water_fetch_m apply to open water only.")
    for n in names:
        growth = covers[n].growth
        if growth is None:
            continue
        rotation = (
            f"felled at {growth.rotation_years} yr" if growth.rotation_years else "not felled"
        )
        start = growth.start or "the cover replaced if grass, else pasture"
        lines.append(
            f"{n}: grows after planting along a Chapman-Richards curve, 95 % grown at "
            f"{growth.maturity_years:g} yr (p {growth.shape:g}), {rotation}, starts from {start}"
        )
    lines.append("")
    lines.append("Typical ranges and sources:")
    for name in SHOWN:
        unit, typical, source = PARAMETER_INFO[name]
        lines.append(f"  {name} [{unit}]: {typical}. Source: {source}.")
    lines.append(f"  growth: {GROWTH_SOURCE}")
    return lines + ensemble_range_lines()


def ensemble_range_lines() -> list[str]:
    """List the numeric ranges `compare --ensemble` draws from, per built-in cover, with sources."""
    from coveryield.covers import PARAMETER_INFO, PARAMETER_RANGES

    lines = ["", "Ensemble ranges (compare --ensemble N draws uniformly within them; a derived "
             "cover takes its base's range relative to the base's value):"]
    for cover, ranges in PARAMETER_RANGES.items():
        for name, spread in ranges.items():
            unit = PARAMETER_INFO[name][0]
            lines.append(f"  {cover}.{name} [{unit}]: {spread.low:g} to {spread.high:g}. "
                         f"Source: {spread.source}.")
    return lines


#: Where the built-in forest's growth comes from (see coveryield.covers.DEFAULT_GROWTH).
GROWTH_SOURCE = (
    "maturity age 20 yr within the 8-25 years to a new equilibrium of Brown et al. (2013) and "
    "the 20+ years of growing losses of Farley et al. (2005) (both abstracts); shape p 1.5 our "
    "choice (small change in the first two years, Brown et al. 2005)."
)


def run(args: argparse.Namespace) -> int:
    """Print the cover table."""
    if args.plan:
        from coveryield.plans import load_plan

        covers = dict(load_plan(args.plan).covers)
    else:
        from coveryield.covers import BUILTIN_COVERS

        covers = dict(BUILTIN_COVERS)
    print("\n".join(cover_lines(covers)))
    return 0
