"""Log: the fix form's time field (far-off times refused or warned of, the forms the lists
show, the day a time of day was taken on, messages that wrap at 80 columns), the focus on
F3, a cleared form without its old messages, seconds in the fix list, and the key that
switches between the Fixes and Entries tabs."""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

import pytest
from textual.geometry import Region

from passagelog.errors import InputError
from passagelog.model import Fix
from passagelog.tui.app import PassagelogApp

from .conftest import FIXED_NOW
from .test_log import _open_log, _settle, _type

UTC = timezone.utc
DEPARTURE = datetime(2026, 5, 1, 6, 0, tzinfo=UTC)  # the voyage of conftest.logbook_path


def _plain(text: str) -> str:
    return text.replace("\u00a0", " ")


def _msg(app, fid: str) -> str:
    """The message beside a field (no-break spaces as spaces)."""
    return _plain(str(app.query_one(f"#{fid}-msg").render()))


def _shown_text(widget) -> str:
    """What the widget shows on screen (its lines as painted, wrapped and cropped), spaces
    between words made single."""
    lines = widget.render_lines(Region(0, 0, widget.size.width, widget.size.height))
    return " ".join(" ".join(_plain(s.text).split()) for s in lines).strip()


def test_typed_times_in_the_forms_the_lists_show():
    from passagelog.tui.log_view import read_fix_time

    now = datetime(2026, 5, 5, 7, 0, tzinfo=UTC)
    # day and time as the list shows them, in UTC; the same without Z is ship's time
    assert read_fix_time("05 06:33Z", 60, now).utc == datetime(2026, 5, 5, 6, 33, tzinfo=UTC)
    assert read_fix_time("04 23:00Z", 60, now).utc == datetime(2026, 5, 4, 23, tzinfo=UTC)
    assert read_fix_time("05 05:33", 60, now).utc == datetime(2026, 5, 5, 6, 33, tzinfo=UTC)
    # a day of the month ahead by more than a day is last month's (just after the 1st)
    first = datetime(2026, 6, 1, 0, 30, tzinfo=UTC)
    assert read_fix_time("31 23:50Z", 0, first).utc == datetime(2026, 5, 31, 23, 50,
                                                                tzinfo=UTC)
    assert read_fix_time("30 23:50Z", 0, first).utc == datetime(2026, 5, 30, 23, 50,
                                                                tzinfo=UTC)
    # ... but today's time later today stays today (and is refused as ahead)
    assert read_fix_time("05 08:45Z", 60, now).utc == datetime(2026, 5, 5, 8, 45, tzinfo=UTC)
    # ship's time with its zone, a time of day alone (ZT + ZD = UTC)
    typed = read_fix_time("06:33 ZD+1", 0, now)
    assert typed.utc == datetime(2026, 5, 5, 7, 33, tzinfo=UTC) - timedelta(days=1)
    assert (typed.zd_minutes, typed.day) == (60, "yesterday")
    typed = read_fix_time("05:55 ZD+1", 0, now)
    assert typed.utc == datetime(2026, 5, 5, 6, 55, tzinfo=UTC) and typed.day == "today"
    # the latest such time not more than 10 minutes ahead
    assert read_fix_time("07:10Z", 60, now).day == "today"
    assert read_fix_time("07:11Z", 60, now).day == "yesterday"
    assert read_fix_time("06:33:30Z", 60, now).utc == datetime(2026, 5, 5, 6, 33, 30,
                                                               tzinfo=UTC)
    for bad in ("noon", "05 25:00Z", "32 10:00Z", "06:33 ZD+20", "2026-05-0", "24:00"):
        with pytest.raises(InputError):
            read_fix_time(bad, 60, now)


