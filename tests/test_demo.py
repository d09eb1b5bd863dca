"""The demo voyages: made by their seeded generator, and reviewed as they were built.

The generator puts every fix at a chosen along-track distance and cross-track error from
its leg (the direct problem), so the review must give those figures back; waypoint passages
and deviation episodes are known from the construction (demo_voyages/generate.py).
"""

from __future__ import annotations

import json
import subprocess
import sys
from datetime import datetime
from pathlib import Path

import numpy as np
import pytest

from passagelog.formats import read_fixes, read_route
from passagelog.review import reconcile

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "demo_voyages"
SCENARIOS = ("ocean", "coastal", "air")
FILES = ("expected.json", "voyage.json", "fixes.nmea", "fixes.gpx", "route.rtz", "route.gpx")


def _iso_s(text: str) -> float:
    return datetime.fromisoformat(text.replace("Z", "+00:00")).timestamp()


def test_generator_is_deterministic_and_committed_files_are_its_output(tmp_path):
    subprocess.run([sys.executable, str(DEMO / "generate.py"), str(tmp_path)], check=True,
                   capture_output=True)
    for key in SCENARIOS:
        for name in FILES:
            assert (tmp_path / key / name).read_bytes() == (DEMO / key / name).read_bytes(), (
                f"demo_voyages/{key}/{name} is stale: run python demo_voyages/generate.py")


@pytest.fixture(scope="module", params=SCENARIOS)
def reviewed(request):
    key = request.param
    folder = DEMO / key
    expected = json.loads((folder / "expected.json").read_text())
    meta = json.loads((folder / "voyage.json").read_text())
    route = read_route(folder / "route.csv")
    fixes, summary = read_fixes(folder / "fixes.gpx")  # every fix; the NMEA log is spoiled
    rv = reconcile(route, fixes, zd_minutes=meta["zd_minutes"])
    return key, expected, rv, fixes, summary


def test_review_finds_the_constructed_passages(reviewed):
    key, expected, rv, _, _ = reviewed
    got = {p.waypoint: p for p in rv.passages}
    assert len(got) == len(expected["passages"])
    for p in expected["passages"]:
        assert got[p["waypoint"]].time_s == _iso_s(p["first_fix_utc"]), (key, p)
        assert not got[p["waypoint"]].skipped


def test_review_finds_the_constructed_episodes(reviewed):
    key, expected, rv, _, _ = reviewed
    assert len(rv.episodes) == len(expected["episodes"])
    for ep, want in zip(rv.episodes, expected["episodes"]):
        assert ep.leg == want["leg"] and ep.side == want["side"]
        assert ep.start_s == _iso_s(want["first_fix_utc"])
        assert ep.end_s == _iso_s(want["back_inside_utc"])
        # XTE was put in by construction; GPX keeps 9 decimals of a degree (0.1 mm)
        assert ep.max_abs_xte_m == pytest.approx(want["max_abs_xte_m"], abs=2e-3)


def test_review_gives_back_the_constructed_offsets(reviewed):
    key, expected, rv, _, _ = reviewed
    fx = rv.fixes
    by_time = {float(t): i for i, t in enumerate(fx.time_s)}
    checked = 0
    for s in expected["samples"]:
        i = by_time[_iso_s(s["time_utc"])]
        if int(fx.leg[i]) != s["leg"]:
            continue  # inside an arrival circle the review has moved on to the next leg
        assert fx.xte_m[i] == pytest.approx(s["xte_m"], abs=2e-3), (key, s)
        assert fx.along_m[i] == pytest.approx(s["along_m"], abs=2e-3), (key, s)
        checked += 1
    assert checked >= len(expected["samples"]) * 0.8


def test_nmea_log_counts(reviewed):
    key, expected, _, fixes, _ = reviewed
    assert len(fixes) == expected["fixes"]
    nmea, summary = read_fixes(DEMO / key / "fixes.nmea")
    assert len(nmea) == expected["nmea_fixes"]
    assert sum(summary.rejected.values()) == expected["rejected_nmea_lines"]


def test_demo_command_prints_the_review(tmp_path):
    from click.testing import CliRunner

    from passagelog.cli import cli

    result = CliRunner().invoke(cli, ["demo", "--no-tui"])
    assert result.exit_code == 0, result.output
    assert "Velasca to Port Amberly" in result.output
    assert "starboard" in result.output  # the deviation episode on leg 4
    keep = tmp_path / "demo.sqlite"
    result = CliRunner().invoke(cli, ["demo", "--no-tui", "--keep", str(keep),
                                      "--scenario", "air"])
    assert result.exit_code == 0, result.output
    assert keep.is_file()


def test_demo_air_voyage_finds_the_wind_it_was_flown_in(tmp_path):
    """The air demo logs each fix's true heading (HDT, from the wind triangle solved by
    construction) and its TAS: the current found from heading and TAS is then the wind, from
    250 deg at 24 kn by construction (voyage.json), to within the track's wander (each leg's
    vector mean: set 070 +- 6 deg, drift 24 +- 2.5 kn, a tolerance of our own)."""
    from passagelog.cli.demo import build_demo_logbook
    from passagelog.store import Logbook
    from passagelog.tui.session import Session

    path = tmp_path / "air.sqlite"
    names = build_demo_logbook(path, ["air"])
    with Logbook.open(path) as book:
        fixes = book.fix_arrays(names["air"])
        assert np.isfinite(fixes.heading).sum() >= len(fixes) - 2  # two lines spoiled
        assert (fixes.stw_kn == 135.0).all()
    session = Session(path, voyage=names["air"])
    try:
        assert session.is_aircraft()
        plan = [(t, r) for t, r in session.plan_revisions] or session.route
        rv = reconcile(plan, session.fix_arrays())
    finally:
        session.close()
    for leg in rv.legs:
        assert abs((leg.set - 70.0 + 180.0) % 360.0 - 180.0) < 6.0, leg
        assert abs(leg.drift_kn - 24.0) < 2.5, leg
