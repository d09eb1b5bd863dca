#!/usr/bin/env python3
"""Make the demo voyages: plans, fix logs and the review figures expected by construction.

Everything here is invented: the vessels, the aircraft, the ports and the passages. The
tracks are built, not recorded: along each leg the craft's along-track distance and its
cross-track error are chosen functions of time, and each position is put exactly there with
the direct problem (the leg's point at the along-track distance, then the geodesic at right
angles to the leg for the cross-track error). So the XTE, the waypoint passages and the
deviation episodes that a review must find are known before any review is run; they are
written to ``expected.json`` beside the files.

Run ``python demo_voyages/generate.py`` from the project root. The output is deterministic
(seeded); a test checks that the committed files are what this script makes.
"""

from __future__ import annotations

import json
import math
import sys
from dataclasses import dataclass, field, replace
from datetime import datetime, timedelta, timezone
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))

from passagelog.formats import read_route, write_fixes, write_route  # noqa: E402
from passagelog.model import Fix, LogEntry  # noqa: E402
from passagelog.nav.geodesic import direct, inverse  # noqa: E402
from passagelog.nav.legs import make_leg  # noqa: E402
from passagelog.nav.triangles import wind_triangle  # noqa: E402
from passagelog.nav.units import KN_MPS, NM_M  # noqa: E402
from passagelog.nav.zonetime import format_utc, format_zd, zd_from_lon  # noqa: E402


@dataclass
class Bump:
    """A planned excursion off the track: XTE rises to ``peak_nm`` and back (raised cosine)."""

    leg: int  # 1-based
    start_nm: float  # along-track where it starts
    length_nm: float
    peak_nm: float  # + starboard, - port


@dataclass
class Scenario:
    key: str
    title: str
    craft: dict
    from_place: str
    to_place: str
    departure_utc: datetime
    zd_minutes: int
    fix_interval_s: float
    seed: int
    wander_nm: float  # amplitude of the ordinary steering wander
    wander_period_nm: float
    bumps: list[Bump] = field(default_factory=list)
    speed_wobble: float = 0.03  # fraction of the planned speed
    clock_changes: bool = False  # retard/advance clocks by the zone of the longitude
    wind: dict | None = None  # air scenario: wind from/speed, variation, fuel
    bad_lines: bool = True


SCENARIOS = [
    Scenario(
        key="ocean", title="Velasca to Port Amberly, spring crossing",
        craft={"name": "MV Saltmarsh Lantern", "kind": "ship", "usual_speed_kn": 14.0,
               "max_speed_kn": 18.0},
        from_place="Velasca", to_place="Port Amberly",
        departure_utc=datetime(2027, 4, 12, 6, 0, tzinfo=timezone.utc), zd_minutes=0,
        fix_interval_s=600.0, seed=4127, wander_nm=0.35, wander_period_nm=55.0,
        # North of a gale on the great-circle run: outside the 5 NM limit to starboard.
        bumps=[Bump(leg=4, start_nm=220.0, length_nm=260.0, peak_nm=7.4)],
        clock_changes=True,
    ),
    Scenario(
        key="coastal", title="Skellan Sound survey transit",
        craft={"name": "RV Ardent Quillon", "kind": "ship", "usual_speed_kn": 10.0,
               "max_speed_kn": 14.0},
        from_place="Morrow Quay", to_place="Caddow Haven",
        departure_utc=datetime(2027, 6, 3, 5, 30, tzinfo=timezone.utc), zd_minutes=-60,
        fix_interval_s=60.0, seed=2203, wander_nm=0.03, wander_period_nm=3.0,
        # Set toward the shoal side by the flood for a while: outside 0.15 NM to port.
        bumps=[Bump(leg=6, start_nm=1.0, length_nm=4.0, peak_nm=-0.24)],
    ),
    Scenario(
        key="air", title="Tarrow Field to Lindqvist Strip, survey positioning flight",
        craft={"name": "Whimbrel Seven", "kind": "aircraft", "usual_speed_kn": 135.0,
               "max_speed_kn": 170.0},
        from_place="Tarrow Field", to_place="Lindqvist Strip",
        departure_utc=datetime(2027, 9, 18, 8, 15, tzinfo=timezone.utc), zd_minutes=-120,
        fix_interval_s=30.0, seed=909, wander_nm=0.4, wander_period_nm=25.0,
        bumps=[Bump(leg=3, start_nm=8.0, length_nm=22.0, peak_nm=-3.1)],
        wind={"from": 250.0, "kn": 24.0, "variation": "3.5E", "deviation": "1W",
              "fuel_flow_per_h": 38.0, "fuel_start": 160.0, "tas_kn": 135.0},
    ),
]


def _course_at(leg, s: float) -> float:
    """The leg's direction at ``s``: toward its point one metre further on."""
    la, lo = leg.point_at(s)
    lb, lb_lon = leg.point_at(s + 1.0)
    return inverse(la, lo, lb, lb_lon)[1]


