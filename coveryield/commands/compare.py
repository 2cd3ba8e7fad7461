"""``coveryield compare PLAN.toml [--out DIR]``: compare every plan of a plan file."""

from __future__ import annotations

import argparse
import sys


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
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Compare the plans, print the table, optionally write the outputs."""
    from coveryield.comparison import compare
    from coveryield.reports import comparison_table, write_outputs

    result = compare(args.plan, progress=sys.stderr.isatty())
    print(comparison_table(result))
    if args.out:
        out = write_outputs(result, args.out, force=args.force)
        print(
            f"\nwrote {out}/ (annual.csv, summary.json, monthly.csv, flow_duration.csv, "
            "crosscheck.csv, tiles.csv)"
        )
    return 0
