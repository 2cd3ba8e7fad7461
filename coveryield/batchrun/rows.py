"""Rows of the batch table: one per catchment and plan, taken from the comparison's summary.

The figures are not recomputed here: every scalar of :meth:`Comparison.summary` for a plan
becomes a column, so a figure added to the summary flows into the batch table unchanged (and a
batch equals ``compare`` on each file exactly). Units are those of the summary: mm per year over
the whole catchment, ML per year, m3 s-1, % of the `current` plan.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from typing import Any

import pandas as pd

#: Columns naming the row, first in the table.
KEY_COLUMNS = ("catchment", "plan_file", "plan")

#: Columns the batch table always has (figures come from ``Comparison.summary()``).
REQUIRED_COLUMNS = (
    *KEY_COLUMNS,
    "mean_yield_mm",
    "change_mm",
    "change_pct",
    "change_ml",
    "dry_year_change_mm",
    "q95_change_pct",
)

#: Catchment facts repeated on every row, last in the table.
CATCHMENT_COLUMNS = ("area_km2", "first_year", "last_year", "n_years")

#: Columns of the failures table.
FAILURE_COLUMNS = ("plan_file", "message")


def _scalars(entry: Mapping[str, Any], prefix: str = "") -> dict[str, Any]:
    """Flatten nested mappings to ``a_b`` keys, keeping numbers, booleans and text only.

    None and empty text become NaN, so a table reads back from CSV as it was written.
    """
    flat: dict[str, Any] = {}
    for key, value in entry.items():
        name = f"{prefix}{key}"
        if isinstance(value, Mapping):
            flat.update(_scalars(value, prefix=f"{name}_"))
        elif value is None or isinstance(value, (bool, int, float, str)):
            flat[name] = math.nan if value is None or value == "" else value
    return flat


def _catchment_facts(catchment: Mapping[str, Any]) -> dict[str, Any]:
    first, last = catchment["years"]
    return {
        "area_km2": catchment["area_km2"],
        "first_year": first,
        "last_year": last,
        "n_years": catchment["n_years"],
    }


def summary_rows(summary: Mapping[str, Any], plan_file: str) -> list[dict[str, Any]]:
    """One row per plan of one catchment.

    Parameters
    ----------
    summary : mapping
        :meth:`coveryield.comparison.Comparison.summary` of the catchment (or the same read
        back from its ``summary.json``).
    plan_file : str
        The plan file as the user named it.

    Returns
    -------
    list of dict
        ``catchment``, ``plan_file``, ``plan``, every scalar figure of the plan's summary entry
        (mm yr-1, ML yr-1, m3 s-1, %; change figures against `current`, absent for `current`
        itself), then :data:`CATCHMENT_COLUMNS` (km2, calendar years).
    """
    head = {"catchment": summary["catchment"]["name"], "plan_file": plan_file}
    facts = _catchment_facts(summary["catchment"])
    return [
        {**head, "plan": name, **_scalars(figures), **facts}
        for name, figures in summary["plans"].items()
    ]


def batch_table(rows: Iterable[Mapping[str, Any]]) -> pd.DataFrame:
    """Build the batch table: rows in the order given, columns in a fixed order.

    Key columns first, then the figures in the order of the summary (a plan other than
    `current` shows them all), then the catchment facts. Missing figures (the change of
    `current` against itself) are NaN.

    Parameters
    ----------
    rows : iterable of mapping
        Rows from :func:`summary_rows`.

    Returns
    -------
    pandas.DataFrame
        One row per catchment and plan.
    """
    rows = list(rows)
    ordered = sorted(rows, key=lambda row: row["plan"] == "current")  # changes first, stable
    seen = dict.fromkeys(key for row in ordered for key in row)
    fixed = set(KEY_COLUMNS) | set(CATCHMENT_COLUMNS)
    figures = [key for key in seen if key not in fixed]
    # an empty batch, or one with `current` plans only, still has every required column
    figures += [name for name in REQUIRED_COLUMNS if name not in figures and name not in fixed]
    return pd.DataFrame(rows, columns=[*KEY_COLUMNS, *figures, *CATCHMENT_COLUMNS])


def failures_table(failures: Iterable[tuple[str, str]]) -> pd.DataFrame:
    """Plan files that could not run: ``plan_file`` and the same message ``compare`` gives."""
    return pd.DataFrame(list(failures), columns=list(FAILURE_COLUMNS))


def readme_text(table: pd.DataFrame) -> str:
    """Describe the files of a batch folder, the units of the columns, and the caution."""
    from coveryield.comparison import CAUTION

    n_catchments = table["plan_file"].nunique() if len(table) else 0
    return "\n".join(
        [
            f"coveryield batch: {n_catchments} catchments, {len(table)} rows",
            "",
            "batch.csv, batch.parquet  one row per catchment and plan (the same table twice)",
            "failures.csv              plan files that could not run, with the reason",
            "<name>/                   one catchment, as `coveryield compare --out` writes it",
            "",
            "Columns: catchment, plan_file, plan, then the headline figures of each plan:",
            "  *_mm   mm per year over the whole catchment",
            "  *_ml   ML per year (1 mm over 1 km2 = 1 ML)",
            "  *_m3s  m3 per second",
            "  *_pct  % of the `current` plan's value",
            "  change_*: against `current` (negative = less water); empty on `current` rows",
            "  dry_year_change_mm: mean change over the driest 10 % of years (by catchment rain)",
            "  q95: flow exceeded on 95 % of days; q7: mean annual lowest 7-day mean flow",
            "  crosscheck_offset_pct: how much more the daily model evaporates than the Zhang",
            "  (2001) curve; crosscheck_differs: outside the model's usual offset or far from",
            "  current's (crosscheck_reason says which)",
            "  area_km2, first_year, last_year, n_years: the catchment and its complete years",
            "",
            f"CAUTION: {CAUTION}",
            "",
        ]
    )
