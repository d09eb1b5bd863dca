"""RTZ (IEC 61174 route exchange): files written by hand to the 1.0 and 1.1 layouts,
defaults, schedules, kept extensions, and the errors that name their element."""

from __future__ import annotations

import io
import xml.etree.ElementTree as ET
from datetime import datetime, timezone
from pathlib import Path

import pytest

from passagelog.errors import FormatError
from passagelog.formats import read_route, write_route
from passagelog.formats.rtz import RTZ_NS
from passagelog.model import LegPlan, Route, ScheduleItem, Waypoint
from passagelog.nav.units import NM_M

DATA = Path(__file__).parent / "data"
UTC = timezone.utc


def nm(value: float):
    """``value`` NM in metres, to the micrometre the readers keep."""
    return pytest.approx(value * NM_M, abs=1e-6)


def test_rtz_1_0_hand_written():
    route = read_route(DATA / "route_1_0.rtz")
    assert route.name == "Channel crossing"
    assert [(w.rtz_id, w.revision, w.name) for w in route.waypoints] == [
        (10, 1, "Departure buoy"), (11, 3, "Mid-channel"), (12, 1, "Landfall")]
    assert (route.waypoints[2].lat, route.waypoints[2].lon) == (49.68, -1.61)
    first, second = route.legs
    # the leg on waypoint 11 describes the leg from 10 to 11
    assert first.sailing == "great-circle"
    assert first.xtl_port_m == nm(0.5) and first.xtl_stbd_m == nm(0.25)
    assert (first.speed_min_kn, first.speed_max_kn) == (8.0, 12.5)
    assert first.turn_radius_m == nm(0.8)
    assert first.notes == "keep clear of the lane"
    assert ("rtz:leg@safetyContour", "20") in first.extras
    # waypoint 12 has no leg: the defaultWaypoint gives it all
    assert second.sailing == "rhumb"
    assert second.xtl_port_m == nm(0.1) and second.xtl_stbd_m == nm(0.15)
    assert second.speed_max_kn == 14.0 and second.turn_radius_m == nm(0.3)
    assert ("rtz:routeInfo@vesselVoyage", "V-0142") in route.extras
    assert route.schedule == (
        ScheduleItem(0, etd_utc=datetime(2024, 6, 1, 6, 0, tzinfo=UTC), schedule_name="Base"),
        # a lowercase z, read leniently
        ScheduleItem(2, eta_utc=datetime(2024, 6, 1, 13, 30, tzinfo=UTC), schedule_name="Base"),
    )


def test_rtz_1_1_hand_written():
    route = read_route(DATA / "route_1_1.rtz")
    assert [w.rtz_id for w in route.waypoints] == [0, 5, 3]  # ids are not the list index
    assert route.legs[0].sailing == "rhumb"  # Loxodrome is the default
    assert route.legs[1].sailing == "great-circle"
    assert route.legs[0].turn_radius_m == nm(1.0)
    kept = [v for k, v in route.waypoints[1].extras if k == "rtz:extension"]
    assert len(kept) == 1 and "rateOfTurn" in kept[0] and "Example Maker" in kept[0]
    assert [(s.waypoint_index, s.kind) for s in route.schedule] == [
        (0, "calculated"), (1, "calculated"), (2, "calculated")]
    # +02:00 given, UTC kept
    assert route.schedule[2].eta_utc == datetime(2024, 7, 3, 2, 10, tzinfo=UTC)


def _canon(elem: ET.Element) -> str:
    return ET.canonicalize(ET.tostring(elem, encoding="unicode"), strip_text=True)


def _extensions(text: str) -> list[str]:
    root = ET.fromstring(text.encode("utf-8"))
    return [_canon(e) for e in root.iter() if e.tag.endswith("}extension")
            and e.get("manufacturer") != "passagelog"]


@pytest.mark.parametrize("name", ["route_1_0.rtz", "route_1_1.rtz"])
def test_round_trip_keeps_everything(tmp_path, name):
    route = read_route(DATA / name)
    out = io.StringIO()
    version = "1.0" if "1_0" in name else "1.1"
    write_route(route, "rtz", out, version=version)
    path = tmp_path / "out.rtz"
    path.write_text(out.getvalue(), encoding="utf-8")
    assert read_route(path) == route
    original = (DATA / name).read_text(encoding="utf-8")
    assert _extensions(out.getvalue()) == _extensions(original)  # unknown extensions as read


