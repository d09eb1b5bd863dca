"""``passagelog import`` and ``passagelog export``: files in and out of the logbook.

Import tells the format from the content (``--format`` to insist; a file that is not that
format is refused before the logbook is touched), reads and checks the whole file before
taking the logbook's write lock, then writes everything in one short transaction (all or
nothing) and remembers the file by the SHA-256 of its bytes, so importing the same
file again adds nothing and says so. Routes become plans; fixes go to a voyage. The read
summary (lines read, fixes kept, rejected lines by reason with their first line numbers)
goes to stderr; ``--json`` prints it on stdout for scripts.
"""

from __future__ import annotations

import hashlib
import json
import os
import shutil
import tempfile
from contextlib import contextmanager
from datetime import date
from pathlib import Path
from typing import IO, Iterator

import click

from passagelog.cli.common import db_path_from, refuse_nul, unwritable

#: Files at least this large get a progress bar (on a terminal, without -q).
PROGRESS_MIN_BYTES = 1 << 20
FORMAT_CHOICES = ("nmea", "gpx", "rtz", "route-csv", "fix-csv")
#: File name endings -> export format, when --format is not given.
EXTENSIONS = {".rtz": "rtz", ".gpx": "gpx", ".nmea": "nmea", ".nme": "nmea", ".log": "nmea",
              ".txt": "nmea"}


