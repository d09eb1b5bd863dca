"""The Log view: enter a fix, page through the fix list, correct a fix, keep log entries.

Each field of the fix form is checked as you type, with the reason beside it; Enter goes on
to the next field and Ctrl+S logs the fix (or, on the Entries tab, adds the entry) when
every field is good. The time defaults to now; a time of day alone is the latest such time
not more than :data:`AHEAD_LIMIT` ahead (``14:30Z`` in UTC, ``15:30`` ship's time in the
zone now in force, ``15:30 ZD+1``), day and time are read as the lists show them
(``05 14:30Z``), and a full time may carry its zone (``2026-05-02T11:50 ZD+1``); see
:func:`read_fix_time`. A time further ahead of this computer's clock is refused; one
before the departure or long before the latest fix is taken but warned of
(:func:`time_check`). In the fix list suspects (implausible speed from the previous fix)
and corrections are marked, and a corrected original stays, struck through. Ctrl+L moves
between the form and the list; Enter on a fix opens the correction dialog; Ctrl+N switches
between the Fixes and Entries tabs (the tab bar takes no focus, so F3 puts the cursor in
the Time field).

The fix list covers the whole voyage, every record in time order (the latest at the
bottom), but holds only the rows on show plus a margin each side (:func:`window_rows`):
PageUp/PageDown, the arrows, Home/End and Ctrl+G (go to a time in UTC) read the next rows
with keyset queries, so a list of a million fixes opens as fast as one of ten. The header
above it says which records are on show ("Fixes 981–1,000 of 1,000, oldest first").

The list follows fixes written by another connection (``passagelog feed``, another
terminal) as the Watch view does: it polls the logbook's change counter
(:meth:`~passagelog.tui.session.Session.change_counter`) every ``watch_poll_s`` and, when it
changed, reads the tail of the list again, but only while the latest record is on screen:
the new fixes scroll in at the bottom and the cursor stays on its fix (on the latest fix it
goes on to the new latest). A user paging elsewhere keeps the list as it is; only the count
in the header grows.
"""
from __future__ import annotations

import re
from dataclasses import dataclass
from datetime import datetime, timedelta, timezone

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Grid, Vertical
from textual.widgets import (
    DataTable, Input, Label, Select, Static, TabbedContent, TabPane, Tabs,
)

from passagelog.errors import InputError, PassagelogError
from passagelog.model import ENTRY_KINDS, FIX_METHODS, Fix, LogEntry
from passagelog.tui import text as fmt
from passagelog.tui.table import Table
from passagelog.tui.text import clock_text

SHOWN_ENTRIES = 200
#: The columns of the fix list. Remarks holds the marks (suspect, correction) and then the
#: fix's remarks (the feed's reason for logging it), so that it stays on screen at 100
#: columns.
FIX_COLUMNS = ("#", "Time UTC", "Position", "Method", "SOG", "COG", "Remarks")
#: Fix rows read beyond those on show, on each side (at least a page).
MARGIN_ROWS = 20
#: Satellites in use: the form takes what a receiver reports (NMEA GGA has two digits).
MAX_FORM_SATELLITES = 99

FIX_FIELDS = (
    ("time", "Time", "now if empty; 14:30Z or ship's 15:30"),
    ("pos", "Position", "e.g. 47 36.512N 122 20.107W"),
    ("hdop", "HDOP", "optional"),
    ("sats", "Sats", "optional: satellites in use, 0-99"),
    ("cog", "COG °T", "optional"),
    ("sog", "SOG kn", "optional"),
    ("remarks", "Remarks", "optional"),
)
FORM_FIELDS = tuple(fid for fid, _l, _p in FIX_FIELDS)
#: the label of each field of the two forms, by the id of its input
FIELD_LABELS = {f"fix-{fid}": label for fid, label, _p in FIX_FIELDS} | {
    "entry-time": "Time", "entry-zd": "New ZD", "entry-text": "Text"}
#: entry kinds that say nothing without their text
TEXT_REQUIRED = ("event", "remark")


def window_rows(page: int) -> int:
    """Fix rows held in the list: the page on show and a margin each side."""
    return page + 2 * max(page, MARGIN_ROWS)


def page_head(first: int, last: int, total: int, span: tuple[datetime, datetime] | None = None,
              width: int = 200) -> str:
    """The line above the fix list: which records are on show (1-based places in time
    order), the dates they span and the keys that page, as much as fits in ``width``."""
    if total == 0:
        return "No fixes in this voyage yet: log one with the form above (Ctrl+S)."
    text = f"Fixes {first:,}–{last:,} of {total:,}, oldest first"
    extras = ["PgUp PgDn Home End"]
    if span is not None:
        a, b = (t.astimezone(timezone.utc).date().isoformat() for t in span)
        extras.append(f"{a} UTC" if a == b else f"{a} to {b} UTC")
    for extra in extras:
        if len(text) + 3 + len(extra) <= width:
            text += " · " + extra
    return text


def parse_goto_time(text: str, ref: datetime | None) -> datetime:
    """A time to go to in the fix list, in UTC: full ISO 8601 (a zone in the text wins,
    none means UTC), or day and time as the list shows it (``02 14:30Z``), or just
    ``14:30`` (on the day of ``ref``, the fix under the cursor)."""
    from passagelog.nav.zonetime import parse_time_utc

    t = text.strip()
    if not t:
        raise InputError("type a time in UTC, e.g. 2026-05-02T14:30Z, 02 14:30Z or 14:30")
    m = re.fullmatch(r"(?:(\d{1,2})\s+)?(\d{1,2}):?(\d{2})\s*(?:Z|UTC)?", t, re.IGNORECASE)
    if m is None:
        return parse_time_utc(t, 0)
    ref = (ref or datetime.now(timezone.utc)).astimezone(timezone.utc)
    day, hour, minute = (int(m[1]) if m[1] else ref.day), int(m[2]), int(m[3])
    if hour > 23 or minute > 59:
        raise InputError(f"time {text!r}: hours run 00-23 and minutes 00-59")
    try:
        return ref.replace(day=day, hour=hour, minute=minute, second=0, microsecond=0)
    except ValueError:
        raise InputError(f"time {text!r}: day {day} is not in "
                         f"{ref:%Y-%m}; give the full date, e.g. {ref:%Y-%m}-{day:02d}T"
                         f"{hour:02d}:{minute:02d}Z") from None


