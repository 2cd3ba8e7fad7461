"""``coveryield calibrate PLAN.toml --observed FLOW.csv --out DIR [--split YEAR]``."""

from __future__ import annotations

import argparse
import sys

from coveryield.commands.out_option import add_out_arguments, checked_out_folder


def add_parser(subparsers) -> None:
    """Register the ``calibrate`` command."""
    parser = subparsers.add_parser(
        "calibrate",
        help="fit catchment-wide parameters to observed flow (split-sample test)",
        description="Fit the surface-resistance and root-zone factors and the recession constants "
        "of the fast and groundwater stores of PLAN.toml's `current` plan to an observed daily flow record (objective: KGE' of "
        "Kling et al. 2012), test them on a separate period, and write calibration.json, "
        "calibrated.toml (a new plan file), fit_flow.csv and report.html into DIR. Results are "
        "screening estimates, to be confirmed by licensed hydrological practice and local "
        "regulations.",
    )
    parser.add_argument("plan", metavar="PLAN.toml", help="plan file (TOML); never changed")
    parser.add_argument(
        "--observed", metavar="FLOW.csv", required=True,
        help="observed daily flow: columns date (YYYY-MM-DD) and flow_m3s (m3/s); empty cells "
        "are missing days (reported, never filled)",
    )
    add_out_arguments(parser, "calibration.json, calibrated.toml, fit_flow.csv and report.html",
                      required=True)
    parser.add_argument(
        "--split", metavar="YEAR", type=int, default=None,
        help="first year of the validation period (default: the year that halves the observed "
        "days)",
    )
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Read, check, calibrate, print the scores, write the outputs (all or nothing)."""
    from coveryield.observed import read_observed_flow
    from coveryield.plans import load_plan
    from coveryield.report_calibration import (
        CALIBRATION_FILES,
        calibration_lines,
        write_calibration_outputs,
    )
    from coveryield.uncertainty.calibration import calibrate

    plan_file = load_plan(args.plan)
    inputs = {**plan_file.input_files(), "observed-flow file": args.observed}
    target = checked_out_folder(args, CALIBRATION_FILES, inputs)  # before the long work
    observed = read_observed_flow(args.observed)
    result = calibrate(plan_file, observed, split_year=args.split,
                       progress=sys.stderr.isatty())
    print("\n".join(calibration_lines(result)))
    folder = write_calibration_outputs(result, target)
    print(f"\nwrote {len(CALIBRATION_FILES)} files to {folder}/: {', '.join(CALIBRATION_FILES)}")
    print(f"next: coveryield compare {folder / 'calibrated.toml'} --ensemble 200")
    from coveryield.comparison import CAUTION

    print(f"\nCAUTION: {CAUTION}")
    return 0