def test_far_off_times_are_refused_or_warned_of():
    from passagelog.tui.log_view import AHEAD_LIMIT, clock_text, time_check

    now = FIXED_NOW
    latest = datetime(2026, 5, 2, 11, 0, tzinfo=UTC)
    level, why = time_check(now + AHEAD_LIMIT, now, DEPARTURE, latest)
    assert level == ""
    level, why = time_check(now + AHEAD_LIMIT + timedelta(seconds=1), now, DEPARTURE, latest)
    assert level == "refuse" and "10 min ahead of now" in _plain(why)
    level, why = time_check(datetime(2027, 1, 1, tzinfo=UTC), now, DEPARTURE, latest)
    # 2 May 12:00 to 1 January 00:00: 29.5 days of May and 214 days of June-December
    assert level == "refuse" and _plain(why).startswith("243 d 12 h ahead")
    assert "243\u00a0d\u00a012\u00a0h" in why  # kept on one line where the message wraps
    level, why = time_check(DEPARTURE - timedelta(minutes=1), now, DEPARTURE, latest)
    assert (level, _plain(why)) == ("warn", "before the departure (01 06:00Z)")
    # more than 2 days before the latest fix: taken, with a warning (no departure given)
    level, why = time_check(latest - timedelta(days=2, minutes=1), now, None, latest)
    assert (level, _plain(why)) == ("warn", "2 d 00 h before the latest fix")
    assert time_check(latest - timedelta(days=2), now, None, latest) == ("", "")
    # the full date when the month or the year is not the reference's; seconds if any
    assert clock_text(datetime(2027, 1, 1, tzinfo=UTC), now) == "2027-01-01 00:00Z"
    assert clock_text(datetime(2026, 5, 5, 6, 33, 30, tzinfo=UTC), now) == "05 06:33:30Z"
    assert clock_text(datetime(2026, 5, 5, 6, 33, tzinfo=UTC), now, zd_minutes=60) == (
        "05 05:33 (+1)")


async def test_a_fix_time_far_ahead_is_refused_an_old_one_warned(session):
    session.add_fix(Fix(datetime(2026, 5, 2, 11, 0, tzinfo=UTC), 49.0, -6.0))
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        log = await _open_log(pilot, app)
        await _type(pilot, app, "#fix-pos", "49 45.0N 6 30.0W")
        # weeks after the voyage (the app's clock says 2 May 12:00Z): refused beside the
        # field, saying how far ahead
        await _type(pilot, app, "#fix-time", "2027-01-01T00:00Z")
        assert app.query_one("#fix-time").has_class("-bad")
        assert _msg(app, "fix-time") == (
            "2027-01-01 00:00Z: 243 d 12 h ahead of now: 10 min at most")
        await pilot.press("ctrl+s")
        await _settle(pilot, app)
        assert len(session.fixes()) == 1
        # 11 minutes ahead: refused too; 10 minutes: taken
        await _type(pilot, app, "#fix-time", "2026-05-02T12:11Z")
        assert app.query_one("#fix-time").has_class("-bad")
        await _type(pilot, app, "#fix-time", "2026-05-02T12:10Z")
        assert not app.query_one("#fix-time").has_class("-bad")
        # years before the departure: taken (a late entry of an old fix), with a warning;
        # the preview shows the full date
        await _type(pilot, app, "#fix-time", "2020-01-01T00:00Z")
        msg = app.query_one("#fix-time-msg")
        assert not app.query_one("#fix-time").has_class("-bad") and msg.has_class("-warn")
        assert _msg(app, "fix-time") == (
            "2020-01-01 00:00Z · ship 31 23:00 (+1) · before the departure "
            "(2026-05-01 06:00Z)")
        await pilot.press("ctrl+s")
        await _settle(pilot, app)
        old = [f for f in session.fixes() if f.time_utc.year == 2020]
        assert len(old) == 1
        # in the list with its full date, not as "01 00:00Z" among the fixes of the 2nd
        table = app.query_one("#fix-table")
        row = [str(c) for c in table.get_row_at(log.rows.index(
            next(f for f in log.rows if f.fix_id == old[0].fix_id)))]
        assert row[1] == "2020-01-01 00:00:00Z"
        # the form is cleared, and its warning with it
        assert not app.query_one("#fix-time-msg").has_class("-warn")
        assert _msg(app, "fix-time") == "now, when logged"
        # another month than the latest fix's: the full date in the preview
        await _type(pilot, app, "#fix-time", "2026-04-30T10:00Z")
        assert _msg(app, "fix-time").startswith("2026-04-30 10:00Z · ship 30 09:00 (+1)")
        # the same for a log entry: refused far ahead, warned of and dated in full before
        # the departure
        await pilot.press("ctrl+n")
        await _type(pilot, app, "#entry-text", "an old note")
        await _type(pilot, app, "#entry-time", "2027-01-01T00:00Z")
        assert app.query_one("#entry-time").has_class("-bad")
        await pilot.press("ctrl+s")
        await _settle(pilot, app)
        assert session.entries() == []
        await _type(pilot, app, "#entry-time", "2020-01-01T00:00Z")
        assert app.query_one("#entry-time-msg").has_class("-warn")
        await pilot.press("ctrl+s")
        await _settle(pilot, app)
        entries = app.query_one("#entry-table")
        assert [str(c) for c in entries.get_row_at(0)][1:3] == [
            "2020-01-01 00:00Z", "2019-12-31 23:00 (+1)"]


