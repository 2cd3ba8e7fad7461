"""``coveryield timeline PLAN.toml [--years N] --out DIR``: yield year by year after planting."""

from __future__ import annotations

import argparse
import sys

from coveryield.commands.out_option import add_out_arguments, checked_out_folder


def add_parser(subparsers) -> None:
    """Register the ``timeline`` command."""
    parser = subparsers.add_parser(
        "timeline",
        help="follow the plans year by year after planting, against `current`",
        description="Follow each plan of PLAN.toml year by year from the start of its schedule "
        "(plans without a schedule are made at once in year 1): planted stands grow, are "
        "felled and regrow; each year's yield is compared with `current` on the same weather. "
        "The record's weather years are used in order, and again from the first when the "
        "timeline is longer than the record.",
    )
    parser.add_argument("plan", metavar="PLAN.toml", help="plan file (TOML)")
    parser.add_argument(
        "--years",
        type=int,
        default=30,
        metavar="N",
        help="length of the timeline in years (default 30)",
    )
    parser.add_argument(
        "--start-year",
        type=int,
        metavar="YEAR",
        help="calendar year of year 1, a label only (default: the first "
        "complete year of the climate record)",
    )
    parser.add_argument(
        "--plan",
        dest="plans",
        action="append",
        metavar="NAME",
        help="follow only this plan (repeat for several; default: all)",
    )
    add_out_arguments(parser, "timeline.csv, report.html and README.txt")
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Build the timelines, print the summary, optionally write the outputs."""
    from coveryield.comparison import compare
    from coveryield.plans import load_plan
    from coveryield.timeline_outputs import TIMELINE_FILES, timeline_text, write_timeline_outputs

    plan_file = load_plan(args.plan)
    target = checked_out_folder(args, TIMELINE_FILES, plan_file.input_files())  # before any work
    progress = sys.stderr.isatty()
    result = compare(plan_file, progress=progress)
    timeline = result.timeline(
        args.plans, years=args.years, start_year=args.start_year, progress=progress
    )
    print(timeline_text(result, timeline))
    if target is not None:
        out = write_timeline_outputs(result, timeline, target)
        print(f"\nwrote {out}/ (timeline.csv, report.html, README.txt)")
    return 0
