"""Great-circle legs and their offsets, checked against references outside passagelog."""

from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic
from hypothesis import given, settings
from hypothesis import strategies as st

from passagelog.errors import GeometryError, InputError
from passagelog.nav.earth import SPHERE, SPHERE_NM, WGS84, Earth
from passagelog.nav.greatcircle import GreatCircleLeg, composite

sys.path.insert(0, str(Path(__file__).parent))
import geodsolve as gs  # noqa: E402

DIST_TOL_M = 1e-3  # issue 2: distance 1 mm
AZI_TOL_DEG = 1e-7  # issue 2: courses 1e-7 degrees
OFFSET_TOL_M = 1e-3  # issue 2: XTE and along-track 1 mm


def dms(d, m=0.0, s=0.0):
    return d + m / 60.0 + s / 3600.0


def azi_diff(a, b):
    return (np.asarray(a) - np.asarray(b) + 180.0) % 360.0 - 180.0


# ----------------------------------------------------------------------- published values
def test_geodsolve_man_page_jfk_to_sin():
    # GeodSolve(1) man page example, as quoted in REFERENCE.md (verified with GeodSolve 2.1)
    leg = GreatCircleLeg(dms(40, 38, 23), -dms(73, 46, 44), dms(1, 21, 33), dms(103, 59, 22))
    assert leg.distance_m == pytest.approx(15347627.659635615, abs=DIST_TOL_M)
    assert leg.initial_course == pytest.approx(3.30831240011556, abs=AZI_TOL_DEG)
    assert leg.final_course == pytest.approx(177.48590214367724, abs=AZI_TOL_DEG)


def test_karney_2013_table_2_direct():
    # Karney (2013), "Algorithms for geodesics", J. Geod. 87:43-55, Table 2: lat1 40 deg,
    # azi1 30 deg, s12 10,000 km -> lat2 41.79331020506, lon12 137.84490004377,
    # azi2 149.09016931807 (values published to 1e-11 degrees, about 1 micrometre)
    leg = GreatCircleLeg(40.0, 0.0, 41.79331020506, 137.84490004377)
    assert leg.distance_m == pytest.approx(10_000_000.0, abs=DIST_TOL_M)
    assert leg.initial_course == pytest.approx(30.0, abs=1e-9)
    assert leg.final_course == pytest.approx(149.09016931807, abs=1e-9)
    lat, lon = leg.point_at(10_000_000.0)
    assert lat == pytest.approx(41.79331020506, abs=1e-10)
    assert lon == pytest.approx(137.84490004377, abs=1e-10)


BESSEL = Earth("bessel", 6377397.155, 1.0 / 299.1528128)


def test_vincenty_1975_line_a_bessel():
    # Vincenty (1975), Survey Review 23(176), test line (a), Bessel ellipsoid:
    # 55 45 N -> 33 26 S, dlon 108 13 E: s = 14110526.170 m, azi1 96 36 08.79960,
    # azi2 137 52 22.01454 (published to 1 mm and 1e-5 arc seconds)
    leg = GreatCircleLeg(dms(55, 45), 0.0, -dms(33, 26), dms(108, 13), BESSEL)
    assert leg.distance_m == pytest.approx(14110526.170, abs=DIST_TOL_M)
    assert leg.initial_course == pytest.approx(dms(96, 36, 8.79960), abs=1e-5 / 3600)
    assert leg.final_course == pytest.approx(dms(137, 52, 22.01454), abs=1e-5 / 3600)


def _geographiclib_rows():
    # geographiclib's own test_geodesic.py (shipped with the package): 20 reference rows
    from geographiclib.test.test_geodesic import GeodesicTest

    return GeodesicTest.testcases


@pytest.mark.parametrize("row", _geographiclib_rows())
def test_geographiclib_reference_rows(row):
    lat1, lon1, azi1, lat2, lon2, azi2, s12 = row[:7]
    leg = GreatCircleLeg(lat1, lon1, lat2, ((lon2 + 180) % 360) - 180)
    assert leg.distance_m == pytest.approx(s12, abs=DIST_TOL_M)
    assert abs(azi_diff(leg.initial_course, azi1)) < AZI_TOL_DEG
    assert abs(azi_diff(leg.final_course, azi2)) < AZI_TOL_DEG


# ------------------------------------------------------------------------ facts of geometry
R_TETRA = Earth("sphere-6371km", 6_371_000.0, 0.0)
TETRA = [(90.0, 0.0)] + [(math.degrees(math.asin(-1.0 / 3.0)), lon) for lon in (0, 120, -120)]


