"""Checks shared by the batch tests: a batch's rows against `compare` on each file."""

from __future__ import annotations

import numbers
from pathlib import Path

import numpy as np
import pandas as pd

import coveryield


def assert_rows_equal_compare(table: pd.DataFrame, plan_files: list[Path]) -> None:
    """Every figure of every plan equals `compare` on the same file to 1e-9."""
    for path in plan_files:
        summary = coveryield.compare(path).summary()
        rows = table[table["plan_file"].map(lambda p, path=path: Path(p).name == path.name)]
        assert list(rows["plan"]) == list(summary["plans"]), path
        for _, row in rows.iterrows():
            for key, value in summary["plans"][row["plan"]].items():
                if isinstance(value, bool):
                    assert bool(row[key]) is value, (path, key)
                elif isinstance(value, numbers.Number):
                    np.testing.assert_allclose(row[key], value, rtol=1e-9, atol=1e-9)
