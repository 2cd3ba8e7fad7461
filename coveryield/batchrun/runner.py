"""The batch driver: one Dask task per plan file, progress as they finish, the batch tables.

A batch runs on ``dask.distributed``: on a :class:`distributed.LocalCluster` of worker
processes on this machine by default, on any running Dask cluster when given its scheduler's
address or a connected :class:`distributed.Client`. Each task is
:func:`coveryield.batchrun.task.run_catchment`; the driver only gathers small summaries, keeps
the record of finished catchments and writes the tables. Dask is imported when a batch starts,
never by ``compare`` or the dashboard.

Plan files and the output folder must be on a file system the driver and every worker see at
the same path (always true for a local cluster).
"""

from __future__ import annotations

import contextlib
import logging
import os
import time
import uuid
import warnings
from collections.abc import Iterable, Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import pandas as pd

from coveryield.batchrun import layout
from coveryield.batchrun.rows import batch_table, failures_table, readme_text, summary_rows
from coveryield.errors import BatchError, CoveryieldError

#: Seconds to wait for a named scheduler before giving up (a usage error).
CONNECT_TIMEOUT_S = 10.0


class BatchFailureWarning(UserWarning):
    """Some plan files of a batch could not run; the table holds the others."""


@dataclass
class BatchRun:
    """Everything a batch produced.

    Attributes
    ----------
    table : pandas.DataFrame
        One row per catchment and plan, in plan-file order (see :mod:`.rows`).
    failures : pandas.DataFrame
        ``plan_file`` and ``message`` of each plan file that could not run.
    n_files : int
        Plan files in the batch.
    n_ran : int
        Catchments computed by this run.
    n_skipped : int
        Catchments whose complete outputs an earlier run left (``resume``).
    seconds : float
        Wall time of the whole batch [s].
    n_workers : int
        Dask workers at the start or at the end of the tasks, whichever were more (0 when
        nothing needed running).
    task_seconds : list of float
        Wall time of each catchment's task on its worker [s].
    out : pathlib.Path or None
        The output folder, when written.
    """

    table: pd.DataFrame
    failures: pd.DataFrame
    n_files: int
    n_ran: int
    n_skipped: int
    seconds: float
    n_workers: int
    task_seconds: list[float] = field(default_factory=list)
    out: Path | None = None

    def summary_line(self) -> str:
        """One line: catchments done, skipped and failed, rows written, time and workers."""
        n_failed = len(self.failures)
        done = self.n_files - n_failed
        where = f" (see {self.out / 'failures.csv'})" if self.out and n_failed else ""
        rows = f"; {len(self.table)} rows in {self.out / 'batch.csv'}" if self.out else ""
        workers = f"{self.n_workers} worker{'s' * (self.n_workers != 1)}"
        return (
            f"batch: {done} of {self.n_files} catchments done ({self.n_ran} run now, "
            f"{self.n_skipped} already complete), {n_failed} failed{where}{rows}; "
            f"{self.seconds:.1f} s on {workers}"
        )


def _plan_paths(
    paths: str | os.PathLike | Iterable[str | os.PathLike], skip: Path | None
) -> tuple[list[Path], Path | None]:
    """Plan files from a folder (searched like the command does) or from a list of files."""
    if isinstance(paths, (str, os.PathLike)):
        single = Path(paths).expanduser()
        if single.is_dir():
            return layout.find_plan_files(single, skip=skip), single
        return [single], None
    listed = [Path(p).expanduser() for p in paths]
    if not listed:
        raise BatchError("no plan files given; expected at least one *.toml plan file")
    return listed, None


def default_workers(n_tasks: int) -> int:
    """Worker processes for a local cluster: one per usable core, no more than the tasks."""
    try:
        cores = len(os.sched_getaffinity(0))
    except AttributeError:  # not on every platform
        cores = os.cpu_count() or 1
    return max(1, min(cores, n_tasks))