def test_regular_tetrahedron_on_a_sphere():
    # Geometry of the regular tetrahedron: vertices pairwise arccos(-1/3) = 109.47 deg apart
    # (central angle), legs meet at 120 deg at each vertex, chord at R = 6371 km is
    # R sqrt(8/3) = 10,404 km
    arc = math.acos(-1.0 / 3.0)
    for i, a in enumerate(TETRA):
        courses = []
        for j, b in enumerate(TETRA):
            if i == j:
                continue
            leg = GreatCircleLeg(*a, *b, R_TETRA)
            assert leg.distance_m / R_TETRA.a == pytest.approx(arc, abs=1e-12)
            assert math.degrees(leg.distance_m / R_TETRA.a) == pytest.approx(109.47, abs=0.005)
            chord_km = 2 * R_TETRA.a * math.sin(leg.distance_m / R_TETRA.a / 2) / 1000
            assert chord_km == pytest.approx(10_404, abs=0.5)
            courses.append(leg.initial_course)
        courses.sort()
        gaps = [courses[1] - courses[0], courses[2] - courses[1], 360 - courses[2] + courses[0]]
        if i == 0:  # at the pole the "course" is measured from the meridian lon = 0
            assert gaps == pytest.approx([120, 120, 120], abs=1e-9)
        else:
            # two legs from a vertex: the angle between them is 120 deg
            assert min(gaps) == pytest.approx(120.0, abs=1e-9)


def test_sphere_cross_track_against_formulary_formulas():
    # Aviation Formulary (Ed Williams), "Cross track error and along track distance", on the
    # sphere where 1' = 1 NM: XTD = asin(sin(d_AD) sin(crs_AD - crs_AB)),
    # ATD = acos(cos(d_AD) / cos(XTD)); LAX 33 57N 118 24W -> JFK 40 38N 73 47W, point D
    # 34 30N 116 30W. The formulas are evaluated here independently; LAX-JFK 2144 NM,
    # course 66 deg are the formulary's worked-example figures (from memory).
    A = (dms(33, 57), -dms(118, 24))
    B = (dms(40, 38), -dms(73, 47))
    D = (34.5, -116.5)
    leg = GreatCircleLeg(*A, *B, SPHERE_NM)
    assert leg.distance_m / 1852 == pytest.approx(2144, abs=0.5)
    assert leg.initial_course == pytest.approx(66, abs=0.5)
    R = SPHERE_NM.a
    p1, l1, p2, l2, p3, l3 = map(math.radians, (*A, *B, *D))

    def crs(pa, la, pb, lb):
        return math.atan2(math.sin(lb - la) * math.cos(pb),
                          math.cos(pa) * math.sin(pb) - math.sin(pa) * math.cos(pb)
                          * math.cos(lb - la))

    d13 = math.acos(math.sin(p1) * math.sin(p3)
                    + math.cos(p1) * math.cos(p3) * math.cos(l3 - l1))
    xtd = math.asin(math.sin(d13) * math.sin(crs(p1, l1, p3, l3) - crs(p1, l1, p2, l2)))
    atd = math.acos(math.cos(d13) / math.cos(xtd))
    xte, along = leg.offset(*D)
    assert xte == pytest.approx(xtd * R, abs=1e-6)
    assert along == pytest.approx(atd * R, abs=1e-6)
    assert xte > 0  # D lies to the right (south-east) of the north-easterly track


# ------------------------------------------------------------------- GeodSolve comparisons
def _random_legs(seed, n):
    rng = np.random.default_rng(seed)
    lat1 = rng.uniform(-85, 85, n)
    lon1 = rng.uniform(-180, 180, n)
    lat2 = rng.uniform(-85, 85, n)
    lon2 = rng.uniform(-180, 180, n)
    return lat1, lon1, lat2, lon2


EDGE_LEGS = [
    (10.0, 179.5, -5.0, -179.0),  # across the antimeridian
    (-20.0, -179.9, 30.0, 179.8),  # across the antimeridian westward
    (0.0, 10.0, 0.0, 40.0),  # along the equator
    (0.0, -30.0, 0.0, 150.0),  # equatorial, half way round (meridional shortest path)
    (10.0, 20.0, 60.0, 20.0),  # along a meridian, north
    (60.0, -45.0, -70.0, -45.0),  # along a meridian, south
    (80.0, 10.0, 80.0, -170.0),  # over the pole
    (85.0, -100.0, 84.0, 80.0),  # high latitude, nearly over the pole
    (-85.0, 0.0, -85.0, 90.0),
    (45.0, 5.0, 45.000899, 5.0),  # about 100 m north
    (45.0, 5.0, 45.0, 5.00127),  # about 100 m east
    (0.0, 0.0, 0.5, 179.5),  # nearly antipodal
    (30.0, 0.0, -29.9, 179.8),  # nearly antipodal
    (-10.0, 40.0, 10.0, -140.5),  # nearly antipodal
    (0.0, 0.0, 0.0, 179.7),  # nearly antipodal on the equator
]


