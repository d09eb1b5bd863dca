"""Shared pieces of the crash and concurrency scripts: NMEA generation, a loopback UDP
sender, the logbook checks, and starting and reaping ``passagelog`` processes.

Only 127.0.0.1 is ever used. Every process started here is killed and reaped by the code
that started it (``finally``), so nothing is left running.
"""

from __future__ import annotations

import os
import signal
import socket
import sqlite3
import subprocess
import sys
import time
from datetime import datetime, timedelta, timezone
from pathlib import Path

LOOPBACK = "127.0.0.1"
T0 = datetime(2026, 5, 1, 0, 0, tzinfo=timezone.utc)


def checksum(body: str) -> int:
    """XOR of the characters between '$' and '*' (NMEA 0183)."""
    x = 0
    for c in body:
        x ^= ord(c)
    return x


def sentence(body: str) -> str:
    return f"${body}*{checksum(body):02X}\r\n"


def _dm(value: float, width: int) -> str:
    a = abs(value)
    d = int(a)
    m = (a - d) * 60.0
    if round(m, 4) >= 60.0:
        d, m = d + 1, 0.0
    return f"{d:0{width}d}{m:07.4f}"


def rmc(t: datetime, lat: float, lon: float, sog_kn: float = 10.0, cog: float = 45.0) -> str:
    """An RMC sentence (status A) at ``t`` (whole or fractional seconds)."""
    hhmmss = f"{t:%H%M%S}.{t.microsecond // 10_000:02d}"
    return sentence(f"GPRMC,{hhmmss},A,{_dm(lat, 2)},{'N' if lat >= 0 else 'S'},"
                    f"{_dm(lon, 3)},{'E' if lon >= 0 else 'W'},{sog_kn:.1f},{cog:.1f},"
                    f"{t:%d%m%y},,,A")


def track_point(i: int, step_s: float) -> tuple[datetime, float, float]:
    """Point i of a straight-ish track north-east from 50N 10W at 10 kn (step_s apart)."""
    t = T0 + timedelta(seconds=i * step_s)
    dist_nm = 10.0 * i * step_s / 3600.0
    return t, 50.0 + dist_nm / 60.0 * 0.7071, -10.0 + dist_nm / 60.0 * 0.7071 / 0.64


def write_nmea_log(path: Path, lines: int, *, tag: str = "", step_s: float = 1.0,
                   start_index: int = 0) -> int:
    """An NMEA log of ``lines`` lines: an RMC a second plus a GGA every 10th; ``tag`` goes
    into a first $GPTXT line (so two logs of the same fixes differ in SHA-256). Returns the
    number of fixes (epochs) it holds."""
    out = []
    if tag:
        out.append(sentence(f"GPTXT,01,01,02,{tag}"))
    fixes = 0
    i = start_index
    while len(out) < lines:
        t, lat, lon = track_point(i, step_s)
        out.append(rmc(t, lat, lon))
        fixes += 1
        if i % 10 == 0 and len(out) < lines:
            out.append(sentence(f"GPGGA,{t:%H%M%S}.{t.microsecond // 10_000:02d},"
                                f"{_dm(lat, 2)},N,{_dm(lon, 3)},W,1,09,0.9,12.0,M,47.0,M,,"))
        i += 1
    path.write_text("".join(out), encoding="ascii")
    return fixes


def free_udp_port() -> int:
    s = socket.socket(socket.AF_INET, socket.SOCK_DGRAM)
    try:
        s.bind((LOOPBACK, 0))
        return s.getsockname()[1]
    finally:
        s.close()


def passagelog_cmd(db: Path, *args: str) -> list[str]:
    return [sys.executable, "-m", "passagelog", "--db", str(db), *args]


def start(db: Path, *args: str, **kw) -> subprocess.Popen:
    """Start ``passagelog --db DB ARGS`` in its own process group, output to pipes."""
    env = dict(os.environ, NO_COLOR="1")
    env.pop("PASSAGELOG_DB", None)
    return subprocess.Popen(passagelog_cmd(db, *args), stdin=subprocess.DEVNULL,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            env=env, start_new_session=True, **kw)


def reap(proc: subprocess.Popen, sig: int = signal.SIGKILL, timeout: float = 20.0
         ) -> tuple[str, str]:
    """Send ``sig`` if still running, wait, and return (stdout, stderr). Always reaps."""
    try:
        if proc.poll() is None:
            proc.send_signal(sig)
        out, err = proc.communicate(timeout=timeout)
    except subprocess.TimeoutExpired:
        proc.kill()
        out, err = proc.communicate()
    return out or "", err or ""


