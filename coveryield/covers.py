"""Land covers: the parameters that make forest, pasture, crop and open water evaporate differently.

A :class:`Cover` holds every parameter the physics and the engine need for one land-cover class,
each with its unit, hard limits, typical range and published source (see :data:`PARAMETER_INFO`).
Four covers are built in (:data:`BUILTIN_COVERS`); a plan file may define more covers that derive
from one of these by overriding some parameters (:func:`derive_cover`).

References
----------
.. [1] Allen, R. G., Pereira, L. S., Raes, D., & Smith, M. (1998). Crop evapotranspiration.
   FAO Irrigation and Drainage Paper 56. Tables 11, 12 and 22; eqs. 4, 5, 66, 82-84.
.. [2] Oke, T. R. (1987). Boundary Layer Climates (2nd ed.). Albedo of surfaces.
.. [3] Calder, I. R. (1990). Evaporation in the Uplands. Canopy storage of conifer plantations.
.. [4] USDA-SCS (1986). Urban hydrology for small watersheds, TR-55, Table 2-2 (curve numbers).
.. [5] Dickinson, R. E. (1984). Modeling evapotranspiration for three-dimensional global climate
   models. Canopy storage ~0.2 mm per unit LAI.
.. [6] Gash, J. H. C., Lloyd, C. R. & Lachaud, G. (1995). Estimating sparse forest rainfall
   interception with an analytical model. J. Hydrol., 170, 79-86 (canopy cover fraction).
.. [7] Brown, A. E. et al. (2013). J. Hydrol., doi:10.1016/j.jhydrol.2012.12.031: a permanent
   change of forest cover takes 8-25 years to reach a new equilibrium (abstract).
.. [8] Farley, K. A., Jobbagy, E. G., & Jackson, R. B. (2005). Global Change Biology 11,
   1565-1576: afforestation losses grew with plantation age for at least 20 years (abstract).
.. [9] Brown, A. E., Zhang, L., McMahon, T. A., Western, A. W., & Vertessy, R. A. (2005).
   J. Hydrol. 310, 28-61: afforestation takes well over 5 years to reach a new equilibrium
   (review of paired catchments; from memory).
"""

from __future__ import annotations

from typing import Literal, NamedTuple

import numpy as np
from pydantic import BaseModel, ConfigDict, Field, field_validator, model_validator

from coveryield.physics.canopy import (
    CAPACITY_PER_LAI_MM,
    canopy_capacity,
    canopy_cover_fraction,
)
from coveryield.physics.growth import chapman_richards, chapman_richards_rate

BaseName = Literal["forest", "pasture", "crop", "water"]
SOIL_GROUPS = ("A", "B", "C", "D")

#: Per parameter: (unit, typical range, source). Shown in docs and in ``coveryield covers``.
PARAMETER_INFO: dict[str, tuple[str, str, str]] = {
    "albedo": (
        "-",
        "forest 0.05-0.15, grass 0.17-0.28, crops 0.16-0.26, water 0.05-0.08",
        "Oke (1987); FAO-56 reference 0.23",
    ),
    "height_m": (
        "m",
        "conifer plantation 10-30, pasture 0.10-0.30, cereals 1-2",
        "FAO-56 Table 12 (from memory for forest range)",
    ),
    "rs_s_per_m": (
        "s m-1",
        "forest 60-150, grass 70 (reference), crops 30-50 at full cover",
        "FAO-56 eq. 5 and reference surface; forest and crop ranges from memory",
    ),
    "lai": ("m2 m-2", "conifer 3-10, grass 2-4, crops 3-6", "from memory"),
    "canopy_capacity_mm": (
        "mm",
        "conifer 0.8-2.0, grass 0.5-1; unset: 0.2 mm per unit LAI",
        "Calder (1990); Dickinson (1984) for 0.2 mm per unit LAI; ranges from memory",
    ),
    "extinction_coefficient": (
        "-",
        "0.4-0.6 for most canopies; 0.5 for leaves at random angles",
        "Beer's law; Campbell & Norman (1998) for 0.5 (from memory)",
    ),
    "rooting_depth_m": (
        "m",
        "conifer 1.0-1.5, pasture 0.5-1.5, cereals 1.0-1.5",
        "FAO-56 Table 22",
    ),
    "depletion_fraction": ("-", "conifer 0.70, pasture 0.60, cereals 0.55", "FAO-56 Table 22"),
    "curve_number": ("-", "soil groups A-D, 30-100", "USDA-SCS TR-55 Table 2-2 (from memory)"),
    "water_depth_m": (
        "m",
        "farm ponds 1-3, small lakes and reservoirs 3-10 (mean depth of the mixed layer)",
        "common practice, no source; used by the heat storage of open water",
    ),
    "water_fetch_m": (
        "m",
        "farm ponds 20-200, small reservoirs 200-2,000 (length along the wind, about the "
        "square root of a compact water body's area)",
        "McJannet et al. (2008) wind function; sizes common practice, no source",
    ),
}



