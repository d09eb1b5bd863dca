"""The SQLite logbook: schema, migrations, append-only records, integrity chain.

The one place in passagelog that knows SQL. One file per logbook; every write is one
transaction (a failure leaves the file exactly as it was); every SQL value is a bound
parameter.

Public API (all times aware UTC, distances metres, speeds knots)::

    from passagelog.store import Logbook

    with Logbook.open(path, create=True) as book:     # WAL, foreign keys, busy timeout, 0600
        craft = book.add_craft(Craft("Kestrel", max_speed_kn=12))      # -> Craft with craft_id
        book.craft(name_or_id); book.list_craft()
        v = book.add_voyage(Voyage("Kestrel 12", craft_id=craft.craft_id))  # -> Voyage
        book.voyage(name_or_id); book.list_voyages()

        plan_id, rev = book.create_plan(route, "created")          # revision 1
        rev = book.save_revision(plan_id, new_route, "moved WP 3")  # every edit: new revision
        book.route(plan, revision=None) -> Route (revision, note set)
        book.plan(name_or_id) -> PlanInfo; book.list_plans(); book.plan_history(plan)
        book.assign_plan(voyage, plan, revision=None, from_utc=None) -> PlanAssignment
        book.plan_assignments(voyage); book.plan_schedule(voyage) -> [(from_utc|None, Route)]

        book.add_fix(voyage, Fix(...)) -> Fix (fix_id, suspect, implied_speed_kn)
        book.add_fixes(voyage, iterable_of_fixes, batch_size=10000) -> int   # streaming
        book.correct_fix(voyage, fix_id, Fix(...), reason) -> Fix (supersedes, reason)
        book.fix(fix_id); book.fixes(voyage, history=False) -> list[Fix]
        book.fix_arrays(voyage) -> FixArrays (numpy: fix_id, time_s, lat, lon, sog_kn, cog,
                                              heading, stw_kn, implied_speed_kn, suspect)
        book.latest_fix(voyage); book.latest_fix_id(voyage=None); book.data_version()
        book.counts(voyage); book.zone_at(voyage, when) -> zd_minutes

        book.add_entry(voyage, LogEntry(...)); book.correct_entry(voyage, entry_id, e, reason)
        book.entry(entry_id); book.entries(voyage, history=False)

        with book.transaction():                  # idempotent file import, all or nothing
            if not book.has_import(sha256_hex):
                book.add_fixes(voyage, fixes)
                book.record_import(sha256_hex, "track.nmea", "nmea", {"fixes": n})

        report = book.verify()  # VerifyReport: ok, records, findings (first per chain)

Voyages, craft and plans may be named by object, id or name. Reads give the current view (a
corrected record is replaced by its correction); ``history=True`` gives every record.
Errors: :class:`~passagelog.errors.NotFoundError` for unknown names and ids,
:class:`~passagelog.errors.StoreError` for refused writes, :class:`~passagelog.errors.InputError`
for bad values (all raised before anything is written).

Integrity (see docs/logbook.md): fixes, log entries, plan revisions, plan assignments and
import records are append-only (database triggers refuse UPDATE and DELETE), and each such
table is a SHA-256 hash chain (:mod:`passagelog.store.chain`). A fix whose implied speed from
the previous fix in time exceeds the craft's maximum speed is stored flagged ``suspect``.
"""

from passagelog.store.logbook import (
    BLOCK_DTYPE, Finding, FixArrays, ImportInfo, Logbook, PlanAssignment, PlanInfo,
    PlanRevisionInfo, VerifyReport,
)
from passagelog.store.schema import SCHEMA_VERSION

__all__ = [
    "Logbook", "FixArrays", "Finding", "VerifyReport", "PlanInfo", "PlanRevisionInfo",
    "PlanAssignment", "ImportInfo", "BLOCK_DTYPE", "SCHEMA_VERSION",
]
