"""The :class:`Logbook`: one SQLite file holding craft, voyages, plans, fixes and log entries.

See :mod:`passagelog.store` for the public API and the integrity guarantees.
"""

from __future__ import annotations

import contextlib
import itertools
import json
import math
import os
import sqlite3
from dataclasses import dataclass, field, replace
from datetime import datetime, timezone
from itertools import islice
from pathlib import Path
from typing import Any, Callable, Iterable, Iterator, Sequence

import numpy as np

from passagelog.errors import BusyError, InputError, IntegrityError, NotFoundError, StoreError
from passagelog.model import (
    Craft, Fix, LegPlan, LogEntry, Route, ScheduleItem, Voyage, Waypoint, check_utc,
)
from passagelog.store import chain as ch
from passagelog.store.schema import APPEND_ONLY_TABLES, MIGRATIONS, SCHEMA_VERSION

#: Seconds a writer or reader waits for a lock held by another connection.
BUSY_TIMEOUT_S = 10.0
#: Fixes per cache block below which small appends are merged into the voyage's last block.
TAIL_MERGE = 4096
#: Knots per metre per second (1 kn = 1852/3600 m/s exactly).
_KN_PER_MPS = 3600.0 / 1852.0

#: Layout of one fix in the ``fix_block`` cache (little-endian, packed).
BLOCK_DTYPE = np.dtype([
    ("fix_id", "<i8"), ("time_s", "<f8"), ("lat", "<f8"), ("lon", "<f8"),
    ("sog_kn", "<f8"), ("cog", "<f8"), ("heading", "<f8"), ("stw_kn", "<f8"),
    ("implied_speed_kn", "<f8"), ("suspect", "u1"),
])

_FIX_COLS = ch.CHAINS["fix"]
_FIX_INSERT = (f"INSERT INTO fix ({', '.join(_FIX_COLS)}, prev_hash, hash) "
               f"VALUES ({', '.join('?' * (len(_FIX_COLS) + 2))})")
#: fix rows bound by one INSERT statement in bulk (23 values each; SQLite allows 32766)
_FIX_ROWS_PER_INSERT = 64
_FIX_INSERT_MANY = _FIX_INSERT.split(" VALUES ")[0] + " VALUES " + ", ".join(
    ["(" + ", ".join("?" * (len(_FIX_COLS) + 2)) + ")"] * _FIX_ROWS_PER_INSERT)
_ENTRY_COLS = ch.CHAINS["entry"]


def _utcnow() -> datetime:
    return datetime.now(timezone.utc)


def _iso(dt: datetime | None) -> str | None:
    """Stored form of an aware UTC time: ISO 8601 with ``Z`` (microseconds when not zero)."""
    if dt is None:
        return None
    text = dt.astimezone(timezone.utc).isoformat()
    return text[:-6] + "Z"


def _from_iso(text: str | None) -> datetime | None:
    return None if text is None else datetime.fromisoformat(text)


def _f(value: Any) -> float | None:
    """A real for a REAL column; -0.0 becomes 0.0 (SQLite stores it so; the hash must agree)."""
    return None if value is None else float(value) + 0.0


_INT64_MAX = 2**63 - 1


def _too_big(params: Sequence[Any]) -> Any:
    """The first parameter SQLite cannot hold as a 64-bit integer (for messages)."""
    return next((p for p in params if isinstance(p, int) and not -_INT64_MAX - 1 <= p
                 <= _INT64_MAX), "given")


def _extras_json(extras: tuple[tuple[str, str], ...]) -> str:
    return json.dumps([list(p) for p in extras], ensure_ascii=False, separators=(",", ":"))


def _extras(text: str | None) -> tuple[tuple[str, str], ...]:
    return tuple(tuple(p) for p in json.loads(text)) if text else ()


# ---------------------------------------------------------------------------------------------
# results


@dataclass(frozen=True)
class PlanInfo:
    """A plan: its id, unique name, latest revision and when it was created."""

    plan_id: int
    name: str
    latest_revision: int
    created_utc: datetime


@dataclass(frozen=True)
class PlanRevisionInfo:
    """One revision of a plan (without its waypoints)."""

    plan_id: int
    revision: int
    note: str
    recorded_utc: datetime
    route_name: str
    waypoint_count: int


@dataclass(frozen=True)
class PlanAssignment:
    """A plan revision in force on a voyage from ``from_utc`` (None: from the start)."""

    assignment_id: int
    voyage_id: int
    plan_id: int
    plan_name: str
    revision: int
    from_utc: datetime | None
    recorded_utc: datetime


@dataclass(frozen=True)
class ImportInfo:
    """A file already imported, known by the SHA-256 of its bytes."""

    sha256: str
    source_name: str
    kind: str
    counts: dict
    recorded_utc: datetime


@dataclass(frozen=True)
class FixArrays:
    """The current fixes of a voyage as numpy arrays, in time order (ties by fix id).

    ``time_s`` is seconds since 1970-01-01T00:00Z (UTC); missing values are NaN.
    """

    fix_id: np.ndarray
    time_s: np.ndarray
    lat: np.ndarray
    lon: np.ndarray
    sog_kn: np.ndarray
    cog: np.ndarray
    heading: np.ndarray
    stw_kn: np.ndarray
    implied_speed_kn: np.ndarray
    suspect: np.ndarray

    def __len__(self) -> int:
        return len(self.fix_id)


@dataclass(frozen=True)
class Finding:
    """One thing ``verify`` found wrong.

    ``kind`` is ``edited``, ``deleted``, ``inserted``, ``trigger-missing`` or ``cache``;
    ``chain`` the table; ``record_id`` the first record concerned (None for a trigger).
    """

    kind: str
    chain: str
    record_id: int | None
    message: str


@dataclass(frozen=True)
class VerifyReport:
    """The result of walking every chain: ``ok`` when nothing was found."""

    records: dict[str, int]
    findings: tuple[Finding, ...] = ()
    #: chain -> (last record id, its SHA-256 as hex) from ``chain_head``: note it outside the
    #: file to make a later rewrite of the whole chain detectable
    heads: dict[str, tuple[int, str]] = field(default_factory=dict)

    @property
    def ok(self) -> bool:
        return not self.findings

    @property
    def first(self) -> Finding | None:
        return self.findings[0] if self.findings else None


# ---------------------------------------------------------------------------------------------
# fixes made ready for writing before the write lock is taken


def _optional(values: np.ndarray) -> list:
    """A float column as values for SQLite: NaN (no value) becomes None (NULL)."""
    out = values.tolist()
    if np.isnan(values).any():
        out = [None if x != x else x for x in out]
    return out


def _floats(values: list) -> np.ndarray:
    """An optional float column as float64, None as NaN."""
    return np.array([math.nan if x is None else x for x in values], dtype=np.float64)


@dataclass(frozen=True, eq=False)
class _FixChunk:
    """Up to one batch of fixes as plain columns (numpy for numbers, NaN for no value; lists
    for texts), with each fix's implied speed from the fix before it in the stream."""

    time_s: np.ndarray
    lat: np.ndarray
    lon: np.ndarray
    hdop: np.ndarray
    cog: np.ndarray
    sog_kn: np.ndarray
    heading: np.ndarray
    stw_kn: np.ndarray
    satellites: list
    time_utc: list
    method: list
    fix_mode: list
    remarks: list
    source: list
    #: knots; NaN without a predecessor (the stream's first fix: set when it is written)
    implied_speed_kn: np.ndarray
    #: at the same time as its predecessor but more than 1 m from it (suspect with a limit)
    moved: np.ndarray

    @classmethod
    def of(cls, batch: list, prev: tuple | None, inverse_np: Callable) -> "_FixChunk":
        """The chunk of ``batch``; ``prev`` is (lat, lon, time_s) of the fix before it."""
        for i, f in enumerate(batch):
            if not isinstance(f, Fix):
                raise InputError(f"fix {i + 1} of the batch is not a Fix: {f!r}")
        n = len(batch)
        t_arr = np.array([f.time_utc.timestamp() for f in batch], dtype=np.float64)
        lat_arr = np.array([f.lat for f in batch], dtype=np.float64)
        lon_arr = np.array([f.lon for f in batch], dtype=np.float64)
        if not (np.isfinite(t_arr).all() and np.isfinite(lat_arr).all()
                and np.isfinite(lon_arr).all()):
            raise InputError("a fix in the batch has a time or position that is not finite")
        # implied speed from each fix's predecessor (the previous one in the stream)
        plat = np.empty(n)
        plon = np.empty(n)
        pt = np.empty(n)
        plat[1:], plon[1:], pt[1:] = lat_arr[:-1], lon_arr[:-1], t_arr[:-1]
        has_prev = np.ones(n, dtype=bool)
        if prev is None:
            has_prev[0] = False
            plat[0], plon[0], pt[0] = lat_arr[0], lon_arr[0], t_arr[0]
        else:
            plat[0], plon[0], pt[0] = prev
        dist_m, _, _ = inverse_np(plat, plon, lat_arr, lon_arr)
        dt = np.abs(t_arr - pt)
        with np.errstate(divide="ignore", invalid="ignore"):
            implied = np.where(has_prev & (dt > 0), dist_m / dt * _KN_PER_MPS, np.nan)
        moved = has_prev & (dt == 0) & (dist_m > 1.0)
        return cls(
            time_s=t_arr, lat=lat_arr, lon=lon_arr,
            hdop=_floats([f.hdop for f in batch]), cog=_floats([f.cog for f in batch]),
            sog_kn=_floats([f.sog_kn for f in batch]),
            heading=_floats([f.heading for f in batch]),
            stw_kn=_floats([f.stw_kn for f in batch]),
            satellites=[f.satellites for f in batch],
            time_utc=[f.time_utc.isoformat()[:-6] + "Z" for f in batch],
            method=[f.method for f in batch], fix_mode=[f.fix_mode for f in batch],
            remarks=[f.remarks for f in batch], source=[f.source for f in batch],
            implied_speed_kn=implied, moved=moved)


