"""Dead reckoning and the vector triangles of the trade: current and wind.

Directions are degrees true in [0, 360), measured clockwise from north; speeds are knots
(``_kn``), times seconds (``_s``), distances metres (``_m``). A velocity is drawn as the
vector ``(east, north) = speed * (sin d, cos d)``.

Words (see the trade's usage, e.g. Bowditch, NGA Pub. 9, chapters on dead reckoning and
current sailing):

* DR: the position from the course steered and the speed through the water only.
* EP: the DR corrected for a known current (set and drift) and, optionally, leeway.
* set: the direction the current flows TOWARD; drift: its speed.
* leeway: the angle between the heading and the track through the water, signed here
  ``+`` when the craft is pushed to starboard of its heading (wind on the port side),
  ``-`` to port.
* wind: given as the direction it blows FROM (the aviation and weather usage), so it pushes
  toward ``wind_from + 180``.
* wind correction angle (WCA): true heading minus true course, ``+`` right, ``-`` left.
* variation and deviation: east positive. Magnetic = true - east variation + west variation;
  compass = magnetic - east deviation + west deviation ("correcting add east" going the other
  way, compass -> magnetic -> true).

A steady course is a rhumb line (it crosses every meridian at the same angle), so positions
are advanced with :func:`passagelog.nav.rhumb.rhumb_direct`; the triangles themselves are plane
vector sums of velocities, which is exact for velocities (they live in the tangent plane).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

from passagelog.errors import GeometryError, InputError
from passagelog.nav.earth import WGS84, Earth, get_earth
from passagelog.nav.units import KN_MPS

#: Largest leeway accepted, degrees (beyond that the craft is not going ahead).
MAX_LEEWAY_DEG = 45.0
#: Largest variation or deviation accepted, degrees either way.
MAX_EW_DEG = 180.0


# ---------------------------------------------------------------------------------------------
# small helpers


def _number(thing: str, value, *, low: float | None = None, high: float | None = None,
            low_open: bool = False) -> float:
    """``value`` as a finite float within bounds, or an InputError naming ``thing``."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise InputError(f"{thing} must be a number, not {value!r}")
    x = float(value) + 0.0             # no -0.0
    if not math.isfinite(x):
        raise InputError(f"{thing} is {value!r}; a finite number is required")
    if low is not None and (x <= low if low_open else x < low):
        rel = "above" if low_open else "at least"
        raise InputError(f"{thing} {value!r} is out of range; it must be {rel} {low:g}")
    if high is not None and x > high:
        raise InputError(f"{thing} {value!r} is out of range; it must be at most {high:g}")
    return x


def _finite_result(thing: str, x: float) -> float:
    """``x`` if finite; otherwise the inputs were too extreme for a meaningful answer."""
    if not math.isfinite(x):
        raise InputError(f"{thing} comes out as {x!r}: the inputs are too large or too small "
                         "for a meaningful answer")
    return x


def normalize_course(deg: float) -> float:
    """A direction folded into [0, 360) (no ``360.0``, no ``-0.0``)."""
    c = math.fmod(deg, 360.0)
    if c < 0.0:
        c += 360.0
    if c >= 360.0:
        c -= 360.0
    return c + 0.0


def signed_angle(deg: float) -> float:
    """An angle folded into (-180, 180]."""
    a = math.fmod(deg, 360.0)
    if a > 180.0:
        a -= 360.0
    elif a <= -180.0:
        a += 360.0
    return a + 0.0


def _direction(thing: str, value) -> float:
    return normalize_course(_number(thing, value))


def _vec(direction_deg: float, magnitude: float) -> tuple[float, float]:
    r = math.radians(direction_deg)
    return magnitude * math.sin(r), magnitude * math.cos(r)


def _dir_of(east: float, north: float) -> float:
    return normalize_course(math.degrees(math.atan2(east, north)))


def _leeway(value) -> float:
    return _number("leeway angle (deg)", value, low=-MAX_LEEWAY_DEG, high=MAX_LEEWAY_DEG)


