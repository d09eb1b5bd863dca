"""``passagelog import`` / ``export``: all or nothing, idempotent, refusal before writing,
summaries on stderr, data on stdout, round trips through the logbook."""

from __future__ import annotations

import json
import sqlite3
import subprocess
import sys
from pathlib import Path

import pytest
from click.testing import CliRunner

from passagelog.cli import cli
from passagelog.errors import PassagelogError
from passagelog.store import Logbook

ROOT = Path(__file__).parents[2]
DATA = ROOT / "tests" / "formats" / "data"
sys.path.insert(0, str(ROOT / "tests" / "formats"))
from nmea_lines import gga, rmc  # noqa: E402


@pytest.fixture
def db(tmp_path):
    path = tmp_path / "log.sqlite"
    with Logbook.open(path) as book:
        from passagelog.model import Voyage

        book.add_voyage(Voyage("V1"))
    return str(path)


def run(db, *args, input=None):
    return CliRunner().invoke(cli, ["--db", db, *args], standalone_mode=False,
                              catch_exceptions=True, input=input)


def _fix_count(db) -> int:
    with sqlite3.connect(db) as conn:
        return conn.execute("SELECT count(*) FROM fix").fetchone()[0]


def _nmea(tmp_path, n=120, extra=""):
    path = tmp_path / "log.nmea"
    lines = [rmc(time=f"12{k // 60:02d}{k % 60:02d}", date="010524") for k in range(n)]
    path.write_text("".join(lines) + extra, encoding="ascii")
    return path


def test_import_nmea_then_again_adds_nothing_and_says_so(db, tmp_path):
    path = _nmea(tmp_path, extra=rmc(status="V", time="130000", date="010524"))
    r = run(db, "import", str(path), "--voyage", "V1")
    assert r.exception is None, r.output
    assert r.stdout == ""
    assert r.stderr.splitlines() == ["log.nmea: 121 lines read, 120 fixes kept",
                                     "  rejected 1: no fix: RMC status V (line 121)"]
    assert _fix_count(db) == 120
    r = run(db, "import", str(path), "--voyage", "V1")
    assert r.exception is None
    assert "log.nmea was already imported" in r.stderr and "nothing added" in r.stderr
    assert _fix_count(db) == 120
    # the same bytes on standard input are the same file
    r = run(db, "import", "-", "--voyage", "V1", "--json", input=path.read_bytes())
    assert json.loads(r.stdout)["imported"] is False and _fix_count(db) == 120


def test_import_is_all_or_nothing(db, tmp_path):
    # a fix CSV with a bad cell near the end: nothing of it is kept
    rows = ["time_utc,lat,lon"] + [f"2024-05-01T12:00:{k:02d}Z,10,20" for k in range(50)]
    rows.append("2024-05-01T12:01:00Z,10,north")
    path = tmp_path / "f.csv"
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")
    r = run(db, "import", str(path), "--voyage", "V1")
    assert isinstance(r.exception, PassagelogError)
    assert "f.csv, line 52, column lon" in str(r.exception)
    assert _fix_count(db) == 0
    with Logbook.open(db) as book:
        assert book.imports() == []


def _write_lock_free(db) -> bool:
    """Whether another connection could take the logbook's write lock at once."""
    probe = sqlite3.connect(db, timeout=0, isolation_level=None)
    try:
        probe.execute("BEGIN IMMEDIATE")
        probe.execute("ROLLBACK")
        return True
    except sqlite3.OperationalError:
        return False
    finally:
        probe.close()


def _spy_transactions(monkeypatch) -> list:
    """Note each write transaction the import begins (the logbook's write lock)."""
    entered: list = []
    real = Logbook.transaction

    def transaction(self):
        entered.append(self._depth)
        return real(self)

    monkeypatch.setattr(Logbook, "transaction", transaction)
    return entered


def test_import_reads_the_file_before_taking_the_write_lock(db, tmp_path, monkeypatch):
    # issue 9: a long import held the write lock while it parsed, and the feed waited
    path = _nmea(tmp_path, n=300)
    free = []
    entered = _spy_transactions(monkeypatch)
    real_prepare = Logbook.prepare_fixes

    def prepare(fixes, **kw):
        def watched():
            for k, fix in enumerate(fixes):
                if k in (0, 150, 299):  # while the file is being read
                    free.append((_write_lock_free(db), list(entered)))
                yield fix
        return real_prepare(watched(), **kw)

    monkeypatch.setattr(Logbook, "prepare_fixes", staticmethod(prepare))
    r = run(db, "import", str(path), "--voyage", "V1")
    assert r.exception is None, r.output
    assert free == [(True, [])] * 3  # no transaction begun while reading, the lock free
    assert entered and entered[0] == 0  # then one transaction, with the writes inside it
    assert _fix_count(db) == 300
    with Logbook.open(db) as book:
        assert book.verify().ok and len(book.imports()) == 1


