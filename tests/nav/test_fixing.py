"""Fix helpers on the WGS84 ellipsoid, checked against geographiclib constructions.

Each fix test puts a ship at a known position, works out with geographiclib's
``Geodesic.WGS84`` (the outside reference: Karney 2013, J. Geod. 87:43-55) what would be
observed from it, feeds the observations back and expects the ship back to within 1 cm.
"""

from __future__ import annotations

import math

import pytest
from geographiclib.geodesic import Geodesic
from hypothesis import given, settings
from hypothesis import strategies as st

from passagelog.errors import GeometryError, InputError
from passagelog.nav.fixing import (
    course_alteration,
    fix_from_bearings,
    fix_from_ranges,
    position_from_mark,
    position_from_radial,
    turn_radius_m,
    wheel_over_distance_m,
)

G = Geodesic.WGS84
NM = 1852.0
CM = 0.01


def miss_m(lat1, lon1, lat2, lon2) -> float:
    return G.Inverse(lat1, lon1, lat2, lon2)["s12"]


def observe(ship, mark):
    """(true bearing at the ship toward the mark, range) by geographiclib."""
    g = G.Inverse(*ship, *mark)
    return g["azi1"] % 360.0, g["s12"]


# ---------------------------------------------------------------------------------------------
# one mark


def test_range_and_bearing_of_a_mark_gives_the_ship_back():
    # ship off a headland at 50°N (English Channel), mark 24 NM away to the north-east
    ship = (50.05, -4.30)
    mark = G.Direct(*ship, 40.0, 24 * NM)
    bearing, rng = observe(ship, (mark["lat2"], mark["lon2"]))
    f = position_from_mark(mark["lat2"], mark["lon2"], bearing, rng)
    assert miss_m(f.lat, f.lon, *ship) < CM
    assert f.bearing == pytest.approx(bearing)
    # the bearing at the mark toward the ship is what geographiclib gives from mark to ship
    back = G.Inverse(mark["lat2"], mark["lon2"], *ship)["azi1"] % 360.0
    assert f.bearing_from_mark == pytest.approx(back, abs=1e-9)


def test_reciprocal_bearing_is_wrong_by_the_meridian_convergence():
    # At 45°N a mark 24 NM due east: the geodesic's azimuth changes along the way by about
    # d_lon * sin(lat) (meridian convergence; spherical estimate, Bowditch ch. 1 / any
    # geodesy text): d_lon = 24' / cos 45° = 0.566°, times sin 45° = 0.40°.
    ship = (45.0, 10.0)
    m = G.Direct(*ship, 90.0, 24 * NM)
    mark = (m["lat2"], m["lon2"])
    bearing, rng = observe(ship, mark)
    assert bearing == pytest.approx(90.0, abs=1e-9)
    f = position_from_mark(*mark, bearing, rng)
    assert miss_m(f.lat, f.lon, *ship) < CM
    convergence = abs(((f.bearing_from_mark - (bearing + 180.0)) + 180.0) % 360.0 - 180.0)
    estimate = (24.0 / 60.0) / math.cos(math.radians(45.0)) * math.sin(math.radians(45.0))
    assert convergence == pytest.approx(estimate, rel=0.01)
    assert convergence > 0.3                               # "tenths of a degree"
    # the naive answer (reciprocal of the bearing laid off from the mark) misses by hundreds
    # of metres: range * convergence in radians
    naive = G.Direct(*mark, bearing + 180.0, rng)
    err = miss_m(naive["lat2"], naive["lon2"], *ship)
    assert err == pytest.approx(rng * math.radians(convergence), rel=0.01)
    assert err > 250.0


@settings(max_examples=120, deadline=None)
@given(lat=st.floats(-75, 75), lon=st.floats(-180, 180, exclude_max=True),
       azi=st.floats(0, 360, exclude_max=True), rng_nm=st.floats(0.05, 300))
def test_position_from_mark_property(lat, lon, azi, rng_nm):
    ship = (lat, lon)
    m = G.Direct(lat, lon, azi, rng_nm * NM)
    bearing, rng = observe(ship, (m["lat2"], m["lon2"]))
    f = position_from_mark(m["lat2"], m["lon2"], bearing, rng)
    assert miss_m(f.lat, f.lon, *ship) < CM


