"""Synthetic tracks for the reconciliation tests, built with the direct problem.

A position at a known along-track distance ``s`` and a known cross-track error ``x`` from a
leg is made by taking the leg's own point at ``s`` (``point_at``) and going ``x`` metres from
it along the geodesic at right angles to the leg there (course + 90 deg, so + is to the
right). That geodesic meets the leg's line at a right angle, so its foot is the point at
``s``: the engine must give back ``x`` and ``s``.
"""

from __future__ import annotations

from datetime import datetime, timezone

import numpy as np

from passagelog.model import LegPlan, Route, Waypoint
from passagelog.nav.earth import WGS84
from passagelog.nav.geodesic import direct
from passagelog.nav.legs import make_leg

T0 = datetime(2026, 3, 1, tzinfo=timezone.utc).timestamp()


def legs_of(route: Route, earth=WGS84):
    w = route.waypoints
    return [make_leg(w[k].lat, w[k].lon, w[k + 1].lat, w[k + 1].lon, p.sailing, earth=earth)
            for k, p in enumerate(route.legs)]


def course_at(leg, along_m: float) -> float:
    if hasattr(leg, "course_at"):
        return leg.course_at(along_m)
    return leg.initial_course  # a rhumb line keeps its course


def off(leg, along_m: float, xte_m: float, earth=WGS84) -> tuple[float, float]:
    """The position ``xte_m`` (+ right) off the leg at ``along_m`` from its start."""
    lat, lon = leg.point_at(along_m)
    if xte_m == 0.0:
        return lat, lon
    lat2, lon2, _ = direct(lat, lon, course_at(leg, along_m) + 90.0, xte_m, earth)
    return lat2, lon2


def route(points, sailings=None, speed_kn=10.0, xtl_m=1000.0, radius_m=None, names=None):
    """A route through ``points`` [(lat, lon), ...] with the same limits on every leg."""
    n = len(points)
    sailings = sailings or ["great-circle"] * (n - 1)
    names = names or [f"WP{i + 1}" for i in range(n)]
    wps = tuple(Waypoint(names[i], la, lo, arrival_radius_m=radius_m)
                for i, (la, lo) in enumerate(points))
    legs = tuple(LegPlan(sailing=s, speed_kn=speed_kn, xtl_port_m=xtl_m, xtl_stbd_m=xtl_m)
                 for s in sailings)
    return Route("synthetic", wps, legs)


def columns(times, lats, lons, **extra):
    d = {"time_s": np.asarray(times, float), "lat": np.asarray(lats, float),
         "lon": np.asarray(lons, float)}
    d.update({k: np.asarray(v) for k, v in extra.items()})
    return d


def sail(legs, plan, t0=T0, step_s=600.0, earth=WGS84):
    """Positions for ``plan`` = [(leg index, along_m, xte_m), ...] at ``step_s`` intervals."""
    lats, lons, times = [], [], []
    for i, (k, s, x) in enumerate(plan):
        la, lo = off(legs[k], s, x, earth)
        lats.append(la)
        lons.append(lo)
        times.append(t0 + i * step_s)
    return columns(times, lats, lons)