@contextlib.contextmanager
def dask_client(
    client=None,
    *,
    scheduler: str | None = None,
    workers: int | None = None,
    n_tasks: int = 1,
    connect_timeout_s: float = CONNECT_TIMEOUT_S,
) -> Iterator[Any]:
    """Yield a connected ``distributed.Client``: the one given, a scheduler's, or a local one.

    A client given is used as it is and left open; one made here is closed on leaving (with
    the local cluster it started: one single-threaded worker process per core, or ``workers``).

    Raises
    ------
    coveryield.errors.BatchError
        If ``scheduler`` cannot be reached within ``connect_timeout_s`` seconds, or
        ``workers`` is not a positive number.
    """
    if client is not None:
        yield client
        return
    from distributed import Client, LocalCluster

    if scheduler:
        try:
            connected = Client(scheduler, timeout=connect_timeout_s, set_as_default=False)
        except (OSError, TimeoutError, ValueError) as exc:
            raise BatchError(
                f"cannot reach the Dask scheduler at {scheduler!r} within {connect_timeout_s:g} s "
                f"({exc}); expected the address of a running scheduler, like tcp://HOST:8786"
            ) from None
        with connected:
            yield connected
        return
    if workers is not None and workers < 1:
        raise BatchError(f"--workers {workers}: expected 1 or more worker processes")
    n_workers = workers or default_workers(n_tasks)
    with (
        LocalCluster(
            n_workers=n_workers,
            threads_per_worker=1,
            processes=True,
            dashboard_address=None,
            silence_logs=logging.ERROR,
        ) as cluster,
        Client(cluster, set_as_default=False) as local,
    ):
        yield local


def _finished_summary(folder: Path, recorded: dict | None, plan_path: Path) -> dict | None:
    """Return the summary of a catchment finished earlier from the same inputs, else None."""
    if not recorded:
        return None
    summary = layout.read_summary(folder)
    if summary is None:
        return None
    try:
        from coveryield.plans import load_plan

        plan_file = load_plan(plan_path)
        fingerprint = layout.input_fingerprint(plan_file.source, plan_file.catchment.climate)
    except (CoveryieldError, OSError):
        return None
    return summary if recorded.get("inputs") == fingerprint else None


def _failure_message(future) -> str:
    """Word the failure of a task that raised (a bug, or a worker that died)."""
    exc = future.exception()
    return (
        f"unexpected error while running this catchment ({type(exc).__name__}: {exc}); "
        "this is not a problem of the plan file: please report it"
    )


class _Batch:
    """The state of one batch: plan files, their folders, rows and failures as they arrive."""

    def __init__(self, plan_paths: list[Path], names: list[str], out_dir: Path | None):
        self.plan_paths = plan_paths
        self.names = names
        self.shown = [str(p) for p in plan_paths]
        self.out_dir = out_dir
        self.record = layout.read_record(out_dir) if out_dir is not None else {}
        self.rows: dict[int, list[dict]] = {}
        self.failures: dict[int, str] = {}
        self.task_seconds: list[float] = []

    def keep_finished(self) -> None:
        """Take the rows of catchments an earlier batch finished from the same inputs."""
        for i, (path, name) in enumerate(zip(self.plan_paths, self.names, strict=True)):
            recorded = self.record.get(name)
            summary = _finished_summary(self.out_dir / name, recorded, path)
            if summary is None:
                continue
            # the record keeps the rows at full precision (summary.json is rounded for reading)
            rows = recorded.get("rows") or summary_rows(summary, self.shown[i])
            self.rows[i] = [{**row, "plan_file": self.shown[i]} for row in rows]

    @property
    def todo(self) -> list[int]:
        """Plan files still to run, by index."""
        return [i for i in range(len(self.plan_paths)) if i not in self.rows]

    def target(self, i: int) -> str | None:
        """Return the folder of plan file ``i`` (absolute), or None when nothing is written."""
        return None if self.out_dir is None else str((self.out_dir / self.names[i]).resolve())

    def submit(self, dask, todo: list[int]) -> dict:
        """One task per plan file still to run; returns future -> index."""
        from coveryield.batchrun.task import run_catchment

        return {
            dask.submit(
                run_catchment,
                str(self.plan_paths[i].resolve()),
                self.target(i),
                key=f"coveryield-{self.names[i]}-{uuid.uuid4().hex[:8]}",
                pure=False,
            ): i
            for i in todo
        }

    def collect(self, i: int, future) -> None:
        """Take a finished task's rows (and record its inputs) or its failure."""
        if future.status != "finished":
            self.failures[i] = _failure_message(future)
            return
        outcome = future.result()
        self.task_seconds.append(outcome.seconds)
        if not outcome.ok:
            self.failures[i] = outcome.message
            return
        self.rows[i] = summary_rows(outcome.summary, self.shown[i])
        if self.out_dir is not None:
            self.record[self.names[i]] = {
                "plan_file": self.shown[i],
                "inputs": outcome.fingerprint,
                "rows": self.rows[i],
            }
            layout.write_record(self.out_dir, self.record)

    def tables(self) -> tuple[pd.DataFrame, pd.DataFrame]:
        """Return the batch table and the failures, both in plan-file order."""
        table = batch_table(row for i in sorted(self.rows) for row in self.rows[i])
        failed = failures_table((self.shown[i], self.failures[i]) for i in sorted(self.failures))
        return table, failed


