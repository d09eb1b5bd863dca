"""passagelog's two CSV layouts: a route and a list of fixes.

Route CSV, header (columns may come in any order; ``name``, ``lat`` and ``lon`` are
required, the others may be left out)::

    name,lat,lon,sailing,speed_kn,xtl_port_nm,xtl_stbd_nm,arrival_radius_nm,turn_radius_nm,notes

A row's leg attributes (``sailing``, ``speed_kn``, ``xtl_*``, ``turn_radius_nm``, ``notes``)
describe the leg that ENDS at that row's waypoint, as in RTZ; on the first row they mean
nothing and are ignored, except ``notes``, which is kept with the first waypoint.
``arrival_radius_nm`` belongs to the row's own waypoint. ``sailing`` is ``great-circle`` or
``rhumb`` (empty: rhumb). Distances are nautical miles here and metres inside.

Fix CSV, header::

    time_utc,lat,lon,method,sog_kn,cog,heading,remarks

``time_utc`` is ISO 8601 (``2024-05-01T12:00:00Z``; a time without a zone is taken as UTC,
as the column name says); ``method`` is one of the fix methods (empty: gnss).

Latitude and longitude cells take any notation :mod:`passagelog.nav.position` reads
(``48.1173``, ``48 07.038 N``, ``48°07.038'N``...). Any cell that cannot be read stops the
read with a FormatError naming the file, the line and the column.
"""

from __future__ import annotations

import csv
import math
from typing import IO, Iterable, Iterator

from passagelog.errors import FormatError, InputError
from passagelog.formats._common import ReadSummary, decimal_text
from passagelog.formats.gpx import format_time, parse_time
from passagelog.model import FIX_METHODS, SAILINGS, Fix, LegPlan, Route, Waypoint
from passagelog.nav.position import hemisphere_gap, parse_lat, parse_lon
from passagelog.nav.units import NM_M

ROUTE_HEADER = ("name", "lat", "lon", "sailing", "speed_kn", "xtl_port_nm", "xtl_stbd_nm",
                "arrival_radius_nm", "turn_radius_nm", "notes")
FIX_HEADER = ("time_utc", "lat", "lon", "method", "sog_kn", "cog", "heading", "remarks")
_ROUTE_REQUIRED = ("name", "lat", "lon")
_FIX_REQUIRED = ("time_utc", "lat", "lon")


def header_of(first_line: str) -> list[str]:
    """The column names of a CSV header line, trimmed and lower-cased."""
    row = next(csv.reader([first_line.lstrip("\ufeff")]), [])
    return [c.strip().lower() for c in row]


def is_route_header(cols: list[str]) -> bool:
    """A route CSV header by its required columns (the reader checks the others)."""
    return all(c in cols for c in _ROUTE_REQUIRED) and "time_utc" not in cols


def is_fix_header(cols: list[str]) -> bool:
    """A fix CSV header by its required columns (the reader checks the others)."""
    return all(c in cols for c in _FIX_REQUIRED)


