"""Shared pieces of the CLI: logbook location, output options, error mapping."""

from __future__ import annotations

import json
import os
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


def open_tui(ctx: click.Context) -> None:
    """Open the terminal UI on the chosen logbook (imported only here)."""
    try:
        from passagelog.tui import run_app  # noqa: PLC0415
    except ImportError as exc:  # the TUI is not built yet
        raise click.UsageError(
            "the terminal UI is not available in this build; see 'passagelog --help'"
        ) from exc
    run_app(db_path_from(ctx))


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
