"""coveryield: what a land-cover plan does to the water a catchment yields.

Screening estimates of how land-cover plans change a catchment's water yield: Penman-Monteith
evaporation per cover from a daily climate record (FAO-56 meteorology), a daily soil-water balance
per tile, and plan comparisons. Results are screening estimates, to be confirmed by licensed
hydrological practice and local regulations.

The public API is imported lazily so that ``import coveryield`` stays fast:

>>> import coveryield
>>> climate = coveryield.read_climate("demo_data/climate.csv", latitude_deg=-41.3, elevation_m=300)
>>> et0 = coveryield.reference_et(climate)          # doctest: +SKIP
>>> result = coveryield.compare("demo_data/plans.toml")  # doctest: +SKIP
"""

from __future__ import annotations

import importlib

__version__ = "0.1.0"

_API = {
    "read_climate": "coveryield.climate",
    "Climate": "coveryield.climate",
    "reference_et": "coveryield.forcing",
    "cover_evaporation": "coveryield.forcing",
    "Cover": "coveryield.covers",
    "BUILTIN_COVERS": "coveryield.covers",
    "load_plan": "coveryield.plans",
    "PlanFile": "coveryield.plans",
    "compare": "coveryield.comparison",
    "Comparison": "coveryield.comparison",
    "batch": "coveryield.batchrun.runner",
    "Schedule": "coveryield.schedules",
    "Planting": "coveryield.schedules",
    "Timeline": "coveryield.timeline",
    "demo_plan_path": "coveryield.demo",
    "CoveryieldError": "coveryield.errors",
    "ClimateFileError": "coveryield.errors",
    "PlanFileError": "coveryield.errors",
}

__all__ = sorted(_API)


def __getattr__(name: str):
    module = _API.get(name)
    if module is None:
        raise AttributeError(f"module 'coveryield' has no attribute {name!r}")
    return getattr(importlib.import_module(module), name)


def __dir__():
    return sorted(list(globals()) + list(_API))
