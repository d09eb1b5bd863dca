"""The batch geodesic helpers against pyproj's Geod (PROJ's geodesic.c, Karney 2013) as
the reference: the spherical screen's bounds hold over a wide sample."""

from __future__ import annotations

import math

import numpy as np

from passagelog.nav.earth import SPHERE, WGS84
from passagelog.nav.geodesic import (
    SPHERE_AZIMUTH_TOL_DEG,
    SPHERE_SCREEN_MAX_M,
    inverse_np,
    sphere_np,
)


def _pairs(n: int, seed: int):
    rng = np.random.default_rng(seed)
    lat1 = np.degrees(np.arcsin(rng.uniform(-1, 1, n)))
    lon1 = rng.uniform(-180, 180, n)
    dist = np.exp(rng.uniform(math.log(1.0), math.log(SPHERE_SCREEN_MAX_M), n))
    lon2, lat2, _ = WGS84.geod.fwd(lon1, lat1, rng.uniform(0, 360, n), dist)
    return lat1, lon1, np.asarray(lat2), np.asarray(lon2)


def test_sphere_screen_bounds_hold_against_proj_geodesics():
    lat1, lon1, lat2, lon2 = _pairs(400_000, 20261205)
    s, _, azi2 = inverse_np(lat1, lon1, lat2, lon2)  # PROJ's geodesic.c
    a_sigma, az = sphere_np(lat1, lon1, lat2, lon2)
    e2 = WGS84.e2
    assert np.all(s >= (1.0 - e2) * a_sigma * (1 - 1e-12))
    assert np.all(s <= a_sigma / math.sqrt(1.0 - e2) * (1 + 1e-12))
    # azimuths are defined away from the poles and from coincident points
    ok = ((np.abs(lat1) < 89.9) & (np.abs(lat2) < 89.9) & (s > 1.0)
          & (a_sigma <= SPHERE_SCREEN_MAX_M))
    d = np.abs((az - azi2 + 180.0) % 360.0 - 180.0)[ok]
    assert d.max() < 0.2  # about e^2/2 rad = 0.192 deg
    assert d.max() < SPHERE_AZIMUTH_TOL_DEG / 5


def test_sphere_screen_is_exact_on_a_sphere():
    lat1, lon1, lat2, lon2 = _pairs(2000, 7)
    s, _, azi2 = inverse_np(lat1, lon1, lat2, lon2, SPHERE)
    a_sigma, az = sphere_np(lat1, lon1, lat2, lon2, SPHERE)
    assert np.allclose(a_sigma, s, rtol=1e-9, atol=1e-6)
    ok = (np.abs(lat2) < 89.9) & (s > 1.0)
    assert np.all(np.abs((az - azi2 + 180.0) % 360.0 - 180.0)[ok] < 1e-6)
