"""Watch: the latest fix against the plan, live, with alerts (real temp-file logbook)."""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

import pytest

from passagelog.model import Fix
from passagelog.nav.geodesic import direct
from passagelog.nav.legs import make_leg
from passagelog.tui.xte_bar import bar_text

pytest.importorskip("passagelog.review.status")

NM = 1852.0


def point_off_leg(route, k, along_m, xte_m):
    """A position ``xte_m`` to the right (+) of leg k (1-based) at ``along_m``: the foot on
    the geodesic, then the geodesic direct problem at right angles (geographiclib)."""
    a, b = route.waypoints[k - 1], route.waypoints[k]
    leg = make_leg(a.lat, a.lon, b.lat, b.lon, "great-circle")
    lat, lon = leg.point_at(along_m)
    _s, course, _ = __import__("passagelog.nav.geodesic", fromlist=["inverse"]).inverse(
        lat, lon, b.lat, b.lon)
    plat, plon, _ = direct(lat, lon, (course + (90.0 if xte_m >= 0 else -90.0)) % 360.0,
                           abs(xte_m))
    return plat, plon


def add_track(session, route, times_and_offsets):
    for t, k, along, xte in times_and_offsets:
        lat, lon = point_off_leg(route, k, along, xte)
        session.add_fix(Fix(t, lat, lon, sog_kn=12.0))


async def test_watch_follows_a_new_fix_and_raises_off_track(session):
    from passagelog.tui.app import PassagelogApp

    route = session.route
    t0 = datetime(2026, 5, 2, 11, 0, tzinfo=timezone.utc)
    # on leg 2 (Ushant W -> Mid): 0.30 NM to starboard, inside the 2 NM limit
    add_track(session, route, [(t0 - timedelta(hours=30), 1, 10 * NM, 0.0),
                               (t0 - timedelta(minutes=30), 2, 100 * NM, 0.1 * NM),
                               (t0, 2, 106 * NM, 0.3 * NM)])
    app = PassagelogApp(session=session, watch_poll_s=0.1)
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.press("f4")
        watch = app.query_one("#watch-view")
        for _ in range(50):
            await pilot.pause(0.05)
            if watch.state is not None and watch.state.status is not None:
                break
        st = watch.state.status
        assert st.leg == 2 and st.to_wp == "Mid"
        assert st.xte_m == pytest.approx(0.3 * NM, abs=0.01)  # built at 0.30 NM right
        xte_line = str(app.query_one("#watch-xte").render())
        assert "0.30 NM R (starboard), inside the 2.00 NM limit" in xte_line
        assert not [a for a in watch.current_alerts() if a.kind == "off-track"]
        # a fix written by another connection (as the feed does) shows on the next poll
        from passagelog.store import Logbook

        other = Logbook.open(session.db_path)
        lat, lon = point_off_leg(route, 2, 112 * NM, -2.5 * NM)
        other.add_fix(session.voyage.voyage_id, Fix(t0 + timedelta(minutes=30), lat, lon))
        other.close()
        seen = watch.updates
        for _ in range(50):
            await pilot.pause(0.05)
            if watch.updates > seen and watch.state.status.time_s > t0.timestamp():
                break
        st = watch.state.status
        assert st.xte_m == pytest.approx(-2.5 * NM, abs=0.01)
        kinds = {a.kind for a in watch.current_alerts()}
        assert "off-track" in kinds
        assert "2.50 NM port" in str(app.query_one("#watch-alerts").render())


def test_xte_bar_marks_the_side_and_the_limits():
    text = bar_text(0.0, 926.0, 1852.0, 40).plain
    assert text.startswith("P 0.50 ") and text.endswith(" 1.00 S")
    centre = bar_text(0.0, 1852.0, 1852.0, 41).plain
    right = bar_text(926.0, 1852.0, 1852.0, 41).plain
    left = bar_text(-926.0, 1852.0, 1852.0, 41).plain
    assert left.index("◆") < centre.index("◆") < right.index("◆")
    assert bar_text(None, None, None, 30).plain.count("◆") == 0


