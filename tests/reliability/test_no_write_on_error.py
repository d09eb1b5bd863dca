"""Nothing is written on error: ``passagelog import`` of generated and mutated files either
adds the whole file or leaves the logbook's bytes exactly as they were, and its error names
the file. The long form is slow-marked."""

from __future__ import annotations

import hashlib
import json
import random
import sqlite3
import sys
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parent))
import relkit  # noqa: E402

from passagelog.model import Voyage  # noqa: E402
from passagelog.store import Logbook  # noqa: E402

DOCS = relkit.valid_documents()


def _bytes_of(db: Path) -> str:
    """SHA-256 of the logbook file and its WAL (a commit appends to the WAL)."""
    digest = hashlib.sha256()
    for p in (db, db.with_name(db.name + "-wal")):
        if p.exists():
            digest.update(p.read_bytes())
    return digest.hexdigest()


def _counts(db: Path) -> dict[str, int]:
    conn = sqlite3.connect(f"file:{db}?mode=ro", uri=True)
    try:
        return {t: conn.execute(f'SELECT count(*) FROM "{t}"').fetchone()[0]  # noqa: S608
                for t in ("fix", "plan", "plan_revision", "import_record")
                if conn.execute("SELECT 1 FROM sqlite_master WHERE name = ?", (t,)).fetchone()}
    finally:
        conn.close()


def run_imports(tmp_path: Path, seeds) -> dict[str, int]:
    db = tmp_path / "book.sqlite"
    with Logbook.open(db) as book:
        book.add_voyage(Voyage("V"))
    tally = {"refused": 0, "imported": 0, "again": 0}
    names = sorted(DOCS)
    for seed in seeds:
        rng = random.Random(seed)
        kind = rng.choice(names)
        name = f"in{seed}.{kind.split('.')[1]}"
        path = tmp_path / name
        path.write_bytes(relkit.mutate(rng, DOCS[kind]))
        before_bytes, before = _bytes_of(db), _counts(db)
        code, out, err = relkit.run_cli(["--db", str(db), "import", str(path), "--voyage", "V",
                                         "-q", "--json"])
        relkit.check_cli_result(["import", name], code, out, err)
        if code != 0:
            tally["refused"] += 1
            assert _bytes_of(db) == before_bytes, f"seed {seed}: a refused import wrote"
            assert name in err, f"seed {seed}: the error does not name the file: {err!r}"
        else:
            report = json.loads(out)
            after = _counts(db)
            if report["imported"]:
                tally["imported"] += 1
                kept = (report.get("summary") or {}).get("fixes_kept", 0)
                assert after["fix"] - before["fix"] == kept, (seed, report)
                assert after["import_record"] == before["import_record"] + 1
            else:  # the same bytes were imported before: nothing added
                tally["again"] += 1
                assert after == before
        path.unlink()
    with Logbook.open(db) as book:
        assert book.verify().ok
    return tally


def test_mutated_imports_are_whole_or_leave_no_trace(tmp_path):
    tally = run_imports(tmp_path, range(200))
    assert tally["refused"] and tally["imported"], tally


@pytest.mark.slow
def test_mutated_imports_long(tmp_path):
    tally = run_imports(tmp_path, range(200, 5200))
    print(f"\nmutated imports: {tally}")
