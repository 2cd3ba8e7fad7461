"""Daily water balance of many tiles at once (a tile is one cover in one zone).

The engine knows nothing of files, covers or climates: it takes time-major arrays of forcing,
shaped (n_days, n_tiles), and one array per tile parameter, and returns annual sums per tile and
the daily yield. The daily physics lives in :mod:`coveryield.engine.kernels`; this module
validates, prepares the compiled kernel's arguments and wraps its results.

Each day, in this order (all depths in mm over the tile):

1. Canopy interception: a daily Gash-type store (Gash 1979; Rutter et al. 1971 for the carried
   store) in its sparse-canopy form (Gash, Lloyd & Lachaud 1995): the canopy covers
   c = 1 − exp(−k·LAI) of the ground and holds S = s·LAI (Dickinson 1984),
   :func:`coveryield.engine.kernels.sparse_canopy_day`.
2. Quickflow from throughfall: SCS curve number (USDA-SCS 1986, TR-55 eqs. 2-1 to 2-4), with the
   retention moved between its AMC I, II and III values by the root-zone wetness.
3. Root zone (0..TAW): transpiration Ks·E_dry·(1 − E_int/(c·E_wet)) with FAO-56 eq. 84; soil
   evaporation from the surface layer on the exposed share 1 − c, by FAO-56's two-stage
   Kr = (TEW − De)/(TEW − REW) (eqs. 71-79), :func:`~coveryield.engine.kernels.
   surface_layer_evaporation`.
4. Drainage of the water above TAW, after evaporation (FAO-56 eq. 88).
5. Open-water tiles: evaporation = E_wet, quickflow = rain − E_wet (may be negative), no stores.

yield = quickflow + drainage.
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

from coveryield.engine import kernels
from coveryield.engine.threads import block_runner

#: Mean rainfall intensity while it rains [mm h⁻¹]: typical of frontal rain in temperate
#: maritime climates; common practice, no source.
DEFAULT_RAIN_RATE_MM_PER_H = 1.5

#: Surface layer of a tile whose soil is not given: the middle of FAO-56 Table 19's ranges for
#: loam, REW 8-10 mm and TEW 16-22 mm for Ze = 0.10 m (from memory) [mm].
DEFAULT_READILY_EVAPORABLE_MM = 9.0
DEFAULT_TOTAL_EVAPORABLE_MM = 19.0
#: Extinction coefficient of Beer's law for leaves at random angles (Campbell & Norman 1998,
#: from memory) [-].
DEFAULT_EXTINCTION = 0.5

#: Root-zone store at the start of a run as a fraction of TAW [-]. Half-full is our choice: it
#: is the value whose error is smallest in the worst case (a record that starts in a wet winter
#: or in a dry summer); common practice, no source. Discard a spin-up year when it matters.
DEFAULT_INITIAL_SOIL_FRACTION = 0.5

_FORCING_NAMES = ("rain_mm", "wet_mm", "dry_mm", "soil_mm", "lai")


def _as_tile_array(name, value, n_tiles, dtype=np.float64):
    """``value`` as a read-only 1-D array of length ``n_tiles`` (a scalar is broadcast)."""
    array = np.asarray(value)
    if array.ndim == 0 and n_tiles is not None:
        array = np.full(n_tiles, array.item())
    if array.ndim != 1 or (n_tiles is not None and array.shape[0] != n_tiles):
        raise ValueError(
            f"TileParameters.{name}: shape {array.shape}, expected a 1-D array of "
            f"{'n_tiles' if n_tiles is None else n_tiles} values (one per tile)"
        )
    if dtype is bool:
        if array.dtype != bool and not np.isin(array, (0, 1)).all():
            raise ValueError(f"TileParameters.{name}: expected booleans, got {array!r}")
        array = array.astype(bool)
    else:
        try:
            array = array.astype(np.float64)
        except (TypeError, ValueError) as exc:
            raise ValueError(f"TileParameters.{name}: expected numbers, got {array!r}") from exc
    array = np.array(array, copy=True)
    array.setflags(write=False)
    return array


def _check_range(name, values, ok, expected):
    """Raise ValueError naming the first tile where ``ok`` is False."""
    bad = np.flatnonzero(~ok)
    if bad.size:
        tile = int(bad[0])
        raise ValueError(
            f"TileParameters.{name}[tile {tile}] = {values[tile].item()!r}: expected {expected}"
            + (f" ({bad.size} tiles fail)" if bad.size > 1 else "")
        )


@dataclass(frozen=True)
class TileParameters:
    """Parameters of each tile, one value per tile (1-D arrays of length n_tiles).

    Parameters
    ----------
    canopy_capacity_mm : array_like
        Canopy storage capacity S at the leaf area ``leaf_area_index``, ≥ 0 [mm]. When the
        day's leaf area differs (a daily ``lai`` given to :func:`simulate_tiles`), the capacity
        scales with it: S·LAI_day / leaf_area_index.
    root_zone_capacity_mm : array_like
        Total available water TAW = rooting depth × available water capacity, > 0 for land
        tiles (ignored for water tiles) [mm].
    depletion_fraction : array_like
        FAO-56 depletion fraction p (share of TAW used before stress), 0 ≤ p < 1 [-].
    curve_number : array_like
        SCS curve number for average antecedent conditions (AMC II), 0 < CN ≤ 100 [-].
    is_water : array_like of bool
        True for an open-water tile [-].
    rain_rate_mm_per_h : array_like or float, optional
        Mean rainfall intensity while raining, > 0 [mm h⁻¹]. Default
        :data:`DEFAULT_RAIN_RATE_MM_PER_H`.
    initial_soil_fraction : array_like or float, optional
        Root-zone store at the start as a fraction of TAW, 0..1 [-]. Default
        :data:`DEFAULT_INITIAL_SOIL_FRACTION`. The surface layer starts equally wet.
    leaf_area_index : array_like or float or None, optional
        Leaf area index at which ``canopy_capacity_mm`` holds, > 0 [m² m⁻²]. None (default):
        a closed canopy, cover fraction 1, no soil exposed and a fixed capacity.
    extinction_coefficient : array_like or float, optional
        k of Beer's law, cover fraction c = 1 − exp(−k·LAI), > 0 [-]. Default
        :data:`DEFAULT_EXTINCTION`.
    readily_evaporable_mm, total_evaporable_mm : array_like or float, optional
        REW and TEW of the surface layer (FAO-56 Table 19), 0 ≤ REW < TEW [mm]. Defaults
        :data:`DEFAULT_READILY_EVAPORABLE_MM` and :data:`DEFAULT_TOTAL_EVAPORABLE_MM`.

    Raises
    ------
    ValueError
        When a field has the wrong shape, a non-finite value or a value out of its range; the
        message names the field, the tile and the value.
    """

    canopy_capacity_mm: np.ndarray
    root_zone_capacity_mm: np.ndarray
    depletion_fraction: np.ndarray
    curve_number: np.ndarray
    is_water: np.ndarray
    rain_rate_mm_per_h: np.ndarray | float = DEFAULT_RAIN_RATE_MM_PER_H
    initial_soil_fraction: np.ndarray | float = DEFAULT_INITIAL_SOIL_FRACTION
    leaf_area_index: np.ndarray | float | None = None
    extinction_coefficient: np.ndarray | float = DEFAULT_EXTINCTION
    readily_evaporable_mm: np.ndarray | float = DEFAULT_READILY_EVAPORABLE_MM
    total_evaporable_mm: np.ndarray | float = DEFAULT_TOTAL_EVAPORABLE_MM

    def __post_init__(self):
        first = _as_tile_array("canopy_capacity_mm", self.canopy_capacity_mm, None)
        n_tiles = first.shape[0]
        if n_tiles == 0:
            raise ValueError("TileParameters: no tiles (expected at least one)")
        for field in fields(self):
            if getattr(self, field.name) is None:
                continue
            dtype = bool if field.name == "is_water" else np.float64
            value = _as_tile_array(field.name, getattr(self, field.name), n_tiles, dtype)
            object.__setattr__(self, field.name, value)
        for field in fields(self):
            values = getattr(self, field.name)
            if values is not None and values.dtype != bool:
                _check_range(field.name, values, np.isfinite(values), "a finite number")
        land = ~self.is_water
        _check_range(
            "canopy_capacity_mm", self.canopy_capacity_mm, self.canopy_capacity_mm >= 0, "≥ 0 mm"
        )
        _check_range(
            "root_zone_capacity_mm",
            self.root_zone_capacity_mm,
            ~land | (self.root_zone_capacity_mm > 0),
            "> 0 mm on a land tile",
        )
        _check_range(
            "depletion_fraction",
            self.depletion_fraction,
            (self.depletion_fraction >= 0) & (self.depletion_fraction < 1),
            "0 ≤ p < 1",
        )
        _check_range(
            "curve_number",
            self.curve_number,
            (self.curve_number > 0) & (self.curve_number <= 100),
            "0 < CN ≤ 100",
        )
        _check_range(
            "rain_rate_mm_per_h", self.rain_rate_mm_per_h, self.rain_rate_mm_per_h > 0, "> 0 mm/h"
        )
        _check_range(
            "initial_soil_fraction",
            self.initial_soil_fraction,
            (self.initial_soil_fraction >= 0) & (self.initial_soil_fraction <= 1),
            "a fraction of TAW in 0..1",
        )
        if self.leaf_area_index is not None:
            lai = self.leaf_area_index
            _check_range("leaf_area_index", lai, lai >= 0, "≥ 0 m2/m2")
            _check_range(
                "leaf_area_index",
                lai,
                ~land | (lai > 0) | (self.canopy_capacity_mm == 0),
                "> 0 m2/m2 where canopy_capacity_mm > 0 (the store scales with leaf area)",
            )
        _check_range(
            "extinction_coefficient",
            self.extinction_coefficient,
            self.extinction_coefficient > 0,
            "> 0",
        )
        _check_range(
            "readily_evaporable_mm",
            self.readily_evaporable_mm,
            self.readily_evaporable_mm >= 0,
            "≥ 0 mm",
        )
        _check_range(
            "total_evaporable_mm",
            self.total_evaporable_mm,
            self.total_evaporable_mm > self.readily_evaporable_mm,
            "> readily_evaporable_mm (TEW > REW)",
        )

    @property
    def n_tiles(self) -> int:
        """Number of tiles [-]."""
        return int(self.is_water.shape[0])

    def reference_lai(self) -> np.ndarray:
        """Leaf area index of each tile when no daily one is given [m² m⁻²] (1 if closed)."""
        if self.leaf_area_index is None:
            return np.ones(self.n_tiles)
        return np.array(self.leaf_area_index)


def dry_curve_number(curve_number):
    """Curve number for dry antecedent conditions (AMC I) from the AMC II value.

    Parameters
    ----------
    curve_number : array_like
        Curve number for average conditions (AMC II) [-].

    Returns
    -------
    ndarray
        AMC I curve number [-].

    Notes
    -----
    CN_I = 4.2·CN_II / (10 − 0.058·CN_II), a fit to the NEH-4 Table 10.1 conversions (from
    memory; the fit is attributed to Sobhani 1975 in Hawkins et al. 2009).

    References
    ----------
    USDA-SCS (1972, 1985). National Engineering Handbook, Section 4, Hydrology, Table 10.1.
    Hawkins, R. H., Ward, T. J., Woodward, D. E. & Van Mullem, J. A. (2009). Curve Number
    Hydrology: State of the Practice. ASCE, Reston.
    """
    cn = np.asarray(curve_number, dtype=np.float64)
    return 4.2 * cn / (10.0 - 0.058 * cn)  # AMC II → I


def wet_curve_number(curve_number):
    """Curve number for wet antecedent conditions (AMC III) from the AMC II value.

    Parameters
    ----------
    curve_number : array_like
        Curve number for average conditions (AMC II) [-].

    Returns
    -------
    ndarray
        AMC III curve number [-].

    Notes
    -----
    CN_III = 23·CN_II / (10 + 0.13·CN_II), a fit to the NEH-4 Table 10.1 conversions (from
    memory; see :func:`dry_curve_number`).

    References
    ----------
    USDA-SCS (1972, 1985). National Engineering Handbook, Section 4, Hydrology, Table 10.1.
    """
    cn = np.asarray(curve_number, dtype=np.float64)
    return 23.0 * cn / (10.0 + 0.13 * cn)  # AMC II → III


def retention_mm(curve_number):
    """SCS potential maximum retention from a curve number.

    Parameters
    ----------
    curve_number : array_like
        Curve number, 0 < CN ≤ 100 [-].

    Returns
    -------
    ndarray
        Retention S = 25400/CN − 254 [mm].

    References
    ----------
    USDA-SCS (1986). Urban hydrology for small watersheds, TR-55, eq. 2-4 (in mm).
    """
    cn = np.asarray(curve_number, dtype=np.float64)
    return 25400.0 / cn - 254.0  # TR-55 eq. 2-4


def _kernel_parameters(params: TileParameters) -> np.ndarray:
    """Derive the per-tile kernel parameters, in the kernel's blocked layout.

    An open-water tile gets TAW, 1 / ((1 − p)·TAW) and TEW 0 and the retention
    ``kernels.WATER_RETENTION_MM``, so that the kernel's land terms are exactly 0 on it but
    drainage = rain, which the kernel books as open water (see ``kernels.tile_day``).
    """
    water = params.is_water
    land = ~water
    taw = np.where(water, 1.0, params.root_zone_capacity_mm)
    cn = params.curve_number
    low, low_slope, high, high_slope = kernels.retention_lines(
        retention_mm(dry_curve_number(cn)), retention_mm(cn), retention_mm(wet_curve_number(cn)),
        taw,
    )
    rows = [None] * kernels.N_PAR
    rows[kernels.P_INV_RAIN_DAY] = 1.0 / (24.0 * params.rain_rate_mm_per_h)
    rows[kernels.P_RETENTION_LOW] = np.where(land, low, kernels.WATER_RETENTION_MM)
    rows[kernels.P_RETENTION_LOW_SLOPE] = np.where(land, low_slope, 0.0)
    rows[kernels.P_RETENTION_HIGH] = np.where(land, high, kernels.WATER_RETENTION_MM)
    rows[kernels.P_RETENTION_HIGH_SLOPE] = np.where(land, high_slope, 0.0)
    rows[kernels.P_TAW] = np.where(land, taw, 0.0)
    rows[kernels.P_INV_READILY_SPAN] = np.where(
        land, 1.0 / ((1.0 - params.depletion_fraction) * taw), 0.0
    )
    rows[kernels.P_TEW] = np.where(land, params.total_evaporable_mm, 0.0)
    rows[kernels.P_INV_STAGE2_SPAN] = 1.0 / (
        params.total_evaporable_mm - params.readily_evaporable_mm
    )
    rows[kernels.P_WATER] = water.astype(np.float64)
    return kernels.pack_blocks(rows)


def _initial_state(params: TileParameters) -> np.ndarray:
    """Kernel state at the start: empty canopy, soil and surface layer equally wet."""
    n = params.n_tiles
    rows = [np.zeros(n) for _ in range(kernels.N_STATE)]
    soil = params.initial_soil_fraction * params.root_zone_capacity_mm
    rows[kernels.S_SOIL] = np.where(params.is_water, 0.0, soil)
    depletion = (1.0 - params.initial_soil_fraction) * params.total_evaporable_mm
    rows[kernels.S_SURFACE] = np.where(params.is_water, 0.0, depletion)
    return kernels.pack_blocks(rows)


def _check_year_index(year_index, n_days) -> np.ndarray:
    """``year_index`` as int64, checked to run 0, 0, …, 1, 1, … without gaps."""
    years = np.asarray(year_index)
    if years.shape != (n_days,):
        raise ValueError(f"year_index: shape {years.shape}, expected ({n_days},) (one per day)")
    if not np.issubdtype(years.dtype, np.integer):
        raise ValueError(f"year_index: dtype {years.dtype}, expected integers")
    years = np.ascontiguousarray(years, dtype=np.int64)
    if years[0] != 0:
        raise ValueError(f"year_index[0] = {years[0]}: expected 0")
    steps = np.diff(years)
    bad = np.flatnonzero((steps != 0) & (steps != 1))
    if bad.size:
        day = int(bad[0]) + 1
        raise ValueError(
            f"year_index[{day}] = {years[day]} after {years[day - 1]}: expected the same year "
            "or the next one (non-decreasing, no gaps)"
        )
    return years


def _check_forcing(arrays, n_tiles):
    """Return the forcing as C-contiguous arrays of one shape (n_days, n_tiles) and one dtype.

    Four float32 arrays stay float32 (the kernel widens each value as it reads it, and half the
    bytes stream through memory); anything else becomes float64.
    """
    shape = np.shape(arrays[0])
    single = all(getattr(value, "dtype", None) == np.float32 for value in arrays)
    dtype = np.float32 if single else np.float64
    out = []
    for name, value in zip(_FORCING_NAMES, arrays, strict=False):
        array = np.ascontiguousarray(value, dtype=dtype)
        if array.ndim != 2 or array.shape != shape or array.shape[1] != n_tiles:
            raise ValueError(
                f"{name}: shape {array.shape}, expected (n_days, {n_tiles}) like rain_mm "
                f"{shape} (time-major, one column per tile)"
            )
        if array.shape[0] == 0:
            raise ValueError(f"{name}: no days (expected at least one)")
        out.append(array)
    return out


def _leaf_area(lai, params: TileParameters, shape):
    """The leaf-area rows: one constant row (step 0) or one per day (step 1) [m² m⁻²]."""
    if lai is None:
        return np.ascontiguousarray(params.reference_lai().reshape(1, -1)), 0
    array = np.ascontiguousarray(lai, dtype=np.float64)
    if array.shape != shape:
        raise ValueError(
            f"lai: shape {array.shape}, expected {shape} (n_days, n_tiles) like rain_mm: one "
            "leaf area index per day and tile"
        )
    return array, 1


#: Days of canopy rows computed at a time when the leaf area changes by day (whole years are
#: added until a chunk holds at least this many days): a reused buffer of a year or so stays in
#: cache and is not paged in afresh, where rows for the whole record would cost more to write
#: and read than the day loop itself.
CANOPY_CHUNK_DAYS = 366


def _canopy_chunks(leaf_area, lai_step, years, params: TileParameters):
    """Yield (start, stop, canopy rows) for the kernel: one chunk, or whole years with daily LAI.

    Chunks end on year ends, so the kernel opens and closes each year inside one call.
    """
    n_days = years.shape[0]
    if lai_step == 0:
        yield 0, n_days, _canopy_rows(leaf_area, params)
        return
    year_starts = np.flatnonzero(np.diff(years)) + 1
    bounds = [0]
    for start in year_starts:
        if start - bounds[-1] >= CANOPY_CHUNK_DAYS:
            bounds.append(int(start))
    bounds.append(n_days)
    n_tiles = leaf_area.shape[1]
    buffer = np.empty(kernels.N_CANOPY * max(np.diff(bounds)) * n_tiles)
    for start, stop in zip(bounds[:-1], bounds[1:], strict=False):
        size = kernels.N_CANOPY * (stop - start) * n_tiles
        rows = buffer[:size].reshape(kernels.N_CANOPY, stop - start, n_tiles)  # C-contiguous
        _canopy_rows(leaf_area[start:stop], params, out=rows, full_lai=leaf_area)
        yield start, stop, rows


def _canopy_rows(leaf_area, params: TileParameters, out=None, full_lai=None) -> np.ndarray:
    """Capacity, cover and 1 / exposed share for the leaf-area rows (``kernels.canopy_rows``).

    ``out`` (shape (N_CANOPY, *leaf_area.shape)) is filled if given; ``full_lai`` is the whole
    record of which ``leaf_area`` is a part, searched for the first invalid value.

    Raises
    ------
    ValueError
        Naming the first negative or non-finite leaf area (day, tile, value).
    """
    lai = params.reference_lai()
    with np.errstate(divide="ignore", invalid="ignore"):
        per_lai = np.where(lai > 0, params.canopy_capacity_mm / lai, 0.0)
    land = (~params.is_water).astype(np.float64)
    if out is None:
        out = np.empty((kernels.N_CANOPY, *leaf_area.shape))
    closed = params.leaf_area_index is None
    invalid = kernels.canopy_rows(
        leaf_area, per_lai * land, params.extinction_coefficient, closed, land, out
    )
    if invalid:
        whole = leaf_area if full_lai is None else full_lai
        _raise_first_bad_value({"lai": whole}, np.arange(whole.shape[1]))
    return out


def _raise_first_bad_value(named_arrays, bad_tiles):
    """Raise ValueError naming the first negative or non-finite value in the given tiles."""
    for name, array in named_arrays.items():
        columns = array[:, bad_tiles]
        bad = ~((columns >= 0) & np.isfinite(columns))
        if bad.any():
            day, column = np.argwhere(bad)[0]
            tile = int(bad_tiles[column])
            unit = "m2/m2" if name == "lai" else "mm/d"
            raise ValueError(
                f"{name}[day {day}, tile {tile}] = {float(array[day, tile])!r}: expected a "
                f"finite value ≥ 0 {unit} ({int(bad.sum())} invalid value(s) in {name})"
            )


@dataclass(frozen=True)
class TileAnnual:
    """Annual water balance of each tile; every array is shaped (n_years, n_tiles) [mm].

    Attributes
    ----------
    rain_mm : ndarray
        Gross rain [mm].
    interception_mm : ndarray
        Evaporation of rain held on the canopy [mm].
    transpiration_mm : ndarray
        Transpiration from the root zone [mm].
    soil_evap_mm : ndarray
        Soil evaporation [mm].
    open_water_mm : ndarray
        Open-water evaporation (water tiles only) [mm].
    quickflow_mm : ndarray
        SCS quickflow; for water tiles rain − open-water evaporation, may be negative [mm].
    drainage_mm : ndarray
        Drainage below the root zone [mm].
    storage_change_mm : ndarray
        Change of canopy + soil store over the year (end − start) [mm].
    """

    rain_mm: np.ndarray
    interception_mm: np.ndarray
    transpiration_mm: np.ndarray
    soil_evap_mm: np.ndarray
    open_water_mm: np.ndarray
    quickflow_mm: np.ndarray
    drainage_mm: np.ndarray
    storage_change_mm: np.ndarray

    @property
    def evap_mm(self) -> np.ndarray:
        """Total evaporation: interception + transpiration + soil + open water [mm]."""
        return self.interception_mm + self.transpiration_mm + self.soil_evap_mm + self.open_water_mm

    @property
    def yield_mm(self) -> np.ndarray:
        """Water yield: quickflow + drainage [mm]."""
        return self.quickflow_mm + self.drainage_mm

    def closure_error_mm(self) -> np.ndarray:
        """Balance residual rain − evaporation − yield − storage change, per tile-year [mm]."""
        return self.rain_mm - self.evap_mm - self.yield_mm - self.storage_change_mm


@dataclass(frozen=True)
class TileRun:
    """Result of :func:`simulate_tiles`.

    Attributes
    ----------
    annual : TileAnnual
        Annual sums per tile [mm].
    daily_yield_mm : ndarray, shape (n_days, n_tiles), or None
        Quickflow + drainage of each day (float64, or float32 if asked) [mm d⁻¹]; None with
        ``keep_daily_yield=False``.
    daily : dict of str to ndarray, or None
        With ``keep_daily``: every daily flux [mm d⁻¹] (``interception_mm``,
        ``throughfall_mm``, ``transpiration_mm``, ``soil_evap_mm``, ``open_water_mm``,
        ``quickflow_mm``, ``drainage_mm``) and end-of-day store [mm] (``canopy_store_mm``,
        ``soil_store_mm``, ``surface_depletion_mm``), each shaped (n_days, n_tiles).
    daily_drainage_mm : ndarray, shape (n_days, n_tiles), or None
        Drainage below the root zone of each day [mm d⁻¹]; with ``keep_daily_drainage`` (or
        ``keep_daily``). Quickflow of the day is ``daily_yield_mm − daily_drainage_mm``.
    """

    annual: TileAnnual
    daily_yield_mm: np.ndarray | None
    daily: dict[str, np.ndarray] | None = None
    daily_drainage_mm: np.ndarray | None = None


def simulate_tiles(
    rain_mm,
    wet_mm,
    dry_mm,
    soil_mm,
    params: TileParameters,
    year_index,
    *,
    lai=None,
    keep_daily: bool = False,
    keep_daily_yield: bool = True,
    keep_daily_drainage: bool = False,
    daily_dtype=None,
    out: np.ndarray | None = None,
    threads: int | None = None,
) -> TileRun:
    """Run the daily water balance of many tiles.

    Parameters
    ----------
    rain_mm : array_like, shape (n_days, n_tiles)
        Gross rain on each tile [mm d⁻¹]. When all four forcing arrays are float32 they are
        used as they are (half the bytes to read; each value is widened to float64 and all
        arithmetic and sums are float64); otherwise all four are taken as float64.
    wet_mm : array_like, shape (n_days, n_tiles)
        Evaporation of a fully wet canopy (Penman–Monteith with rs = 0) per unit of
        canopy-covered area; for a water tile, open-water evaporation [mm d⁻¹].
    dry_mm : array_like, shape (n_days, n_tiles)
        Potential transpiration of the dry canopy (Kcb·ETo or its stand-in) [mm d⁻¹].
    soil_mm : array_like, shape (n_days, n_tiles)
        Energy left for soil evaporation, (Kc,max − Kcb)·ETo (FAO-56 eq. 71) [mm d⁻¹]; the
        engine applies the exposed share and the surface layer's drying.
    params : TileParameters
        Per-tile parameters (n_tiles each) [various units].
    year_index : array_like of int, shape (n_days,)
        Year number of each day: 0, …, n_years − 1, non-decreasing without gaps [-].
    lai : array_like, shape (n_days, n_tiles), optional
        Leaf area index of each day and tile [m² m⁻²] (a crop's season, a plantation's growth).
        Default: each tile's ``params.leaf_area_index`` every day.
    keep_daily : bool, optional
        Also return every daily flux and store (costs 10 float64 arrays of n_days × n_tiles).
    keep_daily_yield : bool, optional
        Return the daily yield (default). False keeps the annual sums only, which is faster and
        needs no n_days × n_tiles output (e.g. for an ensemble of parameter sets).
    keep_daily_drainage : bool, optional
        Also return each day's drainage (to route quickflow and drainage apart).
    daily_dtype : numpy dtype, optional
        ``np.float64`` (default) or ``np.float32`` for the daily yield and drainage; float32
        halves their memory and writing time and rounds each day to about 7 significant
        digits. The annual sums are always accumulated in float64 from the unrounded values.
    out : ndarray, shape (n_days, n_tiles), optional
        C-contiguous float64 or float32 array to write the daily yield into, e.g. one reused
        across runs so that no fresh memory is allocated and touched; it is returned as
        ``daily_yield_mm`` and its dtype is the daily dtype. On an error its content is
        unspecified.
    threads : int, optional
        Most threads to run the tiles on, ≥ 1 [-]. Default: :func:`coveryield.engine.threads.
        engine_threads`, else the ``COVERYIELD_ENGINE_THREADS`` environment variable, else the
        cores this process may use; never more than one per block of
        :data:`~coveryield.engine.kernels.BLOCK` tiles. The results are the same, bit for bit,
        on any number of threads.

    Returns
    -------
    TileRun
        Annual sums (n_years, n_tiles) [mm], daily yield (n_days, n_tiles) [mm d⁻¹] and, if
        asked, the daily drainage, fluxes and stores.

    Raises
    ------
    ValueError
        On a shape mismatch, a bad ``year_index``, a negative or non-finite forcing value (the
        message names the array, day, tile and value), or an unusable ``out``/``daily_dtype``.

    Notes
    -----
    Inputs that are C-contiguous float64 (or all four float32) are used without a copy. With a
    daily ``lai`` the canopy rows are computed a year at a time (:data:`CANOPY_CHUNK_DAYS`).
    The physics of a day is :func:`coveryield.engine.kernels.tile_day`; see the module
    docstring for the order.
    """
    forcing = _check_forcing((rain_mm, wet_mm, dry_mm, soil_mm), params.n_tiles)
    n_days, n_tiles = forcing[0].shape
    leaf_area, lai_step = _leaf_area(lai, params, (n_days, n_tiles))
    years = _check_year_index(year_index, n_days)
    n_years = int(years[-1]) + 1
    for flag, on in (("keep_daily", keep_daily), ("keep_daily_drainage", keep_daily_drainage)):
        if on and not keep_daily_yield:
            raise ValueError(
                f"{flag}=True needs keep_daily_yield=True (the daily yield is one of the daily "
                "outputs)"
            )

    par = _kernel_parameters(params)
    state = _initial_state(params)
    annual = np.zeros((len(kernels.ANNUAL_NAMES), n_years, n_tiles))
    daily_yield = drainage = daily = None
    if keep_daily_yield:
        daily_yield = _daily_yield_array(out, daily_dtype, (n_days, n_tiles))
    elif out is not None:
        raise ValueError("out: given with keep_daily_yield=False (expected None)")
    if keep_daily or keep_daily_drainage:
        drainage = np.empty((n_days, n_tiles), dtype=daily_yield.dtype)
    if keep_daily:
        daily = np.empty((kernels.N_DAILY, n_days, n_tiles))
    n_blocks = -(-n_tiles // kernels.BLOCK)
    with block_runner(n_blocks, threads) as run:
        for start, stop, canopy in _canopy_chunks(leaf_area, lai_step, years, params):
            days = slice(start, stop)
            inputs = (
                *(f[days] for f in forcing), canopy, lai_step, years[days], par, state, annual
            )
            if keep_daily:
                run(kernels.run_tiles_daily, *inputs, daily_yield[days], drainage[days],
                    daily[:, days])
            elif keep_daily_drainage:
                run(kernels.run_tiles_routed, *inputs, daily_yield[days], drainage[days])
            elif keep_daily_yield:
                run(kernels.run_tiles, *inputs, daily_yield[days])
            else:
                run(kernels.run_tiles_annual, *inputs)

    # the kernel marks a non-finite input by a NaN or inf rain sum, a negative one by its
    # lowest-input state row
    lowest = kernels.unpack_row(state, kernels.N_STATE, kernels.S_LOWEST_INPUT, n_tiles)
    bad = ~np.isfinite(annual[kernels.A_RAIN]).all(axis=0) | ~(lowest >= 0.0)
    if bad.any():
        named = dict(zip(_FORCING_NAMES, forcing, strict=False))
        _raise_first_bad_value(named, np.flatnonzero(bad))

    result = TileAnnual(**dict(zip(kernels.ANNUAL_NAMES, annual, strict=True)))
    daily_dict = None if daily is None else dict(zip(kernels.DAILY_NAMES, daily, strict=True))
    return TileRun(
        annual=result, daily_yield_mm=daily_yield, daily=daily_dict, daily_drainage_mm=drainage
    )


_DAILY_DTYPES = (np.dtype(np.float64), np.dtype(np.float32))


def _daily_yield_array(out, daily_dtype, shape) -> np.ndarray:
    """Return the daily-yield output: ``out`` once checked, or a new array of ``daily_dtype``."""
    dtype = None if daily_dtype is None else np.dtype(daily_dtype)
    if dtype is not None and dtype not in _DAILY_DTYPES:
        raise ValueError(f"daily_dtype: {dtype}, expected float64 or float32")
    if out is None:
        return np.empty(shape, dtype=dtype or np.float64)
    if not isinstance(out, np.ndarray) or out.shape != shape:
        raise ValueError(
            f"out: shape {np.shape(out)}, expected {shape} (n_days, n_tiles) like rain_mm"
        )
    if out.dtype not in _DAILY_DTYPES or (dtype is not None and out.dtype != dtype):
        raise ValueError(
            f"out: dtype {out.dtype}, expected "
            + (f"{dtype} (daily_dtype)" if dtype is not None else "float64 or float32")
        )
    if not (out.flags.c_contiguous and out.flags.writeable):
        raise ValueError("out: expected a writeable C-contiguous array")
    return out
