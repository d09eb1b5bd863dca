"""Figures for reports as inline SVG, drawn with matplotlib (imported lazily: ~1 s).

* :func:`track_chart_svg`: the track against the plan on a Mercator (conformal) chart, the
  corridor of each leg drawn between its port and starboard cross-track limits, deviation
  episodes highlighted, time ticks along the track.
* :func:`xte_svg`: cross-track error over time with the limits drawn.
* :func:`speed_svg`: speed made good over time.
* :func:`range_view_svg`: azimuthal equidistant view centred on a waypoint with range rings
  (x = s sin(az), y = s cos(az) from the geodesic inverse: distances from the centre are true).

The corridor edges are exact: each edge point lies on the geodesic perpendicular to the leg at
its foot, at the limit's distance, so its XTE is the limit itself.
"""

from __future__ import annotations

import io
import math
from dataclasses import dataclass
from datetime import datetime, timezone
from typing import Sequence

import numpy as np

from passagelog.model import Route
from passagelog.nav.earth import WGS84, Earth, get_earth
from passagelog.nav.geodesic import direct_np, inverse_np
from passagelog.nav.legs import make_leg
from passagelog.nav.rhumb import isometric_lat
from passagelog.nav.units import NM_M

#: Neutral colours: plan, corridor, track, outside the corridor, ticks.
PLAN_COLOUR = "#2f4b7c"
CORRIDOR_COLOUR = "#9bb7d4"
TRACK_COLOUR = "#1a1a1a"
OUTSIDE_COLOUR = "#c0392b"


@dataclass(frozen=True)
class PlanGeometry:
    """Dense points of the plan's legs and their corridor edges (degrees)."""

    names: tuple[str, ...]
    wp_lats: np.ndarray
    wp_lons: np.ndarray
    paths: tuple[tuple[np.ndarray, np.ndarray], ...]
    corridors: tuple[tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray] | None, ...]


def plan_geometry(route: Route, earth: Earth | str = WGS84, points_per_leg: int = 64
                  ) -> PlanGeometry:
    """Points along each leg and, where limits are set, its corridor edges."""
    earth = get_earth(earth)
    wps = route.waypoints
    paths, corridors = [], []
    for k, plan in enumerate(route.legs):
        a, b = wps[k], wps[k + 1]
        leg = make_leg(a.lat, a.lon, b.lat, b.lon, plan.sailing, earth)
        s = np.linspace(0.0, leg.distance_m, points_per_leg)
        lats, lons = leg.points_at_np(s)
        lats, lons = np.asarray(lats), np.asarray(lons)
        paths.append((lats, lons))
        if plan.xtl_port_m is None and plan.xtl_stbd_m is None:
            corridors.append(None)
            continue
        # course along the leg at each point: the direction to a point 1 m further on
        ahead_lats, ahead_lons = (np.asarray(x) for x in leg.points_at_np(s + 1.0))
        _, course, _ = inverse_np(lats, lons, ahead_lats, ahead_lons, earth)
        port = plan.xtl_port_m or 0.0
        stbd = plan.xtl_stbd_m or 0.0
        plat, plon, _ = direct_np(lats, lons, course - 90.0, port, earth)
        slat, slon, _ = direct_np(lats, lons, course + 90.0, stbd, earth)
        corridors.append((plat, plon, slat, slon))
    return PlanGeometry(
        names=tuple(w.name for w in wps),
        wp_lats=np.array([w.lat for w in wps]),
        wp_lons=np.array([w.lon for w in wps]),
        paths=tuple(paths),
        corridors=tuple(corridors),
    )


def _pyplot():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    plt.rcParams.update({"svg.fonttype": "none", "font.size": 8,
                         "font.family": "DejaVu Sans"})
    return plt


def _svg(fig) -> str:
    buf = io.StringIO()
    fig.savefig(buf, format="svg", bbox_inches="tight", metadata={"Date": None})
    import matplotlib.pyplot as plt

    plt.close(fig)
    text = buf.getvalue()
    return text[text.index("<svg"):]


