"""The Review view: the whole voyage reconciled with its plan.

Per-leg figures, waypoint passages, deviation episodes (spells outside the cross-track
limit), noon figures, gaps, and two plots: the track against the plan, and XTE over time
with the limits. The reconciliation runs in a process of its own (:mod:`passagelog.tui.apart`),
started from a worker thread, so the UI stays quick meanwhile; what the view shows of it is kept
in the logbook's derived results (:mod:`passagelog.tui.review_data`), so opening the logbook
again shows it at once. Each time the view is shown it checks the logbook's content stamp:
a kept review that is no longer current is shown marked as such while the voyage is
reconciled again; Ctrl+L reconciles again regardless.
"""

from __future__ import annotations

import math
from datetime import datetime, timezone

import numpy as np
from rich.text import Text
from textual import work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.widgets import DataTable, Static, TabbedContent, TabPane

from passagelog.errors import PassagelogError
from passagelog.nav.units import NM_M
from passagelog.review.status import SUSPECT_WHY
from passagelog.tui import review_data as rd
from passagelog.tui import text as fmt
from passagelog.tui.chart import Chart, Series, render_chart
from passagelog.tui.review_data import ReviewSummary
from passagelog.tui.table import Table

#: table -> columns (header, row key, how to write it)
TABLES = {
    "legs": (
        ("Leg", "leg", "int"), ("From", "from_wp", "str"), ("To", "to_wp", "str"),
        ("Sail", "sailing", "sail"), ("Plan NM", "planned_distance_m", "nm"),
        ("Plan", "planned_time_s", "dur"), ("Actual", "actual_time_s", "dur"),
        ("Run NM", "run_m", "nm"), ("SMG kn", "smg_kn", "f1"),
        ("Max XTE", "max_abs_xte_m", "nm2"), ("RMS XTE", "rms_xte_m", "nm2"),
        ("Outside", "share_outside", "pct"), ("Set", "set", "course"),
        ("Drift", "drift_kn", "f1"),
    ),
    "passages": (
        ("WP", "waypoint", "int"), ("Name", "name", "str"), ("Passed UTC", "time_utc", "utc"),
        ("How", "how", "str"), ("XTE NM", "xte_m", "xte"),
        ("At pass NM", "distance_m", "nm2"), ("Closest NM", "closest_m", "nm2"),
        ("Planned", "planned_utc", "utc"), ("Delay", "delay_s", "dur"),
        ("Skipped", "skipped", "flag"),
    ),
    "episodes": (
        ("Leg", "leg", "int"), ("Side", "side", "str"), ("From UTC", "start_utc", "utc"),
        ("To UTC", "end_utc", "utc"), ("For", "duration_s", "dur"),
        ("Max XTE", "max_abs_xte_m", "nm2"), ("Limit", "limit_m", "nm2"),
        ("Fixes", "fixes", "int"),
    ),
    "noon": (
        ("Ship date", "ship_date", "str"), ("Noon UTC", "noon_utc", "utc"), ("ZD", "zone", "str"),
        ("Day h", "day_hours", "f0"), ("Run NM", "run_m", "nm"), ("DMG NM", "dmg_m", "nm"),
        ("Avg kn", "avg_speed_kn", "f1"), ("SMG kn", "smg_kn", "f1"),
        ("To go NM", "route_to_go_m", "nm"), ("ETA plan", "eta_dest_plan_utc", "utc"),
        ("ETA progress", "eta_dest_smg_utc", "utc"),
    ),
    "gaps": (
        ("From UTC", "start_utc", "utc"), ("To UTC", "end_utc", "utc"),
        ("For", "duration_s", "dur"), ("Across NM", "distance_m", "nm"), ("Leg", "leg", "int"),
    ),
    "suspects": (
        ("Time UTC", "time_utc", "utc"), ("Lat", "lat", "lat"), ("Lon", "lon", "lon"),
        ("Leg", "leg", "int"), ("Implied kn", "implied_speed_kn", "f1"),
        ("Why", "reason", "why"), ("Fix id", "fix_id", "int"),
    ),
}
TAB_TITLES = {"legs": "Legs", "passages": "Passages", "episodes": "Episodes", "noon": "Noon",
              "gaps": "Gaps", "suspects": "Suspects"}


