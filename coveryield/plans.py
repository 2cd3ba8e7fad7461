"""Plan files: the catchment, its zones, extra covers and the land-use plans to compare.

A plan file is TOML with these sections::

    [catchment]                    # name, area_km2, latitude_deg, elevation_m, climate, ...
    [[zones]]                      # one table per zone: name, area_share, rain_factor, soil, ...
    [covers.young-pine]            # optional: new covers derived from a built-in one
    [adjustments]                  # optional: catchment-wide factors (coveryield.adjustments)
    [plans.current]                # the baseline plan (required); then any other plans
    upper = { pasture = 0.7, forest = 0.3 }
    [schedules.plant-upper]        # optional: in which years a plan's changes happen
    [[schedules.plant-upper.plantings]]   # (see coveryield.schedules)

:func:`load_plan` reads and checks a file and returns a frozen :class:`PlanFile`. Every mistake in
the file is collected and reported in ONE :class:`~coveryield.errors.PlanFileError` whose message
names the file, the key path (``plans.plant-upper.upper``), the value found and what was expected.
:func:`write_plan_file` writes a plan file atomically and never overwrites an existing file.
"""

from __future__ import annotations

import contextlib
import json
import math
import os
import re
import sys
import tempfile
from collections.abc import Iterable, Mapping
from pathlib import Path
from types import NoneType, UnionType
from typing import Any, Literal, Union, get_args, get_origin

from pydantic import BaseModel, ConfigDict, Field, ValidationError, ValidationInfo, field_validator

from coveryield.adjustments import Adjustments
from coveryield.covers import BUILTIN_COVERS, DEFAULT_GROWTH, Cover, derive_cover
from coveryield.errors import OutputError, PlanFileError
from coveryield.schedules import Schedule, growth_start_problems, read_schedules
from coveryield.soils import (
    SOIL_TEXTURES,
    available_water_capacity,
    normalise_texture,
    surface_layer_mm,
)

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - Python 3.10
    import tomli as tomllib

__all__ = [
    "BASELINE_PLAN", "SHARE_TOLERANCE", "CatchmentSpec", "ZoneSpec", "PlanFile", "load_plan",
    "plan_from_dict", "validate_shares", "write_plan_file",
]

#: Name of the baseline plan every plan file must contain.
BASELINE_PLAN = "current"
#: Shares (zone area shares, cover shares within a zone) must sum to 1 within this [-].
SHARE_TOLERANCE = 1e-6
#: The sections a plan file may contain.
SECTIONS = ("catchment", "zones", "covers", "plans", "adjustments", "schedules")
#: Cover parameters a derived cover may override (everything except its name and base).
COVER_PARAMETERS = tuple(f for f in Cover.model_fields if f not in ("name", "base"))

_NO_VALUE = object()  # marks a problem that has no value to show (e.g. a missing key)
Problem = tuple[str, Any, str]  # (key path, value found or _NO_VALUE, what was expected)


class CatchmentSpec(BaseModel):
    """The catchment as a whole: where it is, how big, and its climate record.

    Parameters
    ----------
    name : str
        Catchment name shown in reports.
    area_km2 : float
        Catchment area [km2], > 0.
    latitude_deg : float
        Latitude of the climate station, negative south [degrees], -90 to 90.
    elevation_m : float
        Elevation of the climate station [m], -500 to 6000.
    climate : pathlib.Path
        Daily climate CSV; a relative path is read relative to the plan file. Must exist.
    wind_height_m : float
        Height of the wind measurement above the ground [m], default 2.
    coastal : bool
        Coastal site: Hargreaves radiation coefficient 0.19 instead of 0.16 when the record has
        no radiation or sunshine data (FAO-56 eq. 50).
    recession_days : float
        Recession constant of the groundwater store that routes drainage (water percolating
        below the root zone) and the open-water balance to streamflow [day], default 30.
    quickflow_recession_days : float
        Recession constant of the fast store that routes quickflow to streamflow [day],
        default 2.
    rain_rate_mm_per_h : float
        Mean rainfall intensity during rain, used by canopy interception [mm h-1], default 1.5.
    low_flow_m3s : float or None
        Flow threshold for "days below" in the low-flow figures [m3 s-1]; optional.
    """

    model_config = ConfigDict(frozen=True, extra="forbid", strict=True)

    name: str = Field(min_length=1)
    area_km2: float = Field(gt=0.0)
    latitude_deg: float = Field(ge=-90.0, le=90.0)
    elevation_m: float = Field(ge=-500.0, le=6000.0)
    climate: Path
    wind_height_m: float = Field(2.0, ge=0.5, le=100.0)
    coastal: bool = False
    recession_days: float = Field(30.0, gt=0.0, le=3650.0)
    quickflow_recession_days: float = Field(2.0, gt=0.0, le=365.0)
    rain_rate_mm_per_h: float = Field(1.5, gt=0.0, le=200.0)
    low_flow_m3s: float | None = Field(None, gt=0.0)

    @field_validator("climate", mode="before")
    @classmethod
    def _climate_file_exists(cls, value: Any, info: ValidationInfo) -> Path:
        if not isinstance(value, (str, Path)) or not str(value).strip():
            raise ValueError("expected the path of the climate CSV file, as text")
        path = Path(value).expanduser()
        base_dir = (info.context or {}).get("base_dir")
        if not path.is_absolute() and base_dir is not None:
            path = Path(base_dir) / path
        path = path.resolve()
        if not path.is_file():
            raise ValueError(f"no climate file at {path} (a relative path is read relative to "
                             "the plan file)")
        return path


