"""Plan editing guards: a field not taken blocks the save, Esc puts the row's values back,
a cross-track limit of 0 is refused, the departure point shows no sailing, and a voyage
without a plan gets its first two waypoints from Ins."""

from __future__ import annotations

from datetime import datetime, timezone

from passagelog.tui.app import PassagelogApp

from .conftest import fixed_clock


async def _ready(pilot, app):
    table = app.query_one("#plan-table")
    for _ in range(100):
        if app.focused is table:
            break
        await pilot.pause(0.02)
    return app.query_one("#plan-view"), table


async def test_a_field_not_taken_blocks_the_save_and_esc_puts_the_row_back(session):
    from passagelog.tui.note_dialog import ChangeNoteDialog

    app = PassagelogApp(session=session, watch_poll_s=5.0, prefetch_review_s=None)
    async with app.run_test(size=(100, 30)) as pilot:
        plan, table = await _ready(pilot, app)
        table.move_cursor(row=1)
        await pilot.pause()
        pos = app.query_one("#plan-pos")
        before = (plan.rows[1].lat, plan.rows[1].lon)
        pos.value = "48 40.0N 008 00.0W"  # taken
        await pilot.pause()
        assert plan.dirty and plan.rows[1].lat == 48 + 40 / 60
        pos.value = "48 40.0N 008 00.0Wx"  # not taken: the row keeps 48 40N 8 00W
        await pilot.pause()
        assert pos.has_class("-bad")
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert not isinstance(app.screen, ChangeNoteDialog)  # refused: a field is marked
        assert app.focused is pos
        await pilot.press("escape")
        await pilot.pause()
        assert app.focused is table and not pos.has_class("-bad")
        assert pos.value == "48°40.000'N 008°00.000'W"  # what the row holds
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert isinstance(app.screen, ChangeNoteDialog)
        assert before != (plan.rows[1].lat, plan.rows[1].lon)


async def test_a_limit_of_zero_is_refused_and_row_1_has_no_sailing(session):
    from textual.widgets import Select

    app = PassagelogApp(session=session, watch_poll_s=5.0, prefetch_review_s=None)
    async with app.run_test(size=(100, 30)) as pilot:
        plan, table = await _ready(pilot, app)
        assert app.query_one("#plan-sailing").value is Select.NULL  # row 1 ends no leg
        table.move_cursor(row=2)
        await pilot.pause()
        assert app.query_one("#plan-sailing").value == "great-circle"
        field = app.query_one("#plan-xtl_port")
        field.value = "0"
        await pilot.pause()
        assert field.has_class("-bad")
        assert "more than 0 NM" in str(app.query_one("#plan-message").render())
        assert plan.rows[2].xtl_port_m == 3704.0  # unchanged (conftest: 2 NM)


async def test_ins_starts_the_plan_of_a_voyage_that_has_none(tmp_path):
    from passagelog.model import Craft, Voyage
    from passagelog.store import Logbook
    from passagelog.tui.note_dialog import ChangeNoteDialog
    from passagelog.tui.session import Session

    path = tmp_path / "noplan.sqlite"
    with Logbook.open(path) as book:
        craft = book.add_craft(Craft("Tern"))
        book.add_voyage(Voyage("Harbour trip", craft_id=craft.craft_id,
                               departure_utc=datetime(2026, 5, 1, 6, tzinfo=timezone.utc)))
    session = Session(path, clock=fixed_clock)
    app = PassagelogApp(session=session, watch_poll_s=5.0, prefetch_review_s=None)
    async with app.run_test(size=(100, 30)) as pilot:
        plan, table = await _ready(pilot, app)
        assert "no plan yet. Ins starts one" in str(app.query_one("#plan-head").render())
        await pilot.press("insert")
        await pilot.pause()
        assert [r.name for r in plan.rows] == ["Departure", "Destination"]
        table.move_cursor(row=1)
        await pilot.pause()
        app.query_one("#plan-pos").value = "50 10N 004 10W"
        await pilot.pause()
        await pilot.press("ctrl+s")
        await pilot.pause()
        assert isinstance(app.screen, ChangeNoteDialog)
        app.screen.query_one("#note-input").value = "first plan"
        await pilot.press("enter")
        for _ in range(100):
            await pilot.pause(0.02)
            if session.route is not None:
                break
    assert session.route is not None and len(session.route.waypoints) == 2
    assert session.route.waypoints[1].lat == 50 + 10 / 60


async def test_enter_in_the_editor_goes_on_to_the_next_field_and_back_to_the_table(session):
    """As in the Log's forms, Enter goes on to the next field (each field is taken as it is
    typed); Enter in the last field of the row puts the cursor back in the table."""
    app = PassagelogApp(session=session, watch_poll_s=5.0, prefetch_review_s=None)
    async with app.run_test(size=(100, 30)) as pilot:
        plan, table = await _ready(pilot, app)
        table.move_cursor(row=2)
        await pilot.pause()
        await pilot.press("enter")  # edit the row: the cursor goes to its name
        await pilot.pause()
        assert app.focused is app.query_one("#plan-name")
        await pilot.press("enter")
        await pilot.pause()
        assert app.focused is app.query_one("#plan-pos")
        await pilot.press("enter")  # over the sailing (Enter would open its list)
        await pilot.pause()
        assert app.focused is app.query_one("#plan-speed")
        app.query_one("#plan-arrival").focus()
        await pilot.pause()
        app.query_one("#plan-arrival").value = "0.3"
        await pilot.press("enter")
        await pilot.pause()
        assert app.focused is table
        assert abs(plan.rows[2].arrival_radius_m - 0.3 * 1852.0) < 1e-6
