"""Keeping a voyage from the command line, end to end: exact output and exit codes."""

from __future__ import annotations

import json
import subprocess
import sys
from datetime import datetime, timedelta, timezone
from pathlib import Path

import click
import pytest
from click.testing import CliRunner
from geographiclib.geodesic import Geodesic

from passagelog.cli import cli
from passagelog.errors import PassagelogError

ROOT = Path(__file__).parents[2]


class _Clock:
    def __init__(self):
        self.now = datetime(2026, 3, 2, 8, 0, tzinfo=timezone.utc)

    def __call__(self):
        self.now += timedelta(seconds=1)
        return self.now


@pytest.fixture
def db(tmp_path, monkeypatch):
    import passagelog.store.logbook as lb

    monkeypatch.setattr(lb, "_utcnow", _Clock())
    return str(tmp_path / "log.sqlite")


def run(db, *args):
    """Run one command in-process; a library error comes back as result.exception (main()
    prints it as ``passagelog: <message>`` with exit code 1)."""
    return CliRunner().invoke(cli, ["--db", db, *args], standalone_mode=False,
                              catch_exceptions=True)


def ok(db, *args) -> str:
    r = run(db, *args)
    assert r.exception is None, (args, r.exception, r.output)
    return r.stdout


def err(db, *args) -> str:
    r = run(db, *args)
    assert isinstance(r.exception, PassagelogError), (args, r.exception, r.output)
    assert r.exception.exit_code == 1
    assert r.stdout == ""
    return str(r.exception)


def _counts(db) -> dict:
    import sqlite3

    conn = sqlite3.connect(db)
    names = [n for (n,) in conn.execute("SELECT name FROM sqlite_master WHERE type='table'")]
    out = {n: conn.execute(f"SELECT count(*) FROM {n}").fetchone()[0] for n in names}
    conn.close()
    return out


@pytest.fixture
def kept(db):
    """A voyage kept from the command line: craft, plan with revisions, fixes, entries."""
    ok(db, "craft", "add", "Kestrel", "--usual-speed", "8", "--max-speed", "12")
    ok(db, "plan", "new", "Solent", "--wp", "Cowes", "50 46.2N 1 18W",
       "--wp", "Needles", "50°39.6'N 001°36.0'W", "--wp", "Poole", "50.68, -1.94",
       "--xtl", "0.5", "--speed", "8")
    ok(db, "voyage", "add", "Solent run", "--craft", "Kestrel", "--from", "Cowes", "--to",
       "Poole", "--plan", "Solent", "--departure", "2026-03-01T09:00 ZD-1", "--zd", "-1")
    ok(db, "fix", "add", "Solent run", "50 46.2N 1 18W", "--time", "2026-03-01T08:00Z",
       "--sog", "6", "--cog", "246")
    ok(db, "fix", "add", "Solent run", "50 43N 1 33W", "--time", "2026-03-01T10:00 ZD-1",
       "--method", "visual", "--remarks", "Hurst Castle abeam")
    return db


def test_craft_commands(db):
    assert ok(db, "craft", "add", "Kestrel", "--max-speed", "12") == (
        "ID  NAME     KIND  USUAL KN  MAX KN\n"
        "1   Kestrel  ship  -         12.0\n")
    assert json.loads(ok(db, "craft", "list", "--json")) == [
        {"craft_id": 1, "name": "Kestrel", "kind": "ship", "usual_speed_kn": None,
         "max_speed_kn": 12.0}]
    assert ok(db, "craft", "list", "--csv") == (
        "craft_id,name,kind,usual_speed_kn,max_speed_kn\n1,Kestrel,ship,,12.0\n")
    assert err(db, "craft", "add", "Kestrel") == (
        "craft 'Kestrel' already exists; choose another name")
    assert err(db, "craft", "add", "Osprey", "--max-speed", "fast") == (
        "craft maximum speed (kn) 'fast' is not a number")
    assert err(db, "craft", "add", "Osprey", "--kind", "boat") == (
        "craft kind 'boat' is not one of: ship, aircraft")