class ZoneSpec(BaseModel):
    """One zone of the catchment: its area share, climate adjustment and soil.

    Parameters
    ----------
    name : str
        Zone name, used as the key in every plan.
    area_share : float
        Fraction of the catchment area in this zone [-], 0 < share <= 1; all zones sum to 1.
    rain_factor : float
        Multiplier on the station rain for this zone [-], 0.2 to 5, default 1.
    temperature_offset_c : float
        Added to the station temperatures for this zone [°C], -15 to 15, default 0.
    soil : str
        Soil texture, one of :data:`coveryield.soils.SOIL_TEXTURES` (default "loam").
    soil_group : {"A", "B", "C", "D"}
        Hydrologic soil group for SCS curve numbers (default "B").
    """

    model_config = ConfigDict(frozen=True, extra="forbid", strict=True)

    name: str = Field(min_length=1)
    area_share: float = Field(gt=0.0, le=1.0)
    rain_factor: float = Field(1.0, ge=0.2, le=5.0)
    temperature_offset_c: float = Field(0.0, ge=-15.0, le=15.0)
    soil: str = "loam"
    soil_group: Literal["A", "B", "C", "D"] = "B"

    @field_validator("soil", mode="before")
    @classmethod
    def _known_texture(cls, value: Any) -> Any:
        if not isinstance(value, str):
            return value  # the strict str check reports it
        key = normalise_texture(value)
        if key not in SOIL_TEXTURES:
            raise ValueError(f"expected one of the soil textures {', '.join(SOIL_TEXTURES)}")
        return key

    @property
    def awc_m3_per_m3(self) -> float:
        """Available water capacity of the zone's soil, theta_FC - theta_WP [m3 m-3]."""
        return available_water_capacity(self.soil)

    @property
    def surface_layer_mm(self) -> tuple[float, float]:
        """Readily and total evaporable water (REW, TEW) of the zone's surface layer [mm]."""
        return surface_layer_mm(self.soil)