def _xte_nm(sc: Scenario, leg_no: int, s_nm: float, dist_nm: float, phase: float,
            limit_nm: float) -> float:
    """The chosen cross-track error: a steering wander kept within 40 % of the leg's
    tighter limit and tapered to nothing near the waypoints, plus any planned excursion."""
    taper_nm = min(6.0, dist_nm / 4.0)
    taper = max(0.0, min(1.0, s_nm / taper_nm, (dist_nm - s_nm) / taper_nm))
    amplitude = min(sc.wander_nm, 0.4 * limit_nm)
    x = amplitude * math.sin(2 * math.pi * s_nm / sc.wander_period_nm + phase) * taper
    for b in sc.bumps:
        if b.leg == leg_no and b.start_nm <= s_nm <= b.start_nm + b.length_nm:
            u = (s_nm - b.start_nm) / b.length_nm
            x += b.peak_nm * 0.5 * (1 - math.cos(2 * math.pi * u))
    return x


def build(sc: Scenario, out: Path) -> dict:
    route = replace(read_route(out / "route.csv"), name=sc.title)
    rng = np.random.default_rng(sc.seed)
    legs = [make_leg(a.lat, a.lon, b.lat, b.lon, plan.sailing)
            for a, b, plan in zip(route.waypoints, route.waypoints[1:], route.legs)]
    t = sc.departure_utc
    fixes: list[Fix] = []
    truth: list[dict] = []
    for k, (leg, plan) in enumerate(zip(legs, route.legs)):
        dist_nm = leg.distance_m / NM_M
        phase = float(rng.uniform(0, 2 * math.pi))
        wobble_phase = float(rng.uniform(0, 2 * math.pi))
        s = 0.0 if not fixes else truth[-1]["carry_m"]
        speed_kn = plan.speed_kn
        limit_nm = min(x for x in (plan.xtl_port_m, plan.xtl_stbd_m, 1e9) if x) / NM_M
        while s <= leg.distance_m:
            s_nm = s / NM_M
            xte = _xte_nm(sc, k + 1, s_nm, dist_nm, phase, limit_nm) * NM_M
            lat, lon = leg.point_at(s)
            course = _course_at(leg, s)
            if abs(xte) > 0:
                lat, lon, _ = direct(lat, lon, course + (90.0 if xte > 0 else -90.0), abs(xte))
            heading = None
            if sc.wind:  # an aircraft's heading and ground speed follow from the wind triangle
                tri = wind_triangle(course, sc.wind["tas_kn"], sc.wind["from"], sc.wind["kn"])
                v = tri.ground_speed_kn
                heading = round(tri.true_heading % 360.0, 1) % 360.0
            else:
                v = speed_kn * (1 + sc.speed_wobble * math.sin(s_nm / 17.0 + wobble_phase))
            # 1e-9 degree is 0.1 mm: the files do not change with the last bits of the math
            fixes.append(Fix(time_utc=t, lat=round(lat, 9), lon=round(lon, 9), method="gnss",
                             sog_kn=round(v, 1),
                             cog=round(course % 360.0, 1) % 360.0, heading=heading,
                             hdop=round(float(rng.uniform(0.6, 1.4)), 1),
                             satellites=int(rng.integers(7, 13)), fix_mode="A"))
            truth.append({"time_utc": format_utc(t), "leg": k + 1, "along_m": s, "xte_m": xte,
                          "carry_m": 0.0})
            s += v * KN_MPS * sc.fix_interval_s
            t += timedelta(seconds=sc.fix_interval_s)
        truth[-1]["carry_m"] = s - leg.distance_m
    entries = [LogEntry(time_utc=sc.departure_utc, kind="departure",
                        text=f"Departed {sc.from_place}")]
    if sc.clock_changes:
        entries += _clock_changes(sc, fixes)
    entries.append(LogEntry(time_utc=fixes[-1].time_utc, kind="arrival",
                            text=f"Arrived {sc.to_place}"))
    with open(out / "fixes.nmea", "w", encoding="ascii", newline="") as fh:
        write_fixes(fixes, "nmea", fh)
    if sc.bad_lines:
        _spoil(out / "fixes.nmea")
    with open(out / "fixes.gpx", "w", encoding="utf-8") as fh:
        write_fixes(fixes, "gpx", fh)
    for fmt, name in (("rtz", "route.rtz"), ("gpx", "route.gpx")):
        with open(out / name, "w", encoding="utf-8") as fh:
            write_route(route, fmt, fh)
    expected = _expected(sc, route, legs, fixes, truth)
    voyage = {
        "title": sc.title, "craft": sc.craft, "from": sc.from_place, "to": sc.to_place,
        "departure_utc": format_utc(sc.departure_utc), "zd_minutes": sc.zd_minutes,
        "entries": [{"time_utc": format_utc(e.time_utc), "kind": e.kind, "text": e.text,
                     "zd_minutes": e.zd_minutes} for e in entries],
    }
    if sc.wind:
        voyage["air"] = sc.wind
    (out / "voyage.json").write_text(json.dumps(voyage, indent=1) + "\n", encoding="utf-8")
    (out / "expected.json").write_text(json.dumps(expected, indent=1) + "\n", encoding="utf-8")
    return expected


