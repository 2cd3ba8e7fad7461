"""``coveryield cache [--clear]``: where the tile cache lives, how big it is; empty it."""

from __future__ import annotations

import argparse


def add_parser(subparsers) -> None:
    """Register the ``cache`` command."""
    parser = subparsers.add_parser(
        "cache",
        help="show the tile cache's folder and size, or empty it",
        description="`coveryield compare` keeps simulated tile results in a cache folder, keyed "
        "by the climate file's contents, the catchment, zones and covers, and coveryield's own "
        "code, so an unchanged comparison answers at once. This shows the folder and its size; "
        "--clear deletes the cached results (nothing else). Set COVERYIELD_CACHE_DIR to move "
        "the cache; `coveryield compare --no-cache` bypasses it.",
    )
    parser.add_argument("--clear", action="store_true", help="delete every cached result")
    parser.set_defaults(run=run)


def _megabytes(n_bytes: int) -> str:
    return f"{n_bytes / 1024**2:.1f} MB"


def run(args: argparse.Namespace) -> int:
    """Print the cache folder and its size; with --clear, empty it first."""
    from coveryield.tile_cache import CACHE_DIR_VARIABLE, MAX_TOTAL_BYTES, TileCache

    cache = TileCache()
    if args.clear:
        size = cache.size_bytes()
        removed = cache.clear()
        print(f"removed {removed} cached result(s) ({_megabytes(size)}) from {cache.folder}")
        return 0
    entries = cache.entries()
    print(f"tile cache: {cache.folder}")
    print(
        f"entries: {len(entries)} ({_megabytes(cache.size_bytes())}); the least recently used "
        f"are deleted beyond {_megabytes(MAX_TOTAL_BYTES)}"
    )
    print(
        f"set {CACHE_DIR_VARIABLE} to move it; `coveryield cache --clear` empties it; "
        "`coveryield compare --no-cache` bypasses it"
    )
    return 0
