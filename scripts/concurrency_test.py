#!/usr/bin/env python3
"""One logbook, three writers and readers at once, for a fixed time:

* ``passagelog feed --udp 127.0.0.1:PORT`` fed by a loopback sender at RATE fixes a second
  (fix times one minute apart, ``--every 1``: every fix is logged);
* ``passagelog import`` of NMEA logs, one after another, each into its own voyage;
* ``passagelog review VOYAGE --table legs --format json`` over the feed's voyage in a loop.

Afterwards: no process printed a lock error or a traceback, every fix sent is stored exactly
once, each import is whole, ``PRAGMA integrity_check`` and ``passagelog verify`` are ok.
Measured, not asserted: how long each feed fix waited to be stored (from the sentence that
closes its epoch being sent to the fix being seen in the logbook), longest and median,
during an import and outside one.

    python scripts/concurrency_test.py --seconds 60 --rate 10     # the long form
    python scripts/concurrency_test.py --seconds 60 --import-lines 200000   # large imports
    python scripts/concurrency_test.py --seconds 8                 # a quick look

Only 127.0.0.1 is used; every process is stopped and reaped before the script ends. Prints a
JSON summary; exit status 1 when any check failed.
"""

from __future__ import annotations

import argparse
import json
import math
import signal
import socket
import sqlite3
import statistics
import sys
import tempfile
import threading
import time
from dataclasses import asdict, dataclass, field
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
import reliability_common as rc  # noqa: E402

LOCK_WORDS = ("locked", "busy", "Traceback")
#: How often the logbook is polled for newly stored feed fixes (the wait's resolution).
WATCH_POLL_S = 0.01


@dataclass
class Outcome:
    seconds: float
    rate: float
    sent: int = 0
    stored: int = 0
    lost: int = 0
    doubled: int = 0
    imports: int = 0
    imports_whole: int = 0
    import_fixes_each: int = 0
    reviews: int = 0
    reviews_ok: int = 0
    lock_errors: list = field(default_factory=list)
    problems: list = field(default_factory=list)
    feed_exit: int | None = None
    #: how long each fix waited to be stored: from the sentence that closes its epoch being
    #: sent to the fix being seen in the logbook (polled every WATCH_POLL_S), seconds
    wait_max_s: float | None = None
    wait_median_s: float | None = None
    wait_max_during_import_s: float | None = None
    wait_max_outside_import_s: float | None = None
    waits_over_1s: int = 0
    #: fixes whose closing sentence was sent while an import process ran
    fixes_during_import: int = 0
    import_max_s: float | None = None

    @property
    def ok(self) -> bool:
        return not (self.problems or self.lock_errors or self.lost or self.doubled)


def _watch(text: str, who: str, outcome: Outcome) -> None:
    for word in LOCK_WORDS:
        if word in text:
            outcome.lock_errors.append(f"{who}: {text.strip()[-300:]}")
            return


