"""Regression tests, one per bug the reliability fuzzing found (named after the bug)."""

from __future__ import annotations

import sys
from datetime import datetime, timezone
from pathlib import Path

import pytest

sys.path.insert(0, str(Path(__file__).parent))
import relkit  # noqa: E402

from passagelog.errors import FormatError  # noqa: E402
from passagelog.formats import read_fixes, read_routes  # noqa: E402

T0 = datetime(2026, 5, 1, 6, 0, tzinfo=timezone.utc)

ROUTE_CSV = ("name,lat,lon,sailing,speed_kn,xtl_port_nm,xtl_stbd_nm,arrival_radius_nm,"
             "turn_radius_nm,notes\n")
FIX_CSV = "time_utc,lat,lon,method,sog_kn,cog,heading,remarks\n"


def nmea(body: str) -> str:
    """A sentence with its checksum, the XOR of the characters between '$' and '*'
    (NMEA 0183, REFERENCE.md)."""
    x = 0
    for c in body:
        x ^= ord(c)
    return f"${body}*{x:02X}\r\n"


def test_regression_rtz_unknown_xml_encoding(tmp_path):
    # An XML declaration naming an encoding Python does not know: LookupError used to escape;
    # one expat cannot read (UTF-32): ValueError used to escape.
    for enc in ("UTF-0.0", "utf-32"):
        p = tmp_path / "route.rtz"
        p.write_text(f'<?xml version="1.0" encoding="{enc}"?>\n'
                     '<route xmlns="http://www.cirm.org/RTZ/1/1" version="1.1"/>\n')
        with pytest.raises(FormatError, match=r"route\.rtz: cannot be read as XML"):
            read_routes(p)


def test_regression_nmea_huge_number_field(tmp_path):
    # A GGA whose HDOP is 400 nines: float() gives inf, and the fix constructor's InputError
    # (with no file or line) used to end the whole read. Now that line alone is rejected.
    good = nmea("GPRMC,123519,A,4807.038,N,01131.000,E,022.4,084.4,230394,003.1,W")
    bad_gga = nmea("GPGGA,123520,4807.038,N,01131.000,E,1,08," + "9" * 400 + ",545.4,M,46.9,M,,")
    bad_rmc = nmea("GPRMC,123521,A,4807.038,N,01131.000,E," + "9" * 400
                   + ",084.4,230394,003.1,W")
    last = nmea("GPRMC,123522,A,4807.038,N,01131.000,E,022.4,084.4,230394,003.1,W")
    p = tmp_path / "log.nmea"
    p.write_text(good + bad_gga + bad_rmc + last)
    fixes, summary = read_fixes(p)
    assert [f.time_utc.second for f in fixes] == [19, 22]
    assert summary.lines_rejected == 2
    assert sorted(line for places in summary.rejected_at.values() for line in places) == [2, 3]


def test_regression_nmea_zda_day_overflow(tmp_path):
    # A ZDA whose day field is 400 digits: date() raised OverflowError (not ValueError), which
    # escaped the reader. Now the line is rejected and counted.
    good = nmea("GPRMC,123519,A,4807.038,N,01131.000,E,022.4,084.4,230394,003.1,W")
    bad_zda = nmea("GPZDA,123520.00," + "9" * 400 + ",03,1994,00,00")
    p = tmp_path / "log.nmea"
    p.write_text(good + bad_zda)
    fixes, summary = read_fixes(p)
    assert len(fixes) == 1 and summary.rejected_at == {"bad field: ZDA date": [2]}


def test_regression_store_huge_id(tmp_path):
    # An id past SQLite's 64-bit integers (``--craft 1000000000000000000000000000000`` on the
    # command line): OverflowError escaped the store. Now: not found / refused, nothing written.
    from passagelog.errors import InputError, NotFoundError
    from passagelog.model import Voyage
    from passagelog.store import Logbook

    huge = 10**30
    with Logbook.open(tmp_path / "book.sqlite") as book:
        v = book.add_voyage(Voyage("V"))
        for call in (lambda: book.voyage(huge), lambda: book.craft(huge),
                     lambda: book.plan(huge), lambda: book.fix(huge), lambda: book.entry(huge)):
            with pytest.raises(NotFoundError, match=str(huge)):
                call()
        with pytest.raises((NotFoundError, InputError), match=str(huge)):
            book.add_voyage(Voyage("W", craft_id=huge))
        assert book.counts(v)["fixes"] == 0 and book.verify().ok
        assert [x.name for x in book.list_voyages()] == ["V"]


