"""``coveryield batch DIR --out OUT``: compare the plans of every plan file under DIR on Dask."""

from __future__ import annotations

import argparse
import sys

#: Exit status when the batch finished but some plan files could not run.
SOME_FAILED = 3

#: Failures listed on stderr (all are in failures.csv).
SHOWN_FAILURES = 10


def add_parser(subparsers) -> None:
    """Register the ``batch`` command."""
    parser = subparsers.add_parser(
        "batch",
        help="compare the plans of every plan file in a folder, in parallel on Dask",
        description="Run `compare` on every *.toml plan file under DIR (sub-folders included) "
        "as one Dask task each, on a local cluster of worker processes or on a running Dask "
        "cluster. OUT gets batch.csv and batch.parquet (one row per catchment and plan), "
        "failures.csv, and one folder per plan file exactly as `compare --out` writes it. "
        "Exit status: 0 all ran, 3 some plan files failed (see failures.csv), 2 usage error.",
    )
    parser.add_argument("dir", metavar="DIR", help="folder of plan files (*.toml)")
    parser.add_argument(
        "--out",
        required=True,
        metavar="OUT",
        help="output folder: new or empty (or, with --resume, an earlier batch's)",
    )
    parser.add_argument(
        "--scheduler",
        metavar="ADDRESS",
        help="address of a running Dask scheduler, like tcp://HOST:8786 "
        "(default: start a local cluster on this machine)",
    )
    parser.add_argument(
        "--workers",
        type=int,
        metavar="N",
        help="worker processes of the local cluster (default: one per core)",
    )
    parser.add_argument(
        "--resume",
        action="store_true",
        help="keep the catchments an earlier batch in OUT finished from the "
        "same inputs; redo half-written or changed ones",
    )
    parser.add_argument(
        "--connect-timeout",
        type=float,
        default=10.0,
        metavar="S",
        help="seconds to wait for --scheduler (default 10)",
    )
    parser.set_defaults(run=run)


def _check_arguments(args: argparse.Namespace) -> None:
    from coveryield.errors import BatchError

    if args.workers is not None and args.scheduler:
        raise BatchError(
            f"--workers {args.workers} with --scheduler: the running cluster has "
            "its own workers; expected one of the two options"
        )
    if args.workers is not None and args.workers < 1:
        raise BatchError(f"--workers {args.workers}: expected 1 or more worker processes")
    if args.connect_timeout <= 0:
        raise BatchError(f"--connect-timeout {args.connect_timeout:g}: expected seconds > 0")


def _print_failures(failures) -> None:
    for plan_file, message in failures.head(SHOWN_FAILURES).itertuples(index=False):
        print(f"failed: {plan_file}", file=sys.stderr)
        print("".join(f"    {line}\n" for line in message.splitlines()), end="", file=sys.stderr)
    if len(failures) > SHOWN_FAILURES:
        print(f"... and {len(failures) - SHOWN_FAILURES} more in failures.csv", file=sys.stderr)


def run(args: argparse.Namespace) -> int:
    """Run the batch, print failures (stderr) and a one-line summary; 0, or 3 if some failed."""
    from pathlib import Path

    from coveryield.batchrun.layout import find_plan_files
    from coveryield.batchrun.runner import run_batch
    from coveryield.comparison import CAUTION

    _check_arguments(args)
    plan_files = find_plan_files(args.dir, skip=Path(args.out).expanduser())
    try:
        result = run_batch(
            plan_files,
            root=args.dir,
            out=args.out,
            resume=args.resume,
            scheduler=args.scheduler,
            workers=args.workers,
            progress=sys.stderr.isatty(),
            connect_timeout_s=args.connect_timeout,
        )
    except KeyboardInterrupt:
        print(
            f"coveryield batch: interrupted; the catchments finished so far are kept in "
            f"{args.out}: run the same command with --resume to finish",
            file=sys.stderr,
        )
        raise
    _print_failures(result.failures)
    print(result.summary_line())
    print(f"CAUTION: {CAUTION}")
    return SOME_FAILED if len(result.failures) else 0