def run(work: Path, seconds: float, rate: float, import_lines: int, log=print) -> Outcome:
    out = Outcome(seconds, rate)
    db = work / "together.sqlite"
    max_imports = max(4, int(seconds))  # far more than run in the time (one is ~2 s)
    rc.make_logbook(db, ["Live"] + [f"imp-{k}" for k in range(1, max_imports + 1)])
    base = work / "base.nmea"
    out.import_fixes_each = rc.write_nmea_log(base, import_lines)
    port = rc.free_udp_port()
    feed = rc.start(db, "feed", "--udp", f"{rc.LOOPBACK}:{port}", "--voyage", "Live",
                    "--every", "1", "--course-change", "0", "-q")
    stop = threading.Event()
    threads: list[threading.Thread] = []
    sent_times: list[str] = []
    sent_at: list[float] = []  # monotonic time each sentence was sent
    stored_at: list[float] = []  # monotonic time each fix was first seen stored
    import_runs: list[tuple[float, float]] = []  # (start, end) of each import process
    watch_stop = threading.Event()
    watch: threading.Thread | None = None
    n_timed = 0
    try:
        sender = socket.socket(socket.AF_INET, socket.SOCK_DGRAM)
        # wait for the feed to bind: repeat the first two sentences until fix 0 is stored
        deadline = rc.Deadline(30.0)
        while deadline and rc.count_fixes(db, "Live") == 0 and feed.poll() is None:
            for i in (0, 1):
                t, lat, lon = rc.track_point(i, 60.0)
                sender.sendto(rc.rmc(t, lat, lon).encode(), (rc.LOOPBACK, port))
            time.sleep(0.05)
        if feed.poll() is not None:
            out.problems.append("the feed ended before it logged a fix")
            return out
        sent_times += [rc.track_point(i, 60.0)[0] for i in (0, 1)]
        sent_at += [math.nan, math.nan]  # repeated until the feed was up: no wait measured

        def send() -> None:
            i = 2
            period = 1.0 / rate
            next_at = time.monotonic()
            while not stop.is_set():
                t, lat, lon = rc.track_point(i, 60.0)
                sender.sendto(rc.rmc(t, lat, lon).encode(), (rc.LOOPBACK, port))
                sent_at.append(time.monotonic())
                sent_times.append(t)
                i += 1
                next_at += period
                stop.wait(max(0.0, next_at - time.monotonic()))

        def importer() -> None:
            k = 0
            while not stop.is_set() and k < max_imports:
                k += 1
                path = work / f"imp-{k}.nmea"
                rc.tagged_copy(base, path, f"run {k}")
                t_start = time.monotonic()
                proc = rc.start(db, "import", str(path), "--voyage", f"imp-{k}", "-q")
                try:
                    while proc.poll() is None and not stop.wait(0.01):
                        pass
                finally:
                    import_runs.append((t_start, time.monotonic()))
                    _o, err = rc.reap(proc, sig=signal.SIGKILL) if proc.poll() is None \
                        else proc.communicate()
                if proc.returncode == -signal.SIGKILL:
                    break  # still running at the end: not counted
                out.imports += 1
                _watch(err, f"import {k}", out)
                if proc.returncode != 0:
                    out.problems.append(f"import {k} exit {proc.returncode}: {err[-300:]}")
                elif rc.count_fixes(db, f"imp-{k}") == out.import_fixes_each:
                    out.imports_whole += 1
                path.unlink()

        def reviewer() -> None:
            while not stop.is_set():
                proc = rc.start(db, "review", "Live", "--table", "legs", "--format", "json")
                try:
                    o, err = proc.communicate(timeout=120)
                except Exception:  # noqa: BLE001 - reaped below whatever happened
                    o, err = rc.reap(proc)
                out.reviews += 1
                _watch(err, "review", out)
                if proc.returncode == 0:
                    try:
                        json.loads(o)
                        out.reviews_ok += 1
                    except ValueError:
                        out.problems.append(f"review printed no JSON: {o[:200]!r}")
                else:
                    out.problems.append(f"review exit {proc.returncode}: {err[-300:]}")

        def watcher() -> None:
            conn = sqlite3.connect(f"file:{db}?mode=ro", uri=True, timeout=30)
            try:
                q = ("SELECT count(*) FROM fix f JOIN voyage v ON v.voyage_id = f.voyage_id "
                     "WHERE v.name = 'Live'")
                while not watch_stop.is_set():
                    n = conn.execute(q).fetchone()[0]
                    now = time.monotonic()
                    while len(stored_at) < n:
                        stored_at.append(now)
                    watch_stop.wait(WATCH_POLL_S)
            finally:
                conn.close()

        watch = threading.Thread(target=watcher, name="watcher", daemon=True)
        watch.start()
        for target in (send, importer, reviewer):
            th = threading.Thread(target=target, name=target.__name__, daemon=True)
            th.start()
            threads.append(th)
        stop.wait(seconds)
    finally:
        stop.set()
        for th in threads:
            th.join(180)
        n_timed = len(sent_at)  # sentences sent by the sender (the closer below is not)
        try:
            # one more sentence closes the last epoch; then wait until everything is stored
            if feed.poll() is None and sent_times:
                i = len(sent_times)
                t, lat, lon = rc.track_point(i, 60.0)
                closer = rc.rmc(t, lat, lon).encode()
                deadline = rc.Deadline(30.0)
                while deadline and rc.count_fixes(db, "Live") < len(sent_times):
                    sender.sendto(closer, (rc.LOOPBACK, port))
                    time.sleep(0.1)
            sender.close()
        finally:
            watch_stop.set()
            if watch is not None:
                watch.join(30)
            _o, err = rc.reap(feed, sig=signal.SIGINT)
    _waits(out, sent_at[:n_timed], stored_at, import_runs)
    out.feed_exit = feed.returncode
    _watch(err, "feed", out)
    if feed.returncode != 130:
        out.problems.append(f"feed exit {feed.returncode} (130 expected after Ctrl-C): "
                            f"{err[-300:]}")
    stored = rc.fix_times(db, "Live")
    sent = [s.strftime("%Y-%m-%dT%H:%M:%SZ") for s in sent_times]
    out.sent, out.stored = len(sent), len(stored)
    out.doubled = len(stored) - len(set(stored))
    out.lost = len(set(sent) - set(stored))
    if set(stored) - set(sent):
        out.problems.append("stored fixes that were never sent")
    ic = rc.integrity_check(db)
    if ic != "ok":
        out.problems.append(f"integrity_check: {ic}")
    v = rc.run(db, "verify")
    if v.returncode != 0:
        out.problems.append(f"verify exit {v.returncode}: {v.stderr.strip()[-300:]}")
    if out.imports and out.imports_whole != out.imports:
        out.problems.append(f"{out.imports - out.imports_whole} imports not whole")
    log(f"sent {out.sent}, stored {out.stored}, lost {out.lost}, doubled {out.doubled}; "
        f"imports {out.imports} ({out.imports_whole} whole, longest {out.import_max_s} s); "
        f"reviews {out.reviews} ({out.reviews_ok} ok); lock errors {len(out.lock_errors)}; "
        f"feed write wait: median {out.wait_median_s} s, longest {out.wait_max_s} s "
        f"(during an import {out.wait_max_during_import_s} s, outside "
        f"{out.wait_max_outside_import_s} s), {out.waits_over_1s} over 1 s")
    return out


