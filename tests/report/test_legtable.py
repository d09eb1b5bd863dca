"""The plan's leg table and the air navigation log, checked against outside references."""

from __future__ import annotations

import math
from datetime import datetime, timezone

import pytest
from geographiclib.geodesic import Geodesic

from passagelog.model import LegPlan, Route, Waypoint
from passagelog.nav.units import NM_M
from passagelog.report.legtable import leg_table_records, plan_leg_table
from passagelog.report.navlog import air_nav_log, nav_log_records

G = Geodesic.WGS84


def _route(sailings=("great-circle", "rhumb")):
    wps = (Waypoint("Alpha", 50.0, -4.0), Waypoint("Bravo", 40.0, -30.0),
           Waypoint("Charlie", 38.0, -45.0))
    legs = tuple(LegPlan(sailing=s, speed_kn=15.0, xtl_port_m=1852.0, xtl_stbd_m=3704.0,
                         turn_radius_m=1852.0) for s in sailings)
    return Route("Test passage", wps, legs)


def test_great_circle_leg_matches_geographiclib():
    rows = plan_leg_table(_route())
    ref = G.Inverse(50.0, -4.0, 40.0, -30.0)  # geographiclib, the outside reference
    assert rows[0].distance_m == pytest.approx(ref["s12"], abs=1e-3)
    assert rows[0].initial_course == pytest.approx(ref["azi1"] % 360, abs=1e-9)
    assert rows[0].final_course == pytest.approx(ref["azi2"] % 360, abs=1e-9)
    # the great circle is never longer than the rhumb line between the same points
    assert rows[0].saving_m > 0
    assert rows[1].saving_m > 0
    assert rows[1].rhumb_m == pytest.approx(rows[1].distance_m, abs=1e-9)


def test_cumulative_times_and_etas():
    dep = datetime(2027, 1, 5, 8, 0, tzinfo=timezone.utc)
    rows = plan_leg_table(_route(), departure_utc=dep)
    assert rows[1].cumulative_m == pytest.approx(rows[0].distance_m + rows[1].distance_m)
    # time on a leg = distance / speed (15 kn = 15 NM per hour, 1 NM = 1852 m exactly)
    assert rows[0].duration_s == pytest.approx(rows[0].distance_m / NM_M / 15.0 * 3600.0)
    assert rows[0].etd_utc == dep
    assert rows[1].etd_utc == rows[0].eta_utc
    total = rows[0].duration_s + rows[1].duration_s
    assert (rows[1].eta_utc - dep).total_seconds() == pytest.approx(total, abs=1e-3)


def test_wheel_over_is_r_tan_half_alteration():
    rows = plan_leg_table(_route())
    a = rows[0].alteration_deg
    # R tan(A/2): the turn circle tangent to both legs (REFERENCE.md, from memory)
    assert rows[0].wheel_over_m == pytest.approx(1852.0 * math.tan(math.radians(abs(a)) / 2))
    assert rows[1].alteration_deg is None and rows[1].wheel_over_m is None


def test_records_carry_nm_and_zone_time():
    dep = datetime(2027, 1, 5, 8, 0, tzinfo=timezone.utc)
    rec = leg_table_records(plan_leg_table(_route(), departure_utc=dep))
    assert rec[0]["xtl_port_nm"] == 1.0 and rec[0]["xtl_stbd_nm"] == 2.0
    # 30°W lies in zone +2 (ZD = lon/15 rounded, + in west longitude; Bowditch, time chapter)
    assert rec[0]["eta_ship"].endswith("(+2)")
    assert rec[0]["etd_utc"] == "2027-01-05T08:00:00Z"


def test_no_speed_stops_the_eta_chain():
    wps = (Waypoint("A", 0.0, 0.0), Waypoint("B", 0.0, 1.0), Waypoint("C", 0.0, 2.0))
    route = Route("r", wps, (LegPlan(), LegPlan(speed_kn=10.0)))
    rows = plan_leg_table(route, departure_utc=datetime(2027, 1, 1, tzinfo=timezone.utc))
    assert rows[0].eta_utc is None and rows[1].etd_utc is None and rows[1].eta_utc is None


def test_air_nav_log_heading_chain():
    wps = (Waypoint("Field", 61.0, 24.0), Waypoint("Mast", 61.5, 25.0))
    route = Route("flight", wps, (LegPlan(sailing="great-circle", speed_kn=120.0),))
    rows = air_nav_log(route, wind_from=270.0, wind_kn=20.0, variation_e=-4.0,
                       deviation_e=2.0, fuel_flow_per_h=30.0, fuel_start=100.0)
    r = rows[0]
    tc = G.Inverse(61.0, 24.0, 61.5, 25.0)["azi1"]
    # wind triangle by the law of sines (FAA-H-8083-25, navigation chapter): sin(WCA) =
    # W sin(wind - TC) / TAS, GS = TAS cos(WCA) - W cos(wind - TC)
    wca = math.degrees(math.asin(20.0 * math.sin(math.radians(270.0 - tc)) / 120.0))
    gs = 120.0 * math.cos(math.radians(wca)) - 20.0 * math.cos(math.radians(270.0 - tc))
    assert r.wca == pytest.approx(wca, abs=1e-9)
    assert r.ground_speed_kn == pytest.approx(gs, abs=1e-9)
    # variation 4°W is added going from true to magnetic; deviation 2°E subtracted
    # ("correcting add east", common practice)
    assert r.magnetic_heading == pytest.approx((r.true_heading + 4.0) % 360)
    assert r.compass_heading == pytest.approx((r.magnetic_heading - 2.0) % 360)
    assert r.fuel_leg == pytest.approx(30.0 * r.ete_s / 3600.0)
    assert r.fuel_remaining == pytest.approx(100.0 - r.fuel_leg)
    rec = nav_log_records(rows)[0]
    assert rec["var"] == "4.0W" and rec["dev"] == "2.0E"
