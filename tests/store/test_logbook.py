"""The logbook's records: craft, voyages, plans, fixes, corrections, entries, imports."""

from __future__ import annotations

import math
import os
import sqlite3
import stat
from datetime import datetime, timedelta, timezone

import numpy as np
import pytest
from geographiclib.geodesic import Geodesic

from passagelog.errors import InputError, NotFoundError, StoreError
from passagelog.model import Craft, Fix, LegPlan, LogEntry, Route, Voyage, Waypoint
from passagelog.store import SCHEMA_VERSION, Logbook

T0 = datetime(2026, 3, 1, 12, 0, tzinfo=timezone.utc)
H = timedelta(hours=1)


def test_new_file_is_private_wal_with_foreign_keys(tmp_path):
    path = tmp_path / "sub" / "log.sqlite"
    with Logbook.open(path) as book:
        assert stat.S_IMODE(os.stat(path).st_mode) == 0o600
        assert book._q("PRAGMA journal_mode")[0][0] == "wal"
        assert book._q("PRAGMA foreign_keys")[0][0] == 1
        assert book._q("PRAGMA busy_timeout")[0][0] == 10000
        assert book.schema_version == SCHEMA_VERSION
    for extra in ("-wal", "-shm"):
        side = path.with_name(path.name + extra)
        if side.exists():
            assert stat.S_IMODE(os.stat(side).st_mode) & 0o077 == 0


def test_open_without_create_refuses_missing_file(tmp_path):
    with pytest.raises(NotFoundError, match="does not exist"):
        Logbook.open(tmp_path / "none.sqlite", create=False)
    assert not (tmp_path / "none.sqlite").exists()


def test_other_sqlite_file_is_not_taken_for_a_logbook(tmp_path):
    path = tmp_path / "other.sqlite"
    conn = sqlite3.connect(path)
    conn.execute("CREATE TABLE t (x)")
    conn.commit()
    conn.close()
    with pytest.raises(StoreError, match="not a logbook"):
        Logbook.open(path)


def test_a_file_that_is_not_sqlite_is_refused(tmp_path):
    path = tmp_path / "notes.sqlite"
    path.write_text("fixes: none yet\n" * 100)
    with pytest.raises(StoreError, match="cannot be opened: file is not a database"):
        Logbook.open(path)
    assert path.read_text() == "fixes: none yet\n" * 100


def test_plan_assignment_time_must_be_utc(book, voyage, route):
    book.create_plan(route)
    with pytest.raises(InputError, match="plan assignment from time .* must be a "
                                         "timezone-aware UTC time"):
        book.assign_plan(voyage, "Solent", from_utc=datetime(2026, 3, 1))
    assert book.plan_assignments(voyage) == []


def test_craft_round_trip_and_unique_names(book):
    c = book.add_craft(Craft("Kestrel", kind="ship", usual_speed_kn=8, max_speed_kn=12.5))
    assert c.craft_id == 1
    assert book.craft("Kestrel") == c
    assert book.craft(1) == c
    assert book.craft("1") == c
    with pytest.raises(StoreError, match="craft 'Kestrel' already exists"):
        book.add_craft(Craft("Kestrel"))
    with pytest.raises(NotFoundError, match="craft 'Osprey' is not in the logbook"):
        book.craft("Osprey")
    a = book.add_craft(Craft("G-ABCD", kind="aircraft", max_speed_kn=140))
    assert book.list_craft() == [c, a]


def test_voyage_needs_known_craft(book):
    with pytest.raises(NotFoundError, match="craft 7 is not in the logbook"):
        book.add_voyage(Voyage("V", craft_id=7))
    assert book.list_voyages() == []


def test_voyage_round_trip(book, route):
    craft = book.add_craft(Craft("Kestrel"))
    pid, rev = book.create_plan(route, "first draft")
    v = book.add_voyage(Voyage("Solent run", craft_id=craft.craft_id, from_place="Cowes",
                               to_place="Poole", departure_utc=T0, zd_minutes=-60,
                               plan_id=pid))
    assert v == Voyage("Solent run", craft.craft_id, "Cowes", "Poole", T0, -60, pid, 1)
    assert book.voyage("Solent run") == v
    assert book.list_voyages() == [v]
    with pytest.raises(StoreError, match="voyage 'Solent run' already exists"):
        book.add_voyage(Voyage("Solent run"))


