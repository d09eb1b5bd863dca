"""The go-to-time dialog of the fix list: show the fixes from a time given in UTC."""

from __future__ import annotations

from datetime import datetime, timezone

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, Static

from passagelog.errors import PassagelogError


class GoToTimeDialog(ModalScreen[datetime | None]):
    """Asks for a time in UTC; returns it, or None if cancelled. ``ref`` is the time of the
    fix under the cursor: a time of day alone falls on its day."""

    BINDINGS = [Binding("escape", "cancel", "Cancel")]

    def __init__(self, ref: datetime | None) -> None:
        super().__init__()
        self.ref = ref

    def compose(self) -> ComposeResult:
        ref = self.ref or datetime.now(timezone.utc)
        day = (f"; a time alone is on {ref:%Y-%m-%d}, the day of the selected fix"
               if self.ref else "; a time alone is today's")
        with Vertical(id="goto-box", classes="dialog"):
            yield Label("Go to a time in the fix list", classes="dialog-title")
            yield Static(f"Time in UTC: {ref:%Y-%m-%d}T14:30Z, {ref:%d} 14:30 or 14:30{day}. "
                         "The list shows the fixes from that time on.", id="note-summary")
            yield Input(placeholder="UTC, e.g. 14:30", id="goto-time")
            yield Static("", id="goto-msg", classes="field-error")
            with Horizontal(classes="dialog-buttons"):
                yield Button("Go", variant="primary", id="goto-go")
                yield Button("Cancel", id="goto-cancel")

    def _read(self) -> datetime:
        from passagelog.tui.log_view import parse_goto_time

        return parse_goto_time(self.query_one("#goto-time", Input).value, self.ref)

    @on(Input.Changed, "#goto-time")
    def _changed(self, event: Input.Changed) -> None:
        msg = self.query_one("#goto-msg", Static)
        if not event.value.strip():
            msg.update("")
            msg.set_class(False, "-bad")
            return
        try:
            when = self._read()
        except PassagelogError as exc:
            msg.update(str(exc))
            msg.set_class(True, "-bad")
        else:
            msg.update(f"{when:%Y-%m-%d %H:%M}Z")
            msg.set_class(False, "-bad")

    @on(Input.Submitted, "#goto-time")
    @on(Button.Pressed, "#goto-go")
    def go(self) -> None:
        msg = self.query_one("#goto-msg", Static)
        try:
            when = self._read()
        except PassagelogError as exc:
            msg.update(str(exc))
            msg.set_class(True, "-bad")
            return
        self.dismiss(when)

    @on(Button.Pressed, "#goto-cancel")
    def action_cancel(self) -> None:
        self.dismiss(None)