# ---------------------------------------------------------------------------------------------
# time and distance


def distance_run_m(speed_kn: float, elapsed_s: float) -> float:
    """Distance covered at ``speed_kn`` in ``elapsed_s`` seconds, metres."""
    v = _number("speed (kn)", speed_kn, low=0.0)
    t = _number("elapsed time (s)", elapsed_s, low=0.0)
    return _finite_result("distance run (m)", v * KN_MPS * t)


def time_to_cover_s(distance_m: float, speed_kn: float) -> float:
    """Estimated time to cover ``distance_m`` at ``speed_kn``, seconds."""
    d = _number("distance (m)", distance_m, low=0.0)
    v = _number("speed (kn)", speed_kn, low=0.0, low_open=True)
    return _finite_result("time to cover the distance (s)", d / (v * KN_MPS))


# ---------------------------------------------------------------------------------------------
# dead reckoning


def _rhumb():
    from passagelog.nav import rhumb  # a sibling module, imported when used

    return rhumb


def _advance(lat: float, lon: float, course: float, distance_m: float,
             earth: Earth) -> tuple[float, float]:
    """The rhumb-line direct problem, with the start checked and the cases without a
    defined course (no distance; leaving a pole) settled here."""
    la = _number("start latitude", lat, low=-90.0, high=90.0)
    lo = _number("start longitude", lon, low=-180.0, high=180.0)
    if distance_m == 0.0:
        lo = math.fmod(lo + 180.0, 360.0)
        return la, (lo + 360.0 if lo < 0.0 else lo) - 180.0 + 0.0
    if abs(la) == 90.0 and course not in (0.0, 180.0):
        raise GeometryError(
            f"from the {'north' if la > 0 else 'south'} pole every direction is "
            f"{'south' if la > 0 else 'north'}: a course of {course:g}° is not defined there"
        )
    return _rhumb().rhumb_direct(la, lo, course, distance_m, earth)


@dataclass(frozen=True)
class DeadReckoning:
    """A DR position: ``distance_m`` run along ``course`` (a rhumb line) in ``elapsed_s``."""

    lat: float
    lon: float
    course: float
    speed_kn: float
    elapsed_s: float
    distance_m: float


def dead_reckoning(lat: float, lon: float, course: float, speed_kn: float, elapsed_s: float,
                   earth: Earth | str = WGS84) -> DeadReckoning:
    """DR after steering ``course`` at ``speed_kn`` through the water for ``elapsed_s``."""
    c = _direction("course (deg)", course)
    v = _number("speed (kn)", speed_kn, low=0.0)
    t = _number("elapsed time (s)", elapsed_s, low=0.0)
    d = v * KN_MPS * t
    lat2, lon2 = _advance(lat, lon, c, d, get_earth(earth))
    return DeadReckoning(lat2, lon2, c, v, t, d)


@dataclass(frozen=True)
class EstimatedPosition:
    """An EP, with the DR it corrects and the track and speed made good.

    ``water_track`` is the heading corrected for leeway; ``course_made_good`` and
    ``speed_made_good_kn`` are the ground track and speed (water vector plus current).
    ``course_made_good`` is ``None`` when the craft makes no way over the ground.
    """

    lat: float
    lon: float
    dr_lat: float
    dr_lon: float
    water_track: float
    course_made_good: float | None
    speed_made_good_kn: float
    distance_made_good_m: float
    elapsed_s: float


