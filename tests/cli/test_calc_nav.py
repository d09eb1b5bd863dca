"""``passagelog calc dr / ep / set-drift / steer / wind / heading / from-mark / bearings /
ranges / alteration``: output, stable JSON keys and error mapping.

The numbers themselves are checked against outside references in tests/nav; here the CLI is
checked to pass them through (a geographiclib construction for the fixes, the handbook
examples for the triangles).
"""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner
from geographiclib.geodesic import Geodesic

from passagelog.cli import cli
from passagelog.cli.calc_nav import parse_duration_s, parse_wind
from passagelog.errors import InputError, PassagelogError

ROOT = Path(__file__).parents[2]
G = Geodesic.WGS84
NM = 1852.0


def run(args):
    return CliRunner().invoke(cli, ["calc", *args], standalone_mode=False,
                              catch_exceptions=True)


def js(args):
    r = run([*args, "--json"])
    assert r.exception is None, r.output
    return json.loads(r.output)


def run_main(args):
    return subprocess.run([sys.executable, "-m", "passagelog", "calc", *args],
                          capture_output=True, text=True, cwd=ROOT, check=False)


def miss(lat1, lon1, lat2, lon2):
    return G.Inverse(lat1, lon1, lat2, lon2)["s12"]


# --------------------------------------------------------------------------- parsing helpers
@pytest.mark.parametrize("text,seconds", [
    ("2.5", 9000.0), ("2h30m", 9000.0), ("2h", 7200.0), ("45m", 2700.0), ("90min", 5400.0),
    ("1:30", 5400.0), ("1:30:15", 5415.0), ("3600s", 3600.0), ("1h 2m 3s", 3723.0),
])
def test_durations(text, seconds):
    assert parse_duration_s(text) == pytest.approx(seconds)


@pytest.mark.parametrize("text", ["", "2x", "-1", "1:75", "h", "nan", "inf"])
def test_bad_durations(text):
    with pytest.raises(InputError, match="--time"):
        parse_duration_s(text)


def test_wind_notation():
    assert parse_wind("045/40") == (45.0, 40.0)
    assert parse_wind("270@15kt") == (270.0, 15.0)
    assert parse_wind("360/10") == (0.0, 10.0)
    with pytest.raises(InputError, match="--wind"):
        parse_wind("NE 20")
    with pytest.raises(InputError, match="beyond 360"):
        parse_wind("400/10")


# --------------------------------------------------------------------------- dead reckoning
def test_dr_json_and_human():
    d = js(["dr", "50°N 4°W", "--course", "45", "--speed", "12", "--time", "2h30m"])
    assert list(d) == ["lat", "lon", "course", "speed_kn", "elapsed_s", "distance_m",
                       "distance_nm"]
    assert d["distance_nm"] == pytest.approx(30.0)
    assert d["elapsed_s"] == 9000.0
    # RhumbSolve: 50 -4 45 55560 -> 50.35319591882813 -3.45001312106833 (geographiclib-tools)
    assert (d["lat"], d["lon"]) == pytest.approx((50.35319591882813, -3.45001312106833),
                                                 abs=1e-11)
    r = run(["dr", "50°N 4°W", "--course", "45", "--speed", "12", "--time", "2.5"])
    assert r.output.splitlines() == [
        "DR        50°21.192'N 003°27.001'W",
        "run       30.00 NM on 045.0° at 12.0 kn in 2h30m",
    ]


def test_ep_keys_and_values():
    d = js(["ep", "20N 60W", "--course", "100", "--speed", "15", "--time", "3", "--set", "200",
            "--drift", "2.5", "--leeway", "-3"])
    assert list(d) == ["lat", "lon", "dr_lat", "dr_lon", "water_track", "course_made_good",
                       "speed_made_good_kn", "distance_made_good_m", "distance_made_good_nm",
                       "elapsed_s"]
    assert d["water_track"] == pytest.approx(97.0)
    assert d["distance_made_good_nm"] == pytest.approx(d["speed_made_good_kn"] * 3)


