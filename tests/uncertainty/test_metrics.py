"""Fit scores against hand computations and two registry implementations used as oracles."""

from __future__ import annotations

import math

import numpy as np
import pytest

from coveryield.metrics import (
    bias_pct,
    fit_scores,
    kge_2009,
    kge_2012,
    kge_parts,
    log_nse,
    nse,
    paired,
)

OBSERVED = np.array([1.0, 2.0, 3.0, 4.0, 5.0])
SIMULATED = np.array([2.0, 2.0, 3.0, 4.0, 4.0])


def test_nse_by_hand():
    # Nash & Sutcliffe (1970) eq. 1: sum of squared errors 1+0+0+0+1 = 2, spread of the
    # observations about their mean 4+1+0+1+4 = 10, so NSE = 1 - 2/10 (hand computation).
    assert nse(SIMULATED, OBSERVED) == pytest.approx(0.8, abs=1e-12)


def test_kge_by_hand():
    # Gupta et al. (2009) eq. 9, by hand: both means are 3 (beta = 1); population variances
    # 0.8 and 2 (alpha = sqrt(0.4)); covariance 6/5 so r = 1.2 / sqrt(1.6).
    r, alpha, beta, gamma = kge_parts(SIMULATED, OBSERVED)
    assert r == pytest.approx(1.2 / math.sqrt(1.6), abs=1e-12)
    assert alpha == pytest.approx(math.sqrt(0.4), abs=1e-12)
    assert beta == pytest.approx(1.0, abs=1e-12)
    assert gamma == pytest.approx(alpha, abs=1e-12)  # equal means: CV ratio = sd ratio
    expected = 1.0 - math.sqrt((r - 1) ** 2 + (alpha - 1) ** 2)
    assert kge_2009(SIMULATED, OBSERVED) == pytest.approx(expected, abs=1e-12)
    assert expected == pytest.approx(0.628891, abs=1e-6)  # the same by hand to 6 decimals
    # Kling et al. (2012) eq. 3: with equal means KGE' = KGE
    assert kge_2012(SIMULATED, OBSERVED) == pytest.approx(expected, abs=1e-12)


def test_doubled_flow_separates_the_two_kge_forms():
    # s = 2 o: r = 1, beta = 2, alpha = 2, gamma = 1, so KGE = 1 - sqrt(2) (Gupta et al. 2009
    # eq. 9) while KGE' = 1 - 1 = 0 (Kling et al. 2012 eq. 3): the bias is counted once.
    assert kge_2009(2 * OBSERVED, OBSERVED) == pytest.approx(1 - math.sqrt(2), abs=1e-12)
    assert kge_2012(2 * OBSERVED, OBSERVED) == pytest.approx(0.0, abs=1e-12)
    assert bias_pct(2 * OBSERVED, OBSERVED) == pytest.approx(100.0, abs=1e-12)


def test_the_observed_mean_as_a_simulation():
    # NSE 0 by definition (Nash & Sutcliffe 1970); KGE 1 - sqrt(2) ~ -0.41 with r taken as 0
    # (Knoben et al. 2019, from memory).
    mean = np.full(5, OBSERVED.mean())
    assert nse(mean, OBSERVED) == pytest.approx(0.0, abs=1e-12)
    assert kge_2009(mean, OBSERVED) == pytest.approx(1 - math.sqrt(2), abs=1e-12)


def test_perfect_fit_scores():
    scores = fit_scores(OBSERVED, OBSERVED)
    for key in ("kge", "kge_2009", "nse", "log_nse"):
        assert scores[key] == pytest.approx(1.0, abs=1e-12)
    assert scores["bias_pct"] == pytest.approx(0.0, abs=1e-12)
    assert scores["n_days"] == 5


def test_log_nse_is_nse_of_offset_logs():
    # offset of one hundredth of the mean observed flow (Pushpalatha et al. 2012, from memory)
    eps = 0.01 * OBSERVED.mean()
    expected = nse(np.log(SIMULATED + eps), np.log(OBSERVED + eps))
    assert log_nse(SIMULATED, OBSERVED) == pytest.approx(expected, abs=1e-12)
    assert log_nse(np.zeros(5), OBSERVED) < 0  # zero flows allowed, and scored badly


def test_missing_days_are_dropped_only_by_paired():
    s = np.array([1.0, np.nan, 3.0, 4.0])
    o = np.array([1.5, 2.0, np.nan, 3.5])
    kept_s, kept_o = paired(s, o)
    assert kept_s.tolist() == [1.0, 4.0]
    assert kept_o.tolist() == [1.5, 3.5]
    with pytest.raises(ValueError, match="finite"):
        nse(s, o)
    assert fit_scores(s, o)["n_days"] == 2


@pytest.mark.parametrize(("s", "o", "message"), [
    ([1.0, 2.0], [1.0, 2.0, 3.0], "the same"),
    ([1.0], [1.0], "at least 2"),
    ([1.0, 2.0], [2.0, 2.0], "all equal"),
])
def test_bad_input_is_refused_clearly(s, o, message):
    with pytest.raises(ValueError, match=message):
        nse(s, o) if message != "the same" else kge_2012(s, o)


def _series(seed: int, n: int = 400) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    observed = rng.gamma(0.8, 2.0, n) + 0.05
    simulated = observed * rng.lognormal(0.1, 0.4, n) + rng.normal(0.0, 0.1, n).clip(0)
    return simulated, observed


@pytest.mark.parametrize("seed", range(5))
def test_agrees_with_hydroeval(seed):
    # hydroeval (PyPI), a reference implementation used as a test oracle only
    import hydroeval

    s, o = _series(seed)
    assert nse(s, o) == pytest.approx(hydroeval.evaluator(hydroeval.nse, s, o)[0], rel=1e-10)
    assert kge_2009(s, o) == pytest.approx(
        hydroeval.evaluator(hydroeval.kge, s, o)[0][0], rel=1e-10)
    assert kge_2012(s, o) == pytest.approx(
        hydroeval.evaluator(hydroeval.kgeprime, s, o)[0][0], rel=1e-10)
    # hydroeval counts the bias the other way round (positive = too little water)
    assert bias_pct(s, o) == pytest.approx(
        -hydroeval.evaluator(hydroeval.pbias, s, o)[0], rel=1e-10)


@pytest.mark.parametrize("seed", range(5, 10))
def test_agrees_with_hydroerr(seed):
    # HydroErr (PyPI), a second reference implementation used as a test oracle only
    import HydroErr

    s, o = _series(seed)
    assert nse(s, o) == pytest.approx(HydroErr.nse(s, o), rel=1e-10)
    assert kge_2009(s, o) == pytest.approx(HydroErr.kge_2009(s, o), rel=1e-10)
    assert kge_2012(s, o) == pytest.approx(HydroErr.kge_2012(s, o), rel=1e-10)