def test_written_1_0_and_1_1_use_their_namespaces(tmp_path):
    route = read_route(DATA / "route_1_1.rtz")
    for version in ("1.0", "1.1"):
        out = io.StringIO()
        write_route(route, "rtz", out, version=version)
        root = ET.fromstring(out.getvalue().encode("utf-8"))
        assert root.tag == f"{{{RTZ_NS[version]}}}route" and root.get("version") == version
        # the layout: routeInfo, waypoints, schedules, extensions; position before leg
        assert [c.tag.split("}")[1] for c in root] == [
            "routeInfo", "waypoints", "schedules", "extensions"]
        wp = root.find(f"{{{RTZ_NS[version]}}}waypoints")[1]
        assert [c.tag.split("}")[1] for c in wp] == ["position", "leg", "extensions"]
        assert out.getvalue().count(f'xmlns="{RTZ_NS[version]}"') == 1  # default namespace
        path = tmp_path / f"v{version}.rtz"
        path.write_text(out.getvalue(), encoding="utf-8")
        back = read_route(path)
        assert back.waypoints == tuple(w for w in back.waypoints)
        assert [w.rtz_id for w in back.waypoints] == [0, 5, 3]
        assert back.legs[1].sailing == "great-circle"
        assert back.schedule == route.schedule


def _rtz(tmp_path, waypoints: str, extra: str = "") -> Path:
    path = tmp_path / "t.rtz"
    path.write_text(f'<route xmlns="{RTZ_NS["1.1"]}" version="1.1"><routeInfo routeName="T"/>'
                    f"<waypoints>{waypoints}</waypoints>{extra}</route>", encoding="utf-8")
    return path


WP = '<waypoint id="{}"><position lat="{}" lon="0"/>{}</waypoint>'


def test_duplicate_waypoint_id_names_the_element(tmp_path):
    path = _rtz(tmp_path, WP.format(1, 1, "") + WP.format(2, 2, "") + WP.format(1, 3, ""))
    with pytest.raises(FormatError, match="waypoint id 1 is used twice") as exc:
        read_route(path)
    assert exc.value.where == "t.rtz, element route/waypoints/waypoint[3]"


def test_unknown_geometry_type_names_the_element(tmp_path):
    path = _rtz(tmp_path, WP.format(1, 1, "") + WP.format(2, 2, '<leg geometryType="Spiral"/>'))
    with pytest.raises(FormatError, match="geometryType 'Spiral' is not one of") as exc:
        read_route(path)
    assert exc.value.where == "t.rtz, element route/waypoints/waypoint[2]/leg"


@pytest.mark.parametrize("waypoints, extra, message, element", [
    (WP.format(-1, 1, "") + WP.format(2, 2, ""), "", "waypoint id '-1'",
     "route/waypoints/waypoint[1]"),
    (WP.format("x", 1, "") + WP.format(2, 2, ""), "", "is not a whole number",
     "route/waypoints/waypoint[1]"),
    (WP.format(1, 91, "") + WP.format(2, 2, ""), "", "latitude '91'",
     "route/waypoints/waypoint[1]/position"),
    (WP.format(1, 1, "") + WP.format(2, 2, '<leg portsideXTD="wide"/>'), "",
     "portsideXTD", "route/waypoints/waypoint[2]"),
    (WP.format(1, 1, ""), "", "at least 2 are needed", "route/waypoints"),
    (WP.format(1, 1, "") + WP.format(2, 2, ""),
     '<schedules><schedule id="1"><manual><scheduleElement waypointId="9" eta="2024-01-01T00:00:00Z"/>'
     "</manual></schedule></schedules>", "waypointId 9 names no waypoint",
     "route/schedules/schedule[1]/manual/scheduleElement[1]"),
    (WP.format(1, 1, "") + WP.format(2, 2, ""),
     '<schedules><schedule id="1"><manual><scheduleElement waypointId="1" eta="tomorrow"/>'
     "</manual></schedule></schedules>", "eta 'tomorrow' is not an ISO 8601",
     "route/schedules/schedule[1]/manual/scheduleElement[1]"),
])
def test_bad_values_name_their_element(tmp_path, waypoints, extra, message, element):
    with pytest.raises(FormatError, match=message) as exc:
        read_route(_rtz(tmp_path, waypoints, extra))
    assert exc.value.where.startswith(f"t.rtz, element {element}")


def test_missing_route_name(tmp_path):
    path = tmp_path / "n.rtz"
    path.write_text(f'<route xmlns="{RTZ_NS["1.0"]}" version="1.0"><routeInfo/><waypoints/>'
                    "</route>", encoding="utf-8")
    with pytest.raises(FormatError, match="no routeName"):
        read_route(path)


def test_passagelog_data_rtz_cannot_hold_goes_in_our_extension(tmp_path):
    route = Route("Ours", (Waypoint("A", 1, 1, arrival_radius_m=370.4), Waypoint("B", 2, 1)),
                  (LegPlan(speed_kn=12.5),))
    out = io.StringIO()
    write_route(route, "rtz", out, version="1.0")
    text = out.getvalue()
    assert 'manufacturer="passagelog"' in text and 'speedKn="12.5"' in text
    path = tmp_path / "o.rtz"
    path.write_text(text, encoding="utf-8")
    back = read_route(path)
    assert back.waypoints[0].arrival_radius_m == 370.4 and back.legs[0].speed_kn == 12.5
    assert [w.rtz_id for w in back.waypoints] == [1, 2]  # ids given where there were none
    assert back.waypoints[0].extras == () and back.legs[0].extras == ()
