"""Deciding which live fixes go into the logbook, and counting everything else.

A :class:`Feed` reads lines from a source (see :mod:`passagelog.feed.sources`), turns them
into fixes with the NMEA 0183 reader of :mod:`passagelog.formats.nmea` (the one strict
parser of the project), and writes a fix to the logbook

* at the first good fix,
* every ``every_s`` seconds of fix time after the last one logged,
* on demand (:meth:`Feed.request_fix`, safe from a signal handler or another thread): the
  next good fix is logged,
* on a large course change: COG differs from the COG of the last logged fix by at least
  ``course_change_deg`` while making way (SOG at least ``min_sog_kn``; COG of a craft that
  is hardly moving is noise, common practice).

Garbage, bad checksums and over-long lines are counted by the reader; lines arriving
faster than ``max_lines_per_s`` (a burst from a misconfigured multiplexer or a loop) are
dropped and counted here. None of it is fatal; neither is a write the logbook refuses (it is
counted and reported through ``on_event``).
"""

from __future__ import annotations

import threading
import time
from collections import Counter
from dataclasses import dataclass, field
from typing import Callable, Iterable, Iterator

from passagelog.errors import PassagelogError
from passagelog.model import Fix

REASON_FIRST = "first fix"
REASON_INTERVAL = "interval"
REASON_DEMAND = "on demand"
REASON_COURSE = "course change"


@dataclass(frozen=True)
class LogPolicy:
    every_s: float = 600.0
    course_change_deg: float | None = 30.0
    min_sog_kn: float = 1.0

    def reason(self, fix: Fix, last: Fix | None) -> str | None:
        """Why ``fix`` should be logged after ``last`` (the last one logged), or None."""
        if last is None:
            return REASON_FIRST
        elapsed = (fix.time_utc - last.time_utc).total_seconds()
        if elapsed >= self.every_s or elapsed < 0:  # < 0: the receiver's clock jumped back
            return REASON_INTERVAL
        if (self.course_change_deg is not None and fix.cog is not None
                and last.cog is not None and (fix.sog_kn or 0.0) >= self.min_sog_kn):
            change = abs((fix.cog - last.cog + 180.0) % 360.0 - 180.0)
            if change >= self.course_change_deg:
                return REASON_COURSE
        return None


@dataclass
class FeedStats:
    lines: int = 0
    burst_dropped: int = 0
    fixes_seen: int = 0
    logged: Counter = field(default_factory=Counter)
    write_failures: int = 0
    summary: object | None = None  # the NMEA reader's ReadSummary

    @property
    def fixes_logged(self) -> int:
        return sum(self.logged.values())

    def lines_text(self) -> list[str]:
        """The run in a few plain lines (for stderr at the end of a run)."""
        s = self.summary
        out = [f"lines read: {self.lines}, fixes decoded: {self.fixes_seen}, "
               f"fixes logged: {self.fixes_logged}"
               + (" (" + ", ".join(f"{k} {v}" for k, v in sorted(self.logged.items())) + ")"
                  if self.logged else "")]
        if s is not None and getattr(s, "rejected", None):
            out.append("lines rejected: " + ", ".join(
                f"{reason} {n}" for reason, n in s.rejected.most_common()))
        if s is not None and getattr(s, "dropped", None):
            out.append("good data not used: " + ", ".join(
                f"{reason} {n}" for reason, n in s.dropped.most_common()))
        if self.burst_dropped:
            out.append(f"lines dropped in bursts: {self.burst_dropped}")
        if self.write_failures:
            out.append(f"fixes the logbook refused: {self.write_failures}")
        return out


class Feed:
    """Live lines in, chosen fixes out to ``write`` (usually the logbook's add_fix)."""

    def __init__(self, lines: Iterable[str], write: Callable[[Fix], object],
                 policy: LogPolicy = LogPolicy(), *, max_lines_per_s: float = 200.0,
                 on_event: Callable[[str], None] | None = None,
                 monotonic: Callable[[], float] = time.monotonic):
        self._lines = lines
        self._write = write
        self.policy = policy
        self.max_lines_per_s = max_lines_per_s
        self._on_event = on_event or (lambda text: None)
        self._monotonic = monotonic
        self._demand = threading.Event()
        self.stats = FeedStats()
        self.last_logged: Fix | None = None

    def request_fix(self) -> None:
        """Log the next good fix whatever the interval (signal-handler safe)."""
        self._demand.set()

    def _metered(self) -> Iterator[str]:
        """The lines, less those over the rate limit (a token bucket of one second)."""
        rate = self.max_lines_per_s
        tokens = rate
        last = self._monotonic()
        stats = self.stats
        for line in self._lines:
            stats.lines += 1
            now = self._monotonic()
            tokens = min(rate, tokens + (now - last) * rate)
            last = now
            if tokens < 1.0:
                stats.burst_dropped += 1
                if stats.burst_dropped == 1 or stats.burst_dropped % 1000 == 0:
                    self._on_event(f"input faster than {rate:g} lines/s: dropping the excess "
                                   f"({stats.burst_dropped} so far)")
                continue
            tokens -= 1.0
            yield line

    def run(self) -> FeedStats:
        """Read until the source ends (or its stop event is set); returns the counts."""
        from passagelog.formats._common import ReadSummary
        from passagelog.formats.nmea import NmeaReader

        summary = ReadSummary("live feed")
        self.stats.summary = summary
        for fix in NmeaReader(self._metered(), summary):
            self.stats.fixes_seen += 1
            reason = REASON_DEMAND if self._demand.is_set() else None
            reason = reason or self.policy.reason(fix, self.last_logged)
            if reason is None:
                continue
            if reason == REASON_DEMAND:
                self._demand.clear()
            self._log(fix, reason)
        return self.stats

    def _log(self, fix: Fix, reason: str) -> None:
        from dataclasses import replace

        remark = f"feed: {reason}"
        fix = replace(fix, remarks=f"{fix.remarks}; {remark}" if fix.remarks else remark)
        try:
            self._write(fix)
        except PassagelogError as exc:
            self.stats.write_failures += 1
            self._on_event(f"fix at {fix.time_utc.isoformat()} not logged: {exc}")
            return
        self.last_logged = fix
        self.stats.logged[reason] += 1
        self._on_event(f"logged fix {fix.time_utc.strftime('%Y-%m-%d %H:%M:%SZ')} ({reason})")
