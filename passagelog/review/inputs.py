"""What the reconciliation engine takes in: fixes as columns, plan revisions, ship's clocks.

Fixes arrive either as :class:`passagelog.model.Fix` objects or as numpy columns (the form a
logbook of a million fixes hands over). Both become one :class:`FixArrays`: time in float
seconds since 1970-01-01T00:00:00Z, positions in degrees, optional heading, speed through the
water, SOG and COG (NaN where not logged) and the logbook's suspect flag.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import datetime, timezone
from typing import Any, Iterable, Mapping, Sequence

import numpy as np

from passagelog.errors import InputError
from passagelog.model import Fix, LogEntry, Route, check_zd

_EPOCH = datetime(1970, 1, 1, tzinfo=timezone.utc)

#: Accepted names of each column in a mapping, a structured array or an object.
_ALIASES: dict[str, tuple[str, ...]] = {
    "time_s": ("time_s", "time_utc_s", "epoch_s", "t_s", "time", "time_utc", "t"),
    "lat": ("lat", "latitude", "lats"),
    "lon": ("lon", "longitude", "lons"),
    "heading": ("heading", "hdg", "heading_deg"),
    "stw_kn": ("stw_kn", "stw"),
    "sog_kn": ("sog_kn", "sog"),
    "cog": ("cog", "cog_deg"),
    "suspect": ("suspect", "is_suspect"),
    "fix_id": ("fix_id", "id"),
}


def to_seconds(value: datetime | float | int | None, what: str = "time") -> float | None:
    """A UTC time as float seconds since the epoch (aware datetimes only; numbers pass)."""
    if value is None:
        return None
    if isinstance(value, datetime):
        if value.tzinfo is None or value.utcoffset() is None:
            raise InputError(f"{what} {value.isoformat()} has no time zone; give it in UTC")
        return (value - _EPOCH).total_seconds()
    if isinstance(value, (int, float, np.floating, np.integer)) and not isinstance(value, bool):
        x = float(value)
        if not math.isfinite(x):
            raise InputError(f"{what} {value!r} is not a finite number of seconds")
        return x
    raise InputError(f"{what} {value!r} must be an aware UTC datetime or seconds since the epoch")


def from_seconds(t_s: float) -> datetime:
    """Float seconds since the epoch as an aware UTC datetime (microsecond precision)."""
    return datetime.fromtimestamp(round(float(t_s), 6), tz=timezone.utc)


def iso_z(t_s: float | None) -> str | None:
    """ISO 8601 UTC text with ``Z``; whole seconds unless the time has a fraction."""
    if t_s is None or not math.isfinite(t_s):
        return None
    dt = from_seconds(t_s)
    if dt.microsecond:
        return dt.strftime("%Y-%m-%dT%H:%M:%S.%f").rstrip("0") + "Z"
    return dt.strftime("%Y-%m-%dT%H:%M:%SZ")


def iso_z_np(t_s: np.ndarray) -> np.ndarray:
    """Many times as ISO 8601 UTC text with ``Z`` (millisecond resolution; whole seconds
    printed without a fraction, as :func:`iso_z` does)."""
    t = np.asarray(t_s, dtype=np.float64)
    ms_count = np.round(t * 1000.0).astype("int64")
    ms = ms_count.astype("datetime64[ms]")
    out = np.char.add(np.char.rstrip(np.datetime_as_string(ms, unit="ms"), "0"), "Z")
    whole = (ms_count % 1000) == 0
    if whole.any():
        sec = np.datetime_as_string(ms[whole].astype("datetime64[s]"), unit="s")
        out[whole] = np.char.add(sec, "Z")
    return out


@dataclass(frozen=True, eq=False)
class FixArrays:
    """Fixes as columns of equal length (read-only numpy arrays).

    ``time_s`` float seconds since the epoch (UTC); ``lat``/``lon`` degrees; ``heading``,
    ``stw_kn``, ``sog_kn`` and ``cog`` are NaN where not logged; ``suspect`` marks fixes the
    logbook (or the engine's speed check) found implausible; ``fix_id`` is the logbook's id
    or -1.
    """

    time_s: np.ndarray
    lat: np.ndarray
    lon: np.ndarray
    heading: np.ndarray
    stw_kn: np.ndarray
    sog_kn: np.ndarray
    cog: np.ndarray
    suspect: np.ndarray
    fix_id: np.ndarray

    def __len__(self) -> int:
        return int(self.time_s.size)

    def take(self, idx: np.ndarray) -> "FixArrays":
        return FixArrays(*(getattr(self, name)[idx] for name in _FIELDS))


_FIELDS = ("time_s", "lat", "lon", "heading", "stw_kn", "sog_kn", "cog", "suspect", "fix_id")


def _lookup(source: Any, name: str) -> Any:
    names = _ALIASES[name]
    if isinstance(source, Mapping):
        for n in names:
            if n in source:
                return source[n]
        return None
    dtype_names = getattr(getattr(source, "dtype", None), "names", None)
    if dtype_names:
        for n in names:
            if n in dtype_names:
                return source[n]
        return None
    for n in names:
        if hasattr(source, n):
            return getattr(source, n)
    return None


def _time_column(values: Any) -> np.ndarray:
    arr = np.asarray(values)
    if np.issubdtype(arr.dtype, np.datetime64):
        return arr.astype("datetime64[ns]").astype("int64").astype(np.float64) / 1e9
    if arr.dtype == object:
        return np.array([to_seconds(v, "fix time") for v in arr], dtype=np.float64)
    if not np.issubdtype(arr.dtype, np.number):
        raise InputError(f"fix time column has type {arr.dtype}; seconds or datetimes are needed")
    return arr.astype(np.float64)


def _float_column(values: Any, n: int, what: str) -> np.ndarray:
    if values is None:
        return np.full(n, np.nan)
    arr = np.asarray(values)
    if arr.dtype == object:
        arr = np.array([np.nan if v is None else v for v in arr], dtype=np.float64)
    arr = arr.astype(np.float64)
    if arr.shape != (n,):
        raise InputError(f"fix column {what} has shape {arr.shape}; ({n},) is needed")
    return arr


def _readonly(arr: np.ndarray) -> np.ndarray:
    arr = np.ascontiguousarray(arr)
    arr.setflags(write=False)
    return arr


def from_fixes(fixes: Iterable[Fix]) -> FixArrays:
    """Model :class:`Fix` objects as columns."""
    fixes = list(fixes)

    def col(attr: str) -> np.ndarray:
        return np.array([np.nan if getattr(f, attr) is None else getattr(f, attr) for f in fixes],
                        dtype=np.float64)

    return FixArrays(
        time_s=_readonly(np.array([to_seconds(f.time_utc) for f in fixes], dtype=np.float64)),
        lat=_readonly(col("lat")), lon=_readonly(col("lon")),
        heading=_readonly(col("heading")), stw_kn=_readonly(col("stw_kn")),
        sog_kn=_readonly(col("sog_kn")), cog=_readonly(col("cog")),
        suspect=_readonly(np.array([bool(f.suspect) for f in fixes], dtype=bool)),
        fix_id=_readonly(np.array([-1 if f.fix_id is None else f.fix_id for f in fixes],
                                  dtype=np.int64)),
    )


def as_fix_arrays(fixes: Any) -> FixArrays:
    """Fixes in any accepted form as :class:`FixArrays`.

    Accepted: a :class:`FixArrays`; a sequence of :class:`Fix`; a mapping, a numpy
    structured array or an object with columns named ``time_s`` (or ``time``; float seconds
    since the epoch UTC, or numpy datetime64), ``lat``, ``lon`` and optionally ``heading``,
    ``stw_kn``, ``sog_kn``, ``cog``, ``suspect``, ``fix_id``.
    """
    if isinstance(fixes, FixArrays):
        return fixes
    if isinstance(fixes, (list, tuple)) and (not fixes or isinstance(fixes[0], Fix)):
        return from_fixes(fixes)
    if not isinstance(fixes, (Mapping, np.ndarray)) and hasattr(fixes, "__iter__") and not any(
        hasattr(fixes, a) for a in ("lat", "latitude")
    ):
        return from_fixes(list(fixes))
    times = _lookup(fixes, "time_s")
    lat = _lookup(fixes, "lat")
    lon = _lookup(fixes, "lon")
    if times is None or lat is None or lon is None:
        raise InputError("fix columns need time_s (or time), lat and lon")
    t = _time_column(times)
    n = t.size
    if t.shape != (n,):
        raise InputError(f"fix time column has shape {t.shape}; a flat column is needed")
    suspect = _lookup(fixes, "suspect")
    fix_id = _lookup(fixes, "fix_id")
    return FixArrays(
        time_s=_readonly(t),
        lat=_readonly(_float_column(lat, n, "lat")),
        lon=_readonly(_float_column(lon, n, "lon")),
        heading=_readonly(_float_column(_lookup(fixes, "heading"), n, "heading")),
        stw_kn=_readonly(_float_column(_lookup(fixes, "stw_kn"), n, "stw_kn")),
        sog_kn=_readonly(_float_column(_lookup(fixes, "sog_kn"), n, "sog_kn")),
        cog=_readonly(_float_column(_lookup(fixes, "cog"), n, "cog")),
        suspect=_readonly(np.zeros(n, bool) if suspect is None
                          else np.asarray(suspect).astype(bool).reshape(n)),
        fix_id=_readonly(np.full(n, -1, np.int64) if fix_id is None
                         else np.asarray(fix_id).astype(np.int64).reshape(n)),
    )


@dataclass(frozen=True)
class PlanRevision:
    """A route in force from ``from_s`` (seconds since the epoch; -inf for the first)."""

    from_s: float
    route: Route
    number: int  # 0-based position in the list of revisions


def as_revisions(plan: Route | Sequence[tuple[datetime | float | None, Route]]
                 ) -> tuple[PlanRevision, ...]:
    """A route, or ``[(from_utc, Route), ...]``, as revisions in time order.

    The first revision is in force from the beginning whatever its time says; a later one
    from its ``from_utc`` on. Two revisions from the same time are refused.
    """
    if isinstance(plan, Route):
        return (PlanRevision(-math.inf, plan, 0),)
    items = list(plan)
    if not items:
        raise InputError("plan has no revisions; give a Route or a list of (from_utc, Route)")
    parsed = []
    for i, item in enumerate(items):
        try:
            when, route = item
        except (TypeError, ValueError):
            raise InputError(
                f"plan revision {i + 1} is {item!r}; a (from_utc, Route) pair is needed"
            ) from None
        if not isinstance(route, Route):
            raise InputError(f"plan revision {i + 1} has {route!r} where a Route is needed")
        t = -math.inf if when is None else to_seconds(when, f"plan revision {i + 1} start")
        parsed.append((t, i, route))
    parsed.sort(key=lambda x: (x[0], x[1]))
    for (t0, _, _), (t1, i1, _) in zip(parsed, parsed[1:]):
        if t0 == t1:
            raise InputError(
                f"plan revision {i1 + 1} starts at the same time as another; each revision "
                "needs its own start time"
            )
    out = []
    for n, (t, _, route) in enumerate(parsed):
        out.append(PlanRevision(-math.inf if n == 0 else t, route, n))
    return tuple(out)


@dataclass(frozen=True)
class Clocks:
    """The ship's zone description over time: ``zd_minutes[i]`` is in force from
    ``from_s[i]`` (the first from -inf). ZT + ZD = UTC."""

    from_s: tuple[float, ...]
    zd_minutes: tuple[int, ...]

    def zd_at(self, t_s: float) -> int:
        k = 0
        for i, start in enumerate(self.from_s):
            if start <= t_s:
                k = i
        return self.zd_minutes[k]


def clocks_from(zd_minutes: int, entries: Iterable[LogEntry] = ()) -> Clocks:
    """The zone description ``zd_minutes`` at the start, changed by the clock-change entries."""
    check_zd("voyage", zd_minutes)
    changes = sorted(
        (to_seconds(e.time_utc), e.zd_minutes) for e in entries if e.kind == "clock-change"
    )
    starts = [-math.inf] + [t for t, _ in changes]
    zds = [zd_minutes] + [int(z) for _, z in changes]
    return Clocks(tuple(starts), tuple(zds))
