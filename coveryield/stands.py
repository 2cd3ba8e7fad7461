"""Growing stands as tiles: each planted forest cover simulated once at a few growth stages.

A stand is land planted with a cover that grows (one that derives from forest and carries a
:class:`~coveryield.covers.Growth`). At growth g (0 at planting, toward 1 when mature; g follows
the Chapman–Richards curve of the stand's age) the stand is taken as

* a share g of its ground under tree crowns, the trees themselves grown a share g of the way
  from the young state to the mature cover: every parameter that differs between the two
  (LAI, height, canopy store capacity, rooting depth, bulk surface resistance, albedo, depletion
  fraction, curve numbers) is young + g × (mature − young);
* the remaining share 1 − g still the young state (the grass the trees were planted into).

Scaling a young canopy's effect by the ground its crowns cover follows the sparse-canopy
interception model of Gash, Lloyd & Lachaud (1995), where interception per unit ground area is
the crown cover times the loss per unit crown area. Without the crown share a stand of 1 m
saplings would act as a closed 1 m canopy and take half the mature forest's water in its second
year, which paired catchments do not show (Brown et al. 2005).

Tiles are simulated once: for every (zone, cover, young state) a stand needs, the cover is
simulated at the fixed growth stages :data:`GROWTH_STAGES` (each stage a tile held at that size
through the whole record). A stand at any g is then the weighted sum
(1 − g)·stage(0) + g·[stage(g) interpolated linearly between the two nearest stages]
(:func:`stage_weights`); the stages are closer together at small g, where the response bends
most. Changing a schedule, an age, a rotation or even the growth curve only changes weights.

Soil water (the assumption to state): each stage tile keeps its own soil store through the
record, so a stand's soil on 1 January is that of a stand which has always had that size, not
the store the stand left one year earlier at a smaller size; water is not carried over from one
age to the next, nor from a felled stand to its regrowth. In a climate whose root zone refills
every winter this matters little after the first months; it matters most in the planting and
felling years. Each year still closes (rain = evaporation + yield + storage change) because it is
a weighted sum of tile-years that close.

References
----------
.. [1] Gash, J. H. C., Lloyd, C. R., & Lachaud, G. (1995). Estimating sparse forest rainfall
   interception with an analytical model. J. Hydrol. 170, 79-86 (loss scaled by canopy cover).
.. [2] Brown, A. E., Zhang, L., McMahon, T. A., Western, A. W., & Vertessy, R. A. (2005).
   A review of paired catchment studies... J. Hydrol. 310, 28-61 (from memory).
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np
import pandas as pd

from coveryield.catchment import complete_years, tile_forcing, tile_parameters, zone_climates
from coveryield.climate import Climate
from coveryield.covers import Cover
from coveryield.engine.kernels import ANNUAL_NAMES
from coveryield.engine.water_balance import simulate_tiles
from coveryield.forcing import reference_et
from coveryield.plans import PlanFile

#: Growth stages simulated per stand [-]: closer together at small g, where the response of the
#: water balance to the trees' size bends most. With these stages, interpolated stands differ from
#: stands simulated at their exact size by well under 1 % of the mature change (tested).
GROWTH_STAGES = np.array([0.0, 0.02, 0.05, 0.1, 0.15, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9, 1.0])


class StandKey(NamedTuple):
    """What a stand tile set is: zone, cover planted, cover it starts from."""

    zone: str
    cover: str
    start: str


def stage_cover(mature: Cover, young: Cover, growth: float, name: str | None = None) -> Cover:
    """Parameters of the trees of a stand at growth ``growth``, between young and mature.

    Parameters
    ----------
    mature : Cover
        The planted cover (mature parameters).
    young : Cover
        The young state (the cover the stand starts from).
    growth : float
        Growth g, 0 (young) to 1 (mature) [-].
    name : str, optional
        Name of the result (default ``"<mature>@<young>:<g>"``).

    Returns
    -------
    Cover
        Every number that differs between the two, young + g × (mature − young); the rest
        (base, crop calendar, growth) from ``mature``. The canopy store follows the stage's leaf
        area: its capacity per unit LAI is interpolated in the same way (0.2 mm per unit LAI
        unless a cover carries a measured ``canopy_capacity_mm``; see
        :attr:`coveryield.covers.Cover.capacity_per_lai_mm`).
    """
    g = float(growth)
    young_values = young.model_dump()
    fields = {}
    for key, value in mature.model_dump().items():
        other = young_values.get(key)
        if isinstance(value, float) and isinstance(other, float):
            value = other + g * (value - other)
        elif isinstance(value, dict) and isinstance(other, dict) and set(value) == set(other):
            value = {k: other[k] + g * (v - other[k]) for k, v in value.items()}
        fields[key] = value
    if mature.canopy_capacity_mm is not None or young.canopy_capacity_mm is not None:
        per_lai = young.capacity_per_lai_mm + g * (
            mature.capacity_per_lai_mm - young.capacity_per_lai_mm)
        fields["canopy_capacity_mm"] = per_lai * fields["lai"] if fields["lai"] > 0.0 else None
    fields["name"] = name or f"{mature.name}@{young.name}:{g:.3g}"
    return Cover.model_validate(fields)


def stage_weights(growth) -> np.ndarray:
    """Weights of the stage tiles that make up stands at growth ``growth``.

    Parameters
    ----------
    growth : float or array_like
        Growth g of each stand, 0-1 (NaN: no stand) [-].

    Returns
    -------
    numpy.ndarray
        Shape ``np.shape(growth) + (len(GROWTH_STAGES),)``: (1 − g) on stage 0 plus g times the
        linear-interpolation weights of g between its two neighbouring stages; rows sum to 1
        (0 where g is NaN).
    """
    g = np.asarray(growth, dtype=float)
    flat = np.clip(np.nan_to_num(g.ravel(), nan=0.0), 0.0, 1.0)
    upper = np.clip(np.searchsorted(GROWTH_STAGES, flat, side="right"), 1, len(GROWTH_STAGES) - 1)
    lower = upper - 1
    span = GROWTH_STAGES[upper] - GROWTH_STAGES[lower]
    towards_upper = (flat - GROWTH_STAGES[lower]) / span
    weights = np.zeros((flat.size, len(GROWTH_STAGES)))
    rows = np.arange(flat.size)
    weights[rows, 0] += 1.0 - flat  # the ground not yet under crowns
    weights[rows, lower] += flat * (1.0 - towards_upper)  # crowns: trees of size g
    weights[rows, upper] += flat * towards_upper
    weights[np.isnan(g.ravel())] = 0.0
    return weights.reshape(g.shape + (len(GROWTH_STAGES),))


@dataclass(frozen=True)
class StandResults:
    """Annual water balance of every stage tile of every stand, simulated once.

    Attributes
    ----------
    keys : tuple of StandKey
        The stands, in the order of the second axis of each array.
    years : numpy.ndarray
        Complete calendar years of the record (as in :class:`~coveryield.catchment.TileResults`).
    annual : dict of str -> numpy.ndarray
        Per flux in :data:`coveryield.engine.kernels.ANNUAL_NAMES`, shape
        (n_years, n_keys, n_stages) [mm yr⁻¹ over the stage tile].
    """

    keys: tuple[StandKey, ...]
    years: np.ndarray
    annual: dict[str, np.ndarray]

    def index(self, key: StandKey) -> int:
        """Position of a stand among :attr:`keys`."""
        return self.keys.index(key)

    def merged(self, other: StandResults) -> StandResults:
        """Return these stands and those of ``other`` (same record) together."""
        new = [k for k in other.keys if k not in self.keys]
        if not new:
            return self
        take = [other.index(k) for k in new]
        annual = {
            n: np.concatenate([a, other.annual[n][:, take]], axis=1) for n, a in self.annual.items()
        }
        return StandResults(self.keys + tuple(new), self.years, annual)


def simulate_stands(
    plan_file: PlanFile,
    keys: Iterable[StandKey],
    *,
    climate: Climate | None = None,
    progress: bool = False,
) -> StandResults:
    """Simulate every growth stage of the given stands once (annual sums only).

    Parameters
    ----------
    plan_file : PlanFile
        The catchment, zones and covers.
    keys : iterable of StandKey
        The stands needed (zone, planted cover, young-state cover).
    climate : Climate, optional
        The catchment's climate record (read from the plan's climate file when omitted).
    progress : bool
        Show a progress bar on stderr while potential evaporation is computed per stage tile.

    Returns
    -------
    StandResults
        Annual fluxes per stand and stage over the complete years of the record [mm yr⁻¹].
    """
    keys = tuple(dict.fromkeys(keys))
    climates = zone_climates(plan_file, climate)
    stage_covers = {}
    tiles = []
    for key in keys:
        mature, young = plan_file.covers[key.cover], plan_file.covers[key.start]
        for g in GROWTH_STAGES:
            cover = stage_cover(mature, young, g)
            stage_covers[cover.name] = cover
            tiles.append((key.zone, cover.name))
    dates = next(iter(climates.values())).daily.index
    with_stages = plan_file.model_copy(update={"covers": {**plan_file.covers, **stage_covers}})
    et0 = {zone: reference_et(c).to_numpy() for zone, c in climates.items()}
    # the same forcing path as every tile (catchment-wide adjustments included)
    forcing = tile_forcing(with_stages, climates, et0, tiles, progress=progress)
    year_codes, year_values = pd.factorize(dates.year, sort=True)
    run = simulate_tiles(
        *forcing,
        tile_parameters(with_stages, tiles),
        year_codes.astype(np.int64),
        keep_daily_yield=False,
    )
    keep = np.isin(np.asarray(year_values), complete_years(dates))
    shape = (int(keep.sum()), len(keys), len(GROWTH_STAGES))
    annual = {name: getattr(run.annual, name)[keep].reshape(shape) for name in ANNUAL_NAMES}
    return StandResults(keys, np.asarray(year_values)[keep], annual)
