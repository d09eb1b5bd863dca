"""The air navigation log: per leg TC, wind correction, TH, variation, MH, deviation, CH,
distance, ground speed, time en route, ETA, fuel for the leg and fuel remaining.

The layout follows the navigation log of the FAA Pilot's Handbook of Aeronautical Knowledge
(FAA-H-8083-25, navigation chapter): the wind triangle gives the true heading and ground speed
for the true course; true -> magnetic -> compass apply variation and deviation ("east is
least, west is best" going from true toward compass; common practice).

Per-leg inputs may be one value for all legs or a sequence with one value per leg. The true
airspeed of a leg is the ``tas_kn`` given, else the leg's planned speed. The true course of a
great-circle leg is its initial course (the log's single TC per leg); a long great-circle leg
should be split into shorter legs, as it is flown.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import datetime, timedelta
from typing import Sequence, TypeVar

from passagelog.errors import InputError
from passagelog.model import Route
from passagelog.nav.earth import WGS84, Earth, get_earth
from passagelog.nav.legs import leg as solve_leg
from passagelog.nav.triangles import magnetic_to_compass, true_to_magnetic, wind_triangle
from passagelog.nav.units import KN_MPS, NM_M
from passagelog.nav.zonetime import format_utc

T = TypeVar("T")


@dataclass(frozen=True)
class AirLegRow:
    leg: int
    from_name: str
    to_name: str
    true_course: float
    tas_kn: float
    wind_from: float
    wind_kn: float
    wca: float
    true_heading: float
    variation_e: float
    magnetic_heading: float
    deviation_e: float
    compass_heading: float
    distance_m: float
    ground_speed_kn: float
    ete_s: float
    eta_utc: datetime | None
    fuel_leg: float | None
    fuel_remaining: float | None


def _per_leg(name: str, value: T | Sequence[T], n: int) -> list[T]:
    if isinstance(value, (list, tuple)):
        if len(value) != n:
            raise InputError(f"{name} has {len(value)} values; the route has {n} legs")
        return list(value)
    return [value] * n  # type: ignore[list-item]


def air_nav_log(route: Route, *, tas_kn: float | Sequence[float | None] | None = None,
                wind_from: float | Sequence[float] = 0.0,
                wind_kn: float | Sequence[float] = 0.0,
                variation_e: float | Sequence[float] = 0.0,
                deviation_e: float | Sequence[float] = 0.0,
                departure_utc: datetime | None = None,
                fuel_flow_per_h: float | None = None, fuel_start: float | None = None,
                earth: Earth | str = WGS84) -> list[AirLegRow]:
    """The navigation log of ``route`` (see the module docstring)."""
    earth = get_earth(earth)
    n = route.leg_count
    tas = _per_leg("true airspeed", tas_kn, n)
    winds_from = _per_leg("wind direction", wind_from, n)
    winds_kn = _per_leg("wind speed", wind_kn, n)
    variations = _per_leg("variation", variation_e, n)
    deviations = _per_leg("deviation", deviation_e, n)
    wps = route.waypoints
    rows: list[AirLegRow] = []
    clock = departure_utc
    fuel = fuel_start
    for k, plan in enumerate(route.legs):
        a, b = wps[k], wps[k + 1]
        speed = tas[k] if tas[k] is not None else plan.speed_kn
        if not speed:
            raise InputError(
                f"leg {k + 1} ({a.name} to {b.name}) has no true airspeed: give the TAS or a "
                "planned speed for the leg"
            )
        sol = solve_leg(a.lat, a.lon, b.lat, b.lon, plan.sailing, earth)
        tri = wind_triangle(sol.initial_course, speed, winds_from[k], winds_kn[k])
        mh = true_to_magnetic(tri.true_heading, variations[k])
        ch = magnetic_to_compass(mh, deviations[k])
        ete = sol.distance_m / (tri.ground_speed_kn * KN_MPS)
        eta = clock + timedelta(seconds=ete) if clock is not None else None
        clock = eta
        burn = fuel_flow_per_h * ete / 3600.0 if fuel_flow_per_h is not None else None
        if fuel is not None and burn is not None:
            fuel = fuel - burn
        rows.append(AirLegRow(
            leg=k + 1, from_name=a.name, to_name=b.name, true_course=sol.initial_course,
            tas_kn=speed, wind_from=winds_from[k], wind_kn=winds_kn[k], wca=tri.wca,
            true_heading=tri.true_heading, variation_e=variations[k], magnetic_heading=mh,
            deviation_e=deviations[k], compass_heading=ch, distance_m=sol.distance_m,
            ground_speed_kn=tri.ground_speed_kn, ete_s=ete, eta_utc=eta, fuel_leg=burn,
            fuel_remaining=fuel if burn is not None else None,
        ))
    return rows


def _ew(value: float) -> str:
    if value == 0:
        return "0"
    return f"{abs(value):.1f}{'E' if value > 0 else 'W'}"


NAV_LOG_COLUMNS: dict[str, str] = {
    "leg": "leg number",
    "from": "from",
    "to": "to",
    "tc": "true course, degrees",
    "wind": "wind from, degrees / knots",
    "tas_kn": "true airspeed, knots",
    "wca": "wind correction angle, degrees (+R, -L)",
    "th": "true heading, degrees",
    "var": "variation (E/W)",
    "mh": "magnetic heading, degrees",
    "dev": "deviation (E/W)",
    "ch": "compass heading, degrees",
    "dist_nm": "distance, NM",
    "gs_kn": "ground speed, knots",
    "ete": "time en route, h:mm",
    "eta_utc": "ETA, UTC",
    "fuel_leg": "fuel for the leg",
    "fuel_rem": "fuel remaining",
}


def nav_log_records(rows: list[AirLegRow]) -> list[dict]:
    out = []
    for r in rows:
        minutes = round(r.ete_s / 60.0)
        out.append({
            "leg": r.leg, "from": r.from_name, "to": r.to_name,
            "tc": f"{r.true_course:05.1f}",
            "wind": f"{r.wind_from:03.0f}/{r.wind_kn:g}",
            "tas_kn": r.tas_kn,
            "wca": f"{r.wca:+.1f}",
            "th": f"{r.true_heading:05.1f}",
            "var": _ew(r.variation_e),
            "mh": f"{r.magnetic_heading:05.1f}",
            "dev": _ew(r.deviation_e),
            "ch": f"{r.compass_heading:05.1f}",
            "dist_nm": round(r.distance_m / NM_M, 1),
            "gs_kn": round(r.ground_speed_kn, 1),
            "ete": f"{minutes // 60}:{minutes % 60:02d}",
            "eta_utc": format_utc(r.eta_utc) if r.eta_utc else None,
            "fuel_leg": None if r.fuel_leg is None else round(r.fuel_leg, 1),
            "fuel_rem": None if r.fuel_remaining is None else round(r.fuel_remaining, 1),
        })
    return out
