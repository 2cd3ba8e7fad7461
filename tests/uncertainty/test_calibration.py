"""Calibration: recovers a known answer, reproduces its fit, refuses bad observed records."""

from __future__ import annotations

import hashlib
import json

import numpy as np
import pandas as pd
import pytest

import coveryield
from coveryield.cli import main
from coveryield.errors import CalibrationError, ObservedFlowError
from coveryield.metrics import kge_2012
from coveryield.observed import read_observed_flow
from coveryield.uncertainty.calibration import (
    MIN_OBSERVED_DAYS,
    calibrate,
    split_periods,
    with_values,
)

#: The "true" parameters of the synthetic observed flow.
TRUTH = {"surface_resistance_factor": 1.3, "root_zone_factor": 0.8, "recession_days": 20.0,
         "quickflow_recession_days": 4.0}
#: Recovery tolerance: each fitted value within 10 % of the truth (our choice: the flow carries
#: 10 % multiplicative noise, and the two factors partly trade off against each other).
TOLERANCE = 0.10
#: Looser for the fast store's constant (our choice, measured): daily noise raises the observed
#: flow's variability, which KGE′'s variability term rewards with a flashier or slower fast store
#: (with the other three at their true values, KGE′ of the noisy record is best near 2 d, not 4 d),
#: so only its order of magnitude is identifiable from noisy daily flow.
TOLERANCE_BY_NAME = {"quickflow_recession_days": 0.5}


def _current_flow(plan_file) -> pd.Series:
    result = coveryield.compare(plan_file)
    return result.outcome("current").flow_m3s


def _write_flow(path, flow: pd.Series, *, blank_every: int = 97) -> None:
    text = flow.map(lambda v: f"{v:.6f}").to_numpy(dtype=object)
    text[::blank_every] = ""  # gauge outages: missing days, reported and never filled
    pd.DataFrame({"date": flow.index.strftime("%Y-%m-%d"), "flow_m3s": text}).to_csv(
        path, index=False)


@pytest.fixture(scope="module")
def synthetic(small_plan, tmp_path_factory):
    """Observed flow made by the model with TRUTH, plus 10 % lognormal noise and gaps."""
    flow = _current_flow(with_values(small_plan, TRUTH))
    rng = np.random.default_rng(20240611)
    noisy = flow * np.exp(rng.normal(0.0, 0.10, len(flow)))
    path = tmp_path_factory.mktemp("observed") / "observed.csv"
    _write_flow(path, noisy)
    return path


@pytest.fixture(scope="module")
def fitted(small_plan, small_climate, synthetic):
    return calibrate(small_plan, read_observed_flow(synthetic), climate=small_climate)


def test_calibration_recovers_the_known_parameters(fitted):
    for p in fitted.parameters:
        tolerance = TOLERANCE_BY_NAME.get(p["name"], TOLERANCE)
        assert p["start"] != pytest.approx(TRUTH[p["name"]], rel=TOLERANCE)  # it had to move
        assert p["value"] == pytest.approx(TRUTH[p["name"]], rel=tolerance), p


def test_validation_kge_above_0_9(fitted):
    assert fitted.scores["validation"]["kge"] > 0.9
    assert fitted.scores["calibration"]["kge"] > 0.9
    assert fitted.scores["validation"]["kge"] > fitted.start_scores["validation"]["kge"]
    assert abs(fitted.scores["validation"]["bias_pct"]) < 5.0


def test_factor_ranges_hold_the_fit(fitted):
    for p in fitted.parameters:
        if p["section"] == "adjustments":
            low, high = p["range"]
            assert p["bounds"][0] <= low <= p["value"] <= high <= p["bounds"][1]
            assert high > low
        else:
            assert p["range"] is None
    ranges = fitted.plan_file.adjustments.ranges
    assert set(ranges) == {"surface_resistance_factor", "root_zone_factor"}


def test_periods_split_the_observed_days(fitted):
    periods = fitted.periods
    assert periods.calibration[-1] < pd.Timestamp(f"{periods.split_year}-01-01")
    assert periods.validation[0] >= pd.Timestamp(f"{periods.split_year}-01-01")
    assert periods.calibration[0] >= pd.Timestamp("1992-01-01")  # after the warm-up year
    observed = fitted.observed.flow_m3s
    assert observed.reindex(periods.calibration).notna().all()  # missing days never scored
    assert fitted.scores["calibration"]["n_days"] == len(periods.calibration)


def test_same_input_same_fit(small_plan, small_climate, synthetic, fitted):
    again = calibrate(small_plan, read_observed_flow(synthetic), climate=small_climate)
    assert [p["value"] for p in again.parameters] == [p["value"] for p in fitted.parameters]