def test_plan_show_and_revisions(kept):
    db = kept
    assert ok(db, "plan", "waypoint", "insert", "Solent", "2", "Hurst", "50 42N 1 33W") == (
        "plan Solent revision 2: waypoint Hurst inserted as waypoint 2\n")
    assert ok(db, "plan", "leg", "set", "Solent", "1", "--xtl-port", "0.2") == (
        "plan Solent revision 3: leg 1: xtl_port_nm 0.2\n")
    assert ok(db, "plan", "waypoint", "move", "Solent", "3", "50 39.5N 1 36.2W") == (
        "plan Solent revision 4: waypoint 3 Needles moved from 50°39.600'N 001°36.000'W to "
        "50°39.500'N 001°36.200'W\n")
    assert ok(db, "plan", "history", "Solent") == (
        "REVISION  RECORDED              WAYPOINTS  NOTE\n"
        "1         2026-03-02T08:00:03Z  3          created with 3 waypoints\n"
        "2         2026-03-02T08:00:08Z  4          waypoint Hurst inserted as waypoint 2\n"
        "3         2026-03-02T08:00:09Z  4          leg 1: xtl_port_nm 0.2\n"
        "4         2026-03-02T08:00:10Z  4          waypoint 3 Needles moved from "
        "50°39.600'N 001°36.000'W to 50°39.500'N 001°36.200'W\n")
    plan = json.loads(ok(db, "plan", "show", "Solent", "--revision", "3", "--json"))
    assert list(plan) == ["plan_id", "plan", "revision", "note", "route_name",
                          "total_distance_nm", "waypoints", "legs"]
    first = plan["legs"][0]
    # RhumbSolve 2.1 (GeographicLib), "RhumbSolve -i -p 9" on 50.77 -1.3 50.7 -1.55:
    # azimuth -113.80761549477518 (course 246.19238450522482), s12 19290.716550459 m
    assert first["distance_nm"] == pytest.approx(19290.716550459 / 1852, abs=1e-9)
    assert first["initial_course"] == pytest.approx(246.19238450522482, abs=1e-9)
    assert (first["xtl_port_nm"], first["xtl_stbd_nm"]) == (pytest.approx(0.2),
                                                            pytest.approx(0.5))
    assert ok(db, "plan", "show", "Solent", "--revision", "3", "--csv") == (
        "name,lat,lon,sailing,speed_kn,xtl_port_nm,xtl_stbd_nm,arrival_radius_nm,"
        "turn_radius_nm,notes\n"
        "Cowes,50.77,-1.3,,,,,,,\n"
        "Hurst,50.7,-1.55,rhumb,8.0,0.2,0.5,,,\n"
        "Needles,50.66,-1.6,rhumb,8.0,0.5,0.5,,,\n"
        "Poole,50.68,-1.94,rhumb,8.0,0.5,0.5,,,\n")
    # RhumbSolve 2.1 -i: Cowes->Needles 24467.737181 m (13.21 NM), azimuth -120.00768 (240.0);
    # Needles->Poole 24138.861486 m (13.03 NM), azimuth -84.71164 (275.3); total 26.25 NM
    assert ok(db, "plan", "show", "Solent", "--revision", "1") == (
        "plan Solent revision 1: created with 3 waypoints\n"
        "WP  NAME     POSITION                  RADIUS NM\n"
        "1   Cowes    50°46.200'N 001°18.000'W  -\n"
        "2   Needles  50°39.600'N 001°36.000'W  -\n"
        "3   Poole    50°40.800'N 001°56.400'W  -\n"
        "\n"
        "LEG  FROM     TO       SAILING  DIST NM  COURSE  SPEED KN  XTL P/S NM  NOTES\n"
        "1    Cowes    Needles  rhumb    13.21    240.0   8.0       0.50/0.50   -\n"
        "2    Needles  Poole    rhumb    13.03    275.3   8.0       0.50/0.50   -\n"
        "total 26.25 NM\n")


