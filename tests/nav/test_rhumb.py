"""Rhumb lines on WGS84 and on spheres: inverse, direct, meridional parts, meridian arc.

Outside references: GeographicLib's C++ RhumbSolve 2.1 (Debian geographiclib-tools), its
man-page example and test values (REFERENCE.md), PROJ's Mercator projection (pyproj),
geographiclib's geodesics, Bowditch (NGA Pub. 9) sailings and Table of Meridional Parts.
"""

from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic
from hypothesis import given, settings
from hypothesis import strategies as st

from passagelog.errors import GeometryError, InputError, PositionError
from passagelog.nav.earth import SPHERE, SPHERE_NM, WGS84
from passagelog.nav.rhumb import (
    isometric_lat,
    lat_from_isometric,
    meridian_arc,
    meridional_parts,
    rhumb_direct,
    rhumb_direct_np,
    rhumb_inverse,
    rhumb_inverse_np,
)

sys.path.insert(0, str(Path(__file__).parent))
import rhumbsolve as rs  # noqa: E402

DIST_TOL_M = 1e-3  # issue 2: distance 1 mm
COURSE_TOL_DEG = 1e-7  # issue 2: courses 1e-7 degree
POS_TOL_DEG = 1e-9  # positions ~1e-9 degree
NM = 1852.0


def _dms(d, m, s):
    return d + m / 60.0 + s / 3600.0


def _course_diff(a, b):
    return np.abs((np.asarray(a) - np.asarray(b) + 180.0) % 360.0 - 180.0)


def _lon_diff(a, b):
    return np.abs((np.asarray(a) - np.asarray(b) + 180.0) % 360.0 - 180.0)


def _lon_miss(a, b, lat):
    """Longitude difference as arc of the parallel, degrees of a great circle: 1e-9 degree
    is 0.1 mm on the ground at any latitude (near a pole, a long rhumb line winds many
    times round and its longitude carries the rounding of every turn)."""
    return _lon_diff(a, b) * np.cos(np.radians(lat))


# ---------------------------------------------------------------------------------------
# Published values


def test_rhumbsolve_man_page_jfk_to_sin():
    # RhumbSolve(1) man page example (REFERENCE.md): JFK 40°38'23"N 073°46'44"W to
    # SIN 01°21'33"N 103°59'22"E: azi12 103.58283300341095, s12 18523563.042377431 m.
    lat1, lon1 = _dms(40, 38, 23), -_dms(73, 46, 44)
    lat2, lon2 = _dms(1, 21, 33), _dms(103, 59, 22)
    dist, course = rhumb_inverse(lat1, lon1, lat2, lon2)
    assert dist == pytest.approx(18523563.042377431, abs=DIST_TOL_M)
    assert course == pytest.approx(103.58283300341095, abs=COURSE_TOL_DEG)
    d2, c2 = rhumb_inverse_np(lat1, lon1, lat2, lon2)
    assert float(d2) == pytest.approx(18523563.042377431, abs=DIST_TOL_M)
    assert float(c2) == pytest.approx(103.58283300341095, abs=COURSE_TOL_DEG)
    # and back: the direct problem on that course and distance ends at SIN
    la, lo = rhumb_direct(lat1, lon1, 103.58283300341095, 18523563.042377431)
    assert la == pytest.approx(lat2, abs=POS_TOL_DEG)
    assert lo == pytest.approx(lon2, abs=POS_TOL_DEG)


def test_quarter_meridian_wgs84():
    # WGS84 quarter meridian 10,001,965.729 m (REFERENCE.md; GeographicLib's RhumbSolve tests).
    assert meridian_arc(90.0) == pytest.approx(10001965.729, abs=DIST_TOL_M)
    assert meridian_arc(-90.0) == pytest.approx(-10001965.729, abs=DIST_TOL_M)
    dist, course = rhumb_inverse(0.0, 0.0, 90.0, 0.0)
    assert dist == pytest.approx(10001965.729, abs=DIST_TOL_M) and course == 0.0
    dist, course = rhumb_inverse(90.0, 30.0, -90.0, 30.0)
    assert dist == pytest.approx(2 * 10001965.729, abs=DIST_TOL_M) and course == 180.0