def ground_velocity(heading: float, stw_kn: float, set_deg: float, drift_kn: float,
                    leeway_deg: float = 0.0) -> tuple[float | None, float]:
    """Course and speed made good: ``(course | None, speed_kn)`` from the water vector
    (``heading`` + leeway at ``stw_kn``) plus the current (``set_deg`` at ``drift_kn``)."""
    h = _direction("heading (deg)", heading)
    v = _number("speed through the water (kn)", stw_kn, low=0.0)
    s = _direction("set (deg)", set_deg)
    w = _number("drift (kn)", drift_kn, low=0.0)
    lw = _leeway(leeway_deg)
    we, wn = _vec(h + lw, v)
    ce, cn = _vec(s, w)
    ge, gn = we + ce, wn + cn
    speed = _finite_result("speed made good (kn)", math.hypot(ge, gn))
    if speed <= 1e-12 * max(v, w):          # the current cancels the way (rounding aside)
        return None, 0.0
    return _dir_of(ge, gn), speed


def estimated_position(lat: float, lon: float, course: float, speed_kn: float,
                       elapsed_s: float, set_deg: float, drift_kn: float,
                       leeway_deg: float = 0.0,
                       earth: Earth | str = WGS84) -> EstimatedPosition:
    """EP after steering ``course`` at ``speed_kn`` for ``elapsed_s`` in a steady current
    setting ``set_deg`` at ``drift_kn``, with an optional leeway angle (``+`` to starboard).

    Steady heading and steady current give a steady ground velocity, so the EP lies on the
    rhumb line of the course made good, at the speed made good times the time.
    """
    e = get_earth(earth)
    dr = dead_reckoning(lat, lon, course, speed_kn, elapsed_s, e)
    lw = _leeway(leeway_deg)
    cmg, smg = ground_velocity(course, speed_kn, set_deg, drift_kn, lw)
    d = smg * KN_MPS * dr.elapsed_s
    lat2, lon2 = _advance(lat, lon, 0.0 if cmg is None else cmg, d, e)
    return EstimatedPosition(lat2, lon2, dr.lat, dr.lon, normalize_course(dr.course + lw),
                             cmg, smg, d, dr.elapsed_s)


@dataclass(frozen=True)
class SetAndDrift:
    """The current found from the DR to the fix at the same time.

    ``set`` is the direction the current flows toward (``None`` when the fix is on the DR),
    ``drift_kn`` its speed, ``distance_m`` the distance from the DR to the fix.
    """

    set: float | None
    drift_kn: float
    distance_m: float
    elapsed_s: float


def set_and_drift(dr_lat: float, dr_lon: float, fix_lat: float, fix_lon: float,
                  elapsed_s: float, earth: Earth | str = WGS84) -> SetAndDrift:
    """Set and drift from the DR and the fix for the same time, ``elapsed_s`` after the last
    fix the DR was run from: set = rhumb course DR -> fix, drift = that distance / time."""
    t = _number("elapsed time since the last fix (s)", elapsed_s, low=0.0, low_open=True)
    dist, course = _rhumb().rhumb_inverse(dr_lat, dr_lon, fix_lat, fix_lon, get_earth(earth))
    if dist == 0.0:
        return SetAndDrift(None, 0.0, 0.0, t)
    drift = _finite_result("drift (kn)", dist / t / KN_MPS)
    return SetAndDrift(normalize_course(course), drift, dist, t)


@dataclass(frozen=True)
class CourseToSteer:
    """The solution of the current triangle for a track to make good.

    ``course_to_steer`` is the heading to steer (true), ``correction_deg`` = heading minus
    track (``+`` to starboard), ``speed_through_water_kn`` the speed through the water and
    ``speed_made_good_kn`` the speed along the track over the ground.
    """

    track: float
    course_to_steer: float
    correction_deg: float
    speed_through_water_kn: float
    speed_made_good_kn: float


