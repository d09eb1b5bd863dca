"""Log: enter a fix with validation beside the field, see it listed, correct it, add an entry;
page through a long fix list reading only the rows on show and a margin."""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

import pytest

from passagelog.errors import InputError
from passagelog.model import Fix, LogEntry
from passagelog.tui.app import PassagelogApp
from passagelog.tui.log_view import (
    entry_zones, page_head, parse_fix_time, parse_goto_time, window_rows,
)

T0 = datetime(2026, 5, 1, 6, 0, tzinfo=timezone.utc)


async def _type(pilot, app, field_id, text):
    """Put ``text`` in a field as a paste would (the Plan test types key by key)."""
    field = app.query_one(field_id)
    field.focus()
    field.value = text
    await pilot.pause()


async def _settle(pilot, app):
    for _ in range(3):
        await app.workers.wait_for_complete()
        await pilot.pause()


async def _open_log(pilot, app):
    await pilot.press("f3")
    await pilot.pause()
    log = app.query_one("#log-view")
    for _ in range(200):
        await pilot.pause(0.01)
        if log.shown or log.total == 0 and log.loaded and not app.workers:
            break
    await _settle(pilot, app)
    return log


def _head(app) -> str:
    return str(app.query_one("#fix-head").render())


async def test_log_a_fix_see_it_listed_and_correct_it(session):
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        log = await _open_log(pilot, app)
        assert "No fixes in this voyage yet" in _head(app)
        # a position with minutes over 60 is refused beside the field
        await _type(pilot, app, "#fix-pos", "49 75.0N 6 30W")
        msg = str(app.query_one("#fix-pos-msg").render())
        assert app.query_one("#fix-pos").has_class("-bad") and msg
        await _type(pilot, app, "#fix-pos", "49 45.0N 6 30.0W")
        await _type(pilot, app, "#fix-time", "2026-05-01T07:00 ZD+1")
        # ship's time 07:00 at ZD +1 is 08:00 UTC (ZT + ZD = UTC)
        msg = str(app.query_one("#fix-time-msg").render()).replace("\u00a0", " ")
        assert "01 08:00Z" in msg
        await _type(pilot, app, "#fix-sog", "11.5")
        await _type(pilot, app, "#fix-sats", "9")
        await pilot.press("enter")  # Enter goes on to the next field; it does not log
        assert app.focused.id == "fix-cog"
        await _type(pilot, app, "#fix-remarks", "")
        await pilot.press("enter")
        await _settle(pilot, app)
        assert session.fixes() == []
        assert "9 in use" in str(app.query_one("#fix-sats-msg").render())
        await pilot.press("ctrl+s")
        await _settle(pilot, app)
        fixes = session.fixes()
        assert len(fixes) == 1
        assert fixes[0].time_utc == datetime(2026, 5, 1, 8, 0, tzinfo=timezone.utc)
        assert abs(fixes[0].lat - 49.75) < 1e-12 and fixes[0].sog_kn == 11.5
        assert fixes[0].satellites == 9
        assert app.query_one("#fix-sats").value == ""  # the form is cleared
        table = app.query_one("#fix-table")
        assert table.row_count == 1
        assert "Fixes 1–1 of 1, oldest first" in _head(app)
        # correct it: Ctrl+L goes from the form to the list, Enter on the row opens the dialog
        await pilot.press("ctrl+l")
        assert app.focused is table
        await pilot.press("enter")
        await pilot.pause()
        from passagelog.tui.correction_dialog import CorrectionDialog

        assert isinstance(app.screen, CorrectionDialog)
        app.screen.query_one("#corr-pos").value = "49 46.0N 6 30.0W"
        app.screen.query_one("#corr-reason").focus()
        await pilot.press("enter")  # no reason yet: refused
        await pilot.pause()
        assert isinstance(app.screen, CorrectionDialog)
        app.screen.query_one("#corr-reason").value = "misread the latitude"
        await pilot.press("enter")
        await _settle(pilot, app)
        current = session.fixes()
        assert len(current) == 1 and abs(current[0].lat - (49 + 46 / 60)) < 1e-12
        assert current[0].reason == "misread the latitude"
        assert current[0].satellites == 9  # kept from the original
        assert table.row_count == 2  # the original stays, struck through, just before
        original, correction = log.shown
        assert correction.supersedes == original.fix_id
        marks = " ".join(str(c) for c in table.get_row_at(0))
        assert f"corrected by #{correction.fix_id}" in marks
        assert table.get_row_at(0)[0].style == "strike dim"
        assert table.cursor_row == 1  # on the correction
        # Enter on the corrected original: refused, the cursor goes to its correction
        table.move_cursor(row=0)
        await pilot.press("enter")
        await pilot.pause()
        assert not isinstance(app.screen, CorrectionDialog)
        assert table.cursor_row == 1


