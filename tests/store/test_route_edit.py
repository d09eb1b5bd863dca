"""Plan editing on Route: add, insert, move, delete, set a leg, reverse, copy."""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from passagelog.errors import InputError
from passagelog.model import LegPlan, Route, ScheduleItem, Waypoint

from datetime import datetime, timezone

T = datetime(2026, 3, 1, tzinfo=timezone.utc)


def _route() -> Route:
    wps = tuple(Waypoint(f"W{i}", 50.0 + i / 10, -1.0 - i / 10, arrival_radius_m=100.0 * i)
                for i in range(4))
    legs = (LegPlan("rhumb", 10, 100, 200, 300, "a"),
            LegPlan("great-circle", 11, 110, 210, 310, "b"),
            LegPlan("rhumb", 12, 120, 220, 320, "c"))
    return Route("R", wps, legs, (ScheduleItem(2, eta_utc=T),), revision=4, note="old")


def test_insert_splits_a_leg_and_shifts_the_schedule():
    r = _route().insert_waypoint(2, Waypoint("X", 50.15, -1.15))
    assert [w.name for w in r.waypoints] == ["W0", "W1", "X", "W2", "W3"]
    assert [leg.notes for leg in r.legs] == ["a", "b", "b", "c"]
    assert r.schedule[0].waypoint_index == 3
    assert (r.revision, r.note) == (None, "")


def test_insert_with_own_leg_and_at_the_ends():
    own = LegPlan("great-circle", 9)
    r = _route().insert_waypoint(1, Waypoint("X", 50.05, -1.05), own)
    assert r.legs[0] == own and r.legs[1].notes == "a"
    start = _route().insert_waypoint(0, Waypoint("S", 49.9, -0.9))
    assert start.waypoints[0].name == "S" and [x.notes for x in start.legs] == ["a", "a", "b",
                                                                                 "c"]
    end = _route().add_waypoint(Waypoint("E", 50.5, -1.5))
    assert end.waypoints[-1].name == "E" and [x.notes for x in end.legs] == ["a", "b", "c", "c"]


def test_delete_inner_keeps_the_leg_after_and_drops_its_schedule():
    r = _route().delete_waypoint(2)
    assert [w.name for w in r.waypoints] == ["W0", "W1", "W3"]
    assert [leg.notes for leg in r.legs] == ["a", "c"]
    assert r.schedule == ()
    assert [x.notes for x in _route().delete_waypoint(0).legs] == ["b", "c"]
    assert [x.notes for x in _route().delete_waypoint(3).legs] == ["a", "b"]


def test_delete_refuses_to_leave_one_waypoint():
    two = Route("T", (Waypoint("A", 0, 0), Waypoint("B", 1, 1)))
    with pytest.raises(InputError, match="has only 2 waypoints"):
        two.delete_waypoint(0)


def test_move_keeps_name_radius_and_legs():
    r = _route().move_waypoint(1, 50.2, -1.3)
    assert r.waypoints[1] == Waypoint("W1", 50.2, -1.3, arrival_radius_m=100.0)
    assert r.legs == _route().legs
    with pytest.raises(InputError, match="waypoint number 9 does not exist; it has waypoints 1"
                                         " to 4"):
        _route().move_waypoint(8, 0, 0)


def test_set_leg():
    r = _route().set_leg(1, sailing="rhumb", xtl_port_m=50.0)
    assert r.legs[1] == LegPlan("rhumb", 11, 50.0, 210, 310, "b")
    with pytest.raises(InputError, match="leg 4 does not exist"):
        _route().set_leg(3, speed_kn=1)
    with pytest.raises(InputError, match="sailing 'orthodrome' is not one of"):
        _route().set_leg(0, sailing="orthodrome")


def test_reverse_swaps_sides_and_keeps_turns_with_their_waypoints():
    r = _route().reversed()
    assert [w.name for w in r.waypoints] == ["W3", "W2", "W1", "W0"]
    # the segment W3->W2 is the old leg c sailed the other way: port and starboard swap
    # (port is the left of the direction of travel)
    assert [(x.notes, x.xtl_port_m, x.xtl_stbd_m) for x in r.legs] == [
        ("c", 220, 120), ("b", 210, 110), ("a", 200, 100)]
    # turn radius at W2 was 310 (end of old leg b), at W1 300; W0 has no turn
    assert [x.turn_radius_m for x in r.legs] == [310, 300, None]
    assert r.schedule == ()


def test_copy():
    c = _route().copy("R2")
    assert c.name == "R2" and c.waypoints == _route().waypoints and c.revision is None
    with pytest.raises(InputError):
        _route().copy(" ")


lat = st.floats(-89, 89, allow_nan=False)
lon = st.floats(-179, 179, allow_nan=False)


@st.composite
def routes(draw):
    n = draw(st.integers(2, 6))
    wps = tuple(Waypoint(f"W{i}", draw(lat), draw(lon)) for i in range(n))
    legs = tuple(LegPlan(draw(st.sampled_from(("rhumb", "great-circle"))),
                         draw(st.none() | st.floats(0, 30)), draw(st.none() | st.floats(0, 999)),
                         draw(st.none() | st.floats(0, 999)), draw(st.none() | st.floats(0, 99)),
                         f"leg {i}") for i in range(n - 1))
    sched = tuple(ScheduleItem(i, eta_utc=T) for i in draw(st.sets(st.integers(0, n - 1))))
    return Route("R", wps, legs, sched)


@settings(max_examples=60, deadline=None)
@given(r=routes(), data=st.data())
def test_insert_then_delete_is_the_identity(r, data):
    k = data.draw(st.integers(0, len(r.waypoints)))
    assert r.insert_waypoint(k, Waypoint("N", 0.5, 0.5)).delete_waypoint(k) == r


@settings(max_examples=60, deadline=None)
@given(r=routes())
def test_reverse_twice_gives_back_all_but_the_last_turn_and_the_schedule(r):
    back = r.reversed().reversed()
    expected = r.set_leg(len(r.legs) - 1, turn_radius_m=None).with_changes(schedule=())
    assert back == expected