#: How far ahead of this computer's clock a typed time may be (a clock a little slow, a
#: fix taken as the minute turns); a time further ahead is refused.
AHEAD_LIMIT = timedelta(minutes=10)
#: A fix this long before the latest fix is taken, but with a warning beside the field.
LATE_WARNING = timedelta(days=2)

_ZONE_SUFFIX = re.compile(r"(.*?\d)\s*(?:(Z|UTC)|ZD\s*(\S.*))?", re.IGNORECASE)
_TIME_OF_DAY = re.compile(r"(\d{1,2}):(\d{2})(?::(\d{2}))?|(\d{1,2})(\d{2})")
_DAY_AND_TIME = re.compile(r"\d{1,2}\s*\d{2}:?\d{2}")
TIME_FORMS = "14:30Z, 05 14:30Z, 15:30 (ship's), 15:30 ZD+1 or 2026-05-05T14:30Z"


@dataclass(frozen=True)
class TypedTime:
    """A time read from the form: when, in UTC; the zone the text was in (the ship's zone
    for UTC and full dates, for the preview); and, for a time of day alone, which day it
    was taken on (``today`` or ``yesterday`` in that zone)."""

    utc: datetime
    zd_minutes: int
    day: str = ""


def read_fix_time(text: str, zd_minutes: int, now: datetime) -> TypedTime:
    """The time of a fix or an entry typed in the form.

    - a full date and time, ``2026-05-05T14:30Z`` (no zone: ship's time in ``zd_minutes``;
      ``... ZD+1``: ship's time in that zone);
    - day and time as the lists show them, ``05 14:30Z`` (read as Plan reads its fixed
      times: in this month, or in the last when this month has no such day or its time
      would be more than a day ahead of ``now``);
    - a time of day alone, ``14:30Z`` (UTC), ``15:30`` (ship's time in ``zd_minutes``) or
      ``15:30 ZD+1``: the latest such time not more than :data:`AHEAD_LIMIT` ahead of
      ``now`` (so today's, or yesterday's).

    Day and time, and a time of day, without ``Z`` or ``ZD`` are ship's time.
    """
    from passagelog.nav.zonetime import parse_time_utc, parse_zd

    t = text.strip()
    now = now.astimezone(timezone.utc)
    if re.match(r"\d{4}-", t):
        try:
            return TypedTime(parse_time_utc(t, zd_minutes), zd_minutes)
        except InputError as exc:
            if str(exc).startswith("cannot read time"):
                raise InputError("cannot read this time; e.g. 2026-05-05T14:30Z or "
                                 "2026-05-05T15:30 ZD+1") from None
            raise
    m = _ZONE_SUFFIX.fullmatch(t)
    if m is None:
        raise InputError(f"cannot read this time; e.g. {TIME_FORMS}")
    rest = m[1]
    if m[2]:
        zd = 0
    elif m[3]:
        try:
            zd = parse_zd(m[3])
        except InputError:
            raise InputError(f"zone {m[3]!r}: e.g. ZD+1, ZD-5:30 (ZT + ZD = UTC)") from None
    else:
        zd = zd_minutes
    shown_zd = zd if not m[2] else zd_minutes
    # ship's time now in that zone, carried as a UTC datetime (only its fields are used)
    local_now = now - timedelta(minutes=zd)
    tod = _TIME_OF_DAY.fullmatch(rest)
    if tod is not None:
        hour, minute = int(tod[1] or tod[4]), int(tod[2] or tod[5])
        second = int(tod[3] or 0)
        if hour > 23 or minute > 59 or second > 59:
            raise InputError(f"time {rest!r}: hours run 00-23, minutes 00-59")
        local = local_now.replace(hour=hour, minute=minute, second=second, microsecond=0)
        day = "today"
        if local > local_now + AHEAD_LIMIT:
            local -= timedelta(days=1)
            day = "yesterday"
        return TypedTime(local + timedelta(minutes=zd), shown_zd, day)
    from passagelog.tui.plan_rows import parse_schedule_time

    def in_month_of(ref: datetime) -> datetime:
        try:
            return parse_schedule_time(rest, ref, "time")
        except InputError as exc:
            if _DAY_AND_TIME.fullmatch(rest):
                raise  # the shape is right: it says what is wrong
            raise InputError(f"cannot read this time; e.g. {TIME_FORMS}") from exc

    # this month's; the last month's when this month's has no such day or is more than a
    # day ahead (``31 23:50Z`` typed just after midnight on the 1st)
    last_month = local_now.replace(day=1) - timedelta(days=1)
    try:
        local = in_month_of(local_now)
    except InputError as exc:
        try:
            local = in_month_of(last_month)
        except InputError:
            raise exc from None
    else:
        if local > local_now + timedelta(days=1):
            try:
                local = in_month_of(last_month)
            except InputError:
                pass  # no such day last month: this month's, refused as ahead
    return TypedTime(local + timedelta(minutes=zd), shown_zd)


def parse_fix_time(text: str, zd_minutes: int, now: datetime) -> datetime:
    """The time of a fix typed in the form, in UTC (see :func:`read_fix_time`)."""
    return read_fix_time(text, zd_minutes, now).utc


