"""IEC 61174 route exchange (RTZ) 1.0, 1.1 and 1.2: routes in, routes out (1.0 or 1.1).

Parsed with xml.etree.ElementTree: it does not fetch external entities, and the expat it
is built on (2.4.1 and later) refuses entity-expansion bombs, so defusedxml (not installed)
is not needed; route files are small, so the whole document is read at once.

Mapping (element paths in messages are like ``route/waypoints/waypoint[3]``):

* ``routeInfo@routeName`` -> ``Route.name``; other routeInfo attributes are kept in
  ``Route.extras`` as ``("rtz:routeInfo@NAME", value)``.
* ``waypoint@id`` (unique non-negative integer) -> ``Waypoint.rtz_id``; ``@revision`` ->
  ``Waypoint.revision``; ``@name``; ``position@lat/@lon``.
* ``waypoint@radius`` (NM) is the turn radius at that waypoint -> the ``turn_radius_m`` of
  the leg ending there (on the first waypoint it is kept in its extras).
* ``leg`` on waypoint n describes the leg from n-1 to n -> ``Route.legs[n-1]``:
  ``geometryType`` Loxodrome (default) -> ``rhumb``, Orthodrome -> ``great-circle``;
  ``portsideXTD``/``starboardXTD`` (NM) -> ``xtl_port_m``/``xtl_stbd_m``; ``speedMin``/
  ``speedMax`` (kn); ``legNote1`` -> ``notes``; every other leg attribute is kept in the
  leg's extras as ``("rtz:leg@NAME", value)``. ``defaultWaypoint`` supplies what a waypoint
  or leg leaves out.
* ``schedules/schedule/(manual|calculated)/scheduleElement`` -> ``Route.schedule``
  (``eta``/``etd`` in UTC; a lowercase ``z`` is accepted); the element's other attributes
  are kept in ``Route.extras``.
* ``extensions`` on the route, routeInfo, a waypoint or a leg: each child we do not know is
  kept as XML text in the extras of the object it belongs to and written back in place.
  passagelog's own data that RTZ has no attribute for (arrival radius, planned speed) is
  written in an ``extension`` with ``manufacturer="passagelog"``.
"""

from __future__ import annotations

import xml.etree.ElementTree as ET
from datetime import datetime
from typing import IO

from passagelog.errors import FormatError, InputError
from passagelog.formats._common import decimal_text, where
from passagelog.formats.gpx import format_time, parse_time
from passagelog.model import LegPlan, Route, ScheduleItem, Waypoint
from passagelog.nav.units import NM_M

RTZ_NS = {
    "1.0": "http://www.cirm.org/RTZ/1/0",
    "1.1": "http://www.cirm.org/RTZ/1/1",
    "1.2": "http://www.cirm.org/RTZ/1/2",
}
VERSION_OF_NS = {ns: v for v, ns in RTZ_NS.items()}
WRITE_VERSIONS = ("1.0", "1.1")
#: Namespace of passagelog's own elements inside an RTZ ``extension``.
PL_NS = "https://passagelog.invalid/rtz/1"
MANUFACTURER = "passagelog"

GEOMETRY = {"Loxodrome": "rhumb", "Orthodrome": "great-circle"}
GEOMETRY_OUT = {v: k for k, v in GEOMETRY.items()}

_LEG_KNOWN = {"geometryType", "portsideXTD", "starboardXTD", "speedMin", "speedMax",
              "legNote1"}
_WPT_KNOWN = {"id", "revision", "name", "radius"}

ET.register_namespace("pl", PL_NS)


def _local(tag: str) -> tuple[str, str]:
    if tag[:1] == "{":
        ns, _, name = tag[1:].partition("}")
        return ns, name
    return "", tag


def _number(value: str | None, what: str, place: str, *, integer: bool = False):
    if value is None or value.strip() == "":
        return None
    try:
        number = int(value) if integer else float(value)
    except ValueError:
        kind = "a whole number" if integer else "a number"
        raise FormatError(f"{what} {value!r} is not {kind}", where=place) from None
    if number != number or number in (float("inf"), float("-inf")) or number < 0:
        raise FormatError(f"{what} {value!r} must be a finite number >= 0", where=place)
    return number