class PlanFile(BaseModel):
    """A checked plan file: catchment, zones, covers and plans (plan -> zone -> cover -> share).

    Build one with :func:`load_plan` or :func:`plan_from_dict`; those check everything. The
    object is frozen: :meth:`with_plan` returns a new one.

    Parameters
    ----------
    source : pathlib.Path
        The plan file this came from (relative paths in it are read relative to its folder).
    catchment : CatchmentSpec
        The catchment.
    zones : tuple of ZoneSpec
        The zones, in file order.
    covers : dict of str to Cover
        Built-in covers followed by the covers the file derives, in file order.
    plans : dict
        Plan name -> zone name -> cover name -> share of the zone's area [-].
    adjustments : Adjustments
        Catchment-wide factors applied to every tile (all 1 unless the file sets them).
    schedules : dict
        Plan name -> :class:`~coveryield.schedules.Schedule`: in which years that plan's
        changes happen (plans without one are taken as made at once in year 1).
    """

    model_config = ConfigDict(frozen=True, extra="forbid")

    source: Path
    catchment: CatchmentSpec
    zones: tuple[ZoneSpec, ...]
    covers: dict[str, Cover]
    plans: dict[str, dict[str, dict[str, float]]]
    adjustments: Adjustments = Adjustments()
    schedules: dict[str, Schedule] = Field(default_factory=dict)

    def zone(self, name: str) -> ZoneSpec:
        """Return the zone called ``name``; a :class:`PlanFileError` lists the zones if none."""
        for zone in self.zones:
            if zone.name == name:
                return zone
        raise PlanFileError(f"{self.source}: no zone {_show(name)}; zones are: "
                            f"{', '.join(z.name for z in self.zones)}")

    def plan(self, name: str) -> dict[str, dict[str, float]]:
        """Return the cover shares of plan ``name`` (zone -> cover -> share [-])."""
        if name not in self.plans:
            raise PlanFileError(f"{self.source}: no plan {_show(name)}; plans are: "
                                f"{', '.join(self.plan_names)}")
        return self.plans[name]

    @property
    def plan_names(self) -> tuple[str, ...]:
        """Plan names, the baseline ``current`` first, then the others in file order."""
        return (BASELINE_PLAN,) + tuple(p for p in self.plans if p != BASELINE_PLAN)

    def input_files(self) -> dict[str, Path]:
        """Files a run of this plan file reads: role -> path.

        Output writers never replace these (see :mod:`coveryield.output_folder`). A reader of
        further files (observed flow, schedules) adds them here.
        """
        return {"plan file": Path(self.source), "climate file": Path(self.catchment.climate)}

    @property
    def derived_covers(self) -> dict[str, Cover]:
        """The covers this file defines on top of the built-ins, in file order."""
        return {n: c for n, c in self.covers.items() if n not in BUILTIN_COVERS}

    def covers_used(self) -> tuple[str, ...]:
        """Names of covers with a share > 0 in any plan and any zone.

        The order is stable: built-in covers first in their built-in order (forest, pasture,
        crop, water), then derived covers alphabetically.
        """
        used = {c for plan in self.plans.values() for shares in plan.values()
                for c, share in shares.items() if share > 0.0}
        builtins = [c for c in BUILTIN_COVERS if c in used]
        return tuple(builtins + sorted(used - set(BUILTIN_COVERS)))

    def with_plan(self, name: str, shares: Mapping[str, Mapping[str, float]], *,
                  replace: bool = False) -> PlanFile:
        """Return a copy of this plan file with plan ``name`` added (checked as in a file).

        Parameters
        ----------
        name : str
            Name of the new plan.
        shares : mapping
            Zone name -> cover name -> share of the zone's area [-]; every zone, shares sum to 1.
        replace : bool
            Allow replacing an existing plan of that name (default: refuse).

        Returns
        -------
        PlanFile
            A new object; this one is unchanged.

        Raises
        ------
        PlanFileError
            If the name is empty or taken, or the shares are invalid.
        """
        if not isinstance(name, str) or not name.strip():
            raise PlanFileError(f"{self.source}: plans.{_key(str(name))}: expected a non-empty "
                                "plan name")
        if name in self.plans and not replace:
            raise PlanFileError(f"{self.source}: plans.{_key(name)}: a plan of that name exists "
                                "already; choose another name")
        validate_shares(shares, self.zones, self.covers, plan_name=name, source=self.source)
        tidy = {z.name: {c: float(s) for c, s in shares[z.name].items()} for z in self.zones}
        return self.model_copy(update={"plans": {**self.plans, name: tidy}})

    def to_toml(self, relative_to: str | Path | None = None) -> str:
        """Write the plan file as TOML text that :func:`load_plan` reads back to an equal object.

        Parameters
        ----------
        relative_to : str or Path, optional
            Folder the text will be saved in; the climate path is written relative to it
            (default: the folder of :attr:`source`).

        Returns
        -------
        str
            TOML text. Comments of the original file are not kept.
        """
        folder = Path(relative_to) if relative_to is not None else self.source.parent
        lines = ["# Plan file written by coveryield (comments of the original are not kept).",
                 "", "[catchment]"]
        for field in CatchmentSpec.model_fields:
            value = getattr(self.catchment, field)
            if value is None:  # an optional key left out
                continue
            if field == "climate":
                value = _relative_path(value, folder)
            lines.append(f"{field} = {_toml_value(value)}")
        for zone in self.zones:
            lines += ["", "[[zones]]"]
            lines += [f"{f} = {_toml_value(getattr(zone, f))}" for f in ZoneSpec.model_fields]
        for name, cover in self.derived_covers.items():
            lines += ["", f"[covers.{_key(name)}]", f"base = {_toml_value(cover.base)}"]
            lines += [f"{k} = {_toml_value(v)}" for k, v in _cover_overrides(cover).items()]
        if not self.adjustments.is_default:
            lines += ["", "[adjustments]"]
            lines += [f"{k} = {_toml_value(v)}" for k, v in self.adjustments.toml_items().items()]
        for plan_name in self.plan_names:
            lines += ["", f"[plans.{_key(plan_name)}]"]
            lines += [f"{_key(zone)} = {_toml_value(shares)}"
                      for zone, shares in self.plans[plan_name].items()]
        for plan_name, schedule in self.schedules.items():
            where = f"schedules.{_key(plan_name)}"
            lines += ["", f"[{where}]", f"description = {_toml_value(schedule.description)}"]
            for planting in schedule.plantings:
                lines += ["", f"[[{where}.plantings]]"]
                lines += [f"{k} = {_toml_value(v)}"
                          for k, v in planting.model_dump(exclude_none=True).items()]
        return "\n".join(lines) + "\n"


