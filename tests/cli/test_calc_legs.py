"""``passagelog calc leg / offset / track / composite``: the scripting contract (DESIGN.md,
docs/cli.md), checked against GeodSolve and the published examples."""

from __future__ import annotations

import json
import math
import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner

from passagelog.cli import cli
from passagelog.errors import InputError, PassagelogError

sys.path.insert(0, str(Path(__file__).parents[1] / "nav"))
import geodsolve as gs  # noqa: E402

ROOT = Path(__file__).parents[2]
JFK = "40°38'23\"N 073°46'44\"W"
SIN = "01°21'33\"N 103°59'22\"E"


def rhumb_available() -> bool:
    try:
        from passagelog.nav.rhumb import RhumbLeg  # noqa: F401
    except ImportError:
        return False
    return True


needs_rhumb = pytest.mark.skipif(not rhumb_available(), reason="rhumb legs not built yet")


def run(args, input=None):
    """Invoke the CLI in-process; library errors come back as result.exception."""
    return CliRunner().invoke(cli, ["calc", *args], input=input, standalone_mode=False,
                              catch_exceptions=True)


def run_main(args, input=None):
    """The installed entry point, as a script would run it (error mapping and exit codes)."""
    return subprocess.run([sys.executable, "-m", "passagelog", "calc", *args], input=input,
                          capture_output=True, text=True, cwd=ROOT)


# ----------------------------------------------------------------------------- calc leg
def test_leg_json_geodsolve_man_page():
    # GeodSolve(1) man page: azi1 3.30831240011556, azi2 177.48590214367724,
    # s12 15347627.659635615 m (REFERENCE.md)
    r = run(["leg", JFK, SIN, "--json"])
    assert r.exit_code == 0, r.output
    obj = json.loads(r.stdout)
    assert list(obj) == ["distance_m", "distance_nm", "initial_course", "final_course",
                         "sailing"]
    assert obj["distance_m"] == pytest.approx(15347627.659635615, abs=1e-3)
    assert obj["distance_nm"] == pytest.approx(15347627.659635615 / 1852, abs=1e-6)
    assert obj["initial_course"] == pytest.approx(3.30831240011556, abs=1e-7)
    assert obj["final_course"] == pytest.approx(177.48590214367724, abs=1e-7)
    assert obj["sailing"] == "great-circle"


def test_leg_human_output():
    r = run(["leg", JFK, SIN])
    assert r.exit_code == 0
    # figures of the GeodSolve man-page example, rounded as printed
    assert r.stdout.splitlines() == [
        "From      40°38.383'N 073°46.733'W",
        "To        01°21.550'N 103°59.367'E",
        "Sailing   great-circle (WGS84)",
        "Distance  8287.06 NM (15347627.7 m)",
        "Course    003.3°T initial, 177.5°T final",
    ]


@needs_rhumb
def test_leg_rhumb_json_done_when_example():
    # issue 2, "Done when": this exact command; RhumbSolve(1) man page for JFK -> SIN:
    # course 103.58283300341095, 18523563.042377431 m (REFERENCE.md)
    r = run_main(["leg", "50°N 4°W", "40°N 30°W", "--sailing", "rhumb", "--json"])
    assert r.returncode == 0, r.stderr
    obj = json.loads(r.stdout)
    assert obj["sailing"] == "rhumb" and obj["initial_course"] == obj["final_course"]
    r = run(["leg", JFK, SIN, "--sailing", "rhumb", "--json"])
    obj = json.loads(r.stdout)
    assert obj["distance_m"] == pytest.approx(18523563.042377431, abs=1e-3)
    assert obj["initial_course"] == pytest.approx(103.58283300341095, abs=1e-7)


def test_leg_sphere_models():
    # 1' of arc = 1 NM on the sphere-nm model: one degree of the equator is 60 NM (definition)
    r = run(["leg", "0N 0E", "0N 1E", "--earth", "sphere-nm", "--json"])
    assert json.loads(r.stdout)["distance_nm"] == pytest.approx(60.0, abs=1e-9)
    r = run(["leg", "0N 0E", "0N 1E", "--earth", "sphere", "--json"])
    assert json.loads(r.stdout)["distance_m"] == pytest.approx(6371008.8 * math.pi / 180,
                                                               abs=1e-6)


