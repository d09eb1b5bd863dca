"""Dead reckoning, the current triangle, the wind triangle and T/M/C headings.

Outside references are named beside each check; values recalled from memory are marked
"(from memory)" and re-derived independently in the test, rules of thumb "(common practice)".
"""

from __future__ import annotations

import cmath
import math
import shutil
import subprocess

import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from passagelog.errors import GeometryError, InputError
from passagelog.nav.earth import SPHERE_NM
from passagelog.nav.rhumb import rhumb_direct, rhumb_inverse
from passagelog.nav.triangles import (
    compass_to_magnetic,
    convert_heading,
    course_for_speed_made_good,
    course_to_steer,
    dead_reckoning,
    distance_run_m,
    estimated_position,
    find_wind,
    format_ew,
    ground_velocity,
    magnetic_to_compass,
    magnetic_to_true,
    normalize_course,
    parse_ew,
    set_and_drift,
    signed_angle,
    time_to_cover_s,
    true_to_magnetic,
    wind_triangle,
)


def vec(direction_deg: float, speed: float) -> complex:
    """A velocity as a complex number east + i*north (independent of the module's helper)."""
    return cmath.rect(speed, math.radians(90.0 - direction_deg))


def direction_of(z: complex) -> float:
    return (90.0 - math.degrees(cmath.phase(z))) % 360.0


def angle_diff(a: float, b: float) -> float:
    return abs((a - b + 180.0) % 360.0 - 180.0)


# ---------------------------------------------------------------------------------------------
# normalisation and time/distance


def test_normalize_course_folds_into_0_360():
    assert normalize_course(360.0) == 0.0
    assert normalize_course(-0.0) == 0.0 and math.copysign(1, normalize_course(-0.0)) == 1
    assert normalize_course(-90.0) == 270.0
    assert normalize_course(725.0) == 5.0
    assert normalize_course(-1e-15) < 360.0


def test_signed_angle_range():
    assert signed_angle(180.0) == 180.0
    assert signed_angle(-180.0) == 180.0
    assert signed_angle(190.0) == -170.0
    assert signed_angle(-190.0) == 170.0


def test_time_and_distance_at_speed():
    # 1 kn = 1852 m per hour exactly (NM = 1852 m, International Hydrographic Conference 1929)
    assert distance_run_m(12.0, 2.5 * 3600.0) == pytest.approx(30 * 1852.0, abs=1e-9)
    assert time_to_cover_s(30 * 1852.0, 12.0) == pytest.approx(2.5 * 3600.0, abs=1e-9)
    with pytest.raises(InputError, match="speed"):
        time_to_cover_s(100.0, 0.0)
    with pytest.raises(InputError, match="distance"):
        time_to_cover_s(-1.0, 5.0)
    with pytest.raises(InputError, match="finite"):
        distance_run_m(float("nan"), 10.0)


# ---------------------------------------------------------------------------------------------
# current triangle


def test_course_and_speed_to_make_good_bowditch_example():
    # Bowditch, NGA Pub. 9, ch. 7 (Dead Reckoning), "desired course and speed": to make good
    # 265° at 15 kn with a current setting 185° at 3 kn, steer 276° at 14.8 kn (graphical
    # solution, so the book rounds to 1° and 0.1 kn).
    r = course_for_speed_made_good(265.0, 15.0, 185.0, 3.0)
    assert r.course_to_steer == pytest.approx(276.0, abs=0.6)
    assert r.speed_through_water_kn == pytest.approx(14.8, abs=0.05)
    # independent: water vector = ground vector - current vector
    w = vec(265.0, 15.0) - vec(185.0, 3.0)
    assert r.course_to_steer == pytest.approx(direction_of(w), abs=1e-9)
    assert r.speed_through_water_kn == pytest.approx(abs(w), abs=1e-12)
    assert r.correction_deg == pytest.approx(r.course_to_steer - 265.0, abs=1e-12)


