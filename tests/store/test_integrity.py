"""Tampering behind the logbook's back: verify finds the first record edited, deleted or
inserted, and names it."""

from __future__ import annotations

import hashlib
from datetime import datetime, timedelta, timezone

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from passagelog.model import Fix, LogEntry
from passagelog.store import Logbook
from passagelog.store import chain as ch
from passagelog.store.schema import APPEND_ONLY_TABLES

T0 = datetime(2026, 3, 1, 12, 0, tzinfo=timezone.utc)


@pytest.fixture
def kept(book, voyage, route):
    pid, _ = book.create_plan(route, "first")
    book.save_revision(pid, route.with_changes(name="B"), "second")
    book.assign_plan(voyage, pid)
    book.add_fixes(voyage, [Fix(T0 + timedelta(minutes=i), 50.0 + i * 1e-3, -1.3,
                                remarks=f"fix {i}") for i in range(10)])
    for i in range(4):
        book.add_entry(voyage, LogEntry(T0 + timedelta(hours=i), "remark", f"entry {i}"))
    assert book.verify().ok
    return book


def _drop_triggers(book: Logbook, table: str) -> None:
    book._conn.execute(f"DROP TRIGGER {table}_no_update")
    book._conn.execute(f"DROP TRIGGER {table}_no_delete")


def _kinds(report):
    return [(f.kind, f.chain, f.record_id) for f in report.findings]


def test_sha256_link_is_the_documented_one(kept):
    """The stored hash of fix 1 is SHA-256(32 zero bytes || canonical bytes) computed here by
    hand from the documented layout (hashlib, independent of the chain module)."""
    import struct

    row = kept._q(f"SELECT {', '.join(ch.CHAINS['fix'])}, prev_hash, hash FROM fix "
                  "WHERE fix_id = 1")[0]
    (fid, vid, tu, ts, lat, lon, method, hdop, sats, mode, cog, sog, hdg, stw, remarks,
     source, sup, reason, rec, suspect, implied, prev, digest) = row
    nan = float("nan")
    texts = [tu, method, mode, remarks, source, reason, rec]
    data = struct.pack("<qqddddqddddqqd7i", fid, vid, ts, lat, lon, nan, -1, nan, nan, nan,
                       nan, -1, suspect, nan, *[-1 if t is None else len(t) for t in texts])
    data += "".join(t for t in texts if t is not None).encode("utf-8")
    assert prev == bytes(32)
    assert digest == hashlib.sha256(bytes(32) + data).digest()


def test_triggers_dropped_are_reported(kept):
    _drop_triggers(kept, "fix")
    report = kept.verify()
    assert not report.ok
    assert _kinds(report) == [("trigger-missing", "fix", None)] * 2
    assert "fix_no_update" in report.findings[0].message


def test_one_byte_changed_names_the_record(kept):
    _drop_triggers(kept, "fix")
    kept._conn.execute("UPDATE fix SET remarks = 'fix 6' WHERE fix_id = 5")  # was 'fix 4'
    report = kept.verify()
    assert ("edited", "fix", 5) in _kinds(report)
    assert "fix 5 was edited" in [f.message for f in report.findings if f.kind == "edited"][0]


def test_a_changed_position_is_found(kept):
    _drop_triggers(kept, "fix")
    kept._conn.execute("UPDATE fix SET lat = lat + 1e-9 WHERE fix_id = 3")
    assert ("edited", "fix", 3) in _kinds(kept.verify())


def test_a_record_rehashed_is_still_found(kept):
    """Someone edits fix 4 and recomputes its own hash: fix 5 no longer links to it."""
    _drop_triggers(kept, "fix")
    kept._conn.execute("UPDATE fix SET remarks = 'moved' WHERE fix_id = 4")
    row = kept._q(f"SELECT {', '.join(ch.CHAINS['fix'])}, prev_hash FROM fix WHERE fix_id = 4")[0]
    kept._conn.execute("UPDATE fix SET hash = ? WHERE fix_id = 4",
                       (ch.link(row[-1], ch.fix_bytes(row[:-1])),))
    found = [f for f in kept.verify().findings if f.chain == "fix"]
    assert [(f.kind, f.record_id) for f in found if f.kind != "trigger-missing"] == [
        ("edited", 4)]


