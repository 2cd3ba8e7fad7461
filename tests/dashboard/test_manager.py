"""Manager mode: save the edited plan as a new plan file; export tables to a new folder."""

from __future__ import annotations

import json
import shutil

import pandas as pd
import pytest


@pytest.fixture
def manager(demo_comparison, demo_plan, tmp_path):
    from coveryield.dashboard import Dashboard

    plan_copy = tmp_path / "plans.toml"
    shutil.copy(demo_plan, plan_copy)
    return Dashboard(demo_comparison, read_only=False, plan_path=plan_copy)


def test_save_as_new_plan_writes_a_new_file_and_refuses_to_overwrite(manager, tmp_path):
    from coveryield.plans import load_plan

    manager.controls.zone_picker.value = "upper"
    manager.controls.sliders["forest"].value = 55.0
    manager.manager.name_box.value = "upper-half-forest"
    manager.manager.save_button.click()
    assert manager.errors.widget.value == ""
    saved = tmp_path / "plans-upper-half-forest.toml"
    assert saved.is_file()
    assert "plans-upper-half-forest.toml" in manager.manager.status.value
    reloaded = load_plan(saved)
    assert reloaded.plans["upper-half-forest"]["upper"]["forest"] == pytest.approx(0.55)
    mtime = saved.stat().st_mtime_ns
    manager.manager.save_button.click()  # the same name again
    assert "exists" in manager.errors.widget.value
    assert saved.stat().st_mtime_ns == mtime


def test_bad_plan_name_is_refused_with_a_message(manager, tmp_path):
    before = sorted(p.name for p in tmp_path.iterdir())
    manager.manager.name_box.value = "../escape"
    manager.manager.save_button.click()
    assert "plan name" in manager.errors.widget.value
    assert sorted(p.name for p in tmp_path.iterdir()) == before


def test_export_tables_writes_a_complete_new_folder(manager, tmp_path):
    manager.controls.zone_picker.value = "middle"
    manager.controls.sliders["forest"].value = 30.0
    manager.manager.export_button.click()
    assert manager.errors.widget.value == ""
    folders = [p for p in tmp_path.iterdir() if p.is_dir()]
    assert len(folders) == 1
    assert folders[0].name.startswith("plans-export-edited-")
    annual = pd.read_csv(folders[0] / "annual.csv", index_col="year")
    assert "yield_mm" in annual.columns
    summary = json.loads((folders[0] / "summary.json").read_text())
    assert summary["shares"]["middle"]["forest"] == pytest.approx(0.30)
    assert summary["mean_yield_mm"] == pytest.approx(annual["yield_mm"].mean(), rel=1e-6)
    assert "licensed hydrological practice" in summary["caution"]
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".export-")]
    # the export lists what it wrote, so a later --force knows these files are coveryield's
    from coveryield.output_folder import MANIFEST_NAME

    listed = json.loads((folders[0] / MANIFEST_NAME).read_text())["files"]
    assert set(listed) == {"annual.csv", "summary.json"}
