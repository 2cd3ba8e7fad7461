"""Run one engine call on several cores: disjoint blocks of tiles in threads.

Tiles do not interact, so the compiled day loop can run on disjoint ranges of tile blocks at
once. The kernels release the GIL (``nogil=True``), and each range reads and writes only its own
tiles' forcing columns, parameters, state and outputs, so the results do not depend on how the
tiles are split: they are the same, bit for bit, on one thread or many (tested).

How many threads an engine call uses, first that applies:

1. the ``threads`` argument of :func:`coveryield.engine.water_balance.simulate_tiles`;
2. :func:`engine_threads` around the call (a context variable, so it holds for the thread or task
   that set it: a batch run sets 1, as its parallelism is across catchments);
3. the ``COVERYIELD_ENGINE_THREADS`` environment variable (a whole number ≥ 1);
4. the cores this process may run on (``os.sched_getaffinity``, else ``os.cpu_count``).

A call never uses more threads than it has blocks of :data:`~coveryield.engine.kernels.BLOCK`
tiles, so a catchment of a few dozen tiles runs on one thread as before, with no thread started.
"""

from __future__ import annotations

import contextlib
import os
from contextvars import ContextVar

from coveryield.errors import SettingError

#: Environment variable that caps the engine's threads (a whole number ≥ 1).
THREADS_VARIABLE = "COVERYIELD_ENGINE_THREADS"

_threads: ContextVar[int | None] = ContextVar("coveryield_engine_threads", default=None)


def available_cores() -> int:
    """Cores this process may run on [-]."""
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):  # not on every platform
        return os.cpu_count() or 1


def threads_from_environment() -> int | None:
    """The ``COVERYIELD_ENGINE_THREADS`` setting, or None when it is not set [-].

    Raises
    ------
    SettingError
        If it is set to anything but a whole number ≥ 1 (the command line checks this before
        any work, so the mistake is one message, not a traceback mid-run).
    """
    text = os.environ.get(THREADS_VARIABLE, "").strip()
    if not text:
        return None
    try:
        value = int(text)
    except ValueError:
        value = 0
    if value < 1:
        raise SettingError(
            f"environment variable {THREADS_VARIABLE}={text!r}: expected a whole number ≥ 1 "
            "(the most threads one engine run may use), or leave it unset to use every core"
        )
    return value


def _checked(threads, name) -> int:
    if isinstance(threads, bool) or not isinstance(threads, int) or threads < 1:
        raise ValueError(f"{name}: {threads!r}, expected a whole number ≥ 1")
    return threads


@contextlib.contextmanager
def engine_threads(threads: int):
    """Use at most ``threads`` threads for engine calls made inside the ``with`` block.

    Parameters
    ----------
    threads : int
        Largest number of threads one engine call may use, ≥ 1 [-].
    """
    token = _threads.set(_checked(threads, "engine_threads"))
    try:
        yield
    finally:
        _threads.reset(token)


def threads_for(n_blocks: int, threads: int | None = None) -> int:
    """Threads an engine call over ``n_blocks`` blocks of tiles will use (see module notes) [-]."""
    if threads is not None:
        wanted = _checked(threads, "threads")
    else:
        wanted = _threads.get() or threads_from_environment() or available_cores()
    return max(1, min(wanted, n_blocks))


def block_spans(n_blocks: int, n_threads: int) -> list[tuple[int, int]]:
    """Split blocks 0..n_blocks − 1 into ``n_threads`` contiguous ranges as even as possible.

    Returns
    -------
    list of (int, int)
        ``(block_lo, block_hi)`` of each range, in order, none empty [-].
    """
    n_threads = max(1, min(n_threads, n_blocks))
    edges = [round(i * n_blocks / n_threads) for i in range(n_threads + 1)]
    return [(lo, hi) for lo, hi in zip(edges[:-1], edges[1:], strict=True) if hi > lo]


@contextlib.contextmanager
def block_runner(n_blocks: int, threads: int | None = None):
    """Yield ``run(kernel, *args)`` that calls ``kernel(*args, block_lo, block_hi)`` over all blocks.

    With one thread the kernel is called once, in this thread, over ``0, n_blocks``. With more,
    each range of :func:`block_spans` runs in a thread of one pool that lives for the ``with``
    block (several calls, e.g. a year of canopy rows at a time, share it); ``run`` returns when
    every range is done and re-raises the first error.
    """
    n_threads = threads_for(n_blocks, threads)
    if n_threads == 1:
        yield lambda kernel, *args: kernel(*args, 0, n_blocks)
        return
    from concurrent.futures import ThreadPoolExecutor  # only when a run is split

    spans = block_spans(n_blocks, n_threads)
    with ThreadPoolExecutor(max_workers=len(spans), thread_name_prefix="coveryield-engine") as pool:

        def run(kernel, *args):
            futures = [pool.submit(kernel, *args, lo, hi) for lo, hi in spans]
            for future in futures:
                future.result()

        yield run
