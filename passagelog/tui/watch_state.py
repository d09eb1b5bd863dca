"""What the Watch view shows: the latest fix against the plan, and the alerts it raises.

Plain logic over the reconciliation engine (:mod:`passagelog.review`), no Textual. To stay
quick with a logbook of a million fixes, the watch reconciles only the recent part of the
track in detail: the engine follows the whole track to find the active leg and the
passages, and works out the per-fix figures only over the last SMG window
(``detail_from_utc``); the Review view reconciles the whole voyage in detail.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from datetime import datetime, timezone

import numpy as np

from passagelog.nav.units import NM_M

#: Alert thresholds (common practice; each one is a setting of :class:`WatchSettings`).
DEFAULT_APPROACH_M = 1.0 * NM_M
DEFAULT_APPROACH_S = 6 * 60.0
DEFAULT_PASSED_S = 10 * 60.0
DEFAULT_NO_FIX_S = 20 * 60.0
DEFAULT_BEHIND_S = 15 * 60.0


@dataclass(frozen=True)
class WatchSettings:
    approach_m: float = DEFAULT_APPROACH_M     # approaching: this close to the next waypoint
    approach_s: float = DEFAULT_APPROACH_S     # ... or this soon at the speed made good
    passed_s: float = DEFAULT_PASSED_S         # a passage this recent is announced
    no_fix_s: float = DEFAULT_NO_FIX_S         # no fix for longer than this
    behind_s: float = DEFAULT_BEHIND_S         # behind the plan's schedule by more than this
    window_s: float = 3 * 3600.0               # SMG window of the ETA by recent progress
    exact_max_fixes: int = 100_000             # above this, reconcile only the last tail_s
    tail_s: float = 6 * 3600.0                 # twice the SMG window


@dataclass(frozen=True)
class Alert:
    kind: str      # off-track, approaching, passed, no-fix, behind, suspect
    text: str
    severity: str  # "warning" or "information"


@dataclass(frozen=True)
class WatchState:
    status: object | None            # passagelog.review.status.Status of the latest fix
    alerts: tuple[Alert, ...] = ()
    fixes_used: int = 0
    fixes_total: int = 0
    last_passage: object | None = None
    xtl_port_m: float | None = None
    xtl_stbd_m: float | None = None
    note: str = ""
    extra: dict = field(default_factory=dict)


def compute_watch(route, fixes, *, zd_minutes: int = 0, entries=(),
                  settings: WatchSettings = WatchSettings(), plan_revisions=None,
                  departure_utc: datetime | None = None,
                  planned_departure_utc: datetime | None = None) -> WatchState:
    """Reconcile the recent fixes (``fixes``: FixArrays or Fix objects) with ``route``."""
    from passagelog.review.engine import reconcile
    from passagelog.review.inputs import as_fix_arrays
    from passagelog.review.status import status_of

    if route is None:
        return WatchState(None, note="This voyage has no plan yet: make one in Plan (F2).")
    arrays = as_fix_arrays(fixes)
    total = len(arrays)
    if total == 0:
        return WatchState(None, note="No fixes yet: log one in Log (F3), or start "
                                     "'passagelog feed' to log them from the GNSS.")
    t = arrays.time_s
    last_s = float(np.nanmax(t))
    revisions = list(plan_revisions) if plan_revisions else [(None, route)]
    tail_start = last_s - settings.tail_s
    in_force = [r for r in revisions if r[0] is None or _secs(r[0]) <= tail_start]
    later = [r for r in revisions if r[0] is not None and _secs(r[0]) > tail_start]
    k0 = 0
    if total > settings.exact_max_fixes and not later:
        # A long voyage: reconcile only the last ``tail_s`` of fixes, against the plan from
        # the leg the first of them is on (the engine then finds the passages from there).
        # Exact for any track that does not come back over an earlier leg of the plan.
        sel = np.flatnonzero(t >= tail_start)
        tail = arrays.take(sel)
        plan = in_force[-1][1]
        k0 = _leg_at(plan, float(tail.lat[0]), float(tail.lon[0]))
        schedule = _scheduled_times(plan, planned_departure_utc.timestamp()
                                    if planned_departure_utc is not None
                                    else _departure_s(arrays, entries))
        sub = plan.with_changes(waypoints=plan.waypoints[k0:], legs=plan.legs[k0:],
                                schedule=())
        review = reconcile(sub, tail, zd_minutes=zd_minutes, entries=entries,
                           window_s=settings.window_s,
                           schedule=None if schedule is None else schedule[k0:],
                           departure_utc=float(tail.time_s[0]))
    else:
        # The whole track decides the active leg (waypoint passages); the per-fix figures
        # are worked out only over the last SMG window, which keeps it quick.
        review = reconcile(revisions if plan_revisions else route, arrays,
                           zd_minutes=zd_minutes, entries=entries,
                           window_s=settings.window_s, departure_utc=departure_utc,
                           planned_departure_utc=planned_departure_utc,
                           detail_from_utc=last_s - settings.window_s - 60.0)
    if len(review.fixes) == 0:
        return WatchState(None, fixes_total=total, note="No valid fix to show.")
    status = status_of(review, -1)
    if k0 and status.revision == 0:
        from dataclasses import replace

        status = replace(status, leg=status.leg + k0, legs=status.legs + k0)
    rroute = review.routes[status.revision]
    shift = k0 if status.revision == 0 else 0
    leg = rroute.legs[status.leg - 1 - shift]
    passage = None
    for p in reversed(review.passages):
        if p.revision == status.revision:
            from dataclasses import replace

            passage = replace(p, waypoint=p.waypoint + shift) if shift else p
            break
    return WatchState(status, fixes_used=len(review.fixes), fixes_total=total,
                      last_passage=passage, xtl_port_m=leg.xtl_port_m,
                      xtl_stbd_m=leg.xtl_stbd_m,
                      extra={"arrival_radius_m":
                             rroute.waypoints[status.leg - shift].arrival_radius_m,
                             "sailing": leg.sailing, "tail_from_leg": k0 + 1 if k0 else None})


def _secs(t) -> float:
    return t.timestamp() if isinstance(t, datetime) else float(t)


def _leg_at(route, lat: float, lon: float) -> int:
    """Index of the leg a position is on: the leg whose line passes nearest to it among
    those it is alongside (along-track within the leg), else the leg ending at the nearest
    waypoint. Offsets from :mod:`passagelog.nav.legs`."""
    from passagelog.nav.geodesic import inverse
    from passagelog.nav.legs import make_leg

    best, best_xte = None, math.inf
    for k, plan in enumerate(route.legs):
        a, b = route.waypoints[k], route.waypoints[k + 1]
        leg = make_leg(a.lat, a.lon, b.lat, b.lon, plan.sailing)
        xte, along = leg.offset(lat, lon)
        if -NM_M <= along <= leg.distance_m + NM_M and abs(xte) < best_xte:
            best, best_xte = k, abs(xte)
    if best is not None:
        return best
    dists = [inverse(lat, lon, w.lat, w.lon)[0] for w in route.waypoints[1:]]
    return int(np.argmin(dists))


def _departure_s(arrays, entries) -> float:
    times = [e.time_utc.timestamp() for e in entries if e.kind == "departure"]
    return min(times) if times else float(arrays.time_s[0])


def _scheduled_times(route, departure_s: float) -> list | None:
    """Planned time at each waypoint: the route's own schedule, else the departure plus the
    planned leg times (None when a leg has no planned speed)."""
    if route.schedule:
        out: list = [None] * len(route.waypoints)
        for item in route.schedule:
            t = item.etd_utc if (item.waypoint_index == 0 and item.etd_utc) else (
                item.eta_utc or item.etd_utc)
            out[item.waypoint_index] = t
        return out
    from passagelog.nav.legs import make_leg
    from passagelog.nav.units import travel_seconds

    t = departure_s
    out = [datetime.fromtimestamp(t, timezone.utc)]
    for k, plan in enumerate(route.legs):
        if not plan.speed_kn:
            return None
        a, b = route.waypoints[k], route.waypoints[k + 1]
        t += travel_seconds(make_leg(a.lat, a.lon, b.lat, b.lon, plan.sailing).distance_m,
                            plan.speed_kn)
        out.append(datetime.fromtimestamp(t, timezone.utc))
    return out


def alerts_for(state: WatchState, now_s: float,
               settings: WatchSettings = WatchSettings()) -> tuple[Alert, ...]:
    """The alerts at time ``now_s`` (float seconds UTC): recomputed on every clock tick, so
    'no fix for too long' appears without a new fix."""
    s = state.status
    if s is None:
        return ()
    out: list[Alert] = []
    age = now_s - s.time_s
    if age > settings.no_fix_s:
        out.append(Alert("no-fix", f"NO FIX for {_hm(age)} (limit {_hm(settings.no_fix_s)})",
                         "warning"))
    if s.phase == "arrived":
        out.append(Alert("arrived", f"Arrived at {s.destination}.", "information"))
        return tuple(out)
    if s.suspect:
        out.append(Alert("suspect", "Latest fix is SUSPECT (implausible speed): check it.",
                         "warning"))
    if not s.inside_xtl and s.xtl_m is not None:
        side = "starboard" if s.side == "R" else "port"
        out.append(Alert("off-track", f"OFF TRACK: XTE {abs(s.xte_m) / NM_M:.2f} NM {side}, "
                                      f"limit {s.xtl_m / NM_M:.2f} NM", "warning"))
    ttw = None
    if s.smg_window_kn and s.smg_window_kn > 0 and np.isfinite(s.dtw_m):
        ttw = s.dtw_m / (s.smg_window_kn * NM_M / 3600.0)
    radius = state.extra.get("arrival_radius_m") or 0.0
    if s.dtw_m <= max(settings.approach_m, radius) or (ttw is not None
                                                       and ttw <= settings.approach_s):
        eta = f", about {_hm(ttw)} to go" if ttw is not None else ""
        out.append(Alert("approaching", f"Approaching WP{s.leg + 1} {s.to_wp}: "
                                        f"{s.dtw_m / NM_M:.2f} NM{eta}", "information"))
    p = state.last_passage
    if p is not None and s.time_s - p.time_s <= settings.passed_s:
        from datetime import timezone

        when = datetime.fromtimestamp(p.time_s, timezone.utc).strftime("%H%MZ")
        how = "arrival circle" if p.how == "arrival-circle" else "bisector"
        skipped = ", SKIPPED (passed wide)" if p.skipped else ""
        out.append(Alert("passed", f"Passed WP{p.waypoint} {p.name} at {when} ({how}){skipped}",
                         "warning" if p.skipped else "information"))
    if s.delay_s is not None and s.delay_s > settings.behind_s:
        out.append(Alert("behind", f"BEHIND SCHEDULE by {_hm(s.delay_s)}", "warning"))
    return tuple(out)


def _hm(seconds: float) -> str:
    minutes = int(round(seconds / 60.0))
    d, minutes = divmod(minutes, 1440)
    h, m = divmod(minutes, 60)
    if d:
        return f"{d}d {h}h{m:02d}"
    return f"{h}h{m:02d}" if h else f"{m} min"