def cell(value, how: str) -> str:
    """One table cell as the TUI writes it."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return fmt.DASH
    if how == "nm":
        return f"{value / NM_M:.1f}"
    if how == "nm2":
        return f"{value / NM_M:.2f}"
    if how == "xte":
        side = "R" if value > 0 else "L" if value < 0 else ""
        return f"{abs(value) / NM_M:.2f} {side}".strip()
    if how == "dur":
        return fmt.duration(value)
    if how == "utc":
        t = datetime.fromisoformat(str(value).replace("Z", "+00:00"))
        return fmt.utc_time(t)
    if how == "pct":
        return f"{100 * value:.0f}%"
    if how == "f1":
        return f"{value:.1f}"
    if how == "f0":
        return f"{value:.0f}"
    if how == "course":
        return fmt.course(value)
    if how == "sail":
        return "GC" if value == "great-circle" else "RL"
    if how == "flag":
        return "yes" if value else ""
    if how in ("lat", "lon"):
        text = fmt.position(value if how == "lat" else 0.0, value if how == "lon" else 0.0)
        return text.split(" ")[0 if how == "lat" else 1]
    if how == "why":
        return SUSPECT_WHY.get(str(value), str(value))
    return str(value)



def _n(count: int, one: str, many: str | None = None) -> str:
    return f"{count} {one if count == 1 else (many or one + 's')}"


def track_painter(summary: ReviewSummary):
    """Track (fixes) against the plan's legs, longitude across, latitude up."""
    a = summary.arrays
    plon, plat, flon, flat = a["plan_lon"], a["plan_lat"], a["fix_lon"], a["fix_lat"]
    wlon, wlat = a["wp_lon"], a["wp_lat"]
    allx = np.concatenate([plon, flon])
    ally = np.concatenate([plat, flat])
    mid_lat = float(np.nanmean(ally)) if ally.size else 0.0
    aspect = max(0.05, math.cos(math.radians(mid_lat)))

    def paint(width: int, height: int) -> Text:
        x0, x1 = float(np.nanmin(allx)), float(np.nanmax(allx))
        y0, y1 = float(np.nanmin(ally)), float(np.nanmax(ally))
        pad_x, pad_y = (x1 - x0) * 0.03 + 1e-3, (y1 - y0) * 0.03 + 1e-3
        lon_l = fmt.position(0.0, ((x0 + 180) % 360) - 180).split(" ")[1]
        lon_r = fmt.position(0.0, ((x1 + 180) % 360) - 180).split(" ")[1]
        body = render_chart(
            [Series(plon, plat, "dim", "plan", connect=True),
             Series(flon, flat, "bold", "track", connect=True),
             Series(wlon, wlat, "bold reverse", "waypoints")],
            width, height - 1, x_range=(x0 - pad_x, x1 + pad_x), y_range=(y0 - pad_y, y1 + pad_y),
            equal_aspect=1.0 / aspect,  # a degree of longitude is cos(lat) of one of lat
            x_labels=(lon_l, lon_r),
            y_labels=(fmt.position(y1, 0.0).split(" ")[0], fmt.position(y0, 0.0).split(" ")[0]),
        )
        legend = Text.assemble(("⠿ plan", "dim"), "   ", ("⠿ track", "bold"), "   ",
                               ("⠿ waypoints", "bold reverse"),
                               f"   {summary.fixes} fixes, {summary.waypoints} waypoints\n")
        return legend + body

    return paint


