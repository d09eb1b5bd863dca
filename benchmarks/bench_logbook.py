"""Benchmark: import 1,000,000 NMEA fixes into a logbook, load them back, verify.

Targets (issue 3, 2-core machine): the whole import (read each RMC sentence with pynmea2,
make a Fix, store it with ``Logbook.add_fixes``) at most 1.5x the time of just parsing the
same sentences with pynmea2, measured in the same run; ``fix_arrays`` of the 1,000,000 fixes
fast enough for the TUI to open the logbook in 1 s.

    python benchmarks/bench_logbook.py [--fixes N] [--json]

Figures printed: the parse baseline, the whole import and its ratio to the baseline, the
store's own share per fix (``add_fixes`` of ready-made Fix objects), ``fix_arrays`` and
``verify`` times, and the file size.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
import tempfile
import time
from datetime import datetime, timedelta, timezone
from functools import reduce
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import pynmea2  # noqa: E402

from passagelog.model import Craft, Fix, Voyage  # noqa: E402
from passagelog.store import Logbook  # noqa: E402

T0 = datetime(2026, 5, 1, tzinfo=timezone.utc)


def sentences(n: int) -> list[str]:
    """``n`` RMC sentences a second apart along a track at about 12 kn."""
    out = []
    for i in range(n):
        t = T0 + timedelta(seconds=i)
        lat = 10.0 + i * 0.0033 / 60 % 70
        lon = -30.0 + (i * 0.0001) % 60
        lat_d, lat_m = int(lat), (lat - int(lat)) * 60
        lon_d, lon_m = int(abs(lon)), (abs(lon) - int(abs(lon))) * 60
        body = (f"GPRMC,{t:%H%M%S}.00,A,{lat_d:02d}{lat_m:07.4f},N,{lon_d:03d}{lon_m:07.4f},"
                f"{'W' if lon < 0 else 'E'},12.0,045.0,{t:%d%m%y},,,A")
        cs = reduce(lambda a, c: a ^ ord(c), body, 0)
        out.append(f"${body}*{cs:02X}")
    return out


def parse_only(lines: list[str]) -> None:
    for line in lines:
        pynmea2.parse(line)


def fixes_from(lines: list[str]):
    for line in lines:
        m = pynmea2.parse(line)
        yield Fix(m.datetime.replace(tzinfo=timezone.utc), m.latitude, m.longitude,
                  sog_kn=m.spd_over_grnd, cog=m.true_course, fix_mode=m.mode_indicator,
                  source=line)


class Timer:
    """Wall and CPU seconds spent in ``with`` blocks, summed."""

    def __init__(self):
        self.wall = self.cpu = 0.0

    def __enter__(self):
        self._w, self._c = time.perf_counter(), time.process_time()

    def __exit__(self, *exc):
        self.wall += time.perf_counter() - self._w
        self.cpu += time.process_time() - self._c


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--fixes", type=int, default=1_000_000)
    ap.add_argument("--chunk", type=int, default=100_000,
                    help="phases alternate chunk by chunk, so that a busy machine slows "
                         "them alike")
    ap.add_argument("--json", action="store_true")
    args = ap.parse_args()
    n = args.fixes
    lines = sentences(n)
    parse, whole, store = Timer(), Timer(), Timer()
    res: dict = {"fixes": n}
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "store.sqlite"
        with Logbook.open(Path(tmp) / "import.sqlite") as imp, Logbook.open(path) as book:
            for b in (imp, book):
                craft = b.add_craft(Craft("Bench", max_speed_kn=30))
                b.add_voyage(Voyage("V", craft_id=craft.craft_id))
            for start in range(0, n, args.chunk):
                part = lines[start:start + args.chunk]
                with parse:
                    parse_only(part)
                with whole:
                    imp.add_fixes("V", fixes_from(part))
                ready = list(fixes_from(part))
                with store:
                    book.add_fixes("V", ready)
        with Logbook.open(path) as book:  # a fresh connection, as the TUI opens it
            t = time.perf_counter()
            arr = book.fix_arrays("V")
            res["fix_arrays_s"] = time.perf_counter() - t
            assert len(arr) == n
            t = time.perf_counter()
            report = book.verify()
            res["verify_s"] = time.perf_counter() - t
            assert report.ok
        res["file_mb"] = sum(os.path.getsize(p) for p in Path(tmp).glob("store.sqlite*")) / 1e6
    for name, tm in (("parse", parse), ("import", whole), ("store", store)):
        res[f"{name}_s"], res[f"{name}_cpu_s"] = tm.wall, tm.cpu
    res["import_ratio"] = whole.wall / parse.wall
    res["import_ratio_cpu"] = whole.cpu / parse.cpu
    if args.json:
        print(json.dumps(res))
        return
    us = 1e6 / n
    print(f"fixes            {n:,} (phases alternate in chunks of {args.chunk:,})")
    print(f"parse baseline   {parse.wall:.2f} s wall, {parse.cpu:.2f} s CPU "
          f"({parse.cpu * us:.1f} us/line CPU, pynmea2.parse only)")
    print(f"whole import     {whole.wall:.2f} s wall, {whole.cpu:.2f} s CPU "
          f"({whole.cpu * us:.1f} us/line CPU: parse, read the fields, Fix, add_fixes)")
    print(f"ratio            {res['import_ratio']:.2f}x wall, {res['import_ratio_cpu']:.2f}x "
          "CPU the parse (target <= 1.5x): "
          + ("met" if res["import_ratio"] <= 1.5 else "NOT met"))
    print(f"store share      {store.wall:.2f} s wall, {store.cpu:.2f} s CPU "
          f"({store.cpu * us:.1f} us/fix CPU, add_fixes of ready Fix objects)")
    print(f"fix_arrays       {res['fix_arrays_s']:.3f} s for {n:,} fixes (TUI budget 1 s)")
    print(f"verify           {res['verify_s']:.2f} s")
    print(f"file             {res['file_mb']:.0f} MB")


if __name__ == "__main__":
    main()