async def test_the_time_field_takes_the_forms_the_ui_shows(session):
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        await _open_log(pilot, app)
        await _type(pilot, app, "#fix-pos", "49 45.0N 6 30.0W")
        # day and time as the fix list shows them
        await _type(pilot, app, "#fix-time", "02 06:33Z")
        assert not app.query_one("#fix-time").has_class("-bad"), _msg(app, "fix-time")
        assert _msg(app, "fix-time") == "02 06:33Z · ship 02 05:33 (+1)"
        await pilot.press("ctrl+s")
        await _settle(pilot, app)
        assert [f.time_utc for f in session.fixes()] == [
            datetime(2026, 5, 2, 6, 33, tzinfo=UTC)]
        # ship's time with its zone; which day it was taken on is said
        await _type(pilot, app, "#fix-pos", "49 46.0N 6 30.0W")
        await _type(pilot, app, "#fix-time", "06:33 ZD+1")
        assert _msg(app, "fix-time") == "today, 02 07:33Z · ship 02 06:33 (+1)"
        # ship's time more than 10 minutes ahead of now (12:00Z, 11:00 ship's): yesterday's,
        # and the preview says so
        await _type(pilot, app, "#fix-time", "11:45")
        assert _msg(app, "fix-time") == "yesterday, 01 12:45Z · ship 01 11:45 (+1)"
        await _type(pilot, app, "#fix-time", "08:45")
        assert _msg(app, "fix-time") == "today, 02 09:45Z · ship 02 08:45 (+1)"
        await _type(pilot, app, "#fix-time", "04:45")
        assert _msg(app, "fix-time") == (
            "today, 02 05:45Z · ship 02 04:45 (+1)")
        await _type(pilot, app, "#fix-time", "11:15")
        assert _msg(app, "fix-time").startswith("yesterday, 01 12:15Z")
        # the entry form reads its time the same way
        await pilot.press("ctrl+n")
        await _type(pilot, app, "#entry-time", "02 06:33Z")
        assert _msg(app, "entry-time") == "02 06:33Z · ship 02 05:33 (+1)"


@pytest.mark.parametrize("text", ["noon", "2027-01-01T00:00Z", "2020-01-01T00:00Z",
                                  "05 25:00Z", "2026-02-30T10:00Z", "06:33 ZD+20"])
async def test_the_whole_message_beside_the_time_shows_at_80_columns(session, text):
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(80, 24)) as pilot:
        await _open_log(pilot, app)
        await _type(pilot, app, "#fix-time", text)
        await pilot.pause()
        msg = app.query_one("#fix-time-msg")
        whole = " ".join(_msg(app, "fix-time").split())
        assert len(whole) > 20
        assert _shown_text(msg) == whole
        # ... and none of it is under the next row of the form
        assert msg.region.bottom <= app.query_one("#fix-pos").region.y


async def test_f3_puts_the_cursor_in_the_time_field(session):
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.pause()
        await pilot.press("f3")
        await pilot.pause()
        await pilot.press("1", "4", ":", "3", "0", "Z")  # typed at once: nothing is lost
        assert app.focused is app.query_one("#fix-time")
        assert app.query_one("#fix-time").value == "14:30Z"
        # back to Plan and to Log again: the cursor goes to the form again
        await pilot.press("ctrl+l")
        assert app.focused is app.query_one("#fix-table")
        await pilot.press("f2")
        await pilot.pause()
        await pilot.press("f3")
        await pilot.pause()
        assert app.focused is app.query_one("#fix-time")


