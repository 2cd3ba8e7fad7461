"""Daily climate records: read a station's weather, check it, complete it and adjust it for a zone.

A climate record is a CSV file (or a :class:`pandas.DataFrame`) with one row per day. Reading it
gives a :class:`Climate` whose ``daily`` table always holds six complete standard columns:

========== ============================================================ ==================
column     meaning                                                      unit
========== ============================================================ ==================
rain_mm    rain (never assumed, never filled)                           mm d-1
tmax_c     daily maximum air temperature                                °C
tmin_c     daily minimum air temperature                                °C
ea_kpa     actual vapour pressure                                       kPa
wind_ms    wind speed at ``site.wind_height_m``                         m s-1
rs_mj      solar (shortwave) radiation                                  MJ m-2 d-1
========== ============================================================ ==================

plus every other column of the file, kept as read.

Column contract of the file
---------------------------
* Required: ``date`` (ISO ``YYYY-MM-DD``), ``rain_mm``, ``tmax_c``, ``tmin_c``.
* Humidity, best first: ``tdew_c`` (FAO-56 eq. 14); ``vp_kpa`` (measured vapour pressure);
  ``rh_max_pct`` with ``rh_min_pct`` (eq. 17); ``rh_max_pct`` alone (eq. 18); ``rh_mean_pct``
  (eq. 19). With none of these, the dew point is taken as Tmin (eq. 48) and a
  :class:`ClimateAssumptionWarning` is issued.
* Wind: ``wind_ms`` measured at ``wind_height_m``. Without it, 2 m/s at 2 m is assumed (the
  FAO-56 practice for missing wind) with a warning; the site's wind height then becomes 2 m.
* Radiation, best first: ``solar_mj``; ``sun_hours`` (Angström, eq. 35, with the site's
  coefficients). With neither, Hargreaves radiation (eq. 50) with ``krs`` 0.16 inland or 0.19
  coastal (or the value given), with a warning.
* A day missing its best form uses the next form the file holds for that day ("per-day
  fallback", listed in ``fills``).
* Column names are matched without regard to case or surrounding spaces. Cells may carry spaces
  around numbers. Empty cells, ``NA`` and ``NaN`` are missing values. Lines starting with ``#``
  and blank lines are skipped (line numbers in messages still count them). Columns named
  ``ea_kpa`` or ``rs_mj`` are refused: those are computed here.

Checks (all problems are collected, then reported in one :class:`ClimateFileError`)
-----------------------------------------------------------------------------------
File missing, unreadable or empty; missing required columns; duplicate columns; rows with the
wrong number of fields; dates that are not ISO dates, repeated, out of order, or that skip days;
cells that are not numbers; temperatures (incl. dew point) outside -60...60 °C; tmin above tmax;
dew point above tmax; relative humidity outside 0-100 % or RHmin above RHmax; vapour pressure
outside 0-10 kPa; negative rain, wind, radiation or sunshine; rain above 2000 mm/d; wind above
60 m/s; sunshine longer than the day length N (eq. 34) plus 0.1 h for rounding; solar radiation
above ``max(1.1 Rso, 1 MJ m-2 d-1)`` with Rso from eq. 37 (10 % allows for calibration error and
a bright day after cloud; the 1 MJ floor keeps polar-night days sensible); fewer than
:data:`MIN_DAYS` days.

Gaps
----
Rain is never filled: a missing rain value is an error naming the dates. Fill rain gaps yourself
from a neighbouring gauge. Runs of at most ``max_gap_days`` missing days in temperature,
humidity, wind or radiation are filled by linear interpolation (or by the nearest value at the
start or end of the record). Longer runs are an error unless ``fill_long_gaps=True``, which fills
them from the record's day-of-year climatology (mean of the observed values within ±15 days of
the same day of year, over all years) and issues a :class:`ClimateAssumptionWarning`. Every
filled or assumed value is a row of ``Climate.fills``.

Error messages start with the source (the path as given), then list the problems in file order,
one per line, each naming the line and date, the column, the value and what was expected; after
:data:`MAX_PROBLEMS_LISTED` lines the rest is counted ("... and N more").

References
----------
.. [1] Allen, R. G., Pereira, L. S., Raes, D., & Smith, M. (1998). Crop evapotranspiration.
   FAO Irrigation and Drainage Paper 56. Eqs. 14, 17-19, 34, 35, 37, 48 and 50; Chapter 3 on
   missing humidity, radiation and wind data.
"""

from __future__ import annotations

import csv
import math
import re
import warnings
from dataclasses import dataclass, field
from datetime import date as _date
from pathlib import Path

import numpy as np
import pandas as pd

from coveryield.errors import ClimateFileError
from coveryield.physics import meteo, radiation

__all__ = [
    "STANDARD_COLUMNS",
    "REQUIRED_COLUMNS",
    "ClimateAssumptionWarning",
    "Site",
    "Climate",
    "read_climate",
    "climate_from_frame",
]

#: Columns every :attr:`Climate.daily` holds, complete, after reading.
STANDARD_COLUMNS = ("rain_mm", "tmax_c", "tmin_c", "ea_kpa", "wind_ms", "rs_mj")
#: Columns a climate file must have.
REQUIRED_COLUMNS = ("date", "rain_mm", "tmax_c", "tmin_c")
#: Measured columns this module understands (all numeric).
INPUT_COLUMNS = ("rain_mm", "tmax_c", "tmin_c", "tdew_c", "vp_kpa", "rh_max_pct", "rh_min_pct",
                 "rh_mean_pct", "wind_ms", "solar_mj", "sun_hours")
