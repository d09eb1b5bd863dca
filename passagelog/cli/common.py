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