def test_deleted_row_is_found(kept):
    _drop_triggers(kept, "entry")
    kept._conn.execute("DELETE FROM entry WHERE entry_id = 2")
    report = kept.verify()
    assert ("deleted", "entry", 2) in _kinds(report)
    msg = [f.message for f in report.findings if f.kind == "deleted"][0]
    assert msg == "log entry 2 deleted (the chain resumes at log entry 3)"


def test_deleted_last_row_is_found(kept):
    _drop_triggers(kept, "fix")
    kept._conn.execute("DELETE FROM fix WHERE fix_id = 10")
    assert ("deleted", "fix", 10) in _kinds(kept.verify())


def test_inserted_row_is_found(kept):
    _drop_triggers(kept, "fix")
    cols = ", ".join(ch.CHAINS["fix"])
    kept._conn.execute(
        f"INSERT INTO fix ({cols}, prev_hash, hash) SELECT fix_id + 100, voyage_id, time_utc, "
        "time_s, lat, lon, method, hdop, satellites, fix_mode, cog, sog_kn, heading, stw_kn, "
        "remarks, source, supersedes, reason, recorded_utc, suspect, implied_speed_kn, "
        "prev_hash, hash FROM fix WHERE fix_id = 3")
    report = kept.verify()
    assert ("inserted", "fix", 103) in _kinds(report)


def test_inserted_row_even_with_a_good_hash_is_beyond_the_head(kept):
    """A forger who appends a well-formed record but leaves the chain head alone is caught;
    one who also rewrites the head is not (docs/logbook.md says so)."""
    _drop_triggers(kept, "entry")
    last_id, last_hash = kept._head("entry")
    row = kept._q(f"SELECT {', '.join(ch.CHAINS['entry'])} FROM entry WHERE entry_id = 1")[0]
    forged = (last_id + 1,) + row[1:]
    digest = ch.link(last_hash, ch.canonical("entry", forged))
    kept._conn.execute(f"INSERT INTO entry ({', '.join(ch.CHAINS['entry'])}, prev_hash, hash) "
                       f"VALUES ({', '.join('?' * (len(forged) + 2))})",
                       forged + (last_hash, digest))
    assert ("inserted", "entry", last_id + 1) in _kinds(kept.verify())
    kept._conn.execute("UPDATE chain_head SET last_id = ?, last_hash = ? WHERE chain = 'entry'",
                       (last_id + 1, digest))
    assert [k for k in _kinds(kept.verify()) if k[0] != "trigger-missing"] == []


def test_plan_waypoint_edit_is_found(kept):
    _drop_triggers(kept, "plan_point")
    kept._conn.execute("UPDATE plan_point SET lat = 50.0 WHERE revision_id = 2 AND idx = 1")
    assert ("edited", "plan_revision", 2) in _kinds(kept.verify())


def test_every_append_only_table_is_protected(kept):
    names = {n for (n,) in kept._q("SELECT name FROM sqlite_master WHERE type = 'trigger'")}
    for table in APPEND_ONLY_TABLES:
        assert {f"{table}_no_update", f"{table}_no_delete"} <= names


def test_cache_tampering_is_found_and_rebuilt(kept, voyage):
    data = kept._q("SELECT block_id, data FROM fix_block")[0]
    raw = bytearray(data[1])
    raw[20] ^= 1  # one bit of the first fix's latitude
    kept._conn.execute("UPDATE fix_block SET data = ? WHERE block_id = ?", (bytes(raw), data[0]))
    report = kept.verify()
    assert _kinds(report) == [("cache", "fix_block", None)]
    kept.rebuild_cache()
    assert kept.verify().ok
    assert kept.fix_arrays(voyage).lat.tolist() == [f.lat for f in kept.fixes(voyage)]