def _nm(value: str | None, what: str, place: str) -> float | None:
    number = _number(value, what, place)
    return None if number is None else round(number * NM_M, 6)


def _xml(elem: ET.Element) -> str:
    return ET.tostring(elem, encoding="unicode").strip()


class _Reader:
    def __init__(self, root: ET.Element, ns: str, name: str):
        self.root = root
        self.ns = ns
        self.name = name

    def q(self, local: str) -> str:
        return f"{{{self.ns}}}{local}"

    def place(self, path: str) -> str:
        return where(self.name, element=path)

    def extensions(self, parent: ET.Element) -> tuple[list[str], list[ET.Element]]:
        """Kept children of ``parent/extensions`` as XML, and passagelog's own elements."""
        ext = parent.find(self.q("extensions"))
        kept: list[str] = []
        ours: list[ET.Element] = []
        if ext is None:
            return kept, ours
        for child in ext:
            if _local(child.tag)[1] == "extension" and child.get("manufacturer") == MANUFACTURER:
                ours.extend(child)
            else:
                kept.append(_xml(child))
        return kept, ours

    def route(self) -> Route:
        info = self.root.find(self.q("routeInfo"))
        if info is None:
            raise FormatError("routeInfo is required", where=self.place("route"))
        route_name = (info.get("routeName") or "").strip()
        if not route_name:
            raise FormatError("routeInfo has no routeName (it is required)",
                              where=self.place("route/routeInfo"))
        extras: list[tuple[str, str]] = [
            (f"rtz:routeInfo@{k}", v) for k, v in info.attrib.items() if k != "routeName"]
        kept, _ = self.extensions(info)
        extras += [("rtz:routeInfo/extension", x) for x in kept]

        wps = self.root.find(self.q("waypoints"))
        if wps is None:
            raise FormatError("waypoints is required", where=self.place("route"))
        default = wps.find(self.q("defaultWaypoint"))
        default_radius = None if default is None else default.get("radius")
        default_leg = None if default is None else default.find(self.q("leg"))
        waypoints: list[Waypoint] = []
        legs: list[LegPlan] = []
        ids: dict[int, int] = {}
        for index, elem in enumerate(wps.findall(self.q("waypoint")), start=1):
            path = f"route/waypoints/waypoint[{index}]"
            place = self.place(path)
            raw_id = elem.get("id")
            if raw_id is None:
                raise FormatError("waypoint has no id (a unique whole number >= 0 is required)",
                                  where=place)
            wid = _number(raw_id, "waypoint id", place, integer=True)
            if wid in ids:
                raise FormatError(
                    f"waypoint id {wid} is used twice (first by waypoint[{ids[wid] + 1}]); "
                    f"ids must be unique", where=place)
            ids[wid] = len(waypoints)
            revision = _number(elem.get("revision"), "waypoint revision", place, integer=True)
            pos = elem.find(self.q("position"))
            if pos is None:
                raise FormatError("waypoint has no position", where=place)
            lat = _number_signed(pos.get("lat"), "latitude", self.place(path + "/position"))
            lon = _number_signed(pos.get("lon"), "longitude", self.place(path + "/position"))
            radius_text = elem.get("radius", default_radius)
            radius_m = _nm(radius_text, "waypoint radius (NM)", place)
            wextras: list[tuple[str, str]] = [
                (f"rtz:waypoint@{k}", v) for k, v in elem.attrib.items() if k not in _WPT_KNOWN]
            kept, ours = self.extensions(elem)
            wextras += [("rtz:extension", x) for x in kept]
            arrival_m = planned_kn = None
            for own in ours:
                own_local = _local(own.tag)[1]
                if own_local == "waypoint":
                    arrival_m = _nm(own.get("arrivalRadiusNm"), "arrival radius (NM)", place)
                elif own_local == "leg":
                    planned_kn = _number(own.get("speedKn"), "planned speed (kn)", place)
            leg_elem = elem.find(self.q("leg"))
            if not waypoints:
                if radius_text is not None and elem.get("radius") is not None:
                    wextras.append(("rtz:radius", radius_text))
                if leg_elem is not None:
                    wextras.append(("rtz:leg", _xml(leg_elem)))
            else:
                legs.append(self.leg(leg_elem, default_leg, radius_m, planned_kn,
                                     path + "/leg"))
            try:
                waypoints.append(Waypoint(elem.get("name", ""), lat, lon,
                                          arrival_radius_m=arrival_m, rtz_id=wid,
                                          revision=revision, extras=tuple(wextras)))
            except InputError as exc:
                raise FormatError(exc.reason, where=place) from None

        schedule = self.schedules(ids, extras)
        kept, _ = self.extensions(self.root)
        extras += [("rtz:route/extension", x) for x in kept]
        try:
            return Route(route_name, tuple(waypoints), tuple(legs), tuple(schedule),
                         extras=tuple(extras))
        except InputError as exc:
            raise FormatError(exc.reason, where=self.place("route/waypoints")) from None

    def leg(self, elem: ET.Element | None, default: ET.Element | None, radius_m: float | None,
            planned_kn: float | None, path: str) -> LegPlan:
        place = self.place(path)

        def attr(key: str) -> str | None:
            if elem is not None and elem.get(key) is not None:
                return elem.get(key)
            return None if default is None else default.get(key)

        geometry = attr("geometryType")
        if geometry is None:
            sailing = "rhumb"
        elif geometry in GEOMETRY:
            sailing = GEOMETRY[geometry]
        else:
            raise FormatError(
                f"leg geometryType {geometry!r} is not one of: Loxodrome, Orthodrome",
                where=place)
        extras: list[tuple[str, str]] = []
        for source in (default, elem):
            if source is None:
                continue
            for k, v in source.attrib.items():
                if k not in _LEG_KNOWN:
                    extras = [(ek, ev) for ek, ev in extras if ek != f"rtz:leg@{k}"]
                    extras.append((f"rtz:leg@{k}", v))
        if elem is not None:
            kept, _ = self.extensions(elem)
            extras += [("rtz:extension", x) for x in kept]
        try:
            return LegPlan(
                sailing=sailing,
                speed_kn=planned_kn,
                xtl_port_m=_nm(attr("portsideXTD"), "leg portsideXTD (NM)", place),
                xtl_stbd_m=_nm(attr("starboardXTD"), "leg starboardXTD (NM)", place),
                turn_radius_m=radius_m,
                notes=attr("legNote1") or "",
                speed_min_kn=_number(attr("speedMin"), "leg speedMin (kn)", place),
                speed_max_kn=_number(attr("speedMax"), "leg speedMax (kn)", place),
                extras=tuple(extras),
            )
        except InputError as exc:
            raise FormatError(exc.reason, where=place) from None

    def schedules(self, ids: dict[int, int], extras: list) -> list[ScheduleItem]:
        out: list[ScheduleItem] = []
        scheds = self.root.find(self.q("schedules"))
        if scheds is None:
            return out
        for s_index, sched in enumerate(scheds.findall(self.q("schedule")), start=1):
            s_path = f"route/schedules/schedule[{s_index}]"
            sid = sched.get("id", str(s_index))
            sname = sched.get("name") or ""
            label = sname
            if not sname and any(it.schedule_name == "" for it in out):
                label = f"#{sid}"  # a second schedule without a name
            if sid != str(s_index):
                extras.append(("rtz:schedule-id", f"{sid}\t{label}"))
            kept, _ = self.extensions(sched)
            extras += [("rtz:schedule/extension", f"{label}\t{x}") for x in kept]
            for kind in ("manual", "calculated"):
                lst = sched.find(self.q(kind))
                if lst is None:
                    continue
                for e_index, el in enumerate(lst.findall(self.q("scheduleElement")), start=1):
                    path = f"{s_path}/{kind}/scheduleElement[{e_index}]"
                    place = self.place(path)
                    wid = _number(el.get("waypointId"), "scheduleElement waypointId", place,
                                  integer=True)
                    if wid is None:
                        raise FormatError("scheduleElement has no waypointId", where=place)
                    if wid not in ids:
                        raise FormatError(
                            f"scheduleElement waypointId {wid} names no waypoint of the route",
                            where=place)
                    times: dict[str, datetime | None] = {}
                    for key in ("eta", "etd"):
                        text = el.get(key)
                        if text is None or not text.strip():
                            times[key] = None
                            continue
                        try:
                            times[key] = parse_time(text)
                        except ValueError:
                            raise FormatError(
                                f"scheduleElement {key} {text!r} is not an ISO 8601 UTC time "
                                f"(like 2024-05-01T12:00:00Z)", where=place) from None
                    for k, v in el.attrib.items():
                        if k not in ("waypointId", "eta", "etd"):
                            extras.append((f"rtz:scheduleElement@{k}",
                                           f"{label}\t{kind}\t{ids[wid]}\t{v}"))
                    out.append(ScheduleItem(ids[wid], eta_utc=times["eta"],
                                            etd_utc=times["etd"], kind=kind,
                                            schedule_name=label))
        return out