class _Mercator:
    """Longitude unwrapped about a central meridian; y = isometric latitude (degrees)."""

    def __init__(self, lon0: float, earth: Earth):
        self.lon0 = lon0
        self.earth = earth

    def x(self, lon) -> np.ndarray:
        return (np.asarray(lon, dtype=float) - self.lon0 + 180.0) % 360.0 - 180.0 + self.lon0

    def y(self, lat) -> np.ndarray:
        return np.degrees(isometric_lat(np.asarray(lat, dtype=float), self.earth))


def _lat_ticks(ax, merc: _Mercator, lat_min: float, lat_max: float, max_ticks: int = 8
               ) -> None:
    span = max(lat_max - lat_min, 1e-6)
    step = next((s for s in (1 / 60, 2 / 60, 5 / 60, 10 / 60, 0.25, 0.5, 1, 2, 5, 10, 20, 30)
                 if span / s <= max_ticks), 30)
    lats = np.arange(math.floor(lat_min / step) * step, lat_max + step, step)
    ax.set_yticks(merc.y(lats))
    ax.set_yticklabels([_lat_label(v) for v in lats])


def _lat_label(lat: float) -> str:
    d = int(abs(lat) + 1e-9)
    m = round((abs(lat) - d) * 60)
    return f"{d}°{m:02d}'{'N' if lat >= 0 else 'S'}"


def _lon_label(lon: float) -> str:
    lon = (lon + 180.0) % 360.0 - 180.0
    d = int(abs(lon) + 1e-9)
    m = round((abs(lon) - d) * 60)
    return f"{d}°{m:02d}'{'E' if lon >= 0 else 'W'}"


def track_chart_svg(geometry: PlanGeometry, track_lats: Sequence[float],
                    track_lons: Sequence[float], times_utc: Sequence[datetime] = (),
                    outside: Sequence[bool] = (), *, earth: Earth | str = WGS84,
                    tick_hours: float | None = None, title: str = "Track and plan") -> str:
    """The track against the plan on a Mercator chart (see the module docstring)."""
    earth = get_earth(earth)
    plt = _pyplot()
    merc = _Mercator(float(geometry.wp_lons[0]), earth)
    tlat = np.asarray(track_lats, dtype=float)
    tlon = np.asarray(track_lons, dtype=float)
    xs_all = merc.x(np.concatenate([geometry.wp_lons, tlon]))
    ys_all = merc.y(np.concatenate([geometry.wp_lats, tlat]))
    # The figure takes the shape of the area drawn (a conformal chart keeps its aspect).
    width_in = 7.5
    aspect = (np.ptp(ys_all) + 1e-9) / (np.ptp(xs_all) + 1e-9)
    height_in = float(np.clip(width_in * aspect, 2.6, 8.0))
    fig, ax = plt.subplots(figsize=(width_in, height_in))
    for corridor in geometry.corridors:
        if corridor is None:
            continue
        plat, plon, slat, slon = corridor
        xs = np.concatenate([merc.x(plon), merc.x(slon)[::-1]])
        ys = np.concatenate([merc.y(plat), merc.y(slat)[::-1]])
        ax.fill(xs, ys, color=CORRIDOR_COLOUR, alpha=0.45, lw=0, label="_corridor")
    for lats, lons in geometry.paths:
        ax.plot(merc.x(lons), merc.y(lats), color=PLAN_COLOUR, lw=1.2)
    ax.plot(merc.x(geometry.wp_lons), merc.y(geometry.wp_lats), "o", color=PLAN_COLOUR, ms=3.5)
    for name, lat, lon in zip(geometry.names, geometry.wp_lats, geometry.wp_lons):
        ax.annotate(name, (merc.x(lon), merc.y(lat)), fontsize=6.5, xytext=(3, 3),
                    textcoords="offset points", color=PLAN_COLOUR)
    if tlat.size:
        tx, ty = merc.x(tlon), merc.y(tlat)
        ax.plot(tx, ty, color=TRACK_COLOUR, lw=0.9, label="track")
        out = np.asarray(outside, dtype=bool) if len(outside) else np.zeros(tlat.size, bool)
        if out.any():
            ax.plot(np.where(out, tx, np.nan), np.where(out, ty, np.nan), color=OUTSIDE_COLOUR,
                    lw=2.2, label="outside the corridor")
        if len(times_utc):
            _time_ticks(ax, tx, ty, list(times_utc), tick_hours)
    all_lat = np.concatenate([geometry.wp_lats, tlat]) if tlat.size else geometry.wp_lats
    _lat_ticks(ax, merc, float(all_lat.min()), float(all_lat.max()),
               max_ticks=max(3, int(height_in * 1.6)))
    ax.set_aspect("equal", adjustable="box")
    pad_x = 0.06 * (np.ptp(xs_all) + 1e-3)
    pad_y = 0.06 * (np.ptp(ys_all) + 1e-3)
    ax.set_xlim(xs_all.min() - pad_x, xs_all.max() + pad_x)
    ax.set_ylim(ys_all.min() - pad_y, ys_all.max() + pad_y)
    xt = [v for v in ax.get_xticks() if ax.get_xlim()[0] <= v <= ax.get_xlim()[1]]
    ax.set_xticks(xt)
    ax.set_xticklabels([_lon_label(v) for v in xt])
    ax.grid(True, lw=0.3, color="#bbbbbb")
    ax.set_title(f"{title} (Mercator)")
    ax.legend(loc="best", fontsize=7)
    return _svg(fig)


