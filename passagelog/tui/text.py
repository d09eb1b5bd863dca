"""How the TUI writes figures: NM, courses, durations, UTC and ship's time, positions.

Plain functions (no Textual), so they are tested on their own and every view writes a
figure the same way. Missing values print as an en dash.
"""

from __future__ import annotations

import math
from datetime import datetime, timedelta, timezone

from passagelog.nav.units import NM_M

DASH = "–"


def nm(distance_m: float | None, decimals: int = 1) -> str:
    if distance_m is None or not math.isfinite(distance_m):
        return DASH
    return f"{distance_m / NM_M:.{decimals}f}"


def nm_opt(distance_m: float | None, decimals: int = 2) -> str:
    """A setting in NM for an editor field: empty when unset, no trailing zeros."""
    if distance_m is None:
        return ""
    return f"{distance_m / NM_M:.{decimals}f}".rstrip("0").rstrip(".")


def num_opt(value: float | None) -> str:
    return "" if value is None else f"{value:g}"


def course(deg: float | None) -> str:
    if deg is None or not math.isfinite(deg):
        return DASH
    c = round(deg, 1) % 360.0
    return f"{c:05.1f}°"


def duration(seconds: float | None) -> str:
    """``hh:mm`` (``d hh:mm`` beyond a day), rounded to the minute."""
    if seconds is None or not math.isfinite(seconds):
        return DASH
    sign = "-" if seconds < 0 else ""
    minutes = int(round(abs(seconds) / 60.0))
    d, rem = divmod(minutes, 1440)
    h, m = divmod(rem, 60)
    return f"{sign}{d}d {h:02d}:{m:02d}" if d else f"{sign}{h:02d}:{m:02d}"


def zd_text(zd_minutes: int) -> str:
    """A zone description as the trade writes it: ``0``, ``-3``, ``+5``, ``-5:30``
    (ZT + ZD = UTC; REFERENCE.md, Zone time)."""
    from passagelog.nav.zonetime import format_zd

    return format_zd(zd_minutes)


def _to_minute(t: datetime) -> datetime:
    """``t`` in UTC rounded to the nearest minute (as the command line prints times)."""
    return datetime.fromtimestamp(round(t.timestamp() / 60.0) * 60.0, timezone.utc)


def utc_time(t: datetime | None, *, date: bool = True) -> str:
    """``05 13:00Z``: day of the month and time in UTC, rounded to the minute."""
    if t is None:
        return DASH
    return _to_minute(t).strftime("%d %H:%MZ" if date else "%H:%MZ")


def ship_time(t: datetime | None, zd_minutes: int, *, date: bool = True) -> str:
    """Ship's time (zone time ZT = UTC - ZD) with its zone description."""
    if t is None:
        return DASH
    zt = _to_minute(t) - timedelta(minutes=zd_minutes)
    return zt.strftime("%d %H:%M" if date else "%H:%M") + f" ({zd_text(zd_minutes)})"


def position(lat: float, lon: float, ascii_only: bool = False) -> str:
    """Degrees and decimal minutes, as DESIGN.md prints positions."""
    from passagelog.nav.position import format_position

    return format_position(lat, lon, decimals=3, ascii=ascii_only)


def parse_position(text: str) -> tuple[float, float]:
    """A position typed in any notation the navigation core accepts."""
    from passagelog.nav.position import parse_position as parse

    return parse(text)


def clock_text(t: datetime, ref: datetime | None = None, *, zd_minutes: int | None = None,
               seconds: bool | None = None, full: bool = False) -> str:
    """A time as the Log view writes it: UTC ``05 06:33Z`` (ship's time, given
    ``zd_minutes``: ``05 05:33 (+1)``); the full date, ``2027-01-01 00:00Z``, when its month
    or year is not that of ``ref`` (or ``full``); seconds (rounded) when ``seconds`` is
    True, or when ``seconds`` is None and the time has some."""
    t = t.astimezone(timezone.utc)
    if t.microsecond >= 500_000:
        t += timedelta(seconds=1)
    t = t.replace(microsecond=0)
    if seconds is None:
        seconds = bool(t.second)
    full = full or ref is not None and (t.year, t.month) != (ref.year, ref.month)
    shown = t if zd_minutes is None else t - timedelta(minutes=zd_minutes)
    text = shown.strftime(("%Y-%m-%d " if full else "%d ")
                          + ("%H:%M:%S" if seconds else "%H:%M"))
    if zd_minutes is None:
        return text + "Z"
    return f"{text} ({zd_text(zd_minutes)})"
