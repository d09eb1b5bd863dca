"""What the Watch view shows: the latest fix against the plan, and the alerts it raises.

Plain logic over the reconciliation engine (:mod:`passagelog.review`), no Textual. To stay
quick with a logbook of a million fixes, the watch reconciles only the recent part of the
track in detail. A voyage of up to ``exact_max_fixes`` fixes is read whole: the engine
follows the whole track to find the active leg and the passages, and works out the per-fix
figures only over the last SMG window (``detail_from_utc``). A longer one reads only its
last ``tail_s`` from the logbook (by the time index: the cost follows the span, not the
voyage) and reconciles it against the plan from the leg its first fix is on. The Review
view reconciles the whole voyage in detail.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from datetime import datetime, timezone

import numpy as np

from passagelog.nav.units import NM_M
from passagelog.report.display import span_text  # noqa: F401 - also used by watch_view
from passagelog.review.status import SUSPECT_WHY

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
    tail_s: float = 3.5 * 3600.0               # the SMG window and half an hour


    @property
    def tail_span_s(self) -> float:
        """The span of recent fixes a long voyage's watch reconciles: ``tail_s``, and never
        less than the SMG window and a minute (the window's figures need all of it)."""
        return max(self.tail_s, self.window_s + 60.0)


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
    zd_minutes: int = 0              # ship's zone at the latest fix (clock changes counted)
    note: str = ""
    extra: dict = field(default_factory=dict)


NO_PLAN = "This voyage has no plan yet: make one in Plan (F2, then Ins)."
NO_FIXES = ("No fixes yet: log one in Log (F3), or start 'passagelog feed' to log them "
            "from the GNSS.")


def read_watch(session, settings: WatchSettings = WatchSettings()) -> WatchState:
    """The watch of the session's voyage, read from its logbook.

    A long voyage (more than ``settings.exact_max_fixes`` fix records) reads only the fixes
    of the last ``tail_s``
    (see :func:`compute_watch`), so the watch costs the same on a voyage of a million fixes
    as on one of ten thousand; a shorter one reads all its fixes."""
    session.reload_route()
    route = session.route
    if route is None:
        return WatchState(None, note=NO_PLAN)
    voyage = session.voyage
    revisions = [(t, r) for t, r in session.plan_revisions] or None
    entries = session.entries()
    common = dict(zd_minutes=session.zd_minutes, entries=entries, settings=settings,
                  plan_revisions=revisions, planned_departure_utc=voyage.departure_utc)
    total = session.fix_record_count()
    if total > settings.exact_max_fixes:
        tail = session.recent_fixes(settings.tail_span_s)
        if tail:
            first = session.first_fix_time()
            return compute_watch(route, tail, fixes_total=total,
                                 first_fix_s=None if first is None else first.timestamp(),
                                 **common)
    return compute_watch(route, session.fix_arrays(), **common)


def compute_watch(route, fixes, *, zd_minutes: int = 0, entries=(),
                  settings: WatchSettings = WatchSettings(), plan_revisions=None,
                  departure_utc: datetime | None = None,
                  planned_departure_utc: datetime | None = None,
                  fixes_total: int | None = None,
                  first_fix_s: float | None = None) -> WatchState:
    """Reconcile the recent fixes (``fixes``: FixArrays or Fix objects) with ``route``.

    ``fixes`` is normally the whole track. With ``fixes_total`` (the number of fixes of the
    whole voyage, more than ``fixes`` holds) it is only the recent part of it, at least the
    last ``settings.tail_s``; ``first_fix_s`` is then the time of the voyage's first fix
    (the actual departure where no departure entry says otherwise)."""
    from passagelog.review.engine import reconcile
    from passagelog.review.inputs import as_fix_arrays, clocks_from
    from passagelog.review.status import status_of

    if route is None:
        return WatchState(None, note=NO_PLAN)
    arrays = _review_arrays(fixes, as_fix_arrays)
    held = len(arrays)
    total = held if fixes_total is None else max(int(fixes_total), held)
    if held == 0:
        return WatchState(None, note=NO_FIXES)
    t = arrays.time_s
    last_s = float(np.nanmax(t))
    revisions = list(plan_revisions) if plan_revisions else [(None, route)]
    tail_start = last_s - settings.tail_span_s
    in_force = [r for r in revisions if r[0] is None or _secs(r[0]) <= tail_start]
    later = [r for r in revisions if r[0] is not None and _secs(r[0]) > tail_start]
    k0 = 0
    partial = total > held
    if partial or total > settings.exact_max_fixes:
        # A long voyage: reconcile only the last ``tail_s`` of fixes, against the plan in
        # force at the first of them from the leg that fix is on (the engine then finds
        # the passages from there, and enters any revision put in force since, as it does
        # on the whole track). Exact for any track that does not come back over an earlier
        # leg of the plan.
        sel = np.flatnonzero(t >= tail_start)
        tail = arrays if sel.size == held else arrays.take(sel)
        plan = in_force[-1][1]
        k0 = _leg_at(plan, float(tail.lat[0]), float(tail.lon[0]))
        if planned_departure_utc is not None:
            dep_s = planned_departure_utc.timestamp()
        else:
            first_s = first_fix_s if partial and first_fix_s is not None else float(t[0])
            dep_s = _departure_s(entries, first_s)
        schedule = _scheduled_times(plan, dep_s)
        sub = plan.with_changes(waypoints=plan.waypoints[k0:], legs=plan.legs[k0:],
                                schedule=())
        schedules = {0: None if schedule is None else schedule[k0:]}
        for i, (_start, later_route) in enumerate(later, start=1):
            schedules[i] = _scheduled_times(later_route, dep_s)
        review = reconcile([(None, sub)] + later if later else sub, tail,
                           zd_minutes=zd_minutes, entries=entries,
                           window_s=settings.window_s,
                           schedule=schedules if later else schedules[0],
                           departure_utc=float(tail.time_s[0]),
                           detail_from_utc=last_s - settings.window_s - 60.0)
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
    zd_now = clocks_from(zd_minutes, entries).zd_at(status.time_s)
    return WatchState(status, fixes_used=len(review.fixes), fixes_total=total,
                      last_passage=passage, xtl_port_m=leg.xtl_port_m,
                      xtl_stbd_m=leg.xtl_stbd_m, zd_minutes=zd_now,
                      extra={"arrival_radius_m":
                             rroute.waypoints[status.leg - shift].arrival_radius_m,
                             "sailing": leg.sailing, "tail_from_leg": k0 + 1 if k0 else None})


def _secs(t) -> float:
    return t.timestamp() if isinstance(t, datetime) else float(t)


def _review_arrays(fixes, as_fix_arrays):
    """The engine's columns of ``fixes``; a logbook's arrays are taken as they are."""
    from passagelog.review.inputs import FixArrays

    if isinstance(fixes, FixArrays) or isinstance(fixes, (list, tuple)):
        return as_fix_arrays(fixes)
    names = ("time_s", "lat", "lon", "heading", "stw_kn", "sog_kn", "cog", "suspect", "fix_id")
    if all(hasattr(fixes, n) for n in names):
        def column(name: str) -> np.ndarray:
            view = np.asarray(getattr(fixes, name)).view()  # read-only, not copied
            view.setflags(write=False)
            return view

        return FixArrays(*(column(n) for n in names))
    return as_fix_arrays(fixes)


def _leg_lengths(route) -> np.ndarray:
    """Length of each leg of ``route`` in metres by its sailing (batch geodesic and rhumb
    inverse problems: the lengths :func:`passagelog.nav.legs.make_leg` gives)."""
    from passagelog.nav.geodesic import inverse_np
    from passagelog.nav.rhumb import rhumb_inverse_np

    wps = route.waypoints
    lat = np.array([w.lat for w in wps])
    lon = np.array([w.lon for w in wps])
    gc = np.array([p.sailing == "great-circle" for p in route.legs], dtype=bool)
    out = np.empty(len(route.legs))
    for mask, solve in ((gc, inverse_np), (~gc, rhumb_inverse_np)):
        if mask.any():
            idx = np.flatnonzero(mask)
            out[idx] = solve(lat[idx], lon[idx], lat[idx + 1], lon[idx + 1])[0]
    return out


def _leg_at(route, lat: float, lon: float) -> int:
    """Index of the leg a position is on: the leg whose line passes nearest to it among
    those it is alongside (along-track within the leg, 1 NM either side), else the leg
    ending at the nearest waypoint. Offsets from :mod:`passagelog.nav.legs`.

    Only the legs that could be nearest are solved: for a leg AB of length L and a position
    P alongside it, whose foot F is at most 1 NM past an end, the triangle inequality gives
    |PA| + |PB| <= 2 |PF| + L + 2 NM, so |XTE| = |PF| is at least (|PA| + |PB| - L)/2 - 1 NM;
    legs are tried from the smallest such bound and the search stops when the bound passes
    the best |XTE| found."""
    from passagelog.errors import GeometryError
    from passagelog.nav.geodesic import inverse_np
    from passagelog.nav.legs import make_leg

    wps = route.waypoints
    d = inverse_np(lat, lon, np.array([w.lat for w in wps]), np.array([w.lon for w in wps]))[0]
    lengths = _leg_lengths(route)
    bound = (d[:-1] + d[1:] - lengths) / 2.0 - NM_M - (1.0 + 1e-9 * lengths)
    best, best_xte = None, math.inf
    for k in np.argsort(bound, kind="stable"):
        k = int(k)
        if bound[k] > best_xte:
            break
        plan = route.legs[k]
        a, b = wps[k], wps[k + 1]
        leg = make_leg(a.lat, a.lon, b.lat, b.lon, plan.sailing)
        try:
            xte, along = leg.offset(lat, lon)
        except GeometryError:  # no foot on this leg's line from so far off: not alongside
            continue
        if -NM_M <= along <= leg.distance_m + NM_M and (
                abs(xte) < best_xte or (abs(xte) == best_xte and k < best)):
            best, best_xte = k, abs(xte)
    if best is not None:
        return best
    return int(np.argmin(d[1:]))


def _departure_s(entries, first_fix_s: float) -> float:
    times = [e.time_utc.timestamp() for e in entries if e.kind == "departure"]
    return min(times) if times else first_fix_s


def _scheduled_times(route, departure_s: float) -> list | None:
    """Planned time at each waypoint: the route's own schedule (an ``(ETA, ETD)`` pair per
    waypoint, as the engine takes it), else the departure plus the planned leg times (None
    when a leg has no planned speed)."""
    if route.schedule:
        return list(route.planned_times())
    from passagelog.nav.units import travel_seconds

    if not all(plan.speed_kn for plan in route.legs):
        return None
    t = departure_s
    out = [datetime.fromtimestamp(t, timezone.utc)]
    for plan, length in zip(route.legs, _leg_lengths(route)):
        t += travel_seconds(float(length), plan.speed_kn)
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
        out.append(Alert("no-fix", f"NO FIX for {span_text(age)} (limit {span_text(settings.no_fix_s)})",
                         "warning"))
    if s.phase == "arrived":
        out.append(Alert("arrived", f"Arrived at {s.destination}.", "information"))
        return tuple(out)
    if s.suspect:
        why = SUSPECT_WHY.get(s.suspect_reason or "", "marked suspect")
        out.append(Alert("suspect", f"Latest fix is SUSPECT ({why}): check it.", "warning"))
    if not s.inside_xtl and s.xtl_m is not None and np.isfinite(s.xte_m):
        side = "starboard" if s.side == "R" else "port"
        out.append(Alert("off-track", f"OFF TRACK: XTE {abs(s.xte_m) / NM_M:.2f} NM {side}, "
                                      f"limit {s.xtl_m / NM_M:.2f} NM", "warning"))
    ttw = None
    if s.smg_window_kn and s.smg_window_kn > 0 and np.isfinite(s.dtw_m):
        ttw = s.dtw_m / (s.smg_window_kn * NM_M / 3600.0)
    radius = state.extra.get("arrival_radius_m") or 0.0
    if s.dtw_m <= max(settings.approach_m, radius) or (ttw is not None
                                                       and ttw <= settings.approach_s):
        eta = f", about {span_text(ttw)} to go" if ttw is not None else ""
        out.append(Alert("approaching", f"Approaching WP{s.leg + 1} {s.to_wp}: "
                                        f"{s.dtw_m / NM_M:.2f} NM{eta}", "information"))
    p = state.last_passage
    if p is not None and s.time_s - p.time_s <= settings.passed_s:
        from passagelog.tui.text import utc_time

        when = utc_time(datetime.fromtimestamp(p.time_s, timezone.utc), date=False)
        how = "arrival circle" if p.how == "arrival-circle" else "bisector"
        skipped = ", SKIPPED (passed wide)" if p.skipped else ""
        out.append(Alert("passed", f"Passed WP{p.waypoint} {p.name} at {when} ({how}){skipped}",
                         "warning" if p.skipped else "information"))
    if s.delay_s is not None and s.delay_s > settings.behind_s:
        out.append(Alert("behind", f"BEHIND SCHEDULE by {span_text(s.delay_s)}", "warning"))
    return tuple(out)


