"""Snapshots of the main views at 100x30 and 80x24 (pytest-textual-snapshot).

Deterministic: a fixed clock, a fixed voyage and fixed fixes, no animations. Regenerate
with ``python -m pytest tests/tui/test_snapshots.py --snapshot-update`` after a deliberate
change of look (or a Textual upgrade), and look at the SVGs before committing them.
"""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

import pytest

from passagelog.model import Fix

pytest.importorskip("passagelog.review.engine")

NM = 1852.0
SIZES = [(100, 30), (80, 24)]


@pytest.fixture
def voyage_session(session):
    from passagelog.nav.geodesic import direct, inverse
    from passagelog.nav.legs import make_leg

    route = session.route
    a, b = route.waypoints[1], route.waypoints[2]
    leg = make_leg(a.lat, a.lon, b.lat, b.lon, "great-circle")
    t = datetime(2026, 5, 2, 2, 0, tzinfo=timezone.utc)
    for h in range(10):
        xte = 2.5 * NM if 3 <= h <= 5 else 0.2 * NM
        lat, lon = leg.point_at((10 + 12 * h) * NM)
        _s, course, _ = inverse(lat, lon, b.lat, b.lon)
        lat, lon, _ = direct(lat, lon, (course + 90.0) % 360.0, xte)
        session.add_fix(Fix(t + timedelta(hours=h), lat, lon, sog_kn=12.0))
    return session


def make_app(session):
    from passagelog.tui.app import PassagelogApp

    app = PassagelogApp(session=session, watch_poll_s=3600.0)
    app.animation_level = "none"
    return app


async def settle(pilot, view_id: str | None = None, attr: str | None = None):
    app = pilot.app
    for _ in range(200):
        await pilot.pause(0.02)
        if view_id is None:
            break
        view = app.query_one(view_id)
        if getattr(view, attr):
            break
    await app.workers.wait_for_complete()
    await pilot.pause()
    # then until two screens a moment apart are the same: a DataTable sizes its columns when
    # its message queue is idle, which a loaded machine can put after the first paint (a
    # half-sized table was once caught that way)
    before = app.export_screenshot()
    for _ in range(100):
        await pilot.pause(0.05)
        now = app.export_screenshot()
        if now == before:
            break
        before = now


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
def test_plan_view(snap_compare, voyage_session, size):
    async def before(pilot):
        await settle(pilot)
        await pilot.press("down")
        await settle(pilot)
        assert len(pilot.app.query_one("#plan-view").rows) == 4

    assert snap_compare(make_app(voyage_session), terminal_size=size, run_before=before)


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
def test_watch_view(snap_compare, voyage_session, size):
    async def before(pilot):
        await pilot.pause()
        await pilot.press("f4")
        await settle(pilot, "#watch-view", "state")
        assert pilot.app.query_one("#views").active == "watch"

    assert snap_compare(make_app(voyage_session), terminal_size=size, run_before=before)


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
def test_log_view(snap_compare, voyage_session, size):
    async def before(pilot):
        await pilot.pause()
        await pilot.press("f3")
        await settle(pilot, "#log-view", "shown")

    assert snap_compare(make_app(voyage_session), terminal_size=size, run_before=before)


@pytest.mark.parametrize("size", SIZES, ids=lambda s: f"{s[0]}x{s[1]}")
def test_review_view(snap_compare, voyage_session, size):
    async def before(pilot):
        await pilot.pause()
        await pilot.press("f5")
        await settle(pilot, "#review-view", "computed")

    assert snap_compare(make_app(voyage_session), terminal_size=size, run_before=before)
