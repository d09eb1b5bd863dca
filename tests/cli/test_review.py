"""``passagelog review`` and ``passagelog status``: the scripting contract of docs/cli.md on a
track whose XTE and along-track distances are known by construction (review_synth.py: the
direct problem from known points of known legs), from files and from a logbook."""

from __future__ import annotations

import csv
import io
import json
import subprocess
import sys
from datetime import datetime, timezone
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from passagelog import CAUTION
from passagelog.cli import cli
from passagelog.model import Craft, Fix, LegPlan, LogEntry, Route, Voyage, Waypoint

sys.path.insert(0, str(Path(__file__).parents[1] / "review"))
import review_synth as syn  # noqa: E402

ROOT = Path(__file__).parents[2]
CONTRACT = ["time_utc", "lat", "lon", "leg", "xte_m", "along_m", "leg_to_go_m",
            "route_to_go_m", "inside_xtl"]
# positions written with 9 decimals of a degree are good to about 0.1 mm
POS_TOL_M = 2e-3


def _route() -> Route:
    wps = (Waypoint("START", 50.0, -4.0), Waypoint("MID", 49.0, -6.0),
           Waypoint("END", 47.0, -6.0))
    legs = (LegPlan("great-circle", 12.0, 926.0, 926.0),
            LegPlan("great-circle", 10.0, 926.0, 926.0))
    return Route("Channel", wps, legs)


def _track(route):
    legs = syn.legs_of(route)
    L = [lg.distance_m for lg in legs]
    plan = [(0, s, x) for s, x in zip(np.linspace(0.0, L[0] - 2000.0, 12),
                                      [0, 150, -300, 1200, 1300, 40, -950, 0, 10, 0, 0, 0])]
    plan += [(1, s, -120.0) for s in np.linspace(500.0, L[1] - 3000.0, 10)]
    return legs, L, plan, syn.sail(legs, plan, step_s=1800.0)


def _fixes(cols):
    return [Fix(datetime.fromtimestamp(t, timezone.utc), round(float(la), 9),
                round(float(lo), 9))
            for t, la, lo in zip(cols["time_s"], cols["lat"], cols["lon"])]


@pytest.fixture(scope="module")
def files(tmp_path_factory):
    from passagelog.formats import write_fixes, write_route

    d = tmp_path_factory.mktemp("review")
    route = _route()
    legs, L, plan, cols = _track(route)
    with open(d / "route.csv", "w", encoding="utf-8", newline="") as fh:
        write_route(route, "route-csv", fh)
    fixes = _fixes(cols)
    with open(d / "fixes.csv", "w", encoding="utf-8", newline="") as fh:
        write_fixes(reversed(fixes), "fix-csv", fh)  # out of order on purpose
    return d, route, legs, L, plan, cols


def run(args):
    return CliRunner().invoke(cli, args, standalone_mode=False, catch_exceptions=True)


def test_fixes_csv_follows_the_scripting_contract(files):
    d, route, legs, L, plan, cols = files
    r = run(["review", "--plan", str(d / "route.csv"), "--fixes", str(d / "fixes.csv"),
             "--table", "fixes", "--format", "csv"])
    assert r.exit_code == 0, r.output
    assert r.stderr == ""  # csv carries data only
    rows = list(csv.DictReader(io.StringIO(r.stdout)))
    assert list(rows[0])[:9] == CONTRACT
    assert len(rows) == len(plan)
    times = [row["time_utc"] for row in rows]
    assert times == sorted(times) and times[0] == "2026-03-01T00:00:00Z"
    for row, (k, s, x) in zip(rows, plan):
        assert int(row["leg"]) == k + 1  # leg k runs from waypoint k to k+1, 1-based
        assert float(row["xte_m"]) == pytest.approx(x, abs=POS_TOL_M)
        assert float(row["along_m"]) == pytest.approx(s, abs=POS_TOL_M)
        assert float(row["leg_to_go_m"]) == pytest.approx(L[k] - s, abs=POS_TOL_M)
        assert float(row["route_to_go_m"]) == pytest.approx(L[k] - s + sum(L[k + 1:]),
                                                            abs=POS_TOL_M)
        assert row["inside_xtl"] == ("true" if abs(x) <= 926.0 else "false")


def test_other_tables_as_json_and_csv(files):
    d = files[0]
    base = ["review", "--plan", str(d / "route.csv"), "--fixes", str(d / "fixes.csv")]
    r = run(base + ["--table", "passages", "--format", "json"])
    assert r.exit_code == 0, r.output
    passages = json.loads(r.stdout)
    assert [(p["waypoint"], p["name"], p["how"]) for p in passages] == [(2, "MID", "bisector")]
    r = run(base + ["--table", "episodes", "--format", "json"])
    eps = json.loads(r.stdout)
    assert [(e["leg"], e["side"], e["fixes"], e["duration_s"]) for e in eps] == [
        (1, "starboard", 2, 3600.0), (1, "port", 1, 1800.0)]
    r = run(base + ["--table", "legs", "--format", "csv"])
    rows = list(csv.DictReader(io.StringIO(r.stdout)))
    assert [row["leg"] for row in rows] == ["1", "2"]
    assert rows[0]["completed"] == "true" and rows[1]["completed"] == "false"


