"""GPX 1.1: a file written by hand to the published schema, errors with element paths,
round trips, and our output read back by gpxpy (an outside parser)."""

from __future__ import annotations

import io
from datetime import datetime, timezone
from pathlib import Path

import gpxpy
import pytest

from passagelog.errors import FormatError
from passagelog.formats import read_fixes, read_route, read_routes, write_fixes, write_route
from passagelog.formats.gpx import NS
from passagelog.model import Fix, LegPlan, Route, Waypoint

DATA = Path(__file__).parent / "data"
UTC = timezone.utc


def test_hand_written_route():
    route = read_route(DATA / "passage.gpx")
    assert route.name == "Gulf crossing"
    assert [w.name for w in route.waypoints] == ["Harbour", "Mid", "Arrival"]
    assert (route.waypoints[1].lat, route.waypoints[1].lon) == (59.8, 24.85)
    # GPX carries no leg attributes: the defaults
    assert route.legs == (LegPlan(), LegPlan())


def test_hand_written_track_skips_and_counts_points_without_time():
    fixes, summary = read_fixes(DATA / "passage.gpx")
    assert [f.time_utc for f in fixes] == [
        datetime(2024, 8, 1, 6, 0, tzinfo=UTC),
        datetime(2024, 8, 1, 6, 1, tzinfo=UTC),
        datetime(2024, 8, 1, 6, 10, 0, 500000, tzinfo=UTC),
    ]
    assert (fixes[0].satellites, fixes[0].hdop) == (9, 0.8)
    assert summary.lines_read == 5 and summary.fixes_kept == 3
    assert summary.rejected_at == {
        "trkpt without time": ["gpx/trk[1]/trkseg[1]/trkpt[3]"],
        "trkpt time not readable": ["gpx/trk[1]/trkseg[2]/trkpt[2]"],
    }
    assert fixes[2].source == "passage.gpx:gpx/trk[1]/trkseg[2]/trkpt[1]"


def test_waypoints_only_become_a_route(tmp_path):
    path = tmp_path / "marks.gpx"
    path.write_text(
        '<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="t">'
        '<wpt lat="1" lon="2"><name>P</name></wpt><wpt lat="1.5" lon="2.5"><name>Q</name></wpt>'
        "</gpx>", encoding="utf-8")
    route = read_route(path)
    assert route.name == "marks" and [w.name for w in route.waypoints] == ["P", "Q"]


def test_several_routes_need_a_name(tmp_path):
    rte = ('<rte><name>{}</name><rtept lat="1" lon="2"/><rtept lat="2" lon="2"/></rte>')
    path = tmp_path / "two.gpx"
    path.write_text('<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="t">'
                    + rte.format("North") + rte.format("South") + "</gpx>", encoding="utf-8")
    assert [r.name for r in read_routes(path)] == ["North", "South"]
    with pytest.raises(FormatError, match="holds 2 routes"):
        read_route(path)
    assert read_route(path, name="South").name == "South"


@pytest.mark.parametrize("point, reason", [
    ('<rtept lat="95" lon="2"/>', "latitude"),
    ('<rtept lon="2"/>', "lat and lon attributes are required"),
    ('<rtept lat="x" lon="2"/>', "lat 'x' is not a number"),
])
def test_bad_route_point_names_its_element(tmp_path, point, reason):
    path = tmp_path / "bad.gpx"
    path.write_text('<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1" creator="t">'
                    '<rte><rtept lat="1" lon="2"/>' + point + "</rte></gpx>", encoding="utf-8")
    with pytest.raises(FormatError, match=reason) as exc:
        read_route(path)
    assert exc.value.where == "bad.gpx, element gpx/rte[1]/rtept[2]"


def test_unknown_sailing_in_our_extension_names_its_element(tmp_path):
    path = tmp_path / "bad.gpx"
    path.write_text(
        f'<gpx xmlns="http://www.topografix.com/GPX/1/1" xmlns:pl="{NS}" version="1.1" '
        'creator="t"><rte><rtept lat="1" lon="2"/><rtept lat="2" lon="2"><extensions>'
        '<pl:leg sailing="mercator"/></extensions></rtept></rte></gpx>', encoding="utf-8")
    with pytest.raises(FormatError, match="sailing 'mercator' is not one of") as exc:
        read_route(path)
    assert "gpx/rte[1]/rtept[2]" in str(exc.value)


