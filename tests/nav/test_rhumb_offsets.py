"""Cross-track and along-track offsets of positions from rhumb-line legs.

DESIGN.md: XTE and along-track are measured to the foot of the shortest (geodesic)
connection from the position to the leg's line extended past its ends; XTE is positive to
the right of the direction of travel. The outside reference is geographiclib (Karney 2013,
"Algorithms for geodesics"): positions are built with its Direct from known feet, and feet
are found again by an independent search with its Inverse.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic
from hypothesis import given, settings
from hypothesis import strategies as st

from passagelog.errors import GeometryError, PositionError
from passagelog.nav import rhumb
from passagelog.nav.earth import SPHERE, SPHERE_NM, WGS84
from passagelog.nav.rhumb import RhumbLeg, meridian_arc, rhumb_direct

NM = 1852.0
TOL_M = 1e-3  # issue 2: XTE and along-track 1 mm
QUARTER_M = 10001965.729  # WGS84 quarter meridian (REFERENCE.md)

LEGS = {
    "ocean": (50.0, -4.0, 40.0, -70.0),
    "coastal": (50.1, -1.2, 50.12, -1.17),
    "meridian-north": (-30.0, 20.0, 30.0, 20.0),
    "meridian-south": (60.0, -150.0, 10.0, -150.0),
    "due-east": (45.0, -10.0, 45.0, 30.0),
    "due-west-south": (-35.0, 20.0, -35.0, -40.0),
    "nearly-east-west": (20.0, 0.0, 20.0 + 1e-7, 10.0),
    "antimeridian": (10.0, 170.0, 14.0, -172.0),
    "antimeridian-west": (-20.0, -175.0, -25.0, 160.0),
    "high-north": (84.0, -170.0, 85.0, 170.0),
    "high-south": (-85.0, 10.0, -80.0, -170.0),
    "equator": (0.0, -10.0, 0.0, 10.0),
    "short-100m": (52.0, 4.0, 52.0006, 4.001),
}


def _geod(earth):
    return Geodesic.WGS84 if earth is WGS84 else Geodesic(earth.a, earth.f)


def _constructed(leg: RhumbLeg, n: int, d_max: float, seed: int):
    """Positions at a known along-track s and a known signed distance d (+ right) from the
    line: geographiclib's Direct from R(s) at right angles to the course."""
    rng = np.random.default_rng(seed)
    s = rng.uniform(-0.3, 1.3, n) * leg.distance_m
    d = rng.uniform(-d_max, d_max, n)
    d[:3] = (0.0, d_max, -d_max)
    g = _geod(leg.earth)
    lat = np.empty(n)
    lon = np.empty(n)
    for i in range(n):
        rlat, rlon = leg.point_at(float(s[i]))
        r = g.Direct(rlat, rlon, leg.course + 90.0, float(d[i]))
        lat[i], lon[i] = r["lat2"], r["lon2"]
    return s, d, lat, lon


@pytest.mark.parametrize("name", sorted(LEGS))
def test_constructed_positions_give_back_their_foot(name):
    leg = RhumbLeg(*LEGS[name])
    d_max = 100 * NM if leg.distance_m > 10 * NM else 2 * NM
    s, d, lat, lon = _constructed(leg, 60, d_max, seed=sorted(LEGS).index(name))
    xte, along = leg.offsets_np(lat, lon)
    assert np.max(np.abs(xte - d)) < TOL_M
    assert np.max(np.abs(along - s)) < TOL_M
    for i in range(0, 60, 6):  # the scalar form is the same iteration
        x1, a1 = leg.offset(lat[i], lon[i])
        assert abs(x1 - xte[i]) < 1e-6 and abs(a1 - along[i]) < 1e-6


@pytest.mark.parametrize("earth", [SPHERE, SPHERE_NM], ids=lambda e: e.name)
def test_constructed_positions_on_spheres(earth):
    for name in ("ocean", "meridian-north", "due-east", "antimeridian"):
        leg = RhumbLeg(*LEGS[name], earth=earth)
        s, d, lat, lon = _constructed(leg, 30, 60 * NM, seed=11)
        xte, along = leg.offsets_np(lat, lon)
        assert np.max(np.abs(xte - d)) < TOL_M, name
        assert np.max(np.abs(along - s)) < TOL_M, name


