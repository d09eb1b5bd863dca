"""Geometry edge cases against the nav and review APIs: poles, the antimeridian, zero-length
and duplicate-waypoint legs, antipodal great circles, fixes exactly on waypoints, duplicate
timestamps and time going backwards. Defined behaviour, a clear message where there is no
answer, never NaN.

Outside references: GeographicLib's GeodSolve and RhumbSolve (Debian geographiclib-tools),
run here on the same problems; WGS84 a = 6378137 m (NIMA TR8350.2).
"""

from __future__ import annotations

import math
import shutil
import subprocess
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from passagelog.errors import GeometryError, PassagelogError
from passagelog.model import Fix, LegPlan, Route, Waypoint
from passagelog.nav.legs import make_leg, offset
from passagelog.review import reconcile

T0 = datetime(2026, 5, 1, tzinfo=timezone.utc)
A_M = 6378137.0                      # WGS84 semi-major axis (NIMA TR8350.2)
HALF_EQUATOR_M = math.pi * A_M       # rhumb along the equator through 180 degrees
SAILINGS = ("great-circle", "rhumb")


def _solve(tool: str, rows: list[tuple[float, float, float, float]]) -> list[list[float]]:
    exe = shutil.which(tool)
    if exe is None:
        pytest.skip(f"{tool} not installed (Debian geographiclib-tools)")
    text = "".join(" ".join(f"{v:.12f}" for v in r) + "\n" for r in rows)
    res = subprocess.run([exe, "-i", "-p", "10"], input=text, capture_output=True, text=True,
                         timeout=60)
    assert res.returncode == 0, res.stderr
    return [[float(x) for x in ln.split()] for ln in res.stdout.splitlines()]


def _course_close(a: float, b: float, tol: float = 1e-9) -> bool:
    d = (a - b + 180.0) % 360.0 - 180.0
    return abs(d) <= tol


# ---------------------------------------------------------------------------------------------
# poles, antimeridian, antipodes: against GeodSolve / RhumbSolve

GC_CASES = [
    (90.0, 0.0, -90.0, 0.0),        # pole to pole: twice the quarter meridian
    (90.0, 0.0, 50.0, 10.0),        # from the north pole
    (-89.5, 30.0, -89.5, -150.0),   # across the south pole
    (10.0, 179.5, 10.0, -179.5),    # across the antimeridian
    (0.0, 0.0, 0.0, 180.0),         # equatorial antipodes
    (30.0, 20.0, -30.0, -160.0),    # antipodes off the equator
    (0.0, 0.0, 0.5, 179.5),         # nearly antipodal
    (50.0, 10.0, -90.0, 0.0),       # to the south pole (course referred to lon2)
    (-30.0, 10.0, 90.0, 77.0),      # to the north pole
]


def test_great_circle_edges_match_geodsolve():
    ref = _solve("GeodSolve", GC_CASES)  # azi1 azi2 s12
    for case, (azi1, azi2, s12) in zip(GC_CASES, ref):
        lg = make_leg(*case, "great-circle")
        # GeodSolve -p 10 prints s12 to 0.1 nm; our solution is the same geodesic to 1 um
        assert math.isclose(lg.distance_m, s12, abs_tol=1e-6), (case, lg.distance_m, s12)
        assert math.isfinite(lg.initial_course) and 0.0 <= lg.initial_course < 360.0
        assert math.isfinite(lg.final_course) and 0.0 <= lg.final_course < 360.0
        if (case[2] != -case[0] or abs(abs(case[1] - case[3]) - 180.0) > 1e-9) and not (
                abs(case[0]) == 90.0 and case[2] == -case[0]):
            # exact antipodes have infinitely many shortest geodesics: any course is valid,
            # both tools pick one; elsewhere the courses must agree
            assert _course_close(lg.initial_course, azi1 % 360.0, 1e-8), (case, azi1)
            assert _course_close(lg.final_course, azi2 % 360.0, 1e-8), (case, azi2)
        # whatever geodesic was chosen, it reaches the far end
        lat, lon = lg.point_at(lg.distance_m)
        assert math.isclose(lat, case[2], abs_tol=1e-9)
        if abs(case[2]) < 90.0:
            assert _course_close(lon, case[3], 1e-9), (case, lon)


RHUMB_CASES = [
    (10.0, 179.5, 10.0, -179.5),    # across the antimeridian, due east
    (0.0, 0.0, 0.0, 180.0 - 1e-9),  # half the equator
    (60.0, -170.0, 62.0, 170.0),    # NW across the antimeridian
    (-85.0, 10.0, 85.0, 10.0),      # nearly pole to pole along a meridian
]