def _number_signed(value: str | None, what: str, place: str) -> float:
    if value is None or not value.strip():
        raise FormatError(f"position {what} is required", where=place)
    try:
        number = float(value)
    except ValueError:
        raise FormatError(f"position {what} {value!r} is not a number in decimal degrees",
                          where=place) from None
    limit = 90.0 if what == "latitude" else 180.0
    if not -limit <= number <= limit:
        raise FormatError(f"position {what} {value!r} is outside -{limit:g} to {limit:g}",
                          where=place)
    return number


def rtz_version(root: ET.Element) -> str | None:
    ns, local = _local(root.tag)
    return VERSION_OF_NS.get(ns) if local == "route" else None


def read_rtz(fh: IO[bytes], name: str) -> Route:
    """The route of an RTZ file (versions 1.0 to 1.2)."""
    try:
        root = ET.parse(fh).getroot()
    except ET.ParseError as exc:
        line, col = exc.position
        raise FormatError(f"not well-formed XML ({exc})",
                          where=f"{name}, line {line}, column {col + 1}") from None
    except (LookupError, ValueError) as exc:  # an XML declaration naming an unreadable encoding
        raise FormatError(f"cannot be read as XML ({exc})", where=name) from None
    version = rtz_version(root)
    if version is None:
        raise FormatError(
            f"the root element is {root.tag!r}, not an RTZ 'route' in one of the namespaces "
            + ", ".join(RTZ_NS.values()), where=name)
    return _Reader(root, RTZ_NS[version], name).route()


