"""The work of one catchment in a batch, run on a Dask worker (this module imports no Dask).

:func:`run_catchment` does what ``coveryield compare PLAN.toml --out OUT/<name>`` does and
hands back the comparison's summary (a small, JSON-ready dict) instead of the tile results, so
little travels back to the driver. A user's mistake in the plan or climate file comes back as
the same message ``compare`` prints; anything else is left to Dask, which reports it to the
driver as the task's exception.
"""

from __future__ import annotations

import os
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from coveryield.errors import CoveryieldError


@dataclass(frozen=True)
class CatchmentOutcome:
    """What one catchment's task returns.

    Attributes
    ----------
    summary : dict or None
        :meth:`coveryield.comparison.Comparison.summary`; None when it failed.
    message : str or None
        Why it failed (the message ``compare`` gives); None when it ran.
    fingerprint : str or None
        Fingerprint of its inputs (see :func:`.layout.input_fingerprint`); None when it failed.
    seconds : float
        Wall time of the task on the worker [s].
    worker_pid : int
        Process id of the worker that ran it.
    """

    summary: dict[str, Any] | None
    message: str | None
    fingerprint: str | None
    seconds: float
    worker_pid: int

    @property
    def ok(self) -> bool:
        """True when the catchment ran and (if asked) its folder was written."""
        return self.message is None


def run_catchment(plan_path: str, target: str | None = None) -> CatchmentOutcome:
    """Compare every plan of one plan file and write its folder.

    Parameters
    ----------
    plan_path : str
        The plan file (an absolute path every worker can read).
    target : str, optional
        ``OUT/<name>``: written exactly as ``compare --out`` writes it, all or nothing. Nothing
        is written when omitted.

    Returns
    -------
    CatchmentOutcome
        The summary and input fingerprint, or the message of the user's mistake.
    """
    start = time.perf_counter()  # a worker's first task also pays the imports
    from coveryield.batchrun.layout import input_fingerprint, write_catchment
    from coveryield.comparison import compare
    from coveryield.engine.threads import engine_threads
    from coveryield.plans import load_plan

    try:
        # one engine thread per task: a batch's parallelism is across catchments, one task per
        # worker thread, so threads inside a task would only compete for the same cores
        with engine_threads(1):
            plan_file = load_plan(plan_path)
            fingerprint = input_fingerprint(plan_file.source, plan_file.catchment.climate)
            result = compare(plan_file)
            summary = result.summary()
            if target is not None:
                write_catchment(result, Path(target))
    except CoveryieldError as exc:
        return CatchmentOutcome(None, str(exc), None, time.perf_counter() - start, os.getpid())
    return CatchmentOutcome(summary, None, fingerprint, time.perf_counter() - start, os.getpid())
