#!/usr/bin/env python3
"""Kill passagelog (SIGKILL) at random moments during a large import and during feed
logging, then check the logbook: ``PRAGMA integrity_check`` is ok, ``passagelog verify`` is
ok, each import is wholly there or wholly absent, and the feed lost at most the fix in
flight.

    python scripts/crash_test.py --kills 20 --lines 200000 --seed 1   # the long form
    python scripts/crash_test.py --kills 5 --lines 20000              # a quick look

Import kills fall inside the import: first, unkilled imports measure how long the write
transaction lasts (the logbook's write lock seen taken, then released; the shortest of
three), and each kill run waits for its own import to take the lock and kills it a moment
drawn uniformly inside that duration. Feed kills fall uniformly within the first seconds of
logging. Seeded: the same seed draws the same offsets. Only 127.0.0.1 is used; every process
started is killed and reaped before the next starts. Prints one line per kill, a JSON
summary and how many kills landed mid-import and mid-feed; exit status 1 when any check
failed.
"""

from __future__ import annotations

import argparse
import json
import random
import socket
import subprocess
import sys
import tempfile
import threading
import time
from dataclasses import asdict, dataclass, field
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent))
import reliability_common as rc  # noqa: E402


@dataclass
class Result:
    kind: str
    kills: int = 0
    completed_before_kill: int = 0
    absent_after_kill: int = 0
    partial: int = 0
    integrity_failures: int = 0
    verify_failures: int = 0
    lost_counts: list = field(default_factory=list)
    doubled: int = 0
    problems: list = field(default_factory=list)
    seconds: float = 0.0
    #: kills that found the process at work: an import inside its write transaction, not
    #: yet committed; a feed running and logging (at least one fix of the run stored)
    mid_run: int = 0
    #: import: the unkilled run's phases (seconds from process start); kill offsets into
    #: the write transaction. feed: seconds from process start to each kill
    calibration: dict = field(default_factory=dict)
    kill_delays: list = field(default_factory=list)

    @property
    def ok(self) -> bool:
        return not (self.partial or self.integrity_failures or self.verify_failures
                    or self.doubled or self.problems)


def check_logbook(db: Path, result: Result, what: str) -> None:
    ic = rc.integrity_check(db)
    if ic != "ok":
        result.integrity_failures += 1
        result.problems.append(f"{what}: integrity_check: {ic}")
    v = rc.run(db, "verify", "--json")
    if v.returncode != 0:
        result.verify_failures += 1
        result.problems.append(f"{what}: verify exit {v.returncode}: {v.stderr.strip()[:300]}")


# ---------------------------------------------------------------------------------------------
# import

#: Unkilled imports timed before the kills; the shortest write transaction sets the window.
CALIBRATION_RUNS = 3


def time_import(db: Path, path: Path, voyage: str) -> tuple[dict, subprocess.Popen, str]:
    """One import run to its end, watched: seconds from the start of the process to the
    moment its write transaction was seen to begin (the logbook's write lock taken), to the
    commit (the lock released) and to the exit."""
    probe = rc.lock_probe(db)
    try:
        t0 = time.monotonic()
        proc = rc.start(db, "import", str(path), "--voyage", voyage, "-q")
        try:
            t_begin = rc.wait_lock(probe, proc, held=True)
            t_commit = rc.wait_lock(probe, proc, held=False) if t_begin else None
            _out, err = proc.communicate(timeout=300)
        finally:
            if proc.poll() is None:
                rc.reap(proc)
        t_exit = time.monotonic()
    finally:
        probe.close()
    rel = (lambda t: None if t is None else round(t - t0, 3))  # noqa: E731
    return {"begin_s": rel(t_begin), "commit_s": rel(t_commit), "exit_s": rel(t_exit)}, \
        proc, err


