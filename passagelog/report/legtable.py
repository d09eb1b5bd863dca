"""The plan's leg table: the passage plan as a navigator reads it, leg by leg.

One row per leg (leg k runs from waypoint k to k+1, 1-based): sailing, initial and final
course, distance and cumulative distance, planned speed and time on the leg, ETD/ETA from the
planned departure, cross-track limits, turn radius and wheel-over distance at the leg's end,
the notes, and what the great circle saves over the rhumb line between the same waypoints.

ETAs are chained from the departure at the planned speeds with no stay at waypoints; a leg
without a planned speed stops the chain (later ETAs are unknown, not guessed). Ship's time at
a waypoint is given in the zone of that waypoint's longitude (ZD = lon/15 rounded), as it is
usually quoted for arrival.
"""

from __future__ import annotations

from dataclasses import asdict, dataclass
from datetime import datetime, timedelta

from passagelog.model import Route
from passagelog.nav.earth import WGS84, Earth, get_earth
from passagelog.errors import GeometryError
from passagelog.nav.fixing import course_alteration, wheel_over_distance_m
from passagelog.nav.geodesic import inverse
from passagelog.nav.legs import leg as solve_leg
from passagelog.nav.rhumb import rhumb_inverse
from passagelog.nav.units import KN_MPS, NM_M
from passagelog.nav.zonetime import format_utc, format_zd, ship_time, zd_from_lon


@dataclass(frozen=True)
class LegRow:
    """One leg of the plan, in the house units (metres, seconds, knots, degrees true)."""

    leg: int
    from_name: str
    to_name: str
    sailing: str
    initial_course: float
    final_course: float
    distance_m: float
    cumulative_m: float
    speed_kn: float | None
    duration_s: float | None
    etd_utc: datetime | None
    eta_utc: datetime | None
    eta_zd_minutes: int
    xtl_port_m: float | None
    xtl_stbd_m: float | None
    turn_radius_m: float | None
    alteration_deg: float | None
    wheel_over_m: float | None
    notes: str
    great_circle_m: float
    rhumb_m: float

    @property
    def saving_m(self) -> float:
        """Distance the great circle saves over the rhumb line between the leg's ends."""
        return self.rhumb_m - self.great_circle_m


def plan_leg_table(route: Route, *, departure_utc: datetime | None = None,
                   earth: Earth | str = WGS84) -> list[LegRow]:
    """The leg table of ``route`` departing at ``departure_utc`` (or without times)."""
    earth = get_earth(earth)
    wps = route.waypoints
    solutions = [
        solve_leg(wps[k].lat, wps[k].lon, wps[k + 1].lat, wps[k + 1].lon,
                  route.legs[k].sailing, earth)
        for k in range(route.leg_count)
    ]
    rows: list[LegRow] = []
    cumulative = 0.0
    clock = departure_utc
    for k, (plan, sol) in enumerate(zip(route.legs, solutions)):
        a, b = wps[k], wps[k + 1]
        cumulative += sol.distance_m
        duration = (
            sol.distance_m / (plan.speed_kn * KN_MPS) if plan.speed_kn else None
        )
        etd = clock
        eta = etd + timedelta(seconds=duration) if (etd is not None and duration) else None
        clock = eta
        alteration = wheel_over = None
        if k + 1 < route.leg_count:
            alteration = course_alteration(sol.final_course, solutions[k + 1].initial_course)
            if plan.turn_radius_m:
                try:
                    wheel_over = wheel_over_distance_m(alteration, plan.turn_radius_m)
                except GeometryError:  # a reversal has no turn tangent to both legs
                    wheel_over = None
        if plan.sailing == "great-circle":
            gc_m, rl_m = sol.distance_m, rhumb_inverse(a.lat, a.lon, b.lat, b.lon, earth)[0]
        else:
            gc_m, rl_m = inverse(a.lat, a.lon, b.lat, b.lon, earth)[0], sol.distance_m
        rows.append(LegRow(
            leg=k + 1, from_name=a.name, to_name=b.name, sailing=plan.sailing,
            initial_course=sol.initial_course, final_course=sol.final_course,
            distance_m=sol.distance_m, cumulative_m=cumulative, speed_kn=plan.speed_kn,
            duration_s=duration, etd_utc=etd, eta_utc=eta,
            eta_zd_minutes=zd_from_lon(b.lon) * 60,
            xtl_port_m=plan.xtl_port_m, xtl_stbd_m=plan.xtl_stbd_m,
            turn_radius_m=plan.turn_radius_m, alteration_deg=alteration,
            wheel_over_m=wheel_over, notes=plan.notes, great_circle_m=gc_m, rhumb_m=rl_m,
        ))
    return rows


