"""Compiled daily kernels of the tile water balance (numba).

Every function here is pure: arrays in, the output arrays that the caller allocated are filled
in place, nothing else is touched. Each keeps its plain-Python form as ``.py_func`` so tests can
run it without the compiler.

Memory layout
-------------
The loops are time-major with the tiles innermost, so each input row ``x[day, :]`` streams
through memory once (see Speed). Per-tile parameters and state live in flat "blocked" arrays:
tiles are grouped in blocks of :data:`BLOCK` and, inside a block, one row of :data:`BLOCK`
values per quantity (``par[(b*N_PAR + k)*BLOCK + j]`` is parameter ``k`` of tile
``b*BLOCK + j``). The distance between two rows of one block is then a compile-time constant,
which lets LLVM check for array overlap with a handful of comparisons and vectorise the tile
loop; with one array per quantity it gives up ("too many memory checks"). The per-tile
arithmetic is branch-free (``min``/``max`` and selects) for the same reason.
``error_model="numpy"`` removes Python's zero-division checks; the caller guarantees that the
divisors are positive.

Speed
-----
At thousands of tiles the loop is bound by arithmetic more than by memory (about 3.5 of the 4
ns per tile-day on a 2-core development machine; reading the four float64 forcing rows alone
costs about 2 ns and overlaps with it): every vector operation per tile-day counts. Hence:

* everything constant per tile is derived once, before the loop: the SCS retention as two
  lines against the root-zone store (:func:`retention_lines`), 1/(24 R) for the storm's share
  of the day, and from the day's leaf area the canopy capacity, cover fraction and 1 / exposed
  share (:func:`canopy_rows`; no exp and no division per tile-day);
* open water is a parameter set (no canopy, no root zone, a retention so large that there is
  no quickflow), so the land arithmetic gives it drainage = rain with no select per term; its
  evaporation and net yield are booked from running sums (one multiply per tile-day);
* the input check is one running minimum and a rain sum that turns NaN or inf with any
  non-finite input, not a flag per value; ``min(x, x·ratio)`` replaces
  ``x·min(1, ratio)`` (same value, no compare-and-select);
* blocks of 256 tiles, so the vectorised loop's overlap checks run 16 times a day for 4,000
  tiles instead of 125.

The loops are time-major: blocks of tiles in the outer loop would keep each block's state in
the L1 cache, but read the forcing in runs of a block's width a whole row apart, which the
hardware prefetchers do not follow (measured about 3 times slower). Splitting the day into
separate passes over a block (canopy; runoff and transpiration; the rest) shortens each
dependency chain but costs more loads and stores than it saves (measured slower). Float32
forcing is accepted and widened as it is read (half the bytes to stream; all arithmetic stays
float64). All of this changes each tile's arithmetic only by rounding (the plain-Python
reference in the tests agrees to 1e-9).

Several cores: the ``run_tiles*`` kernels take a range of blocks and release the GIL, so
``water_balance.simulate_tiles`` runs disjoint block ranges in threads (``engine/threads.py``);
with 4,000 tiles two cores bring the wall time per tile-day from about 4 to about 2.4 ns. The
block loop counts from 0 and skips the blocks outside the range: a loop starting at the range's
first block leaves LLVM unable to prove the tile index ≥ 0, and the negative-index wrap-around
it then generates cost about 3 times the time (measured).

``fastmath`` is not used. Of its flags, ``nnan``/``ninf`` would let the compiler drop the NaN
that marks an invalid input, and ``reassoc`` would reorder the running sums that close the
balance; ``contract`` (fused multiply-add) is safe for closure, since every flux is booked as
computed, but measured within noise here (about 3 %) while making the last bit of the results
depend on the compiler's fusing in each kernel (the fast and the full-output kernels agree bit
for bit today, and the tests hold them to it).

Sign convention
---------------
Every flux is a positive depth over the tile [mm d⁻¹] except the water tile's quickflow, which is
rain minus open-water evaporation and may be negative. With it the balance is a plain sum::

    rain = interception + transpiration + soil_evap + open_water + quickflow + drainage
           + Δ(canopy store + soil store)

The surface layer (FAO-56 chapter 7) is the top of the root zone: its depletion is tracked to
set the soil-evaporation rate, while its water is counted in the soil store, so it adds no term.
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit

from coveryield.physics.fused import _exp_poly


#: Tiles per block of the blocked parameter and state arrays.
BLOCK = 256

# Rows of the blocked parameter array. Everything that is constant per tile is derived once
# here, so the day loop spends no operation on it (see the Speed section).
P_INV_RAIN_DAY = 0  # 1 / (24 h × rainfall intensity): the storm's share of the day per mm [mm⁻¹]
P_RETENTION_LOW = 1  # SCS retention on the dry side, S = low + low_slope·store [mm]
P_RETENTION_LOW_SLOPE = 2  # 2·(S(AMC II) − S(AMC I)) / TAW [-]
P_RETENTION_HIGH = 3  # on the wet side, S = high + high_slope·store: 2·S(II) − S(III) [mm]
P_RETENTION_HIGH_SLOPE = 4  # 2·(S(AMC III) − S(AMC II)) / TAW [-]
P_TAW = 5  # total available water [mm]; 0 on an open-water tile
P_INV_READILY_SPAN = 6  # 1 / ((1 − p)·TAW) [mm⁻¹]; 0 on an open-water tile
P_TEW = 7  # total evaporable water of the surface layer [mm]; 0 on an open-water tile
P_INV_STAGE2_SPAN = 8  # 1 / (TEW − REW) [mm⁻¹]
P_WATER = 9  # 1.0 on an open-water tile, else 0.0 [-]
N_PAR = 10

#: Retention of an open-water tile [mm]: no quickflow, so its rain reaches the (empty, zero-
#: capacity) root zone and leaves as drainage, exactly; the day loop books it as open water.
WATER_RETENTION_MM = 1e300

# Rows of the canopy array ``canopy[row, day, tile]`` (or ``canopy[row, 0, tile]`` when the leaf
# area does not change): what the day's leaf area sets, computed before the day loop.
C_CAPACITY = 0  # canopy storage capacity S = capacity per LAI × LAI [mm]; 0 on open water
C_COVER = 1  # canopy cover fraction c = 1 − exp(−k·LAI) [-]; 0 on open water
C_INV_EXPOSED = 2  # 1 / max(1 − c, MIN_EXPOSED) [-]
N_CANOPY = 3

# Rows of the blocked state array: the stores, the input check, then the running sums of the
# current year [mm].
S_CANOPY = 0  # canopy store per unit ground area [mm]
S_SOIL = 1  # root-zone store above wilting point [mm]
S_SURFACE = 2  # depletion of the surface layer's exposed share (FAO-56 De) [mm]
S_LOWEST_INPUT = 3  # smallest forcing value so far (negative: an invalid input) [mm d⁻¹]
S_RAIN = 4  # rain; NaN (or inf) once a day of the year had a non-finite input
S_WET_SURFACE = 5  # interception (land tile) or open-water evaporation (water tile)
S_TRANSPIRATION = 6
S_SOIL_EVAP = 7
S_QUICKFLOW = 8
S_DRAINAGE = 9
N_STATE = 10

#: Rows of the annual output ``annual[row, year, tile]`` [mm].
ANNUAL_NAMES = (
    "rain_mm",
    "interception_mm",
    "transpiration_mm",
    "soil_evap_mm",
    "open_water_mm",
    "quickflow_mm",
    "drainage_mm",
    "storage_change_mm",
)
A_RAIN = 0
A_INTERCEPTION = 1
A_TRANSPIRATION = 2
A_SOIL_EVAP = 3
A_OPEN_WATER = 4
A_QUICKFLOW = 5
A_DRAINAGE = 6
A_STORAGE_CHANGE = 7

#: Rows of the optional daily output ``daily[row, day, tile]``: fluxes [mm d⁻¹], then end-of-day
#: stores [mm].
DAILY_NAMES = (
    "interception_mm",
    "throughfall_mm",
    "transpiration_mm",
    "soil_evap_mm",
    "open_water_mm",
    "quickflow_mm",
    "drainage_mm",
    "canopy_store_mm",
    "soil_store_mm",
    "surface_depletion_mm",
)
N_DAILY = 10

_PER_HOUR = 1.0 / 24.0
_TINY = 1e-300
#: Smallest exposed share used as a divisor (a closed canopy exposes none, and then evaporates
#: nothing from the soil, so the quotient is 0) [-].
_MIN_EXPOSED = 1e-9


def pack_blocks(rows):
    """Pack per-tile rows into the flat blocked layout.

    Parameters
    ----------
    rows : sequence of ndarray, each shape (n_tiles,)
        One array per row of the layout, in row order [various units].

    Returns
    -------
    ndarray, shape (n_blocks·len(rows)·BLOCK,)
        ``out[(b*len(rows) + k)*BLOCK + j] = rows[k][b*BLOCK + j]``; padding tiles are 0.
    """
    stacked = np.asarray(np.stack(rows), dtype=np.float64)
    n_rows, n_tiles = stacked.shape
    n_blocks = -(-n_tiles // BLOCK)
    padded = np.zeros((n_rows, n_blocks * BLOCK))
    padded[:, :n_tiles] = stacked
    return np.ascontiguousarray(padded.reshape(n_rows, n_blocks, BLOCK).transpose(1, 0, 2)).ravel()


def unpack_row(blocked, n_rows, row, n_tiles):
    """One row of a flat blocked array as a per-tile array.

    Parameters
    ----------
    blocked : ndarray
        Flat blocked array made by :func:`pack_blocks` (or the kernel state) [various units].
    n_rows : int
        Rows per block of that layout [-].
    row : int
        Row wanted [-].
    n_tiles : int
        Number of real tiles [-].

    Returns
    -------
    ndarray, shape (n_tiles,)
        The row, a copy [unit of the row].
    """
    return blocked.reshape(-1, n_rows, BLOCK)[:, row, :].ravel()[:n_tiles].copy()


@njit(cache=True, error_model="numpy", inline="always")
def canopy_day(rain_mm, wet_mm, capacity_mm, inv_rain_rate_h_per_mm, store_mm):
    """Intercept one day's rain on a canopy store (daily Gash-type form, carried store).

    Parameters
    ----------
    rain_mm : float
        Gross rain of the day [mm d⁻¹].
    wet_mm : float
        Evaporation of a fully wet canopy (Penman–Monteith with rs = 0) [mm d⁻¹].
    capacity_mm : float
        Canopy storage capacity S [mm].
    inv_rain_rate_h_per_mm : float
        Inverse of the mean rainfall intensity while it rains, 1/R [h mm⁻¹].
    store_mm : float
        Water on the canopy at the start of the day, 0..capacity [mm].

    Returns
    -------
    evaporation_mm : float
        Interception loss (evaporation of water held on the canopy) [mm d⁻¹], ≤ ``wet_mm``.
    throughfall_mm : float
        Rain reaching the ground [mm d⁻¹].
    store_mm : float
        Water on the canopy at the end of the day [mm].

    Notes
    -----
    The day's rain falls in one storm of D = min(24, P/R) hours at intensity P/D. The wet canopy
    evaporates at the constant hourly rate e = E_wet/24 from the first drop. As the rates are
    constant during the storm the store moves monotonically and the storm has a closed form::

        x = S0 + P − e·D                       store before clipping
        E_storm = min(e·D, S0 + P)             all of it if the canopy runs dry
        throughfall = max(x − S, 0)            the canopy drips once full
        S1 = min(max(x, 0), S)                 store when the rain stops

    After the storm the store evaporates at rate e for the remaining 24 − D hours, limited by what
    it holds, E_after = min(S1, e·(24 − D)); the rest carries to the next day, as in the running
    store of Rutter et al. (1971).

    A storm that saturates the canopy loses e·D + S = (Ē/R̄)·P + S: the saturated-canopy and
    drying terms of Gash (1979). Simplified against Gash (1979): full evaporation from the start
    of the storm (no exponential wetting-up, the P′G equation), no free throughfall (p = 0), no
    trunk storage. These keep the day branch-free and matter little when P ≫ S.

    References
    ----------
    Gash, J. H. C. (1979). An analytical model of rainfall interception by forests. Q. J. R.
    Meteorol. Soc., 105, 43–55.
    Gash, J. H. C., Lloyd, C. R. & Lachaud, G. (1995). Estimating sparse forest rainfall
    interception with an analytical model. J. Hydrol., 170, 79–86.
    Rutter, A. J., Kershaw, K. A., Robins, P. C. & Morton, A. J. (1971). A predictive model of
    rainfall interception in forests, 1. Agric. Meteorol., 9, 367–384.
    """
    share = rain_mm * (inv_rain_rate_h_per_mm * _PER_HOUR)  # P/(24 R); D/24 = min(1, this)
    return _canopy_storm(rain_mm, share, wet_mm, capacity_mm, store_mm)


@njit(cache=True, error_model="numpy", inline="always")
def _canopy_storm(rain_mm, storm_share, loss_mm, capacity_mm, store_mm):
    """The closed form of :func:`canopy_day` for a storm lasting ``min(1, storm_share)`` of the day.

    ``loss_mm`` is the whole day's wet-canopy loss (24 e), ≥ 0; the storm loses its share of
    it and the dry spell after it the rest, e·(24 − D) = loss − e·D, which is ≥ 0 exactly as
    computed. ``min(loss, loss·share)`` equals ``loss·min(1, share)`` bit for bit (rounding is
    monotonic) in two operations instead of three.
    """
    loss_storm = min(loss_mm, loss_mm * storm_share)  # e·D, D = min(24, P/R)
    wetted = store_mm + rain_mm
    unclipped = wetted - loss_storm  # x = S0 + P − e·D
    evap_storm = min(loss_storm, wetted)
    throughfall = max(unclipped - capacity_mm, 0.0)
    store_after_rain = min(max(unclipped, 0.0), capacity_mm)
    evap_after = min(store_after_rain, loss_mm - loss_storm)  # e·(24 − D)
    return evap_storm + evap_after, throughfall, store_after_rain - evap_after


#: Exponents below this are taken by math.exp rather than the polynomial (its range ends at −16).
_POLY_EXP_MIN = -16.0


@njit(cache=True, error_model="numpy")
def canopy_rows(lai, capacity_per_lai, extinction, closed, land, out):
    """What each day's leaf area sets: canopy capacity, cover fraction and 1 / exposed share.

    Parameters
    ----------
    lai : ndarray, shape (n_rows, n_tiles)
        Leaf area index, ≥ 0 [m² m⁻²].
    capacity_per_lai : ndarray, shape (n_tiles,)
        Canopy storage per unit LAI, ≥ 0 [mm].
    extinction : ndarray, shape (n_tiles,)
        Extinction coefficient k of each tile, > 0 [-].
    closed : bool
        True: every canopy is closed (cover 1 whatever the leaf area) [-].
    land : ndarray, shape (n_tiles,)
        1.0 for a land tile, 0.0 for open water (no canopy: capacity and cover 0) [-].
    out : ndarray, shape (N_CANOPY, n_rows, n_tiles)
        Filled with the rows ``C_*``: capacity S = capacity_per_lai·LAI [mm], cover
        c = 1 − exp(−k·LAI) (Beer's law) [-] and 1 / max(1 − c, MIN_EXPOSED) [-].

    Returns
    -------
    int
        Number of leaf-area values that are negative or not finite (their rows are not
        meaningful; the caller reports the first one) [-].

    Notes
    -----
    exp comes from the branch-free polynomial :func:`coveryield.physics.fused._exp_poly`
    (relative error about 1e-14), so the loop vectorises; the rare k·LAI beyond 16 is redone
    with math.exp. Computed once per run, outside the day loop, so the loop has no exp and no
    division for the exposed share.

    References
    ----------
    Campbell & Norman (1998), ch. 15 (Beer's law for canopies; from memory).
    """
    n_rows, n_tiles = lai.shape
    outside = 0
    invalid = 0
    for d in range(n_rows):
        for t in range(n_tiles):
            leaf = lai[d, t]
            invalid += not (leaf >= 0.0 and leaf < math.inf)
            x = -extinction[t] * leaf
            outside += x < _POLY_EXP_MIN
            beer = 1.0 - _exp_poly(max(x, _POLY_EXP_MIN))
            cover = land[t] * (1.0 if closed else beer)
            out[C_CAPACITY, d, t] = capacity_per_lai[t] * leaf
            out[C_COVER, d, t] = cover
            out[C_INV_EXPOSED, d, t] = 1.0 / max(1.0 - cover, _MIN_EXPOSED)
    if outside and not closed:
        for d in range(n_rows):
            for t in range(n_tiles):
                x = -extinction[t] * lai[d, t]
                if x < _POLY_EXP_MIN:
                    cover = land[t] * (1.0 - math.exp(x))
                    out[C_COVER, d, t] = cover
                    out[C_INV_EXPOSED, d, t] = 1.0 / max(1.0 - cover, _MIN_EXPOSED)
    return invalid


@njit(cache=True, error_model="numpy", inline="always")
def sparse_canopy_day(rain_mm, wet_mm, cover, capacity_mm, inv_rain_rate_h_per_mm, store_mm):
    """Intercept one day's rain on a canopy that covers a share ``cover`` of the ground.

    Parameters
    ----------
    rain_mm : float
        Gross rain of the day [mm d⁻¹].
    wet_mm : float
        Evaporation of the wet canopy per unit canopy-covered area [mm d⁻¹].
    cover : float
        Canopy cover fraction c, 0..1 [-].
    capacity_mm : float
        Canopy storage capacity per unit ground area, S [mm].
    inv_rain_rate_h_per_mm : float
        1 / mean rainfall intensity while it rains [h mm⁻¹].
    store_mm : float
        Water on the canopy per unit ground area at the start of the day [mm].

    Returns
    -------
    evaporation_mm, throughfall_mm, store_mm : float
        Interception loss, rain reaching the ground and the canopy store at the end of the day,
        all per unit ground area [mm d⁻¹, mm].

    Notes
    -----
    The sparse-canopy form of Gash, Lloyd & Lachaud (1995): rain on the open share 1 − c falls
    straight through; the covered share holds Sc = S/c per unit of its own area and evaporates
    at the wet-canopy rate there, by :func:`canopy_day`. Ground-area values are c times the
    covered-area ones, so the storm is computed per unit ground area directly: rain c·P and
    loss rate c·E_wet on a store of capacity S, the storm lasting as long as the gross rain
    (D = min(24, P/R)). A canopy losing leaves (S or c falling) drips what it can no longer
    hold.

    References
    ----------
    Gash, J. H. C., Lloyd, C. R. & Lachaud, G. (1995). Estimating sparse forest rainfall
    interception with an analytical model. J. Hydrol., 170, 79-86.
    """
    share = rain_mm * (inv_rain_rate_h_per_mm * _PER_HOUR)  # P/(24 R); D/24 = min(1, this)
    return sparse_canopy_storm(rain_mm, wet_mm, cover, capacity_mm, share, store_mm)


@njit(cache=True, error_model="numpy", inline="always")
def sparse_canopy_storm(rain_mm, wet_mm, cover, capacity_mm, storm_share, store_mm):
    """:func:`sparse_canopy_day` for a storm lasting D/24 = min(1, ``storm_share``) of the day.

    The day loop calls this form with ``storm_share`` = P·(1/(24 R)), 1/(24 R) being a per-tile
    constant; same parameters and returns as :func:`sparse_canopy_day` otherwise.
    """
    on_canopy = cover * rain_mm
    loss, drip, store_end = _canopy_storm(
        on_canopy, storm_share, cover * wet_mm, capacity_mm, store_mm
    )
    return loss, rain_mm - on_canopy + drip, store_end


@njit(cache=True, error_model="numpy", inline="always")
def surface_layer_evaporation(
    infiltration_mm,
    energy_mm,
    kc_max_et0_mm,
    exposed,
    inv_exposed,
    tew_mm,
    inv_stage2_span,
    depletion_mm,
    root_zone_water_mm,
):
    """Soil evaporation of one day from the surface layer (FAO-56 dual coefficient, chapter 7).

    Parameters
    ----------
    infiltration_mm : float
        Water entering the soil today, P − RO (throughfall − quickflow) [mm d⁻¹].
    energy_mm : float
        Energy left for soil evaporation once the canopy has evaporated, in the role of
        (Kc,max − Kcb)·ETo [mm d⁻¹].
    kc_max_et0_mm : float
        Kc,max·ETo, the most a wetted surface evaporates [mm d⁻¹].
    exposed : float
        Exposed and wetted share of the ground, few = 1 − c [-].
    inv_exposed : float
        1 / max(few, 1e-9) [-] (a closed canopy exposes no soil and evaporates none from it).
    tew_mm : float
        Total evaporable water of the surface layer, TEW [mm].
    inv_stage2_span : float
        1 / (TEW − REW) [mm⁻¹].
    depletion_mm : float
        Depletion of the surface layer at the end of the previous day, De,i−1 [mm].
    root_zone_water_mm : float
        Water the root zone can still give today, after infiltration and transpiration [mm].

    Returns
    -------
    evaporation_mm : float
        Soil evaporation per unit ground area [mm d⁻¹].
    depletion_mm : float
        Depletion of the surface layer at the end of the day, De,i, 0..TEW [mm].

    Notes
    -----
    Today's infiltration first rewets the layer (eq. 77; what exceeds De drains on, eq. 79: rain
    is taken to fall before the day's evaporation, common practice, no source). The layer can
    hold no more water than the root zone it belongs to: De ≥ TEW − root-zone water. Then
    Kr = (TEW − De)/(TEW − REW), capped at 1 while De ≤ REW (eq. 74), and::

        E = min(Kr·energy, few·Kc,max·ETo, few·(TEW − De), root-zone water)

    (eq. 71 and De ≤ TEW); the exposed share carries it, De += E/few (eq. 77, with the
    transpiration from the layer, Te, taken as 0).

    References
    ----------
    Allen, R. G., Pereira, L. S., Raes, D. & Smith, M. (1998). FAO Irrigation and Drainage
    Paper 56, eqs. 71, 74, 77 and 79.
    """
    # FAO-56 eqs. 77, 79: rain rewets first; the layer holds no more than the root zone
    depletion = max(depletion_mm - infiltration_mm, max(tew_mm - root_zone_water_mm, 0.0))
    left = tew_mm - depletion  # evaporable water left in the layer, 0..TEW
    # Kr·energy with Kr = min(1, left / (TEW − REW)) (FAO-56 eq. 74), as min(energy, energy·
    # left/(TEW − REW)): the same value for energy ≥ 0, one operation fewer
    kr_energy = min(energy_mm, energy_mm * (left * inv_stage2_span))
    exposed_cap = exposed * kc_max_et0_mm  # few·Kc,max·ETo, eq. 71
    evaporation = min(min(kr_energy, exposed_cap), min(exposed * left, root_zone_water_mm))
    evaporation = max(evaporation, 0.0)  # rounding can leave `left` a hair below 0
    return evaporation, depletion + evaporation * inv_exposed  # FAO-56 eq. 77


@njit(cache=True, error_model="numpy", inline="always")
def curve_number_runoff(water_mm, retention_mm):
    """Direct runoff from a daily depth of water by the SCS curve number method.

    Parameters
    ----------
    water_mm : float
        Water reaching the ground (throughfall) [mm d⁻¹].
    retention_mm : float
        Potential maximum retention S = 25400/CN − 254 [mm], > 0 (CN 100 as S = 1e-300 mm).

    Returns
    -------
    float
        Quickflow [mm d⁻¹], 0 ≤ Q ≤ ``water_mm``.

    Notes
    -----
    Ia = 0.2·S and Q = (P − Ia)²/(P − Ia + S) for P > Ia, else 0.

    References
    ----------
    USDA Soil Conservation Service (1986). Urban hydrology for small watersheds, Technical Release
    55, eqs. 2-1 to 2-4; National Engineering Handbook, Section 4, Hydrology, Ch. 10.
    """
    excess = max(water_mm - 0.2 * retention_mm, 0.0)  # P − Ia, Ia = 0.2 S (TR-55 eq. 2-2)
    runoff = excess * excess / (excess + retention_mm)  # TR-55 eq. 2-1
    return min(runoff, water_mm)  # guards rounding when S is tiny


@njit(cache=True, error_model="numpy", inline="always")
def store_retention(store_mm, low_mm, low_slope, high_mm, high_slope):
    """SCS retention for the day, moved between AMC I, II and III by the root-zone store.

    Parameters
    ----------
    store_mm : float
        Root-zone store at the start of the day, 0..TAW [mm].
    low_mm, low_slope : float
        The dry side's line S = low + low_slope·store: S(AMC I) [mm] and
        2·(S(AMC II) − S(AMC I)) / TAW [-].
    high_mm, high_slope : float
        The wet side's line: 2·S(AMC II) − S(AMC III) [mm] and 2·(S(AMC III) − S(AMC II)) / TAW
        [-].

    Returns
    -------
    float
        Retention S [mm].

    Notes
    -----
    Piecewise linear in wetness: S(AMC I) at wilting point (store 0), S(AMC II) at half of TAW,
    S(AMC III) at field capacity (TAW); :func:`retention_lines` gives the two lines. Tying the
    three classes to these wetness points, and interpolating S rather than CN, is common
    practice, no source (NEH-4 classes AMC by the 5-day antecedent rain, which the daily store
    replaces). The two lines meet at TAW/2 and the curve is convex (S(I) − S(II) ≥ S(II) −
    S(III) for every CN with the NEH-4 conversions, checked in the tests), so it is the larger
    of the two lines: one ``max`` instead of a comparison and a select.
    """
    return max(low_mm + low_slope * store_mm, high_mm + high_slope * store_mm)


def retention_lines(retention_dry, retention_average, retention_wet, taw_mm):
    """The two lines of :func:`store_retention` from the AMC I, II and III retentions.

    Parameters
    ----------
    retention_dry, retention_average, retention_wet : ndarray
        Retention S of the AMC I, II and III curve numbers [mm].
    taw_mm : ndarray
        Total available water, > 0 [mm].

    Returns
    -------
    low, low_slope, high, high_slope : ndarray
        S = max(low + low_slope·store, high + high_slope·store) [mm, -]. 1e-300 mm is added to
        both intercepts so that S > 0 even at CN 100 (the runoff's divisor stays positive; no
        other value changes).
    """
    low_slope = 2.0 * (retention_average - retention_dry) / taw_mm
    high_slope = 2.0 * (retention_wet - retention_average) / taw_mm
    high = 2.0 * retention_average - retention_wet
    return retention_dry + _TINY, low_slope, high + _TINY, high_slope


@njit(cache=True, error_model="numpy", inline="always")
def tile_day(
    rain,
    wet,
    dry,
    soil_pot,
    capacity,
    cover,
    inv_exposed,
    inv_rain_day,
    retention_low,
    retention_low_slope,
    retention_high,
    retention_high_slope,
    taw,
    inv_readily_span,
    tew,
    inv_stage2_span,
    water,
    canopy_store,
    soil_store,
    surface_depletion,
):
    """Water balance of one tile over one day.

    Parameters
    ----------
    rain : float
        Gross rain [mm d⁻¹].
    wet : float
        Wet-canopy evaporation per unit canopy-covered area (or open-water evaporation)
        [mm d⁻¹].
    dry : float
        Dry-canopy potential transpiration, Kcb·ETo or its stand-in [mm d⁻¹].
    soil_pot : float
        Energy left for soil evaporation, (Kc,max − Kcb)·ETo [mm d⁻¹].
    capacity : float
        Canopy storage capacity of the day, S = capacity per LAI × LAI (Dickinson 1984) [mm].
    cover : float
        Canopy cover fraction of the day, c = 1 − exp(−k·LAI) (Beer's law), 0..1 [-].
    inv_exposed : float
        1 / max(1 − c, 1e-9) [-].
    inv_rain_day : float
        1 / (24 h × rainfall intensity while raining): the storm lasts min(1, P·this) of the
        day [mm⁻¹].
    retention_low, retention_low_slope, retention_high, retention_high_slope : float
        The two lines of the SCS retention against the root-zone store
        (:func:`retention_lines`) [mm, -].
    taw : float
        Total available water of the root zone [mm].
    inv_readily_span : float
        1 / ((1 − p)·TAW) [mm⁻¹].
    tew : float
        Total evaporable water of the surface layer [mm].
    inv_stage2_span : float
        1 / (TEW − REW) [mm⁻¹].
    water : float
        1.0 for an open-water tile, else 0.0 [-]. An open-water tile also has capacity, cover,
        TAW, 1 / ((1 − p)·TAW) and TEW 0 and the retention :data:`WATER_RETENTION_MM` (see
        ``water_balance._kernel_parameters``), so that :func:`land_day` gives it no flux but
        drainage = rain, exactly.
    canopy_store, soil_store, surface_depletion : float
        Canopy store per unit ground area, root-zone store and surface-layer depletion at the
        start of the day [mm].

    Returns
    -------
    tuple of float
        interception, throughfall, transpiration, soil_evap, open_water, quickflow, drainage
        [mm d⁻¹], then the canopy store, soil store and surface-layer depletion at the end of
        the day [mm]. An open-water tile has open water = E_wet and quickflow = P − E_wet
        (negative when evaporation exceeds rain), every other term 0.

    Notes
    -----
    The land physics is :func:`land_day`; this wraps it with the open-water booking. The day
    loop books open water itself, from running sums (see ``_run``), and gets the same values.
    """
    ic, tf, tr, es, qf, dn, c_end, s_end, e_end = land_day(
        rain, wet, dry, soil_pot, capacity, cover, inv_exposed, inv_rain_day, retention_low,
        retention_low_slope, retention_high, retention_high_slope, taw, inv_readily_span, tew,
        inv_stage2_span, canopy_store, soil_store, surface_depletion,
    )
    if water > 0.5:
        return ic, 0.0, tr, es, wet, dn - wet, 0.0, c_end, s_end, e_end
    return ic, tf, tr, es, 0.0, qf, dn, c_end, s_end, e_end


@njit(cache=True, error_model="numpy", inline="always")
def land_day(
    rain,
    wet,
    dry,
    soil_pot,
    capacity,
    cover,
    inv_exposed,
    inv_rain_day,
    retention_low,
    retention_low_slope,
    retention_high,
    retention_high_slope,
    taw,
    inv_readily_span,
    tew,
    inv_stage2_span,
    canopy_store,
    soil_store,
    surface_depletion,
):
    """Canopy, quickflow and root zone of one land tile over one day (see :func:`tile_day`).

    Parameters
    ----------
    rain, wet, dry, soil_pot, capacity, cover, inv_exposed, inv_rain_day
        As for :func:`tile_day`.
    retention_low, retention_low_slope, retention_high, retention_high_slope, taw
        As for :func:`tile_day`.
    inv_readily_span, tew, inv_stage2_span, canopy_store, soil_store, surface_depletion
        As for :func:`tile_day`.

    Returns
    -------
    tuple of float
        interception, throughfall, transpiration, soil_evap, quickflow, drainage [mm d⁻¹],
        canopy store, soil store, surface-layer depletion at the end of the day [mm].

    Notes
    -----
    Order: canopy (:func:`sparse_canopy_storm` with the day's S and cover c); quickflow from
    throughfall (:func:`curve_number_runoff` with :func:`store_retention`); root zone:
    transpiration, then soil evaporation from the surface layer
    (:func:`surface_layer_evaporation`); drainage of the water above TAW.

    Transpiration = Ks·E_dry·(1 − E_int/(c·E_wet)), with FAO-56 eq. 84
    Ks = (TAW − Dr)/((1 − p)·TAW) capped at 1, Dr taken at the start of the day. The factor
    removes the share of the canopy's energy already spent on intercepted water (wet grass
    transpires less by about what its leaves evaporate: Burgy & Pomeroy 1958).

    Soil evaporation gets the energy the canopy leaves of Kc,max·ETo: FAO-56 eq. 71's
    (Kc,max − Kcb)·ETo with the day's interception plus transpiration in place of Kcb·ETo.

    Both are limited to the water the store holds after infiltration. Drainage follows
    evaporation, as in FAO-56 eq. 88: DP = (P − RO) − ET − Dr,i−1 when positive.

    The arithmetic is branch-free (``min``/``max``), so the loop over tiles vectorises.

    References
    ----------
    Allen, R. G., Pereira, L. S., Raes, D. & Smith, M. (1998). Crop evapotranspiration. FAO
    Irrigation and Drainage Paper 56, eqs. 71-79, 84, 85, 88.
    Gash, J. H. C., Lloyd, C. R. & Lachaud, G. (1995). J. Hydrol., 170, 79-86.
    Burgy, R. H. & Pomeroy, C. R. (1958). Interception losses in grassy vegetation. Trans. AGU,
    39(6), 1095-1100.
    Dickinson, R. E. (1984). Modeling evapotranspiration for three-dimensional global climate
    models. Geophys. Monogr. 29, 58-72.
    """
    storm_share = rain * inv_rain_day  # P/(24 R); the storm lasts min(1, this) of the day
    interception, throughfall, canopy_end = sparse_canopy_storm(
        rain, wet, cover, capacity, storm_share, canopy_store
    )

    retention = store_retention(
        soil_store, retention_low, retention_low_slope, retention_high, retention_high_slope
    )
    quickflow = curve_number_runoff(throughfall, retention)
    infiltration = throughfall - quickflow
    available = soil_store + infiltration

    wet_energy_used = min(interception / max(cover * wet, _TINY), 1.0)  # E_int / (c E_wet)
    # Ks·E_dry with Ks = min(1, (TAW − Dr)/((1 − p)·TAW)) (FAO-56 eq. 84), as min(E_dry,
    # E_dry·…): the same value for E_dry ≥ 0, one operation fewer
    ks_dry = min(dry, dry * (soil_store * inv_readily_span))
    transpiration = min(ks_dry * (1.0 - wet_energy_used), available)
    kc_max_et0 = soil_pot + dry  # Kc,max·ETo (the forcing's soil_pot is Kc,max·ETo − E_dry)
    soil_evap, depletion_end = surface_layer_evaporation(
        infiltration,
        max(kc_max_et0 - interception - transpiration, 0.0),  # FAO-56 eq. 71, energy left
        kc_max_et0,
        1.0 - cover,
        inv_exposed,
        tew,
        inv_stage2_span,
        surface_depletion,
        available - transpiration,
    )
    after_et = available - transpiration - soil_evap
    soil_end = min(after_et, taw)
    drainage = after_et - soil_end  # FAO-56 eq. 88: DP = (P − RO) − ET − Dr,i−1 ≥ 0
    return (
        interception,
        throughfall,
        transpiration,
        soil_evap,
        quickflow,
        drainage,
        canopy_end,
        soil_end,
        depletion_end,
    )


@njit(cache=True, error_model="numpy", inline="always")
def _open_year(y, st, annual, n_tiles, block_lo, block_hi):
    """Start year ``y`` for blocks ``block_lo``..``block_hi − 1``: subtract the stores from its
    storage change, zero the running sums."""
    for b in range(block_lo, block_hi):
        t0 = b * BLOCK
        s0 = b * (N_STATE * BLOCK)
        for j in range(min(BLOCK, n_tiles - t0)):
            store = st[s0 + S_CANOPY * BLOCK + j] + st[s0 + S_SOIL * BLOCK + j]
            annual[A_STORAGE_CHANGE, y, t0 + j] -= store
            for k in range(S_RAIN, N_STATE):
                st[s0 + k * BLOCK + j] = 0.0


@njit(cache=True, error_model="numpy", inline="always")
def _close_year(y, par, st, annual, n_tiles, block_lo, block_hi):
    """End year ``y`` for blocks ``block_lo``..``block_hi − 1``: write its running sums and add
    the stores to its storage change."""
    for b in range(block_lo, block_hi):
        t0 = b * BLOCK
        p0 = b * (N_PAR * BLOCK)
        s0 = b * (N_STATE * BLOCK)
        for j in range(min(BLOCK, n_tiles - t0)):
            t = t0 + j
            store = st[s0 + S_CANOPY * BLOCK + j] + st[s0 + S_SOIL * BLOCK + j]
            annual[A_STORAGE_CHANGE, y, t] += store
            annual[A_RAIN, y, t] += st[s0 + S_RAIN * BLOCK + j]
            wet_surface = st[s0 + S_WET_SURFACE * BLOCK + j]
            annual[A_TRANSPIRATION, y, t] += st[s0 + S_TRANSPIRATION * BLOCK + j]
            annual[A_SOIL_EVAP, y, t] += st[s0 + S_SOIL_EVAP * BLOCK + j]
            if par[p0 + P_WATER * BLOCK + j] > 0.5:
                # open water: its rain was booked as drainage (see tile_day)
                annual[A_OPEN_WATER, y, t] += wet_surface
                annual[A_QUICKFLOW, y, t] += st[s0 + S_DRAINAGE * BLOCK + j] - wet_surface
            else:
                annual[A_INTERCEPTION, y, t] += wet_surface
                annual[A_QUICKFLOW, y, t] += st[s0 + S_QUICKFLOW * BLOCK + j]
                annual[A_DRAINAGE, y, t] += st[s0 + S_DRAINAGE * BLOCK + j]


@njit(cache=True, error_model="numpy", inline="always")
def _run(
    rain,
    wet,
    dry,
    soil_pot,
    canopy,
    day_step,
    year_index,
    par,
    st,
    annual,
    daily_yield,
    daily_drainage,
    daily,
    keep_yield,
    keep_drainage,
    keep_daily,
    block_lo,
    block_hi,
):
    """Day loop shared by the ``run_tiles*`` kernels; the three flags are compile-time constants.

    The daily outputs are written straight from the vectorised tile loop: staging them in state
    rows and copying them out afterwards cost a second pass over the tiles every day.
    ``canopy[:, d * day_step, t]`` holds the capacity, cover and 1 / exposed share of day ``d``:
    ``day_step`` 0 reads one row of constant values (it stays in cache), 1 reads a row per day.

    The input check costs no branch: a non-finite forcing value turns the year's rain sum into
    NaN or inf (``x·0`` is NaN for an infinite or NaN ``x``; ``r + 0·(…)`` is ``r`` otherwise),
    and the lowest value seen is kept in a state row, so a negative one shows there.
    """
    n_days, n_tiles = rain.shape
    n_blocks = (n_tiles + BLOCK - 1) // BLOCK
    for d in range(n_days):
        y = year_index[d]
        dc = d * day_step
        if d == 0 or year_index[d - 1] != y:
            _open_year(y, st, annual, n_tiles, block_lo, block_hi)
        for b in range(n_blocks):
            # skip the blocks outside the range rather than start the loop at block_lo: an
            # index counted up from 0 is known to be ≥ 0, so no negative-index wrap-around is
            # generated and the tile loop stays vectorised (measured about 3 times faster)
            if b < block_lo or b >= block_hi:
                continue
            t0 = b * BLOCK
            p0 = b * (N_PAR * BLOCK)
            s0 = b * (N_STATE * BLOCK)
            for j in range(min(BLOCK, n_tiles - t0)):
                # widened to float64 as read: with float32 forcing all arithmetic stays float64
                r = np.float64(rain[d, t0 + j])
                w = np.float64(wet[d, t0 + j])
                dr = np.float64(dry[d, t0 + j])
                sp = np.float64(soil_pot[d, t0 + j])
                ic, tf, tr, es, qf, dn, c_end, s_end, e_end = land_day(
                    r,
                    w,
                    dr,
                    sp,
                    canopy[C_CAPACITY, dc, t0 + j],
                    canopy[C_COVER, dc, t0 + j],
                    canopy[C_INV_EXPOSED, dc, t0 + j],
                    par[p0 + P_INV_RAIN_DAY * BLOCK + j],
                    par[p0 + P_RETENTION_LOW * BLOCK + j],
                    par[p0 + P_RETENTION_LOW_SLOPE * BLOCK + j],
                    par[p0 + P_RETENTION_HIGH * BLOCK + j],
                    par[p0 + P_RETENTION_HIGH_SLOPE * BLOCK + j],
                    par[p0 + P_TAW * BLOCK + j],
                    par[p0 + P_INV_READILY_SPAN * BLOCK + j],
                    par[p0 + P_TEW * BLOCK + j],
                    par[p0 + P_INV_STAGE2_SPAN * BLOCK + j],
                    st[s0 + S_CANOPY * BLOCK + j],
                    st[s0 + S_SOIL * BLOCK + j],
                    st[s0 + S_SURFACE * BLOCK + j],
                )
                # open water (flag 1.0): land_day gave it drainage = rain and nothing else, so
                # its yield rain − E_wet is dn − E_wet; the year's sums are booked in _close_year
                open_water = par[p0 + P_WATER * BLOCK + j] * w
                st[s0 + S_CANOPY * BLOCK + j] = c_end
                st[s0 + S_SOIL * BLOCK + j] = s_end
                st[s0 + S_SURFACE * BLOCK + j] = e_end
                lowest = min(min(r, w), min(dr, sp))
                st[s0 + S_LOWEST_INPUT * BLOCK + j] = min(
                    lowest, st[s0 + S_LOWEST_INPUT * BLOCK + j]
                )
                # NaN or inf if any input is (x·0 is NaN for x = ±inf or NaN, else 0)
                st[s0 + S_RAIN * BLOCK + j] += r + (w + (sp + dr)) * 0.0
                st[s0 + S_WET_SURFACE * BLOCK + j] += ic + open_water  # one of the two is 0
                st[s0 + S_TRANSPIRATION * BLOCK + j] += tr
                st[s0 + S_SOIL_EVAP * BLOCK + j] += es
                st[s0 + S_QUICKFLOW * BLOCK + j] += qf
                st[s0 + S_DRAINAGE * BLOCK + j] += dn
                if keep_yield:
                    daily_yield[d, t0 + j] = (qf + dn) - open_water
                if keep_drainage or keep_daily:
                    is_water = par[p0 + P_WATER * BLOCK + j] > 0.5
                    land_drainage = 0.0 if is_water else dn
                    if keep_drainage:
                        daily_drainage[d, t0 + j] = land_drainage
                    if keep_daily:
                        daily[0, d, t0 + j] = ic
                        daily[1, d, t0 + j] = 0.0 if is_water else tf
                        daily[2, d, t0 + j] = tr
                        daily[3, d, t0 + j] = es
                        daily[4, d, t0 + j] = open_water
                        daily[5, d, t0 + j] = dn - w if is_water else qf
                        daily[6, d, t0 + j] = land_drainage
                        daily[7, d, t0 + j] = c_end
                        daily[8, d, t0 + j] = s_end
                        daily[9, d, t0 + j] = e_end
        if d == n_days - 1 or year_index[d + 1] != y:
            _close_year(y, par, st, annual, n_tiles, block_lo, block_hi)


@njit(cache=True, error_model="numpy", nogil=True)
def run_tiles(
    rain, wet, dry, soil_pot, canopy, day_step, year_index, par, st, annual, daily_yield,
    block_lo, block_hi,
):
    """Run the daily water balance of many tiles and accumulate annual sums.

    Parameters
    ----------
    rain, wet, dry, soil_pot : ndarray, shape (n_days, n_tiles), C-contiguous float64 or float32
        Gross rain, wet-canopy evaporation (per covered area), dry-canopy transpiration and the
        energy left for soil evaporation [mm d⁻¹]. All four of one dtype; float32 values are
        widened to float64 as they are read, and all arithmetic is float64.
    canopy : ndarray, shape (N_CANOPY, n_days or 1, n_tiles), C-contiguous float64
        Rows ``C_*`` from :func:`canopy_rows`: canopy capacity [mm], cover fraction [-] and
        1 / exposed share [-] per day, or one constant row each (computed before the loop: an
        exp and a division per tile-day would cost the loop more than reading a row).
    day_step : int
        1 when ``canopy`` has a row per day, 0 for one constant row [-].
    year_index : ndarray of int64, shape (n_days,)
        Year number of each day, non-decreasing from 0 in steps of 0 or 1 [-].
    par : ndarray, shape (n_blocks·N_PAR·BLOCK,)
        Blocked parameters (rows ``P_*``) [various units].
    st : ndarray, shape (n_blocks·N_STATE·BLOCK,)
        Blocked state (rows ``S_*``): initial stores in, final stores and the running sums of
        the last year out [mm].
    annual : ndarray, shape (8, n_years, n_tiles)
        Zero on entry; annual sums out, rows in the order of :data:`ANNUAL_NAMES` [mm]. The
        rain of a year in which a tile had a non-finite input is NaN or infinite; a negative
        input shows as a negative ``S_LOWEST_INPUT`` state row.
    daily_yield : ndarray, shape (n_days, n_tiles), C-contiguous float64 or float32
        Quickflow + drainage of each day out, rounded to its dtype [mm d⁻¹].
    block_lo, block_hi : int
        Run the tiles of blocks ``block_lo``..``block_hi − 1`` only (tiles ``block_lo·BLOCK``
        up to ``min(block_hi·BLOCK, n_tiles)``); ``0, n_blocks`` runs them all [-]. The kernels
        release the GIL, so threads can run disjoint block ranges of one call at once (see
        ``water_balance.simulate_tiles``): every value a range writes belongs to its own tiles.

    Notes
    -----
    The daily physics is :func:`tile_day`.
    """
    _run(rain, wet, dry, soil_pot, canopy, day_step, year_index, par, st, annual, daily_yield,
         daily_yield, annual, True, False, False, block_lo, block_hi)


@njit(cache=True, error_model="numpy", nogil=True)
def run_tiles_routed(rain, wet, dry, soil_pot, canopy, day_step, year_index, par, st, annual,
                     daily_yield, daily_drainage, block_lo, block_hi):
    """Run as :func:`run_tiles` does, also keeping each day's drainage (for two-store routing).

    Parameters
    ----------
    daily_drainage : ndarray, shape (n_days, n_tiles), same dtype as ``daily_yield``
        Drainage below the root zone of each day out [mm d⁻¹].
    """
    _run(rain, wet, dry, soil_pot, canopy, day_step, year_index, par, st, annual, daily_yield,
         daily_drainage, annual, True, True, False, block_lo, block_hi)


@njit(cache=True, error_model="numpy", nogil=True)
def run_tiles_annual(rain, wet, dry, soil_pot, canopy, day_step, year_index, par, st, annual,
                     block_lo, block_hi):
    """Run as :func:`run_tiles` does, keeping the annual sums only (no daily yield).

    Parameters
    ----------
    rain, wet, dry, soil_pot, canopy, day_step, year_index, par, st, annual
        As for :func:`run_tiles`.
    """
    _run(rain, wet, dry, soil_pot, canopy, day_step, year_index, par, st, annual, annual, annual,
         annual, False, False, False, block_lo, block_hi)


@njit(cache=True, error_model="numpy", nogil=True)
def run_tiles_daily(rain, wet, dry, soil_pot, canopy, day_step, year_index, par, st, annual,
                    daily_yield, daily_drainage, daily, block_lo, block_hi):
    """Run as :func:`run_tiles_routed` does, also keeping every daily flux and store.

    Parameters
    ----------
    daily : ndarray, shape (10, n_days, n_tiles)
        Daily fluxes [mm d⁻¹] and end-of-day stores [mm] out, rows in the order of
        :data:`DAILY_NAMES`.

    Notes
    -----
    Separate kernels rather than run-time flags keep the fast kernel free of the extra stores.
    """
    _run(rain, wet, dry, soil_pot, canopy, day_step, year_index, par, st, annual, daily_yield,
         daily_drainage, daily, True, True, True, block_lo, block_hi)