# --------------------------------------------------------------------------------------------
# reading


def load_plan(path: str | Path) -> PlanFile:
    """Read and check a plan file.

    Parameters
    ----------
    path : str or Path
        The TOML plan file.

    Returns
    -------
    PlanFile
        The checked plan file.

    Raises
    ------
    PlanFileError
        If the file is missing, unreadable, not TOML, or breaks any rule; the message lists
        every problem with its key path, the value found and what was expected.
    """
    path = Path(path).expanduser()
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise PlanFileError(f"Plan file not found: {path}") from None
    except UnicodeDecodeError as exc:
        raise PlanFileError(f"Plan file {path} is not UTF-8 text ({exc.reason} at byte "
                            f"{exc.start})") from None
    except OSError as exc:
        raise PlanFileError(f"Plan file {path} cannot be read: {exc.strerror}") from None
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise PlanFileError(_toml_syntax_message(path, text, exc)) from None
    return plan_from_dict(data, source=path)


def plan_from_dict(data: Mapping[str, Any], *, source: str | Path) -> PlanFile:
    """Check parsed plan-file content and build a :class:`PlanFile`.

    Parameters
    ----------
    data : mapping
        The content of a plan file as parsed from TOML.
    source : str or Path
        The plan file it came from; relative paths are read relative to its folder.

    Returns
    -------
    PlanFile
        The checked plan file.

    Raises
    ------
    PlanFileError
        Listing every problem found (key path, value, what was expected).
    """
    source = Path(source).expanduser().resolve()
    problems: list[Problem] = []
    if not isinstance(data, Mapping):
        raise PlanFileError(f"Plan file {source}: expected TOML tables, got {_show(data)}")
    problems += [(_key(k), _NO_VALUE, f"unknown section; allowed sections: {', '.join(SECTIONS)}")
                 for k in data if k not in SECTIONS]
    catchment = _read_catchment(data, source.parent, problems)
    zones = _read_zones(data, problems)
    covers = _read_covers(data, problems)
    adjustments = _read_adjustments(data, problems)
    problems += growth_start_problems(covers)
    plans = _read_plans(data, zones, covers, problems)
    read_all = isinstance(data.get("plans"), Mapping) and set(plans) == set(data["plans"])
    schedules = read_schedules(data, plans if read_all else {}, covers, problems)
    if problems:
        raise PlanFileError(_problem_message(source, problems))
    return PlanFile(source=source, catchment=catchment, zones=tuple(zones), covers=covers,
                    plans=plans, adjustments=adjustments,
                    schedules=schedules)


def _read_catchment(data, base_dir: Path, problems: list[Problem]) -> CatchmentSpec | None:
    if "catchment" not in data:
        problems.append(("catchment", _NO_VALUE, "missing section; expected a [catchment] table"))
        return None
    section = data["catchment"]
    if not isinstance(section, Mapping):
        problems.append(("catchment", section, "expected a [catchment] table"))
        return None
    try:
        return CatchmentSpec.model_validate(section, context={"base_dir": base_dir})
    except ValidationError as exc:
        problems += _pydantic_problems(exc, CatchmentSpec, "catchment")
        return None


def _read_adjustments(data, problems: list[Problem]) -> Adjustments:
    """Read the optional [adjustments] table (defaults when absent or invalid; problems noted)."""
    section = data.get("adjustments", {})
    if not isinstance(section, Mapping):
        problems.append(("adjustments", section, "expected an [adjustments] table"))
        return Adjustments()
    try:
        return Adjustments.model_validate(section)
    except ValidationError as exc:
        problems += _pydantic_problems(exc, Adjustments, "adjustments")
        return Adjustments()


