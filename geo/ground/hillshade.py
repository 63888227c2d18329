"""Hillshade of a height grid, for maps (numpy only).

References
----------
.. [1] Burrough, P. A. and McDonnell, R. A., *Principles of Geographical Information
       Systems*, Oxford University Press, 1998, sec. 8 (slope, aspect and hillshading).
"""

from __future__ import annotations

import numpy as np

__all__ = ["hillshade"]


def hillshade(
    z_m: np.ndarray, cell_x_m: float, cell_y_m: float, azimuth_deg: float = 315.0, altitude_deg: float = 45.0
) -> np.ndarray:
    """Illumination of a surface by a distant light, 0 (dark) to 1 (facing the light) [1]_.

    Parameters
    ----------
    z_m : numpy.ndarray, shape (rows, cols)
        Heights, row 0 at the north edge (NaN allowed). [m]
    cell_x_m, cell_y_m : float
        Cell size east-west and north-south. [m]
    azimuth_deg : float
        Direction the light comes from, clockwise from north. [deg]
    altitude_deg : float
        Elevation of the light above the horizon. [deg]

    Returns
    -------
    numpy.ndarray
        ``cos(zenith) cos(slope) + sin(zenith) sin(slope) cos(azimuth - aspect)``, clipped to
        [0, 1]; NaN where the heights are NaN.
    """
    dz_dy_rows, dz_dx = np.gradient(z_m, cell_y_m, cell_x_m)
    dz_dnorth = -dz_dy_rows  # rows run southward
    slope = np.arctan(np.hypot(dz_dx, dz_dnorth))
    # Aspect: the compass direction the slope faces (downhill), clockwise from north.
    aspect = np.arctan2(-dz_dx, -dz_dnorth)
    zenith = np.radians(90.0 - altitude_deg)
    shade = np.cos(zenith) * np.cos(slope) + np.sin(zenith) * np.sin(slope) * np.cos(np.radians(azimuth_deg) - aspect)
    return np.clip(shade, 0.0, 1.0)