async def test_a_cleared_entry_form_has_no_old_messages(session):
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        await _open_log(pilot, app)
        await pilot.press("ctrl+n")
        await pilot.pause()
        app.query_one("#entry-kind").value = "clock-change"
        await pilot.pause()
        # before Ctrl+S the missing zone is a hint, not an error
        assert not app.query_one("#entry-zd").has_class("-bad")
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert app.query_one("#entry-zd").has_class("-bad")
        await _type(pilot, app, "#entry-zd", "+2")
        await _type(pilot, app, "#entry-text", "clocks retarded 1 h")
        await pilot.press("ctrl+s")
        await _settle(pilot, app)
        assert [(e.kind, e.zd_minutes) for e in session.entries()] == [("clock-change", 120)]
        # the form is empty again, and so are its errors
        assert app.query_one("#entry-zd").value == ""
        for fid in ("entry-time", "entry-zd", "entry-text"):
            assert not app.query_one(f"#{fid}").has_class("-bad"), fid
            assert not app.query_one(f"#{fid}-msg").has_class("-bad"), fid
        assert "needs the new zone" not in _msg(app, "entry-zd")
        # the same for the fix form: a failed Ctrl+S, then a fix logged
        await pilot.press("ctrl+n")
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert app.query_one("#fix-pos-msg").has_class("-bad")
        await _type(pilot, app, "#fix-pos", "49 45.0N 6 30.0W")
        await pilot.press("ctrl+s")
        await _settle(pilot, app)
        assert len(session.fixes()) == 1
        assert not app.query_one("#fix-pos-msg").has_class("-bad")
        assert _msg(app, "fix-pos") == "required"


async def test_fixes_seconds_apart_show_their_seconds(session):
    t = datetime(2026, 5, 2, 3, 0, tzinfo=UTC)
    for i, remark in enumerate(("feed: on demand", "feed: course change", "feed: interval")):
        session.add_fix(Fix(t + timedelta(seconds=30 * i), 49.0 + i * 1e-3, -6.0, sog_kn=6.0,
                            cog=45.0, method="celestial", remarks=remark))
    session.add_fix(Fix(t + timedelta(minutes=5), 50.0, -6.0, remarks="typed wrong"))
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        log = await _open_log(pilot, app)
        table = app.query_one("#fix-table")
        times = [str(table.get_row_at(i)[1]) for i in range(table.row_count)]
        assert times == ["02 03:00:00Z", "02 03:00:30Z", "02 03:01:00Z", "02 03:05:00Z"]
        # the remarks (why the feed logged a fix) are on screen at 100 columns, and the
        # suspect's mark with them
        columns = list(table.columns.values())
        x = sum(c.get_render_width(table) for c in columns[:-1])
        assert [str(c.label) for c in columns][-1] == "Remarks"
        assert x + len("feed: course change") <= table.scrollable_content_region.width
        assert str(table.get_row_at(3)[-1]).startswith("SUSPECT")
        assert "typed wrong" in str(table.get_row_at(3)[-1])
        assert log.shown[-1].suspect


async def test_a_key_switches_between_fixes_and_entries(session):
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        await _open_log(pilot, app)
        tabs = app.query_one("#log-tabs")
        assert tabs.active == "log-fixes"
        await pilot.press("ctrl+n")
        await pilot.pause()
        assert tabs.active == "log-entries"
        assert app.focused is app.query_one("#entry-kind")
        await pilot.press("ctrl+n")
        await pilot.pause()
        assert tabs.active == "log-fixes" and app.focused is app.query_one("#fix-time")
        # in the footer
        keys = {b.key: b.description for b in app.active_bindings.values()
                for b in [b.binding]}
        assert keys.get("ctrl+n") == "Fixes/Entries"
        # in the command palette
        commands = app.extra_commands()["log"]
        assert any(action == "switch_tab" for _t, action, _h in commands)
        from passagelog.tui import help_screen as hs

        assert "| Ctrl+N |" in hs.help_text()
