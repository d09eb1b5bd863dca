"""Shared pieces of the CLI: logbook location, output options, error mapping."""

from __future__ import annotations

import csv
import functools
import io
import json
import math
import os
from datetime import datetime, timezone
from pathlib import Path
from typing import Any, Callable

import click

from passagelog.errors import PassagelogError

APP_NAME = "passagelog"


def default_db_path() -> Path:
    """The default logbook: ``logbook.sqlite`` in the user data directory."""
    import platformdirs

    return Path(platformdirs.user_data_dir(APP_NAME, appauthor=False)) / "logbook.sqlite"


def db_path_from(ctx: click.Context) -> Path:
    """The logbook chosen by ``--db``, ``PASSAGELOG_DB`` or the default, in that order."""
    root = ctx.find_root()
    chosen = (root.obj or {}).get("db_path") or os.environ.get("PASSAGELOG_DB")
    return Path(chosen) if chosen else default_db_path()


def usage_error(message: str) -> click.UsageError:
    return click.UsageError(message)


def fail(exc: PassagelogError) -> click.ClickException:
    """A library error as a ClickException (exit 1, one plain line)."""
    err = click.ClickException(str(exc))
    err.exit_code = exc.exit_code
    return err


def unwritable(path: str | os.PathLike, exc: OSError, what: str = "output file"):
    """An OSError met while writing ``path`` as an InputError naming the path (exit 1)."""
    from passagelog.errors import InputError

    reason = exc.strerror or type(exc).__name__
    return InputError(f"{what} {str(path)!r} cannot be written: {reason}")


def refuse_nul(path: str | os.PathLike, what: str = "output file") -> None:
    """No file name holds NUL (open() would raise ValueError): an InputError naming it."""
    from passagelog.errors import InputError

    if "\x00" in str(path):
        raise InputError(f"{what} {str(path)!r} holds a NUL character; give a file name")


def emit_json(obj: Any) -> None:
    click.echo(json.dumps(obj, ensure_ascii=False, allow_nan=False))


def json_option(func: Callable) -> Callable:
    return click.option("--json", "as_json", is_flag=True, help="Print JSON for scripts.")(func)


def options(*decorators: Callable) -> Callable:
    """Several click options as one decorator, in the order given (as --help lists them)."""
    def apply(func: Callable) -> Callable:
        for opt in reversed(decorators):
            func = opt(func)
        return func
    return apply


def output_options(func: Callable) -> Callable:
    """``--csv`` and ``--json`` (exclusive: both is a usage error before the command runs,
    so nothing is written first)."""
    @functools.wraps(func)
    def checked(*args, **kwargs):
        one_form(kwargs.get("as_json", False), kwargs.get("as_csv", False))
        return func(*args, **kwargs)

    checked = click.option("--csv", "as_csv", is_flag=True,
                           help="Print CSV (header row).")(checked)
    return json_option(checked)


def one_form(as_json: bool, as_csv: bool) -> None:
    if as_json and as_csv:
        raise click.UsageError("choose one of --json and --csv")


# ---------------------------------------------------------------------------------------------
# records of the logbook: JSON arrays/objects, CSV, and plain aligned text for people

NM_M = 1852.0


def nm(metres: float | None) -> float | None:
    """Metres as nautical miles (``None`` stays ``None``)."""
    return None if metres is None else metres / NM_M


def iso(dt: datetime | None) -> str | None:
    """ISO 8601 UTC with Z, as stored (fractions of a second only when there are any)."""
    if dt is None:
        return None
    return dt.astimezone(timezone.utc).isoformat()[:-6] + "Z"


def to_second(text: str | None) -> str | None:
    """An ISO 8601 UTC time for people: whole seconds (the JSON and CSV keep the fraction)."""
    if text and len(text) > 20 and text[19] == "." and text.endswith("Z") and text[10] == "T":
        return text[:19] + "Z"
    return text


def csv_cell(value: Any) -> str:
    """A CSV cell of the scripting contract: empty for missing (or a non-finite number),
    ``true``/``false``, reals at full precision."""
    if value is None:
        return ""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float):
        return repr(value) if math.isfinite(value) else ""
    return str(value)


def write_csv(rows, columns, out) -> None:
    """CSV with a header row of ``columns`` to the text stream ``out``."""
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(columns)
    for row in rows:
        writer.writerow([csv_cell(row.get(c)) for c in columns])


