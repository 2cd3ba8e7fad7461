"""Fixtures of the dashboard tests: the demo catchment compared once per session."""

from __future__ import annotations

import pytest


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
