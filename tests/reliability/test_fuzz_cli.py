"""Bad input on the command line: every command (found by walking the click tree, so new
commands are fuzzed as they land) with generated arguments, run through
``passagelog.cli.main``. Exit 0, 1 or 2, never a traceback, one line for exit 1, and a
refused command leaves the logbook as it was.
"""

from __future__ import annotations

import random
import signal
import sqlite3
import sys
from contextlib import contextmanager
from datetime import datetime, timezone
from pathlib import Path

import click
import pytest

sys.path.insert(0, str(Path(__file__).parent))
import relkit  # noqa: E402

#: commands never fuzzed in process: they wait for live input or open the terminal UI
SKIP = {("feed",), ("tui",), ("watch",), ("ui",)}
#: commands that run only with the given extra arguments (else they open the terminal UI)
FORCED = {("demo",): ["--no-tui"]}
#: commands left to the long run (each builds a whole demo logbook: slow, few arguments)
SLOW_ONLY = {("demo",)}

CASES_FAST = 800
CASES_SLOW = 30_000


def walk_commands(slow: bool = False) -> list[tuple[tuple[str, ...], click.Command]]:
    from passagelog.cli import cli

    ctx = click.Context(cli)
    found = []

    def walk(cmd, path):
        if isinstance(cmd, click.Group):
            for name in cmd.list_commands(ctx):
                try:
                    sub = cmd.get_command(ctx, name)
                except Exception as exc:  # noqa: BLE001 - a command that cannot load
                    raise AssertionError(f"command {path + (name,)} does not load: {exc!r}")
                walk(sub, path + (name,))
        elif path not in SKIP and (slow or path not in SLOW_ONLY):
            found.append((path, cmd))

    walk(cli, ())
    return found


@pytest.fixture(scope="module")
def world(tmp_path_factory):
    """A logbook with a voyage, a plan and fixes; valid and mutated files beside it."""
    from passagelog.model import Voyage
    from passagelog.store import Logbook

    root = tmp_path_factory.mktemp("cli-fuzz")
    db = root / "book.sqlite"
    with Logbook.open(db) as book:
        v = book.add_voyage(Voyage("V", departure_utc=relkit.T0))
        plan_id, _rev = book.create_plan(relkit.sample_route(), "created")
        book.assign_plan(v, plan_id)
        book.add_fixes(v, relkit.sample_fixes())
    files = []
    for name, data in relkit.valid_documents().items():
        p = root / name
        p.write_bytes(data)
        files.append(str(p))
        rng = random.Random(name)
        for k in range(3):
            q = root / f"bad{k}-{name}"
            q.write_bytes(relkit.mutate(rng, data))
            files.append(str(q))
    files += [str(root / "missing.csv"), str(root), "-"]
    return {"db": db, "root": root, "files": files}


POSITIONS = ["50N 1W", "48°07.038'N 011°31.000'E", "47.6085, -122.3351", "0 0", "90N 0E",
             "-90 179.999", "89°59.999'N 179°59.999'W", "51 30N 0 10W"]
TIMES = ["2026-05-01T06:00Z", "2026-05-01 06:00 ZD+3", "2026-05-01T06:00-03:00", "06:00"]
NUMBERS = ["0", "1", "-1", "12.5", "360", "1e308", "nan", "inf", "-0", "99999999999"]
WORDS = ["V", "nope", "x'); DROP TABLE fix;--", "<script>alert(1)</script>", "nm", "km",
         "kn", "m/s", "E", "3W", "2.5E", "270/15", "-3", "ZD+3"]


def draw_args(rng: random.Random, path: tuple[str, ...], cmd: click.Command,
              files: list[str], root: Path) -> list[str]:
    def value_for(param) -> str:
        if isinstance(param.type, click.Choice) and rng.random() < 0.8:
            return rng.choice(list(param.type.choices))
        if rng.random() < 0.7:  # mostly a value of the right kind, to get past the parser
            name = (param.name or "").lower()
            if isinstance(param.type, (click.File, click.Path)) or any(
                    k in name for k in ("file", "fixes", "batch", "plan_file")):
                return rng.choice(files)
            if isinstance(param.type, (click.types.FloatParamType, click.types.IntParamType,
                                       click.FloatRange, click.IntRange)):
                return rng.choice(NUMBERS)
            if any(k in name for k in ("position", "from", "to", "mark", "lat", "lon", "pos")):
                return rng.choice(POSITIONS)
            if any(k in name for k in ("time", "utc", "departure", "now", "date", "when")):
                return rng.choice(TIMES)
            if "voyage" in name:
                return rng.choice(["V", "1", "nope", "x'); DROP TABLE fix;--"])
            if "plan" in name:
                return rng.choice(["Sample route", "1"] + files)
        pool = rng.choice([POSITIONS, TIMES, NUMBERS, WORDS, files, relkit.NASTY_VALUES])
        return rng.choice(pool)

    args: list[str] = []
    params = list(cmd.params)
    rng.shuffle(params)
    for param in params:
        if not param.required and rng.random() < 0.35:
            continue
        if isinstance(param, click.Option):
            opt = rng.choice(param.opts)
            if param.is_flag:
                args.append(opt)
            elif opt in ("-o", "--output"):
                args += [opt, str(root / f"out{rng.randrange(4)}.txt")]
            else:
                args += [opt, value_for(param)]
        else:  # an argument: 0-4 values (nargs may be -1)
            count = param.nargs if param.nargs > 0 else rng.choice([0, 1, 2, 2, 3, 3, 4])
            args += [value_for(param) for _ in range(count)]
    if rng.random() < 0.1:
        args.insert(rng.randrange(len(args) + 1), rng.choice(["--nope", "-z", "--", "--help"]))
    return ["--db", "{db}"] + list(path) + FORCED.get(path, []) + args


