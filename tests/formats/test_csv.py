"""Route and fix CSV: headers, notations, the leg-ends-here rule, errors with line and column."""

from __future__ import annotations

import io
from datetime import datetime, timezone

import pytest

from passagelog.errors import FormatError
from passagelog.formats import read_fixes, read_route, write_fixes, write_route
from passagelog.formats.csvfmt import FIX_HEADER, ROUTE_HEADER
from passagelog.model import Fix, LegPlan, Route, Waypoint
from passagelog.nav.units import NM_M

UTC = timezone.utc
HEADER = ",".join(ROUTE_HEADER)


def nm(value: float):
    return pytest.approx(value * NM_M, abs=1e-6)


def test_headers_are_the_documented_ones():
    assert HEADER == ("name,lat,lon,sailing,speed_kn,xtl_port_nm,xtl_stbd_nm,"
                      "arrival_radius_nm,turn_radius_nm,notes")
    assert ",".join(FIX_HEADER) == "time_utc,lat,lon,method,sog_kn,cog,heading,remarks"


def test_route_csv_rows_describe_the_leg_ending_there(tmp_path):
    path = tmp_path / "channel.csv"
    path.write_text(
        HEADER + "\n"
        "Start,50 42.000 N,001 03.000 W,great-circle,99,9,9,0.2,9,departure note\n"
        "Mid,\"50°15.000'N\",\"001°18.000'W\",great-circle,12.5,0.5,0.25,,0.8,lane\n"
        "End,49.68,-1.61,rhumb,10,,,0.3,,\n", encoding="utf-8")
    route = read_route(path)
    assert route.name == "channel"
    assert [(w.name, w.lat, w.lon) for w in route.waypoints] == [
        ("Start", 50.7, -1.05), ("Mid", 50.25, -1.3), ("End", 49.68, -1.61)]
    first, second = route.legs
    assert first.sailing == "great-circle" and first.speed_kn == 12.5
    assert first.xtl_port_m == nm(0.5) and first.xtl_stbd_m == nm(0.25)
    assert first.turn_radius_m == nm(0.8) and first.notes == "lane"
    assert second == LegPlan("rhumb", 10.0)
    # arrival radius belongs to the row's own waypoint; row 1's leg cells mean nothing
    assert route.waypoints[0].arrival_radius_m == nm(0.2)
    assert route.waypoints[2].arrival_radius_m == nm(0.3)
    assert route.waypoints[0].extras == (("csv:notes", "departure note"),)


def test_columns_in_any_order_and_only_the_required_ones(tmp_path):
    path = tmp_path / "r.csv"
    path.write_text("lon,lat,name\n2,1,A\n3,1,B\n", encoding="utf-8")
    route = read_route(path)
    assert [(w.lat, w.lon) for w in route.waypoints] == [(1.0, 2.0), (1.0, 3.0)]


def test_bad_cell_on_line_5000_is_named(tmp_path):
    rows = [HEADER] + [f"W{k},{10 + k / 10000:.4f},-20,rhumb,12,,,,," for k in range(2, 5000)]
    rows.append("Bad,95 00.0 N,-20,rhumb,12,,,,,")  # line 5000
    rows.append("W,10,-20,rhumb,12,,,,,")
    path = tmp_path / "long.csv"
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")
    with pytest.raises(FormatError) as exc:
        read_route(path)
    assert exc.value.where == "long.csv, line 5000, column lat"
    assert "latitude" in str(exc.value)


def test_bad_fix_cell_on_line_5000_is_named(tmp_path):
    rows = [",".join(FIX_HEADER)]
    rows += [f"2024-05-01T12:{k // 60 % 60:02d}:{k % 60:02d}Z,10,-20,gnss,,,," for k in range(4998)]
    rows.append("2024-05-01T23:00:00Z,10,-20,gnss,fast,,,")  # line 5000
    path = tmp_path / "fixes.csv"
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")
    with pytest.raises(FormatError) as exc:
        read_fixes(path)
    assert exc.value.where == "fixes.csv, line 5000, column sog_kn"


@pytest.mark.parametrize("content, where, message", [
    ("name,lat,lon,speed_kts\nA,1,2,3\nB,1,3,3\n", "line 1", "'speed_kts' is not a route CSV"),
    (HEADER + "\nA,1,2,,,,,,,\nB,1,3,gc,,,,,,\n", "line 3, column sailing",
     "sailing 'gc' is not one of: great-circle, rhumb"),
    (HEADER + "\nA,1,2,,,,,,,\nB,1,3,,-4,,,,,\n", "line 3, column speed_kn",
     "speed_kn '-4' is not a number >= 0"),
    (HEADER + "\nA,1,2,,,,,,,\nB,1,3,,nan,,,,,\n", "line 3, column speed_kn", "nan"),
    (HEADER + "\nA,1,2,,,,,,,\nB,1,3\n", "line 3", "the row has 3 cells; the header has 10"),
    (HEADER + "\nA,,2,,,,,,,\nB,1,3,,,,,,,\n", "line 2, column lat", "lat is empty"),
    (HEADER + "\nA,1,2,,,,,,,\n", "", "at least 2 are needed"),
])
def test_route_csv_errors(tmp_path, content, where, message):
    path = tmp_path / "r.csv"
    path.write_text(content, encoding="utf-8")
    with pytest.raises(FormatError, match=message) as exc:
        read_route(path, fmt="route-csv")
    assert exc.value.where == ("r.csv" + (f", {where}" if where else ""))


