"""The canopy's size from its leaf area: interception store and the share of ground it covers.

Two rules tie a canopy's interception to its leaf area index (LAI):

* **Storage capacity** S = s·LAI with s ≈ 0.2 mm per unit LAI (Dickinson 1984). A cover with a
  measured capacity S_m at its LAI L_m keeps s = S_m / L_m, so when the leaf area moves (a crop
  through its season, a plantation as it grows) the store moves in proportion.
* **Cover fraction** c = 1 − exp(−k·LAI), Beer's law for the share of ground under the canopy
  (k ≈ 0.5 for leaves at random angles; Campbell & Norman 1998, from memory).

The engine uses c in the sparse-canopy form of the Gash model (Gash, Lloyd & Lachaud 1995): rain
on the open share 1 − c falls through freely, the canopy share holds S/c per unit of covered
area and evaporates at the wet-canopy rate there; the open share is also the soil exposed to
evaporation (FAO-56's few = 1 − fc for rain, which wets the whole surface).

References
----------
.. [1] Dickinson, R. E. (1984). Modeling evapotranspiration for three-dimensional global climate
   models. In Climate Processes and Climate Sensitivity, Geophys. Monogr. 29, AGU, 58-72
   (canopy store 0.2 mm per unit LAI; from memory).
.. [2] Gash, J. H. C., Lloyd, C. R. & Lachaud, G. (1995). Estimating sparse forest rainfall
   interception with an analytical model. J. Hydrol., 170, 79-86.
.. [3] Campbell, G. S. & Norman, J. M. (1998). An Introduction to Environmental Biophysics,
   2nd ed. Springer, ch. 15 (extinction coefficient; from memory).
.. [4] von Hoyningen-Huene, J. (1981). Die Interzeption des Niederschlags in
   landwirtschaftlichen Pflanzenbeständen. DVWK Schriften 57 (an LAI-based interception rule
   for crops; from memory).
"""

from __future__ import annotations

import numpy as np

from .meteo import _arr, _like

#: Canopy storage per unit leaf area index [mm per m2 m-2] (Dickinson 1984; from memory).
CAPACITY_PER_LAI_MM = 0.2
#: Extinction coefficient of Beer's law for leaves at random angles [-] (Campbell & Norman
#: 1998; from memory).
DEFAULT_EXTINCTION = 0.5


def canopy_capacity(lai, capacity_per_lai_mm=CAPACITY_PER_LAI_MM):
    """Interception storage capacity of a canopy from its leaf area.

    Parameters
    ----------
    lai : float or array_like
        Leaf area index [m2 m-2].
    capacity_per_lai_mm : float, optional
        Storage per unit LAI [mm].

    Returns
    -------
    float or array_like
        S = s·LAI [mm].

    References
    ----------
    Dickinson (1984).
    """
    return _like(capacity_per_lai_mm * _arr(lai), lai)


def canopy_cover_fraction(lai, extinction=DEFAULT_EXTINCTION):
    """Share of the ground covered by a canopy (Beer's law).

    Parameters
    ----------
    lai : float or array_like
        Leaf area index, ≥ 0 [m2 m-2].
    extinction : float, optional
        Extinction coefficient k [-].

    Returns
    -------
    float or array_like
        c = 1 − exp(−k·LAI) [-].

    References
    ----------
    Campbell & Norman (1998), ch. 15; Gash, Lloyd & Lachaud (1995) for its use in interception.
    """
    return _like(-np.expm1(-extinction * _arr(lai)), lai)