def _digest(path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def test_calibrate_command_writes_outputs_and_compare_reproduces_the_fit(
        small_plan_path, synthetic, tmp_path, capsys):
    before = _digest(small_plan_path)
    out = tmp_path / "cal"
    assert main(["calibrate", str(small_plan_path), "--observed", str(synthetic), "--out",
                 str(out), "--split", "1995"]) == 0
    printed = capsys.readouterr().out
    assert "validation" in printed
    assert "KGE′" in printed
    assert "licensed hydrological practice" in printed
    assert _digest(small_plan_path) == before  # the input plan file is never overwritten
    assert sorted(p.name for p in out.iterdir()) == [
        "README.txt", "calibrated.toml", "calibration.json", "fit_flow.csv", "report.html",
        "written-by-coveryield.json"]
    report = json.loads((out / "calibration.json").read_text())
    for period in ("calibration", "validation"):
        for key in ("kge", "nse", "bias_pct", "log_nse", "kge_2009", "start", "end", "n_days"):
            assert key in report[period]
    assert report["split_year"] == 1995
    assert report["validation"]["start"] == "1995-01-01"
    assert set(report["parameters"]) == set(TRUTH)
    # `coveryield compare calibrated.toml` gives the same simulated flow and the same scores
    again = coveryield.compare(out / "calibrated.toml")
    flow = again.outcome("current").flow_m3s
    fit = pd.read_csv(out / "fit_flow.csv")
    np.testing.assert_allclose(flow.to_numpy(), fit["simulated_m3s"], atol=1e-5)  # %.5f file
    days = pd.DatetimeIndex(fit.loc[fit["period"] == "validation", "date"])
    observed = read_observed_flow(synthetic).flow_m3s.reindex(days)
    assert kge_2012(flow.reindex(days), observed) == pytest.approx(
        report["validation"]["kge"], abs=1e-12)
    # an ensemble on the calibrated plan file draws each factor from the calibration's range
    from coveryield.plans import load_plan
    from coveryield.uncertainty.sampling import EnsembleDesign

    design = EnsembleDesign.for_plan(load_plan(out / "calibrated.toml"))
    factors = {d.name: (d.low, d.high) for d in design.dimensions if d.base is None}
    assert factors == {name: tuple(report["parameters"][name]["range"]) for name in factors}
    assert set(factors) == {"surface_resistance_factor", "root_zone_factor"}
    html = (out / "report.html").read_text()
    assert "<svg" in html
    assert "Flow duration curves" in html
    assert "licensed hydrological practice" in html


@pytest.mark.parametrize(("rows", "fragment"), [
    ("2030-01-01,1.0\n2030-01-02,1.1\n", "does not overlap the climate record"),
    ("".join(f"{d:%Y-%m-%d},1.0\n" for d in pd.date_range("1993-01-01", periods=400)),
     "only 400 observed days (1993-01-01 to 1994-02-04) overlap the climate record"),
    ("1995-01-01,-2\n1995-01-02,abc\n", "line 2 (1995-01-01): flow_m3s = -2 is negative"),
])
def test_bad_observed_records_exit_2_and_write_nothing(small_plan_path, tmp_path, capsys, rows,
                                                       fragment):
    flow = tmp_path / "flow.csv"
    flow.write_text("date,flow_m3s\n" + rows)
    out = tmp_path / "cal"
    assert main(["calibrate", str(small_plan_path), "--observed", str(flow), "--out",
                 str(out)]) == 2
    err = capsys.readouterr().err
    assert fragment in err, err
    assert str(flow) in err
    assert "Traceback" not in err
    assert not out.exists()
    assert [p.name for p in tmp_path.iterdir()] == ["flow.csv"]


def test_short_record_is_refused_before_any_simulation(small_climate, tmp_path):
    days = pd.date_range("1993-01-01", periods=MIN_OBSERVED_DAYS - 1)
    flow = tmp_path / "flow.csv"
    _write_flow(flow, pd.Series(1.0, index=days), blank_every=10**6)
    with pytest.raises(ObservedFlowError, match="expected at least 730"):
        split_periods(read_observed_flow(flow), small_climate.daily.index)


def test_a_split_that_leaves_a_period_too_short(synthetic, small_climate):
    with pytest.raises(CalibrationError, match="split year 1998: the validation period holds"):
        split_periods(read_observed_flow(synthetic), small_climate.daily.index, 1998)


def test_a_non_empty_out_folder_is_refused_before_calibrating(small_plan_path, synthetic,
                                                              tmp_path, capsys, monkeypatch):
    import coveryield.uncertainty.calibration as calibration

    monkeypatch.setattr(calibration, "calibrate", _forbidden)  # refused before any work
    out = tmp_path / "cal"
    out.mkdir()
    (out / "notes.txt").write_text("mine")
    assert main(["calibrate", str(small_plan_path), "--observed", str(synthetic), "--out",
                 str(out)]) == 2
    assert "folder is not empty" in capsys.readouterr().err
    assert [p.name for p in out.iterdir()] == ["notes.txt"]


def test_force_never_replaces_the_observed_flow_file(small_plan_path, synthetic, tmp_path,
                                                     capsys, monkeypatch):
    # issue 12 item 1: an input of the run, whatever its name, is never an output
    import coveryield.uncertainty.calibration as calibration

    monkeypatch.setattr(calibration, "calibrate", _forbidden)
    out = tmp_path / "cal"
    out.mkdir()
    observed = out / "fit_flow.csv"  # named like an output of calibrate
    observed.write_bytes(synthetic.read_bytes())
    before = observed.read_bytes()
    assert main(["calibrate", str(small_plan_path), "--observed", str(observed), "--out",
                 str(out), "--force"]) == 2
    assert "observed-flow file of this run" in capsys.readouterr().err
    assert observed.read_bytes() == before


def _forbidden(*args, **kwargs):
    raise AssertionError("calibrated although the output folder was refused")


def test_progress_is_shown_on_request(small_plan, small_climate, synthetic, capsys):
    calibrate(small_plan, read_observed_flow(synthetic), climate=small_climate, progress=True)
    assert "calibration runs" in capsys.readouterr().err