#: Columns computed here that a file may not bring, with the name to use instead.
COMPUTED_COLUMNS = {"ea_kpa": "vp_kpa", "rs_mj": "solar_mj"}
#: Shortest record accepted [d].
MIN_DAYS = 1
#: Problems listed in one error message before "... and N more".
MAX_PROBLEMS_LISTED = 20
#: Wind speed assumed when the record has none [m s-1] (FAO-56, Chapter 3, missing wind data).
DEFAULT_WIND_MS = 2.0
#: Hargreaves radiation coefficient inland and on the coast [°C-0.5] (FAO-56 eq. 50).
KRS_INLAND = 0.16
KRS_COASTAL = 0.19
#: Solar radiation above this multiple of clear-sky radiation Rso (eq. 37) is refused [-].
RS_CLEAR_SKY_FACTOR = 1.10
#: ... unless it is below this floor [MJ m-2 d-1] (polar night has Rso = 0).
RS_FLOOR_MJ = 1.0
#: Sunshine may exceed the day length N (eq. 34) by this much for rounding [h].
SUN_HOURS_TOLERANCE_H = 0.1
#: Half-width of the day-of-year window of the climatology used for long gaps [d].
CLIMATOLOGY_HALF_WINDOW_D = 15
#: Cell texts read as a missing value (after stripping, case-insensitive).
MISSING_MARKERS = frozenset({"", "na", "nan"})

#: Plausible range and unit of each measured column: (low, high, unit).
_LIMITS: dict[str, tuple[float, float, str]] = {
    "rain_mm": (0.0, 2000.0, "mm"),
    "tmax_c": (-60.0, 60.0, "°C"),
    "tmin_c": (-60.0, 60.0, "°C"),
    "tdew_c": (-60.0, 60.0, "°C"),
    "vp_kpa": (0.0, 10.0, "kPa"),
    "rh_max_pct": (0.0, 100.0, "%"),
    "rh_min_pct": (0.0, 100.0, "%"),
    "rh_mean_pct": (0.0, 100.0, "%"),
    "wind_ms": (0.0, 60.0, "m/s"),
    "solar_mj": (0.0, math.inf, "MJ m-2 d-1"),
    "sun_hours": (0.0, 24.0, "h"),
}

#: Humidity forms, best first: (label, columns needed).
_HUMIDITY_FORMS = (
    ("from tdew_c (FAO-56 eq. 14)", ("tdew_c",)),
    ("from vp_kpa (measured)", ("vp_kpa",)),
    ("from rh_max_pct and rh_min_pct (FAO-56 eq. 17)", ("rh_max_pct", "rh_min_pct")),
    ("from rh_max_pct alone (FAO-56 eq. 18)", ("rh_max_pct",)),
    ("from rh_mean_pct (FAO-56 eq. 19)", ("rh_mean_pct",)),
)
#: Radiation forms, best first.
_RADIATION_FORMS = (
    ("from solar_mj (measured)", ("solar_mj",)),
    ("from sun_hours (Angström, FAO-56 eq. 35)", ("sun_hours",)),
)
_ASSUMED_EA = "dew point taken as tmin (FAO-56 eq. 48)"
_ASSUMED_WIND = "assumed 2 m/s at 2 m (FAO-56 practice)"
_INTERPOLATED = "linear interpolation"
_NEAREST = "nearest value (edge of record)"
_CLIMATOLOGY = "day-of-year climatology"
_FALLBACK = "per-day fallback: "

_ISO_DATE = re.compile(r"^\d{4}-\d{2}-\d{2}$")


class ClimateAssumptionWarning(UserWarning):
    """A climate variable was missing from the record and a documented assumption replaced it."""


# --------------------------------------------------------------------------------------- Site


#: Accepted range of each site attribute: (low, high, unit).
_SITE_LIMITS: dict[str, tuple[float, float, str]] = {
    "latitude_deg": (-90.0, 90.0, "°"),
    "elevation_m": (-450.0, 9000.0, "m"),
    "wind_height_m": (0.5, 100.0, "m"),
    "angstrom_a": (0.0, 1.0, "-"),
    "angstrom_b": (0.0, 1.0, "-"),
    "krs": (0.10, 0.25, "°C-0.5"),
}


@dataclass(frozen=True)
class Site:
    """Where a climate record was measured and the coefficients that go with the station.

    Parameters
    ----------
    latitude_deg : float
        Latitude, negative south, -90...90 [°].
    elevation_m : float
        Station elevation above sea level, -450...9000 [m].
    wind_height_m : float, optional
        Height of the wind measurement above the ground, 0.5...100 [m].
    angstrom_a, angstrom_b : float, optional
        Angström coefficients as and bs (FAO-56 eq. 35), each 0...1 with as + bs <= 1 [-].
    krs : float, optional
        Hargreaves radiation coefficient (FAO-56 eq. 50), 0.10...0.25 [°C-0.5].

    Raises
    ------
    ClimateFileError
        When a value is not a number or lies outside its range.
    """

    latitude_deg: float
    elevation_m: float
    wind_height_m: float = 2.0
    angstrom_a: float = 0.25
    angstrom_b: float = 0.50
    krs: float = KRS_INLAND

    def __post_init__(self) -> None:
        problems = []
        for name, (low, high, unit) in _SITE_LIMITS.items():
            value = getattr(self, name)
            try:
                number = float(value)
            except (TypeError, ValueError):
                problems.append(f"{name} = {value!r} is not a number")
                continue
            object.__setattr__(self, name, number)
            if not low <= number <= high:
                problems.append(f"{name} = {value} is outside {low:g}...{high:g} {unit}")
        if not problems and self.angstrom_a + self.angstrom_b > 1.0:
            problems.append(f"angstrom_a + angstrom_b = {self.angstrom_a + self.angstrom_b:g} "
                            "is above 1 (clear-sky radiation cannot exceed Ra)")
        if problems:
            raise ClimateFileError("site: " + "; ".join(problems))