class SpreadRange(NamedTuple):
    """Numeric range of one cover parameter, drawn from by ensembles (uniformly).

    Attributes
    ----------
    low, high : float
        Ends of the range [unit of the parameter]; the built-in value lies inside.
    source : str
        Where the range comes from, and how sure it is.
    """

    low: float
    high: float
    source: str


#: Per built-in cover and parameter: the numeric range ensembles draw from (``compare
#: --ensemble``). Only parameters that move this cover's evaporation are listed (crops take their
#: transpiration from a Kc calendar, so their surface resistance is not; the curve number splits
#: yield into quickflow and drainage but barely changes the yield, so it is not either; the
#: canopy store follows the leaf area at 0.2 mm per unit LAI, so drawing ``lai`` moves it). A
#: parameter a cover leaves unset (None: derived from another, e.g. a canopy store from the leaf
#: area) is not drawn for that cover; it follows what it derives from. A
#: derived cover takes its base's range relative to the base's value (a young pine 6 m high
#: varies from 3 to 9 m when forest varies from 10 to 30 m) and moves with its base in every
#: draw, both being the same kind of vegetation.
PARAMETER_RANGES: dict[str, dict[str, SpreadRange]] = {
    "forest": {
        "albedo": SpreadRange(0.08, 0.15, "Oke (1987) coniferous 0.05-0.15, typical 0.08-0.12 "
                              "(via secondary sources; typical from memory)"),
        "height_m": SpreadRange(10.0, 30.0, "FAO-56 Table 12 conifers 10 m; plantations 10-30 m "
                                "(from memory)"),
        "rs_s_per_m": SpreadRange(100.0, 220.0, "daytime conifer canopies 60-150 s/m (from "
                                  "memory); as a daily bulk value our range sits higher, around "
                                  "the built-in 150 s/m (our choice)"),
        "lai": SpreadRange(3.0, 10.0, "conifer plantations 3-10 (from memory)"),
        "rooting_depth_m": SpreadRange(1.0, 2.0, "FAO-56 Table 22 conifer trees 1.0-1.5 m, "
                                       "widened as Canadell et al. (1996) report far deeper "
                                       "maxima (3.9 m for temperate conifers)"),
    },
    "pasture": {
        "albedo": SpreadRange(0.17, 0.28, "Oke (1987) grass 0.17-0.28 (via secondary sources)"),
        "height_m": SpreadRange(0.10, 0.30, "FAO-56 Table 12 grazing pasture: extensive 0.10 m, "
                                "rotated 0.15-0.30 m"),
        "rs_s_per_m": SpreadRange(50.0, 100.0, "FAO-56 eq. 5, rs = 100 / (0.5 LAI), for LAI 2-4 "
                                  "(recomputed)"),
        "lai": SpreadRange(2.0, 4.0, "grass 2-4 (from memory); FAO-56 reference 2.88"),
        "rooting_depth_m": SpreadRange(0.5, 1.5, "FAO-56 Table 22 grazing pasture 0.5-1.5 m"),
    },
    "crop": {
        "albedo": SpreadRange(0.16, 0.26, "Oke (1987) cereals 0.16-0.26 (via secondary sources)"),
        "lai": SpreadRange(3.0, 6.0, "cereals 3-6 (from memory)"),
        "rooting_depth_m": SpreadRange(1.0, 1.5, "FAO-56 Table 22 spring wheat 1.0-1.5 m"),
    },
    "water": {
        "albedo": SpreadRange(0.06, 0.10, "open water 0.06-0.08 as a daily mean, more at low sun "
                              "(Oke 1987 via secondary sources); widened for winter sun"),
    },
}