def test_plan_revisions_and_history(book, route):
    pid, rev = book.create_plan(route, "first draft")
    assert (pid, rev) == (1, 1)
    moved = route.with_changes(waypoints=(route.waypoints[0],
                                          Waypoint("Needles", 50.65, -1.62),
                                          route.waypoints[2]))
    assert book.save_revision("Solent", moved, "Needles moved clear of the Shingles") == 2
    assert book.route("Solent", 1) == route.with_changes(revision=1, note="first draft")
    assert book.route(pid) == moved.with_changes(revision=2,
                                                 note="Needles moved clear of the Shingles")
    hist = book.plan_history(pid)
    assert [(h.revision, h.note, h.waypoint_count) for h in hist] == [
        (1, "first draft", 3), (2, "Needles moved clear of the Shingles", 3)]
    assert hist[0].recorded_utc < hist[1].recorded_utc
    assert book.plan("Solent").latest_revision == 2
    with pytest.raises(InputError, match="change note must not be empty"):
        book.save_revision(pid, moved, " ")
    with pytest.raises(NotFoundError, match="has no revision 3"):
        book.route(pid, 3)
    with pytest.raises(StoreError, match="plan 'Solent' already exists"):
        book.create_plan(route)


def test_route_with_every_field_round_trips(book):
    r = Route(
        "Full", (Waypoint("A", -33.5, 151.25, 370.4, rtz_id=10, revision=2,
                          extras=(("x", "<a/>"),)),
                 Waypoint("B", -34.0, 179.99), Waypoint("C", -34.5, -179.5)),
        legs=(LegPlan("great-circle", 12.5, 185.2, 370.4, 926.0, "keep 2 NM off", 10, 14,
                      (("y", "z"),)),
              LegPlan("rhumb")),
        schedule=(), extras=(("route-ext", "1"),))
    pid, _ = book.create_plan(r, "import")
    assert book.route(pid) == r.with_changes(revision=1, note="import")


def test_plan_schedule_over_time(book, voyage, route):
    pid, _ = book.create_plan(route, "v1")
    book.save_revision(pid, route.with_changes(name="Solent B"), "v2")
    book.assign_plan(voyage, pid, 1)
    book.assign_plan(voyage, pid, 2, from_utc=T0 + 2 * H)
    sched = book.plan_schedule(voyage)
    assert [(f, r.revision) for f, r in sched] == [(None, 1), (T0 + 2 * H, 2)]
    assert book.voyage(voyage.voyage_id).plan_id == pid
    with pytest.raises(NotFoundError, match="has no revision 9"):
        book.assign_plan(voyage, pid, 9)


def _fix(hours: float, lat: float, lon: float = -1.5, **kw) -> Fix:
    return Fix(T0 + timedelta(hours=hours), lat, lon, **kw)


def test_fix_round_trip_and_implied_speed(book, voyage):
    first = book.add_fix(voyage, _fix(0, 50.0, sog_kn=6.0, cog=181.5, hdop=0.9,
                                      satellites=9, fix_mode="A", remarks="off Cowes",
                                      source="$GPRMC,...*00"))
    assert first.fix_id == 1 and not first.suspect and first.implied_speed_kn is None
    second = book.add_fix(voyage, _fix(1, 50.1))
    # distance from geographiclib's own WGS84 inverse (Karney 2013), not the project's code
    s12 = Geodesic.WGS84.Inverse(50.0, -1.5, 50.1, -1.5)["s12"]
    assert second.implied_speed_kn == pytest.approx(s12 / 1852.0, rel=1e-12)
    assert not second.suspect  # about 6 kn, craft max 12 kn
    assert book.fix(1) == first
    assert first.sog_kn == 6.0 and first.satellites == 9 and first.source == "$GPRMC,...*00"


