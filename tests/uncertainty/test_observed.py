"""The observed-flow file contract: gaps reported and never filled, every problem named at once."""

from __future__ import annotations

import csv
from pathlib import Path

import pytest

from coveryield.errors import CoveryieldError, ObservedFlowError
from coveryield.observed import read_observed_flow

DEMO_FLOW = Path(__file__).resolve().parents[2] / "demo_data" / "observed_flow.csv"


def _write(tmp_path, text: str) -> Path:
    path = tmp_path / "flow.csv"
    path.write_text(text)
    return path


def test_demo_record_gaps_match_its_empty_cells():
    flow = read_observed_flow(DEMO_FLOW)
    with DEMO_FLOW.open() as handle:  # an independent count with the csv module
        rows = list(csv.DictReader(handle))
    empty = [r["date"] for r in rows if not r["flow_m3s"].strip()]
    assert flow.n_missing == len(empty) > 0
    assert flow.n_observed == len(rows) - len(empty)
    assert int(flow.gaps["n_days"].sum()) == len(empty)
    assert flow.flow_m3s.isna().sum() == len(empty)  # never filled
    assert flow.flow_m3s.index.is_monotonic_increasing
    assert (flow.flow_m3s.dropna() >= 0).all()


def test_skipped_dates_and_empty_cells_are_gaps(tmp_path):
    path = _write(tmp_path, "date,flow_m3s\n2000-01-01,1.0\n2000-01-02,\n2000-01-03,NA\n"
                            "2000-01-06,2.5\n# a comment line\n\n2000-01-07, 3 \n")
    flow = read_observed_flow(path)
    assert len(flow.flow_m3s) == 7
    assert flow.n_missing == 4
    assert flow.gaps["n_days"].tolist() == [4]
    assert flow.flow_m3s["2000-01-07"] == 3.0
    assert "4 missing day(s) in 1 gap(s)" in flow.gap_lines()[0]
    assert "2000-01-02 to 2000-01-05 (4 days)" in flow.gap_lines()[1]


def test_columns_are_matched_loosely_and_extra_columns_ignored(tmp_path):
    path = _write(tmp_path, " Date , FLOW_M3S ,quality\n2000-01-01,1.0,good\n2000-01-02,2,poor\n")
    assert read_observed_flow(path).n_observed == 2


def test_every_problem_is_named_at_once(tmp_path):
    path = _write(tmp_path, "date,flow_m3s\n"
                            "2000-01-01,1.0\n"
                            "2000-01-02,-0.5\n"
                            "2000-01-03,high\n"
                            "2000-13-04,1.0\n"
                            "2000-01-03,1.0\n"
                            "2000-01-01,1.0\n"
                            "2000-01-08,1.0,extra\n"
                            "2000-01-09,inf\n")
    with pytest.raises(ObservedFlowError) as info:
        read_observed_flow(path)
    message = str(info.value)
    assert isinstance(info.value, CoveryieldError)
    assert message.startswith(f"{path}: 8 problems")
    for fragment in ("line 3 (2000-01-02): flow_m3s = -0.5 is negative",
                     "line 4 (2000-01-03): flow_m3s = 'high' is not a number",
                     "line 5: date = '2000-13-04' is not a calendar date",
                     "line 6: date 2000-01-03 repeats line 4",
                     "line 7: date 2000-01-01 repeats line 2",
                     "line 7: date 2000-01-01 is earlier than 2000-01-03",
                     "line 8: 3 fields; expected 2",
                     "line 9 (2000-01-09): flow_m3s = 'inf' is not a finite number"):
        assert fragment in message, fragment


@pytest.mark.parametrize(("text", "fragment"), [
    ("", "the file is empty"),
    ("date,discharge\n2000-01-01,1\n", "missing column(s) flow_m3s"),
    ("date,flow_m3s\n", "no rows after the header"),
    ("date,flow_m3s\n01/02/2000,1\n", "is not a date; expected YYYY-MM-DD"),
])
def test_malformed_files(tmp_path, text, fragment):
    with pytest.raises(ObservedFlowError, match="flow.csv") as info:
        read_observed_flow(_write(tmp_path, text))
    assert fragment in str(info.value)


def test_missing_file_and_folder(tmp_path):
    with pytest.raises(ObservedFlowError, match="file not found"):
        read_observed_flow(tmp_path / "nope.csv")
    with pytest.raises(ObservedFlowError, match="is a folder"):
        read_observed_flow(tmp_path)


def test_many_problems_are_capped(tmp_path):
    rows = "".join(f"2000-01-{d:02d},-1\n" for d in range(1, 31))
    with pytest.raises(ObservedFlowError) as info:
        read_observed_flow(_write(tmp_path, "date,flow_m3s\n" + rows))
    assert "30 problems" in str(info.value)
    assert "... and 10 more" in str(info.value)
