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
    parser.add_argument(
        "--ensemble",
        metavar="N",
        type=int,
        help="also run N parameter sets drawn by Latin hypercube from the covers' documented "
        "ranges and give every headline a 5-95 %% band (100-200 is a good size)",
    )
    parser.add_argument(
        "--seed", metavar="S", type=int, default=None,
        help="seed of the ensemble's draws: the same seed gives the same bands (default: random)",
    )
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Compare the plans, print the table, optionally write the outputs."""
    from coveryield.comparison import compare
    from coveryield.errors import CoveryieldError
    from coveryield.reports import comparison_table, write_outputs

    if args.ensemble is not None and args.ensemble < 2:
        raise CoveryieldError(f"--ensemble {args.ensemble}: expected at least 2 parameter sets "
                              "(100-200 give stable 5-95 % bands)")
    if args.seed is not None and args.ensemble is None:
        raise CoveryieldError("--seed: only used with --ensemble N")
    result = compare(args.plan, progress=sys.stderr.isatty(), ensemble=args.ensemble,
                     seed=args.seed)
    print(comparison_table(result))
    if args.out:
        out = write_outputs(result, args.out, force=args.force)
        print(
            f"\nwrote {out}/ (annual.csv, summary.json, monthly.csv, flow_duration.csv, "
            "crosscheck.csv, tiles.csv, daily_flow.csv, report.html"
            + (", ensemble.csv)" if result.ensemble is not None else ")")
        )
    return 0
