"""The analysts' notebook runs from top to bottom (nbclient, working folder = its folder)."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

NOTEBOOK = Path(__file__).resolve().parents[2] / "dashboards" / "analyst.ipynb"


@pytest.mark.slow
def test_analyst_notebook_runs(tmp_path):
    import nbformat
    from nbclient import NotebookClient

    nb = nbformat.read(NOTEBOOK, as_version=4)
    repo = str(NOTEBOOK.parents[1])
    env_before = {k: os.environ.get(k) for k in ("PYTHONPATH", "IPYTHONDIR")}
    os.environ["PYTHONPATH"] = os.pathsep.join(
        p for p in (repo, env_before["PYTHONPATH"] or "") if p)
    os.environ["IPYTHONDIR"] = str(tmp_path / "ipython")  # no start-up scripts of this machine
    try:
        client = NotebookClient(nb, timeout=600, kernel_name="python3",
                                resources={"metadata": {"path": str(NOTEBOOK.parent)}})
        client.execute()
    finally:
        for key, value in env_before.items():
            if value is None:
                os.environ.pop(key, None)
            else:
                os.environ[key] = value
    outputs = [o for cell in nb.cells if cell.cell_type == "code" for o in cell.outputs]
    assert not [o for o in outputs if o.output_type == "error"]
    text = "\n".join(str(o.get("text", "")) + str(o.get("data", {}).get("text/plain", ""))
                     for o in outputs)
    assert "Driest 10 % of years" in text
    assert "mean yield" in text
    assert "once mature" in text  # the years-after-planting section ran
    last = nb.cells[-1].outputs
    assert any("application/vnd.jupyter.widget-view+json" in o.get("data", {}) for o in last)