@gs.needs_geodsolve
@pytest.mark.geodsolve
def test_legs_against_geodsolve():
    lat1, lon1, lat2, lon2 = _random_legs(20260101, 300)
    rows = list(zip(lat1, lon1, lat2, lon2)) + EDGE_LEGS
    # GeodSolve -i (GeographicLib C++): azi1, azi2, s12
    ref = gs.inverse(rows)
    for row, (azi1, azi2, s12) in zip(rows, ref):
        leg = GreatCircleLeg(*row)
        assert leg.distance_m == pytest.approx(s12, abs=DIST_TOL_M), row
        assert abs(azi_diff(leg.initial_course, azi1)) < AZI_TOL_DEG, row
        assert abs(azi_diff(leg.final_course, azi2)) < AZI_TOL_DEG, row


@gs.needs_geodsolve
@pytest.mark.geodsolve
def test_points_along_against_geodsolve():
    lat1, lon1, lat2, lon2 = _random_legs(7, 40)
    rows = list(zip(lat1, lon1, lat2, lon2)) + EDGE_LEGS
    inv = gs.inverse(rows)
    fracs = np.array([-0.3, 0.0, 0.25, 0.5, 0.9, 1.0, 1.4])
    queries = []
    mine = []
    for row, (azi1, _, s12) in zip(rows, inv):
        leg = GreatCircleLeg(*row)
        s = fracs * s12
        lat, lon = leg.points_at_np(s)
        for k in range(len(s)):
            queries.append((row[0], row[1], azi1, s[k]))
            mine.append((lat[k], lon[k], *leg.point_at(s[k])))
    # GeodSolve direct (GeographicLib C++): lat2, lon2 along the line from the start
    ref = gs.direct(queries)
    mine = np.array(mine)
    assert np.max(np.abs(mine[:, 0] - ref[:, 0])) < 1e-9
    assert np.max(np.abs(azi_diff(mine[:, 1], ref[:, 1]))) < 1e-9
    assert np.max(np.abs(mine[:, 2] - ref[:, 0])) < 1e-9
    assert np.max(np.abs(azi_diff(mine[:, 3], ref[:, 1]))) < 1e-9


def _offset_cases():
    lat1, lon1, lat2, lon2 = _random_legs(424242, 250)
    rng = np.random.default_rng(99)
    plat = rng.uniform(-85, 85, 250)
    plon = rng.uniform(-180, 180, 250)
    legs = list(zip(lat1, lon1, lat2, lon2))
    pos = list(zip(plat, plon))
    # positions near each edge leg: a few tens of km off, before, on and after the leg
    for row in EDGE_LEGS:
        leg = GreatCircleLeg(*row)
        for frac, off in ((-0.2, 30e3), (0.3, -5e3), (0.5, 0.0), (0.7, 80e3), (1.3, -300e3)):
            lat, lon = leg.point_at(frac * leg.distance_m)
            c = leg.course_at(frac * leg.distance_m)
            g = Geodesic.WGS84.Direct(lat, lon, c + 90.0, off)
            legs.append(row)
            pos.append((g["lat2"], g["lon2"]))
    return np.array(legs), np.array(pos)


@gs.needs_geodsolve
@pytest.mark.geodsolve
def test_offsets_against_geodsolve_independent_foot():
    legs, pos = _offset_cases()
    # reference foot: scan + bisection on the right-angle condition, GeodSolve only
    xte_ref, along_ref = gs.foot(legs[:, 0], legs[:, 1], legs[:, 2], legs[:, 3],
                                 pos[:, 0], pos[:, 1])
    ambiguous = np.isnan(xte_ref)
    assert ambiguous.sum() <= 0.06 * len(legs)  # foot half a circumference away: no unique
    # reference (the line does not close on the ellipsoid)
    for i in np.flatnonzero(~ambiguous):
        leg = GreatCircleLeg(*legs[i])
        xte, along = leg.offsets_np(pos[i:i + 1, 0], pos[i:i + 1, 1])
        assert xte[0] == pytest.approx(xte_ref[i], abs=OFFSET_TOL_M), (legs[i], pos[i])
        assert along[0] == pytest.approx(along_ref[i], abs=OFFSET_TOL_M), (legs[i], pos[i])
        xs, als = leg.offset(*pos[i])
        assert xs == pytest.approx(xte_ref[i], abs=OFFSET_TOL_M), (legs[i], pos[i])
        assert als == pytest.approx(along_ref[i], abs=OFFSET_TOL_M), (legs[i], pos[i])