def test_the_quick_tail_watch_equals_the_whole_track_watch(sample_plan):
    """Above ``exact_max_fixes`` the watch reconciles only the last hours against the plan
    from the leg it finds the craft on; it must give the same figures as the engine over
    the whole track (the engine's own watch, exact by construction)."""
    from dataclasses import asdict

    from passagelog.tui.watch_state import WatchSettings, compute_watch

    route = sample_plan
    fixes = []
    t0 = datetime(2026, 5, 1, 6, 0, tzinfo=timezone.utc)
    # 12 kn along legs 1 and 2 with a slow weave of up to 0.6 NM, a fix every 10 minutes
    import math

    step = 2 * NM
    along, k, t = 0.0, 1, t0
    while k <= 2:
        a, b = route.waypoints[k - 1], route.waypoints[k]
        length = make_leg(a.lat, a.lon, b.lat, b.lon, "great-circle").distance_m
        if along > length:
            along -= length
            k += 1
            continue
        lat, lon = point_off_leg(route, k, along, 0.6 * NM * math.sin(len(fixes) / 9.0))
        fixes.append(Fix(t, lat, lon, sog_kn=12.0))
        along += step
        t += timedelta(minutes=10)
    planned = t0 - timedelta(hours=2)  # two hours late away: the schedule counts from this
    exact = compute_watch(route, fixes, settings=WatchSettings(exact_max_fixes=10**9),
                          planned_departure_utc=planned)
    quick = compute_watch(route, fixes, settings=WatchSettings(exact_max_fixes=10,
                                                               tail_s=6 * 3600.0),
                          planned_departure_utc=planned)
    assert exact.status.delay_s > 3600.0
    assert quick.extra["tail_from_leg"] == 2  # it did take the quick path, from leg 2
    e, q = asdict(exact.status), asdict(quick.status)
    for key in e:
        if isinstance(e[key], float):
            assert q[key] == pytest.approx(e[key], rel=1e-9, abs=1e-6), key
        else:
            assert q[key] == e[key], key


def _weave_track(route, t0, minutes=10, legs=2, amplitude_nm=0.6):
    """12 kn along the first ``legs`` legs with a slow weave, a fix every ``minutes``."""
    import math

    fixes, along, k, t = [], 0.0, 1, t0
    step = 12.0 * NM * minutes / 60.0
    while k <= legs:
        a, b = route.waypoints[k - 1], route.waypoints[k]
        length = make_leg(a.lat, a.lon, b.lat, b.lon, "great-circle").distance_m
        if along > length:
            along -= length
            k += 1
            continue
        lat, lon = point_off_leg(route, k, along, amplitude_nm * NM * math.sin(len(fixes) / 9.0))
        fixes.append(Fix(t, lat, lon, sog_kn=12.0))
        along += step
        t += timedelta(minutes=minutes)
    return fixes


def test_a_long_voyage_reads_only_its_recent_fixes(session, monkeypatch):
    """Above ``exact_max_fixes`` fix records the watch reads only the last hours from the
    logbook (never the whole voyage) and still gives the figures of the engine over the
    whole track; an original that a correction superseded is left out."""
    from dataclasses import asdict

    from passagelog.tui.watch_state import WatchSettings, compute_watch, read_watch

    route = session.route
    t0 = datetime(2026, 5, 1, 6, 0, tzinfo=timezone.utc)
    track = _weave_track(route, t0)
    session.logbook.add_fixes(session.voyage.voyage_id, track)
    # the fix an hour before the last is corrected 0.4 NM to starboard
    stored = session.fixes()
    old = stored[-7]
    lat, lon, _ = direct(old.lat, old.lon, 90.0, 0.4 * NM)
    session.correct_fix(old.fix_id, Fix(old.time_utc, lat, lon, sog_kn=12.0), "typo")
    current = session.fixes()
    exact = compute_watch(route, current, zd_minutes=session.zd_minutes,
                          settings=WatchSettings(exact_max_fixes=10**9),
                          planned_departure_utc=session.voyage.departure_utc)

    def whole_voyage(*_a, **_k):
        raise AssertionError("the whole voyage was read")

    monkeypatch.setattr(type(session), "fix_arrays", whole_voyage)
    monkeypatch.setattr(type(session), "fixes", whole_voyage)
    quick = read_watch(session, WatchSettings(exact_max_fixes=10))
    assert quick.extra["tail_from_leg"] == 2  # the quick path, from leg 2
    assert quick.fixes_used < len(current) and quick.fixes_total == len(current) + 1
    e, q = asdict(exact.status), asdict(quick.status)
    for key in e:
        if isinstance(e[key], float):
            assert q[key] == pytest.approx(e[key], rel=1e-9, abs=1e-6), key
        else:
            assert q[key] == e[key], key