def test_parallel_legs_have_meridians_as_perpendiculars():
    # The geodesics at right angles to a parallel are meridians, so the foot of a position
    # lies on its own meridian: XTE is the meridian arc between the latitudes (geographiclib
    # Inverse along the meridian) and along-track the arc of the parallel, N cos(lat) * dlon.
    g = Geodesic.WGS84
    for lat1, lon1, lon2 in ((45.0, -10.0, 30.0), (-60.0, 170.0, -170.0), (0.0, 0.0, 5.0)):
        leg = RhumbLeg(lat1, lon1, lat1, lon2)
        east = leg.course == 90.0
        sphi = math.sin(math.radians(lat1))
        r = WGS84.a * math.cos(math.radians(lat1)) / math.sqrt(1 - WGS84.e2 * sphi**2)
        for plat, dlon in ((lat1 + 0.5, 3.0), (lat1 - 1.2, -2.0), (lat1, 7.5), (lat1 + 0.01, 0.0)):
            plon = lon1 + (dlon if east else -dlon)
            xte, along = leg.offset(plat, plon)
            arc = g.Inverse(plat, plon, lat1, plon)["s12"]
            # north of an eastbound leg is to port (negative), of a westbound one to starboard
            expect = -arc if (plat > lat1) == east else arc
            assert xte == pytest.approx(expect, abs=TOL_M)
            assert along == pytest.approx(r * math.radians(dlon), abs=TOL_M)


def test_sign_convention_right_is_positive():
    # DESIGN.md: XTE positive to the right (starboard) of the direction of travel.
    north = RhumbLeg(0.0, 0.0, 10.0, 0.0)
    assert north.offset(5.0, 0.1)[0] > 0 and north.offset(5.0, -0.1)[0] < 0
    south = RhumbLeg(10.0, 0.0, 0.0, 0.0)
    assert south.offset(5.0, 0.1)[0] < 0 and south.offset(5.0, -0.1)[0] > 0
    east = RhumbLeg(0.0, 0.0, 0.0, 10.0)
    assert east.offset(-0.1, 5.0)[0] > 0 and east.offset(0.1, 5.0)[0] < 0
    # on the equator the perpendicular is the meridian: XTE is the meridian arc
    assert east.offset(-0.1, 5.0)[0] == pytest.approx(meridian_arc(0.1), abs=1e-6)


def test_along_track_before_and_after_the_leg():
    leg = RhumbLeg(*LEGS["ocean"])
    before = leg.point_at(-50 * NM)
    after = leg.point_at(leg.distance_m + 50 * NM)
    assert leg.offset(*before)[1] == pytest.approx(-50 * NM, abs=1e-6)
    assert leg.offset(*after)[1] == pytest.approx(leg.distance_m + 50 * NM, abs=1e-6)
    x, a = leg.offset(leg.lat1, leg.lon1)  # d = 0 (or nearly): no NaN
    assert abs(x) < 1e-6 and abs(a) < 1e-6
    assert RhumbLeg(0.0, 0.0, 0.0, 1.0).offset(0.0, 0.5)[0] == 0.0
    x, a = leg.offset(leg.lat2, leg.lon2)
    assert abs(x) < 1e-6 and a == pytest.approx(leg.distance_m, abs=1e-6)


# ---------------------------------------------------------------------------------------
# Independent search for the foot: a scan of the geographiclib distance along the line,
# then bisection on the right-angle condition (the geodesic from the foot to the position
# leaves the line at 90 degrees: cos(azimuth - course) = 0). The points of the line come
# from rhumb_direct, which is checked against RhumbSolve in test_rhumb.py.