def test_meridian_arc_against_geographiclib_meridian_geodesic():
    # A meridian is a geodesic: geographiclib's Inverse along lon 0 (Karney 2013, accurate to
    # about 15 nm) gives the arc from the equator.
    for lat in (-89.9, -60.0, -1e-6, 0.0, 1e-9, 10.0, 33.3, 45.0, 60.0, 80.0, 89.9):
        s = Geodesic.WGS84.Inverse(0.0, 0.0, lat, 0.0)["s12"]
        assert abs(meridian_arc(lat)) == pytest.approx(s, abs=1e-6), lat
    lats = np.linspace(-90, 90, 181)
    arr = meridian_arc(lats)
    assert np.allclose(arr, [meridian_arc(float(x)) for x in lats], rtol=0, atol=1e-8)


def test_sphere_parallel_sailing_textbook():
    # Bowditch (NGA Pub. 9), parallel sailing: departure = DLo * cos(lat). Along 60°N, 10° of
    # longitude = 600' DLo -> 600 * cos 60° = 300 NM on the sphere where 1' = 1 NM.
    dist, course = rhumb_inverse(60.0, 0.0, 60.0, 10.0, SPHERE_NM)
    assert dist / NM == pytest.approx(300.0, abs=1e-9)
    assert course == 90.0
    dist, course = rhumb_inverse(60.0, 5.0, 60.0, -5.0, "sphere-nm")
    assert dist / NM == pytest.approx(300.0, abs=1e-9) and course == 270.0
    lat, lon = rhumb_direct(60.0, 0.0, 90.0, 300.0 * NM, SPHERE_NM)
    assert lat == 60.0 and lon == pytest.approx(10.0, abs=1e-12)


def test_sphere_mercator_sailing_textbook():
    # Bowditch, Mercator sailing on the sphere: tan C = DLo' / m with meridional parts
    # m = 7915.7045 log10 tan(45° + L/2); distance = DLat' sec C (1' = 1 NM).
    lat1, lon1, lat2, lon2 = 10.0, -20.0, 40.0, 15.0
    m = 7915.7045 * (math.log10(math.tan(math.radians(45 + lat2 / 2)))
                     - math.log10(math.tan(math.radians(45 + lat1 / 2))))
    course = math.degrees(math.atan2((lon2 - lon1) * 60.0, m))
    dist_nm = (lat2 - lat1) * 60.0 / math.cos(math.radians(course))
    d, c = rhumb_inverse(lat1, lon1, lat2, lon2, SPHERE_NM)
    assert c == pytest.approx(course, abs=1e-5)  # 7915.7045 carries 8 digits
    assert d / NM == pytest.approx(dist_nm, rel=1e-7)
    mp = meridional_parts(lat2, SPHERE_NM) - meridional_parts(lat1, SPHERE_NM)
    assert mp == pytest.approx(m, rel=1e-7)


def test_meridional_parts_table():
    # NGA Pub. 9 (Bowditch), Table of Meridional Parts for the WGS 84 ellipsoid, values to
    # 0'.1 (from memory): 30°00' 1876.9, 45°00' 3013.6, 60°00' 4507.4, 75°00' 6948.1.
    for lat, table in ((30.0, 1876.9), (45.0, 3013.6), (60.0, 4507.4), (75.0, 6948.1)):
        assert meridional_parts(lat) == pytest.approx(table, abs=0.051 + 0.01), lat
    assert meridional_parts(-60.0) == pytest.approx(-4507.4, abs=0.06)
    # Bowditch's formula for the table (from memory): M = 7915.7045 log10 tan(45° + L/2)
    # - 3437.7468 (e^2 sin L + e^4/3 sin^3 L + e^6/5 sin^5 L + ...), e^2 of WGS 84.
    e2 = WGS84.e2
    for lat in (5.0, 30.0, 55.0, 70.0, 80.0, 85.0):
        s = math.sin(math.radians(lat))
        series = sum(e2 ** k * s ** (2 * k - 1) / (2 * k - 1) for k in range(1, 8))
        m = 7915.7045 * math.log10(math.tan(math.radians(45 + lat / 2))) - 3437.7468 * series
        assert meridional_parts(lat) == pytest.approx(m, abs=0.002), lat


def test_isometric_latitude_against_proj_mercator():
    # PROJ's ellipsoidal Mercator (pyproj, +proj=merc on WGS84): northing y = a * psi.
    from pyproj import Proj

    merc = Proj("+proj=merc +ellps=WGS84 +lon_0=0")
    lats = np.array([-89.9, -85.0, -45.0, -1e-7, 0.0, 1e-9, 12.5, 45.0, 60.0, 80.0, 89.9])
    _, y = merc(np.zeros_like(lats), lats)
    assert np.allclose(isometric_lat(lats), np.asarray(y) / WGS84.a, rtol=1e-13, atol=1e-15)
    assert isometric_lat(90.0) == math.inf and isometric_lat(-90.0) == -math.inf
    assert isometric_lat(45.0) == pytest.approx(float(y[7]) / WGS84.a, rel=1e-14)