def table_counts(db: Path) -> dict[str, int]:
    conn = sqlite3.connect(f"file:{db}?mode=ro", uri=True)
    try:
        names = [r[0] for r in conn.execute(
            "SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name")]
        return {n: conn.execute(f'SELECT count(*) FROM "{n}"').fetchone()[0] for n in names}
    finally:
        conn.close()


@contextmanager
def time_limit(seconds: int, what):
    def on_alarm(_sig, _frame):
        raise TimeoutError(f"{what} still running after {seconds} s")

    previous = signal.signal(signal.SIGALRM, on_alarm)
    signal.alarm(seconds)
    try:
        yield
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, previous)


def fuzz_cli(world, cases: int, seed0: int, slow: bool = False) -> dict[int, int]:
    """Run ``cases`` seeded cases in the world's folder (a command may write a file named by
    a fuzzed argument: it lands there)."""
    import os

    here = os.getcwd()
    os.chdir(world["root"])
    try:
        return _fuzz_cli(world, cases, seed0, slow)
    finally:
        os.chdir(here)


STDINS = ["", "from_lat,from_lon,to_lat,to_lon\n50,-1,51,-2\n", "from_lat,from_lon\nnan,x\n",
          "\x00\xff junk\n", "".join(ln + "\r\n" for ln in relkit.sample_nmea_lines(3))]


def _fuzz_cli(world, cases: int, seed0: int, slow: bool) -> dict[int, int]:
    commands = walk_commands(slow)
    assert commands, "no commands found"
    codes: dict[int, int] = {}
    db = world["db"]
    # PRAGMA data_version changes when another connection commits: any write at all
    watch = sqlite3.connect(f"file:{db}?mode=ro", uri=True)
    try:
        return _cases(world, commands, cases, seed0, codes, db, watch)
    finally:
        watch.close()


def _cases(world, commands, cases, seed0, codes, db, watch) -> dict[int, int]:
    for seed in range(seed0, seed0 + cases):
        rng = random.Random(seed)
        path, cmd = rng.choice(commands)
        argv = [a.replace("{db}", str(db)) for a in
                draw_args(rng, path, cmd, world["files"], world["root"])]
        stdin = rng.choice(STDINS)
        before = watch.execute("PRAGMA data_version").fetchone()[0]
        try:
            with time_limit(60, argv):
                code, out, err = relkit.run_cli(argv, stdin=stdin)
            relkit.check_cli_result(argv, code, out, err)
            if code != 0:
                after = watch.execute("PRAGMA data_version").fetchone()[0]
                assert after == before, "a refused command wrote to the logbook"
        except AssertionError as exc:
            raise AssertionError(f"seed {seed}: {exc}") from None
        codes[code] = codes.get(code, 0) + 1
    return codes


def test_every_command_is_reached(world):
    paths = {p for p, _ in walk_commands()}
    assert ("calc", "leg") in paths and ("calc", "offset") in paths


def test_cli_fuzz(world):
    codes = fuzz_cli(world, CASES_FAST, 0)
    assert codes.get(0) and codes.get(1) and codes.get(2), codes  # all three outcomes reached


@pytest.mark.slow
def test_cli_fuzz_long(world):
    codes = fuzz_cli(world, CASES_SLOW, CASES_FAST, slow=True)
    print(f"\nCLI fuzz: {CASES_SLOW} cases, exit codes {codes}")


def test_sql_text_through_the_cli_is_stored_as_text(world):
    """A voyage name that is SQL is looked up as a value, not run (exit 1: no such voyage)."""
    evil = "x'); DROP TABLE fix;--"
    before = table_counts(world["db"])
    code, out, err = relkit.run_cli(["--db", str(world["db"]), "review", evil,
                                     "--table", "legs", "--format", "json"])
    assert code == 1 and "x'); DROP TABLE fix;--" in err, err
    assert table_counts(world["db"]) == before and "fix" in before
