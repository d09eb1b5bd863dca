"""The Plan view: the voyage's waypoints and legs in a table, edited in place.

The table shows every waypoint with the leg that ends at it and the figures computed from
them (courses, distance by the leg's sailing and by both sailings, cumulative distance, time,
ETA in UTC and ship's time, wheel-over distance). The editor under the table changes the
selected row; the figures follow as you type. A waypoint may carry a fixed ETA and/or ETD
(UTC; the schedule, marked ``*``): legs after a fixed ETD start from it, a fixed ETA shows
the speed required to make it ("Req kn") beside the planned speed, and the ETD at row 1 is
the planned departure. Ctrl+S saves the edits as a new revision after
asking for a change note.
"""

from __future__ import annotations

from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Grid, Vertical
from textual.message import Message
from textual.widgets import DataTable, Input, Label, Select, Static

from passagelog.errors import PassagelogError
from passagelog.nav.units import NM_M
from passagelog.tui import plan_rows as pr
from passagelog.tui import text as fmt
from passagelog.tui.table import Table

COLUMNS = (
    ("#", "n"), ("Waypoint", "name"), ("Position", "pos"), ("Sail", "sail"), ("Kn", "kn"),
    ("Req kn", "req"),
    ("XTL P/S", "xtl"), ("Turn", "turn"), ("Course", "course"), ("Dist", "dist"),
    ("GC", "gc"), ("RL", "rl"), ("Cum", "cum"), ("Time", "time"), ("ETA UTC", "eta"),
    ("ETD UTC", "etd"), ("ETA ship", "etz"), ("Alter", "alter"), ("WO", "wo"),
)

FIELDS = (
    # id, label, placeholder
    ("name", "Name", "WP name"),
    ("pos", "Position", "e.g. 47 36.5N 122 20.1W"),
    ("speed", "Speed kn", ""),
    ("xtl_port", "XTL port NM", ""),
    ("xtl_stbd", "XTL stbd NM", ""),
    ("turn", "Turn R NM", ""),
    ("arrival", "Arrival R NM", ""),
)

TIME_FIELDS = (
    ("eta", "Fixed ETA UTC", "none; e.g. 03 08:00Z"),
    ("etd", "Fixed ETD UTC", "e.g. 03 09:00Z"),
)

FIXED = "*"  # marks a time fixed in the schedule (the rest are worked out)

SAILING_CHOICES = [("RL rhumb line", "rhumb"), ("GC great circle", "great-circle")]