def test_leg_accepts_negative_decimal_positions():
    r = run(["leg", "-33.9, 151.2", "-33.9, -70.6", "--json"])
    assert r.exit_code == 0, r.output
    assert json.loads(r.stdout)["initial_course"] > 90


def test_leg_usage_errors():
    r = run_main(["leg", "50N 4W"])
    assert r.returncode == 2 and "expected 2 positions" in r.stderr and r.stdout == ""
    r = run_main(["leg", "50N 4W", "50N 4W"])
    assert r.returncode == 1 and "zero length" in r.stderr and r.stdout == ""
    r = run_main(["leg", "95N 4W", "50N 5W"])
    assert r.returncode == 1 and "FROM" in r.stderr and "95N 4W" in r.stderr


# -------------------------------------------------------------------------- calc offset
def test_offset_json_keys_and_signs():
    r = run(["offset", "50N 4W", "40N 30W", "55N 20W", "--json"])
    obj = json.loads(r.stdout)
    assert list(obj) == ["xte_m", "xte_nm", "along_m", "along_nm", "to_go_m", "to_go_nm"]
    assert obj["xte_m"] > 0  # north of a south-westerly track is to starboard
    assert obj["xte_nm"] == pytest.approx(obj["xte_m"] / 1852, rel=1e-15)
    lg = json.loads(run(["leg", "50N 4W", "40N 30W", "--json"]).stdout)
    assert obj["to_go_m"] == pytest.approx(lg["distance_m"] - obj["along_m"], abs=1e-6)
    rev = json.loads(run(["offset", "40N 30W", "50N 4W", "55N 20W", "--json"]).stdout)
    assert rev["xte_m"] == pytest.approx(-obj["xte_m"], abs=1e-3)


def test_offset_human_output_says_the_side():
    r = run(["offset", "50N 4W", "40N 30W", "35N 20W"])
    lines = r.stdout.splitlines()
    xte = [ln for ln in lines if ln.startswith("XTE")][0]
    assert re.fullmatch(r"XTE +\d+\.\d\d NM L \(-\d+\.\d m\)", xte)
    assert [ln.split()[0] for ln in lines] == ["From", "To", "Sailing", "Position", "Distance",
                                               "Course", "XTE", "Along", "To"]


@gs.needs_geodsolve
@pytest.mark.geodsolve
def test_offset_batch_against_geodsolve(tmp_path):
    rng = np.random.default_rng(3)
    n = 40
    rows = np.column_stack([rng.uniform(-70, 70, n), rng.uniform(-180, 180, n),
                            rng.uniform(-70, 70, n), rng.uniform(-180, 180, n),
                            rng.uniform(-70, 70, n), rng.uniform(-180, 180, n)])
    rows[:10, :4] = rows[0, :4]  # ten fixes against one leg (grouped batch path)
    text = "from_lat,from_lon,to_lat,to_lon,lat,lon\n" + "".join(
        ",".join(repr(float(v)) for v in r) + "\n" for r in rows)
    f = tmp_path / "fixes.csv"
    f.write_text(text)
    r = run(["offset", "--batch", str(f)])
    assert r.exit_code == 0, r.output
    out = [json.loads(ln) for ln in r.stdout.splitlines()]
    assert len(out) == n
    # reference: GeodSolve only (independent foot search, tests/nav/geodsolve.py)
    xr, ar = gs.foot(rows[:, 0], rows[:, 1], rows[:, 2], rows[:, 3], rows[:, 4], rows[:, 5])
    ok = ~np.isnan(xr)
    assert ok.sum() >= n - 4  # feet half a circumference away have no unique reference
    inv = gs.inverse(rows[:, :4])
    for k in np.flatnonzero(ok):
        assert out[k]["xte_m"] == pytest.approx(xr[k], abs=1e-3)
        assert out[k]["along_m"] == pytest.approx(ar[k], abs=1e-3)
        assert out[k]["to_go_m"] == pytest.approx(inv[k, 2] - ar[k], abs=1e-3)