def test_the_leg_search_finds_what_trying_every_leg_finds():
    """_leg_at solves only the legs that can be nearest (a triangle-inequality bound);
    it must pick the leg that trying every leg picks, on great-circle and rhumb legs,
    for positions alongside, past the ends and far off."""
    import math
    import random

    from passagelog.model import LegPlan, Route, Waypoint
    from passagelog.tui.watch_state import _leg_at

    wps = (Waypoint("A", 50.0, -5.0), Waypoint("B", 48.0, -9.0), Waypoint("C", 47.0, -15.0),
           Waypoint("D", 44.0, -16.0), Waypoint("E", 44.5, -22.0), Waypoint("F", 43.0, -23.0))
    sailings = ("rhumb", "great-circle", "rhumb", "great-circle", "rhumb")
    route = Route("zigzag", wps, tuple(LegPlan(s, 10.0) for s in sailings))

    def every_leg(lat, lon):
        best, best_xte = None, math.inf
        for k, plan in enumerate(route.legs):
            a, b = wps[k], wps[k + 1]
            leg = make_leg(a.lat, a.lon, b.lat, b.lon, plan.sailing)
            xte, along = leg.offset(lat, lon)
            if -NM <= along <= leg.distance_m + NM and abs(xte) < best_xte:
                best, best_xte = k, abs(xte)
        if best is not None:
            return best
        from passagelog.nav.geodesic import inverse

        dists = [inverse(lat, lon, w.lat, w.lon)[0] for w in wps[1:]]
        return dists.index(min(dists))

    rng = random.Random(6)
    for _ in range(150):
        lat, lon = rng.uniform(42.0, 51.0), rng.uniform(-24.0, -4.0)
        assert _leg_at(route, lat, lon) == every_leg(lat, lon), (lat, lon)
    for w in wps[1:-1]:  # at the turns, where two legs meet
        assert _leg_at(route, w.lat, w.lon) == every_leg(w.lat, w.lon)


async def test_ship_time_follows_the_clock_changes(session):
    """The Watch shows ship's time in the zone in force at the fix: the voyage's ZD (-1
    here, +60 min) changed by clock-change log entries (ZT = UTC - ZD)."""
    from passagelog.model import LogEntry
    from passagelog.tui.app import PassagelogApp

    route = session.route
    t0 = datetime(2026, 5, 2, 11, 0, tzinfo=timezone.utc)
    add_track(session, route, [(t0 - timedelta(hours=1), 2, 94 * NM, 0.0),
                               (t0, 2, 106 * NM, 0.0)])
    session.add_entry(LogEntry(t0 - timedelta(hours=3), "clock-change", "retarded",
                               zd_minutes=120))
    app = PassagelogApp(session=session, watch_poll_s=0.1)
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.press("f4")
        watch = app.query_one("#watch-view")
        for _ in range(50):
            await pilot.pause(0.05)
            if watch.state is not None and watch.state.status is not None:
                break
        assert watch.state.zd_minutes == 120
        head = str(app.query_one("#watch-head").render())
        assert "02 11:00Z" in head and "ship 02 09:00 (+2)" in head  # 11:00 UTC - 2 h


def _render(renderable, width=100) -> str:
    from io import StringIO

    from rich.console import Console

    out = StringIO()
    Console(file=out, width=width, color_system=None).print(renderable)
    return out.getvalue()