def _read_zones(data, problems: list[Problem]) -> list[ZoneSpec] | None:
    """Zones in file order, or None if any zone is invalid (plan checks then skip zone names)."""
    section = data.get("zones", _NO_VALUE)
    if section is _NO_VALUE or (isinstance(section, list) and not section):
        problems.append(("zones", _NO_VALUE, "missing; expected at least one [[zones]] table"))
        return None
    if not isinstance(section, list) or not all(isinstance(z, Mapping) for z in section):
        problems.append(("zones", section, "expected [[zones]] tables (an array of tables)"))
        return None
    zones, ok = [], True
    for number, raw in enumerate(section, start=1):
        name = raw.get("name")
        where = f"zones.{_key(name)}" if isinstance(name, str) and name else f"zones[{number}]"
        try:
            zones.append(ZoneSpec.model_validate(raw))
        except ValidationError as exc:
            problems += _pydantic_problems(exc, ZoneSpec, where)
            ok = False
    names = [z.get("name") for z in section]
    for name in dict.fromkeys(n for n in names if isinstance(n, str) and names.count(n) > 1):
        problems.append((f"zones.{_key(name)}", name,
                         f"zone name used {names.count(name)} times; each zone needs its own name"))
        ok = False
    if not ok:
        return None
    total = math.fsum(z.area_share for z in zones)
    if abs(total - 1.0) > SHARE_TOLERANCE:
        terms = " + ".join(f"{z.name} {z.area_share:g}" for z in zones)
        problems.append(("zones.*.area_share", _NO_VALUE,
                         f"zone area shares sum to {total:.6g} ({terms}); expected 1 "
                         f"(within {SHARE_TOLERANCE:g})"))
    return zones


def _read_covers(data, problems: list[Problem]) -> dict[str, Cover]:
    """Built-in covers plus the derived ones that are valid (invalid ones are reported)."""
    covers = dict(BUILTIN_COVERS)
    section = data.get("covers", {})
    if not isinstance(section, Mapping):
        problems.append(("covers", section, "expected [covers.NAME] tables"))
        return covers
    for name, spec in section.items():
        where = f"covers.{_key(name)}"
        if name in BUILTIN_COVERS:
            problems.append((where, _NO_VALUE, f"{_show(name)} is a built-in cover and cannot be "
                             "redefined; give the new cover its own name"))
        elif not name.strip():
            problems.append((where, _NO_VALUE, "expected a non-empty cover name"))
        elif not isinstance(spec, Mapping):
            problems.append((where, spec, "expected a table with base = \"forest\" (or another "
                             "cover) and the parameters to change"))
        else:
            cover = _derive(name, spec, covers, where, problems)
            if cover is not None:
                covers[name] = cover
    return covers


def _derive(name: str, spec: Mapping, covers: dict[str, Cover], where: str,
            problems: list[Problem]) -> Cover | None:
    found = len(problems)
    base = spec.get("base", _NO_VALUE)
    if base is _NO_VALUE:
        problems.append((f"{where}.base", _NO_VALUE, "missing; expected the cover it derives from: "
                         f"{', '.join(covers)}"))
    elif not isinstance(base, str) or base not in covers:
        problems.append((f"{where}.base", base, f"unknown base cover; expected one of "
                         f"{', '.join(covers)} (a derived cover must be defined before it is "
                         "used as a base)"))
    overrides = {k: v for k, v in spec.items() if k != "base"}
    _growth_override(where, overrides, covers.get(base) if isinstance(base, str) else None,
                     problems)
    for key, value in overrides.items():
        if key not in COVER_PARAMETERS:
            problems.append((f"{where}.{_key(key)}", value, "unknown cover parameter; allowed "
                             f"parameters: {', '.join(COVER_PARAMETERS)}"))
        elif isinstance(getattr(BUILTIN_COVERS["forest"], key), float) and (
                isinstance(value, bool) or not isinstance(value, (int, float))):
            problems.append((f"{where}.{_key(key)}", value, "expected a number"))
    if len(problems) > found:
        return None
    parent = covers[base]
    for nested in ("kc_calendar", "curve_number", "growth"):  # partial tables update the parent's
        parent_value = getattr(parent, nested)
        if isinstance(overrides.get(nested), Mapping) and parent_value is not None:
            old = parent_value if isinstance(parent_value, dict) else parent_value.model_dump()
            overrides[nested] = {**old, **overrides[nested]}
    try:
        return derive_cover(name, base, overrides, covers=covers)
    except ValidationError as exc:
        problems += _pydantic_problems(exc, Cover, where)
        return None


def _growth_override(where: str, overrides: dict, parent: Cover | None,
                     problems: list[Problem]) -> None:
    """``growth = false`` (a cover that does not grow) or a growth table, on forest covers only."""
    if "growth" not in overrides:
        return
    value = overrides["growth"]
    forest = parent is None or parent.base == "forest"
    if not isinstance(value, (bool, Mapping)):
        problems.append((f"{where}.growth", value, "expected a table (maturity_years, shape, "
                         "rotation_years, start) or false for a cover that does not grow"))
    elif value is not False and not forest:
        problems.append((f"{where}.growth", value, "a growth trajectory is only for covers that "
                         f"derive from forest; this cover derives from {parent.base}"))
    elif isinstance(value, bool):
        overrides["growth"] = ((parent.growth if parent is not None else None) or DEFAULT_GROWTH
                               ) if value else None


