"""The Watch view: the latest fix against the plan, followed live, with alerts.

A timer polls the logbook's change counter (a cheap query) every ``app.watch_poll_s``
seconds; when it moves, the recent fixes are reconciled in a worker thread and the view is
redrawn, so a fix written by ``passagelog feed`` shows within a second. The clock tick also
re-checks 'no fix for too long' without waiting for a fix.
"""

from __future__ import annotations

import math

from datetime import datetime, timezone

from rich.table import Table
from rich.text import Text
from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import VerticalScroll
from textual.widgets import Static

from passagelog.errors import PassagelogError
from passagelog.nav.units import NM_M
from passagelog.tui import text as fmt
from passagelog.tui.watch_state import (WatchSettings, WatchState, alerts_for, read_watch,
                                         span_text)
from passagelog.tui.xte_bar import XteBar


NO_VOYAGE = ("No voyage is open. Ctrl+O opens one of this logbook or starts a new one "
             "(or try the demo: 'passagelog demo').")


def _t(ts: float | None) -> datetime | None:
    return None if ts is None else datetime.fromtimestamp(ts, timezone.utc)


def short_span(seconds: float) -> str:
    """``span_text``, with seconds under a minute (``18 s``, not ``0 min``)."""
    return f"{int(round(seconds))} s" if seconds < 59.5 else span_text(seconds)


def fix_age(fix_s: float, now_s: float) -> str:
    """How old the fix is by this computer's clock (or how far ahead of it it is dated)."""
    if fix_s > now_s + 60.0:
        return f"dated {span_text(fix_s - now_s)} ahead of this computer's clock"
    return f"taken {short_span(max(0.0, now_s - fix_s))} ago"


def xte_text(st) -> Text:
    """``XTE 0.30 NM R (starboard), inside the 2.00 NM limit``."""
    if not math.isfinite(st.xte_m):
        return Text.assemble("XTE ", ("-", "bold"),
                             ("  no cross-track foot on this leg: the fix is at the pole of "
                              "the leg's great circle or far off the line", "dim"))
    xte_nm = abs(st.xte_m) / NM_M
    if round(xte_nm, 2) == 0.0:
        where = "0.00 NM, on the track"
    else:
        where = f"{xte_nm:.2f} NM " + {"R": "R (starboard)", "L": "L (port)"}[st.side]
    out = Text.assemble("XTE ", (where, "bold"))
    if st.xtl_m is None:
        out.append(", no limit set on this side", style="dim")
    elif st.inside_xtl:
        out.append(f", inside the {st.xtl_m / NM_M:.2f} NM limit", style="dim")
    else:
        out.append(f"  OUTSIDE the {st.xtl_m / NM_M:.2f} NM limit", style="bold reverse")
    return out


def _ahead_behind(delay_s: float | None) -> str:
    if delay_s is None:
        return fmt.DASH
    if abs(delay_s) < 30.0:
        return "on the plan's time"
    word = "behind" if delay_s > 0 else "ahead"
    return f"{span_text(delay_s)} {word}"


def _nm(distance_m: float | None) -> str:
    """``12.3 NM``, or a dash where there is no figure (e.g. no cross-track foot)."""
    text = fmt.nm(distance_m)
    return text if text == fmt.DASH else f"{text} NM"


def current_or_wind(set_deg: float | None, drift_kn: float | None, aircraft: bool
                    ) -> tuple[str, str]:
    """The label and value of the DR-to-fix vector: for a ship the current, set (the
    direction it flows toward) and drift; for an aircraft the wind found, as W/V (the
    direction it blows from, ``set + 180``, and its speed)."""
    if not aircraft:
        return "Set/drift", (fmt.DASH if drift_kn is None else
                             f"{fmt.course(set_deg)} {drift_kn:.1f} kn")
    if drift_kn is None or not math.isfinite(drift_kn):
        return "Wind found", fmt.DASH
    if set_deg is None or not math.isfinite(set_deg) or round(drift_kn) == 0:
        return "Wind found", "calm"
    # from, in whole degrees, 360 for a wind from the north (as winds are given)
    frm = round((set_deg + 180.0) % 360.0) or 360
    return "Wind found", f"{frm:03d}°/{drift_kn:.0f} kn"


