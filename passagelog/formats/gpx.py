"""GPX 1.1: routes (``rte``/``rtept``), tracks (``trk``/``trkseg``/``trkpt``) and ``wpt``.

Reading is done here with ElementTree's ``iterparse`` rather than with gpxpy, because gpxpy
silently turns an unreadable ``<time>`` into None (indistinguishable from a missing time),
reports errors without saying which element, and holds the whole document in memory; a
track of a long passage must stream, and every rejected point must be named by its element
path (``gpx/trk[1]/trkseg[2]/trkpt[17]``). ElementTree does not fetch external entities, and
the expat it is built on (2.4.1 and later) refuses entity-expansion bombs, so defusedxml is
not needed for these files.

Routes and tracks are written here too, in the element order of the GPX 1.1 schema:
gpxpy's writer leaves quotes in extension attributes unescaped (invalid XML; found by the
round-trip test) and would build a million objects for a long track first. gpxpy reads our
output back in the tests, as an outside check.

Leg attributes GPX cannot carry go into an extension in passagelog's own namespace,
:data:`NS` (``https://passagelog.invalid/gpx/1``; ``.invalid`` is reserved by RFC 2606 and
never resolves, so the name cannot collide with anybody's):

* ``rtept/extensions/pl:leg`` — the leg that ENDS at this point (as in RTZ): ``sailing``,
  ``speedKn``, ``speedMinKn``, ``speedMaxKn``, ``xtlPortNm``, ``xtlStbdNm``,
  ``turnRadiusNm``, ``notes``;
* ``rtept/extensions/pl:waypoint`` — ``arrivalRadiusNm``, ``rtzId``, ``revision``;
* ``trkpt/extensions/pl:fix`` — ``method``, ``sogKn``, ``cog``, ``heading``, ``stwKn``,
  ``fixMode``, ``remarks``.
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET
from datetime import datetime, timezone
from typing import IO, Iterable, Iterator
from xml.sax.saxutils import escape, quoteattr

from passagelog.errors import FormatError, InputError
from passagelog.formats._common import ReadSummary, decimal_text, where
from passagelog.model import FIX_METHODS, Fix, LegPlan, Route, Waypoint
from passagelog.nav.units import NM_M

GPX11 = "http://www.topografix.com/GPX/1/1"
GPX10 = "http://www.topografix.com/GPX/1/0"
#: passagelog's own GPX extension namespace.
NS = "https://passagelog.invalid/gpx/1"
PREFIX = "pl"

UTC = timezone.utc


def parse_time(text: str | None) -> datetime:
    """An ``xsd:dateTime`` as aware UTC (a time without a zone is UTC, as GPX and RTZ say;
    a lowercase ``z`` is read leniently). Raises ValueError when it is not a time."""
    if text is None:
        raise ValueError("missing")
    text = text.strip()
    if text.endswith(("z", "Z")):
        text = text[:-1] + "+00:00"
    t = datetime.fromisoformat(text)
    if "T" not in text and "t" not in text:
        raise ValueError("a date without a time")
    if t.tzinfo is None:
        return t.replace(tzinfo=UTC)
    return t.astimezone(UTC)


def format_time(t: datetime) -> str:
    """Aware UTC as ``2024-05-01T12:00:00Z`` (fractional seconds only when present)."""
    t = t.astimezone(UTC)
    spec = "seconds" if t.microsecond == 0 else "microseconds"
    return t.replace(tzinfo=None).isoformat(timespec=spec) + "Z"


def _local(tag: str) -> tuple[str, str]:
    if tag[:1] == "{":
        ns, _, name = tag[1:].partition("}")
        return ns, name
    return "", tag


def _float(text: str | None, what: str) -> float | None:
    """``text`` as a finite number (None when absent); the ValueError names ``what``."""
    if text is None or not text.strip():
        return None
    try:
        value = float(text)
    except ValueError:
        raise ValueError(f"{what} {text!r} is not a number") from None
    if value != value or value in (float("inf"), float("-inf")):
        raise ValueError(f"{what} {text!r} is not a finite number")
    return value


def _int(text: str | None, what: str) -> int | None:
    """``text`` as a whole number (None when absent); the ValueError names ``what``."""
    if text is None or not text.strip():
        return None
    try:
        return int(text)
    except ValueError:
        raise ValueError(f"{what} {text!r} is not a whole number") from None


def _nm_to_m(text: str | None, what: str) -> float | None:
    value = _float(text, what)
    return None if value is None else round(value * NM_M, 6)


def _nm(value_m: float | None) -> str | None:
    return None if value_m is None else decimal_text(round(value_m / NM_M, 12))


class _Walker:
    """Element paths with 1-based indexes as the parse goes (``gpx/trk[1]/trkseg[2]``)."""

    def __init__(self) -> None:
        self.stack: list[tuple[str, dict[str, int]]] = []

    def start(self, name: str) -> None:
        if self.stack:
            counts = self.stack[-1][1]
            counts[name] = counts.get(name, 0) + 1
            self.stack.append((f"{name}[{counts[name]}]", {}))
        else:
            self.stack.append((name, {}))

    def end(self) -> None:
        self.stack.pop()

    def path(self) -> str:
        return "/".join(p for p, _ in self.stack)


def _events(fh: IO[bytes], name: str) -> Iterator[tuple[str, ET.Element, _Walker]]:
    """``(event, element, walker)`` over a GPX file, checking the root first."""
    walker = _Walker()
    try:
        for event, elem in ET.iterparse(fh, events=("start", "end")):
            ns, local = _local(elem.tag)
            if event == "start":
                if not walker.stack and (local != "gpx" or ns not in (GPX11, GPX10)):
                    raise FormatError(
                        f"the root element is {elem.tag!r}, not a GPX 1.1 'gpx' element in "
                        f"the namespace {GPX11}", where=name)
                walker.start(local if ns in (GPX11, GPX10) else f"{PREFIX}:{local}"
                             if ns == NS else local)
                yield event, elem, walker
            else:
                yield event, elem, walker
                walker.end()
    except ET.ParseError as exc:
        line, col = exc.position
        raise FormatError(f"not well-formed XML ({exc})",
                          where=f"{name}, line {line}, column {col + 1}") from None
    except FormatError:  # the root check above (a ValueError too): as it is
        raise
    except (LookupError, ValueError) as exc:  # an XML declaration naming an unreadable encoding
        raise FormatError(f"cannot be read as XML ({exc})", where=name) from None


def _child_text(elem: ET.Element, ns: str, local: str) -> str | None:
    child = elem.find(f"{{{ns}}}{local}")
    return None if child is None else (child.text or "")


def _ext(elem: ET.Element, ns: str, local: str) -> ET.Element | None:
    ext = elem.find(f"{{{ns}}}extensions")
    if ext is None:
        return None
    return ext.find(f"{{{NS}}}{local}")


def _point_position(elem: ET.Element) -> tuple[float, float]:
    lat = _float(elem.get("lat"), "lat")
    lon = _float(elem.get("lon"), "lon")
    if lat is None or lon is None:
        raise ValueError("lat and lon attributes are required")
    return lat, lon


# ---------------------------------------------------------------------------------------
# reading


def _waypoint_from(elem: ET.Element, ns: str, index: int) -> Waypoint:
    lat, lon = _point_position(elem)
    name = (_child_text(elem, ns, "name") or "").strip()
    ext = _ext(elem, ns, "waypoint")
    radius = rtz_id = revision = None
    if ext is not None:
        radius = _nm_to_m(ext.get("arrivalRadiusNm"), "arrivalRadiusNm")
        rtz_id = _int(ext.get("rtzId"), "rtzId")
        revision = _int(ext.get("revision"), "revision")
    return Waypoint(name or f"WP{index}", lat, lon, arrival_radius_m=radius, rtz_id=rtz_id,
                    revision=revision)


def _leg_from(elem: ET.Element, ns: str) -> LegPlan:
    ext = _ext(elem, ns, "leg")
    if ext is None:
        return LegPlan()
    return LegPlan(
        sailing=ext.get("sailing", "rhumb"),
        speed_kn=_float(ext.get("speedKn"), "speedKn"),
        speed_min_kn=_float(ext.get("speedMinKn"), "speedMinKn"),
        speed_max_kn=_float(ext.get("speedMaxKn"), "speedMaxKn"),
        xtl_port_m=_nm_to_m(ext.get("xtlPortNm"), "xtlPortNm"),
        xtl_stbd_m=_nm_to_m(ext.get("xtlStbdNm"), "xtlStbdNm"),
        turn_radius_m=_nm_to_m(ext.get("turnRadiusNm"), "turnRadiusNm"),
        notes=ext.get("notes", ""),
    )


def read_gpx_routes(fh: IO[bytes], name: str) -> tuple[list[Route], list[Waypoint]]:
    """Every ``rte`` of a GPX file as a Route, and the ``wpt`` elements as Waypoints.

    Any point that cannot be read stops the read with a FormatError naming its element.
    """
    routes: list[Route] = []
    wpts: list[Waypoint] = []
    points: list[Waypoint] = []
    legs: list[LegPlan] = []
    route_name = ""
    for event, elem, walker in _events(fh, name):
        ns, local = _local(elem.tag)
        if event != "end":
            continue
        path = walker.path()
        try:
            if local == "rtept":
                points.append(_waypoint_from(elem, ns, len(points) + 1))
                leg = _leg_from(elem, ns)
                if points and len(points) > 1:
                    legs.append(leg)
                elem.clear()
            elif local == "wpt" and len(walker.stack) == 2:
                wpts.append(_waypoint_from(elem, ns, len(wpts) + 1))
                elem.clear()
            elif local == "name" and walker.stack[-2][0].startswith("rte["):
                route_name = (elem.text or "").strip()
            elif local == "rte":
                label = route_name or f"route {len(routes) + 1}"
                try:
                    routes.append(Route(label, tuple(points), tuple(legs)))
                except InputError as exc:
                    raise FormatError(exc.reason, where=where(name, element=path)) from None
                points, legs, route_name = [], [], ""
                elem.clear()
            elif local == "trkpt":
                elem.clear()
        except FormatError:
            raise
        except (InputError, ValueError) as exc:
            reason = exc.reason if isinstance(exc, InputError) else str(exc)
            raise FormatError(reason, where=where(name, element=path)) from None
    return routes, wpts


def iter_gpx_fixes(fh: IO[bytes], name: str, summary: ReadSummary, *,
                   thin_s: float | None = None) -> Iterator[Fix]:
    """Fixes out of every ``trk/trkseg/trkpt`` that has a time, streamed.

    A ``trkpt`` without a ``time`` (or with one that is not a time, or with a position out
    of range) is skipped and counted in ``summary.rejected`` with its element path.
    """
    kept_at: datetime | None = None
    segment: ET.Element | None = None
    for event, elem, walker in _events(fh, name):
        ns, local = _local(elem.tag)
        if event == "start":
            if local == "trkseg":
                segment = elem
            continue
        if local != "trkpt":
            if local in ("wpt", "rte"):
                elem.clear()
            continue
        summary.lines_read += 1
        path = walker.path()
        text = _child_text(elem, ns, "time")
        try:
            if text is None or not text.strip():
                summary.reject("trkpt without time", path)
                continue
            try:
                t = parse_time(text)
            except ValueError:
                summary.reject("trkpt time not readable", path)
                continue
            lat, lon = _point_position(elem)
            ext = _ext(elem, ns, "fix")
            hdop = _float(_child_text(elem, ns, "hdop"), "hdop")
            sat = _child_text(elem, ns, "sat")
            kw = {}
            if ext is not None:
                method = ext.get("method", "gnss")
                kw = dict(method=method if method in FIX_METHODS else "other",
                          sog_kn=_float(ext.get("sogKn"), "sogKn"),
                          cog=_float(ext.get("cog"), "cog"),
                          heading=_float(ext.get("heading"), "heading"),
                          stw_kn=_float(ext.get("stwKn"), "stwKn"),
                          fix_mode=ext.get("fixMode") or None, remarks=ext.get("remarks", ""))
            fix = Fix(t, lat, lon, hdop=hdop,
                      satellites=int(sat) if sat and sat.strip() else None,
                      source=f"{name}:{path}", **kw)
        except (InputError, ValueError) as exc:
            summary.reject("trkpt not readable (position or value out of range)", path)
            continue
        finally:
            elem.clear()
            if segment is not None and len(segment) and segment[0] is elem:
                segment.remove(elem)
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


# ---------------------------------------------------------------------------------------
# writing


def _attrs(pairs: Iterable[tuple[str, str | None]]) -> dict[str, str]:
    return {k: v for k, v in pairs if v is not None and v != ""}


_NOT_XML = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff]")


def xml_safe(text: str, what: str) -> str:
    """``text`` if XML 1.0 can hold it; otherwise a FormatError naming ``what``."""
    bad = _NOT_XML.search(text)
    if bad:
        raise FormatError(f"{what} {text!r} holds the control character "
                          f"U+{ord(bad.group()):04X}, which XML cannot carry")
    return text


def _quote(value: str, what: str = "value") -> str:
    return quoteattr(xml_safe(value, what))


def _element(tag: str, attrs: dict[str, str]) -> str:
    return f"<{tag}" + "".join(f" {k}={_quote(v, k)}" for k, v in attrs.items()) + "/>"


def _num(value: float | None) -> str | None:
    return None if value is None else decimal_text(value)


def _write_rte(route: Route, stream: IO[str]) -> None:
    stream.write(f"  <rte>\n    <name>{escape(xml_safe(route.name, 'route name'))}</name>\n")
    for i, wp in enumerate(route.waypoints):
        stream.write(f"    <rtept lat={quoteattr(decimal_text(wp.lat))} "
                     f"lon={quoteattr(decimal_text(wp.lon))}>")
        if wp.name:
            stream.write(f"<name>{escape(xml_safe(wp.name, 'waypoint name'))}</name>")
        ext: list[str] = []
        way = _attrs([("arrivalRadiusNm", _nm(wp.arrival_radius_m)),
                      ("rtzId", None if wp.rtz_id is None else str(wp.rtz_id)),
                      ("revision", None if wp.revision is None else str(wp.revision))])
        if way:
            ext.append(_element(f"{PREFIX}:waypoint", way))
        if i > 0:
            leg = route.legs[i - 1]
            ext.append(_element(f"{PREFIX}:leg", _attrs([
                ("sailing", leg.sailing),
                ("speedKn", _num(leg.speed_kn)),
                ("speedMinKn", _num(leg.speed_min_kn)),
                ("speedMaxKn", _num(leg.speed_max_kn)),
                ("xtlPortNm", _nm(leg.xtl_port_m)),
                ("xtlStbdNm", _nm(leg.xtl_stbd_m)),
                ("turnRadiusNm", _nm(leg.turn_radius_m)),
                ("notes", leg.notes),
            ])))
        if ext:
            stream.write("<extensions>" + "".join(ext) + "</extensions>")
        stream.write("</rtept>\n")
    stream.write("  </rte>\n")


def _write_trk(fixes: Iterable[Fix], stream: IO[str], name: str) -> int:
    stream.write("  <trk>\n")
    if name:
        stream.write(f"    <name>{escape(xml_safe(name, 'track name'))}</name>\n")
    stream.write("    <trkseg>\n")
    count = 0
    for fix in fixes:
        parts = [f"      <trkpt lat={quoteattr(decimal_text(fix.lat))} "
                 f"lon={quoteattr(decimal_text(fix.lon))}>",
                 f"<time>{format_time(fix.time_utc)}</time>"]
        if fix.satellites is not None:
            parts.append(f"<sat>{fix.satellites}</sat>")
        if fix.hdop is not None:
            parts.append(f"<hdop>{decimal_text(fix.hdop)}</hdop>")
        ext = _attrs([("method", fix.method), ("sogKn", _num(fix.sog_kn)),
                      ("cog", _num(fix.cog)), ("heading", _num(fix.heading)),
                      ("stwKn", _num(fix.stw_kn)), ("fixMode", fix.fix_mode),
                      ("remarks", fix.remarks)])
        parts.append(f"<extensions>{_element(PREFIX + ':fix', ext)}</extensions></trkpt>\n")
        stream.write("".join(parts))
        count += 1
    stream.write("    </trkseg>\n  </trk>\n")
    return count


def write_gpx(stream: IO[str], *, routes: Iterable[Route] = (),
              fixes: Iterable[Fix] | None = None, track_name: str = "") -> int:
    """One GPX 1.1 document: each route as ``rte``, then the fixes (if given) as one
    ``trk`` with one ``trkseg``, streamed. Returns the number of fixes written."""
    stream.write('<?xml version="1.0" encoding="UTF-8"?>\n'
                 f'<gpx xmlns="{GPX11}" xmlns:{PREFIX}="{NS}" version="1.1" '
                 'creator="passagelog">\n')
    for route in routes:
        _write_rte(route, stream)
    count = 0 if fixes is None else _write_trk(fixes, stream, track_name)
    stream.write("</gpx>\n")
    return count


def write_gpx_route(route: Route, stream: IO[str]) -> None:
    """One route as GPX 1.1 ``rte`` (with passagelog's leg extension)."""
    write_gpx(stream, routes=[route])


def write_gpx_track(fixes: Iterable[Fix], stream: IO[str], *, name: str = "") -> int:
    """Fixes as one GPX 1.1 ``trk`` with one ``trkseg``, streamed; returns the count."""
    return write_gpx(stream, fixes=fixes, track_name=name)
