"""The share rule of the dashboard: shares sum to 100 %, held covers keep theirs (pure Python).

The rule (proportional rebalancing of the covers not held; over all zones, one scale factor for
the zones that have the cover) is common practice, no source; these tests check its stated
properties, not numbers from elsewhere.
"""

from __future__ import annotations

import pytest
from hypothesis import given
from hypothesis import strategies as st

from coveryield.dashboard.state import SHARE_QUANTUM, rebalance, rebalance_zone

COVERS = ("forest", "pasture", "crop", "water")


def test_raising_one_cover_takes_from_the_others_in_proportion():
    new = rebalance_zone({"forest": 0.2, "pasture": 0.6, "crop": 0.2}, "forest", 0.6)
    assert new == pytest.approx({"forest": 0.6, "pasture": 0.3, "crop": 0.1})


def test_lowering_gives_back_in_proportion_or_equally_when_all_are_zero():
    new = rebalance_zone({"forest": 0.5, "pasture": 0.3, "crop": 0.2}, "forest", 0.0)
    assert new == pytest.approx({"forest": 0.0, "pasture": 0.6, "crop": 0.4})
    new = rebalance_zone({"forest": 1.0, "pasture": 0.0, "crop": 0.0}, "forest", 0.4)
    assert new == pytest.approx({"forest": 0.4, "pasture": 0.3, "crop": 0.3})


def test_held_cover_keeps_its_share_and_limits_the_move():
    shares = {"forest": 0.2, "pasture": 0.5, "crop": 0.3}
    new = rebalance_zone(shares, "forest", 0.95, held=["crop"])
    assert new == pytest.approx({"forest": 0.7, "pasture": 0.0, "crop": 0.3})


def test_nothing_moves_when_every_other_cover_is_held():
    shares = {"forest": 0.2, "pasture": 0.8}
    assert rebalance_zone(shares, "forest", 0.5, held=["pasture"]) == shares


def test_all_zones_moves_the_area_weighted_share_by_the_same_proportion():
    shares = {"a": {"forest": 0.4, "pasture": 0.6}, "b": {"forest": 0.2, "pasture": 0.8}}
    weights = {"a": 0.5, "b": 0.5}
    lowered = rebalance(shares, weights, "forest", 0.15)  # from 0.30: halved in each zone
    assert lowered["a"]["forest"] == pytest.approx(0.2)
    assert lowered["b"]["forest"] == pytest.approx(0.1)
    raised = rebalance(shares, weights, "forest", 0.39)  # from 0.30: x1.3 in each zone
    assert raised["a"]["forest"] == pytest.approx(0.52)
    assert raised["b"]["forest"] == pytest.approx(0.26)


def test_all_zones_never_puts_a_cover_into_a_zone_without_it():
    # issue 12, item 5: raising forest over all zones once planted a zone that had none
    shares = {"a": {"forest": 0.4, "pasture": 0.6}, "b": {"forest": 0.0, "pasture": 1.0}}
    raised = rebalance(shares, {"a": 0.5, "b": 0.5}, "forest", 0.3)
    assert raised["b"] == shares["b"]
    assert raised["a"]["forest"] == pytest.approx(0.6)  # all of the move in zone a
    # beyond what zone a can take: zone a is full, zone b still has none
    full = rebalance(shares, {"a": 0.5, "b": 0.5}, "forest", 0.9)
    assert full["a"]["forest"] == pytest.approx(1.0)
    assert full["b"]["forest"] == 0.0


def test_all_zones_fills_a_capped_zone_and_scales_the_rest():
    shares = {"a": {"forest": 0.8, "pasture": 0.2}, "b": {"forest": 0.1, "pasture": 0.9}}
    raised = rebalance(shares, {"a": 0.5, "b": 0.5}, "forest", 0.65)
    # k = 1.3 would need 1.04 in zone a: a is capped at 1.0, zone b takes the rest (0.30)
    assert raised["a"]["forest"] == pytest.approx(1.0)
    assert raised["b"]["forest"] == pytest.approx(0.3)


share_sets = st.lists(st.integers(0, 1000), min_size=4, max_size=4).filter(lambda v: sum(v) > 0)


@given(raw=share_sets, target=st.floats(0.0, 1.0), cover=st.sampled_from(COVERS),
       held=st.sets(st.sampled_from(COVERS), max_size=2))
def test_property_shares_stay_valid(raw, target, cover, held):
    total = sum(raw)
    shares = dict(zip(COVERS, (v / total for v in raw), strict=True))
    new = rebalance_zone(shares, cover, target, held)
    assert sum(new.values()) == pytest.approx(1.0, abs=1e-9)
    assert min(new.values()) >= 0.0
    for c in held - {cover}:
        assert new[c] == shares[c]


@given(raw_a=share_sets, raw_b=share_sets, target=st.floats(0.0, 1.0),
       cover=st.sampled_from(COVERS))
def test_property_all_zones_keeps_every_zone_valid(raw_a, raw_b, target, cover):
    shares = {z: dict(zip(COVERS, (v / sum(raw) for v in raw), strict=True))
              for z, raw in (("a", raw_a), ("b", raw_b))}
    new = rebalance(shares, {"a": 0.3, "b": 0.7}, cover, target)
    for zone in new.values():
        assert sum(zone.values()) == pytest.approx(1.0, abs=1e-9)
        assert min(zone.values()) >= 0.0
    mean = 0.3 * new["a"][cover] + 0.7 * new["b"][cover]
    for zone in ("a", "b"):  # a zone without the cover keeps none
        if shares[zone][cover] == 0.0:
            assert new[zone][cover] == 0.0
    # with nothing held, every target the zones having the cover can reach is reached, up to
    # the 0.1 % grid of each zone
    reachable = sum(w for z, w in (("a", 0.3), ("b", 0.7)) if shares[z][cover] > 0.0)
    assert mean == pytest.approx(min(target, reachable), abs=1.5 * SHARE_QUANTUM)