def _nm(metres: float | None, digits: int = 1) -> float | None:
    return None if metres is None else round(metres / NM_M, digits)


def _ship(dt: datetime | None, zd_minutes: int) -> str | None:
    if dt is None:
        return None
    local = ship_time(dt, zd_minutes)
    return f"{local:%Y-%m-%d %H:%M} ({format_zd(zd_minutes)})"


#: Columns of the leg table as exported (CSV, JSON, Markdown, HTML), with their meaning.
LEG_TABLE_COLUMNS: dict[str, str] = {
    "leg": "leg number (leg k runs from waypoint k to k+1)",
    "from": "waypoint the leg starts at",
    "to": "waypoint the leg ends at",
    "sailing": "great-circle or rhumb",
    "initial_course": "course at the start, degrees true",
    "final_course": "course at the end, degrees true",
    "distance_nm": "leg distance, NM",
    "cumulative_nm": "distance from the first waypoint, NM",
    "speed_kn": "planned speed, knots",
    "time_h": "time on the leg at the planned speed, hours",
    "etd_utc": "planned departure from the leg's start, UTC",
    "eta_utc": "planned arrival at the leg's end, UTC",
    "eta_ship": "planned arrival in the zone time of the leg's end (ZD in brackets)",
    "xtl_port_nm": "cross-track limit to port, NM",
    "xtl_stbd_nm": "cross-track limit to starboard, NM",
    "turn_radius_nm": "turn radius at the leg's end, NM",
    "alteration": "course alteration at the leg's end, degrees (+ starboard)",
    "wheel_over_nm": "wheel-over distance before the leg's end, NM",
    "gc_saving_nm": "distance the great circle saves over the rhumb line, NM",
    "notes": "notes",
}


def leg_table_records(rows: list[LegRow]) -> list[dict]:
    """Rows as plain records with the exported column names and units (NM, kn, hours)."""
    out = []
    for r in rows:
        out.append({
            "leg": r.leg,
            "from": r.from_name,
            "to": r.to_name,
            "sailing": r.sailing,
            "initial_course": round(r.initial_course, 1),
            "final_course": round(r.final_course, 1),
            "distance_nm": _nm(r.distance_m, 2),
            "cumulative_nm": _nm(r.cumulative_m, 2),
            "speed_kn": r.speed_kn,
            "time_h": None if r.duration_s is None else round(r.duration_s / 3600.0, 2),
            "etd_utc": format_utc(r.etd_utc) if r.etd_utc else None,
            "eta_utc": format_utc(r.eta_utc) if r.eta_utc else None,
            "eta_ship": _ship(r.eta_utc, r.eta_zd_minutes),
            "xtl_port_nm": _nm(r.xtl_port_m, 2),
            "xtl_stbd_nm": _nm(r.xtl_stbd_m, 2),
            "turn_radius_nm": _nm(r.turn_radius_m, 2),
            "alteration": None if r.alteration_deg is None else round(r.alteration_deg, 1),
            "wheel_over_nm": _nm(r.wheel_over_m, 2),
            "gc_saving_nm": _nm(r.saving_m, 2),
            "notes": r.notes,
        })
    return out


def leg_row_dict(row: LegRow) -> dict:
    """A row in house units (for JSON consumers that want metres and seconds)."""
    d = asdict(row)
    d["saving_m"] = row.saving_m
    return d
