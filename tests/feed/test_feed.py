"""The live feed: which fixes it logs, what it counts, and a real loopback UDP socket."""

from __future__ import annotations

import os
import signal
import socket
import subprocess
import sys
import threading
import time
from datetime import datetime, timedelta, timezone
from functools import reduce

import pytest

from passagelog.errors import InputError, StoreError
from passagelog.feed.logger import Feed, LogPolicy
from passagelog.feed.sources import parse_address, udp_lines

pytest.importorskip("passagelog.formats.nmea")

# The classic RMC example of the NMEA 0183 tutorials (Dale DePriest's "NMEA data", from
# memory): 12:35:19 UTC, 48°07.038'N 011°31.000'E, 22.4 kn, 84.4° T, 23 March 1994.
CLASSIC_RMC = "$GPRMC,123519,A,4807.038,N,01131.000,E,022.4,084.4,230394,003.1,W*6A"


def nmea(body: str) -> str:
    """A sentence with its checksum: XOR of every character between '$' and '*'
    (NMEA 0183, REFERENCE.md)."""
    return f"${body}*{reduce(lambda a, c: a ^ ord(c), body, 0):02X}\r\n"


def rmc(t: datetime, lat_dm: str, lon_dm: str, sog: float, cog: float) -> str:
    return nmea(f"GPRMC,{t:%H%M%S},A,{lat_dm},N,{lon_dm},W,{sog:.1f},{cog:.1f},{t:%d%m%y},,")


def track(n: int, cog_at=lambda i: 90.0, start=datetime(2026, 5, 1, 6, 0, tzinfo=timezone.utc),
          step_s: int = 60) -> list[str]:
    return [rmc(start + timedelta(seconds=i * step_s), f"{4900 + i * 0.1:.3f}", "00500.000",
                10.0, cog_at(i)) for i in range(n)]


def test_the_classic_sentence_checksum_is_reproduced():
    assert nmea(CLASSIC_RMC[1:-3]).strip() == CLASSIC_RMC


def run_feed(lines, **policy):
    logged = []
    feed = Feed(lines, logged.append, LogPolicy(**policy))
    stats = feed.run()
    return feed, stats, logged


def test_logs_first_fix_then_every_interval():
    # 32 fixes a minute apart: logged at minutes 0, 10, 20 and 30.
    _feed, stats, logged = run_feed(track(32), every_s=600, course_change_deg=None)
    assert stats.fixes_seen == 32
    assert [f.time_utc.minute for f in logged] == [0, 10, 20, 30]
    assert stats.logged == {"first fix": 1, "interval": 3}
    assert all(f.remarks.startswith("feed: ") for f in logged)
    assert logged[0].source.startswith("$GPRMC,060000,A")


def test_logs_on_a_large_course_change_only_when_making_way():
    cogs = [90.0] * 5 + [130.0] * 5
    _f, stats, logged = run_feed(track(11, cog_at=lambda i: cogs[min(i, 9)]), every_s=3600,
                                 course_change_deg=30)
    assert [f.cog for f in logged] == [90.0, 130.0]
    assert stats.logged["course change"] == 1


def test_garbage_bad_checksums_and_bursts_are_counted_never_fatal():
    good = track(4)
    bad_checksum = good[1][:-4] + "00\r\n"
    lines = [good[0], "\x00\xff garbage\n", bad_checksum, "$GPRMC,1,2\n", good[2], good[3],
             "not nmea at all\n"]
    _f, stats, logged = run_feed(lines, every_s=60)
    assert [f.time_utc.minute for f in logged] == [0, 2, 3]
    assert stats.summary.rejected["checksum mismatch"] == 1
    assert stats.summary.lines_rejected >= 3
    text = "\n".join(stats.lines_text())
    assert "checksum mismatch 1" in text

    frozen = Feed(track(50), lambda f: None, max_lines_per_s=5, monotonic=lambda: 0.0)
    frozen.run()
    assert frozen.stats.burst_dropped == 45  # a clock that never moves: 5 lines pass


