"""``passagelog --voyage V`` (no command) opens the terminal UI on voyage V; the voyage is
looked up before the screen is taken over, and the option goes with no command."""

from __future__ import annotations

import click
import pytest
from click.testing import CliRunner

from passagelog.cli import cli
from passagelog.errors import PassagelogError


@pytest.fixture
def logbook(tmp_path):
    from passagelog.model import Craft, Voyage
    from passagelog.store import Logbook

    path = tmp_path / "log.sqlite"
    with Logbook.open(path) as book:
        craft = book.add_craft(Craft("Tern"))
        book.add_voyage(Voyage("Out", craft_id=craft.craft_id))
        book.add_voyage(Voyage("Back", craft_id=craft.craft_id))
    return str(path)


def _run(*args):
    return CliRunner().invoke(cli, list(args), standalone_mode=False, catch_exceptions=True)


def test_the_ui_opens_on_the_voyage_named(logbook, monkeypatch):
    opened = []
    monkeypatch.setattr("passagelog.tui.run_app", lambda db, voyage=None: opened.append(voyage))
    assert _run("--db", logbook, "--voyage", "Out").exception is None
    assert _run("--db", logbook).exception is None
    assert opened == [1, None]


def test_an_unknown_voyage_is_refused_before_the_ui_opens(logbook, monkeypatch):
    monkeypatch.setattr("passagelog.tui.run_app", lambda *a, **k: pytest.fail("opened"))
    r = _run("--db", logbook, "--voyage", "Elsewhere")
    assert isinstance(r.exception, PassagelogError) and "Elsewhere" in str(r.exception)


def test_voyage_before_a_command_is_a_usage_error(logbook):
    r = _run("--db", logbook, "--voyage", "Out", "status")
    assert isinstance(r.exception, click.UsageError)
    assert "give the command its own --voyage" in str(r.exception)


def test_db_after_a_command_is_told_where_it_goes(capsys):
    """--db and --debug are options of passagelog itself: given after a command, the error
    says where they go (exit 2, a usage error), not only that the command has no such
    option."""
    from passagelog.cli import main

    with pytest.raises(SystemExit) as exit_:
        main(["feed", "--db", "x.sqlite", "--voyage", "1"])
    assert exit_.value.code == 2
    err = capsys.readouterr().err
    assert "--db goes before the command: passagelog --db PATH feed ..." in err
    assert "PASSAGELOG_DB" in err and "Did you mean" not in err
    with pytest.raises(SystemExit) as exit_:
        main(["fix", "add", "--debug"])
    assert exit_.value.code == 2
    assert "passagelog --debug fix add ..." in capsys.readouterr().err