def _implied_from(prev: tuple, chunk: _FixChunk) -> tuple[float, bool]:
    """(implied speed in knots or NaN, moved) of the chunk's first fix from ``prev`` =
    (lat, lon, time_s) of the voyage's previous fix in the logbook (as :meth:`_FixChunk.of`
    does for the others)."""
    from passagelog.nav.geodesic import inverse_np

    plat, plon, pt = prev
    dist_m, _, _ = inverse_np(np.array([plat], dtype=np.float64),
                              np.array([plon], dtype=np.float64), chunk.lat[:1], chunk.lon[:1])
    dt = np.abs(chunk.time_s[:1] - pt)
    with np.errstate(divide="ignore", invalid="ignore"):
        implied = np.where(dt > 0, dist_m / dt * _KN_PER_MPS, np.nan)
    return float(implied[0]), bool((dt == 0)[0] and (dist_m > 1.0)[0])


class PreparedFixes:
    """A stream of fixes read, checked and reduced to what the logbook stores (made by
    :meth:`Logbook.prepare_fixes`, written by :meth:`Logbook.add_fixes`).

    Holds plain columns, not :class:`~passagelog.model.Fix` objects: some hundred bytes a
    fix plus its texts (the source sentence mostly).
    """

    __slots__ = ("chunks", "_count")

    def __init__(self, chunks: tuple[_FixChunk, ...]):
        self.chunks = chunks
        self._count = sum(len(c.time_s) for c in chunks)

    def __len__(self) -> int:
        return self._count

    def __repr__(self) -> str:
        return f"PreparedFixes({self._count} fixes)"


# ---------------------------------------------------------------------------------------------


def _create_private(path: Path) -> None:
    """Create an empty file readable and writable by its owner only (0600)."""
    path.parent.mkdir(parents=True, exist_ok=True, mode=0o700)
    fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600)
    os.close(fd)
    os.chmod(path, 0o600)  # whatever the umask