def test_people_formats_carry_the_caution(files):
    d = files[0]
    base = ["review", "--plan", str(d / "route.csv"), "--fixes", str(d / "fixes.csv")]
    r = run(base + ["--table", "passages"])
    assert r.exit_code == 0, r.output
    assert "MID" in r.stdout and CAUTION not in r.stdout
    assert r.stderr.strip() == f"Caution: {CAUTION}"
    r = run(base + ["--table", "legs", "--format", "md"])
    assert r.stdout.rstrip().splitlines()[-1] == f"> Caution: {CAUTION}"
    assert "| leg | from_wp |" in r.stdout


def test_status_from_files(files):
    d = files[0]
    r = run(["status", "--plan", str(d / "route.csv"), "--fixes", str(d / "fixes.csv"),
             "--json"])
    assert r.exit_code == 0, r.output
    st = json.loads(r.stdout)
    assert (st["leg"], st["from_wp"], st["to_wp"], st["side"]) == (2, "MID", "END", "L")
    assert st["xte_m"] == pytest.approx(-120.0, abs=POS_TOL_M)
    assert st["leg_to_go_m"] == pytest.approx(3000.0, abs=POS_TOL_M)
    r = run(["status", "--plan", str(d / "route.csv"), "--fixes", str(d / "fixes.csv"),
             "--now", "2026-03-01T12:00:00Z"])
    assert r.exit_code == 0, r.output
    lines = r.stdout.splitlines()
    assert lines[0] == "Plan         route"  # no voyage line from files
    assert lines[1].startswith("Fix          2026-03-01 10:30:00Z  ship 2026-03-01 10:30:00 ZD0")
    assert lines[1].endswith("(1 h 30 min ago)")
    assert lines[3] == "Leg          2 of 2: MID -> END"
    assert lines[4] == "XTE          0.06 NM L (-120.0 m), limit 0.50 NM L: inside"
    assert lines[6].startswith("Next WP      END: DTW 1.62 NM, BTW 18")
    assert r.stderr.strip() == f"Caution: {CAUTION}"


def test_status_shows_labels_units_and_dashes(files):
    """The watch summary: one label column, every ETA in UTC and ship's time, ``-`` where a
    figure is not known (an ETA after arrival), and a fix dated after the clock said so."""
    from passagelog.cli.review import LABEL

    d = files[0]
    r = run(["status", "--plan", str(d / "route.csv"), "--fixes", str(d / "fixes.csv"),
             "--zd", "+3", "--now", "2026-03-01T10:00:00Z"])
    assert r.exit_code == 0, r.output
    lines = r.stdout.splitlines()
    for line in lines:
        label, value = line[:LABEL], line[LABEL:]
        assert label.strip() and value and not value.startswith(" "), line
    by = {line[:LABEL].strip(): line[LABEL:] for line in lines}
    # ZT = UTC - ZD: 10:30Z is 07:30 in zone +3
    assert by["Fix"] == ("2026-03-01 10:30:00Z  ship 2026-03-01 07:30:00 ZD+3  "
                         "(30 min later than this computer's clock)")
    assert by["ETA dest"] == "END"
    assert by["by plan"] == "2026-03-01 10:40Z  ship 2026-03-01 07:40 ZD+3"
    assert by["Made good"] == "CMG 180.0°T, SMG 26.3 kn over the last 3 h 00 min"
    assert by["Set/drift"].startswith("-  (")
    assert "ETA next WP" not in by  # the next waypoint is the destination


def test_status_span_wording():
    from passagelog.report.display import span_text as _span

    assert [_span(s) for s in (0, 59 * 60, 3600, 7.5 * 3600, 47 * 3600, 50 * 3600)] == [
        "0 min", "59 min", "1 h 00 min", "7 h 30 min", "47 h 00 min", "2 d 02 h"]


def test_usage_and_input_errors_exit_2_and_1(files, tmp_path):
    d = files[0]
    p = subprocess.run([sys.executable, "-m", "passagelog", "review", "--plan",
                        str(d / "route.csv")], capture_output=True, text=True, cwd=ROOT)
    assert p.returncode == 2 and "needs both --plan FILE and --fixes FILE" in p.stderr
    bad = tmp_path / "bad.csv"
    bad.write_text("time_utc,lat,lon\n2026-03-01T00:00:00Z,95,0\n", encoding="utf-8")
    p = subprocess.run([sys.executable, "-m", "passagelog", "review", "--plan",
                        str(d / "route.csv"), "--fixes", str(bad)], capture_output=True,
                       text=True, cwd=ROOT)
    assert p.returncode == 1 and p.stdout == ""
    assert p.stderr.startswith("passagelog: ") and len(p.stderr.strip().splitlines()) == 1