def crash_imports(work: Path, kills: int, lines: int, rng: random.Random,
                  log=print) -> Result:
    """First imports, not killed, measure how long the write transaction lasts (from the
    write lock taken to the commit); the shortest of :data:`CALIBRATION_RUNS` is kept, since
    the transaction is short (the file is read and checked before the lock is taken) and a
    busy machine stretches one run more than another. Each kill run then waits until its own
    import has taken the lock and kills it a moment drawn uniformly inside that duration, so
    the kills fall during the import. A kill that finds the import committed (this run was
    quicker still) counts as after the commit."""
    result = Result("import")
    started = time.monotonic()
    db = work / "import.sqlite"
    calib_voyages = [f"imp-0-{c}" for c in range(1, CALIBRATION_RUNS + 1)]
    voyages = calib_voyages + [f"imp-{k}" for k in range(1, kills + 1)]
    rc.make_logbook(db, voyages, with_plan=False)
    base = work / "base.nmea"
    expected = rc.write_nmea_log(base, lines)
    runs = []
    for name in calib_voyages:
        calib = work / f"{name}.nmea"
        rc.tagged_copy(base, calib, f"run {name}")
        phases, done, err = time_import(db, calib, name)
        if (done.returncode != 0 or rc.count_fixes(db, name) != expected
                or phases["begin_s"] is None or phases["commit_s"] is None):
            result.problems.append(f"calibration import failed: {phases} {err.strip()[:300]}")
            return result
        phases["transaction_s"] = round(phases["commit_s"] - phases["begin_s"], 3)
        runs.append(phases)
        log(f"import of {lines} lines ({expected} fixes): write transaction from "
            f"{phases['begin_s']:.2f} s to {phases['commit_s']:.2f} s "
            f"({phases['transaction_s']:.2f} s), exit at {phases['exit_s']:.2f} s")
        calib.unlink()
    result.calibration = dict(min(runs, key=lambda r: r["transaction_s"]),
                              transactions_s=[r["transaction_s"] for r in runs])
    txn_s = result.calibration["transaction_s"]
    probe = rc.lock_probe(db)
    try:
        for k in range(1, kills + 1):
            name = f"imp-{k}"
            path = work / f"{name}.nmea"
            rc.tagged_copy(base, path, f"run {k}")
            delay = rng.uniform(0.0, txn_s)
            proc = rc.start(db, "import", str(path), "--voyage", name, "-q")
            try:
                t_begin = rc.wait_lock(probe, proc, held=True)
                if t_begin is not None:
                    time.sleep(max(0.0, t_begin + delay - time.monotonic()))
                finished_first = proc.poll() is not None
            finally:
                _out, err = rc.reap(proc)  # SIGKILL if still running
            result.kills += 1
            result.kill_delays.append(round(delay, 3))
            n = rc.count_fixes(db, name)
            recorded = path.name in rc.imports_named(db)
            if n == expected and recorded:
                state = ("whole (ended before the kill)" if finished_first
                         else "whole (killed after the commit)")
                result.completed_before_kill += 1
            elif n == 0 and not recorded:
                state = "absent (killed mid-import)"
                result.absent_after_kill += 1
            else:
                state = f"PARTIAL ({n} of {expected} fixes, import record {recorded})"
                result.partial += 1
                result.problems.append(f"kill {k}: {state}")
            if t_begin is None:
                result.problems.append(f"kill {k}: the import's write transaction was not "
                                       "seen to begin")
            elif not finished_first and n == 0:
                result.mid_run += 1
            if finished_first and proc.returncode not in (0,):
                result.problems.append(f"kill {k}: import ended by itself with exit "
                                       f"{proc.returncode}: {err.strip()[:300]}")
            check_logbook(db, result, f"import kill {k}")
            log(f"import kill {k:2d} {delay:5.2f} s into the transaction: {state}")
            path.unlink()
    finally:
        probe.close()
    result.seconds = round(time.monotonic() - started, 1)
    return result


# ---------------------------------------------------------------------------------------------
# feed


#: Feed kills fall uniformly within this many seconds after the feed began logging.
FEED_LOGGING_S = 3.0