def _time_ticks(ax, tx, ty, times: list[datetime], tick_hours: float | None) -> None:
    t0, t1 = times[0], times[-1]
    hours = max((t1 - t0).total_seconds() / 3600.0, 1e-9)
    step = tick_hours or next(h for h in (1, 2, 3, 6, 12, 24, 48) if hours / h <= 14)
    secs = np.array([(t - t0).total_seconds() for t in times])
    first = math.ceil(t0.timestamp() / (step * 3600)) * step * 3600
    for mark in np.arange(first, t1.timestamp() + 1, step * 3600):
        i = int(np.searchsorted(secs, mark - t0.timestamp()))
        if i >= len(times):
            break
        ax.plot(tx[i], ty[i], "|", color=TRACK_COLOUR, ms=6)
        label = datetime.fromtimestamp(mark, timezone.utc).strftime("%d/%H%MZ")
        ax.annotate(label, (tx[i], ty[i]), fontsize=5.5, xytext=(2, -8),
                    textcoords="offset points", color="#444444")


def xte_svg(times_utc: Sequence[datetime], xte_m: Sequence[float],
            port_limit_m: Sequence[float | None], stbd_limit_m: Sequence[float | None],
            *, title: str = "Cross-track error") -> str:
    """XTE (NM, + starboard) over time, with each fix's port and starboard limits."""
    plt = _pyplot()
    fig, ax = plt.subplots(figsize=(7.5, 2.6))
    x = np.asarray(xte_m, dtype=float) / NM_M
    port = np.array([np.nan if v is None else -v / NM_M for v in port_limit_m])
    stbd = np.array([np.nan if v is None else v / NM_M for v in stbd_limit_m])
    t = list(times_utc)
    ax.plot(t, stbd, drawstyle="steps-post", color=OUTSIDE_COLOUR, lw=0.9, label="limits")
    ax.plot(t, port, drawstyle="steps-post", color=OUTSIDE_COLOUR, lw=0.9)
    ax.plot(t, x, color=TRACK_COLOUR, lw=0.8, label="XTE")
    ax.axhline(0.0, color=PLAN_COLOUR, lw=0.6)
    ax.set_ylabel("NM (+ starboard, - port)")
    ax.grid(True, lw=0.3, color="#bbbbbb")
    ax.set_title(title)
    ax.legend(loc="upper right", fontsize=7)
    fig.autofmt_xdate()
    return _svg(fig)


