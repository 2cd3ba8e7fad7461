"""The README's Python example runs as written (from the repository root)."""

from __future__ import annotations

import re
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_readme_python_example_runs(monkeypatch):
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    blocks = re.findall(r"```python\n(.*?)```", text, flags=re.S)
    blocks = [b for b in blocks if "not run by the tests" not in b.splitlines()[0]]
    assert blocks, "README has no python example"
    monkeypatch.chdir(ROOT)
    for block in blocks:
        namespace: dict = {}
        exec(compile(block, "README.md", "exec"), namespace)  # noqa: S102 - our own README
    assert namespace["result"].change(namespace["edited"]).yield_mm < 0