# ---------------------------------------------------------------------------------------
# writing


def _fmt_nm(metres: float) -> str:
    return decimal_text(round(metres / NM_M, 12))


def _renamespace(elem: ET.Element, target: str) -> ET.Element:
    """Move elements of any RTZ namespace into ``target`` (for a version change)."""
    for node in elem.iter():
        ns, local = _local(node.tag)
        if ns in VERSION_OF_NS:
            node.tag = f"{{{target}}}{local}"
    return elem


def write_rtz(route: Route, stream: IO[str], *, version: str = "1.1") -> None:
    """Write ``route`` as RTZ ``version`` (1.0 or 1.1), keeping the extras it was read with."""
    if version not in WRITE_VERSIONS:
        raise FormatError(f"RTZ version {version!r} cannot be written; use one of: "
                          + ", ".join(WRITE_VERSIONS))
    ns = RTZ_NS[version]

    def q(local: str) -> str:
        return f"{{{ns}}}{local}"

    def kept(parent: ET.Element, texts: list[str], own: list[ET.Element] | None = None) -> None:
        if not texts and not own:
            return
        ext = ET.SubElement(parent, q("extensions"))
        if own:
            mine = ET.SubElement(ext, q("extension"),
                                 {"manufacturer": MANUFACTURER, "name": "plan", "version": "1"})
            mine.extend(own)
        for text in texts:
            ext.append(_renamespace(ET.fromstring(text), ns))

    extras = list(route.extras)
    root = ET.Element(q("route"), {"version": version})
    info_attrs = {"routeName": route.name}
    info_attrs.update({k.split("@", 1)[1]: v for k, v in extras
                       if k.startswith("rtz:routeInfo@")})
    info = ET.SubElement(root, q("routeInfo"), info_attrs)
    kept(info, [v for k, v in extras if k == "rtz:routeInfo/extension"])

    wps = ET.SubElement(root, q("waypoints"))
    used = {wp.rtz_id for wp in route.waypoints if wp.rtz_id is not None}
    next_id = max(used, default=0) + 1
    seen: set[int] = set()
    ids: list[int] = []
    for wp in route.waypoints:
        if wp.rtz_id is not None and wp.rtz_id not in seen:
            wid = wp.rtz_id
        else:
            while next_id in used or next_id in seen:
                next_id += 1
            wid = next_id
        seen.add(wid)
        ids.append(wid)
    for i, wp in enumerate(route.waypoints):
        attrs = {"id": str(ids[i])}
        if wp.revision is not None:
            attrs["revision"] = str(wp.revision)
        if wp.name:
            attrs["name"] = wp.name
        leg = route.legs[i - 1] if i > 0 else None
        if leg is not None and leg.turn_radius_m is not None:
            attrs["radius"] = _fmt_nm(leg.turn_radius_m)
        elif i == 0:
            attrs.update({"radius": v for k, v in wp.extras if k == "rtz:radius"})
        attrs.update({k.split("@", 1)[1]: v for k, v in wp.extras
                      if k.startswith("rtz:waypoint@")})
        elem = ET.SubElement(wps, q("waypoint"), attrs)
        ET.SubElement(elem, q("position"),
                      {"lat": decimal_text(wp.lat), "lon": decimal_text(wp.lon)})
        own: list[ET.Element] = []
        if wp.arrival_radius_m is not None:
            own.append(ET.Element(f"{{{PL_NS}}}waypoint",
                                  {"arrivalRadiusNm": _fmt_nm(wp.arrival_radius_m)}))
        if leg is not None:
            la = {"geometryType": GEOMETRY_OUT[leg.sailing]}
            if leg.xtl_port_m is not None:
                la["portsideXTD"] = _fmt_nm(leg.xtl_port_m)
            if leg.xtl_stbd_m is not None:
                la["starboardXTD"] = _fmt_nm(leg.xtl_stbd_m)
            if leg.speed_min_kn is not None:
                la["speedMin"] = decimal_text(leg.speed_min_kn)
            if leg.speed_max_kn is not None:
                la["speedMax"] = decimal_text(leg.speed_max_kn)
            if leg.notes:
                la["legNote1"] = leg.notes
            la.update({k.split("@", 1)[1]: v for k, v in leg.extras
                       if k.startswith("rtz:leg@")})
            leg_elem = ET.SubElement(elem, q("leg"), la)
            kept(leg_elem, [v for k, v in leg.extras if k == "rtz:extension"])
            if leg.speed_kn is not None:
                own.append(ET.Element(f"{{{PL_NS}}}leg",
                                      {"speedKn": decimal_text(leg.speed_kn)}))
        else:
            for k, v in wp.extras:
                if k == "rtz:leg":
                    elem.append(_renamespace(ET.fromstring(v), ns))
        kept(elem, [v for k, v in wp.extras if k == "rtz:extension"], own)

    if route.schedule:
        _write_schedules(route, root, q, ids, extras, kept)
    kept(root, [v for k, v in extras if k == "rtz:route/extension"])
    ET.indent(root, space="  ")
    stream.write('<?xml version="1.0" encoding="UTF-8"?>\n')
    stream.write(serialize(root, ns))
    stream.write("\n")