def test_course_to_steer_closed_form_and_law_of_sines():
    # The closed form theta_s = theta_g - asin(v_d/v_s * sin(theta_d - theta_g)) and its
    # worked case: track 135°, 5 kn through the water, set 220°, drift 2 kn -> 111.52°
    # (J. Dusud, "Identifying the course to steer algebraically", en.jeandusud.com).
    r = course_to_steer(135.0, 5.0, 220.0, 2.0)
    assert r.course_to_steer == pytest.approx(111.52, abs=0.005)
    # law of cosines on the triangle (water 5, current 2, angle between them) for the SMG
    ang = math.radians(angle_diff(r.course_to_steer, 220.0))
    smg = math.sqrt(5.0**2 + 2.0**2 + 2 * 5.0 * 2.0 * math.cos(ang))
    assert r.speed_made_good_kn == pytest.approx(smg, rel=1e-12)


def test_course_to_steer_current_too_strong():
    # 3 kn straight across the track cannot be cancelled at 2 kn through the water
    with pytest.raises(GeometryError, match="across the track"):
        course_to_steer(0.0, 2.0, 90.0, 3.0)
    # 5 kn head-on current at 4 kn: no way made good along the track
    with pytest.raises(GeometryError, match="no way is made good"):
        course_to_steer(0.0, 4.0, 180.0, 5.0)
    # a following current of any strength is fine
    assert course_to_steer(0.0, 4.0, 0.0, 5.0).speed_made_good_kn == pytest.approx(9.0)


def test_course_to_steer_leeway_is_steered_into():
    # pushed 5° to starboard by the wind: steer 5° to port of the water track
    no_lw = course_to_steer(90.0, 10.0, 0.0, 1.0)
    lw = course_to_steer(90.0, 10.0, 0.0, 1.0, leeway_deg=5.0)
    assert signed_angle(lw.course_to_steer - no_lw.course_to_steer) == pytest.approx(-5.0)
    assert lw.speed_made_good_kn == pytest.approx(no_lw.speed_made_good_kn)


def test_ground_velocity_is_the_vector_sum():
    cmg, smg = ground_velocity(0.0, 10.0, 90.0, 2.0)
    # steering 000° at 10 kn, current 090° at 2 kn -> 011.31°, 10.20 kn (kinavis docs example,
    # docs.rs/kinavis, navigation_solutions::course_over_ground)
    assert cmg == pytest.approx(11.31, abs=0.005)
    assert smg == pytest.approx(10.20, abs=0.005)
    # a head current equal to the way through the water: no way made good
    assert ground_velocity(10.0, 3.0, 190.0, 3.0)[1] < 1e-12
    assert ground_velocity(0.0, 3.0, 180.0, 3.0) == (None, 0.0)


@settings(max_examples=300, deadline=None)
@given(track=st.floats(0, 360, exclude_max=True), stw=st.floats(0.5, 40),
       set_=st.floats(0, 360, exclude_max=True), ratio=st.floats(0, 0.95),
       leeway=st.floats(-20, 20))
def test_course_to_steer_makes_good_the_track(track, stw, set_, ratio, leeway):
    drift = ratio * stw
    try:
        r = course_to_steer(track, stw, set_, drift, leeway)
    except GeometryError:
        # only a head current stronger than the way through the water may refuse
        along = drift * math.cos(math.radians(set_ - track))
        assume(False) if along < 0 else pytest.fail("refused a solvable case")
        return
    # steer the answer: water vector (heading + leeway) plus current, computed independently
    g = vec(r.course_to_steer + leeway, stw) + vec(set_, drift)
    assert angle_diff(direction_of(g), track) < 1e-8
    assert abs(g) == pytest.approx(r.speed_made_good_kn, rel=1e-9, abs=1e-12)
    # and the module's own forward function agrees
    cmg, smg = ground_velocity(r.course_to_steer, stw, set_, drift, leeway)
    assert angle_diff(cmg, track) < 1e-8
    assert smg == pytest.approx(r.speed_made_good_kn, rel=1e-9, abs=1e-12)


