"""The Plan view's working copy: editing operations and computed columns."""

from __future__ import annotations

import math
from datetime import datetime, timezone

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from passagelog.errors import InputError
from passagelog.model import LegPlan, Route, Waypoint
from passagelog.tui import plan_rows as pr


def _route() -> Route:
    return Route(
        "test",
        (Waypoint("A", 50.0, -4.0), Waypoint("B", 45.0, -15.0, arrival_radius_m=500.0),
         Waypoint("C", 40.0, -30.0), Waypoint("D", 38.0, -40.0)),
        (LegPlan("rhumb", 12.0, 926.0, 1852.0, 500.0),
         LegPlan("great-circle", 10.0, 300.0, 400.0, 600.0),
         LegPlan("rhumb", 8.0, None, None, None)),
    )


def test_rows_round_trip_to_the_same_route():
    route = _route()
    again = pr.route_from_rows(route.name, pr.rows_from_route(route), base=route)
    assert again.waypoints == route.waypoints
    assert again.legs == route.legs


def test_reverse_keeps_each_leg_with_its_ends_and_swaps_sides():
    rows = pr.rows_from_route(_route())
    rev = pr.reverse(rows)
    assert [r.name for r in rev] == ["D", "C", "B", "A"]
    # new leg D->C is old leg C->D (row C... stored on row D): rhumb, 8 kn, no limits
    assert (rev[1].sailing, rev[1].speed_kn) == ("rhumb", 8.0)
    # new leg B->A is old leg A->B: 12 kn, port 926 and starboard 1852 swapped
    assert (rev[3].speed_kn, rev[3].xtl_port_m, rev[3].xtl_stbd_m) == (12.0, 1852.0, 926.0)
    # the turn radius stays at its waypoint: B had 500 m (end of leg A->B)
    assert rev[2].name == "B" and rev[2].turn_radius_m == 500.0
    assert rev[2].arrival_radius_m == 500.0


@settings(max_examples=50, deadline=None)
@given(st.lists(st.tuples(st.floats(-80, 80), st.floats(-179, 179),
                          st.sampled_from(["rhumb", "great-circle"]),
                          st.one_of(st.none(), st.floats(0, 5000))), min_size=2, max_size=8))
def test_reverse_twice_is_the_identity(points):
    rows = [pr.PlanRow(f"P{i}", lat, lon, sailing=s, xtl_port_m=x, turn_radius_m=x)
            for i, (lat, lon, s, x) in enumerate(points)]
    rows[0].turn_radius_m = None  # no turn at the departure point
    rows[-1].turn_radius_m = None  # nor at the destination
    twice = pr.reverse(pr.reverse(rows))
    assert [vars(r) for r in twice[1:]] == [vars(r) for r in rows[1:]]
    assert (twice[0].name, twice[0].lat, twice[0].lon) == (rows[0].name, rows[0].lat, rows[0].lon)


def test_insert_splits_the_leg_at_its_geodesic_midpoint():
    rows = pr.rows_from_route(_route())
    out = pr.insert_after(rows, 0)
    assert len(out) == 5 and out[1].name not in {"A", "B", "C", "D"}
    from geographiclib.geodesic import Geodesic

    # the new point is half way along the geodesic A-B (geographiclib's inverse as reference)
    g1 = Geodesic.WGS84.Inverse(50.0, -4.0, out[1].lat, out[1].lon)["s12"]
    g2 = Geodesic.WGS84.Inverse(out[1].lat, out[1].lon, 45.0, -15.0)["s12"]
    assert abs(g1 - g2) < 0.5  # rounded to 1e-6 degree, about 0.1 m
    assert out[1].sailing == rows[1].sailing and out[1].speed_kn == rows[1].speed_kn


def test_delete_refuses_to_leave_fewer_than_two_waypoints():
    rows = pr.rows_from_route(_route())[:2]
    with pytest.raises(InputError, match="at least 2 waypoints"):
        pr.delete(rows, 0)


