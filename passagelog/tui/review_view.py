"""The Review view: the whole voyage reconciled with its plan.

Per-leg figures, waypoint passages, deviation episodes (spells outside the cross-track
limit), noon figures, gaps, and two plots: the track against the plan, and XTE over time
with the limits. The reconciliation runs in a worker thread the first time the view is
shown and again on Ctrl+L (or when the logbook has changed since).
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
from passagelog.tui import text as fmt
from passagelog.tui.chart import Chart, Series, render_chart

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
        ("How", "how", "str"), ("XTE NM", "xte_m", "xte"), ("Off NM", "distance_m", "nm2"),
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
}
TAB_TITLES = {"legs": "Legs", "passages": "Passages", "episodes": "Episodes", "noon": "Noon",
              "gaps": "Gaps"}


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
    return str(value)


#: points kept per series for the plots (a terminal chart has a few tens of thousands of dots)
PLOT_POINTS = 20_000


def _thin(*columns: np.ndarray) -> list[np.ndarray]:
    """Every k-th point so that at most PLOT_POINTS remain (the last one kept)."""
    n = len(columns[0])
    if n <= PLOT_POINTS:
        return [np.asarray(c) for c in columns]
    idx = np.unique(np.concatenate([np.arange(0, n, n // PLOT_POINTS + 1), [n - 1]]))
    return [np.asarray(c)[idx] for c in columns]


def _envelope(t: np.ndarray, *columns: np.ndarray) -> list[np.ndarray]:
    """Min and max of each column over PLOT_POINTS/2 time bins: the plot keeps every spike."""
    n = len(t)
    if n <= PLOT_POINTS:
        return [np.asarray(t)] + [np.asarray(c) for c in columns]
    bins = PLOT_POINTS // 2
    edges = np.linspace(0, n, bins + 1).astype(np.int64)
    starts = edges[:-1]
    tt = np.repeat(np.asarray(t)[starts], 2)
    out = [tt]
    for c in columns:
        c = np.asarray(c, dtype=float)
        filled = np.where(np.isfinite(c), c, np.nan)
        lo = np.fmin.reduceat(np.where(np.isnan(filled), np.inf, filled), starts)
        hi = np.fmax.reduceat(np.where(np.isnan(filled), -np.inf, filled), starts)
        lo[~np.isfinite(lo)] = np.nan
        hi[~np.isfinite(hi)] = np.nan
        out.append(np.column_stack([lo, hi]).ravel())
    return out


def _n(count: int, one: str, many: str | None = None) -> str:
    return f"{count} {one if count == 1 else (many or one + 's')}"


def track_painter(review):
    """Track (fixes) against the plan's legs, longitude across, latitude up."""
    fr = review.fixes
    route = review.routes[-1]
    from passagelog.nav.legs import make_leg

    plan_lat, plan_lon = [], []
    for k, leg in enumerate(route.legs):
        a, b = route.waypoints[k], route.waypoints[k + 1]
        solved = make_leg(a.lat, a.lon, b.lat, b.lon, leg.sailing)
        along = np.linspace(0.0, solved.distance_m, 60)
        lats, lons = solved.points_at_np(along)
        plan_lat.append(np.asarray(lats))
        plan_lon.append(np.asarray(lons))
    plat = np.concatenate(plan_lat)
    plon = np.concatenate(plan_lon)
    # unwrap longitudes about the plan's start so a track across 180° stays in one piece
    ref = float(plon[0])
    unwrap = lambda lon: (np.asarray(lon) - ref + 180.0) % 360.0 - 180.0 + ref  # noqa: E731
    plon = unwrap(plon)
    flat, flon = _thin(np.asarray(fr.lat), unwrap(fr.lon))
    wlat = np.array([w.lat for w in route.waypoints])
    wlon = unwrap(np.array([w.lon for w in route.waypoints]))
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
                               f"   {len(fr.time_s)} fixes, {len(route.waypoints)} waypoints\n")
        return legend + body

    return paint


