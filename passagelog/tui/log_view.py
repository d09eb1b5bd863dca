"""The Log view: enter a fix, see the fix list, correct a fix, keep log entries.

Each field of the fix form is checked as you type, with the reason beside it; Ctrl+S logs
the fix (or, on the Entries tab, adds the entry) when every field is good. The time defaults to now (UTC); ship's time is accepted
with its zone (``2026-05-02T11:50 ZD+1``). In the fix list suspects (implausible speed from
the previous fix) and corrections are marked, and a corrected original stays, struck
through. Enter on a fix opens the correction dialog.

The fix list shows the latest :data:`SHOWN_FIXES` records; it is read in a worker the first
time the view is shown, so a big logbook does not slow the start.
"""

from __future__ import annotations

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Grid, Vertical
from textual.widgets import DataTable, Input, Label, Select, Static, TabbedContent, TabPane

from passagelog.errors import PassagelogError
from passagelog.model import ENTRY_KINDS, FIX_METHODS, Fix, LogEntry
from passagelog.tui import text as fmt

SHOWN_FIXES = 200
SHOWN_ENTRIES = 200

FIX_FIELDS = (
    ("time", "Time", "now (UTC) if empty"),
    ("pos", "Position", "e.g. 47 36.512N 122 20.107W"),
    ("hdop", "HDOP", "optional"),
    ("cog", "COG °T", "optional"),
    ("sog", "SOG kn", "optional"),
    ("remarks", "Remarks", "optional"),
)


