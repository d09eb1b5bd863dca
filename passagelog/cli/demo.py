"""``passagelog demo``: a throwaway logbook made from the bundled demo voyages.

The demo voyages (``demo_voyages/``) are invented: vessels, aircraft, ports and passages of
our own scenario, made by ``demo_voyages/generate.py``. ``passagelog demo`` loads all three
into a fresh logbook in a temporary directory and opens the terminal UI on the ocean
passage; ``--no-tui`` prints its review instead. Nothing is written to your own logbook.
"""

from __future__ import annotations

import json
import shutil
import tempfile
from datetime import datetime
from pathlib import Path

import click

import passagelog

SCENARIOS = ("ocean", "coastal", "air")


def demo_dir() -> Path:
    """Where the demo voyages are: inside the installed package, else the source tree."""
    here = Path(passagelog.__file__).resolve().parent
    for candidate in (here / "_demo_voyages", here.parent / "demo_voyages"):
        if (candidate / "ocean" / "route.csv").is_file():
            return candidate
    raise click.ClickException("the demo voyages are not installed with this copy")


def _utc(text: str) -> datetime:
    from passagelog.nav.zonetime import parse_time_utc

    return parse_time_utc(text)


def build_demo_logbook(path: Path, scenarios=SCENARIOS) -> dict[str, str]:
    """Fill a new logbook at ``path`` with the demo voyages; returns scenario -> voyage name.

    Each voyage gets its craft, its plan (from the scenario's RTZ route), the plan assigned
    from departure, the fixes of its NMEA log, and its log entries (departure, clock changes,
    arrival).
    """
    from dataclasses import replace

    from passagelog.formats import iter_fixes, read_route
    from passagelog.model import Craft, LogEntry, Voyage
    from passagelog.store import Logbook

    root = demo_dir()
    names = {}
    with Logbook.open(path) as book:
        for key in scenarios:
            folder = root / key
            meta = json.loads((folder / "voyage.json").read_text(encoding="utf-8"))
            craft = book.add_craft(Craft(**meta["craft"]))
            route = replace(read_route(folder / "route.rtz"), name=meta["title"])
            dep = _utc(meta["departure_utc"])
            voyage = book.add_voyage(Voyage(
                name=meta["title"], craft_id=craft.craft_id, from_place=meta["from"],
                to_place=meta["to"], departure_utc=dep, zd_minutes=meta["zd_minutes"]))
            plan_id, revision = book.create_plan(route, "planned before departure")
            book.assign_plan(voyage, plan_id, revision, None)
            fixes = iter_fixes(folder / "fixes.nmea")
            if "air" in meta:
                # the aircraft's true airspeed (from its air data, not in the NMEA log) is
                # logged with each fix as its speed through the air mass, so that set and
                # drift found from heading and TAS are the wind
                tas = float(meta["air"]["tas_kn"])
                fixes = (replace(f, stw_kn=tas) for f in fixes)
            book.add_fixes(voyage, fixes)
            for e in meta["entries"]:
                book.add_entry(voyage, LogEntry(time_utc=_utc(e["time_utc"]), kind=e["kind"],
                                                text=e["text"], zd_minutes=e["zd_minutes"]))
            names[key] = voyage.name
    return names


@click.command()
@click.option("--scenario", type=click.Choice(SCENARIOS), default="ocean", show_default=True,
              help="Which demo voyage to show.")
@click.option("--no-tui", is_flag=True, help="Print the voyage's review instead of opening "
              "the terminal UI.")
@click.option("--keep", metavar="PATH", help="Write the demo logbook to PATH and keep it "
              "(default: a temporary file, removed afterwards).")
@click.pass_context
def demo(ctx: click.Context, scenario: str, no_tui: bool, keep: str | None) -> None:
    """Open a demo voyage in a throwaway logbook (invented vessel, ports and passage).

    Three voyages are loaded: an ocean passage of great-circle and rhumb legs with clock
    changes and a deviation episode, a coastal passage with tight cross-track limits, and a
    cross-country flight with wind. Your own logbook is not touched. The terminal UI's
    clock starts a few minutes after the voyage's latest fix (the header says so), so the
    Watch and the Log read as on the day.

    \b
    passagelog demo                     the terminal UI on the ocean passage
    passagelog demo --no-tui            its review, printed
    passagelog demo --keep demo.sqlite  keep the logbook to try other commands on
    """
    from passagelog.cli.common import refuse_nul, unwritable

    tmp = None
    if keep:
        refuse_nul(keep, "--keep")
        path = Path(keep)
        try:
            taken = path.exists()
        except OSError as exc:  # e.g. a file name too long for the file system
            raise unwritable(keep, exc, "--keep") from exc
        if taken:
            raise click.UsageError(f"{keep} exists already; give a new file for --keep")
    else:
        tmp = Path(tempfile.mkdtemp(prefix="passagelog-demo-"))
        path = tmp / "demo-logbook.sqlite"
    try:
        try:
            names = build_demo_logbook(path)
        except BaseException as exc:  # an error, or Ctrl-C: nothing half-built is kept
            if keep:
                _remove_logbook(path)
            if isinstance(exc, OSError):
                raise unwritable(keep or path, exc, "--keep" if keep else "demo logbook") \
                    from exc
            raise
        voyage = names[scenario]
        if keep:
            click.echo(f"demo logbook written to {path}", err=True)
        if no_tui or not click.get_text_stream("stdout").isatty():
            _print_review(ctx, path, voyage)
        else:
            from passagelog.tui import run_app

            run_app(path, voyage=voyage, voyage_clock=True)
    finally:
        if tmp is not None:
            shutil.rmtree(tmp, ignore_errors=True)


def _remove_logbook(path: Path) -> None:
    """Remove a logbook file made by this command and its WAL side files, if there."""
    for p in (path, path.with_name(path.name + "-wal"), path.with_name(path.name + "-shm")):
        try:
            p.unlink()
        except OSError:
            pass


def _print_review(ctx: click.Context, path: Path, voyage: str) -> None:
    """The review of the demo voyage: its legs, passages and deviation episodes."""
    from passagelog.cli.review import emit_table, load_inputs, run_review, _provenance

    root = ctx.find_root()
    root.obj = dict(root.obj or {}, db_path=str(path))
    inputs = load_inputs(ctx, voyage, None, None, None, None, None, None, ())
    rv = run_review(inputs, 3.0, 60.0, False, None, None)
    for table in ("legs", "passages", "episodes", "noon"):
        emit_table(rv, table, "table", title=f"{voyage}: {table}",
                   provenance=_provenance(inputs))
