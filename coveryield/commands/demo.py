"""``coveryield demo [--no-serve] [--port N]``: the demo comparison, then its dashboard."""

from __future__ import annotations

import argparse


def add_parser(subparsers) -> None:
    """Register the ``demo`` command."""
    from coveryield.commands.serve import add_page_arguments
    from coveryield.serve import DEFAULT_MAX_VIEWERS, DEFAULT_PORT

    parser = subparsers.add_parser(
        "demo",
        help="print the demo catchment's plan comparison, then serve its dashboard",
        description="Compare the plans of the invented demo catchment, print the table, then "
        "serve its dashboard (read-only unless --manager) on 127.0.0.1 until Ctrl-C.",
    )
    parser.add_argument("--no-serve", action="store_true", help="only print the comparison")
    parser.add_argument("--manager", action="store_true",
                        help="serve with the manager's controls (save plans, export tables) "
                             "instead of read-only")
    parser.add_argument("--port", type=int, default=DEFAULT_PORT,
                        help=f"port on 127.0.0.1 (default {DEFAULT_PORT})")
    add_page_arguments(parser, DEFAULT_MAX_VIEWERS)
    parser.set_defaults(run=run)


def run(args: argparse.Namespace) -> int:
    """Print the comparison; serve the dashboard unless --no-serve."""
    from coveryield.comparison import compare
    from coveryield.demo import demo_plan_path
    from coveryield.reports import comparison_table

    plan = demo_plan_path()
    if not args.no_serve:  # say what is missing before the comparison, not after
        from coveryield.serve import check_dashboard_extras

        check_dashboard_extras()
    print(comparison_table(compare(plan)), flush=True)
    if args.no_serve:
        return 0
    from coveryield.serve import serve

    print(flush=True)
    return serve(plan, port=args.port, read_only=not args.manager, start_plan=args.start_plan,
                 max_viewers=args.max_viewers)