def xte_painter(summary: ReviewSummary):
    """XTE (NM, + starboard up) over time, with each fix's leg limits drawn."""
    a = summary.arrays
    t, xte, port, stbd = a["xte_t"], a["xte_nm"], a["port_nm"], a["stbd_nm"]

    def paint(width: int, height: int) -> Text:
        if t.size == 0:
            return Text("No fixes.", style="dim")
        vals = np.concatenate([xte, port[np.isfinite(port)], stbd[np.isfinite(stbd)]])
        vals = vals[np.isfinite(vals)]
        lim = float(np.max(np.abs(vals))) * 1.1 if vals.size else 1.0
        lim = lim or 1.0
        t0 = datetime.fromtimestamp(float(t[0]), timezone.utc)
        t1 = datetime.fromtimestamp(float(t[-1]), timezone.utc)
        body = render_chart(
            [Series(t[[0, -1]], np.zeros(2), "dim", "track line", connect=True),
             Series(t, port, "italic", "port limit", connect=True),
             Series(t, stbd, "italic", "stbd limit", connect=True),
             Series(t, xte, "bold", "XTE", connect=True)],
            width, height - 1, y_range=(-lim, lim),
            x_labels=(fmt.utc_time(t0), fmt.utc_time(t1)),
            y_labels=(f"{lim:.2f}S", f"{lim:.2f}P"),
        )
        legend = Text.assemble(("⠿ XTE NM (+ starboard, up)", "bold"), "   ",
                               ("⠿ limits", "italic"), "   ", ("⠿ track line", "dim"), "\n")
        return legend + body

    return paint