def crash_feed(work: Path, kills: int, rng: random.Random, log=print,
               max_fixes: int = 5000) -> Result:
    """Per kill: start the feed on a fresh UDP port, send fixes one minute of fix time apart
    (``--every 1``: each is logged), each only after the one before it is in the logbook
    (stop and wait), SIGKILL at a moment drawn uniformly within :data:`FEED_LOGGING_S`
    after the first fix is stored (so every kill falls while the feed is logging), then
    compare what was sent with what was stored. The feed logs an epoch when the next
    sentence closes it, so the last sentence sent is never a fix yet; the one before it may
    be the write in flight."""
    result = Result("feed")
    started = time.monotonic()
    db = work / "feed.sqlite"
    voyages = [f"feed-{k}" for k in range(1, kills + 1)]
    rc.make_logbook(db, voyages)
    fix_index = 0  # fix times go on across runs (one voyage per run)
    for k in range(1, kills + 1):
        voyage = f"feed-{k}"
        port = rc.free_udp_port()
        proc = rc.start(db, "feed", "--udp", f"{rc.LOOPBACK}:{port}", "--voyage", voyage,
                        "--every", "1", "--course-change", "0", "-q")
        sent: list[str] = []
        sender = socket.socket(socket.AF_INET, socket.SOCK_DGRAM)
        t_start = time.monotonic()
        logging_s = rng.uniform(0.0, FEED_LOGGING_S)  # kill this long after logging began
        kill_at = None
        running = False
        stop = threading.Event()
        try:
            # the process needs a moment to bind: repeat the first sentence until it shows
            first_t, lat, lon = rc.track_point(fix_index, 60.0)
            deadline = rc.Deadline(20.0)
            while deadline and rc.count_fixes(db, voyage) == 0 and proc.poll() is None:
                for i in (0, 1):
                    t, lat, lon = rc.track_point(fix_index + i, 60.0)
                    sender.sendto(rc.rmc(t, lat, lon).encode(), (rc.LOOPBACK, port))
                time.sleep(0.05)
            sent = [rc.track_point(fix_index + i, 60.0)[0] for i in (0, 1)]
            kill_at = time.monotonic() + logging_s
            i = 2
            while time.monotonic() < kill_at and proc.poll() is None and i < max_fixes:
                # stop and wait: fix i-1 closes (and is logged) when sentence i arrives
                t, lat, lon = rc.track_point(fix_index + i, 60.0)
                sender.sendto(rc.rmc(t, lat, lon).encode(), (rc.LOOPBACK, port))
                sent.append(t)
                wait = rc.Deadline(5.0)
                while wait and time.monotonic() < kill_at and rc.count_fixes(db, voyage) < i:
                    time.sleep(0.002)
                i += 1
            if kill_at is not None:
                time.sleep(max(0.0, kill_at - time.monotonic()))
            running = proc.poll() is None
        finally:
            stop.set()
            sender.close()
            t_kill = time.monotonic() - t_start
            _out, err = rc.reap(proc)
        result.kills += 1
        result.kill_delays.append(round(t_kill, 3))
        fix_index += len(sent) + 1
        stored = rc.fix_times(db, voyage)
        sent_text = [s.strftime("%Y-%m-%dT%H:%M:%SZ") for s in sent]
        if len(set(stored)) != len(stored):
            result.doubled += 1
            result.problems.append(f"feed kill {k}: a fix stored twice")
        # in time order: while the feed starts, sentences 0 and 1 are repeated until one is
        # stored, and when it binds between them it hears 1 before 0 (and logs them so)
        if sorted(stored) != sent_text[:len(stored)]:
            result.problems.append(f"feed kill {k}: stored fixes are not the first ones sent "
                                   f"({stored[:3]}... vs {sent_text[:3]}...)")
        lost = len(sent) - len(stored)
        result.lost_counts.append(lost)
        # the last sentence is an open epoch (never a fix yet); at most one more in flight
        if lost > 2:
            result.problems.append(f"feed kill {k}: {lost} of {len(sent)} sentences not "
                                   f"stored (at most the open epoch and the write in flight)")
        if proc.returncode not in (-9, 0):
            result.problems.append(f"feed kill {k}: exit {proc.returncode}: {err[-300:]}")
        if running and stored:
            result.mid_run += 1
        else:
            result.problems.append(f"feed kill {k}: the feed was not logging at the kill")
        check_logbook(db, result, f"feed kill {k}")
        log(f"feed kill {k:2d} at {t_kill:4.2f} s ({logging_s:4.2f} s of logging): sent "
            f"{len(sent)}, stored {len(stored)} (lost {lost})")
    result.seconds = round(time.monotonic() - started, 1)
    return result


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--kills", type=int, default=20, help="kills of each kind (default 20)")
    ap.add_argument("--lines", type=int, default=200_000, help="lines of the NMEA import")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--only", choices=["import", "feed"], help="run one kind only")
    ap.add_argument("--dir", help="work folder (default: a new temporary folder)")
    args = ap.parse_args(argv)
    rng = random.Random(args.seed)
    results = []
    with tempfile.TemporaryDirectory(prefix="passagelog-crash-") as tmp:
        work = Path(args.dir) if args.dir else Path(tmp)
        work.mkdir(parents=True, exist_ok=True)
        if args.only in (None, "import"):
            results.append(crash_imports(work, args.kills, args.lines, rng))
        if args.only in (None, "feed"):
            results.append(crash_feed(work, args.kills, rng))
    summary = {"seed": args.seed, "lines": args.lines,
               "results": [dict(asdict(r), ok=r.ok) for r in results]}
    print(json.dumps(summary, indent=2))
    for r in results:
        where = "mid-import" if r.kind == "import" else "mid-feed"
        print(f"{r.kind}: {r.kills} kills, {r.mid_run} {where}, {r.seconds} s", file=sys.stderr)
    return 0 if all(r.ok for r in results) else 1


if __name__ == "__main__":
    sys.exit(main())