def course_to_steer(track: float, stw_kn: float, set_deg: float, drift_kn: float,
                    leeway_deg: float = 0.0) -> CourseToSteer:
    """Course to steer at ``stw_kn`` through the water to make good ``track`` in a current
    setting ``set_deg`` at ``drift_kn`` (and the speed made good along the track).

    The water vector must cancel the current's component across the track; when that
    component is larger than the speed through the water, or the current along the track
    is so strong that the craft goes backwards, there is no solution (GeometryError).
    ``leeway_deg`` (``+`` when pushed to starboard) is allowed for by steering into it.
    """
    tr = _direction("track (deg)", track)
    v = _number("speed through the water (kn)", stw_kn, low=0.0, low_open=True)
    s = _direction("set (deg)", set_deg)
    w = _number("drift (kn)", drift_kn, low=0.0)
    lw = _leeway(leeway_deg)
    rel = math.radians(s - tr)
    along = w * math.cos(rel)     # current along the track, + ahead
    across = w * math.sin(rel)    # current across the track, + to starboard
    if abs(across) > v:
        raise GeometryError(
            f"current {w:g} kn setting {s:g}° has {abs(across):.3g} kn across the track "
            f"{tr:g}°, more than the speed through the water {v:g} kn: no course to steer "
            "makes good that track"
        )
    ang = math.asin(max(-1.0, min(1.0, -across / v)))   # water track - track
    smg = _finite_result("speed made good (kn)", v * math.cos(ang) + along)
    if smg <= 0.0:
        raise GeometryError(
            f"current {w:g} kn setting {s:g}° against the track {tr:g}° is stronger than "
            f"the speed through the water {v:g} kn allows: no way is made good along it"
        )
    cts = normalize_course(tr + math.degrees(ang) - lw)
    return CourseToSteer(tr, cts, signed_angle(cts - tr), v, smg)


def course_for_speed_made_good(track: float, smg_kn: float, set_deg: float, drift_kn: float,
                               leeway_deg: float = 0.0) -> CourseToSteer:
    """Course to steer and the speed through the water needed to make good ``track`` at
    ``smg_kn`` over the ground in a current setting ``set_deg`` at ``drift_kn``.

    The water vector is the wanted ground vector minus the current (one solution).
    """
    tr = _direction("track (deg)", track)
    g = _number("speed made good (kn)", smg_kn, low=0.0, low_open=True)
    s = _direction("set (deg)", set_deg)
    w = _number("drift (kn)", drift_kn, low=0.0)
    lw = _leeway(leeway_deg)
    ge, gn = _vec(tr, g)
    ce, cn = _vec(s, w)
    we, wn = ge - ce, gn - cn
    v = _finite_result("speed through the water needed (kn)", math.hypot(we, wn))
    if v <= 1e-12 * max(g, w):
        raise GeometryError(
            f"the current {w:g} kn setting {s:g}° alone makes good {tr:g}° at {g:g} kn: "
            "no heading is defined"
        )
    cts = normalize_course(_dir_of(we, wn) - lw)
    return CourseToSteer(tr, cts, signed_angle(cts - tr), v, g)


# ---------------------------------------------------------------------------------------------
# the wind triangle (aircraft)


@dataclass(frozen=True)
class WindTriangle:
    """The wind triangle solved for a true course.

    ``wca`` = true heading minus true course (``+`` right, ``-`` left); ``headwind_kn`` is the
    wind component against the course (negative for a tailwind); ``crosswind_kn`` the
    component across it, ``+`` from the right.
    """

    true_course: float
    true_heading: float
    wca: float
    ground_speed_kn: float
    tas_kn: float
    wind_from: float
    wind_speed_kn: float
    headwind_kn: float
    crosswind_kn: float


