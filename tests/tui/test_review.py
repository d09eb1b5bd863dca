"""Review: open it on a voyage with a known excursion outside the limit."""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

import pytest

from passagelog.model import Fix
from passagelog.tui.app import PassagelogApp

pytest.importorskip("passagelog.review.engine")

NM = 1852.0


def point_off_leg(route, k, along_m, xte_m):
    """``xte_m`` right (+) of leg k at ``along_m``: the foot on the geodesic, then the
    geodesic direct problem at right angles to it (geographiclib)."""
    from passagelog.nav.geodesic import direct, inverse
    from passagelog.nav.legs import make_leg

    a, b = route.waypoints[k - 1], route.waypoints[k]
    lat, lon = make_leg(a.lat, a.lon, b.lat, b.lon, "great-circle").point_at(along_m)
    _s, course, _ = inverse(lat, lon, b.lat, b.lon)
    return direct(lat, lon, (course + (90.0 if xte_m >= 0 else -90.0)) % 360.0, abs(xte_m))[:2]


async def test_review_shows_the_excursion_and_the_plots(session):
    route = session.route
    t = datetime(2026, 5, 1, 6, 0, tzinfo=timezone.utc)
    # leg 2 at 12 kn (12 NM an hour): hours 0-9 inside, 3-5 at 2.5 NM starboard (limit 2 NM)
    for h in range(10):
        xte = 2.5 * NM if 3 <= h <= 5 else 0.2 * NM
        lat, lon = point_off_leg(route, 2, (10 + 12 * h) * NM, xte)
        session.add_fix(Fix(t + timedelta(hours=h), lat, lon))
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.press("f5")
        view = app.query_one("#review-view")
        for _ in range(100):
            await pilot.pause(0.05)
            if view.computed:
                break
        assert view.computed == 1
        assert view.reconciled == 1
        episodes = view.summary.rows["episodes"]
        assert len(episodes) == 1
        ep = episodes[0]
        assert (ep["leg"], ep["side"]) == (2, "starboard")
        assert ep["max_abs_xte_m"] == pytest.approx(2.5 * NM, abs=0.01)  # built at 2.5 NM
        table = app.query_one("#review-table-episodes")
        assert table.row_count == 1
        row = [str(c) for c in table.get_row_at(0)]
        assert row[:2] == ["2", "starboard"] and row[5] == "2.50" and row[6] == "2.00"
        tabs = app.query_one("#review-tabs")
        assert str(tabs.get_tab("review-episodes").label) == "Episodes 1"
        assert str(tabs.get_tab("review-gaps").label) == "Gaps 0"
        assert tabs.active == "review-legs"
        await pilot.press("right_square_bracket")  # "]": the next tab
        assert tabs.active == "review-passages" and app.focused.id == "review-table-passages"
        await pilot.press("left_square_bracket", "left_square_bracket")  # round to the last
        assert tabs.active == "review-xte"
        await pilot.pause()
        chart = app.query_one("#review-xte-chart")
        text = chart.render().plain
        assert "2.75S" in text  # the scale: 1.1 x the largest |XTE| (2.5 NM)
        assert any(0x2800 < ord(ch) <= 0x28FF for ch in text)
        app.query_one("#review-tabs").active = "review-track"
        await pilot.pause()
        assert "10 fixes, 4 waypoints" in app.query_one("#review-track-chart").render().plain


async def _open_review(session):
    # the view's own work only (not reconciled ahead of it: see test_review_prefetch.py)
    app = PassagelogApp(session=session, watch_poll_s=5.0, prefetch_review_s=None)
    out = {}
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.press("f5")
        view = app.query_one("#review-view")
        for _ in range(200):
            await pilot.pause(0.05)
            if view.computed:
                break
        table = app.query_one("#review-table-passages")
        out = {"computed": view.computed, "reconciled": view.reconciled > 0,
               "head": str(view.query_one("#review-head").render()),
               "passages": [[str(c) for c in table.get_row_at(i)]
                            for i in range(table.row_count)]}
    return out


async def test_a_kept_review_opens_without_reconciling_and_a_changed_logbook_refreshes(
        logbook_path):
    from passagelog.store import derived
    from passagelog.tui import review_data as rd
    from passagelog.tui.session import Session

    from .conftest import fixed_clock

    s = Session(logbook_path, clock=fixed_clock)
    t = datetime(2026, 5, 1, 6, 0, tzinfo=timezone.utc)
    for h in range(12):
        lat, lon = point_off_leg(s.route, 1 if h < 6 else 2, (2 + 12 * h) * NM
                                 if h < 6 else (12 * (h - 6) + 1) * NM, 0.3 * NM)
        s.add_fix(Fix(t + timedelta(hours=h), lat, lon))
    first = await _open_review(Session(logbook_path, clock=fixed_clock))
    assert first["computed"] == 1 and first["reconciled"]
    assert "12 fixes" in first["head"]
    kept = derived.read_result(s.logbook, s.voyage.voyage_id, rd.KIND)
    assert kept is not None and rd.decode(kept.data).fixes == 12

    # opened again on the unchanged logbook: the kept review, no reconciliation
    again = await _open_review(Session(logbook_path, clock=fixed_clock))
    assert again["computed"] == 1 and not again["reconciled"]
    assert again["passages"] == first["passages"] and again["head"] == first["head"]

    # one more fix: the stamp moves, the view reconciles again and keeps the new review
    lat, lon = point_off_leg(s.route, 2, 80 * NM, 0.3 * NM)
    s.add_fix(Fix(t + timedelta(hours=12), lat, lon))
    third = await _open_review(Session(logbook_path, clock=fixed_clock))
    assert third["reconciled"] and "13 fixes" in third["head"]
    assert rd.decode(derived.read_result(s.logbook, s.voyage.voyage_id, rd.KIND).data).fixes == 13


def test_summary_round_trip_and_damage_is_ignored():
    import numpy as np

    from passagelog.tui import review_data as rd

    summary = rd.ReviewSummary(
        fixes=2, first_s=0.0, last_s=60.0, counts={"passages": 0, "episodes": 0, "gaps": 0,
                                                   "suspects": 0},
        rows={k: [] for k in rd.TABLE_KEYS} | {"legs": [{"leg": 1, "smg_kn": float("nan")}]},
        waypoints=2, arrays={k: np.arange(3.0) for k in rd._ARRAYS})
    back = rd.decode(rd.encode(summary))
    assert back.rows["legs"] == [{"leg": 1, "smg_kn": None}]
    assert all(np.array_equal(back.arrays[k], np.arange(3.0)) for k in rd._ARRAYS)
    assert rd.decode(b"not an npz") is None
    assert rd.decode(rd.encode(summary)[:-10]) is None


def test_the_head_gives_seconds_when_the_fixes_span_less_than_a_minute():
    """Fixes a few seconds apart (a feed just started) would read '05 11:38Z to 05 11:38Z'."""
    from passagelog.tui.review_data import ReviewSummary
    from passagelog.tui.review_view import ReviewView

    t0 = datetime(2026, 12, 5, 11, 37, 53, tzinfo=timezone.utc).timestamp()
    counts = {"passages": 0, "episodes": 0, "gaps": 0, "suspects": 0}

    def head(first_s, last_s, n=4):
        return ReviewView._head_text(ReviewSummary(
            fixes=n, first_s=first_s, last_s=last_s, counts=counts, rows={}, waypoints=2,
            arrays={}))

    assert head(t0, t0 + 18).startswith("4 fixes 05 11:37:53Z to 05 11:38:11Z;")
    assert head(t0, t0 + 3600).startswith("4 fixes 05 11:38Z to 05 12:38Z;")