def test_plan_reverse_copy_delete(kept):
    db = kept
    assert ok(db, "plan", "leg", "set", "Solent", "2", "--xtl-port", "0.1", "--xtl-stbd",
              "0.3", "--note", "narrow off Hengistbury") == (
        "plan Solent revision 2: narrow off Hengistbury\n")
    assert ok(db, "plan", "reverse", "Solent") == "plan Solent revision 3: reversed\n"
    back = json.loads(ok(db, "plan", "show", "Solent", "--json"))
    assert [w["name"] for w in back["waypoints"]] == ["Poole", "Needles", "Cowes"]
    assert (back["legs"][0]["xtl_port_nm"], back["legs"][0]["xtl_stbd_nm"]) == (
        pytest.approx(0.3), pytest.approx(0.1))
    assert ok(db, "plan", "copy", "Solent", "Solent home", "--revision", "3") == (
        "plan Solent home revision 1: copied from plan Solent revision 3\n")
    assert ok(db, "plan", "waypoint", "delete", "Solent home", "2") == (
        "plan Solent home revision 2: waypoint 2 Needles deleted\n")
    assert err(db, "plan", "waypoint", "delete", "Solent home", "2") == (
        "route 'Solent home' has only 2 waypoints; a route needs at least 2, so none can be "
        "deleted")
    assert err(db, "plan", "waypoint", "move", "Solent", "7", "50N 1W") == (
        "plan 'Solent' waypoint number 7 does not exist; it has waypoints 1 to 3")
    assert err(db, "plan", "leg", "set", "Solent", "1", "--sailing", "loxodrome") == (
        "leg sailing 'loxodrome' is not one of: great-circle, rhumb")
    assert ok(db, "plan", "list", "--csv").splitlines()[1:] == [
        "1,Solent,3,2026-03-02T08:00:02Z", "2,Solent home,2,2026-03-02T08:00:10Z"]


def test_fixes_corrections_and_suspect(kept):
    db = kept
    r = run(db, "fix", "add", "Solent run", "51N 1 33W", "--time", "2026-03-01T09:30Z")
    assert r.exception is None
    assert r.stdout == "fix 3  2026-03-01T09:30:00Z  51°00.000'N 001°33.000'W\n"
    # implied speed: the geodesic from fix 2 (50°43'N 1°33'W) over 30 min, by geographiclib
    s12 = Geodesic.WGS84.Inverse(50 + 43 / 60, -1.55, 51.0, -1.55)["s12"]
    assert r.stderr == (f"passagelog: warning: fix 3 is suspect: implied speed "
                        f"{s12 / 1852 * 2:.1f} kn from the previous fix exceeds the craft's "
                        "maximum 12 kn\n")
    assert ok(db, "fix", "correct", "Solent run", "3", "--reason", "latitude misread",
              "--position", "50 42.5N 1 34W") == (
        "fix 4  2026-03-01T09:30:00Z  50°42.500'N 001°34.000'W  supersedes fix 3\n")
    assert ok(db, "fix", "list", "Solent run") == (
        "ID  TIME UTC              POSITION                  METHOD  SOG  COG    NOTE\n"
        "1   2026-03-01T08:00:00Z  50°46.200'N 001°18.000'W  gnss    6.0  246.0  -\n"
        "2   2026-03-01T09:00:00Z  50°43.000'N 001°33.000'W  visual  -    -      "
        "Hurst Castle abeam\n"
        "4   2026-03-01T09:30:00Z  50°42.500'N 001°34.000'W  gnss    -    -      "
        "corrects 3: latitude misread\n")
    hist = json.loads(ok(db, "fix", "list", "Solent run", "--history", "--json"))
    assert [(f["fix_id"], f["suspect"], f["supersedes"]) for f in hist] == [
        (1, False, None), (2, False, None), (3, True, None), (4, False, 3)]
    assert list(hist[0]) == ["fix_id", "time_utc", "lat", "lon", "method", "sog_kn", "cog",
                             "heading", "stw_kn", "hdop", "satellites", "fix_mode", "remarks",
                             "source", "suspect", "implied_speed_kn", "supersedes", "reason",
                             "recorded_utc"]
    assert hist[3]["reason"] == "latitude misread"
    csv_text = ok(db, "fix", "list", "Solent run", "--csv")
    assert csv_text.splitlines()[0].startswith("time_utc,lat,lon,method,sog_kn,cog,heading,"
                                               "remarks,")
    assert csv_text.splitlines()[1].startswith("2026-03-01T08:00:00Z,50.77,-1.3,gnss,6.0,246.0,"
                                               ",,1,")
    assert err(db, "fix", "correct", "Solent run", "3", "--reason", "again") == (
        "fix 3 was already corrected by fix 4; correct that one instead")
    shown = json.loads(ok(db, "fix", "show", "3", "--json"))
    assert shown["lat"] == 51.0 and shown["suspect"] is True