# ------------------------------------------------------------------------------------ Climate


@dataclass(frozen=True, eq=False)
class Climate:
    """A complete, checked daily climate record and the site it belongs to.

    Attributes
    ----------
    daily : pandas.DataFrame
        One row per day on a DatetimeIndex named ``date``: the standard columns
        (:data:`STANDARD_COLUMNS`, complete) then every other column of the source, as read.
    site : Site
        The station; ``daily.wind_ms`` is at ``site.wind_height_m``.
    fills : pandas.DataFrame
        One row per filled or assumed value: ``date``, ``column``, ``method``, ``value``.
    notes : tuple of str
        Plain-language record of the forms used and the assumptions made.
    source : str
        The file path, or a description of where the record came from.
    """

    daily: pd.DataFrame
    site: Site
    fills: pd.DataFrame = field(default_factory=lambda: _fills_frame([]))
    notes: tuple[str, ...] = ()
    source: str = "<frame>"

    @property
    def n_days(self) -> int:
        """Length of the record [d]."""
        return len(self.daily)

    @property
    def years(self) -> float:
        """Length of the record [years of 365.25 d]."""
        return self.n_days / 365.25

    @property
    def period(self) -> tuple[pd.Timestamp, pd.Timestamp]:
        """First and last day of the record."""
        return self.daily.index[0], self.daily.index[-1]

    @property
    def mean_annual_rain_mm(self) -> float:
        """Mean annual rain: total rain divided by :attr:`years` [mm yr-1]."""
        return float(self.daily["rain_mm"].sum()) / self.years

    def adjusted(self, *, rain_factor: float = 1.0, temperature_offset_c: float = 0.0) -> Climate:
        """Return the climate of a zone that differs from the station in rain and temperature.

        Parameters
        ----------
        rain_factor : float, optional
            Multiplier of daily rain, >= 0 [-].
        temperature_offset_c : float, optional
            Shift added to tmax_c and tmin_c, -20...20 [°C].

        Returns
        -------
        Climate
            A new record: rain scaled; tmax_c and tmin_c shifted; ea_kpa moved so that the dew
            point shifts by the same offset (relative humidity stays about the same); rs_mj,
            wind_ms, the file's own columns and ``fills`` unchanged; one note added.

        Notes
        -----
        ea' = e°(Tdew + offset), with Tdew the dew point of ea (inverse of FAO-56 eq. 11 and 14).
        Shifting the dew point with the air temperature is a screening assumption (common
        practice, no source): it keeps the air about as humid relative to saturation.
        """
        problems = []
        if not (math.isfinite(rain_factor) and rain_factor >= 0.0):
            problems.append(f"rain_factor = {rain_factor!r}: expected a number >= 0")
        if not (math.isfinite(temperature_offset_c) and abs(temperature_offset_c) <= 20.0):
            problems.append(f"temperature_offset_c = {temperature_offset_c!r}: "
                            "expected a number in -20...20 °C")
        if problems:
            raise ClimateFileError(f"{self.source}: climate adjustment: " + "; ".join(problems))
        if rain_factor == 1.0 and temperature_offset_c == 0.0:
            return self
        daily = self.daily.copy()
        daily["rain_mm"] = daily["rain_mm"] * rain_factor
        daily["tmax_c"] = daily["tmax_c"] + temperature_offset_c
        daily["tmin_c"] = daily["tmin_c"] + temperature_offset_c
        with np.errstate(divide="ignore", invalid="ignore"):
            tdew_c = meteo.dewpoint_from_vapour_pressure(daily["ea_kpa"])
            daily["ea_kpa"] = meteo.saturation_vapour_pressure(tdew_c + temperature_offset_c)
        note = (f"adjusted: rain x {rain_factor:g}; tmax_c and tmin_c {temperature_offset_c:+g} °C;"
                f" ea_kpa moved with the dew point shifted {temperature_offset_c:+g} °C; rs_mj,"
                " wind_ms and the file's own columns unchanged")
        return Climate(daily=daily, site=self.site, fills=self.fills,
                       notes=(*self.notes, note),
                       source=f"{self.source} (rain x {rain_factor:g}, "
                              f"{temperature_offset_c:+g} °C)")


# ------------------------------------------------------------------------------ entry points


def read_climate(path, *, latitude_deg: float, elevation_m: float, wind_height_m: float = 2.0,
                 max_gap_days: int = 3, fill_long_gaps: bool = False, coastal: bool = False,
                 krs: float | None = None, angstrom_a: float = 0.25,
                 angstrom_b: float = 0.50) -> Climate:
    """Read, check and complete a daily climate record from a CSV file.

    Parameters
    ----------
    path : str or os.PathLike
        CSV file with a header line and one row per day (see the module notes) [-].
    latitude_deg : float
        Station latitude, negative south [°].
    elevation_m : float
        Station elevation [m].
    wind_height_m : float, optional
        Height of the ``wind_ms`` measurement [m].
    max_gap_days : int, optional
        Longest run of missing days filled by interpolation [d].
    fill_long_gaps : bool, optional
        Fill longer runs from the record's day-of-year climatology instead of refusing [-].
    coastal : bool, optional
        Use the coastal Hargreaves coefficient 0.19 instead of 0.16 [-].
    krs : float, optional
        Hargreaves coefficient, overriding ``coastal`` [°C-0.5].
    angstrom_a, angstrom_b : float, optional
        Angström coefficients for ``sun_hours`` [-].

    Returns
    -------
    Climate
        The complete record; assumptions are also issued as :class:`ClimateAssumptionWarning`.

    Raises
    ------
    ClimateFileError
        Listing every problem found, each with its line or date, column, value and expectation.
    """
    source = str(path)
    site = _make_site(source, latitude_deg, elevation_m, wind_height_m, coastal, krs,
                      angstrom_a, angstrom_b)
    table = _read_table(Path(path), source)
    return _climate_from_table(table, site, max_gap_days, fill_long_gaps)


