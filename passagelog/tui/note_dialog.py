"""The change-note dialog: every plan revision records why it was made."""

from __future__ import annotations

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, Static


class ChangeNoteDialog(ModalScreen[str | None]):
    """Asks for the change note of a new plan revision; returns it, or None if cancelled."""

    BINDINGS = [Binding("escape", "cancel", "Cancel")]

    def __init__(self, summary: str = "") -> None:
        super().__init__()
        self.summary = summary

    def compose(self) -> ComposeResult:
        with Vertical(id="note-box", classes="dialog"):
            yield Label("Save a new plan revision", classes="dialog-title")
            if self.summary:
                yield Static(self.summary, id="note-summary")
            yield Label("Change note (why the plan changed):")
            yield Input(placeholder="e.g. WP3 moved 2 NM south for traffic", id="note-input")
            yield Static("", id="note-error", classes="field-error")
            with Horizontal(classes="dialog-buttons"):
                yield Button("Save revision", variant="primary", id="note-save")
                yield Button("Cancel", id="note-cancel")

    @on(Input.Submitted, "#note-input")
    @on(Button.Pressed, "#note-save")
    def save(self) -> None:
        note = self.query_one("#note-input", Input).value.strip()
        if not note:
            self.query_one("#note-error", Static).update(
                "A change note is required: say what changed and why.")
            return
        self.dismiss(note)

    @on(Button.Pressed, "#note-cancel")
    def action_cancel(self) -> None:
        self.dismiss(None)
