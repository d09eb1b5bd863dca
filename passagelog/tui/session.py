"""The TUI's one door to the logbook: which voyage is open, its plan, fixes and entries.

Every view goes through a :class:`Session`; it is the only TUI module that knows the store's
API. SQLite connections belong to the thread that opened them, and the views read in worker
threads, so each thread gets its own :class:`~passagelog.store.Logbook` on the same file.
The clock is injectable so that tests and snapshots see a fixed "now".
"""

from __future__ import annotations

import threading
from datetime import datetime, timedelta, timezone
from pathlib import Path
from typing import Callable

from passagelog.model import Fix, LogEntry, Route, Voyage


def system_clock() -> datetime:
    return datetime.now(timezone.utc)


class Session:
    """An open logbook and the voyage the TUI is showing."""

    def __init__(self, db_path: str | Path, *, voyage: str | int | None = None,
                 clock: Callable[[], datetime] = system_clock):
        self.db_path = Path(db_path)
        self.clock = clock
        self._local = threading.local()
        self._lock = threading.Lock()
        self.voyage: Voyage | None = None
        self.route: Route | None = None
        self.plan_revisions: list = []
        self.select_voyage(voyage)

    # --- the logbook, per thread ---
    @property
    def logbook(self):
        lb = getattr(self._local, "logbook", None)
        if lb is None:
            from passagelog.store import Logbook

            lb = Logbook.open(self.db_path)
            self._local.logbook = lb
        return lb

    def close(self) -> None:
        """Close this thread's connection to the logbook (the last one to close folds the
        write-ahead log back into the file)."""
        lb = getattr(self._local, "logbook", None)
        if lb is not None:
            lb.close()
            self._local.logbook = None

    def now(self) -> datetime:
        return self.clock()

    # --- voyages ---
    def voyages(self) -> list[Voyage]:
        return list(self.logbook.list_voyages())

    def is_aircraft(self) -> bool:
        """Whether the voyage's craft is an aircraft."""
        if self.voyage is None or self.voyage.craft_id is None:
            return False
        kind = getattr(self, "_craft_kind", None)
        if kind is None:
            kind = self._craft_kind = self.logbook.craft(self.voyage.craft_id).kind
        return kind == "aircraft"

    def zone_label(self) -> str:
        """What the zone time is called for this voyage's craft: ship's time at sea,
        local time in the air."""
        return "local" if self.is_aircraft() else "ship"

    def craft_names(self) -> list[str]:
        return [c.name for c in self.logbook.list_craft()]

    def start_voyage(self, *, name: str, craft: str, from_place: str = "", to_place: str = "",
                     departure_utc: datetime | None = None, zd_minutes: int = 0) -> Voyage:
        """Record a new voyage of ``craft`` (by name; recorded too when the logbook does
        not know it) in one transaction; it is not opened here."""
        from passagelog.model import Craft

        book = self.logbook
        with book.transaction():
            known = {c.name: c for c in book.list_craft()}
            c = known.get(craft) or book.add_craft(Craft(craft))
            return book.add_voyage(Voyage(name, craft_id=c.craft_id, from_place=from_place,
                                          to_place=to_place, departure_utc=departure_utc,
                                          zd_minutes=zd_minutes))

    def select_voyage(self, voyage: str | int | Voyage | None = None) -> Voyage | None:
        """Open ``voyage`` (id, name or object); by default the most recent one."""
        if isinstance(voyage, Voyage):
            chosen = voyage
        else:
            all_v = self.voyages()
            chosen = None
            if voyage is None:
                chosen = all_v[-1] if all_v else None
            else:
                for v in all_v:
                    if v.voyage_id == voyage or v.name == voyage or str(v.voyage_id) == str(voyage):
                        chosen = v
                if chosen is None:
                    from passagelog.errors import NotFoundError

                    names = ", ".join(v.name for v in all_v) or "none"
                    raise NotFoundError(f"voyage {voyage!r} is not in the logbook; it has: {names}")
        self.voyage = chosen
        self._craft_kind = None
        self.reload_route()
        return chosen

    def reload_route(self) -> Route | None:
        """The plan revision in force now (the last of the voyage's plan schedule). Worker
        threads call this too: the new values are put in place together, never cleared
        first, so a reader in another thread sees the old plan or the new one."""
        route, schedule = None, []
        if self.voyage is not None:
            schedule = self.logbook.plan_schedule(self.voyage.voyage_id)
            if schedule:
                route = schedule[-1][1]
        with self._lock:
            self.plan_revisions, self.route = schedule, route
        return route

    @property
    def zd_minutes(self) -> int:
        return self.voyage.zd_minutes if self.voyage else 0

    # --- plan ---
    def save_revision(self, route: Route, note: str) -> Route:
        """Store ``route`` as a new revision of the voyage's plan with its change note."""
        if self.voyage is None:
            from passagelog.errors import StoreError

            raise StoreError("no voyage is open: Ctrl+O opens or starts one")
        book = self.logbook
        with book.transaction():
            assignments = book.plan_assignments(self.voyage.voyage_id)
            plan_id = assignments[-1].plan_id if assignments else self.voyage.plan_id
            if plan_id is None:
                plan_id, _rev = book.create_plan(route, note)
                book.assign_plan(self.voyage.voyage_id, plan_id)
                self.voyage = book.voyage(self.voyage.voyage_id)
            else:
                book.save_revision(plan_id, route, note)
                # the new revision is in force from now on (the record of earlier
                # fixes keeps the revision that was in force then)
                book.assign_plan(self.voyage.voyage_id, plan_id, from_utc=self.now())
        return self.reload_route()

    # --- fixes ---
    def _vid(self) -> int:
        if self.voyage is None:
            from passagelog.errors import StoreError

            raise StoreError("no voyage is open")
        return self.voyage.voyage_id

    def add_fix(self, fix: Fix) -> Fix:
        return self.logbook.add_fix(self._vid(), fix)

    def correct_fix(self, fix_id: int, fix: Fix, reason: str) -> Fix:
        return self.logbook.correct_fix(self._vid(), fix_id, fix, reason)

    def fixes(self) -> list[Fix]:
        return list(self.logbook.fixes(self._vid())) if self.voyage else []

    def fix_history(self) -> list[Fix]:
        """Every fix record, corrected originals included, in the order recorded."""
        return list(self.logbook.fixes(self._vid(), history=True)) if self.voyage else []

    def entry_history(self) -> list[LogEntry]:
        return list(self.logbook.entries(self._vid(), history=True)) if self.voyage else []

    def fix_arrays(self):
        return self.logbook.fix_arrays(self._vid())

    def latest_fix(self) -> Fix | None:
        return self.logbook.latest_fix(self._vid()) if self.voyage else None

    # --- the recent part of the track (the Watch view; the cost follows the span read,
    # not the size of the voyage) ---
    def recent_fixes(self, span_s: float) -> list[Fix]:
        """The current fixes of the last ``span_s`` seconds of the track, up to and with
        the latest fix, in time order (originals a correction superseded left out)."""
        latest = self.latest_fix()
        if latest is None:
            return []
        book = self.logbook
        records = book.fix_records_from(self._vid(),
                                        latest.time_utc - timedelta(seconds=span_s),
                                        limit=2**62)
        gone = book.corrections_of([f.fix_id for f in records])
        return [f for f in records if f.fix_id not in gone]

    def first_fix_time(self) -> datetime | None:
        """When the voyage's first current fix was taken (None without fixes)."""
        if self.voyage is None:
            return None
        book = self.logbook
        after = None
        while True:
            page = book.fix_records_after(self._vid(), after, limit=64)
            if not page:
                return None
            gone = book.corrections_of([f.fix_id for f in page])
            for f in page:
                if f.fix_id not in gone:
                    return f.time_utc
            after = page[-1].fix_id

    def change_counter(self) -> tuple:
        """Something that changes whenever the logbook does (cheap: polled by Watch):
        SQLite's data_version (commits by other connections and processes) and the latest
        fix id (commits by this one)."""
        book = self.logbook
        return (book.data_version(), book.latest_fix_id())

    # --- fix records a page at a time (the Log view's list; keyset reads) ---
    def fix_record_count(self) -> int:
        return self.logbook.fix_record_count(self._vid()) if self.voyage else 0

    def fix_records_after(self, after_id: int | None = None, *, limit: int) -> list[Fix]:
        return self.logbook.fix_records_after(self._vid(), after_id, limit=limit)

    def fix_records_before(self, before_id: int | None = None, *, limit: int) -> list[Fix]:
        return self.logbook.fix_records_before(self._vid(), before_id, limit=limit)

    def fix_records_from(self, when: datetime, *, limit: int) -> list[Fix]:
        return self.logbook.fix_records_from(self._vid(), when, limit=limit)

    def fix_record_rank(self, fix_id: int) -> int:
        return self.logbook.fix_record_rank(self._vid(), fix_id)

    def corrections_of(self, fix_ids) -> dict[int, int]:
        return self.logbook.corrections_of(fix_ids)

    # --- log entries ---
    def entries(self) -> list[LogEntry]:
        return list(self.logbook.entries(self._vid())) if self.voyage else []

    def add_entry(self, entry: LogEntry) -> LogEntry:
        return self.logbook.add_entry(self._vid(), entry)
