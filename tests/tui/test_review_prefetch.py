"""The Review reconciled ahead of being shown: the app starts it a moment after it opens,
keeps the result, and Review then shows it without reconciling; Review shown while the
early reconciliation runs waits for it rather than reconciling the voyage a second time."""

from __future__ import annotations

import threading
from datetime import datetime, timedelta, timezone

from passagelog.model import Fix
from passagelog.tui.app import PassagelogApp

from .conftest import fixed_clock
from .test_watch import NM, point_off_leg


def _add_track(logbook_path):
    from passagelog.tui.session import Session

    s = Session(logbook_path, clock=fixed_clock)
    t = datetime(2026, 5, 1, 6, 0, tzinfo=timezone.utc)
    for h in range(8):
        lat, lon = point_off_leg(s.route, 1, (2 + 12 * h) * NM, 0.3 * NM)
        s.add_fix(Fix(t + timedelta(hours=h), lat, lon))
    return s


async def _wait(pilot, done, tries=400):
    for _ in range(tries):
        if done():
            return True
        await pilot.pause(0.05)
    return done()


async def test_the_review_is_reconciled_ahead_and_shown_at_once(logbook_path):
    from passagelog.store import derived
    from passagelog.tui import review_data as rd
    from passagelog.tui.session import Session

    s = _add_track(logbook_path)
    app = PassagelogApp(session=Session(logbook_path, clock=fixed_clock), watch_poll_s=5.0,
                        prefetch_review_s=0.05)
    async with app.run_test(size=(100, 30)) as pilot:
        def kept_current():
            kept = derived.read_result(s.logbook, s.voyage.voyage_id, rd.KIND)
            return kept is not None and kept.stamp == rd.current_key(s)

        assert await _wait(pilot, kept_current)
        assert not app.query("#review-view")  # nothing mounted: the view was never shown
        await pilot.press("f5")
        view = app.query_one("#review-view")
        assert await _wait(pilot, lambda: view.computed)
        assert view.reconciled == 0  # shown from what was kept, not reconciled again
        assert "8 fixes" in str(view.query_one("#review-head").render())


async def test_review_shown_during_the_early_reconciliation_waits_for_it(logbook_path,
                                                                          monkeypatch):
    from passagelog.tui import review_data as rd
    from passagelog.tui.session import Session

    _add_track(logbook_path)
    calls = []
    release = threading.Event()
    real = rd.reconcile_apart

    def slow(session):
        calls.append(threading.current_thread().name)
        release.wait(10)
        return real(session)

    monkeypatch.setattr(rd, "reconcile_apart", slow)
    app = PassagelogApp(session=Session(logbook_path, clock=fixed_clock), watch_poll_s=5.0,
                        prefetch_review_s=0.01)
    async with app.run_test(size=(100, 30)) as pilot:
        assert await _wait(pilot, lambda: calls)  # the early one is running
        await pilot.press("f5")
        view = app.query_one("#review-view")
        await pilot.pause(0.3)
        assert "Reconciling" in str(view.query_one("#review-head").render())
        release.set()
        assert await _wait(pilot, lambda: view.computed)
        assert len(calls) == 1 and view.reconciled == 0
        assert "8 fixes" in str(view.query_one("#review-head").render())


async def test_quitting_does_not_wait_for_a_reconciliation_still_running(logbook_path,
                                                                         monkeypatch):
    import time

    from passagelog.tui import apart
    from passagelog.tui import review_data as rd
    from passagelog.tui.session import Session

    _add_track(logbook_path)
    # a reconciliation that would take half a minute in its own process
    monkeypatch.setattr(rd, "reconcile_apart", lambda session: apart.call_apart(time.sleep,
                                                                                30.0))
    app = PassagelogApp(session=Session(logbook_path, clock=fixed_clock), watch_poll_s=5.0,
                        prefetch_review_s=0.01)
    t0 = None
    async with app.run_test(size=(100, 30)) as pilot:
        assert await _wait(pilot, lambda: apart._running)
        t0 = time.perf_counter()
        await pilot.press("ctrl+q")
    for _ in range(500):  # the worker thread sees its process gone (killed on quitting)
        if not apart._running:
            break
        time.sleep(0.01)
    assert time.perf_counter() - t0 < 10.0 and not apart._running