def climate_from_frame(frame: pd.DataFrame, *, latitude_deg: float, elevation_m: float,
                       wind_height_m: float = 2.0, max_gap_days: int = 3,
                       fill_long_gaps: bool = False, coastal: bool = False,
                       krs: float | None = None, angstrom_a: float = 0.25,
                       angstrom_b: float = 0.50, source: str = "<frame>") -> Climate:
    """Check and complete a daily climate record held in a DataFrame.

    Parameters
    ----------
    frame : pandas.DataFrame
        Columns as in a climate file; dates in a ``date`` column or on a DatetimeIndex [-].
    source : str, optional
        Name used in messages and kept in :attr:`Climate.source` [-].
    **other
        As in :func:`read_climate`.

    Returns
    -------
    Climate
        As :func:`read_climate`; messages name rows ("row 3", counted from 1) instead of lines.
    """
    site = _make_site(source, latitude_deg, elevation_m, wind_height_m, coastal, krs,
                      angstrom_a, angstrom_b)
    table = _table_from_frame(frame, source)
    return _climate_from_table(table, site, max_gap_days, fill_long_gaps)


def _make_site(source, latitude_deg, elevation_m, wind_height_m, coastal, krs, a, b) -> Site:
    """Build the Site, naming the source in any error."""
    chosen_krs = krs if krs is not None else (KRS_COASTAL if coastal else KRS_INLAND)
    try:
        return Site(latitude_deg, elevation_m, wind_height_m, a, b, chosen_krs)
    except ClimateFileError as exc:
        raise ClimateFileError(f"{source}: {exc}") from None


# -------------------------------------------------------------------------------- raw tables


@dataclass
class _Table:
    """Cells of a climate table as text, with the label of each row ("line 5" or "row 3")."""

    source: str
    columns: list[str]
    cells: dict[str, list[str]]
    labels: list[str]
    problems: list[str] = field(default_factory=list)  # structural, found while reading
    broken_rows: set[int] = field(default_factory=set)


def _canonical(name: str) -> str:
    """Canonical column name: stripped, and lower case when it is a name we know."""
    stripped = name.strip()
    known = (*REQUIRED_COLUMNS, *INPUT_COLUMNS, *COMPUTED_COLUMNS)
    return stripped.lower() if stripped.lower() in known else stripped


def _read_table(path: Path, source: str) -> _Table:
    """Read a CSV file into a :class:`_Table`; raise at once if there is nothing to check."""
    if not path.exists():
        raise ClimateFileError(f"{source}: file not found; expected a CSV file of daily climate")
    if path.is_dir():
        raise ClimateFileError(f"{source}: is a folder; expected a CSV file of daily climate")
    try:
        text = path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError as exc:
        raise ClimateFileError(f"{source}: is not UTF-8 text (bad byte at offset {exc.start});"
                               " expected a CSV file of daily climate") from None
    except OSError as exc:
        raise ClimateFileError(f"{source}: cannot be read ({exc.strerror})") from None
    numbered = [(n, line) for n, line in enumerate(text.splitlines(), start=1)
                if line.strip() and not line.lstrip().startswith("#")]
    if not numbered:
        raise ClimateFileError(f"{source}: the file is empty; expected a header line "
                               "'date,rain_mm,tmax_c,tmin_c,...' and one row per day")
    rows = list(csv.reader(line for _, line in numbered))
    header_no, header_line = numbered[0]
    header = [_canonical(name) for name in rows[0]]
    if len(header) == 1:
        for sep in (";", "\t", "|"):
            if sep in header_line:
                raise ClimateFileError(
                    f"{source}: line {header_no}: the header is separated by {sep!r}; "
                    "expected comma-separated columns")
    body = rows[1:]
    labels = [f"line {n}" for n, _ in numbered[1:]]
    table = _Table(source, [], {}, labels)
    keep = []
    for position, name in enumerate(header):
        cells = [row[position] if position < len(row) else "" for row in body]
        if not name:
            if any(cell.strip() for cell in cells):
                table.problems.append(f"line {header_no}: column {position + 1} has no name; "
                                      "expected a name in the header")
            continue
        keep.append((name, cells))
    for index, row in enumerate(body):
        if len(row) != len(header):
            table.problems.append(f"{labels[index]}: {len(row)} fields; expected {len(header)} "
                                  "as in the header")
            table.broken_rows.add(index)
    _add_columns(table, keep, f"line {header_no}")
    return table


def _table_from_frame(frame: pd.DataFrame, source: str) -> _Table:
    """Turn a DataFrame into a :class:`_Table` of text cells so the same checks apply."""
    if not isinstance(frame, pd.DataFrame):
        raise ClimateFileError(f"{source}: expected a pandas DataFrame, got "
                               f"{type(frame).__name__}")
    data = frame
    has_date_column = any(_canonical(str(c)) == "date" for c in frame.columns)
    if not has_date_column and (isinstance(frame.index, pd.DatetimeIndex)
                                or frame.index.name == "date"):
        data = frame.reset_index(names="date")
    keep = [(_canonical(str(name)), [_cell_text(v) for v in data[name].tolist()])
            for name in data.columns]
    table = _Table(source, [], {}, [f"row {i}" for i in range(1, len(data) + 1)])
    _add_columns(table, keep, "columns")
    return table


def _cell_text(value) -> str:
    """Text of one DataFrame cell: missing -> '', dates -> ISO, numbers -> repr."""
    if value is None or (not isinstance(value, str) and bool(pd.isna(value))):
        return ""
    if isinstance(value, (pd.Timestamp, _date)):
        return value.strftime("%Y-%m-%d")
    return str(value)


