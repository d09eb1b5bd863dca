"""Voyages from the UI (Ctrl+O): choose another, start a new one, and the app opened anew on
it; a new logbook shows the list at once; quitting asks first when the plan has edits."""

from __future__ import annotations

from datetime import datetime, timedelta, timezone

from passagelog.tui.app import OpenVoyage, PassagelogApp

from .conftest import fixed_clock


async def _wait(pilot, done, tries=100):
    for _ in range(tries):
        if done():
            return True
        await pilot.pause(0.02)
    return done()


async def test_a_new_voyage_is_started_and_opened(logbook_path):
    from passagelog.store import Logbook
    from passagelog.tui.session import Session
    from passagelog.tui.voyage_dialog import NewVoyageDialog, VoyageDialog

    app = PassagelogApp(session=Session(logbook_path, clock=fixed_clock), watch_poll_s=5.0,
                        prefetch_review_s=None)
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.press("ctrl+o")
        assert await _wait(pilot, lambda: isinstance(app.screen, VoyageDialog))
        listed = app.screen.query_one("#voyage-list")
        assert listed.option_count == 2  # the sample voyage, and "New voyage…"
        assert "Trial passage  (open)" in str(listed.get_option_at_index(0).prompt)
        listed.highlighted = 1
        await pilot.press("enter")
        assert await _wait(pilot, lambda: isinstance(app.screen, NewVoyageDialog))
        dialog = app.screen
        assert dialog.query_one("#voyage-craft").value == "Kestrel"  # the only craft
        dialog.query_one("#voyage-name").value = "Trial passage"
        await pilot.press("enter")
        assert "already in this logbook" in str(dialog.query_one("#voyage-error").render())
        dialog.query_one("#voyage-name").value = "Isle run"
        dialog.query_one("#voyage-craft").value = "Petrel"
        dialog.query_one("#voyage-zd").value = "+2"
        dialog.query_one("#voyage-departure").value = "2026-06-01T08:00"  # ship's time
        await pilot.press("enter")
        assert await _wait(pilot, lambda: app.return_value is not None)
    assert isinstance(app.return_value, OpenVoyage)
    with Logbook.open(logbook_path) as book:
        v = book.voyage(app.return_value.voyage_id)
        assert v.name == "Isle run" and v.zd_minutes == 120
        # ZT + ZD = UTC (REFERENCE.md, Zone time): 08:00 at ZD +2 is 10:00Z
        assert v.departure_utc == datetime(2026, 6, 1, 10, 0, tzinfo=timezone.utc)
        assert book.craft(v.craft_id).name == "Petrel"


async def test_a_new_logbook_shows_the_voyages_at_once(tmp_path):
    from passagelog.store import Logbook
    from passagelog.tui.session import Session
    from passagelog.tui.voyage_dialog import VoyageDialog

    path = tmp_path / "new.sqlite"
    Logbook.open(path).close()
    app = PassagelogApp(session=Session(path, clock=fixed_clock), watch_poll_s=5.0)
    async with app.run_test(size=(80, 24)) as pilot:
        assert await _wait(pilot, lambda: isinstance(app.screen, VoyageDialog)
                           and app.screen.query("#voyage-hint"))
        assert "No voyage yet" in str(app.screen.query_one("#voyage-hint").render())
        await pilot.press("escape")
        assert await _wait(pilot, lambda: not isinstance(app.screen, VoyageDialog))
        assert "Ctrl+O" in str(app.query_one("#plan-head").render())


def test_run_app_opens_the_app_again_on_the_voyage_chosen(monkeypatch, logbook_path):
    import passagelog.tui as tui

    opened = []
    answers = iter([OpenVoyage(7), None])

    def fake_run(self):
        opened.append(self.session.voyage.voyage_id if self.session.voyage else None)
        return next(answers)

    monkeypatch.setattr(PassagelogApp, "run", fake_run)
    monkeypatch.setattr("passagelog.tui.session.Session.select_voyage",
                        lambda self, v=None: setattr(self, "voyage", type(
                            "V", (), {"voyage_id": v or 1})()))
    tui.run_app(logbook_path)
    assert opened == [1, 7]


async def test_quitting_with_plan_edits_not_saved_asks_first(session):
    from passagelog.tui.confirm_dialog import ConfirmDialog

    app = PassagelogApp(session=session, watch_poll_s=5.0, prefetch_review_s=None)
    async with app.run_test(size=(100, 30)) as pilot:
        plan = app.query_one("#plan-view")
        table = app.query_one("#plan-table")
        assert await _wait(pilot, lambda: app.focused is table)
        await pilot.press("ctrl+r")  # reverse: an edit
        assert plan.dirty
        await pilot.press("ctrl+q")
        assert await _wait(pilot, lambda: isinstance(app.screen, ConfirmDialog))
        await pilot.press("enter")  # the focused button: go back
        assert await _wait(pilot, lambda: not isinstance(app.screen, ConfirmDialog))
        assert app.is_running and plan.dirty
        await pilot.press("ctrl+z")  # undone: back to the saved plan, nothing to lose
        assert not plan.dirty
        await pilot.press("ctrl+q")
        assert await _wait(pilot, lambda: not app.is_running)


def test_the_demo_runs_on_a_clock_started_after_its_voyages_latest_fix(tmp_path):
    """``passagelog demo``: the voyage is dated in 2027, so the UI's clock starts
    DEMO_CLOCK_AFTER after the open voyage's latest fix (read from the logbook here, and
    from the demo's own NMEA log as a cross-check) and runs on; the header says so."""
    import time

    from passagelog.cli.demo import build_demo_logbook, demo_dir
    from passagelog.formats import iter_fixes
    from passagelog.tui import DEMO_CLOCK_AFTER, voyage_clock_for

    path = tmp_path / "demo.sqlite"
    names = build_demo_logbook(path)
    last_in_log = max(f.time_utc for f in iter_fixes(demo_dir() / "ocean" / "fixes.nmea"))
    clock, note = voyage_clock_for(path, names["ocean"])
    first = clock()
    assert note == "demo clock"
    assert timedelta(0) <= first - (last_in_log + DEMO_CLOCK_AFTER) < timedelta(seconds=5)
    time.sleep(0.05)
    assert clock() > first  # it runs on
    app = PassagelogApp(path, voyage=names["ocean"], clock=clock, clock_note=note)
    assert app.session.now() >= first
    # a voyage with no fix: this computer's clock
    from passagelog.model import Voyage
    from passagelog.store import Logbook

    with Logbook.open(path) as book:
        book.add_voyage(Voyage("Empty"))
    assert voyage_clock_for(path, "Empty") == (None, "")


async def test_the_header_says_the_clock_is_the_demos(tmp_path):
    from passagelog.cli.demo import build_demo_logbook
    from passagelog.tui import voyage_clock_for

    path = tmp_path / "demo.sqlite"
    names = build_demo_logbook(path, scenarios=("air",))
    clock, note = voyage_clock_for(path, names["air"])
    app = PassagelogApp(path, voyage=names["air"], clock=clock, clock_note=note,
                        watch_poll_s=5.0, prefetch_review_s=None)
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.pause()
        assert app.title == "passagelog (demo clock)"
