"""Log: enter a fix with validation beside the field, see it listed, correct it, add an entry."""

from __future__ import annotations

from datetime import datetime, timezone

from passagelog.tui.app import PassagelogApp


async def _type(pilot, app, field_id, text):
    """Put ``text`` in a field as a paste would (the Plan test types key by key)."""
    field = app.query_one(field_id)
    field.focus()
    field.value = text
    await pilot.pause()


async def test_log_a_fix_see_it_listed_and_correct_it(session):
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.press("f3")
        await pilot.pause()
        log = app.query_one("#log-view")
        # a position with minutes over 60 is refused beside the field
        await _type(pilot, app, "#fix-pos", "49 75.0N 6 30W")
        await pilot.pause()
        msg = str(app.query_one("#fix-pos-msg").render())
        assert app.query_one("#fix-pos").has_class("-bad") and msg
        await _type(pilot, app, "#fix-pos", "49 45.0N 6 30.0W")
        await _type(pilot, app, "#fix-time", "2026-05-01T07:00 ZD+1")
        await pilot.pause()
        # ship's time 07:00 at ZD +1 is 08:00 UTC (ZT + ZD = UTC)
        assert "01 08:00Z" in str(app.query_one("#fix-time-msg").render())
        await _type(pilot, app, "#fix-sog", "11.5")
        await pilot.press("ctrl+s")
        await app.workers.wait_for_complete()
        await pilot.pause()
        await app.workers.wait_for_complete()
        await pilot.pause()
        fixes = session.fixes()
        assert len(fixes) == 1
        assert fixes[0].time_utc == datetime(2026, 5, 1, 8, 0, tzinfo=timezone.utc)
        assert abs(fixes[0].lat - 49.75) < 1e-12 and fixes[0].sog_kn == 11.5
        table = app.query_one("#fix-table")
        assert table.row_count == 1
        # correct it: Enter on the row opens the dialog
        table.focus()
        await pilot.press("enter")
        await pilot.pause()
        from passagelog.tui.correction_dialog import CorrectionDialog

        assert isinstance(app.screen, CorrectionDialog)
        pos = app.screen.query_one("#corr-pos")
        pos.value = "49 46.0N 6 30.0W"
        app.screen.query_one("#corr-reason").focus()
        await pilot.press("enter")  # no reason yet: refused
        await pilot.pause()
        assert isinstance(app.screen, CorrectionDialog)
        app.screen.query_one("#corr-reason").value = "misread the latitude"
        await pilot.press("enter")
        await pilot.pause()
        await app.workers.wait_for_complete()
        await pilot.pause()
        await app.workers.wait_for_complete()
        await pilot.pause()
        current = session.fixes()
        assert len(current) == 1 and abs(current[0].lat - (49 + 46 / 60)) < 1e-12
        assert current[0].reason == "misread the latitude"
        assert table.row_count == 2  # the original stays, struck through
        marks = [str(c) for c in table.get_row_at(1)]
        assert "corrected" in " ".join(marks)
        assert log.shown[0].supersedes == log.shown[1].fix_id


async def test_a_clock_change_entry_needs_the_new_zone(session):
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.press("f3")
        await pilot.pause()
        app.query_one("#log-tabs").active = "log-entries"
        await pilot.pause()
        app.query_one("#entry-kind").value = "clock-change"
        await pilot.pause()
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert "new zone description" in str(app.query_one("#entry-zd-msg").render())
        await _type(pilot, app, "#entry-zd", "+2")
        await _type(pilot, app, "#entry-text", "clocks retarded 1 h")
        await pilot.press("ctrl+s")
        await app.workers.wait_for_complete()
        await pilot.pause()
        entries = session.entries()
        assert [(e.kind, e.zd_minutes) for e in entries] == [("clock-change", 120)]
