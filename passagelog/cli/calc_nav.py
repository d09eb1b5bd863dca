"""``passagelog calc`` dead reckoning, triangles and fixes.

``dr``, ``ep``, ``set-drift``, ``steer``, ``wind``, ``heading``, ``from-mark``, ``bearings``,
``ranges`` and ``alteration``. Human output by default; ``--json`` prints one object whose keys
are listed in each command's help and stay stable. Distances are given and shown in nautical
miles, speeds in knots, directions in degrees true unless said otherwise; JSON carries metres
and seconds beside them.
"""

from __future__ import annotations

import math
import re

import click

from passagelog.cli.common import emit_json, json_option
from passagelog.errors import InputError
from passagelog.nav.earth import EARTHS, get_earth
from passagelog.nav.units import HOUR_S, NM_M

# Negative decimal positions ("-33.9, 151.2") are values here, not options.
_VALUES_MAY_BE_NEGATIVE = {"ignore_unknown_options": True}


# --------------------------------------------------------------------------- shared pieces
def _earth_option(func):
    return click.option("--earth", "earth_name", type=click.Choice(list(EARTHS)),
                        default="wgs84", show_default=True,
                        help="wgs84 ellipsoid, or a sphere: 'sphere' (mean radius "
                             "6371008.8 m) or 'sphere-nm' (1' of arc = 1 NM).")(func)


def _positions(args: tuple[str, ...], names: tuple[str, ...]) -> list[tuple[float, float]]:
    from passagelog.nav.position import parse_position

    for word in args:
        if word.startswith("--"):
            raise click.UsageError(f"no such option: {word}")
    if len(args) != len(names):
        raise click.UsageError(
            f"expected {len(names)} position{'s' if len(names) > 1 else ''} "
            f"({' '.join(names)}), got {len(args)}; quote each position, e.g. \"50°N 4°W\"")
    out = []
    for text, name in zip(args, names):
        try:
            out.append(parse_position(text))
        except InputError as exc:
            raise exc.at(name) from None
    return out


def _one_position(text: str, name: str) -> tuple[float, float]:
    from passagelog.nav.position import parse_position

    try:
        return parse_position(text)
    except InputError as exc:
        raise exc.at(name) from None


def _fmt_pos(lat: float, lon: float) -> str:
    from passagelog.nav.position import format_position

    return format_position(lat, lon)


_DURATION_RE = re.compile(
    r"^\s*(?:(?P<h>\d+(?:\.\d*)?|\.\d+)\s*h)?\s*(?:(?P<m>\d+(?:\.\d*)?|\.\d+)\s*(?:m|min))?"
    r"\s*(?:(?P<s>\d+(?:\.\d*)?|\.\d+)\s*s)?\s*$", re.IGNORECASE)
_CLOCK_RE = re.compile(r"^\s*(\d+):([0-5]\d)(?::([0-5]\d(?:\.\d*)?))?\s*$")


def parse_duration_s(text: str, option: str = "--time") -> float:
    """A duration as seconds: ``2.5`` (hours), ``2h30m``, ``45m``, ``90min``, ``1:30``
    (h:mm), ``1:30:15`` (h:mm:ss), ``3600s``."""
    t = text.strip()
    try:
        hours = float(t)
    except ValueError:
        pass
    else:
        if not math.isfinite(hours) or hours < 0:
            raise InputError(f"{option} {text!r} must be a finite, non-negative duration")
        return hours * HOUR_S
    m = _CLOCK_RE.match(t)
    if m:
        return (int(m.group(1)) * HOUR_S + int(m.group(2)) * 60.0
                + (float(m.group(3)) if m.group(3) else 0.0))
    m = _DURATION_RE.match(t)
    if t and m and any(m.group(k) for k in "hms"):
        return (float(m.group("h") or 0) * HOUR_S + float(m.group("m") or 0) * 60.0
                + float(m.group("s") or 0))
    raise InputError(f"{option} {text!r} is not a duration; write hours (2.5), 2h30m, 45m, "
                     "90min, 1:30 (h:mm) or 1:30:15")