def test_rhumb_edges_match_rhumbsolve():
    ref = _solve("RhumbSolve", RHUMB_CASES)  # azi12 s12 S12
    for case, (azi, s12, _area) in zip(RHUMB_CASES, ref):
        lg = make_leg(*case, "rhumb")
        assert math.isclose(lg.distance_m, s12, rel_tol=1e-12, abs_tol=1e-6), (case, s12)
        assert _course_close(lg.initial_course, azi % 360.0, 1e-9), (case, azi)
    half = make_leg(0.0, 0.0, 0.0, 180.0 - 1e-9, "rhumb")
    assert math.isclose(half.distance_m, HALF_EQUATOR_M, abs_tol=0.01)  # pi * a


@pytest.mark.parametrize("end", [(90.0, 0.0), (-90.0, 45.0)])
def test_a_rhumb_line_to_a_pole_is_refused_with_a_message(end):
    with pytest.raises(GeometryError, match="pole"):
        make_leg(50.0, -1.0, *end, "rhumb")


@pytest.mark.parametrize("sailing", SAILINGS)
def test_zero_length_leg_has_no_course_and_says_so(sailing):
    with pytest.raises(GeometryError, match=r"50\.0, -1\.0"):
        make_leg(50.0, -1.0, 50.0, -1.0, sailing)
    with pytest.raises(GeometryError):
        offset(50.0, -1.0, 50.0, -1.0, 50.1, -1.0, sailing)


def test_zero_length_leg_on_the_command_line_is_one_line_exit_1():
    import sys
    from pathlib import Path

    sys.path.insert(0, str(Path(__file__).parent))
    import relkit

    for sailing in SAILINGS:
        code, out, err = relkit.run_cli(["calc", "leg", "50N 1W", "50N 1W", "--sailing",
                                         sailing])
        assert code == 1 and out == "" and len(err.strip().splitlines()) == 1, err


def test_the_pole_of_a_great_circle_leg_has_no_cross_track_foot():
    lg = make_leg(0.0, 0.0, 0.0, 10.0, "great-circle")
    for pole in ((90.0, 0.0), (-90.0, 123.0)):
        with pytest.raises(GeometryError, match="pole"):
            lg.offset(*pole)
    with pytest.raises(GeometryError, match="pole"):
        lg.offsets_np(np.array([10.0, 90.0]), np.array([5.0, 0.0]))


@pytest.mark.parametrize("sailing", SAILINGS)
def test_fix_exactly_on_a_waypoint(sailing):
    lg = make_leg(50.0, -1.0, 51.0, -3.0, sailing)
    xte, along = lg.offset(50.0, -1.0)
    assert abs(xte) < 1e-6 and abs(along) < 1e-6
    xte, along = lg.offset(51.0, -3.0)
    assert abs(xte) < 1e-6 and math.isclose(along, lg.distance_m, abs_tol=1e-6)
    o = offset(50.0, -1.0, 51.0, -3.0, 51.0, -3.0, sailing)
    assert abs(o.to_go_m) < 1e-6


# ---------------------------------------------------------------------------------------------
# properties: never NaN; a shift in longitude changes nothing (so the antimeridian is no edge)

lats = st.one_of(st.sampled_from([90.0, -90.0, 0.0, 89.999999, -89.999999]),
                 st.floats(-90.0, 90.0))
lons = st.one_of(st.sampled_from([-180.0, 0.0, 179.999999999, 180.0 - 1e-12]),
                 st.floats(-180.0, 180.0, exclude_max=True))
SETTINGS = settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])


@SETTINGS
@given(lats, lons, lats, lons, lats, lons, st.sampled_from(SAILINGS))
def test_legs_and_offsets_are_finite_or_a_geometry_error(la1, lo1, la2, lo2, la, lo, sailing):
    try:
        lg = make_leg(la1, lo1, la2, lo2, sailing)
    except GeometryError as exc:
        assert str(exc) and "\n" not in str(exc)
        return
    for v in (lg.distance_m, lg.initial_course, lg.final_course):
        assert math.isfinite(v), (v, lg)
    assert 0.0 <= lg.initial_course < 360.0 and 0.0 <= lg.final_course < 360.0
    try:
        xte, along = lg.offset(la, lo)
    except GeometryError as exc:
        assert "pole" in str(exc) or "undefined" in str(exc) or "not defined" in str(exc), exc
        return
    assert math.isfinite(xte) and math.isfinite(along), (xte, along)
    quarter = 10_001_965.73  # no point is farther than a quarter meridian from a line (+1 m)
    assert abs(xte) <= quarter + 1.0 or sailing == "rhumb", xte


