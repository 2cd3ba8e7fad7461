"""``coveryield compare PLAN.toml [--out DIR]``: compare every plan of a plan file."""

from __future__ import annotations

import argparse
import sys
import warnings

from coveryield.commands.out_option import add_out_arguments, checked_out_folder


def add_parser(subparsers) -> None:
    """Register the ``compare`` command."""
    parser = subparsers.add_parser(
        "compare",
        help="compare the plans of a plan file against `current`",
        description="Simulate every tile once and compare each plan of PLAN.toml against "
        "`current`: mean annual yield, dry years, seasons, low flows, curve cross-check.",
    )
    parser.add_argument("plan", metavar="PLAN.toml", help="plan file (TOML)")
    add_out_arguments(parser, "report.html, annual.csv, summary.json and more tables")
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
    from coveryield.output_folder import MANIFEST_NAME
    from coveryield.plans import load_plan
    from coveryield.reports import OUTPUT_FILES, comparison_table, write_outputs

    plan_file = load_plan(args.plan)
    target = checked_out_folder(args, OUTPUT_FILES, plan_file.input_files())
    cache = None if args.no_cache else _tile_cache()
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            result = compare(plan_file, progress=sys.stderr.isatty(), cache=cache)
        finally:
            print_warnings(caught)
    print(comparison_table(result))
    if target is not None:
        out = write_outputs(result, target)
        print(
            f"\nwrote {len(OUTPUT_FILES)} files to {out}/: {', '.join(OUTPUT_FILES)} "
            f"(each listed with its checksum in {MANIFEST_NAME})"
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
