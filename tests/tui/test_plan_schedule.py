"""The Plan view's schedule: fixed ETAs and ETDs, the times that follow from them, the speed
required to make a fixed ETA, and the schedule saved with a plan revision.

Distances come from geographiclib (Karney 2013, ``Geodesic.WGS84.Inverse``), the outside
reference; times and speeds are then plain arithmetic (time = distance / speed, speed =
distance / time, 1 NM = 1852 m, 1 kn = 1 NM/h) done here, not by the code under test.
"""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

import pytest
from geographiclib.geodesic import Geodesic

from passagelog.errors import InputError
from passagelog.tui import plan_rows as pr

from .conftest import sample_route

UTC = timezone.utc
DEP = datetime(2026, 5, 1, 6, 0, tzinfo=UTC)  # the voyage's planned departure (conftest)


def _gc_m(a, b) -> float:
    """Geodesic distance between two waypoints, by geographiclib (the reference)."""
    return Geodesic.WGS84.Inverse(a.lat, a.lon, b.lat, b.lon)["s12"]


def _legs_m():
    wps = sample_route().waypoints  # every leg of the sample plan is great circle
    return [_gc_m(wps[i], wps[i + 1]) for i in range(len(wps) - 1)]


def _hours(metres: float, kn: float) -> float:
    return metres / 1852.0 / kn


def test_without_a_schedule_the_times_run_from_the_voyage_departure():
    rows = pr.rows_from_route(sample_route())
    figs = pr.compute(rows, DEP)
    d = _legs_m()
    # 12, 12 and 11 kn planned (conftest); geographiclib distances
    want = DEP + timedelta(hours=_hours(d[0], 12) + _hours(d[1], 12) + _hours(d[2], 11))
    assert abs((figs[3].eta_utc - want).total_seconds()) < 1e-3
    assert figs[0].etd_utc == DEP and figs[0].eta_utc is None
    assert all(f.required_kn is None for f in figs)


def test_a_fixed_etd_at_row_1_is_the_planned_departure():
    rows = pr.rows_from_route(sample_route())
    rows[0].etd_utc = DEP + timedelta(hours=2)
    figs = pr.compute(rows, DEP)
    d = _legs_m()
    want = rows[0].etd_utc + timedelta(hours=_hours(d[0], 12))
    assert abs((figs[1].eta_utc - want).total_seconds()) < 1e-3


def test_legs_after_a_fixed_etd_start_from_it():
    rows = pr.rows_from_route(sample_route())
    etd = datetime(2026, 5, 2, 20, 0, tzinfo=UTC)  # a stay at Ushant W until 20:00Z
    rows[1].etd_utc = etd
    figs = pr.compute(rows, DEP)
    d = _legs_m()
    assert abs((figs[1].eta_utc - (DEP + timedelta(hours=_hours(d[0], 12)))).total_seconds()) < 1e-3
    assert figs[1].etd_utc == etd
    want2 = etd + timedelta(hours=_hours(d[1], 12))
    assert abs((figs[2].eta_utc - want2).total_seconds()) < 1e-3
    want3 = want2 + timedelta(hours=_hours(d[2], 11))
    assert abs((figs[3].eta_utc - want3).total_seconds()) < 1e-3


def test_required_speed_to_a_fixed_eta_is_distance_over_time_from_the_last_fixed_time():
    rows = pr.rows_from_route(sample_route())
    eta = datetime(2026, 5, 6, 12, 0, tzinfo=UTC)
    rows[3].eta_utc = eta
    figs = pr.compute(rows, DEP)
    d = _legs_m()
    hours = (eta - DEP).total_seconds() / 3600.0
    want_kn = sum(d) / 1852.0 / hours  # geographiclib distance / time
    assert figs[3].required_kn == pytest.approx(want_kn, rel=1e-9)
    assert figs[3].required_from == 0
    assert figs[3].eta_utc == eta  # the plan's time there is the fixed one
    # the planned-speed arrival is still shown for comparison
    planned = DEP + timedelta(hours=_hours(d[0], 12) + _hours(d[1], 12) + _hours(d[2], 11))
    assert abs((figs[3].planned_arrival_utc - planned).total_seconds()) < 1e-3
    # with a fixed ETD at Mid the required speed runs from there, over the last leg only
    rows[2].etd_utc = datetime(2026, 5, 4, 0, 0, tzinfo=UTC)
    figs = pr.compute(rows, DEP)
    hours = (eta - rows[2].etd_utc).total_seconds() / 3600.0
    assert figs[3].required_kn == pytest.approx(d[2] / 1852.0 / hours, rel=1e-9)
    assert figs[3].required_from == 2