def _wrap(lon: float) -> float:
    return (lon + 180.0) % 360.0 - 180.0


@SETTINGS
@given(st.floats(-80, 80), st.floats(-180, 180, exclude_max=True), st.floats(-80, 80),
       st.floats(-3, 3), st.floats(-1, 1), st.floats(-1, 1),
       st.floats(-180, 180), st.sampled_from(SAILINGS))
def test_a_shift_in_longitude_changes_nothing(la1, lo1, la2, dlon, dla, dlo, shift, sailing):
    la, lo = (la1 + la2) / 2 + dla, lo1 + dlon / 2 + dlo
    lo2 = lo1 + dlon
    assume(abs(la2 - la1) + abs(dlon) > 0.01)
    a = make_leg(la1, _wrap(lo1), la2, _wrap(lo2), sailing)
    b = make_leg(la1, _wrap(lo1 + shift), la2, _wrap(lo2 + shift), sailing)
    assert math.isclose(a.distance_m, b.distance_m, rel_tol=1e-12, abs_tol=1e-6)
    assert _course_close(a.initial_course, b.initial_course, 1e-8)
    xa, sa = a.offset(la, _wrap(lo))
    xb, sb = b.offset(la, _wrap(lo + shift))
    # the Earth is a body of revolution: a rigid turn about its axis moves nothing relative
    assert math.isclose(xa, xb, abs_tol=1e-5) and math.isclose(sa, sb, abs_tol=1e-5), \
        (xa, xb, sa, sb)


def test_along_track_is_taken_the_near_way_round_the_circle():
    # Regression (docs/reliability.md): near the antipode of a great-circle leg's middle the
    # along-track of a point on the extended line flipped to the far side (the equator
    # geodesic closes after 2 pi a, one turn in arc is 2 pi b: the foot was taken one turn
    # the long way round). Now the foot nearest the leg's middle along the line is taken.
    from geographiclib.geodesic import Geodesic

    lg = make_leg(0.0, 0.0, 0.0, 10.0, "great-circle")
    circumference = 2 * HALF_EQUATOR_M
    line = Geodesic.WGS84.InverseLine(0.0, 0.0, 0.0, 10.0)
    for lon in (-174.9, -174.5, -175.1, -175.5):
        _xte, along = lg.offset(0.0, lon)
        # measured from the leg's middle, a point on the line is within half the circle
        assert abs(along - lg.distance_m / 2) <= circumference / 2 + 1e-6, (lon, along)
        # geographiclib (GeodesicLine.Position): the line at that along-track is the point
        p = line.Position(along)
        assert abs(p["lat2"]) < 1e-9 and _course_close(p["lon2"], lon, 1e-9), (lon, p)
        xb, ab = lg.offsets_np([0.0], [lon])
        assert abs(ab[0] - along) < 1e-6 and abs(xb[0]) < 1e-6


# reference for the foot nearest the leg's middle, from geographiclib alone (InverseLine for
# the line extended, Inverse for the distance and azimuth from a point of it to the position)

def _perp_cos(line, s, lat, lon):
    """cos of the angle at the line's point ``s`` between the line and the geodesic to the
    position, and that geodesic's length and signed side (geographiclib Position/Inverse)."""
    from geographiclib.geodesic import Geodesic

    p = line.Position(s)
    inv = Geodesic.WGS84.Inverse(p["lat2"], p["lon2"], lat, lon)
    t = math.radians(inv["azi1"] - p["azi2"])
    return math.cos(t), inv["s12"], math.copysign(inv["s12"], math.sin(t))