def test_lat_from_isometric_round_trip():
    lats = np.linspace(-89.99, 89.99, 2001)
    back = lat_from_isometric(isometric_lat(lats))
    assert np.max(np.abs(back - lats)) < 1e-12
    for earth in (SPHERE, SPHERE_NM):
        assert np.max(np.abs(lat_from_isometric(isometric_lat(lats, earth), earth) - lats)) < 1e-12
    assert lat_from_isometric(math.inf) == 90.0
    assert lat_from_isometric(isometric_lat(33.25)) == pytest.approx(33.25, abs=1e-13)


@pytest.mark.geodsolve
@rs.needs_rhumbsolve
def test_isometric_latitude_against_rhumbsolve():
    # RhumbSolve's course from the equator: tan(azi12) = d_lambda / psi2, so psi2 =
    # d_lambda / tan(azi12). d_lambda = 1 degree keeps the course well away from 0 and 90.
    lats = np.array([0.5, 5.0, 30.0, 45.0, 60.0, 75.0, 85.0, 89.9])
    out = rs.inverse(np.column_stack([0 * lats, 0 * lats, lats, 0 * lats + 1.0]))
    psi = math.radians(1.0) / np.tan(np.radians(out[:, 0]))
    assert np.allclose(isometric_lat(lats), psi, rtol=1e-11, atol=0)


# ---------------------------------------------------------------------------------------
# RhumbSolve on seeded random legs and edge cases


def _random_legs(seed: int, n: int) -> np.ndarray:
    rng = np.random.default_rng(seed)
    lat1 = rng.uniform(-85.0, 85.0, n)
    lon1 = rng.uniform(-180.0, 180.0, n)
    # a mix of ocean passages and short coastal legs
    spread = np.where(rng.random(n) < 0.5, 60.0, 1.0)
    lat2 = np.clip(lat1 + rng.uniform(-1, 1, n) * spread * 1.5, -85.0, 85.0)
    lon2 = (lon1 + rng.uniform(-1, 1, n) * spread * 3.0 + 180.0) % 360.0 - 180.0
    return np.column_stack([lat1, lon1, lat2, lon2])


def _edge_legs() -> np.ndarray:
    e = 1e-5  # about 1.1 m of latitude
    rows = [
        # antimeridian crossings, both ways, and exactly 180 degrees apart (RhumbSolve goes
        # the way of lon2 - lon1 as given)
        (10, 170, 10, -170), (10, -170, 10, 170), (-35, 179.5, -30, -179.5),
        (50, -179.999, 51, 179.999), (0, 0, 0, 180), (0, -90, 0, 90), (20, 10, -20, -170),
        # the equator
        (0, 0, 0, 90), (0, -10, 0, 10), (0, 0, 1e-9, 50), (-1e-9, 0, 1e-9, 120),
        # meridians
        (-60, 30, 60, 30), (10, -45, -20, -45), (0, 0, 85, 0), (-85, 100, 85, 100),
        (89.9, 0, -89.9, 0),
        # due east-west and nearly east-west
        (45, 0, 45, 90), (60, 10, 60, -10), (-75, 0, -75, 179), (85, -179, 85, 179),
        (89.9, 0, 89.9, 150), (45, 0, 45 + 1e-9, 90), (45, 0, 45 - 1e-12, 90),
        (30, 0, 30 + 1e-7, 0.5), (-70, 5, -70 - 1e-8, -5), (89.9, -50, 89.9 - 1e-9, 50),
        # high latitudes
        (85, 0, 89.9, 90), (-89.9, 0, -85, -170), (89.9, 10, 89.8, 11), (80, 0, 89.9, 10),
        # 100 m legs (north, east, diagonal) at several latitudes
        (0, 0, 100 / 111319.49, 0), (0, 0, 0, 100 / 111319.49), (52, 4, 52.0006, 4.001),
        (52, 4, 52 + e * 0.6, 4 + e),
        (85, 0, 85, 0.01), (85, 0, 85 + 0.0009, 0), (-60, 179.9995, -60.0005, -179.9995),
        # zero length
        (12.5, 33.25, 12.5, 33.25),
    ]
    return np.array(rows, dtype=np.float64)