def test_review_and_status_of_a_logbook_voyage(tmp_path):
    from passagelog.store import Logbook

    route = _route()
    legs, L, plan, cols = _track(route)
    db = tmp_path / "log.sqlite"
    with Logbook.open(db) as book:
        craft = book.add_craft(Craft("Kestrel", max_speed_kn=40.0))
        v = book.add_voyage(Voyage("Kestrel 1", craft_id=craft.craft_id, zd_minutes=0,
                                   departure_utc=datetime(2026, 3, 1, tzinfo=timezone.utc)))
        plan_id, _ = book.create_plan(route, "created")
        book.assign_plan(v, plan_id)
        book.add_fixes(v, _fixes(cols))
        book.add_entry(v, LogEntry(datetime(2026, 3, 1, 1, tzinfo=timezone.utc),
                                   "clock-change", zd_minutes=60))
    r = run(["--db", str(db), "review", "Kestrel 1", "--table", "fixes", "--format", "csv"])
    assert r.exit_code == 0, r.output
    rows = list(csv.DictReader(io.StringIO(r.stdout)))
    assert len(rows) == len(plan) and list(rows[0])[:9] == CONTRACT
    for row, (k, s, x) in zip(rows, plan):
        assert int(row["leg"]) == k + 1
        assert float(row["xte_m"]) == pytest.approx(x, abs=POS_TOL_M)
    # the latest voyage is the default
    r = run(["--db", str(db), "status", "--json"])
    assert r.exit_code == 0, r.output
    assert json.loads(r.stdout)["leg"] == 2
    r = run(["--db", str(db), "status", "--now", "2026-03-01T12:00:00Z"])
    assert r.stdout.splitlines()[:2] == ["Voyage       Kestrel 1",
                                          "Plan         Channel, revision 1"]
    # ship's time after the clock change is ZD+1
    assert "ZD+1" in r.stdout


def _doc_block(after: str) -> list[str]:
    text = (ROOT / "docs" / "cli.md").read_text(encoding="utf-8").splitlines()
    i = text.index(after)
    out = []
    for line in text[i + 1:]:
        if line.startswith("```"):
            return out
        out.append(line)
    raise AssertionError(f"no end of the block after {after!r}")


def test_the_examples_in_docs_cli_md_are_as_printed(tmp_path):
    from passagelog.formats import write_fixes, write_route

    route = _route()
    _, _, _, cols = _track(route)
    with open(tmp_path / "route.csv", "w", encoding="utf-8", newline="") as fh:
        write_route(route, "route-csv", fh)
    with open(tmp_path / "track.nmea", "w", encoding="utf-8", newline="") as fh:
        write_fixes(_fixes(cols), "nmea", fh)
    files = ["--plan", str(tmp_path / "route.csv"), "--fixes", str(tmp_path / "track.nmea")]
    r = run(["status", *files, "--now", "2026-03-01T18:00:00Z"])
    assert r.stdout.splitlines() == _doc_block(
        "$ passagelog status --plan route.csv --fixes track.nmea")
    r = run(["review", *files, "--table", "fixes", "--format", "csv"])
    head = [line.split(",")[:9] for line in r.stdout.splitlines()[:3]]
    doc = [line.split(",") for line in _doc_block(
        "$ passagelog review --plan route.csv --fixes track.nmea --table fixes --format csv"
        " | cut -d, -f1-9 | head -3")]
    assert head[0] == doc[0]
    for got, shown in zip(head[1:], doc[1:]):  # numbers to a micrometre: the last bits of
        assert got[0] == shown[0] and got[-1] == shown[-1]  # the foot iteration may move
        assert [float(x) for x in got[1:-1]] == pytest.approx([float(x) for x in shown[1:-1]],
                                                              abs=1e-6)


def test_status_without_fixes_or_plan_says_what_to_do(tmp_path):
    from passagelog.store import Logbook

    db = tmp_path / "log.sqlite"
    with Logbook.open(db) as book:
        book.add_voyage(Voyage("Bare"))
        v = book.add_voyage(Voyage("Planned"))
        plan_id, _ = book.create_plan(_route(), "created")
        book.assign_plan(v, plan_id)
    r = run(["--db", str(db), "status", "Bare"])
    assert r.exit_code == 1 and r.stdout == ""
    assert str(r.exception) == ("voyage 'Bare' has no plan assigned; put one in force with "
                                "'passagelog voyage assign-plan VOYAGE PLAN'")
    r = run(["--db", str(db), "status", "Planned"])
    assert r.exit_code == 1 and r.stdout == ""
    assert str(r.exception).startswith("voyage 'Planned' has no fixes yet")
    empty = tmp_path / "empty.csv"
    empty.write_text("time_utc,lat,lon\n", encoding="utf-8")
    route = tmp_path / "route.csv"
    from passagelog.formats import write_route

    with open(route, "w", encoding="utf-8", newline="") as fh:
        write_route(_route(), "route-csv", fh)
    r = run(["status", "--plan", str(route), "--fixes", str(empty)])
    assert r.exit_code == 1
    assert str(r.exception) == f"{empty} holds no valid fix: nothing to show against the plan"