def test_regression_negative_zero_verifies(book, voyage, route):
    """Bug found by the round-trip properties: SQLite stores -0.0 as 0.0, so a record hashed
    with -0.0 failed to verify. The canonical form writes -0.0 as 0.0."""
    book.add_fix(voyage, Fix(T0, -0.0, -0.0, cog=-0.0, sog_kn=-0.0))
    book.add_entry(voyage, LogEntry(T0, "remark", lat=-0.0, lon=0.0))
    wps = (route.waypoints[0].__class__("Z", -0.0, 0.0),) + route.waypoints[1:]
    book.create_plan(route.with_changes(waypoints=wps), "zero")
    assert book.verify().ok


_FIX_EDITS = {
    # column -> SQL expression giving a different value of the same type
    "voyage_id": "voyage_id + 1", "time_utc": "replace(time_utc, 'Z', '.5Z')",
    "time_s": "time_s + 0.5", "lat": "lat * (1 - 1e-15)", "lon": "lon + 1e-12",
    "method": "'radar'", "hdop": "coalesce(hdop + 0.1, 1.0)",
    "satellites": "coalesce(satellites + 1, 4)", "fix_mode": "coalesce(fix_mode || 'x', 'D')",
    "cog": "coalesce(cog / 2, 10.0)", "sog_kn": "coalesce(sog_kn + 1e-9, 0.0)",
    "heading": "coalesce(heading / 3, 1.0)", "stw_kn": "coalesce(stw_kn * 2 + 1, 0.5)",
    "remarks": "remarks || ' '", "source": "coalesce(NULL, 'GPS')",
    "supersedes": "NULL", "reason": "NULL", "recorded_utc": "'2026-03-02T08:00:00Z'",
    "suspect": "1 - suspect", "implied_speed_kn": "coalesce(implied_speed_kn + 1e-9, 1.0)",
}


@settings(max_examples=40, deadline=None)
@given(fix_no=st.integers(1, 6), column=st.sampled_from(sorted(_FIX_EDITS)))
def test_property_any_changed_column_of_any_fix_is_found(tmp_path_factory, fix_no, column):
    from passagelog.model import Craft, Voyage

    with Logbook.open(tmp_path_factory.mktemp("t") / "log.sqlite") as book:
        c = book.add_craft(Craft("K", max_speed_kn=12))
        book.add_voyage(Voyage("A", craft_id=c.craft_id))
        book.add_voyage(Voyage("B", craft_id=c.craft_id))
        book.add_fixes("A", [Fix(T0 + timedelta(minutes=i), 50 + i * 0.05, -1.3, sog_kn=5.0,
                                 hdop=1.2, satellites=7, source="$GPRMC")
                             for i in range(5)])
        book.correct_fix("A", 2, Fix(T0 + timedelta(minutes=1), 50.01, -1.3), "misread")
        _drop_triggers(book, "fix")
        if column in ("supersedes", "reason"):
            book._conn.execute("PRAGMA ignore_check_constraints = ON")
        before = book._q(f"SELECT {column} FROM fix WHERE fix_id = ?", (fix_no,))[0][0]
        book._conn.execute(f"UPDATE fix SET {column} = {_FIX_EDITS[column]} WHERE fix_id = ?",
                           (fix_no,))
        after = book._q(f"SELECT {column} FROM fix WHERE fix_id = ?", (fix_no,))[0][0]
        report = book.verify()
        if after == before and type(after) is type(before):
            assert [f for f in report.findings if f.chain == "fix"
                    and f.kind != "trigger-missing"] == []
        else:
            assert ("edited", "fix", fix_no) in _kinds(report)