def test_radial_is_measured_at_the_beacon():
    beacon = (47.45, -122.31)
    # 200 NM out on the 075 radial (true); the aircraft's own bearing back to the beacon is
    # not 255° because of convergence
    r = position_from_radial(*beacon, 75.0, 200 * NM)
    d = G.Direct(*beacon, 75.0, 200 * NM)
    assert miss_m(r.lat, r.lon, d["lat2"], d["lon2"]) < 1e-6
    assert r.bearing_from_mark == 75.0
    assert r.bearing == pytest.approx((d["azi2"] + 180.0) % 360.0, abs=1e-9)
    assert abs(r.bearing - 255.0) > 1.0
    # a magnetic radial with the station's variation of 15°E is 15° more, true
    rm = position_from_radial(*beacon, 60.0, 200 * NM, station_variation_e="15E")
    assert miss_m(rm.lat, rm.lon, r.lat, r.lon) < 1e-6


def test_mark_input_errors():
    with pytest.raises(InputError, match="mark latitude"):
        position_from_mark(91.0, 0.0, 10.0, 1000.0)
    with pytest.raises(InputError, match="range"):
        position_from_mark(10.0, 0.0, 10.0, -5.0)
    with pytest.raises(InputError, match="bearing"):
        position_from_mark(10.0, 0.0, float("inf"), 5.0)
    z = position_from_mark(10.0, 20.0, 33.0, 0.0)
    assert (z.lat, z.lon) == (10.0, 20.0)


# ---------------------------------------------------------------------------------------------
# two marks


def test_two_bearing_fix_gives_the_ship_back():
    ship = (36.12, -5.42)                                   # Strait of Gibraltar
    m1 = G.Direct(*ship, 20.0, 9 * NM)
    m2 = G.Direct(*ship, 115.0, 14 * NM)
    mark1, mark2 = (m1["lat2"], m1["lon2"]), (m2["lat2"], m2["lon2"])
    b1, r1 = observe(ship, mark1)
    b2, r2 = observe(ship, mark2)
    fix = fix_from_bearings(*mark1, b1, *mark2, b2)
    assert miss_m(fix.lat, fix.lon, *ship) < CM
    assert fix.cut_angle == pytest.approx(85.0, abs=1e-6)
    assert fix.range1_m == pytest.approx(r1, abs=CM)
    assert fix.range2_m == pytest.approx(r2, abs=CM)


@settings(max_examples=120, deadline=None)
@given(lat=st.floats(-70, 70), lon=st.floats(-180, 180, exclude_max=True),
       a1=st.floats(0, 360, exclude_max=True), turn=st.floats(20, 160),
       d1=st.floats(0.5, 60), d2=st.floats(0.5, 60))
def test_two_bearing_fix_property(lat, lon, a1, turn, d1, d2):
    ship = (lat, lon)
    m1 = G.Direct(lat, lon, a1, d1 * NM)
    m2 = G.Direct(lat, lon, a1 + turn, d2 * NM)
    mark1, mark2 = (m1["lat2"], m1["lon2"]), (m2["lat2"], m2["lon2"])
    b1, _ = observe(ship, mark1)
    b2, _ = observe(ship, mark2)
    fix = fix_from_bearings(*mark1, b1, *mark2, b2)
    assert miss_m(fix.lat, fix.lon, *ship) < CM


def test_two_bearing_refusals():
    ship = (50.0, 0.0)
    m1 = G.Direct(*ship, 10.0, 10 * NM)
    m2 = G.Direct(*ship, 20.0, 12 * NM)
    mark1, mark2 = (m1["lat2"], m1["lon2"]), (m2["lat2"], m2["lon2"])
    b1, _ = observe(ship, mark1)
    b2, _ = observe(ship, mark2)
    # a 10° cut is below the 15° of common practice
    with pytest.raises(GeometryError, match="cut at 10"):
        fix_from_bearings(*mark1, b1, *mark2, b2)
    # ... but may be accepted on purpose
    fix = fix_from_bearings(*mark1, b1, *mark2, b2, min_cut_deg=5.0)
    assert miss_m(fix.lat, fix.lon, *ship) < CM
    # bearings that would put each mark astern of its line: no intersection ahead
    with pytest.raises(GeometryError, match="do not meet"):
        fix_from_bearings(50.0, 0.0, 0.0, 50.0, 0.2, 270.0)
    # identical bearings: no cut at all
    with pytest.raises(GeometryError, match="cut at 0"):
        fix_from_bearings(50.0, 0.0, 45.0, 50.1, 0.1, 45.0)


