"""Format detection from the content, refusal of a file that is not the format claimed,
and round trips of random routes through every route format."""

from __future__ import annotations

import io
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from passagelog.errors import FormatError
from passagelog.formats import (
    check_format,
    detect_format,
    iter_fixes,
    read_route,
    write_route,
)
from passagelog.formats.rtz import RTZ_NS
from passagelog.model import SAILINGS, LegPlan, Route, Waypoint

DATA = Path(__file__).parent / "data"


@pytest.mark.parametrize("head, fmt", [
    ("$GPRMC,123519,A,4807.038,N,01131.000,E,022.4,084.4,230394,003.1,W*6A\r\n", "nmea"),
    ("\n\n!AIVDM,1,1,,A,1,0*00\n$GPGGA,...", "nmea"),
    ('<?xml version="1.0"?>\n<!-- c -->\n<gpx xmlns="http://www.topografix.com/GPX/1/1">',
     "gpx"),
    ('\ufeff<?xml version="1.0" encoding="UTF-8"?><route xmlns="http://www.cirm.org/RTZ/1/2" '
     'version="1.2">', "rtz"),
    ("name,lat,lon,sailing\nA,1,2,rhumb\n", "route-csv"),
    ("\ufeffName , Lat , Lon\n", "route-csv"),
    ("time_utc,lat,lon,method,sog_kn,cog,heading,remarks\n", "fix-csv"),
])
def test_detect(head, fmt):
    assert detect_format("x", head) == fmt


@pytest.mark.parametrize("head, message", [
    ("", "the file is empty"),
    ("hello world\n", "cannot tell the format"),
    ("<kml xmlns='http://www.opengis.net/kml/2.2'>", "root element is 'kml'"),
    ("a,b,c\n1,2,3\n", "cannot tell the format"),
])
def test_detect_refuses(head, message):
    with pytest.raises(FormatError, match=message) as exc:
        detect_format("file.dat", head)
    assert exc.value.where == "file.dat"


def test_claimed_format_that_the_content_is_not_is_refused_before_reading(tmp_path):
    path = tmp_path / "really.gpx"
    path.write_text("$GPRMC,123519,A,4807.038,N,01131.000,E,022.4,084.4,230394,003.1,W*6A\n")
    with pytest.raises(FormatError, match="is not a GPX file: its content is an NMEA 0183 log"):
        iter_fixes(path, fmt="gpx")
    with pytest.raises(FormatError, match="holds no routes"):
        read_route(path)
    assert check_format("nmea", path, path.read_text()) == "nmea"
    with pytest.raises(FormatError, match="format 'kml' is not one of"):
        check_format("kml", path, "")


def test_missing_file(tmp_path):
    with pytest.raises(FormatError, match="cannot open the file") as exc:
        read_route(tmp_path / "nope.rtz")
    assert exc.value.where == "nope.rtz"


# -- property: random routes survive every route format ---------------------------------

millimetres = st.integers(0, 20_000_000).map(lambda mm: mm / 1000)
names = st.text(alphabet=st.characters(min_codepoint=32, max_codepoint=0x2FF,
                                       blacklist_categories=("Cs", "Cc")),
                min_size=1, max_size=12).map(str.strip).filter(bool)


@st.composite
def routes(draw, with_min_max=True):
    n = draw(st.integers(2, 6))
    waypoints = tuple(
        Waypoint(draw(names), draw(st.floats(-89.9, 89.9)), draw(st.floats(-180, 179.999)),
                 arrival_radius_m=draw(st.none() | millimetres))
        for _ in range(n))
    legs = tuple(
        LegPlan(draw(st.sampled_from(SAILINGS)),
                speed_kn=draw(st.none() | st.floats(0, 40)),
                xtl_port_m=draw(st.none() | millimetres),
                xtl_stbd_m=draw(st.none() | millimetres),
                turn_radius_m=draw(st.none() | millimetres),
                notes=draw(st.text(alphabet="abc ,;\"'<>&", max_size=10)).strip(),
                speed_min_kn=draw(st.none() | st.floats(0, 40)) if with_min_max else None,
                speed_max_kn=draw(st.none() | st.floats(0, 40)) if with_min_max else None)
        for _ in range(n - 1))
    return Route(draw(names), waypoints, legs)


def _through(route: Route, fmt: str, tmp_path: Path, version: str = "1.1") -> Route:
    out = io.StringIO()
    write_route(route, fmt, out, version=version)
    path = tmp_path / {"rtz": "r.rtz", "gpx": "r.gpx", "route-csv": "r.csv"}[fmt]
    path.write_text(out.getvalue(), encoding="utf-8")
    return read_route(path)


@settings(max_examples=60, deadline=None)
@given(routes())
def test_gpx_round_trip_property(tmp_path_factory, route):
    assert _through(route, "gpx", tmp_path_factory.mktemp("g")) == route


@settings(max_examples=60, deadline=None)
@given(routes(), st.sampled_from(["1.0", "1.1"]))
def test_rtz_round_trip_property(tmp_path_factory, route, version):
    back = _through(route, "rtz", tmp_path_factory.mktemp("r"), version)
    # RTZ gives every waypoint an id; the rest comes back as it was
    assert [w.rtz_id for w in back.waypoints] == list(range(1, len(route.waypoints) + 1))
    assert tuple(w.__class__(**{**w.__dict__, "rtz_id": None}) for w in back.waypoints) \
        == route.waypoints
    assert back.legs == route.legs and back.name == route.name


@settings(max_examples=60, deadline=None)
@given(routes(with_min_max=False))
def test_csv_round_trip_property(tmp_path_factory, route):
    back = _through(route, "route-csv", tmp_path_factory.mktemp("c"))
    assert back.waypoints == route.waypoints and back.legs == route.legs


def test_rtz_1_2_is_read(tmp_path):
    text = (DATA / "route_1_1.rtz").read_text(encoding="utf-8")
    path = tmp_path / "v12.rtz"
    path.write_text(text.replace(RTZ_NS["1.1"], RTZ_NS["1.2"]).replace('version="1.1"',
                                                                      'version="1.2"'))
    assert [w.rtz_id for w in read_route(path).waypoints] == [0, 5, 3]
