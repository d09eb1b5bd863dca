"""The voyage review report: built from the review engine's results, escaped, with the
caution, its provenance and its figures."""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET
from datetime import datetime, timedelta, timezone
from html.parser import HTMLParser

import pytest

from passagelog import CAUTION
from passagelog.model import Fix, LegPlan, Route, Waypoint
from passagelog.nav.geodesic import direct
from passagelog.nav.legs import make_leg
from passagelog.report.render import Provenance, esc
from passagelog.report.voyage import VoyageHeader, display_value, voyage_report_html
from passagelog.review import reconcile

EVIL = "<script>alert(1)</script>"
T0 = datetime(2027, 5, 1, 6, 0, tzinfo=timezone.utc)


def _voyage():
    """Two rhumb legs, 0.5 NM limits; the track runs 0.8 NM to starboard for a while."""
    wps = (Waypoint(EVIL, 50.0, -4.0, 185.2), Waypoint("Bravo", 50.2, -3.5, 185.2),
           Waypoint("Charlie", 50.5, -3.4, 185.2))
    legs = (LegPlan("rhumb", 10.0, 926.0, 926.0), LegPlan("rhumb", 10.0, 926.0, 926.0))
    route = Route("Test & passage", wps, legs)
    fixes = []
    t = T0
    for k, plan in enumerate(legs):
        a, b = wps[k], wps[k + 1]
        leg = make_leg(a.lat, a.lon, b.lat, b.lon, plan.sailing)
        s = 0.0
        while s <= leg.distance_m:
            lat, lon = leg.point_at(s)
            off = 1481.6 if (k == 0 and 0.3 < s / leg.distance_m < 0.6) else 0.0
            if off:  # 0.8 NM to starboard, at right angles to the rhumb line
                lat, lon, _ = direct(lat, lon, leg.initial_course + 90.0, off)
            fixes.append(Fix(time_utc=t, lat=lat, lon=lon))
            s += 10.0 * 1852.0 / 120.0  # 30 s of run at 10 kn between fixes
            t += timedelta(seconds=30)
    return route, fixes


@pytest.fixture(scope="module")
def report():
    route, fixes = _voyage()
    rv = reconcile(route, fixes)
    html = voyage_report_html(rv, VoyageHeader(name=f"Voyage {EVIL}", craft="RV Test"),
                              Provenance(source="test.sqlite", voyage=EVIL,
                                         verify="verify ok (3 records in the chain)"))
    return rv, html


class _Parse(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags, self.text, self.tables = [], [], 0

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.tables += tag == "table"

    def handle_data(self, data):
        self.text.append(data)


def test_report_escapes_user_text(report):
    _, html = report
    p = _Parse()
    p.feed(html)
    assert "script" not in p.tags
    assert sum(EVIL in t for t in p.text) >= 3  # title, provenance, the waypoint
    assert "Test &amp; passage" in html


def test_report_carries_caution_and_provenance(report):
    _, html = report
    assert html.count(esc(CAUTION)) == 2
    for item in ("test.sqlite", "verify ok (3 records in the chain)", "Generated (UTC)",
                 "passagelog"):
        assert esc(item) in html


def test_report_tables_hold_the_engines_figures(report):
    rv, html = report
    assert len(rv.episodes) == 1  # the spell 0.8 NM to starboard of a 0.5 NM limit
    ep = rv.episodes[0].row()
    # the episode row, in NM, appears in the report's episodes table
    section = html.split("Deviation episodes", 1)[1].split("<h2>", 1)[0]
    assert f">{display_value('max_abs_xte_m', ep['max_abs_xte_m'])}<" in section
    assert ">starboard<" in section
    assert float(display_value("max_abs_xte_m", ep["max_abs_xte_m"])) == pytest.approx(
        0.8, abs=0.01)
    passages = html.split("Waypoint passages", 1)[1].split("<h2>", 1)[0]
    assert passages.count("<tr>") == 1 + len(rv.passages)


def test_report_figures_are_svg_with_their_parts(report):
    _, html = report
    svgs = re.findall(r"<svg.*?</svg>", html, re.S)
    assert len(svgs) == 4  # track chart, XTE, SMG, range view
    for svg in svgs:
        ET.fromstring(svg)
    chart, xte, smg, rng = svgs
    assert "Mercator" in chart and "outside the corridor" in chart
    assert "limits" in xte and "XTE" in xte
    assert "SMG" in smg
    assert "azimuthal equidistant" in rng and " NM" in rng


def test_display_units():
    assert display_value("dmg_m", 1852.0) == "1.00"
    assert display_value("duration_s", 5400.0) == "1:30"
    assert display_value("delay_s", -300.0) == "-0:05"
    assert display_value("delay_s", -20.0) == "0:00"  # no minus on a zero
    assert display_value("btw", 5.25) == "005.2"
    assert display_value("lat", -33.5) == "33°30.000'S"
    assert display_value("from_lon", 18.25) == "018°15.000'E"
    assert display_value("time_utc", "2026-03-01T10:00:00.250000Z") == "2026-03-01T10:00:00Z"
    assert display_value("smg_kn", 12.345) == "12.3"
    assert display_value("eta_utc", None) is None
    assert display_value("share_outside", 0.25) == "25.0%"
    assert display_value("skipped", False) == "no"


def test_report_names_the_plan_as_the_logbook_does():
    """The header's plan row is the provenance's label of the plan in force (the plan's
    own name, which an imported route's name may differ from); without one, the route's."""
    route, fixes = _voyage()
    rv = reconcile(route, fixes)
    label = "Coastal, revision 2 (route 'Test passage')"
    html = voyage_report_html(rv, VoyageHeader(name="V"),
                              Provenance(source="log.sqlite", voyage="V", plan=label))
    assert html.count(f"<td>Plan</td><td>{esc(label)}</td>") == 2  # header and provenance
    html = voyage_report_html(rv, VoyageHeader(name="V"), Provenance(source="f.csv"))
    assert html.count(f"<td>Plan</td><td>{esc(route.name)}</td>") == 1
