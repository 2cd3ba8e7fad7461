"""The ``--out DIR`` / ``--force`` pair shared by every command that writes a folder.

A command adds both options with :func:`add_out_arguments` and, after reading its inputs and
BEFORE any simulation, calls :func:`checked_out_folder` so that a folder it cannot use is refused
at once (exit status 2), not after minutes of work::

    target = checked_out_folder(args, OUTPUT_FILES, plan_file.input_files())
    ...                                   # the work
    if target is not None:
        write_outputs(result, target)     # checks again, then writes all or nothing
"""

from __future__ import annotations

import argparse
import os
from collections.abc import Iterable, Mapping


def add_out_arguments(parser: argparse.ArgumentParser, what: str, *,
                      required: bool = False) -> None:
    """Add ``--out DIR`` (``what`` says what goes there; ``required`` or not) and ``--force``."""
    parser.add_argument(
        "--out",
        metavar="DIR",
        required=required,
        help=f"write {what} into DIR (a new or empty folder; checked before any work)",
    )
    parser.add_argument(
        "--force",
        action="store_true",
        help="replace coveryield's own earlier outputs in DIR (never an input of the run, never "
        "a file coveryield did not write or one edited since)",
    )


def checked_out_folder(
    args: argparse.Namespace,
    names: Iterable[str],
    inputs: Mapping[str, str | os.PathLike],
    *,
    retire: Iterable[str] = (),
):
    """Check ``args.out`` for ``names`` now; return the checked folder, or None without --out.

    ``retire`` names coveryield's own earlier outputs this run does not write (removed on
    writing when unchanged, see :class:`coveryield.output_folder.OutputFolder`).

    Raises
    ------
    coveryield.errors.OutputError
        If the folder cannot take the outputs (the CLI prints it and exits 2).
    """
    if not getattr(args, "out", None):
        return None
    from coveryield.output_folder import check_output_folder

    return check_output_folder(args.out, names, force=args.force, inputs=inputs, retire=retire)
