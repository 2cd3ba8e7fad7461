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
    from coveryield.output_folder import MANIFEST_NAME
    from coveryield.plans import load_plan
    from coveryield.reports import ENSEMBLE_FILE, comparison_table, output_files, write_outputs

    if args.ensemble is not None and args.ensemble < 2:
        raise CoveryieldError(f"--ensemble {args.ensemble}: expected at least 2 parameter sets "
                              "(100-200 give stable 5-95 % bands)")
    if args.seed is not None and args.ensemble is None:
        raise CoveryieldError("--seed: only used with --ensemble N")
    plan_file = load_plan(args.plan)
    names = output_files(ensemble=args.ensemble is not None)
    target = checked_out_folder(args, names, plan_file.input_files(),
                                retire=() if args.ensemble else (ENSEMBLE_FILE,))
    cache = None if args.no_cache else _tile_cache()
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            result = compare(plan_file, progress=sys.stderr.isatty(), cache=cache,
                             ensemble=args.ensemble, seed=args.seed)
        finally:
            print_warnings(caught)
    print(comparison_table(result))
    if target is not None:
        out = write_outputs(result, target)
        print(
            f"\nwrote {len(names)} files to {out}/: {', '.join(names)} "
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