@pytest.mark.geodsolve
@rs.needs_rhumbsolve
@pytest.mark.parametrize("earth", [WGS84, SPHERE, SPHERE_NM], ids=lambda e: e.name)
def test_inverse_against_rhumbsolve(earth):
    legs = rs.as_sent(np.vstack([_random_legs(20260201, 400), _edge_legs()]))
    args = {} if earth is WGS84 else {"a": earth.a, "f": earth.f}
    ref = rs.inverse(legs, **args)
    dist, course = rhumb_inverse_np(legs[:, 0], legs[:, 1], legs[:, 2], legs[:, 3], earth)
    assert np.max(np.abs(dist - ref[:, 1])) < DIST_TOL_M
    moving = ref[:, 1] > 0
    assert np.max(_course_diff(course, ref[:, 0])[moving]) < COURSE_TOL_DEG
    assert np.all(course[~moving] == 0.0)  # zero length: course 0.0 by definition
    # the scalar form is the same implementation on Python floats
    for row, d, c in zip(legs, dist, course):
        ds, cs = rhumb_inverse(*row, earth=earth)
        assert abs(ds - d) < 1e-8 and _course_diff(cs, c) < 1e-11


@pytest.mark.geodsolve
@rs.needs_rhumbsolve
@pytest.mark.parametrize("earth", [WGS84, SPHERE], ids=lambda e: e.name)
def test_direct_against_rhumbsolve(earth):
    rng = np.random.default_rng(20260202)
    n = 400
    lat1 = rng.uniform(-85.0, 85.0, n)
    lon1 = rng.uniform(-180.0, 180.0, n)
    course = rng.uniform(0.0, 360.0, n)
    dist = np.where(rng.random(n) < 0.5, rng.uniform(0, 2e7, n), rng.uniform(0, 2e5, n))
    edge = np.array([
        (45, 0, 89.99999, 1e6), (45, 0, 90.00001, 1e6), (60, 170, 90, 1e6),
        (60, 170, 270, 3e6), (-20, -179.9, 269.99999, 5e4), (0, 0, 90, 4e7),
        (89.9, 0, 90, 1e6), (89.9, 0, 89.99999, 1e5), (-89.9, 10, 180, 0.0),
        (0, 0, 0, 100), (0, 0, 45, 100), (85, 0, 90, 100), (85, 0, 180, 9.9e5),
        (30, -179, 0.0, 1e-3), (10, 20, 359.99999, 2e6), (-85, 0, 89.99999, 1e7),
    ], dtype=np.float64)
    rows = rs.as_sent(np.vstack([np.column_stack([lat1, lon1, course, dist]), edge]))
    args = {} if earth is WGS84 else {"a": earth.a, "f": earth.f}
    ref = rs.direct(rows, **args)
    ok = np.isfinite(ref[:, 1])  # RhumbSolve gives NaN longitudes for lines over a pole
    assert ok.sum() > 250
    lat2, lon2 = rhumb_direct_np(*rows[ok].T, earth)
    assert np.max(np.abs(lat2 - ref[ok, 0])) < POS_TOL_DEG
    assert np.max(_lon_miss(lon2, ref[ok, 1], lat2)) < POS_TOL_DEG
    assert np.all((lon2 >= -180.0) & (lon2 < 180.0))
    for row, la, lo in zip(rows[ok], lat2, lon2):
        las, los = rhumb_direct(*row, earth=earth)
        assert abs(las - la) < 1e-12 and _lon_diff(los, lo) < 1e-11
    # every line RhumbSolve cannot finish (it passes a pole) is refused here
    for row in rows[~ok]:
        with pytest.raises(GeometryError, match="pole"):
            rhumb_direct(*row, earth=earth)
    with pytest.raises(GeometryError, match="element"):
        rhumb_direct_np(*rows.T, earth)