class ReviewView(Vertical):
    """Tables and plots of the reconciled voyage."""

    BINDINGS = [
        Binding("ctrl+l", "recompute", "Recompute"),
        Binding("left_square_bracket", "tab(-1)", "Prev tab"),
        Binding("right_square_bracket", "tab(1)", "Next tab"),
    ]
    PALETTE = (
        ("Review: recompute", "recompute", "Reconcile the whole voyage again (Ctrl+L)"),
        ("Review: track plot", "show_track", "The track against the plan"),
        ("Review: XTE plot", "show_xte", "XTE over time with the limits"),
    )

    def __init__(self, session, **kwargs) -> None:
        super().__init__(**kwargs)
        self.session = session
        self.summary: ReviewSummary | None = None
        self.loaded = False
        self.computed = 0  # how many times current figures were shown
        self.reconciled = 0  # ... of them reconciled while shown (not kept before)
        self._shown_key: str | None = None

    def compose(self) -> ComposeResult:
        yield Static("Review reconciles the whole voyage when first shown.", id="review-head",
                     classes="view-head")
        with TabbedContent(id="review-tabs"):
            for key, title in TAB_TITLES.items():
                with TabPane(title, id=f"review-{key}"):
                    # the first column (leg, waypoint, time) stays when scrolled sideways
                    yield Table(id=f"review-table-{key}", zebra_stripes=True,
                                cursor_type="row", fixed_columns=1)
            with TabPane("Track plot", id="review-track"):
                yield Chart(id="review-track-chart")
            with TabPane("XTE plot", id="review-xte"):
                yield Chart(id="review-xte-chart")

    def on_mount(self) -> None:
        for key, columns in TABLES.items():
            table = self.query_one(f"#review-table-{key}", DataTable)
            for header, col, _how in columns:
                table.add_column(header, key=col)

    def on_show(self) -> None:
        # paint the view first, then load (at once when kept and current)
        self.loaded = True
        self.set_timer(0.05, self.load)

    def action_tab(self, step: int) -> None:
        """``[`` / ``]``: the tab before or after this one (round)."""
        tabs = self.query_one("#review-tabs", TabbedContent)
        ids = [pane.id for pane in tabs.query(TabPane)]
        here = ids.index(tabs.active) if tabs.active in ids else 0
        tabs.active = ids[(here + step) % len(ids)]
        table = tabs.active_pane.query(DataTable)
        if table:
            table.first().focus()

    def action_show_track(self) -> None:
        self.query_one("#review-tabs", TabbedContent).active = "review-track"

    def action_show_xte(self) -> None:
        self.query_one("#review-tabs", TabbedContent).active = "review-xte"

    def action_recompute(self) -> None:
        self.query_one("#review-head", Static).update("Reconciling the voyage…")
        self.load(force=True)

    def _head(self, text: str) -> None:
        self.query_one("#review-head", Static).update(text)

    @work(thread=True, exclusive=True, group="review")
    def load(self, force: bool = False) -> None:
        """Show the kept review if it is current; else show it marked as older while the
        voyage is reconciled again (or while a reconciliation started ahead of the view
        finishes), then show and keep the new one."""
        s = self.session
        call = self.app.call_from_thread
        try:
            if s.voyage is None:
                raise PassagelogError("no voyage is open")
            key = rd.current_key(s)
            if key == self._shown_key and not force:
                return
            if not force:
                kept = rd.read_kept(s)
                if kept is not None and kept[1] == key:
                    call(self._show, kept[0], key)
                    return
                if kept is not None:
                    call(self._show, kept[0], None)
                    call(self._head, self._head_text(kept[0]) + "  [b]Updating:[/b] the "
                         f"logbook has changed since this review ({fmt.utc_time(kept[2])}); "
                         "reconciling…")
                else:
                    call(self._head, "Reconciling the voyage…")
            fresh = False
            with rd.RECONCILE_LOCK:  # nothing waits on the UI thread while holding it
                kept = None if force else rd.read_kept(s)
                if kept is not None and kept[1] == key:
                    summary = kept[0]  # one started ahead of the view has just kept it
                else:
                    key, summary = rd.reconcile_apart(s)
                    fresh = True
        except Exception as exc:  # noqa: BLE001 - shown in the view, never fatal
            call(self._failed, str(exc))
            return
        call(self._show, summary, key, fresh)

    def _failed(self, message: str) -> None:
        self._head(f"Cannot review: {message}")

    @staticmethod
    def _head_text(summary: ReviewSummary) -> str:
        if not summary.fixes:
            return "No fixes yet: nothing to review."
        t0 = datetime.fromtimestamp(summary.first_s, timezone.utc)
        t1 = datetime.fromtimestamp(summary.last_s, timezone.utc)
        c = summary.counts
        first, last = fmt.utc_time(t0), fmt.utc_time(t1)
        if first == last and summary.fixes > 1:  # fixes within a minute: with seconds
            first, last = fmt.clock_text(t0, seconds=True), fmt.clock_text(t1, seconds=True)
        return (f"{_n(summary.fixes, 'fix', 'fixes')} {first} to "
                f"{last}; {_n(c['passages'], 'passage')}, "
                f"{_n(c['episodes'], 'episode')} outside the limits, {_n(c['gaps'], 'gap')}, "
                f"{_n(c['suspects'], 'suspect fix', 'suspect fixes')} left out")

    def _show(self, summary: ReviewSummary, key: str | None, fresh: bool = False) -> None:
        """Fill the view from ``summary``; ``key`` None marks it as older than the logbook;
        ``fresh``: reconciled for this showing (not kept before)."""
        self.summary = summary
        self.reconciled += fresh
        if key is not None:
            self._shown_key = key
            self.computed += 1
        self._head(self._head_text(summary))
        tabs = self.query_one("#review-tabs", TabbedContent)
        for tkey, columns in TABLES.items():
            table = self.query_one(f"#review-table-{tkey}", DataTable)
            table.clear()
            for row in summary.rows[tkey]:
                table.add_row(*(cell(row.get(col), how) for _h, col, how in columns))
            if tkey != "legs":  # how many, on the tab (an empty table says so at a glance)
                tabs.get_tab(f"review-{tkey}").label = (f"{TAB_TITLES[tkey]} "
                                                        f"{len(summary.rows[tkey])}")
        if summary.fixes:
            self.query_one("#review-track-chart", Chart).set_painter(track_painter(summary))
            self.query_one("#review-xte-chart", Chart).set_painter(xte_painter(summary))
