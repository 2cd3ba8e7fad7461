"""A batch task runs the engine on one thread: the batch's parallelism is across catchments."""

from __future__ import annotations

import coveryield.comparison
from coveryield.batchrun import task
from coveryield.engine import threads
from coveryield.errors import CoveryieldError


def test_a_batch_task_runs_the_engine_on_one_thread(monkeypatch, tmp_path):
    # a batch spreads catchments over the workers' threads; its tasks must not compete with them
    seen = []

    def spy(plan_file, *args, **kwargs):
        seen.append(threads.threads_for(1_000))
        raise CoveryieldError("stop here")

    monkeypatch.setattr(coveryield.comparison, "compare", spy)
    monkeypatch.setattr("coveryield.plans.load_plan", lambda path: _FakePlan())
    monkeypatch.setattr("coveryield.batchrun.layout.input_fingerprint", lambda *a: "x")
    outcome = task.run_catchment(str(tmp_path / "plan.toml"))
    assert seen == [1] and outcome.message == "stop here"


class _FakePlan:
    source = "plan.toml"

    class catchment:  # noqa: N801 - stands in for the plan's catchment section
        climate = "climate.csv"