class KcCalendar(BaseModel):
    """An FAO-56 four-stage calendar of the basal crop coefficient Kcb (dual Kc method).

    Kcb is constant in the initial and mid-season stages and changes linearly in the development
    and late stages (FAO-56 eq. 66, applied to Kcb as in chapter 7). Kcb·ETo is the crop's
    transpiration when the soil surface is dry; evaporation from the wetted soil surface is
    simulated separately by the engine's surface layer (FAO-56 eqs. 69-77). Outside the season
    the crop is absent and the soil is bare.

    Parameters
    ----------
    planting_doy_north : int
        Planting day of year for a northern-hemisphere site [day]; southern sites plant 182 days
        later (the same season of the year).
    stage_days : tuple of 4 int
        Lengths of the initial, development, mid-season and late stages [day].
    kcb_ini, kcb_mid, kcb_end : float
        Basal crop coefficients of the initial stage, mid-season and at harvest [-].

    References
    ----------
    FAO-56 (Allen et al. 1998), Table 11 (stage lengths), Table 17 (Kcb values), eq. 66.
    """

    model_config = ConfigDict(frozen=True, extra="forbid")

    planting_doy_north: int = Field(90, ge=1, le=366)
    stage_days: tuple[int, int, int, int] = (20, 25, 60, 30)
    kcb_ini: float = Field(0.15, ge=0.0, le=1.5)
    kcb_mid: float = Field(1.10, ge=0.0, le=1.5)
    kcb_end: float = Field(0.15, ge=0.0, le=1.5)

    @field_validator("stage_days")
    @classmethod
    def _stages_fit_a_year(cls, value: tuple[int, int, int, int]) -> tuple[int, int, int, int]:
        if any(d < 1 for d in value) or sum(value) > 365:
            raise ValueError(f"stage lengths must each be >= 1 day and sum to <= 365, got {value}")
        return value

    @property
    def season_days(self) -> int:
        """Length of the growing season [day]."""
        return int(sum(self.stage_days))

    def kc(self, doy, latitude_deg: float | None = None):
        """Basal crop coefficient Kcb and in-season flag for each day of year.

        Parameters
        ----------
        doy : array_like of int
            Day of year, 1-366 [day].
        latitude_deg : float, optional
            Site latitude [degrees, negative south]; a southern site plants 182 days later.

        Returns
        -------
        kc : numpy.ndarray
            Basal crop coefficient Kcb [-], 0 outside the season.
        in_season : numpy.ndarray of bool
            True where the crop is in the field.
        """
        doy = np.asarray(doy, dtype=np.int64)
        planting = self.planting_doy_north + (
            182 if latitude_deg is not None and latitude_deg < 0 else 0
        )
        day = (doy - planting) % 365  # days since planting, 0-based, wrapping over new year
        l_ini, l_dev, l_mid, l_late = self.stage_days
        # FAO-56 eq. 66: linear between stage values in the development and late stages
        knots_day = np.array(
            [0, l_ini, l_ini + l_dev, l_ini + l_dev + l_mid, l_ini + l_dev + l_mid + l_late],
            dtype=float,
        )
        knots_kc = np.array(
            [self.kcb_ini, self.kcb_ini, self.kcb_mid, self.kcb_mid, self.kcb_end]
        )
        kc = np.interp(day, knots_day, knots_kc)
        in_season = day < self.season_days
        return np.where(in_season, kc, 0.0), in_season

    def development(self, doy, latitude_deg: float | None = None):
        """Canopy development through the season as a fraction of its mid-season size [-].

        Parameters
        ----------
        doy : array_like of int
            Day of year, 1-366 [day].
        latitude_deg : float, optional
            Site latitude [degrees, negative south].

        Returns
        -------
        numpy.ndarray
            (Kcb − Kcb ini) / (Kcb mid − Kcb ini), clipped to 0..1 in season, 0 outside it: 0 at
            planting, 1 in mid-season, back towards 0 as the crop ripens. Scaling leaf area
            with Kcb in this way is our choice (FAO-56 eq. 76 ties the crop's ground cover to
            Kcb in a similar way).
        """
        kcb, in_season = self.kc(doy, latitude_deg)
        span = self.kcb_mid - self.kcb_ini
        if span <= 0.0:
            return in_season.astype(float)
        share = np.clip((kcb - self.kcb_ini) / span, 0.0, 1.0)
        return np.where(in_season, share, 0.0)


