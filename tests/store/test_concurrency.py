"""A reader process and a writer process on the same logbook at once (WAL, busy timeout)."""

from __future__ import annotations

import multiprocessing as mp
from datetime import datetime, timedelta, timezone

from passagelog.model import Fix, Voyage
from passagelog.store import Logbook

T0 = datetime(2026, 3, 1, 12, 0, tzinfo=timezone.utc)
WRITES = 60


def _writer(path: str, start, done) -> None:
    with Logbook.open(path) as book:
        start.wait(10)
        for i in range(WRITES):
            if i % 2:
                book.add_fix("V", Fix(T0 + timedelta(seconds=i), 50 + i * 1e-4, -1.0))
            else:
                book.add_fixes("V", [Fix(T0 + timedelta(seconds=i, milliseconds=k),
                                         50 + i * 1e-4, -1.0) for k in range(5)])
    done.set()


def _reader(path: str, start, done, out) -> None:
    seen, problems = [], []
    with Logbook.open(path, create=False) as book:
        start.set()
        while True:
            finished = done.is_set()
            n = len(book.fix_arrays("V"))
            if seen and n < seen[-1]:
                problems.append(f"count went back from {seen[-1]} to {n}")
            seen.append(n)
            if finished:
                break
        report = book.verify()
        if not report.ok:
            problems.append(str(report.findings))
    out.put((seen, problems))


def test_reader_and_writer_processes_at_once(tmp_path):
    path = str(tmp_path / "log.sqlite")
    with Logbook.open(path) as book:
        book.add_voyage(Voyage("V"))
    ctx = mp.get_context("spawn")
    start, done, out = ctx.Event(), ctx.Event(), ctx.Queue()
    reader = ctx.Process(target=_reader, args=(path, start, done, out))
    writer = ctx.Process(target=_writer, args=(path, start, done))
    reader.start()
    writer.start()
    seen, problems = out.get(timeout=60)
    writer.join(30)
    reader.join(30)
    assert writer.exitcode == 0 and reader.exitcode == 0
    assert problems == []
    total = WRITES // 2 * 5 + WRITES // 2
    assert seen[-1] == total
    # every count the reader saw is a state after a whole transaction (1 or 5 fixes each)
    whole = {0}
    n = 0
    for i in range(WRITES):
        n += 1 if i % 2 else 5
        whole.add(n)
    assert set(seen) <= whole


def test_opening_and_reading_while_a_writer_holds_its_transaction(tmp_path):
    """A long import holds the write lock; the TUI must still open the logbook and read."""
    import sqlite3

    path = tmp_path / "log.sqlite"
    with Logbook.open(path) as book:
        book.add_voyage(Voyage("V"))
        book.add_fix("V", Fix(T0, 50.0, -1.0))
    with Logbook.open(path) as writer:
        with writer.transaction():
            writer.add_fix("V", Fix(T0 + timedelta(minutes=1), 50.01, -1.0))
            conn = sqlite3.connect(path, timeout=0.2)  # would wait on a lock for 0.2 s only
            conn.close()
            import passagelog.store.logbook as lb

            old = lb.BUSY_TIMEOUT_S
            lb.BUSY_TIMEOUT_S = 0.2
            try:
                with Logbook.open(path) as reader:
                    assert len(reader.fix_arrays("V")) == 1  # the snapshot before the write
                    assert reader.verify().ok
            finally:
                lb.BUSY_TIMEOUT_S = old
        with Logbook.open(path) as reader:
            assert len(reader.fix_arrays("V")) == 2