@settings(max_examples=200, deadline=None)
@given(track=st.floats(0, 360, exclude_max=True), smg=st.floats(0.5, 40),
       set_=st.floats(0, 360, exclude_max=True), drift=st.floats(0, 10))
def test_speed_made_good_variant_closes(track, smg, set_, drift):
    assume(abs(vec(track, smg) - vec(set_, drift)) > 1e-3)
    r = course_for_speed_made_good(track, smg, set_, drift)
    g = vec(r.course_to_steer, r.speed_through_water_kn) + vec(set_, drift)
    assert abs(g - vec(track, smg)) < 1e-9 * (1 + smg + drift)


# ---------------------------------------------------------------------------------------------
# wind triangle


def test_wind_triangle_faa_phak_example():
    # FAA-H-8083-25, Pilot's Handbook of Aeronautical Knowledge, Navigation chapter, wind
    # triangle example (from memory): true course 090°, TAS 120 kn, wind from 045° at 40 kn
    # -> true heading 076°, ground speed 88 kn. Verified here by the law of sines and the
    # law of cosines, independently of the module.
    r = wind_triangle(90.0, 120.0, 45.0, 40.0)
    assert r.true_heading == pytest.approx(76.0, abs=0.5)
    assert r.ground_speed_kn == pytest.approx(88.0, abs=0.5)
    # law of sines: sin(WCA) / W = sin(wind angle) / TAS, wind 45° left of the course
    wca = math.degrees(math.asin(40.0 * math.sin(math.radians(45.0)) / 120.0))
    assert r.wca == pytest.approx(-wca, abs=1e-9)          # wind from the left: WCA left (-)
    # law of cosines: GS^2 = TAS^2 + W^2 - 2 TAS W cos(angle between heading and wind-from)
    gamma = math.radians(angle_diff(r.true_heading, 45.0))
    gs = math.sqrt(120.0**2 + 40.0**2 - 2 * 120.0 * 40.0 * math.cos(gamma))
    assert r.ground_speed_kn == pytest.approx(gs, rel=1e-12)
    assert r.headwind_kn == pytest.approx(40.0 * math.cos(math.radians(45.0)))
    assert r.crosswind_kn == pytest.approx(-40.0 * math.sin(math.radians(45.0)))


def test_wind_triangle_mathworks_driftcorr_example():
    # MathWorks Mapping Toolbox, driftcorr documentation example: course 0°, 160 kn, wind
    # from 310° at 45 kn -> heading 347.56°, ground speed 127.32 kn, WCA -12.442°.
    r = wind_triangle(0.0, 160.0, 310.0, 45.0)
    assert r.true_heading == pytest.approx(347.56, abs=0.005)
    assert r.ground_speed_kn == pytest.approx(127.32, abs=0.005)
    assert r.wca == pytest.approx(-12.442, abs=0.0005)


def test_wind_triangle_exam_question():
    # Austro Control PPL(H) navigation question (atplquestions.com, ppl-h navigation 17):
    # TC 255°, TAS 100 kt, wind 200°/10 kt -> WCA 5° left, TH 250° (flight computer).
    r = wind_triangle(255.0, 100.0, 200.0, 10.0)
    assert r.true_heading == pytest.approx(250.0, abs=0.5)
    assert round(r.wca) == -5


def test_heading_to_track_mathematics_for_air_crew_trainees():
    # "Mathematics for Air Crew Trainees" (1943), Smithsonian NASM transcription, p. 73,
    # exercise 2 with printed answer: heading 315°, air speed 150 mph, wind 30 mph from 045°
    # -> course 304°, ground speed 153 mph. (Units cancel in the triangle.)
    cmg, gs = ground_velocity(315.0, 150.0, 45.0 + 180.0, 30.0)
    assert cmg == pytest.approx(304.0, abs=0.5)
    assert gs == pytest.approx(153.0, abs=0.5)