def test_move_swaps_waypoints_but_not_leg_settings():
    rows = pr.rows_from_route(_route())
    out = pr.move(rows, 1, 1)
    assert [r.name for r in out] == ["A", "C", "B", "D"]
    assert out[1].speed_kn == 12.0 and out[2].speed_kn == 10.0
    assert pr.move(rows, 0, -1) == rows


def test_great_circle_figures_against_geographiclib():
    from geographiclib.geodesic import Geodesic

    rows = pr.rows_from_route(_route())
    figs = pr.compute(rows, None)
    # Karney (2013) via geographiclib, the outside reference for geodesics
    g = Geodesic.WGS84.Inverse(45.0, -15.0, 40.0, -30.0)
    assert figs[2].gc_distance_m == pytest.approx(g["s12"], abs=1e-3)
    assert figs[2].initial_course == pytest.approx(g["azi1"] % 360, abs=1e-7)
    assert figs[2].final_course == pytest.approx(g["azi2"] % 360, abs=1e-7)
    assert figs[0].eta_utc is None and figs[0].distance_m is None


def test_wheel_over_distance_is_r_tan_half_alteration():
    # A circular turn tangent to both legs starts R*tan(A/2) before the intersection
    # (elementary geometry of the inscribed circle); 90 deg at R = 1 NM -> 1 NM.
    assert pr.wheel_over_m(1852.0, 90.0) == pytest.approx(1852.0, rel=1e-12)
    assert pr.wheel_over_m(1852.0, -60.0) == pytest.approx(1852.0 / math.sqrt(3), rel=1e-12)
    assert pr.signed_alteration(350.0, 10.0) == 20.0
    assert pr.signed_alteration(10.0, 350.0) == -20.0


def test_field_parsers_name_the_field_and_the_allowed_range():
    assert pr.parse_nm("0.5", "port cross-track limit") == 926.0
    assert pr.parse_nm("  ", "turn radius") is None
    with pytest.raises(InputError, match="port cross-track limit 'x' is not a number"):
        pr.parse_nm("x", "port cross-track limit")
    with pytest.raises(InputError, match="below 0"):
        pr.parse_nm("-1", "turn radius")
    assert pr.parse_sailing("GC") == "great-circle"
    with pytest.raises(InputError, match="sailing 'loxo'"):
        pr.parse_sailing("loxo")


def test_computed_columns_against_geographiclib():
    from passagelog.nav.legs import make_leg

    try:
        make_leg(45.0, -15.0, 40.0, -30.0, "rhumb")
    except ImportError:
        pytest.skip("rhumb-line legs are not in this build yet")
    from geographiclib.geodesic import Geodesic

    rows = pr.rows_from_route(_route())
    dep = datetime(2026, 5, 1, 6, 0, tzinfo=timezone.utc)
    figs = pr.compute(rows, dep)
    # leg B->C is great circle: distance and courses from geographiclib (Karney 2013)
    g = Geodesic.WGS84.Inverse(45.0, -15.0, 40.0, -30.0)
    assert figs[2].distance_m == pytest.approx(g["s12"], abs=1e-3)
    assert figs[2].gc_distance_m == pytest.approx(g["s12"], abs=1e-3)
    assert figs[2].initial_course == pytest.approx(g["azi1"] % 360, abs=1e-7)
    # a rhumb line is never shorter than the geodesic between the same points
    assert figs[2].rhumb_distance_m >= figs[2].gc_distance_m
    # time on leg 1 at 12 kn, cumulative and ETA follow from the distances
    assert figs[1].leg_time_s == pytest.approx(figs[1].distance_m / (12 * 1852 / 3600))
    assert figs[3].cumulative_m == pytest.approx(sum(f.distance_m for f in figs[1:]))
    total_s = sum(f.leg_time_s for f in figs[1:])
    assert (figs[3].eta_utc - dep).total_seconds() == pytest.approx(total_s, abs=1e-3)
