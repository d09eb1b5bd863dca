"""Geodesic (great-circle) direct and inverse problems, scalar and batch.

Scalar calls use geographiclib (Karney 2013, "Algorithms for geodesics", J. Geod. 87:43-55);
batch calls use pyproj's ``Geod``, which wraps PROJ's C port of the same algorithms
(geodesic.c) and is vectorised over numpy arrays. Both are accurate to about 15 nm on WGS84.
Azimuths come back in [0, 360), longitudes in [-180, 180).
"""

from __future__ import annotations

import numpy as np

from passagelog.nav.earth import WGS84, Earth, get_earth


def _course(azi: float) -> float:
    c = azi % 360.0
    return 0.0 if c == 360.0 else c + 0.0


def _lon(lon: float) -> float:
    x = (lon + 180.0) % 360.0 - 180.0
    return x + 0.0


def inverse(lat1: float, lon1: float, lat2: float, lon2: float,
            earth: Earth | str = WGS84) -> tuple[float, float, float]:
    """Shortest geodesic between two points: ``(s12_m, azi1, azi2)``, azimuths as courses."""
    g = get_earth(earth).geodesic.Inverse(lat1, lon1, lat2, lon2)
    return g["s12"], _course(g["azi1"]), _course(g["azi2"])


def direct(lat1: float, lon1: float, azi1: float, s12_m: float,
           earth: Earth | str = WGS84) -> tuple[float, float, float]:
    """Point at ``s12_m`` from (lat1, lon1) along azimuth ``azi1``: ``(lat2, lon2, azi2)``."""
    g = get_earth(earth).geodesic.Direct(lat1, lon1, azi1, s12_m)
    return g["lat2"], _lon(g["lon2"]), _course(g["azi2"])


def inverse_np(lat1, lon1, lat2, lon2, earth: Earth | str = WGS84):
    """Batch inverse over broadcast arrays: ``(s12_m, azi1, azi2)`` as float64 arrays."""
    lat1, lon1, lat2, lon2 = np.broadcast_arrays(
        *(np.asarray(x, dtype=np.float64) for x in (lat1, lon1, lat2, lon2))
    )
    shape = lat1.shape
    fwd, back, dist = get_earth(earth).geod.inv(
        lon1.ravel().copy(), lat1.ravel().copy(), lon2.ravel().copy(), lat2.ravel().copy()
    )
    azi1 = np.mod(np.asarray(fwd), 360.0)
    # pyproj returns the back azimuth (from point 2 toward point 1); the forward azimuth at
    # point 2 is that reversed.
    azi2 = np.mod(np.asarray(back) + 180.0, 360.0)
    azi1[azi1 == 360.0] = 0.0
    azi2[azi2 == 360.0] = 0.0
    return np.asarray(dist).reshape(shape), azi1.reshape(shape), azi2.reshape(shape)


def direct_np(lat1, lon1, azi1, s12_m, earth: Earth | str = WGS84):
    """Batch direct over broadcast arrays: ``(lat2, lon2, azi2)`` as float64 arrays."""
    lat1, lon1, azi1, s12_m = np.broadcast_arrays(
        *(np.asarray(x, dtype=np.float64) for x in (lat1, lon1, azi1, s12_m))
    )
    shape = lat1.shape
    lon2, lat2, back = get_earth(earth).geod.fwd(
        lon1.ravel().copy(), lat1.ravel().copy(), azi1.ravel().copy(), s12_m.ravel().copy()
    )
    lon2 = (np.asarray(lon2) + 180.0) % 360.0 - 180.0
    azi2 = np.mod(np.asarray(back) + 180.0, 360.0)
    azi2[azi2 == 360.0] = 0.0
    return np.asarray(lat2).reshape(shape), lon2.reshape(shape), azi2.reshape(shape)
