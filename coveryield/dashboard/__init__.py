"""The stakeholders' dashboard: edit cover shares and see the water yield change at once.

``show_dashboard()`` builds the page (ipywidgets + bqplot); ``coveryield serve`` serves it with
Voila. :mod:`.state` imports no widget module; the widget modules are imported only when
:func:`show_dashboard` or :class:`Dashboard` is first used.
"""

from __future__ import annotations

import importlib

_API = {
    "Dashboard": "coveryield.dashboard.app",
    "show_dashboard": "coveryield.dashboard.app",
    "DashboardState": "coveryield.dashboard.state",
    "ALL_ZONES": "coveryield.dashboard.state",
}

__all__ = sorted(_API)


def __getattr__(name: str):
    module = _API.get(name)
    if module is None:
        raise AttributeError(f"module 'coveryield.dashboard' has no attribute {name!r}")
    return getattr(importlib.import_module(module), name)


def __dir__():
    return sorted(list(globals()) + list(_API))
