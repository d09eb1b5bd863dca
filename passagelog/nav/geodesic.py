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


#: :func:`sphere_np` is used as a cheap screen only up to this distance on its sphere, metres,
#: where its azimuth is known to be within :data:`SPHERE_AZIMUTH_TOL_DEG` of the geodesic's.
SPHERE_SCREEN_MAX_M = 5_000_000.0
#: A bound on how far the arriving azimuth of :func:`sphere_np` is from the geodesic's,
#: degrees. For short lines the difference is at most e^2/2 rad (0.192 deg on WGS84: the
#: sphere takes the ellipsoid's meridian radius M for its transverse one N); sampled over
#: 2,000,000 pairs up to 5,000 km at all latitudes it never exceeded 0.193 deg. The bound
#: takes a margin of five over that (tests/nav/test_geodesic.py samples it again).
SPHERE_AZIMUTH_TOL_DEG = 1.0


def sphere_np(lat1, lon1, lat2, lon2, earth: Earth | str = WGS84):
    """A cheap screen for the inverse problem: the great circle between the same latitudes
    and longitudes on the sphere of radius a, ``(a_sigma_m, azi2)`` (arriving azimuth at
    point 2, degrees). The geodesic's length s on the ellipsoid lies within
    ``(1 - e^2) a_sigma <= s <= a_sigma / sqrt(1 - e^2)`` (the ellipsoid's radii of curvature
    lie between a(1 - e^2) and a / sqrt(1 - e^2)); its arriving azimuth within
    :data:`SPHERE_AZIMUTH_TOL_DEG` of ``azi2`` up to :data:`SPHERE_SCREEN_MAX_M`."""
    e = get_earth(earth)
    p1 = np.radians(lat1)
    p2 = np.radians(lat2)
    dl = np.radians(np.asarray(lon2, dtype=np.float64) - lon1)
    c1, s1, c2, s2 = np.cos(p1), np.sin(p1), np.cos(p2), np.sin(p2)
    cdl = np.cos(dl)
    sdl = np.sin(dl)
    h = np.sin(0.5 * (p2 - p1)) ** 2 + c1 * c2 * np.sin(0.5 * dl) ** 2
    sigma = 2.0 * np.arcsin(np.sqrt(np.clip(h, 0.0, 1.0)))
    # arriving azimuth at 2: the azimuth from 2 toward 1, turned half round
    back = np.degrees(np.arctan2(-sdl * c1, c2 * s1 - s2 * c1 * cdl))
    return e.a * sigma, np.mod(back + 180.0, 360.0)