def _waits(out: Outcome, sent_at: list[float], stored_at: list[float],
           import_runs: list[tuple[float, float]]) -> None:
    """Fix j is logged when sentence j+1 (which closes its epoch) arrives: its wait is from
    that sentence's sending to the fix being seen stored."""
    waits, during = [], []
    for j in range(min(len(stored_at), len(sent_at) - 1)):
        sent = sent_at[j + 1]
        if math.isnan(sent):
            continue
        waits.append(max(0.0, stored_at[j] - sent))
        during.append(any(a <= sent <= b for a, b in import_runs))
    if import_runs:
        out.import_max_s = round(max(b - a for a, b in import_runs), 2)
    if not waits:
        return
    out.wait_max_s = round(max(waits), 3)
    out.wait_median_s = round(statistics.median(waits), 3)
    inside = [w for w, d in zip(waits, during) if d]
    outside = [w for w, d in zip(waits, during) if not d]
    out.fixes_during_import = len(inside)
    out.wait_max_during_import_s = round(max(inside), 3) if inside else None
    out.wait_max_outside_import_s = round(max(outside), 3) if outside else None
    out.waits_over_1s = sum(w > 1.0 for w in waits)


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--seconds", type=float, default=60.0)
    ap.add_argument("--rate", type=float, default=10.0, help="fixes per second sent")
    ap.add_argument("--import-lines", type=int, default=20_000)
    ap.add_argument("--dir", help="work folder (default: a new temporary folder)")
    args = ap.parse_args(argv)
    with tempfile.TemporaryDirectory(prefix="passagelog-together-") as tmp:
        work = Path(args.dir) if args.dir else Path(tmp)
        work.mkdir(parents=True, exist_ok=True)
        outcome = run(work, args.seconds, args.rate, args.import_lines)
    print(json.dumps(dict(asdict(outcome), ok=outcome.ok), indent=2))
    return 0 if outcome.ok else 1


if __name__ == "__main__":
    sys.exit(main())
