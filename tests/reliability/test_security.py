"""Security: the feed listens only where told (127.0.0.1 by default), SQL is parameterised,
HTML escapes user text, a new logbook is readable by its owner only, and the commands do not
touch the network."""

from __future__ import annotations

import ast
import json
import os
import socket
import stat
import subprocess
import sys
import time
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parent))
sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "scripts"))
import relkit  # noqa: E402
import reliability_common as rc  # noqa: E402

REPO = Path(__file__).resolve().parents[2]
EVIL_SQL = "x'); DROP TABLE fix;--"
EVIL_HTML = "<script>alert(1)</script>"

# ---------------------------------------------------------------------------------------------
# the feed's listening address


def _udp_local_addresses(port: int) -> list[str]:
    """Local addresses (hex, as the kernel lists them) of UDP sockets bound to ``port``
    (Linux /proc/net/udp and udp6)."""
    found = []
    for table in ("/proc/net/udp", "/proc/net/udp6"):
        try:
            lines = Path(table).read_text().splitlines()[1:]
        except OSError:
            continue
        for line in lines:
            local = line.split()[1]
            addr, hex_port = local.rsplit(":", 1)
            if int(hex_port, 16) == port:
                found.append(addr)
    return found


def _feed_bound(db: Path, args: list[str], port: int) -> list[str]:
    proc = rc.start(db, "feed", *args, "--voyage", "V", "-q")
    try:
        deadline = rc.Deadline(20.0)
        while deadline and proc.poll() is None:
            found = _udp_local_addresses(port)
            if found:
                return found
            time.sleep(0.05)
        return []
    finally:
        rc.reap(proc, sig=2)  # SIGINT, as Ctrl-C


@pytest.mark.skipif(not Path("/proc/net/udp").exists(), reason="needs Linux /proc/net/udp")
def test_feed_given_only_a_port_listens_on_loopback_only(tmp_path):
    db = tmp_path / "book.sqlite"
    rc.make_logbook(db, ["V"])
    port = rc.free_udp_port()
    assert _feed_bound(db, ["--udp", str(port)], port) == ["0100007F"]  # 127.0.0.1


@pytest.mark.skipif(not Path("/proc/net/udp").exists(), reason="needs Linux /proc/net/udp")
def test_feed_without_a_source_listens_on_loopback_10110(tmp_path):
    from passagelog.feed.sources import DEFAULT_UDP_HOST, DEFAULT_UDP_PORT

    assert (DEFAULT_UDP_HOST, DEFAULT_UDP_PORT) == ("127.0.0.1", 10110)
    probe = socket.socket(socket.AF_INET, socket.SOCK_DGRAM)
    try:
        probe.bind(("127.0.0.1", DEFAULT_UDP_PORT))
    except OSError:
        pytest.skip("port 10110 is in use on this machine")
    finally:
        probe.close()
    db = tmp_path / "book.sqlite"
    rc.make_logbook(db, ["V"])
    assert _feed_bound(db, [], DEFAULT_UDP_PORT) == ["0100007F"]


# ---------------------------------------------------------------------------------------------
# SQL

#: identifiers that may be formatted into SQL text in passagelog/store: table and column
#: names from the schema's own constants, savepoint depths, schema versions. Anything new
#: fails this test until it is reviewed and added here.
SQL_NAMES_ALLOWED = {
    "cols", "chain", "table", "key", "id_col", "ccols", "version", "self._depth",
    "_FIX_COLS", "_ENTRY_COLS", "ch.PLAN_POINT_COLS", "ch.PLAN_SCHEDULE_COLS",
    "int(BUSY_TIMEOUT_S * 1000)",
    "marks",  # a run of "?" placeholders, one per bound value
}
SQL_WORDS = ("SELECT", "INSERT", "UPDATE", "DELETE", "PRAGMA", "SAVEPOINT", "ROLLBACK",
             "RELEASE", "CREATE", "DROP", "ALTER", "WITH", "VALUES", "FROM", "WHERE")


def _formatted_names(node: ast.JoinedStr) -> list[str]:
    out = []
    for part in node.values:
        if isinstance(part, ast.FormattedValue):
            expr = part.value
            # ', '.join(X) and '?' * N are shapes of column lists and placeholders
            if (isinstance(expr, ast.Call) and isinstance(expr.func, ast.Attribute)
                    and expr.func.attr == "join" and isinstance(expr.func.value, ast.Constant)):
                expr = expr.args[0]
            if (isinstance(expr, ast.BinOp) and isinstance(expr.op, ast.Mult)
                    and isinstance(expr.left, ast.Constant) and expr.left.value == "?"):
                continue
            out.append(ast.unparse(expr))
    return out


