"""A latest fix with no cross-track foot on its leg: Watch says so in words (no "nan"),
raises the suspect alert with the reason and no off-track alert; Review lists the fix on
its Suspects tab with its time."""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

import pytest

from passagelog.model import Craft, Fix, LegPlan, Route, Voyage, Waypoint

T0 = datetime(2026, 5, 2, 10, 0, tzinfo=timezone.utc)


@pytest.fixture
def pole_session(tmp_path):
    from passagelog.store import Logbook
    from passagelog.tui.session import Session

    path = tmp_path / "pole.sqlite"
    book = Logbook.open(path)
    craft = book.add_craft(Craft("Kestrel"))
    # the pole of the great circle of a leg on the 90E meridian is (0, 0) (geometry: the
    # meridian's plane holds the axis, its normal points to 0N 0E)
    route = Route("meridian", (Waypoint("A", -10.0, 90.0), Waypoint("B", 10.0, 90.0)),
                  (LegPlan("great-circle", 10.0, 1852.0, 1852.0),))
    plan_id, _ = book.create_plan(route, "created")
    voyage = book.add_voyage(Voyage("Pole test", craft_id=craft.craft_id, plan_id=plan_id,
                                    departure_utc=T0))
    book.add_fixes(voyage.voyage_id, [Fix(T0, -10.0, 90.01),
                                      Fix(T0 + timedelta(hours=1), 0.0, 0.0)])
    book.close()
    return Session(path, clock=lambda: T0 + timedelta(hours=1, minutes=5))


async def test_watch_and_review_name_a_fix_with_no_cross_track_foot(pole_session):
    from passagelog.tui.app import PassagelogApp

    app = PassagelogApp(session=pole_session, watch_poll_s=0.1)
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.press("f4")
        watch = app.query_one("#watch-view")
        for _ in range(100):
            await pilot.pause(0.05)
            if watch.state is not None and watch.state.status is not None:
                break
        st = watch.state.status
        assert st.suspect and st.suspect_reason == "no-foot"
        xte_line = str(app.query_one("#watch-xte").render())
        assert "no cross-track foot on this leg" in xte_line
        figures = str(app.query_one("#watch-figures").render())
        assert "nan" not in figures.lower()
        kinds = {a.kind: a.text for a in watch.current_alerts()}
        assert "off-track" not in kinds
        assert "no cross-track foot" in kinds["suspect"]

        await pilot.press("f5")
        review = app.query_one("#review-view")
        for _ in range(200):
            await pilot.pause(0.05)
            if review.summary is not None:
                break
        (row,) = review.summary.rows["suspects"]
        assert row["reason"] == "no-foot" and row["time_utc"] == "2026-05-02T11:00:00Z"
