"""Soil textures and the water they hold for plants.

A zone's soil texture sets its available water capacity, the volume of water held between field
capacity and wilting point per volume of soil; times a cover's rooting depth it gives the
root-zone capacity (total available water, FAO-56 eq. 82).

References
----------
.. [1] Allen, R. G., Pereira, L. S., Raes, D., & Smith, M. (1998). Crop evapotranspiration.
   FAO Irrigation and Drainage Paper 56. Table 19 (soil water characteristics), eq. 82.
"""

from __future__ import annotations

#: Available water capacity theta_FC - theta_WP [m3 m-3] per soil texture: the middle of the
#: FAO-56 Table 19 range (range given in the comment; ranges from memory, not checked against
#: the printed table).
SOIL_TEXTURES: dict[str, float] = {
    "sand": 0.08,             # FAO-56 Table 19: 0.05-0.11 (from memory)
    "loamy_sand": 0.09,       # FAO-56 Table 19: 0.06-0.12 (from memory)
    "sandy_loam": 0.13,       # FAO-56 Table 19: 0.11-0.15 (from memory)
    "loam": 0.155,            # FAO-56 Table 19: 0.13-0.18 (from memory)
    "silt_loam": 0.16,        # FAO-56 Table 19: 0.13-0.19 (from memory)
    "silt": 0.18,             # FAO-56 Table 19: 0.16-0.20 (from memory)
    "silty_clay_loam": 0.155,  # FAO-56 Table 19: 0.13-0.18 (from memory)
    "silty_clay": 0.16,       # FAO-56 Table 19: 0.13-0.19 (from memory)
    "clay": 0.16,             # FAO-56 Table 19: 0.12-0.20 (from memory)
}


def normalise_texture(texture: str) -> str:
    """Return the canonical texture name ("Sandy loam" -> "sandy_loam").

    Parameters
    ----------
    texture : str
        Soil texture as written by a user [-].

    Returns
    -------
    str
        The name as used in :data:`SOIL_TEXTURES` (not checked against it).
    """
    return "_".join(str(texture).strip().lower().replace("-", " ").replace("_", " ").split())


def available_water_capacity(texture: str) -> float:
    """Available water capacity of a soil texture, theta_FC - theta_WP.

    Parameters
    ----------
    texture : str
        Soil texture, one of :data:`SOIL_TEXTURES`; case, spaces and hyphens are forgiven [-].

    Returns
    -------
    float
        Available water capacity [m3 m-3].

    Raises
    ------
    KeyError
        If the texture is not in :data:`SOIL_TEXTURES` (the message lists the known textures).

    Notes
    -----
    Root-zone capacity TAW = 1000 (theta_FC - theta_WP) Zr [mm] with Zr the rooting depth [m]
    (FAO-56 eq. 82).

    References
    ----------
    FAO-56 (Allen et al. 1998), Table 19.
    """
    key = normalise_texture(texture)
    if key not in SOIL_TEXTURES:
        raise KeyError(f"unknown soil texture {texture!r}; known: {', '.join(SOIL_TEXTURES)}")
    return SOIL_TEXTURES[key]