def _feet_by_geographiclib(lat1, lon1, lat2, lon2, lat, lon, turns=0.75, scan=600):
    """Every foot of the position on the line extended ``turns`` of a turn either side of
    the leg's middle: local minima of the distance on a scan, then bisection on the right
    angle to 1e-6 m. Returns [(along_m, xte_m)]."""
    from geographiclib.geodesic import Geodesic

    line = Geodesic.WGS84.InverseLine(lat1, lon1, lat2, lon2)
    mid = 0.5 * line.s13
    span = turns * 2 * HALF_EQUATOR_M
    grid = np.linspace(mid - span, mid + span, scan)
    d = np.array([_perp_cos(line, s, lat, lon)[1] for s in grid])
    feet = []
    for k in range(1, scan - 1):
        if d[k] <= d[k - 1] and d[k] <= d[k + 1]:
            lo, hi = grid[k - 1], grid[k + 1]
            assert _perp_cos(line, lo, lat, lon)[0] > 0 > _perp_cos(line, hi, lat, lon)[0]
            while hi - lo > 1e-6:
                m = 0.5 * (lo + hi)
                if _perp_cos(line, m, lat, lon)[0] > 0:
                    lo = m
                else:
                    hi = m
            s = 0.5 * (lo + hi)
            feet.append((s, _perp_cos(line, s, lat, lon)[2]))
    return feet


#: legs whose middle's antipode is probed: equator, oblique, meridian, high latitude, long
WRAP_LEGS = [(0.0, 0.0, 0.0, 10.0), (30.0, -40.0, 45.0, -10.0), (10.0, 20.0, 60.0, 20.0),
             (70.0, -150.0, 72.0, 120.0), (-35.0, 18.0, -20.0, 115.0)]


@pytest.mark.parametrize("leg_row", WRAP_LEGS)
def test_far_foot_is_the_one_nearest_the_leg_middle_against_geographiclib(leg_row):
    """Positions about the antipode of the leg's middle (more than 90 degrees from every point
    of the leg): the foot taken is, of the line's candidate feet (one per turn), the one
    nearest the middle along the line, as found from geographiclib alone; batch and scalar
    agree."""
    from geographiclib.geodesic import Geodesic

    lg = make_leg(*leg_row, "great-circle")
    line = Geodesic.WGS84.InverseLine(*leg_row)
    mid = 0.5 * lg.distance_m
    rows = []
    for k, (dx, off) in enumerate(((-300e3, 0.0), (-40e3, 150e3), (-1e3, -2e3), (5e3, 500e3),
                                   (1e3, 40e3), (40e3, -150e3), (300e3, 1000e3))):
        # a point near half a turn from the middle, then off to a side (geographiclib Direct)
        base = line.Position(mid + HALF_EQUATOR_M + dx)
        q = Geodesic.WGS84.Direct(base["lat2"], base["lon2"], base["azi2"] + 90.0, off)
        rows.append((q["lat2"], _wrap(q["lon2"])))
    lats, lons = np.array(rows).T
    xb, ab = lg.offsets_np(lats, lons)
    for i, (lat, lon) in enumerate(rows):
        feet = _feet_by_geographiclib(*leg_row, lat, lon)
        assert len(feet) >= 2, (lat, lon, feet)  # a candidate either side of the cut
        s_ref, x_ref = min(feet, key=lambda f: abs(f[0] - mid))
        xs, als = lg.offset(lat, lon)
        for x, s in ((xs, als), (xb[i], ab[i])):
            assert s == pytest.approx(s_ref, abs=1e-3), (leg_row, lat, lon, feet, s)
            assert x == pytest.approx(x_ref, abs=1e-3), (leg_row, lat, lon, feet, x)


@pytest.mark.parametrize("leg_row", WRAP_LEGS)
def test_along_track_is_continuous_within_90_degrees_of_the_leg(leg_row):
    """Positions swept round a ring 85 degrees of arc about the leg's middle (each within 90
    degrees of the leg) in steps of about 60 km: along-track and XTE never jump (a jump at the
    cut would be a whole turn, some 40,000 km); only beyond 90 degrees is there a cut."""
    from geographiclib.geodesic import Geodesic

    lg = make_leg(*leg_row, "great-circle")
    m = Geodesic.WGS84.InverseLine(*leg_row).Position(0.5 * lg.distance_m)
    ring = [Geodesic.WGS84.ArcDirect(m["lat2"], m["lon2"], az, 85.0) for az in
            np.arange(0.0, 360.0, 0.5)]
    lats = np.array([r["lat2"] for r in ring])
    lons = np.array([_wrap(r["lon2"]) for r in ring])
    xte, along = lg.offsets_np(lats, lons)
    step = np.abs(np.diff(np.append(along, along[0])))
    # the foot moves at most 1/sin(5 deg) ~ 11.5 times as fast as the position here
    assert step.max() < 1_000_000, (leg_row, step.max())
    assert np.abs(np.diff(np.append(xte, xte[0]))).max() < 1_000_000