def _fmt_duration(seconds: float) -> str:
    total = round(seconds)
    h, rem = divmod(total, 3600)
    m, s = divmod(rem, 60)
    return f"{h}h{m:02d}m{s:02d}s" if s else f"{h}h{m:02d}m"


def _course(x: float | None) -> str:
    return "none" if x is None else f"{x:05.1f}°"


def _side(angle: float, right: str = "to starboard", left: str = "to port") -> str:
    if round(angle, 1) > 0:
        return f"{angle:.1f}° {right}"
    if round(angle, 1) < 0:
        return f"{-angle:.1f}° {left}"
    return "0.0°"


def _true_from(value: float, variation: str | None, what: str) -> float:
    """A bearing or radial given true, or magnetic when ``variation`` is given."""
    from passagelog.nav.triangles import magnetic_to_true, parse_ew

    if variation is None:
        return value
    return magnetic_to_true(value, parse_ew(variation, f"variation for the {what}"))


def _nm(value: float, option: str) -> float:
    if not math.isfinite(value) or value < 0:
        raise InputError(f"{option} {value!r} must be a finite, non-negative number of NM")
    return value * NM_M


# --------------------------------------------------------------------------- dead reckoning
@click.command("dr", context_settings=_VALUES_MAY_BE_NEGATIVE)
@click.argument("start", nargs=-1, metavar="START")
@click.option("--course", type=float, required=True, help="Course steered, degrees true.")
@click.option("--speed", "speed_kn", type=float, required=True,
              help="Speed through the water, knots.")
@click.option("--time", "time_text", required=True, metavar="DURATION",
              help="Time run: hours (2.5), 2h30m, 45m, 1:30 ...")
@_earth_option
@json_option
def dr(start, course, speed_kn, time_text, earth_name, as_json):
    """DR position after steering --course at --speed for --time from START (a rhumb line).

    JSON keys: lat, lon, course, speed_kn, elapsed_s, distance_m, distance_nm.
    """
    from passagelog.nav.triangles import dead_reckoning

    (p,) = _positions(start, ("START",))
    t = parse_duration_s(time_text)
    r = dead_reckoning(*p, course, speed_kn, t, get_earth(earth_name))
    if as_json:
        emit_json({"lat": r.lat, "lon": r.lon, "course": r.course, "speed_kn": r.speed_kn,
                   "elapsed_s": r.elapsed_s, "distance_m": r.distance_m,
                   "distance_nm": r.distance_m / NM_M})
        return
    click.echo(f"DR        {_fmt_pos(r.lat, r.lon)}")
    click.echo(f"run       {r.distance_m / NM_M:.2f} NM on {_course(r.course)} at "
               f"{r.speed_kn:.1f} kn in {_fmt_duration(r.elapsed_s)}")


@click.command("ep", context_settings=_VALUES_MAY_BE_NEGATIVE)
@click.argument("start", nargs=-1, metavar="START")
@click.option("--course", type=float, required=True, help="Course steered, degrees true.")
@click.option("--speed", "speed_kn", type=float, required=True,
              help="Speed through the water, knots.")
@click.option("--time", "time_text", required=True, metavar="DURATION",
              help="Time run: hours (2.5), 2h30m, 45m, 1:30 ...")
@click.option("--set", "set_deg", type=float, required=True,
              help="Direction the current flows toward, degrees true.")
@click.option("--drift", "drift_kn", type=float, required=True, help="Current speed, knots.")
@click.option("--leeway", "leeway_deg", type=float, default=0.0, show_default=True,
              help="Leeway angle, degrees; + when pushed to starboard (wind on the port "
                   "side), - to port.")