def serialize(root: ET.Element, default_ns: str) -> str:
    """XML text of ``root`` with ``default_ns`` as the default namespace.

    ElementTree's own ``default_namespace`` refuses unqualified attributes (which every RTZ
    attribute is), and without it every element gets an ``ns0:`` prefix that some route
    readers do not expect; so the tree is written out here. Other namespaces get their
    registered prefix (``pl`` for passagelog's) or ``ns1``, ``ns2``...
    """
    from xml.sax.saxutils import escape, quoteattr

    prefixes: dict[str, str] = {}
    known = {uri: prefix for prefix, uri in (("pl", PL_NS),)}

    def prefix_of(uri: str) -> str:
        if uri not in prefixes:
            prefixes[uri] = known.get(uri) or f"ns{len(prefixes) + 1}"
        return prefixes[uri]

    def qname(tag: str, attribute: bool) -> str:
        uri, local = _local(tag)
        if not uri or (uri == default_ns and not attribute):
            return local
        return f"{prefix_of(uri)}:{local}"

    from passagelog.formats.gpx import xml_safe

    for node in root.iter():
        qname(node.tag, False)
        for key, value in node.attrib.items():
            qname(key, True)
            xml_safe(value, _local(key)[1])
        if node.text:
            xml_safe(node.text, _local(node.tag)[1])
    parts: list[str] = []

    def write(node: ET.Element, top: bool) -> None:
        tag = qname(node.tag, False)
        attrs = "".join(f" {qname(k, True)}={quoteattr(v)}" for k, v in node.attrib.items())
        if top:
            decl = f' xmlns="{default_ns}"' + "".join(
                f" xmlns:{p}={quoteattr(u)}" for u, p in prefixes.items())
            attrs = decl + attrs
        parts.append(f"<{tag}{attrs}")
        if len(node) == 0 and not node.text:
            parts.append("/>")
        else:
            parts.append(">")
            if node.text:
                parts.append(escape(node.text))
            for child in node:
                write(child, False)
            parts.append(f"</{tag}>")
        if node.tail and not top:
            parts.append(escape(node.tail))

    write(root, True)
    return "".join(parts)