def _sql_fstrings(path: Path):
    tree = ast.parse(path.read_text(encoding="utf-8"))
    for node in ast.walk(tree):
        if isinstance(node, ast.JoinedStr):
            text = "".join(p.value for p in node.values if isinstance(p, ast.Constant))
            # the store writes SQL keywords in capitals: match them case-sensitively
            if any(text.lstrip().startswith(w + " ") or f" {w} " in text for w in SQL_WORDS):
                yield node


def test_sql_in_the_store_formats_only_schema_names_never_values():
    store = REPO / "passagelog" / "store"
    seen = 0
    for path in sorted(store.glob("*.py")):
        source = path.read_text(encoding="utf-8")
        tree = ast.parse(source)
        for node in ast.walk(tree):
            # no %-formatting or .format() of SQL text anywhere in the store
            if isinstance(node, ast.BinOp) and isinstance(node.op, ast.Mod) and isinstance(
                    node.left, ast.Constant) and isinstance(node.left.value, str) and any(
                    w in node.left.value.upper() for w in SQL_WORDS[:5]):
                pytest.fail(f"{path.name}:{node.lineno}: SQL built with %")
            if (isinstance(node, ast.Call) and isinstance(node.func, ast.Attribute)
                    and node.func.attr == "format" and isinstance(node.func.value, ast.Constant)
                    and any(w in str(node.func.value.value).upper() for w in SQL_WORDS[:5])):
                pytest.fail(f"{path.name}:{node.lineno}: SQL built with .format()")
        for node in _sql_fstrings(path):
            for name in _formatted_names(node):
                seen += 1
                assert name in SQL_NAMES_ALLOWED, (
                    f"{path.name}:{node.lineno}: {name!r} is formatted into SQL; values must "
                    "be bound parameters (?), names reviewed and listed in SQL_NAMES_ALLOWED")
    assert seen > 10  # the scan found the store's SQL at all


def test_sql_text_in_names_is_stored_as_text(tmp_path):
    db = tmp_path / "book.sqlite"
    code, out, err = relkit.run_cli(["--db", str(db), "voyage", "add", EVIL_SQL,
                                     "--from", EVIL_HTML, "--json"])
    assert code == 0, err
    code, out, err = relkit.run_cli(["--db", str(db), "voyage", "list", "--json"])
    assert code == 0, err
    voyages = json.loads(out) if out.lstrip().startswith("[") else [
        json.loads(line) for line in out.splitlines() if line.strip()]
    assert any(EVIL_SQL in json.dumps(v, ensure_ascii=False) for v in voyages), out
    # the fix table is still there and the chains verify
    code, out, err = relkit.run_cli(["--db", str(db), "verify"])
    assert code == 0, err
    import sqlite3

    conn = sqlite3.connect(db)
    try:
        tables = {r[0] for r in conn.execute("SELECT name FROM sqlite_master WHERE type='table'")}
        names = [r[0] for r in conn.execute("SELECT name FROM voyage")]
    finally:
        conn.close()
    assert "fix" in tables and names == [EVIL_SQL]


# ---------------------------------------------------------------------------------------------
# HTML


def test_html_report_escapes_waypoint_and_route_names(tmp_path):
    route = tmp_path / "route.csv"
    route.write_text(
        "name,lat,lon,sailing,speed_kn,xtl_port_nm,xtl_stbd_nm,arrival_radius_nm,"
        "turn_radius_nm,notes\n"
        f"\"{EVIL_HTML}\",50,-1,,,,,,,\n"
        f"\"B & <b>bold</b>\",50.5,-1.5,rhumb,10,,,,,\"{EVIL_HTML}\"\n", encoding="utf-8")
    code, out, err = relkit.run_cli(["report", "legs", "--plan", str(route), "--format", "html"])
    assert code == 0, err
    assert "<script>" not in out and "alert(1)</script>" not in out
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in out
    assert "<b>bold</b>" not in out and "&lt;b&gt;bold&lt;/b&gt;" in out


# ---------------------------------------------------------------------------------------------
# file mode