class Growth(BaseModel):
    """How a planted stand of a forest cover grows toward the cover's mature parameters.

    A stand planted on other land starts from a young state (the cover it replaces, or
    ``start``) and grows along the Chapman–Richards curve g(a) = (1 − e^(−k·a))^p, which reaches
    95 % at the maturity age (:mod:`coveryield.physics.growth`). How g moves the stand's
    parameters and its crown cover is described in :mod:`coveryield.stands`.

    Parameters
    ----------
    maturity_years : float
        Age at which the stand has grown 95 % of the way to its mature state [yr], > 0.
    shape : float
        Chapman–Richards exponent p [-], 1 to 10; p = 1 rises from the start, larger p gives
        slow establishment years first.
    rotation_years : int or None
        Age at which stands are clear-felled and replanted (regrowth starts again from the
        young state) [yr]; None: never felled.
    start : str or None
        Cover whose parameters a new stand starts from (a cover that derives from pasture);
        None: the cover the planting replaces when that derives from pasture, else the
        built-in ``pasture``.

    References
    ----------
    Richards (1959); Chapman (1961) for the curve (from memory). Default ages: see
    :data:`DEFAULT_GROWTH`.
    """

    model_config = ConfigDict(frozen=True, extra="forbid")

    maturity_years: float = Field(20.0, gt=0.0, le=300.0)
    shape: float = Field(1.5, ge=1.0, le=10.0)
    rotation_years: int | None = Field(None, ge=2, le=500)
    start: str | None = Field(None, min_length=1)

    @property
    def rate_per_year(self) -> float:
        """Chapman–Richards rate constant k that gives 95 % at the maturity age [yr⁻¹]."""
        return chapman_richards_rate(self.maturity_years, self.shape)

    def fraction(self, age_years):
        """Growth reached at an age: 0 at planting, 0.95 at the maturity age, toward 1 [-].

        Parameters
        ----------
        age_years : float or array_like
            Age since planting (or since the last felling) [yr].

        Returns
        -------
        float or numpy.ndarray
            g(a) = (1 − e^(−k·a))^p [-] (Richards 1959, eq. 1).
        """
        return chapman_richards(age_years, self.rate_per_year, self.shape)


#: Growth of the built-in ``forest`` (an evergreen conifer plantation). Maturity at 20 years:
#: Brown et al. (2013) give 8-25 years for a permanent change of forest cover to reach a new
#: equilibrium and Farley et al. (2005) saw losses grow with plantation age for at least 20
#: years (both abstracts); 20 years is our choice within that span. Shape p = 1.5: a slow
#: establishment (small change in the first two years, Brown et al. 2005), our choice; fits of
#: conifer height growth commonly give p between about 1 and 3 (from memory). No rotation.
DEFAULT_GROWTH = Growth(maturity_years=20.0, shape=1.5)