def test_set_drift():
    # a fix 4.2 NM from the DR toward 030° after 2 h: set 030°, drift 2.1 kn
    # (home.teleport.com/~forsberg/setdrift.html plotting example), on the 1'=1 NM sphere
    from passagelog.nav.earth import SPHERE_NM
    from passagelog.nav.rhumb import rhumb_direct

    lat, lon = rhumb_direct(41.2, -70.5, 30.0, 4.2 * NM, SPHERE_NM)
    d = js(["set-drift", "41.2, -70.5", f"{lat:.12f}, {lon:.12f}", "--time", "2h",
            "--earth", "sphere-nm"])
    assert list(d) == ["set", "drift_kn", "distance_m", "distance_nm", "elapsed_s"]
    assert d["set"] == pytest.approx(30.0, abs=1e-6)
    assert d["drift_kn"] == pytest.approx(2.1, abs=1e-9)
    same = js(["set-drift", "41.2, -70.5", "41.2, -70.5", "--time", "1"])
    assert same["set"] is None and same["drift_kn"] == 0.0


def test_steer_bowditch_example():
    # Bowditch, NGA Pub. 9, ch. 7: make good 265° at 15 kn, current 185° at 3 kn -> steer 276°
    # at 14.8 kn (graphical)
    d = js(["steer", "--track", "265", "--smg", "15", "--set", "185", "--drift", "3",
            "--distance", "30"])
    assert list(d) == ["track", "course_to_steer", "correction_deg", "speed_through_water_kn",
                       "speed_made_good_kn", "time_s"]
    assert d["course_to_steer"] == pytest.approx(276.0, abs=0.6)
    assert d["speed_through_water_kn"] == pytest.approx(14.8, abs=0.05)
    assert d["time_s"] == pytest.approx(2 * 3600.0)
    human = run(["steer", "--track", "265", "--speed", "15", "--set", "185", "--drift", "3"])
    assert human.output.startswith("steer     ")
    assert "to starboard of the track 265.0°" in human.output


def test_steer_current_too_strong_is_one_line_exit_1():
    p = run_main(["steer", "--track", "0", "--speed", "2", "--set", "90", "--drift", "3"])
    assert p.returncode == 1 and p.stdout == ""
    assert p.stderr.count("\n") == 1 and "across the track" in p.stderr


def test_steer_usage_errors_exit_2():
    p = run_main(["steer", "--track", "0", "--set", "90", "--drift", "3"])
    assert p.returncode == 2 and "exactly one of --speed" in p.stderr
    p = run_main(["steer", "--track", "0", "--speed", "5", "--smg", "5", "--set", "9",
                  "--drift", "1"])
    assert p.returncode == 2


# --------------------------------------------------------------------------- air
def test_wind_triangle_command():
    # FAA-H-8083-25 navigation chapter example (from memory; verified in tests/nav):
    # TC 090°, TAS 120 kn, wind 045°/40 kn -> TH 076°, GS 88 kn
    d = js(["wind", "--course", "90", "--tas", "120", "--wind", "045/40", "--variation",
            "10W", "--deviation", "2E", "--distance", "88.334766649"])
    assert list(d) == ["true_course", "true_heading", "wca", "ground_speed_kn", "tas_kn",
                       "wind_from", "wind_speed_kn", "headwind_kn", "crosswind_kn",
                       "magnetic_heading", "compass_heading", "ete_s"]
    assert d["true_heading"] == pytest.approx(76.0, abs=0.5)
    assert d["ground_speed_kn"] == pytest.approx(88.0, abs=0.5)
    # TH -> MH adds west variation, MH -> CH subtracts east deviation (FAA-H-8083-25)
    assert d["magnetic_heading"] == pytest.approx(d["true_heading"] + 10.0)
    assert d["compass_heading"] == pytest.approx(d["true_heading"] + 8.0)
    assert d["ete_s"] == pytest.approx(3600.0, abs=0.01)
    plain = js(["wind", "--course", "90", "--tas", "120", "--wind", "045/40"])
    assert plain["magnetic_heading"] is None and plain["ete_s"] is None
    human = run(["wind", "--course", "90", "--tas", "120", "--wind", "045/40"]).output
    assert "WCA       13.6° left (-)" in human and "TH        076.4°" in human


