"""The unified leg API: make_leg / leg / offset over both sailings and every Earth model."""

from __future__ import annotations

import math
import shutil
import subprocess

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from passagelog.errors import InputError
from passagelog.nav import legs
from passagelog.nav.earth import SPHERE, SPHERE_NM
from passagelog.nav.greatcircle import GreatCircleLeg


def dms(d, m=0.0, s=0.0):
    return d + m / 60.0 + s / 3600.0


JFK = (dms(40, 38, 23), -dms(73, 46, 44))
SIN = (dms(1, 21, 33), dms(103, 59, 22))


def rhumb_available() -> bool:
    try:
        from passagelog.nav.rhumb import RhumbLeg  # noqa: F401
    except ImportError:
        return False
    return True


needs_rhumb = pytest.mark.skipif(not rhumb_available(), reason="rhumb legs not built yet")


def test_sailings_match_the_model():
    from passagelog.model import SAILINGS

    assert legs.SAILINGS == SAILINGS


def test_great_circle_leg_solution_geodsolve_man_page():
    # GeodSolve(1) man page example (REFERENCE.md): azi1 3.30831240011556,
    # azi2 177.48590214367724, s12 15347627.659635615 m
    sol = legs.leg(*JFK, *SIN)
    assert sol == legs.LegSolution(sol.distance_m, sol.initial_course, sol.final_course,
                                   "great-circle")
    assert sol.distance_m == pytest.approx(15347627.659635615, abs=1e-3)
    assert sol.distance_nm == pytest.approx(15347627.659635615 / 1852, abs=1e-6)
    assert sol.initial_course == pytest.approx(3.30831240011556, abs=1e-7)
    assert sol.final_course == pytest.approx(177.48590214367724, abs=1e-7)
    with pytest.raises(AttributeError):
        sol.distance_m = 0  # frozen


@needs_rhumb
def test_rhumb_leg_solution_rhumbsolve_man_page():
    # RhumbSolve(1) man page example (REFERENCE.md): course 103.58283300341095,
    # 18523563.042377431 m
    sol = legs.leg(*JFK, *SIN, sailing="rhumb")
    assert sol.sailing == "rhumb"
    assert sol.distance_m == pytest.approx(18523563.042377431, abs=1e-3)
    assert sol.initial_course == pytest.approx(103.58283300341095, abs=1e-7)
    assert sol.final_course == pytest.approx(103.58283300341095, abs=1e-7)


def test_sphere_models_by_name():
    # On the 1' = 1 NM sphere a degree of the equator is exactly 60 NM (definition of the
    # nautical mile as a minute of arc, the textbook sailings' sphere)
    sol = legs.leg(0.0, 0.0, 0.0, 1.0, earth="sphere-nm")
    assert sol.distance_nm == pytest.approx(60.0, abs=1e-9)
    assert sol.initial_course == pytest.approx(90.0, abs=1e-12)
    # mean-radius sphere R1 = 6371008.8 m (Moritz, GRS80): a quarter meridian is pi R / 2
    sol = legs.leg(0.0, 10.0, 90.0, 10.0, earth=SPHERE)
    assert sol.distance_m == pytest.approx(math.pi * 6371008.8 / 2, abs=1e-6)
    with pytest.raises(InputError, match="earth model 'mars'"):
        legs.leg(0, 0, 1, 1, earth="mars")


def test_unknown_sailing_is_refused():
    with pytest.raises(InputError, match="sailing 'mercator' is not known"):
        legs.make_leg(0, 0, 1, 1, "mercator")