class Cover(BaseModel):
    """Parameters of one land cover.

    Every parameter carries its unit in its name or in :data:`PARAMETER_INFO`, together with its
    typical range and source. Hard limits (e.g. albedo in 0-1) are enforced; values outside the
    typical range are allowed (a plan may describe an unusual cover) but documented.

    Parameters
    ----------
    name : str
        Cover name used in plan files.
    base : {"forest", "pasture", "crop", "water"}
        Built-in cover this one derives from; decides which processes apply.
    albedo : float
        Shortwave reflectance of the surface [-].
    height_m : float
        Canopy height, sets the aerodynamic resistance by FAO-56 eq. 4 [m].
    rs_s_per_m : float
        Bulk surface resistance of the dry, well-watered canopy [s m-1].
    lai : float
        Leaf area index of the mature, in-season canopy [m2 m-2]. It sizes the canopy store
        (unless ``canopy_capacity_mm`` is given) and the canopy cover fraction.
    canopy_capacity_mm : float or None
        Rain the canopy can hold at its ``lai`` (interception store) [mm]. None (the default):
        :data:`coveryield.physics.canopy.CAPACITY_PER_LAI_MM` per unit LAI. Either way the store
        scales with leaf area, see :meth:`capacity_per_lai_mm`.
    extinction_coefficient : float
        k of Beer's law, canopy cover fraction = 1 − exp(−k·LAI) [-].
    rooting_depth_m : float
        Effective rooting depth; root-zone capacity = depth x available water capacity [m].
    depletion_fraction : float
        FAO-56 p: fraction of the root-zone capacity used before stress starts [-].
    curve_number : dict
        SCS curve number for average antecedent wetness per hydrologic soil group A-D [-].
    kc_calendar : KcCalendar or None
        For crops: basal Kcb calendar; transpiration then follows Kcb x ET0 in season (FAO-56
        eq. 69 with Ke simulated by the surface layer), and leaf area follows the season.
    water_depth_m : float
        For open water: mean depth of the mixed water column, which sets how much heat the
        water stores [m].
    water_fetch_m : float
        For open water: fetch of a typical water body of the cover, its length along the wind
        (about the square root of its area) [m]. Small ponds exchange more vapour per unit area
        than large lakes (McJannet et al. 2008 wind function).
    growth : Growth or None
        For covers that derive from forest: how a newly planted stand grows toward these
        (mature) parameters over the years; None: the cover does not grow (a fixed stage).
    description : str
        Free text shown to users.
    """

    model_config = ConfigDict(frozen=True, extra="forbid")

    name: str = Field(min_length=1)
    base: BaseName
    description: str = ""
    albedo: float = Field(ge=0.0, le=1.0)
    height_m: float = Field(ge=0.0, le=120.0)
    rs_s_per_m: float = Field(ge=0.0, le=5000.0)
    lai: float = Field(ge=0.0, le=20.0)
    canopy_capacity_mm: float | None = Field(None, ge=0.0, le=10.0)
    extinction_coefficient: float = Field(0.5, gt=0.0, le=2.0)
    rooting_depth_m: float = Field(ge=0.0, le=10.0)
    depletion_fraction: float = Field(ge=0.0, le=0.95)
    curve_number: dict[str, float]
    kc_calendar: KcCalendar | None = None
    water_depth_m: float = Field(2.0, gt=0.0, le=500.0)
    water_fetch_m: float = Field(100.0, ge=1.0, le=100_000.0)
    growth: Growth | None = None

    @field_validator("curve_number")
    @classmethod
    def _curve_numbers_cover_each_soil_group(cls, value: dict[str, float]) -> dict[str, float]:
        missing = [g for g in SOIL_GROUPS if g not in value]
        extra = [g for g in value if g not in SOIL_GROUPS]
        if missing or extra:
            raise ValueError(
                f"needs exactly the soil groups A, B, C, D; missing {missing}, unknown {extra}"
            )
        bad = {g: cn for g, cn in value.items() if not 30.0 <= cn <= 100.0}
        if bad:
            raise ValueError(f"curve numbers must lie in 30-100, got {bad}")
        return dict(value)

    @model_validator(mode="after")
    def _land_covers_need_roots_and_height(self) -> Cover:
        if self.base != "water":
            if self.height_m <= 0.0:
                raise ValueError(f"a {self.base} cover needs height_m > 0, got {self.height_m}")
            if self.rooting_depth_m <= 0.0:
                raise ValueError(
                    f"a {self.base} cover needs rooting_depth_m > 0, got {self.rooting_depth_m}"
                )
            if self.canopy_capacity_mm and self.lai <= 0.0:
                raise ValueError(
                    f"canopy_capacity_mm = {self.canopy_capacity_mm} needs lai > 0 (the store "
                    "scales with leaf area), got lai = 0"
                )
        if self.base == "crop" and self.kc_calendar is None:
            raise ValueError("a crop cover needs a kc_calendar")
        if self.growth is not None and self.base != "forest":
            raise ValueError(
                f"a growth trajectory is only for covers that derive from forest; this cover "
                f"derives from {self.base}"
            )
        return self

    @property
    def grows(self) -> bool:
        """True for a cover whose newly planted stands grow along a trajectory."""
        return self.growth is not None

    @property
    def is_water(self) -> bool:
        """True for open water (no canopy, no soil)."""
        return self.base == "water"

    @property
    def capacity_per_lai_mm(self) -> float:
        """Canopy storage per unit leaf area index [mm per m2 m-2].

        A measured ``canopy_capacity_mm`` fixes it at capacity / LAI; otherwise it is
        :data:`~coveryield.physics.canopy.CAPACITY_PER_LAI_MM` (Dickinson 1984). Whenever the
        leaf area moves (a crop's season, a plantation's growth) the store moves with it:
        capacity(LAI) = capacity_per_lai_mm x LAI.
        """
        if self.canopy_capacity_mm is not None and self.lai > 0.0:
            return self.canopy_capacity_mm / self.lai
        return CAPACITY_PER_LAI_MM

    def canopy_capacity_at(self, lai):
        """Canopy storage capacity at a leaf area index [mm] (``lai`` in m2 m-2)."""
        return canopy_capacity(lai, self.capacity_per_lai_mm)

    def cover_fraction_at(self, lai):
        """Fraction of the ground under canopy at a leaf area index [-] (Beer's law)."""
        return canopy_cover_fraction(lai, self.extinction_coefficient)

    def leaf_area_index(self, doy, latitude_deg: float | None = None):
        """Leaf area index of each day [m2 m-2].

        Parameters
        ----------
        doy : array_like of int
            Day of year, 1-366 [day].
        latitude_deg : float, optional
            Site latitude [degrees, negative south] (a crop's season depends on it).

        Returns
        -------
        numpy.ndarray
            ``lai`` every day for covers without a calendar (mature, stationary covers); for a
            crop, ``lai`` scaled by :meth:`KcCalendar.development` (0 outside the season).
        """
        doy = np.asarray(doy)
        if self.kc_calendar is None:
            return np.full(doy.shape, 0.0 if self.is_water else self.lai)
        return self.lai * self.kc_calendar.development(doy, latitude_deg)