def test_two_range_fix_returns_both_points():
    # the two points at the given ranges from two marks: construct two ships mirror-wise
    mark1, mark2 = (51.0, 1.5), (51.2, 1.9)
    g = G.Inverse(*mark1, *mark2)
    # a ship to the right of mark1 -> mark2 and its counterpart to the left, same ranges
    right = G.Direct(*mark1, g["azi1"] + 60.0, 12 * NM)
    ship_r = (right["lat2"], right["lon2"])
    _, r1 = observe(ship_r, mark1)
    _, r2 = observe(ship_r, mark2)
    a, b = fix_from_ranges(*mark1, r1, *mark2, r2)
    assert miss_m(a.lat, a.lon, *ship_r) < CM            # right-hand solution first
    # the other solution: at the same ranges on the other side, checked by geographiclib
    assert observe((b.lat, b.lon), mark1)[1] == pytest.approx(r1, abs=CM)
    assert observe((b.lat, b.lon), mark2)[1] == pytest.approx(r2, abs=CM)
    assert miss_m(a.lat, a.lon, b.lat, b.lon) > 1000.0
    # with a DR near the left-hand point, that one comes first
    a2, b2 = fix_from_ranges(*mark1, r1, *mark2, r2, dr=(b.lat + 0.01, b.lon))
    assert miss_m(a2.lat, a2.lon, b.lat, b.lon) < CM
    assert miss_m(b2.lat, b2.lon, *ship_r) < CM


@settings(max_examples=100, deadline=None)
@given(lat=st.floats(-70, 70), lon=st.floats(-180, 180, exclude_max=True),
       a1=st.floats(0, 360, exclude_max=True), turn=st.floats(25, 155),
       d1=st.floats(1, 60), d2=st.floats(1, 60))
def test_two_range_fix_property(lat, lon, a1, turn, d1, d2):
    ship = (lat, lon)
    m1 = G.Direct(lat, lon, a1, d1 * NM)
    m2 = G.Direct(lat, lon, a1 + turn, d2 * NM)
    mark1, mark2 = (m1["lat2"], m1["lon2"]), (m2["lat2"], m2["lon2"])
    _, r1 = observe(ship, mark1)
    _, r2 = observe(ship, mark2)
    fixes = fix_from_ranges(*mark1, r1, *mark2, r2, dr=ship)
    assert miss_m(fixes[0].lat, fixes[0].lon, *ship) < CM
    for f in fixes:
        assert observe((f.lat, f.lon), mark1)[1] == pytest.approx(r1, abs=CM)
        assert observe((f.lat, f.lon), mark2)[1] == pytest.approx(r2, abs=CM)


def test_two_range_refusals():
    with pytest.raises(GeometryError, match="too short"):
        fix_from_ranges(50.0, 0.0, 1000.0, 50.0, 1.0, 1000.0)
    with pytest.raises(GeometryError, match="one inside the other"):
        fix_from_ranges(50.0, 0.0, 50_000.0, 50.0, 0.01, 1000.0)
    with pytest.raises(GeometryError, match="same point"):
        fix_from_ranges(50.0, 0.0, 1000.0, 50.0, 0.0, 2000.0)


# ---------------------------------------------------------------------------------------------
# turns


@pytest.mark.parametrize("c_in,c_out,alt", [
    (350.0, 10.0, 20.0), (10.0, 350.0, -20.0), (90.0, 180.0, 90.0), (180.0, 90.0, -90.0),
    (0.0, 180.0, 180.0), (359.5, 0.5, 1.0), (45.0, 45.0, 0.0),
])
def test_course_alteration_is_signed_starboard_positive(c_in, c_out, alt):
    assert course_alteration(c_in, c_out) == pytest.approx(alt)


def test_turn_radius_from_rate_of_turn():
    # IMO MSC.74(69) Annex 2 track control uses a radius from a preset rate of turn; the
    # geometry (REFERENCE.md, from memory; re-derived here): a full turn at ROT deg/min
    # takes 360/ROT min, so its circumference is V * 360 / (60 ROT) NM and R is that / 2 pi.
    for v, rot in ((12.0, 30.0), (20.0, 10.0), (6.0, 60.0)):
        circumference_nm = v * (360.0 / rot) / 60.0
        assert turn_radius_m(v, rot) / NM == pytest.approx(circumference_nm / (2 * math.pi))
        # the handy 0.955 V / ROT (3 / pi = 0.95493) of common practice
        assert turn_radius_m(v, rot) / NM == pytest.approx(0.955 * v / rot, rel=1e-3)
    with pytest.raises(InputError, match="rate of turn"):
        turn_radius_m(10.0, 0.0)