def human_cell(value: Any) -> str:
    """A cell for people: ``-`` for nothing (or empty text), ``yes``/``no``, reals to 0.1,
    record times to the second."""
    if value is None or value == "":
        return "-"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        return f"{value:.1f}"
    return to_second(str(value))


def emit(records: list[dict], columns: list[str], as_json: bool, as_csv: bool,
         human: list[tuple[str, Callable[[dict], Any]]] | None = None, *,
         one: bool = False) -> None:
    """Print records: JSON array (with ``one``, the one record's object), CSV with
    ``columns``, or a plain aligned table whose columns are ``human`` (heading, value of a
    record) or else ``columns``."""
    one_form(as_json, as_csv)
    if as_json and one:
        emit_one(records[0], True)
        return
    if as_json:
        click.echo(json.dumps(records, ensure_ascii=False, allow_nan=False, indent=1))
        return
    if as_csv:
        buf = io.StringIO()
        write_csv(records, columns, buf)
        click.echo(buf.getvalue(), nl=False)
        return
    human = human or [(c, (lambda r, c=c: r.get(c))) for c in columns]
    rows = [[h for h, _ in human]] + [[human_cell(get(r)) for _, get in human]
                                      for r in records]
    widths = [max(len(row[i]) for row in rows) for i in range(len(human))]
    for row in rows:
        click.echo("  ".join(cell.ljust(w) for cell, w in zip(row, widths)).rstrip())


def emit_one(record: dict, as_json: bool, lines: list[tuple[str, Any]] = ()) -> None:
    """Print one record: JSON object, or ``label  value`` lines."""
    if as_json:
        click.echo(json.dumps(record, ensure_ascii=False, allow_nan=False, indent=1))
        return
    width = max(len(label) for label, _ in lines)
    for label, value in lines:
        click.echo(f"{label.ljust(width)}  {human_cell(value)}".rstrip())


def show_record(rec: dict, columns: list[str], as_json: bool, as_csv: bool,
                lines: list[tuple[str, Any]] | None = None) -> None:
    """One record of a ``show`` command: JSON object, one-row CSV of ``columns``, or label
    lines (default: every key of ``rec``)."""
    one_form(as_json, as_csv)
    if as_csv:
        emit([rec], columns, False, True)
    else:
        emit_one(rec, as_json, list(rec.items()) if lines is None else lines)


def open_tui(ctx: click.Context) -> None:
    """Open the terminal UI on the chosen logbook (imported only here)."""
    try:
        from passagelog.tui import run_app  # noqa: PLC0415
    except ImportError as exc:  # the TUI is not built yet
        raise click.UsageError(
            "the terminal UI is not available in this build; see 'passagelog --help'"
        ) from exc
    voyage = (ctx.obj or {}).get("tui_voyage")
    if voyage is not None:  # named: check it before the screen is taken over
        from passagelog.store import Logbook  # noqa: PLC0415

        path = db_path_from(ctx)
        if not Path(path).exists():
            raise click.UsageError(f"logbook {str(path)!r} does not exist")
        with Logbook.open(path, create=False) as book:
            voyage = book.voyage(voyage).voyage_id
    run_app(db_path_from(ctx), voyage=voyage)


TABLE_FORMATS = ("table", "csv", "json", "md")


def emit_records(records: list[dict], columns: list[str], fmt: str, *, title: str = "",
                 provenance=None, headers: dict[str, str] | None = None,
                 stream=None) -> None:
    """Print records as a terminal table (rich), CSV, JSON or Markdown.

    CSV and JSON carry data only. The terminal table goes to stdout with the caution on
    stderr; Markdown carries its caution and provenance inside.
    """
    from passagelog import CAUTION
    from passagelog.report import render

    out = stream or click.get_text_stream("stdout")
    if fmt == "csv":
        out.write(render.to_csv(records, columns))
    elif fmt == "json":
        out.write(render.to_json(records) + "\n")
    elif fmt == "md":
        out.write(render.to_markdown(records, columns, title=title, provenance=provenance))
    elif fmt == "table":
        from rich.console import Console
        from rich.table import Table

        table = Table(title=title or None, show_lines=False, header_style="bold")
        for c in columns:
            table.add_column((headers or {}).get(c, c), overflow="fold")
        for rec in records:
            table.add_row(*(render._cell(rec.get(c)) for c in columns))
        Console(file=out, width=None if out.isatty() else 200).print(table)
        click.echo(f"Caution: {CAUTION}", err=True)
    else:
        raise click.UsageError(f"format {fmt!r} is not one of: {', '.join(TABLE_FORMATS)}")
