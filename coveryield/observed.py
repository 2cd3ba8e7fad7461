"""Observed daily streamflow: read a gauge record, check it, and report its gaps (never fill them).

An observed-flow file is a CSV file with a header line and one row per day::

    date,flow_m3s
    1991-01-01,0.213
    1991-01-02,            <- an empty cell (or NA, NaN) is a missing day
    ...

* ``date``: ISO ``YYYY-MM-DD``, increasing, each day at most once. Days left out between two rows
  are missing days, like empty cells.
* ``flow_m3s``: daily mean streamflow at the outlet [m3 s-1], a number ≥ 0.
* Column names are matched without regard to case or surrounding spaces; other columns are
  ignored. Blank lines and lines starting with ``#`` are skipped (line numbers still count them).

Every problem in the file is collected and reported in ONE
:class:`~coveryield.errors.ObservedFlowError` naming the file, the line, the column, the value
and what was expected. Missing days are never filled: :attr:`ObservedFlow.gaps` lists them and
scores are computed on the observed days only.
"""

from __future__ import annotations

import csv
import math
import re
from dataclasses import dataclass
from datetime import date as _date
from pathlib import Path

import numpy as np
import pandas as pd

from coveryield.errors import ObservedFlowError

__all__ = ["ObservedFlow", "read_observed_flow", "REQUIRED_COLUMNS"]

#: Columns an observed-flow file must have.
REQUIRED_COLUMNS = ("date", "flow_m3s")
#: Cell texts read as a missing day (after stripping, case-insensitive).
MISSING_MARKERS = frozenset({"", "na", "nan"})
#: Problems listed in one message before "... and N more".
MAX_PROBLEMS_LISTED = 20
#: Gaps listed by :meth:`ObservedFlow.gap_lines` before "... and N more".
MAX_GAPS_LISTED = 10

_ISO_DATE = re.compile(r"^\d{4}-\d{2}-\d{2}$")


@dataclass(frozen=True, eq=False)
class ObservedFlow:
    """A checked daily streamflow record.

    Attributes
    ----------
    flow_m3s : pandas.Series
        Daily mean flow on a complete daily DatetimeIndex from the first to the last date of the
        file; NaN on every missing day [m3 s-1].
    gaps : pandas.DataFrame
        One row per run of missing days: ``start``, ``end`` (dates) and ``n_days``.
    source : str
        The file, as given.
    """

    flow_m3s: pd.Series
    gaps: pd.DataFrame
    source: str

    @property
    def n_observed(self) -> int:
        """Days with a value [d]."""
        return int(self.flow_m3s.notna().sum())

    @property
    def n_missing(self) -> int:
        """Missing days between the first and the last date [d]."""
        return int(self.flow_m3s.isna().sum())

    def gap_lines(self) -> list[str]:
        """Plain-text lines describing the missing days, for reports."""
        if self.gaps.empty:
            return [f"{self.source}: no missing days"]
        lines = [f"{self.source}: {self.n_missing} missing day(s) in {len(self.gaps)} gap(s); "
                 "missing days are left out of every score, never filled"]
        for row in self.gaps.head(MAX_GAPS_LISTED).itertuples(index=False):
            span = (f"{row.start:%Y-%m-%d}" if row.n_days == 1 else
                    f"{row.start:%Y-%m-%d} to {row.end:%Y-%m-%d}")
            lines.append(f"  {span} ({row.n_days} day{'s' if row.n_days > 1 else ''})")
        if len(self.gaps) > MAX_GAPS_LISTED:
            lines.append(f"  ... and {len(self.gaps) - MAX_GAPS_LISTED} more gaps")
        return lines


def read_observed_flow(path) -> ObservedFlow:
    """Read and check a daily observed-flow CSV file.

    Parameters
    ----------
    path : str or os.PathLike
        CSV file with columns ``date`` and ``flow_m3s`` [m3 s-1] (see the module notes).

    Returns
    -------
    ObservedFlow
        The record on a complete daily index, NaN on missing days.

    Raises
    ------
    ObservedFlowError
        Listing every problem found (file, line, column, value, what was expected).
    """
    source = str(path)
    numbered, header_no = _lines(Path(path), source)
    rows = list(csv.reader(line for _, line in numbered))
    header = [name.strip().lower() for name in rows[0]]
    missing = [c for c in REQUIRED_COLUMNS if c not in header]
    if missing:
        raise ObservedFlowError(
            f"{source}: line {header_no}: missing column(s) {', '.join(missing)}; expected a "
            f"header with {', '.join(REQUIRED_COLUMNS)} (found: {', '.join(header) or 'nothing'})")
    position = {name: header.index(name) for name in REQUIRED_COLUMNS}
    problems: list[str] = []
    days, flows = [], []
    for (number, _), row in zip(numbered[1:], rows[1:], strict=True):
        if len(row) != len(header):
            problems.append(f"line {number}: {len(row)} fields; expected {len(header)} as in the "
                            "header")
            continue
        day = _parse_date(row[position["date"]], number, problems)
        flow = _parse_flow(row[position["flow_m3s"]], number, day, problems)
        if day is not None:
            days.append((number, day))
            flows.append(flow)
    if not days and not problems:
        problems.append("no rows after the header; expected one row per day")
    problems += _sequence_problems(days)
    if problems:
        shown = problems[:MAX_PROBLEMS_LISTED]
        lines = [f"{source}: {len(problems)} problem{'s' if len(problems) > 1 else ''} in the "
                 "observed-flow record:"] + [f"  - {p}" for p in shown]
        if len(problems) > len(shown):
            lines.append(f"  ... and {len(problems) - len(shown)} more")
        raise ObservedFlowError("\n".join(lines))
    index = pd.DatetimeIndex([pd.Timestamp(d) for _, d in days])
    series = pd.Series(flows, index=index, dtype=float)
    full = pd.date_range(index[0], index[-1], freq="D", name="date")
    series = series.reindex(full).rename("flow_m3s")
    return ObservedFlow(flow_m3s=series, gaps=_gap_table(series), source=source)