async def test_satellites_are_checked_beside_the_field(session):
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        await _open_log(pilot, app)
        await _type(pilot, app, "#fix-pos", "49 45.0N 6 30.0W")
        for text, error in (("12.5", "whole number"), ("-1", "whole number"),
                            ("100", "at most 99"), ("seven", "whole number")):
            await _type(pilot, app, "#fix-sats", text)
            assert app.query_one("#fix-sats").has_class("-bad"), text
            assert error in str(app.query_one("#fix-sats-msg").render()), text
            await pilot.press("ctrl+s")
            await _settle(pilot, app)
            assert session.fixes() == []  # nothing half-written
        await _type(pilot, app, "#fix-sats", "0")
        assert not app.query_one("#fix-sats").has_class("-bad")
        await pilot.press("ctrl+s")
        await _settle(pilot, app)
        assert [f.satellites for f in session.fixes()] == [0]


def _many_fixes(session, n: int, step_s: float = 60.0) -> list[datetime]:
    times = [T0 + timedelta(seconds=step_s * i) for i in range(n)]
    book = session.logbook
    book.add_fixes(session.voyage.voyage_id,
                   (Fix(t, 49.0 + i * 1e-4, -6.0, sog_kn=6.0) for i, t in enumerate(times)))
    return times


def _no_whole_voyage(monkeypatch, session):
    """Fail loudly if the view reads every fix of the voyage."""
    def refuse(*a, **k):
        raise AssertionError("the Log view read the whole voyage")

    for name in ("fixes", "fix_history", "fix_arrays"):
        monkeypatch.setattr(session, name, refuse)


