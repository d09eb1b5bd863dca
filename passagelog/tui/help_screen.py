"""The help screen: what each view is for, every key binding, and the safety caution."""

from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Markdown, Static

from passagelog import CAUTION

HELP_TEXT = """\
**Views** (switch with the keys, or click the tabs)

| key | view | what it is for |
| --- | --- | --- |
| F2 | Plan | waypoints and legs of the voyage's plan; edit, then save a revision |
| F3 | Log | enter a fix, see the fix list, correct a fix, add log entries |
| F4 | Watch | the latest fix against the plan, live, with alerts |
| F5 | Review | per-leg figures, passages, episodes, noon figures, plots |

**Everywhere**

| key | action |
| --- | --- |
| F1 or ? | this help (Esc closes it) |
| Ctrl+P | command palette: every action by name |
| F9 | light / dark |
| Ctrl+Q | quit |
| Tab / Shift+Tab | next / previous field |

**Plan** (in the waypoint table)

| key | action |
| --- | --- |
| Enter | edit the selected waypoint and the leg ending at it |
| Ins or + | insert a waypoint after the selected one |
| Del | delete the selected waypoint |
| Ctrl+Up / Ctrl+Down | move the selected waypoint up / down |
| Ctrl+R | reverse the plan |
| Ctrl+Z | undo the last edit |
| Ctrl+T | to the fixed ETA / ETD fields of the selected waypoint (UTC) |
| Ctrl+S | save the edits as a new revision (asks for a change note) |

Positions may be typed in any usual notation: `47°36.512'N 122°20.107'W`,
`47 36.512N 122 20.107W`, `47.6085, -122.3351`. Distances and limits are in NM, speeds in knots.
Each row's leg settings describe the leg that **ends** at that waypoint.
Fixed times (the schedule, marked `*`): an ETA or ETD in UTC, `2026-05-03T08:00Z` or
`03 08:00Z`; empty for none. Row 1's ETD is the planned departure; legs after a fixed ETD
start from it; Req kn is the speed that makes a fixed ETA from the last fixed time.

**Log**: Ctrl+S logs the fix in the form (on the Entries tab: adds the log entry); in the
fix list, Enter opens the correction dialog (the original stays in the record, struck
through). Times: empty for now (UTC), `2026-05-02T11:50Z`, or ship's time with its zone,
`2026-05-02T12:50 ZD-1`.

**Watch**: follows new fixes by itself. **Review**: Ctrl+L recomputes.
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
            yield Markdown(HELP_TEXT, id="help-text")

    def action_dismiss(self) -> None:  # type: ignore[override]
        self.dismiss(None)