def test_regression_fix_satellites_beyond_int32(tmp_path):
    # A GGA whose satellites field is 30 digits made a Fix the logbook's hash chain could not
    # pack (struct.error). The model now bounds satellites, and the reader rejects the line.
    from passagelog.errors import InputError
    from passagelog.model import Fix

    with pytest.raises(InputError, match="satellites"):
        Fix(T0, 50.0, -1.0, satellites=10**30)
    assert Fix(T0, 50.0, -1.0, satellites=64).satellites == 64
    good = nmea("GPGGA,123519,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,,")
    bad = nmea("GPGGA,123520,4807.038,N,01131.000,E,1," + "9" * 30 + ",0.9,545.4,M,46.9,M,,")
    p = tmp_path / "log.nmea"
    p.write_text(good + bad)
    fixes, summary = read_fixes(p, start_date=T0.date())
    assert len(fixes) == 1 and list(summary.rejected_at.values()) == [[2]]


def test_regression_calc_batch_not_utf8(tmp_path):
    # ``calc leg --batch FILE`` on a binary file (a logbook): UnicodeDecodeError was a traceback.
    p = tmp_path / "book.sqlite"
    p.write_bytes(b"SQLite format 3\x00\x10\x00\x02\x02\x00@  \xa6\xff\xfe")
    for cmd in ("leg", "offset"):
        code, out, err = relkit.run_cli(["calc", cmd, "--batch", str(p)])
        assert code == 1 and out == "" and "not UTF-8 text" in err and "book.sqlite" in err, err


def test_regression_logbook_path_unopenable(tmp_path):
    # ``--db`` naming a directory or a path through a file: sqlite3.OperationalError escaped
    # Logbook.open (the connect was outside its try); a NUL in the path: ValueError escaped.
    from passagelog.errors import StoreError
    from passagelog.store import Logbook

    (tmp_path / "afile").write_text("")
    for bad in (tmp_path, tmp_path / "afile" / "x.sqlite", str(tmp_path / "a\x00b"),
                tmp_path / ("9" * 400)):  # ENAMETOOLONG: OSError escaped Path.exists()
        with pytest.raises(StoreError, match="logbook"):
            Logbook.open(bad)
    code, _out, err = relkit.run_cli(["--db", str(tmp_path), "verify"])
    assert code == 1 and "logbook" in err and "Traceback" not in err


def test_regression_csv_not_utf8_route(tmp_path):
    # A route CSV saved as latin-1 (0xE9 for 'é'): UnicodeDecodeError used to escape.
    p = tmp_path / "route.csv"
    p.write_bytes((ROUTE_CSV + "Cap Fr\xe9hel,48.68,-2.32,,,,,,,\nB,49,-3,rhumb,,,,,,\n")
                  .encode("latin-1"))
    with pytest.raises(FormatError, match=r"route\.csv.*not UTF-8 text"):
        read_routes(p)


def test_regression_csv_not_utf8_first_block(tmp_path):
    # the bad byte is decoded with the header (the first block): no line can be named
    p = tmp_path / "fixes.csv"
    p.write_bytes(FIX_CSV.encode() + b"2026-05-01T06:09:00Z,50,-1,gnss,,,,\xff\n")
    with pytest.raises(FormatError, match=r"fixes\.csv: not UTF-8 text"):
        read_fixes(p)


def test_regression_csv_not_utf8_fix_rows(tmp_path):
    p = tmp_path / "fixes.csv"
    rows = "".join(f"2026-05-01T06:{m:02d}:00Z,50.0,-1.0,gnss,5,10,,ok\n" for m in range(3))
    # text is decoded ahead in blocks of 8 KiB: the bad byte lies beyond the first block
    p.write_bytes(FIX_CSV.encode() + rows.encode() * 200
                  + b"2026-05-01T06:09:00Z,50,-1,gnss,,,,\xe9\n")
    with pytest.raises(FormatError, match=r"fixes\.csv: not UTF-8 text after line \d+"):
        read_fixes(p)