def test_bad_fix_values_are_refused_and_nothing_is_written(kept):
    db = kept
    before = _counts(db)
    for args, message in [
        (["50N 1W", "--sog", "-3"], "fix SOG (kn) -3.0 is below the allowed minimum 0"),
        (["50N 1W", "--cog", "360"], "fix COG 360.0 is out of range; it must be below 360"),
        (["50N 1W", "--sog", "nan"], "fix SOG (kn) 'nan' must be a finite number"),
        (["95N 1W"], "fix position: cannot read position '95N 1W': latitude 95° is out of "
                     "range; it must be at most 90°"),
        (["50N 1W", "--method", "sextant"], "fix method 'sextant' is not one of: gnss, radar, "
                                            "visual, celestial, dr, ep, other"),
        (["50N 1W", "--time", "2026-03-01T10:00"], None),
    ]:
        got = err(db, "fix", "add", "Solent run", *args)
        if message:
            assert got == message
        else:
            assert got.startswith("fix time: time '2026-03-01T10:00' has no zone")
    assert err(db, "fix", "add", "Nowhere", "50N 1W") == (
        "voyage 'Nowhere' is not in the logbook; see 'voyage list'")
    assert _counts(db) == before


def test_fix_time_defaults_to_now_utc(kept):
    before = datetime.now(timezone.utc).replace(microsecond=0)
    out = json.loads(ok(kept, "fix", "add", "Solent run", "50 40N 1 40W", "--json"))
    when = datetime.fromisoformat(out["time_utc"])
    assert before <= when <= datetime.now(timezone.utc)


def test_entries(kept):
    db = kept
    assert ok(db, "entry", "add", "Solent run", "departure", "let go, proceeding",
              "--time", "2026-03-01T09:00 ZD-1") == (
        "entry 1  2026-03-01T08:00:00Z  departure\n")
    assert ok(db, "entry", "add", "Solent run", "clock-change", "clocks retarded 1 h",
              "--new-zd", "0", "--time", "2026-03-01T12:00Z") == (
        "entry 2  2026-03-01T12:00:00Z  clock-change\n")
    assert err(db, "entry", "add", "Solent run", "clock-change") == (
        "a clock-change log entry needs the new zone description")
    assert err(db, "entry", "add", "Solent run", "landfall") == (
        "log entry kind 'landfall' is not one of: departure, arrival, clock-change, "
        "course-alteration, event, remark")
    assert ok(db, "entry", "correct", "Solent run", "1", "--reason", "wrong time",
              "--time", "2026-03-01T08:10Z") == (
        "entry 3  2026-03-01T08:10:00Z  departure  supersedes entry 1\n")
    assert ok(db, "entry", "list", "Solent run") == (
        "ID  TIME UTC              SHIP TIME                 KIND          ZD  TEXT\n"
        "3   2026-03-01T08:10:00Z  2026-03-01T09:10:00 ZD-1  departure     -   let go, "
        "proceeding; corrects 1: wrong time\n"
        "2   2026-03-01T12:00:00Z  2026-03-01T12:00:00 ZD0   clock-change  0   clocks "
        "retarded 1 h\n")
    rows = json.loads(ok(db, "entry", "list", "Solent run", "--history", "--json"))
    assert [e["entry_id"] for e in rows] == [1, 2, 3]
    assert list(rows[0]) == ["entry_id", "time_utc", "kind", "text", "zd_minutes", "lat",
                             "lon", "supersedes", "reason", "recorded_utc"]


def test_voyage_show_and_list(kept):
    db = kept
    assert ok(db, "voyage", "list") == (
        "ID  NAME        CRAFT    FROM   TO     DEPARTURE             ZD  PLAN\n"
        "1   Solent run  Kestrel  Cowes  Poole  2026-03-01T08:00:00Z  -1  Solent\n")
    assert ok(db, "voyage", "show", "Solent run") == (
        "voyage      1 Solent run\n"
        "craft       Kestrel\n"
        "from        Cowes\n"
        "to          Poole\n"
        "departure   2026-03-01T08:00:00Z\n"
        "zone        -1\n"
        "plan        Solent revision 1 from the start\n"
        "fixes       2 current (2 records, 0 suspect)\n"
        "entries     0 current (0 records)\n"
        "latest fix  2026-03-01T09:00:00Z 50°43.000'N 001°33.000'W\n")
    ok(db, "plan", "waypoint", "set", "Solent", "2", "--radius", "0.3")
    assert ok(db, "voyage", "assign-plan", "Solent run", "Solent", "--from",
              "2026-03-01T10:30Z") == (
        "voyage Solent run: plan Solent revision 2 in force from 2026-03-01T10:30:00Z\n")
    shown = json.loads(ok(db, "voyage", "show", "Solent run", "--json"))
    assert [(p["revision"], p["from_utc"]) for p in shown["plans"]] == [
        (1, None), (2, "2026-03-01T10:30:00Z")]
    assert list(shown) == ["voyage_id", "name", "craft_id", "craft", "from_place", "to_place",
                           "departure_utc", "zd_minutes", "plan_id", "plan", "counts", "plans",
                           "latest_fix"]