def wind_triangle(true_course: float, tas_kn: float, wind_from: float,
                  wind_speed_kn: float) -> WindTriangle:
    """True heading, wind correction angle and ground speed to make good ``true_course`` at
    ``tas_kn`` in a wind blowing FROM ``wind_from`` at ``wind_speed_kn``.

    Law of sines: sin(WCA) = W sin(wind_from - TC) / TAS; GS = TAS cos(WCA) - W cos(wind_from
    - TC). GeometryError when the crosswind exceeds the TAS or the headwind stops the craft.
    """
    tc = _direction("true course (deg)", true_course)
    tas = _number("true airspeed (kn)", tas_kn, low=0.0, low_open=True)
    wf = _direction("wind direction (deg, from)", wind_from)
    w = _number("wind speed (kn)", wind_speed_kn, low=0.0)
    rel = math.radians(wf - tc)
    head = w * math.cos(rel)
    cross = w * math.sin(rel)
    if abs(cross) > tas:
        raise GeometryError(
            f"wind {wf:g}° at {w:g} kn has a crosswind of {abs(cross):.3g} kn on the course "
            f"{tc:g}°, more than the true airspeed {tas:g} kn: the course cannot be made good"
        )
    wca = math.degrees(math.asin(max(-1.0, min(1.0, cross / tas))))
    gs = tas * math.cos(math.radians(wca)) - head
    if gs <= 0.0:
        raise GeometryError(
            f"wind {wf:g}° at {w:g} kn against the course {tc:g}° stops an aircraft at "
            f"{tas:g} kn true airspeed: no ground speed along the course"
        )
    th = normalize_course(tc + wca)
    return WindTriangle(tc, th, signed_angle(th - tc), gs, tas, wf, w, head + 0.0, cross + 0.0)


@dataclass(frozen=True)
class FoundWind:
    """The wind found from heading and airspeed against track and ground speed.

    ``wind_from`` is ``None`` when there is no wind; ``wca`` = heading minus track.
    """

    wind_from: float | None
    wind_speed_kn: float
    wca: float
    true_heading: float
    tas_kn: float
    track: float
    ground_speed_kn: float


def find_wind(true_heading: float, tas_kn: float, track: float,
              ground_speed_kn: float) -> FoundWind:
    """The wind (from-direction and speed) that turns the air vector (``true_heading`` at
    ``tas_kn``) into the ground vector (``track`` at ``ground_speed_kn``)."""
    th = _direction("true heading (deg)", true_heading)
    tas = _number("true airspeed (kn)", tas_kn, low=0.0)
    tr = _direction("track (deg)", track)
    gs = _number("ground speed (kn)", ground_speed_kn, low=0.0)
    ae, an = _vec(th, tas)
    ge, gn = _vec(tr, gs)
    we, wn = ge - ae, gn - an           # wind vector, toward which it blows
    w = _finite_result("wind speed (kn)", math.hypot(we, wn))
    if w <= 1e-12 * max(tas, gs, 1.0):
        return FoundWind(None, 0.0, signed_angle(th - tr), th, tas, tr, gs)
    return FoundWind(normalize_course(_dir_of(we, wn) + 180.0), w, signed_angle(th - tr),
                     th, tas, tr, gs)


# ---------------------------------------------------------------------------------------------
# true, magnetic, compass

_EW_RE = re.compile(
    r"""^\s*(?P<pre>[EW])?\s*(?P<sign>[+-])?\s*
        (?P<deg>\d+(?:\.\d*)?|\.\d+)\s*(?:°|º|deg\b|d\b)?\s*
        (?:(?P<min>\d+(?:\.\d*)?|\.\d+)\s*(?:'|′|min\b|m\b))?\s*
        (?P<post>[EW])?\s*$""",
    re.IGNORECASE | re.VERBOSE,
)