class PlanView(Vertical):
    """Plan table and row editor."""

    DEFAULT_CSS = """
    PlanView #plan-times {
        grid-size: 4;
        grid-columns: auto 1fr auto 1fr;
        grid-rows: 1;
        grid-gutter: 0 1;
        height: 1;
        padding: 0 1;
    }
    """

    BINDINGS = [
        Binding("enter", "edit", "Edit", show=False),
        Binding("insert,plus", "insert", "Insert"),
        Binding("delete", "delete", "Delete"),
        Binding("ctrl+up", "move(-1)", "Move up", show=False),
        Binding("ctrl+down", "move(1)", "Move down", show=False),
        Binding("ctrl+r", "reverse", "Reverse"),
        Binding("ctrl+z", "undo", "Undo", show=False),
        Binding("ctrl+t", "times", "Times"),
        Binding("ctrl+s", "save", "Save"),
        Binding("escape", "leave_editor", "Back to the table", show=False),
    ]

    class Saved(Message):
        """A new revision was stored."""

        def __init__(self, revision: int | None) -> None:
            super().__init__()
            self.revision = revision

    def __init__(self, session, **kwargs) -> None:
        super().__init__(**kwargs)
        self.session = session
        self.rows: list[pr.PlanRow] = []
        self.figures: list[pr.RowFigures] = []
        self.history: list[list[pr.PlanRow]] = []
        self.saved_rows: list[pr.PlanRow] = []  # as the revision in force has them
        self.dirty = False
        self._loading = False
        self._editor_row = -1

    def compose(self) -> ComposeResult:
        yield Static("", id="plan-head", classes="view-head")
        table = Table(id="plan-table", cursor_type="row", zebra_stripes=True,
                          fixed_columns=2)  # number and name stay when scrolled sideways
        yield table
        with Grid(id="plan-editor"):
            for fid, label, placeholder in FIELDS[:2]:
                yield Label(label, classes="field-label")
                yield Input(placeholder=placeholder, id=f"plan-{fid}", compact=True)
            yield Label("Sailing", classes="field-label")
            # blank at row 1 only: the departure point ends no leg
            yield Select(SAILING_CHOICES, id="plan-sailing", allow_blank=True,
                         prompt="(no leg)", value="rhumb", compact=True)
            for fid, label, placeholder in FIELDS[2:]:
                yield Label(label, classes="field-label")
                yield Input(placeholder=placeholder, id=f"plan-{fid}", compact=True)
        with Grid(id="plan-times"):
            for fid, label, placeholder in TIME_FIELDS:
                yield Label(label, classes="field-label")
                yield Input(placeholder=placeholder, id=f"plan-{fid}", compact=True)
        yield Static("", id="plan-message", classes="field-error")

    def on_mount(self) -> None:
        table = self.query_one("#plan-table", DataTable)
        for label, key in COLUMNS:
            table.add_column(label, key=key)
        self.load()

    # --- loading and drawing ---
    def load(self) -> None:
        route = self.session.route
        self.rows = pr.rows_from_route(route) if route is not None else []
        self.saved_rows = [pr.PlanRow(**vars(r)) for r in self.rows]
        self.history.clear()
        self.dirty = False
        self.refresh_table()
        self.query_one("#plan-editor").display = bool(self.rows)
        self.query_one("#plan-times").display = bool(self.rows)
        self.fill_editor()

    def refresh_table(self, keep_row: int | None = None) -> None:
        table = self.query_one("#plan-table", DataTable)
        row_now = table.cursor_row if keep_row is None else keep_row
        voyage = self.session.voyage
        departure = voyage.departure_utc if voyage else None
        zone = self._ship_zone()
        self.figures = pr.compute(self.rows, departure) if self.rows else []
        table.clear()
        for i, (row, fig) in enumerate(zip(self.rows, self.figures)):
            leg = i > 0
            xtl = (f"{fmt.nm_opt(row.xtl_port_m) or fmt.DASH}/"
                   f"{fmt.nm_opt(row.xtl_stbd_m) or fmt.DASH}") if leg else ""
            sail = ("GC" if row.sailing == "great-circle" else "RL") if leg else ""
            table.add_row(
                str(i + 1), row.name, fmt.position(row.lat, row.lon), sail,
                fmt.num_opt(row.speed_kn) if leg else "",
                f"{fig.required_kn:.1f}" if fig.required_kn is not None else "", xtl,
                fmt.nm_opt(row.turn_radius_m) if leg else "",
                f"{fmt.course(fig.initial_course)}" if leg else "",
                fmt.nm(fig.distance_m) if leg else "",
                fmt.nm(fig.gc_distance_m) if leg else "",
                fmt.nm(fig.rhumb_distance_m) if leg else "",
                fmt.nm(fig.cumulative_m),
                fmt.duration(fig.leg_time_s) if leg else "",
                _fixed(fig.eta_utc, row.eta_utc) if leg else "",
                (_fixed(fig.etd_utc, row.etd_utc)
                 if i == 0 or (row.etd_utc is not None and i < len(self.rows) - 1) else ""),
                fmt.ship_time(fig.eta_utc if leg else fig.etd_utc,
                              zone(fig.eta_utc if leg else fig.etd_utc)),
                (f"{fig.alteration_deg:+.0f}°" if fig.alteration_deg is not None else ""),
                fmt.nm(fig.wheel_over_m, 2) if fig.wheel_over_m is not None else "",
                key=str(i),
            )
        if self.rows:
            table.move_cursor(row=max(0, min(row_now, len(self.rows) - 1)))
        self.update_head()

    def _ship_zone(self):
        """The ship's zone (minutes) in force at a time: the voyage's, changed by the clock
        changes logged at or before it (a time after the last one keeps the zone now)."""
        from passagelog.review.inputs import clocks_from

        if self.session.voyage is None:
            return lambda t: 0
        try:
            clocks = clocks_from(self.session.zd_minutes, self.session.entries())
        except PassagelogError:
            return lambda t: self.session.zd_minutes
        return lambda t: clocks.zd_at(t.timestamp()) if t is not None else clocks.zd_minutes[0]

    def _zd_head(self) -> str:
        """The voyage's zone, and the zone now where clock changes have moved it."""
        first = self.session.zd_minutes
        now = self._ship_zone()(self.session.now())
        if now == first:
            return fmt.zd_text(first)
        return f"{fmt.zd_text(first)} at departure, {fmt.zd_text(now)} now"

    def update_head(self) -> None:
        head = self.query_one("#plan-head", Static)
        route = self.session.route
        voyage = self.session.voyage
        if voyage is None:
            head.update("No voyage is open. Ctrl+O opens one of this logbook or starts a "
                        "new one (or try the demo: 'passagelog demo').")
            return
        if route is None and not self.rows:
            head.update(f"Voyage {voyage.name}: no plan yet. Ins starts one (or import a "
                        "route file: 'passagelog import --help').")
            return
        total = self.figures[-1].cumulative_m if self.figures else 0.0
        def total_of(attr: str) -> str:
            values = [getattr(f, attr) for f in self.figures[1:]]
            if not values or any(v is None for v in values):
                return fmt.DASH
            return f"{sum(values) / NM_M:.1f}"

        gc, rl = total_of("gc_distance_m"), total_of("rhumb_distance_m")
        rev = route.revision if route is not None and route.revision is not None else "–"
        state = "  [b]edited, not saved (Ctrl+S)[/b]" if self.dirty else ""
        dep = self.figures[0].etd_utc if self.figures else voyage.departure_utc
        fixed_dep = FIXED if self.rows and self.rows[0].etd_utc is not None else ""
        others = pr.other_schedules_note(route)
        head.update(
            f"[b]{route.name if route else 'plan'}[/b] rev {rev}  {len(self.rows)} WP  "
            f"{total / NM_M:.1f} NM as planned (all GC {gc}, all RL {rl})  "
            f"ETD {fmt.utc_time(dep)}{fixed_dep}  ZD {self._zd_head()}"
            f"{'  ' if others else ''}{others}{state}"
        )

    def selected(self) -> int:
        return self.query_one("#plan-table", DataTable).cursor_row

    def fill_editor(self, index: int | None = None) -> None:
        """Put the selected row's values into the editor fields."""
        if not self.rows:
            return
        i = self.selected() if index is None else index
        i = max(0, min(i, len(self.rows) - 1))
        row = self.rows[i]
        self._editor_row = i
        self._loading = True
        try:
            values = {
                "name": row.name, "pos": fmt.position(row.lat, row.lon),
                "speed": fmt.num_opt(row.speed_kn), "xtl_port": fmt.nm_opt(row.xtl_port_m),
                "xtl_stbd": fmt.nm_opt(row.xtl_stbd_m), "turn": fmt.nm_opt(row.turn_radius_m),
                "arrival": fmt.nm_opt(row.arrival_radius_m),
                "eta": _time_text(row.eta_utc), "etd": _time_text(row.etd_utc),
            }
            for fid, value in values.items():
                field = self.query_one(f"#plan-{fid}", Input)
                field.value = value
                field.remove_class("-bad")
            self.query_one("#plan-sailing", Select).value = (row.sailing if i > 0
                                                             else Select.NULL)
            leg_fields = ("speed", "xtl_port", "xtl_stbd", "turn")
            for fid in leg_fields:
                self.query_one(f"#plan-{fid}", Input).disabled = i == 0
            self.query_one("#plan-sailing", Select).disabled = i == 0
            # no ETA at the departure point, no ETD at the destination (blank, not editable)
            self.query_one("#plan-eta", Input).disabled = i == 0
            self.query_one("#plan-etd", Input).disabled = i == len(self.rows) - 1 and i > 0
            message = self.query_one("#plan-message", Static)
            message.remove_class("-bad")
            message.update(self.row_message(i))
        finally:
            self.call_after_refresh(self._done_loading)

    def row_message(self, i: int) -> str:
        """What the line under the editor says about row ``i``."""
        row = self.rows[i]
        fig = self.figures[i] if i < len(self.figures) else None
        if i == 0:
            text = ("Row 1 is the departure point: its fixed ETD is the planned departure; "
                    "leg settings start at row 2. \u2190/\u2192 scroll the table.")
        elif i == len(self.rows) - 1:
            text = (f"Editing row {i + 1}: {row.name}, the destination (no ETD: nothing "
                    "departs from it), and the leg ending at it.")
        else:
            text = f"Editing row {i + 1}: {row.name} and the leg ending at it."
        if fig is not None and fig.problem:
            return f"{text} [b]{fig.problem}[/b]"
        if fig is not None and fig.required_kn is not None:
            at = (f"at {fmt.num_opt(row.speed_kn)} kn {fmt.utc_time(fig.planned_arrival_utc)}; "
                  if row.speed_kn and fig.planned_arrival_utc is not None else "")
            k = fig.required_from or 0
            since = self.figures[k].etd_utc
            return (f"Row {i + 1} {row.name}: {at}[b]{fig.required_kn:.1f} kn[/b] from "
                    f"{self.rows[k].name} (ETD {fmt.utc_time(since)}) makes the fixed ETA "
                    f"{fmt.utc_time(row.eta_utc)}{FIXED}.")
        return text

    def _done_loading(self) -> None:
        self._loading = False

    # --- editing ---
    def _remember(self) -> None:
        self.history.append([pr.PlanRow(**vars(r)) for r in self.rows])
        del self.history[:-50]

    def _mark_dirty(self) -> None:
        """Edited: unless the rows are back to what the revision in force has."""
        self.dirty = ([vars(r) for r in self.rows] != [vars(r) for r in self.saved_rows])

    def _changed(self, rows: list[pr.PlanRow], cursor: int) -> None:
        self._remember()
        self.rows = rows
        self._mark_dirty()
        self.refresh_table(keep_row=cursor)
        self.fill_editor(cursor)

    @on(DataTable.RowHighlighted, "#plan-table")
    def _row_moved(self, event: DataTable.RowHighlighted) -> None:
        if self.selected() != self._editor_row:
            self.fill_editor()

    @on(DataTable.RowSelected, "#plan-table")
    def _row_chosen(self) -> None:
        self.action_edit()

    @on(Input.Changed)
    @on(Select.Changed)
    def _field_changed(self, event) -> None:
        if self._loading or not self.rows or event.control.id is None:
            return
        if not event.control.id.startswith("plan-"):
            return
        self.apply_editor()

    @on(Input.Submitted)
    def _submitted(self, event: Input.Submitted) -> None:
        """Enter in a field of the editor goes on to the next field (each is taken as it is
        typed), passing over the sailing (a list Enter would open: Tab reaches it); in the
        last field of the row, or in a fixed time, back to the table."""
        fid = event.input.id or ""
        if not fid.startswith("plan-"):
            return
        event.stop()
        if fid in ("plan-arrival", "plan-eta", "plan-etd"):
            if self.apply_editor():
                self.query_one("#plan-table", DataTable).focus()
        elif fid == "plan-pos" and not self.query_one("#plan-speed", Input).disabled:
            self.query_one("#plan-speed", Input).focus()
        else:
            self.app.action_focus_next()

    def apply_editor(self) -> bool:
        """Read the editor into the selected row; True when every field is valid."""
        i = self._editor_row if 0 <= self._editor_row < len(self.rows) else self.selected()
        row = self.rows[i]
        new = pr.PlanRow(**vars(row))
        errors: list[str] = []

        def take(fid: str, parse):
            field = self.query_one(f"#plan-{fid}", Input)
            try:
                value = parse(field.value)
            except PassagelogError as exc:
                field.add_class("-bad")
                errors.append(str(exc))
                return None, False
            field.remove_class("-bad")
            return value, True

        name, ok = take("name", _parse_name)
        if ok:
            new.name = name
        pos, ok = take("pos", fmt.parse_position)
        if ok:
            new.lat, new.lon = pos
        if i > 0:
            sailing = self.query_one("#plan-sailing", Select).value
            if sailing in ("rhumb", "great-circle"):
                new.sailing = sailing
            for fid, attr, parse in (
                ("speed", "speed_kn", lambda t: pr.parse_optional_number(
                    t, "planned speed", unit="kn", high=1000.0)),
                ("xtl_port", "xtl_port_m",
                 lambda t: pr.parse_limit(t, "port cross-track limit")),
                ("xtl_stbd", "xtl_stbd_m",
                 lambda t: pr.parse_limit(t, "starboard cross-track limit")),
                ("turn", "turn_radius_m", lambda t: pr.parse_nm(t, "turn radius")),
            ):
                value, ok = take(fid, parse)
                if ok:
                    setattr(new, attr, value)
        value, ok = take("arrival", lambda t: pr.parse_nm(t, "arrival radius"))
        if ok:
            new.arrival_radius_m = value
        fig = self.figures[i] if i < len(self.figures) else None
        ref = None
        if fig is not None:
            ref = fig.planned_arrival_utc or fig.eta_utc or fig.etd_utc
        ref = ref or (self.figures[0].etd_utc if self.figures else None)
        for fid, what in (("eta", "fixed ETA"), ("etd", "fixed ETD")):
            if (fid == "eta" and i == 0) or (fid == "etd" and i == len(self.rows) - 1 > 0):
                continue  # no ETA at the departure point, no ETD at the destination
            value, ok = take(fid, lambda t, w=what: pr.parse_schedule_time(t, ref, w))
            if ok:
                setattr(new, f"{fid}_utc", value)
        message = self.query_one("#plan-message", Static)
        changed = vars(new) != vars(row)
        if changed:
            self._remember()
            self.rows[i] = new
            self._mark_dirty()
            self.refresh_table(keep_row=i)
        if errors:
            message.update("[b]Not taken:[/b] " + "; ".join(errors))
            message.add_class("-bad")
        elif changed or message.has_class("-bad"):
            text = self.row_message(i)
            message.update(text if "fixed ETA" in text or "[b]" in text
                           else f"Row {i + 1} ({new.name}) updated.")
            message.remove_class("-bad")
        return not errors

    def action_edit(self) -> None:
        if self.rows:
            self.query_one("#plan-name", Input).focus()

    def action_times(self) -> None:
        """To the selected row's fixed ETA field (row 1: its ETD, the planned departure)."""
        if self.rows:
            fid = "etd" if self._editor_row == 0 else "eta"
            self.query_one(f"#plan-{fid}", Input).focus()

    def action_leave_editor(self) -> None:
        """Esc in the editor: back to the table, the fields showing the row as it stands
        (a value not taken is dropped)."""
        table = self.query_one("#plan-table", DataTable)
        if self.rows and not table.has_focus:
            self.fill_editor(self._editor_row)
            table.focus()

    def action_insert(self) -> None:
        if self.session.voyage is None:
            self.notify("No voyage is open: Ctrl+O opens or starts one.", severity="warning")
            return
        if not self.rows:  # a voyage with no plan yet: its first two waypoints
            latest = self.session.latest_fix()
            start = (latest.lat, latest.lon) if latest is not None else (0.0, 0.0)
            self._changed(pr.first_rows(*start), 0)
            self.query_one("#plan-editor").display = True
            self.query_one("#plan-times").display = True
            self.notify("A new plan: type the departure and destination positions (Enter "
                        "edits a row), insert more waypoints, then Ctrl+S saves it.")
            return
        i = self.selected()
        self._changed(pr.insert_after(self.rows, i), i + 1)
        self.notify(f"Inserted {self.rows[i + 1].name} after row {i + 1}; edit it below.")

    def action_delete(self) -> None:
        if not self.rows:
            return
        i = self.selected()
        try:
            rows = pr.delete(self.rows, i)
        except PassagelogError as exc:
            self.notify(str(exc), severity="error")
            return
        gone = self.rows[i].name
        self._changed(rows, min(i, len(rows) - 1))
        self.notify(f"Deleted {gone} (Ctrl+Z undoes).")

    def action_move(self, step: int) -> None:
        if self.rows:
            i = self.selected()
            j = max(0, min(len(self.rows) - 1, i + step))
            if j != i:
                self._changed(pr.move(self.rows, i, step), j)

    def action_move_up(self) -> None:
        self.action_move(-1)

    def action_move_down(self) -> None:
        self.action_move(1)

    def action_reverse(self) -> None:
        if self.rows:
            timed = any(r.eta_utc or r.etd_utc for r in self.rows)
            self._changed(pr.reverse(self.rows), 0)
            self.notify("Plan reversed (port and starboard limits swapped with the direction)"
                        + ("; fixed ETAs/ETDs dropped (Ctrl+Z undoes)." if timed else "."))

    def action_undo(self) -> None:
        if self.history:
            self.rows = self.history.pop()
            self._mark_dirty()
            self.refresh_table()
            self.fill_editor()
        else:
            self.notify("Nothing to undo.")

    def action_save(self) -> None:
        from passagelog.tui.note_dialog import ChangeNoteDialog

        if not self.rows or self.session.voyage is None:
            self.notify("No plan to save.", severity="warning")
            return
        if not self.dirty:
            self.notify("No changes to save.")
            return
        bad = [w for w in self.query("#plan-editor Input, #plan-times Input")
               if w.has_class("-bad")]
        if bad:
            self.notify("A field under the table is not taken (marked): correct it, or Esc "
                        "to put back the row's values, then save.", severity="error")
            bad[0].focus()
            return
        base = self.session.route
        try:
            route = pr.route_from_rows(base.name if base else self.session.voyage.name,
                                       self.rows, base=base,
                                       departure_utc=self.session.voyage.departure_utc)
        except PassagelogError as exc:
            self.notify(str(exc), severity="error")
            return
        total = self.figures[-1].cumulative_m / NM_M if self.figures else 0.0
        fixed = sum((r.eta_utc is not None) + (r.etd_utc is not None) for r in self.rows)
        summary = f"{len(self.rows)} waypoints, {total:.1f} NM" + (
            f", {fixed} fixed time{'s' if fixed != 1 else ''} in the schedule." if fixed else ".")

        def done(note: str | None) -> None:
            if note:
                self._save(route, note)

        self.app.push_screen(ChangeNoteDialog(summary), done)

    @work(thread=True, exclusive=True, group="plan-save")
    def _save(self, route, note: str) -> None:
        try:
            saved = self.session.save_revision(route, note)
        except PassagelogError as exc:
            self.app.call_from_thread(self.notify, str(exc), severity="error")
            return
        self.app.call_from_thread(self._saved, saved)

    def _saved(self, route) -> None:
        rev = route.revision if route is not None else None
        self.load()
        self.notify(f"Saved plan revision {rev}.")
        self.post_message(self.Saved(rev))


def _fixed(shown, fixed) -> str:
    """A time for the table, marked when the schedule fixes it."""
    return fmt.utc_time(shown) + (FIXED if fixed is not None else "")


def _time_text(t) -> str:
    """A fixed time for its editor field (read back by ``parse_schedule_time``)."""
    if t is None:
        return ""
    from passagelog.nav.zonetime import format_utc

    text = format_utc(t)
    return text[:-4] + "Z" if text.endswith(":00Z") else text


def _parse_name(text: str) -> str:
    from passagelog.errors import InputError

    name = text.strip()
    if not name:
        raise InputError("waypoint name must not be empty")
    return name