# ---------------------------------------------------------------------------------------------
# the review engine


ROUTE = Route("edges", (Waypoint("A", 50.0, -1.0), Waypoint("B", 50.0, 0.0),
                        Waypoint("C", 51.0, 0.0)),
              (LegPlan("rhumb", 10.0), LegPlan("great-circle", 10.0)))


def _all_finite_or_none(rows) -> None:
    for row in rows:
        for key, value in row.items():
            if isinstance(value, float):
                assert math.isfinite(value), (key, row)


def test_review_with_duplicate_times_and_time_going_backwards():
    fixes = [Fix(T0, 50.0, -1.0), Fix(T0, 50.0, -0.5),                   # the same time twice
             Fix(T0 - timedelta(minutes=5), 50.0, -0.6),                  # earlier than both
             Fix(T0 + timedelta(hours=1), 50.0, 0.0),                     # exactly on B
             Fix(T0 + timedelta(hours=2), 51.0, 0.0)]                     # exactly on C
    rv = reconcile(ROUTE, fixes, departure_utc=T0 - timedelta(hours=1))
    t = np.asarray(rv.fixes.time_s)
    assert len(t) == len(fixes) and np.all(np.diff(t) >= 0)  # in time order, none dropped
    assert np.all(np.isfinite(np.asarray(rv.fixes.xte_m)))
    assert np.allclose(rv.fixes.xte_m, 0.0, atol=1e-6)  # every fix is on the plan's line
    for table in ("legs", "fixes"):
        _all_finite_or_none(rv.rows(table))



def test_duplicate_and_backwards_times_through_import_and_review(tmp_path):
    # An NMEA log whose time repeats and goes back. Two sentences in a row with the same
    # time are one epoch (the first position kept, docs/formats.md); an epoch that comes
    # round again later is dropped and counted (repeated epoch); an earlier time after a
    # later one (00:03 after 00:06) is kept, stored with its implied speed from the fix
    # before it in the file over the time between them (|dt|), and the review reads the
    # fixes in time order with finite figures.
    import json
    import sys
    from pathlib import Path

    from geographiclib.geodesic import Geodesic

    sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "scripts"))
    sys.path.insert(0, str(Path(__file__).parent))
    import relkit
    import reliability_common as rc

    from passagelog.formats import read_fixes
    from passagelog.store import Logbook

    db = tmp_path / "book.sqlite"
    rc.make_logbook(db, ["V"])  # plan 50N 10W - 51N 8W - 53N 5W
    # time, minutes of latitude north of 50N and of longitude east of 10W
    epochs = [("000000", 0.0, 0.1), ("000600", 0.7, 1.0), ("000600", 0.9, 2.0),
              ("000300", 0.35, 0.5), ("000600", 0.8, 1.2), ("000900", 1.05, 1.5)]
    lines = [relkit.nmea(f"GPRMC,{t}.00,A,50{dn:06.3f},N,009{60 - de:06.3f},W,010.0,045.0,"
                         "010526,,,A") for t, dn, de in epochs]
    path = tmp_path / "log.nmea"
    path.write_text("\r\n".join(lines) + "\r\n", encoding="ascii")
    _fixes, summary = read_fixes(path)
    assert dict(summary.dropped) == {"repeated epoch": 1} and summary.lines_used == 5
    code, _out, err = relkit.run_cli(["--db", str(db), "import", str(path), "--voyage", "V"])
    assert code == 0 and "6 lines read, 4 fixes kept" in err, err
    with Logbook.open(db, create=False) as book:
        stored = [(f.time_utc.strftime("%H%M%S"), f.lat, f.implied_speed_kn)
                  for f in sorted(book.fixes("V"), key=lambda f: f.fix_id)]
        assert book.verify().ok
    assert [t for t, _, _ in stored] == ["000000", "000600", "000300", "000900"]
    assert stored[1][1] == pytest.approx(50.0 + 0.7 / 60.0, abs=1e-12)  # the first of two

    def kn(a, b, seconds):  # reference: geographiclib Inverse, WGS84
        lat = [50.0 + epochs[i][1] / 60.0 for i in (a, b)]
        lon = [-10.0 + epochs[i][2] / 60.0 for i in (a, b)]
        s12 = Geodesic.WGS84.Inverse(lat[0], lon[0], lat[1], lon[1])["s12"]
        return s12 / 1852.0 / (seconds / 3600.0)

    assert stored[0][2] is None
    assert stored[1][2] == pytest.approx(kn(0, 1, 360), rel=1e-9)
    assert stored[2][2] == pytest.approx(kn(1, 3, 180), rel=1e-9)  # back in time: |dt|
    assert stored[3][2] == pytest.approx(kn(3, 5, 360), rel=1e-9)
    review = rc.run(db, "review", "V", "--table", "fixes", "--format", "json")
    assert review.returncode == 0, review.stderr
    rows = json.loads(review.stdout)
    assert [r["time_utc"][11:19] for r in rows] == ["00:00:00", "00:03:00", "00:06:00",
                                                    "00:09:00"]
    assert [r["fix_id"] for r in rows] == [1, 3, 2, 4]
    assert all(math.isfinite(r["xte_m"]) and math.isfinite(r["along_m"]) for r in rows)