def test_regression_gpx_unknown_xml_encoding(tmp_path):
    # The same as for RTZ, in GPX (LookupError / ValueError escaped the GPX reader).
    for enc in ("UTF-0.0", "utf-32"):
        p = tmp_path / "track.gpx"
        p.write_text(f'<?xml version="1.0" encoding="{enc}"?>\n'
                     '<gpx xmlns="http://www.topografix.com/GPX/1/1" version="1.1"/>\n')
        with pytest.raises(FormatError, match=r"track\.gpx"):
            read_fixes(p)


def test_regression_great_circle_final_course_at_a_pole():
    # A leg ending at a pole gave a final course of 0 or 180 (the line's own azimuth at the
    # pole point); GeodSolve refers it to the meridian of the longitude given for the end:
    # echo "50 10 -90 0" | GeodSolve -i  ->  azi2 -170;  "-30 10 90 77" -> azi2 67;
    # "50 10 90 0" -> azi2 -10 (GeographicLib 1.52+, run on the Debian package).
    from passagelog.nav.legs import make_leg

    for case, azi2 in (((50, 10, -90, 0), 190.0), ((-30, 10, 90, 77), 67.0),
                       ((50, 10, 90, 0), 350.0)):
        assert make_leg(*case, "great-circle").final_course == pytest.approx(azi2, abs=1e-9)


def test_regression_reader_waits_for_a_long_import(tmp_path, monkeypatch):
    # Logbook.open took the write lock (its schema check ran in BEGIN IMMEDIATE) even when
    # there was nothing to migrate, so 'passagelog review' failed with "database is locked"
    # while an import of 200,000 lines held the lock for 20 s; and a writer that waited past
    # the busy timeout got sqlite3.OperationalError (a traceback that ended the feed).
    from passagelog.errors import BusyError
    from passagelog.model import Fix, Voyage
    from passagelog.store import Logbook
    from passagelog.store import logbook as lb

    db = tmp_path / "book.sqlite"
    with Logbook.open(db) as book:
        book.add_voyage(Voyage("V"))
        book.add_fix("V", Fix(T0, 50.0, -1.0))
    monkeypatch.setattr(lb, "BUSY_TIMEOUT_S", 0.2)
    writer = Logbook.open(db)
    try:
        with writer.transaction():
            writer.add_fix("V", Fix(T0.replace(minute=1), 50.0, -1.01))  # holds the lock
            reader = Logbook.open(db)  # no wait, no error
            try:
                assert len(reader.fixes("V")) == 1  # the committed state
                with pytest.raises(BusyError, match=r"book\.sqlite.*busy"):
                    reader.add_fix("V", Fix(T0.replace(minute=2), 50.0, -1.02))
            finally:
                reader.close()
    finally:
        writer.close()
    with Logbook.open(db) as book:
        assert len(book.fixes("V")) == 2 and book.verify().ok


def test_regression_feed_survives_a_long_import(tmp_path, monkeypatch):
    # The feed's write failed with "database is locked" while an import held the lock past the
    # busy timeout: the process ended with a traceback and every later fix was lost. Now the
    # feed waits for the lock and logs every fix.
    import threading

    from passagelog.model import Fix, Voyage
    from passagelog.store import Logbook
    from passagelog.store import logbook as lb

    db = tmp_path / "book.sqlite"
    with Logbook.open(db) as book:
        book.add_voyage(Voyage("V"))
        book.add_voyage(Voyage("Import"))
    monkeypatch.setattr(lb, "BUSY_TIMEOUT_S", 0.2)
    holding, release = threading.Event(), threading.Event()

    def long_import():
        with Logbook.open(db) as other, other.transaction():
            other.add_fix("Import", Fix(T0, 10.0, 10.0))
            holding.set()
            release.wait(10)

    lines = "".join(nmea(f"GPRMC,06{m:02d}00,A,5000.000,N,00100.000,W,5.0,90.0,010526,,")
                    for m in range(5))
    th = threading.Thread(target=long_import)
    th.start()
    try:
        assert holding.wait(10)
        timer = threading.Timer(1.0, release.set)  # the "import" commits after a second
        timer.start()
        code, _out, err = relkit.run_cli(["--db", str(db), "feed", "--stdin", "--every", "1",
                                          "--voyage", "V"], stdin=lines)
    finally:
        release.set()
        th.join(10)
    assert code == 0, err
    assert "busy" in err and "Traceback" not in err
    with Logbook.open(db) as book:
        assert [f.time_utc.minute for f in book.fixes("V")] == [0, 1, 2, 3, 4]
        assert book.verify().ok