def _sha256(path: Path) -> str:
    digest = hashlib.sha256()
    with open(path, "rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 20), b""):
            digest.update(chunk)
    return digest.hexdigest()


@contextmanager
def _input_file(file: str) -> Iterator[tuple[Path, str]]:
    """(path, label) of the file to import; standard input is spooled to a temporary file
    first (its bytes are hashed and it may be read twice)."""
    if file != "-":
        path = Path(file)
        if not path.is_file():
            raise click.UsageError(f"{file}: no such file")
        yield path, path.name
        return
    fd, name = tempfile.mkstemp(prefix="passagelog-stdin-")
    try:
        with os.fdopen(fd, "wb") as out:
            shutil.copyfileobj(click.get_binary_stream("stdin"), out, 1 << 20)
        yield Path(name), "<stdin>"
    finally:
        os.unlink(name)


def _has_track(path: Path) -> bool:
    """True when a GPX file has any track point (a byte search, before parsing)."""
    import mmap

    if path.stat().st_size == 0:
        return False
    with open(path, "rb") as fh, mmap.mmap(fh.fileno(), 0, access=mmap.ACCESS_READ) as mm:
        return mm.find(b"trkpt") >= 0


class _Progress:
    """A rich progress bar on stderr over the bytes of a file, or nothing."""

    def __init__(self, total: int, label: str, enabled: bool):
        self._bar = None
        if not enabled or total < PROGRESS_MIN_BYTES:
            return
        from rich.console import Console
        from rich.progress import (BarColumn, DownloadColumn, Progress, TextColumn,
                                   TimeRemainingColumn)

        console = Console(stderr=True)
        if not console.is_terminal:
            return
        self._bar = Progress(TextColumn("{task.description}"), BarColumn(), DownloadColumn(),
                             TimeRemainingColumn(), console=console, transient=True)
        self._task = self._bar.add_task(f"importing {label}", total=total)

    def __enter__(self) -> "_Progress":
        if self._bar is not None:
            self._bar.start()
        return self

    def __exit__(self, *exc) -> None:
        if self._bar is not None:
            self._bar.stop()

    @property
    def callback(self):
        if self._bar is None:
            return None
        bar, task = self._bar, self._task
        return lambda done: bar.update(task, completed=done)


def _say(quiet: bool, text: str) -> None:
    if not quiet:
        click.echo(text, err=True)


def _keep_review(db_path, voyage_id: int, quiet: bool) -> None:
    """Reconcile the voyage and keep its review for the terminal UI (what its Review view
    would work out when first shown). A voyage that cannot be reviewed yet (no plan, say)
    is left alone: the import itself is done."""
    import time

    from passagelog.errors import PassagelogError
    from passagelog.tui.review_data import reconcile_and_keep

    t0 = time.perf_counter()
    try:
        reconcile_and_keep(str(db_path), voyage_id)
    except PassagelogError:
        return
    _say(quiet, f"voyage reconciled with its plan and the review kept for the terminal UI "
                f"({time.perf_counter() - t0:.1f} s)")


@click.command("import")
@click.argument("file", metavar="FILE")
@click.option("--format", "fmt", type=click.Choice(FORMAT_CHOICES),
              help="Insist on this format (default: told from the content).")
@click.option("--voyage", metavar="VOYAGE", help="Voyage (name or id) the fixes belong to.")
@click.option("--plan", "plan_name", metavar="NAME",
              help="Name of the plan made from the route (default: the route's name).")
@click.option("--thin", "thin_s", type=click.FloatRange(min=0), metavar="SECONDS",
              help="Keep one fix per this many seconds.")
@click.option("--talker", "talkers", multiple=True, metavar="XX",
              help="NMEA: use only this talker (repeat; the first is preferred).")
@click.option("--date", "start_date", metavar="YYYY-MM-DD",
              help="NMEA: the UTC date of the first sentence, for logs of GGA/GLL alone.")
@click.option("--allow-missing-checksum", is_flag=True,
              help="NMEA: accept sentences without *hh (a wrong checksum is always refused).")
@click.option("--skip-review", is_flag=True,
              help="Fixes: do not reconcile the voyage after the import to keep its review "
                   "for the terminal UI (Review then works it out when first shown).")
@click.option("-q", "--quiet", is_flag=True, help="No progress bar and no summary.")
@click.option("--json", "as_json", is_flag=True, help="Print the import summary as JSON.")
@click.pass_context
def import_(ctx: click.Context, file: str, fmt: str | None, voyage: str | None,
            plan_name: str | None, thin_s: float | None, talkers: tuple[str, ...],
            start_date: str | None, allow_missing_checksum: bool, skip_review: bool,
            quiet: bool, as_json: bool) -> None:
    """Import a route (RTZ, GPX, route CSV) as a plan, or fixes (NMEA 0183, GPX track,
    fix CSV) into a voyage. FILE may be - for standard input.

    All or nothing: a file that cannot be read adds nothing. The same file imported twice
    adds nothing the second time. Formats and rejected lines: docs/formats.md. After fixes
    are imported the voyage is reconciled with its plan and the review kept in the logbook,
    so that the terminal UI's Review opens at once (a few seconds for a million fixes;
    --skip-review leaves it to the UI).
    """
    from passagelog.formats import (FIX_FORMATS, ROUTE_FORMATS, FixReader, check_format,
                                    detect_format, read_routes)
    from passagelog.formats._common import read_head
    from passagelog.store import Logbook

    first_date = None
    if start_date is not None:
        try:
            first_date = date.fromisoformat(start_date)
        except ValueError:
            raise click.UsageError(f"--date {start_date!r} is not a date like 2024-05-01")
    for talker in talkers:
        if len(talker) != 2 or not talker.isalnum():
            raise click.UsageError(f"--talker {talker!r} must be two letters, like GP or GN")

    with _input_file(file) as (path, label):
        head = read_head(path)
        found = check_format(fmt, label, head) if fmt else detect_format(label, head)
        wants_fixes = found in FIX_FORMATS and (found != "gpx" or _has_track(path))
        wants_routes = found in ROUTE_FORMATS
        if wants_fixes and voyage is None:
            raise click.UsageError(f"{label} holds fixes; name their voyage with --voyage")
        if voyage is not None and not wants_fixes:
            raise click.UsageError(f"{label} holds no fixes, so --voyage has nothing to do; "
                                   "put the plan in force with 'passagelog voyage assign-plan'")
        if plan_name is not None and not wants_routes:
            raise click.UsageError(f"{label} holds no route, so --plan has nothing to name")
        sha = _sha256(path)
        size = path.stat().st_size
        with Logbook.open(db_path_from(ctx)) as book:
            if book.has_import(sha):
                _say(quiet, f"{label} was already imported (SHA-256 {sha[:16]}...); "
                            "nothing added")
                if as_json:
                    click.echo(json.dumps({"imported": False, "source": label, "format": found,
                                           "sha256": sha}))
                return
            # Read and check the whole file first, without the logbook's write lock (the
            # feed and other writers go on meanwhile); then one short transaction writes it.
            routes = []
            if wants_routes:
                routes = read_routes(path, fmt=found, label=label,
                                     missing_ok=(found == "gpx" and wants_fixes))
                if plan_name is not None and len(routes) > 1:
                    raise click.UsageError(
                        f"{label} holds {len(routes)} routes; --plan names only one")
            prepared = None
            summary = None
            voyage_id = None
            if wants_fixes:
                # an unknown voyage is named before the file is read
                voyage_id = book.voyage(voyage).voyage_id
                with _Progress(size, label, not quiet) as progress:
                    reader = FixReader(path, fmt=found, thin_s=thin_s,
                                       talkers=talkers or None,
                                       require_checksum=not allow_missing_checksum,
                                       start_date=first_date, progress=progress.callback,
                                       label=label)
                    prepared = book.prepare_fixes(reader)
                summary = reader.summary
                if summary.fixes_kept == 0 and (found != "gpx" or summary.lines_read):
                    from passagelog.errors import FormatError

                    detail = "; ".join(line.strip() for line in summary.report_lines()[1:])
                    raise FormatError("no fix could be read; nothing was imported"
                                      + (f" ({detail})" if detail else ""), where=label)
            plans: list[dict] = []
            with book.transaction():
                for route in routes:
                    name = plan_name or route.name
                    plan_id, revision = book.create_plan(
                        route, f"imported from {label}", name=name)
                    plans.append({"plan": name, "plan_id": plan_id, "revision": revision,
                                  "waypoints": len(route.waypoints)})
                if prepared is not None:
                    book.add_fixes(voyage, prepared)
                counts = {"plans": len(plans),
                          "fixes": summary.fixes_kept if summary else 0,
                          "rejected": summary.lines_rejected if summary else 0}
                book.record_import(sha, label, found, counts)
    if summary is not None:
        for text in summary.report_lines():
            _say(quiet, text)
        if not skip_review:
            _keep_review(db_path_from(ctx), voyage_id, quiet)
    for plan in plans:
        _say(quiet, f"plan {plan['plan']!r} revision {plan['revision']}: "
                    f"{plan['waypoints']} waypoints from {label}")
    if as_json:
        click.echo(json.dumps({"imported": True, "source": label, "format": found,
                               "sha256": sha, "plans": plans,
                               "summary": summary.as_dict() if summary else None},
                              ensure_ascii=False, allow_nan=False))


# ---------------------------------------------------------------------------------------------
# export


def _export_format(fmt: str | None, output: str, allowed: tuple[str, ...], csv_kind: str) -> str:
    if fmt is None:
        suffix = Path(output).suffix.lower() if output != "-" else ""
        fmt = csv_kind if suffix == ".csv" else EXTENSIONS.get(suffix)
        if fmt is None:
            raise click.UsageError("choose the format with --format (one of: "
                                   + ", ".join(allowed) + ")")
    if fmt not in allowed:
        raise click.UsageError(f"--format {fmt} cannot be written here; use one of: "
                               + ", ".join(allowed))
    return fmt


@contextmanager
def _output(output: str) -> Iterator[IO[str]]:
    """Standard output, or a file written whole or not at all (a temporary file renamed)."""
    if output == "-":
        yield click.get_text_stream("stdout")
        return
    refuse_nul(output)
    target = Path(output)
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", dir=target.parent or ".")
    except OSError as exc:  # no such folder, no permission, name too long
        raise unwritable(output, exc) from exc
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
            yield fh
        os.replace(tmp, target)
    except BaseException as exc:
        os.unlink(tmp)
        if isinstance(exc, OSError):  # the target a directory, the disk full
            raise unwritable(output, exc) from exc
        raise


def _book(ctx: click.Context):
    from passagelog.store import Logbook

    return Logbook.open(db_path_from(ctx), create=False)


@click.group("export")
def export() -> None:
    """Write a plan, a voyage's fixes, or a whole voyage to a file (or - for stdout).

    The format comes from --format or from the ending of -o (.rtz, .gpx, .csv, .nmea).
    """


_output_option = click.option("-o", "--output", default="-", metavar="FILE",
                              help="Write here (default: - for standard output).")


@export.command("plan")
@click.argument("name", metavar="PLAN")
@click.option("--revision", type=click.IntRange(min=1), help="Revision (default: the latest).")
@click.option("--format", "fmt", type=click.Choice(("rtz", "gpx", "route-csv")))
@click.option("--rtz-version", type=click.Choice(("1.0", "1.1")), default="1.1",
              show_default=True, help="RTZ version to write.")
@_output_option
@click.pass_context
def export_plan(ctx: click.Context, name: str, revision: int | None, fmt: str | None,
                rtz_version: str, output: str) -> None:
    """A plan revision as RTZ, a GPX route or a route CSV."""
    from passagelog.formats import write_route

    fmt = _export_format(fmt, output, ("rtz", "gpx", "route-csv"), "route-csv")
    with _book(ctx) as book:
        route = book.route(name, revision=revision)
    with _output(output) as fh:
        write_route(route, fmt, fh, version=rtz_version)


@export.command("fixes")
@click.argument("voyage", metavar="VOYAGE")
@click.option("--format", "fmt", type=click.Choice(("nmea", "gpx", "fix-csv")))
@click.option("--gga", is_flag=True, help="NMEA: a GGA after each RMC (satellites, HDOP).")
@_output_option
@click.pass_context
def export_fixes(ctx: click.Context, voyage: str, fmt: str | None, gga: bool,
                 output: str) -> None:
    """The voyage's fixes (corrections applied) as NMEA 0183, a GPX track or a fix CSV."""
    from passagelog.formats import write_fixes

    fmt = _export_format(fmt, output, ("nmea", "gpx", "fix-csv"), "fix-csv")
    with _book(ctx) as book:
        name = book.voyage(voyage).name
        fixes = book.fixes(voyage)
    with _output(output) as fh:
        write_fixes(fixes, fmt, fh, name=name, gga=gga)


@export.command("voyage")
@click.argument("voyage", metavar="VOYAGE")
@click.option("--format", "fmt", type=click.Choice(("gpx",)), default=None,
              help="Only GPX holds routes and a track together.")
@_output_option
@click.pass_context
def export_voyage(ctx: click.Context, voyage: str, fmt: str | None, output: str) -> None:
    """A voyage as one GPX file: the plan revisions in force as routes, the fixes as a
    track."""
    from passagelog.formats import write_voyage

    if fmt is None and output != "-":
        _export_format(None, output, ("gpx",), "gpx")
    with _book(ctx) as book:
        name = book.voyage(voyage).name
        routes, seen = [], set()
        for _, route in book.plan_schedule(voyage):
            key = (route.name, route.revision)
            if key not in seen:
                seen.add(key)
                routes.append(route)
        fixes = book.fixes(voyage)
    with _output(output) as fh:
        write_voyage(routes, fixes, fh, name=name)


# click cannot name a function "import"
import_.name = "import"

__all__ = ["import_", "export"]