class _Rows:
    """Rows of a CSV with its header checked; yields (line number, {column: cell})."""

    def __init__(self, stream: IO[str], name: str, allowed: tuple[str, ...],
                 required: tuple[str, ...], what: str):
        self.name = name
        self.reader = csv.reader(stream)
        try:
            header = next(self.reader)
        except StopIteration:
            raise FormatError(f"the file is empty; a {what} CSV starts with the header "
                              + ",".join(allowed), where=name) from None
        except csv.Error as exc:
            raise FormatError(f"not CSV ({exc})", where=f"{name}, line 1") from None
        except UnicodeDecodeError as exc:
            raise FormatError(f"not UTF-8 text ({exc.reason})", where=name) from None
        cols = [c.strip().lower().lstrip("\ufeff") for c in header]
        for col in cols:
            if col not in allowed:
                raise FormatError(f"column {col!r} is not a {what} CSV column; the columns are "
                                  + ",".join(allowed), where=f"{name}, line 1")
        for col in required:
            if col not in cols:
                raise FormatError(f"the {what} CSV header has no {col!r} column (required: "
                                  + ",".join(required) + ")", where=f"{name}, line 1")
        if len(set(cols)) != len(cols):
            raise FormatError("a column name appears twice in the header",
                              where=f"{name}, line 1")
        self.cols = cols

    def __iter__(self) -> Iterator[tuple[int, dict[str, str]]]:
        width = len(self.cols)
        while True:
            try:
                row = next(self.reader)
            except StopIteration:
                return
            except csv.Error as exc:
                raise FormatError(f"not CSV ({exc})",
                                  where=f"{self.name}, line {self.reader.line_num}") from None
            except UnicodeDecodeError as exc:  # text is decoded ahead in blocks: "after"
                raise FormatError(f"not UTF-8 text after line {self.reader.line_num} "
                                  f"({exc.reason})", where=self.name) from None
            line = self.reader.line_num
            if not row or all(not c.strip() for c in row):
                continue
            if len(row) != width:
                raise FormatError(f"the row has {len(row)} cells; the header has {width}",
                                  where=f"{self.name}, line {line}")
            yield line, {c: v.strip() for c, v in zip(self.cols, row)}

    def place(self, line: int, col: str) -> str:
        return f"{self.name}, line {line}, column {col}"


def _number(rows: _Rows, line: int, cells: dict[str, str], col: str, *,
            high: float | None = None) -> float | None:
    text = cells.get(col, "")
    if not text:
        return None
    try:
        value = float(text)
    except ValueError:
        value = math.nan
    if not math.isfinite(value) or value < 0 or (high is not None and value > high):
        allowed = f"a number from 0 to {high:g}" if high is not None else "a number >= 0"
        raise FormatError(f"{col} {text!r} is not {allowed}", where=rows.place(line, col))
    return value


def _position(rows: _Rows, line: int, cells: dict[str, str]) -> tuple[float, float]:
    out = []
    for col, parse in (("lat", parse_lat), ("lon", parse_lon)):
        text = cells.get(col, "")
        if not text:
            raise FormatError(f"{col} is empty; a {'latitude' if col == 'lat' else 'longitude'}"
                              " is required", where=rows.place(line, col))
        try:
            out.append(parse(text))
        except InputError as exc:
            raise FormatError(exc.reason, where=rows.place(line, col)) from None
    # a letter in one cell and neither a letter nor a sign in the other: not north or east
    gap = hemisphere_gap(cells["lat"], cells["lon"])
    if gap is not None:
        col, why = gap
        raise FormatError(why, where=rows.place(line, col))
    return out[0], out[1]


def _m(nm: float | None) -> float | None:
    return None if nm is None else round(nm * NM_M, 6)


def read_route_csv(stream: IO[str], name: str, route_name: str) -> Route:
    rows = _Rows(stream, name, ROUTE_HEADER, _ROUTE_REQUIRED, "route")
    waypoints: list[Waypoint] = []
    legs: list[LegPlan] = []
    for line, cells in rows:
        lat, lon = _position(rows, line, cells)
        index = len(waypoints) + 1
        arrival = _m(_number(rows, line, cells, "arrival_radius_nm"))
        notes = cells.get("notes", "")
        try:
            if index > 1:
                sailing = cells.get("sailing", "") or "rhumb"
                if sailing not in SAILINGS:
                    raise FormatError(f"sailing {sailing!r} is not one of: "
                                      + ", ".join(SAILINGS), where=rows.place(line, "sailing"))
                legs.append(LegPlan(
                    sailing=sailing,
                    speed_kn=_number(rows, line, cells, "speed_kn"),
                    xtl_port_m=_m(_number(rows, line, cells, "xtl_port_nm")),
                    xtl_stbd_m=_m(_number(rows, line, cells, "xtl_stbd_nm")),
                    turn_radius_m=_m(_number(rows, line, cells, "turn_radius_nm")),
                    notes=notes,
                ))
            extras = (("csv:notes", notes),) if index == 1 and notes else ()
            waypoints.append(Waypoint(cells.get("name") or f"WP{index}", lat, lon,
                                      arrival_radius_m=arrival, extras=extras))
        except FormatError:
            raise
        except InputError as exc:
            raise FormatError(exc.reason, where=f"{name}, line {line}") from None
    try:
        return Route(route_name, tuple(waypoints), tuple(legs))
    except InputError as exc:
        raise FormatError(exc.reason, where=name) from None