def test_fix_beyond_max_speed_is_stored_but_suspect(book, voyage):
    book.add_fix(voyage, _fix(0, 50.0))
    # 0.5 deg of latitude in one hour: about 30 NM, far above the craft's 12 kn
    jump = book.add_fix(voyage, _fix(1, 50.5))
    assert jump.suspect
    s12 = Geodesic.WGS84.Inverse(50.0, -1.5, 50.5, -1.5)["s12"]
    assert jump.implied_speed_kn == pytest.approx(s12 / 1852.0, rel=1e-12)
    assert book.counts(voyage)["suspect"] == 1
    # the next fix is judged against the suspect one (its previous fix in time)
    back = book.add_fix(voyage, _fix(2, 50.02))
    assert back.suspect
    arr = book.fix_arrays(voyage)
    assert arr.suspect.tolist() == [False, True, True]


def test_same_time_other_place_is_suspect(book, voyage):
    book.add_fix(voyage, _fix(0, 50.0))
    twin = book.add_fix(voyage, _fix(0, 50.01))
    assert twin.suspect and twin.implied_speed_kn is None


def test_no_max_speed_means_no_suspect(book):
    c = book.add_craft(Craft("Slow"))
    v = book.add_voyage(Voyage("V", craft_id=c.craft_id))
    book.add_fix(v, _fix(0, 50.0))
    assert not book.add_fix(v, _fix(0.1, 51.0)).suspect


def test_implied_speed_uses_previous_fix_in_time(book, voyage):
    book.add_fix(voyage, _fix(0, 50.0))
    book.add_fix(voyage, _fix(2, 50.2))
    late = book.add_fix(voyage, _fix(1, 50.1))  # written last, lies between the two
    s12 = Geodesic.WGS84.Inverse(50.0, -1.5, 50.1, -1.5)["s12"]
    assert late.implied_speed_kn == pytest.approx(s12 / 1852.0, rel=1e-12)
    assert [f.fix_id for f in book.fixes(voyage)] == [1, 3, 2]
    assert book.fix_arrays(voyage).fix_id.tolist() == [1, 3, 2]


def test_correction_supersedes_and_keeps_history(book, voyage):
    a = book.add_fix(voyage, _fix(0, 50.0))
    b = book.add_fix(voyage, _fix(1, 50.1))
    c = book.correct_fix(voyage, b.fix_id, _fix(1, 50.1, -1.51, method="visual"),
                         "position read off the wrong bearing")
    assert (c.fix_id, c.supersedes, c.reason) == (3, 2, "position read off the wrong bearing")
    assert book.fixes(voyage) == [a, c]
    assert book.fixes(voyage, history=True) == [a, b, c]
    assert book.fix_recorded_utc(3) > book.fix_recorded_utc(2)
    assert book.fix_arrays(voyage).fix_id.tolist() == [1, 3]
    assert book.latest_fix(voyage) == c
    assert book.counts(voyage) == {"fixes": 3, "fixes_current": 2, "suspect": 0,
                                   "entries": 0, "entries_current": 0}
    with pytest.raises(StoreError, match="fix 2 was already corrected by fix 3"):
        book.correct_fix(voyage, 2, _fix(1, 50.1), "again")
    with pytest.raises(InputError, match="a reason is required"):
        book.correct_fix(voyage, 3, _fix(1, 50.1), "")
    with pytest.raises(NotFoundError, match="fix 99 is not in the logbook"):
        book.correct_fix(voyage, 99, _fix(1, 50.1), "x")


def test_correction_must_stay_in_its_voyage(book, voyage):
    other = book.add_voyage(Voyage("Other"))
    f = book.add_fix(other, _fix(0, 10.0))
    with pytest.raises(StoreError, match="fix 1 belongs to another voyage"):
        book.correct_fix(voyage, f.fix_id, _fix(0, 10.0), "x")