@pytest.mark.geodsolve
@rs.needs_rhumbsolve
def test_nearly_east_west_courses_against_rhumbsolve():
    # Courses within 1e-5 .. 1e-9 degree of due east or west, where the textbook formula
    # distance = DLat sec C is 0/0; and the inverse of legs that differ in latitude by 1e-12.
    rows = []
    for lat in (0.0, 30.0, -60.0, 85.0, 89.9):
        for c in (89.99999, 90.0, 90.00001, 269.999999999, 89.9999, 90.0000001):
            for s in (100.0, 1e5, 3e6):
                rows.append((lat, 10.0, c, s))
    rows = rs.as_sent(rows)
    ref = rs.direct(rows)
    lat2, lon2 = rhumb_direct_np(*rows.T)
    assert np.max(np.abs(lat2 - ref[:, 0])) < POS_TOL_DEG
    assert np.max(_lon_miss(lon2, ref[:, 1], lat2)) < POS_TOL_DEG
    legs = rs.as_sent(np.column_stack([rows[:, 0], rows[:, 1], ref[:, 0], ref[:, 1]]))
    inv = rs.inverse(legs)
    d, c = rhumb_inverse_np(*legs.T)
    assert np.max(np.abs(d - inv[:, 1])) < DIST_TOL_M
    assert np.max(_course_diff(c, inv[:, 0])) < COURSE_TOL_DEG


# ---------------------------------------------------------------------------------------
# Definitions and refusals


def test_zero_length_has_course_zero():
    assert rhumb_inverse(12.5, 33.25, 12.5, 33.25) == (0.0, 0.0)
    assert rhumb_inverse(0.0, -180.0, 0.0, 180.0) == (0.0, 0.0)  # the same meridian
    assert rhumb_direct(12.5, 33.25, 77.0, 0.0) == (12.5, 33.25)


def test_due_courses_are_exact():
    assert rhumb_inverse(10.0, 20.0, 30.0, 20.0)[1] == 0.0
    assert rhumb_inverse(30.0, 20.0, 10.0, 20.0)[1] == 180.0
    assert rhumb_inverse(40.0, 20.0, 40.0, 21.0)[1] == 90.0
    assert rhumb_inverse(40.0, 20.0, 40.0, 19.0)[1] == 270.0
    lat, lon = rhumb_direct(40.0, 20.0, 90.0, 5e6)
    assert lat == 40.0
    lat, lon = rhumb_direct(40.0, 20.0, 180.0, 5e6)
    assert lon == 20.0
    # the longitude difference is taken the shorter way
    assert rhumb_inverse(0.0, 179.0, 0.0, -179.0)[1] == 90.0
    assert rhumb_inverse(0.0, -179.0, 0.0, 179.0)[1] == 270.0
    assert rhumb_inverse(0.0, -90.0, 0.0, 90.0)[1] == 90.0  # 180 apart: as RhumbSolve
    assert rhumb_inverse(0.0, 10.0, 0.0, -170.0)[1] == 270.0


def test_pole_end_points():
    # a line into a pole runs due north/south; its length is the meridian arc
    d, c = rhumb_inverse(45.0, 10.0, 90.0, -100.0)
    assert c == 0.0 and d == pytest.approx(10001965.729 - meridian_arc(45.0), abs=1e-3)
    d, c = rhumb_inverse(-90.0, 0.0, -30.0, 50.0)
    assert c == 0.0 and d == pytest.approx(10001965.729 - meridian_arc(30.0), abs=1e-3)
    assert rhumb_inverse(90.0, 0.0, 90.0, 45.0) == (0.0, 0.0)
    # along a meridian exactly into the pole is allowed; longitude kept
    lat, lon = rhumb_direct(45.0, 10.0, 0.0, 10001965.729312722 - meridian_arc(45.0))
    assert lat == 90.0 and lon == 10.0
    lat, lon = rhumb_direct(90.0, 10.0, 180.0, 1e6)
    same = rhumb_direct(0.0, 10.0, 0.0, 10001965.729312722 - 1e6)[0]
    assert lon == 10.0 and lat == pytest.approx(same, abs=1e-12)


def test_direct_over_a_pole_is_refused():
    with pytest.raises(GeometryError, match=r"north pole.*less than 1134054\.\d+ m"):
        rhumb_direct(80.0, 0.0, 10.0, 5e6)
    with pytest.raises(GeometryError, match="south pole"):
        rhumb_direct(-80.0, 0.0, 170.0, 5e6)
    with pytest.raises(GeometryError, match="south pole"):
        rhumb_direct(-80.0, 0.0, 10.0, -5e6)  # negative distance: reciprocal course
    with pytest.raises(GeometryError, match="pole"):
        rhumb_direct(0.0, 0.0, 0.0, 1.0000001e7 + 2000.0)  # past the pole on the meridian
    with pytest.raises(GeometryError, match="starts at a pole"):
        rhumb_direct(90.0, 0.0, 135.0, 1000.0)
    with pytest.raises(GeometryError, match=r"element 1"):
        rhumb_direct_np([0.0, 80.0], [0.0, 0.0], [10.0, 10.0], [1e6, 5e6])


