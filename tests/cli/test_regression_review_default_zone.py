"""Regression: the file form of review took the default zone description (from the first
waypoint's longitude) as minutes instead of hours, so ship's noon fell at 12:01 UTC."""

from __future__ import annotations

import csv
import io
from pathlib import Path

from click.testing import CliRunner

from passagelog.cli import cli

DEMO = Path(__file__).resolve().parent.parent.parent / "demo_voyages" / "ocean"


def test_regression_review_default_zone_is_hours():
    r = CliRunner().invoke(cli, ["review", "--plan", str(DEMO / "route.csv"), "--fixes",
                                 str(DEMO / "fixes.gpx"), "--table", "noon", "--format", "csv"])
    assert r.exit_code == 0, r.output
    rows = list(csv.DictReader(io.StringIO(r.stdout)))
    # 9°05'W lies in zone +1 (ZD = lon/15 rounded, + in west longitude; Bowditch, time):
    # ship's noon at ZD +1 is 13:00 UTC (ZT + ZD = UTC)
    assert rows[0]["zone"] == "+1"
    assert rows[0]["noon_utc"].endswith("T13:00:00Z")