def _search_foot(leg: RhumbLeg, lat: float, lon: float) -> tuple[float, float]:
    g = _geod(leg.earth)

    def at(s):
        rlat, rlon = rhumb_direct(leg.lat1, leg.lon1, leg.course, s, leg.earth)
        r = g.Inverse(rlat, rlon, lat, lon)
        return r["s12"], math.cos(math.radians(r["azi1"] - leg.course)), r["azi1"]

    lo_s, hi_s = -1.0 * leg.distance_m - 1e6, 2.0 * leg.distance_m + 1e6
    cos_c = math.cos(math.radians(leg.course))
    if abs(cos_c) > 1e-12:  # stay off the poles, where the extended line ends
        room = [(q * QUARTER_M - meridian_arc(leg.lat1)) / cos_c for q in (-0.9999, 0.9999)]
        lo_s, hi_s = max(lo_s, min(room)), min(hi_s, max(room))
    grid = np.linspace(lo_s, hi_s, 301)
    dist = [at(float(s))[0] for s in grid]
    k = int(np.argmin(dist))
    a, b = float(grid[max(k - 1, 0)]), float(grid[min(k + 1, 300)])
    assert at(a)[1] > 0 > at(b)[1]  # the position is ahead of a and behind b
    for _ in range(80):
        m = 0.5 * (a + b)
        if at(m)[1] > 0:
            a = m
        else:
            b = m
    s = 0.5 * (a + b)
    d, _, azi = at(s)
    side = math.sin(math.radians(azi - leg.course))
    return math.copysign(d, side), s


@pytest.mark.parametrize("name", ["ocean", "antimeridian", "high-north", "meridian-south",
                                  "nearly-east-west", "high-south"])
def test_foot_agrees_with_an_independent_search(name):
    leg = RhumbLeg(*LEGS[name])
    rng = np.random.default_rng(2026)
    for k in range(6):
        s = rng.uniform(-0.2, 1.2) * leg.distance_m
        lat, lon = leg.point_at(s)
        off = (40 + 60 * k) * NM if not name.startswith("high") else (10 + 20 * k) * NM
        lat = float(np.clip(lat + rng.normal(0, off / 111e3), -89, 89))
        lon = float(lon + rng.normal(0, off / 111e3) / max(math.cos(math.radians(lat)), 0.2))
        lon = (lon + 180.0) % 360.0 - 180.0
        xte_ref, along_ref = _search_foot(leg, lat, lon)
        xte, along = leg.offset(lat, lon)
        assert xte == pytest.approx(xte_ref, abs=TOL_M), (lat, lon)
        assert along == pytest.approx(along_ref, abs=TOL_M), (lat, lon)


# ---------------------------------------------------------------------------------------
# Properties

lat_s = st.floats(-70.0, 70.0)
lon_s = st.floats(-180.0, 180.0, exclude_max=True)


@settings(max_examples=80, deadline=None)
@given(lat_s, lon_s, lat_s, st.floats(-120.0, 120.0), st.floats(-0.3, 1.3),
       st.floats(-50 * NM, 50 * NM))
def test_reversing_a_leg_flips_xte_and_mirrors_along(lat1, lon1, lat2, dlon, frac, d):
    lon2 = (lon1 + dlon + 180.0) % 360.0 - 180.0
    try:
        fwd = RhumbLeg(lat1, lon1, lat2, lon2)
    except GeometryError:
        return  # coincident ends
    if fwd.distance_m < 100.0:
        return
    back = RhumbLeg(lat2, lon2, lat1, lon1)
    if abs(abs(back.course - fwd.course) - 180.0) > 1e-6:
        return  # ends 180 degrees of longitude apart: the reverse leg goes the other way
    try:
        rlat, rlon = fwd.point_at(frac * fwd.distance_m)
    except GeometryError:
        return  # the extension runs into a pole (e.g. 30% back from 70N on a meridian leg)
    r = Geodesic.WGS84.Direct(rlat, rlon, fwd.course + 90.0, d)
    x1, a1 = fwd.offset(r["lat2"], r["lon2"])
    x2, a2 = back.offset(r["lat2"], r["lon2"])
    assert x2 == pytest.approx(-x1, abs=TOL_M)
    assert a2 == pytest.approx(fwd.distance_m - a1, abs=TOL_M)


@settings(max_examples=80, deadline=None)
@given(st.floats(-85.0, 85.0), lon_s, st.floats(-85.0, 85.0), st.floats(-100.0, 100.0),
       st.floats(-0.3, 1.3))
def test_a_position_on_the_line_has_no_xte(lat1, lon1, lat2, dlon, frac):
    # (|d_lon| <= 100 keeps the position within 180 degrees of longitude of the leg's middle,
    # where the foot nearest the leg is the one sought)
    try:
        leg = RhumbLeg(lat1, lon1, lat2, lon1 + dlon)
        s = frac * leg.distance_m
        lat, lon = leg.point_at(s)
    except GeometryError:
        return  # coincident ends, or the extension runs into a pole
    if abs(lat) > 85.0:
        return
    xte, along = leg.offset(lat, lon)
    assert abs(xte) < TOL_M
    assert along == pytest.approx(s, abs=TOL_M)


