"""Built-in covers, derived covers, the Kc calendar and the covers command."""

from __future__ import annotations

import numpy as np
import pytest
from pydantic import ValidationError

from coveryield.cli import main
from coveryield.covers import BUILTIN_COVERS, PARAMETER_INFO, KcCalendar, derive_cover


def test_builtin_covers_and_their_kinds():
    assert set(BUILTIN_COVERS) == {"forest", "pasture", "crop", "water"}
    assert BUILTIN_COVERS["water"].is_water
    assert not BUILTIN_COVERS["forest"].is_water


def test_pasture_is_the_fao56_reference_surface():
    # FAO-56 (Allen et al. 1998): reference grass albedo 0.23, rs 70 s/m, LAI = 24 x 0.12 = 2.88
    pasture = BUILTIN_COVERS["pasture"]
    assert pasture.albedo == 0.23
    assert pasture.rs_s_per_m == 70.0
    assert pasture.lai == pytest.approx(2.88)


def test_rooting_and_depletion_follow_fao56_table_22():
    # FAO-56 Table 22: conifer trees Zr 1.0-1.5 m, p 0.70; grazing pasture Zr 0.5-1.5 m, p 0.60;
    # spring wheat Zr 1.0-1.5 m, p 0.55
    for name, (zr_lo, zr_hi, p) in {
        "forest": (1.0, 1.5, 0.70),
        "pasture": (0.5, 1.5, 0.60),
        "crop": (1.0, 1.5, 0.55),
    }.items():
        cover = BUILTIN_COVERS[name]
        assert zr_lo <= cover.rooting_depth_m <= zr_hi
        assert cover.depletion_fraction == p


def test_every_parameter_has_unit_range_and_source():
    for unit, typical, source in PARAMETER_INFO.values():
        assert unit
        assert typical
        assert source


def test_kc_calendar_follows_fao56_eq66():
    # FAO-56 Table 11 spring wheat: stages 20/25/60/30 d; Table 17 basal Kcb 0.15 / 1.10 / 0.15;
    # eq. 66: constant in the initial and mid stages, linear in development and late season
    cal = KcCalendar()
    planting = cal.planting_doy_north
    days = planting + np.array([0, 19, 20 + 12, 45, 104, 105 + 15, 134, 135])
    kc, in_season = cal.kc(days)
    assert kc[0] == pytest.approx(0.15)
    assert kc[1] == pytest.approx(0.15)
    assert kc[2] == pytest.approx(0.15 + 12 / 25 * (1.10 - 0.15))
    assert kc[3] == pytest.approx(1.10)
    assert kc[4] == pytest.approx(1.10)
    assert kc[5] == pytest.approx(1.10 + 15 / 30 * (0.15 - 1.10))
    assert in_season[:7].all()
    assert not in_season[7]
    assert kc[7] == 0.0


def test_canopy_store_follows_leaf_area():
    # Dickinson (1984): about 0.2 mm per unit LAI (from memory). Built-in covers give no
    # capacity and take it from their LAI; a measured capacity fixes the store per unit LAI,
    # so a change of leaf area moves the store in proportion.
    forest, pasture = BUILTIN_COVERS["forest"], BUILTIN_COVERS["pasture"]
    assert forest.canopy_capacity_at(forest.lai) == pytest.approx(0.2 * 6.0)
    assert pasture.canopy_capacity_at(pasture.lai) == pytest.approx(0.2 * 2.88)
    measured = derive_cover("spruce", "forest", {"canopy_capacity_mm": 1.5, "lai": 5.0})
    assert measured.capacity_per_lai_mm == pytest.approx(0.3)
    assert measured.canopy_capacity_at(2.5) == pytest.approx(0.75)
    # Beer's law cover fraction (Campbell & Norman 1998, from memory): 1 - exp(-0.5 LAI)
    assert pasture.cover_fraction_at(2.88) == pytest.approx(1.0 - np.exp(-1.44))


def test_grass_store_in_published_range():
    # Grass interception storage: 1.0 mm (curlymesquite) and 1.8 mm (sideoats grama) per site,
    # Thurow et al. (1987, abstract); grass 0.5-1 mm (from memory). 0.2 mm per unit LAI on the
    # FAO-56 reference grass LAI 2.88 gives 0.58 mm, at the low end for a grazed sward.
    assert 0.5 <= BUILTIN_COVERS["pasture"].canopy_capacity_at(2.88) <= 1.8


def test_southern_sites_plant_half_a_year_later():
    cal = KcCalendar()
    north, _ = cal.kc(np.arange(1, 366))
    south, _ = cal.kc(np.arange(1, 366), latitude_deg=-41.0)
    np.testing.assert_allclose(np.roll(north, 182), south)


def test_derived_cover_keeps_its_base_and_overrides():
    young = derive_cover("young-pine", "forest", {"height_m": 6.0, "lai": 3.0})
    assert young.base == "forest"
    assert young.height_m == 6.0
    assert young.albedo == BUILTIN_COVERS["forest"].albedo


def test_derived_cover_rejects_unknown_or_impossible_values():
    with pytest.raises(ValidationError):
        derive_cover("x", "forest", {"leaf_colour": "green"})
    with pytest.raises(ValidationError):
        derive_cover("x", "forest", {"albedo": 1.4})


def test_covers_command_lists_parameters_with_units_and_sources(capsys):
    assert main(["covers"]) == 0
    out = capsys.readouterr().out
    for expected in ("rs_s_per_m", "s m-1", "FAO-56 Table 22", "forest", "water"):
        assert expected in out
    assert "water_depth_m" in out
    assert "water_fetch_m" in out and "McJannet" in out
    assert "Kcb" in out
