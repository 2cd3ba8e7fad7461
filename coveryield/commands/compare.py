"""``coveryield compare PLAN.toml [--out DIR]``: compare every plan of a plan file."""

from __future__ import annotations

import argparse
import sys

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
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Compare the plans, print the table, optionally write the outputs."""
    from coveryield.comparison import compare
    from coveryield.output_folder import MANIFEST_NAME
    from coveryield.plans import load_plan
    from coveryield.reports import OUTPUT_FILES, comparison_table, write_outputs

    plan_file = load_plan(args.plan)
    target = checked_out_folder(args, OUTPUT_FILES, plan_file.input_files())
    result = compare(plan_file, progress=sys.stderr.isatty())
    print(comparison_table(result))
    if target is not None:
        out = write_outputs(result, target)
        print(
            f"\nwrote {len(OUTPUT_FILES)} files to {out}/: {', '.join(OUTPUT_FILES)} "
            f"(each listed with its checksum in {MANIFEST_NAME})"
        )
    return 0