def figures_grid(state: WatchState, aircraft: bool = False) -> Table:
    """Progress, ETAs, made good, set and drift, schedule: two label/value pairs a row."""
    st = state.status
    grid = Table.grid(padding=(0, 2))
    grid.add_column(style="dim")
    grid.add_column()
    grid.add_column(style="dim")
    grid.add_column()
    grid.add_row("Along leg", _nm(st.along_m), "Leg to go", _nm(st.leg_to_go_m))
    grid.add_row(f"DTW {st.to_wp}", _nm(st.dtw_m), "BTW (GC)", fmt.course(st.btw))
    passage = state.last_passage
    if st.phase == "arrived":
        when = (fmt.utc_time(_t(passage.time_s)) if passage is not None
                and passage.waypoint == st.legs + 1 else fmt.DASH)
        grid.add_row(f"Arrived {st.destination}", when, "Schedule",
                     _ahead_behind(None if passage is None else passage.delay_s))
    else:
        ttg = None
        if st.smg_window_kn:
            ttg = st.dtw_m / (st.smg_window_kn * NM_M / 3600.0)
        grid.add_row("TTG (SMG)", fmt.duration(ttg), "Route to go", _nm(st.route_to_go_m))
        # by plan: from now at the legs' planned speeds; by progress: at the SMG
        grid.add_row(f"ETA {st.to_wp}", f"{fmt.utc_time(_t(st.eta_wp_plan_s))} at plan speed",
                     "by progress", fmt.utc_time(_t(st.eta_wp_smg_s)))
        if st.to_wp != st.destination or st.leg != st.legs:
            grid.add_row(f"ETA {st.destination}",
                         f"{fmt.utc_time(_t(st.eta_dest_plan_s))} at plan speed",
                         "by progress", fmt.utc_time(_t(st.eta_dest_smg_s)))
    # over the window, or over the part of it there are fixes for (early in the voyage)
    used = st.window_s if st.window_used_s is None else min(st.window_used_s, st.window_s)
    smg = fmt.DASH if st.smg_window_kn is None else f"{st.smg_window_kn:.1f} kn"
    span = short_span(used)
    grid.add_row(f"SMG/CMG {span[:-7] if span.endswith(' h 00 min') else span}", f"{smg} {fmt.course(st.cmg_window)}",
                 *current_or_wind(st.set, st.drift_kn, aircraft))
    if st.phase == "arrived":
        grid.add_row("Fixes used", f"{state.fixes_used:,} of {state.fixes_total:,}", "", "")
    else:
        grid.add_row("Schedule", _ahead_behind(st.delay_s), "Fixes used",
                     f"{state.fixes_used:,} of {state.fixes_total:,}")
    return grid


