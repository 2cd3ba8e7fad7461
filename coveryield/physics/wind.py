"""Wind speed at other heights and over other surfaces (neutral logarithmic profile).

Station wind is measured over short grass. FAO-56 eq. 47 moves it to 2 m over the same grass.
For a cover of another roughness, in particular a tall forest, the wind at a height above that
cover is found by the blending-height method:

1. Over the station's grass (height 0.12 m, d = 2/3 h, z0m = 0.123 h) the neutral log profile
   u(z) = (u*/k) ln((z - d)/z0m) carries the measured wind up to a blending height (60 m), where
   the flow is taken as independent of the surface below.
2. Over the cover the same profile, now with the cover's d and z0m, carries the blending-height
   wind down to the cover's reference height.

Reference height (our choice): z_ref = max(2 m, 1.5 h). For short covers this is the FAO-56
standard 2 m; for a 20 m forest it is 30 m. It always lies above d + z0m = 0.79 h, so the
resistance of FAO-56 eq. 4 is defined, and the ratio z_ref/h is the same for all tall covers.

Assumptions: neutral stability (as FAO-56 eq. 4 assumes), a horizontally uniform blending-height
wind, and zero-plane displacement and roughness from canopy height alone.

References
----------
.. [1] Allen, R. G., Pereira, L. S., Raes, D., & Smith, M. (1998). FAO Irrigation and Drainage
   Paper 56, eq. 4 (log-profile resistance, d = 2/3 h, z0m = 0.123 h) and eq. 47.
.. [2] Wieringa, J. (1986). Roughness-dependent geographical interpolation of surface wind speed
   averages. Q. J. R. Meteorol. Soc. 112, 867-889 (blending height of about 60 m; from memory).
.. [3] Brutsaert, W. (1982). Evaporation into the Atmosphere. Reidel. Ch. 4 (neutral
   logarithmic wind profile; from memory).
"""

from __future__ import annotations

import numpy as np

from .meteo import _arr, _like

#: Height of the grass over which station wind is measured (FAO-56 reference grass) [m].
STATION_GRASS_HEIGHT_M = 0.12
#: Height above ground where the wind no longer feels the local surface [m].
BLENDING_HEIGHT_M = 60.0
#: Lowest reference height for ra, the FAO-56 standard measurement height [m].
MIN_REFERENCE_HEIGHT_M = 2.0
#: Reference height as a multiple of canopy height for tall covers [-].
REFERENCE_HEIGHT_PER_CANOPY_HEIGHT = 1.5
#: Zero-plane displacement per unit canopy height (FAO-56 eq. 4 notes) [-].
DISPLACEMENT_PER_HEIGHT = 2.0 / 3.0
#: Momentum roughness length per unit canopy height (FAO-56 eq. 4 notes) [-].
ROUGHNESS_PER_HEIGHT = 0.123


def wind_speed_at_2m(wind_ms, height_m):
    """Wind speed at 2 m over short grass from wind measured at another height.

    Parameters
    ----------
    wind_ms : float or array_like
        Wind speed measured at ``height_m`` [m s-1].
    height_m : float or array_like
        Measurement height above ground, > 0.08 m [m].

    Returns
    -------
    float or array_like
        Wind speed at 2 m [m s-1].

    Notes
    -----
    u2 = uz 4.87 / ln(67.8 z - 5.42).

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 47.
    """
    u2 = _arr(wind_ms) * 4.87 / np.log(67.8 * _arr(height_m) - 5.42)  # FAO-56 eq. 47
    return _like(u2, wind_ms, height_m)


def displacement_height(canopy_height_m):
    """Zero-plane displacement height d = 2/3 h [m] (FAO-56 eq. 4 notes).

    Parameters
    ----------
    canopy_height_m : float or array_like
        Canopy height [m].

    Returns
    -------
    float or array_like
        d [m].
    """
    return _like(DISPLACEMENT_PER_HEIGHT * _arr(canopy_height_m), canopy_height_m)


def momentum_roughness(canopy_height_m):
    """Roughness length for momentum z0m = 0.123 h [m] (FAO-56 eq. 4 notes).

    Parameters
    ----------
    canopy_height_m : float or array_like
        Canopy height [m].

    Returns
    -------
    float or array_like
        z0m [m].
    """
    return _like(ROUGHNESS_PER_HEIGHT * _arr(canopy_height_m), canopy_height_m)


