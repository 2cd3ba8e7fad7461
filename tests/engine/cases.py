"""Random small tile cases for the engine tests (hypothesis strategy + numpy generator)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from hypothesis import strategies as st

from coveryield.engine.water_balance import TileParameters


@dataclass
class Case:
    rain: np.ndarray
    wet: np.ndarray
    dry: np.ndarray
    soil: np.ndarray
    params: TileParameters
    year_index: np.ndarray
    lai: np.ndarray | None = None

    @property
    def args(self):
        """Positional arguments of ``simulate_tiles``."""
        return (self.rain, self.wet, self.dry, self.soil, self.params, self.year_index)


def _mostly(rng, shape, zero_share, scale):
    values = rng.exponential(scale, shape)
    return np.where(rng.random(shape) < zero_share, 0.0, values)


def make_case(seed: int, n_days: int, n_tiles: int, n_years: int) -> Case:
    """Random forcing and parameters, including edge values (zeros, CN 100, tiny TAW, water).

    Half the cases have a closed canopy (no leaf area given), the others a leaf area per tile,
    and of those half again a leaf area that changes every day (with days of no leaves).
    """
    rng = np.random.default_rng(seed)
    shape = (n_days, n_tiles)
    rain = _mostly(rng, shape, 0.4, rng.choice([0.5, 5.0, 30.0]))
    rain[rng.random(shape) < 0.03] = 150.0  # a few storms
    wet = _mostly(rng, shape, 0.1, rng.uniform(0.5, 8.0))
    dry = _mostly(rng, shape, 0.1, rng.uniform(0.5, 6.0))
    soil = _mostly(rng, shape, 0.5, 1.0)
    style = rng.integers(0, 4)  # 0-1 closed canopy, 2 leaf area per tile, 3 leaf area per day
    leaf_area = rng.choice([0.3, 1.0, 2.88, 6.0, 12.0], n_tiles) if style >= 2 else None
    rew = rng.choice([0.0, 2.0, 9.0], n_tiles)
    params = TileParameters(
        canopy_capacity_mm=np.where(rng.random(n_tiles) < 0.2, 0.0, rng.uniform(0, 3, n_tiles)),
        root_zone_capacity_mm=rng.choice([1.0, 5.0, 60.0, 150.0, 400.0], n_tiles),
        depletion_fraction=rng.uniform(0.0, 0.95, n_tiles),
        curve_number=rng.choice([1.0, 35.0, 60.0, 78.0, 92.0, 100.0], n_tiles),
        is_water=rng.random(n_tiles) < 0.2,
        rain_rate_mm_per_h=rng.choice([0.2, 1.5, 20.0], n_tiles),
        initial_soil_fraction=rng.choice([0.0, 0.5, 1.0, rng.uniform()], n_tiles),
        leaf_area_index=leaf_area,
        extinction_coefficient=rng.choice([0.3, 0.5, 0.9], n_tiles),
        readily_evaporable_mm=rew,
        total_evaporable_mm=rew + rng.choice([0.5, 10.0, 20.0], n_tiles),
    )
    daily_lai = None
    if style == 3:
        daily_lai = leaf_area * rng.uniform(0.0, 1.5, shape)
        daily_lai[rng.random(shape) < 0.1] = 0.0
    n_years = min(n_years, n_days)
    cuts = (
        np.sort(rng.choice(np.arange(1, n_days), n_years - 1, replace=False)) if n_years > 1 else []
    )
    year_index = np.zeros(n_days, dtype=np.int64)
    for cut in cuts:
        year_index[cut:] += 1
    return Case(rain, wet, dry, soil, params, year_index, daily_lai)


@st.composite
def cases(draw, max_days=40, max_tiles=11):
    return make_case(
        seed=draw(st.integers(0, 2**32 - 1)),
        n_days=draw(st.integers(1, max_days)),
        n_tiles=draw(st.integers(1, max_tiles)),
        n_years=draw(st.integers(1, 3)),
    )