def test_a_fixed_eta_before_the_departure_is_reported_on_its_row():
    rows = pr.rows_from_route(sample_route())
    rows[1].eta_utc = DEP - timedelta(hours=1)
    figs = pr.compute(rows, DEP)
    assert figs[1].required_kn is None
    assert "fixed ETA 01 05:00Z is not after the departure from Start" in figs[1].problem
    with pytest.raises(InputError, match=r"ETA 01 05:00Z at row 2 \(Ushant W\) is before"):
        pr.check_schedule(rows, DEP)


def test_schedule_times_typed_in_the_editor():
    ref = datetime(2026, 5, 2, 17, 12, tzinfo=UTC)
    assert pr.parse_schedule_time("  ", ref, "fixed ETA") is None
    assert pr.parse_schedule_time("2026-05-03T08:00Z", ref, "fixed ETA") == datetime(
        2026, 5, 3, 8, 0, tzinfo=UTC)
    # no zone in a UTC field means UTC; ship's time with its zone is turned into UTC
    # (ZT + ZD = UTC, NGA Pub. 9 chapter "Time")
    assert pr.parse_schedule_time("2026-05-03 08:00", ref, "x") == datetime(
        2026, 5, 3, 8, 0, tzinfo=UTC)
    assert pr.parse_schedule_time("2026-05-03T09:00 ZD-1", ref, "x") == datetime(
        2026, 5, 3, 8, 0, tzinfo=UTC)
    # day and time as the table shows them, in the month of the reference
    assert pr.parse_schedule_time("03 08:00Z", ref, "x") == datetime(2026, 5, 3, 8, 0,
                                                                       tzinfo=UTC)
    assert pr.parse_schedule_time("030800Z", ref, "x") == datetime(2026, 5, 3, 8, 0,
                                                                     tzinfo=UTC)
    with pytest.raises(InputError, match="fixed ETD 'soon' is not a time in UTC"):
        pr.parse_schedule_time("soon", ref, "fixed ETD")
    with pytest.raises(InputError, match="hours run 00-23"):
        pr.parse_schedule_time("03 25:00Z", ref, "fixed ETA")
    with pytest.raises(InputError, match="day 31 is not in 2026-04"):
        pr.parse_schedule_time("31 08:00Z", ref.replace(month=4), "fixed ETA")
    with pytest.raises(InputError, match="fixed ETA: time '2026-02-30T08:00Z' is not a valid"):
        pr.parse_schedule_time("2026-02-30T08:00Z", ref, "fixed ETA")


def test_saved_schedule_holds_fixed_and_calculated_times_and_reads_back():
    route = sample_route()
    rows = pr.rows_from_route(route)
    rows[0].etd_utc = DEP
    rows[3].eta_utc = datetime(2026, 5, 6, 12, 0, tzinfo=UTC)
    saved = pr.route_from_rows(route.name, rows, base=route, departure_utc=DEP)
    kinds = {s.waypoint_index: s.kind for s in saved.schedule}
    assert kinds == {0: "manual", 1: "calculated", 2: "calculated", 3: "manual"}
    figs = pr.compute(rows, DEP)
    calc = {s.waypoint_index: s for s in saved.schedule}
    assert calc[1].eta_utc == figs[1].eta_utc and calc[2].etd_utc == figs[2].etd_utc
    again = pr.rows_from_route(saved)
    assert [(r.eta_utc, r.etd_utc) for r in again] == [
        (None, DEP), (None, None), (None, None), (rows[3].eta_utc, None)]
    # no fixed time and no schedule before: none is written
    plain = pr.route_from_rows(route.name, pr.rows_from_route(route), base=route,
                               departure_utc=DEP)
    assert plain.schedule == ()


def test_times_follow_their_waypoint_and_are_dropped_by_reverse():
    rows = pr.rows_from_route(sample_route())
    t = datetime(2026, 5, 3, 8, 0, tzinfo=UTC)
    rows[2].eta_utc = t
    moved = pr.move(rows, 2, -1)
    assert moved[1].name == "Mid" and moved[1].eta_utc == t and moved[2].eta_utc is None
    assert pr.insert_after(rows, 1)[2].eta_utc is None
    assert pr.insert_after(rows, 2)[3].eta_utc is None  # the new row copies no times
    assert all(r.eta_utc is None and r.etd_utc is None for r in pr.reverse(rows))


