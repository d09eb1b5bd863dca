"""One API for legs of either sailing: great circle (geodesic) or rhumb line.

``make_leg`` gives a leg object with a common protocol; the reconciliation engine calls its
``offsets_np`` for millions of fixes at a time. ``leg`` and ``offset`` are conveniences that
return frozen results (the ``calc leg`` / ``calc offset`` figures).

Offsets follow DESIGN.md: the cross-track error (XTE) is + to the right (starboard) of the
direction of travel; XTE and along-track distance are measured to the foot of the shortest
geodesic from the position to the leg's line extended past its ends; the along-track
distance is negative before the start, and the distance to go is ``distance_m - along_m``.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Protocol, runtime_checkable

import numpy as np

from passagelog.errors import InputError
from passagelog.nav.earth import WGS84, Earth, get_earth
from passagelog.nav.greatcircle import GreatCircleLeg
from passagelog.nav.units import NM_M

#: The sailings a leg may follow (the same names as passagelog.model.SAILINGS).
SAILINGS = ("great-circle", "rhumb")


@runtime_checkable
class Leg(Protocol):
    """What every leg offers, whatever its sailing."""

    sailing: str
    distance_m: float
    initial_course: float
    final_course: float

    def point_at(self, along_m: float) -> tuple[float, float]: ...

    def points_at_np(self, along): ...

    def offset(self, lat: float, lon: float) -> tuple[float, float]: ...

    def offsets_np(self, lats, lons, strict: bool = True): ...


@dataclass(frozen=True)
class LegSolution:
    """Distance and courses of a leg (courses in degrees true, [0, 360))."""

    distance_m: float
    initial_course: float
    final_course: float
    sailing: str

    @property
    def distance_nm(self) -> float:
        return self.distance_m / NM_M


@dataclass(frozen=True)
class Offset:
    """A position against a leg: XTE (+ right), along-track and to-go distances, metres."""

    xte_m: float
    along_m: float
    to_go_m: float

    @property
    def xte_nm(self) -> float:
        return self.xte_m / NM_M

    @property
    def along_nm(self) -> float:
        return self.along_m / NM_M

    @property
    def to_go_nm(self) -> float:
        return self.to_go_m / NM_M


def check_sailing(sailing: str) -> str:
    """``sailing`` if it is one of :data:`SAILINGS`, else InputError."""
    if sailing not in SAILINGS:
        raise InputError(f"sailing {sailing!r} is not known; use one of: {', '.join(SAILINGS)}")
    return sailing


class _RhumbAdapter:
    """A rhumb leg seen through the common protocol (initial = final course)."""

    sailing = "rhumb"

    def __init__(self, inner):
        self._inner = inner
        self.distance_m = float(inner.distance_m)
        course = float(getattr(inner, "initial_course", getattr(inner, "course", None)))
        self.initial_course = course
        self.final_course = float(getattr(inner, "final_course", course))
        self.course = course

    def __getattr__(self, name):
        return getattr(self._inner, name)

    def point_at(self, along_m):
        return self._inner.point_at(along_m)

    def points_at_np(self, along):
        return self._inner.points_at_np(along)

    def offset(self, lat, lon):
        return self._inner.offset(lat, lon)

    def offsets_np(self, lats, lons, strict=True):
        return self._inner.offsets_np(lats, lons, strict)


def make_leg(lat1: float, lon1: float, lat2: float, lon2: float,
             sailing: str = "great-circle", earth: Earth | str = WGS84) -> Leg:
    """A leg from (lat1, lon1) to (lat2, lon2) following ``sailing`` on ``earth``.

    Returns a :class:`~passagelog.nav.greatcircle.GreatCircleLeg` or a rhumb leg; both
    offer ``distance_m``, ``initial_course``, ``final_course``, ``sailing``,
    ``point_at(along_m)``, ``points_at_np(along)``, ``offset(lat, lon) -> (xte_m, along_m)``
    and ``offsets_np(lats, lons) -> (xte_m, along_m)`` arrays.
    """
    check_sailing(sailing)
    earth = get_earth(earth)
    if sailing == "great-circle":
        return GreatCircleLeg(lat1, lon1, lat2, lon2, earth)
    from passagelog.nav.rhumb import RhumbLeg

    inner = RhumbLeg(lat1, lon1, lat2, lon2, earth)
    if all(hasattr(inner, a) for a in ("initial_course", "final_course", "sailing")):
        return inner
    return _RhumbAdapter(inner)


def leg(lat1: float, lon1: float, lat2: float, lon2: float, sailing: str = "great-circle",
        earth: Earth | str = WGS84) -> LegSolution:
    """Distance and courses of the leg from (lat1, lon1) to (lat2, lon2)."""
    lg = make_leg(lat1, lon1, lat2, lon2, sailing, earth)
    return LegSolution(float(lg.distance_m), float(lg.initial_course),
                       float(lg.final_course), sailing)


def offset(lat1: float, lon1: float, lat2: float, lon2: float, lat: float, lon: float,
           sailing: str = "great-circle", earth: Earth | str = WGS84) -> Offset:
    """Offset of the position (lat, lon) against the leg from (lat1, lon1) to (lat2, lon2)."""
    lg = make_leg(lat1, lon1, lat2, lon2, sailing, earth)
    xte, along = lg.offset(lat, lon)
    return Offset(float(xte), float(along), float(lg.distance_m - along))


def offsets_np(leg_: Leg, lats, lons):
    """``(xte_m, along_m, to_go_m)`` arrays of many positions against one leg."""
    xte, along = leg_.offsets_np(lats, lons)
    return xte, along, leg_.distance_m - np.asarray(along)