def test_add_fixes_streams_and_matches_single_adds(book, voyage):
    fixes = [_fix(i / 60, 50.0 + i * 1e-3, sog_kn=float(i % 7), cog=float(i % 360))
             for i in range(2500)]
    assert book.add_fixes(voyage, iter(fixes), batch_size=700) == 2500
    stored = book.fixes(voyage)
    assert len(stored) == 2500
    assert [(f.lat, f.lon, f.sog_kn, f.cog, f.time_utc) for f in stored] == [
        (f.lat, f.lon, f.sog_kn, f.cog, f.time_utc) for f in fixes]
    # implied speed of each fix from the one before, across batch boundaries
    for k in (1, 699, 700, 701, 2499):
        s12 = Geodesic.WGS84.Inverse(fixes[k - 1].lat, -1.5, fixes[k].lat, -1.5)["s12"]
        assert stored[k].implied_speed_kn == pytest.approx(s12 / 1852.0 * 60, rel=1e-9)
    arr = book.fix_arrays(voyage)
    assert len(arr) == 2500
    assert np.array_equal(arr.lat, [f.lat for f in stored])
    assert np.array_equal(arr.time_s, [f.time_utc.timestamp() for f in stored])
    assert np.array_equal(arr.sog_kn, [f.sog_kn for f in stored])
    assert np.isnan(arr.heading).all() and np.isnan(arr.stw_kn).all()
    assert book.verify().ok


def test_fix_arrays_of_empty_voyage(book, voyage):
    arr = book.fix_arrays(voyage)
    assert len(arr) == 0 and arr.time_s.dtype == np.float64


def test_failed_stream_leaves_logbook_unchanged(book, voyage, row_counts):
    book.add_fix(voyage, _fix(0, 50.0))
    before = row_counts(book)

    def stream():
        for i in range(25):
            yield _fix(i, 50.0 + i * 1e-3)
        raise RuntimeError("reader failed at line 26")

    with pytest.raises(RuntimeError):
        book.add_fixes(voyage, stream(), batch_size=10)
    assert row_counts(book) == before
    assert book.verify().ok


def test_database_check_refuses_a_forged_fix_and_nothing_is_written(book, voyage, row_counts):
    before = row_counts(book)
    bad = _fix(1, 50.0)
    object.__setattr__(bad, "method", "sextant")  # slips past the model's own check
    with pytest.raises(StoreError, match="refused a fix.*CHECK"):
        book.add_fixes(voyage, [_fix(0, 50.0), bad])
    assert row_counts(book) == before


def test_nan_never_reaches_the_file(book, voyage, row_counts):
    before = row_counts(book)
    bad = _fix(1, 50.0)
    object.__setattr__(bad, "lat", math.nan)
    with pytest.raises(InputError, match="not finite"):
        book.add_fix(voyage, bad)
    with pytest.raises(InputError):
        Fix(T0, 50.0, 1.0, sog_kn=math.nan)
    assert row_counts(book) == before


def test_append_only_triggers_refuse_update_and_delete(book, voyage, route):
    book.add_fix(voyage, _fix(0, 50.0))
    book.add_entry(voyage, LogEntry(T0, "departure"))
    book.create_plan(route)
    for sql in ("UPDATE fix SET lat = 0", "DELETE FROM fix", "UPDATE entry SET text = 'x'",
                "DELETE FROM entry", "UPDATE plan_point SET lat = 0",
                "DELETE FROM plan_revision", "DELETE FROM chain_head"):
        with pytest.raises(sqlite3.IntegrityError, match="append-only|cannot be deleted"):
            book._conn.execute(sql)


def test_entries_corrections_and_zone(book, voyage):
    dep = book.add_entry(voyage, LogEntry(T0, "departure", "let go forward and aft",
                                          lat=50.77, lon=-1.30))
    clock = book.add_entry(voyage, LogEntry(T0 + 5 * H, "clock-change", "clocks advanced",
                                            zd_minutes=-60))
    assert (dep.entry_id, clock.entry_id) == (1, 2)
    assert book.zone_at(voyage, T0 + 4 * H) == 0
    assert book.zone_at(voyage, T0 + 5 * H) == -60
    fixed = book.correct_entry(voyage, 2, LogEntry(T0 + 6 * H, "clock-change",
                                                   "clocks advanced", zd_minutes=-60),
                               "time written in ship's time")
    assert fixed.supersedes == 2 and fixed.reason == "time written in ship's time"
    assert book.entries(voyage) == [dep, fixed]
    assert len(book.entries(voyage, history=True)) == 3
    assert book.zone_at(voyage, T0 + 5 * H) == 0
    with pytest.raises(StoreError, match="log entry 2 was already corrected by log entry 3"):
        book.correct_entry(voyage, 2, LogEntry(T0, "remark"), "x")