@_earth_option
@json_option
def ep(start, course, speed_kn, time_text, set_deg, drift_kn, leeway_deg, earth_name,
       as_json):
    """Estimated position: the DR from START corrected for a known current and leeway.

    JSON keys: lat, lon, dr_lat, dr_lon, water_track, course_made_good (null when no way is
    made good), speed_made_good_kn, distance_made_good_m, distance_made_good_nm, elapsed_s.
    """
    from passagelog.nav.triangles import estimated_position

    (p,) = _positions(start, ("START",))
    t = parse_duration_s(time_text)
    r = estimated_position(*p, course, speed_kn, t, set_deg, drift_kn, leeway_deg,
                           get_earth(earth_name))
    if as_json:
        emit_json({"lat": r.lat, "lon": r.lon, "dr_lat": r.dr_lat, "dr_lon": r.dr_lon,
                   "water_track": r.water_track, "course_made_good": r.course_made_good,
                   "speed_made_good_kn": r.speed_made_good_kn,
                   "distance_made_good_m": r.distance_made_good_m,
                   "distance_made_good_nm": r.distance_made_good_m / NM_M,
                   "elapsed_s": r.elapsed_s})
        return
    click.echo(f"EP        {_fmt_pos(r.lat, r.lon)}")
    click.echo(f"DR        {_fmt_pos(r.dr_lat, r.dr_lon)}")
    click.echo(f"made good {_course(r.course_made_good)} at {r.speed_made_good_kn:.2f} kn, "
               f"{r.distance_made_good_m / NM_M:.2f} NM in {_fmt_duration(r.elapsed_s)}")


@click.command("set-drift", context_settings=_VALUES_MAY_BE_NEGATIVE)
@click.argument("positions", nargs=-1, metavar="DR FIX")
@click.option("--time", "time_text", required=True, metavar="DURATION",
              help="Time since the last fix the DR was run from: 2.5, 2h30m, 1:30 ...")
@_earth_option
@json_option
def set_drift(positions, time_text, earth_name, as_json):
    """Set and drift of the current from the DR and the FIX for the same time.

    Set is the direction from the DR to the fix (where the current flows toward), drift the
    distance between them over the time since the last fix. JSON keys: set (null when the
    fix is on the DR), drift_kn, distance_m, distance_nm, elapsed_s.
    """
    from passagelog.nav.triangles import set_and_drift

    d, f = _positions(positions, ("DR", "FIX"))
    t = parse_duration_s(time_text)
    r = set_and_drift(*d, *f, t, get_earth(earth_name))
    if as_json:
        emit_json({"set": r.set, "drift_kn": r.drift_kn, "distance_m": r.distance_m,
                   "distance_nm": r.distance_m / NM_M, "elapsed_s": r.elapsed_s})
        return
    click.echo(f"set       {_course(r.set)}")
    click.echo(f"drift     {r.drift_kn:.2f} kn ({r.distance_m / NM_M:.2f} NM in "
               f"{_fmt_duration(r.elapsed_s)})")


@click.command("steer")
@click.option("--track", type=float, required=True, help="Track to make good, degrees true.")
@click.option("--speed", "stw_kn", type=float, default=None,
              help="Speed through the water, knots (gives the speed made good).")
@click.option("--smg", "smg_kn", type=float, default=None,
              help="Speed to make good over the ground, knots (gives the speed needed "
                   "through the water). Give --speed or --smg.")
@click.option("--set", "set_deg", type=float, required=True,
              help="Direction the current flows toward, degrees true.")
@click.option("--drift", "drift_kn", type=float, required=True, help="Current speed, knots.")
@click.option("--leeway", "leeway_deg", type=float, default=0.0, show_default=True,
              help="Expected leeway, degrees; + when pushed to starboard.")
@click.option("--distance", "distance_nm", type=float, default=None,
              help="Distance to run along the track, NM (gives the time to run).")