def _add_columns(table: _Table, named_cells, where: str) -> None:
    """Store columns, reporting duplicate names."""
    for name, cells in named_cells:
        if name in table.cells:
            table.problems.append(f"{where}: column {name!r} appears twice; expected each "
                                  "column once")
            continue
        table.columns.append(name)
        table.cells[name] = cells


# ------------------------------------------------------------------------------- checking


class _Problems:
    """Collects problems; row problems are sorted by row, general ones come first."""

    def __init__(self, table: _Table, dates: list[_date | None]):
        self.table = table
        self.dates = dates
        self.items: list[tuple[int, int, str]] = [(-1, k, p) for k, p in enumerate(table.problems)]

    def where(self, row: int) -> str:
        """Row label with its date when the date is valid: 'line 5 (2020-01-03)'."""
        label = self.table.labels[row]
        day = self.dates[row] if self.dates else None
        return f"{label} ({day.isoformat()})" if day else label

    def row(self, row: int, text: str) -> None:
        """Add a problem on one row."""
        self.items.append((row, len(self.items), f"{self.where(row)}: {text}"))

    def general(self, text: str) -> None:
        """Add a problem that is not tied to one row."""
        self.items.append((-1, len(self.items), text))

    def span(self, start: int, stop: int) -> str:
        """Describe rows start..stop-1 as dates and lines."""
        if stop - start == 1:
            return f"on {self.where(start)}"
        return f"from {self.where(start)} to {self.where(stop - 1)} ({stop - start} days)"

    def raise_if_any(self) -> None:
        """Raise one ClimateFileError listing the problems (capped)."""
        if not self.items:
            return
        texts = [text for _, _, text in sorted(self.items)]
        shown = texts[:MAX_PROBLEMS_LISTED]
        count = len(texts)
        lines = [f"{self.table.source}: {count} problem{'s' if count > 1 else ''} "
                 "in the climate record:"]
        lines += [f"  - {text}" for text in shown]
        if count > len(shown):
            lines.append(f"  ... and {count - len(shown)} more")
        raise ClimateFileError("\n".join(lines))


def _parse_dates(table: _Table, problems: _Problems) -> list[_date | None]:
    """Parse the date column, reporting every cell that is not an ISO calendar date."""
    dates: list[_date | None] = []
    for index, text in enumerate(table.cells["date"]):
        stripped = text.strip()
        day = None
        if not _ISO_DATE.match(stripped):
            problems.row(index, f"date = {stripped!r} is not a date; expected YYYY-MM-DD")
        else:
            try:
                day = _date.fromisoformat(stripped)
            except ValueError:
                problems.row(index, f"date = {stripped!r} is not a calendar date; "
                                    "expected YYYY-MM-DD")
        dates.append(day)
    return dates


def _check_sequence(dates: list[_date | None], problems: _Problems) -> None:
    """Report repeated dates, dates out of order and skipped days."""
    first_row: dict[_date, int] = {}
    previous: tuple[int, _date] | None = None
    for index, day in enumerate(dates):
        if day is None:
            continue
        if day in first_row:
            earlier = problems.table.labels[first_row[day]]
            problems.row(index, f"date {day.isoformat()} repeats {earlier}; expected one row "
                                "per day")
        else:
            first_row[day] = index
        if previous is not None and day < previous[1]:
            problems.row(index, f"date {day.isoformat()} is earlier than {previous[1].isoformat()} "
                                f"on {problems.table.labels[previous[0]]}; expected dates in "
                                "increasing order")
        previous = (index, day)
    ordered = sorted(first_row)
    for before, after in zip(ordered, ordered[1:], strict=False):
        skipped = (after - before).days - 1
        if skipped > 0:
            first_missing = pd.Timestamp(before) + pd.Timedelta(days=1)
            last_missing = pd.Timestamp(after) - pd.Timedelta(days=1)
            span = (first_missing.strftime("%Y-%m-%d") if skipped == 1 else
                    f"{first_missing:%Y-%m-%d} to {last_missing:%Y-%m-%d} ({skipped} days)")
            problems.row(first_row[before],
                         f"date: missing days {span} after this row; expected one row per day"
                         " (leave cells empty for missing values)")


def _parse_numbers(table: _Table, problems: _Problems) -> tuple[dict, dict]:
    """Parse the measured columns: values (NaN when missing or bad) and missing-cell masks."""
    values, missing = {}, {}
    for column in INPUT_COLUMNS:
        if column not in table.cells:
            continue
        text = pd.Series(table.cells[column], dtype=object).str.strip()
        is_missing = text.str.lower().isin(MISSING_MARKERS).to_numpy()
        numbers = pd.to_numeric(text.where(~is_missing), errors="coerce").to_numpy(dtype=float)
        unit = _LIMITS[column][2]
        for index in np.flatnonzero(~is_missing & ~np.isfinite(numbers)):
            if index in table.broken_rows:
                continue
            problems.row(index, f"{column} = {text.iloc[index]!r} is not a number; expected a "
                                f"number in {unit} (empty cell if missing)")
        numbers[~np.isfinite(numbers)] = np.nan
        broken = np.zeros(len(text), dtype=bool)
        broken[list(table.broken_rows)] = True
        numbers[broken] = np.nan
        values[column] = numbers
        missing[column] = is_missing & ~broken
    return values, missing


