"""The evaporation cross-check: a plain number with its meaning, flags only when informative.

Issue 12 item 3: the flag used to be on for every plan, the baseline included. It now flags a plan
only when its model-vs-curve offset leaves the model's usual range or moves away from the
baseline's offset.
"""

from __future__ import annotations

import dataclasses

import pytest

from coveryield.physics.curves import (
    CROSSCHECK_CHANGE_TOLERANCE_PCT,
    CROSSCHECK_TYPICAL_OFFSET_PCT,
    ZHANG_CURVE_SENTENCE,
    crosscheck_reason,
)
from coveryield.report_html import render_report
from coveryield.reports import comparison_table


def test_demo_plans_are_not_flagged_for_the_model_usual_offset(demo_result):
    # every demo plan lies at the model's usual offset and within a few points of current's
    for name in demo_result.plan_names:
        o = demo_result.outcome(name)
        low, high = CROSSCHECK_TYPICAL_OFFSET_PCT
        assert low <= o.crosscheck_offset_pct <= high
        assert not o.crosscheck_flag, (name, o.crosscheck_reason)
    rows = [line for line in comparison_table(demo_result).splitlines()
            if line.split(" ")[0] in demo_result.plan_names]
    assert not any(row.rstrip().endswith("*") for row in rows)
    assert "n flag" not in render_report(demo_result)  # no flagged cell


def test_offset_is_a_plain_number_with_its_meaning(demo_result):
    o = demo_result.outcome("plant-upper")
    assert o.crosscheck_offset_pct == pytest.approx(
        100 * (o.model_evap_mm / o.zhang_evap_mm - 1)
    )
    note = o.crosscheck_note
    assert f"{abs(o.crosscheck_offset_pct):.0f} % more than the Zhang curve" in note
    assert "current plan" in note
    assert "Not flagged" in note


def test_a_plan_that_moves_away_from_the_baseline_is_flagged(demo_result):
    # a plan whose offset moves 10 points from current's: the model and the curve disagree
    # about its change by more than the curve's own mean absolute error (6 %, Zhang et al.
    # 2001)
    o = demo_result.outcome("plant-upper")
    moved = dataclasses.replace(
        o, model_evap_mm=o.zhang_evap_mm * (1 + (o.baseline_offset_pct + 10.0) / 100)
    )
    assert moved.crosscheck_flag
    assert "baseline" in moved.crosscheck_reason
    assert "Flagged" in moved.crosscheck_note


def test_the_baseline_is_flagged_only_outside_the_usual_offset(demo_result):
    current = demo_result.outcome("current")
    assert current.baseline_offset_pct is None
    assert not current.crosscheck_flag
    low, _ = CROSSCHECK_TYPICAL_OFFSET_PCT
    odd = dataclasses.replace(current, model_evap_mm=current.zhang_evap_mm * (1 + (low - 5) / 100))
    assert odd.crosscheck_flag
    assert "usual offset" in odd.crosscheck_reason


def test_reason_rules():
    low, high = CROSSCHECK_TYPICAL_OFFSET_PCT
    middle = 0.5 * (low + high)
    assert crosscheck_reason(middle) == ""
    assert crosscheck_reason(middle, middle + 0.9 * CROSSCHECK_CHANGE_TOLERANCE_PCT) == ""
    assert crosscheck_reason(middle, middle + 1.1 * CROSSCHECK_CHANGE_TOLERANCE_PCT)
    assert crosscheck_reason(high + 1)


def test_every_output_says_what_the_curve_is(demo_result):
    assert ZHANG_CURVE_SENTENCE in comparison_table(demo_result)
    assert ZHANG_CURVE_SENTENCE in render_report(demo_result)
    assert demo_result.summary()["crosscheck"]["curve"] == ZHANG_CURVE_SENTENCE