# ---------------------------------------------------------------------------------------
# Batch form, economy, refusals


def test_batch_shapes_and_scalar_agreement():
    leg = RhumbLeg(*LEGS["ocean"])
    s, d, lat, lon = _constructed(leg, 24, 20 * NM, seed=3)
    xte, along = leg.offsets_np(lat.reshape(4, 6), lon.reshape(4, 6))
    assert xte.shape == along.shape == (4, 6)
    assert np.allclose(xte.ravel(), d, atol=TOL_M, rtol=0)
    x0, a0 = leg.offsets_np(lat[5], lon[5])
    assert np.ndim(x0) == 0 and abs(float(a0) - s[5]) < TOL_M
    lats, lons = leg.points_at_np(np.array([0.0, leg.distance_m]))
    assert lats[1] == pytest.approx(leg.lat2, abs=1e-9)
    assert lons[1] == pytest.approx(leg.lon2, abs=1e-9)
    assert leg.initial_course == leg.final_course == leg.course and leg.sailing == "rhumb"


def test_few_geodesic_inversions_per_position(monkeypatch):
    # The batch throughput rests on few vectorised inverses per position: within some 6 NM
    # of the line one suffices at mid latitudes (the chart estimate plus one Newton step is
    # then provably within 0.01 mm), a few more are needed near 85 degrees.
    count = [0]
    real = rhumb._geodesic.inverse_np

    def counting(*args, **kw):
        count[0] += np.size(args[0])
        return real(*args, **kw)

    monkeypatch.setattr(rhumb._geodesic, "inverse_np", counting)
    for name in ("ocean", "meridian-north", "antimeridian", "high-north"):
        leg = RhumbLeg(*LEGS[name])
        rng = np.random.default_rng(5)
        s = rng.uniform(-0.1, 1.1, 5000) * leg.distance_m
        lat, lon = leg.points_at_np(s)
        lat = lat + rng.normal(0, 0.1, 5000)  # some 6 NM
        lon = lon + rng.normal(0, 0.1, 5000)
        count[0] = 0
        leg.offsets_np(lat, lon)
        assert count[0] / 5000 <= (1.3 if name.startswith("high") else 1.05), name


@pytest.mark.parametrize("name", ["ocean", "high-north", "antimeridian", "due-east",
                                  "meridian-south", "high-south"])
def test_early_stopping_costs_less_than_a_tenth_of_a_millimetre(name, monkeypatch):
    # The iteration stops on a predicted remainder below 0.1 mm (OFFSET_TOL_M); iterating
    # on to 1e-9 m must change along-track and XTE by less than that.
    leg = RhumbLeg(*LEGS[name])
    rng = np.random.default_rng(9)
    s = rng.uniform(-0.2, 1.2, 3000) * leg.distance_m
    lat, lon = leg.points_at_np(s)
    spread = 0.3 if name.startswith("high") else 1.5  # degrees, up to some 300 NM
    lat = np.clip(lat + rng.normal(0, spread, 3000), -89.0, 89.0)
    lon = lon + rng.normal(0, spread, 3000)
    xte, along = leg.offsets_np(lat, lon)
    monkeypatch.setattr(rhumb, "OFFSET_TOL_M", 1e-9)
    xte_full, along_full = leg.offsets_np(lat, lon)
    assert np.max(np.abs(along - along_full)) < 1e-4
    assert np.max(np.abs(xte - xte_full)) < 1e-4


def test_refusals():
    with pytest.raises(GeometryError, match="coincide"):
        RhumbLeg(10.0, 20.0, 10.0, 20.0)
    with pytest.raises(GeometryError, match="pole"):
        RhumbLeg(80.0, 20.0, 90.0, 20.0)
    with pytest.raises(PositionError, match=r"lat=95\.0"):
        RhumbLeg(*LEGS["ocean"]).offset(95.0, 0.0)
    # at the pole the extended line spirals in: no foot is found, an error and never NaN
    leg = RhumbLeg(*LEGS["ocean"])
    with pytest.raises(GeometryError, match="not found"):
        leg.offsets_np(np.array([45.0, 90.0]), np.array([-20.0, 0.0]))
    with pytest.raises(GeometryError, match="not found"):
        leg.offset(90.0, 0.0)