@json_option
def steer(track, stw_kn, smg_kn, set_deg, drift_kn, leeway_deg, distance_nm, as_json):
    """Course to steer to make good --track through a current.

    JSON keys: track, course_to_steer, correction_deg (+ starboard of the track),
    speed_through_water_kn, speed_made_good_kn, time_s (null without --distance).
    """
    from passagelog.nav.triangles import (
        course_for_speed_made_good,
        course_to_steer,
        time_to_cover_s,
    )

    if (stw_kn is None) == (smg_kn is None):
        raise click.UsageError("give exactly one of --speed (through the water) and --smg")
    if stw_kn is not None:
        r = course_to_steer(track, stw_kn, set_deg, drift_kn, leeway_deg)
    else:
        r = course_for_speed_made_good(track, smg_kn, set_deg, drift_kn, leeway_deg)
    time_s = None
    if distance_nm is not None:
        time_s = time_to_cover_s(_nm(distance_nm, "--distance"), r.speed_made_good_kn)
    if as_json:
        emit_json({"track": r.track, "course_to_steer": r.course_to_steer,
                   "correction_deg": r.correction_deg,
                   "speed_through_water_kn": r.speed_through_water_kn,
                   "speed_made_good_kn": r.speed_made_good_kn, "time_s": time_s})
        return
    click.echo(f"steer     {_course(r.course_to_steer)} ({_side(r.correction_deg)} of the "
               f"track {_course(r.track)})")
    click.echo(f"speed     {r.speed_through_water_kn:.2f} kn through the water, "
               f"{r.speed_made_good_kn:.2f} kn made good")
    if time_s is not None:
        click.echo(f"time      {_fmt_duration(time_s)} for {distance_nm:g} NM")


# --------------------------------------------------------------------------- air
_WIND_RE = re.compile(r"^\s*(\d+(?:\.\d*)?)\s*(?:°)?\s*[/@ ]\s*(\d+(?:\.\d*)?)\s*(?:kn|kt|kts)?\s*$",
                      re.IGNORECASE)


def parse_wind(text: str) -> tuple[float, float]:
    """``"045/40"`` (from 045° at 40 kn), ``"270@15"``, ``"045 40"``: (from, speed_kn)."""
    m = _WIND_RE.match(text)
    if not m:
        raise InputError(f"--wind {text!r} cannot be read; write DIRECTION/SPEED, the "
                         "direction it blows FROM in degrees true and the speed in knots, "
                         "e.g. 045/40")
    d, s = float(m.group(1)), float(m.group(2))
    if d > 360.0:
        raise InputError(f"--wind {text!r}: direction {d:g} is beyond 360°")
    return d % 360.0, s


@click.command("wind")
@click.option("--course", "true_course", type=float, default=None,
              help="True course to make good, degrees (solves for heading and GS).")
@click.option("--tas", "tas_kn", type=float, required=True, help="True airspeed, knots.")
@click.option("--wind", "wind_text", default=None, metavar="DIR/SPEED",
              help="Wind FROM direction (degrees true) and speed (kn), e.g. 045/40.")
@click.option("--heading", "true_heading", type=float, default=None,
              help="True heading flown, degrees (with --track and --gs: finds the wind).")
@click.option("--track", type=float, default=None, help="Track made good, degrees true.")
@click.option("--gs", "gs_kn", type=float, default=None, help="Ground speed made good, kn.")
@click.option("--variation", default=None, metavar="E/W",
              help="Magnetic variation (4°W, 3.5E, + = east): adds the magnetic heading.")
@click.option("--deviation", default=None, metavar="E/W",
              help="Compass deviation on that heading: adds the compass heading.")
@click.option("--distance", "distance_nm", type=float, default=None,
              help="Leg distance, NM (gives the time en route at the ground speed).")