def test_verify_clean_and_tampered(kept):
    import sqlite3

    db = kept
    assert ok(db, "verify") == "4 records checked: the chains verify\n"
    assert json.loads(ok(db, "verify", "--json"))["ok"] is True
    conn = sqlite3.connect(db)
    conn.execute("DROP TRIGGER fix_no_update")
    conn.execute("UPDATE fix SET remarks = 'Hurst Castle abaft the beam' WHERE fix_id = 2")
    conn.commit()
    conn.close()
    r = run(db, "verify")
    assert r.stdout == (
        "trigger-missing: the trigger fix_no_update that refuses UPDATE on fix records is "
        "missing: records may have been changed behind the logbook's back\n"
        "edited: fix 2 was edited: its content no longer matches its hash\n"
        "4 records checked: 2 problem(s) found\n")
    assert str(r.exception) == ("the logbook does not verify: the trigger fix_no_update that "
                                "refuses UPDATE on fix records is missing: records may have "
                                "been changed behind the logbook's back")
    assert r.exception.exit_code == 1


def test_show_commands(kept):
    db = kept
    ok(db, "entry", "add", "Solent run", "event", "pilot away", "--time", "2026-03-01T08:30Z",
       "--position", "50 45N 1 20W")
    assert ok(db, "entry", "show", "1") == (
        "entry_id      1\n"
        "time_utc      2026-03-01T08:30:00Z\n"
        "kind          event\n"
        "text          pilot away\n"
        "zd_minutes    -\n"
        "position      50°45.000'N 001°20.000'W\n"
        "supersedes    -\n"
        "reason        -\n"
        "recorded_utc  2026-03-02T08:00:08Z\n")
    assert ok(db, "entry", "show", "1", "--csv") == (
        "entry_id,time_utc,kind,text,zd_minutes,lat,lon,supersedes,reason,recorded_utc\n"
        "1,2026-03-01T08:30:00Z,event,pilot away,,50.75,-1.3333333333333333,,,"
        "2026-03-02T08:00:08Z\n")
    assert ok(db, "craft", "show", "Kestrel", "--csv") == (
        "craft_id,name,kind,usual_speed_kn,max_speed_kn\n1,Kestrel,ship,8.0,12.0\n")
    assert ok(db, "voyage", "show", "Solent run", "--csv").splitlines() == [
        "voyage_id,name,craft_id,craft,from_place,to_place,departure_utc,zd_minutes,plan_id,"
        "plan", "1,Solent run,1,Kestrel,Cowes,Poole,2026-03-01T08:00:00Z,-60,1,Solent"]
    assert json.loads(ok(db, "fix", "show", "2", "--json"))["remarks"] == "Hurst Castle abeam"
    assert err(db, "entry", "show", "9") == "log entry 9 is not in the logbook"


def test_reads_of_a_missing_logbook_create_nothing(tmp_path):
    db = str(tmp_path / "none.sqlite")
    assert err(db, "craft", "list").startswith("logbook ")
    assert not Path(db).exists()


def test_installed_entry_point_maps_errors_and_exit_codes(tmp_path):
    """Through ``python -m passagelog`` as a script runs it: stderr line and exit code."""
    env_db = str(tmp_path / "log.sqlite")

    def main(*args):
        return subprocess.run([sys.executable, "-m", "passagelog", "--db", env_db, *args],
                              capture_output=True, text=True, cwd=ROOT)

    r = main("voyage", "add", "V", "--zd", "3")
    assert (r.returncode, r.stdout, r.stderr) == (
        1, "", "passagelog: voyage zone description: zone description '3' needs its sign: + in "
               "west longitude, - in east (ZT + ZD = UTC), e.g. +3 or -3\n")
    r = main("voyage", "add", "V", "--zd", "+3")
    assert r.returncode == 0 and r.stdout.startswith("ID  NAME")
    r = main("verify")
    assert (r.returncode, r.stdout) == (0, "0 records checked: the chains verify\n")
    r = main("fix", "list")
    assert r.returncode == 2


