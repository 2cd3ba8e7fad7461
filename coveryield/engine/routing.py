"""Routing of daily yield through a linear store, and unit conversion to discharge."""

from __future__ import annotations

import math

import numpy as np
from numba import njit

_SECONDS_PER_DAY = 86400.0


@njit(cache=True)
def _route_day(store, inflow, recession_days):
    """Advance a linear store by one day; return (outflow, store at the end) [mm].

    Exact solution of dS/dt = I − max(S, 0)/k with I constant over the day: a store below zero
    (a deficit left by negative inflow) releases nothing until it refills.
    """
    k = recession_days
    if store >= 0.0 and inflow >= 0.0:
        end = inflow * k + (store - inflow * k) * math.exp(-1.0 / k)  # S(1), equilibrium I·k
        return store + inflow - end, end
    if store >= 0.0:  # draining and losing water: the store may empty within the day
        empty_at = k * math.log1p(store / (-inflow * k))  # t where S(t) = 0
        if empty_at >= 1.0:
            end = inflow * k + (store - inflow * k) * math.exp(-1.0 / k)
            return store + inflow - end, end
        return store + inflow * empty_at, inflow * (1.0 - empty_at)
    if inflow <= 0.0 or store + inflow <= 0.0:  # deficit not refilled today: no outflow
        return 0.0, store + inflow
    refilled_at = -store / inflow  # t where the deficit is refilled
    rest = 1.0 - refilled_at
    end = inflow * k * (1.0 - math.exp(-rest / k))  # filling from 0 for the rest of the day
    return inflow * rest - end, end


@njit(cache=True)
def _route(inflow, recession_days, initial_store, outflow, store):
    """Route every column of ``inflow`` (n_days, n_series); fill ``outflow`` and ``store``."""
    n_days, n_series = inflow.shape
    for j in range(n_series):
        s = initial_store[j]
        for d in range(n_days):
            q, s = _route_day(s, inflow[d, j], recession_days[j])
            outflow[d, j] = q
            store[d, j] = s


def linear_reservoir(inflow_mm, recession_days, initial_store_mm=None, *, return_store=False):
    """Route a daily inflow series through a linear store.

    Parameters
    ----------
    inflow_mm : array_like, shape (n_days,) or (n_days, n_series)
        Daily inflow, may be negative (e.g. open-water losses) [mm d⁻¹].
    recession_days : float or array_like, shape (n_series,)
        Recession constant k of the store, > 0 [d].
    initial_store_mm : float or array_like, optional
        Store at the start [mm]. Default: the steady state of the mean inflow,
        k·max(mean inflow, 0), so that a long record starts without a fill-up transient.
    return_store : bool, optional
        Also return the store at the end of each day.

    Returns
    -------
    outflow_mm : ndarray, same shape as ``inflow_mm``
        Outflow of each day, ≥ 0 [mm d⁻¹].
    store_mm : ndarray, same shape as ``inflow_mm``
        Store at the end of each day [mm]; only with ``return_store``.

    Notes
    -----
    The store obeys dS/dt = I − Q with Q = max(S, 0)/k and I constant over each day, solved
    exactly: for S ≥ 0 and I ≥ 0, S(1) = I·k + (S0 − I·k)·e^(−1/k) and Q = S0 + I − S(1). A
    negative inflow may empty the store within the day, after which it goes negative (a deficit);
    a negative store releases nothing (outflow 0) until inflow refills it, then drains again.
    Mass is conserved exactly: Σ outflow + final store = Σ inflow + initial store.

    References
    ----------
    Zoch, R. T. (1934). On the relation between rainfall and stream flow. Mon. Weather Rev.,
    62, 315–322 (the linear store; citation from memory). The piecewise exact solution and the
    deficit rule are our own; common practice, no source.
    """
    inflow = np.asarray(inflow_mm, dtype=np.float64)
    one_series = inflow.ndim == 1
    if inflow.ndim not in (1, 2):
        raise ValueError(f"inflow_mm: shape {inflow.shape}, expected (n_days,) or (n_days, n)")
    columns = np.ascontiguousarray(inflow.reshape(inflow.shape[0], -1))
    n_series = columns.shape[1]
    k = np.broadcast_to(np.asarray(recession_days, dtype=np.float64), (n_series,)).copy()
    if not (np.isfinite(k).all() and (k > 0).all()):
        raise ValueError(f"recession_days = {recession_days!r}: expected a finite value > 0 d")
    if not np.isfinite(columns).all():
        raise ValueError("inflow_mm: expected finite values (found NaN or infinity)")
    if initial_store_mm is None:
        mean = columns.mean(axis=0) if columns.shape[0] else np.zeros(n_series)
        start = k * np.maximum(mean, 0.0)
    else:
        start = np.broadcast_to(np.asarray(initial_store_mm, dtype=np.float64), (n_series,))
        start = start.copy()
    outflow = np.empty_like(columns)
    store = np.empty_like(columns)
    _route(columns, k, start, outflow, store)
    if one_series:
        outflow, store = outflow[:, 0], store[:, 0]
    return (outflow, store) if return_store else outflow


def mm_per_day_to_m3_per_s(q_mm, area_km2):
    """Convert a depth per day over an area to a discharge.

    Parameters
    ----------
    q_mm : array_like
        Depth per day over the area [mm d⁻¹].
    area_km2 : float or array_like
        Area [km²].

    Returns
    -------
    ndarray or float
        Discharge [m³ s⁻¹].

    Notes
    -----
    Q = q·10⁻³ m × A·10⁶ m² / 86 400 s = q·A / 86.4.
    """
    return np.asarray(q_mm, dtype=np.float64) * np.asarray(area_km2) * 1000.0 / _SECONDS_PER_DAY