def test_find_wind_flight_computer_manual_example():
    # Smithsonian NASM transcription of a 1940s dead-reckoning computer manual, example 16:
    # TAS 165 mph, ground speed 146 mph, heading 104° (crabbing 10° right), course 94°
    # -> wind 34 mph from about 154° (read off the computer's scales).
    w = find_wind(104.0, 165.0, 94.0, 146.0)
    assert w.wind_from == pytest.approx(154.0, abs=0.5)
    assert w.wind_speed_kn == pytest.approx(34.0, abs=1.0)
    assert w.wca == pytest.approx(10.0)
    # independent: wind = ground vector - air vector, reported as the direction it comes FROM
    wv = vec(94.0, 146.0) - vec(104.0, 165.0)
    assert w.wind_speed_kn == pytest.approx(abs(wv), rel=1e-12)
    assert angle_diff(w.wind_from, direction_of(-wv)) < 1e-9


def test_wind_triangle_refusals():
    with pytest.raises(GeometryError, match="crosswind"):
        wind_triangle(0.0, 50.0, 90.0, 60.0)
    with pytest.raises(GeometryError, match="no ground speed"):
        wind_triangle(0.0, 50.0, 0.0, 55.0)
    with pytest.raises(InputError, match="true airspeed"):
        wind_triangle(0.0, 0.0, 0.0, 5.0)
    assert find_wind(90.0, 100.0, 90.0, 100.0).wind_from is None


@settings(max_examples=300, deadline=None)
@given(tc=st.floats(0, 360, exclude_max=True), tas=st.floats(40, 600),
       wf=st.floats(0, 360, exclude_max=True), ratio=st.floats(0, 0.9))
def test_wind_triangle_closes(tc, tas, wf, ratio):
    ws = ratio * tas
    r = wind_triangle(tc, tas, wf, ws)
    # heading vector * TAS + wind vector (blowing toward wf + 180) = ground vector
    ground = vec(r.true_heading, tas) + vec(wf + 180.0, ws)
    assert angle_diff(direction_of(ground), tc) < 1e-8
    assert abs(ground) == pytest.approx(r.ground_speed_kn, rel=1e-9)
    assert 0.0 <= r.true_heading < 360.0
    assert r.wca == pytest.approx(signed_angle(r.true_heading - tc), abs=1e-12)
    # the inverse problem finds the same wind back
    w = find_wind(r.true_heading, tas, tc, r.ground_speed_kn)
    assert w.wind_speed_kn == pytest.approx(ws, abs=1e-9 * tas)
    if ws > 1e-6 * tas:
        assert angle_diff(w.wind_from, wf) < 1e-6


# ---------------------------------------------------------------------------------------------
# true, magnetic, compass


# (true, variation, magnetic, deviation, compass): from true toward compass subtract east and
# add west; back from compass toward true add east ("correcting add east", common practice;
# also FAA-H-8083-25 navigation chapter: "east is least, west is best" for TH -> MH).
TMC_CASES = [
    (93.0, "10°W", 103.0, "3°E", 100.0),
    (250.0, "5 E", 245.0, "2 W", 247.0),
    (5.0, "12W", 17.0, "4°W", 21.0),
    (355.0, "8°E", 347.0, "6E", 341.0),
    (2.0, "4°E", 358.0, "1°W", 359.0),
    (359.0, "E 3.5", 355.5, "-2.5", 358.0),
    (0.0, "0", 0.0, "+0", 0.0),
    (180.0, "4°30'W", 184.5, "1°15'E", 183.25),
]


@pytest.mark.parametrize("true,var,mag,dev,comp", TMC_CASES)
def test_correcting_add_east(true, var, mag, dev, comp):
    assert true_to_magnetic(true, parse_ew(var)) == pytest.approx(mag % 360.0)
    assert magnetic_to_compass(mag, parse_ew(dev)) == pytest.approx(comp % 360.0)
    assert compass_to_magnetic(comp, parse_ew(dev)) == pytest.approx(mag % 360.0)
    assert magnetic_to_true(mag, parse_ew(var)) == pytest.approx(true % 360.0)
    for kind, value in (("true", true), ("magnetic", mag), ("compass", comp)):
        h = convert_heading(value, kind, var, dev)
        assert (h.true, h.magnetic, h.compass) == pytest.approx((true, mag, comp))
        # true = compass + compass error (variation + deviation, east +)
        assert normalize_course(h.compass + h.compass_error_e) == pytest.approx(h.true)