async def test_schedule_edited_saved_reopened_and_reviewed(session):
    """Pilot: type a fixed ETD at row 1 and a fixed ETA at the last row, save with a note;
    a fresh reader finds them in force, and the review engine measures delays from them."""
    from passagelog.tui.app import PassagelogApp

    app = PassagelogApp(session=session, watch_poll_s=3600.0)
    etd = datetime(2026, 5, 1, 8, 0, tzinfo=UTC)  # two hours after the voyage's departure
    eta = datetime(2026, 5, 6, 12, 0, tzinfo=UTC)
    async with app.run_test(size=(80, 24)) as pilot:
        plan = app.query_one("#plan-view")
        for _ in range(50):
            await pilot.pause(0.02)
            if app.focused is app.query_one("#plan-table"):
                break
        app.query_one("#plan-etd").focus()
        await pilot.press(*"01 0800Z")
        assert plan.rows[0].etd_utc == etd
        assert "ETD 01 08:00Z*" in str(app.query_one("#plan-head").render())
        app.query_one("#plan-table").move_cursor(row=3)
        await pilot.pause()
        app.query_one("#plan-table").focus()
        await pilot.press("ctrl+t")  # to the selected row's fixed ETA
        field = app.query_one("#plan-eta")
        assert app.focused is field
        await pilot.press(*"06 12:0")
        await pilot.press("x")
        assert field.has_class("-bad")
        assert "fixed ETA '06 12:0x' is not a time in UTC" in str(
            app.query_one("#plan-message").render())
        await pilot.press("backspace", "0")
        assert plan.rows[3].eta_utc == eta
        assert "makes the fixed ETA 06 12:00Z*" in str(app.query_one("#plan-message").render())
        table = app.query_one("#plan-table")
        req = table.get_cell("3", "req")
        d = _legs_m()
        assert req == f"{sum(d) / 1852.0 / ((eta - etd).total_seconds() / 3600.0):.1f}"
        assert table.get_cell("3", "eta") == "06 12:00Z*"
        await pilot.press("ctrl+s")
        await pilot.pause()
        await pilot.press(*"fixed ETD and pilot ETA", "enter")
        await app.workers.wait_for_complete()
        await pilot.pause()
        assert [(r.eta_utc, r.etd_utc) for r in plan.rows][0] == (None, etd)
    from passagelog.tui.session import Session

    again = Session(session.db_path)
    route = again.route
    assert route.revision == 2
    manual = {s.waypoint_index: s for s in route.schedule if s.kind == "manual"}
    assert manual[0].etd_utc == etd and manual[3].eta_utc == eta

    # fixes along leg 1 at 10 kn from the fixed ETD (plan: 12 kn): the engine's delay
    # there is the fix time minus (ETD + distance run / 12 kn), straight arithmetic on the
    # geodesic distance (geographiclib Direct places the fixes on the leg)
    from passagelog.model import Fix
    from passagelog.review import reconcile

    a, b = route.waypoints[0], route.waypoints[1]
    line = Geodesic.WGS84.InverseLine(a.lat, a.lon, b.lat, b.lon)
    fixes = []
    for h in range(1, 6):
        run_m = 10.0 * 1852.0 * h
        p = line.Position(run_m)
        fixes.append(Fix(etd + timedelta(hours=h), p["lat2"], p["lon2"], sog_kn=10.0))
    review = reconcile(route, fixes, departure_utc=etd,
                       planned_departure_utc=DEP)  # the route's own schedule wins
    delays = list(review.fixes.delay_s)
    for h, got in zip(range(1, 6), delays):
        run_m = 10.0 * 1852.0 * h
        want = h * 3600.0 - run_m / (12.0 * 1852.0 / 3600.0)
        assert got == pytest.approx(want, abs=2.0), h


def test_no_etd_at_the_destination_and_no_eta_at_the_departure_point():
    """Nothing departs from the last waypoint and nothing arrives at the first: a time
    there is dropped when a plan is read, ignored by the figures, not saved, and dropped
    when a delete or a move makes a waypoint the first or the last (issue 6)."""
    from dataclasses import replace

    from passagelog.model import ScheduleItem

    t = datetime(2026, 5, 6, 12, 0, tzinfo=UTC)
    route = replace(sample_route(), schedule=[
        ScheduleItem(0, t - timedelta(days=5), DEP, "manual", ""),
        ScheduleItem(3, t, t + timedelta(hours=2), "manual", "")])
    rows = pr.rows_from_route(route)
    assert [(r.eta_utc, r.etd_utc) for r in (rows[0], rows[3])] == [(None, DEP), (t, None)]
    # an ETD put on the last row all the same changes no figure and is not saved
    plain = pr.compute(rows, DEP)
    rows[3].etd_utc = t - timedelta(hours=1)  # before its ETA: no complaint either
    figs = pr.compute(rows, DEP)
    assert figs == plain and figs[3].problem == ""
    saved = pr.route_from_rows(route.name, rows, base=route, departure_utc=DEP)
    assert [s.etd_utc for s in saved.schedule if s.waypoint_index == 3] == [None]
    # a stay at Mid (ETA and ETD): Mid becomes the destination when Ponta is deleted
    rows = pr.rows_from_route(sample_route())
    rows[2].eta_utc, rows[2].etd_utc = t - timedelta(days=1), t
    left = pr.delete(rows, 3)
    assert (left[2].eta_utc, left[2].etd_utc) == (t - timedelta(days=1), None)
    moved = pr.move(rows, 2, 1)  # Mid moved to the end
    assert moved[3].name == "Mid" and moved[3].etd_utc is None
    assert moved[3].eta_utc == t - timedelta(days=1)
    # and Ushant W, with an ETA, becomes the departure point when Start is deleted
    rows[1].eta_utc = t - timedelta(days=3)
    assert pr.delete(rows, 0)[0].eta_utc is None
    assert rows[2].etd_utc == t and rows[1].eta_utc is not None  # the input is not changed