def _run_tasks(state: _Batch, dask, todo: list[int], progress: bool) -> None:
    """Submit the tasks and collect them as they finish, with a progress bar."""
    from distributed import as_completed
    from tqdm.auto import tqdm

    futures = state.submit(dask, todo)
    bar = tqdm(
        as_completed(futures, loop=dask.loop),
        total=len(futures),
        desc="catchments",
        unit="catchment",
        disable=not progress,
    )
    for future in bar:
        state.collect(futures.pop(future), future)
        if state.failures:
            bar.set_postfix(failed=len(state.failures))
        future.release()


def run_batch(
    paths: str | os.PathLike | Iterable[str | os.PathLike],
    *,
    client=None,
    scheduler: str | None = None,
    workers: int | None = None,
    out: str | os.PathLike | None = None,
    resume: bool = False,
    root: str | os.PathLike | None = None,
    progress: bool = False,
    connect_timeout_s: float = CONNECT_TIMEOUT_S,
) -> BatchRun:
    """Compare the plans of many plan files, one Dask task each; see :func:`batch`.

    Parameters
    ----------
    paths : path or iterable of paths
        A folder (every ``*.toml`` below it) or the plan files.
    client : distributed.Client, optional
        A connected client to run on (left open).
    scheduler : str, optional
        Address of a running Dask scheduler (``tcp://HOST:PORT``), when no client is given.
    workers : int, optional
        Worker processes of the local cluster started when neither is given
        (default: one per core).
    out : path, optional
        Output folder: new or empty, or with ``resume`` an earlier batch's.
    resume : bool
        Keep catchments an earlier batch in ``out`` finished from the same inputs; redo the rest.
    root : path, optional
        Folder the output sub-folder names are taken relative to (default: the folder given, or
        the deepest folder holding every plan file).
    progress : bool
        Show a progress bar over finished catchments on stderr.
    connect_timeout_s : float
        Seconds to wait for ``scheduler`` [s].

    Returns
    -------
    BatchRun
        Tables, counts and timings.

    Raises
    ------
    coveryield.errors.BatchError, coveryield.errors.OutputError
        Before anything is written: no plan files, an unsuitable ``out``, an unreachable
        scheduler.
    """
    start = time.perf_counter()
    out_dir = layout.check_out(out, resume=resume) if out is not None else None
    plan_paths, folder = _plan_paths(paths, skip=out_dir)
    names = layout.output_names(plan_paths, Path(root) if root is not None else folder)
    state = _Batch(plan_paths, names, out_dir)
    if resume and out_dir is not None:
        state.keep_finished()
    todo = state.todo
    n_workers = 0
    if todo:
        with dask_client(
            client,
            scheduler=scheduler,
            workers=workers,
            n_tasks=len(todo),
            connect_timeout_s=connect_timeout_s,
        ) as dask:
            if out_dir is not None:  # written only once the cluster is there
                layout.create_out(out_dir)
                layout.sweep_leftovers(out_dir, [names[i] for i in todo])
            n_workers = len(dask.scheduler_info().get("workers", {}))
            _run_tasks(state, dask, todo, progress)
            # a cluster that scales (e.g. dask-jobqueue) may have gained workers meanwhile
            n_workers = max(n_workers, len(dask.scheduler_info().get("workers", {})))
    table, failed = state.tables()
    if out_dir is not None:
        layout.create_out(out_dir)
        write_tables(out_dir, table, failed)
    return BatchRun(
        table=table,
        failures=failed,
        n_files=len(plan_paths),
        n_ran=len(todo) - len(failed),
        n_skipped=len(plan_paths) - len(todo),
        seconds=time.perf_counter() - start,
        n_workers=n_workers,
        task_seconds=state.task_seconds,
        out=out_dir,
    )