def test_an_arrived_voyage_shows_its_arrival_not_etas(sample_plan):
    """Past the destination the Watch says when the craft arrived and how that stood
    against the plan, instead of ETAs and a time to go that no longer mean anything."""
    from passagelog.tui.watch_state import compute_watch
    from passagelog.tui.watch_view import figures_grid

    route = sample_plan
    a, b = route.waypoints[2], route.waypoints[3]
    length = make_leg(a.lat, a.lon, b.lat, b.lon, "great-circle").distance_m
    t0 = datetime(2026, 5, 5, 6, 0, tzinfo=timezone.utc)
    fixes = []
    for i, along in enumerate((length - 22 * NM, length - 11 * NM, length + 0.5 * NM)):
        lat, lon = point_off_leg(route, 3, along, 0.0)
        fixes.append(Fix(t0 + timedelta(hours=i), lat, lon, sog_kn=11.0))
    state = compute_watch(route, fixes,
                          planned_departure_utc=datetime(2026, 5, 1, 6, 0, tzinfo=timezone.utc))
    assert state.status.phase == "arrived"
    text = _render(figures_grid(state))
    assert "Arrived Ponta" in text
    assert state.last_passage.waypoint == 4
    assert "ETA" not in text and "TTG" not in text
    when = datetime.fromtimestamp(state.last_passage.time_s, timezone.utc)
    assert when.strftime("%d %H:%MZ") in text


def test_the_fix_age_says_when_a_fix_is_dated_ahead_of_the_clock():
    from passagelog.tui.watch_view import fix_age

    now = datetime(2026, 5, 2, 12, 0, tzinfo=timezone.utc).timestamp()
    assert fix_age(now - 45 * 60, now) == "taken 45 min ago"
    assert fix_age(now - 18, now) == "taken 18 s ago"  # not "0 min" (a feed just logged it)
    assert fix_age(now - 59.6, now) == "taken 1 min ago"
    assert fix_age(now - 7.5 * 3600, now) == "taken 7 h 30 min ago"
    assert fix_age(now + 3 * 86400 + 4 * 3600, now) == ("dated 3 d 04 h ahead of this "
                                                        "computer's clock")


def test_a_plan_revision_in_force_within_the_recent_fixes(session, monkeypatch):
    """A revision saved an hour before the latest fix (the active leg slower, with tighter
    limits, and the destination moved): the quick watch of a long voyage enters it as the engine does over
    the whole track, with the same figures, and still reads only the recent fixes."""
    import dataclasses
    from dataclasses import asdict

    from passagelog.model import LegPlan
    from passagelog.tui.session import Session
    from passagelog.tui.watch_state import WatchSettings, compute_watch, read_watch

    route = session.route
    t0 = datetime(2026, 5, 1, 6, 0, tzinfo=timezone.utc)
    track = _weave_track(route, t0)
    session.logbook.add_fixes(session.voyage.voyage_id, track)
    t_rev = track[-1].time_utc - timedelta(hours=1)
    end = route.waypoints[3]
    lat, lon, _ = direct(end.lat, end.lon, 0.0, 3 * NM)
    revised = route.with_changes(
        waypoints=route.waypoints[:3] + (dataclasses.replace(end, lat=lat, lon=lon),),
        legs=route.legs[:1] + (LegPlan("great-circle", 10.0, 926.0, 926.0, 1852.0),)
        + route.legs[2:])
    Session(session.db_path, clock=lambda: t_rev).save_revision(revised, "slower, Ponta moved")
    session.reload_route()
    assert len(session.plan_revisions) == 2
    exact = compute_watch(session.route, session.fixes(), settings=WatchSettings(
        exact_max_fixes=10**9), plan_revisions=session.plan_revisions,
        zd_minutes=session.zd_minutes, planned_departure_utc=session.voyage.departure_utc)
    assert exact.status.revision == 1 and exact.status.xtl_m == 926.0

    def whole_voyage(*_a, **_k):
        raise AssertionError("the whole voyage was read")

    monkeypatch.setattr(type(session), "fix_arrays", whole_voyage)
    quick = read_watch(session, WatchSettings(exact_max_fixes=10))
    assert quick.extra["tail_from_leg"] and quick.fixes_used < len(track)
    e, q = asdict(exact.status), asdict(quick.status)
    for key in e:
        if isinstance(e[key], float):
            assert q[key] == pytest.approx(e[key], rel=1e-9, abs=1e-6), key
        else:
            assert q[key] == e[key], key
    assert quick.xtl_port_m == exact.xtl_port_m == 926.0