def xte_painter(review):
    """XTE (NM, + starboard up) over time, with each fix's leg limits drawn."""
    fr = review.fixes
    t = np.asarray(fr.time_s)
    xte = np.asarray(fr.xte_m) / NM_M
    port = np.full(t.shape, np.nan)
    stbd = np.full(t.shape, np.nan)
    for r, route in enumerate(review.routes):
        for k, leg in enumerate(route.legs):
            sel = (np.asarray(fr.revision) == r) & (np.asarray(fr.leg) == k + 1)
            if leg.xtl_port_m is not None:
                port[sel] = -leg.xtl_port_m / NM_M
            if leg.xtl_stbd_m is not None:
                stbd[sel] = leg.xtl_stbd_m / NM_M

    t, xte, port, stbd = _envelope(t, xte, port, stbd)

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

    BINDINGS = [Binding("ctrl+l", "recompute", "Recompute")]
    PALETTE = (
        ("Review: recompute", "recompute", "Reconcile the whole voyage again (Ctrl+L)"),
        ("Review: track plot", "show_track", "The track against the plan"),
        ("Review: XTE plot", "show_xte", "XTE over time with the limits"),
    )

    def __init__(self, session, **kwargs) -> None:
        super().__init__(**kwargs)
        self.session = session
        self.review = None
        self.loaded = False
        self.computed = 0

    def compose(self) -> ComposeResult:
        yield Static("Review reconciles the whole voyage when first shown.", id="review-head",
                     classes="view-head")
        with TabbedContent(id="review-tabs"):
            for key, title in TAB_TITLES.items():
                with TabPane(title, id=f"review-{key}"):
                    yield DataTable(id=f"review-table-{key}", zebra_stripes=True,
                                    cursor_type="row")
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
        if not self.loaded:
            self.loaded = True
            # paint the view first, then start the (long) reconciliation
            self.set_timer(0.05, self.action_recompute)

    def action_show_track(self) -> None:
        self.query_one("#review-tabs", TabbedContent).active = "review-track"

    def action_show_xte(self) -> None:
        self.query_one("#review-tabs", TabbedContent).active = "review-xte"

    def action_recompute(self) -> None:
        self.query_one("#review-head", Static).update("Reconciling the voyage…")
        self.recompute()

    @work(thread=True, exclusive=True, group="review")
    def recompute(self) -> None:
        from passagelog.review.engine import reconcile

        s = self.session
        try:
            if s.voyage is None:
                raise PassagelogError("no voyage is open")
            s.reload_route()
            if s.route is None:
                raise PassagelogError("this voyage has no plan yet: make one in Plan (F2)")
            plan = [(t, r) for t, r in s.plan_revisions] or s.route
            review = reconcile(plan, s.fix_arrays(), zd_minutes=s.zd_minutes,
                               entries=s.entries(),
                               planned_departure_utc=s.voyage.departure_utc)
        except Exception as exc:  # noqa: BLE001 - shown in the view, never fatal
            self.app.call_from_thread(self._failed, str(exc))
            return
        rows = {key: list(review.iter_rows(key)) for key in TABLES}
        painters = (track_painter(review), xte_painter(review)) if len(review.fixes) else None
        self.app.call_from_thread(self._show, review, rows, painters)

    def _failed(self, message: str) -> None:
        self.query_one("#review-head", Static).update(f"Cannot review: {message}")

    def _show(self, review, rows: dict, painters=None) -> None:
        self.review = review
        self.computed += 1
        fr = review.fixes
        head = self.query_one("#review-head", Static)
        if len(fr) == 0:
            head.update("No fixes yet: nothing to review.")
        else:
            t0 = datetime.fromtimestamp(float(fr.time_s[0]), timezone.utc)
            t1 = datetime.fromtimestamp(float(fr.time_s[-1]), timezone.utc)
            head.update(
                f"{_n(len(fr), 'fix', 'fixes')} {fmt.utc_time(t0)} to {fmt.utc_time(t1)}; "
                f"{_n(len(review.passages), 'passage')}, "
                f"{_n(len(review.episodes), 'episode')} outside the limits, "
                f"{_n(len(review.gaps), 'gap')}, "
                f"{_n(len(review.suspects), 'suspect fix', 'suspect fixes')} left out")
        for key, columns in TABLES.items():
            table = self.query_one(f"#review-table-{key}", DataTable)
            table.clear()
            for row in rows[key]:
                table.add_row(*(cell(row.get(col), how) for _h, col, how in columns))
        if painters is not None:
            self.query_one("#review-track-chart", Chart).set_painter(painters[0])
            self.query_one("#review-xte-chart", Chart).set_painter(painters[1])