def parse_ew(value, what: str = "variation") -> float:
    """An easterly/westerly angle (variation, deviation, compass error) as a signed number of
    degrees, east positive.

    Accepts numbers (``+`` = east) and the trade's text: ``"4°W"``, ``"3.5 E"``, ``"E 3.5"``,
    ``"4°30'W"``, ``"-4"``, ``"+3.5"``, ``"0"``. Refuses a sign together with E/W, minutes
    of 60 or more, non-finite values and magnitudes beyond 180°.
    """
    expected = ("expected degrees with E or W, e.g. '4°W', '3.5 E', '4°30'W', or a signed "
                "number with + = east")
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        x = float(value)
        if not math.isfinite(x):
            raise InputError(f"{what} {value!r} is not a finite number; {expected}")
    elif isinstance(value, str):
        m = _EW_RE.match(value)
        if not m:
            raise InputError(f"{what} {value!r} cannot be read; {expected}")
        pre, sign, post = m.group("pre"), m.group("sign"), m.group("post")
        if pre and post:
            raise InputError(f"{what} {value!r} names E/W twice; {expected}")
        letter = (pre or post or "").upper()
        if sign and letter:
            raise InputError(f"{what} {value!r} has both a sign and {letter}; use one")
        deg = float(m.group("deg"))
        if m.group("min") is not None:
            if deg != int(deg):
                raise InputError(f"{what} {value!r}: minutes follow whole degrees only")
            minutes = float(m.group("min"))
            if minutes >= 60.0:
                raise InputError(f"{what} {value!r}: minutes must be below 60")
            deg += minutes / 60.0
        negative = sign == "-" or letter == "W"
        x = -deg if negative else deg
    else:
        raise InputError(f"{what} {value!r} cannot be read; {expected}")
    if abs(x) > MAX_EW_DEG:
        raise InputError(f"{what} {value!r} is out of range; at most {MAX_EW_DEG:g}° E or W")
    return x + 0.0


def format_ew(value_e: float, decimals: int = 1) -> str:
    """A signed east-positive angle as the trade writes it: ``4.0°W``, ``3.5°E``, ``0.0°``."""
    text = f"{abs(value_e):.{decimals}f}"
    if float(text) == 0.0:
        return f"{text}°"
    return f"{text}°{'E' if value_e > 0 else 'W'}"


def true_to_magnetic(true: float, variation_e: float) -> float:
    """Magnetic = true - east variation (+ west variation)."""
    return normalize_course(_number("true direction (deg)", true)
                            - parse_ew(variation_e, "variation"))


def magnetic_to_true(magnetic: float, variation_e: float) -> float:
    """True = magnetic + east variation (- west variation): "correcting add east"."""
    return normalize_course(_number("magnetic direction (deg)", magnetic)
                            + parse_ew(variation_e, "variation"))


def magnetic_to_compass(magnetic: float, deviation_e: float) -> float:
    """Compass = magnetic - east deviation (+ west deviation)."""
    return normalize_course(_number("magnetic direction (deg)", magnetic)
                            - parse_ew(deviation_e, "deviation"))


def compass_to_magnetic(compass: float, deviation_e: float) -> float:
    """Magnetic = compass + east deviation (- west deviation): "correcting add east"."""
    return normalize_course(_number("compass direction (deg)", compass)
                            + parse_ew(deviation_e, "deviation"))


HEADING_KINDS = ("true", "magnetic", "compass")


@dataclass(frozen=True)
class Headings:
    """One direction as true, magnetic and compass, with the corrections used (east +).

    ``compass_error_e`` = variation + deviation: true = compass + compass error.
    """

    true: float
    magnetic: float
    compass: float
    variation_e: float
    deviation_e: float
    compass_error_e: float


def convert_heading(value: float, kind: str, variation_e: float | str = 0.0,
                    deviation_e: float | str = 0.0) -> Headings:
    """``value`` given as ``kind`` (``true``, ``magnetic`` or ``compass``) in all three forms."""
    var = parse_ew(variation_e, "variation")
    dev = parse_ew(deviation_e, "deviation")
    if kind == "true":
        t = _direction("true direction (deg)", value)
        m = true_to_magnetic(t, var)
        c = magnetic_to_compass(m, dev)
    elif kind == "magnetic":
        m = _direction("magnetic direction (deg)", value)
        t = magnetic_to_true(m, var)
        c = magnetic_to_compass(m, dev)
    elif kind == "compass":
        c = _direction("compass direction (deg)", value)
        m = compass_to_magnetic(c, dev)
        t = magnetic_to_true(m, var)
    else:
        raise InputError(f"heading kind {kind!r} is not one of: {', '.join(HEADING_KINDS)}")
    return Headings(t, m, c, var, dev, var + dev)