@settings(max_examples=200, deadline=None)
@given(c_in=st.floats(0, 360, exclude_max=True), alt=st.floats(-170, 170),
       r=st.floats(10.0, 10_000.0))
def test_wheel_over_distance_is_the_tangent_length(c_in, alt, r):
    # Independent plane construction: the turn circle of radius r is tangent to the incoming
    # leg (ending at the waypoint W = origin) and to the outgoing leg; the wheel-over point
    # is the tangent point on the incoming leg. R tan(A/2) is from REFERENCE.md (from memory).
    w = wheel_over_distance_m(alt, r)
    u_in = complex(math.sin(math.radians(c_in)), math.cos(math.radians(c_in)))
    c_out = c_in + alt
    u_out = complex(math.sin(math.radians(c_out)), math.cos(math.radians(c_out)))
    wop = -w * u_in                       # w before the waypoint on the incoming leg
    # with east real and north imaginary, the right (starboard) of direction u is u * -1j:
    # the centre lies to starboard for a turn to starboard
    side = 1j if alt < 0 else -1j
    centre = wop + r * u_in * side
    # the circle must be tangent to the outgoing line through the origin along u_out:
    # distance from the centre to that line equals r, and the tangent point lies ahead of W
    cross = (centre.conjugate() * u_out).imag     # signed distance from the line
    assert abs(abs(cross) - r) < 1e-6 * max(1.0, r)
    along = (centre.conjugate() * u_out).real     # foot of the centre on the outgoing line
    assert along >= -1e-6 * r and abs(along - w) < 1e-6 * max(1.0, r)


def test_wheel_over_limits():
    assert wheel_over_distance_m(0.0, 500.0) == 0.0
    assert wheel_over_distance_m(90.0, 500.0) == pytest.approx(500.0)
    assert wheel_over_distance_m(-60.0, 1000.0) == pytest.approx(1000.0 / math.sqrt(3))
    with pytest.raises(GeometryError, match="180"):
        wheel_over_distance_m(180.0, 500.0)


def test_alteration_at_waypoint_great_circle_and_rhumb():
    from passagelog.nav.fixing import alteration_at_waypoint
    from passagelog.nav.rhumb import rhumb_inverse

    a, w, b = (50.0, -4.0), (50.5, -3.0), (51.0, -3.0)
    # great circle: the incoming leg's course at the waypoint is geographiclib's azi2, the
    # outgoing leg's is azi1 of the next leg (Karney 2013)
    gin = G.Inverse(*a, *w)
    gout = G.Inverse(*w, *b)
    r = alteration_at_waypoint(*a, *w, *b, "great-circle", radius_m=926.0)
    assert r.course_in == pytest.approx(gin["azi2"] % 360.0, abs=1e-9)
    assert r.course_out == pytest.approx(gout["azi1"] % 360.0, abs=1e-9)
    assert r.alteration == pytest.approx(gout["azi1"] - gin["azi2"], abs=1e-9)
    assert r.leg_in_m == pytest.approx(gin["s12"], abs=1e-6)
    # the wheel-over point lies on the incoming geodesic, wheel_over_m before the waypoint
    back = G.Inverse(r.wop_lat, r.wop_lon, *w)
    assert back["s12"] == pytest.approx(r.wheel_over_m, abs=1e-6)
    assert back["azi2"] % 360.0 == pytest.approx(r.course_in, abs=1e-7)
    # rhumb legs: a constant course along each
    rr = alteration_at_waypoint(*a, *w, *b, "rhumb")
    assert rr.course_in == pytest.approx(rhumb_inverse(*a, *w)[1], abs=1e-12)
    assert rr.course_out == pytest.approx(0.0, abs=1e-12)
    assert rr.wheel_over_m is None and rr.wop_lat is None
    # a radius too large for the incoming leg is refused
    with pytest.raises(GeometryError, match="too large"):
        alteration_at_waypoint(*a, *w, *b, "rhumb", radius_m=500_000.0)
    with pytest.raises(GeometryError, match="zero length"):
        alteration_at_waypoint(*w, *w, *b)
    with pytest.raises(InputError, match="sailing"):
        alteration_at_waypoint(*a, *w, *b, "mercator")
