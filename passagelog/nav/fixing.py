"""Fix helpers: positions from ranges and bearings of known marks, and turns at waypoints.

All fixes are solved on the ellipsoid (WGS84 unless told otherwise) with geographiclib's
geodesics, not on a flat chart:

* A bearing is what is observed AT THE SHIP toward the mark: the ship is the point whose
  geodesic to the mark starts with that azimuth. Taking the reciprocal of the bearing at the
  mark instead is wrong by the meridian convergence between the two, about
  ``distance * sin(course) * tan(lat)`` (tenths of a degree at 24 NM in mid latitudes).
* A radial is measured AT THE BEACON (aviation): the aircraft is on the geodesic leaving the
  beacon with that azimuth.
* A range is the geodesic distance ship to mark.

Solutions start from the plane answer on an azimuthal equidistant view centred on a mark and
are refined by Newton's method until the ellipsoidal step is below a tenth of a millimetre.

Turn geometry at a waypoint (IMO MSC.74(69) Annex 2 describes turns by radius or by rate of
turn): a full turn at ``ROT`` degrees per minute takes ``360/ROT`` minutes, so at ``V`` knots the
circumference is ``6 V / ROT`` NM and the radius ``R = 6 V / (2 pi ROT) = 0.955 V / ROT`` NM; a
circle of radius ``R`` tangent to both legs leaves the incoming leg ``R tan(A/2)`` before the
waypoint for a course alteration ``A`` (the wheel-over point, before any allowance for the
ship's reaction).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from passagelog.errors import GeometryError, InputError
from passagelog.nav import geodesic
from passagelog.nav.earth import WGS84, Earth, get_earth
from passagelog.nav.triangles import _direction, _number, normalize_course, signed_angle
from passagelog.nav.units import KN_MPS

#: Newton stops when the step is below this, metres.
STEP_TOL_M = 1e-4
#: Newton gives up after this many steps.
MAX_ITERATIONS = 40
#: Smallest angle of cut between two lines of position accepted by default, degrees
#: (common practice: below about 15° a small error in either line moves the fix a long way).
MIN_CUT_DEG = 15.0
#: Longest range or radial distance accepted, metres (a quarter meridian: beyond that the
#: bearing-to-position problem is not the one a navigator asks).
MAX_RANGE_M = 10_000_000.0

SAILINGS = ("great-circle", "rhumb")


def _position(thing: str, lat, lon) -> tuple[float, float]:
    la = _number(f"{thing} latitude", lat, low=-90.0, high=90.0)
    lo = _number(f"{thing} longitude", lon, low=-180.0, high=180.0)
    lo = math.fmod(lo + 180.0, 360.0)
    lo = (lo + 360.0 if lo < 0 else lo) - 180.0
    return la, lo + 0.0


def _range(thing: str, value) -> float:
    return _number(thing, value, low=0.0, high=MAX_RANGE_M)


def _cut(a: float, b: float) -> float:
    """Angle between two lines of position with directions ``a`` and ``b``, in [0, 90]."""
    x = abs(signed_angle(a - b))
    return min(x, 180.0 - x)


def _move(earth: Earth, lat: float, lon: float, de: float, dn: float) -> tuple[float, float]:
    step = math.hypot(de, dn)
    if step == 0.0:
        return lat, lon
    la, lo, _ = geodesic.direct(lat, lon, math.degrees(math.atan2(de, dn)), step, earth)
    return la, lo


# ---------------------------------------------------------------------------------------------
# a single mark


@dataclass(frozen=True)
class MarkFix:
    """A position from the range and bearing (or radial and distance) of one known mark.

    ``bearing`` is the azimuth at the ship toward the mark, ``bearing_from_mark`` the azimuth
    at the mark toward the ship (the radial); they differ from reciprocals by the meridian
    convergence.
    """

    lat: float
    lon: float
    bearing: float
    bearing_from_mark: float
    range_m: float


def position_from_mark(mark_lat: float, mark_lon: float, bearing: float, range_m: float,
                       earth: Earth | str = WGS84) -> MarkFix:
    """The ship's position from a mark's true ``bearing`` observed at the ship and its
    ``range_m`` (radar range and bearing, or a visual bearing and a range).

    Solves for the azimuth at the mark so that the geodesic from the ship to the mark starts
    with ``bearing`` at the ship (secant iteration, converging in a few steps).
    """
    e = get_earth(earth)
    mlat, mlon = _position("mark", mark_lat, mark_lon)
    b = _direction("bearing (deg)", bearing)
    s = _range("range (m)", range_m)
    if abs(mlat) == 90.0:
        raise GeometryError("a mark at a pole has no bearing from it; give the ship's "
                            "position some other way")
    if s == 0.0:
        return MarkFix(mlat, mlon, b, normalize_course(b + 180.0), 0.0)

    def miss(alpha: float) -> tuple[float, float, float]:
        lat, lon, azi2 = geodesic.direct(mlat, mlon, alpha, s, e)
        # azi2 is the forward azimuth at the ship, pointing away from the mark
        return signed_angle(azi2 + 180.0 - b), lat, lon

    a0 = b + 180.0
    f0, lat, lon = miss(a0)
    a1 = a0 - f0
    for _ in range(MAX_ITERATIONS):
        f1, lat, lon = miss(a1)
        if abs(f1) < 1e-13:
            break
        slope = (f1 - f0) / (a1 - a0) if a1 != a0 else 1.0
        if not math.isfinite(slope) or abs(slope) < 1e-6:
            slope = 1.0
        a0, f0 = a1, f1
        a1 = a1 - f1 / slope
    else:
        if abs(f1) * math.radians(1.0) * s > STEP_TOL_M:
            raise GeometryError(
                f"no position found {s:g} m from the mark with bearing {b:g}° at the ship "
                "(too close to a pole or too far for this method)"
            )
    return MarkFix(lat, lon, b, normalize_course(a1), s)


def position_from_radial(beacon_lat: float, beacon_lon: float, radial: float,
                         distance_m: float, station_variation_e: float = 0.0,
                         earth: Earth | str = WGS84) -> MarkFix:
    """The position on ``radial`` (measured at the beacon, FROM it) at ``distance_m``.

    A radial is usually magnetic, referred to the station's declared variation: give that as
    ``station_variation_e`` (east positive) and the radial true is ``radial + variation``.
    ``distance_m`` is the geodesic distance (a slant range must be corrected first).
    """
    from passagelog.nav.triangles import parse_ew

    e = get_earth(earth)
    blat, blon = _position("beacon", beacon_lat, beacon_lon)
    r = normalize_course(_direction("radial (deg)", radial)
                         + parse_ew(station_variation_e, "station variation"))
    s = _range("distance (m)", distance_m)
    if abs(blat) == 90.0:
        raise GeometryError("a beacon at a pole has no radials")
    lat, lon, azi2 = geodesic.direct(blat, blon, r, s, e)
    if s == 0.0:
        return MarkFix(blat, blon, normalize_course(r + 180.0), r, 0.0)
    return MarkFix(lat, lon, normalize_course(azi2 + 180.0), r, s)


# ---------------------------------------------------------------------------------------------
# two marks


@dataclass(frozen=True)
class Fix:
    """A fix from two lines of position, with the angle of cut between them (0..90°) and
    the true bearings and ranges from the fix to each mark."""

    lat: float
    lon: float
    cut_angle: float
    bearing1: float
    range1_m: float
    bearing2: float
    range2_m: float


def _to_marks(e: Earth, lat, lon, marks):
    out = []
    for mlat, mlon in marks:
        s, a1, _ = geodesic.inverse(lat, lon, mlat, mlon, e)
        out.append((s, a1))
    return out


def _make_fix(e: Earth, lat, lon, m1, m2) -> Fix:
    (s1, a1), (s2, a2) = _to_marks(e, lat, lon, (m1, m2))
    return Fix(lat, lon, _cut(a1, a2), a1, s1, a2, s2)


def fix_from_bearings(mark1_lat: float, mark1_lon: float, bearing1: float,
                      mark2_lat: float, mark2_lon: float, bearing2: float,
                      min_cut_deg: float = MIN_CUT_DEG,
                      earth: Earth | str = WGS84) -> Fix:
    """The fix from the true bearings of two marks observed at the ship at the same time.

    Each bearing puts the ship on the geodesic that arrives at the mark from that direction;
    the fix is where they cross ahead of both marks' bearings. GeometryError when the cut is
    below ``min_cut_deg`` or the lines of position do not meet (one mark would lie astern
    of its own bearing).
    """
    e = get_earth(earth)
    m1 = _position("mark 1", mark1_lat, mark1_lon)
    m2 = _position("mark 2", mark2_lat, mark2_lon)
    b1 = _direction("bearing 1 (deg)", bearing1)
    b2 = _direction("bearing 2 (deg)", bearing2)
    cut_min = _number("minimum angle of cut (deg)", min_cut_deg, low=0.0, high=90.0)
    cut = _cut(b1, b2)
    if cut < cut_min or cut == 0.0:
        raise GeometryError(
            f"bearings {b1:g}° and {b2:g}° cut at {cut:.3g}°, below the {cut_min:g}° "
            "accepted for a fix; take another mark"
        )
    d12, az12, _ = geodesic.inverse(*m1, *m2, e)
    if d12 == 0.0:
        raise GeometryError("marks 1 and 2 are the same point; two marks are needed")
    if d12 > MAX_RANGE_M:
        raise GeometryError(f"marks 1 and 2 are {d12:.0f} m apart, more than this method "
                            f"accepts ({MAX_RANGE_M:g} m)")
    # Each line of position is followed exactly, by the range r from its mark: Q_i(r) is the
    # point from which mark i bears b_i at range r (for r < 0, the line's continuation past
    # the mark, from which the mark bears b_i + 180). The fix is Q_1(r1) = Q_2(r2), found by
    # Newton's method on (r1, r2) from the plane intersection on an azimuthal equidistant
    # view centred on mark 1; it is a fix only when r1 > 0 and r2 > 0.
    def on_line(mark, b, r):
        if r >= 0.0:
            q = position_from_mark(*mark, b, r, e)
        else:
            q = position_from_mark(*mark, b + 180.0, -r, e)
        return q.lat, q.lon

    def local(origin, point):
        s_, a_, _ = geodesic.inverse(*origin, *point, e)
        return s_ * math.sin(math.radians(a_)), s_ * math.cos(math.radians(a_))

    u1 = (math.sin(math.radians(b1)), math.cos(math.radians(b1)))
    u2 = (math.sin(math.radians(b2)), math.cos(math.radians(b2)))
    x2, y2 = d12 * math.sin(math.radians(az12)), d12 * math.cos(math.radians(az12))
    det = -u1[0] * u2[1] + u1[1] * u2[0]           # t1 u1 - t2 u2 = M1 - M2 = -(x2, y2)
    r1 = (x2 * u2[1] - u2[0] * y2) / det
    r2 = (-u1[0] * y2 + u1[1] * x2) / det
    converged = False
    for _ in range(MAX_ITERATIONS):
        if abs(r1) > MAX_RANGE_M or abs(r2) > MAX_RANGE_M:
            break
        q1, q2 = on_line(m1, b1, r1), on_line(m2, b2, r2)
        fe, fn = local(q1, q2)                      # Q2 - Q1, to be brought to zero
        dlt = 1.0
        t1e, t1n = local(q1, on_line(m1, b1, r1 + dlt))
        p2e, p2n = local(q1, on_line(m2, b2, r2 + dlt))
        t2e, t2n = p2e - fe, p2n - fn
        # F + T2 dr2 - T1 dr1 = 0 (T_i: dQ_i/dr_i per metre)
        t1e, t1n, t2e, t2n = t1e / dlt, t1n / dlt, t2e / dlt, t2n / dlt
        dj = -t1e * t2n + t2e * t1n
        if dj == 0.0 or not math.isfinite(dj):
            break
        dr1 = (-fe * t2n + t2e * fn) / dj
        dr2 = (t1e * fn - t1n * fe) / dj
        r1, r2 = r1 + dr1, r2 + dr2
        if math.hypot(dr1, dr2) < STEP_TOL_M * 1e-2:
            converged = True
            break
    if converged and r1 > 0.0 and r2 > 0.0:
        lat, lon = on_line(m1, b1, r1)
        fix = _make_fix(e, lat, lon, m1, m2)
        if (abs(signed_angle(fix.bearing1 - b1)) < 1e-6
                and abs(signed_angle(fix.bearing2 - b2)) < 1e-6):
            return fix
    raise GeometryError(
        f"the bearings {b1:g}° of mark 1 and {b2:g}° of mark 2 do not meet ahead of the "
        "observer: check which mark each bearing belongs to"
    )


def fix_from_ranges(mark1_lat: float, mark1_lon: float, range1_m: float,
                    mark2_lat: float, mark2_lon: float, range2_m: float,
                    dr: tuple[float, float] | None = None,
                    min_cut_deg: float = 0.0,
                    earth: Earth | str = WGS84) -> tuple[Fix, Fix]:
    """Both positions at ``range1_m`` from mark 1 and ``range2_m`` from mark 2.

    Two range circles meet twice: both points are returned. With a ``dr`` (lat, lon) the one
    nearer the DR comes first; without, the one to the right (starboard) of the geodesic from
    mark 1 to mark 2 comes first. GeometryError when the circles do not meet, or when they
    cut at less than ``min_cut_deg`` (near tangency the fix is poorly defined).
    """
    e = get_earth(earth)
    m1 = _position("mark 1", mark1_lat, mark1_lon)
    m2 = _position("mark 2", mark2_lat, mark2_lon)
    r1 = _range("range 1 (m)", range1_m)
    r2 = _range("range 2 (m)", range2_m)
    cut_min = _number("minimum angle of cut (deg)", min_cut_deg, low=0.0, high=90.0)
    if dr is not None:
        dr = _position("DR", *dr)
    d12, az12, _ = geodesic.inverse(*m1, *m2, e)
    if d12 == 0.0:
        raise GeometryError("marks 1 and 2 are the same point; two marks are needed")
    if r1 == 0.0 or r2 == 0.0:
        raise GeometryError("a range of 0 puts the ship on the mark; use that mark's position")
    if d12 > r1 + r2 or d12 < abs(r1 - r2):
        why = "too short to reach each other" if d12 > r1 + r2 else "one inside the other"
        raise GeometryError(
            f"range circles of {r1:g} m and {r2:g} m around marks {d12:.1f} m apart do not "
            f"meet ({why})"
        )
    # plane start, azimuthal equidistant view centred on mark 1, x along mark 1 -> mark 2
    a = (r1 * r1 - r2 * r2 + d12 * d12) / (2.0 * d12)
    h = math.sqrt(max(0.0, r1 * r1 - a * a))
    ux, uy = math.sin(math.radians(az12)), math.cos(math.radians(az12))
    rx, ry = uy, -ux                        # unit vector to the right of mark 1 -> mark 2
    fixes = []
    for side in (1.0, -1.0):
        px, py = a * ux + side * h * rx, a * uy + side * h * ry
        lat, lon = _move(e, *m1, px, py)
        for _ in range(MAX_ITERATIONS):
            (s1, a1), (s2, a2) = _to_marks(e, lat, lon, (m1, m2))
            f1, f2 = s1 - r1, s2 - r2
            # d(distance to mark)/d(east, north) of the observer (exact first variation)
            j11, j12 = -math.sin(math.radians(a1)), -math.cos(math.radians(a1))
            j21, j22 = -math.sin(math.radians(a2)), -math.cos(math.radians(a2))
            det = j11 * j22 - j12 * j21
            if abs(det) < 1e-12:
                raise GeometryError(
                    f"range circles of {r1:g} m and {r2:g} m only touch: no defined fix"
                )
            de = (-f1 * j22 + f2 * j12) / det
            dn = (-f2 * j11 + f1 * j21) / det
            lat, lon = _move(e, lat, lon, de, dn)
            if math.hypot(de, dn) < STEP_TOL_M * 1e-2:
                break
        else:
            if math.hypot(de, dn) > STEP_TOL_M:
                raise GeometryError(
                    f"range circles of {r1:g} m and {r2:g} m give no converging fix"
                )
        fixes.append(_make_fix(e, lat, lon, m1, m2))
    if fixes[0].cut_angle < cut_min:
        raise GeometryError(
            f"range circles cut at {fixes[0].cut_angle:.3g}°, below the {cut_min:g}° "
            "accepted for a fix"
        )
    if dr is not None:
        fixes.sort(key=lambda f: geodesic.inverse(f.lat, f.lon, *dr, e)[0])
    return fixes[0], fixes[1]


# ---------------------------------------------------------------------------------------------
# turns at a waypoint


def course_alteration(course_in: float, course_out: float) -> float:
    """The alteration from ``course_in`` to ``course_out``, degrees in (-180, 180],
    ``+`` to starboard (a reversal counts as +180)."""
    return signed_angle(_direction("course out (deg)", course_out)
                        - _direction("course in (deg)", course_in))


def turn_radius_m(speed_kn: float, rot_deg_per_min: float) -> float:
    """Radius of a steady turn at ``speed_kn`` and a rate of turn in degrees per minute:
    R = V / omega, which is 0.955 V[kn] / ROT[deg/min] nautical miles."""
    v = _number("speed (kn)", speed_kn, low=0.0)
    rot = _number("rate of turn (deg/min)", rot_deg_per_min, low=0.0, low_open=True)
    omega = math.radians(rot) / 60.0          # rad/s
    return v * KN_MPS / omega


def wheel_over_distance_m(alteration_deg: float, radius_m: float) -> float:
    """Distance before the waypoint at which a turn of ``radius_m`` tangent to both legs
    begins, R tan(|A|/2) (no reaction allowance)."""
    a = abs(_number("course alteration (deg)", alteration_deg, low=-180.0, high=180.0))
    r = _number("turn radius (m)", radius_m, low=0.0)
    if a >= 180.0:
        raise GeometryError("a 180° alteration has no turn circle tangent to both legs")
    return r * math.tan(math.radians(a) / 2.0)


@dataclass(frozen=True)
class Alteration:
    """The course alteration at a waypoint between two legs.

    ``course_in`` is the incoming leg's course at the waypoint (its final course),
    ``course_out`` the outgoing leg's initial course, ``alteration`` their signed
    difference (+ starboard). With a turn radius: ``wheel_over_m`` before the waypoint along
    the incoming leg, at ``wop_lat``/``wop_lon``; otherwise those are ``None``.
    """

    course_in: float
    course_out: float
    alteration: float
    leg_in_m: float
    leg_out_m: float
    radius_m: float | None = None
    wheel_over_m: float | None = None
    wop_lat: float | None = None
    wop_lon: float | None = None


def _leg(e: Earth, sailing: str, lat1, lon1, lat2, lon2) -> tuple[float, float, float]:
    """(distance_m, initial course, final course) of a leg of either kind."""
    if sailing == "great-circle":
        s, a1, a2 = geodesic.inverse(lat1, lon1, lat2, lon2, e)
    elif sailing == "rhumb":
        from passagelog.nav.rhumb import rhumb_inverse

        s, a1 = rhumb_inverse(lat1, lon1, lat2, lon2, e)
        a2 = a1
    else:
        raise InputError(f"sailing {sailing!r} is not one of: {', '.join(SAILINGS)}")
    if s == 0.0:
        raise GeometryError("a leg of zero length has no course; remove the repeated waypoint")
    return s, normalize_course(a1), normalize_course(a2)


def alteration_at_waypoint(from_lat: float, from_lon: float, wp_lat: float, wp_lon: float,
                           to_lat: float, to_lon: float, sailing_in: str = "rhumb",
                           sailing_out: str | None = None, radius_m: float | None = None,
                           earth: Earth | str = WGS84) -> Alteration:
    """The alteration at the waypoint (``wp``) from the leg ``from -> wp`` to ``wp -> to``,
    and, given a turn radius, the wheel-over distance and point on the incoming leg."""
    e = get_earth(earth)
    p0 = _position("previous waypoint", from_lat, from_lon)
    p1 = _position("waypoint", wp_lat, wp_lon)
    p2 = _position("next waypoint", to_lat, to_lon)
    s_in, _, c_in = _leg(e, sailing_in, *p0, *p1)
    s_out, c_out, _ = _leg(e, sailing_out or sailing_in, *p1, *p2)
    alt = course_alteration(c_in, c_out)
    if radius_m is None:
        return Alteration(c_in, c_out, alt, s_in, s_out)
    r = _number("turn radius (m)", radius_m, low=0.0)
    wo = wheel_over_distance_m(alt, r)
    if wo > s_in:
        raise GeometryError(
            f"the wheel-over point {wo:.0f} m before the waypoint lies beyond the start of "
            f"the incoming leg ({s_in:.0f} m): the turn radius {r:g} m is too large"
        )
    back = normalize_course(c_in + 180.0)
    if sailing_in == "great-circle":
        wlat, wlon, _ = geodesic.direct(*p1, back, wo, e)
    else:
        from passagelog.nav.rhumb import rhumb_direct

        wlat, wlon = rhumb_direct(*p1, back, wo, e)
    return Alteration(c_in, c_out, alt, s_in, s_out, r, wo, wlat, wlon)