def test_regression_formats_path_with_nul():
    # A path holding NUL (possible from the library, not from a command line): open() raised
    # ValueError, which escaped read_routes and read_fixes.
    for read in (read_routes, read_fixes):
        with pytest.raises(FormatError, match="NUL"):
            read("route\x00.csv")


def _bad_output_paths(tmp_path):
    """Output paths no file can be written at: (path, what the message says)."""
    (tmp_path / "afile").write_text("")
    return [
        (tmp_path / ("9" * 400 + ".gpx"), "File name too long"),  # ENAMETOOLONG
        (tmp_path / "no-such-folder" / "out.gpx", "No such file or directory"),
        (tmp_path / "afile" / "out.gpx", "Not a directory"),
    ]


def test_regression_demo_keep_unwritable_path(tmp_path):
    # ``demo --keep`` with a name too long for the file system: OSError escaped
    # Path.exists() as a traceback (long CLI fuzz, seed 4656). A path through a file
    # (Logbook.open refuses it) is named too, and nothing is left behind.
    long_name = tmp_path / ("9" * 400)
    code, _out, err = relkit.run_cli(["demo", "--no-tui", "--keep", str(long_name)])
    relkit.check_cli_result(["demo"], code, _out, err)
    assert code == 1 and "--keep" in err and "9" * 400 in err, err
    assert "File name too long" in err
    (tmp_path / "afile").write_text("")
    through = tmp_path / "afile" / "demo.sqlite"
    code, _out, err = relkit.run_cli(["demo", "--no-tui", "--keep", str(through)])
    relkit.check_cli_result(["demo"], code, _out, err)
    assert code == 1 and str(through) in err, err
    # a NUL (long CLI fuzz, seed 2684): ValueError escaped Path.exists()
    code, _out, err = relkit.run_cli(["demo", "--no-tui", "--keep", "demo\x00.sqlite"])
    relkit.check_cli_result(["demo"], code, _out, err)
    assert code == 1 and "--keep" in err and "NUL" in err, err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["afile"]


@pytest.fixture
def small_book(tmp_path):
    from passagelog.model import Voyage
    from passagelog.store import Logbook

    db = tmp_path / "book.sqlite"
    with Logbook.open(db) as book:
        v = book.add_voyage(Voyage("V", departure_utc=relkit.T0))
        plan_id, _rev = book.create_plan(relkit.sample_route(), "created")
        book.assign_plan(v, plan_id)
        book.add_fixes(v, relkit.sample_fixes())
    return db


@pytest.mark.parametrize("command", [
    ["export", "fixes", "V", "--format", "gpx"],
    ["export", "plan", "Sample route", "--format", "gpx"],
    ["export", "voyage", "V", "--format", "gpx"],
    ["report", "legs", "V", "--format", "html"],
])
def test_regression_output_file_unwritable(tmp_path, small_book, command):
    # ``export ... -o`` and ``report ... -o`` naming a directory, a missing folder, a path
    # through a file or a name too long: OSError (IsADirectoryError, FileNotFoundError...)
    # escaped as a traceback. Now one line naming the file, exit 1, no temporary file left.
    out_dir = tmp_path / "out"
    out_dir.mkdir()
    cases = _bad_output_paths(out_dir) + [(out_dir, "Is a directory"),
                                          (str(out_dir / "a\x00b.gpx"), "NUL")]
    before = sorted(p.name for p in out_dir.iterdir())
    for target, reason in cases:
        argv = ["--db", str(small_book)] + command + ["-o", str(target)]
        code, out, err = relkit.run_cli(argv)
        relkit.check_cli_result(argv, code, out, err)
        assert code == 1 and repr(str(target))[1:-1] in err and reason in err, (argv, err)
        assert sorted(p.name for p in out_dir.iterdir()) == before, "a file was left behind"