def test_wind_found():
    # flight computer manual example 16 (Smithsonian NASM transcription): wind 34 from ~154°
    d = js(["wind", "--heading", "104", "--tas", "165", "--track", "94", "--gs", "146"])
    assert list(d) == ["wind_from", "wind_speed_kn", "wca", "true_heading", "tas_kn",
                       "track", "ground_speed_kn"]
    assert d["wind_from"] == pytest.approx(154.0, abs=0.5)
    assert d["wind_speed_kn"] == pytest.approx(34.0, abs=1.0)


@pytest.mark.parametrize("args", [
    ["wind", "--tas", "100"],
    ["wind", "--tas", "100", "--course", "10"],
    ["wind", "--tas", "100", "--course", "10", "--wind", "1/1", "--heading", "5"],
    ["wind", "--tas", "100", "--heading", "5", "--track", "3"],
])
def test_wind_usage_errors(args):
    r = run(args)
    assert r.exception is not None and r.exception.__class__.__name__ == "UsageError"


def test_heading_conversions():
    d = js(["heading", "93", "--variation", "10W", "--deviation", "3°E"])
    assert d == {"true": 93.0, "magnetic": 103.0, "compass": 100.0, "variation_e": -10.0,
                 "deviation_e": 3.0, "compass_error_e": -7.0}
    # correcting add east: compass 100, deviation 3E -> magnetic 103; variation 10W -> 093
    d = js(["heading", "100", "--given", "compass", "--variation", "-10", "--deviation", "+3"])
    assert (d["magnetic"], d["true"]) == (103.0, 93.0)
    assert run(["heading", "93", "--variation", "10W"]).output.splitlines()[2] == \
        "magnetic  103.0°"


def test_heading_bad_variation_is_exit_1():
    p = run_main(["heading", "5", "--variation", "-4W"])
    assert p.returncode == 1 and "both a sign and W" in p.stderr and p.stdout == ""


# --------------------------------------------------------------------------- fixes
def test_from_mark_gives_the_ship_back():
    ship = (50.05, -4.30)
    m = G.Direct(*ship, 40.0, 24 * NM)
    back = G.Inverse(*ship, m["lat2"], m["lon2"])
    d = js(["from-mark", f"{m['lat2']:.12f}, {m['lon2']:.12f}",
            "--bearing", repr(back["azi1"] % 360), "--range", repr(back["s12"] / NM)])
    assert list(d) == ["lat", "lon", "bearing", "bearing_from_mark", "range_m", "range_nm"]
    assert miss(d["lat"], d["lon"], *ship) < 0.01


def test_from_mark_radial_magnetic():
    d = js(["from-mark", "47.45, -122.31", "--radial", "60", "--range", "200",
            "--variation", "15E"])
    g = G.Direct(47.45, -122.31, 75.0, 200 * NM)                # radial 075 true
    assert miss(d["lat"], d["lon"], g["lat2"], g["lon2"]) < 1e-6
    assert d["bearing_from_mark"] == 75.0


def test_bearings_fix():
    ship = (36.12, -5.42)
    m1 = G.Direct(*ship, 20.0, 9 * NM)
    m2 = G.Direct(*ship, 115.0, 14 * NM)
    b1 = G.Inverse(*ship, m1["lat2"], m1["lon2"])["azi1"] % 360
    b2 = G.Inverse(*ship, m2["lat2"], m2["lon2"])["azi1"] % 360
    d = js(["bearings", f"{m1['lat2']:.12f}, {m1['lon2']:.12f}",
            f"{m2['lat2']:.12f}, {m2['lon2']:.12f}", "--bearing1", repr(b1),
            "--bearing2", repr(b2)])
    assert list(d) == ["lat", "lon", "cut_angle", "bearing1", "range1_m", "range1_nm",
                       "bearing2", "range2_m", "range2_nm"]
    assert miss(d["lat"], d["lon"], *ship) < 0.01
    # the same bearings read off a compass with 2°W variation: magnetic = true + 2
    d2 = js(["bearings", f"{m1['lat2']:.12f}, {m1['lon2']:.12f}",
             f"{m2['lat2']:.12f}, {m2['lon2']:.12f}", "--bearing1", repr(b1 + 2),
             "--bearing2", repr(b2 + 2), "--variation", "2W"])
    assert miss(d2["lat"], d2["lon"], *ship) < 0.01