def _check_ranges(table: _Table, values: dict, doy: np.ndarray, site: Site,
                  problems: _Problems) -> None:
    """Report implausible values, each with its column, value and the accepted range."""
    def text(column, index):
        return table.cells[column][index].strip()

    for column, numbers in values.items():
        low, high, unit = _LIMITS[column]
        for index in np.flatnonzero((numbers < low) | (numbers > high)):
            if low == 0.0 and numbers[index] < 0.0:
                what = "is negative"
            else:
                what = "is below" if numbers[index] < low else "is above"
                what += " the plausible range"
            upper = "" if math.isinf(high) else f"...{high:g}"
            problems.row(index, f"{column} = {text(column, index)} {what}; expected "
                                f"{low:g}{upper} {unit}")
    pairs = (("tmin_c", "tmax_c", "tmin_c <= tmax_c"), ("tdew_c", "tmax_c", "tdew_c <= tmax_c"),
             ("rh_min_pct", "rh_max_pct", "rh_min_pct <= rh_max_pct"))
    for lower, upper, rule in pairs:
        if lower in values and upper in values:
            with np.errstate(invalid="ignore"):
                bad = values[lower] > values[upper]
            for index in np.flatnonzero(bad):
                problems.row(index, f"{lower} = {text(lower, index)} is above {upper} = "
                                    f"{text(upper, index)}; expected {rule}")
    known_day = np.isfinite(doy)
    safe_doy = np.where(known_day, doy, 1).astype(int)
    if "sun_hours" in values:
        n_hours = np.asarray(radiation.daylight_hours(site.latitude_deg, safe_doy), dtype=float)
        limit = n_hours + SUN_HOURS_TOLERANCE_H
        within_24h = values["sun_hours"] <= _LIMITS["sun_hours"][1]  # else already reported
        for index in np.flatnonzero(known_day & within_24h & (values["sun_hours"] > limit)):
            problems.row(index, f"sun_hours = {text('sun_hours', index)} is longer than the day "
                                f"({n_hours[index]:.1f} h at latitude {site.latitude_deg:g}°, "
                                "FAO-56 eq. 34); expected at most the day length")
    if "solar_mj" in values:
        rso = np.asarray(radiation.clear_sky_radiation(site.latitude_deg, safe_doy,
                                                        site.elevation_m), dtype=float)
        limit = np.maximum(RS_CLEAR_SKY_FACTOR * rso, RS_FLOOR_MJ)
        for index in np.flatnonzero(known_day & (values["solar_mj"] > limit)):
            problems.row(index, f"solar_mj = {text('solar_mj', index)} is far above clear-sky "
                                f"radiation Rso = {rso[index]:.1f} MJ m-2 d-1 (FAO-56 eq. 37); "
                                f"expected at most {limit[index]:.1f} (1.1 Rso); check units "
                                "(MJ m-2 d-1) and latitude")


def _runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """Half-open (start, stop) index runs where ``mask`` is True."""
    padded = np.concatenate([[0], np.asarray(mask, dtype=int), [0]])
    steps = np.diff(padded)
    starts, stops = np.flatnonzero(steps == 1).tolist(), np.flatnonzero(steps == -1).tolist()
    return list(zip(starts, stops, strict=True))


def _presence(values: dict, missing: dict, forms) -> np.ndarray | None:
    """Days on which at least one form has all its cells (None when the file has no form)."""
    present = None
    for _, columns in forms:
        if all(c in values for c in columns):
            has = np.logical_and.reduce([~missing[c] for c in columns])
            present = has if present is None else present | has
    return present


def _gap_masks(values: dict, missing: dict) -> dict[str, tuple[str, np.ndarray]]:
    """Per standard column to be gap-filled: (columns to name in messages, missing-day mask)."""
    masks = {"tmax_c": ("tmax_c", missing["tmax_c"]), "tmin_c": ("tmin_c", missing["tmin_c"])}
    for target, forms in (("ea_kpa", _HUMIDITY_FORMS), ("rs_mj", _RADIATION_FORMS)):
        present = _presence(values, missing, forms)
        if present is not None:
            names = sorted({c for _, cols in forms for c in cols if c in values})
            masks[target] = (" / ".join(names), ~present)
    if "wind_ms" in values:
        masks["wind_ms"] = ("wind_ms", missing["wind_ms"])
    return masks


def _check_gaps(values: dict, missing: dict, max_gap_days: int, fill_long_gaps: bool,
                problems: _Problems) -> None:
    """Report missing rain (always) and runs of missing days too long to interpolate."""
    for start, stop in _runs(missing["rain_mm"]):
        problems.row(start, f"rain_mm is empty {problems.span(start, stop)}; rain is never "
                            "assumed: expected a value (fill gaps from a neighbouring gauge)")
    if fill_long_gaps:
        return
    for names, mask in _gap_masks(values, missing).values():
        for start, stop in _runs(mask):
            if stop - start > max_gap_days:
                problems.row(start, f"{names} empty {problems.span(start, stop)}; expected gaps "
                                    f"of at most {max_gap_days} days (max_gap_days / --max-gap),"
                                    " or fill_long_gaps / --fill-long-gaps to use the day-of-year"
                                    " climatology")


# ------------------------------------------------------------------------------ completing


def _fills_frame(rows: list[dict]) -> pd.DataFrame:
    """Build the fills table (possibly empty) with its fixed columns."""
    frame = pd.DataFrame(rows, columns=["date", "column", "method", "value"])
    frame["date"] = pd.to_datetime(frame["date"])
    frame["value"] = frame["value"].astype(float)
    return frame


def _doy_climatology(series: pd.Series) -> pd.Series:
    """Smoothed day-of-year mean of a daily series (index 1..365; Feb 29 and Dec 31 share 365)."""
    doy = np.minimum(series.index.dayofyear, 365)
    means = series.groupby(doy).mean().reindex(range(1, 366))
    width = 2 * CLIMATOLOGY_HALF_WINDOW_D + 1
    tiled = pd.concat([means] * 3, ignore_index=True)
    smooth = tiled.rolling(width, center=True, min_periods=1).mean().iloc[365:730]
    smooth.index = range(1, 366)
    return smooth