@pytest.mark.parametrize("text,value", [
    ("4°W", -4.0), ("3.5 E", 3.5), ("E 3.5", 3.5), ("w4", -4.0), ("4°30'W", -4.5),
    ("4° 30′ E", 4.5), ("-4", -4.0), ("+3.5", 3.5), ("0", 0.0), (" 12.25 deg W ", -12.25),
    (2.5, 2.5), (-7, -7.0),
])
def test_parse_ew_accepts_the_trade_notation(text, value):
    assert parse_ew(text) == value


@pytest.mark.parametrize("text,fragment", [
    ("-4W", "both a sign"), ("+3E", "both a sign"), ("E4W", "twice"), ("4°60'W", "below 60"),
    ("4.5°30'W", "whole degrees"), ("4 N", "cannot be read"), ("", "cannot be read"),
    ("181E", "out of range"), (float("nan"), "finite"), ("4W junk", "cannot be read"),
    (None, "cannot be read"),
])
def test_parse_ew_refuses(text, fragment):
    with pytest.raises(InputError, match=fragment) as info:
        parse_ew(text, "variation")
    assert "variation" in str(info.value)


def test_format_ew():
    assert format_ew(-4.0) == "4.0°W"
    assert format_ew(3.25, 2) == "3.25°E"
    assert format_ew(-0.01) == "0.0°"
    assert parse_ew(format_ew(-12.3)) == -12.3


@settings(max_examples=300, deadline=None)
@given(t=st.floats(0, 360, exclude_max=True), var=st.floats(-60, 60), dev=st.floats(-30, 30))
def test_true_magnetic_compass_round_trip(t, var, dev):
    m = true_to_magnetic(t, var)
    c = magnetic_to_compass(m, dev)
    assert 0.0 <= m < 360.0 and 0.0 <= c < 360.0
    # compass differs from true by exactly the compass error, the west way for east error
    assert angle_diff(c, t - var - dev) < 1e-9
    back = magnetic_to_true(compass_to_magnetic(c, dev), var)
    assert angle_diff(back, t) < 1e-9
    # the textual forms round-trip through the parser as well
    assert angle_diff(true_to_magnetic(t, format_ew(var, 6)), m) < 1e-5


# ---------------------------------------------------------------------------------------------
# dead reckoning on the ellipsoid (a steady course is a rhumb line)

NM = 1852.0
KN = NM / 3600.0
needs_rhumbsolve = pytest.mark.skipif(shutil.which("RhumbSolve") is None,
                                      reason="RhumbSolve (geographiclib-tools) not installed")


def rhumbsolve_direct(lat, lon, course, s):
    """GeographicLib's C++ RhumbSolve (Debian geographiclib-tools): the outside reference."""
    out = subprocess.run(["RhumbSolve", "-p", "9"], input=f"{lat} {lon} {course} {s}\n",
                         capture_output=True, text=True, check=True).stdout.split()
    return float(out[0]), float(out[1])


def metres_between(lat1, lon1, lat2, lon2):
    from geographiclib.geodesic import Geodesic

    return Geodesic.WGS84.Inverse(lat1, lon1, lat2, lon2)["s12"]


@pytest.mark.geodsolve
@needs_rhumbsolve
def test_dr_against_rhumbsolve():
    # 2 h 30 min at 12 kn steering 045° from 50°N 4°W: 30 NM along the rhumb line
    dr = dead_reckoning(50.0, -4.0, 45.0, 12.0, 2.5 * 3600.0)
    assert dr.distance_m == pytest.approx(30 * NM, abs=1e-9)
    lat, lon = rhumbsolve_direct(50.0, -4.0, 45.0, 30 * NM)
    assert metres_between(dr.lat, dr.lon, lat, lon) < 1e-3


