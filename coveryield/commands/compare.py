"""``coveryield compare PLAN.toml [--out DIR]``: compare every plan of a plan file."""

from __future__ import annotations

import argparse
import sys
import warnings


def add_parser(subparsers) -> None:
    """Register the ``compare`` command."""
    parser = subparsers.add_parser(
        "compare",
        help="compare the plans of a plan file against `current`",
        description="Simulate every tile once and compare each plan of PLAN.toml against "
        "`current`: mean annual yield, dry years, seasons, low flows, curve cross-check.",
    )
    parser.add_argument("plan", metavar="PLAN.toml", help="plan file (TOML)")
    parser.add_argument(
        "--out",
        metavar="DIR",
        help="write annual.csv, summary.json and more tables into DIR (a new or empty folder)",
    )
    parser.add_argument(
        "--force", action="store_true", help="replace earlier coveryield outputs in a non-empty DIR"
    )
    parser.add_argument(
        "--no-cache",
        action="store_true",
        help="simulate the tiles even if the tile cache holds them, and store nothing there "
        "(see `coveryield cache`)",
    )
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Compare the plans, print the table, optionally write the outputs."""
    from coveryield.comparison import compare
    from coveryield.reports import comparison_table, write_outputs

    cache = None if args.no_cache else _tile_cache()
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            result = compare(args.plan, progress=sys.stderr.isatty(), cache=cache)
        finally:
            print_warnings(caught)
    print(comparison_table(result))
    if args.out:
        out = write_outputs(result, args.out, force=args.force)
        print(
            f"\nwrote {out}/ (annual.csv, summary.json, monthly.csv, flow_duration.csv, "
            "crosscheck.csv, tiles.csv)"
        )
    return 0


def _tile_cache():
    from coveryield.tile_cache import TileCache

    return TileCache()


def print_warnings(caught) -> None:
    """Print recorded warnings as plain lines on stderr: ``note:`` for the tile cache's."""
    seen = set()
    for warning in caught:
        text = str(warning.message)
        if text in seen:
            continue
        seen.add(text)
        label = "note" if warning.category.__name__ == "TileCacheWarning" else "warning"
        print(f"{label}: {text}", file=sys.stderr)