def _lines(path: Path, source: str) -> tuple[list[tuple[int, str]], int]:
    """Numbered non-blank, non-comment lines; raise at once when there is nothing to check."""
    if not path.exists():
        raise ObservedFlowError(f"{source}: file not found; expected a CSV file of daily flow "
                                "(date, flow_m3s)")
    if path.is_dir():
        raise ObservedFlowError(f"{source}: is a folder; expected a CSV file of daily flow")
    try:
        text = path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError as exc:
        raise ObservedFlowError(f"{source}: is not UTF-8 text (bad byte at offset {exc.start}); "
                                "expected a CSV file of daily flow") from None
    except OSError as exc:
        raise ObservedFlowError(f"{source}: cannot be read ({exc.strerror})") from None
    numbered = [(n, line) for n, line in enumerate(text.splitlines(), start=1)
                if line.strip() and not line.lstrip().startswith("#")]
    if not numbered:
        raise ObservedFlowError(f"{source}: the file is empty; expected a header line "
                                "'date,flow_m3s' and one row per day")
    return numbered, numbered[0][0]


def _parse_date(text: str, number: int, problems: list[str]) -> _date | None:
    stripped = text.strip()
    if not _ISO_DATE.match(stripped):
        problems.append(f"line {number}: date = {stripped!r} is not a date; expected YYYY-MM-DD")
        return None
    try:
        return _date.fromisoformat(stripped)
    except ValueError:
        problems.append(f"line {number}: date = {stripped!r} is not a calendar date; expected "
                        "YYYY-MM-DD")
        return None


def _parse_flow(text: str, number: int, day: _date | None, problems: list[str]) -> float:
    """Parse the flow of one row: NaN when missing; a problem when not a finite number ≥ 0."""
    stripped = text.strip()
    if stripped.lower() in MISSING_MARKERS:
        return math.nan
    where = f"line {number}" + (f" ({day.isoformat()})" if day else "")
    try:
        value = float(stripped)
    except ValueError:
        problems.append(f"{where}: flow_m3s = {stripped!r} is not a number; expected a flow in "
                        "m3/s (an empty cell for a missing day)")
        return math.nan
    if not math.isfinite(value):
        problems.append(f"{where}: flow_m3s = {stripped!r} is not a finite number; expected a "
                        "flow in m3/s (an empty cell for a missing day)")
        return math.nan
    if value < 0.0:
        problems.append(f"{where}: flow_m3s = {stripped} is negative; expected a flow >= 0 m3/s")
        return math.nan
    return value


def _sequence_problems(days: list[tuple[int, _date]]) -> list[str]:
    """Repeated dates and dates out of order (skipped days are gaps, not problems)."""
    problems = []
    first_line: dict[_date, int] = {}
    previous = None
    for number, day in days:
        if day in first_line:
            problems.append(f"line {number}: date {day.isoformat()} repeats line "
                            f"{first_line[day]}; expected each day once")
        else:
            first_line[day] = number
        if previous is not None and day < previous[1]:
            problems.append(f"line {number}: date {day.isoformat()} is earlier than "
                            f"{previous[1].isoformat()} on line {previous[0]}; expected dates "
                            "in increasing order")
        previous = (number, day)
    return problems


def _gap_table(series: pd.Series) -> pd.DataFrame:
    """Tabulate the runs of missing days: start, end, n_days."""
    missing = series.isna().to_numpy()
    padded = np.concatenate([[0], missing.astype(int), [0]])
    steps = np.diff(padded)
    starts, stops = np.flatnonzero(steps == 1), np.flatnonzero(steps == -1)
    return pd.DataFrame({
        "start": series.index[starts],
        "end": series.index[stops - 1],
        "n_days": (stops - starts).astype(int),
    })