def test_offset_convenience_and_to_go():
    # Aviation Formulary (Williams) LAX -> JFK, point D (34 30N 116 30W) on the 1' = 1 NM
    # sphere: D is right of track; to go = distance - along by definition (DESIGN.md)
    A = (dms(33, 57), -dms(118, 24))
    B = (dms(40, 38), -dms(73, 47))
    off = legs.offset(*A, *B, 34.5, -116.5, earth=SPHERE_NM)
    lg = legs.make_leg(*A, *B, earth=SPHERE_NM)
    assert off.xte_m > 0
    assert off.to_go_m == pytest.approx(lg.distance_m - off.along_m, abs=1e-9)
    assert off.xte_nm == off.xte_m / 1852 and off.to_go_nm == off.to_go_m / 1852
    xte, along, to_go = legs.offsets_np(lg, [34.5], [-116.5])
    assert xte[0] == pytest.approx(off.xte_m, abs=1e-6)
    assert to_go[0] == pytest.approx(off.to_go_m, abs=1e-6)


@pytest.mark.parametrize("sailing", legs.SAILINGS)
def test_common_protocol(sailing):
    if sailing == "rhumb" and not rhumb_available():
        pytest.skip("rhumb legs not built yet")
    lg = legs.make_leg(50.0, -4.0, 40.0, -30.0, sailing)
    assert isinstance(lg, legs.Leg)
    assert lg.sailing == sailing
    lat, lon = lg.point_at(0.5 * lg.distance_m)
    lats, lons = lg.points_at_np(np.array([0.0, 0.5 * lg.distance_m, lg.distance_m]))
    assert lats[1] == pytest.approx(lat, abs=1e-9) and lons[1] == pytest.approx(lon, abs=1e-9)
    assert lats[2] == pytest.approx(40.0, abs=1e-9) and lons[2] == pytest.approx(-30.0, abs=1e-9)
    xte, along = lg.offset(lat, lon)
    assert abs(xte) < 1e-3 and along == pytest.approx(0.5 * lg.distance_m, abs=1e-3)
    xs, als = lg.offsets_np(np.array([lat, 55.0, 35.0]), np.array([lon, -20.0, -20.0]))
    assert xs.shape == (3,) and abs(xs[0]) < 1e-3
    # heading south-west: 55N 20W lies to starboard (north-west), 35N 20W to port
    assert xs[1] > 0 and xs[2] < 0


@needs_rhumb
@settings(max_examples=200, deadline=None)
@given(st.floats(-80, 80), st.floats(-180, 179.9), st.floats(-80, 80), st.floats(-180, 179.9))
def test_property_rhumb_never_shorter_than_geodesic(lat1, lon1, lat2, lon2):
    g = Geodesic.WGS84.Inverse(lat1, lon1, lat2, lon2)
    assume(g["s12"] > 1.0)
    rh = legs.leg(lat1, lon1, lat2, lon2, "rhumb")
    gc = legs.leg(lat1, lon1, lat2, lon2, "great-circle")
    # the geodesic is the shortest path on the surface (GeodSolve-checked elsewhere)
    assert rh.distance_m >= gc.distance_m - 1e-6


@needs_rhumb
@pytest.mark.skipif(shutil.which("RhumbSolve") is None,
                    reason="RhumbSolve not found (Debian geographiclib-tools)")
@pytest.mark.geodsolve
def test_rhumb_legs_through_make_leg_against_rhumbsolve():
    rng = np.random.default_rng(11)
    rows = np.column_stack([rng.uniform(-85, 85, 50), rng.uniform(-180, 180, 50),
                            rng.uniform(-85, 85, 50), rng.uniform(-180, 180, 50)])
    text = "".join(" ".join(repr(float(v)) for v in r) + "\n" for r in rows)
    out = subprocess.run(["RhumbSolve", "-i", "-p", "10"], input=text, capture_output=True,
                         text=True, check=True).stdout.splitlines()
    for r, line in zip(rows, out):
        azi, s12 = (float(x) for x in line.split()[:2])
        sol = legs.leg(*r, sailing="rhumb")
        assert sol.distance_m == pytest.approx(s12, abs=1e-3)
        assert (sol.initial_course - azi + 180) % 360 - 180 == pytest.approx(0, abs=1e-7)


def test_make_leg_great_circle_is_the_great_circle_leg():
    lg = legs.make_leg(10, 20, 30, 40, "great-circle", "sphere")
    assert isinstance(lg, GreatCircleLeg) and lg.earth is SPHERE