async def test_the_end_times_are_blank_and_not_editable(session):
    """Pilot: at row 1 the ETA field and at the last row the ETD field are disabled and
    empty; in the table the last row shows no ETD; Ctrl+T at the last row goes to its ETA."""
    from passagelog.tui.app import PassagelogApp

    app = PassagelogApp(session=session, watch_poll_s=3600.0)
    async with app.run_test(size=(100, 30)) as pilot:
        table = app.query_one("#plan-table")
        for _ in range(50):
            await pilot.pause(0.02)
            if app.focused is table:
                break
        eta, etd = app.query_one("#plan-eta"), app.query_one("#plan-etd")
        assert eta.disabled and not etd.disabled and eta.value == ""
        table.move_cursor(row=3)
        await pilot.pause()
        assert etd.disabled and not eta.disabled and etd.value == ""
        assert table.get_cell("3", "etd") == ""
        assert "the destination (no ETD" in str(app.query_one("#plan-message").render())
        table.focus()
        await pilot.press("ctrl+t")
        assert app.focused is eta
        table.move_cursor(row=2)
        await pilot.pause()
        assert not etd.disabled and not eta.disabled


async def test_ship_times_follow_the_clock_changes_logged(session):
    """Pilot: the voyage keeps ZD +1 (conftest) until a clock change to ZD 0 logged at
    18:00Z on the 1st; ETAs before it show ship's time at +1, those after it at 0, and the
    head names the zone at departure and now. ZT = UTC - ZD (REFERENCE.md, Zone time);
    leg times from geographiclib distances as above."""
    from passagelog.model import LogEntry
    from passagelog.tui.app import PassagelogApp

    session.add_entry(LogEntry(datetime(2026, 5, 1, 18, 0, tzinfo=UTC), "clock-change",
                               "clocks back one hour", zd_minutes=0))
    d = _legs_m()
    eta1 = DEP + timedelta(hours=_hours(d[0], 12))
    eta2 = eta1 + timedelta(hours=_hours(d[1], 12))
    assert eta1 < datetime(2026, 5, 1, 18, 0, tzinfo=UTC) < eta2
    app = PassagelogApp(session=session, watch_poll_s=3600.0)
    async with app.run_test(size=(100, 30)) as pilot:
        table = app.query_one("#plan-table")
        for _ in range(50):
            await pilot.pause(0.02)
            if table.row_count == 4:
                break
        assert table.get_cell("0", "etz") == "01 05:00 (+1)"  # the ETD: 06:00Z at +1
        def minute(t):  # to the nearest minute, as the view shows times
            return datetime.fromtimestamp(round(t.timestamp() / 60) * 60, UTC)

        zt1 = minute(eta1) - timedelta(hours=1)
        assert table.get_cell("1", "etz") == zt1.strftime("%d %H:%M") + " (+1)"
        assert table.get_cell("2", "etz") == minute(eta2).strftime("%d %H:%M") + " (0)"
        head = str(app.query_one("#plan-head").render())
        assert "ZD +1 at departure, 0 now" in head


def test_the_plan_head_names_the_schedule_shown_when_a_route_carries_several():
    from dataclasses import replace

    from passagelog.model import ScheduleItem

    route = sample_route()
    assert pr.other_schedules_note(route) == ""
    t = DEP + timedelta(hours=30)
    two = replace(route, schedule=(ScheduleItem(3, eta_utc=t, schedule_name="Base"),
                                   ScheduleItem(3, eta_utc=t + timedelta(hours=2),
                                                schedule_name="Late tide")))
    note = pr.other_schedules_note(two)
    assert note.startswith(f"schedule {two.main_schedule_name()} (1 of 2;")
    assert "kept as imported" in note