@json_option
def wind(true_course, tas_kn, wind_text, true_heading, track, gs_kn, variation, deviation,
         distance_nm, as_json):
    """Wind triangle: heading and ground speed to make good a course, or the wind found.

    With --course, --tas and --wind: wind correction angle (+ right, - left), true heading and
    ground speed. JSON keys: true_course, true_heading, wca, ground_speed_kn, tas_kn,
    wind_from, wind_speed_kn, headwind_kn (- for a tailwind), crosswind_kn (+ from the right),
    magnetic_heading and compass_heading (null without --variation / --deviation), ete_s
    (null without --distance).

    With --heading, --tas, --track and --gs: the wind found. JSON keys: wind_from (null when
    calm), wind_speed_kn, wca, true_heading, tas_kn, track, ground_speed_kn.
    """
    from passagelog.nav.triangles import (
        convert_heading,
        find_wind,
        time_to_cover_s,
        wind_triangle,
    )

    forward = true_course is not None or wind_text is not None
    inverse = true_heading is not None or track is not None or gs_kn is not None
    if forward == inverse:
        raise click.UsageError("give either --course and --wind (heading and ground speed), "
                               "or --heading, --track and --gs (the wind found), with --tas")
    if inverse:
        if None in (true_heading, track, gs_kn):
            raise click.UsageError("finding the wind needs --heading, --track and --gs")
        if variation is not None or deviation is not None or distance_nm is not None:
            raise click.UsageError("--variation, --deviation and --distance go with --course")
        w = find_wind(true_heading, tas_kn, track, gs_kn)
        if as_json:
            emit_json({"wind_from": w.wind_from, "wind_speed_kn": w.wind_speed_kn,
                       "wca": w.wca, "true_heading": w.true_heading, "tas_kn": w.tas_kn,
                       "track": w.track, "ground_speed_kn": w.ground_speed_kn})
            return
        if w.wind_from is None:
            click.echo("wind      calm")
        else:
            click.echo(f"wind      from {_course(w.wind_from)} at {w.wind_speed_kn:.1f} kn")
        click.echo(f"WCA       {_side(w.wca, 'right (+)', 'left (-)')} (heading minus track)")
        return
    if true_course is None or wind_text is None:
        raise click.UsageError("the wind triangle needs --course, --tas and --wind")
    wf, ws = parse_wind(wind_text)
    r = wind_triangle(true_course, tas_kn, wf, ws)
    mh = ch = None
    if variation is not None or deviation is not None:
        h = convert_heading(r.true_heading, "true", variation or 0.0, deviation or 0.0)
        mh = h.magnetic if variation is not None else None
        ch = h.compass if deviation is not None else None
    ete = None
    if distance_nm is not None:
        ete = time_to_cover_s(_nm(distance_nm, "--distance"), r.ground_speed_kn)
    if as_json:
        emit_json({"true_course": r.true_course, "true_heading": r.true_heading, "wca": r.wca,
                   "ground_speed_kn": r.ground_speed_kn, "tas_kn": r.tas_kn,
                   "wind_from": r.wind_from, "wind_speed_kn": r.wind_speed_kn,
                   "headwind_kn": r.headwind_kn, "crosswind_kn": r.crosswind_kn,
                   "magnetic_heading": mh, "compass_heading": ch, "ete_s": ete})
        return
    click.echo(f"TC        {_course(r.true_course)}")
    click.echo(f"WCA       {_side(r.wca, 'right (+)', 'left (-)')}")
    click.echo(f"TH        {_course(r.true_heading)}")
    if mh is not None:
        click.echo(f"MH        {_course(mh)}")
    if ch is not None:
        click.echo(f"CH        {_course(ch)}")
    along = (f"headwind {r.headwind_kn:.1f} kn" if r.headwind_kn >= 0
             else f"tailwind {-r.headwind_kn:.1f} kn")
    click.echo(f"GS        {r.ground_speed_kn:.1f} kn ({along}, crosswind "
               f"{abs(r.crosswind_kn):.1f} kn from the "
               f"{'right' if r.crosswind_kn >= 0 else 'left'})")
    if ete is not None:
        click.echo(f"ETE       {_fmt_duration(ete)} for {distance_nm:g} NM")