def _read_plans(data, zones: list[ZoneSpec] | None, covers: dict[str, Cover],
                problems: list[Problem]) -> dict[str, dict[str, dict[str, float]]]:
    section = data.get("plans", _NO_VALUE)
    if section is _NO_VALUE:
        problems.append(("plans", _NO_VALUE, "missing section; expected [plans.current] and any "
                         "other [plans.NAME] tables"))
        return {}
    if not isinstance(section, Mapping):
        problems.append(("plans", section, "expected [plans.NAME] tables"))
        return {}
    if BASELINE_PLAN not in section:
        found = ", ".join(section) or "none"
        problems.append((f"plans.{BASELINE_PLAN}", _NO_VALUE, "missing; every plan file needs "
                         f"the baseline plan [plans.{BASELINE_PLAN}] (plans found: {found})"))
    zone_names = None if zones is None else [z.name for z in zones]
    plans = {}
    for plan_name, shares in section.items():
        found = _share_problems(plan_name, shares, zone_names, covers)
        problems += found
        if not found and zone_names is not None:
            plans[plan_name] = {z: dict(shares[z]) for z in zone_names}
    return plans


# --------------------------------------------------------------------------------------------
# cover shares


def validate_shares(shares: Mapping[str, Mapping[str, float]],
                    zones: Iterable[ZoneSpec | str], covers: Iterable[str] | Mapping[str, Cover],
                    *, plan_name: str, source: str | Path | None = None) -> None:
    """Check one plan's cover shares: every zone, known covers, shares 0-1 summing to 1.

    Parameters
    ----------
    shares : mapping
        Zone name -> cover name -> share of the zone's area [-].
    zones : iterable of ZoneSpec or str
        The catchment's zones (or their names).
    covers : iterable of str or mapping
        The known cover names (or a mapping whose keys are the names).
    plan_name : str
        Name of the plan, used in the messages (key path ``plans.NAME.ZONE``).
    source : str or Path, optional
        The plan file, named in the message.

    Raises
    ------
    PlanFileError
        Listing every problem found.
    """
    zone_names = [z.name if isinstance(z, ZoneSpec) else str(z) for z in zones]
    problems = _share_problems(plan_name, shares, zone_names, list(covers))
    if problems:
        raise PlanFileError(_problem_message(source, problems))


def _share_problems(plan_name: str, shares: Any, zone_names: list[str] | None,
                    covers: Iterable[str]) -> list[Problem]:
    """Problems with one plan; zone checks are skipped if ``zone_names`` is None."""
    where = f"plans.{_key(plan_name)}"
    if not isinstance(shares, Mapping) or not shares:
        return [(where, shares, "expected a [plans.NAME] table with one line per zone, "
                 "e.g. upper = { pasture = 0.7, forest = 0.3 }")]
    known = list(covers)
    problems: list[Problem] = []
    if zone_names is not None:
        missing = [z for z in zone_names if z not in shares]
        if missing:
            problems.append((where, _NO_VALUE, f"missing zone(s) {', '.join(missing)}; every plan "
                             f"gives cover shares for every zone ({', '.join(zone_names)})"))
    for zone, zone_shares in shares.items():
        zone_where = f"{where}.{_key(zone)}"
        if zone_names is not None and zone not in zone_names:
            problems.append((zone_where, zone_shares,
                             f"unknown zone; zones are: {', '.join(zone_names)}"))
        elif not isinstance(zone_shares, Mapping) or not zone_shares:
            problems.append((zone_where, zone_shares, "expected a table of cover shares, "
                             "e.g. { pasture = 0.7, forest = 0.3 }"))
        else:
            problems += _zone_share_problems(zone_where, zone_shares, known)
    return problems


