"""The passagelog terminal app: four views over one logbook, help, palette, light and dark."""

from __future__ import annotations

import os
from datetime import datetime
from pathlib import Path
from typing import Callable, Iterable

from textual.app import App, ComposeResult, SystemCommand
from textual.binding import Binding
from textual.screen import Screen
from textual.widgets import Footer, Header, TabbedContent, TabPane

from passagelog.tui.session import Session, system_clock


class OpenVoyage:
    """What the app returns when the user chose another voyage: :func:`run_app` opens the
    app again on it (every view starts afresh on the new voyage)."""

    def __init__(self, voyage_id: int) -> None:
        self.voyage_id = voyage_id

VIEWS = (
    ("plan", "Plan", "f2"),
    ("log", "Log", "f3"),
    ("watch", "Watch", "f4"),
    ("review", "Review", "f5"),
)

#: Seconds after the start at which the Review is reconciled ahead of being shown (the
#: Plan and Watch views paint first); None: not ahead, only when Review is shown.
PREFETCH_REVIEW_S = 1.5


class PassagelogApp(App):
    """Plan, Log, Watch and Review for the open voyage."""

    CSS_PATH = "app.tcss"
    TITLE = "passagelog"
    ENABLE_COMMAND_PALETTE = True

    BINDINGS = [
        Binding("f1", "help", "Help"),
        Binding("question_mark", "help", "Help", show=False),
        Binding("f2", "view('plan')", "Plan", show=False),
        Binding("f3", "view('log')", "Log", show=False),
        Binding("f4", "view('watch')", "Watch", show=False),
        Binding("f5", "view('review')", "Review", show=False),
        Binding("f9", "toggle_dark", "Light/Dark", show=False),
        Binding("ctrl+o", "voyages", "Voyages", show=False),
        Binding("ctrl+q", "quit", "Quit", priority=True, show=False),
    ]

    def __init__(self, db_path: str | Path | None = None, *, voyage: str | int | None = None,
                 session: Session | None = None,
                 clock: Callable[[], datetime] = system_clock,
                 watch_poll_s: float = 0.5,
                 prefetch_review_s: float | None = PREFETCH_REVIEW_S,
                 clock_note: str = "") -> None:
        super().__init__()
        #: said in the header when the clock is not this computer's (the demo's)
        self.clock_note = clock_note
        self.prefetch_review_s = prefetch_review_s
        self.session = session if session is not None else Session(db_path, voyage=voyage,
                                                                    clock=clock)
        self.watch_poll_s = watch_poll_s
        self.theme = "textual-dark"
        if "TEXTUAL_ANIMATIONS" not in os.environ:
            # A calm screen: no sliding tab underline or smooth scrolling, which redraw the
            # screen many times a second for nothing a watch officer needs (and cost most
            # over a slow link to the ship). TEXTUAL_ANIMATIONS=full brings them back.
            self.animation_level = "none"

    def compose(self) -> ComposeResult:
        from passagelog.tui.plan_view import PlanView

        yield Header(show_clock=False)
        with TabbedContent(initial="plan", id="views"):
            with TabPane("F2 Plan", id="plan"):
                yield PlanView(self.session, id="plan-view")
            for key, title, fkey in VIEWS[1:]:
                with TabPane(f"{fkey.upper()} {title}", id=key):
                    if key == "watch":  # the watch follows the logbook from the start
                        yield self._view_class(key)(self.session, id="watch-view")
        yield Footer()

    @staticmethod
    def _view_class(key: str):
        """The widget class of a view (imported when first needed)."""
        if key == "log":
            from passagelog.tui.log_view import LogView as View
        elif key == "watch":
            from passagelog.tui.watch_view import WatchView as View
        else:
            from passagelog.tui.review_view import ReviewView as View
        return View

    async def ensure_view(self, key: str):
        """The view's widget, mounted the first time it is needed (Log and Review read
        the logbook when first shown, so a big logbook costs nothing until then)."""
        found = self.query(f"#{key}-view")
        if found:
            return found.first()
        pane = self.query_one("#views", TabbedContent).get_pane(key)
        widget = self._view_class(key)(self.session, id=f"{key}-view")
        await pane.mount(widget)
        return widget

    async def on_tabbed_content_tab_activated(self, event: TabbedContent.TabActivated) -> None:
        if event.tabbed_content.id != "views":
            return
        # notices show at the top on Plan, whose editor (where one types) is at the bottom;
        # elsewhere at the bottom, clear of the Log's messages beside its fields
        self.set_class(event.pane.id == "plan", "-notices-top")
        if event.pane.id in ("log", "review"):
            await self.ensure_view(event.pane.id)

    def on_mount(self) -> None:
        voyage = self.session.voyage
        self.sub_title = (f"{voyage.name}  {self.session.db_path.name}" if voyage
                          else f"no voyage  {self.session.db_path.name}")
        if self.clock_note:
            self.title = f"{self.TITLE} ({self.clock_note})"
        self.set_class(True, "-notices-top")  # Plan shows first
        self.call_after_refresh(self._focus_view)
        if voyage is None:  # a new logbook: what to do first
            self.call_after_refresh(self.action_voyages)
        if self.prefetch_review_s is not None and self.session.voyage is not None:
            self.set_timer(self.prefetch_review_s, self._prefetch_review)

    def on_unmount(self) -> None:
        from passagelog.tui import apart

        apart.stop_all()  # a reconciliation still running is not waited for on quitting

    def _prefetch_review(self) -> None:
        """Reconcile the whole voyage ahead of the Review view, in a process of its own
        (unless Review is already shown or its kept review is current), so that Review opens
        at once."""
        if self.query("#review-view"):
            return

        def work() -> None:
            from passagelog.tui import review_data

            review_data.prefetch(self.session)

        self.run_worker(work, thread=True, group="review-prefetch", exit_on_error=False)

    async def _focus_view(self) -> None:
        """Focus the view on show once the screen is up: Plan, unless a key pressed while
        the app was starting (F4, say) has already chosen another."""
        await self.action_view(self.query_one("#views", TabbedContent).active or "plan")

    # --- actions ---
    def _unsaved_plan(self) -> bool:
        plan = self.query("#plan-view")
        return bool(plan) and plan.first().dirty

    async def _confirm_losing_edits(self, then: str) -> bool:
        """True when there is no unsaved plan edit, or the user lets it go."""
        from passagelog.tui.confirm_dialog import ConfirmDialog

        if not self._unsaved_plan():
            return True
        return bool(await self.push_screen_wait(ConfirmDialog(
            "The plan has edits not saved",
            f"{then} loses them. Go back and save them with Ctrl+S in Plan (F2), or let "
            "them go.", f"{then} without saving")))

    def action_quit(self) -> None:
        self.run_worker(self._quit(), exclusive=True, group="quit")

    async def _quit(self) -> None:
        if await self._confirm_losing_edits("Quitting"):
            self.exit()

    def action_voyages(self) -> None:
        """Ctrl+O: open another voyage of the logbook, or start a new one."""
        from passagelog.tui.voyage_dialog import VoyageDialog

        if isinstance(self.screen, VoyageDialog):
            return

        async def chosen(voyage_id: int | None) -> None:
            open_id = self.session.voyage.voyage_id if self.session.voyage else None
            if voyage_id is None or voyage_id == open_id:
                return
            if await self._confirm_losing_edits("Opening another voyage"):
                self.exit(result=OpenVoyage(voyage_id))

        self.push_screen(VoyageDialog(self.session),
                         lambda v: self.run_worker(chosen(v), group="voyages"))

    def action_help(self) -> None:
        from passagelog.tui.help_screen import HelpScreen

        if not isinstance(self.screen, HelpScreen):
            self.push_screen(HelpScreen())

    async def action_view(self, key: str) -> None:
        tabs = self.query_one("#views", TabbedContent)
        tabs.active = key
        await self.ensure_view(key)
        pane = tabs.get_pane(key)
        focusable = [w for w in pane.query("*") if w.focusable]
        if focusable:
            focusable[0].focus()

    def action_toggle_dark(self) -> None:
        self.theme = "textual-light" if self.theme == "textual-dark" else "textual-dark"

    def _view_action(self, view: str, action: str):
        async def run() -> None:
            await self.action_view(view)
            widget = await self.ensure_view(view)
            getattr(widget, f"action_{action}")()
        return run

    def get_system_commands(self, screen: Screen) -> Iterable[SystemCommand]:
        yield SystemCommand("Help", "Key bindings and the safety caution (F1)", self.action_help)
        for key, title, fkey in VIEWS:
            yield SystemCommand(f"Show {title}", f"Switch to the {title} view ({fkey.upper()})",
                                lambda k=key: self.action_view(k))
        yield SystemCommand("Light or dark", "Switch between the light and dark look (F9)",
                            self.action_toggle_dark)
        yield SystemCommand("Voyages: open or start one",
                            "Open another voyage of this logbook, or start a new one (Ctrl+O)",
                            self.action_voyages)
        plan = (
            ("Plan: edit waypoint", "edit", "Edit the selected waypoint and its leg (Enter)"),
            ("Plan: insert waypoint", "insert", "Insert a waypoint after the selected one (Ins)"),
            ("Plan: delete waypoint", "delete", "Delete the selected waypoint (Del)"),
            ("Plan: move waypoint up", "move_up", "Move the selected waypoint up (Ctrl+Up)"),
            ("Plan: move waypoint down", "move_down", "Move it down (Ctrl+Down)"),
            ("Plan: reverse", "reverse", "Reverse the plan (Ctrl+R)"),
            ("Plan: undo", "undo", "Undo the last edit (Ctrl+Z)"),
            ("Plan: fixed ETA/ETD", "times",
             "Set the selected waypoint's fixed ETA or ETD in UTC (Ctrl+T)"),
            ("Plan: save revision", "save", "Save the edits as a new revision (Ctrl+S)"),
        )
        for title, action, help_text in plan:
            yield SystemCommand(title, help_text, self._view_action("plan", action))
        for view, commands in self.extra_commands().items():
            for title, action, help_text in commands:
                yield SystemCommand(title, help_text, self._view_action(view, action))
        yield SystemCommand("Quit", "Leave passagelog (Ctrl+Q)", self.action_quit)

    def extra_commands(self) -> dict[str, tuple[tuple[str, str, str], ...]]:
        """Palette entries of the Log, Watch and Review views (as those views declare them)."""
        out: dict[str, tuple[tuple[str, str, str], ...]] = {}
        for key, _title, _f in VIEWS[1:]:
            out[key] = tuple(getattr(self._view_class(key), "PALETTE", ()))
        return out