class Logbook:
    """An open logbook file. Use :meth:`open`; close it or use it as a context manager.

    One ``Logbook`` may be used from one thread at a time; several processes may open the
    same file at once (WAL: readers do not block the writer).
    """

    def __init__(self, conn: sqlite3.Connection, path: Path,
                 clock: Callable[[], datetime] | None = None):
        import sqlite_utils

        self._conn = conn
        self.db = sqlite_utils.Database(conn)
        self.path = path
        self._clock = clock or _utcnow
        self._depth = 0

    # ----- opening ------------------------------------------------------------------------

    @classmethod
    def open(cls, path: str | os.PathLike, *, create: bool = True,
             clock: Callable[[], datetime] | None = None) -> "Logbook":
        """Open (and with ``create``, make) the logbook at ``path``, upgrading its schema.

        A new file is created readable by its owner only (0600). A logbook made by a newer
        release is refused. ``clock`` (returning aware UTC) stamps records; default: now.
        """
        path = Path(path)
        if "\x00" in str(path):
            raise StoreError(f"logbook path {str(path)!r} holds a NUL character")
        try:
            exists = path.exists()
        except OSError as exc:  # a name too long for the file system
            raise StoreError(f"logbook {str(path)!r} cannot be opened: {exc.strerror}") \
                from None
        if not exists:
            if not create:
                raise NotFoundError(f"logbook {str(path)!r} does not exist")
            try:
                _create_private(path)
            except FileExistsError:
                pass  # another process made it a moment ago
            except OSError as exc:
                raise StoreError(f"logbook {str(path)!r} cannot be created: "
                                 f"{exc.strerror}") from None
        try:
            conn = sqlite3.connect(path, isolation_level=None, timeout=BUSY_TIMEOUT_S,
                                   check_same_thread=False)
        except sqlite3.Error as exc:  # a directory, a path through a file
            raise StoreError(f"logbook {str(path)!r} cannot be opened: {exc}") from None
        try:
            conn.execute(f"PRAGMA busy_timeout = {int(BUSY_TIMEOUT_S * 1000)}")
            mode = conn.execute("PRAGMA journal_mode = WAL").fetchone()[0]
            if mode.lower() != "wal":
                raise StoreError(f"logbook {str(path)!r}: cannot switch to WAL mode ({mode})")
            conn.execute("PRAGMA foreign_keys = ON")
            conn.execute("PRAGMA synchronous = FULL")
            book = cls(conn, path, clock)
            book._migrate()
        except sqlite3.DatabaseError as exc:
            conn.close()
            raise StoreError(f"logbook {str(path)!r} cannot be opened: {exc}") from None
        except BaseException:
            conn.close()
            raise
        return book

    def close(self) -> None:
        self._conn.close()

    def __enter__(self) -> "Logbook":
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    @property
    def schema_version(self) -> int:
        return self._conn.execute("PRAGMA user_version").fetchone()[0]

    def _migrate(self, migrations: dict[int, str] | None = None) -> None:
        migrations = MIGRATIONS if migrations is None else migrations
        target = max(migrations)
        if self.schema_version == target:
            return  # up to date: no write lock (a reader must not wait for a long import)
        with self.transaction():
            have = self.schema_version
            if have > target:
                raise StoreError(
                    f"logbook {str(self.path)!r} has schema version {have}; this release "
                    f"reads versions up to {target}: upgrade passagelog"
                )
            if have == 0 and self._conn.execute(
                    "SELECT count(*) FROM sqlite_master").fetchone()[0]:
                raise StoreError(f"{str(self.path)!r} is an SQLite file but not a logbook")
            for version in range(have + 1, target + 1):
                for statement in _statements(migrations[version]):
                    self._conn.execute(statement)
                self._conn.execute(f"PRAGMA user_version = {version}")

    # ----- transactions -------------------------------------------------------------------

    @contextlib.contextmanager
    def transaction(self) -> Iterator["Logbook"]:
        """One write transaction (nested calls use savepoints). On any exception every change
        made inside is rolled back and the exception goes on."""
        conn = self._conn
        if self._depth == 0:
            try:
                conn.execute("BEGIN IMMEDIATE")
            except sqlite3.OperationalError as exc:  # "database is locked" after the timeout
                raise BusyError(
                    f"logbook {str(self.path)!r} is busy: another program has been writing to "
                    f"it for more than {BUSY_TIMEOUT_S:g} s ({exc}); try again") from None
        else:
            conn.execute(f"SAVEPOINT sp{self._depth}")
        self._depth += 1
        try:
            yield self
        except BaseException:
            self._depth -= 1
            if conn.in_transaction:  # SQLite may have rolled back already (disk full, ...)
                if self._depth == 0:
                    conn.execute("ROLLBACK")
                else:
                    conn.execute(f"ROLLBACK TO sp{self._depth}")
                    conn.execute(f"RELEASE sp{self._depth}")
            raise
        else:
            self._depth -= 1
            if self._depth == 0:
                try:
                    conn.execute("COMMIT")
                except sqlite3.Error as exc:
                    if conn.in_transaction:
                        conn.execute("ROLLBACK")
                    raise StoreError(f"logbook {str(self.path)!r}: the write could not be "
                                     f"committed and was undone ({exc})") from None
            else:
                conn.execute(f"RELEASE sp{self._depth}")

    atomic = transaction

    @contextlib.contextmanager
    def _reading(self) -> Iterator[None]:
        """A consistent snapshot for several reads (no-op inside a write transaction)."""
        if self._depth or self._conn.in_transaction:
            yield
            return
        self._conn.execute("BEGIN")
        try:
            yield
        finally:
            self._conn.execute("COMMIT")

    def _q(self, sql: str, params: Sequence[Any] = ()) -> list[tuple]:
        try:
            return self._conn.execute(sql, params).fetchall()
        except OverflowError:  # an id beyond SQLite's 64-bit integers matches nothing
            raise NotFoundError(f"no record has the number {_too_big(params)}; ids are at "
                                f"most {_INT64_MAX}") from None

    def _write(self, sql: str, params: Sequence[Any] = ()) -> sqlite3.Cursor:
        try:
            return self._conn.execute(sql, params)
        except sqlite3.IntegrityError as exc:
            raise StoreError(f"the logbook refused the record: {exc}") from None
        except OverflowError:
            raise InputError(f"the number {_too_big(params)} is too large for the logbook; "
                             f"numbers are at most {_INT64_MAX}") from None

    def _now(self) -> str:
        return _iso(self._clock())

    # ----- chains -------------------------------------------------------------------------

    def _head(self, chain: str) -> tuple[int, bytes]:
        last_id, last_hash = self._q(
            "SELECT last_id, last_hash FROM chain_head WHERE chain = ?", (chain,))[0]
        return last_id, last_hash

    def _set_head(self, chain: str, last_id: int, last_hash: bytes) -> None:
        self._conn.execute("UPDATE chain_head SET last_id = ?, last_hash = ? WHERE chain = ?",
                           (last_id, last_hash, chain))

    def _append(self, chain: str, row_after_id: tuple) -> int:
        """Append one record (all canonical columns but the id) to ``chain``; returns its id."""
        last_id, prev = self._head(chain)
        row = (last_id + 1,) + row_after_id
        digest = ch.link(prev, ch.canonical(chain, row))
        cols = ch.CHAINS[chain]
        self._write(f"INSERT INTO {chain} ({', '.join(cols)}, prev_hash, hash) "
                    f"VALUES ({', '.join('?' * (len(cols) + 2))})", row + (prev, digest))
        self._set_head(chain, last_id + 1, digest)
        return last_id + 1

    # ----- craft --------------------------------------------------------------------------

    def add_craft(self, craft: Craft) -> Craft:
        """Record a new craft (names are unique); returns it with ``craft_id``."""
        if not isinstance(craft, Craft):
            raise InputError(f"add_craft needs a Craft, not {craft!r}")
        with self.transaction():
            if self._q("SELECT 1 FROM craft WHERE name = ?", (craft.name,)):
                raise StoreError(f"craft {craft.name!r} already exists; choose another name")
            cur = self._write(
                "INSERT INTO craft (name, kind, usual_speed_kn, max_speed_kn, created_utc) "
                "VALUES (?, ?, ?, ?, ?)",
                (craft.name, craft.kind, _f(craft.usual_speed_kn), _f(craft.max_speed_kn),
                 self._now()))
            return replace(craft, craft_id=cur.lastrowid)

    def _craft_row(self, craft: Craft | int | str) -> tuple:
        cols = "craft_id, name, kind, usual_speed_kn, max_speed_kn"
        if isinstance(craft, Craft):
            craft = craft.craft_id if craft.craft_id is not None else craft.name
        rows = []
        if isinstance(craft, str):
            rows = self._q(f"SELECT {cols} FROM craft WHERE name = ?", (craft,))
            if not rows and craft.strip().isdigit():
                craft = int(craft)
        if not rows and isinstance(craft, int) and not isinstance(craft, bool):
            rows = self._q(f"SELECT {cols} FROM craft WHERE craft_id = ?", (craft,))
        if not rows:
            raise NotFoundError(f"craft {craft!r} is not in the logbook; see 'craft list'")
        return rows[0]

    def craft(self, name_or_id: Craft | int | str) -> Craft:
        """The craft with this name or id."""
        cid, name, kind, usual, top = self._craft_row(name_or_id)
        return Craft(name=name, kind=kind, usual_speed_kn=usual, max_speed_kn=top, craft_id=cid)

    def list_craft(self) -> list[Craft]:
        return [Craft(name=n, kind=k, usual_speed_kn=u, max_speed_kn=m, craft_id=i)
                for i, n, k, u, m in self._q(
                    "SELECT craft_id, name, kind, usual_speed_kn, max_speed_kn FROM craft "
                    "ORDER BY craft_id")]

    # ----- voyages ------------------------------------------------------------------------

    def add_voyage(self, voyage: Voyage) -> Voyage:
        """Record a new voyage (names are unique). If ``voyage.plan_id`` is set, the plan's
        latest revision is put in force from the start of the voyage."""
        if not isinstance(voyage, Voyage):
            raise InputError(f"add_voyage needs a Voyage, not {voyage!r}")
        with self.transaction():
            if self._q("SELECT 1 FROM voyage WHERE name = ?", (voyage.name,)):
                raise StoreError(f"voyage {voyage.name!r} already exists; choose another name")
            craft_id = None
            if voyage.craft_id is not None:
                craft_id = self._craft_row(voyage.craft_id)[0]
            cur = self._write(
                "INSERT INTO voyage (name, craft_id, from_place, to_place, departure_utc, "
                "zd_minutes, created_utc) VALUES (?, ?, ?, ?, ?, ?, ?)",
                (voyage.name, craft_id, voyage.from_place, voyage.to_place,
                 _iso(voyage.departure_utc), voyage.zd_minutes, self._now()))
            vid = cur.lastrowid
            if voyage.plan_id is not None:
                self.assign_plan(vid, voyage.plan_id)
            return self.voyage(vid)

    def _voyage_row(self, voyage: Voyage | int | str) -> tuple:
        cols = ("voyage_id, name, craft_id, from_place, to_place, departure_utc, zd_minutes")
        if isinstance(voyage, Voyage):
            voyage = voyage.voyage_id if voyage.voyage_id is not None else voyage.name
        rows = []
        if isinstance(voyage, str):
            rows = self._q(f"SELECT {cols} FROM voyage WHERE name = ?", (voyage,))
            if not rows and voyage.strip().isdigit():
                voyage = int(voyage)
        if not rows and isinstance(voyage, int) and not isinstance(voyage, bool):
            rows = self._q(f"SELECT {cols} FROM voyage WHERE voyage_id = ?", (voyage,))
        if not rows:
            raise NotFoundError(f"voyage {voyage!r} is not in the logbook; see 'voyage list'")
        return rows[0]

    def _voyage_of(self, row: tuple) -> Voyage:
        vid, name, craft_id, frm, to, dep, zd = row
        current = self._q(
            "SELECT plan_id FROM plan_assignment WHERE voyage_id = ? "
            "ORDER BY (from_utc IS NULL), julianday(from_utc) DESC, assignment_id DESC "
            "LIMIT 1", (vid,))
        return Voyage(name=name, craft_id=craft_id, from_place=frm, to_place=to,
                      departure_utc=_from_iso(dep), zd_minutes=zd,
                      plan_id=current[0][0] if current else None, voyage_id=vid)

    def voyage(self, name_or_id: Voyage | int | str) -> Voyage:
        """The voyage with this name or id; ``plan_id`` is the plan in force latest."""
        return self._voyage_of(self._voyage_row(name_or_id))

    def list_voyages(self) -> list[Voyage]:
        return [self._voyage_of(r) for r in self._q(
            "SELECT voyage_id, name, craft_id, from_place, to_place, departure_utc, zd_minutes "
            "FROM voyage ORDER BY voyage_id")]

    # ----- plans --------------------------------------------------------------------------

    def _plan_row(self, plan: PlanInfo | int | str) -> tuple[int, str, str]:
        if isinstance(plan, PlanInfo):
            plan = plan.plan_id
        rows = []
        if isinstance(plan, str):
            rows = self._q("SELECT plan_id, name, created_utc FROM plan WHERE name = ?",
                           (plan,))
            if not rows and plan.strip().isdigit():
                plan = int(plan)
        if not rows and isinstance(plan, int) and not isinstance(plan, bool):
            rows = self._q("SELECT plan_id, name, created_utc FROM plan WHERE plan_id = ?",
                           (plan,))
        if not rows:
            raise NotFoundError(f"plan {plan!r} is not in the logbook; see 'plan list'")
        return rows[0]

    def _latest_revision(self, plan_id: int) -> int:
        return self._q("SELECT max(revision) FROM plan_revision WHERE plan_id = ?",
                       (plan_id,))[0][0] or 0

    def plan(self, name_or_id: PlanInfo | int | str) -> PlanInfo:
        pid, name, created = self._plan_row(name_or_id)
        return PlanInfo(pid, name, self._latest_revision(pid), _from_iso(created))

    def list_plans(self) -> list[PlanInfo]:
        return [PlanInfo(pid, name, latest or 0, _from_iso(created)) for pid, name, created,
                latest in self._q(
                    "SELECT p.plan_id, p.name, p.created_utc, max(r.revision) FROM plan p "
                    "LEFT JOIN plan_revision r USING (plan_id) GROUP BY p.plan_id "
                    "ORDER BY p.plan_id")]

    def create_plan(self, route: Route, note: str = "created", *,
                    name: str | None = None) -> tuple[int, int]:
        """A new plan named ``name`` (default: the route's name) whose revision 1 is
        ``route``. Returns ``(plan_id, 1)``."""
        if not isinstance(route, Route):
            raise InputError(f"create_plan needs a Route, not {route!r}")
        name = route.name if name is None else name
        if not name.strip():
            raise InputError("plan name must not be empty")
        with self.transaction():
            if self._q("SELECT 1 FROM plan WHERE name = ?", (name,)):
                raise StoreError(f"plan {name!r} already exists; choose another name")
            cur = self._write("INSERT INTO plan (name, created_utc) VALUES (?, ?)",
                              (name, self._now()))
            pid = cur.lastrowid
            rev = self._save_revision(pid, route, note)
            return pid, rev

    def save_revision(self, plan: PlanInfo | int | str, route: Route, note: str) -> int:
        """Record ``route`` as the next revision of ``plan`` with a change note; returns the
        new revision number."""
        if not isinstance(route, Route):
            raise InputError(f"save_revision needs a Route, not {route!r}")
        with self.transaction():
            pid = self._plan_row(plan)[0]
            return self._save_revision(pid, route, note)

    def _save_revision(self, pid: int, route: Route, note: str) -> int:
        if not isinstance(note, str) or not note.strip():
            raise InputError("plan revision change note must not be empty; say what changed")
        rev = self._latest_revision(pid) + 1
        recorded = self._now()
        last_id, prev = self._head("plan_revision")
        rid = last_id + 1
        head = (rid, pid, rev, route.name, note, _extras_json(route.extras), recorded)
        points = []
        for i, wp in enumerate(route.waypoints):
            leg = route.legs[i - 1] if i else None
            points.append((
                rid, i, wp.name, _f(wp.lat), _f(wp.lon), _f(wp.arrival_radius_m),
                wp.rtz_id, wp.revision, _extras_json(wp.extras),
                leg.sailing if leg else None, _f(leg.speed_kn) if leg else None,
                _f(leg.xtl_port_m) if leg else None, _f(leg.xtl_stbd_m) if leg else None,
                _f(leg.turn_radius_m) if leg else None, leg.notes if leg else None,
                _f(leg.speed_min_kn) if leg else None, _f(leg.speed_max_kn) if leg else None,
                _extras_json(leg.extras) if leg else None,
            ))
        sched = [(rid, i, s.waypoint_index, _iso(s.eta_utc), _iso(s.etd_utc), s.kind,
                  s.schedule_name) for i, s in enumerate(route.schedule)]
        digest = ch.link(prev, ch.canonical_rows([head] + points + sched))
        self._write("INSERT INTO plan_revision (revision_id, plan_id, revision, route_name, "
                    "note, extras_json, recorded_utc, prev_hash, hash) "
                    "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)", head + (prev, digest))
        try:
            self._conn.executemany(
                f"INSERT INTO plan_point ({', '.join(ch.PLAN_POINT_COLS)}) "
                f"VALUES ({', '.join('?' * len(ch.PLAN_POINT_COLS))})", points)
            self._conn.executemany(
                f"INSERT INTO plan_schedule ({', '.join(ch.PLAN_SCHEDULE_COLS)}) "
                f"VALUES ({', '.join('?' * len(ch.PLAN_SCHEDULE_COLS))})", sched)
        except sqlite3.IntegrityError as exc:
            raise StoreError(f"the logbook refused the plan revision: {exc}") from None
        self._set_head("plan_revision", rid, digest)
        return rev

    def _revision_id(self, pid: int, revision: int | None) -> tuple[int, int]:
        if revision is None:
            revision = self._latest_revision(pid)
        rows = self._q("SELECT revision_id FROM plan_revision WHERE plan_id = ? AND "
                       "revision = ?", (pid, revision))
        if not rows:
            raise NotFoundError(f"plan {pid} has no revision {revision!r}; see 'plan history'")
        return rows[0][0], revision

    def route(self, plan: PlanInfo | int | str, revision: int | None = None) -> Route:
        """The route of one revision of a plan (default: the latest), with ``revision`` and
        ``note`` set."""
        with self._reading():
            pid = self._plan_row(plan)[0]
            rid, revision = self._revision_id(pid, revision)
            return self._route_of(rid)

    def _route_of(self, rid: int) -> Route:
        (rev, name, note, extras), = self._q(
            "SELECT revision, route_name, note, extras_json FROM plan_revision "
            "WHERE revision_id = ?", (rid,))
        wps, legs = [], []
        for row in self._q(f"SELECT {', '.join(ch.PLAN_POINT_COLS)} FROM plan_point "
                           "WHERE revision_id = ? ORDER BY idx", (rid,)):
            (_, idx, wname, lat, lon, radius, rtz_id, wrev, wext, sailing, speed, xp, xs,
             turn, notes, smin, smax, lext) = row
            wps.append(Waypoint(wname, lat, lon, radius, rtz_id, wrev, _extras(wext)))
            if idx:
                legs.append(LegPlan(sailing, speed, xp, xs, turn, notes, smin, smax,
                                    _extras(lext)))
        sched = [ScheduleItem(wi, _from_iso(eta), _from_iso(etd), kind, sname)
                 for wi, eta, etd, kind, sname in self._q(
                     "SELECT waypoint_index, eta_utc, etd_utc, kind, schedule_name "
                     "FROM plan_schedule WHERE revision_id = ? ORDER BY idx", (rid,))]
        return Route(name=name, waypoints=tuple(wps), legs=tuple(legs), schedule=tuple(sched),
                     revision=rev, note=note, extras=_extras(extras))

    def plan_history(self, plan: PlanInfo | int | str) -> list[PlanRevisionInfo]:
        """Every revision of a plan, oldest first."""
        with self._reading():
            pid = self._plan_row(plan)[0]
            return [PlanRevisionInfo(pid, rev, note, _from_iso(rec), rname, n)
                    for rev, note, rec, rname, n in self._q(
                        "SELECT r.revision, r.note, r.recorded_utc, r.route_name, "
                        "(SELECT count(*) FROM plan_point p WHERE p.revision_id = r.revision_id)"
                        " FROM plan_revision r WHERE plan_id = ? ORDER BY revision", (pid,))]

    def assign_plan(self, voyage: Voyage | int | str, plan: PlanInfo | int | str,
                    revision: int | None = None,
                    from_utc: datetime | None = None) -> PlanAssignment:
        """Put a plan revision (default: the latest) in force on a voyage from ``from_utc``
        (None: from the start of the voyage)."""
        check_utc("plan assignment", "from time", from_utc)
        with self.transaction():
            vid = self._voyage_row(voyage)[0]
            pid, pname, _ = self._plan_row(plan)
            _, revision = self._revision_id(pid, revision)
            recorded = self._now()
            aid = self._append("plan_assignment",
                               (vid, pid, revision, _iso(from_utc), recorded))
            return PlanAssignment(aid, vid, pid, pname, revision, from_utc,
                                  _from_iso(recorded))

    def plan_assignments(self, voyage: Voyage | int | str) -> list[PlanAssignment]:
        """Every plan assignment of a voyage in the order they take effect."""
        with self._reading():
            vid = self._voyage_row(voyage)[0]
            return [PlanAssignment(aid, vid, pid, pname, rev, _from_iso(frm), _from_iso(rec))
                    for aid, pid, pname, rev, frm, rec in self._q(
                        "SELECT a.assignment_id, a.plan_id, p.name, a.revision, a.from_utc, "
                        "a.recorded_utc FROM plan_assignment a JOIN plan p USING (plan_id) "
                        "WHERE voyage_id = ? ORDER BY (from_utc IS NOT NULL), "
                        "julianday(from_utc), assignment_id", (vid,))]

    def plan_schedule(self, voyage: Voyage | int | str) -> list[tuple[datetime | None, Route]]:
        """The plan revisions in force on a voyage over time: ``[(from_utc, route), ...]`` in
        order, ``from_utc`` None for "from the start". Of two assignments from the same time
        the one recorded later wins."""
        with self._reading():
            out: list[tuple[datetime | None, Route]] = []
            chosen: dict[Any, PlanAssignment] = {}
            for a in self.plan_assignments(voyage):
                chosen[a.from_utc] = a  # later assignment_id wins
            for a in sorted(chosen.values(), key=lambda a: (
                    a.from_utc is not None, a.from_utc or datetime.min.replace(
                        tzinfo=timezone.utc))):
                rid, _ = self._revision_id(a.plan_id, a.revision)
                out.append((a.from_utc, self._route_of(rid)))
            return out

    # ----- fixes --------------------------------------------------------------------------

    def _previous_fix(self, vid: int, time_s: float, exclude: int = 0) -> tuple | None:
        rows = self._q(
            "SELECT lat, lon, time_s FROM fix f WHERE voyage_id = ? AND time_s <= ? "
            "AND fix_id <> ? AND NOT EXISTS (SELECT 1 FROM fix g WHERE g.supersedes = f.fix_id)"
            " ORDER BY time_s DESC, fix_id DESC LIMIT 1", (vid, time_s, exclude))
        return rows[0] if rows else None

    def add_fix(self, voyage: Voyage | int | str, fix: Fix) -> Fix:
        """Record one fix; returns it with ``fix_id``, ``suspect`` and ``implied_speed_kn``.

        The implied speed is the geodesic distance from the voyage's previous fix in time
        over the time between them; above the craft's maximum speed the fix is stored but
        flagged suspect. ``fix.supersedes``/``reason`` are ignored: use :meth:`correct_fix`.
        """
        prepared = self.prepare_fixes([fix])
        with self.transaction():
            vid = self._voyage_row(voyage)[0]
            fix_id = self._write_fixes(vid, prepared, None)
            return self.fix(fix_id)

    @staticmethod
    def prepare_fixes(fixes: Iterable[Fix], *, batch_size: int = 10000) -> PreparedFixes:
        """Read and check a whole stream of fixes and reduce it to what :meth:`add_fixes`
        writes, without touching any logbook (so without its write lock).

        Everything that does not depend on the logbook's contents is done here: the checks,
        the stored text of each time, the implied speed of each fix from the fix before it in
        the stream. A reader's error (a file's bad line) is raised from here. Call it before
        a :meth:`transaction` that holds more than the fixes (an import record), so that the
        transaction holds the write lock only while it writes.
        """
        if batch_size < 1:
            raise InputError(f"batch size {batch_size!r} must be at least 1")
        from passagelog.nav.geodesic import inverse_np

        chunks: list[_FixChunk] = []
        iterator = iter(fixes)
        prev: tuple | None = None
        while True:
            batch = list(islice(iterator, batch_size))
            if not batch:
                break
            chunk = _FixChunk.of(batch, prev, inverse_np)
            del batch  # the Fix objects go; the chunk keeps plain columns
            chunks.append(chunk)
            prev = (float(chunk.lat[-1]), float(chunk.lon[-1]), float(chunk.time_s[-1]))
        return PreparedFixes(tuple(chunks))

    def add_fixes(self, voyage: Voyage | int | str, fixes: Iterable[Fix] | PreparedFixes, *,
                  batch_size: int = 10000) -> int:
        """Record a stream of fixes in one transaction (all or nothing); returns how many.

        The implied speed of each fix is taken from the fix before it in the stream (the first
        from the voyage's previous fix in time). The whole stream is read and checked first
        (:meth:`prepare_fixes`, ``batch_size`` fixes at a time) and only then is the write
        lock taken, for the writes alone; ``fixes`` may also be :class:`PreparedFixes`
        already made. Inside a larger :meth:`transaction` the lock is already held: prepare
        the fixes before it.
        """
        if batch_size < 1:
            raise InputError(f"batch size {batch_size!r} must be at least 1")
        if not isinstance(fixes, PreparedFixes):
            self._voyage_row(voyage)  # an unknown voyage is named before the stream is read
            fixes = self.prepare_fixes(fixes, batch_size=batch_size)
        if not len(fixes):
            self._voyage_row(voyage)
            return 0
        with self.transaction():
            vid = self._voyage_row(voyage)[0]
            self._write_fixes(vid, fixes, None)
        return len(fixes)

    def correct_fix(self, voyage: Voyage | int | str, fix_id: int, fix: Fix,
                    reason: str) -> Fix:
        """Record ``fix`` as the correction of fix ``fix_id`` (which stays in the history);
        returns the new fix."""
        if not isinstance(reason, str) or not reason.strip():
            raise InputError(f"correction of fix {fix_id}: a reason is required")
        prepared = self.prepare_fixes([fix])
        with self.transaction():
            vid = self._voyage_row(voyage)[0]
            self._check_correctable("fix", vid, fix_id)
            new_id = self._write_fixes(vid, prepared, (fix_id, reason))
            return self.fix(new_id)

    def _check_correctable(self, table: str, vid: int, record_id: Any) -> None:
        label = ch.LABELS[table]
        key = f"{table}_id"
        if isinstance(record_id, bool) or not isinstance(record_id, int):
            raise InputError(f"{label} id {record_id!r} must be a whole number")
        rows = self._q(f"SELECT voyage_id FROM {table} WHERE {key} = ?", (record_id,))
        if not rows:
            raise NotFoundError(f"{label} {record_id} is not in the logbook")
        if rows[0][0] != vid:
            raise StoreError(f"{label} {record_id} belongs to another voyage")
        later = self._q(f"SELECT {key} FROM {table} WHERE supersedes = ?", (record_id,))
        if later:
            raise StoreError(f"{label} {record_id} was already corrected by {label} "
                             f"{later[0][0]}; correct that one instead")

    def _write_fixes(self, vid: int, prepared: PreparedFixes,
                     correction: tuple[int, str] | None) -> int:
        """Append prepared fixes to the fix chain (inside a transaction): what needs the
        logbook's state -- the previous fix of the first, the craft's maximum speed, the chain
        head and the ids -- and the inserts. Returns the last fix id."""
        max_kn = self._q("SELECT c.max_speed_kn FROM voyage v LEFT JOIN craft c "
                         "USING (craft_id) WHERE v.voyage_id = ?", (vid,))[0][0]
        supersedes, reason = correction if correction else (None, None)
        first = prepared.chunks[0]
        prev = self._previous_fix(vid, float(first.time_s[0]), supersedes or 0)
        last_id = 0
        for k, chunk in enumerate(prepared.chunks):
            implied, moved = chunk.implied_speed_kn, chunk.moved
            if k == 0 and prev is not None:  # the first fix: from the voyage's previous fix
                implied, moved = implied.copy(), moved.copy()
                implied[0], moved[0] = _implied_from(prev, first)
            last_id = self._insert_chunk(vid, chunk, implied, moved, max_kn, supersedes, reason)
        return last_id

    def _insert_chunk(self, vid: int, c: _FixChunk, implied: np.ndarray, moved: np.ndarray,
                      max_kn: float | None, supersedes: int | None, reason: str | None) -> int:
        last_id, prev_hash = self._head("fix")
        recorded = self._now()
        n = len(c.time_s)
        if max_kn is not None:
            suspect = (implied > max_kn) | moved
        else:
            suspect = np.zeros(n, dtype=bool)
        rep = itertools.repeat
        source_rows = zip(
            range(last_id + 1, last_id + n + 1), rep(vid), c.time_utc, c.time_s.tolist(),
            c.lat.tolist(), c.lon.tolist(), c.method, _optional(c.hdop), c.satellites,
            c.fix_mode, _optional(c.cog), _optional(c.sog_kn), _optional(c.heading),
            _optional(c.stw_kn), c.remarks, c.source, rep(supersedes), rep(reason),
            rep(recorded), suspect.astype(np.int64).tolist(), _optional(implied))
        rows = []
        out = rows.append
        fix_bytes = ch.fix_bytes
        from hashlib import sha256
        for row in source_rows:
            digest = sha256(prev_hash + fix_bytes(row)).digest()
            out(row + (prev_hash, digest))
            prev_hash = digest
        fid = last_id + n
        try:
            whole = n - n % _FIX_ROWS_PER_INSERT
            if whole:  # many rows per INSERT: a quarter less work per row than one by one
                chain = itertools.chain.from_iterable
                self._conn.executemany(_FIX_INSERT_MANY, (
                    tuple(chain(rows[k:k + _FIX_ROWS_PER_INSERT]))
                    for k in range(0, whole, _FIX_ROWS_PER_INSERT)))
            if whole < n:
                self._conn.executemany(_FIX_INSERT, rows[whole:])
        except sqlite3.IntegrityError as exc:
            raise StoreError(f"the logbook refused a fix: {exc}") from None
        self._set_head("fix", fid, prev_hash)
        block = np.empty(n, dtype=BLOCK_DTYPE)
        block["fix_id"] = np.arange(last_id + 1, fid + 1)
        block["time_s"] = c.time_s
        block["lat"] = c.lat
        block["lon"] = c.lon
        block["cog"] = c.cog
        block["sog_kn"] = c.sog_kn
        block["heading"] = c.heading
        block["stw_kn"] = c.stw_kn
        block["implied_speed_kn"] = implied
        block["suspect"] = suspect
        self._cache_append(vid, block)
        return fid

    def _cache_append(self, vid: int, block: np.ndarray) -> None:
        tail = self._q("SELECT block_id, n, data FROM fix_block WHERE voyage_id = ? "
                       "ORDER BY block_id DESC LIMIT 1", (vid,))
        if tail and tail[0][1] + len(block) <= TAIL_MERGE:
            bid, count, data = tail[0]
            self._conn.execute("UPDATE fix_block SET n = ?, last_fix_id = ?, data = ? "
                               "WHERE block_id = ?",
                               (count + len(block), int(block["fix_id"][-1]),
                                data + block.tobytes(), bid))
        else:
            self._conn.execute("INSERT INTO fix_block (voyage_id, n, last_fix_id, data) "
                               "VALUES (?, ?, ?, ?)",
                               (vid, len(block), int(block["fix_id"][-1]), block.tobytes()))

    def rebuild_cache(self) -> None:
        """Rebuild the derived fix cache from the fix records (after ``verify`` found the cache
        differs; the records themselves are not touched) and drop every derived result kept
        (:mod:`passagelog.store.derived`): they are computed again when next needed."""
        with self.transaction():
            self._conn.execute("DELETE FROM fix_block")
            self._conn.execute("DELETE FROM derived_result")
            for (vid,) in self._q("SELECT DISTINCT voyage_id FROM fix ORDER BY voyage_id"):
                arr = self._block_from_rows(vid)
                for start in range(0, len(arr), 65536):
                    part = arr[start:start + 65536]
                    self._conn.execute(
                        "INSERT INTO fix_block (voyage_id, n, last_fix_id, data) "
                        "VALUES (?, ?, ?, ?)",
                        (vid, len(part), int(part["fix_id"][-1]), part.tobytes()))

    def _block_from_rows(self, vid: int) -> np.ndarray:
        rows = self._q("SELECT fix_id, time_s, lat, lon, sog_kn, cog, heading, stw_kn, "
                       "implied_speed_kn, suspect FROM fix WHERE voyage_id = ? ORDER BY fix_id",
                       (vid,))
        return np.array(rows, dtype=BLOCK_DTYPE) if rows else np.empty(0, BLOCK_DTYPE)

    def _fix_of(self, row: tuple) -> Fix:
        (fid, _vid, time_utc, _ts, lat, lon, method, hdop, sats, mode, cog, sog, hdg, stw,
         remarks, source, supersedes, reason, _rec, suspect, implied) = row
        return Fix(time_utc=datetime.fromisoformat(time_utc), lat=lat, lon=lon, method=method,
                   hdop=hdop, satellites=sats, fix_mode=mode, cog=cog, sog_kn=sog,
                   heading=hdg, stw_kn=stw, remarks=remarks, source=source, fix_id=fid,
                   supersedes=supersedes, reason=reason, suspect=bool(suspect),
                   implied_speed_kn=implied)

    def fix(self, fix_id: int) -> Fix:
        """One fix record by id (current or superseded)."""
        rows = self._q(f"SELECT {', '.join(_FIX_COLS)} FROM fix WHERE fix_id = ?", (fix_id,))
        if not rows:
            raise NotFoundError(f"fix {fix_id!r} is not in the logbook")
        return self._fix_of(rows[0])

    def fix_recorded_utc(self, fix_id: int) -> datetime:
        """When fix ``fix_id`` was written to the logbook (for a correction: when corrected)."""
        rows = self._q("SELECT recorded_utc FROM fix WHERE fix_id = ?", (fix_id,))
        if not rows:
            raise NotFoundError(f"fix {fix_id!r} is not in the logbook")
        return _from_iso(rows[0][0])

    def fixes(self, voyage: Voyage | int | str, *, history: bool = False) -> list[Fix]:
        """The voyage's fixes in time order (ties by id). The current view leaves out every
        fix that a correction superseded; ``history=True`` gives every record, in id order."""
        with self._reading():
            vid = self._voyage_row(voyage)[0]
            if history:
                sql = (f"SELECT {', '.join(_FIX_COLS)} FROM fix WHERE voyage_id = ? "
                       "ORDER BY fix_id")
            else:
                sql = (f"SELECT {', '.join(_FIX_COLS)} FROM fix f WHERE voyage_id = ? AND NOT "
                       "EXISTS (SELECT 1 FROM fix g WHERE g.supersedes = f.fix_id) "
                       "ORDER BY time_s, fix_id")
            return [self._fix_of(r) for r in self._q(sql, (vid,))]

    def fix_arrays(self, voyage: Voyage | int | str) -> FixArrays:
        """The voyage's current fixes as numpy arrays (fast: read from the packed cache)."""
        with self._reading():
            vid = self._voyage_row(voyage)[0]
            blobs = [b for (b,) in self._q(
                "SELECT data FROM fix_block WHERE voyage_id = ? ORDER BY block_id", (vid,))]
            gone = [s for (s,) in self._q(
                "SELECT supersedes FROM fix INDEXED BY fix_supersedes "
                "WHERE supersedes IS NOT NULL")]
        parts = [np.frombuffer(b, dtype=BLOCK_DTYPE) for b in blobs]
        cols = {name: (np.concatenate([p[name] for p in parts]) if parts
                       else np.empty(0, BLOCK_DTYPE[name])) for name in BLOCK_DTYPE.names}
        keep = None
        if gone:
            keep = ~np.isin(cols["fix_id"], np.array(gone, dtype=np.int64))
        t = cols["time_s"] if keep is None else cols["time_s"][keep]
        if len(t) > 1 and not (np.diff(t) >= 0).all():
            ids = cols["fix_id"] if keep is None else cols["fix_id"][keep]
            order = np.lexsort((ids, t))
            keep = order if keep is None else np.flatnonzero(keep)[order]
        if keep is not None:
            cols = {name: col[keep] for name, col in cols.items()}
        cols["suspect"] = cols["suspect"].astype(bool)
        return FixArrays(**cols)

    def latest_fix(self, voyage: Voyage | int | str) -> Fix | None:
        """The current fix latest in time, or None."""
        with self._reading():
            vid = self._voyage_row(voyage)[0]
            rows = self._q(
                f"SELECT {', '.join(_FIX_COLS)} FROM fix f WHERE voyage_id = ? AND NOT EXISTS "
                "(SELECT 1 FROM fix g WHERE g.supersedes = f.fix_id) "
                "ORDER BY time_s DESC, fix_id DESC LIMIT 1", (vid,))
            return self._fix_of(rows[0]) if rows else None

    def latest_fix_id(self, voyage: Voyage | int | str | None = None) -> int:
        """The highest fix id (of one voyage, or of the whole logbook); 0 when none. Cheap:
        poll it to learn that fixes were added."""
        if voyage is None:
            return self._q("SELECT coalesce(max(fix_id), 0) FROM fix")[0][0]
        vid = self._voyage_row(voyage)[0]
        return self._q("SELECT coalesce(max(fix_id), 0) FROM fix WHERE voyage_id = ?",
                       (vid,))[0][0]

    def data_version(self) -> int:
        """A number that changes whenever another connection commits to the file (SQLite's
        ``PRAGMA data_version``); cheap to poll."""
        return self._q("PRAGMA data_version")[0][0]

    def counts(self, voyage: Voyage | int | str) -> dict[str, int]:
        """Numbers of records of a voyage: ``fixes``, ``fixes_current``, ``suspect``,
        ``entries``, ``entries_current``."""
        with self._reading():
            vid = self._voyage_row(voyage)[0]
            fixes, corrected, suspect = self._q(
                "SELECT count(*), count(supersedes), "
                "(SELECT count(*) FROM fix f WHERE f.voyage_id = ?1 AND suspect = 1 AND NOT "
                "EXISTS (SELECT 1 FROM fix g WHERE g.supersedes = f.fix_id)) "
                "FROM fix WHERE voyage_id = ?1", (vid,))[0]
            entries, ecorrected = self._q(
                "SELECT count(*), count(supersedes) FROM entry WHERE voyage_id = ?", (vid,))[0]
        return {"fixes": fixes, "fixes_current": fixes - corrected, "suspect": suspect,
                "entries": entries, "entries_current": entries - ecorrected}

    # ----- fix records a page at a time (keyset reads for a list of a whole voyage) --------
    # Every record, corrected originals included, in time order (ties by id); each read
    # costs the rows it returns, not the size of the voyage (index fix_voyage_time).

    @staticmethod
    def _page_limit(limit: Any) -> int:
        if isinstance(limit, bool) or not isinstance(limit, int) or limit < 1:
            raise InputError(f"page size {limit!r} must be a whole number of at least 1")
        return limit

    def _page_anchor(self, vid: int, fix_id: Any) -> tuple[float, int]:
        if isinstance(fix_id, bool) or not isinstance(fix_id, int):
            raise InputError(f"fix id {fix_id!r} must be a whole number")
        rows = self._q("SELECT time_s, fix_id FROM fix WHERE fix_id = ? AND voyage_id = ?",
                       (fix_id, vid))
        if not rows:
            raise NotFoundError(f"fix {fix_id} is not in the logbook for this voyage")
        return rows[0]

    def fix_record_count(self, voyage: Voyage | int | str) -> int:
        """How many fix records the voyage has (corrected originals included)."""
        with self._reading():
            vid = self._voyage_row(voyage)[0]
            return self._q("SELECT count(*) FROM fix WHERE voyage_id = ?", (vid,))[0][0]

    def fix_records_after(self, voyage: Voyage | int | str, after_id: int | None = None, *,
                          limit: int) -> list[Fix]:
        """At most ``limit`` fix records that follow record ``after_id`` in time order
        (from the voyage's first record when ``after_id`` is None), in time order."""
        limit = self._page_limit(limit)
        cols = ", ".join(_FIX_COLS)
        with self._reading():
            vid = self._voyage_row(voyage)[0]
            if after_id is None:
                rows = self._q(f"SELECT {cols} FROM fix WHERE voyage_id = ? "
                               "ORDER BY time_s, fix_id LIMIT ?", (vid, limit))
            else:
                t, fid = self._page_anchor(vid, after_id)
                rows = self._q(f"SELECT {cols} FROM fix WHERE voyage_id = ? AND "
                               "(time_s, fix_id) > (?, ?) ORDER BY time_s, fix_id LIMIT ?",
                               (vid, t, fid, limit))
        return [self._fix_of(r) for r in rows]

    def fix_records_before(self, voyage: Voyage | int | str, before_id: int | None = None,
                           *, limit: int) -> list[Fix]:
        """At most ``limit`` fix records that come just before record ``before_id`` in time
        order (the voyage's last ones when ``before_id`` is None), in time order."""
        limit = self._page_limit(limit)
        cols = ", ".join(_FIX_COLS)
        with self._reading():
            vid = self._voyage_row(voyage)[0]
            if before_id is None:
                rows = self._q(f"SELECT {cols} FROM fix WHERE voyage_id = ? "
                               "ORDER BY time_s DESC, fix_id DESC LIMIT ?", (vid, limit))
            else:
                t, fid = self._page_anchor(vid, before_id)
                rows = self._q(f"SELECT {cols} FROM fix WHERE voyage_id = ? AND "
                               "(time_s, fix_id) < (?, ?) ORDER BY time_s DESC, fix_id DESC "
                               "LIMIT ?", (vid, t, fid, limit))
        return [self._fix_of(r) for r in reversed(rows)]

    def fix_records_from(self, voyage: Voyage | int | str, when: datetime, *,
                         limit: int) -> list[Fix]:
        """At most ``limit`` fix records at or after ``when`` (aware UTC), in time order."""
        check_utc("page", "time", when, optional=False)
        limit = self._page_limit(limit)
        with self._reading():
            vid = self._voyage_row(voyage)[0]
            rows = self._q(f"SELECT {', '.join(_FIX_COLS)} FROM fix WHERE voyage_id = ? AND "
                           "time_s >= ? ORDER BY time_s, fix_id LIMIT ?",
                           (vid, when.timestamp(), limit))
        return [self._fix_of(r) for r in rows]

    def fix_record_rank(self, voyage: Voyage | int | str, fix_id: int) -> int:
        """How many of the voyage's fix records come before record ``fix_id`` in time order
        (its 0-based place in the list; counts index entries, so cheap but not free)."""
        with self._reading():
            vid = self._voyage_row(voyage)[0]
            t, fid = self._page_anchor(vid, fix_id)
            return self._q("SELECT count(*) FROM fix WHERE voyage_id = ? AND "
                           "(time_s, fix_id) < (?, ?)", (vid, t, fid))[0][0]

    def corrections_of(self, fix_ids: Sequence[int]) -> dict[int, int]:
        """For each of ``fix_ids`` that a correction superseded: the correcting fix's id."""
        ids = [int(i) for i in fix_ids]
        out: dict[int, int] = {}
        with self._reading():
            for start in range(0, len(ids), 500):
                part = ids[start:start + 500]
                marks = ", ".join("?" * len(part))
                for old, new in self._q(
                        "SELECT supersedes, fix_id FROM fix INDEXED BY fix_supersedes "
                        f"WHERE supersedes IN ({marks})", part):
                    out[old] = new
        return out

    # ----- log entries --------------------------------------------------------------------

    def add_entry(self, voyage: Voyage | int | str, entry: LogEntry) -> LogEntry:
        """Record a log entry; returns it with ``entry_id``."""
        with self.transaction():
            vid = self._voyage_row(voyage)[0]
            eid = self._insert_entry(vid, entry, None, None)
            return self.entry(eid)

    def correct_entry(self, voyage: Voyage | int | str, entry_id: int, entry: LogEntry,
                      reason: str) -> LogEntry:
        """Record ``entry`` as the correction of entry ``entry_id``; returns the new entry."""
        if not isinstance(reason, str) or not reason.strip():
            raise InputError(f"correction of log entry {entry_id}: a reason is required")
        with self.transaction():
            vid = self._voyage_row(voyage)[0]
            self._check_correctable("entry", vid, entry_id)
            eid = self._insert_entry(vid, entry, entry_id, reason)
            return self.entry(eid)

    def _insert_entry(self, vid: int, e: LogEntry, supersedes: int | None,
                      reason: str | None) -> int:
        if not isinstance(e, LogEntry):
            raise InputError(f"a log entry is needed, not {e!r}")
        return self._append("entry", (
            vid, _iso(e.time_utc), e.time_utc.timestamp() + 0.0, e.kind, e.text, e.zd_minutes,
            _f(e.lat), _f(e.lon), supersedes, reason, self._now()))

    def _entry_of(self, row: tuple) -> LogEntry:
        (eid, _vid, time_utc, _ts, kind, text, zd, lat, lon, supersedes, reason, _rec) = row
        return LogEntry(time_utc=datetime.fromisoformat(time_utc), kind=kind, text=text,
                        zd_minutes=zd, lat=lat, lon=lon, entry_id=eid, supersedes=supersedes,
                        reason=reason)

    def entry(self, entry_id: int) -> LogEntry:
        rows = self._q(f"SELECT {', '.join(_ENTRY_COLS)} FROM entry WHERE entry_id = ?",
                       (entry_id,))
        if not rows:
            raise NotFoundError(f"log entry {entry_id!r} is not in the logbook")
        return self._entry_of(rows[0])

    def entry_recorded_utc(self, entry_id: int) -> datetime:
        rows = self._q("SELECT recorded_utc FROM entry WHERE entry_id = ?", (entry_id,))
        if not rows:
            raise NotFoundError(f"log entry {entry_id!r} is not in the logbook")
        return _from_iso(rows[0][0])

    def entries(self, voyage: Voyage | int | str, *, history: bool = False) -> list[LogEntry]:
        """The voyage's log entries in time order (current view), or every record in id order
        with ``history=True``."""
        with self._reading():
            vid = self._voyage_row(voyage)[0]
            if history:
                sql = (f"SELECT {', '.join(_ENTRY_COLS)} FROM entry WHERE voyage_id = ? "
                       "ORDER BY entry_id")
            else:
                sql = (f"SELECT {', '.join(_ENTRY_COLS)} FROM entry e WHERE voyage_id = ? AND "
                       "NOT EXISTS (SELECT 1 FROM entry g WHERE g.supersedes = e.entry_id) "
                       "ORDER BY time_s, entry_id")
            return [self._entry_of(r) for r in self._q(sql, (vid,))]

    def zone_at(self, voyage: Voyage | int | str, when: datetime) -> int:
        """The ship's zone description (minutes) in force at ``when``: the voyage's own,
        changed by every current clock-change entry at or before ``when``."""
        with self._reading():
            row = self._voyage_row(voyage)
            zd = row[6]
            for e in self.entries(row[0]):
                if e.kind == "clock-change" and e.time_utc <= when:
                    zd = e.zd_minutes
            return zd

    # ----- imports ------------------------------------------------------------------------

    def has_import(self, sha256: str) -> bool:
        """True when a file with this SHA-256 (hex) was already imported."""
        return bool(self._q("SELECT 1 FROM import_record WHERE sha256 = ?",
                            (sha256.lower(),)))

    def record_import(self, sha256: str, source_name: str, kind: str,
                      counts: dict[str, int]) -> None:
        """Remember that a file was imported (call inside the import's :meth:`transaction`)."""
        if (not isinstance(sha256, str) or len(sha256) != 64
                or any(c not in "0123456789abcdef" for c in sha256.lower())):
            raise InputError(f"import SHA-256 {sha256!r} must be 64 hexadecimal digits")
        with self.transaction():
            if self.has_import(sha256):
                raise StoreError(f"file {source_name!r} (SHA-256 {sha256.lower()}) was already "
                                 "imported")
            self._append("import_record", (
                sha256.lower(), source_name, kind,
                json.dumps(counts, sort_keys=True, allow_nan=False), self._now()))

    def imports(self) -> list[ImportInfo]:
        return [ImportInfo(s, n, k, json.loads(c), _from_iso(r)) for s, n, k, c, r in self._q(
            "SELECT sha256, source_name, kind, counts_json, recorded_utc FROM import_record "
            "ORDER BY import_id")]

    # ----- verification -------------------------------------------------------------------

    def verify(self) -> VerifyReport:
        """Walk every chain and report what was edited, deleted or inserted behind the
        logbook's back (the first record per chain), missing append-only triggers, and a
        fix cache that differs from the fix records."""
        findings: list[Finding] = []
        records: dict[str, int] = {}
        with self._reading():
            present = {name for (name,) in self._q(
                "SELECT name FROM sqlite_master WHERE type = 'trigger'")}
            for table in APPEND_ONLY_TABLES:
                for op in ("update", "delete"):
                    name = f"{table}_no_{op}"
                    if name not in present:
                        findings.append(Finding(
                            "trigger-missing", table, None,
                            f"the trigger {name} that refuses {op.upper()} on {table} records "
                            "is missing: records may have been changed behind the logbook's "
                            "back"))
            heads = {c: (i, h) for c, i, h in self._q(
                "SELECT chain, last_id, last_hash FROM chain_head")}
            for chain_name in ch.CHAINS:
                count, finding = self._walk(chain_name, heads.get(chain_name, (0, ch.GENESIS)))
                records[chain_name] = count
                if finding:
                    findings.append(finding)
            if not any(f.chain == "fix" and f.kind != "trigger-missing" for f in findings):
                findings.extend(self._check_cache())
        return VerifyReport(records, tuple(findings),
                            {c: (i, h.hex()) for c, (i, h) in heads.items()})

    def _walk(self, chain: str, head: tuple[int, bytes]) -> tuple[int, Finding | None]:
        cols = ch.CHAINS[chain]
        label = ch.LABELS[chain]
        id_col = cols[0]
        cur = self._conn.execute(
            f"SELECT {', '.join(cols)}, prev_hash, hash FROM {chain} ORDER BY {id_col}")
        children: dict[int, list[tuple]] = {}
        if chain == "plan_revision":
            for table, ccols in (("plan_point", ch.PLAN_POINT_COLS),
                                 ("plan_schedule", ch.PLAN_SCHEDULE_COLS)):
                for row in self._q(f"SELECT {', '.join(ccols)} FROM {table} "
                                   "ORDER BY revision_id, idx"):
                    children.setdefault(row[0], []).append((table, row))
        head_id, head_hash = head
        expected = 1
        prev = ch.GENESIS
        count = 0
        fmt = ch.canonical
        for row in cur:
            rid = row[0]
            content, stored_prev, stored = row[:-2], row[-2], row[-1]
            count += 1
            if rid > head_id:
                return count, Finding("inserted", chain, rid,
                                      f"{label} {rid} was inserted behind the logbook's back "
                                      f"(the chain ends at {label} {head_id})")
            if rid > expected:
                first = f"{label} {expected}" + (f" to {rid - 1}" if rid - 1 > expected else "")
                return count, Finding("deleted", chain, expected,
                                      f"{first} deleted (the chain resumes at {label} {rid})")
            if chain == "plan_revision":
                kids = children.get(rid, [])
                text = ch.canonical_rows(
                    [content] + [r for t, r in kids if t == "plan_point"]
                    + [r for t, r in kids if t == "plan_schedule"])
            else:
                text = fmt(chain, content)
            if not isinstance(stored_prev, bytes) or not isinstance(stored, bytes) or \
                    ch.link(stored_prev, text) != stored:
                return count, Finding("edited", chain, rid,
                                      f"{label} {rid} was edited: its content no longer matches "
                                      "its hash")
            if stored_prev != prev:
                before = rid - 1
                return count, Finding(
                    "edited", chain, before,
                    f"{label} {before} was edited or replaced: {label} {rid} does not link to "
                    "it")
            prev = stored
            expected = rid + 1
        last = expected - 1
        if last < head_id:
            first = f"{label} {last + 1}" + (f" to {head_id}" if head_id > last + 1 else "")
            return count, Finding("deleted", chain, last + 1,
                                  f"{first} deleted (the chain ends at {label} {last})")
        if last and prev != head_hash:
            return count, Finding("edited", chain, last,
                                  f"{label} {last} was edited or replaced: it does not match "
                                  "the chain head")
        return count, None

    def _check_cache(self) -> list[Finding]:
        out = []
        vids = {v for (v,) in self._q("SELECT DISTINCT voyage_id FROM fix")} | {
            v for (v,) in self._q("SELECT DISTINCT voyage_id FROM fix_block")}
        for vid in sorted(vids):
            want = self._block_from_rows(vid)
            blobs = [b for (b,) in self._q(
                "SELECT data FROM fix_block WHERE voyage_id = ? ORDER BY block_id", (vid,))]
            have = np.frombuffer(b"".join(blobs), dtype=BLOCK_DTYPE) if blobs else \
                np.empty(0, BLOCK_DTYPE)
            same = len(have) == len(want) and all(
                np.array_equal(have[n], want[n], equal_nan=n not in ("fix_id", "suspect"))
                for n in BLOCK_DTYPE.names)
            if not same:
                out.append(Finding("cache", "fix_block", None,
                                   f"the fast-loading copy of voyage {vid}'s fixes differs from "
                                   "the fix records (the records verify); rebuild it with "
                                   "'passagelog verify --rebuild-cache'"))
        return out


def _statements(script: str) -> list[str]:
    """Split a migration script into statements (triggers kept whole)."""
    out, buf = [], ""
    for line in script.splitlines(keepends=True):
        if line.strip().startswith("--") and not buf.strip():
            continue
        buf += line
        if sqlite3.complete_statement(buf):
            if buf.strip():
                out.append(buf.strip())
            buf = ""
    if buf.strip():
        out.append(buf.strip())
    return out