def test_not_well_formed_gives_line_and_column(tmp_path):
    path = tmp_path / "broken.gpx"
    path.write_text('<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1">\n'
                    '<trk><trkseg>\n<trkpt lat="1" lon="2">\n</trk></gpx>', encoding="utf-8")
    with pytest.raises(FormatError, match="not well-formed") as exc:
        read_fixes(path)
    assert exc.value.where.startswith("broken.gpx, line 4")


def test_wrong_namespace_is_refused(tmp_path):
    path = tmp_path / "other.gpx"
    path.write_text('<gpx xmlns="urn:not-gpx"><trk/></gpx>', encoding="utf-8")
    with pytest.raises(FormatError, match="not a GPX 1.1 'gpx' element"):
        read_fixes(path)


ROUTE = Route(
    "Round trip",
    (Waypoint("A & B", 60.1, 24.9, arrival_radius_m=926.0, rtz_id=4, revision=2),
     Waypoint("Mid <1>", 59.8, 24.85), Waypoint("End", 59.45, -0.000001)),
    (LegPlan("great-circle", 11.5, 185.2, 370.4, 1852.0, "note \"quoted\"", 9.0, 13.0),
     LegPlan("rhumb", None, 92.6, None, None, "")),
)


def test_route_round_trip_and_gpxpy_reads_it(tmp_path):
    out = io.StringIO()
    write_route(ROUTE, "gpx", out)
    path = tmp_path / "rt.gpx"
    path.write_text(out.getvalue(), encoding="utf-8")
    assert read_route(path) == ROUTE
    parsed = gpxpy.parse(out.getvalue())
    (rte,) = parsed.routes
    assert rte.name == "Round trip"
    assert [(p.latitude, p.longitude, p.name) for p in rte.points] == [
        (w.lat, w.lon, w.name) for w in ROUTE.waypoints]
    leg = rte.points[1].extensions[0]
    assert leg.tag == f"{{{NS}}}leg" and leg.get("xtlPortNm") == "0.1"


FIXES = [
    Fix(datetime(2024, 8, 1, 6, 0, tzinfo=UTC), 60.09, 24.899, sog_kn=11.2, cog=181.0,
        heading=179.5, hdop=0.8, satellites=9, fix_mode="A", remarks="off <pier>"),
    Fix(datetime(2024, 8, 1, 6, 0, 1, 250000, tzinfo=UTC), 60.0899, 24.8989, method="visual"),
]


def test_track_round_trip_and_gpxpy_reads_it(tmp_path):
    out = io.StringIO()
    assert write_fixes(FIXES, "gpx", out, name="track") == 2
    path = tmp_path / "trk.gpx"
    path.write_text(out.getvalue(), encoding="utf-8")
    got, summary = read_fixes(path)
    strip = [f.__class__(**{**f.__dict__, "source": None}) for f in got]
    assert strip == FIXES
    parsed = gpxpy.parse(out.getvalue())
    points = parsed.tracks[0].segments[0].points
    assert [p.time.astimezone(UTC) for p in points] == [f.time_utc for f in FIXES]
    assert (points[0].satellites, points[0].horizontal_dilution) == (9, 0.8)


# The order of the GPX 1.1 schema (gpx.xsd, wptType): ele, time, magvar, geoidheight, name,
# cmt, desc, src, link, sym, type, fix, sat, hdop, vdop, pdop, ageofdgpsdata, dgpsid,
# extensions; gpxType: metadata, wpt, rte, trk, extensions.
WPT_ORDER = ["ele", "time", "magvar", "geoidheight", "name", "cmt", "desc", "src", "link",
             "sym", "type", "fix", "sat", "hdop", "vdop", "pdop", "ageofdgpsdata", "dgpsid",
             "extensions"]


def test_written_gpx_follows_the_schema_order():
    import xml.etree.ElementTree as ET

    from passagelog.formats import write_voyage

    out = io.StringIO()
    write_voyage([ROUTE], FIXES, out, name="V")
    root = ET.fromstring(out.getvalue().encode("utf-8"))
    assert root.get("version") == "1.1" and root.get("creator") == "passagelog"
    local = [c.tag.split("}")[1] for c in root]
    assert local == ["rte", "trk"]
    points = [p for p in root.iter() if p.tag.split("}")[1] in ("rtept", "trkpt")]
    assert len(points) == 5
    for p in points:
        names = [c.tag.split("}")[1] for c in p]
        assert names == sorted(names, key=WPT_ORDER.index), names
    rte = root[0]
    assert [c.tag.split("}")[1] for c in rte][0] == "name"
