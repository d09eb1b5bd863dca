"""The record chain: canonical content of a record and its SHA-256 link.

Every append-only record carries ``prev_hash`` (the hash of the record before it in its chain,
32 zero bytes for the first) and ``hash``::

    hash = SHA-256(prev_hash || canonical)

``canonical`` is made from the record's stored columns, in the order of its chain's column list
in :data:`CHAINS`, exactly as SQLite returns them:

* fixes (many, so a compact binary form, see :func:`fix_bytes`): the numbers packed
  little-endian with ``struct`` format ``<qqddddqddddqqd7i`` -- fix_id, voyage_id, time_s, lat,
  lon, hdop, satellites, cog, sog_kn, heading, stw_kn, supersedes, suspect, implied_speed_kn
  (a NULL real is NaN, a NULL integer -1, -0.0 is written as 0.0), then the lengths in characters of the seven text
  columns time_utc, method, fix_mode, remarks, source, reason, recorded_utc (-1 for NULL),
  then the UTF-8 bytes of those texts one after another;
* every other record: each column written as Python's ``repr()`` (``None``; integers in
  decimal; reals in shortest round-trip form such as ``12.0``; text quoted and escaped),
  joined by U+001F, as UTF-8. A plan revision's canonical text is its own row followed by
  each waypoint row and each schedule row, rows joined by U+001E.

There is one chain per append-only table; record ids within a chain are 1, 2, 3, ... with no
gap, because rows are never deleted. ``chain_head`` keeps the last id and hash of each chain.
"""

from __future__ import annotations

import hashlib
import struct

#: The predecessor hash of the first record of every chain.
GENESIS = bytes(32)

#: chain -> (id column, canonical columns in order); the id column comes first.
CHAINS: dict[str, tuple[str, ...]] = {
    "plan_revision": ("revision_id", "plan_id", "revision", "route_name", "note",
                      "extras_json", "recorded_utc"),
    "plan_assignment": ("assignment_id", "voyage_id", "plan_id", "revision", "from_utc",
                        "recorded_utc"),
    "fix": ("fix_id", "voyage_id", "time_utc", "time_s", "lat", "lon", "method", "hdop",
            "satellites", "fix_mode", "cog", "sog_kn", "heading", "stw_kn", "remarks",
            "source", "supersedes", "reason", "recorded_utc", "suspect", "implied_speed_kn"),
    "entry": ("entry_id", "voyage_id", "time_utc", "time_s", "kind", "text", "zd_minutes",
              "lat", "lon", "supersedes", "reason", "recorded_utc"),
    "import_record": ("import_id", "sha256", "source_name", "kind", "counts_json",
                      "recorded_utc"),
}

#: What a record of each chain is called in messages.
LABELS = {
    "plan_revision": "plan revision record",
    "plan_assignment": "plan assignment",
    "fix": "fix",
    "entry": "log entry",
    "import_record": "import record",
}

#: Child rows hashed with a plan revision (table, columns in order, ordering column).
PLAN_POINT_COLS = ("revision_id", "idx", "name", "lat", "lon", "arrival_radius_m", "rtz_id",
                   "wp_revision", "wp_extras_json", "sailing", "speed_kn", "xtl_port_m",
                   "xtl_stbd_m", "turn_radius_m", "leg_notes", "speed_min_kn",
                   "speed_max_kn", "leg_extras_json")
PLAN_SCHEDULE_COLS = ("revision_id", "idx", "waypoint_index", "eta_utc", "etd_utc", "kind",
                      "schedule_name")

_FORMATS = {chain: "\x1f".join(["%r"] * len(cols)) for chain, cols in CHAINS.items()}
FIX_STRUCT = struct.Struct("<qqddddqddddqqd7i")
_NAN = float("nan")


def fix_bytes(row: tuple) -> bytes:
    """Canonical bytes of a fix row (columns as in ``CHAINS["fix"]``)."""
    (fid, vid, tu, ts, lat, lon, method, hdop, sats, mode, cog, sog, hdg, stw, remarks, source,
     sup, reason, rec, suspect, implied) = row
    # "+ 0.0" turns -0.0 into 0.0, as SQLite stores it
    return FIX_STRUCT.pack(
        fid, vid, ts + 0.0, lat + 0.0, lon + 0.0, _NAN if hdop is None else hdop + 0.0,
        -1 if sats is None else sats, _NAN if cog is None else cog + 0.0,
        _NAN if sog is None else sog + 0.0, _NAN if hdg is None else hdg + 0.0,
        _NAN if stw is None else stw + 0.0, -1 if sup is None else sup, suspect,
        _NAN if implied is None else implied + 0.0,
        len(tu), len(method), -1 if mode is None else len(mode), len(remarks),
        -1 if source is None else len(source), -1 if reason is None else len(reason), len(rec),
    ) + (tu + method + (mode or "") + remarks + (source or "") + (reason or "") + rec).encode()


def canonical(chain: str, row: tuple) -> bytes:
    """The canonical bytes of one record row (columns as in :data:`CHAINS`)."""
    if chain == "fix":
        return fix_bytes(row)
    return (_FORMATS[chain] % row).encode("utf-8")


def canonical_rows(rows: list[tuple]) -> bytes:
    """Canonical bytes of several rows (a plan revision and its children)."""
    return "\x1e".join("\x1f".join(map(repr, row)) for row in rows).encode("utf-8")


def link(prev_hash: bytes, data: bytes) -> bytes:
    """The hash of a record whose canonical bytes are ``data``."""
    return hashlib.sha256(prev_hash + data).digest()