def test_review_of_a_plan_with_a_duplicate_waypoint_names_the_leg():
    dup = Route("dup", (Waypoint("A", 50.0, -1.0), Waypoint("A again", 50.0, -1.0),
                        Waypoint("B", 50.0, 0.0)), (LegPlan("rhumb", 10.0), LegPlan("rhumb", 10.0)))
    with pytest.raises(PassagelogError, match=r"(?s)dup.*leg 1.*A again"):
        reconcile(dup, [Fix(T0, 50.0, -0.5)], departure_utc=T0)


def test_review_across_the_antimeridian_is_finite():
    am = Route("am", (Waypoint("A", 10.0, 179.5), Waypoint("B", 10.0, -179.5)),
               (LegPlan("great-circle", 10.0),))
    fixes = [Fix(T0, 10.0, 179.5), Fix(T0 + timedelta(hours=1), 10.01, -179.99),
             Fix(T0 + timedelta(hours=2), 10.0, -179.5)]
    rv = reconcile(am, fixes, departure_utc=T0)
    xte = np.asarray(rv.fixes.xte_m)
    assert np.all(np.isfinite(xte))
    # the middle fix is north of an eastbound leg: to port, so negative; its size is the
    # offset of the same fix against the same leg moved off the antimeridian
    x_ref, _ = make_leg(10.0, -0.5, 10.0, 0.5, "great-circle").offset(10.01, 0.01)
    assert xte[1] < 0 and math.isclose(xte[1], x_ref, abs_tol=1e-4)


def test_review_sets_a_fix_at_the_pole_of_a_leg_aside_and_names_it():
    # the pole of the meridian leg 90E is (0, 0): every point of the line is 90 degrees
    # away, so the fix has no cross-track foot; the rest of the voyage is still reviewed
    meridian = Route("m", (Waypoint("A", -10.0, 90.0), Waypoint("B", 10.0, 90.0)),
                     (LegPlan("great-circle", 10.0),))
    fixes = [Fix(T0, -10.0, 90.01), Fix(T0 + timedelta(hours=1), 0.0, 0.0),
             Fix(T0 + timedelta(hours=2), -9.5, 90.0)]
    rv = reconcile(meridian, fixes, departure_utc=T0)
    (sus,) = rv.suspects
    assert (sus.fix, sus.reason, sus.lat, sus.lon) == (1, "no-foot", 0.0, 0.0)
    assert sus.time_s == (T0 + timedelta(hours=1)).timestamp()
    xte = np.asarray(rv.fixes.xte_m)
    assert math.isnan(xte[1]) and np.isfinite(xte[[0, 2]]).all()
    (leg,) = rv.rows("legs")
    assert leg["fixes"] == 2 and leg["max_abs_xte_m"] is not None
    # the set-aside fix does not pass the waypoint nor count in made good
    assert not rv.passages
    _all_finite_or_none(rv.rows("legs"))


def test_offsets_np_not_strict_gives_nan_only_where_there_is_no_foot():
    lg = make_leg(-10.0, 90.0, 10.0, 90.0, "great-circle")
    with pytest.raises(GeometryError, match="pole"):
        lg.offsets_np([0.0, 1.0], [0.0, 90.5])
    xte, along = lg.offsets_np([0.0, 1.0], [0.0, 90.5], strict=False)
    assert math.isnan(xte[0]) and math.isnan(along[0])
    x1, a1 = lg.offset(1.0, 90.5)  # the scalar path: same figures to well under a micrometre
    assert math.isclose(xte[1], x1, abs_tol=1e-6) and math.isclose(along[1], a1, abs_tol=1e-6)