@pytest.mark.geodsolve
@needs_rhumbsolve
def test_ep_against_rhumbsolve():
    # steering 100° at 15 kn for 3 h, current setting 200° at 2.5 kn, 3° leeway to port
    ep = estimated_position(20.0, -60.0, 100.0, 15.0, 3 * 3600.0, 200.0, 2.5, leeway_deg=-3.0)
    g = vec(97.0, 15.0) + vec(200.0, 2.5)             # water track 097° plus the current
    assert ep.course_made_good == pytest.approx(direction_of(g), abs=1e-9)
    assert ep.speed_made_good_kn == pytest.approx(abs(g), rel=1e-12)
    assert ep.water_track == pytest.approx(97.0)
    lat, lon = rhumbsolve_direct(20.0, -60.0, direction_of(g), abs(g) * 3 * NM)
    assert metres_between(ep.lat, ep.lon, lat, lon) < 1e-3
    dlat, dlon = rhumbsolve_direct(20.0, -60.0, 100.0, 45 * NM)
    assert metres_between(ep.dr_lat, ep.dr_lon, dlat, dlon) < 1e-3


def test_dr_parallel_sailing_on_the_one_minute_sphere():
    # parallel sailing (Bowditch, NGA Pub. 9, ch. 24 "Sailings"): DLo = departure * sec(L);
    # on the sphere where 1' = 1 NM, 60 NM due east at 60°N is 2° of longitude exactly.
    dr = dead_reckoning(60.0, 10.0, 90.0, 10.0, 6 * 3600.0, earth=SPHERE_NM)
    assert dr.lat == pytest.approx(60.0, abs=1e-12)
    assert dr.lon == pytest.approx(12.0, abs=1e-12)
    # and 60 NM due north is 1° of latitude exactly
    dr = dead_reckoning(10.0, 10.0, 0.0, 20.0, 3 * 3600.0, earth=SPHERE_NM)
    assert (dr.lat, dr.lon) == pytest.approx((11.0, 10.0), abs=1e-12)


def test_set_and_drift_from_dr_and_fix():
    # The drift is the distance DR -> fix over the hours since the last fix (Bowditch, NGA
    # Pub. 9, ch. 7; the plotting example at home.teleport.com/~forsberg/setdrift.html:
    # 4.2 NM in 2 h is a drift of 2.1 kn); the set is the direction DR -> fix.
    dr = (41.2, -70.5)
    fix = rhumb_direct(*dr, 30.0, 4.2 * NM, SPHERE_NM)
    sd = set_and_drift(*dr, *fix, 2 * 3600.0, earth=SPHERE_NM)
    assert sd.set == pytest.approx(30.0, abs=1e-9)
    assert sd.drift_kn == pytest.approx(2.1, abs=1e-12)
    assert sd.distance_m == pytest.approx(4.2 * NM, abs=1e-6)
    # the fix on the DR: no current
    assert set_and_drift(*dr, *dr, 3600.0) == type(sd)(None, 0.0, 0.0, 3600.0)
    with pytest.raises(InputError, match="elapsed time"):
        set_and_drift(*dr, *fix, 0.0)


@settings(max_examples=150, deadline=None)
@given(lat=st.floats(-60, 60), lon=st.floats(-180, 180, exclude_max=True),
       course=st.floats(0, 360, exclude_max=True), stw=st.floats(3, 20),
       set_=st.floats(0, 360, exclude_max=True), drift=st.floats(0, 4),
       hours=st.floats(0.25, 6))