async def test_the_fix_age_and_the_made_good_span_follow_the_clock(logbook_path):
    """With no new fix the age of the latest one goes on with the clock (it stayed at its
    first value before); the SMG/CMG label names the span the figure was made good over
    (30 min of fixes, not the 3 h window)."""
    from passagelog.tui.app import PassagelogApp
    from passagelog.tui.session import Session
    from passagelog.tui.watch_view import figures_grid

    now = [datetime(2026, 5, 2, 12, 0, tzinfo=timezone.utc)]
    s = Session(logbook_path, clock=lambda: now[0])
    t0 = now[0] - timedelta(minutes=5)
    add_track(s, s.route, [(t0 - timedelta(minutes=30), 2, 100 * NM, 0.1 * NM),
                           (t0, 2, 106 * NM, 0.3 * NM)])
    # (no review ahead: its write to the logbook would make the Watch read it again)
    app = PassagelogApp(session=s, watch_poll_s=0.05, prefetch_review_s=None)
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.press("f4")
        watch = app.query_one("#watch-view")
        for _ in range(100):
            await pilot.pause(0.05)
            if watch.state is not None and watch.state.status is not None:
                break
        head = app.query_one("#watch-head")
        assert "taken 5 min ago" in str(head.render())
        assert "SMG/CMG 30 min" in _render(figures_grid(watch.state))
        now[0] += timedelta(minutes=17)
        for _ in range(40):
            await pilot.pause(0.05)
            if "taken 22 min ago" in str(head.render()):
                break
        assert "taken 22 min ago" in str(head.render())
        assert "NO FIX for 22 min" in str(app.query_one("#watch-alerts").render())


def test_times_are_rounded_to_the_minute_as_the_command_line_prints_them():
    """12:59:47.8Z is 13:00Z on screen, as in 'passagelog status' (its _when rounds)."""
    from passagelog.tui import text as fmt

    t = datetime(2026, 5, 5, 12, 59, 47, 800000, tzinfo=timezone.utc)
    assert fmt.utc_time(t) == "05 13:00Z"
    assert fmt.ship_time(t, 60) == "05 12:00 (+1)"
    assert fmt.utc_time(t - timedelta(seconds=20)) == "05 12:59Z"


def test_zone_time_is_local_time_for_an_aircraft(logbook_path):
    from passagelog.model import Craft, Voyage
    from passagelog.store import Logbook
    from passagelog.tui.session import Session

    with Logbook.open(logbook_path) as book:
        plane = book.add_craft(Craft("Whimbrel", kind="aircraft"))
        book.add_voyage(Voyage("Survey flight", craft_id=plane.craft_id))
    assert Session(logbook_path, voyage="Trial passage").zone_label() == "ship"
    assert Session(logbook_path, voyage="Survey flight").zone_label() == "local"


def test_an_aircraft_is_shown_the_wind_found_a_ship_set_and_drift():
    """The DR-to-fix vector is the current for a ship (set: the direction it flows toward)
    and the wind for an aircraft, given as W/V, the direction it blows from: the
    reciprocal of the set (common practice: winds are named from where they blow, currents
    for where they go), with 360 for a wind from the north."""
    from passagelog.tui.watch_view import current_or_wind

    assert current_or_wind(70.0, 1.84, False) == ("Set/drift", "070.0° 1.8 kn")
    assert current_or_wind(70.0, 31.6, True) == ("Wind found", "250°/32 kn")
    assert current_or_wind(180.2, 12.0, True) == ("Wind found", "360°/12 kn")
    assert current_or_wind(None, 0.0, True) == ("Wind found", "calm")
    assert current_or_wind(None, None, True) == ("Wind found", "–")
