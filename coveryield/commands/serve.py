"""``coveryield serve [PLAN.toml] [--port N] [--read-only]``: the dashboard in a browser."""

from __future__ import annotations

import argparse


def add_parser(subparsers) -> None:
    """Register the ``serve`` command."""
    from coveryield.serve import DEFAULT_MAX_VIEWERS, DEFAULT_PORT

    parser = subparsers.add_parser(
        "serve",
        help="serve the interactive dashboard with Voila on 127.0.0.1",
        description="Serve the dashboard of PLAN.toml (default: the demo catchment) with Voila "
        "on 127.0.0.1 until Ctrl-C. With --read-only the page has no control that writes files "
        "(for stakeholders).",
    )
    parser.add_argument("plan", metavar="PLAN.toml", nargs="?", default=None,
                        help="plan file (default: the demo catchment)")
    parser.add_argument("--port", type=int, default=DEFAULT_PORT,
                        help=f"port on 127.0.0.1 (default {DEFAULT_PORT})")
    parser.add_argument("--read-only", action="store_true",
                        help="stakeholder mode: no saving of plans, no exports")
    add_page_arguments(parser, DEFAULT_MAX_VIEWERS)
    parser.set_defaults(run=run)


def add_page_arguments(parser: argparse.ArgumentParser, default_max_viewers: int) -> None:
    """Add ``--start-plan`` and ``--max-viewers`` (shared with the ``demo`` command)."""
    parser.add_argument("--start-plan", metavar="NAME", default=None,
                        help="plan the page opens on (default: the first plan after `current`)")
    parser.add_argument("--max-viewers", type=int, default=default_max_viewers, metavar="N",
                        help="most page views at once; each holds a Python process of a few "
                             f"hundred MB; one more gets a 'busy' page (default "
                             f"{default_max_viewers})")


def plan_or_demo(plan: str | None):
    """Return the plan file named, or the demo catchment's."""
    if plan:
        return plan
    from coveryield.demo import demo_plan_path

    return demo_plan_path()


def run(args: argparse.Namespace) -> int:
    """Serve until interrupted; return the exit status."""
    from coveryield.serve import serve

    return serve(plan_or_demo(args.plan), port=args.port, read_only=args.read_only,
                 start_plan=args.start_plan, max_viewers=args.max_viewers)