@click.command("heading")
@click.argument("value", type=float)
@click.option("--given", "kind", type=click.Choice(["true", "magnetic", "compass"]),
              default="true", show_default=True, help="What VALUE is.")
@click.option("--variation", default="0", show_default=True, metavar="E/W",
              help="Magnetic variation: 4°W, 3.5 E, 4°30'W, or signed with + = east.")
@click.option("--deviation", default="0", show_default=True, metavar="E/W",
              help="Compass deviation on this heading, written the same way.")
@json_option
def heading(value, kind, variation, deviation, as_json):
    """VALUE (a heading, course or bearing) as true, magnetic and compass.

    From true toward compass subtract easterly and add westerly corrections; back from
    compass toward true add easterly ("correcting add east"). JSON keys: true, magnetic,
    compass, variation_e, deviation_e, compass_error_e (east positive).
    """
    from passagelog.nav.triangles import convert_heading, format_ew

    h = convert_heading(value, kind, variation, deviation)
    if as_json:
        emit_json({"true": h.true, "magnetic": h.magnetic, "compass": h.compass,
                   "variation_e": h.variation_e, "deviation_e": h.deviation_e,
                   "compass_error_e": h.compass_error_e})
        return
    click.echo(f"true      {_course(h.true)}")
    click.echo(f"variation {format_ew(h.variation_e)}")
    click.echo(f"magnetic  {_course(h.magnetic)}")
    click.echo(f"deviation {format_ew(h.deviation_e)}")
    click.echo(f"compass   {_course(h.compass)}  (compass error {format_ew(h.compass_error_e)})")


# --------------------------------------------------------------------------- fixes
@click.command("from-mark", context_settings=_VALUES_MAY_BE_NEGATIVE)
@click.argument("mark", nargs=-1, metavar="MARK")
@click.option("--bearing", type=float, default=None,
              help="Bearing of the mark observed at the ship, degrees true.")
@click.option("--radial", type=float, default=None,
              help="Radial FROM a beacon, measured at the beacon (instead of --bearing).")
@click.option("--range", "range_nm", type=float, required=True,
              help="Range (or distance from the beacon), NM.")
@click.option("--variation", default=None, metavar="E/W",
              help="The bearing or radial is magnetic, with this variation (for a radial, "
                   "the station's); true = magnetic + east variation.")
@_earth_option
@json_option
def from_mark(mark, bearing, radial, range_nm, variation, earth_name, as_json):
    """Position from the range and bearing of a known MARK, or a radial and distance.

    Solved on the ellipsoid: the bearing is the azimuth at the ship, the radial the azimuth
    at the beacon. JSON keys: lat, lon, bearing (at the ship toward the mark),
    bearing_from_mark (at the mark toward the ship), range_m, range_nm.
    """
    from passagelog.nav.fixing import position_from_mark, position_from_radial

    if (bearing is None) == (radial is None):
        raise click.UsageError("give exactly one of --bearing and --radial")
    (m,) = _positions(mark, ("MARK",))
    e = get_earth(earth_name)
    s = _nm(range_nm, "--range")
    if bearing is not None:
        r = position_from_mark(*m, _true_from(bearing, variation, "bearing"), s, e)
    else:
        r = position_from_radial(*m, radial, s, variation or 0.0, e)
    if as_json:
        emit_json({"lat": r.lat, "lon": r.lon, "bearing": r.bearing,
                   "bearing_from_mark": r.bearing_from_mark, "range_m": r.range_m,
                   "range_nm": r.range_m / NM_M})
        return
    click.echo(f"position  {_fmt_pos(r.lat, r.lon)}")
    click.echo(f"mark bears {_course(r.bearing)} at {r.range_m / NM_M:.2f} NM "
               f"(from the mark {_course(r.bearing_from_mark)})")