def test_regression_feed_writes_while_an_import_reads_its_file(tmp_path, monkeypatch):
    # 'passagelog import' parsed its file inside its write transaction, so the feed's writes
    # waited for the whole import (2-7 s with 200,000-line imports back to back, and past the
    # busy timeout for larger files). Now the file is read and checked first: a feed write
    # made while the import is still reading goes in at once (a 0.2 s busy timeout here).
    from passagelog.errors import BusyError
    from passagelog.formats import FixReader
    from passagelog.model import Fix, Voyage
    from passagelog.store import Logbook
    from passagelog.store import logbook as lb

    db = tmp_path / "book.sqlite"
    with Logbook.open(db) as book:
        book.add_voyage(Voyage("Live"))
        book.add_voyage(Voyage("Import"))
    path = tmp_path / "log.nmea"
    path.write_text("\r\n".join(relkit.sample_nmea_lines(60)) + "\r\n", encoding="ascii")
    monkeypatch.setattr(lb, "BUSY_TIMEOUT_S", 0.2)
    written, refused = [], []
    real_iter = FixReader.__iter__

    def feed_meanwhile(reader):
        for k, fix in enumerate(real_iter(reader)):
            if k == 30:  # half way through the file: the feed logs a fix
                try:
                    with Logbook.open(db) as feed:
                        written.append(feed.add_fix("Live", Fix(T0, 50.0, -1.0)).fix_id)
                except BusyError as exc:
                    refused.append(str(exc))
            yield fix

    monkeypatch.setattr(FixReader, "__iter__", feed_meanwhile)
    code, _out, err = relkit.run_cli(["--db", str(db), "import", str(path), "--voyage",
                                      "Import", "-q"])
    assert code == 0, err
    assert refused == [] and written == [1]  # the feed's fix went in first, at once
    with Logbook.open(db) as book:
        assert len(book.fixes("Live")) == 1 and len(book.fixes("Import")) == 60
        assert book.verify().ok


def test_regression_crash_test_kills_fall_inside_the_shortest_transaction(tmp_path):
    # Once an import read its file before taking the write lock, its transaction became
    # short (2-3 s for 200,000 lines) and one timed run, stretched by a busy machine, set a
    # kill window longer than most runs' transactions: 7 of 20 kills found the import
    # already committed. scripts/crash_test.py now times three unkilled imports and draws
    # the kill moments inside the shortest transaction.
    import random

    sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "scripts"))
    import crash_test

    result = crash_test.crash_imports(tmp_path, kills=1, lines=2_000, rng=random.Random(3),
                                      log=lambda _t: None)
    assert result.ok, result.problems
    cal = result.calibration
    assert len(cal["transactions_s"]) == crash_test.CALIBRATION_RUNS == 3
    assert cal["transaction_s"] == min(cal["transactions_s"])
    assert cal["transaction_s"] == pytest.approx(cal["commit_s"] - cal["begin_s"], abs=2e-3)
    assert 0 <= result.kill_delays[0] <= cal["transaction_s"]


@pytest.mark.parametrize("point, message", [
    ('<rtept lat="0.1,0.1" lon="2"/>', "lat '0.1,0.1' is not a number"),
    ('<rtept lat="1" lon="' + "9" * 400 + '"/>', "lon '9999"),
    ('<rtept lat="1" lon="2"><extensions><pl:waypoint rtzId="&amp;"/></extensions></rtept>',
     "rtzId '&' is not a whole number"),
    ('<rtept lat="1" lon="2"><extensions><pl:leg speedKn="1 2"/></extensions></rtept>',
     "speedKn '1 2' is not a number"),
])
def test_regression_gpx_bad_number_names_its_attribute(tmp_path, point, message):
    # A GPX route point whose number could not be read gave Python's own text ("could not
    # convert string to float: '0.1,0.1'", "invalid literal for int()"): the element was
    # named but not the attribute. And a root element in the wrong namespace was reported
    # as "cannot be read as XML (route.gpx: the root element is ...)".
    from passagelog.formats.gpx import NS

    head = (f'<gpx xmlns="http://www.topografix.com/GPX/1/1" xmlns:pl="{NS}" version="1.1" '
            'creator="t"><rte><rtept lat="1" lon="1"/>')
    path = tmp_path / "route.gpx"
    path.write_text(head + point + "</rte></gpx>", encoding="utf-8")
    with pytest.raises(FormatError) as exc:
        read_routes(path)
    assert exc.value.where == "route.gpx, element gpx/rte[1]/rtept[2]"
    assert message in str(exc.value)
    path.write_text('<gpx xmlns="http://www.topografix.com/GPX/-1/1"/>', encoding="utf-8")
    with pytest.raises(FormatError) as exc:
        read_routes(path)
    assert str(exc.value).startswith("route.gpx: the root element is ")
