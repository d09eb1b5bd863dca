"""The help lists every key binding of every view (made from their BINDINGS, so it cannot
fall behind them), and keeps the safety caution."""

from __future__ import annotations

import importlib
import inspect
import pkgutil

from textual.binding import Binding
from textual.dom import DOMNode

import passagelog.tui
from passagelog import CAUTION
from passagelog.tui import help_screen as hs


def _section(text: str, title: str) -> str:
    """The Markdown of one section of the help: from its heading to the next."""
    start = text.index(f"**{title}**")
    rest = text[start + len(title) + 4:]
    end = rest.find("\n**")
    return rest if end < 0 else rest[:end]


def _table_rows(section: str) -> list[list[str]]:
    return [[c.strip() for c in line.strip().strip("|").split("|")]
            for line in section.splitlines() if line.startswith("|")][2:]


def _own_bindings(cls) -> list[Binding]:
    return [b if isinstance(b, Binding) else Binding(*b)
            for b in cls.__dict__.get("BINDINGS", ())]


def test_every_binding_of_every_view_is_in_the_help():
    text = hs.help_text()
    views = _table_rows(_section(text, "Views"))
    classes = hs.sections() + [("In a dialog", c) for c in hs.dialog_classes()]
    for title, cls in classes:
        rows = _table_rows(_section(text, title))
        for b in _own_bindings(cls):
            for key in hs.binding_keys(b):
                label = hs.key_label(key)
                where = views if b.action.startswith("view(") else rows
                keys = [set(r[0].split(" or ")) for r in where]
                assert any(label in k for k in keys), (cls.__name__, key, title)
                row = next(r for r, k in zip(where, keys) if label in k)
                if not b.action.startswith("view("):
                    want = hs.ACTION_TEXT.get((cls.__name__, b.action), b.description)
                    assert row[1] == want, (cls.__name__, key)


def test_the_log_views_newer_keys_are_listed():
    """The keys issue 6 found missing: paging, go to a time, list/form."""
    text = hs.help_text()
    log = " ".join(r[0] for r in _table_rows(_section(text, "Log (anywhere in the view)")))
    fix_list = " ".join(r[0] for r in _table_rows(_section(text, "Log, in the fix list")))
    for key in ("PgUp", "PgDn", "Ctrl+G", "Ctrl+L", "Ctrl+S"):
        assert key in log.split(" or ") or key in log.split(), key
    for key in ("Home", "End", "Enter"):
        assert key in fix_list.split(), key


def test_no_class_with_keys_is_left_out_of_the_help():
    """Any widget, screen or app of passagelog.tui that declares bindings is in the help
    (the help screen's own keys are in its title)."""
    listed = {cls for _t, cls in hs.sections()} | set(hs.dialog_classes())
    for mod in pkgutil.iter_modules(passagelog.tui.__path__):
        module = importlib.import_module(f"passagelog.tui.{mod.name}")
        for _name, cls in inspect.getmembers(module, inspect.isclass):
            if (cls.__module__ == module.__name__ and issubclass(cls, DOMNode)
                    and cls.__dict__.get("BINDINGS") and cls is not hs.HelpScreen):
                assert cls in listed, f"{cls.__name__} has keys the help does not list"


def test_every_longer_wording_belongs_to_a_binding():
    """No wording is kept for a key that is gone (it would hide a renamed action)."""
    classes = {cls.__name__: cls for _t, cls in hs.sections()}
    classes.update({cls.__name__: cls for cls in hs.dialog_classes()})
    for name, action in hs.ACTION_TEXT:
        assert action in {b.action for b in _own_bindings(classes[name])}, (name, action)


def test_key_labels():
    assert hs.key_label("ctrl+g") == "Ctrl+G"
    assert hs.key_label("pageup") == "PgUp" and hs.key_label("pagedown") == "PgDn"
    assert hs.key_label("ctrl+home") == "Ctrl+Home"
    assert hs.key_label("question_mark") == "?" and hs.key_label("plus") == "+"
    assert hs.key_label("f5") == "F5" and hs.key_label("ctrl+up") == "Ctrl+Up"


async def test_the_help_screen_shows_the_keys_and_the_caution(session):
    from passagelog.tui.app import PassagelogApp

    app = PassagelogApp(session=session, watch_poll_s=5.0)
    async with app.run_test(size=(100, 30)) as pilot:
        await pilot.press("f1")
        await pilot.pause()
        assert isinstance(app.screen, hs.HelpScreen)
        caution = str(app.screen.query_one("#help-caution").render())
        assert caution == f"CAUTION  {CAUTION}"
        source = app.screen.query_one("#help-text").source
        assert "| Ctrl+G | go to a time (UTC) in the fix list |" in source
        assert "| PgUp | the fix list a page up" in source
        await pilot.press("escape")
        assert not isinstance(app.screen, hs.HelpScreen)
