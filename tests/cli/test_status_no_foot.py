"""``passagelog status`` when the latest fix has no cross-track foot on its leg: words, not
``nan``, and JSON nulls, never a traceback."""

from __future__ import annotations

import json
from datetime import datetime, timedelta, timezone

from click.testing import CliRunner

from passagelog.cli import cli
from passagelog.model import Craft, Fix, LegPlan, Route, Voyage, Waypoint

T0 = datetime(2026, 3, 1, tzinfo=timezone.utc)


def _logbook(tmp_path):
    from passagelog.store import Logbook

    path = tmp_path / "pole.sqlite"
    book = Logbook.open(path)
    craft = book.add_craft(Craft("Kestrel"))
    # (0, 0) is the pole of the great circle of the 90E meridian (geometry)
    route = Route("meridian", (Waypoint("A", -10.0, 90.0), Waypoint("B", 10.0, 90.0)),
                  (LegPlan("great-circle", 10.0),))
    plan_id, _ = book.create_plan(route, "created")
    voyage = book.add_voyage(Voyage("Pole", craft_id=craft.craft_id, plan_id=plan_id,
                                    departure_utc=T0))
    book.add_fixes(voyage.voyage_id, [Fix(T0, -10.0, 90.01),
                                      Fix(T0 + timedelta(hours=1), 0.0, 0.0)])
    book.close()
    return path


def test_status_of_a_fix_with_no_cross_track_foot(tmp_path):
    path = _logbook(tmp_path)
    run = CliRunner().invoke
    r = run(cli, ["--db", str(path), "status", "Pole", "--now", "2026-03-01T01:10:00Z"])
    assert r.exit_code == 0, r.output
    lines = r.stdout.splitlines()
    assert "nan" not in r.stdout.lower()
    assert lines[3].endswith("SUSPECT fix (no cross-track foot on its leg)")
    assert lines[5].startswith("XTE          -  (no cross-track foot on this leg")
    r = run(cli, ["--db", str(path), "status", "Pole", "--json"])
    assert r.exit_code == 0, r.output
    st = json.loads(r.stdout)
    assert st["suspect"] is True and st["suspect_reason"] == "no-foot"
    assert st["xte_m"] is None and st["along_m"] is None and st["route_to_go_m"] is None
    r = run(cli, ["--db", str(path), "review", "Pole", "--table", "suspects", "--format",
                  "json"])
    assert r.exit_code == 0, r.output
    (row,) = json.loads(r.stdout)
    assert (row["time_utc"], row["reason"], row["fix_id"]) == ("2026-03-01T01:00:00Z",
                                                               "no-foot", 2)