@gs.needs_geodsolve
@pytest.mark.geodsolve
def test_leg_batch_from_stdin_against_geodsolve():
    rng = np.random.default_rng(4)
    rows = np.column_stack([rng.uniform(-80, 80, 30), rng.uniform(-180, 180, 30),
                            rng.uniform(-80, 80, 30), rng.uniform(-180, 180, 30)])
    text = "from_lat,from_lon,to_lat,to_lon\n" + "".join(
        ",".join(repr(float(v)) for v in r) + "\n" for r in rows)
    r = run(["leg", "--batch", "-"], input=text)
    assert r.exit_code == 0, r.output
    out = [json.loads(ln) for ln in r.stdout.splitlines()]
    ref = gs.inverse(rows)  # GeodSolve -i: azi1 azi2 s12
    for o, (azi1, azi2, s12) in zip(out, ref):
        assert o["distance_m"] == pytest.approx(s12, abs=1e-3)
        assert (o["initial_course"] - azi1 + 180) % 360 - 180 == pytest.approx(0, abs=1e-7)
        assert (o["final_course"] - azi2 + 180) % 360 - 180 == pytest.approx(0, abs=1e-7)
        assert o["sailing"] == "great-circle"


@needs_rhumb
def test_batch_sailing_column():
    text = ("from_lat,from_lon,to_lat,to_lon,sailing\n"
            "50,-4,40,-30,rhumb\n50,-4,40,-30,\n50,-4,40,-30,great-circle\n")
    r = run(["leg", "--batch", "-", "--sailing", "rhumb"], input=text)
    out = [json.loads(ln) for ln in r.stdout.splitlines()]
    assert [o["sailing"] for o in out] == ["rhumb", "rhumb", "great-circle"]
    assert out[0]["distance_m"] > out[2]["distance_m"]


BAD_ROWS = [
    ("from_lat,from_lon,to_lat,to_lon\n10,20,30,40\n10,20,30,east\n", "line 3",
     "column to_lon 'east'"),
    ("from_lat,from_lon,to_lat,to_lon\n10,20,30,40\n\n10,20,95,40\n", "line 4",
     "column to_lat '95' is out of range"),
    ("from_lat,from_lon,to_lat,to_lon\n10,20,30,40\n10,20,10,20\n", "line 3", "zero length"),
    ("from_lat,from_lon,to_lat,to_lon\n10,20,30\n", "line 2", "row has 3 fields"),
    ("from_lat,from_lon,to_lat\n10,20,30\n", "line 1", "missing to_lon"),
    ("from_lat,from_lon,to_lat,to_lon,speed\n10,20,30,40,5\n", "line 1", "unknown 'speed'"),
    ("from_lat,from_lon,to_lat,to_lon,sailing\n10,20,30,40,loxo\n", "line 2",
     "sailing 'loxo'"),
    ("from_lat,from_lon,to_lat,to_lon\n10,20,30,nan\n", "line 2", "finite"),
    ("", "line 1", "header row is required"),
]


@pytest.mark.parametrize("text, where, what", BAD_ROWS)
def test_leg_batch_bad_row_stops_with_its_line_and_no_output(text, where, what):
    r = run(["leg", "--batch", "-"], input=text)
    assert isinstance(r.exception, PassagelogError)
    assert f"stdin, {where}" in str(r.exception) and what in str(r.exception)
    assert r.stdout == ""  # no partial output