def test_on_demand_logs_the_next_fix_and_a_refused_write_is_counted():
    calls = []

    def write(fix):
        calls.append(fix)
        if len(calls) == 2:
            raise StoreError("logbook refused the fix (test)")

    events = []
    box = {}

    def lines():
        for i, line in enumerate(track(6)):
            if i == 3:
                box["feed"].request_fix()  # as the SIGUSR1 handler or a keypress would
            yield line

    feed = Feed(lines(), calls.append, LogPolicy(every_s=3600), on_event=events.append)
    box["feed"] = feed
    stats = feed.run()
    # the first fix, then the next fix decoded after the request (minute 2, closed when the
    # minute-3 sentence arrives); nothing else within the hour
    assert [f.time_utc.minute for f in calls] == [0, 2]
    assert stats.logged == {"first fix": 1, "on demand": 1}
    calls.clear()
    feed2 = Feed(iter(track(6)), write, LogPolicy(every_s=120), on_event=events.append)
    stats2 = feed2.run()
    assert stats2.write_failures == 1  # the second call was refused and counted
    assert any("not logged" in e for e in events)


def test_addresses():
    assert parse_address("10110", default_host="127.0.0.1", what="UDP") == ("127.0.0.1", 10110)
    assert parse_address("0.0.0.0:2000", default_host="127.0.0.1", what="UDP") == ("0.0.0.0", 2000)
    with pytest.raises(InputError, match="needs a host"):
        parse_address("2000", default_host=None, what="TCP")
    with pytest.raises(InputError, match="outside 1-65535"):
        parse_address("localhost:70000", default_host=None, what="TCP")


def test_loopback_udp_sender_to_logbook_writer():
    probe = socket.socket(socket.AF_INET, socket.SOCK_DGRAM)
    probe.bind(("127.0.0.1", 0))
    port = probe.getsockname()[1]
    probe.close()
    stop, ready = threading.Event(), threading.Event()
    logged = []
    feed = Feed(udp_lines("127.0.0.1", port, stop, poll_s=0.05, ready=ready), logged.append,
                LogPolicy(every_s=120))
    result = {}
    worker = threading.Thread(target=lambda: result.setdefault("stats", feed.run()))
    worker.start()
    assert ready.wait(5.0)
    sender = socket.socket(socket.AF_INET, socket.SOCK_DGRAM)
    try:
        lines = track(8)
        # one datagram of two sentences, one of garbage, the rest one sentence each
        sender.sendto((lines[0] + lines[1]).encode(), ("127.0.0.1", port))
        sender.sendto(b"\xde\xad\xbe\xef", ("127.0.0.1", port))
        for line in lines[2:]:
            sender.sendto(line.encode(), ("127.0.0.1", port))
        deadline = threading.Event()
        for _ in range(100):
            if feed.stats.fixes_seen >= 7:  # the 8th epoch closes when the source stops
                break
            deadline.wait(0.05)
    finally:
        sender.close()
        stop.set()
        worker.join(5.0)
    assert not worker.is_alive()
    stats = result["stats"]
    assert stats.fixes_seen == 8
    assert [f.time_utc.minute for f in logged] == [0, 2, 4, 6]
    assert stats.summary.lines_rejected == 1


# --- passagelog feed as a user runs it: a real process, a loopback UDP sender, Ctrl-C ---


@pytest.fixture
def logbook(tmp_path):
    pytest.importorskip("passagelog.store.logbook")
    from passagelog.model import Voyage
    from passagelog.store import Logbook

    path = tmp_path / "feed.sqlite"
    book = Logbook.open(path)
    book.add_voyage(Voyage("Live", departure_utc=datetime(2026, 5, 1, tzinfo=timezone.utc)))
    book.close()
    return path


def run(args, db, **kw):
    env = dict(os.environ, PASSAGELOG_DB=str(db))
    return subprocess.Popen([sys.executable, "-m", "passagelog", "feed", *args],
                            env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                            text=True, **kw)