@gs.needs_geodsolve
@pytest.mark.geodsolve
def test_batch_offsets_one_leg_against_geodsolve():
    row = (50.0, -4.0, 40.0, -70.0)
    leg = GreatCircleLeg(*row)
    rng = np.random.default_rng(5)
    al = rng.uniform(-0.2, 1.2, 200) * leg.distance_m
    lat, lon = leg.points_at_np(al)
    lat = np.clip(lat + rng.normal(0, 2, 200), -89, 89)
    lon = lon + rng.normal(0, 2, 200)
    xte, along = leg.offsets_np(lat, lon)
    n = len(lat)
    xr, ar = gs.foot(np.full(n, row[0]), np.full(n, row[1]), np.full(n, row[2]),
                     np.full(n, row[3]), lat, ((lon + 180) % 360) - 180)
    assert not np.isnan(xr).any()
    assert np.max(np.abs(xte - xr)) < OFFSET_TOL_M
    assert np.max(np.abs(along - ar)) < OFFSET_TOL_M


@gs.needs_geodsolve
@pytest.mark.geodsolve
def test_vertex_against_geodsolve():
    legs = [(40.64, -73.78, 1.36, 103.99), (-33.9, 151.2, -33.9, -70.6), (10, 0, 10, 100)]
    for row in legs:
        leg = GreatCircleLeg(*row)
        v = leg.vertex()
        assert v is not None
        # GeodSolve -i start -> vertex: the course there is due east or west, and the
        # vertex lies on the leg (same initial course)
        azi1, azi2, s = gs.inverse([(row[0], row[1], *v)])[0]
        assert abs(azi_diff(azi2, 90.0)) < 1e-7 or abs(azi_diff(azi2, 270.0)) < 1e-7
        assert abs(azi_diff(azi1, leg.initial_course)) < 1e-7
        assert 0 < s < leg.distance_m
    # a leg that turns back toward the equator at neither end: vertex beyond its end
    assert GreatCircleLeg(10, 0, 20, 10).vertex() is None
    assert GreatCircleLeg(0, 0, 0, 30).vertex() is None  # the equator has no vertex


@gs.needs_geodsolve
@pytest.mark.geodsolve
def test_points_every_and_at_meridians_against_geodsolve():
    leg = GreatCircleLeg(dms(40, 38, 23), -dms(73, 46, 44), 51.47, -0.45)
    step = 300 * 1852.0
    pts = leg.points_every(step)
    assert pts[0] == (leg.lat1, leg.lon1) and pts[-1] == (leg.lat2, leg.lon2)
    assert len(pts) == math.ceil(leg.distance_m / step) + 1
    rows = [(leg.lat1, leg.lon1, *p) for p in pts[1:]]
    ref = gs.inverse(rows)
    # GeodSolve: every point is k * step from the start along the same geodesic
    for k, (azi1, _, s) in enumerate(ref[:-1], start=1):
        assert s == pytest.approx(k * step, abs=DIST_TOL_M)
        assert abs(azi_diff(azi1, leg.initial_course)) < 1e-7
    mer = leg.points_at_meridians(5)
    lons = [p[1] for p in mer[1:-1]]
    assert lons == [float(x) for x in range(-70, 0, 5)]
    ref = gs.inverse([(leg.lat1, leg.lon1, *p) for p in mer[1:]])
    assert np.max(np.abs(azi_diff(ref[:, 0], leg.initial_course))) < 1e-7
    assert np.all(np.diff(ref[:, 2]) > 0)
    # westward across the antimeridian
    leg = GreatCircleLeg(35.0, 140.0, 37.8, -122.4)
    lons = [p[1] for p in leg.points_at_meridians(10)[1:-1]]
    assert lons == [150.0, 160.0, 170.0, -180.0, -170.0, -160.0, -150.0, -140.0, -130.0]


@gs.needs_geodsolve
@pytest.mark.geodsolve
def test_composite_sailing_against_geodsolve():
    # Cape of Good Hope to Cape Horn region, limit 50 S (southern vertex beyond the limit)
    start, end = (-34.4, 18.5), (-55.0, -67.3)
    with pytest.raises(GeometryError, match="beyond the limiting latitude"):
        composite(*start, *end, -50.0)
    start, end = (-34.4, 18.5), (-38.5, 145.0)  # off Cape Town to off Melbourne
    gc = GreatCircleLeg(*start, *end)
    assert gc.vertex()[0] < -58
    cs = composite(*start, *end, -50.0)
    assert cs.composite and [p.kind for p in cs.parts] == ["great-circle", "parallel",
                                                           "great-circle"]
    a, par, b = cs.parts
    assert a.lat2 == -50.0 and b.lat1 == -50.0 and par.lat1 == par.lat2 == -50.0
    # GeodSolve: the first great circle arrives due east on the parallel (its vertex) ...
    azi1, azi2, s = gs.inverse([(a.lat1, a.lon1, a.lat2, a.lon2)])[0]
    assert abs(azi_diff(azi2, 90.0)) < 1e-7 and s == pytest.approx(a.distance_m, abs=1e-3)
    assert abs(azi_diff(azi1, a.initial_course)) < 1e-7
    # ... and the second leaves the parallel due east
    azi1, azi2, s = gs.inverse([(b.lat1, b.lon1, b.lat2, b.lon2)])[0]
    assert abs(azi_diff(azi1, 90.0)) < 1e-7 and s == pytest.approx(b.distance_m, abs=1e-3)
    assert abs(azi_diff(azi2, b.final_course)) < 1e-7
    assert a.lon2 < par.lon2 == b.lon1
    # RhumbSolve -i (GeographicLib C++): the due-west rhumb line along the parallel
    import shutil
    import subprocess

    if shutil.which("RhumbSolve"):
        out = subprocess.run(["RhumbSolve", "-i", "-p", "9"],
                             input=f"{par.lat1} {par.lon1} {par.lat2} {par.lon2}\n",
                             capture_output=True, text=True, check=True).stdout.split()
        assert float(out[1]) == pytest.approx(par.distance_m, abs=1e-3)
    assert cs.distance_m > gc.distance_m
    # limit beyond the vertex: plain great circle
    plain = composite(*start, *end, -70.0)
    assert not plain.composite and plain.distance_m == gc.distance_m


