"""Derived results kept in the logbook with the stamp of the records they came from.

A result computed from a voyage's records (the reconciled review the terminal UI shows) can
be kept in the ``derived_result`` table so that opening the logbook again shows it at once.
Each is stored with a *content stamp*: a SHA-256 over the heads of every record chain (the
last id and hash of fixes, log entries, plan revisions, plan assignments and imports) and the
voyage's and craft's rows. Any append or correction moves a chain head, so a stored result is
current exactly when its stamp equals :func:`content_stamp` now; a caller decides what to do
with a stale one (show it marked as such while computing again). The data are opaque bytes to
the logbook; they are never part of a chain, ``verify`` does not vouch for them, and
``verify --rebuild-cache`` deletes them.
"""

from __future__ import annotations

import hashlib
import json
from dataclasses import dataclass
from datetime import datetime, timezone
from typing import TYPE_CHECKING

from passagelog.errors import InputError

if TYPE_CHECKING:
    from passagelog.model import Voyage
    from passagelog.store.logbook import Logbook

#: Largest derived result kept, bytes (a review summary of a long voyage is a few MB).
MAX_BYTES = 64 * 1024 * 1024


@dataclass(frozen=True)
class DerivedResult:
    """A stored result: the stamp it was computed under, when it was written, its bytes."""

    kind: str
    stamp: str
    written_utc: datetime
    data: bytes


def content_stamp(book: "Logbook", voyage: "Voyage | int | str") -> str:
    """The stamp of everything a voyage's results are computed from, as it is now."""
    with book._reading():
        vrow = book._voyage_row(voyage)
        heads = book._q("SELECT chain, last_id, hex(last_hash) FROM chain_head ORDER BY chain")
        voyage_cols = book._q("SELECT * FROM voyage WHERE voyage_id = ?", (vrow[0],))
        craft_cols = book._q("SELECT * FROM craft WHERE craft_id = "
                             "(SELECT craft_id FROM voyage WHERE voyage_id = ?)", (vrow[0],))
    text = json.dumps([book.schema_version, heads, voyage_cols, craft_cols], default=str)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def _kind(kind: str) -> str:
    if not isinstance(kind, str) or not kind.strip():
        raise InputError(f"derived result kind {kind!r} must be a non-empty name")
    return kind


def read_result(book: "Logbook", voyage: "Voyage | int | str",
                kind: str) -> DerivedResult | None:
    """The stored result of ``kind`` for ``voyage`` (current or not), or None."""
    vid = book._voyage_row(voyage)[0]
    rows = book._q("SELECT stamp, written_utc, data FROM derived_result "
                   "WHERE voyage_id = ? AND kind = ?", (vid, _kind(kind)))
    if not rows:
        return None
    stamp, written, data = rows[0]
    return DerivedResult(kind, stamp, datetime.fromisoformat(written.replace("Z", "+00:00")),
                         bytes(data))


def write_result(book: "Logbook", voyage: "Voyage | int | str", kind: str, stamp: str,
                 data: bytes) -> None:
    """Keep ``data`` as the result of ``kind`` for ``voyage``, computed under ``stamp``
    (take the stamp *before* reading the inputs, so a result never claims newer records than
    it saw). Replaces the earlier one."""
    if not isinstance(data, (bytes, bytearray, memoryview)):
        raise InputError("a derived result must be bytes")
    if len(data) > MAX_BYTES:
        raise InputError(f"derived result of {len(data):,} bytes is larger than the "
                         f"{MAX_BYTES:,} kept")
    vid = book._voyage_row(voyage)[0]
    now = datetime.now(timezone.utc).isoformat(timespec="seconds").replace("+00:00", "Z")
    with book.transaction():
        book._write("INSERT OR REPLACE INTO derived_result (voyage_id, kind, stamp, written_utc, "
                    "data) VALUES (?, ?, ?, ?, ?)", (vid, _kind(kind), stamp, now, bytes(data)))


def clear_results(book: "Logbook") -> int:
    """Delete every stored derived result; returns how many there were."""
    with book.transaction():
        return book._write("DELETE FROM derived_result").rowcount