def test_offset_batch_bad_row_exit_code_and_message(tmp_path):
    f = tmp_path / "fixes.csv"
    f.write_text("from_lat,from_lon,to_lat,to_lon,lat,lon\n"
                 "0,0,0,30,1,1\n0,0,0,30,1,2\n0,0,0,30,90,0\n0,0,0,30,1,3\n")
    r = run_main(["offset", "--batch", str(f), "--earth", "sphere"])
    assert r.returncode == 1
    assert r.stdout == ""
    assert r.stderr.strip().startswith(f"passagelog: {f}, line 4: ")
    assert "pole of the great-circle leg" in r.stderr
    # a position column missing from an offset batch
    r = run(["offset", "--batch", "-"], input="from_lat,from_lon,to_lat,to_lon\n0,0,1,1\n")
    assert isinstance(r.exception, InputError) and "missing lat, lon" in str(r.exception)


def test_batch_and_positions_do_not_mix():
    r = run(["leg", "50N 4W", "40N 30W", "--batch", "-"], input="")
    assert r.exception is not None and "--batch" in str(r.exception)


# ---------------------------------------------------------------------- track, composite
def test_track_every_and_meridians_json():
    r = run(["track", "40 38N 73 47W", "51 28N 0 27W", "--meridians", "10", "--json"])
    assert r.exit_code == 0, r.output
    obj = json.loads(r.stdout)
    lons = [round(p["lon"], 9) for p in obj["points"]]
    assert lons[1:-1] == [-70.0, -60.0, -50.0, -40.0, -30.0, -20.0, -10.0]
    assert obj["points"][-1]["along_m"] == pytest.approx(obj["great_circle_m"], abs=1e-6)
    r = run(["track", "40 38N 73 47W", "51 28N 0 27W", "--every", "500", "--json"])
    pts = json.loads(r.stdout)["points"]
    assert [round(p["along_nm"], 6) for p in pts[:-1]] == [0, 500, 1000, 1500, 2000, 2500,
                                                            3000][:len(pts) - 1]
    if rhumb_available():
        chain = json.loads(r.stdout)["rhumb_chain_m"]
        assert chain >= json.loads(r.stdout)["great_circle_m"]  # rhumb hops never shorter


def test_composite_json_and_error():
    r = run(["composite", "34 24S 18 30E", "38 30S 145E", "--limit", "50S", "--json"])
    assert r.exit_code == 0, r.output
    obj = json.loads(r.stdout)
    assert obj["composite"] is True and obj["limit_lat"] == -50.0
    assert [p["kind"] for p in obj["parts"]] == ["great-circle", "parallel", "great-circle"]
    assert obj["distance_m"] == pytest.approx(sum(p["distance_m"] for p in obj["parts"]))
    r = run_main(["composite", "55S 18 30E", "38 30S 145E", "--limit", "50S"])
    assert r.returncode == 1 and "beyond the limiting latitude" in r.stderr


# ------------------------------------------------------------------------ docs/cli.md
def _doc_examples():
    text = (ROOT / "docs" / "cli.md").read_text(encoding="utf-8")
    blocks = re.findall(r"```console\n(.*?)```", text, flags=re.S)
    out = []
    for block in blocks:
        lines = block.splitlines()
        if not lines or not re.match(r"\$ passagelog calc (leg|offset|track|composite)\b",
                                     lines[0]):
            continue
        out.append((lines[0][2:], "\n".join(lines[1:])))
    return out


@pytest.mark.parametrize("command, expected", _doc_examples())
def test_docs_examples_print_as_documented(command, expected):
    import shlex

    args = shlex.split(command)[2:]
    if "rhumb" in args and not rhumb_available():
        pytest.skip("rhumb legs not built yet")
    stdin = None
    r = run(args, input=stdin)
    assert r.exit_code == 0, r.output
    got = r.stdout.rstrip("\n").splitlines()
    want = expected.rstrip("\n").splitlines()
    assert len(got) == len(want)
    for g, w in zip(got, want):
        if w.startswith("{"):  # JSON: same keys in the same order, numbers to 1e-12
            gj, wj = json.loads(g), json.loads(w)
            assert list(gj) == list(wj)
            for k in wj:
                assert gj[k] == (pytest.approx(wj[k], rel=1e-12, abs=1e-9)
                                 if isinstance(wj[k], float) else wj[k])
        else:
            assert g == w