def _fix_record(f) -> dict:
    return {"lat": f.lat, "lon": f.lon, "cut_angle": f.cut_angle,
            "bearing1": f.bearing1, "range1_m": f.range1_m, "range1_nm": f.range1_m / NM_M,
            "bearing2": f.bearing2, "range2_m": f.range2_m, "range2_nm": f.range2_m / NM_M}


@click.command("bearings", context_settings=_VALUES_MAY_BE_NEGATIVE)
@click.argument("marks", nargs=-1, metavar="MARK1 MARK2")
@click.option("--bearing1", type=float, required=True, help="Bearing of MARK1, degrees true.")
@click.option("--bearing2", type=float, required=True, help="Bearing of MARK2, degrees true.")
@click.option("--variation", default=None, metavar="E/W",
              help="The bearings are magnetic, with this variation (+ = east).")
@click.option("--min-cut", "min_cut", type=float, default=15.0, show_default=True,
              help="Smallest angle of cut accepted, degrees.")
@_earth_option
@json_option
def bearings(marks, bearing1, bearing2, variation, min_cut, earth_name, as_json):
    """Fix from the bearings of two marks taken at the same time.

    JSON keys: lat, lon, cut_angle, bearing1, range1_m, range1_nm, bearing2, range2_m,
    range2_nm (bearings and ranges from the fix to each mark).
    """
    from passagelog.nav.fixing import fix_from_bearings

    m1, m2 = _positions(marks, ("MARK1", "MARK2"))
    b1 = _true_from(bearing1, variation, "bearings")
    b2 = _true_from(bearing2, variation, "bearings")
    f = fix_from_bearings(*m1, b1, *m2, b2, min_cut, get_earth(earth_name))
    if as_json:
        emit_json(_fix_record(f))
        return
    click.echo(f"fix       {_fmt_pos(f.lat, f.lon)}")
    click.echo(f"cut       {f.cut_angle:.1f}°")
    click.echo(f"ranges    mark 1 {f.range1_m / NM_M:.2f} NM, mark 2 {f.range2_m / NM_M:.2f} NM")


@click.command("ranges", context_settings=_VALUES_MAY_BE_NEGATIVE)
@click.argument("marks", nargs=-1, metavar="MARK1 MARK2")
@click.option("--range1", "range1_nm", type=float, required=True, help="Range of MARK1, NM.")
@click.option("--range2", "range2_nm", type=float, required=True, help="Range of MARK2, NM.")
@click.option("--dr", "dr_text", default=None, metavar="POSITION",
              help="DR position: the solution nearer to it is listed first.")
@click.option("--min-cut", "min_cut", type=float, default=0.0, show_default=True,
              help="Smallest angle of cut accepted, degrees.")
@_earth_option
@json_option
def ranges(marks, range1_nm, range2_nm, dr_text, min_cut, earth_name, as_json):
    """Fix from the ranges of two marks: both points where the range circles meet.

    Without --dr the point to the right of the line from MARK1 to MARK2 comes first.
    JSON keys: solutions (a list of two objects with the keys of 'calc bearings': lat, lon,
    cut_angle, bearing1, range1_m, range1_nm, bearing2, range2_m, range2_nm).
    """
    from passagelog.nav.fixing import fix_from_ranges

    m1, m2 = _positions(marks, ("MARK1", "MARK2"))
    d = _one_position(dr_text, "--dr") if dr_text is not None else None
    fixes = fix_from_ranges(*m1, _nm(range1_nm, "--range1"), *m2, _nm(range2_nm, "--range2"),
                            d, min_cut, get_earth(earth_name))
    if as_json:
        emit_json({"solutions": [_fix_record(f) for f in fixes]})
        return
    for k, f in enumerate(fixes, 1):
        note = " (nearer the DR)" if d is not None and k == 1 else ""
        click.echo(f"fix {k}     {_fmt_pos(f.lat, f.lon)}  cut {f.cut_angle:.1f}°{note}")


