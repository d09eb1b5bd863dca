"""The help screen: what each view is for, every key binding, and the safety caution.

The key tables are made from the ``BINDINGS`` of the app and of each view (and of the
widgets inside them that have keys of their own, such as the Log view's fix list), so a key
added to a view shows in the help without anyone having to remember it. :data:`ACTION_TEXT`
gives an action a longer wording than its footer label; an action it does not name is shown
with the binding's own description.
"""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Markdown, Static

from passagelog import CAUTION

#: How a key is written in the help (Textual's key names on the left).
KEY_NAMES = {
    "question_mark": "?", "plus": "+", "minus": "-", "insert": "Ins", "delete": "Del",
    "pageup": "PgUp", "pagedown": "PgDn", "escape": "Esc", "enter": "Enter", "tab": "Tab",
    "home": "Home", "end": "End", "up": "Up", "down": "Down", "left": "Left",
    "right": "Right", "space": "Space", "backspace": "Backspace",
    "left_square_bracket": "[", "right_square_bracket": "]",
}

#: What each view is for (the F-key table), by the view's key.
VIEW_TEXT = {
    "plan": "waypoints and legs of the voyage's plan; edit, then save a revision",
    "log": "enter a fix, page through the fix list, correct a fix, add log entries",
    "watch": "the latest fix against the plan, live, with alerts",
    "review": "per-leg figures, passages, episodes, noon figures, plots",
}

#: Longer wording of an action, by (class name, action); the binding's description otherwise.
ACTION_TEXT = {
    ("PassagelogApp", "help"): "this help (Esc closes it)",
    ("PassagelogApp", "toggle_dark"): "light / dark",
    ("PassagelogApp", "quit"): "quit (asks first when the plan has edits not saved)",
    ("PassagelogApp", "voyages"): "open another voyage of this logbook, or start a new one",
    ("PlanView", "edit"): "edit the selected waypoint and the leg ending at it",
    ("PlanView", "insert"): "insert a waypoint after the selected one",
    ("PlanView", "delete"): "delete the selected waypoint",
    ("PlanView", "move(-1)"): "move the selected waypoint up",
    ("PlanView", "move(1)"): "move the selected waypoint down",
    ("PlanView", "reverse"): "reverse the plan",
    ("PlanView", "undo"): "undo the last edit",
    ("PlanView", "times"): "to the fixed ETA / ETD fields of the selected waypoint (UTC)",
    ("PlanView", "save"): "save the edits as a new revision (asks for a change note)",
    ("PlanView", "leave_editor"):
        "from the editor back to the table (a value not taken is put back)",
    ("LogView", "record"): "log the fix in the form (on the Entries tab: add the log entry)",
    ("LogView", "goto_time"): "go to a time (UTC) in the fix list",
    ("LogView", "switch_focus"): "move between the form and the list under it",
    ("LogView", "switch_tab"): "the Fixes tab or the Entries tab (the cursor goes to its form)",
    ("LogView", "page(-1)"): "the fix list a page up (also from the form's fields)",
    ("LogView", "page(1)"): "the fix list a page down (also from the form's fields)",
    ("FixTable", "select_cursor"):
        "correct the selected fix (the original stays in the record, struck through)",
    ("FixTable", "first"): "the first fixes of the voyage",
    ("FixTable", "last"): "the latest fixes (the list then follows new ones)",
    ("WatchView", "refresh_now"): "reconcile the latest fixes now",
    ("ReviewView", "recompute"): "reconcile the whole voyage again",
    ("ReviewView", "tab(-1)"): "the tab before (tables and plots)",
    ("ReviewView", "tab(1)"): "the tab after",
    ("CorrectionDialog", "cancel"): "cancel (nothing is written)",
    ("GoToTimeDialog", "cancel"): "cancel (nothing is written)",
    ("ChangeNoteDialog", "cancel"): "cancel (nothing is written)",
    ("VoyageDialog", "cancel"): "cancel (nothing is written)",
    ("NewVoyageDialog", "cancel"): "cancel (nothing is written)",
    ("ConfirmDialog", "cancel"): "cancel (nothing is written)",
}


def key_label(key: str) -> str:
    """A Textual key name as the help writes it: ``ctrl+pageup`` -> ``Ctrl+PgUp``."""
    *mods, last = key.split("+") if key != "plus" else ["plus"]
    name = KEY_NAMES.get(last, last.upper() if len(last) <= 3 else last.capitalize())
    return "+".join([m.capitalize() for m in mods] + [name])


def binding_keys(binding) -> list[str]:
    """The keys of a ``BINDINGS`` entry (a Binding or a tuple), as Textual names them."""
    key = binding.key if isinstance(binding, Binding) else binding[0]
    return [k.strip() for k in key.split(",") if k.strip()]


def key_rows(cls, skip=lambda action: False) -> list[tuple[str, str]]:
    """``(keys, action)`` rows for the bindings declared by ``cls`` itself, in order (but
    those whose action ``skip`` refuses); the keys of one action on one row (``F1 or ?``)."""
    rows: dict[str, list] = {}
    for b in cls.__dict__.get("BINDINGS", ()):
        b = b if isinstance(b, Binding) else Binding(*b)
        if skip(b.action):
            continue
        entry = rows.setdefault(b.action, [[], b.description])
        entry[0] += [key_label(k) for k in binding_keys(b)]
    return [(" or ".join(keys), ACTION_TEXT.get((cls.__name__, action), desc or action))
            for action, (keys, desc) in rows.items()]


