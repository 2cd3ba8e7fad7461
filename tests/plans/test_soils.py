"""Soil textures -> available water capacity."""

from __future__ import annotations

import pytest

from coveryield.soils import SOIL_TEXTURES, available_water_capacity

# FAO-56 (Allen et al. 1998), Table 19, theta_FC - theta_WP ranges [m3/m3] (from memory)
FAO56_TABLE19_RANGES = {
    "sand": (0.05, 0.11), "loamy_sand": (0.06, 0.12), "sandy_loam": (0.11, 0.15),
    "loam": (0.13, 0.18), "silt_loam": (0.13, 0.19), "silt": (0.16, 0.20),
    "silty_clay_loam": (0.13, 0.18), "silty_clay": (0.13, 0.19), "clay": (0.12, 0.20),
}


@pytest.mark.parametrize("texture", sorted(FAO56_TABLE19_RANGES))
def test_capacity_is_the_middle_of_the_fao56_range(texture):
    low, high = FAO56_TABLE19_RANGES[texture]
    assert available_water_capacity(texture) == pytest.approx((low + high) / 2, abs=1e-9)


def test_every_texture_has_a_range():
    assert set(SOIL_TEXTURES) == set(FAO56_TABLE19_RANGES)


@pytest.mark.parametrize("spelling", ["Sandy loam", "sandy-loam", " SANDY_LOAM "])
def test_spelling_is_forgiven(spelling):
    assert available_water_capacity(spelling) == SOIL_TEXTURES["sandy_loam"]


def test_unknown_texture_lists_known_ones():
    with pytest.raises(KeyError, match="unknown soil texture 'peat'; known: sand, loamy_sand"):
        available_water_capacity("peat")
