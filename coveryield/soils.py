"""Soil textures and the water they hold for plants.

A zone's soil texture sets its available water capacity, the volume of water held between field
capacity and wilting point per volume of soil; times a cover's rooting depth it gives the
root-zone capacity (total available water, FAO-56 eq. 82).

The top 0.10 m of the soil dries first after rain: FAO-56 chapter 7 keeps a separate water
balance of this surface layer, with the readily evaporable water REW (evaporated at the full
rate) and the total evaporable water TEW (the most the layer can lose to evaporation), see
:data:`SURFACE_LAYER_MM`.

References
----------
.. [1] Allen, R. G., Pereira, L. S., Raes, D., & Smith, M. (1998). Crop evapotranspiration.
   FAO Irrigation and Drainage Paper 56. Table 19 (soil water characteristics, REW and TEW),
   eqs. 73 and 82.
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


#: Readily and total evaporable water of the 0.10 m surface layer [mm] per soil texture: the
#: middle of the FAO-56 Table 19 ranges (REW range, TEW range for Ze = 0.10 m in the comments;
#: ranges from memory, not checked against the printed table).
SURFACE_LAYER_MM: dict[str, tuple[float, float]] = {
    "sand": (4.5, 9.0),             # REW 2-7, TEW 6-12 (from memory)
    "loamy_sand": (6.0, 11.5),      # REW 4-8, TEW 9-14 (from memory)
    "sandy_loam": (8.0, 17.5),      # REW 6-10, TEW 15-20 (from memory)
    "loam": (9.0, 19.0),            # REW 8-10, TEW 16-22 (from memory)
    "silt_loam": (10.0, 21.5),      # REW 9-11, TEW 18-25 (from memory)
    "silt": (9.5, 24.0),            # REW 8-11, TEW 22-26 (from memory)
    "silty_clay_loam": (9.5, 24.5),  # REW 8-11, TEW 22-27 (from memory)
    "silty_clay": (10.0, 25.0),     # REW 8-12, TEW 22-28 (from memory)
    "clay": (10.0, 25.5),           # REW 8-12, TEW 22-29 (from memory)
}


def surface_layer_mm(texture: str) -> tuple[float, float]:
    """Readily and total evaporable water of a soil texture's surface layer.

    Parameters
    ----------
    texture : str
        Soil texture, one of :data:`SURFACE_LAYER_MM`; case, spaces and hyphens are forgiven [-].

    Returns
    -------
    rew_mm, tew_mm : float
        Readily evaporable water REW and total evaporable water TEW of the top 0.10 m [mm].

    Raises
    ------
    KeyError
        If the texture is unknown (the message lists the known textures).

    Notes
    -----
    TEW = 1000 (theta_FC - 0.5 theta_WP) Ze (FAO-56 eq. 73) with Ze = 0.10 m; the table values
    stand in for the equation because the zones give a texture, not theta_FC and theta_WP.

    References
    ----------
    FAO-56 (Allen et al. 1998), Table 19 and eq. 73.
    """
    key = normalise_texture(texture)
    if key not in SURFACE_LAYER_MM:
        raise KeyError(f"unknown soil texture {texture!r}; known: {', '.join(SURFACE_LAYER_MM)}")
    return SURFACE_LAYER_MM[key]
