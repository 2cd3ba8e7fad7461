"""A plain-Python reference of the tile water balance, written step by step from the equations.

It shares no code with ``coveryield.engine``: it loops over tiles and days with Python floats and
follows the documented order (interception on the covered share, quickflow, root zone with the
surface layer, drainage). Used to check the compiled kernel on small random cases.
"""

from __future__ import annotations

import math

import numpy as np



def _interception(rain, wet, capacity, rain_rate, store):
    """Daily Gash-type canopy store: returns (evaporation, throughfall, new store) [mm]."""
    if rain > 0.0:
        duration_h = min(24.0, rain / rain_rate)  # storm length D = min(24, P/R)
    else:
        duration_h = 0.0
    hourly_wet = wet / 24.0
    # during the storm: constant gain P/D and loss e; the store moves monotonically
    level = store + rain - hourly_wet * duration_h
    if level > capacity:
        throughfall = level - capacity
        level = capacity
        evap_storm = hourly_wet * duration_h
    elif level < 0.0:
        throughfall = 0.0
        evap_storm = store + rain
        level = 0.0
    else:
        throughfall = 0.0
        evap_storm = hourly_wet * duration_h
    # after the storm: dry at rate e for the remaining hours
    evap_after = min(level, hourly_wet * (24.0 - duration_h))
    return evap_storm + evap_after, throughfall, level - evap_after


def _retention_for_wetness(cn2, wetness):
    """SCS retention S [mm] for the day: AMC I at 0, II at 0.5, III at 1, linear in S."""
    cn1 = 4.2 * cn2 / (10.0 - 0.058 * cn2)
    cn3 = 23.0 * cn2 / (10.0 + 0.13 * cn2)
    s1, s2, s3 = (25400.0 / cn - 254.0 for cn in (cn1, cn2, cn3))
    if wetness < 0.5:
        return s1 + (s2 - s1) * wetness / 0.5
    return s2 + (s3 - s2) * (wetness - 0.5) / 0.5


def _scs_runoff(water, retention):
    initial_abstraction = 0.2 * retention
    if water <= initial_abstraction:
        return 0.0
    return (water - initial_abstraction) ** 2 / (water - initial_abstraction + retention)


def _cover_fraction(k, lai, closed):
    """Beer's law c = 1 − exp(−k·LAI); 1 for a closed canopy."""
    if closed:
        return 1.0
    return 1.0 - math.exp(-k * lai)


def _surface_layer(infiltration, energy, kc_max_et0, few, tew, rew, depletion, water):
    """FAO-56 eqs. 71-79 for one day: (soil evaporation, new depletion) [mm]."""
    depletion = max(depletion - infiltration, 0.0)  # rain rewets the layer first
    depletion = max(depletion, tew - water)  # the layer holds no more than the root zone
    if depletion <= rew:
        kr = 1.0
    else:
        kr = max((tew - depletion) / (tew - rew), 0.0)
    evaporation = min(kr * energy, few * kc_max_et0, few * (tew - depletion), water)
    evaporation = max(evaporation, 0.0)
    if few > 0.0:
        depletion += evaporation / few
    return evaporation, depletion


def reference_run(rain, wet, dry, soil, params, year_index, lai=None):
    """Daily fluxes and stores (dict of (n_days, n_tiles) arrays) and annual sums (dict)."""
    n_days, n_tiles = rain.shape
    names = (
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
    daily = {name: np.zeros((n_days, n_tiles)) for name in names}
    n_years = int(year_index[-1]) + 1
    annual = {
        name: np.zeros((n_years, n_tiles))
        for name in (
            "rain_mm",
            "interception_mm",
            "transpiration_mm",
            "soil_evap_mm",
            "open_water_mm",
            "quickflow_mm",
            "drainage_mm",
            "storage_change_mm",
        )
    }
    closed = params.leaf_area_index is None
    for t in range(n_tiles):
        water = bool(params.is_water[t])
        taw = float(params.root_zone_capacity_mm[t])
        p = float(params.depletion_fraction[t])
        tew = float(params.total_evaporable_mm[t])
        rew = float(params.readily_evaporable_mm[t])
        k = float(params.extinction_coefficient[t])
        own_lai = 1.0 if closed else float(params.leaf_area_index[t])
        capacity = float(params.canopy_capacity_mm[t])
        per_lai = capacity / own_lai if own_lai > 0 else 0.0
        canopy = 0.0
        store = 0.0 if water else float(params.initial_soil_fraction[t]) * taw
        depletion = 0.0 if water else (1.0 - float(params.initial_soil_fraction[t])) * tew
        for d in range(n_days):
            y = int(year_index[d])
            if d == 0 or year_index[d - 1] != y:
                annual["storage_change_mm"][y, t] -= canopy + store
            P, Ew, Ed, Es = (float(a[d, t]) for a in (rain, wet, dry, soil))
            if water:
                fluxes = dict(
                    interception_mm=0.0,
                    throughfall_mm=0.0,
                    transpiration_mm=0.0,
                    soil_evap_mm=0.0,
                    open_water_mm=Ew,
                    quickflow_mm=P - Ew,
                    drainage_mm=0.0,
                )
            else:
                leaf = own_lai if lai is None else float(lai[d, t])
                c = _cover_fraction(k, leaf, closed)
                if c > 0.0:  # per unit covered area, then back to ground area
                    e_int, through, store_c = _interception(
                        P, Ew, per_lai * leaf / c, float(params.rain_rate_mm_per_h[t]), canopy / c
                    )
                    e_int, through, canopy = c * e_int, (1.0 - c) * P + c * through, c * store_c
                else:  # no leaves: the canopy drips what it held
                    e_int, through, canopy = 0.0, P + canopy, 0.0
                cs = c
                wetness = store / taw
                quick = _scs_runoff(
                    through, _retention_for_wetness(float(params.curve_number[t]), wetness)
                )
                root_depletion = taw - store
                readily = p * taw
                ks = (
                    1.0
                    if root_depletion <= readily
                    else (taw - root_depletion) / ((1.0 - p) * taw)
                )
                used = e_int / (cs * Ew) if Ew > 0 and cs > 0 else 0.0
                water_now = store + through - quick
                transp = min(ks * Ed * (1.0 - min(used, 1.0)), water_now)
                water_now -= transp
                # energy left of Kc,max ETo = Es + Ed once the canopy has evaporated
                left = max(Es + Ed - e_int - transp, 0.0)
                soil_ev, depletion = _surface_layer(
                    through - quick, left, Es + Ed, 1.0 - c, tew, rew, depletion, water_now
                )
                water_now -= soil_ev
                drain = max(water_now - taw, 0.0)
                store = water_now - drain
                fluxes = dict(
                    interception_mm=e_int,
                    throughfall_mm=through,
                    transpiration_mm=transp,
                    soil_evap_mm=soil_ev,
                    open_water_mm=0.0,
                    quickflow_mm=quick,
                    drainage_mm=drain,
                )
            for name, value in fluxes.items():
                daily[name][d, t] = value
                if name in annual:
                    annual[name][y, t] += value
            annual["rain_mm"][y, t] += P
            daily["canopy_store_mm"][d, t] = canopy
            daily["soil_store_mm"][d, t] = store
            daily["surface_depletion_mm"][d, t] = depletion
            if d == n_days - 1 or year_index[d + 1] != y:
                annual["storage_change_mm"][y, t] += canopy + store
    return daily, annual