class WatchView(VerticalScroll, can_focus=True):
    """Latest fix, active leg, XTE bar, alerts, then progress and ETAs (scrolls when the
    screen is too small for all of it)."""

    DEFAULT_CSS = """
    #watch-xte { height: auto; }
    #watch-figures { margin-top: 1; }
    """
    BINDINGS = [Binding("ctrl+l", "refresh_now", "Refresh")]
    PALETTE = (("Watch: refresh now", "refresh_now", "Reconcile the latest fixes now"),)

    def __init__(self, session, settings: WatchSettings = WatchSettings(), **kwargs) -> None:
        super().__init__(**kwargs)
        self.session = session
        self.settings = settings
        self.state: WatchState | None = None
        self._counter: object = None
        self.updates = 0

    def compose(self) -> ComposeResult:
        yield Static("Reading the logbook…", id="watch-head", classes="view-head")
        yield Static("", id="watch-leg")
        yield Static("", id="watch-xte")
        yield XteBar(id="watch-bar")
        # the alerts come before the figures, so that a small screen never hides them
        yield Static("", id="watch-alerts")
        yield Static("", id="watch-figures")

    def on_mount(self) -> None:
        poll = getattr(self.app, "watch_poll_s", 0.5)
        self.set_interval(poll, self._poll)
        self._poll()

    def _poll(self) -> None:
        try:
            counter = self.session.change_counter()
        except PassagelogError as exc:
            self.query_one("#watch-head", Static).update(f"Logbook not readable: {exc}")
            return
        if counter != self._counter:
            self._counter = counter
            self.recompute()
        else:  # the clock moves on: the fix's age and 'no fix for too long'
            self._draw_head()
            self._draw_alerts()

    def action_refresh_now(self) -> None:
        self.recompute()

    @work(thread=True, exclusive=True, group="watch")
    def recompute(self) -> None:
        s = self.session
        if s.voyage is None:
            self.app.call_from_thread(self._show, WatchState(None, note=NO_VOYAGE))
            return
        try:
            state = read_watch(s, self.settings)
        except Exception as exc:  # noqa: BLE001 - shown in the view; the watch goes on
            state = WatchState(None, note=f"Cannot reconcile the latest fixes: {exc}")
        self.app.call_from_thread(self._show, state)

    def _show(self, state: WatchState) -> None:
        self.state = state
        self.updates += 1
        self.draw()

    def draw(self) -> None:
        state = self.state
        head = self.query_one("#watch-head", Static)
        leg_line = self.query_one("#watch-leg", Static)
        xte_line = self.query_one("#watch-xte", Static)
        figures = self.query_one("#watch-figures", Static)
        bar = self.query_one("#watch-bar", XteBar)
        if state is None or state.status is None:
            head.update(state.note if state else "Reading the logbook…")
            leg_line.update("")
            xte_line.update("")
            figures.update("")
            bar.display = False
            self._draw_alerts()
            return
        st = state.status
        self._draw_head()
        sailing = state.extra.get("sailing")
        sail = {"great-circle": "  great circle", "rhumb": "  rhumb line"}.get(sailing, "")
        leg_line.update(Text.assemble(
            "Leg ", (f"{st.leg}/{st.legs}", "bold"), f"  {st.from_wp} → {st.to_wp}{sail}",
        ))
        xte_line.update(xte_text(st))
        bar.display = True
        bar.xte_m = st.xte_m if math.isfinite(st.xte_m) else None
        bar.port_m, bar.stbd_m = state.xtl_port_m, state.xtl_stbd_m
        figures.update(figures_grid(state, self.session.is_aircraft()))
        self._draw_alerts()

    def _draw_head(self) -> None:
        """The latest fix, its time and position, and its age by this computer's clock."""
        state = self.state
        if state is None or state.status is None:
            return
        st = state.status
        t = _t(st.time_s)
        self.query_one("#watch-head", Static).update(Text.assemble(
            "Latest fix ", (fmt.utc_time(t), "bold"),
            f"  {self.session.zone_label()} {fmt.ship_time(t, state.zd_minutes)}  ",
            (fmt.position(st.lat, st.lon), "bold"),
            ("  SUSPECT", "bold reverse") if st.suspect else "",
            ("\n" + fix_age(st.time_s, self.session.now().timestamp()), "dim"),
        ))

    def current_alerts(self):
        if self.state is None:
            return ()
        return alerts_for(self.state, self.session.now().timestamp(), self.settings)

    def _draw_alerts(self) -> None:
        box = self.query_one("#watch-alerts", Static)
        alerts = self.current_alerts()
        if not alerts:
            has_state = bool(self.state and self.state.status)
            box.update(Text("No alerts.", style="dim") if has_state else "")
            box.display = has_state
            box.remove_class("-alert")
            return
        box.display = True
        text = Text()
        for i, a in enumerate(alerts):
            if i:
                text.append("\n")
            mark = "! " if a.severity == "warning" else "· "
            text.append(mark + a.text, style="bold" if a.severity == "warning" else "")
        box.update(text)
        box.set_class(any(a.severity == "warning" for a in alerts), "-alert")
