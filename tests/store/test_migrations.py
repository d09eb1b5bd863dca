"""Schema versions: a logbook made by every earlier release opens and upgrades in place.

``schema_v1.sql`` is the frozen SQL of schema version 1 as released. When version 2 is added,
freeze its SQL beside it (``schema_v2.sql``) and add it to ``RELEASED`` below: each earlier
file must still open, upgrade and verify.
"""

from __future__ import annotations

import sqlite3
from datetime import datetime, timedelta, timezone
from pathlib import Path

import pytest

from passagelog.errors import StoreError
from passagelog.model import Craft, Fix, LogEntry, Route, Voyage, Waypoint
from passagelog.store import SCHEMA_VERSION, Logbook
from passagelog.store.logbook import _statements
from passagelog.store.schema import MIGRATIONS

HERE = Path(__file__).parent
T0 = datetime(2026, 3, 1, 12, 0, tzinfo=timezone.utc)

#: schema version -> frozen SQL file of the release that introduced it
RELEASED = {1: HERE / "schema_v1.sql", 2: HERE / "schema_v2.sql"}


def _schema_of(conn: sqlite3.Connection) -> list[tuple]:
    return sorted(conn.execute(
        "SELECT type, name, tbl_name, sql FROM sqlite_master WHERE name NOT LIKE 'sqlite_%'"))


def _make_old_logbook(path: Path, version: int) -> None:
    """A logbook as the release of ``version`` made it: its frozen SQL, applied step by step,
    then records written by hand-made SQL of that release (here: through the library at that
    version, which writes the same rows)."""
    conn = sqlite3.connect(path)
    for v in range(1, version + 1):
        conn.executescript(RELEASED[v].read_text(encoding="utf-8"))
    conn.execute(f"PRAGMA user_version = {version}")
    conn.commit()
    conn.close()


def test_released_sql_is_what_this_code_creates(tmp_path):
    """A released version must never be edited in place: a change is a new migration."""
    assert max(RELEASED) == SCHEMA_VERSION, "freeze the new version's SQL in RELEASED"
    frozen = tmp_path / "frozen.sqlite"
    _make_old_logbook(frozen, SCHEMA_VERSION)
    with Logbook.open(tmp_path / "new.sqlite") as book:
        conn = sqlite3.connect(frozen)
        assert _schema_of(conn) == _schema_of(book._conn)
        conn.close()
    for version, path in RELEASED.items():
        assert _statements(MIGRATIONS[version]) == _statements(path.read_text(encoding="utf-8"))


@pytest.mark.parametrize("version", sorted(RELEASED))
def test_every_earlier_logbook_opens_and_upgrades_in_place(tmp_path, version):
    path = tmp_path / f"v{version}.sqlite"
    _make_old_logbook(path, version)
    with Logbook.open(path) as book:
        assert book.schema_version == SCHEMA_VERSION
        c = book.add_craft(Craft("Kestrel", max_speed_kn=12))
        v = book.add_voyage(Voyage("V", craft_id=c.craft_id))
        book.create_plan(Route("R", (Waypoint("A", 50, -1), Waypoint("B", 51, -1))))
        book.add_fixes(v, [Fix(T0 + timedelta(minutes=i), 50 + i * 1e-3, -1) for i in range(5)])
        book.add_entry(v, LogEntry(T0, "departure"))
        assert book.verify().ok
    with Logbook.open(path) as again:
        assert len(again.fixes("V")) == 5 and again.verify().ok


def test_a_next_version_migration_upgrades_in_place_keeping_records(tmp_path):
    """The migration runner applies a later step to a v1 logbook in place, in one transaction,
    and the records and their chains survive (the shape a real v2 will take)."""
    path = tmp_path / "v1.sqlite"
    with Logbook.open(path) as book:
        v = book.add_voyage(Voyage("V"))
        book.add_fixes(v, [Fix(T0 + timedelta(minutes=i), 50 + i * 1e-3, -1) for i in range(5)])
        nxt = SCHEMA_VERSION + 1
        book._migrate({**MIGRATIONS, nxt: "CREATE TABLE weather (time_utc TEXT NOT NULL, "
                                          "wind_kn REAL CHECK (wind_kn >= 0));"})
        assert book.schema_version == nxt
        assert book._q("SELECT count(*) FROM weather")[0][0] == 0
        assert len(book.fixes(v)) == 5 and book.verify().ok


def test_a_failed_migration_leaves_the_file_as_it_was(tmp_path):
    path = tmp_path / "v1.sqlite"
    with Logbook.open(path) as book:
        book.add_voyage(Voyage("V"))
        before = _schema_of(book._conn)
        with pytest.raises(sqlite3.OperationalError):
            book._migrate({**MIGRATIONS, SCHEMA_VERSION + 1:
                           "CREATE TABLE extra (x);\nCREATE TABLE extra (y);\n"})
        assert book.schema_version == SCHEMA_VERSION
        assert _schema_of(book._conn) == before


def test_a_newer_logbook_is_refused(tmp_path):
    path = tmp_path / "new.sqlite"
    Logbook.open(path).close()
    conn = sqlite3.connect(path)
    conn.execute(f"PRAGMA user_version = {SCHEMA_VERSION + 1}")
    conn.commit()
    conn.close()
    with pytest.raises(StoreError, match=f"schema version {SCHEMA_VERSION + 1}; this release "
                                         f"reads versions up to {SCHEMA_VERSION}"):
        Logbook.open(path)