def sections() -> list[tuple[str, object]]:
    """The classes whose bindings the help lists, with the heading of each."""
    from passagelog.tui.app import PassagelogApp
    from passagelog.tui.log_view import FixTable, LogView
    from passagelog.tui.plan_view import PlanView
    from passagelog.tui.review_view import ReviewView
    from passagelog.tui.watch_view import WatchView

    return [
        ("Everywhere", PassagelogApp),
        ("Plan (in the waypoint table)", PlanView),
        ("Log (anywhere in the view)", LogView),
        ("Log, in the fix list", FixTable),
        ("Watch", WatchView),
        ("Review", ReviewView),
    ]


def dialog_classes() -> list:
    """The dialogs, whose keys the help lists together."""
    from passagelog.tui.confirm_dialog import ConfirmDialog
    from passagelog.tui.correction_dialog import CorrectionDialog
    from passagelog.tui.goto_dialog import GoToTimeDialog
    from passagelog.tui.note_dialog import ChangeNoteDialog
    from passagelog.tui.voyage_dialog import NewVoyageDialog, VoyageDialog

    return [CorrectionDialog, GoToTimeDialog, ChangeNoteDialog, VoyageDialog,
            NewVoyageDialog, ConfirmDialog]


def _table(rows: list[tuple[str, str]], head: str = "| key | action |\n| --- | --- |") -> str:
    return head + "\n" + "\n".join(f"| {k} | {a} |" for k, a in rows)


def help_text() -> str:
    """The help as Markdown: the views, then every view's keys, then how values are typed."""
    from passagelog.tui.app import PassagelogApp, VIEWS

    by_view = {}
    for b in PassagelogApp.BINDINGS:
        if b.action.startswith("view("):
            by_view.setdefault(b.action[6:-2], []).append(key_label(b.key))
    views = [(" or ".join(by_view.get(key, [])), title, VIEW_TEXT.get(key, ""))
             for key, title, _f in VIEWS]
    parts = ["**Views** (switch with the keys, or click the tabs)",
             "| key | view | what it is for |\n| --- | --- | --- |\n"
             + "\n".join(f"| {k} | {t} | {w} |" for k, t, w in views)]
    for title, cls in sections():
        # the app's view keys are in the table of views above
        rows = key_rows(cls, skip=lambda action: action.startswith("view("))
        if cls is PassagelogApp:
            rows.insert(1, (key_label(PassagelogApp.COMMAND_PALETTE_BINDING),
                            "command palette: every action by name"))
            rows.append(("Tab / Shift+Tab", "next / previous field"))
        parts += [f"**{title}**", _table(rows)]
    dialogs = []
    for cls in dialog_classes():
        dialogs += [r for r in key_rows(cls) if r not in dialogs]
    parts += ["**In a dialog**", _table(dialogs), NOTES]
    return "\n\n".join(parts) + "\n"


NOTES = """\
**Plan**: positions may be typed in any usual notation: `47°36.512'N 122°20.107'W`,
`47 36.512N 122 20.107W`, `47.6085, -122.3351`. In the editor each field is taken as it is
typed; Enter goes on to the next field (passing over the sailing list, which Tab reaches)
and from the last back to the table; Esc goes back to the table at once.
Distances and limits are in NM, speeds in
knots. Each row's leg settings describe the leg that **ends** at that waypoint.
Fixed times (the schedule, marked `*`): an ETA or ETD in UTC, `2026-05-03T08:00Z` or
`03 08:00Z`; empty for none. Row 1's ETD is the planned departure (it has no ETA); the last
waypoint, the destination, has no ETD; legs after a fixed ETD start from it; Req kn is the
speed that makes a fixed ETA from the last fixed time.

**Log**: fix times: empty for now; `14:30Z` (UTC) or `15:30` (ship's time), the latest such
time; `05 14:30Z` as the lists show them; `15:30 ZD+1`; or in full, `2026-05-02T11:50Z`.
Beside the field it says which day and time it took. A time more than 10 minutes ahead of
now is refused; one before the departure, or long before the latest fix, is taken with a
warning. The fix list is in time order, the latest at the bottom; while the
latest fix is on screen the list follows new ones (from the feed or another terminal) as
they are logged, and the cursor stays on its fix.

**Watch** follows new fixes by itself.

**Voyages**: Ctrl+O lists the voyages of this logbook (open one, or start a new one with its
craft, planned departure and zone); the app then starts afresh on it.
"""


class HelpScreen(ModalScreen[None]):
    """Key bindings and the caution; Esc, q or F1 closes it."""

    BINDINGS = [
        Binding("escape,q,f1,question_mark", "dismiss", "Close help"),
    ]

    def compose(self) -> ComposeResult:
        with VerticalScroll(id="help-box"):
            yield Static("Help (Esc, q or F1 closes it; arrows or PgUp/PgDn scroll)",
                         id="help-title")
            yield Static(f"CAUTION  {CAUTION}", id="help-caution")
            yield Markdown(help_text(), id="help-text")

    def action_dismiss(self) -> None:  # type: ignore[override]
        self.dismiss(None)
