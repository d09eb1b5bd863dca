"""A stream of fixes is read and checked before the write lock is taken (issue 9): another
writer can write while a long input is still being read, and a bad input never takes the
lock. What depends on the logbook's state (the chain head, the previous fix) is taken when
the fixes are written."""

from __future__ import annotations

import sqlite3
from datetime import timedelta

import pytest
from geographiclib.geodesic import Geodesic

from passagelog.errors import FormatError, InputError
from passagelog.model import Fix, Voyage
from passagelog.store import Logbook
from passagelog.store.logbook import PreparedFixes
from tests.store.conftest import T0


def _fix(minutes: float, lat: float) -> Fix:
    return Fix(T0 + timedelta(minutes=minutes), lat, -1.5)


def _lock_free(path) -> bool:
    """Whether another connection could take the write lock at once (no busy wait)."""
    probe = sqlite3.connect(path, timeout=0, isolation_level=None)
    try:
        probe.execute("BEGIN IMMEDIATE")
    except sqlite3.OperationalError as exc:
        assert "locked" in str(exc) or "busy" in str(exc), exc
        return False
    finally:
        if probe.in_transaction:
            probe.execute("ROLLBACK")
        probe.close()
    return True


def _statements(book: Logbook) -> list[str]:
    """Every SQL statement the logbook's connection runs from now on."""
    seen: list[str] = []
    book._conn.set_trace_callback(seen.append)
    return seen


def test_another_writer_writes_while_the_stream_is_read(book, voyage):
    book.add_fix(voyage, _fix(0, 50.0))
    free_during_read = []

    def slow_reader():
        for i in range(30):
            if i == 15:  # half way through the "file": the feed logs a fix meanwhile
                free_during_read.append(_lock_free(book.path))
                if free_during_read[-1]:
                    with Logbook.open(book.path) as other:
                        other.add_fix(voyage.voyage_id, _fix(9, 50.09))
            yield _fix(10 + i, 50.1 + i * 1e-3)

    seen = _statements(book)
    assert book.add_fixes(voyage, slow_reader(), batch_size=7) == 30
    assert free_during_read == [True]
    # one write transaction, begun after the whole stream was read (the other writer's fix
    # was written before it: it is record 2, the stream's fixes 3 to 32)
    assert sum(s.startswith("BEGIN IMMEDIATE") for s in seen) == 1
    fixes = book.fixes(voyage, history=True)
    assert [f.fix_id for f in fixes] == list(range(1, 33))
    assert fixes[1].time_utc == T0 + timedelta(minutes=9)
    # the first fix of the stream takes its implied speed from the fix the other writer
    # added (the voyage's previous fix when the stream was written), not from fix 1
    # reference: geographiclib Inverse, 50.09N to 50.1N on 1.5W, over 1 minute
    s12 = Geodesic.WGS84.Inverse(50.09, -1.5, 50.1, -1.5)["s12"]
    assert fixes[2].implied_speed_kn == pytest.approx(s12 / 1852.0 * 60, rel=1e-12)
    assert book.verify().ok


def test_a_stream_that_fails_never_takes_the_write_lock(book, voyage, row_counts):
    book.add_fix(voyage, _fix(0, 50.0))
    before = row_counts(book)

    def bad_file():
        for i in range(25):
            yield _fix(1 + i, 50.0 + i * 1e-3)
        raise FormatError("bad field", where="track.nmea, line 26")

    seen = _statements(book)
    with pytest.raises(FormatError, match=r"track.nmea, line 26"):
        book.add_fixes(voyage, bad_file(), batch_size=10)
    assert not any(s.startswith("BEGIN") for s in seen), seen
    assert not any(s.startswith(("INSERT", "UPDATE")) for s in seen), seen
    assert row_counts(book) == before
    assert book.verify().ok


def test_a_bad_fix_late_in_the_stream_is_refused_before_anything_is_written(
        book, voyage, row_counts):
    before = row_counts(book)
    stream = [_fix(i, 50.0) for i in range(12)] + ["not a fix"]
    seen = _statements(book)
    with pytest.raises(InputError, match="fix 3 of the batch is not a Fix"):
        book.add_fixes(voyage, stream, batch_size=5)
    assert not any(s.startswith("BEGIN") for s in seen)
    assert row_counts(book) == before


def test_prepared_fixes_inside_a_larger_transaction(book, voyage, row_counts):
    """An import: the file is read into PreparedFixes first; the transaction that writes the
    fixes and the import record then runs without reading anything."""
    book.add_fix(voyage, _fix(0, 50.0))
    read = []

    def reader():
        for i in range(40):
            read.append(_lock_free(book.path))
            yield _fix(1 + i, 50.0 + i * 1e-3)

    prepared = book.prepare_fixes(reader(), batch_size=16)
    assert isinstance(prepared, PreparedFixes) and len(prepared) == 40
    assert read == [True] * 40
    with book.transaction():
        assert book.add_fixes(voyage, prepared) == 40
        book.record_import("ef" * 32, "track.nmea", "nmea", {"fixes": 40})
    assert len(book.fixes(voyage)) == 41
    assert book.verify().ok
    # the same prepared fixes written again are written the same way (nothing kept from
    # the first write, such as the first fix's implied speed)
    other = book.add_voyage(Voyage("Other", craft_id=voyage.craft_id))
    assert book.add_fixes(other, prepared) == 40
    a = book.fixes(voyage)[1:]
    b = book.fixes(other)
    assert [f.implied_speed_kn for f in a][1:] == [f.implied_speed_kn for f in b][1:]
    assert b[0].implied_speed_kn is None and a[0].implied_speed_kn is not None
    assert book.verify().ok


def test_an_unknown_voyage_is_named_before_the_stream_is_read(book):
    from passagelog.errors import NotFoundError

    def never():
        raise AssertionError("the stream was read")
        yield

    with pytest.raises(NotFoundError, match="Nowhere"):
        book.add_fixes("Nowhere", never())
