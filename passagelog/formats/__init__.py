"""Readers and writers for NMEA 0183, GPX 1.1, IEC 61174 (RTZ) and CSV.

Text in, model objects out, and back. The format of a file is told from its content
(:func:`detect_format`); a file that is not the format claimed is refused before anything
is read from it. Routes are read whole (:func:`read_route`); fixes stream
(:func:`iter_fixes` returns a :class:`FixReader` whose ``summary`` fills in as it goes).
Every error is a :class:`~passagelog.errors.FormatError` that names the file and the line
(or the XML element path) and the reason.

Formats: ``"nmea"``, ``"gpx"``, ``"rtz"``, ``"route-csv"``, ``"fix-csv"``.
"""

from __future__ import annotations

import io
import os
import re
from datetime import date
from pathlib import Path
from typing import IO, Callable, Iterable, Iterator, Sequence

from passagelog.errors import FormatError
from passagelog.formats._common import (
    ReadSummary,
    Source,
    open_text,
    peek_stream,
    read_head,
    source_name,
)
from passagelog.model import Fix, Route

FORMATS = ("nmea", "gpx", "rtz", "route-csv", "fix-csv")
ROUTE_FORMATS = ("rtz", "gpx", "route-csv")
FIX_FORMATS = ("nmea", "gpx", "fix-csv")
LABELS = {
    "nmea": "an NMEA 0183 log",
    "gpx": "a GPX file",
    "rtz": "an RTZ route (IEC 61174)",
    "route-csv": "a route CSV",
    "fix-csv": "a fix CSV",
}

_XML_SKIP = re.compile(r"\s*(?:<\?.*?\?>|<!--.*?-->|<!DOCTYPE[^>]*>)", re.S)
_XML_ROOT = re.compile(r"\s*<([A-Za-z_][\w.\-]*:)?([A-Za-z_][\w.\-]*)([^>]*)>?", re.S)
_TALKER = re.compile(r"[$!][A-Z0-9]{2,5},")


def detect_format(path_or_name: Source | str, head: str) -> str:
    """The format of a file from its first few kilobytes ``head`` (the content decides).

    Raises FormatError naming the file when the content is none of the formats.
    """
    name = source_name(path_or_name)
    text = head.lstrip("\ufeff").lstrip("ï»¿")  # a BOM, read as text or as latin-1
    stripped = text.lstrip()
    if stripped.startswith("<"):
        rest = stripped
        while True:
            m = _XML_SKIP.match(rest)
            if not m or m.end() == 0:
                break
            rest = rest[m.end():]
        m = _XML_ROOT.match(rest)
        if m:
            local, attrs = m.group(2), m.group(3)
            if local == "gpx":
                return "gpx"
            if local == "route" and ("cirm.org/RTZ" in attrs or "version" in attrs):
                return "rtz"
            raise FormatError(f"an XML file whose root element is {local!r}; passagelog "
                              "reads GPX ('gpx') and RTZ ('route') XML", where=name)
        raise FormatError("starts like XML but no root element was found", where=name)
    lines = [ln for ln in stripped.splitlines() if ln.strip()]
    if not lines:
        raise FormatError("the file is empty", where=name)
    first = lines[0].strip()
    if _TALKER.match(first):
        return "nmea"
    from passagelog.formats import csvfmt

    cols = csvfmt.header_of(first)
    if csvfmt.is_route_header(cols):
        return "route-csv"
    if csvfmt.is_fix_header(cols):
        return "fix-csv"
    shown = first if len(first) <= 60 else first[:57] + "..."
    raise FormatError(
        f"cannot tell the format from the content (first line {shown!r}); passagelog reads "
        "NMEA 0183, GPX 1.1, RTZ and its route and fix CSV (see docs/formats.md)", where=name)


def check_format(claimed: str, path_or_name: Source | str, head: str) -> str:
    """``claimed`` if the content is that format; otherwise a FormatError (nothing read)."""
    if claimed not in FORMATS:
        raise FormatError(f"format {claimed!r} is not one of: " + ", ".join(FORMATS))
    name = source_name(path_or_name)
    try:
        found = detect_format(path_or_name, head)
    except FormatError as exc:
        raise FormatError(f"is not {LABELS[claimed]}: {exc.reason}", where=name) from None
    if found != claimed:
        raise FormatError(f"is not {LABELS[claimed]}: its content is {LABELS[found]}",
                          where=name)
    return found


def _is_path(source: Source) -> bool:
    return isinstance(source, (str, os.PathLike)) and str(source) != "-"