def test_bearings_small_cut_refused():
    p = run_main(["bearings", "50.1, 0", "50.1, 0.02", "--bearing1", "0", "--bearing2", "5"])
    assert p.returncode == 1 and "cut at 5°" in p.stderr


def test_ranges_both_solutions():
    d = js(["ranges", "51N 1.5E", "51.2N 1.9E", "--range1", "12", "--range2", "10",
            "--dr", "51.1N 1.6E"])
    assert list(d) == ["solutions"] and len(d["solutions"]) == 2
    for s in d["solutions"]:
        assert G.Inverse(s["lat"], s["lon"], 51.0, 1.5)["s12"] == pytest.approx(12 * NM,
                                                                                abs=0.01)
        assert G.Inverse(s["lat"], s["lon"], 51.2, 1.9)["s12"] == pytest.approx(10 * NM,
                                                                                abs=0.01)
    first, second = d["solutions"]
    assert miss(first["lat"], first["lon"], 51.1, 1.6) < miss(second["lat"], second["lon"],
                                                              51.1, 1.6)


def test_ranges_that_do_not_meet():
    p = run_main(["ranges", "51N 1.5E", "51.2N 1.9E", "--range1", "1", "--range2", "1"])
    assert p.returncode == 1 and "do not meet" in p.stderr


def test_alteration_by_courses_and_positions():
    d = js(["alteration", "--in", "350", "--out", "20", "--radius", "0.5"])
    assert list(d) == ["course_in", "course_out", "alteration", "radius_m", "radius_nm",
                       "wheel_over_m", "wheel_over_nm", "wop_lat", "wop_lon"]
    assert d["alteration"] == pytest.approx(30.0)
    # R tan(A/2) (REFERENCE.md, from memory; derived in tests/nav/test_fixing.py)
    assert d["wheel_over_nm"] == pytest.approx(0.5 * 0.2679491924311227)
    assert d["wop_lat"] is None
    # from positions: the WOP lies on the incoming rhumb leg, wheel_over_m before the waypoint
    from passagelog.nav.rhumb import rhumb_inverse

    p = js(["alteration", "50N 4W", "50.5N 3W", "51N 3W", "--speed", "12", "--rot", "30"])
    assert p["radius_nm"] == pytest.approx(12 * 3 / (3.141592653589793 * 30))
    s, c = rhumb_inverse(p["wop_lat"], p["wop_lon"], 50.5, -3.0)
    assert s == pytest.approx(p["wheel_over_m"], abs=1e-6)
    assert c == pytest.approx(p["course_in"], abs=1e-7)
    assert p["alteration"] < 0                                  # to port
    human = run(["alteration", "--in", "90", "--out", "180"]).output
    assert "alter     90.0° to starboard" in human


def test_alteration_usage():
    assert run(["alteration", "--in", "10"]).exception.__class__.__name__ == "UsageError"
    assert run(["alteration", "--in", "10", "--out", "20", "--speed", "3"]) \
        .exception.__class__.__name__ == "UsageError"
    r = run(["alteration", "--in", "0", "--out", "180", "--radius", "1"])
    assert isinstance(r.exception, PassagelogError)


def test_bad_position_names_the_argument():
    p = run_main(["dr", "95N 4W", "--course", "1", "--speed", "1", "--time", "1"])
    assert p.returncode == 1 and p.stderr.startswith("passagelog: START")
    p = run_main(["dr", "--course", "1", "--speed", "1", "--time", "1"])
    assert p.returncode == 2


def test_help_lists_the_json_keys():
    for cmd, key in (("dr", "distance_nm"), ("ep", "course_made_good"), ("steer", "time_s"),
                     ("wind", "crosswind_kn"), ("heading", "compass_error_e"),
                     ("from-mark", "bearing_from_mark"), ("bearings", "cut_angle"),
                     ("ranges", "solutions"), ("alteration", "wheel_over_m"),
                     ("set-drift", "drift_kn")):
        r = run([cmd, "--help"])
        assert key in r.output, cmd