def test_idempotent_import_in_one_transaction(book, voyage):
    digest = "ab" * 32

    def import_file() -> int:
        with book.transaction():
            if book.has_import(digest):
                return 0
            n = book.add_fixes(voyage, [_fix(i, 50.0 + i * 0.01) for i in range(3)])
            book.record_import(digest, "track.nmea", "nmea", {"fixes": n})
            return n

    assert import_file() == 3
    assert import_file() == 0
    assert len(book.fixes(voyage)) == 3
    assert [(i.source_name, i.counts) for i in book.imports()] == [("track.nmea",
                                                                    {"fixes": 3})]
    with pytest.raises(InputError, match="64 hexadecimal digits"):
        book.record_import("xyz", "a", "nmea", {})


def test_failed_import_records_nothing(book, voyage, row_counts):
    before = row_counts(book)
    with pytest.raises(ValueError):
        with book.transaction():
            book.add_fixes(voyage, [_fix(0, 50.0)])
            book.record_import("cd" * 32, "t.nmea", "nmea", {"fixes": 1})
            raise ValueError("line 2 is not NMEA")
    assert row_counts(book) == before
    assert not book.has_import("cd" * 32)


def test_nested_transaction_rolls_back_inner_only(book, voyage):
    with book.transaction():
        book.add_fix(voyage, _fix(0, 50.0))
        with pytest.raises(StoreError):
            book.correct_fix(voyage, 1, _fix(0, 50.0), "fine")
            book.correct_fix(voyage, 1, _fix(0, 50.0), "twice")
        assert len(book.fixes(voyage, history=True)) == 2
    assert len(book.fixes(voyage, history=True)) == 2
    assert book.verify().ok


def test_poll_counters(book, voyage, tmp_path):
    assert book.latest_fix_id() == 0
    with Logbook.open(book.path) as other:
        seen = book.data_version()
        other.add_fix(voyage.voyage_id, _fix(0, 50.0))
        assert book.data_version() != seen
    assert book.latest_fix_id(voyage) == 1
    assert book.latest_fix(voyage).fix_id == 1


from hypothesis import HealthCheck, given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402


@settings(max_examples=25, deadline=None,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(minutes=st.lists(st.integers(0, 50), min_size=1, max_size=30),
       corrections=st.lists(st.tuples(st.integers(0, 40), st.integers(0, 50)), max_size=8),
       batch=st.integers(1, 7))
def test_property_fix_arrays_is_the_current_view(tmp_path_factory, minutes, corrections,
                                                 batch):
    """Fixes written out of time order in batches, some corrected (to other times): the
    arrays hold exactly the current fixes of fixes(), in the same order."""
    with Logbook.open(tmp_path_factory.mktemp("fa") / "log.sqlite") as book:
        book.add_voyage(Voyage("V"))
        book.add_fixes("V", [_fix(m / 60, 50 + m * 1e-3) for m in minutes], batch_size=batch)
        for pick, m in corrections:
            current = book.fixes("V")
            target = current[pick % len(current)]
            book.correct_fix("V", target.fix_id, _fix(m / 60, 51 + m * 1e-3), "moved")
        view = book.fixes("V")
        arr = book.fix_arrays("V")
        assert arr.fix_id.tolist() == [f.fix_id for f in view]
        assert arr.time_s.tolist() == [f.time_utc.timestamp() for f in view]
        assert arr.lat.tolist() == [f.lat for f in view]
        assert arr.suspect.dtype == bool and len(arr) == len(minutes)


def test_a_failed_commit_is_undone_and_the_logbook_stays_usable(book, voyage, row_counts):
    before = row_counts(book)
    with pytest.raises(StoreError, match="could not be committed and was undone"):
        with book.transaction():
            book.add_fix(voyage, _fix(0, 50.0))
            # a foreign key checked only at COMMIT (deferred) makes the COMMIT itself fail
            book._conn.execute("PRAGMA defer_foreign_keys = ON")
            book._conn.execute("INSERT INTO fix_block (voyage_id, n, last_fix_id, data) "
                               "VALUES (999, 1, 1, x'00')")
    assert row_counts(book) == before
    assert book.add_fix(voyage, _fix(0, 50.0)).fix_id == 1
    assert book.verify().ok