def _prepare(source: Source, fmt: str | None, allowed: tuple[str, ...], what: str,
             label: str | None = None) -> tuple[str, str, IO | None]:
    """(format, name, stream-or-None): peek at the content and check the format."""
    import sys

    name = label or source_name(source)
    stream = None
    if _is_path(source):
        try:
            head = read_head(source)
        except OSError as exc:
            raise FormatError(f"cannot open the file: {exc.strerror}", where=name) from None
        except ValueError:  # open() refuses a path with a NUL character
            raise FormatError("cannot open the file: its name holds a NUL character",
                              where=repr(name)) from None
    else:
        raw = sys.stdin if not hasattr(source, "read") else source
        head, stream = peek_stream(raw)  # type: ignore[arg-type]
    found = check_format(fmt, name, head) if fmt else detect_format(name, head)
    if found not in allowed:
        raise FormatError(f"is {LABELS[found]}, which holds no {what}; {what} are read from: "
                          + ", ".join(allowed), where=name)
    return found, name, stream


def _binary(source: Source, stream: IO | None) -> IO[bytes]:
    if stream is None:
        return open(source, "rb")  # type: ignore[arg-type]
    return io.BytesIO(stream.read().encode("utf-8"))


def read_routes(source: Source, *, fmt: str | None = None, label: str | None = None,
                missing_ok: bool = False) -> list[Route]:
    """Every route in a file (RTZ and CSV hold one; GPX may hold several ``rte``).

    A GPX file without ``rte`` but with two or more ``wpt`` gives one route of those
    waypoints in file order; with neither it is a FormatError, or ``[]`` when
    ``missing_ok``. ``label`` names the file in messages (default: its file name).
    """
    found, name, stream = _prepare(source, fmt, ROUTE_FORMATS, "routes", label)
    stem = Path(name).stem if name != "<stdin>" else "route"
    if found == "route-csv":
        from passagelog.formats.csvfmt import read_route_csv

        fh, close = (stream, False) if stream is not None else open_text(
            source, encoding="utf-8-sig", newline="")
        try:
            return [read_route_csv(fh, name, stem)]
        finally:
            if close:
                fh.close()
    with _binary(source, stream) as fh:
        if found == "rtz":
            from passagelog.formats.rtz import read_rtz

            return [read_rtz(fh, name)]
        from passagelog.formats.gpx import read_gpx_routes

        routes, wpts = read_gpx_routes(fh, name)
    if not routes and len(wpts) >= 2:
        routes = [Route(stem, tuple(wpts))]
    if not routes and not missing_ok:
        raise FormatError("holds no route (no 'rte' element and fewer than two 'wpt')",
                          where=name)
    return routes


def read_route(source: Source, *, fmt: str | None = None, name: str | None = None,
               label: str | None = None) -> Route:
    """The route of a file (CSV, GPX ``rte``, RTZ 1.0/1.1/1.2).

    When a GPX file holds several routes, ``name`` picks one; without it that is an error
    listing the names.
    """
    routes = read_routes(source, fmt=fmt, label=label)
    where_ = label or source_name(source)
    if name is not None:
        for route in routes:
            if route.name == name:
                return route
        raise FormatError(f"holds no route named {name!r}; it holds: "
                          + ", ".join(repr(r.name) for r in routes), where=where_)
    if len(routes) > 1:
        raise FormatError(f"holds {len(routes)} routes ("
                          + ", ".join(repr(r.name) for r in routes)
                          + "); name the one to read", where=where_)
    return routes[0]


class FixReader:
    """An iterable of :class:`~passagelog.model.Fix` that streams, with a ``summary``.

    Read once: iterating fills ``summary`` (a :class:`ReadSummary`: lines read, fixes
    kept, rejected lines by reason with their first line numbers or element paths).
    Options: ``thin_s`` keeps one fix per that many seconds (a fix is kept when it is at
    least ``thin_s`` after the last one kept); ``talkers`` (NMEA) keeps only those talkers,
    preferred in that order; ``require_checksum`` (NMEA, default True); ``start_date``
    (NMEA) dates a log that has only GGA/GLL; ``progress(bytes_read)`` is called now and
    then while a file is read; ``label`` names the file in messages.
    """

    def __init__(self, source: Source, *, fmt: str | None = None, thin_s: float | None = None,
                 talkers: Sequence[str] | None = None, require_checksum: bool = True,
                 start_date: date | None = None,
                 progress: Callable[[int], None] | None = None, label: str | None = None):
        if thin_s is not None and not thin_s >= 0:
            raise FormatError(f"thinning interval {thin_s!r} s must be a number >= 0")
        self.fmt, self.name, self._stream = _prepare(source, fmt, FIX_FORMATS, "fixes", label)
        self._source = source
        self.summary = ReadSummary(self.name)
        self._options = dict(thin_s=thin_s, talkers=talkers, require_checksum=require_checksum,
                             start_date=start_date, progress=progress)
        self._used = False

    def _open(self, encoding: str | None, newline: str | None) -> IO:
        """The source as text (or binary when ``encoding`` is None), counting bytes read
        for ``progress`` when it is a file."""
        if self._stream is not None:
            if encoding is None:
                return _binary(self._source, self._stream)
            return self._stream
        try:
            raw: IO[bytes] = open(self._source, "rb")  # type: ignore[arg-type]
        except OSError as exc:
            raise FormatError(f"cannot open the file: {exc.strerror}", where=self.name) from None
        progress = self._options["progress"]
        if progress is not None:
            raw = io.BufferedReader(_Counting(raw, progress), 1 << 16)  # type: ignore[arg-type]
        if encoding is None:
            return raw
        return io.TextIOWrapper(raw, encoding=encoding, newline=newline)  # type: ignore[arg-type]

    def __iter__(self) -> Iterator[Fix]:
        if self._used:
            raise RuntimeError("a FixReader is read once; make a new one to read again")
        self._used = True
        opts = self._options
        if self.fmt == "nmea":
            from passagelog.formats.nmea import NmeaReader

            fh = self._open("latin-1", "\n")
            try:
                yield from NmeaReader(fh, self.summary, thin_s=opts["thin_s"],
                                      talkers=opts["talkers"],
                                      require_checksum=opts["require_checksum"],
                                      start_date=opts["start_date"])
            finally:
                if fh is not self._stream:
                    fh.close()
        elif self.fmt == "fix-csv":
            from passagelog.formats.csvfmt import iter_fix_csv

            fh = self._open("utf-8-sig", "")
            try:
                yield from iter_fix_csv(fh, self.name, self.summary, thin_s=opts["thin_s"])
            finally:
                if fh is not self._stream:
                    fh.close()
        else:
            from passagelog.formats.gpx import iter_gpx_fixes

            with self._open(None, None) as fh:
                yield from iter_gpx_fixes(fh, self.name, self.summary, thin_s=opts["thin_s"])