def _clock_changes(sc: Scenario, fixes: list[Fix]) -> list[LogEntry]:
    """Clocks retarded one hour at 23:00 ship's time once the longitude's zone is ahead."""
    out = []
    zd = sc.zd_minutes
    for f in fixes:
        zone = zd_from_lon(f.lon) * 60
        local = f.time_utc - timedelta(minutes=zd)
        if zone != zd and local.hour == 23 and local.minute < sc.fix_interval_s / 60:
            how = "retarded" if zone > zd else "advanced"
            zd += 60 if zone > zd else -60
            out.append(LogEntry(time_utc=f.time_utc.replace(minute=0, second=0,
                                                            microsecond=0),
                                kind="clock-change", zd_minutes=zd,
                                text=f"Clocks {how} 1 h; ship's time now zone {format_zd(zd)}"))
    return out


def _spoil(path: Path) -> None:
    """Put three faults of the kind seen in real logs into the NMEA file: a bad checksum,
    a sentence cut short, and a receiver reporting no fix (status V)."""
    lines = path.read_text(encoding="ascii").splitlines(keepends=True)
    # the faults fall on position sentences (RMC), not on the headings that follow them
    rmc = [x for x, line in enumerate(lines) if line[3:6] == "RMC"]
    n = len(rmc)
    i, j, k = rmc[n // 5], rmc[n // 2], rmc[(4 * n) // 5]
    body, _, cs = lines[i].rstrip("\r\n").rpartition("*")
    lines[i] = f"{body}*{(int(cs, 16) ^ 0x5A):02X}\r\n"
    lines[j] = lines[j][: len(lines[j]) // 2] + "\r\n"
    v = "$GPRMC,,V,,,,,,,,,,N"
    cks = 0
    for ch in v[1:]:
        cks ^= ord(ch)
    lines.insert(k, f"{v}*{cks:02X}\r\n")
    path.write_text("".join(lines), encoding="ascii", newline="")


def _expected(sc, route, legs, fixes, truth) -> dict:
    """Passages and episodes by construction (see the module docstring)."""
    passages = []
    for k in range(1, len(route.waypoints)):
        wp = route.waypoints[k]
        radius = wp.arrival_radius_m or 0.0
        for f, tr in zip(fixes, truth):
            if tr["leg"] < k:
                continue
            d = inverse(f.lat, f.lon, wp.lat, wp.lon)[0]
            if d <= radius or tr["leg"] > k:
                passages.append({"waypoint": k + 1, "name": wp.name,
                                 "first_fix_utc": tr["time_utc"],
                                 "within_radius": d <= radius})
                break
    episodes = []
    current = None
    for tr in truth:
        plan = route.legs[tr["leg"] - 1]
        limit = plan.xtl_stbd_m if tr["xte_m"] > 0 else plan.xtl_port_m
        out = limit is not None and abs(tr["xte_m"]) > limit
        if out and current is None:
            current = {"leg": tr["leg"], "side": "starboard" if tr["xte_m"] > 0 else "port",
                       "first_fix_utc": tr["time_utc"], "max_abs_xte_m": abs(tr["xte_m"])}
        elif out:
            current["max_abs_xte_m"] = max(current["max_abs_xte_m"], abs(tr["xte_m"]))
            current["last_fix_utc"] = tr["time_utc"]
        elif current is not None:
            current.setdefault("last_fix_utc", current["first_fix_utc"])
            current["back_inside_utc"] = tr["time_utc"]
            episodes.append(current)
            current = None
    for e in episodes:
        e["max_abs_xte_m"] = round(e["max_abs_xte_m"], 3)
    samples = [
        {k: (round(v, 3) if isinstance(v, float) else v) for k, v in tr.items() if k != "carry_m"}
        for tr in truth[:: max(1, len(truth) // 40)]
    ]
    return {
        "scenario": sc.key,
        "fixes": len(fixes),
        "first_fix_utc": truth[0]["time_utc"],
        "last_fix_utc": truth[-1]["time_utc"],
        "rejected_nmea_lines": 3 if sc.bad_lines else 0,
        # two of the three spoiled lines were fixes (bad checksum, cut short)
        "nmea_fixes": len(fixes) - (2 if sc.bad_lines else 0),
        "route_distance_m": round(sum(leg.distance_m for leg in legs), 3),
        "passages": passages,
        "episodes": episodes,
        "samples": samples,
    }


def main(argv: list[str] | None = None) -> None:
    """``generate.py [OUT_DIR]``: write the scenarios into OUT_DIR (default: beside this
    script). Each scenario's folder must already hold its ``route.csv``."""
    args = sys.argv[1:] if argv is None else argv
    out = Path(args[0]) if args else HERE
    for sc in SCENARIOS:
        folder = out / sc.key
        if folder.resolve() != (HERE / sc.key).resolve():
            folder.mkdir(parents=True, exist_ok=True)
            (folder / "route.csv").write_bytes((HERE / sc.key / "route.csv").read_bytes())
        exp = build(sc, folder)
        print(f"{sc.key}: {exp['fixes']} fixes, {len(exp['episodes'])} deviation episode(s)",
              file=sys.stderr)


if __name__ == "__main__":
    main()