def test_a_file_with_a_bad_line_never_takes_the_write_lock(db, tmp_path, monkeypatch):
    rows = ["time_utc,lat,lon"] + [f"2024-05-01T12:00:{k:02d}Z,10,20" for k in range(50)]
    rows.append("2024-05-01T12:01:00Z,10,north")
    path = tmp_path / "f.csv"
    path.write_text("\n".join(rows) + "\n", encoding="utf-8")
    entered = _spy_transactions(monkeypatch)
    r = run(db, "import", str(path), "--voyage", "V1")
    assert isinstance(r.exception, PassagelogError)
    assert "f.csv, line 52, column lon" in str(r.exception)
    assert entered == [] and _fix_count(db) == 0


def test_a_file_that_is_not_the_claimed_format_is_refused_before_writing(db, tmp_path):
    path = _nmea(tmp_path)
    r = run(db, "import", str(path), "--format", "gpx", "--voyage", "V1")
    assert "is not a GPX file: its content is an NMEA 0183 log" in str(r.exception)
    assert _fix_count(db) == 0


def test_fixes_need_a_voyage_and_the_voyage_must_exist(db, tmp_path):
    path = _nmea(tmp_path)
    r = run(db, "import", str(path))
    assert "name their voyage with --voyage" in str(r.exception)
    r = run(db, "import", str(path), "--voyage", "Nowhere")
    assert isinstance(r.exception, PassagelogError) and "Nowhere" in str(r.exception)
    with Logbook.open(db) as book:
        assert book.imports() == []


def test_options_that_do_not_apply_are_usage_errors(db, tmp_path):
    import click

    r = run(db, "import", str(DATA / "route_1_0.rtz"), "--voyage", "V1")
    assert isinstance(r.exception, click.UsageError) and "assign-plan" in str(r.exception)
    r = run(db, "import", str(_nmea(tmp_path)), "--voyage", "V1", "--plan", "X")
    assert isinstance(r.exception, click.UsageError) and "--plan" in str(r.exception)
    with Logbook.open(db) as book:
        assert book.imports() == [] and book.list_plans() == []


def test_nothing_readable_is_an_error_and_nothing_is_recorded(db, tmp_path):
    path = tmp_path / "v.nmea"
    path.write_text(rmc(status="V") * 3, encoding="ascii")
    r = run(db, "import", str(path), "--voyage", "V1")
    assert "no fix could be read" in str(r.exception)
    assert "no fix: RMC status V" in str(r.exception)
    with Logbook.open(db) as book:
        assert book.imports() == []


def test_nmea_options_thin_talker_date(db, tmp_path):
    path = tmp_path / "gga.nmea"
    path.write_text("".join(gga(time=f"1200{k:02d}", talker=t) for k in range(60)
                            for t in ("GP", "GL")), encoding="ascii")
    r = run(db, "import", str(path), "--voyage", "V1", "--date", "2024-05-01", "--thin", "10",
            "--talker", "GL", "--json")
    assert r.exception is None, r.output
    out = json.loads(r.stdout)
    assert out["summary"]["fixes_kept"] == 6
    assert out["summary"]["ignored"] == {"talker GP not selected": 60}
    assert out["summary"]["first_time_utc"] == "2024-05-01T12:00:00Z"
    assert run(db, "import", str(path), "--voyage", "V1", "--date", "May").exception is not None


def test_route_import_and_export_round_trip(db, tmp_path):
    r = run(db, "import", str(DATA / "route_1_1.rtz"), "--plan", "Coastal")
    assert r.exception is None, r.output
    assert r.stderr == "plan 'Coastal' revision 1: 3 waypoints from route_1_1.rtz\n"
    for fmt, name in (("rtz", "a.rtz"), ("gpx", "a.gpx"), ("route-csv", "a.csv")):
        r = run(db, "export", "plan", "Coastal", "--format", fmt)
        assert r.exception is None, r.output
        (tmp_path / name).write_text(r.stdout, encoding="utf-8")
    from passagelog.formats import read_route

    original = read_route(DATA / "route_1_1.rtz")
    assert read_route(tmp_path / "a.rtz") == original
    assert read_route(tmp_path / "a.gpx").legs == original.legs
    assert read_route(tmp_path / "a.csv").waypoints[1].lat == original.waypoints[1].lat
    # a plan of the same name cannot be imported twice under that name
    again = tmp_path / "copy.rtz"
    again.write_text((tmp_path / "a.rtz").read_text(encoding="utf-8") + "\n", encoding="utf-8")
    r = run(db, "import", str(again), "--plan", "Coastal")
    assert "already exists" in str(r.exception)