def test_composite_errors():
    with pytest.raises(InputError, match="limiting latitude"):
        composite(10, 0, 20, 30, 0.0)
    with pytest.raises(InputError, match="limiting latitude"):
        composite(10, 0, 20, 30, float("nan"))


# --------------------------------------------------------------------------------- errors
def test_zero_length_leg_has_no_course():
    with pytest.raises(GeometryError, match="zero length"):
        GreatCircleLeg(10.0, 20.0, 10.0, 20.0)


def test_bad_positions_are_refused_with_their_index():
    leg = GreatCircleLeg(0, 0, 10, 10)
    with pytest.raises(InputError, match="position 1"):
        leg.offsets_np([0.0, float("nan")], [0.0, 1.0])
    with pytest.raises(InputError, match="latitude"):
        leg.offset(91.0, 0.0)
    with pytest.raises(InputError, match="leg start latitude"):
        GreatCircleLeg(-95.0, 0, 10, 10)


def test_position_at_the_pole_of_the_leg():
    leg = GreatCircleLeg(0.0, 0.0, 0.0, 30.0, SPHERE_NM)  # equator: its pole is the pole
    with pytest.raises(GeometryError, match="pole of the great-circle leg"):
        leg.offset(90.0, 0.0)
    with pytest.raises(GeometryError, match="pole of the great-circle leg"):
        leg.offsets_np([10.0, -90.0], [0.0, 0.0])


@gs.needs_geodsolve
@pytest.mark.geodsolve
def test_equator_leg_offsets_up_to_near_its_pole():
    # Geometry: meridians are geodesics that cross the equator at right angles, so the foot
    # of any position on an equatorial leg lies on the position's meridian: XTE is minus the
    # meridian arc (GeodSolve -i along the meridian), along-track is a * dlon (the equator
    # is a circle of radius a).
    leg = GreatCircleLeg(0.0, 0.0, 0.0, 30.0)
    lat = np.array([0.001, 1.0, 30.0, 60.0, 80.0, 89.0, 89.9, 89.99, -45.0, -89.9])
    lon = np.array([10.0, -20.0, 45.0, 170.0, 10.0, 10.0, 10.0, 10.0, -100.0, 5.0])
    xte, along = leg.offsets_np(lat, lon)
    ref = gs.inverse([(0.0, lo, la, lo) for la, lo in zip(lat, lon)])
    dlon = (lon - 15.0 + 180.0) % 360.0 - 180.0 + 15.0  # nearest foot: half way round
    assert np.max(np.abs(np.abs(xte) - ref[:, 2])) < 1e-4
    assert np.all(np.sign(xte) == -np.sign(lat))  # north of an eastbound leg is port
    assert np.max(np.abs(along - WGS84.a * np.radians(dlon))) < 1e-4
    for i in range(len(lat)):
        x, a = leg.offset(lat[i], lon[i])
        assert x == pytest.approx(xte[i], abs=1e-4) and a == pytest.approx(along[i], abs=1e-4)


@gs.needs_geodsolve
@pytest.mark.geodsolve
def test_sphere_offsets_against_geodsolve_and_closed_forms():
    # GeodSolve -e 6371008.8 0 (the mean-radius sphere) with the independent foot search,
    # and the closed-form spherical cross-track formulas (Aviation Formulary, Williams)
    lat1, lon1, lat2, lon2 = _random_legs(31, 60)
    rng = np.random.default_rng(32)
    plat, plon = rng.uniform(-85, 85, 60), rng.uniform(-180, 180, 60)
    xr, ar = gs.foot(lat1, lon1, lat2, lon2, plat, plon, a=SPHERE.a, f=0.0)
    ok = ~np.isnan(xr)
    assert ok.sum() >= 56
    R = SPHERE.a
    for i in np.flatnonzero(ok):
        leg = GreatCircleLeg(lat1[i], lon1[i], lat2[i], lon2[i], SPHERE)
        x, a = leg.offsets_np([plat[i]], [plon[i]])
        assert x[0] == pytest.approx(xr[i], abs=1e-3) and a[0] == pytest.approx(ar[i], abs=1e-3)
        g = Geodesic(R, 0.0).Inverse(lat1[i], lon1[i], plat[i], plon[i])
        d13 = g["s12"] / R
        xtd = math.asin(math.sin(d13) * math.sin(math.radians(g["azi1"] - leg.initial_course)))
        assert x[0] == pytest.approx(xtd * R, abs=1e-3)