def _write_schedules(route: Route, root: ET.Element, q, ids: list[int], extras: list,
                     kept) -> None:
    named_ids = {}
    for k, v in extras:
        if k == "rtz:schedule-id":
            sid, _, sname = v.partition("\t")
            named_ids[sname] = sid
    labels: list[str] = []
    for item in route.schedule:
        if item.schedule_name not in labels:
            labels.append(item.schedule_name)
    scheds = ET.SubElement(root, q("schedules"))
    elem_extras: dict[tuple[str, str, int], list[tuple[str, str]]] = {}
    for k, v in extras:
        if k.startswith("rtz:scheduleElement@"):
            label, kind, idx, value = v.split("\t", 3)
            elem_extras.setdefault((label, kind, int(idx)), []).append(
                (k.split("@", 1)[1], value))
    for number, label in enumerate(labels, start=1):
        attrs = {"id": named_ids.get(label, str(number))}
        if label and not label.startswith("#"):
            attrs["name"] = label
        sched = ET.SubElement(scheds, q("schedule"), attrs)
        for kind in ("manual", "calculated"):
            items = [it for it in route.schedule if it.schedule_name == label and it.kind == kind]
            if not items:
                continue
            lst = ET.SubElement(sched, q(kind))
            for it in items:
                ea = {"waypointId": str(ids[it.waypoint_index])}
                if it.etd_utc is not None:
                    ea["etd"] = format_time(it.etd_utc)
                if it.eta_utc is not None:
                    ea["eta"] = format_time(it.eta_utc)
                ea.update(elem_extras.get((label, kind, it.waypoint_index), []))
                ET.SubElement(lst, q("scheduleElement"), ea)
        kept(sched, [v.split("\t", 1)[1] for k, v in extras
                     if k == "rtz:schedule/extension" and v.split("\t", 1)[0] == label])
