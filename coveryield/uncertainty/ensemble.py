"""Parameter ensembles: every member's tiles simulated once, every mix a weighted sum per member.

:func:`simulate_ensemble` draws N parameter sets (see :mod:`.sampling`), computes each member's
potential evaporation per tile and runs the members through the engine's annual-only kernel in
chunks, so memory stays bounded whatever N is. It keeps the annual yield of every tile of every
member, shaped (n_members, n_years, n_tiles): small (200 members x 30 years x 18 tiles is 0.9 MB).

Any set of shares is then a weighted sum per member (:meth:`EnsembleResults.member_yields`),
never a new daily loop, so the dashboard moves a share and its band in microseconds. The headline
figures of each member (mean yield, change against ``current``, change in the dry years) give the
band: the 5th, 50th and 95th percentiles over members (:func:`band`).

What a band is: the spread of the model's answer when the covers' parameters vary over their
documented ranges (and the catchment factors over a calibration's range). What it is not: a
confidence interval of the real catchment's response; the model's structure, the climate record
and the ranges themselves carry further uncertainty that no band here shows.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, fields

import numpy as np
import pandas as pd

from coveryield.catchment import (
    complete_years,
    daily_leaf_area,
    plan_tiles,
    tile_forcing,
    tile_parameters,
    zone_climates,
)
from coveryield.climate import Climate
from coveryield.engine.water_balance import TileParameters, simulate_tiles
from coveryield.forcing import reference_et
from coveryield.plans import PlanFile
from coveryield.uncertainty.bands import BAND_PERCENTILES, band
from coveryield.uncertainty.sampling import EnsembleDesign

__all__ = ["EnsembleResults", "simulate_ensemble", "band", "BAND_PERCENTILES",
           "DEFAULT_MEMORY_MB"]

#: Memory the forcing of one chunk of members may take [MB] (four float64 arrays, n_days x
#: n_tiles per member).
DEFAULT_MEMORY_MB = 64.0



@dataclass(frozen=True)
class EnsembleResults:
    """Annual yield of every tile of every member.

    Attributes
    ----------
    design : EnsembleDesign
        The quantities varied and their ranges.
    seed : int or None
        Seed of the draws.
    parameters : pandas.DataFrame
        Values drawn, one row per member (index ``member`` from 1) [unit of each parameter].
    tiles : tuple of (str, str)
        (zone, cover) of each tile, in the order of the last axis of ``annual_yield_mm``.
    years : numpy.ndarray
        Complete calendar years, the middle axis of ``annual_yield_mm``.
    annual_yield_mm : numpy.ndarray
        Quickflow plus drainage, shape (n_members, n_years, n_tiles) [mm yr-1 over the tile].
    """

    design: EnsembleDesign
    seed: int | None
    parameters: pd.DataFrame
    tiles: tuple[tuple[str, str], ...]
    years: np.ndarray
    annual_yield_mm: np.ndarray

    @property
    def n_members(self) -> int:
        """Number of members [-]."""
        return int(self.annual_yield_mm.shape[0])

    def member_yields(self, weights: np.ndarray) -> np.ndarray:
        """Catchment yield per member and year for tile weights (a weighted sum, no daily loop).

        Parameters
        ----------
        weights : numpy.ndarray
            Catchment-area weight of each tile [-] (see
            :meth:`coveryield.catchment.TileResults.weights`).

        Returns
        -------
        numpy.ndarray
            Shape (n_members, n_years) [mm yr-1 over the catchment].
        """
        return self.annual_yield_mm @ np.asarray(weights, dtype=float)

    def headline_members(self, weights: np.ndarray, baseline_weights: np.ndarray,
                         dry_years) -> dict[str, np.ndarray]:
        """Each member's headline figures for one set of tile weights.

        Parameters
        ----------
        weights, baseline_weights : numpy.ndarray
            Tile weights of the plan and of the baseline ``current`` [-].
        dry_years : sequence of int
            The years averaged for the dry-year change.

        Returns
        -------
        dict of str -> numpy.ndarray
            ``mean_yield_mm``, ``change_mm`` and ``dry_year_change_mm`` per member [mm yr-1].
        """
        plan = self.member_yields(weights)
        base = self.member_yields(baseline_weights)
        dry = np.isin(self.years, np.asarray(list(dry_years)))
        return {
            "mean_yield_mm": plan.mean(axis=1),
            "change_mm": plan.mean(axis=1) - base.mean(axis=1),
            "dry_year_change_mm": (plan[:, dry] - base[:, dry]).mean(axis=1),
        }


def _concat_parameters(parts: list[TileParameters]) -> TileParameters:
    """Join the tile parameters of several members into one set (members side by side)."""
    return TileParameters(**{f.name: np.concatenate([np.atleast_1d(getattr(p, f.name))
                                                     for p in parts]) for f in fields(parts[0])})


def simulate_ensemble(
    plan_file: PlanFile,
    n_members: int,
    *,
    seed: int | None = None,
    design: EnsembleDesign | None = None,
    climate: Climate | None = None,
    memory_mb: float = DEFAULT_MEMORY_MB,
    progress: bool = False,
    on_progress: Callable[[int, int], None] | None = None,
) -> EnsembleResults:
    """Simulate every tile of N parameter sets once (annual sums only).

    Parameters
    ----------
    plan_file : PlanFile
        The catchment, covers, adjustments and plans.
    n_members : int
        Number of parameter sets, >= 1 [-].
    seed : int, optional
        Seed of the Latin hypercube; the same seed gives the same numbers.
    design : EnsembleDesign, optional
        What varies and over which ranges (default: :meth:`EnsembleDesign.for_plan`).
    climate : Climate, optional
        The catchment's climate record (read from the plan's climate file when omitted).
    memory_mb : float
        Budget for the forcing of one chunk of members [MB]; at least one member per chunk.
    progress : bool
        Show a tqdm progress bar on stderr.
    on_progress : callable, optional
        Called as ``on_progress(done, total)`` after each chunk (e.g. a progress widget).

    Returns
    -------
    EnsembleResults
    """
    from tqdm.auto import tqdm

    design = design or EnsembleDesign.for_plan(plan_file)
    values = design.sample(n_members, seed)
    climates = zone_climates(plan_file, climate)
    dates = next(iter(climates.values())).daily.index
    et0_by_zone = {zone: reference_et(c).to_numpy() for zone, c in climates.items()}
    tiles = plan_tiles(plan_file)
    year_codes, year_values = pd.factorize(dates.year, sort=True)
    keep = np.isin(np.asarray(year_values), complete_years(dates))
    n_days, n_tiles = len(dates), len(tiles)
    per_member = 4 * 8 * n_days * n_tiles
    chunk = int(max(1, min(n_members, memory_mb * 1e6 // per_member)))
    out = np.empty((n_members, int(keep.sum()), n_tiles))
    with tqdm(total=n_members, desc="ensemble members", unit="member",
              disable=not progress) as bar:
        for start in range(0, n_members, chunk):
            stop = min(start + chunk, n_members)
            out[start:stop] = _run_chunk(plan_file, design, values.iloc[start:stop], climates,
                                         et0_by_zone, tiles, year_codes, keep)
            bar.update(stop - start)
            if on_progress is not None:
                on_progress(stop, n_members)
    return EnsembleResults(design=design, seed=seed, parameters=values, tiles=tuple(tiles),
                           years=np.asarray(year_values)[keep], annual_yield_mm=out)


def _member_leaf_area(leaf_areas, parts, n_days):
    """Daily leaf area of a chunk (n_days, n_members * n_tiles) [m2 m-2], or None if constant.

    A member whose covers all keep their leaf area all year gets its tiles' own (drawn) values.
    """
    if all(lai is None for lai in leaf_areas):
        return None
    blocks = [np.broadcast_to(p.leaf_area_index, (n_days, len(p.leaf_area_index)))
              if lai is None else lai for lai, p in zip(leaf_areas, parts, strict=True)]
    return np.ascontiguousarray(np.hstack(blocks))


def _run_chunk(plan_file, design, values, climates, et0_by_zone, tiles, year_codes, keep):
    """Annual yield (members, kept years, tiles) of one chunk of members."""
    n_days, n_tiles, n_members = len(year_codes), len(tiles), len(values)
    arrays = tuple(np.empty((n_days, n_tiles * n_members)) for _ in range(4))
    dates = next(iter(climates.values())).daily.index
    parts, leaf_areas = [], []
    for j, (_, row) in enumerate(values.iterrows()):
        member = design.member_plan(plan_file, row)
        columns = slice(j * n_tiles, (j + 1) * n_tiles)
        # the member's columns of the wide arrays: tile_forcing writes them a day (n_tiles
        # values in a row) at a time, far cheaper than a tile's strided column at a time
        tile_forcing(member, climates, et0_by_zone, tiles,
                     out=tuple(array[:, columns] for array in arrays))
        parts.append(tile_parameters(member, tiles))
        leaf_areas.append(daily_leaf_area(member, tiles, dates))  # crops follow their season
    run = simulate_tiles(*arrays, _concat_parameters(parts), year_codes.astype(np.int64),
                         lai=_member_leaf_area(leaf_areas, parts, n_days),
                         keep_daily_yield=False)
    yield_mm = run.annual.yield_mm[keep]  # (n_years, n_members * n_tiles)
    return yield_mm.reshape(len(yield_mm), n_members, n_tiles).transpose(1, 0, 2)
