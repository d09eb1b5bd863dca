"""The app shell and the Plan view driven by keyboard, as a user would (Textual Pilot)."""

from __future__ import annotations

from passagelog import CAUTION
from passagelog.tui.app import PassagelogApp


async def test_help_palette_and_light_dark(session):
    from passagelog.tui.help_screen import HelpScreen

    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.press("f1")
        await pilot.pause()
        assert isinstance(app.screen, HelpScreen)
        caution = str(app.screen.query_one("#help-caution").render())
        assert CAUTION.split()[0] in caution and "not a certified" in caution
        await pilot.press("escape")
        assert not isinstance(app.screen, HelpScreen)
        commands = {c.title: c for c in app.get_system_commands(app.screen)}
        titles = set(commands)
        # a palette entry of a view not shown yet opens that view and runs the action
        await commands["Review: XTE plot"].callback()
        await pilot.pause()
        assert app.query_one("#views").active == "review"
        assert app.query_one("#review-tabs").active == "review-xte"
        assert app.theme == "textual-dark"
        await pilot.press("f9")
        assert app.theme == "textual-light"
    for wanted in ("Help", "Show Plan", "Show Log", "Show Watch", "Show Review",
                   "Light or dark", "Plan: insert waypoint", "Plan: delete waypoint",
                   "Plan: move waypoint up", "Plan: reverse", "Plan: undo",
                   "Plan: save revision", "Log: log the fix in the form",
                   "Log: correct the selected fix", "Log: add the log entry",
                   "Watch: refresh now", "Review: recompute", "Review: XTE plot", "Quit"):
        assert wanted in titles


async def test_insert_a_waypoint_edit_it_and_save_a_revision(session):
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        plan = app.query_one("#plan-view")
        await pilot.pause()
        assert app.focused is app.query_one("#plan-table")
        await pilot.press("plus")  # insert after row 1
        await pilot.pause()
        assert len(plan.rows) == 5
        await pilot.press("enter")  # edit: focus goes to the name field
        await pilot.pause()
        name = app.query_one("#plan-name")
        assert app.focused is name
        name.value = ""
        await pilot.press(*"Lizard")
        await pilot.press("tab")  # position field: a position in another notation
        pos = app.query_one("#plan-pos")
        assert app.focused is pos
        pos.value = "49 45.5N 6 30W"
        await pilot.pause()
        assert plan.rows[1].name == "Lizard"
        assert abs(plan.rows[1].lat - (49 + 45.5 / 60)) < 1e-12
        assert abs(plan.rows[1].lon - (-6.5)) < 1e-12
        # a bad speed is refused beside the field and leaves the row as it was
        speed = app.query_one("#plan-speed")
        speed.value = "fast"
        await pilot.pause()
        assert speed.has_class("-bad")
        assert "planned speed 'fast' is not a number" in str(
            app.query_one("#plan-message").render())
        assert plan.rows[1].speed_kn == 12.0
        speed.value = "9.5"
        await pilot.pause()
        assert plan.rows[1].speed_kn == 9.5
        await pilot.press("ctrl+s")
        await pilot.pause()
        from passagelog.tui.note_dialog import ChangeNoteDialog

        assert isinstance(app.screen, ChangeNoteDialog)
        await pilot.press("enter")  # an empty note is refused
        await pilot.pause()
        assert isinstance(app.screen, ChangeNoteDialog)
        await pilot.press(*"Lizard added for a landfall check", "enter")
        await app.workers.wait_for_complete()
        await pilot.pause()
    route = session.route
    assert route.revision == 2 and route.note == "Lizard added for a landfall check"
    assert [w.name for w in route.waypoints] == ["Start", "Lizard", "Ushant W", "Mid", "Ponta"]
    assert route.legs[0].speed_kn == 9.5
    # and it is what a fresh reader of the logbook finds in force
    from passagelog.tui.session import Session

    again = Session(session.db_path)
    assert again.route.revision == 2 and len(again.route.waypoints) == 5


async def test_delete_reverse_and_undo(session):
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(80, 24)) as pilot:
        plan = app.query_one("#plan-view")
        table = app.query_one("#plan-table")
        for _ in range(50):
            await pilot.pause(0.02)
            if app.focused is table:
                break
        assert app.focused is table
        await pilot.press("down", "delete")
        assert [r.name for r in plan.rows] == ["Start", "Mid", "Ponta"]
        await pilot.press("ctrl+r")
        assert [r.name for r in plan.rows] == ["Ponta", "Mid", "Start"]
        await pilot.press("ctrl+z", "ctrl+z")
        assert [r.name for r in plan.rows] == ["Start", "Ushant W", "Mid", "Ponta"]
        table.move_cursor(row=0)
        await pilot.pause()
        await pilot.press("ctrl+down")
        assert [r.name for r in plan.rows][:2] == ["Ushant W", "Start"]


def test_a_calm_screen_unless_animations_are_asked_for(session, monkeypatch):
    """No sliding tab underline by default (it redraws the screen for nothing); the
    TEXTUAL_ANIMATIONS setting, when given, is left as the user set it."""
    from textual import constants

    monkeypatch.delenv("TEXTUAL_ANIMATIONS", raising=False)
    assert PassagelogApp(session=session).animation_level == "none"
    monkeypatch.setenv("TEXTUAL_ANIMATIONS", "full")
    assert PassagelogApp(session=session).animation_level == constants.TEXTUAL_ANIMATIONS


async def test_a_view_chosen_while_the_app_starts_stays_chosen(session):
    """F4 pressed before the first screen is up is not undone by the start-up, which
    focuses the Plan only when no other view was chosen."""
    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.press("f4")
        await pilot.pause()
        await pilot.pause()
        assert app.query_one("#views").active == "watch"
        assert app.focused is app.query_one("#watch-view")


async def test_notices_show_at_the_top_on_plan_and_at_the_bottom_elsewhere(session):
    """Plan's editor, where one types, is at the bottom of the screen, so its notices show
    at the top; the Log's messages beside its fields are at the top, so there (and on the
    other views) notices show at the bottom."""
    app = PassagelogApp(session=session, watch_poll_s=5.0, prefetch_review_s=None)
    async with app.run_test(size=(80, 24), notifications=True) as pilot:
        await pilot.pause()
        app.notify("on Plan")
        await pilot.pause(0.2)
        toast = app.query("Toast").last()
        assert app.has_class("-notices-top") and toast.region.y < 12
        await pilot.press("f3")
        await pilot.pause(0.2)
        app.notify("on Log")
        await pilot.pause(0.2)
        assert not app.has_class("-notices-top")
        assert app.query("Toast").last().region.y >= 12