def _span(delta: timedelta) -> str:
    """A span as the project writes spans (``3 h 20 min``, ``243 d 12 h``), kept on one
    line where a message wraps."""
    from passagelog.report.display import span_text

    return _nb(span_text(delta.total_seconds()))


def _nb(text: str) -> str:
    """``text`` kept on one line where a message wraps (no-break spaces)."""
    return text.replace(" ", "\u00a0")


def time_check(t: datetime, now: datetime, departure: datetime | None,
               latest: datetime | None) -> tuple[str, str]:
    """Whether a typed time is likely: ``("refuse", why)`` more than :data:`AHEAD_LIMIT`
    ahead of ``now`` (this computer's clock); ``("warn", why)`` before the voyage's
    ``departure`` or more than :data:`LATE_WARNING` before the ``latest`` fix (a late entry
    of an old fix is possible, so it is taken); ``("", "")`` otherwise."""
    if t - now > AHEAD_LIMIT:
        return "refuse", f"{_span(t - now)} ahead of now: 10 min at most"
    if departure is not None and t < departure:
        return "warn", f"before the departure ({_nb(clock_text(departure, t))})"
    if latest is not None and latest - t > LATE_WARNING:
        return "warn", f"{_span(latest - t)} before the latest fix"
    return "", ""


def entry_zones(entries: list[LogEntry], voyage_zd: int,
                now: datetime) -> tuple[list[int], int]:
    """The zone (minutes) in force at each of ``entries`` (in time order) and at ``now``:
    the voyage's, changed by every current clock-change entry at or before that time (as
    the logbook's ``zone_at``)."""
    gone = {e.supersedes for e in entries if e.supersedes is not None}
    changes = [(e.time_utc, e.zd_minutes) for e in entries
               if e.kind == "clock-change" and e.entry_id not in gone
               and e.zd_minutes is not None]

    def at(when: datetime) -> int:
        zd = voyage_zd
        for t, new in changes:
            if t <= when:
                zd = new
        return zd

    return [at(e.time_utc) for e in entries], at(now)


class FixTable(Table):
    """The fix list: the arrows and page keys read more rows at the ends of what is held."""

    BINDINGS = [
        Binding("enter", "select_cursor", "Correct fix"),
        Binding("home,ctrl+home", "first", "First fix", show=False),
        Binding("end,ctrl+end", "last", "Latest fix", show=False),
    ]

    def _pager(self) -> "LogView":
        return next(a for a in self.ancestors if isinstance(a, LogView))

    def page_rows(self) -> int:
        height = self.scrollable_content_region.height - (
            self.header_height if self.show_header else 0)
        return max(height, 1)

    def action_cursor_down(self) -> None:
        self._pager().move_by(1)

    def action_cursor_up(self) -> None:
        self._pager().move_by(-1)

    def action_page_down(self) -> None:
        self._pager().move_by(self.page_rows())

    def action_page_up(self) -> None:
        self._pager().move_by(-self.page_rows())

    def action_first(self) -> None:
        self._pager().load(where="first")

    def action_last(self) -> None:
        self._pager().load(where="last")

    def watch_scroll_y(self, old: float, new: float) -> None:
        super().watch_scroll_y(old, new)
        pager = next((a for a in self.ancestors if isinstance(a, LogView)), None)
        if pager is not None:
            pager.update_head()