def _builtin_covers() -> dict[str, Cover]:
    forest = Cover(
        name="forest",
        base="forest",
        description="Evergreen conifer plantation at canopy closure",
        albedo=0.12,  # Oke (1987) via FAO-56 practice: forest 0.12
        height_m=20.0,  # mid-rotation plantation; typical 10-30 m (from memory)
        rs_s_per_m=150.0,  # dry conifer canopy as a daily bulk value, typical 60-150 s/m
        # (from memory); the upper end, since daily-mean vapour-pressure
        # deficit drives eq. 3 also in hours when stomata are closed
        lai=6.0,  # conifer plantations 3-10 (from memory)
        # canopy store 0.2 mm per unit LAI = 1.2 mm (Dickinson 1984); Sitka spruce ~1-1.5 mm
        # (from memory)
        rooting_depth_m=1.5,  # FAO-56 Table 22, conifer trees 1.0-1.5 m
        depletion_fraction=0.70,  # FAO-56 Table 22, conifer trees
        curve_number={"A": 30, "B": 55, "C": 70, "D": 77},  # TR-55 woods, good (from memory)
        growth=DEFAULT_GROWTH,  # maturity 20 yr, p 1.5: see DEFAULT_GROWTH for the sources
    )
    pasture = Cover(
        name="pasture",
        base="pasture",
        description="Grazed grass pasture, rotated grazing",
        albedo=0.23,  # FAO-56 reference grass
        height_m=0.15,  # FAO-56 Table 12, rotated grazing 0.15-0.30 m
        rs_s_per_m=70.0,  # FAO-56 reference surface (eq. 5 with LAI = 24 h)
        lai=2.88,  # FAO-56 reference grass LAI = 24 x 0.12
        # canopy store 0.2 mm per unit LAI = 0.58 mm (Dickinson 1984); grass 0.5-1 mm (from
        # memory)
        rooting_depth_m=0.8,  # FAO-56 Table 22, grazing pasture 0.5-1.5 m
        depletion_fraction=0.60,  # FAO-56 Table 22, grazing pasture
        curve_number={"A": 39, "B": 61, "C": 74, "D": 80},  # TR-55 pasture, good (from memory)
    )
    crop = Cover(
        name="crop",
        base="crop",
        description="Spring cereal (wheat/barley), one crop a year, bare soil between",
        albedo=0.23,  # cereals 0.16-0.26 (Oke 1987)
        height_m=1.0,  # FAO-56 Table 12, spring wheat
        rs_s_per_m=50.0,  # crops 30-50 s/m at full cover (from memory)
        lai=4.0,  # cereals 4-6 (from memory); follows the Kcb calendar through the season
        # canopy store 0.2 mm per unit LAI (Dickinson 1984): 0.8 mm in mid-season
        rooting_depth_m=1.2,  # FAO-56 Table 22, spring wheat 1.0-1.5 m
        depletion_fraction=0.55,  # FAO-56 Table 22, spring wheat
        curve_number={"A": 67, "B": 78, "C": 85, "D": 89},  # TR-55 row crops, good (from memory)
        # FAO-56 Table 11 spring wheat 20/25/60/30 d; Table 17 Kcb 0.15/1.10/0.15
        kc_calendar=KcCalendar(),
    )
    water = Cover(
        name="water",
        base="water",
        description="Open water: reservoir, lake or pond",
        albedo=0.08,  # open water, daily mean (Oke 1987 via secondary source)
        height_m=0.0,
        rs_s_per_m=0.0,
        lai=0.0,
        rooting_depth_m=0.0,
        depletion_fraction=0.0,
        curve_number={"A": 100, "B": 100, "C": 100, "D": 100},
        water_depth_m=2.0,  # farm ponds and small reservoirs, mean depth (our choice)
        water_fetch_m=100.0,  # a pond of about 1 ha, 100 m across (our choice)
    )
    return {c.name: c for c in (forest, pasture, crop, water)}


