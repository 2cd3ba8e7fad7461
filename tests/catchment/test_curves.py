"""Long-term curves against their published forms and known properties."""

import numpy as np
import pytest

from coveryield.physics.curves import (
    budyko_evaporation,
    fu_evaporation,
    fu_omega_matching_zhang,
    zhang_evaporation,
)


@pytest.mark.parametrize(
    ("w", "expected_ratio"),
    [
        # Zhang, Dawes & Walker (2001) eq. 7 at phi = 1: E/P = (1 + w) / (2 + w)
        (2.0, 0.75),  # forest, w = 2.0 (Zhang et al. 2001)
        (0.5, 0.60),  # grass, w = 0.5 (Zhang et al. 2001)
    ],
)
def test_zhang_at_unit_aridity(w, expected_ratio):
    assert zhang_evaporation(1000.0, 1000.0, w) == pytest.approx(1000.0 * expected_ratio)


def test_zhang_forest_evaporates_more_than_grass_everywhere():
    # Zhang et al. (2001): w = 2 (forest) lies above w = 0.5 (grass) for every aridity index
    phi = np.linspace(0.1, 5, 50)
    assert np.all(zhang_evaporation(1.0, phi, 2.0) > zhang_evaporation(1.0, phi, 0.5))


def test_curves_respect_water_and_energy_limits():
    # Budyko framework (Budyko 1974): E <= P and E <= E0. Fu's and Budyko's forms meet both
    # limits by construction; Zhang's curve meets the water limit only (with w = 2 it exceeds E0
    # in very wet climates, phi < ~0.3: recomputed from eq. 7, e.g. phi = 0.2 gives E = 1.09 E0).
    rain = 1000.0
    for pet in (200.0, 800.0, 1000.0, 1500.0, 4000.0):
        for e in (fu_evaporation(rain, pet, 2.6), budyko_evaporation(rain, pet)):
            assert e <= min(rain, pet) + 1e-9
        assert zhang_evaporation(rain, pet, 2.0) <= rain


def test_fu_with_omega_2_6_close_to_budyko():
    # Fact of the trade (from memory): omega ~ 2.6 reproduces Budyko's curve closely
    phi = np.linspace(0.3, 3.0, 28)
    fu = fu_evaporation(1.0, phi, 2.6)
    budyko = budyko_evaporation(1.0, phi)
    assert np.max(np.abs(fu - budyko)) < 0.03


def test_budyko_at_unit_aridity():
    # Budyko (1974): E/P = sqrt(tanh(1) (1 - exp(-1))) at phi = 1, recomputed by hand = 0.6938
    assert budyko_evaporation(1.0, 1.0) == pytest.approx(0.6938, abs=1e-4)


def test_fu_omega_matched_to_zhang_follows_the_same_curve():
    phi = np.linspace(0.2, 3.0, 15)
    for w in (0.5, 2.0):
        omega = fu_omega_matching_zhang(w)
        assert omega > 1.0
        gap = np.abs(fu_evaporation(1.0, phi, omega) - zhang_evaporation(1.0, phi, w))
        assert gap.max() < 0.06