def _zone_share_problems(where: str, shares: Mapping, known: list[str]) -> list[Problem]:
    problems: list[Problem] = []
    numbers_ok = True
    for cover, share in shares.items():
        share_where = f"{where}.{_key(cover)}"
        if cover not in known:
            problems.append((share_where, share, f"unknown cover; known covers: {', '.join(known)}"
                             " (define more under [covers.NAME] with a base)"))
        if isinstance(share, bool) or not isinstance(share, (int, float)) or math.isnan(share):
            problems.append((share_where, share, "expected a share: a number from 0 to 1"))
            numbers_ok = False
        elif not 0.0 <= share <= 1.0:
            problems.append((share_where, share, "expected a share from 0 to 1"))
            numbers_ok = False
    if numbers_ok:
        total = math.fsum(shares.values())
        if abs(total - 1.0) > SHARE_TOLERANCE:
            terms = " + ".join(f"{c} {s:g}" for c, s in shares.items())
            problems.append((where, shares, f"cover shares sum to {total:.6g} ({terms}); "
                             f"expected 1 (within {SHARE_TOLERANCE:g})"))
    return problems


# --------------------------------------------------------------------------------------------
# writing


def write_plan_file(plan_file: PlanFile, path: str | Path) -> Path:
    """Write a plan file atomically; never overwrite an existing file.

    The text is checked by reading it back before anything is written, then written to a
    temporary file in the target folder and moved into place with :func:`os.replace`, so a
    failure leaves no partial file.

    Parameters
    ----------
    plan_file : PlanFile
        What to write.
    path : str or Path
        The new file; the climate path is written relative to its folder.

    Returns
    -------
    Path
        The path written.

    Raises
    ------
    OutputError
        If the file exists already, its folder is missing, or writing fails.
    """
    path = Path(path).expanduser()
    if path.exists():
        raise OutputError(f"{path} exists already; refusing to overwrite it (choose a new name "
                          "or remove the old file first)")
    if not path.parent.is_dir():
        raise OutputError(f"cannot write {path}: the folder {path.parent} does not exist")
    text = plan_file.to_toml(relative_to=path.parent.resolve())
    plan_from_dict(tomllib.loads(text), source=path)  # prove the text reads back
    tmp_name = None
    try:
        fd, tmp_name = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as handle:
            handle.write(text)
            handle.flush()
            os.fsync(handle.fileno())
        if path.exists():  # appeared while we were writing
            raise OutputError(f"{path} appeared while writing; refusing to overwrite it")
        os.replace(tmp_name, path)
        tmp_name = None
    except OutputError:
        raise
    except OSError as exc:
        raise OutputError(f"could not write {path}: {exc.strerror or exc}") from None
    finally:
        if tmp_name is not None:
            with contextlib.suppress(OSError):
                os.unlink(tmp_name)
    return path


# --------------------------------------------------------------------------------------------
# messages and TOML helpers

_BARE_KEY = re.compile(r"^[A-Za-z0-9_-]+$")


def _key(part: Any) -> str:
    """One key of a dotted key path, quoted as TOML would need it."""
    text = str(part)
    return text if _BARE_KEY.match(text) else json.dumps(text, ensure_ascii=False)


def _show(value: Any, limit: int = 100) -> str:
    """Show a value as the user would have written it in TOML, at most ``limit`` characters."""
    text = _toml_value(value) if _is_toml_value(value) else repr(value)
    return text if len(text) <= limit else text[: limit - 3] + "..."


def _is_toml_value(value: Any) -> bool:
    if isinstance(value, Mapping):
        return all(isinstance(k, str) and _is_toml_value(v) for k, v in value.items())
    if isinstance(value, (list, tuple)):
        return all(_is_toml_value(v) for v in value)
    return isinstance(value, (str, bool, int, float, Path))