def test_offsets_np_keeps_the_shape_of_its_input():
    leg = GreatCircleLeg(10.0, 20.0, 30.0, 40.0)
    xte, along = leg.offsets_np(np.full((2, 3), 15.0), np.linspace(20, 30, 6).reshape(2, 3))
    assert xte.shape == along.shape == (2, 3)
    xte, along = leg.offsets_np([], [])
    assert xte.shape == (0,)
    # scalar and batch agree to far below the 0.1 mm convergence tolerance
    x, a = leg.offset(15.0, 22.0)
    assert xte.dtype == np.float64
    xb, ab = leg.offsets_np(15.0, 22.0)
    assert float(xb) == pytest.approx(x, abs=1e-6) and float(ab) == pytest.approx(a, abs=1e-6)


def test_non_convergence_is_a_clear_error(monkeypatch):
    import passagelog.nav.greatcircle as gcm

    monkeypatch.setattr(gcm, "FOOT_MAX_ITERATIONS", 1)
    leg = GreatCircleLeg(10.0, 20.0, 30.0, 40.0)
    with pytest.raises(GeometryError, match="did not converge in 1 iterations"):
        leg.offsets_np([0.0, 25.0], [0.0, 30.0])
    with pytest.raises(GeometryError, match=r"position \(25.0, 30.0\)"):
        leg.offset(25.0, 30.0)


def test_never_nan_on_awkward_positions():
    leg = GreatCircleLeg(45.0, 5.0, 45.000899, 5.0)  # 100 m leg
    lat = np.array([45.0, 45.000899, -45.0, 89.999, -89.999, 45.0005])
    lon = np.array([5.0, 5.0, -175.0, 0.0, 0.0, 5.0])
    xte, along = leg.offsets_np(lat, lon)
    assert np.all(np.isfinite(xte)) and np.all(np.isfinite(along))


# ------------------------------------------------------------------- hypothesis properties
lats = st.floats(-80, 80)
lons = st.floats(-180, 179.999)


def _leg_or_skip(lat1, lon1, lat2, lon2):
    from hypothesis import assume

    g = Geodesic.WGS84.Inverse(lat1, lon1, lat2, lon2)
    assume(1.0 < g["s12"] < 19_900_000.0)
    return GreatCircleLeg(lat1, lon1, lat2, lon2)


@settings(max_examples=150, deadline=None)
@given(lats, lons, lats, lons, st.floats(-0.5, 1.5))
def test_property_point_on_leg_has_zero_xte(lat1, lon1, lat2, lon2, frac):
    leg = _leg_or_skip(lat1, lon1, lat2, lon2)
    s = frac * leg.distance_m
    # geographiclib's direct problem along the leg's initial course
    g = Geodesic.WGS84.Direct(leg.lat1, leg.lon1, leg.initial_course, s)
    xte, along = leg.offset(g["lat2"], g["lon2"])
    assert abs(xte) < 1e-3
    assert along == pytest.approx(s, abs=1e-3)
    xb, ab = leg.offsets_np([g["lat2"]], [g["lon2"]])
    assert abs(xb[0]) < 1e-3 and ab[0] == pytest.approx(s, abs=1e-3)


@settings(max_examples=150, deadline=None)
@given(lats, lons, lats, lons, st.floats(-0.3, 1.3), st.floats(-2_000_000, 2_000_000))
def test_property_known_perpendicular_offset(lat1, lon1, lat2, lon2, frac, off):
    leg = _leg_or_skip(lat1, lon1, lat2, lon2)
    s = frac * leg.distance_m
    g = Geodesic.WGS84.Direct(leg.lat1, leg.lon1, leg.initial_course, s)
    # the geodesic leaving the line at right angles, to the right for off > 0
    p = Geodesic.WGS84.Direct(g["lat2"], g["lon2"], g["azi2"] + 90.0, off)
    from hypothesis import assume

    assume(abs(p["lat2"]) < 89.0)
    xte, along = leg.offsets_np([p["lat2"]], [p["lon2"]])
    assert xte[0] == pytest.approx(off, abs=1e-3)
    assert along[0] == pytest.approx(s, abs=1e-3)


