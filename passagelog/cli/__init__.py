"""The ``passagelog`` command line: a thin layer over the library.

Commands are loaded lazily so that ``passagelog calc ...`` starts fast and never imports
the TUI toolkit. Library errors become one plain line on stderr and exit code 1; usage
errors exit 2; an interrupt exits 130; ``--debug`` shows the traceback.
"""

from __future__ import annotations

import importlib
import os
import sys

import click

from passagelog import __version__

#: command name -> "module:attribute" (relative to passagelog.cli)
COMMANDS: dict[str, str] = {
    "calc": "calc:calc",
    "craft": "logbook:craft",
    "demo": "demo:demo",
    "entry": "logbook:entry",
    "fix": "logbook:fix",
    "plan": "plan:plan",
    "verify": "logbook:verify",
    "voyage": "logbook:voyage",
    "feed": "feed:feed",
    "report": "report:report",
    "review": "review:review",
    "status": "review:status",
    "import": "interchange:import_",
    "export": "interchange:export",
}


#: Options of ``passagelog`` itself, as they are written before a command (a command given
#: one of them is told so).
ROOT_OPTIONS = {"--db": ("--db PATH", " (or set PASSAGELOG_DB)"), "--debug": ("--debug", "")}


class LazyGroup(click.Group):
    """A click group whose subcommands are imported only when used."""

    def __init__(self, *args, lazy: dict[str, str] | None = None, package: str = __name__,
                 **kwargs):
        super().__init__(*args, **kwargs)
        self._lazy = dict(lazy or {})
        self._package = package

    def list_commands(self, ctx: click.Context) -> list[str]:
        return sorted(set(super().list_commands(ctx)) | set(self._lazy))

    def get_command(self, ctx: click.Context, name: str) -> click.Command | None:
        if name in self._lazy:
            module_name, attr = self._lazy[name].split(":")
            module = importlib.import_module(f"{self._package}.{module_name}")
            return getattr(module, attr)
        return super().get_command(ctx, name)


@click.group(cls=LazyGroup, lazy=COMMANDS, invoke_without_command=True,
             context_settings={"help_option_names": ["-h", "--help"]})
@click.option("--debug", is_flag=True, help="Show the full traceback when something fails.")
@click.option("--db", "db_path", metavar="PATH", envvar="PASSAGELOG_DB",
              help="Logbook file (default: PASSAGELOG_DB, else the user data directory).")
@click.option("--voyage", "tui_voyage", metavar="VOYAGE",
              help="With no command: open the terminal UI on this voyage (name or id; "
                   "default: the most recent).")
@click.version_option(__version__, prog_name="passagelog")
@click.pass_context
def cli(ctx: click.Context, debug: bool, db_path: str | None, tui_voyage: str | None) -> None:
    """passagelog: keep a passage plan, log fixes, watch cross-track error and ETA,
    and review the voyage afterwards.

    Run without a command to open the terminal UI on the logbook.

    A planning and record-keeping aid, not a certified navigation system: verify against
    official charts and publications, the approved systems on board and the judgement of
    the licensed officer; local regulations prevail.
    """
    ctx.ensure_object(dict)
    ctx.obj["debug"] = debug
    ctx.obj["db_path"] = db_path
    if tui_voyage is not None and ctx.invoked_subcommand is not None:
        raise click.UsageError("--voyage before a command only chooses the voyage the "
                               "terminal UI opens; give the command its own --voyage")
    ctx.obj["tui_voyage"] = tui_voyage
    if ctx.invoked_subcommand is None:
        from passagelog.cli.common import open_tui

        open_tui(ctx)


def main(argv: list[str] | None = None) -> None:
    """Console entry point: run the CLI and map errors to exit codes."""
    from passagelog.errors import PassagelogError

    args = sys.argv[1:] if argv is None else argv
    debug = "--debug" in args
    try:
        cli.main(args=args, prog_name="passagelog", standalone_mode=False)
    except click.exceptions.Abort:
        click.echo("interrupted", err=True)
        sys.exit(130)
    except KeyboardInterrupt:
        click.echo("interrupted", err=True)
        sys.exit(130)
    except click.ClickException as exc:
        if isinstance(exc, click.NoSuchOption) and exc.option_name in ROOT_OPTIONS:
            # a root option given after the command: say where it goes
            command = exc.ctx.command_path if exc.ctx is not None else "passagelog COMMAND"
            before, after = ROOT_OPTIONS[exc.option_name]
            exc.message = (f"{exc.option_name} goes before the command: passagelog {before} "
                           f"{command.partition(' ')[2] or 'COMMAND'} ...{after}")
            exc.possibilities = None
        exc.show()
        sys.exit(exc.exit_code)
    except click.exceptions.Exit as exc:
        sys.exit(exc.exit_code)
    except PassagelogError as exc:
        if debug:
            raise
        click.echo(f"passagelog: {exc}", err=True)
        sys.exit(exc.exit_code)
    except BrokenPipeError:
        # stdout closed early (e.g. piped into head): not an error of ours.
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        sys.exit(0)
    sys.exit(0)
