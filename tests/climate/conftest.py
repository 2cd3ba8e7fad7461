"""Helpers for the climate-record tests: write a CSV from text and read it."""

from __future__ import annotations

import textwrap

import pytest


@pytest.fixture
def write_csv(tmp_path):
    """Write dedented CSV text to a file in tmp_path and return its path."""

    def write(text: str, name: str = "climate.csv"):
        path = tmp_path / name
        path.write_text(textwrap.dedent(text).lstrip("\n"), encoding="utf-8")
        return path

    return write
