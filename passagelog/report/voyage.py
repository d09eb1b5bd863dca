"""The voyage review report: one self-contained HTML file that prints well to PDF.

Sections: voyage header and provenance; the plan's leg table; per-leg deviation statistics;
waypoint passages planned against actual; deviation episodes; noon figures; gaps and suspect
fixes; and the figures as inline SVG (track against the plan on a Mercator chart with the
corridors and the episodes, XTE over time with the limits, speed made good over time, and a
range view centred on a chosen waypoint). Figures are shown in the trade's units (NM, knots,
hours); the engine's rows are in metres and seconds and are converted here, on the way out.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from datetime import datetime, timezone
from typing import Sequence

from passagelog.nav.position import format_position
from passagelog.report import plots
from passagelog.report.display import display_key, display_records, display_value  # noqa: F401
from passagelog.report.legtable import LEG_TABLE_COLUMNS, leg_table_records, plan_leg_table
from passagelog.report.render import Provenance, esc, html_document, html_table
from passagelog.review import Review


@dataclass(frozen=True)
class VoyageHeader:
    """What the report says about the voyage itself."""

    name: str = ""
    craft: str = ""
    from_place: str = ""
    to_place: str = ""
    departure_utc: datetime | None = None


def _position_rows(rows: list[dict]) -> list[dict]:
    for row in rows:
        if "lat" in row and "lon" in row and row["lat"] is not None:
            row["position"] = format_position(row.pop("lat"), row.pop("lon"), decimals=1)
    return rows


_TEXT = {"from_wp", "to_wp", "name", "how", "side", "sailing", "position", "reason", "zone",
         "from", "to", "notes", "eta_ship", "ship_date"}


def _table(rows: list[dict], columns: Sequence[str], empty: str) -> str:
    rows = _position_rows([dict(r) for r in rows])
    if rows and "position" in rows[0]:
        columns = [c for c in columns if c not in ("lat", "lon")]
        columns.insert(min(2, len(columns)), "position")
    recs, cols = display_records(rows, columns)
    text_cols = {display_key(c) for c in _TEXT} | {c for c in cols if c.endswith("_utc")}
    return html_table(recs, cols, text_columns=text_cols, empty=empty)


def _limits_per_fix(review: Review) -> tuple[list[float | None], list[float | None]]:
    fx = review.fixes
    port, stbd = [], []
    for r, k in zip(fx.revision.tolist(), fx.leg.tolist()):
        legs = review.routes[int(r)].legs
        plan = legs[int(k) - 1] if 1 <= int(k) <= len(legs) else None
        port.append(plan.xtl_port_m if plan else None)
        stbd.append(plan.xtl_stbd_m if plan else None)
    return port, stbd


def voyage_report_html(review: Review, header: VoyageHeader, provenance: Provenance, *,
                       center_waypoint: int | None = None) -> str:
    """The whole report as one HTML document (see the module docstring).

    ``center_waypoint`` (1-based, in the plan in force at the end) centres the range view;
    by default the last waypoint (the destination).
    """
    route = review.routes[-1]
    fx = review.fixes
    times = [datetime.fromtimestamp(t, timezone.utc) for t in fx.time_s.tolist()]
    dep = header.departure_utc
    head_rows = [
        ("Voyage", header.name), ("Craft", header.craft),
        ("From", header.from_place), ("To", header.to_place),
        ("Departure (UTC)", f"{dep:%Y-%m-%d %H:%M}Z" if dep else ""),
        ("Fixes reviewed", str(len(fx))),
        # the plan as its logbook names it (the provenance's label) or else the route's name
        ("Plan", provenance.plan if provenance and provenance.plan else f"{route.name}" + (
            f", revision {route.revision}" if route.revision is not None else "")),
    ]
    head = "<table class=\"prov\">" + "".join(
        f"<tr><td>{esc(k)}</td><td>{esc(v)}</td></tr>" for k, v in head_rows if v) + "</table>"
    sections: list[tuple[str, str]] = [("Voyage", head)]

    leg_recs = leg_table_records(plan_leg_table(route, departure_utc=dep))
    sections.append(("Plan: leg table", html_table(
        leg_recs, list(LEG_TABLE_COLUMNS),
        text_columns=("from", "to", "sailing", "notes", "etd_utc", "eta_utc", "eta_ship"))))

    figures = []
    geometry = plots.plan_geometry(route)
    if len(fx):
        outside = (~fx.inside_xtl.astype(bool)).tolist()
        figures.append(plots.track_chart_svg(geometry, fx.lat, fx.lon, times, outside,
                                             title=f"Track and plan: {route.name}"))
        port, stbd = _limits_per_fix(review)
        figures.append(plots.xte_svg(times, fx.xte_m, port, stbd))
        smg = [None if not math.isfinite(v) else v for v in fx.smg_window_kn.tolist()]
        figures.append(plots.speed_svg(times, smg))
    k = (center_waypoint or len(route.waypoints)) - 1
    k = min(max(k, 0), len(route.waypoints) - 1)
    c = route.waypoints[k]
    figures.append(plots.range_view_svg(c.name, c.lat, c.lon, geometry, fx.lat, fx.lon))
    sections.append(("Figures", "".join(f'<div class="figure">{svg}</div>' for svg in figures)))

    from passagelog.review import TABLE_COLUMNS

    for title, table, empty in (
        ("Per-leg deviation statistics", "legs", "no legs sailed"),
        ("Waypoint passages, planned and actual", "passages", "no waypoint passed"),
        ("Deviation episodes (outside the cross-track limit)", "episodes",
         "none: the track stayed inside every corridor"),
        ("Noon figures", "noon", "no ship's noon in the period"),
        ("Gaps in the fixes", "gaps", "no gaps"),
        ("Suspect fixes (left out of the statistics)", "suspects", "none"),
    ):
        sections.append((title, _table(review.rows(table), list(TABLE_COLUMNS[table]), empty)))
    title = f"Voyage review: {header.name or route.name}"
    return html_document(title, sections, provenance=provenance)