class LogView(Vertical):
    """Fix form and fix list; log entries."""

    BINDINGS = [
        Binding("ctrl+s", "record", "Record"),
    ]
    PALETTE = (
        ("Log: log the fix in the form", "log_fix", "Check the form and log the fix (Ctrl+S)"),
        ("Log: correct the selected fix", "correct", "Open the correction dialog (Enter)"),
        ("Log: add the log entry", "add_entry", "Add the entry in the entry form (Ctrl+S)"),
    )

    def __init__(self, session, **kwargs) -> None:
        super().__init__(**kwargs)
        self.session = session
        self.shown: list[Fix] = []
        self.loaded = False
        self.valid: dict[str, bool] = {}

    def compose(self) -> ComposeResult:
        with TabbedContent(id="log-tabs"):
            with TabPane("Fixes", id="log-fixes"):
                with Grid(id="fix-form"):
                    for fid, label, placeholder in FIX_FIELDS[:2]:
                        yield Label(label, classes="field-label")
                        yield Input(placeholder=placeholder, id=f"fix-{fid}", compact=True)
                        yield Static("", id=f"fix-{fid}-msg", classes="field-error")
                    yield Label("Method", classes="field-label")
                    yield Select([(m, m) for m in FIX_METHODS], value="gnss", allow_blank=False,
                                 id="fix-method", compact=True)
                    yield Static("", id="fix-method-msg", classes="field-error")
                    for fid, label, placeholder in FIX_FIELDS[2:]:
                        yield Label(label, classes="field-label")
                        yield Input(placeholder=placeholder, id=f"fix-{fid}", compact=True)
                        yield Static("", id=f"fix-{fid}-msg", classes="field-error")
                yield DataTable(id="fix-table", cursor_type="row", zebra_stripes=True)
            with TabPane("Entries", id="log-entries"):
                with Grid(id="entry-form"):
                    yield Label("Kind", classes="field-label")
                    yield Select([(k, k) for k in ENTRY_KINDS], value="event",
                                 allow_blank=False, id="entry-kind", compact=True)
                    yield Static("", classes="field-error")
                    yield Label("Time", classes="field-label")
                    yield Input(placeholder="empty = now (UTC)", id="entry-time", compact=True)
                    yield Static("", id="entry-time-msg", classes="field-error")
                    yield Label("New ZD", classes="field-label")
                    yield Input(placeholder="clock change only, e.g. +2", id="entry-zd",
                                compact=True)
                    yield Static("", id="entry-zd-msg", classes="field-error")
                    yield Label("Text", classes="field-label")
                    yield Input(placeholder="what happened", id="entry-text", compact=True)
                    yield Static("", id="entry-text-msg", classes="field-error")
                yield DataTable(id="entry-table", cursor_type="row", zebra_stripes=True)

    def on_mount(self) -> None:
        table = self.query_one("#fix-table", DataTable)
        for label in ("#", "Time UTC", "Position", "Method", "SOG", "COG", "Marks", "Remarks"):
            table.add_column(label, key=label)
        entries = self.query_one("#entry-table", DataTable)
        for label in ("#", "Time UTC", "Ship", "Kind", "Text"):
            entries.add_column(label, key=label)
        self.validate_fix_form()

    def on_show(self) -> None:
        if not self.loaded:
            self.loaded = True
            self.reload()

    # --- the lists ---
    @work(thread=True, exclusive=True, group="log-load")
    def reload(self) -> None:
        s = self.session
        if s.voyage is None:
            self.app.call_from_thread(self.notify, "No voyage in this logbook yet: nothing "
                                      "to log to. See 'passagelog --help'.", severity="warning")
            return
        try:
            fixes = s.fix_history()[-SHOWN_FIXES:]
            entries = s.entry_history()[-SHOWN_ENTRIES:]
        except PassagelogError as exc:
            self.app.call_from_thread(self.notify, str(exc), severity="error")
            return
        self.app.call_from_thread(self._fill, fixes, entries)

    def _fill(self, fixes: list[Fix], entries: list[LogEntry]) -> None:
        superseded = {f.supersedes for f in fixes if f.supersedes is not None}
        table = self.query_one("#fix-table", DataTable)
        table.clear()
        self.shown = list(reversed(fixes))  # newest first
        for f in self.shown:
            gone = f.fix_id in superseded
            marks = []
            if f.supersedes is not None:
                marks.append(f"corrects #{f.supersedes}: {f.reason or ''}".strip())
            if f.suspect:
                speed = f" {f.implied_speed_kn:.0f} kn" if f.implied_speed_kn else ""
                marks.append(f"SUSPECT{speed}")
            if gone:
                marks.append("corrected")
            style = "strike dim" if gone else ("bold" if f.suspect else "")
            cells = [str(f.fix_id), fmt.utc_time(f.time_utc), fmt.position(f.lat, f.lon),
                     f.method, "" if f.sog_kn is None else f"{f.sog_kn:.1f}",
                     fmt.course(f.cog) if f.cog is not None else "", "; ".join(marks),
                     f.remarks]
            table.add_row(*(Text(c, style=style) for c in cells), key=str(f.fix_id))
        etable = self.query_one("#entry-table", DataTable)
        etable.clear()
        zd = self.session.zd_minutes
        for e in reversed(entries):
            text = e.text + (f" (new ZD {fmt.zd_text(e.zd_minutes)})"
                             if e.zd_minutes is not None else "")
            etable.add_row(str(e.entry_id), fmt.utc_time(e.time_utc),
                           fmt.ship_time(e.time_utc, zd), e.kind, text)

    # --- the fix form ---
    @on(Input.Changed)
    def _changed(self, event: Input.Changed) -> None:
        if event.input.id and event.input.id.startswith("fix-"):
            self.validate_fix_form()
        elif event.input.id and event.input.id.startswith("entry-"):
            self.validate_entry_form()

    def _field(self, fid: str) -> str:
        return self.query_one(f"#fix-{fid}", Input).value

    def _mark(self, fid: str, message: str, ok: bool) -> None:
        msg = self.query_one(f"#{fid}-msg", Static)
        msg.update(message)
        msg.set_class(not ok, "-bad")
        self.query_one(f"#{fid}", Input).set_class(not ok, "-bad")

    def validate_fix_form(self) -> Fix | None:
        """Check each field, say beside it what is wrong; the fix when all are good."""
        from passagelog.nav.zonetime import parse_time_utc
        from passagelog.tui.plan_rows import parse_optional_number

        values: dict = {}
        good = True

        def check(fid, parse, ok_text=lambda v: "ok"):
            nonlocal good
            try:
                v = parse(self._field(fid))
            except PassagelogError as exc:
                self._mark(f"fix-{fid}", str(exc), False)
                good = False
                return None
            self._mark(f"fix-{fid}", ok_text(v) if v is not None else "", True)
            return v

        zd = self.session.zd_minutes
        values["time"] = check(
            "time", lambda t: parse_time_utc(t, zd) if t.strip() else None,
            lambda v: f"{fmt.utc_time(v)}  ship {fmt.ship_time(v, zd)}")
        if not self._field("time").strip():
            self._mark("fix-time", "now, when logged", True)
        pos_text = self._field("pos")
        if pos_text.strip():
            values["pos"] = check("pos", fmt.parse_position,
                                  lambda v: fmt.position(*v))
        else:
            self._mark("fix-pos", "required", True)  # not an error until Ctrl+S
            good = False
        values["hdop"] = check("hdop", lambda t: parse_optional_number(
            t, "HDOP", unit="", high=100.0), lambda v: "")
        values["cog"] = check("cog", lambda t: _course(t), lambda v: "")
        values["sog"] = check("sog", lambda t: parse_optional_number(
            t, "SOG", unit="kn", high=1000.0), lambda v: "")
        values["remarks"] = self._field("remarks").strip()
        self.valid["fix"] = good
        if not good:
            return None
        try:
            lat, lon = values["pos"]
            return Fix(values["time"] or self.session.now(), lat, lon,
                       method=self.query_one("#fix-method", Select).value,
                       hdop=values["hdop"], cog=values["cog"], sog_kn=values["sog"],
                       remarks=values["remarks"])
        except PassagelogError as exc:
            self._mark("fix-pos", str(exc), False)
            return None

    def action_record(self) -> None:
        """Ctrl+S: log the fix, or add the entry, of the form on show."""
        if self.query_one("#log-tabs", TabbedContent).active == "log-entries":
            self.action_add_entry()
        else:
            self.action_log_fix()

    def action_log_fix(self) -> None:
        if self.session.voyage is None:
            self.notify("No voyage is open.", severity="warning")
            return
        fix = self.validate_fix_form()
        if fix is None:
            self.notify("The fix is not logged: see the fields marked beside them.",
                        severity="warning")
            return
        self._add_fix(fix)

    @work(thread=True, group="log-write")
    def _add_fix(self, fix: Fix) -> None:
        try:
            saved = self.session.add_fix(fix)
        except PassagelogError as exc:
            self.app.call_from_thread(self.notify, str(exc), severity="error")
            return
        self.app.call_from_thread(self._fix_added, saved)

    def _fix_added(self, saved: Fix) -> None:
        note = f"Logged fix {saved.fix_id} at {fmt.utc_time(saved.time_utc)}."
        if saved.suspect:
            note += f" SUSPECT: implied speed {saved.implied_speed_kn:.0f} kn."
        self.notify(note, severity="warning" if saved.suspect else "information")
        for fid in ("time", "pos", "hdop", "cog", "sog", "remarks"):
            self.query_one(f"#fix-{fid}", Input).value = ""
        self.reload()

    # --- corrections ---
    @on(DataTable.RowSelected, "#fix-table")
    def _chosen(self) -> None:
        self.action_correct()

    def action_correct(self) -> None:
        from passagelog.tui.correction_dialog import CorrectionDialog

        table = self.query_one("#fix-table", DataTable)
        if not self.shown:
            self.notify("No fix to correct.")
            return
        fix = self.shown[table.cursor_row]
        superseded = {f.supersedes for f in self.shown if f.supersedes is not None}
        if fix.fix_id in superseded:
            self.notify(f"Fix {fix.fix_id} is already corrected; correct its correction.",
                        severity="warning")
            return

        def done(result) -> None:
            if result:
                self._correct(fix.fix_id, *result)

        self.app.push_screen(CorrectionDialog(fix, self.session.zd_minutes), done)

    @work(thread=True, group="log-write")
    def _correct(self, fix_id: int, fix: Fix, reason: str) -> None:
        try:
            saved = self.session.correct_fix(fix_id, fix, reason)
        except PassagelogError as exc:
            self.app.call_from_thread(self.notify, str(exc), severity="error")
            return
        self.app.call_from_thread(self.notify, f"Fix {fix_id} corrected by fix {saved.fix_id}.")
        self.app.call_from_thread(self.reload)

    # --- log entries ---
    def validate_entry_form(self) -> LogEntry | None:
        from passagelog.nav.zonetime import parse_time_utc, parse_zd

        zd = self.session.zd_minutes
        good = True
        t = None
        text_t = self.query_one("#entry-time", Input).value
        try:
            t = parse_time_utc(text_t, zd) if text_t.strip() else None
            self._mark("entry-time", fmt.utc_time(t) if t else "now, when added", True)
        except PassagelogError as exc:
            self._mark("entry-time", str(exc), False)
            good = False
        kind = self.query_one("#entry-kind", Select).value
        new_zd = None
        zd_text = self.query_one("#entry-zd", Input).value
        try:
            new_zd = parse_zd(zd_text) if zd_text.strip() else None
            if kind == "clock-change" and new_zd is None:
                from passagelog.errors import InputError

                raise InputError("a clock change needs the new zone description (e.g. +2)")
            self._mark("entry-zd", "" if new_zd is None else f"ZD {fmt.zd_text(new_zd)}", True)
        except PassagelogError as exc:
            self._mark("entry-zd", str(exc), False)
            good = False
        text = self.query_one("#entry-text", Input).value.strip()
        self._mark("entry-text", "", True)
        if not good:
            return None
        try:
            return LogEntry(t or self.session.now(), kind, text, zd_minutes=new_zd)
        except PassagelogError as exc:
            self._mark("entry-text", str(exc), False)
            return None

    @on(Select.Changed, "#entry-kind")
    def _kind_changed(self) -> None:
        self.validate_entry_form()

    def action_add_entry(self) -> None:
        entry = self.validate_entry_form()
        if entry is None:
            self.query_one("#log-tabs", TabbedContent).active = "log-entries"
            self.notify("The entry is not added: see the fields marked beside them.",
                        severity="warning")
            return
        self._add_entry(entry)

    @work(thread=True, group="log-write")
    def _add_entry(self, entry: LogEntry) -> None:
        try:
            saved = self.session.add_entry(entry)
        except PassagelogError as exc:
            self.app.call_from_thread(self.notify, str(exc), severity="error")
            return
        self.app.call_from_thread(self.notify, f"Added {saved.kind} entry {saved.entry_id}.")
        self.app.call_from_thread(self._entry_added)

    def _entry_added(self) -> None:
        for fid in ("entry-time", "entry-zd", "entry-text"):
            self.query_one(f"#{fid}", Input).value = ""
        self.reload()


def _course(text: str) -> float | None:
    from passagelog.errors import InputError
    from passagelog.tui.plan_rows import parse_optional_number

    v = parse_optional_number(text, "COG", unit="°T", high=360.0)
    if v is not None and v >= 360.0:
        raise InputError(f"COG {v:g}° must be below 360")
    return v