def test_bad_inputs_are_refused_with_the_field_named():
    with pytest.raises(PositionError, match=r"lat2=91\.0 .*\[-90, 90\]"):
        rhumb_inverse(0.0, 0.0, 91.0, 0.0)
    with pytest.raises(PositionError, match="lat1=nan"):
        rhumb_direct(math.nan, 0.0, 10.0, 1.0)
    with pytest.raises(InputError, match="lon1=inf"):
        rhumb_inverse(0.0, math.inf, 1.0, 0.0)
    with pytest.raises(InputError, match="distance_m=nan"):
        rhumb_direct(0.0, 0.0, 10.0, math.nan)
    with pytest.raises(PositionError, match=r"lat1=-95\.0 \(element 2\)"):
        rhumb_inverse_np([0, 0, -95.0], 0, 1, 1)
    with pytest.raises(InputError, match="not a number"):
        rhumb_inverse("north", 0.0, 1.0, 0.0)


def test_batch_broadcasts():
    dist, course = rhumb_inverse_np(50.0, -4.0, np.array([[40.0, 41.0, 42.0]]), -30.0)
    assert dist.shape == course.shape == (1, 3)
    lat, lon = rhumb_direct_np(50.0, -4.0, course, dist)
    assert np.allclose(lat, [[40.0, 41.0, 42.0]], atol=1e-11, rtol=0)
    assert np.allclose(lon, -30.0, atol=1e-11, rtol=0)


# ---------------------------------------------------------------------------------------
# Properties

lat_s = st.floats(-89.9, 89.9, allow_nan=False)
lon_s = st.floats(-180.0, 180.0, allow_nan=False, exclude_max=True)


@settings(max_examples=300, deadline=None)
@given(lat_s, lon_s, lat_s, lon_s)
def test_direct_of_inverse_returns_the_end_point(lat1, lon1, lat2, lon2):
    dist, course = rhumb_inverse(lat1, lon1, lat2, lon2)
    lat, lon = rhumb_direct(lat1, lon1, course, dist)
    # compare as a distance on the ground (longitude is ill-conditioned near the poles)
    miss = Geodesic.WGS84.Inverse(lat, lon, lat2, lon2)["s12"]
    assert miss < 1e-6 * max(1.0, dist / 1e6)


@settings(max_examples=300, deadline=None)
@given(lat_s, lon_s, lat_s, lon_s)
def test_a_rhumb_line_is_never_shorter_than_the_geodesic(lat1, lon1, lat2, lon2):
    # geographiclib (Karney 2013): the geodesic is the shortest path on the ellipsoid.
    dist, _ = rhumb_inverse(lat1, lon1, lat2, lon2)
    geo = Geodesic.WGS84.Inverse(lat1, lon1, lat2, lon2)["s12"]
    assert dist >= geo - 1e-8
    # on a meridian or the equator (away from antipodes) they are the same line
    if lon1 == lon2 or (lat1 == lat2 == 0.0 and abs(lon2 - lon1) < 170):
        assert dist == pytest.approx(geo, abs=1e-6)


@settings(max_examples=300, deadline=None)
@given(st.floats(-80.0, 80.0), lon_s, st.floats(0.0, 360.0, exclude_max=True),
       st.floats(0.0, 1.5e6))
def test_inverse_of_direct_returns_course_and_distance(lat1, lon1, course, dist):
    try:
        lat2, lon2 = rhumb_direct(lat1, lon1, course, dist)
    except GeometryError:
        # only lines that reach a pole are refused: the northing exceeds the meridian arc
        # left to the pole (quarter meridian 10,001,965.729 m, REFERENCE.md)
        north = dist * math.cos(math.radians(course))
        room = 10001965.729 - math.copysign(1.0, north) * meridian_arc(lat1)
        assert abs(north) >= room - 1e-3
        return
    if abs(lat2) > 85.0 or dist < 1.0:
        return  # spirals near a pole may wind past 180 degrees of longitude
    d, c = rhumb_inverse(lat1, lon1, lat2, lon2)
    assert d == pytest.approx(dist, abs=1e-6)
    assert _course_diff(c, course) < 1e-7