def _fill_gaps(series: pd.Series, methods: pd.Series, max_gap_days: int,
               column: str, unfillable: list[str]) -> pd.Series:
    """Fill NaN runs: short ones by interpolation (nearest at the edges), long by climatology.

    ``methods`` (same index, object dtype) receives the method of every filled day. Days the
    climatology cannot reach are reported in ``unfillable``.
    """
    gaps = _runs(series.isna().to_numpy())
    if not gaps:
        return series
    inside = series.interpolate(method="linear", limit_area="inside")
    nearest = series.ffill().bfill()
    climatology = None
    filled = series.copy()
    for start, stop in gaps:
        days = series.index[start:stop]
        at_edge = start == 0 or stop == len(series)
        if stop - start <= max_gap_days:
            source, method = (nearest, _NEAREST) if at_edge else (inside, _INTERPOLATED)
            filled.loc[days] = source.loc[days]
        else:
            if climatology is None:
                climatology = _doy_climatology(series)
            doy = np.minimum(days.dayofyear, 365)
            filled.loc[days] = climatology.loc[doy].to_numpy()
            method = _CLIMATOLOGY
        methods.loc[days] = method
    still = filled.isna()
    if still.any():
        first, last = series.index[still][[0, -1]]
        unfillable.append(f"{column}: no observed values within {CLIMATOLOGY_HALF_WINDOW_D} "
                          f"days of the day of year for {int(still.sum())} day(s) from "
                          f"{first:%Y-%m-%d} to {last:%Y-%m-%d}; expected enough record to "
                          "build a day-of-year climatology")
    return filled


def _combine_forms(forms, compute, values: dict, index: pd.DatetimeIndex,
                   methods: pd.Series) -> tuple[pd.Series, str | None]:
    """Best available form per day; days on a lesser form are marked as per-day fallbacks."""
    result = pd.Series(np.nan, index=index)
    primary = None
    for label, columns in forms:
        if not all(c in values for c in columns):
            continue
        with np.errstate(invalid="ignore", divide="ignore"):
            estimate = np.asarray(compute(label), dtype=float)
        take = result.isna().to_numpy() & np.isfinite(estimate)
        result[take] = estimate[take]
        if primary is None:
            primary = label
        else:
            methods[take] = _FALLBACK + label
    return result, primary


def _climate_from_table(table: _Table, site: Site, max_gap_days: int,
                        fill_long_gaps: bool) -> Climate:
    """Check every cell of the table, then derive and fill the standard columns."""
    if isinstance(max_gap_days, bool) or not isinstance(max_gap_days, (int, np.integer)) \
            or max_gap_days < 0:
        raise ClimateFileError(f"{table.source}: max_gap_days = {max_gap_days!r}; expected a "
                               "whole number of days >= 0")
    problems = _Problems(table, [])
    for column in REQUIRED_COLUMNS:
        if column not in table.cells:
            problems.general(f"header: required column {column!r} is missing; expected "
                             f"columns {', '.join(REQUIRED_COLUMNS)} (found: "
                             f"{', '.join(table.columns) or 'none'})")
    for column, instead in COMPUTED_COLUMNS.items():
        if column in table.cells:
            problems.general(f"header: column {column!r} is computed by coveryield; expected "
                             f"the measured values under {instead!r}")
    if not table.labels:
        problems.general(f"no data rows; expected at least {MIN_DAYS} day(s) after the header")
    dates = _parse_dates(table, problems) if "date" in table.cells else []
    problems.dates = dates
    if dates:
        _check_sequence(dates, problems)
    values, missing = _parse_numbers(table, problems)
    doy = np.array([d.timetuple().tm_yday if d else np.nan for d in dates], dtype=float) \
        if dates else np.full(len(table.labels), np.nan)
    _check_ranges(table, values, doy, site, problems)
    if all(c in values for c in ("rain_mm", "tmax_c", "tmin_c")):
        _check_gaps(values, missing, max_gap_days, fill_long_gaps, problems)
    problems.raise_if_any()
    return _complete(table, site, dates, values, missing, max_gap_days)


