"""Voyages: open another voyage of the logbook, or start a new one (Ctrl+O).

:class:`VoyageDialog` lists the logbook's voyages, the open one marked, with a last line to
start a new one; it returns the id of the voyage chosen. :class:`NewVoyageDialog` asks for
what a voyage needs (a name and the craft; the planned departure, the ship's zone and the
places are optional), checks each field beside it, records the voyage (and the craft, when
the logbook does not know it yet) and returns its id.
"""

from __future__ import annotations

from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Grid, Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, OptionList, Static
from textual.widgets.option_list import Option

from passagelog.errors import PassagelogError
from passagelog.tui import text as fmt

NEW = "new"


class VoyageDialog(ModalScreen[int | None]):
    """The logbook's voyages to choose from; returns a voyage id, or None."""

    BINDINGS = [Binding("escape", "cancel", "Cancel")]

    def __init__(self, session) -> None:
        super().__init__()
        self.session = session

    def compose(self) -> ComposeResult:
        voyages = self.session.voyages()
        open_id = self.session.voyage.voyage_id if self.session.voyage else None
        options = []
        for v in reversed(voyages):  # the most recent first
            dep = fmt.utc_time(v.departure_utc) if v.departure_utc else "no departure set"
            where = f"  {v.from_place} → {v.to_place}" if v.from_place or v.to_place else ""
            mark = "  (open)" if v.voyage_id == open_id else ""
            options.append(Option(f"{v.name}{mark}  {dep}{where}", id=str(v.voyage_id)))
        options.append(Option("New voyage…", id=NEW))
        with Vertical(id="voyage-box", classes="dialog"):
            yield Label("Voyages in this logbook", classes="dialog-title")
            yield Static("Enter opens the one chosen; Esc goes back." if voyages else
                         f"No voyage yet in {self.session.db_path.name}: start one (or "
                         "Esc, and see 'passagelog --help').", id="voyage-hint")
            yield OptionList(*options, id="voyage-list")

    def on_mount(self) -> None:
        self.query_one("#voyage-list", OptionList).focus()

    @on(OptionList.OptionSelected, "#voyage-list")
    def chosen(self, event: OptionList.OptionSelected) -> None:
        if event.option.id == NEW:
            self.app.push_screen(NewVoyageDialog(self.session), self._created)
        else:
            self.dismiss(int(event.option.id))

    def _created(self, voyage_id: int | None) -> None:
        if voyage_id is not None:
            self.dismiss(voyage_id)

    def action_cancel(self) -> None:
        self.dismiss(None)


FIELDS = (
    # id, label, placeholder
    ("name", "Voyage", "required, e.g. Harbour to Isle, May"),
    ("craft", "Craft", "required: the ship or aircraft (new if not known)"),
    ("departure", "Departure", "planned, UTC: 2026-05-01T06:00Z, or ... ZD+1; optional"),
    ("zd", "Ship's ZD", "zone at the start: 0, +1, -5:30 (ZT + ZD = UTC); default 0"),
    ("from", "From", "optional"),
    ("to", "To", "optional"),
)


class NewVoyageDialog(ModalScreen[int | None]):
    """A new voyage: returns its id once recorded, or None when cancelled."""

    BINDINGS = [Binding("escape", "cancel", "Cancel")]

    def __init__(self, session) -> None:
        super().__init__()
        self.session = session

    def compose(self) -> ComposeResult:
        with Vertical(id="new-voyage-box", classes="dialog"):
            yield Label("Start a new voyage", classes="dialog-title")
            with Grid(id="new-voyage-fields"):
                for fid, label, placeholder in FIELDS:
                    yield Label(label, classes="field-label")
                    yield Input(placeholder=placeholder, id=f"voyage-{fid}", compact=True)
            yield Static("", id="voyage-error", classes="field-error")
            with Horizontal(classes="dialog-buttons"):
                yield Button("Start voyage", variant="primary", id="voyage-save")
                yield Button("Cancel", id="voyage-cancel")

    def on_mount(self) -> None:
        crafts = self.session.craft_names()
        if len(crafts) == 1:
            self.query_one("#voyage-craft", Input).value = crafts[0]
        self.query_one("#voyage-name", Input).focus()

    def _values(self) -> dict:
        """The fields read and checked; raises PassagelogError naming the field."""
        from passagelog.errors import InputError
        from passagelog.nav.zonetime import parse_time_utc, parse_zd

        def text(fid: str) -> str:
            return self.query_one(f"#voyage-{fid}", Input).value.strip()

        out = {"name": text("name"), "craft": text("craft"), "from_place": text("from"),
               "to_place": text("to"), "departure_utc": None, "zd_minutes": 0}
        if not out["name"]:
            raise InputError("Voyage: a name is required")
        if out["name"] in {v.name for v in self.session.voyages()}:
            raise InputError(f"Voyage: {out['name']!r} is already in this logbook")
        if not out["craft"]:
            raise InputError("Craft: the ship or aircraft is required")
        if text("zd"):
            try:
                out["zd_minutes"] = parse_zd(text("zd"))
            except PassagelogError as exc:
                raise InputError(f"Ship's ZD: {exc}") from None
        if text("departure"):
            try:
                out["departure_utc"] = parse_time_utc(text("departure"), out["zd_minutes"])
            except PassagelogError as exc:
                raise InputError(f"Departure: {exc}") from None
        return out

    @on(Input.Submitted)
    @on(Button.Pressed, "#voyage-save")
    def save(self) -> None:
        error = self.query_one("#voyage-error", Static)
        try:
            values = self._values()
            voyage = self.session.start_voyage(**values)
        except PassagelogError as exc:
            error.update(str(exc))
            return
        self.dismiss(voyage.voyage_id)

    @on(Button.Pressed, "#voyage-cancel")
    def action_cancel(self) -> None:
        self.dismiss(None)
