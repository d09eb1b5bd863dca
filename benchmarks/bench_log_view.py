"""The Log view's fix list on a logbook of 1,000,000 fixes: open it, page it, go to a time.

Measured in one run on one machine, against a baseline of the same run: the time to open
the logbook and load its fix arrays (``Logbook.open`` + ``fix_arrays``, the baseline of
``bench_tui.py``). Reported: from switching to the Log view (at the app's start, while the
Watch works on the whole voyage) until its fix list is on show (the latest rows and the
header counting them); then, the Watch done, the cost of a page move that reads past the
rows held (PageUp, a keyset read; median and worst of 200), going to a time in the middle
of the voyage (a read and a count of the records before it), and the longest the UI went
without answering (an event-loop probe every 10 ms). For reference, reading every fix
record of the voyage (what the first load of the list used to do) is timed too.
Target: the Log view on screen within 1 s, a page move well under 0.1 s.

    python benchmarks/bench_log_view.py [--fixes N] [--keep PATH]

The logbook is built once (by ``bench_tui.build_logbook``) in a temp directory, or kept at
``--keep`` and reused; building it is not timed. No test depends on these figures.
"""

from __future__ import annotations

import asyncio
import statistics
import sys
import time
from datetime import datetime, timezone
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "benchmarks"))

from bench_tui import DAYS, T0, baseline, bench_logbook, stall_probe  # noqa: E402


def read_everything(path: Path) -> float:
    from passagelog.store import Logbook

    t0 = time.perf_counter()
    book = Logbook.open(path)
    n = len(book.fixes("Bench voyage", history=True))
    elapsed = time.perf_counter() - t0
    book.close()
    assert n > 0
    return elapsed


async def run_app(path: Path) -> dict:
    from passagelog.tui.app import PassagelogApp
    from passagelog.tui.session import Session

    out: dict = {}
    app = PassagelogApp(session=Session(path, voyage="Bench voyage"), watch_poll_s=3600.0)
    longest = [0.0]

    probe = lambda: stall_probe(longest)  # noqa: E731

    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.pause()
        task = asyncio.create_task(probe())
        # switch the way F3 does (Pilot.press would also wait for the app to go idle)
        t0 = time.perf_counter()
        await app.action_view("log")
        log = app.query_one("#log-view")
        while not log.shown:
            await asyncio.sleep(0.002)
        await pilot.pause()
        out["open_s"] = time.perf_counter() - t0
        out["total"] = log.total
        out["held"] = len(log.shown)
        out["open_stall_s"] = longest[0]
        # the Watch starts on the whole voyage when the app opens: let it finish, so that
        # what follows times the list alone
        watch = app.query_one("#watch-view")
        while watch.state is None or watch.state.status is None:
            await asyncio.sleep(0.01)
        await app.workers.wait_for_complete()
        await pilot.pause()
        longest[0] = 0.0
        table = app.query_one("#fix-table")
        page = table.page_rows()
        moves = []
        for _ in range(200):
            table.move_cursor(row=0)  # the next PageUp reads past the rows held
            t0 = time.perf_counter()
            log.move_by(-page)
            moves.append(time.perf_counter() - t0)
            await pilot.pause()
        out["page_median_s"] = statistics.median(moves)
        out["page_max_s"] = max(moves)
        out["after_pages"] = log.first_place
        out["page_stall_s"] = longest[0]
        longest[0] = 0.0
        when = datetime.fromtimestamp(T0 + DAYS * 86400.0 / 2, timezone.utc)
        t0 = time.perf_counter()
        log.load(where="from", when=when)
        await app.workers.wait_for_complete()
        await pilot.pause()
        out["goto_s"] = time.perf_counter() - t0
        out["goto_place"] = log.first_place + table.cursor_row
        task.cancel()
        out["goto_stall_s"] = longest[0]
    return out


def main(argv=None) -> int:
    path, tmp = bench_logbook(argv, __doc__.split("\n\n")[0])
    base = min(baseline(path) for _ in range(2))
    everything = read_everything(path)
    r = asyncio.run(run_app(path))
    print(f"logbook: {r['total']:,} fix records; the list holds {r['held']} of them")
    print(f"baseline: open + fix_arrays          {base:6.2f} s")
    print(f"reference: read every fix record     {everything:6.2f} s  = "
          f"{everything / base:5.1f}x baseline  (the list's first load before paging)")
    v = r["open_s"]
    print(f"Log fix list shown after switching   {v:6.2f} s  = {v / base:5.1f}x baseline  "
          f"(target <= 1 s: {'met' if v <= 1.0 else 'NOT met'})")
    print(f"page move past the rows held          {r['page_median_s'] * 1000:5.1f} ms median, "
          f"{r['page_max_s'] * 1000:.1f} ms worst of 200 "
          f"(target < 100 ms: {'met' if r['page_max_s'] < 0.1 else 'NOT met'})")
    print(f"go to mid-voyage (read + count)       {r['goto_s']:6.2f} s  "
          f"(record {r['goto_place'] + 1:,})")
    print(f"longest UI stall (10 ms probe)        {r['open_stall_s']:6.2f} s opening (the Watch "
          f"working too), {r['page_stall_s']:.2f} s paging, {r['goto_stall_s']:.2f} s going to "
          "a time")
    if tmp is not None:
        tmp.cleanup()
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
