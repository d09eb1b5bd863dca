"""Rendering: escaping of user text, the caution and provenance in every report for people."""

from __future__ import annotations

import xml.etree.ElementTree as ET
from html.parser import HTMLParser

from passagelog import CAUTION
from passagelog.model import LegPlan, Route, Waypoint
from passagelog.report import plots, render

EVIL = "<script>alert(1)</script>"


class _Collect(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags: list[str] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)

    def handle_data(self, data):
        self.text.append(data)


def test_html_escapes_user_text_and_carries_caution():
    records = [{"name": EVIL, "n": 1.5}]
    body = render.html_table(records, ["name", "n"], text_columns=["name"])
    doc = render.html_document(f"Plan {EVIL}", [("Legs", body)],
                               provenance=render.Provenance(source="book.sqlite", voyage=EVIL))
    parser = _Collect()
    parser.feed(doc)
    assert "script" not in parser.tags
    assert any(EVIL in t for t in parser.text)  # shown as text
    assert doc.count(render.esc(CAUTION)) == 2  # top and bottom
    assert "book.sqlite" in doc


def test_csv_and_markdown():
    recs = [{"a": 1, "b": "x|y", "c": None}]
    assert render.to_csv(recs, ["a", "b", "c"]) == "a,b,c\n1,x|y,\n"
    md = render.to_markdown(recs, ["a", "b", "c"], title="T")
    assert "| 1 | x\\|y |  |" in md and CAUTION in md


def test_svg_plots_have_expected_elements_and_escape_names():
    wps = (Waypoint(EVIL, 50.0, -4.0), Waypoint("B", 50.5, -3.0), Waypoint("C", 51.0, -3.2))
    legs = (LegPlan("rhumb", 10.0, 926.0, 926.0), LegPlan("great-circle", 10.0, 1852.0, 926.0))
    geo = plots.plan_geometry(Route("r", wps, legs))
    svg = plots.track_chart_svg(geo, [50.0, 50.2, 50.5], [-4.0, -3.6, -3.0],
                                outside=[False, True, False])
    root = ET.fromstring(svg)  # well-formed XML
    assert root.tag.endswith("svg")
    assert "<script>" not in svg and "&lt;script&gt;" in svg
    assert "(Mercator)" in svg
    rv = plots.range_view_svg("B", 50.5, -3.0, geo, ring_step_nm=10)
    ET.fromstring(rv)
    assert "10 NM" in rv and "azimuthal equidistant" in rv


def test_corridor_edges_lie_at_the_limits():
    """Each corridor edge point has XTE equal to the limit (checked with the leg offsets)."""
    from passagelog.nav.legs import make_leg

    wps = (Waypoint("A", 50.0, -4.0), Waypoint("B", 51.0, -2.0))
    legs = (LegPlan("great-circle", 10.0, 926.0, 1852.0),)
    geo = plots.plan_geometry(Route("r", wps, legs), points_per_leg=9)
    plat, plon, slat, slon = geo.corridors[0]
    leg = make_leg(50.0, -4.0, 51.0, -2.0, "great-circle")
    xp, _ = leg.offsets_np(plat, plon)
    xs, _ = leg.offsets_np(slat, slon)
    assert abs(xp + 926.0).max() < 0.01  # port is left: negative XTE
    assert abs(xs - 1852.0).max() < 0.01