def reference_height(canopy_height_m):
    """Height above ground at which a cover's aerodynamic resistance is taken.

    Parameters
    ----------
    canopy_height_m : float or array_like
        Canopy height (0 for open water) [m].

    Returns
    -------
    float or array_like
        z_ref = max(2, 1.5 h) [m].

    Notes
    -----
    Our choice (see module notes): the FAO-56 2 m standard for short covers, 1.5 h above tall
    ones, which keeps z_ref above d + z0m = 0.79 h as FAO-56 eq. 4 requires.
    """
    z = np.maximum(
        MIN_REFERENCE_HEIGHT_M, REFERENCE_HEIGHT_PER_CANOPY_HEIGHT * _arr(canopy_height_m)
    )
    return _like(z, canopy_height_m)


def _log_profile(z_m, displacement_m, roughness_m):
    """ln((z - d)/z0) of the neutral log profile; NaN where z <= d + z0 (no valid profile)."""
    height_over_roughness = (_arr(z_m) - _arr(displacement_m)) / _arr(roughness_m)
    with np.errstate(divide="ignore", invalid="ignore"):
        return np.where(
            height_over_roughness > 1.0, np.log(np.maximum(height_over_roughness, 1.0)), np.nan
        )


def wind_over_surface(
    wind_ms,
    wind_height_m,
    target_height_m,
    target_displacement_m,
    target_roughness_m,
    blending_height_m=BLENDING_HEIGHT_M,
    station_grass_height_m=STATION_GRASS_HEIGHT_M,
):
    """Move station wind measured over grass to a height over a surface of another roughness.

    Parameters
    ----------
    wind_ms : float or array_like
        Wind speed measured over short grass at ``wind_height_m`` [m s-1].
    wind_height_m : float
        Measurement height above ground [m].
    target_height_m : float or array_like
        Height above ground wanted over the target surface [m].
    target_displacement_m : float or array_like
        Zero-plane displacement of the target surface [m].
    target_roughness_m : float or array_like
        Momentum roughness length of the target surface, > 0 [m].
    blending_height_m : float, optional
        Height where the wind is independent of the surface [m].
    station_grass_height_m : float, optional
        Height of the grass at the station [m].

    Returns
    -------
    float or array_like
        Wind speed at ``target_height_m`` over the target surface [m s-1]; NaN where a height
        lies at or below d + z0 of its surface.

    Notes
    -----
    u_b = u_z ln((z_b - d_g)/z0_g) / ln((z - d_g)/z0_g) up over the grass, then
    u_t = u_b ln((z_t - d_t)/z0_t) / ln((z_b - d_t)/z0_t) down over the target: the neutral
    log profile applied twice (FAO-56 eq. 4 assumptions; Wieringa 1986 blending height).

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 4 notes; Wieringa (1986); Brutsaert (1982), ch. 4.
    """
    d_g = DISPLACEMENT_PER_HEIGHT * station_grass_height_m
    z0_g = ROUGHNESS_PER_HEIGHT * station_grass_height_m
    up = _log_profile(blending_height_m, d_g, z0_g) / _log_profile(
        wind_height_m, d_g, z0_g
    )  # log profile, grass
    down = _log_profile(target_height_m, target_displacement_m, target_roughness_m) / _log_profile(
        blending_height_m, target_displacement_m, target_roughness_m
    )  # log profile, target
    u = _arr(wind_ms) * up * down
    return _like(u, wind_ms)


def wind_above_canopy(
    wind_ms,
    wind_height_m,
    canopy_height_m,
    reference_height_m=None,
    blending_height_m=BLENDING_HEIGHT_M,
):
    """Wind at a cover's reference height above its canopy, from station wind over grass.

    Parameters
    ----------
    wind_ms : float or array_like
        Wind speed measured over short grass [m s-1].
    wind_height_m : float
        Measurement height above ground [m].
    canopy_height_m : float
        Height of the cover's canopy, > 0 [m].
    reference_height_m : float, optional
        Height wanted; default :func:`reference_height` of the canopy [m].
    blending_height_m : float, optional
        Blending height [m].

    Returns
    -------
    float or array_like
        Wind speed at the reference height over the canopy [m s-1].

    Notes
    -----
    Uses d = 2/3 h and z0m = 0.123 h for the canopy (FAO-56 eq. 4 notes) in
    :func:`wind_over_surface`. For grass of 0.12 m and a 2 m station the wind is returned
    unchanged.

    References
    ----------
    FAO-56 (Allen et al. 1998), eq. 4 notes; Wieringa (1986).
    """
    h = _arr(canopy_height_m)
    z_ref = reference_height(h) if reference_height_m is None else reference_height_m
    return wind_over_surface(
        wind_ms,
        wind_height_m,
        z_ref,
        DISPLACEMENT_PER_HEIGHT * h,
        ROUGHNESS_PER_HEIGHT * h,
        blending_height_m,
    )