@click.command("alteration", context_settings=_VALUES_MAY_BE_NEGATIVE)
@click.argument("positions", nargs=-1, metavar="[FROM WAYPOINT TO]")
@click.option("--in", "course_in", type=float, default=None,
              help="Course of the incoming leg, degrees true (instead of positions).")
@click.option("--out", "course_out", type=float, default=None,
              help="Course of the outgoing leg, degrees true.")
@click.option("--sailing", type=click.Choice(["rhumb", "great-circle"]), default="rhumb",
              show_default=True, help="Kind of both legs (with positions).")
@click.option("--radius", "radius_nm", type=float, default=None, help="Turn radius, NM.")
@click.option("--speed", "speed_kn", type=float, default=None,
              help="Speed in the turn, knots (with --rot gives the radius).")
@click.option("--rot", "rot", type=float, default=None, help="Rate of turn, degrees/minute.")
@_earth_option
@json_option
def alteration(positions, course_in, course_out, sailing, radius_nm, speed_kn, rot,
               earth_name, as_json):
    """Course alteration at a waypoint (+ starboard) and the wheel-over distance.

    Give the legs as three positions FROM WAYPOINT TO, or their courses with --in and
    --out. A turn radius (--radius, or --speed with --rot: R = 0.955 V/ROT NM) gives the
    wheel-over distance R tan(A/2) before the waypoint (no allowance for the ship's
    reaction) and, with positions, the wheel-over point on the incoming leg.
    JSON keys: course_in, course_out, alteration, radius_m, radius_nm, wheel_over_m,
    wheel_over_nm, wop_lat, wop_lon (null when not asked for or not known).
    """
    from passagelog.nav.fixing import (
        alteration_at_waypoint,
        course_alteration,
        turn_radius_m,
        wheel_over_distance_m,
    )

    by_course = course_in is not None or course_out is not None
    if by_course and positions:
        raise click.UsageError("give three positions or --in and --out, not both")
    if by_course and (course_in is None or course_out is None):
        raise click.UsageError("--in and --out go together")
    if radius_nm is not None and (speed_kn is not None or rot is not None):
        raise click.UsageError("give --radius, or --speed with --rot, not both")
    if (speed_kn is None) != (rot is None):
        raise click.UsageError("--speed and --rot go together")
    radius_m = None
    if radius_nm is not None:
        radius_m = _nm(radius_nm, "--radius")
    elif rot is not None:
        radius_m = turn_radius_m(speed_kn, rot)
    wop_lat = wop_lon = None
    if by_course:
        from passagelog.nav.triangles import normalize_course

        alt = course_alteration(course_in, course_out)      # checks both courses
        c_in, c_out = normalize_course(course_in), normalize_course(course_out)
        wo = wheel_over_distance_m(alt, radius_m) if radius_m is not None else None
    else:
        a, w, b = _positions(positions, ("FROM", "WAYPOINT", "TO"))
        r = alteration_at_waypoint(*a, *w, *b, sailing, None, radius_m, get_earth(earth_name))
        c_in, c_out, alt, wo = r.course_in, r.course_out, r.alteration, r.wheel_over_m
        wop_lat, wop_lon = r.wop_lat, r.wop_lon
    if as_json:
        emit_json({"course_in": c_in, "course_out": c_out, "alteration": alt,
                   "radius_m": radius_m,
                   "radius_nm": None if radius_m is None else radius_m / NM_M,
                   "wheel_over_m": wo, "wheel_over_nm": None if wo is None else wo / NM_M,
                   "wop_lat": wop_lat, "wop_lon": wop_lon})
        return
    click.echo(f"courses   {_course(c_in)} -> {_course(c_out)}")
    click.echo(f"alter     {_side(alt)}")
    if radius_m is not None:
        click.echo(f"radius    {radius_m / NM_M:.2f} NM")
        click.echo(f"wheel over {wo / NM_M:.2f} NM before the waypoint")
    if wop_lat is not None:
        click.echo(f"WOP       {_fmt_pos(wop_lat, wop_lon)}")