def free_udp_port() -> int:
    s = socket.socket(socket.AF_INET, socket.SOCK_DGRAM)
    s.bind(("127.0.0.1", 0))
    port = s.getsockname()[1]
    s.close()
    return port


def test_udp_feed_logs_fixes_and_ctrl_c_exits_130_with_a_summary(logbook):
    from passagelog.store import Logbook

    port = free_udp_port()
    proc = run(["--udp", f"127.0.0.1:{port}", "--every", "2", "--voyage", "Live"], logbook,
               stdin=subprocess.DEVNULL)
    try:
        sender = socket.socket(socket.AF_INET, socket.SOCK_DGRAM)
        lines = track(7)
        deadline = time.monotonic() + 10.0
        book = Logbook.open(logbook)
        # send the first two until the first fix shows in the logbook (the process needs a
        # moment to bind; repeats of an epoch already seen are dropped and counted)
        while time.monotonic() < deadline:
            for line in lines[:2]:
                sender.sendto(line.encode(), ("127.0.0.1", port))
            time.sleep(0.1)
            if book.latest_fix("Live") is not None:
                break
        for line in lines[2:] + [b"\x00garbage\r\n".decode("latin-1"), lines[6][:-4] + "00\r\n"]:
            sender.sendto(line.encode("latin-1"), ("127.0.0.1", port))
        time.sleep(0.5)
        sender.close()
    finally:
        proc.send_signal(signal.SIGINT)
        out, err = proc.communicate(timeout=10)
    assert proc.returncode == 130, err
    assert out == ""  # stdout carries data only; this command has none
    assert "fixes logged:" in err and "checksum mismatch" in err
    fixes = book.fixes("Live")
    book.close()
    assert [f.time_utc.minute for f in fixes] == [0, 2, 4]  # minute 6 still open at Ctrl-C
    assert all(f.remarks.startswith("feed: ") for f in fixes)


def test_stdin_feed_ends_with_the_stream(logbook):
    from passagelog.store import Logbook

    proc = run(["--stdin", "--every", "3", "--voyage", "Live", "-q"], logbook,
               stdin=subprocess.PIPE)
    out, err = proc.communicate("".join(track(7)) + "junk\n", timeout=20)
    assert proc.returncode == 0, err
    assert "fixes decoded: 7, fixes logged: 3" in err
    book = Logbook.open(logbook)
    assert [f.time_utc.minute for f in book.fixes("Live")] == [0, 3, 6]
    book.close()


def test_unknown_voyage_and_two_sources_are_refused(logbook):
    proc = run(["--stdin", "--voyage", "Nope"], logbook, stdin=subprocess.PIPE)
    _out, err = proc.communicate("", timeout=20)
    assert proc.returncode == 1 and "Nope" in err
    proc = run(["--stdin", "--udp", "10110", "--voyage", "Live"], logbook, stdin=subprocess.PIPE)
    _out, err = proc.communicate("", timeout=20)
    assert proc.returncode == 2 and "give one source" in err


def test_loopback_tcp_server_stream_split_across_packets():
    """A TCP stream has no message boundaries: sentences cut across sends are joined."""
    from passagelog.feed.sources import tcp_lines

    server = socket.socket(socket.AF_INET, socket.SOCK_STREAM)
    server.bind(("127.0.0.1", 0))
    server.listen(1)
    port = server.getsockname()[1]
    payload = "".join(track(5)).encode()

    def serve():
        conn, _ = server.accept()
        with conn:
            for i in range(0, len(payload), 17):  # 17-byte pieces: every sentence is cut
                conn.sendall(payload[i:i + 17])
                time.sleep(0.001)

    t = threading.Thread(target=serve)
    t.start()
    stop = threading.Event()
    logged = []
    stats = Feed(tcp_lines("127.0.0.1", port, stop, poll_s=0.05), logged.append,
                 LogPolicy(every_s=60)).run()  # ends when the server closes the stream
    t.join(5.0)
    server.close()
    assert stats.fixes_seen == 5 and stats.summary.lines_rejected == 0
    assert [f.time_utc.minute for f in logged] == [0, 1, 2, 3, 4]