class LogView(Vertical):
    """Fix form and fix list; log entries."""

    BINDINGS = [
        Binding("ctrl+s", "record", "Record"),
        Binding("ctrl+g", "goto_time", "Go to time"),
        Binding("ctrl+l", "switch_focus", "List/form"),
        Binding("ctrl+n", "switch_tab", "Fixes/Entries"),
        Binding("pageup", "page(-1)", "Page up", show=False),
        Binding("pagedown", "page(1)", "Page down", show=False),
    ]
    PALETTE = (
        ("Log: log the fix in the form", "log_fix", "Check the form and log the fix (Ctrl+S)"),
        ("Log: correct the selected fix", "correct", "Open the correction dialog (Enter)"),
        ("Log: add the log entry", "add_entry", "Add the entry in the entry form (Ctrl+S)"),
        ("Log: go to a time in the fix list", "goto_time",
         "Show the fixes from a time in UTC (Ctrl+G)"),
        ("Log: to the list or the form", "switch_focus",
         "Move between the form and the list under it (Ctrl+L)"),
        ("Log: Fixes or Entries tab", "switch_tab",
         "Switch between the fixes and the log entries (Ctrl+N)"),
        ("Log: latest fixes", "latest", "Show the end of the fix list (End in the list)"),
        ("Log: first fixes", "first", "Show the start of the fix list (Home in the list)"),
    )

    def __init__(self, session, **kwargs) -> None:
        super().__init__(**kwargs)
        self.session = session
        #: the fix records held in the list, in time order (a window of the voyage's)
        self.rows: list[Fix] = []
        #: the same, once on screen with the cursor placed (what tests and snapshots wait on)
        self.shown: list[Fix] = []
        #: 0-based place of ``shown[0]`` among the voyage's records; how many there are
        self.first_place = 0
        self.total = 0
        #: record id -> id of the fix that corrects it, for the records held
        self.corrected_by: dict[int, int] = {}
        self.loaded = False
        self.valid: dict[str, bool] = {}
        #: field id -> (message beside it, whether the value is good)
        self.marks: dict[str, tuple[str, bool]] = {}
        #: time field id -> why its time is doubtful (taken, but warned of)
        self.warned: dict[str, str] = {}
        #: whether Ctrl+S was pressed on the form since it was last cleared: a required
        #: field left empty is an error only then
        self.tried = {"fix": False, "entry": False}
        #: the time of the voyage's latest fix record (None: no fix, or not read yet)
        self.latest: datetime | None = None
        #: the ship's zone now (the voyage's, changed by the clock changes logged): times
        #: typed without a zone are taken as ship's time in it
        self.zone_now: int = session.zd_minutes
        #: the logbook's change counter when the list was last read (None: not yet)
        self._counter: object = None
        #: bumped each time a new window is put in the list (a late read is dropped)
        self._window = 0
        #: how many times new fixes from elsewhere were taken into the list
        self.follows = 0

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
                yield Static("Reading the fix list...", id="fix-head", classes="view-head")
                yield FixTable(id="fix-table", cursor_type="row", zebra_stripes=True)
            with TabPane("Entries", id="log-entries"):
                with Grid(id="entry-form"):
                    yield Label("Kind", classes="field-label")
                    yield Select([(k, k) for k in ENTRY_KINDS], value="event",
                                 allow_blank=False, id="entry-kind", compact=True)
                    yield Static("", classes="field-error")
                    yield Label("Time", classes="field-label")
                    yield Input(placeholder="now if empty; 14:30Z or ship's 15:30",
                                id="entry-time", compact=True)
                    yield Static("", id="entry-time-msg", classes="field-error")
                    yield Label("New ZD", classes="field-label")
                    yield Input(placeholder="clock change only, e.g. +2", id="entry-zd",
                                compact=True)
                    yield Static("", id="entry-zd-msg", classes="field-error")
                    yield Label("Text", classes="field-label")
                    yield Input(placeholder="what happened", id="entry-text", compact=True)
                    yield Static("", id="entry-text-msg", classes="field-error")
                yield Static("", id="entry-head", classes="view-head")
                yield Table(id="entry-table", cursor_type="row", zebra_stripes=True)

    def on_mount(self) -> None:
        # the tab bar takes no focus: F3 puts the cursor in the Time field (typing starts
        # at once), Ctrl+N switches the tabs
        self.query_one("#log-tabs", TabbedContent).query_one(Tabs).can_focus = False
        table = self.query_one("#fix-table", DataTable)
        for label in FIX_COLUMNS:
            table.add_column(label, key=label)
        entries = self.query_one("#entry-table", DataTable)
        for label in ("#", "Time UTC", "Ship", "Kind", "Text"):
            entries.add_column(label, key=label)
        self.validate_fix_form()
        self.set_interval(getattr(self.app, "watch_poll_s", 0.5), self._poll)

    def on_resize(self) -> None:
        self.update_head()

    def on_show(self) -> None:
        if not self.loaded:
            self.loaded = True
            self.reload()

    # --- the fix list: a window of the voyage's records, read by keyset queries ---
    def _page(self) -> int:
        table = self.query_one("#fix-table", FixTable)
        return table.page_rows() if table.size.height else 10

    def reload(self, around: int | None = None) -> None:
        """Read the list again: around record ``around`` if given, else its end; and the
        log entries."""
        if around is None:
            self.load(where="last", entries=True)
        else:
            self.load(where="around", fix_id=around, entries=True)

    def load(self, where: str = "last", *, fix_id: int | None = None,
             when: datetime | None = None, entries: bool = False) -> None:
        """Read a window of the fix list in a worker: the ``first`` or ``last`` records,
        those ``around`` record ``fix_id`` or ``from`` time ``when``."""
        self._mark_counter()
        # the page is measured here: widget geometry is not to be read in a worker thread
        self._load(self._page(), where, fix_id, when, entries)

    @work(thread=True, exclusive=True, group="log-load")
    def _load(self, page: int, where: str, fix_id: int | None, when: datetime | None,
              entries: bool) -> None:
        s = self.session
        if s.voyage is None:
            self.app.call_from_thread(self.notify, "No voyage in this logbook yet: nothing "
                                      "to log to. See 'passagelog --help'.", severity="warning")
            self.app.call_from_thread(self.query_one("#fix-head", Static).update,
                                      "No voyage is open.")
            return
        size = window_rows(page)
        margin = (size - page) // 2
        note = None
        try:
            total = s.fix_record_count()
            cursor = 0
            if where == "first":
                rows, place = s.fix_records_after(None, limit=size), 0
            elif where in ("around", "from"):
                if where == "around":
                    ahead = s.fix_records_before(fix_id, limit=1) if fix_id else []
                    rows = s.fix_records_after(ahead[0].fix_id if ahead else None,
                                               limit=size - margin)
                else:
                    rows = s.fix_records_from(when, limit=size - margin)
                if rows:
                    before = s.fix_records_before(rows[0].fix_id, limit=margin)
                    place = s.fix_record_rank(rows[0].fix_id) - len(before)
                    cursor = len(before)
                    rows = before + rows
                else:
                    if where == "from":
                        note = (f"No fix at or after {fmt.utc_time(when)}: showing the "
                                "latest.")
                    rows = s.fix_records_before(None, limit=size)
                    place, cursor = total - len(rows), len(rows) - 1
            else:
                rows = s.fix_records_before(None, limit=size)
                place, cursor = total - len(rows), len(rows) - 1
            corrected = s.corrections_of([f.fix_id for f in rows])
            entry_rows = s.entry_history() if entries else None
            tail = rows[-1:] if place + len(rows) >= total else s.fix_records_before(
                None, limit=1)
        except PassagelogError as exc:
            self.app.call_from_thread(self.notify, str(exc), severity="error")
            return
        self.app.call_from_thread(self._set_latest, tail[0].time_utc if tail else None)
        # a fix gone to is shown at the top of the list (a logged or corrected one, mid-way)
        top = None if where in ("first", "last") else max(
            0, cursor - (page // 2 if where == "around" else 0))
        self.app.call_from_thread(self._show_window, rows, place, total, corrected,
                                  max(cursor, 0), top)
        if entry_rows is not None:
            self.app.call_from_thread(self._fill_entries, entry_rows)
        if note:
            self.app.call_from_thread(self.notify, note)

    # --- following fixes written elsewhere (the Watch view's poll of the change counter) ---
    def _mark_counter(self) -> bool:
        """Note the logbook's change counter; True when it changed since last noted."""
        if self.session.voyage is None:
            return False
        try:
            counter = self.session.change_counter()
        except PassagelogError:
            return False  # the next poll tries again; a read shows the error
        changed, self._counter = counter != self._counter, counter
        return changed

    def _poll(self) -> None:
        if self.loaded and self._mark_counter():
            self._follow(self._page(), self._window)

    def at_latest(self) -> bool:
        """Whether the latest record of the voyage is on screen (then the list follows
        new fixes)."""
        if not self.rows:
            return True
        table = self.query_one("#fix-table", FixTable)
        held_end = self.first_place + len(self.rows) >= self.total
        return held_end and int(table.scroll_y) + table.page_rows() >= len(self.rows)

    @work(thread=True, exclusive=True, group="log-follow")
    def _follow(self, page: int, window: int) -> None:
        """Read the tail of the list (the window a load of the ``last`` records reads)."""
        s = self.session
        try:
            total = s.fix_record_count()
            rows = s.fix_records_before(None, limit=window_rows(page))
            corrected = s.corrections_of([f.fix_id for f in rows])
        except PassagelogError:
            return  # the next change tries again
        self.app.call_from_thread(self._followed, rows, total, corrected, window)

    def _followed(self, rows: list[Fix], total: int, corrected: dict[int, int],
                  window: int) -> None:
        """Put the tail read by :meth:`_follow` in the list if the user is still at the
        latest record; else only the count in the header grows."""
        if window != self._window:
            return  # the list was read again meanwhile
        self._set_latest(rows[-1].time_utc if rows else None)
        if not self.at_latest():
            self.total = max(total, self.first_place + len(self.rows))
            self.update_head()
            return
        if ([f.fix_id for f in rows] == [f.fix_id for f in self.rows]
                and corrected == self.corrected_by and total == self.total):
            return  # something else changed (an entry, a kept review)
        cursor, top = len(rows) - 1, None
        if self.rows:
            table = self.query_one("#fix-table", FixTable)
            here = min(table.cursor_row, len(self.rows) - 1)
            ids = [f.fix_id for f in rows]
            if here < len(self.rows) - 1 and self.rows[here].fix_id in ids:
                # the cursor stays on its fix; the list scrolls to keep the latest fix at
                # the bottom, as far as the cursor's fix stays on screen
                cursor = ids.index(self.rows[here].fix_id)
                line = here - int(table.scroll_y)
                top = max(0, min(cursor, max(cursor - line, len(rows) - table.page_rows())))
        self.follows += 1
        self._show_window(rows, total - len(rows), total, corrected, cursor, top)

    def _set_latest(self, latest: datetime | None) -> None:
        """Note the time of the latest fix (the forms' checks and previews use it)."""
        if latest != self.latest:
            self.latest = latest
            self.validate_fix_form()
            self.validate_entry_form()

    def move_by(self, delta: int) -> None:
        """Move the cursor ``delta`` rows (negative: up; a page keeps the cursor on its line
        of the screen), reading more rows when it passes the ends of those held. These
        reads are a keyset query of a few dozen rows (about a millisecond), done at once so
        that held-down keys stay in step."""
        table = self.query_one("#fix-table", FixTable)
        if not self.rows:
            return
        rows, place = self.rows, self.first_place
        page = table.page_rows()
        target = table.cursor_row + delta
        top = None
        if abs(delta) > 1:
            top = target - (table.cursor_row - int(table.scroll_y))
        low = target if top is None else min(target, top)
        high = target if top is None else max(target, top + page - 1)
        if low >= 0 and high < len(rows):
            if top is None:
                table.move_cursor(row=target)
            else:
                self._place_cursor(target, top)
            return
        size = window_rows(page)
        margin = (size - page) // 2
        s = self.session
        try:
            if high >= len(rows):
                more = s.fix_records_after(rows[-1].fix_id, limit=high - len(rows) + 1 + margin)
                rows = rows + more
            else:
                more = s.fix_records_before(rows[0].fix_id, limit=-low + margin)
                rows, place = more + rows, place - len(more)
                target += len(more)
                top = None if top is None else top + len(more)
            if len(rows) > size:  # keep the rows around the cursor, drop the far end
                start = max(0, min(target - size // 2, len(rows) - size))
                rows, place, target = rows[start:start + size], place + start, target - start
                top = None if top is None else top - start
            target = max(0, min(target, len(rows) - 1))
            if top is not None:
                top = max(0, min(top, len(rows) - page))
            if not more:  # at the first or the latest record
                if top is None:
                    table.move_cursor(row=target)
                else:
                    self._place_cursor(target, top)
                return
            corrected = s.corrections_of([f.fix_id for f in rows])
        except PassagelogError as exc:
            self.notify(str(exc), severity="error")
            return
        self._show_window(rows, place, max(self.total, place + len(rows)), corrected, target,
                          top)

    def _show_window(self, rows: list[Fix], place: int, total: int,
                     corrected: dict[int, int], cursor: int, top: int | None) -> None:
        """Put ``rows`` in the list with the cursor on row ``cursor`` (and row ``top`` at
        the top of the list when given)."""
        table = self.query_one("#fix-table", FixTable)
        table.clear()
        self._window += 1
        self.rows, self.first_place, self.total = rows, place, total
        self.corrected_by = corrected
        for f in rows:
            table.add_row(*self._cells(f), key=str(f.fix_id))
        if rows:
            # after a refresh: the table knows its new height only then
            self.call_after_refresh(self._place_cursor, cursor, top)
        else:
            self.shown = rows
        self.update_head()

    def _place_cursor(self, cursor: int, top: int | None) -> None:
        table = self.query_one("#fix-table", FixTable)
        if not self.rows:
            return
        cursor = max(0, min(cursor, len(self.rows) - 1))
        if top is not None:
            table.scroll_to(y=max(0, top), animate=False, force=True, immediate=True)
        # (scroll=True would first scroll to the row the cursor leaves)
        table.move_cursor(row=cursor, scroll=top is None)
        self.update_head()
        self.call_after_refresh(self._on_screen, self.rows)

    def _on_screen(self, rows: list[Fix]) -> None:
        self.shown = rows

    def _cells(self, f: Fix) -> list[Text]:
        gone = f.fix_id in self.corrected_by
        marks = []
        if f.supersedes is not None:
            marks.append(f"corrects #{f.supersedes}: {f.reason or ''}".strip())
        if f.suspect:
            speed = f" {f.implied_speed_kn:.0f} kn" if f.implied_speed_kn else ""
            marks.append(f"SUSPECT{speed}")
        if gone:
            marks.append(f"corrected by #{self.corrected_by[f.fix_id]}")
        style = "strike dim" if gone else ("bold" if f.suspect else "")
        remarks = "; ".join(marks + ([f.remarks] if f.remarks else []))
        cells = [str(f.fix_id),
                 clock_text(f.time_utc, seconds=True, full=self._far_off(f.time_utc)),
                 fmt.position(f.lat, f.lon), f.method,
                 "" if f.sog_kn is None else f"{f.sog_kn:.1f}",
                 fmt.course(f.cog) if f.cog is not None else "", remarks]
        return [Text(c, style=style) for c in cells]

    def _far_off(self, t: datetime) -> bool:
        """Whether the lists show a time with its full date, not just the day of the month:
        a time before the voyage's departure (or, with no departure given, in another month
        than the latest fix)."""
        voyage = self.session.voyage
        departure = voyage.departure_utc if voyage is not None else None
        if departure is not None:
            return t < departure
        ref = self.latest
        return ref is not None and (t.year, t.month) != (ref.year, ref.month)

    def update_head(self) -> None:
        """Say which records are on show (1-based places in time order)."""
        table = self.query_one("#fix-table", FixTable)
        head = self.query_one("#fix-head", Static)
        if not self.rows:
            head.update(page_head(0, 0, self.total))
            return
        top = max(0, min(int(table.scroll_y), len(self.rows) - 1))
        bottom = min(len(self.rows), top + table.page_rows())
        span = (self.rows[top].time_utc, self.rows[bottom - 1].time_utc)
        width = (head.size.width - 2) if head.size.width else 200
        head.update(page_head(self.first_place + top + 1, self.first_place + bottom,
                              self.total, span, width))

    def _fill_entries(self, entries: list[LogEntry]) -> None:
        """Every entry record in time order (the latest :data:`SHOWN_ENTRIES`), ship's time
        in the zone in force at each; corrected originals struck through."""
        voyage_zd = self.session.zd_minutes
        ordered = sorted(entries, key=lambda e: (e.time_utc, e.entry_id))
        zones, self.zone_now = entry_zones(ordered, voyage_zd, self.session.now())
        gone = {e.supersedes: e.entry_id for e in entries if e.supersedes is not None}
        etable = self.query_one("#entry-table", DataTable)
        etable.clear()
        shown = list(zip(ordered, zones))[-SHOWN_ENTRIES:]
        for e, zd in shown:
            text = e.text + (f" (new ZD {fmt.zd_text(e.zd_minutes)})"
                             if e.zd_minutes is not None else "")
            if e.supersedes is not None:
                text += f" [corrects #{e.supersedes}: {e.reason or ''}]"
            if e.entry_id in gone:
                text += f" [corrected by #{gone[e.entry_id]}]"
            style = "strike dim" if e.entry_id in gone else ""
            far = self._far_off(e.time_utc)
            cells = (str(e.entry_id), clock_text(e.time_utc, full=far, seconds=False),
                     clock_text(e.time_utc, zd_minutes=zd, full=far, seconds=False), e.kind,
                     text)
            etable.add_row(*(Text(c, style=style) for c in cells))
        if shown:
            etable.move_cursor(row=len(shown) - 1)
        head = self.query_one("#entry-head", Static)
        if not entries:
            head.update("No log entries yet: add one with the form above (Ctrl+S).")
        else:
            first = len(ordered) - len(shown) + 1
            head.update(f"Entries {first:,}–{len(ordered):,} of {len(ordered):,}, oldest "
                        f"first · ship's time in its zone then (now ZD "
                        f"{fmt.zd_text(self.zone_now)})")
        self.validate_fix_form()
        self.validate_entry_form()

    def _fixes_tab(self) -> bool:
        return self.query_one("#log-tabs", TabbedContent).active == "log-fixes"

    def action_page(self, direction: int) -> None:
        """PageUp/PageDown from anywhere in the Fixes tab (the form's fields too)."""
        if self._fixes_tab():
            table = self.query_one("#fix-table", FixTable)
            self.move_by(direction * table.page_rows())
        else:
            table = self.query_one("#entry-table", DataTable)
            table.action_page_down() if direction > 0 else table.action_page_up()

    def action_switch_focus(self) -> None:
        """Ctrl+L: from the form to the list under it, and back."""
        if self._fixes_tab():
            table, field = self.query_one("#fix-table"), self.query_one("#fix-pos")
        else:
            table, field = self.query_one("#entry-table"), self.query_one("#entry-text")
        (field if table.has_focus else table).focus()

    def action_switch_tab(self) -> None:
        """Ctrl+N: the Fixes tab or the Entries tab, with the cursor in its form."""
        tabs = self.query_one("#log-tabs", TabbedContent)
        tabs.active = "log-entries" if tabs.active == "log-fixes" else "log-fixes"
        self._focus_form()

    def _focus_form(self) -> None:
        """The cursor to the first field of the tab on show, unless it is in that tab."""
        pane = self.query_one("#log-tabs", TabbedContent).active_pane
        focused = self.screen.focused
        if pane is None or (focused is not None and pane in focused.ancestors):
            return
        (self.query_one("#fix-time") if pane.id == "log-fixes"
         else self.query_one("#entry-kind")).focus()

    @on(TabbedContent.TabActivated, "#log-tabs")
    def _tab_shown(self, event: TabbedContent.TabActivated) -> None:
        """A tab chosen with the mouse: the cursor goes into its form."""
        event.stop()
        if self.app.screen is self.screen:
            self._focus_form()

    def action_latest(self) -> None:
        self.query_one("#log-tabs", TabbedContent).active = "log-fixes"
        self.load(where="last")

    def action_first(self) -> None:
        self.query_one("#log-tabs", TabbedContent).active = "log-fixes"
        self.load(where="first")

    def action_goto_time(self) -> None:
        from passagelog.tui.goto_dialog import GoToTimeDialog

        if self.session.voyage is None:
            self.notify("No voyage is open.", severity="warning")
            return
        self.query_one("#log-tabs", TabbedContent).active = "log-fixes"
        table = self.query_one("#fix-table", FixTable)
        ref = self.rows[table.cursor_row].time_utc if self.rows else None

        def done(when: datetime | None) -> None:
            if when is not None:
                table.focus()
                self.load(where="from", when=when)

        self.app.push_screen(GoToTimeDialog(ref), done)

    # --- the fix form ---
    @on(Input.Changed)
    def _changed(self, event: Input.Changed) -> None:
        if event.input.id and event.input.id.startswith("fix-"):
            self.validate_fix_form()
        elif event.input.id and event.input.id.startswith("entry-"):
            self.validate_entry_form()

    @on(Input.Submitted)
    def _submitted(self, event: Input.Submitted) -> None:
        """Enter in a field of a form goes on to the next; in the last it says how to
        record (Ctrl+S), rather than logging what may not be finished."""
        fid = event.input.id or ""
        if fid in ("fix-remarks", "entry-text"):
            what = "log the fix" if fid == "fix-remarks" else "add the entry"
            self.notify(f"Press Ctrl+S to {what}.")
        elif fid.startswith(("fix-", "entry-")):
            self.app.action_focus_next()
        event.stop()

    def _field(self, fid: str) -> str:
        return self.query_one(f"#fix-{fid}", Input).value

    def _mark(self, fid: str, message: str, ok: bool, *, warn: bool = False) -> None:
        """Say ``message`` beside field ``fid``: an error unless ``ok``; a warning (the value
        is taken) with ``warn``."""
        self.marks[fid] = (message, ok)
        msg = self.query_one(f"#{fid}-msg", Static)
        msg.update(message)
        msg.set_class(not ok, "-bad")
        msg.set_class(ok and warn, "-warn")
        self.query_one(f"#{fid}", Input).set_class(not ok, "-bad")

    def _problem(self, form: str) -> str:
        """The first field of ``form`` (``fix`` or ``entry``) marked wrong and why, for the
        notice when Ctrl+S is refused."""
        for fid, label in FIELD_LABELS.items():
            message, ok = self.marks.get(fid, ("", True))
            if fid.startswith(form + "-") and not ok:
                return f"{label}: {message}"
        return "see the fields marked beside them"

    def _check_time(self, fid: str, empty: str) -> tuple[datetime | None, bool]:
        """Read the time field ``fid`` and say beside it what it was read as: the day
        taken, UTC and ship's time; a time too far ahead of this computer's clock is
        refused, one before the departure or long before the latest fix is warned of.
        Returns the time (None: empty, now) and whether it may be recorded."""
        self.warned.pop(fid, None)
        text = self.query_one(f"#{fid}", Input).value
        if not text.strip():
            self._mark(fid, empty, True)
            return None, True
        now = self.session.now()
        try:
            typed = read_fix_time(text, self.zone_now, now)
        except PassagelogError as exc:
            self._mark(fid, str(exc), False)
            return None, False
        t, ref = typed.utc, self.latest or now
        voyage = self.session.voyage
        level, why = time_check(t, now, voyage.departure_utc if voyage else None,
                                self.latest)
        if level == "refuse":
            self._mark(fid, f"{_nb(clock_text(t, ref))}: {why}", False)
            return None, False
        zone_time = _nb(clock_text(t, zd_minutes=typed.zd_minutes))
        preview = f"{_nb(clock_text(t, ref))} · {self.session.zone_label()} {zone_time}"
        if typed.day:
            preview = f"{typed.day}, {preview}"
        if why:
            self.warned[fid] = why
            preview += f" · {why}"
        self._mark(fid, preview, True, warn=bool(why))
        return t, True

    def validate_fix_form(self) -> Fix | None:
        """Check each field, say beside it what is wrong; the fix when all are good."""
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

        values["time"], good = self._check_time("fix-time", "now, when logged")
        pos_text = self._field("pos")
        if pos_text.strip():
            values["pos"] = check("pos", fmt.parse_position,
                                  lambda v: fmt.position(*v))
        else:
            # not an error until Ctrl+S is pressed (and again once the form is cleared)
            tried = self.tried["fix"]
            self._mark("fix-pos", "required: where the fix puts you" if tried else "required",
                       not tried)
            good = False
        values["hdop"] = check("hdop", _hdop, lambda v: "")
        values["sats"] = check("sats", _satellites, lambda v: f"{v} in use")
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
                       hdop=values["hdop"], satellites=values["sats"], cog=values["cog"],
                       sog_kn=values["sog"], remarks=values["remarks"])
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
        self.tried["fix"] = True
        fix = self.validate_fix_form()
        if fix is None:
            self.notify(f"The fix is not logged. {self._problem('fix')}", severity="warning")
            return
        self._add_fix(fix, self.warned.get("fix-time", ""))

    @work(thread=True, group="log-write")
    def _add_fix(self, fix: Fix, warning: str = "") -> None:
        try:
            saved = self.session.add_fix(fix)
        except PassagelogError as exc:
            self.app.call_from_thread(self.notify, str(exc), severity="error")
            return
        self.app.call_from_thread(self._fix_added, saved, warning)

    def _fix_added(self, saved: Fix, warning: str = "") -> None:
        note = (f"Logged fix {saved.fix_id} at "
                f"{clock_text(saved.time_utc, self.latest or self.session.now())}.")
        if warning:
            note += f" Its time is {warning}."
        if saved.suspect:
            note += f" SUSPECT: implied speed {saved.implied_speed_kn:.0f} kn."
        self.notify(note, severity="warning" if saved.suspect or warning else "information")
        if self.latest is None or saved.time_utc > self.latest:
            self.latest = saved.time_utc
        self.clear_fix_form()
        self.reload(around=saved.fix_id)

    def clear_fix_form(self) -> None:
        """Empty the fix form and its messages, as a new form (the method stays)."""
        self.tried["fix"] = False
        for fid in FORM_FIELDS:
            self.query_one(f"#fix-{fid}", Input).value = ""
        self.validate_fix_form()

    # --- corrections ---
    @on(DataTable.RowSelected, "#fix-table")
    def _chosen(self) -> None:
        self.action_correct()

    def action_correct(self) -> None:
        from passagelog.tui.correction_dialog import CorrectionDialog

        table = self.query_one("#fix-table", DataTable)
        if not self.rows:
            self.notify("No fix to correct.")
            return
        fix = self.rows[min(table.cursor_row, len(self.rows) - 1)]
        later = self.corrected_by.get(fix.fix_id)
        if later is not None:
            held = [f.fix_id for f in self.rows]
            if later in held:
                table.move_cursor(row=held.index(later))
            self.notify(f"Fix {fix.fix_id} is already corrected by fix {later}; to change "
                        f"it again, correct fix {later} (Enter on its row).",
                        severity="warning")
            return

        def done(result) -> None:
            if result:
                self._correct(fix.fix_id, *result)

        self.app.push_screen(CorrectionDialog(fix, self.zone_now), done)

    @work(thread=True, group="log-write")
    def _correct(self, fix_id: int, fix: Fix, reason: str) -> None:
        try:
            saved = self.session.correct_fix(fix_id, fix, reason)
        except PassagelogError as exc:
            self.app.call_from_thread(self.notify, str(exc), severity="error")
            return
        self.app.call_from_thread(self.notify, f"Fix {fix_id} corrected by fix {saved.fix_id}.")
        self.app.call_from_thread(self.reload, saved.fix_id)

    # --- log entries ---
    def validate_entry_form(self) -> LogEntry | None:
        from passagelog.nav.zonetime import parse_zd

        tried = self.tried["entry"]
        t, good = self._check_time("entry-time", "now, when added")
        kind = self.query_one("#entry-kind", Select).value
        new_zd = None
        zd_text = self.query_one("#entry-zd", Input).value
        try:
            new_zd = parse_zd(zd_text) if zd_text.strip() else None
            if kind == "clock-change" and new_zd is None:
                # shown as an error only once Ctrl+S is pressed
                self._mark("entry-zd", "a clock change needs the new zone description "
                           "(e.g. +2)" if tried else "required for a clock change",
                           not tried)
                good = False
            else:
                self._mark("entry-zd", "" if new_zd is None else f"ZD {fmt.zd_text(new_zd)}",
                           True)
        except PassagelogError as exc:
            self._mark("entry-zd", str(exc), False)
            good = False
        text = self.query_one("#entry-text", Input).value.strip()
        if not text and kind in TEXT_REQUIRED:
            self._mark("entry-text", "required: what happened", not tried)
            good = False  # shown as an error only once Ctrl+S is pressed
        else:
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
        self.tried["entry"] = True
        entry = self.validate_entry_form()
        if entry is None:
            self.query_one("#log-tabs", TabbedContent).active = "log-entries"
            self.notify(f"The entry is not added. {self._problem('entry')}",
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
        self.clear_entry_form()
        self.reload()

    def clear_entry_form(self) -> None:
        """Empty the entry form and its messages, as a new form (the kind stays)."""
        self.tried["entry"] = False
        for fid in ("entry-time", "entry-zd", "entry-text"):
            self.query_one(f"#{fid}", Input).value = ""
        self.validate_entry_form()


def _hdop(text: str) -> float | None:
    """Horizontal dilution of precision: a number 0-100 (no unit), or None if empty."""
    t = text.strip()
    if not t:
        return None
    try:
        v = float(t)
    except ValueError:
        raise InputError(f"HDOP {t!r} is not a number (e.g. 0.9)") from None
    if not 0.0 <= v <= 100.0:  # NaN fails this too
        raise InputError(f"HDOP {t} must be from 0 to 100")
    return v


def _satellites(text: str) -> int | None:
    """Satellites in use: a whole number 0-99, or None for an empty field."""
    t = text.strip()
    if not t:
        return None
    if not re.fullmatch(r"[0-9]+", t):
        raise InputError(f"satellites {text.strip()!r} must be a whole number from 0 to "
                         f"{MAX_FORM_SATELLITES}")
    v = int(t)
    if v > MAX_FORM_SATELLITES:
        raise InputError(f"satellites {v}: at most {MAX_FORM_SATELLITES} in use")
    return v


def _course(text: str) -> float | None:
    from passagelog.tui.plan_rows import parse_optional_number

    v = parse_optional_number(text, "COG", unit="°T", high=360.0)
    if v is not None and v >= 360.0:
        raise InputError(f"COG {v:g}° must be below 360")
    return v