def run(db: Path, *args: str, timeout: float = 120.0) -> subprocess.CompletedProcess:
    env = dict(os.environ, NO_COLOR="1")
    env.pop("PASSAGELOG_DB", None)
    return subprocess.run(passagelog_cmd(db, *args), stdin=subprocess.DEVNULL,
                          capture_output=True, text=True, env=env, timeout=timeout)


def integrity_check(db: Path) -> str:
    """SQLite's own ``PRAGMA integrity_check`` ('ok' when the file is sound)."""
    conn = sqlite3.connect(db, timeout=30)
    try:
        return "; ".join(r[0] for r in conn.execute("PRAGMA integrity_check"))
    finally:
        conn.close()


def lock_probe(db: Path) -> sqlite3.Connection:
    """A connection for :func:`write_lock_held`: no busy wait, autocommit."""
    return sqlite3.connect(db, timeout=0, isolation_level=None)


def write_lock_held(probe: sqlite3.Connection) -> bool:
    """Whether another connection holds the logbook's write lock right now (an import's
    transaction, say): ``BEGIN IMMEDIATE`` with no busy wait fails then. When it succeeds
    the empty transaction is rolled back at once (the lock is held some microseconds; a
    writer that meets it waits in its busy handler, it does not fail)."""
    try:
        probe.execute("BEGIN IMMEDIATE")
    except sqlite3.OperationalError as exc:
        if "locked" in str(exc) or "busy" in str(exc):
            return True
        raise
    probe.execute("ROLLBACK")
    return False


def wait_lock(probe: sqlite3.Connection, proc: subprocess.Popen, held: bool,
              seconds: float = 120.0, poll_s: float = 0.002) -> float | None:
    """Wait until the write lock is ``held`` (or released, ``held=False``) while ``proc``
    runs: the monotonic time it was first seen so, or None if ``proc`` ended first or the
    time ran out."""
    end = time.monotonic() + seconds
    while time.monotonic() < end:
        if write_lock_held(probe) == held:
            return time.monotonic()
        if proc.poll() is not None:
            return None
        time.sleep(poll_s)
    return None


def fix_times(db: Path, voyage: str) -> list[str]:
    """The stored fix times of a voyage (text as stored), in id order, read directly."""
    conn = sqlite3.connect(f"file:{db}?mode=ro", uri=True, timeout=30)
    try:
        return [r[0] for r in conn.execute(
            "SELECT f.time_utc FROM fix f JOIN voyage v ON v.voyage_id = f.voyage_id "
            "WHERE v.name = ? ORDER BY f.fix_id", (voyage,))]
    finally:
        conn.close()


def count_fixes(db: Path, voyage: str) -> int:
    conn = sqlite3.connect(f"file:{db}?mode=ro", uri=True, timeout=30)
    try:
        return conn.execute("SELECT count(*) FROM fix f JOIN voyage v ON v.voyage_id = "
                            "f.voyage_id WHERE v.name = ?", (voyage,)).fetchone()[0]
    finally:
        conn.close()


def make_logbook(db: Path, voyages: list[str], with_plan: bool = True) -> None:
    """A new logbook with the given voyages (each with a short plan assigned)."""
    from passagelog.model import Craft, LegPlan, Route, Voyage, Waypoint
    from passagelog.store import Logbook

    route = Route("Reliability run", (Waypoint("A", 50.0, -10.0), Waypoint("B", 51.0, -8.0),
                                      Waypoint("C", 53.0, -5.0)),
                  (LegPlan("great-circle", 10.0), LegPlan("rhumb", 10.0)))
    with Logbook.open(db) as book:
        craft = book.add_craft(Craft("Test craft", max_speed_kn=30.0))
        plan_id = book.create_plan(route, "created")[0] if with_plan else None
        for name in voyages:
            v = book.add_voyage(Voyage(name, craft_id=craft.craft_id, departure_utc=T0))
            if plan_id is not None:
                book.assign_plan(v, plan_id)


class Deadline:
    def __init__(self, seconds: float):
        self.end = time.monotonic() + seconds

    def left(self) -> float:
        return self.end - time.monotonic()

    def __bool__(self) -> bool:
        return self.left() > 0


def tagged_copy(base: Path, dst: Path, tag: str) -> None:
    """``base`` with a first $GPTXT line carrying ``tag``: the same fixes, another SHA-256."""
    with open(dst, "wb") as out, open(base, "rb") as src:
        out.write(sentence(f"GPTXT,01,01,02,{tag}").encode("ascii"))
        while chunk := src.read(1 << 20):
            out.write(chunk)


def imports_named(db: Path) -> dict[str, dict]:
    """Import records by source name -> counts, read through the library."""
    from passagelog.store import Logbook

    with Logbook.open(db, create=False) as book:
        return {i.source_name: i.counts for i in book.imports()}
