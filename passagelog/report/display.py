"""Review rows for people: the engine's metres and seconds in the trade's units.

One set of rules for every table a person reads (the CLI's ``table`` and ``md`` formats, the
HTML voyage report): a column ``*_m`` becomes ``*_nm`` in nautical miles to 0.01, ``*_s``
becomes ``*_h:mm`` (hours and minutes, signed), speeds (``*_kn``) and hours to 0.1, courses
as three figures and a tenth (``005.3``), shares as percentages, latitudes and longitudes in
degrees and decimal minutes, times in UTC to the second, booleans ``yes``/``no``. A missing
value stays ``None`` (each renderer shows it its own way). CSV and JSON for scripts carry
the rows as they are and never pass through here.
"""

from __future__ import annotations

from typing import Any, Iterable, Sequence

from passagelog.nav.position import format_lat, format_lon
from passagelog.nav.units import NM_M

#: Columns that hold a course or a direction, degrees true.
COURSE_KEYS = frozenset({"btw", "cmg", "cmg_prev", "cmg_dep", "cmg_window", "set",
                         "initial_course", "final_course"})
LAT_KEYS = frozenset({"lat", "from_lat", "to_lat"})
LON_KEYS = frozenset({"lon", "from_lon", "to_lon"})


def span_text(seconds: float) -> str:
    """A length of time as people say it: ``45 min``, ``7 h 30 min``, ``3 d 04 h``."""
    s = int(round(abs(seconds)))
    days, rem = divmod(s, 86400)
    h, rem = divmod(rem, 3600)
    if days >= 2:
        return f"{days} d {h:02d} h"
    h += 24 * days
    return f"{h} h {rem // 60:02d} min" if h else f"{rem // 60} min"


def hours_minutes(seconds: float) -> str:
    """A signed length of time as ``h:mm`` (``-0:05``, ``26:40``), to the nearest minute."""
    minutes = round(abs(seconds) / 60.0)
    return f"{'-' if seconds < 0 and minutes else ''}{minutes // 60}:{minutes % 60:02d}"


def display_key(key: str) -> str:
    """The column heading for ``key`` in the trade's units."""
    if key.endswith("_m"):
        return key[:-2] + "_nm"
    if key.endswith("_s"):
        return key[:-2] + "_h:mm"
    return key


def display_value(key: str, value: Any) -> Any:
    """``value`` of column ``key`` as people read it (see the module docstring)."""
    if value is None:
        return None
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, str):
        if key.endswith("_utc") and len(value) > 20:  # fractions of a second dropped
            return value[:19] + "Z"
        return value
    if not isinstance(value, (int, float)):
        return value
    if key in LAT_KEYS:
        return format_lat(value)
    if key in LON_KEYS:
        return format_lon(value)
    if key.endswith("_m"):
        return f"{value / NM_M:.2f}"
    if key.endswith("_s"):
        return hours_minutes(value)
    if key.endswith("_kn") or key.endswith("_hours"):
        return f"{value:.1f}"
    if key in COURSE_KEYS:
        return f"{value:05.1f}"
    if key.startswith("share"):
        return f"{100.0 * value:.1f}%"
    if isinstance(value, float):
        return f"{value:.6g}"
    return value


def display_records(rows: Iterable[dict], columns: Sequence[str]) -> tuple[list[dict], list[str]]:
    """The rows' ``columns`` for people, and their headings."""
    out = [{display_key(c): display_value(c, row.get(c)) for c in columns} for row in rows]
    return out, [display_key(c) for c in columns]