def test_fix_csv_reads_notations_zones_and_methods(tmp_path):
    path = tmp_path / "f.csv"
    path.write_text(",".join(FIX_HEADER) + "\n"
                    "2024-05-01T12:00:00Z,48 07.038 N,011 31.000 E,visual,,,,Church spire\n"
                    "2024-05-01T14:00:30+02:00,-33.5,151.25,,12.5,360,90,\n"
                    "2024-05-01T12:01:00,-33.5,151.25,celestial,,,,\n", encoding="utf-8")
    fixes, summary = read_fixes(path)
    assert [f.time_utc for f in fixes] == [datetime(2024, 5, 1, 12, 0, tzinfo=UTC),
                                           datetime(2024, 5, 1, 12, 0, 30, tzinfo=UTC),
                                           datetime(2024, 5, 1, 12, 1, tzinfo=UTC)]
    assert fixes[0].lat == pytest.approx(48.1173) and fixes[0].method == "visual"
    assert fixes[0].remarks == "Church spire"
    assert fixes[1].method == "gnss" and fixes[1].cog == 0.0 and fixes[1].heading == 90.0
    assert summary.fixes_kept == 3 and summary.lines_read == 4


@pytest.mark.parametrize("lat, lon, col, message", [
    ("50 42.000 N", "001 03.000", "lon",
     "longitude '001 03.000' has no hemisphere: add E or W (the latitude has one"),
    ("50 42.000", "001 03.000 W", "lat",
     "latitude '50 42.000' has no hemisphere: add N or S (the longitude has one"),
])
def test_a_position_with_one_hemisphere_letter_is_refused(tmp_path, lat, lon, col, message):
    # a forgotten W must not become E (docs/conventions.md, Positions)
    path = tmp_path / "r.csv"
    path.write_text(f"name,lat,lon\nA,50.7,-1.05\nB,{lat},{lon}\n", encoding="utf-8")
    with pytest.raises(FormatError) as exc:
        read_route(path)
    assert exc.value.where == f"r.csv, line 3, column {col}"
    assert message in str(exc.value)
    path = tmp_path / "f.csv"
    path.write_text(f"time_utc,lat,lon\n2024-05-01T12:00:00Z,{lat},{lon}\n", encoding="utf-8")
    with pytest.raises(FormatError) as exc:
        read_fixes(path)
    assert exc.value.where == f"f.csv, line 2, column {col}"


def test_signed_cells_beside_a_letter_or_without_letters_are_read(tmp_path):
    path = tmp_path / "r.csv"
    path.write_text("name,lat,lon\nA,50 42.000 N,-1.05\nB,-50.25,1.3\nC,-50.25,001 18.000 E\n",
                    encoding="utf-8")
    # 42.000' = 0.7°, 18.000' = 0.3° (ISO 6709 Annex D: degrees + minutes/60)
    assert [(w.lat, w.lon) for w in read_route(path).waypoints] == [
        (50.7, -1.05), (-50.25, 1.3), (-50.25, 1.3)]


def test_fix_csv_unknown_method(tmp_path):
    path = tmp_path / "f.csv"
    path.write_text("time_utc,lat,lon,method\n2024-05-01T12:00:00Z,1,2,sextant\n",
                    encoding="utf-8")
    with pytest.raises(FormatError, match="method 'sextant' is not one of") as exc:
        read_fixes(path)
    assert exc.value.where == "f.csv, line 2, column method"


def test_route_csv_round_trip():
    route = Route("r", (Waypoint("A, the start", 50.7, -1.05, arrival_radius_m=370.4,
                                 extras=(("csv:notes", "first \"note\""),)),
                        Waypoint("B", 50.25, -1.3)),
                  (LegPlan("great-circle", 12.5, 926.0, 463.0, 1481.6, "lane"),))
    out = io.StringIO()
    write_route(route, "route-csv", out)
    assert out.getvalue().splitlines()[0] == HEADER
    back = read_route(io.StringIO(out.getvalue()))
    assert back.waypoints == route.waypoints and back.legs == route.legs


def test_fix_csv_round_trip():
    fixes = [Fix(datetime(2024, 5, 1, 12, 0, 0, 123456, tzinfo=UTC), 48.1173, 11.516666666666667,
                 method="radar", sog_kn=12.0, cog=359.5, heading=1.25, remarks="a, b")]
    out = io.StringIO()
    write_fixes(fixes, "fix-csv", out)
    got, _ = read_fixes(io.StringIO(out.getvalue()))
    assert [Fix(**{**g.__dict__, "source": None}) for g in got] == fixes


def _doc_block(after: str) -> str:
    """The first ``` block after the heading ``after`` in docs/formats.md."""
    from pathlib import Path

    text = (Path(__file__).parents[2] / "docs" / "formats.md").read_text(encoding="utf-8")
    section = text.split(after, 1)[1]
    return section.split("```\n", 2)[1]


def test_the_documented_examples_read():
    route = read_route(io.StringIO(_doc_block("## Route CSV")))
    assert [w.name for w in route.waypoints] == ["Departure buoy", "Mid-channel", "Landfall"]
    assert route.legs[0].sailing == "great-circle" and route.legs[0].xtl_port_m == nm(0.5)
    assert route.waypoints[0].extras == (("csv:notes", "departure at HW-1"),)
    fixes, summary = read_fixes(io.StringIO(_doc_block("## Fix CSV")))
    assert [f.method for f in fixes] == ["visual", "gnss"] and summary.fixes_kept == 2