def _complete(table: _Table, site: Site, dates, values: dict, missing: dict,
              max_gap_days: int) -> Climate:
    """Derive ea_kpa, wind_ms and rs_mj, fill the gaps and assemble the Climate."""
    index = pd.DatetimeIndex(pd.to_datetime([d.isoformat() for d in dates]), name="date")
    doy = index.dayofyear.to_numpy()
    series = {c: pd.Series(v, index=index) for c, v in values.items()}
    methods = {c: pd.Series(None, index=index, dtype=object) for c in STANDARD_COLUMNS}
    notes, assumptions, unfillable = [], [], []
    daily = pd.DataFrame(index=index)
    daily["rain_mm"] = series["rain_mm"]

    for column in ("tmax_c", "tmin_c"):
        daily[column] = _fill_gaps(series[column], methods[column], max_gap_days, column,
                                   unfillable)
    _uncross_temperatures(daily, methods)
    tmax, tmin = daily["tmax_c"].to_numpy(), daily["tmin_c"].to_numpy()

    def humidity(label):
        if "tdew_c" in label:
            return meteo.actual_vapour_pressure_from_dewpoint(values["tdew_c"])
        if "vp_kpa" in label:
            return values["vp_kpa"]
        if "rh_min_pct" in label:
            return meteo.actual_vapour_pressure_from_rh_max_min(
                tmax, tmin, values["rh_max_pct"], values["rh_min_pct"])
        if "rh_max_pct" in label:
            return meteo.actual_vapour_pressure_from_rh_max(tmin, values["rh_max_pct"])
        return meteo.actual_vapour_pressure_from_rh_mean(tmax, tmin, values["rh_mean_pct"])

    ea, primary = _combine_forms(_HUMIDITY_FORMS, humidity, values, index, methods["ea_kpa"])
    if primary is None:
        ea = pd.Series(np.asarray(meteo.actual_vapour_pressure_from_tmin(tmin)), index=index)
        methods["ea_kpa"][:] = _ASSUMED_EA
        assumptions.append("no humidity column (tdew_c, vp_kpa, rh_max_pct/rh_min_pct, "
                           "rh_mean_pct): ea_kpa from tmin_c as dew point, FAO-56 eq. 48")
        if "rh_min_pct" in values:
            notes.append("rh_min_pct without rh_max_pct is not used")
    else:
        notes.append(f"humidity: ea_kpa {primary}")
    daily["ea_kpa"] = _fill_gaps(ea, methods["ea_kpa"], max_gap_days, "ea_kpa", unfillable)

    if "wind_ms" in values:
        daily["wind_ms"] = _fill_gaps(series["wind_ms"], methods["wind_ms"], max_gap_days,
                                      "wind_ms", unfillable)
        notes.append(f"wind: wind_ms measured at {site.wind_height_m:g} m")
    else:
        daily["wind_ms"] = DEFAULT_WIND_MS
        methods["wind_ms"][:] = _ASSUMED_WIND
        extra = (f" (the given wind height {site.wind_height_m:g} m does not apply)"
                 if site.wind_height_m != 2.0 else "")
        assumptions.append(f"no wind_ms column: wind taken as {DEFAULT_WIND_MS:g} m/s "
                           f"measured at 2 m (FAO-56 practice){extra}")
        site = Site(site.latitude_deg, site.elevation_m, 2.0, site.angstrom_a,
                    site.angstrom_b, site.krs)

    def solar(label):
        if "solar_mj" in label:
            return values["solar_mj"]
        return radiation.solar_radiation_from_sunshine(
            values["sun_hours"], site.latitude_deg, doy, site.angstrom_a, site.angstrom_b)

    rs, primary = _combine_forms(_RADIATION_FORMS, solar, values, index, methods["rs_mj"])
    if primary is None:
        rs = pd.Series(np.asarray(radiation.solar_radiation_from_temperature(
            tmax, tmin, site.latitude_deg, doy, krs=site.krs)), index=index)
        methods["rs_mj"][:] = f"Hargreaves radiation (FAO-56 eq. 50), krs = {site.krs:g}"
        assumptions.append(f"no radiation column (solar_mj, sun_hours): rs_mj from the "
                           f"temperature range, Hargreaves FAO-56 eq. 50 with krs = "
                           f"{site.krs:g}")
    else:
        extra = (f", as = {site.angstrom_a:g}, bs = {site.angstrom_b:g}"
                 if "sun_hours" in primary else "")
        notes.append(f"radiation: rs_mj {primary}{extra}")
    daily["rs_mj"] = _fill_gaps(rs, methods["rs_mj"], max_gap_days, "rs_mj", unfillable)

    if unfillable:
        problems = _Problems(table, dates)
        for text in unfillable:
            problems.general(text)
        problems.raise_if_any()

    for column in table.columns:
        if column != "date" and column not in STANDARD_COLUMNS:
            daily[column] = series[column] if column in series else _extra_column(
                table.cells[column], index)

    fills = _collect_fills(daily, methods)
    fill_notes = _fill_notes(fills)
    notes.extend(fill_notes)
    long_gaps = [text for text in fill_notes if text.endswith(_CLIMATOLOGY)]
    for text in assumptions + long_gaps:
        warnings.warn(text, ClimateAssumptionWarning, stacklevel=4)
    return Climate(daily=daily, site=site, fills=fills, notes=tuple(assumptions + notes),
                   source=table.source)


def _uncross_temperatures(daily: pd.DataFrame, methods: dict) -> None:
    """Where a filled temperature crosses the other one, set it equal to the other one."""
    crossed = daily["tmin_c"] > daily["tmax_c"]
    if not crossed.any():
        return
    tmax_filled = methods["tmax_c"].notna() & crossed
    daily.loc[tmax_filled, "tmax_c"] = daily.loc[tmax_filled, "tmin_c"]
    tmin_filled = methods["tmin_c"].notna() & crossed & ~tmax_filled
    daily.loc[tmin_filled, "tmin_c"] = daily.loc[tmin_filled, "tmax_c"]


def _extra_column(cells: list[str], index: pd.DatetimeIndex) -> pd.Series:
    """Convert an unused column: numbers when every cell is one, else stripped text."""
    text = pd.Series(cells, index=index, dtype=object).str.strip()
    is_missing = text.str.lower().isin(MISSING_MARKERS)
    numbers = pd.to_numeric(text.where(~is_missing), errors="coerce")
    if (numbers.notna() | is_missing).all():
        return numbers.astype(float)
    return text


def _collect_fills(daily: pd.DataFrame, methods: dict) -> pd.DataFrame:
    """One row per filled or assumed value, in column then date order."""
    rows = []
    for column in STANDARD_COLUMNS:
        marked = methods[column].dropna()
        values = daily.loc[marked.index, column].to_numpy(dtype=float)
        rows += [{"date": day, "column": column, "method": method, "value": value}
                 for day, method, value in zip(marked.index, marked.to_numpy(), values,
                                               strict=True)]
    return _fills_frame(rows)


def _fill_notes(fills: pd.DataFrame) -> list[str]:
    """One note per column and gap-filling method."""
    gap_methods = (_INTERPOLATED, _NEAREST, _CLIMATOLOGY)
    notes = []
    counted = fills[fills["method"].isin(gap_methods) | fills["method"].str.startswith(_FALLBACK)]
    for (column, method), group in counted.groupby(["column", "method"], sort=False):
        notes.append(f"{column}: {len(group)} day(s) filled by {method}")
    return notes