def iter_fix_csv(stream: IO[str], name: str, summary: ReadSummary, *,
                 thin_s: float | None = None) -> Iterator[Fix]:
    rows = _Rows(stream, name, FIX_HEADER, _FIX_REQUIRED, "fix")
    kept_at = None
    for line, cells in rows:
        summary.lines_read = line
        text = cells["time_utc"]
        try:
            t = parse_time(text)
        except ValueError:
            raise FormatError(f"time_utc {text!r} is not an ISO 8601 time (like "
                              "2024-05-01T12:00:00Z)", where=rows.place(line, "time_utc")) from None
        lat, lon = _position(rows, line, cells)
        method = cells.get("method", "") or "gnss"
        if method not in FIX_METHODS:
            raise FormatError(f"method {method!r} is not one of: " + ", ".join(FIX_METHODS),
                              where=rows.place(line, "method"))
        cog = _number(rows, line, cells, "cog", high=360.0)
        heading = _number(rows, line, cells, "heading", high=360.0)
        sog = _number(rows, line, cells, "sog_kn")
        try:
            fix = Fix(t, lat, lon, method=method, sog_kn=sog,
                      cog=None if cog is None else cog % 360.0,
                      heading=None if heading is None else heading % 360.0,
                      remarks=cells.get("remarks", ""), source=f"{name}:{line}")
        except InputError as exc:
            raise FormatError(exc.reason, where=f"{name}, line {line}") from None
        if thin_s and kept_at is not None and 0 <= (t - kept_at).total_seconds() < thin_s:
            summary.dropped["thinned"] += 1
            continue
        kept_at = t
        summary.lines_used += 1
        summary.fixes_kept += 1
        if summary.first_time_utc is None:
            summary.first_time_utc = t
        summary.last_time_utc = t
        yield fix


def _cell(value: float | None) -> str:
    return "" if value is None else decimal_text(value)


def _nm_cell(metres: float | None) -> str:
    return "" if metres is None else decimal_text(round(metres / NM_M, 12))


def write_route_csv(route: Route, stream: IO[str]) -> None:
    out = csv.writer(stream, lineterminator="\n")
    out.writerow(ROUTE_HEADER)
    for i, wp in enumerate(route.waypoints):
        if i == 0:
            notes = next((v for k, v in wp.extras if k == "csv:notes"), "")
            out.writerow([wp.name, _cell(wp.lat), _cell(wp.lon), "", "", "", "",
                          _nm_cell(wp.arrival_radius_m), "", notes])
            continue
        leg = route.legs[i - 1]
        out.writerow([wp.name, _cell(wp.lat), _cell(wp.lon), leg.sailing, _cell(leg.speed_kn),
                      _nm_cell(leg.xtl_port_m), _nm_cell(leg.xtl_stbd_m),
                      _nm_cell(wp.arrival_radius_m), _nm_cell(leg.turn_radius_m), leg.notes])


def write_fix_csv(fixes: Iterable[Fix], stream: IO[str]) -> int:
    out = csv.writer(stream, lineterminator="\n")
    out.writerow(FIX_HEADER)
    count = 0
    for fix in fixes:
        out.writerow([format_time(fix.time_utc), _cell(fix.lat), _cell(fix.lon), fix.method,
                      _cell(fix.sog_kn), _cell(fix.cog), _cell(fix.heading), fix.remarks])
        count += 1
    return count