def test_new_logbook_is_readable_by_its_owner_only(tmp_path):
    old = os.umask(0o022)  # a permissive umask must not matter
    try:
        db = tmp_path / "sub" / "book.sqlite"
        code, _out, err = relkit.run_cli(["--db", str(db), "voyage", "add", "V"])
    finally:
        os.umask(old)
    assert code == 0, err
    assert stat.S_IMODE(db.stat().st_mode) == 0o600
    for side in (db.with_name(db.name + "-wal"), db.with_name(db.name + "-shm")):
        if side.exists():  # SQLite gives the WAL and SHM files the database file's mode
            assert stat.S_IMODE(side.stat().st_mode) & 0o077 == 0, oct(side.stat().st_mode)


# ---------------------------------------------------------------------------------------------
# no network


class _NoNetwork:
    """Refuse every socket operation that is not on loopback (recorded for the assert)."""

    def __init__(self, monkeypatch):
        self.calls: list[str] = []
        real_connect = socket.socket.connect
        real_sendto = socket.socket.sendto
        real_bind = socket.socket.bind
        real_getaddrinfo = socket.getaddrinfo
        guard = self

        def loopback(addr) -> bool:
            host = addr[0] if isinstance(addr, tuple) else addr
            return host in ("127.0.0.1", "::1", "localhost") or isinstance(addr, (str, bytes))

        def connect(sock, addr):
            if not loopback(addr):
                guard.calls.append(f"connect {addr}")
                raise OSError("network refused by the test")
            return real_connect(sock, addr)

        def sendto(sock, data, *args):
            addr = args[-1]
            if not loopback(addr):
                guard.calls.append(f"sendto {addr}")
                raise OSError("network refused by the test")
            return real_sendto(sock, data, *args)

        def bind(sock, addr):
            if not loopback(addr):
                guard.calls.append(f"bind {addr}")
                raise OSError("network refused by the test")
            return real_bind(sock, addr)

        def getaddrinfo(host, *args, **kw):
            if host not in ("127.0.0.1", "::1", "localhost", None):
                guard.calls.append(f"getaddrinfo {host}")
                raise OSError("name lookup refused by the test")
            return real_getaddrinfo(host, *args, **kw)

        monkeypatch.setattr(socket.socket, "connect", connect)
        monkeypatch.setattr(socket.socket, "sendto", sendto)
        monkeypatch.setattr(socket.socket, "bind", bind)
        monkeypatch.setattr(socket, "getaddrinfo", getaddrinfo)


def test_commands_do_not_touch_the_network(tmp_path, monkeypatch):
    guard = _NoNetwork(monkeypatch)
    db = tmp_path / "book.sqlite"
    docs = relkit.valid_documents()
    for name in ("route.rtz", "fixes.nmea"):
        (tmp_path / name).write_bytes(docs[name])
    runs = [
        ["voyage", "add", "V"],
        ["import", str(tmp_path / "route.rtz"), "--plan", "P", "-q"],
        ["voyage", "assign-plan", "V", "P"],
        ["import", str(tmp_path / "fixes.nmea"), "--voyage", "V", "-q"],
        ["review", "V", "--table", "legs", "--format", "json"],
        ["status", "V", "--json"],
        ["report", "legs", "V", "--format", "html"],
        ["verify"],
        ["calc", "leg", "50N 1W", "51N 2W", "--json"],
        ["export", "voyage", "V", "-o", str(tmp_path / "out.gpx")],
        ["export", "fixes", "V", "-o", str(tmp_path / "out.nmea")],
    ]
    codes = []
    for args in runs:
        code, _out, err = relkit.run_cli(["--db", str(db), *args])
        codes.append((args[0], code, err.strip()[:200]))
    assert guard.calls == [], guard.calls
    assert all(code == 0 for _a, code, _e in codes), codes  # every one ran to its end


def test_the_scripts_use_loopback_only():
    """The crash and concurrency scripts name no address but 127.0.0.1."""
    import re

    for path in (REPO / "scripts").glob("*.py"):
        text = path.read_text(encoding="utf-8")
        for m in re.finditer(r"\b\d{1,3}\.\d{1,3}\.\d{1,3}\.\d{1,3}\b", text):
            assert m.group(0) == "127.0.0.1", f"{path.name}: {m.group(0)}"
        assert "0.0.0.0" not in text