@settings(max_examples=100, deadline=None)
@given(lats, lons, lats, lons, lats, lons)
def test_property_reversing_the_leg_flips_xte(lat1, lon1, lat2, lon2, plat, plon):
    leg = _leg_or_skip(lat1, lon1, lat2, lon2)
    back = GreatCircleLeg(lat2, lon2, lat1, lon1)
    from hypothesis import assume

    # the reversed shortest geodesic is the same curve only away from antipodal ends
    assume(leg.distance_m < 19_000_000)
    try:
        x1, a1 = leg.offset(plat, plon)
    except GeometryError:  # at the pole of the leg: no foot (test_position_at_the_pole_...)
        assume(False)
    x2, a2 = back.offset(plat, plon)
    assume(abs(a1 - leg.distance_m / 2) < 9_000_000)  # the same foot, not the far one
    assert x2 == pytest.approx(-x1, abs=1e-3)
    assert a2 == pytest.approx(leg.distance_m - a1, abs=1e-3)


# ------------------------------------------------ far feet: the one nearest the leg's middle
def test_equator_leg_feet_near_the_antipode_of_its_middle():
    # Regression (docs/reliability.md, along-track flip): the foot of a position on an
    # equatorial leg lies on the position's meridian (meridians cross the equator at right
    # angles), and the equator closes after 2 pi a while one turn of arc of its geodesic is
    # 2 pi b: the foot was taken a turn the long way round up to ~0.6 degrees of longitude
    # either side of the antipode of the leg's middle. Along-track is a * dlon measured from
    # the start the near way round the middle (the equator is a circle of radius a); |XTE|
    # is the meridian arc from geographiclib's Geodesic.Inverse.
    leg = GreatCircleLeg(0.0, 0.0, 0.0, 30.0)  # middle 15E, its antipode 165W
    lons, lats = [], []
    for d in (-2.0, -0.6, -0.3, -0.01, 0.01, 0.3, 0.6, 2.0):
        for la in (0.0, 5.0, -40.0, 70.0):
            lons.append(-165.0 + d)
            lats.append(la)
    lat, lon = np.array(lats), np.array(lons)
    xte, along = leg.offsets_np(lat, lon)
    dlon = (lon - 15.0 + 180.0) % 360.0 - 180.0 + 15.0  # within 180 degrees of the middle
    assert np.max(np.abs(along - WGS84.a * np.radians(dlon))) < 1e-4
    for i in range(len(lat)):
        ref = Geodesic.WGS84.Inverse(0.0, lon[i], lat[i], lon[i])["s12"]  # geographiclib
        assert abs(xte[i]) == pytest.approx(ref, abs=1e-4)
        x, a = leg.offset(lat[i], lon[i])
        assert x == pytest.approx(xte[i], abs=1e-4) and a == pytest.approx(along[i], abs=1e-4)


def _feet_geographiclib(row, lat, lon, scan=900):
    """Every foot of a position on the line extended a turn either side of the leg's middle,
    from geographiclib alone (InverseLine for the line, Inverse from its points to the
    position): local minima of the distance on a scan, refined by bisection on the right
    angle to 1e-6 m. Returns [(along_m, xte_m)]."""
    line = Geodesic.WGS84.InverseLine(*row)
    mid = 0.5 * line.s13

    def at(s):
        p = line.Position(s)
        inv = Geodesic.WGS84.Inverse(p["lat2"], p["lon2"], lat, lon)
        t = math.radians(inv["azi1"] - p["azi2"])
        return math.cos(t), math.copysign(inv["s12"], math.sin(t))

    grid = np.linspace(mid - 2 * math.pi * WGS84.a, mid + 2 * math.pi * WGS84.a, scan)
    d = np.array([abs(at(s)[1]) for s in grid])
    feet = []
    for k in range(1, scan - 1):
        if d[k] <= d[k - 1] and d[k] <= d[k + 1]:
            lo, hi = grid[k - 1], grid[k + 1]
            while hi - lo > 1e-6:
                m = 0.5 * (lo + hi)
                lo, hi = (m, hi) if at(m)[0] > 0 else (lo, m)
            s = 0.5 * (lo + hi)
            feet.append((s, at(s)[1]))
    return feet


