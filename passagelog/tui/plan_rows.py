"""The working copy of a plan as the Plan view edits it, and its computed columns.

No Textual here: this is plain logic, tested on its own. A :class:`PlanRow` holds one
waypoint and the leg that ends at it (row 0 has no leg), as in the route CSV and in RTZ.
Values are kept in the house units (metres, knots, degrees); the view converts to NM at the
edge. :func:`compute` turns the rows into one :class:`RowFigures` per row.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from datetime import datetime, timedelta, timezone

from passagelog.errors import InputError
from passagelog.model import SAILINGS, LegPlan, Route, ScheduleItem, Waypoint
from passagelog.nav.units import NM_M, travel_seconds


@dataclass
class PlanRow:
    """One waypoint and the leg that ends at it (row 0's leg fields are unused). Row 0 has
    no ETA (the voyage starts there: its ETD is the planned departure) and the last row no
    ETD (the voyage ends there: nothing departs from it); :func:`end_times_dropped` keeps
    it so as rows are deleted and moved."""

    name: str
    lat: float
    lon: float
    sailing: str = "rhumb"
    speed_kn: float | None = None
    xtl_port_m: float | None = None
    xtl_stbd_m: float | None = None
    turn_radius_m: float | None = None
    arrival_radius_m: float | None = None
    notes: str = ""
    # the schedule at this waypoint, fixed by the officer (manual items; UTC)
    eta_utc: datetime | None = None
    etd_utc: datetime | None = None
    # items of other named schedules at this waypoint, kept as they came
    other_times: tuple = ()
    # kept so a round trip through the editor loses nothing the table does not show
    waypoint_extras: dict = field(default_factory=dict)
    leg_extras: dict = field(default_factory=dict)


@dataclass(frozen=True)
class RowFigures:
    """What the Plan view computes for one row (the leg ending at this waypoint)."""

    distance_m: float | None = None          # by the leg's own sailing
    gc_distance_m: float | None = None       # great circle (geodesic)
    rhumb_distance_m: float | None = None    # rhumb line
    initial_course: float | None = None
    final_course: float | None = None
    cumulative_m: float = 0.0
    leg_time_s: float | None = None
    eta_utc: datetime | None = None          # the plan's time here: fixed ETA, else computed
    etd_utc: datetime | None = None          # departure from here: fixed ETD, else eta_utc
    planned_arrival_utc: datetime | None = None  # arrival at the planned speed
    required_kn: float | None = None         # speed that makes a fixed ETA from the last
                                             # fixed time (or the departure) along the route
    required_from: int | None = None         # the row that speed runs from
    alteration_deg: float | None = None      # course alteration at this waypoint (+ starboard)
    wheel_over_m: float | None = None        # wheel-over distance before this waypoint
    problem: str = ""


def main_schedule_name(route: Route) -> str:
    """The schedule the Plan view edits: the one the plan runs by (the route's main
    schedule)."""
    return route.main_schedule_name()


def rows_from_route(route: Route) -> list[PlanRow]:
    rows: list[PlanRow] = []
    main = main_schedule_name(route)
    last = len(route.waypoints) - 1
    for i, wp in enumerate(route.waypoints):
        leg = route.legs[i - 1] if i > 0 else LegPlan()
        eta = etd = None
        other = []
        for item in route.schedule:
            if item.waypoint_index != i:
                continue
            if item.schedule_name != main:
                other.append(item)
            elif item.kind == "manual":
                eta = item.eta_utc if item.eta_utc is not None else eta
                etd = item.etd_utc if item.etd_utc is not None else etd
            # calculated items of the main schedule are worked out again by compute()
        rows.append(PlanRow(
            eta_utc=eta if i > 0 else None, etd_utc=etd if i < last else None,
            other_times=tuple(other),
            name=wp.name, lat=wp.lat, lon=wp.lon, sailing=leg.sailing, speed_kn=leg.speed_kn,
            xtl_port_m=leg.xtl_port_m, xtl_stbd_m=leg.xtl_stbd_m,
            turn_radius_m=leg.turn_radius_m, arrival_radius_m=wp.arrival_radius_m,
            notes=leg.notes,
            waypoint_extras={"rtz_id": wp.rtz_id, "revision": wp.revision, "extras": wp.extras},
            leg_extras={"speed_min_kn": leg.speed_min_kn, "speed_max_kn": leg.speed_max_kn,
                        "extras": leg.extras},
        ))
    return rows


def route_from_rows(name: str, rows: list[PlanRow], *, base: Route | None = None,
                    note: str = "", departure_utc: datetime | None = None) -> Route:
    """The rows as a model Route (validated by the model's own checks).

    The schedule: the officer's fixed times as ``manual`` items and, for every other
    waypoint whose time is known, the time :func:`compute` works out as a ``calculated``
    item (so the review engine's planned times are the ones the Plan view shows). With no
    fixed time and no schedule in ``base`` no schedule is written (the review then runs
    from the voyage's planned departure at the planned speeds, the same figures).
    ``departure_utc``: the voyage's planned departure (used where row 1 has no fixed ETD).
    """
    rows = end_times_dropped(rows)
    check_schedule(rows, departure_utc)
    waypoints = []
    legs = []
    for i, row in enumerate(rows):
        wx = row.waypoint_extras or {}
        waypoints.append(Waypoint(
            name=row.name, lat=row.lat, lon=row.lon, arrival_radius_m=row.arrival_radius_m,
            rtz_id=wx.get("rtz_id"), revision=wx.get("revision"),
            extras=tuple(wx.get("extras") or ()),
        ))
        if i > 0:
            lx = row.leg_extras or {}
            legs.append(LegPlan(
                sailing=row.sailing, speed_kn=row.speed_kn, xtl_port_m=row.xtl_port_m,
                xtl_stbd_m=row.xtl_stbd_m, turn_radius_m=row.turn_radius_m, notes=row.notes,
                speed_min_kn=lx.get("speed_min_kn"), speed_max_kn=lx.get("speed_max_kn"),
                extras=tuple(lx.get("extras") or ()),
            ))
    name_s = main_schedule_name(base) if base is not None else ""
    fixed = any(r.eta_utc is not None or r.etd_utc is not None for r in rows)
    schedule = []
    if fixed or (base is not None and any(s.schedule_name == name_s for s in base.schedule)):
        figs = compute(rows, departure_utc)
        for i, (row, fig) in enumerate(zip(rows, figs)):
            if row.eta_utc is not None or row.etd_utc is not None:
                schedule.append(ScheduleItem(i, row.eta_utc, row.etd_utc, "manual", name_s))
            elif fig.eta_utc is not None or fig.etd_utc is not None:
                schedule.append(ScheduleItem(i, fig.eta_utc if i > 0 else None,
                                             fig.etd_utc if i < len(rows) - 1 else None,
                                             "calculated", name_s))
    for i, row in enumerate(rows):
        schedule += [replace(s, waypoint_index=i) for s in row.other_times]
    return Route(name=name, waypoints=tuple(waypoints), legs=tuple(legs),
                 schedule=schedule, note=note,
                 extras=base.extras if base is not None else ())


# --- editing operations (each returns a new list; the caller keeps the undo history) ---

def end_times_dropped(rows: list[PlanRow]) -> list[PlanRow]:
    """``rows`` without the times that mean nothing at the ends of the route: an ETA at
    the first waypoint (the departure point) and an ETD at the last (the destination)."""
    out = list(rows)
    if out and out[0].eta_utc is not None:
        out[0] = replace(out[0], eta_utc=None)
    if len(out) > 1 and out[-1].etd_utc is not None:
        out[-1] = replace(out[-1], etd_utc=None)
    return out


def insert_after(rows: list[PlanRow], index: int) -> list[PlanRow]:
    """A new waypoint after row ``index``: halfway along the next leg, or a copy of the last
    leg's step beyond the end. Its leg takes the settings of the leg it splits."""
    out = list(rows)
    here = rows[index]
    if index + 1 < len(rows):
        nxt = rows[index + 1]
        lat, lon = _midpoint(here, nxt)
        template = nxt
    elif index > 0:
        prev = rows[index - 1]
        lat = max(-89.9, min(89.9, here.lat + (here.lat - prev.lat)))
        lon = _fold(here.lon + (here.lon - prev.lon))
        template = here
    else:
        lat, lon, template = max(-89.9, min(89.9, here.lat + 0.1)), here.lon, here
    new = replace(template, name=_new_name(rows), lat=lat, lon=lon, eta_utc=None,
                  etd_utc=None, other_times=(), waypoint_extras={}, leg_extras=dict(template.leg_extras))
    out.insert(index + 1, new)
    return out


def delete(rows: list[PlanRow], index: int) -> list[PlanRow]:
    if len(rows) <= 2:
        raise InputError(f"a plan needs at least 2 waypoints; cannot delete {rows[index].name!r}")
    out = list(rows)
    del out[index]
    return end_times_dropped(out)  # a new first or last waypoint keeps only its own end


def move(rows: list[PlanRow], index: int, step: int) -> list[PlanRow]:
    """Swap a waypoint with its neighbour; leg settings stay with the row's position in the
    sequence (the leg into slot k keeps its sailing, speed and limits)."""
    j = index + step
    if not 0 <= j < len(rows):
        return list(rows)
    out = list(rows)
    a, b = out[index], out[j]
    out[index] = replace(a, name=b.name, lat=b.lat, lon=b.lon,
                         arrival_radius_m=b.arrival_radius_m, waypoint_extras=b.waypoint_extras,
                         eta_utc=b.eta_utc, etd_utc=b.etd_utc, other_times=b.other_times)
    out[j] = replace(b, name=a.name, lat=a.lat, lon=a.lon,
                     arrival_radius_m=a.arrival_radius_m, waypoint_extras=a.waypoint_extras,
                     eta_utc=a.eta_utc, etd_utc=a.etd_utc, other_times=a.other_times)
    # no arrival time at the departure point, no departure time at the destination
    return end_times_dropped(out)


def reverse(rows: list[PlanRow]) -> list[PlanRow]:
    """The plan sailed the other way: waypoints in reverse order; each leg keeps its settings
    (sailing, speed, limits swapped port <-> starboard since the direction of travel flips).
    The schedule is dropped: its times do not apply the other way (as ``Route.reversed``)."""
    n = len(rows)
    out = []
    for i in range(n):
        wp = rows[n - 1 - i]
        # the leg into new slot i is old leg from wp(n-1-i) to wp(n-i), described on row n-i
        src = rows[n - i] if i > 0 else rows[0]
        out.append(replace(
            src, name=wp.name, lat=wp.lat, lon=wp.lon, arrival_radius_m=wp.arrival_radius_m,
            waypoint_extras=wp.waypoint_extras,
            xtl_port_m=src.xtl_stbd_m if i > 0 else None,
            xtl_stbd_m=src.xtl_port_m if i > 0 else None,
            turn_radius_m=(rows[n - 1 - i].turn_radius_m if 0 < i else None),
            eta_utc=None, etd_utc=None, other_times=(),
        ))
    return out


def _midpoint(a: PlanRow, b: PlanRow) -> tuple[float, float]:
    from passagelog.nav.geodesic import direct, inverse

    s12, azi1, _ = inverse(a.lat, a.lon, b.lat, b.lon)
    lat, lon, _ = direct(a.lat, a.lon, azi1, s12 / 2.0)
    return round(lat, 6), _fold(round(lon, 6))


def _fold(lon: float) -> float:
    return (lon + 180.0) % 360.0 - 180.0


def _new_name(rows: list[PlanRow]) -> str:
    names = {r.name for r in rows}
    k = len(rows) + 1
    while f"WP{k}" in names:
        k += 1
    return f"WP{k}"


# --- computed columns ---

def _solve(a: PlanRow, b: PlanRow, sailing: str):
    """(distance_m, initial_course, final_course) for one sailing, by the nav layer."""
    from passagelog.nav.legs import make_leg

    leg = make_leg(a.lat, a.lon, b.lat, b.lon, sailing, "wgs84")
    return leg.distance_m, leg.initial_course, leg.final_course


def signed_alteration(course_in: float, course_out: float) -> float:
    """Course alteration from ``course_in`` to ``course_out`` in (-180, 180], + to starboard."""
    d = (course_out - course_in) % 360.0
    return d - 360.0 if d > 180.0 else d


def wheel_over_m(turn_radius_m: float, alteration_deg: float) -> float:
    """Distance before the waypoint at which the turn starts, R tan(A/2), for a turn of radius
    R tangent to both legs (the geometry of a circular arc inscribed in the angle between the
    legs; reaction allowance not included; REFERENCE.md, IMO MSC.74(69) notes, from memory)."""
    return turn_radius_m * math.tan(math.radians(abs(alteration_deg)) / 2.0)


def compute(rows: list[PlanRow], departure_utc: datetime | None) -> list[RowFigures]:
    """Computed columns for each row; a problem on one leg is reported on that row and the
    sums go on without it."""
    n = len(rows)
    raw: list[dict] = [dict() for _ in range(n)]
    for i in range(1, n):
        a, b = rows[i - 1], rows[i]
        solved = {}
        for sailing in ("great-circle", "rhumb"):
            try:
                solved[sailing] = _solve(a, b, sailing)
            except Exception as exc:  # noqa: BLE001 - shown beside the row, never fatal
                if sailing == b.sailing:
                    raw[i]["problem"] = f"{sailing}: {exc}"
        gc, rl, own = solved.get("great-circle"), solved.get("rhumb"), solved.get(b.sailing)
        raw[i].update(gc_distance_m=gc[0] if gc else None,
                      rhumb_distance_m=rl[0] if rl else None)
        if own is not None:
            raw[i].update(distance_m=own[0], initial_course=own[1], final_course=own[2])
    out: list[RowFigures] = []
    cum = 0.0
    # t: departure from the previous waypoint (row 1: its fixed ETD, else the voyage's)
    t = rows[0].etd_utc if n and rows[0].etd_utc is not None else departure_utc
    # the last fixed time before this row (time, cumulative distance, row): the required
    # speed to a fixed ETA is the distance from there over the time from there
    anchor = (t, 0.0, 0) if t is not None else None
    for i in range(n):
        r = raw[i]
        alteration = wo = None
        if 0 < i < n - 1 and "final_course" in r and "initial_course" in raw[i + 1]:
            alteration = signed_alteration(r["final_course"], raw[i + 1]["initial_course"])
            radius = rows[i].turn_radius_m
            if radius:
                wo = wheel_over_m(radius, alteration)
        leg_time = None
        if "distance_m" in r:
            cum += r["distance_m"]
            speed = rows[i].speed_kn
            if speed:
                leg_time = travel_seconds(r["distance_m"], speed)
        problem = r.get("problem", "")
        row = rows[i]
        planned = required = None
        if i == 0:
            eta = None
        else:
            if leg_time is not None and t is not None:
                planned = t + timedelta(seconds=leg_time)
            eta = row.eta_utc if row.eta_utc is not None else planned
            if row.eta_utc is not None and anchor is not None and "distance_m" in r:
                span = (row.eta_utc - anchor[0]).total_seconds()
                if span > 0:
                    required = (cum - anchor[1]) / NM_M / (span / 3600.0)
                else:
                    problem = problem or (
                        f"fixed ETA {_hm(row.eta_utc)} is not after the departure from "
                        f"{rows[anchor[2]].name} ({_hm(anchor[0])})")
            if eta is None and t is not None and not problem:
                problem = "no planned speed: later ETAs unknown"
        fixed_etd = row.etd_utc if i == 0 or i < n - 1 else None  # none at the destination
        etd = fixed_etd if fixed_etd is not None else (eta if i > 0 else t)
        if (i > 0 and fixed_etd is not None and eta is not None and fixed_etd < eta
                and not problem):
            problem = f"fixed ETD {_hm(fixed_etd)} is before the ETA {_hm(eta)}"
        out.append(RowFigures(
            distance_m=r.get("distance_m"), gc_distance_m=r.get("gc_distance_m"),
            rhumb_distance_m=r.get("rhumb_distance_m"), initial_course=r.get("initial_course"),
            final_course=r.get("final_course"), cumulative_m=cum, leg_time_s=leg_time,
            eta_utc=eta, etd_utc=etd, planned_arrival_utc=planned, required_kn=required,
            required_from=anchor[2] if required is not None else None,
            alteration_deg=alteration, wheel_over_m=wo, problem=problem,
        ))
        t = etd
        if i > 0 and (row.eta_utc is not None or fixed_etd is not None) and etd is not None:
            anchor = (etd, cum, i)
    return out


def _hm(t: datetime) -> str:
    return t.astimezone(timezone.utc).strftime("%d %H:%MZ")


def check_schedule(rows: list[PlanRow], departure_utc: datetime | None = None) -> None:
    """Refuse fixed times out of order along the route (an ETA before an earlier fixed
    time or the planned departure, an ETD before its own ETA), naming the waypoints."""
    last = None  # (time, what)
    if departure_utc is not None and rows and rows[0].etd_utc is None:
        last = (departure_utc, f"the planned departure from {rows[0].name}")
    for i, row in enumerate(rows):
        for label, when in (("ETA", row.eta_utc), ("ETD", row.etd_utc)):
            if when is None:
                continue
            if last is not None and when < last[0]:
                raise InputError(
                    f"schedule: {label} {_hm(when)} at row {i + 1} ({row.name}) is before "
                    f"{last[1]} {_hm(last[0])}; fixed times must run in order along the route")
            last = (when, f"the {label} at row {i + 1} ({row.name})")


def parse_schedule_time(text: str, ref: datetime | None, what: str) -> datetime | None:
    """A fixed ETA or ETD typed in the editor, in UTC: empty for none; ISO 8601
    (``2026-05-03T08:00Z``; no zone means UTC; ship's time with its zone, ``... ZD-1``, is
    turned into UTC), or day and time as the table shows them (``03 08:00Z``, ``030800Z``),
    in the month of ``ref`` (the computed time at that waypoint, or the departure)."""
    import re

    from passagelog.nav.zonetime import parse_time_utc

    t = text.strip()
    if not t:
        return None
    m = re.fullmatch(r"(\d{1,2})\s*(\d{2}):?(\d{2})\s*(?:Z|UTC)?", t, re.IGNORECASE)
    if m is None:
        try:
            return parse_time_utc(t, 0)
        except InputError as exc:
            if re.match(r"\d{4}-\d{2}-\d{2}[Tt ]\d{2}:\d{2}", t):
                raise InputError(f"{what}: {exc}") from None  # the shape is right: say why
            raise InputError(f"{what} {t!r} is not a time in UTC; type e.g. "
                             "2026-05-03T08:00Z or 03 08:00Z (day and time)") from None
    if ref is None:
        raise InputError(f"{what} {t!r}: give the full date, e.g. 2026-05-03T08:00Z (no "
                         "departure time to take the month from)")
    ref = ref.astimezone(timezone.utc)
    day, hour, minute = int(m[1]), int(m[2]), int(m[3])
    if hour > 23 or minute > 59:
        raise InputError(f"{what} {t!r}: hours run 00-23 and minutes 00-59")
    try:
        return ref.replace(day=day, hour=hour, minute=minute, second=0, microsecond=0)
    except ValueError:
        raise InputError(f"{what} {t!r}: day {day} is not in {ref:%Y-%m}; give the full "
                         f"date, e.g. {ref:%Y-%m}-01T{hour:02d}:{minute:02d}Z") from None


# --- parsing of the editor's fields (NM and knots at the edge) ---

def parse_optional_number(text: str, what: str, *, unit: str, low: float = 0.0,
                          high: float | None = None) -> float | None:
    """A number typed in a field, or None for an empty field."""
    t = text.strip()
    if not t:
        return None
    try:
        v = float(t)
    except ValueError:
        raise InputError(f"{what} {text!r} is not a number ({unit})") from None
    if not math.isfinite(v):
        raise InputError(f"{what} {text!r} must be a finite number ({unit})")
    if v < low:
        raise InputError(f"{what} {v:g} {unit} is below {low:g}")
    if high is not None and v > high:
        raise InputError(f"{what} {v:g} {unit} is above {high:g}")
    return v


def parse_nm(text: str, what: str) -> float | None:
    v = parse_optional_number(text, what, unit="NM", high=10_000.0)
    return None if v is None else v * NM_M


def parse_limit(text: str, what: str) -> float | None:
    """A cross-track limit in NM (more than 0; an empty field: no limit on that side)."""
    v = parse_nm(text, what)
    if v is not None and v <= 0.0:
        raise InputError(f"{what} must be more than 0 NM (leave it empty for no limit)")
    return v


def first_rows(lat: float = 0.0, lon: float = 0.0) -> list[PlanRow]:
    """A new plan's first two rows, the departure and the destination, to be edited: at
    ``lat``/``lon`` (the latest fix, say) and one degree of latitude north of it."""
    return [PlanRow(name="Departure", lat=lat, lon=lon),
            PlanRow(name="Destination", lat=min(89.0, lat + 1.0), lon=lon)]


def parse_sailing(text: str) -> str:
    t = text.strip().lower().replace(" ", "-")
    aliases = {"gc": "great-circle", "great-circle": "great-circle", "rl": "rhumb",
               "rhumb": "rhumb", "rhumb-line": "rhumb"}
    if t not in aliases:
        raise InputError(f"sailing {text!r} is not one of: {', '.join(SAILINGS)} (or GC, RL)")
    return aliases[t]


def other_schedules_note(route) -> str:
    """For the Plan's head: which schedule the table shows when the route carries several
    (an IEC 61174 route file may name more than one), '' when it carries one or none."""
    if route is None:
        return ""
    names = list(dict.fromkeys(item.schedule_name for item in route.schedule))
    if len(names) < 2:
        return ""
    main = route.main_schedule_name() or "(unnamed)"
    return (f"schedule {main} (1 of {len(names)}; the others are kept as imported, "
            "not shown)")

