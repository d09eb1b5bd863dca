"""The TUI's door to a real temp-file logbook."""

from __future__ import annotations

from datetime import datetime, timezone

from passagelog.model import Fix


def test_session_opens_the_latest_voyage_and_its_plan(session):
    assert session.voyage.name == "Trial passage"
    assert [w.name for w in session.route.waypoints][-1] == "Ponta"
    assert session.zd_minutes == 60


def test_save_revision_puts_the_new_route_in_force(session):
    new = session.route.with_changes(waypoints=session.route.waypoints[:3],
                                     legs=session.route.legs[:2])
    route = session.save_revision(new, "shortened to Mid")
    assert route.revision == 2 and len(route.waypoints) == 3
    assert len(session.plan_revisions) == 2


def test_change_counter_moves_when_a_fix_is_added(session):
    before = session.change_counter()
    session.add_fix(Fix(datetime(2026, 5, 1, 7, 0, tzinfo=timezone.utc), 49.5, -6.0))
    assert session.change_counter() != before
    assert len(session.fix_arrays()) == 1
