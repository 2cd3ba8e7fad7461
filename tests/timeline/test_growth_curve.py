"""The Chapman-Richards growth curve and the built-in forest's default trajectory."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from coveryield.covers import BUILTIN_COVERS, DEFAULT_GROWTH, Growth
from coveryield.physics.growth import (
    MATURITY_FRACTION,
    chapman_richards,
    chapman_richards_rate,
)


def test_shape_one_is_the_monomolecular_curve():
    # Richards (1959) (from memory): with p = 1 the curve is 1 - exp(-k a), the monomolecular
    # (Mitscherlich) form; its value at a = 1/k is 1 - 1/e.
    k = 0.2
    ages = np.array([0.0, 1.0, 5.0, 20.0])
    np.testing.assert_allclose(chapman_richards(ages, k, 1.0), 1.0 - np.exp(-k * ages))
    assert chapman_richards(1.0 / k, k, 1.0) == pytest.approx(1.0 - np.exp(-1.0))


@pytest.mark.parametrize("shape", [1.5, 2.0, 3.0])
def test_inflection_where_the_closed_form_puts_it(shape):
    # Derived from the curve (C): d2g/da2 = 0 at a = ln(p)/k, where g = ((p - 1)/p)^p.
    k = 0.17
    a = np.log(shape) / k
    step = 1e-3
    second = (
        chapman_richards(a + step, k, shape)
        - 2 * chapman_richards(a, k, shape)
        + chapman_richards(a - step, k, shape)
    ) / step**2
    assert abs(second) < 1e-6
    assert chapman_richards(a, k, shape) == pytest.approx(((shape - 1) / shape) ** shape)


@settings(max_examples=60, deadline=None)
@given(st.floats(1.0, 200.0), st.floats(1.0, 10.0))
def test_rate_puts_95_percent_at_the_maturity_age(maturity, shape):
    # Our convention: the maturity age is where the stand is 95 % grown.
    k = chapman_richards_rate(maturity, shape)
    assert chapman_richards(maturity, k, shape) == pytest.approx(MATURITY_FRACTION, rel=1e-9)
    ages = np.linspace(0.0, 3 * maturity, 50)
    g = chapman_richards(ages, k, shape)
    assert g[0] == 0.0
    assert (np.diff(g) >= 0).all()
    assert (g < 1.0).all()


def test_default_forest_growth_and_its_stated_sources():
    # Brown et al. (2013), abstract: 8-25 years to a new equilibrium; Farley et al. (2005),
    # abstract: losses grew with plantation age for at least 20 years. Our default: 95 % at 20.
    growth = BUILTIN_COVERS["forest"].growth
    assert growth == DEFAULT_GROWTH
    assert 8.0 <= growth.maturity_years <= 25.0
    assert growth.fraction(growth.maturity_years) == pytest.approx(0.95)
    assert growth.rotation_years is None
    for name in ("pasture", "crop", "water"):
        assert BUILTIN_COVERS[name].growth is None


def test_growth_refuses_impossible_values():
    from pydantic import ValidationError

    for bad in (
        {"maturity_years": 0},
        {"shape": 0.5},
        {"rotation_years": 1},
        {"start": ""},
        {"maturity": 10},
    ):
        with pytest.raises(ValidationError):
            Growth.model_validate(bad)


def test_covers_command_shows_the_growth_and_its_source(capsys):
    from coveryield.cli import main

    assert main(["covers"]) == 0
    out = capsys.readouterr().out
    assert "forest: grows after planting" in out
    assert "95 % grown at 20 yr (p 1.5)" in out
    assert "Brown et al. (2013)" in out
