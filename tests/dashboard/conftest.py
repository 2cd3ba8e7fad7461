"""Fixtures of the dashboard tests: the demo catchment compared once per session."""

from __future__ import annotations

import warnings

import pytest

# bqplot's scale package (bqscales) builds a trait the way traitlets deprecates, at import time;
# the warning is attributed to bqscales, which pyproject's filters do not name yet. Import it once
# here with that one warning silenced (suggested pyproject filter:
# "ignore::DeprecationWarning:bqscales.*").
with warnings.catch_warnings():
    warnings.filterwarnings("ignore", category=DeprecationWarning, module="bqscales.*")
    import bqplot  # noqa: F401


@pytest.fixture(scope="session")
def demo_plan():
    from coveryield.demo import demo_plan_path

    return demo_plan_path()


@pytest.fixture(scope="session")
def demo_comparison(demo_plan):
    import coveryield

    return coveryield.compare(demo_plan)


@pytest.fixture
def dashboard(demo_comparison):
    """A read-only dashboard on the demo catchment, built without a browser."""
    from coveryield.dashboard import Dashboard

    return Dashboard(demo_comparison, read_only=True)