def _toml_value(value: Any) -> str:
    """TOML text of a value (inline tables for mappings)."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (int, float)):
        return repr(value)  # Python's int/float repr (incl. inf, nan) is valid TOML
    if isinstance(value, (str, Path)):
        return json.dumps(str(value), ensure_ascii=False)
    if isinstance(value, Mapping):
        return "{ " + ", ".join(f"{_key(k)} = {_toml_value(v)}" for k, v in value.items()) + " }"
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_toml_value(v) for v in value) + "]"
    if isinstance(value, BaseModel):
        return _toml_value(value.model_dump(exclude_none=True))
    raise TypeError(f"cannot write {value!r} as TOML")


def _relative_path(path: Path, folder: Path) -> str:
    """``path`` relative to ``folder`` with forward slashes, or absolute if that fails."""
    try:
        return Path(os.path.relpath(Path(path).resolve(), Path(folder).resolve())).as_posix()
    except ValueError:  # different drives on Windows
        return Path(path).resolve().as_posix()


def _cover_overrides(cover: Cover) -> dict[str, Any]:
    """Parameters in which a derived cover differs from its built-in base."""
    base = BUILTIN_COVERS[cover.base]
    changed = {f: getattr(cover, f) for f in COVER_PARAMETERS
               if getattr(cover, f) != getattr(base, f)}
    if "growth" in changed and changed["growth"] is None:
        changed["growth"] = False  # a forest cover that does not grow
    return changed


def _toml_syntax_message(path: Path, text: str, exc: Exception) -> str:
    message = f"Plan file {path} is not valid TOML: {exc}"
    match = re.search(r"line (\d+)", str(exc))
    lines = text.splitlines()
    if match and 1 <= int(match.group(1)) <= len(lines):
        message += f"\n  line {match.group(1)}: {lines[int(match.group(1)) - 1].strip()}"
    return message


def _problem_message(source: str | Path | None, problems: list[Problem]) -> str:
    where = f"Plan file {source}" if source is not None else "Plan"
    count = f"{len(problems)} problem" + ("s" if len(problems) > 1 else "")
    lines = [f"{where} has {count}:"]
    for key_path, value, expected in problems:
        shown = "" if value is _NO_VALUE else f" = {_show(value)}"
        lines.append(f"  - {key_path}{shown}: {expected}")
    if any("zones[" in p[0] for p in problems):
        lines.append("  ([[zones]] tables are counted from 1 in the order of the file)")
    return "\n".join(lines)


def _pydantic_problems(exc: ValidationError, model: type[BaseModel], prefix: str) -> list[Problem]:
    """Turn pydantic's errors into (dotted key path, value, plain-words expectation)."""
    problems = []
    for error in exc.errors():
        loc = [str(p) for p in error["loc"]]
        key_path = ".".join([prefix] + [_key(p) for p in loc]) if loc else prefix
        value = _NO_VALUE if error["type"] == "missing" else error.get("input", _NO_VALUE)
        if not loc and isinstance(value, Mapping):
            value = _NO_VALUE  # a model-level check: the whole table is not worth printing
        problems.append((key_path, value, _plain_words(error, model, loc)))
    return problems


def _plain_words(error: Mapping[str, Any], model: type[BaseModel], loc: list[str]) -> str:
    kind = error["type"]
    owner = _nested_model(model, loc[:-1])
    known_owner = len(loc) == 1 or (len(loc) > 1 and owner is not model)
    field = owner.model_fields.get(loc[-1]) if known_owner else None
    if kind == "missing":
        wanted = f"; expected {_describe(field)}" if field is not None else ""
        return f"required key is missing{wanted}"
    if kind == "extra_forbidden":
        nested = _nested_model(model, loc[:-1])
        allowed = [f for f in nested.model_fields if nested is not Cover or f in COVER_PARAMETERS]
        return f"unknown key; allowed keys: {', '.join(allowed)}"
    if kind == "value_error":
        return str(error.get("ctx", {}).get("error", error["msg"]))
    if field is not None:
        return f"expected {_describe(field)}"
    message = str(error["msg"])
    return message[:1].lower() + message[1:]


def _nested_model(model: type[BaseModel], loc: list[str]) -> type[BaseModel]:
    """Return the model a key path leads to (e.g. Growth for ``growth`` in a Cover)."""
    for part in loc:
        field = model.model_fields.get(part)
        annotation = _without_none(field.annotation) if field is not None else None
        if not (isinstance(annotation, type) and issubclass(annotation, BaseModel)):
            return model
        model = annotation
    return model


def _without_none(annotation: Any) -> Any:
    """``X`` for an optional annotation ``X | None``; other annotations unchanged."""
    if get_origin(annotation) in (Union, UnionType):
        args = [a for a in get_args(annotation) if a is not NoneType]
        if len(args) == 1:
            return args[0]
    return annotation


def _describe(field) -> str:
    """Plain words for what a pydantic field accepts, e.g. 'a number greater than 0'."""
    annotation = _without_none(field.annotation)
    if get_origin(annotation) is Literal:
        return "one of " + ", ".join(_toml_value(a) for a in get_args(annotation))
    words = {float: "a number", int: "a whole number", bool: "true or false", str: "text",
             Path: "a file path (text)"}.get(annotation, "a value")
    limits = {type(m).__name__: m for m in field.metadata}  # annotated-types Gt, Ge, Lt, Le...
    if "Ge" in limits and "Le" in limits:
        return f"{words} from {limits['Ge'].ge:g} to {limits['Le'].le:g}"
    if getattr(limits.get("MinLen"), "min_length", 0) == 1:
        words = "non-empty text"
    bounds = [f"{phrase} {getattr(limits[kind], kind.lower()):g}"
              for kind, phrase in (("Gt", "greater than"), ("Ge", "at least"),
                                   ("Lt", "less than"), ("Le", "at most")) if kind in limits]
    return words + (" " + " and ".join(bounds) if bounds else "")
