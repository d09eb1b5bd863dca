"""The domain of passagelog as frozen dataclasses.

Units follow the house conventions: distances and radii in metres, speeds in knots (``_kn``),
angles in degrees true, times timezone-aware UTC (``_utc``), zone descriptions in minutes
(``zd_minutes``; ZT + ZD = UTC, so west longitudes have positive ZD).

A :class:`Route` is the content of one plan revision: ``waypoints[k]`` to ``waypoints[k+1]``
is leg ``k + 1`` (1-based in every user-facing table) and is described by ``legs[k]``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from datetime import datetime, timezone
from typing import Any

from passagelog.errors import InputError

SAILINGS = ("great-circle", "rhumb")
CRAFT_KINDS = ("ship", "aircraft")
FIX_METHODS = ("gnss", "radar", "visual", "celestial", "dr", "ep", "other")
#: Satellites a fix may claim: every GNSS constellation together has under 200 in orbit.
MAX_SATELLITES = 999
ENTRY_KINDS = (
    "departure",
    "arrival",
    "clock-change",
    "course-alteration",
    "event",
    "remark",
)


def _finite(thing: str, name: str, value: Any, *, low: float | None = None,
            high: float | None = None, high_open: bool = False, optional: bool = True) -> None:
    if value is None:
        if optional:
            return
        raise InputError(f"{thing} {name} is required")
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError(f"{thing} {name} must be a number, not {value!r}")
    if not math.isfinite(value):
        raise InputError(f"{thing} {name} is {value!r}; a finite number is required")
    if low is not None and value < low:
        raise InputError(f"{thing} {name} {value!r} is below the allowed minimum {low:g}")
    if high is not None and (value >= high if high_open else value > high):
        bound = f"below {high:g}" if high_open else f"at most {high:g}"
        raise InputError(f"{thing} {name} {value!r} is out of range; it must be {bound}")


def normalize_lon(lon: float) -> float:
    """Longitude folded into [-180, 180)."""
    lon = math.fmod(lon, 360.0)
    if lon >= 180.0:
        lon -= 360.0
    elif lon < -180.0:
        lon += 360.0
    return lon + 0.0  # no negative zero


def check_position(thing: str, lat: Any, lon: Any) -> float:
    """Validate a latitude/longitude pair; returns the longitude folded into [-180, 180)."""
    _finite(thing, "latitude", lat, low=-90.0, high=90.0, optional=False)
    _finite(thing, "longitude", lon, low=-180.0, high=180.0, optional=False)
    return normalize_lon(float(lon))


def check_choice(thing: str, name: str, value: str, allowed: tuple[str, ...]) -> None:
    if value not in allowed:
        raise InputError(f"{thing} {name} {value!r} is not one of: {', '.join(allowed)}")


def check_utc(thing: str, name: str, value: datetime | None, optional: bool = True) -> None:
    if value is None:
        if optional:
            return
        raise InputError(f"{thing} {name} is required")
    if not isinstance(value, datetime) or value.tzinfo is None or value.utcoffset() is None:
        raise InputError(f"{thing} {name} {value!r} must be a timezone-aware UTC time")
    if value.utcoffset().total_seconds() != 0:
        raise InputError(f"{thing} {name} {value.isoformat()} must be given in UTC")


def check_zd(thing: str, zd_minutes: int) -> None:
    if not isinstance(zd_minutes, int) or isinstance(zd_minutes, bool):
        raise InputError(f"{thing} zone description {zd_minutes!r} must be whole minutes")
    if not -14 * 60 <= zd_minutes <= 12 * 60:
        raise InputError(
            f"{thing} zone description {zd_minutes} min is outside -14 h to +12 h"
        )


def _one(index: Any) -> Any:
    """A 0-based index as the 1-based number users see."""
    return index + 1 if isinstance(index, int) and not isinstance(index, bool) else repr(index)


def utc(dt: datetime) -> datetime:
    """``dt`` as an aware UTC datetime (naive input is refused)."""
    if dt.tzinfo is None:
        raise InputError(f"time {dt.isoformat()} has no time zone; give it in UTC or with its zone")
    return dt.astimezone(timezone.utc)


@dataclass(frozen=True)
class Craft:
    """A ship or an aircraft."""

    name: str
    kind: str = "ship"
    usual_speed_kn: float | None = None
    max_speed_kn: float | None = None
    craft_id: int | None = None

    def __post_init__(self) -> None:
        if not self.name.strip():
            raise InputError("craft name must not be empty")
        check_choice("craft", "kind", self.kind, CRAFT_KINDS)
        _finite("craft", "usual speed (kn)", self.usual_speed_kn, low=0.0)
        _finite("craft", "maximum speed (kn)", self.max_speed_kn, low=0.0)


@dataclass(frozen=True)
class Waypoint:
    """A named position of a route.

    ``arrival_radius_m`` is the radius of the arrival circle used to decide when the
    waypoint is passed; ``rtz_id`` and ``revision`` keep the identity given by an IEC 61174
    route file; ``extras`` keeps foreign data (e.g. unknown RTZ extensions as XML text) so
    that it survives a round trip.
    """

    name: str
    lat: float
    lon: float
    arrival_radius_m: float | None = None
    rtz_id: int | None = None
    revision: int | None = None
    extras: tuple[tuple[str, str], ...] = ()

    def __post_init__(self) -> None:
        lon = check_position(f"waypoint {self.name!r}", self.lat, self.lon)
        object.__setattr__(self, "lat", float(self.lat))
        object.__setattr__(self, "lon", lon)
        _finite(f"waypoint {self.name!r}", "arrival radius (m)", self.arrival_radius_m, low=0.0)


@dataclass(frozen=True)
class LegPlan:
    """How the leg ending at a waypoint is to be sailed.

    Cross-track limits are per side (port = left of the direction of travel), metres.
    ``turn_radius_m`` is the radius of the turn at the leg's end waypoint.
    """

    sailing: str = "rhumb"
    speed_kn: float | None = None
    xtl_port_m: float | None = None
    xtl_stbd_m: float | None = None
    turn_radius_m: float | None = None
    notes: str = ""
    speed_min_kn: float | None = None
    speed_max_kn: float | None = None
    extras: tuple[tuple[str, str], ...] = ()

    def __post_init__(self) -> None:
        check_choice("leg", "sailing", self.sailing, SAILINGS)
        _finite("leg", "planned speed (kn)", self.speed_kn, low=0.0)
        _finite("leg", "port cross-track limit (m)", self.xtl_port_m, low=0.0)
        _finite("leg", "starboard cross-track limit (m)", self.xtl_stbd_m, low=0.0)
        _finite("leg", "turn radius (m)", self.turn_radius_m, low=0.0)
        _finite("leg", "minimum speed (kn)", self.speed_min_kn, low=0.0)
        _finite("leg", "maximum speed (kn)", self.speed_max_kn, low=0.0)


@dataclass(frozen=True)
class ScheduleItem:
    """A planned time at a waypoint (by index into the route's waypoints)."""

    waypoint_index: int
    eta_utc: datetime | None = None
    etd_utc: datetime | None = None
    kind: str = "manual"  # "manual" or "calculated" as in IEC 61174 schedules
    schedule_name: str = ""

    def __post_init__(self) -> None:
        check_choice("schedule item", "kind", self.kind, ("manual", "calculated"))
        check_utc("schedule item", "ETA", self.eta_utc)
        check_utc("schedule item", "ETD", self.etd_utc)


@dataclass(frozen=True)
class Route:
    """The content of one plan revision: waypoints, the legs between them, a schedule."""

    name: str
    waypoints: tuple[Waypoint, ...]
    legs: tuple[LegPlan, ...] = ()
    schedule: tuple[ScheduleItem, ...] = ()
    revision: int | None = None
    note: str = ""
    extras: tuple[tuple[str, str], ...] = ()

    def __post_init__(self) -> None:
        object.__setattr__(self, "waypoints", tuple(self.waypoints))
        legs = tuple(self.legs) if self.legs else tuple(
            LegPlan() for _ in range(max(len(self.waypoints) - 1, 0))
        )
        object.__setattr__(self, "legs", legs)
        object.__setattr__(self, "schedule", tuple(self.schedule))
        if len(self.waypoints) < 2:
            raise InputError(
                f"route {self.name!r} has {len(self.waypoints)} waypoint(s); at least 2 are needed"
            )
        if len(self.legs) != len(self.waypoints) - 1:
            raise InputError(
                f"route {self.name!r} has {len(self.waypoints)} waypoints but {len(self.legs)} "
                f"legs; it needs {len(self.waypoints) - 1}"
            )
        for item in self.schedule:
            if not 0 <= item.waypoint_index < len(self.waypoints):
                raise InputError(
                    f"route {self.name!r} schedule names waypoint index {item.waypoint_index}, "
                    f"which does not exist"
                )

    @property
    def leg_count(self) -> int:
        return len(self.legs)

    def main_schedule_name(self) -> str:
        """The schedule this plan runs by (a route may carry several, as an IEC 61174 route
        file may): the one of its first manual item, else of its first item."""
        for item in self.schedule:
            if item.kind == "manual":
                return item.schedule_name
        return self.schedule[0].schedule_name if self.schedule else ""

    def planned_times(self) -> tuple[tuple[datetime | None, datetime | None], ...]:
        """``(ETA, ETD)`` at each waypoint by the main schedule, a manual time taking the
        place of a calculated one; ``(None, None)`` where it gives none. A waypoint with both,
        the ETD later, is a stay (at anchor, for a pilot or the tide)."""
        main = self.main_schedule_name()
        times: list[list] = [[None, None] for _ in self.waypoints]
        manual: list[list[bool]] = [[False, False] for _ in self.waypoints]
        for item in self.schedule:
            if item.schedule_name != main:
                continue
            is_manual = item.kind == "manual"
            for f, value in enumerate((item.eta_utc, item.etd_utc)):
                i = item.waypoint_index
                if value is not None and (is_manual or not manual[i][f]):
                    times[i][f] = value
                    manual[i][f] = manual[i][f] or is_manual
        return tuple((eta, etd) for eta, etd in times)

    def with_changes(self, **changes: Any) -> "Route":
        return replace(self, **changes)

    # Plan editing: each operation returns a new Route (revision and note cleared); indexes
    # are 0-based here (the CLI shows them 1-based). Schedule items follow their waypoint.

    def _check_index(self, index: int, *, allow_end: bool = False) -> None:
        top = len(self.waypoints) if allow_end else len(self.waypoints) - 1
        if isinstance(index, bool) or not isinstance(index, int) or not 0 <= index <= top:
            raise InputError(f"route {self.name!r} waypoint number {_one(index)} does not "
                             f"exist; it has waypoints 1 to {len(self.waypoints)}")

    def _edited(self, waypoints, legs, schedule) -> "Route":
        return replace(self, waypoints=tuple(waypoints), legs=tuple(legs),
                       schedule=tuple(schedule), revision=None, note="")

    def insert_waypoint(self, index: int, waypoint: Waypoint, leg: LegPlan | None = None,
                        ) -> "Route":
        """``waypoint`` inserted so that it becomes ``waypoints[index]`` (``index`` equal to
        the count appends). ``leg`` describes the leg that ends at it; by default the leg
        it splits (or, at either end, the neighbouring leg) is copied."""
        self._check_index(index, allow_end=True)
        wps = list(self.waypoints)
        legs = list(self.legs)
        if index == 0:  # new start: the leg from it ends at the old first waypoint
            legs.insert(0, leg or legs[0])
        else:
            legs.insert(index - 1, leg or legs[min(index - 1, len(legs) - 1)])
        wps.insert(index, waypoint)
        sched = [replace(s, waypoint_index=s.waypoint_index + (s.waypoint_index >= index))
                 for s in self.schedule]
        return self._edited(wps, legs, sched)

    def add_waypoint(self, waypoint: Waypoint, leg: LegPlan | None = None) -> "Route":
        """``waypoint`` appended at the end (``leg``: the leg ending at it)."""
        return self.insert_waypoint(len(self.waypoints), waypoint, leg)

    def move_waypoint(self, index: int, lat: float, lon: float) -> "Route":
        """Waypoint ``index`` moved to a new position (name, radius and legs kept)."""
        self._check_index(index)
        wps = list(self.waypoints)
        wps[index] = replace(wps[index], lat=lat, lon=lon)
        return self._edited(wps, self.legs, self.schedule)

    def replace_waypoint(self, index: int, waypoint: Waypoint) -> "Route":
        """Waypoint ``index`` replaced (rename, new arrival radius, ...)."""
        self._check_index(index)
        wps = list(self.waypoints)
        wps[index] = waypoint
        return self._edited(wps, self.legs, self.schedule)

    def delete_waypoint(self, index: int) -> "Route":
        """Waypoint ``index`` removed. Removing an inner waypoint joins its two legs into one
        that keeps the attributes of the leg that ended at the next waypoint; removing an end
        drops the end leg. Schedule items at the waypoint go with it."""
        self._check_index(index)
        if len(self.waypoints) <= 2:
            raise InputError(f"route {self.name!r} has only 2 waypoints; a route needs at "
                             "least 2, so none can be deleted")
        wps = list(self.waypoints)
        legs = list(self.legs)
        del wps[index]
        del legs[index - 1 if index else 0]  # an inner waypoint keeps the leg after it
        sched = [replace(s, waypoint_index=s.waypoint_index - (s.waypoint_index > index))
                 for s in self.schedule if s.waypoint_index != index]
        return self._edited(wps, legs, sched)

    def set_leg(self, leg_index: int, **changes: Any) -> "Route":
        """Leg ``leg_index`` (0-based; leg k runs from waypoint k to k+1) with ``changes``
        (any LegPlan field: sailing, speed_kn, xtl_port_m, xtl_stbd_m, turn_radius_m, ...)."""
        if isinstance(leg_index, bool) or not isinstance(leg_index, int) or not (
                0 <= leg_index < len(self.legs)):
            raise InputError(f"route {self.name!r} leg {_one(leg_index)} does not exist; it "
                             f"has legs 1 to {len(self.legs)}")
        legs = list(self.legs)
        try:
            legs[leg_index] = replace(legs[leg_index], **changes)
        except TypeError as exc:
            raise InputError(f"leg attribute not known: {exc}") from None
        return self._edited(self.waypoints, legs, self.schedule)

    def reversed(self, name: str | None = None) -> "Route":
        """The route sailed the other way: waypoints in reverse order, each leg kept with its
        segment, its port and starboard limits swapped (the sides change with the direction),
        and each turn radius kept with its waypoint. The schedule is dropped (its times do
        not apply the other way)."""
        n = len(self.waypoints)
        wps = self.waypoints[::-1]
        legs = []
        for j in range(1, n):
            seg = self.legs[n - j - 1]  # the old leg from waypoint n-j-1 to n-j
            at = n - j - 1  # the waypoint the new leg j ends at
            turn = self.legs[at - 1].turn_radius_m if at >= 1 else None
            legs.append(replace(seg, xtl_port_m=seg.xtl_stbd_m, xtl_stbd_m=seg.xtl_port_m,
                                turn_radius_m=turn))
        out = self._edited(wps, legs, ())
        return replace(out, name=name) if name else out

    def copy(self, name: str) -> "Route":
        """The same route under another name."""
        if not isinstance(name, str) or not name.strip():
            raise InputError("route name must not be empty")
        return replace(self, name=name, revision=None, note="")


@dataclass(frozen=True)
class Voyage:
    """A passage of a craft from one place to another, sailed by a plan."""

    name: str
    craft_id: int | None = None
    from_place: str = ""
    to_place: str = ""
    departure_utc: datetime | None = None
    zd_minutes: int = 0
    plan_id: int | None = None
    voyage_id: int | None = None

    def __post_init__(self) -> None:
        if not self.name.strip():
            raise InputError("voyage name must not be empty")
        check_utc("voyage", "planned departure", self.departure_utc)
        check_zd(f"voyage {self.name!r}", self.zd_minutes)


@dataclass(frozen=True)
class Fix:
    """A position at a time, with how it was obtained.

    ``fix_mode`` is the receiver's own word where known (NMEA mode letter or GGA quality);
    ``source`` is the raw text it came from (an NMEA sentence) or ``file:line``.
    ``fix_id``, ``supersedes``, ``reason``, ``suspect`` and ``implied_speed_kn`` are set by
    the logbook.
    """

    time_utc: datetime
    lat: float
    lon: float
    method: str = "gnss"
    hdop: float | None = None
    satellites: int | None = None
    fix_mode: str | None = None
    cog: float | None = None
    sog_kn: float | None = None
    heading: float | None = None
    stw_kn: float | None = None
    remarks: str = ""
    source: str | None = None
    fix_id: int | None = None
    supersedes: int | None = None
    reason: str | None = None
    suspect: bool = False
    implied_speed_kn: float | None = None

    def __post_init__(self) -> None:
        check_utc("fix", "time", self.time_utc, optional=False)
        lon = check_position("fix", self.lat, self.lon)
        object.__setattr__(self, "lat", float(self.lat))
        object.__setattr__(self, "lon", lon)
        check_choice("fix", "method", self.method, FIX_METHODS)
        _finite("fix", "HDOP", self.hdop, low=0.0)
        if self.satellites is not None and (
            not isinstance(self.satellites, int) or not 0 <= self.satellites <= MAX_SATELLITES
        ):
            raise InputError(f"fix satellites {self.satellites!r} must be a whole number from 0 "
                             f"to {MAX_SATELLITES}")
        _finite("fix", "COG", self.cog, low=0.0, high=360.0, high_open=True)
        _finite("fix", "SOG (kn)", self.sog_kn, low=0.0)
        _finite("fix", "heading", self.heading, low=0.0, high=360.0, high_open=True)
        _finite("fix", "speed through the water (kn)", self.stw_kn, low=0.0)


@dataclass(frozen=True)
class LogEntry:
    """An event of the voyage at a UTC time (departure, arrival, clock change, ...).

    For a clock change ``zd_minutes`` is the new zone description.
    """

    time_utc: datetime
    kind: str
    text: str = ""
    zd_minutes: int | None = None
    lat: float | None = None
    lon: float | None = None
    entry_id: int | None = None
    supersedes: int | None = None
    reason: str | None = None

    def __post_init__(self) -> None:
        check_utc("log entry", "time", self.time_utc, optional=False)
        check_choice("log entry", "kind", self.kind, ENTRY_KINDS)
        if self.kind == "clock-change" and self.zd_minutes is None:
            raise InputError("a clock-change log entry needs the new zone description")
        if self.zd_minutes is not None:
            check_zd("log entry", self.zd_minutes)
        if (self.lat is None) != (self.lon is None):
            raise InputError("log entry position needs both latitude and longitude")
        if self.lat is not None:
            lon = check_position("log entry", self.lat, self.lon)
            object.__setattr__(self, "lon", lon)


__all__ = [
    "SAILINGS", "CRAFT_KINDS", "FIX_METHODS", "ENTRY_KINDS",
    "Craft", "Waypoint", "LegPlan", "ScheduleItem", "Route", "Voyage", "Fix", "LogEntry",
    "normalize_lon", "check_position", "utc",
]
