"""Dry years read the same everywhere (driest first), and the table's footnote explains "driest".

Issue 12, item 8. The driest 10 % of years are ranked by catchment rain; listing them driest
first in the table, summary.json, the report and the page is our own convention, no source.
"""

from __future__ import annotations

import re

import pytest

from .conftest import DEMO


@pytest.fixture(scope="module")
def demo():
    import coveryield

    return coveryield.compare(DEMO / "plans.toml")


def test_dry_years_are_listed_driest_first_in_table_summary_and_report(demo):
    from coveryield.report_html import render_report
    from coveryield.reports import comparison_table

    rain = demo.outcome("current").annual["rain_mm"]
    assert len(demo.dry_years) >= 2
    assert list(rain.loc[demo.dry_years]) == sorted(rain.loc[demo.dry_years])  # driest first
    expected = ", ".join(str(y) for y in demo.dry_years)

    table = comparison_table(demo)
    assert re.search(r"dry years \(driest 10 % by rain, driest first\): " + expected, table)
    assert demo.summary()["dry_years"] == demo.dry_years
    assert f"driest first: {expected}" in render_report(demo)


def test_table_footnote_explains_driest(demo):
    from coveryield.reports import comparison_table

    table = comparison_table(demo)
    assert f"driest: change in the single driest year ({demo.dry_years[0]})" in table
