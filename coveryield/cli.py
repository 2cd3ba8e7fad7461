"""The ``coveryield`` command line: one sub-command per module in :mod:`coveryield.commands`.

Each command module defines ``add_parser(subparsers)`` and ``run(args) -> int``. Errors a user can
cause (:class:`coveryield.errors.CoveryieldError`) are printed as one message with exit status 2;
heavy libraries are imported only by the command that needs them, so ``--help`` stays fast.
"""

from __future__ import annotations

import argparse
import importlib
import os
import sys

#: Sub-command name -> module under coveryield.commands (imported lazily).
COMMANDS = {
    "batch": "batch",
    "cache": "cache",
    "calibrate": "calibrate",
    "climate": "climate",
    "compare": "compare",
    "covers": "covers",
    "demo": "demo",
    "serve": "serve",
    "timeline": "timeline",
}


def build_parser() -> argparse.ArgumentParser:
    """Build the argument parser with every available sub-command."""
    parser = argparse.ArgumentParser(
        prog="coveryield",
        description=(
            "Screening estimates of how land-cover plans change a catchment's water yield. "
            "Results are screening estimates, to be confirmed by licensed hydrological practice "
            "and local regulations."
        ),
    )
    subparsers = parser.add_subparsers(dest="command", metavar="COMMAND")
    subparsers.required = True
    for module_name in COMMANDS.values():
        try:
            module = importlib.import_module(f"coveryield.commands.{module_name}")
        except ModuleNotFoundError as exc:  # a command not built yet in this checkout
            if exc.name == f"coveryield.commands.{module_name}":
                continue
            raise
        module.add_parser(subparsers)
    return parser


def main(argv: list[str] | None = None) -> int:
    """Run the command line; return the process exit status."""
    from coveryield.engine.threads import threads_from_environment
    from coveryield.errors import CoveryieldError

    parser = build_parser()
    args = parser.parse_args(argv)
    try:
        threads_from_environment()  # a bad setting is one message before any work
        return int(args.run(args) or 0)
    except CoveryieldError as exc:
        print(f"coveryield {args.command}: error: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("coveryield: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:  # output piped into a reader that stopped early (e.g. `| head`)
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