def test_json_and_csv_together_are_refused_before_anything_is_written(kept):
    db = kept
    before = _counts(db)
    for args in (["craft", "add", "Tern", "--json", "--csv"],
                 ["voyage", "add", "Another run", "--json", "--csv"],
                 ["craft", "list", "--json", "--csv"], ["plan", "show", "Solent", "--json",
                                                        "--csv"]):
        r = run(db, *args)
        assert isinstance(r.exception, click.UsageError), (args, r.exception)
        assert "choose one of --json and --csv" in str(r.exception) and r.stdout == ""
    assert _counts(db) == before


def test_a_plan_named_apart_from_its_route_is_called_by_the_plan_name(db):
    """A route imported under a plan name keeps its own name (the one in its file): the plan
    commands, their messages and status name the plan, and say the route's name beside it."""
    from passagelog.model import LegPlan, Route, Waypoint
    from passagelog.store import Logbook

    route = Route("Skellan Sound survey transit",
                  (Waypoint("A", 50.0, -1.0), Waypoint("B", 50.0, -1.5)), (LegPlan(),))
    with Logbook.open(db) as book:
        book.create_plan(route, "imported from route.rtz", name="Coastal")
    assert ok(db, "plan", "list").splitlines()[1].split()[:3] == ["1", "Coastal", "1"]
    assert ok(db, "plan", "show", "Coastal").splitlines()[0] == (
        "plan Coastal revision 1 (route 'Skellan Sound survey transit'): imported from "
        "route.rtz")
    assert ok(db, "plan", "history", "Coastal").splitlines()[1].split()[:3] == [
        "1", "2026-03-02T08:00:02Z", "2"]
    assert err(db, "plan", "waypoint", "move", "Coastal", "9", "50N 1W") == (
        "plan 'Coastal' waypoint number 9 does not exist; it has waypoints 1 to 2")
    assert err(db, "plan", "leg", "set", "1", "4", "--speed", "5") == (
        "plan 'Coastal' leg 4 does not exist; it has legs 1 to 1")
    ok(db, "voyage", "add", "Transit", "--plan", "Coastal")
    ok(db, "fix", "add", "Transit", "50N 1 10W", "--time", "2026-03-01T10:00Z")
    status = ok(db, "status", "Transit", "--now", "2026-03-01T10:10Z").splitlines()
    assert status[1] == "Plan         Coastal, revision 1 (route 'Skellan Sound survey transit')"
    # a plan created here has the route's name: nothing more is said
    ok(db, "plan", "copy", "Coastal", "Coastal B")
    assert ok(db, "plan", "show", "Coastal B").splitlines()[0] == (
        "plan Coastal B revision 1: copied from plan Coastal revision 1")


def test_record_times_are_shown_to_the_second():
    from passagelog.cli.common import to_second

    assert to_second("2026-12-02T06:54:02.559775Z") == "2026-12-02T06:54:02Z"
    assert to_second("2026-12-02T06:54:02Z") == "2026-12-02T06:54:02Z"
    assert to_second(None) is None


def test_voyage_show_marks_a_replaced_plan_assignment_and_counts_in_words(kept):
    db = kept
    ok(db, "voyage", "assign-plan", "Solent run", "Solent", "--revision", "1")
    shown = ok(db, "voyage", "show", "Solent run").splitlines()
    plans = [line for line in shown if line.startswith("plan ")]
    assert plans[-2].endswith("from the start (replaced by a later assignment)")
    assert plans[-1] == "plan        Solent revision 1 from the start"
    assert "entries     0 current (0 records)" in shown
    entry = ok(db, "entry", "add", "Solent run", "remark", "--time", "2026-03-01T08:00Z")
    assert entry.startswith("entry 1 ")
    assert "entries     1 current (1 record)" in ok(db, "voyage", "show", "Solent run")
    shown = ok(db, "entry", "show", "1").splitlines()
    assert "text          -" in shown  # empty text is shown as a dash
    assert [line for line in shown if line.startswith("recorded_utc")][0].endswith("Z")