def test_gpx_with_route_and_track(db, tmp_path):
    r = run(db, "import", str(DATA / "passage.gpx"))
    assert "holds fixes; name their voyage" in str(r.exception)
    r = run(db, "import", str(DATA / "passage.gpx"), "--voyage", "V1")
    assert r.exception is None, r.output
    assert "rejected 1: trkpt without time (at gpx/trk[1]/trkseg[1]/trkpt[3])" in r.stderr
    assert "plan 'Gulf crossing' revision 1" in r.stderr
    assert _fix_count(db) == 3


def test_export_fixes_to_a_file_by_its_ending(db, tmp_path):
    run(db, "import", str(_nmea(tmp_path, n=5)), "--voyage", "V1")
    out = tmp_path / "fixes.csv"
    r = run(db, "export", "fixes", "V1", "-o", str(out))
    assert r.exception is None and r.stdout == ""
    lines = out.read_text(encoding="utf-8").splitlines()
    assert lines[0] == "time_utc,lat,lon,method,sog_kn,cog,heading,remarks"
    assert lines[1] == "2024-05-01T12:00:00Z,48.1173,11.516666666666667,gnss,22.4,84.4,,"
    r = run(db, "export", "fixes", "V1", "--format", "nmea", "--gga")
    assert r.stdout.count("RMC,") == 5 and r.stdout.count("GGA,") == 5
    r = run(db, "export", "voyage", "V1")
    assert r.stdout.count("<trkpt") == 5
    r = run(db, "export", "fixes", "V1")
    assert isinstance(r.exception, Exception) and "--format" in str(r.exception)


def test_export_failure_leaves_no_file(db, tmp_path):
    out = tmp_path / "x.rtz"
    r = run(db, "export", "plan", "Nope", "-o", str(out))
    assert isinstance(r.exception, PassagelogError)
    assert not out.exists()
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".x.rtz")]


def test_exit_codes_and_one_line_on_stderr(tmp_path):
    db = tmp_path / "log.sqlite"
    bad = tmp_path / "junk.txt"
    bad.write_text("hello\n", encoding="utf-8")
    proc = subprocess.run([sys.executable, "-m", "passagelog", "--db", str(db), "import",
                           str(bad)], capture_output=True, text=True, cwd=ROOT)
    assert proc.returncode == 1 and proc.stdout == ""
    assert proc.stderr.startswith("passagelog: junk.txt: cannot tell the format")
    assert proc.stderr.count("\n") == 1


def test_an_import_of_fixes_keeps_the_review_for_the_terminal_ui(tmp_path):
    from passagelog.model import LegPlan, Route, Voyage, Waypoint
    from passagelog.tui import review_data as rd
    from passagelog.tui.session import Session

    path = tmp_path / "planned.sqlite"
    with Logbook.open(path) as book:
        route = Route("R", (Waypoint("A", 50.0, -4.0), Waypoint("B", 49.0, -6.0)),
                      (LegPlan("rhumb", 10.0),))
        plan_id, _ = book.create_plan(route, "made")
        book.add_voyage(Voyage("V1", plan_id=plan_id))
        book.add_voyage(Voyage("V2", plan_id=plan_id))
    nmea = _nmea(tmp_path)
    r = run(str(path), "import", str(nmea), "--voyage", "V1")
    assert r.exception is None and "review kept for the terminal UI" in r.stderr
    s = Session(path, voyage="V1")
    kept = rd.read_kept(s)
    assert kept is not None and kept[1] == rd.current_key(s) and kept[0].fixes == 120
    other = tmp_path / "other.nmea"
    other.write_text(nmea.read_text() + rmc(time="140000", date="010524"), encoding="ascii")
    r = run(str(path), "import", str(other), "--voyage", "V2", "--skip-review")
    assert r.exception is None and "review kept" not in r.stderr
    assert rd.read_kept(Session(path, voyage="V2")) is None