def test_set_and_drift_recovers_the_current(lat, lon, course, stw, set_, drift, hours):
    # The DR and the EP for the same time differ by the current's run, so the set and drift
    # found from them is the current put in. Velocities add in the plane but positions move
    # on the ellipsoid, so they agree to second order: within
    # 0.5 * run * current's run / R * (1 + |tan lat|) (a bound of ours, worst seen 0.32).
    t = hours * 3600.0
    ep = estimated_position(lat, lon, course, stw, t, set_, drift)
    sd = set_and_drift(ep.dr_lat, ep.dr_lon, ep.lat, ep.lon, t)
    run_m, current_m = stw * KN * t, drift * KN * t
    bound = 0.5 * run_m * current_m / 6.371e6 * (1 + abs(math.tan(math.radians(lat)))) + 1e-6
    assert abs(sd.drift_kn - drift) * KN * t <= bound
    if sd.set is not None and drift > 0:
        assert current_m * math.radians(angle_diff(sd.set, set_)) <= 1.01 * bound + 1e-6
    q = rhumb_direct(ep.dr_lat, ep.dr_lon, set_, current_m)
    assert metres_between(*q, ep.lat, ep.lon) <= bound


@settings(max_examples=150, deadline=None)
@given(lat=st.floats(-70, 70), lon=st.floats(-180, 180, exclude_max=True),
       track=st.floats(0, 360, exclude_max=True), stw=st.floats(3, 25),
       set_=st.floats(0, 360, exclude_max=True), ratio=st.floats(0, 0.9),
       leeway=st.floats(-10, 10), hours=st.floats(0.1, 24))
def test_course_to_steer_then_ep_lands_on_the_track(lat, lon, track, stw, set_, ratio,
                                                    leeway, hours):
    drift = ratio * stw
    try:
        cts = course_to_steer(track, stw, set_, drift, leeway)
    except GeometryError:
        return
    t = hours * 3600.0
    ep = estimated_position(lat, lon, cts.course_to_steer, stw, t, set_, drift, leeway)
    s, c = rhumb_inverse(lat, lon, ep.lat, ep.lon)
    # on the intended rhumb track, at the speed made good times the time
    assert s == pytest.approx(cts.speed_made_good_kn * hours * NM, rel=1e-9, abs=1e-6)
    if s > 1.0:
        assert angle_diff(c, track) < 1e-6
    # cross-track distance from the intended track is below a millimetre
    on = rhumb_direct(lat, lon, track, s)
    assert metres_between(ep.lat, ep.lon, *on) < 1e-3


def test_extreme_inputs_give_errors_not_infinities():
    # regression: a 1e-320 h interval gave an infinite drift on the CLI
    with pytest.raises(InputError, match="drift"):
        set_and_drift(50.0, -4.0, 50.1, -4.0, 1e-316)
    with pytest.raises(InputError, match="time to cover"):
        time_to_cover_s(1e300, 1e-300)
    with pytest.raises(InputError, match="distance run"):
        distance_run_m(1e308, 1e308)


def test_dr_with_no_way_or_from_a_pole():
    # regression (library fuzzing): no distance leaves the start where it is, even at a pole
    dr = dead_reckoning(-90.0, 45.0, 90.0, 0.0, 3600.0)
    assert (dr.lat, dr.lon, dr.distance_m) == (-90.0, 45.0, 0.0)
    assert dead_reckoning(10.0, 180.0, 33.0, 5.0, 0.0).lon == -180.0
    # leaving a pole: only the meridians are courses there
    with pytest.raises(GeometryError, match="every direction is north"):
        dead_reckoning(-90.0, 45.0, 90.0, 10.0, 3600.0)
    ep = estimated_position(-90.0, 0.0, 0.0, 10.0, 3600.0, 0.0, 0.0)
    # near the pole a degree of latitude is the polar radius of curvature a^2/b = 6399593.6 m
    # times pi/180 = 111694 m (WGS84, NIMA TR8350.2)
    assert ep.lat == pytest.approx(-90.0 + 10 * NM / 111_694.0, abs=1e-6)
    # huge values come back as errors, not infinities
    with pytest.raises(InputError, match="wind speed"):
        find_wind(0.0, 1.7e308, 180.0, 1.7e308)
    with pytest.raises(InputError, match="speed made good"):
        ground_velocity(0.0, 1.7e308, 0.0, 1.7e308)