def speed_svg(times_utc: Sequence[datetime], smg_kn: Sequence[float | None],
              planned_kn: Sequence[float | None] = (), *,
              title: str = "Speed made good") -> str:
    """Speed made good over time (knots), with the planned speed where given."""
    plt = _pyplot()
    fig, ax = plt.subplots(figsize=(7.5, 2.4))
    t = list(times_utc)
    ax.plot(t, [np.nan if v is None else v for v in smg_kn], color=TRACK_COLOUR, lw=0.8,
            label="SMG")
    if len(planned_kn):
        ax.plot(t, [np.nan if v is None else v for v in planned_kn], color=PLAN_COLOUR,
                lw=0.9, drawstyle="steps-post", label="planned")
    ax.set_ylabel("knots")
    ax.grid(True, lw=0.3, color="#bbbbbb")
    ax.set_title(title)
    ax.legend(loc="upper right", fontsize=7)
    fig.autofmt_xdate()
    return _svg(fig)


def range_view_svg(center_name: str, center_lat: float, center_lon: float,
                   geometry: PlanGeometry, track_lats: Sequence[float] = (),
                   track_lons: Sequence[float] = (), *, ring_step_nm: float | None = None,
                   max_range_nm: float | None = None, earth: Earth | str = WGS84) -> str:
    """Azimuthal equidistant view centred on a waypoint, with range rings (NM)."""
    earth = get_earth(earth)
    plt = _pyplot()

    def project(lats, lons):
        lats = np.asarray(lats, dtype=float)
        lons = np.asarray(lons, dtype=float)
        s, az, _ = inverse_np(np.full(lats.shape, center_lat), np.full(lats.shape, center_lon),
                              lats, lons, earth)
        r = s / NM_M
        return r * np.sin(np.radians(az)), r * np.cos(np.radians(az))

    fig, ax = plt.subplots(figsize=(5.5, 5.5))
    reach = 0.0
    for lats, lons in geometry.paths:
        x, y = project(lats, lons)
        reach = max(reach, float(np.hypot(x, y).max()))
        ax.plot(x, y, color=PLAN_COLOUR, lw=1.1)
    wx, wy = project(geometry.wp_lats, geometry.wp_lons)
    ax.plot(wx, wy, "o", color=PLAN_COLOUR, ms=3)
    for name, xv, yv in zip(geometry.names, wx, wy):
        ax.annotate(name, (xv, yv), fontsize=6.5, xytext=(3, 3), textcoords="offset points")
    if len(track_lats):
        x, y = project(track_lats, track_lons)
        ax.plot(x, y, color=TRACK_COLOUR, lw=0.8, label="track")
    limit = max_range_nm or reach or 10.0
    step = ring_step_nm or next(v for v in (0.5, 1, 2, 5, 10, 25, 50, 100, 250, 500, 1000)
                                if limit / v <= 6)
    theta = np.linspace(0, 2 * np.pi, 241)
    r = step
    while r <= limit * 1.0001:
        ax.plot(r * np.sin(theta), r * np.cos(theta), color="#999999", lw=0.5)
        ax.annotate(f"{r:g} NM", (0, r), fontsize=6, color="#666666", ha="center")
        r += step
    ax.plot([0], [0], "+", color=OUTSIDE_COLOUR, ms=9)
    ax.set_xlim(-limit * 1.05, limit * 1.05)
    ax.set_ylim(-limit * 1.05, limit * 1.05)
    ax.set_aspect("equal")
    ax.set_xlabel("NM east")
    ax.set_ylabel("NM north")
    ax.set_title(f"Range view from {center_name} (azimuthal equidistant)")
    return _svg(fig)