#: The four built-in covers, by name.
BUILTIN_COVERS: dict[str, Cover] = _builtin_covers()


def derive_cover(
    name: str,
    base: str | Cover,
    overrides: dict | None = None,
    covers: dict[str, Cover] | None = None,
) -> Cover:
    """Define a new cover from a built-in (or already defined) cover and parameter overrides.

    Parameters
    ----------
    name : str
        Name of the new cover.
    base : str or Cover
        The cover to start from: a built-in name, a name in ``covers``, or a Cover.
    overrides : dict, optional
        Parameter values to replace (keys are :class:`Cover` fields).
    covers : dict, optional
        Covers to look ``base`` up in (default: the built-ins).

    Returns
    -------
    Cover
        The derived cover; its ``base`` is the built-in kind it finally derives from.

    Raises
    ------
    KeyError
        If ``base`` names no known cover.
    pydantic.ValidationError
        If an override is unknown or out of range.
    """
    known = BUILTIN_COVERS if covers is None else covers
    parent = base if isinstance(base, Cover) else known[base]
    fields = parent.model_dump()
    fields.update(overrides or {})
    fields["name"] = name
    fields["base"] = parent.base
    return Cover.model_validate(fields)


def _check_parameter_ranges() -> None:
    """Every range holds its built-in value (run at import: a wrong table fails loudly)."""
    for cover_name, ranges in PARAMETER_RANGES.items():
        cover = BUILTIN_COVERS[cover_name]
        for parameter, spread in ranges.items():
            value = getattr(cover, parameter)
            if value is not None and not spread.low <= value <= spread.high:
                raise AssertionError(
                    f"PARAMETER_RANGES[{cover_name!r}][{parameter!r}] = "
                    f"{spread.low}-{spread.high} does not hold the built-in value {value}")


_check_parameter_ranges()