class _Counting(io.RawIOBase):
    """A binary file that reports the bytes read so far to ``callback``."""

    def __init__(self, fh: IO[bytes], callback: Callable[[int], None]):
        self._fh = fh
        self._callback = callback
        self.count = 0

    def readable(self) -> bool:
        return True

    def readinto(self, buffer) -> int:  # type: ignore[override]
        n = self._fh.readinto(buffer)  # type: ignore[attr-defined]
        if n:
            self.count += n
            self._callback(self.count)
        return n

    def close(self) -> None:
        self._fh.close()
        super().close()


def iter_fixes(source: Source, *, fmt: str | None = None, **options) -> FixReader:
    """Fixes of an NMEA log, a GPX track or a fix CSV, streamed (see :class:`FixReader`)."""
    return FixReader(source, fmt=fmt, **options)


def read_fixes(source: Source, *, fmt: str | None = None, **options
               ) -> tuple[list[Fix], ReadSummary]:
    """All fixes of a file and the read summary."""
    reader = FixReader(source, fmt=fmt, **options)
    fixes = list(reader)
    return fixes, reader.summary


def write_route(route: Route, fmt: str, stream: IO[str], *, version: str = "1.1") -> None:
    """Write a route as ``"rtz"`` (``version`` 1.0 or 1.1), ``"gpx"`` or ``"route-csv"``."""
    if fmt == "rtz":
        from passagelog.formats.rtz import write_rtz

        write_rtz(route, stream, version=version)
    elif fmt == "gpx":
        from passagelog.formats.gpx import write_gpx_route

        write_gpx_route(route, stream)
    elif fmt == "route-csv":
        from passagelog.formats.csvfmt import write_route_csv

        write_route_csv(route, stream)
    else:
        raise FormatError(f"routes cannot be written as {fmt!r}; use one of: "
                          + ", ".join(ROUTE_FORMATS))


def write_fixes(fixes: Iterable[Fix], fmt: str, stream: IO[str], *, name: str = "",
                gga: bool = False) -> int:
    """Write fixes as ``"nmea"`` (RMC, plus GGA with ``gga=True``, plus HDT where a heading
    is known), ``"gpx"`` (one ``trk``) or ``"fix-csv"``; returns the number written."""
    if fmt == "nmea":
        from passagelog.formats.nmea import write_nmea

        return write_nmea(fixes, stream, gga=gga)
    if fmt == "gpx":
        from passagelog.formats.gpx import write_gpx_track

        return write_gpx_track(fixes, stream, name=name)
    if fmt == "fix-csv":
        from passagelog.formats.csvfmt import write_fix_csv

        return write_fix_csv(fixes, stream)
    raise FormatError(f"fixes cannot be written as {fmt!r}; use one of: "
                      + ", ".join(FIX_FORMATS))


def write_voyage(routes: Iterable[Route], fixes: Iterable[Fix], stream: IO[str], *,
                 name: str = "") -> int:
    """A voyage as one GPX 1.1 file: its plan route(s) as ``rte`` and its fixes as a
    ``trk`` named ``name``; returns the number of fixes written."""
    from passagelog.formats.gpx import write_gpx

    return write_gpx(stream, routes=routes, fixes=fixes, track_name=name)


__all__ = [
    "FORMATS", "ROUTE_FORMATS", "FIX_FORMATS", "ReadSummary", "FixReader",
    "detect_format", "check_format", "read_route", "read_routes", "iter_fixes",
    "read_fixes", "write_route", "write_fixes", "write_voyage",
]