def write_tables(out: Path, table: pd.DataFrame, failures: pd.DataFrame) -> None:
    """Write batch.csv, batch.parquet, failures.csv and README.txt into ``out``, each atomically.

    Numbers are written at full precision (CSV: shortest text that reads back to the same
    float; Parquet: binary).
    """
    layout.write_file_atomically(out / "batch.csv", lambda p: table.to_csv(p, index=False))
    layout.write_file_atomically(
        out / "batch.parquet", lambda p: table.to_parquet(p, index=False, engine="pyarrow")
    )
    layout.write_file_atomically(out / "failures.csv", lambda p: failures.to_csv(p, index=False))
    layout.write_file_atomically(
        out / "README.txt", lambda p: p.write_text(readme_text(table), encoding="utf-8")
    )


def batch(
    paths: str | os.PathLike | Iterable[str | os.PathLike],
    client=None,
    *,
    out: str | os.PathLike | None = None,
    resume: bool = False,
    workers: int | None = None,
    progress: bool = False,
) -> pd.DataFrame:
    """Compare the plans of many catchments at once on Dask; one row per catchment and plan.

    Each plan file is one task: the same computation as :func:`coveryield.compare`, so the
    figures equal those of ``compare`` on each file. With ``out``, each catchment's folder
    ``out/<name>`` is written exactly as ``compare --out`` writes it (all or nothing), beside
    ``batch.csv``, ``batch.parquet`` and ``failures.csv``.

    Parameters
    ----------
    paths : path or iterable of paths
        A folder (every ``*.toml`` below it) or plan files.
    client : distributed.Client, optional
        A connected client (any Dask cluster); default: a local cluster of worker processes,
        started and closed here (call from under ``if __name__ == "__main__":`` in a script).
    out : path, optional
        Output folder (new or empty; with ``resume``, an earlier batch's).
    resume : bool
        Keep what an earlier batch in ``out`` finished from the same inputs.
    workers : int, optional
        Worker processes of the local cluster (default: one per core).
    progress : bool
        Progress bar on stderr.

    Returns
    -------
    pandas.DataFrame
        ``catchment``, ``plan_file``, ``plan``, then every headline figure of
        :meth:`Comparison.summary` (mm yr-1 over the catchment, ML yr-1, m3 s-1, %; changes
        against `current`, NaN on the `current` rows), then ``area_km2`` and the years. Plan
        files that could not run are in ``table.attrs["failures"]`` (``plan_file``,
        ``message``) and announced by a :class:`BatchFailureWarning`.

    Raises
    ------
    coveryield.errors.BatchError, coveryield.errors.OutputError
        When the batch cannot start (nothing to run, an unsuitable ``out``).

    Notes
    -----
    Results are screening estimates, to be confirmed by licensed hydrological practice and
    local regulations.

    Examples
    --------
    >>> table = coveryield.batch("regional/", out="results/")  # doctest: +SKIP
    >>> table.query("plan != 'current'").nsmallest(5, "change_mm")  # doctest: +SKIP
    """
    run = run_batch(
        paths, client=client, workers=workers, out=out, resume=resume, progress=progress
    )
    table = run.table
    table.attrs["failures"] = run.failures
    if len(run.failures):
        first = run.failures.iloc[0]
        warnings.warn(
            f"{len(run.failures)} of {run.n_files} plan files could not run (see "
            f"table.attrs['failures']); first: {first['plan_file']}: {first['message']}",
            BatchFailureWarning,
            stacklevel=2,
        )
    return table