def test_far_feet_of_random_legs_against_geographiclib():
    """Random legs, positions 100-170 degrees of arc from the leg's middle (beyond 90 degrees
    of every point of the leg for most): the foot taken is, of the candidates (one per turn
    of the line), the one nearest the middle along the line; batch and scalar agree."""
    rng = np.random.default_rng(20261202)
    checked = 0
    while checked < 10:
        la1, la2 = rng.uniform(-80, 80, 2)
        lo1, lo2 = rng.uniform(-180, 180, 2)
        row = (float(la1), float(lo1), float(la2), float(lo2))
        leg = GreatCircleLeg(*row)
        if leg.distance_m > 15e6:
            continue
        m = Geodesic.WGS84.InverseLine(*row).Position(0.5 * leg.distance_m)
        p = Geodesic.WGS84.ArcDirect(m["lat2"], m["lon2"], float(rng.uniform(0, 360)),
                                     float(rng.uniform(100, 170)))
        lat, lon = p["lat2"], (p["lon2"] + 180.0) % 360.0 - 180.0
        feet = _feet_geographiclib(row, lat, lon)
        near = sorted(feet, key=lambda f: abs(f[0] - 0.5 * leg.distance_m))
        if len(near) > 1 and abs(abs(near[0][0] - 0.5 * leg.distance_m)
                                 - abs(near[1][0] - 0.5 * leg.distance_m)) < 1.0:
            continue  # two candidates as near (within 1 m): either is right
        s_ref, x_ref = near[0]
        xb, ab = leg.offsets_np([lat], [lon])
        xs, als = leg.offset(lat, lon)
        for x, s in ((xb[0], ab[0]), (xs, als)):
            assert s == pytest.approx(s_ref, abs=OFFSET_TOL_M), (row, lat, lon, feet, s)
            assert x == pytest.approx(x_ref, abs=OFFSET_TOL_M), (row, lat, lon, feet, x)
        checked += 1


@pytest.mark.parametrize("row, pos", [
    ((-63.36079042413908, 151.35551732273558, 16.830021042951415, -150.57027862006368),
     (21.467475861313808, 112.85811930747934)),
    ((-35.701669024653015, 53.40648784504123, -52.64393857971265, -19.916756208601242),
     (-36.276570906742066, 175.24399964500296)),
])
def test_regression_foot_near_the_pole_of_the_line_is_not_turns_away(row, pos):
    # Positions some tens of km from the pole of the leg's great circle (|XTE| near a
    # quarter meridian): a secant step sent the foot iteration round the Earth several times
    # (along-track 248,063,370 m and -224,622,425 m, 5-6 turns). Now a step moves the foot
    # at most a quarter turn, and the foot is the candidate nearest the leg's middle found
    # from geographiclib alone (InverseLine / Inverse).
    leg = GreatCircleLeg(*row)
    mid = 0.5 * leg.distance_m
    feet = _feet_geographiclib(row, *pos, scan=3000)
    s_ref, x_ref = min(feet, key=lambda f: abs(f[0] - mid))
    xb, ab = leg.offsets_np([pos[0]], [pos[1]])
    xs, als = leg.offset(*pos)
    for x, s in ((xb[0], ab[0]), (xs, als)):
        assert s == pytest.approx(s_ref, abs=OFFSET_TOL_M) and x == pytest.approx(
            x_ref, abs=OFFSET_TOL_M), (s, x, feet)


def test_early_stop_of_the_foot_iteration_changes_nothing_that_matters(monkeypatch):
    """The iteration may stop once SETTLE_GAIN * |step| * (d/R)^2 is below the tolerance
    (greatcircle.SETTLE_GAIN): against the same iteration run until the step itself is below
    FOOT_TOLERANCE_M, on legs of 1 km to 15,000 km at latitudes to 88 deg and positions up to
    8,000 km off, XTE and along-track agree to 1e-5 m (the GeodSolve tests above check both
    against an independent foot)."""
    import passagelog.nav.greatcircle as gcm

    rng = np.random.default_rng(20261205)
    g = Geodesic.WGS84
    worst = 0.0
    for _ in range(60):
        lat1, lon1 = rng.uniform(-88, 88), rng.uniform(-180, 180)
        far = g.Direct(lat1, lon1, rng.uniform(0, 360),
                       float(rng.choice([1e3, 5e4, 1e6, 1.5e7])))
        leg = GreatCircleLeg(lat1, lon1, far["lat2"], far["lon2"])
        n = 400
        lat, lon = leg.points_at_np(rng.uniform(-0.1, 1.1, n) * leg.distance_m)
        off = np.abs(rng.uniform(-1, 1, n) ** 3 * float(rng.choice([2e3, 5e5, 8e6])))
        plon, plat, _ = WGS84.geod.fwd(lon, lat, rng.uniform(0, 360, n), off)
        x1, a1 = leg.offsets_np(plat, plon, False)
        monkeypatch.setattr(gcm, "SETTLE_GAIN", math.inf)
        x0, a0 = leg.offsets_np(plat, plon, False)
        monkeypatch.undo()
        assert np.array_equal(np.isfinite(x0), np.isfinite(x1))
        ok = np.isfinite(x0)
        worst = max(worst, float(np.max(np.abs(x1 - x0)[ok], initial=0.0)),
                    float(np.max(np.abs(a1 - a0)[ok], initial=0.0)))
    assert 0.0 < worst < 1e-5  # (0: the early stop never happened)
