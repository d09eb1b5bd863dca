"""The correction dialog: a wrong fix is never edited; a correction supersedes it.

The original stays in the record (shown struck through in the fix list), and the correction
carries its reason, as official logbook practice asks (REFERENCE.md, no erasures).
"""

from __future__ import annotations

from dataclasses import replace

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Grid, Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, Static

from passagelog.errors import PassagelogError
from passagelog.model import Fix
from passagelog.tui import text as fmt


class CorrectionDialog(ModalScreen[tuple[Fix, str] | None]):
    """Edit time, position and remarks of ``fix``; returns (corrected fix, reason)."""

    BINDINGS = [Binding("escape", "cancel", "Cancel")]

    def __init__(self, fix: Fix, zd_minutes: int) -> None:
        super().__init__()
        self.fix = fix
        self.zd_minutes = zd_minutes

    def compose(self) -> ComposeResult:
        from passagelog.nav.zonetime import format_utc

        f = self.fix
        with Vertical(id="corr-box", classes="dialog"):
            # the time as the fix list shows it (with its seconds, if any)
            yield Label(f"Correct fix {f.fix_id} of {fmt.clock_text(f.time_utc)}",
                        classes="dialog-title")
            yield Static("The original stays in the record, struck through; the correction "
                         "replaces it in every figure.", id="corr-help")
            with Grid(id="corr-grid"):
                yield Label("Time", classes="field-label")
                yield Input(format_utc(f.time_utc), id="corr-time", compact=True)
                yield Label("Position", classes="field-label")
                yield Input(fmt.position(f.lat, f.lon), id="corr-pos", compact=True)
                yield Label("Remarks", classes="field-label")
                yield Input(f.remarks, id="corr-remarks", compact=True)
                yield Label("Reason", classes="field-label")
                yield Input(placeholder="why the fix is corrected (required)",
                            id="corr-reason", compact=True)
            yield Static("", id="corr-error", classes="field-error -bad")
            with Horizontal(classes="dialog-buttons"):
                yield Button("Record correction", variant="primary", id="corr-save")
                yield Button("Cancel", id="corr-cancel")

    @on(Input.Submitted)
    @on(Button.Pressed, "#corr-save")
    def save(self) -> None:
        from passagelog.nav.zonetime import parse_time_utc

        error = self.query_one("#corr-error", Static)
        try:
            t = parse_time_utc(self.query_one("#corr-time", Input).value, self.zd_minutes)
            lat, lon = fmt.parse_position(self.query_one("#corr-pos", Input).value)
            remarks = self.query_one("#corr-remarks", Input).value.strip()
            new = replace(self.fix, time_utc=t, lat=lat, lon=lon, remarks=remarks,
                          fix_id=None, supersedes=None, reason=None, suspect=False,
                          implied_speed_kn=None)
        except PassagelogError as exc:
            error.update(str(exc))
            return
        reason = self.query_one("#corr-reason", Input).value.strip()
        if not reason:
            error.update("A reason is required: say why the fix is corrected.")
            self.query_one("#corr-reason", Input).focus()
            return
        self.dismiss((new, reason))

    @on(Button.Pressed, "#corr-cancel")
    def action_cancel(self) -> None:
        self.dismiss(None)
