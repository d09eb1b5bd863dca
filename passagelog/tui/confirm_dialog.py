"""A yes-or-no question before something that cannot be undone (quitting with a plan edited
but not saved, say)."""

from __future__ import annotations

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Label, Static


class ConfirmDialog(ModalScreen[bool]):
    """Returns True for the action named on the first button, False for going back."""

    BINDINGS = [Binding("escape", "cancel", "Go back")]

    def __init__(self, title: str, text: str, action: str) -> None:
        super().__init__()
        self.title_text, self.text, self.action_label = title, text, action

    def compose(self) -> ComposeResult:
        with Vertical(id="confirm-box", classes="dialog"):
            yield Label(self.title_text, classes="dialog-title")
            yield Static(self.text, id="confirm-text")
            with Horizontal(classes="dialog-buttons"):
                yield Button(self.action_label, variant="error", id="confirm-yes")
                yield Button("Go back", variant="primary", id="confirm-no")

    def on_mount(self) -> None:
        self.query_one("#confirm-no", Button).focus()  # the safe choice is the default

    @on(Button.Pressed, "#confirm-yes")
    def yes(self) -> None:
        self.dismiss(True)

    @on(Button.Pressed, "#confirm-no")
    def action_cancel(self) -> None:
        self.dismiss(False)
