"""Catchment-wide adjustments: a few multipliers that calibration against observed flow may set.

A plan file may carry an ``[adjustments]`` table::

    [adjustments]
    surface_resistance_factor = 1.25   # x every land cover's dry-canopy surface resistance
    root_zone_factor = 0.9             # x every land tile's root-zone capacity (TAW)
    ranges = { surface_resistance_factor = [1.1, 1.4], root_zone_factor = [0.75, 1.05] }

Both factors default to 1 (the covers as documented). ``ranges`` is optional: the values the
calibration found acceptable (see :mod:`coveryield.uncertainty.calibration`); an ensemble
(``compare --ensemble``) then draws each factor from its range. A factor applies to every cover
alike, so the DIFFERENCE between covers, which decides a plan's effect, stays as the covers
document it; the factors absorb what the covers cannot know about this catchment (its soils'
depth, how its vegetation actually behaves).

The groundwater recession constant is not an adjustment: it is the catchment's own parameter
``catchment.recession_days`` and calibration sets it there.
"""

from __future__ import annotations

from typing import Any, NamedTuple

from pydantic import BaseModel, ConfigDict, Field, field_validator, model_validator

from coveryield.covers import Cover

__all__ = ["Adjustments", "FactorInfo", "FACTORS", "adjusted_cover"]


class FactorInfo(NamedTuple):
    """What one adjustment factor does, the range it may take, and why that range.

    Attributes
    ----------
    low, high : float
        Allowed range of the factor [-]; also the bounds a calibration searches.
    acts_on : str
        The parameter it multiplies, in words.
    why : str
        The reasoning and sources behind the range.
    """

    low: float
    high: float
    acts_on: str
    why: str


#: The adjustment factors, their documented ranges and what they act on.
FACTORS: dict[str, FactorInfo] = {
    "surface_resistance_factor": FactorInfo(
        0.5,
        2.0,
        "the dry-canopy surface resistance rs of every land cover (FAO-56 eq. 3); crops on a Kc "
        "calendar and open water do not use rs and are unaffected",
        "published well-watered rs for one kind of vegetation spans about a factor of two "
        "either way of a typical value, e.g. conifers 60-150 s/m (from memory; see the cover "
        "ranges in `coveryield covers`)",
    ),
    "root_zone_factor": FactorInfo(
        0.5,
        2.0,
        "the root-zone capacity TAW = rooting depth x available water capacity of every land "
        "tile (FAO-56 eq. 82)",
        "FAO-56 Table 19 gives available water capacity within about 25 % of its mid value and "
        "Table 22 rooting depths within about 50 % of theirs (both from memory); their product "
        "spans about a factor of two either way",
    ),
}


class Adjustments(BaseModel):
    """Catchment-wide multipliers applied to every tile before it is simulated.

    Parameters
    ----------
    surface_resistance_factor : float
        Multiplies every cover's ``rs_s_per_m`` [-], 0.5 to 2, default 1.
    root_zone_factor : float
        Multiplies every land tile's root-zone capacity [-], 0.5 to 2, default 1.
    ranges : dict of str to (float, float)
        Optional range of each factor for ensembles, e.g. from a calibration [-]; each range
        lies within the factor's allowed range and contains its value.
    """

    model_config = ConfigDict(frozen=True, extra="forbid", strict=True)

    surface_resistance_factor: float = Field(
        1.0, ge=FACTORS["surface_resistance_factor"].low,
        le=FACTORS["surface_resistance_factor"].high)
    root_zone_factor: float = Field(
        1.0, ge=FACTORS["root_zone_factor"].low, le=FACTORS["root_zone_factor"].high)
    ranges: dict[str, tuple[float, float]] = Field(default_factory=dict)

    @field_validator("ranges", mode="before")
    @classmethod
    def _pairs_as_tuples(cls, value: Any) -> Any:
        if isinstance(value, dict):
            return {k: tuple(v) if isinstance(v, list) else v for k, v in value.items()}
        return value

    @model_validator(mode="after")
    def _ranges_fit(self) -> Adjustments:
        problems = []
        for name, (low, high) in self.ranges.items():
            if name not in FACTORS:
                problems.append(f"ranges.{name}: unknown factor; factors are "
                                f"{', '.join(FACTORS)}")
                continue
            info, value = FACTORS[name], getattr(self, name)
            if not info.low <= low <= value <= high <= info.high:
                problems.append(
                    f"ranges.{name} = [{low:g}, {high:g}]: expected low <= {name} ({value:g}) "
                    f"<= high, within {info.low:g} to {info.high:g}")
        if problems:
            raise ValueError("; ".join(problems))
        return self

    @property
    def is_default(self) -> bool:
        """True when nothing is adjusted and no range is given."""
        return self == Adjustments()

    def factor_ranges(self) -> dict[str, tuple[float, float]]:
        """Return the ranges given, in :data:`FACTORS` order [-]."""
        return {name: self.ranges[name] for name in FACTORS if name in self.ranges}

    def toml_items(self) -> dict[str, Any]:
        """Return the keys that differ from the defaults, as a plan file writes them."""
        items: dict[str, Any] = {n: getattr(self, n) for n in FACTORS
                                 if getattr(self, n) != 1.0}
        if self.ranges:
            items["ranges"] = {n: list(r) for n, r in self.factor_ranges().items()}
        return items


def adjusted_cover(cover: Cover, adjustments: Adjustments) -> Cover:
    """Apply the catchment-wide surface-resistance factor to a cover.

    Parameters
    ----------
    cover : Cover
        The cover as documented.
    adjustments : Adjustments
        The catchment's adjustments.

    Returns
    -------
    Cover
        ``cover`` itself when the factor is 1, else a copy with ``rs_s_per_m`` multiplied
        [s m-1].
    """
    factor = adjustments.surface_resistance_factor
    if factor == 1.0:
        return cover
    return cover.model_copy(update={"rs_s_per_m": cover.rs_s_per_m * factor})
