"""Which parameters an ensemble varies, over which ranges, and the Latin hypercube draws.

An :class:`EnsembleDesign` has one dimension per varied quantity:

* one per (built-in cover kind, parameter) present in the plan file, from
  :data:`coveryield.covers.PARAMETER_RANGES`. Every cover of that kind (the built-in one and the
  covers derived from it) takes the drawn value relative to the built-in value: a derived cover
  keeps its own value times the same ratio;
* one per catchment-wide adjustment factor that the plan file gives a range for (a calibrated
  plan file, see :mod:`coveryield.adjustments`).

Draws are uniform over each range and stratified by a Latin hypercube (McKay et al. 1979) from
:class:`scipy.stats.qmc.LatinHypercube`: with N members each range is cut into N equal slices and
every slice is used exactly once. The same seed gives the same draws.

References
----------
.. [1] McKay, M. D., Beckman, R. J. & Conover, W. J. (1979). A comparison of three methods for
   selecting values of input variables in the analysis of output from a computer code.
   Technometrics, 21(2), 239-245.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
import pandas as pd

from coveryield.adjustments import FACTORS
from coveryield.covers import BUILTIN_COVERS, PARAMETER_RANGES, Cover
from coveryield.plans import PlanFile

__all__ = ["Dimension", "EnsembleDesign"]


@dataclass(frozen=True)
class Dimension:
    """One quantity an ensemble varies.

    Attributes
    ----------
    name : str
        Column name in tables: ``"forest.rs_s_per_m"`` or ``"surface_resistance_factor"``.
    base : str or None
        Built-in cover kind whose covers it moves; None for an adjustment factor.
    parameter : str
        Cover parameter or adjustment factor name.
    low, high : float
        Range drawn from, uniformly [unit of the parameter].
    default : float
        The value used for the central figures (built-in cover value, or the plan's factor).
    source : str
        Where the range comes from.
    """

    name: str
    base: str | None
    parameter: str
    low: float
    high: float
    default: float
    source: str


def _field_limits(parameter: str) -> tuple[float, float]:
    """Hard limits of a Cover field from its pydantic constraints [unit of the field]."""
    low, high = -np.inf, np.inf
    for item in Cover.model_fields[parameter].metadata:
        low = getattr(item, "ge", getattr(item, "gt", low))
        high = getattr(item, "le", getattr(item, "lt", high))
    return float(low), float(high)


@dataclass(frozen=True)
class EnsembleDesign:
    """The quantities an ensemble varies for one plan file, and how to draw them.

    Build one with :meth:`for_plan`; :meth:`scaled` widens or narrows every range about its
    default value; :meth:`sample` draws; :meth:`member_plan` turns one draw into a plan file.

    Attributes
    ----------
    dimensions : tuple of Dimension
        In a fixed order: cover kinds in built-in order, parameters in table order, then the
        adjustment factors.
    """

    dimensions: tuple[Dimension, ...]

    @classmethod
    def for_plan(cls, plan_file: PlanFile) -> EnsembleDesign:
        """Design for the covers a plan file uses and the ranges its adjustments give.

        Parameters
        ----------
        plan_file : PlanFile
            The catchment and plans.

        Returns
        -------
        EnsembleDesign
        """
        used = {plan_file.covers[name].base for name in plan_file.covers_used()}
        dims = []
        for base, ranges in PARAMETER_RANGES.items():
            if base not in used:
                continue
            for parameter, spread in ranges.items():
                if getattr(BUILTIN_COVERS[base], parameter) is None:
                    continue  # derived from another parameter (see covers.PARAMETER_RANGES)
                dims.append(Dimension(
                    f"{base}.{parameter}", base, parameter, spread.low, spread.high,
                    float(getattr(BUILTIN_COVERS[base], parameter)), spread.source))
        adjustments = plan_file.adjustments
        for factor, (low, high) in adjustments.factor_ranges().items():
            dims.append(Dimension(factor, None, factor, low, high,
                                  float(getattr(adjustments, factor)),
                                  "the calibration's range (values within the stated KGE "
                                  "tolerance of the best fit)"))
        return cls(tuple(dims))

    @property
    def names(self) -> list[str]:
        """Dimension names, in order."""
        return [d.name for d in self.dimensions]

    def scaled(self, width: float) -> EnsembleDesign:
        """Every range stretched about its default by ``width`` (1 = as documented).

        Parameters
        ----------
        width : float
            Multiplier of each side's distance from the default, >= 0 [-]. Ranges are clipped
            to the parameter's hard limits.

        Returns
        -------
        EnsembleDesign
        """
        if not width >= 0.0:
            raise ValueError(f"width = {width!r}: expected a number >= 0")
        dims = []
        for d in self.dimensions:
            hard_low, hard_high = (_field_limits(d.parameter) if d.base is not None else
                                   (FACTORS[d.parameter].low, FACTORS[d.parameter].high))
            low = max(d.default - width * (d.default - d.low), hard_low)
            high = min(d.default + width * (d.high - d.default), hard_high)
            dims.append(replace(d, low=low, high=high))
        return EnsembleDesign(tuple(dims))

    def sample(self, n_members: int, seed: int | None = None) -> pd.DataFrame:
        """Draw parameter values by Latin hypercube.

        Parameters
        ----------
        n_members : int
            Number of parameter sets, >= 1 [-].
        seed : int, optional
            Seed of the random generator; the same seed gives the same draws.

        Returns
        -------
        pandas.DataFrame
            One row per member (index ``member`` from 1), one column per dimension
            [unit of each parameter].
        """
        from scipy.stats import qmc

        if n_members < 1:
            raise ValueError(f"n_members = {n_members}: expected at least 1")
        index = pd.RangeIndex(1, n_members + 1, name="member")
        if not self.dimensions:
            return pd.DataFrame(index=index)
        unit = qmc.LatinHypercube(d=len(self.dimensions), rng=np.random.default_rng(seed))
        points = unit.random(n_members)
        low = np.array([d.low for d in self.dimensions])
        high = np.array([d.high for d in self.dimensions])
        return pd.DataFrame(low + points * (high - low), columns=self.names, index=index)

    def member_plan(self, plan_file: PlanFile, values: pd.Series) -> PlanFile:
        """Return the plan file with one member's parameter values (covers and adjustments).

        Parameters
        ----------
        plan_file : PlanFile
            The plan file the design was made for.
        values : pandas.Series
            One row of :meth:`sample` (dimension name -> value).

        Returns
        -------
        PlanFile
            A copy; covers of each varied kind take value x (drawn / built-in value), clipped to
            the parameter's hard limits.
        """
        ratios: dict[str, dict[str, float]] = {}
        factors = {}
        for d in self.dimensions:
            if d.base is None:
                factors[d.parameter] = float(values[d.name])
            else:
                ratios.setdefault(d.base, {})[d.parameter] = float(values[d.name]) / d.default
        covers = {}
        for name, cover in plan_file.covers.items():
            update = {}
            for parameter, ratio in ratios.get(cover.base, {}).items():
                value = getattr(cover, parameter)
                if value is None:  # derived from another parameter, which is drawn
                    continue
                low, high = _field_limits(parameter)
                update[parameter] = float(np.clip(value * ratio, low, high))
            covers[name] = cover.model_copy(update=update) if update else cover
        adjustments = plan_file.adjustments.model_copy(update=factors)
        return plan_file.model_copy(update={"covers": covers, "adjustments": adjustments})