async def test_the_fix_list_pages_through_the_whole_voyage(session, monkeypatch):
    times = _many_fixes(session, 300, step_s=120.0)  # 06:00 to 15:58, one each 2 min
    # fix 1 corrected by a fix far away in the list: still marked when shown
    fix1 = session.logbook.fix(1)
    later = session.correct_fix(1, Fix(fix1.time_utc + timedelta(seconds=1), 49.0, -6.001),
                                "misplotted")
    _no_whole_voyage(monkeypatch, session)
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        log = await _open_log(pilot, app)
        table = app.query_one("#fix-table")
        page = table.page_rows()
        held = window_rows(page)
        assert len(log.shown) <= held < 301  # the rows on show and a margin, no more
        assert log.total == 301
        # the end: the latest fix under the cursor, the header counts the records on show
        assert log.shown[-1].time_utc == times[-1]
        assert table.cursor_row == len(log.shown) - 1
        assert _head(app).startswith(f"Fixes {301 - page + 1:,}–301 of 301, oldest first")
        # PageUp many times: one page each, through several reads
        table.focus()
        for k in range(1, 6):
            await pilot.press("pageup")
            await pilot.pause()
            assert _head(app).startswith(
                f"Fixes {301 - (k + 1) * page + 1:,}–{301 - k * page:,} of 301"), k
            assert len(log.shown) <= held
        place = log.first_place + table.cursor_row  # 0-based place of the fix under the cursor
        assert log.shown[table.cursor_row].time_utc == times[place - 1]  # one correction before
        # Home: the first records; the corrected fix 1 is marked though its correction is not held
        await pilot.press("home")
        await _settle(pilot, app)
        assert log.first_place == 0 and table.cursor_row == 0
        assert _head(app).startswith(f"Fixes 1–{page} of 301")
        assert [f.fix_id for f in log.shown[:2]] == [1, later.fix_id]
        assert log.corrected_by == {1: later.fix_id}
        assert f"corrected by #{later.fix_id}" in " ".join(str(c) for c in table.get_row_at(0))
        # Up at the first record stays; Down walks on past the rows held
        await pilot.press("up")
        assert table.cursor_row == 0
        edge = len(log.shown) - 2
        table.move_cursor(row=edge)
        await pilot.pause()
        for _ in range(5):
            await pilot.press("down")
        await pilot.pause()
        assert log.first_place + table.cursor_row == edge + 5
        assert len(log.shown) <= held
        # PageDown past the end stops at the latest fix
        for _ in range(301 // page + 2):
            await pilot.press("pagedown")
        await pilot.pause()
        assert log.shown[table.cursor_row].time_utc == times[-1]
        assert log.first_place + len(log.shown) == 301
        # End from the start; then Ctrl+G: go to a time typed in UTC
        await pilot.press("home")
        await _settle(pilot, app)
        await pilot.press("end")
        await _settle(pilot, app)
        assert log.shown[table.cursor_row].time_utc == times[-1]
        from passagelog.tui.goto_dialog import GoToTimeDialog

        await pilot.press("ctrl+g")
        await pilot.pause()
        assert isinstance(app.screen, GoToTimeDialog)
        app.screen.query_one("#goto-time").value = "2026-05-01T12:00:30"  # no zone: UTC
        await pilot.pause()
        assert "2026-05-01 12:00Z" in str(app.screen.query_one("#goto-msg").render())
        await pilot.press("enter")
        await _settle(pilot, app)
        # 12:00:30 falls between the fixes of 12:00 and 12:02
        assert log.shown[table.cursor_row].time_utc == datetime(2026, 5, 1, 12, 2,
                                                                tzinfo=timezone.utc)
        assert log.shown[table.cursor_row - 1].time_utc < datetime(2026, 5, 1, 12, 0, 30,
                                                                   tzinfo=timezone.utc)
        # 182 records before it: the fixes of 06:00..12:00 and the correction
        assert log.first_place + table.cursor_row == 182
        assert int(table.scroll_y) == table.cursor_row  # at the top of the list
        assert _head(app).startswith(f"Fixes 183–{182 + page} of 301")
        # a time of day alone, on the day of the fix under the cursor; a bad one is refused
        await pilot.press("ctrl+g")
        await pilot.pause()
        app.screen.query_one("#goto-time").value = "25:00"
        await pilot.press("enter")
        await pilot.pause()
        assert isinstance(app.screen, GoToTimeDialog)
        assert app.screen.query_one("#goto-msg").has_class("-bad")
        app.screen.query_one("#goto-time").value = "07:00"
        await pilot.press("enter")
        await _settle(pilot, app)
        assert log.shown[table.cursor_row].time_utc == datetime(2026, 5, 1, 7, 0,
                                                                tzinfo=timezone.utc)
        # after the voyage's last fix: the latest are shown, and the user told so
        await pilot.press("ctrl+g")
        await pilot.pause()
        app.screen.query_one("#goto-time").value = "2026-06-01T00:00Z"
        await pilot.press("enter")
        await _settle(pilot, app)
        assert log.shown[table.cursor_row].time_utc == times[-1]


async def test_a_logged_fix_is_shown_where_it_falls_in_time(session, monkeypatch):
    _many_fixes(session, 300)
    _no_whole_voyage(monkeypatch, session)
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        log = await _open_log(pilot, app)
        await _type(pilot, app, "#fix-pos", "49 45.0N 6 30.0W")
        await _type(pilot, app, "#fix-time", "2026-05-01T08:00:30Z")  # among the early ones
        await pilot.press("ctrl+s")
        await _settle(pilot, app)
        table = app.query_one("#fix-table")
        assert log.shown[table.cursor_row].fix_id == 301
        assert log.first_place + table.cursor_row == 121  # after 06:00..08:00
        # PageUp/PageDown page the list from the form's fields too
        await _type(pilot, app, "#fix-remarks", "")
        before = log.first_place + table.cursor_row
        await pilot.press("pagedown")
        await pilot.pause()
        assert log.first_place + table.cursor_row == before + table.page_rows()


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
        await _type(pilot, app, "#entry-time", "2026-05-01T20:00Z")
        await pilot.press("ctrl+s")
        await _settle(pilot, app)
        entries = session.entries()
        assert [(e.kind, e.zd_minutes) for e in entries] == [("clock-change", 120)]
        # an event says nothing without its text: refused beside the field
        app.query_one("#entry-kind").value = "event"
        await _type(pilot, app, "#entry-time", "2026-05-01T21:00Z")
        await pilot.press("ctrl+s")
        await _settle(pilot, app)
        assert app.query_one("#entry-text").has_class("-bad")
        assert len(session.entries()) == 1
        await _type(pilot, app, "#entry-text", "sighted the light")
        await pilot.press("ctrl+s")
        await _settle(pilot, app)
        assert len(session.entries()) == 2
        # in time order, ship's time in the zone in force then: the voyage's ZD +1 before
        # the change, ZD +2 from it (ZT = UTC - ZD)
        table = app.query_one("#entry-table")
        rows = [[str(c) for c in table.get_row_at(i)] for i in range(table.row_count)]
        assert [r[3] for r in rows] == ["clock-change", "event"]
        assert rows[1][2] == "01 19:00 (+2)"
        head = str(app.query_one("#entry-head").render())
        assert head.startswith("Entries 1–2 of 2, oldest first")


def test_zones_of_entries_follow_the_clock_changes():
    e = [LogEntry(T0, "departure", "", entry_id=1),
         LogEntry(T0 + timedelta(hours=5), "clock-change", "", zd_minutes=120, entry_id=2),
         LogEntry(T0 + timedelta(hours=6), "event", "x", entry_id=3),
         LogEntry(T0 + timedelta(hours=7), "clock-change", "", zd_minutes=180, entry_id=4),
         LogEntry(T0 + timedelta(hours=7), "clock-change", "", zd_minutes=240, entry_id=5,
                  supersedes=4, reason="wrong zone")]
    zones, now = entry_zones(e, 60, T0 + timedelta(days=1))
    # the corrected clock change (ZD +3) counts no more; its correction (ZD +4) does
    assert zones == [60, 120, 120, 240, 240] and now == 240
    assert entry_zones(e, 60, T0 - timedelta(days=1))[1] == 60


def test_goto_times_and_the_header():
    ref = datetime(2026, 5, 2, 17, 45, tzinfo=timezone.utc)
    assert parse_goto_time("2026-05-01T12:00Z", ref) == datetime(2026, 5, 1, 12, 0,
                                                                 tzinfo=timezone.utc)
    # no zone: UTC (the dialog asks for UTC); an offset in the text wins
    assert parse_goto_time("2026-05-01 12:00", ref).hour == 12
    assert parse_goto_time("2026-05-01T12:00-03:00", ref).hour == 15
    assert parse_goto_time("03 06:15Z", ref) == datetime(2026, 5, 3, 6, 15,
                                                         tzinfo=timezone.utc)
    assert parse_goto_time("0615", ref) == datetime(2026, 5, 2, 6, 15, tzinfo=timezone.utc)
    for bad in ("", "24:00", "31 12:00", "noon"):
        with pytest.raises(InputError):
            parse_goto_time(bad, datetime(2026, 4, 2, tzinfo=timezone.utc))
    assert page_head(999_801, 1_000_000, 1_000_000) == (
        "Fixes 999,801–1,000,000 of 1,000,000, oldest first · PgUp PgDn Home End")
    span = (datetime(2026, 5, 1, 23, tzinfo=timezone.utc), ref)
    assert page_head(1, 10, 20, span) == (
        "Fixes 1–10 of 20, oldest first · PgUp PgDn Home End · 2026-05-01 to 2026-05-02 UTC")
    assert page_head(1, 10, 20, span, width=40) == "Fixes 1–10 of 20, oldest first"
    assert page_head(1, 10, 20, span, width=60) == (
        "Fixes 1–10 of 20, oldest first · PgUp PgDn Home End")


def test_fix_times_of_day_are_the_latest_such_time():
    now = datetime(2026, 5, 2, 0, 5, tzinfo=timezone.utc)
    utc = timezone.utc
    # a time of day in UTC: today's, unless more than 10 minutes ahead of now (then
    # yesterday's)
    assert parse_fix_time("00:15Z", 60, now) == datetime(2026, 5, 2, 0, 15, tzinfo=utc)
    assert parse_fix_time("00:30Z", 60, now) == datetime(2026, 5, 1, 0, 30, tzinfo=utc)
    assert parse_fix_time("23:50Z", 60, now) == datetime(2026, 5, 1, 23, 50, tzinfo=utc)
    # no zone: ship's time at ZD +1 (ZT + ZD = UTC); the ship's date is still 1 May
    assert parse_fix_time("2310", 60, now) == datetime(2026, 5, 2, 0, 10, tzinfo=utc)
    assert parse_fix_time("2330", 60, now) == datetime(2026, 5, 1, 0, 30, tzinfo=utc)
    assert parse_fix_time("14:30", 60, now) == datetime(2026, 5, 1, 15, 30, tzinfo=utc)
    assert parse_fix_time("2026-05-01T10:00Z", 60, now) == datetime(2026, 5, 1, 10, 0,
                                                                    tzinfo=utc)
    for bad in ("24:00", "12:60", "noon"):
        with pytest.raises(InputError):
            parse_fix_time(bad, 60, now)


async def test_a_suspect_fix_is_marked(session):
    # two fixes 60 NM apart in 10 minutes (1° of latitude is about 60 NM, from memory):
    # 360 kn, far above the craft's 20 kn
    session.add_fix(Fix(T0, 49.0, -6.0))
    session.add_fix(Fix(T0 + timedelta(minutes=10), 50.0, -6.0, remarks="typed wrong"))
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        log = await _open_log(pilot, app)
        table = app.query_one("#fix-table")
        assert [f.suspect for f in log.shown] == [False, True]
        cells = table.get_row_at(1)
        assert "SUSPECT 360 kn" in " ".join(str(c) for c in cells)
        assert cells[0].style == "bold"


async def _until(pilot, app, condition, seconds: float = 10.0) -> None:
    """Wait for ``condition()`` (the poll and its worker run on their own time)."""
    for _ in range(int(seconds / 0.02)):
        if condition():
            break
        await pilot.pause(0.02)
    await _settle(pilot, app)
    assert condition()


async def test_the_fix_list_follows_fixes_written_by_another_connection(session, logbook_path,
                                                                       monkeypatch):
    """At the latest record the list takes in a fix another connection (the feed, another
    terminal) writes, without a reload; a user paging elsewhere keeps the list and the
    selection, and only the count grows (issue 6)."""
    from passagelog.store import Logbook

    times = _many_fixes(session, 100)
    _no_whole_voyage(monkeypatch, session)
    vid = session.voyage.voyage_id
    feed = Logbook.open(logbook_path)  # a second connection, as `passagelog feed` writes
    app = PassagelogApp(session=session, watch_poll_s=0.1)
    try:
        async with app.run_test(size=(100, 30)) as pilot:
            log = await _open_log(pilot, app)
            table = app.query_one("#fix-table")
            table.focus()
            page = table.page_rows()
            assert log.shown[-1].time_utc == times[-1] and table.cursor_row == len(log.shown) - 1
            # 1. at the latest fix: the new one is listed and the cursor goes on to it
            new = feed.add_fix(vid, Fix(times[-1] + timedelta(minutes=10), 49.02, -6.0))
            await _until(pilot, app, lambda: log.shown and log.shown[-1].fix_id == new.fix_id)
            assert log.shown[table.cursor_row].fix_id == new.fix_id and log.total == 101
            assert _head(app).startswith(f"Fixes {101 - page + 1:,}–101 of 101")
            # 2. paging elsewhere: the list and the selection stay, the count grows
            for _ in range(3):
                await pilot.press("pageup")
            await pilot.pause()
            here = log.shown[table.cursor_row].fix_id
            held = [f.fix_id for f in log.rows]
            first, follows = log.first_place, log.follows
            later = feed.add_fix(vid, Fix(times[-1] + timedelta(minutes=20), 49.03, -6.0))
            await _until(pilot, app, lambda: log.total == 102)
            assert log.follows == follows and [f.fix_id for f in log.rows] == held
            assert log.shown[table.cursor_row].fix_id == here and log.first_place == first
            assert " of 102" in _head(app)
            # ... and PageDown walks on to the new fixes
            for _ in range(5):
                await pilot.press("pagedown")
            await pilot.pause()
            assert log.rows[table.cursor_row].fix_id == later.fix_id
            # 3. the latest page on screen, the cursor a row above the latest: the new fix
            # is listed, the cursor stays on its fix
            await pilot.press("end")
            await _settle(pilot, app)
            await pilot.press("up")
            await pilot.pause()
            here = log.rows[table.cursor_row].fix_id
            assert here == new.fix_id
            third = feed.add_fix(vid, Fix(times[-1] + timedelta(minutes=30), 49.04, -6.0))
            await _until(pilot, app, lambda: log.shown and log.shown[-1].fix_id == third.fix_id)
            assert log.shown[table.cursor_row].fix_id == here
            assert int(table.scroll_y) + page == len(log.shown)  # the new fix on screen
            # 4. a correction written elsewhere marks the original in the list
            fixed = feed.correct_fix(vid, third.fix_id, Fix(third.time_utc, 49.041, -6.0),
                                     "misread")
            await _until(pilot, app, lambda: log.corrected_by.get(third.fix_id)
                         == fixed.fix_id and log.shown[-1].fix_id == fixed.fix_id)
            assert log.shown[table.cursor_row].fix_id == here
    finally:
        feed.close()
