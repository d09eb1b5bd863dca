"""The reconciliation engine: every fix against the plan in force, and the voyage's tables.

How the active leg is found (a sequential state machine, run in vectorised chunks)
----------------------------------------------------------------------------------------
The craft starts on leg 1 of the plan revision in force. The active leg k (from waypoint k to
waypoint k+1) advances when waypoint k+1 is *passed*: at the first fix that either lies inside
the waypoint's arrival circle (``Waypoint.arrival_radius_m``, or the review's default) or lies
beyond the *bisector of the course alteration* at the waypoint, whichever comes first.

The bisector is the geodesic through the waypoint whose azimuth there halves the angle between
the reversed incoming course (the leg's final course) and the outgoing course (the next leg's
initial course). With ``a2`` the azimuth at the waypoint of the geodesic from the fix to the
waypoint, the fix lies beyond the bisector when ``cos(a2 - c_in) + cos(a2 - c_out) <= 0``
(the unit vector from the waypoint to the fix has a non-negative component along
``u_in + u_out``, the bisector's normal). At the last waypoint, and where the legs fold back
on each other (alteration over :data:`HAIRPIN_DEG`), the perpendicular to the incoming leg is
used: ``cos(a2 - c_in) <= 0``. So each fix costs one geodesic inverse (fix -> next waypoint),
which also gives the distance and bearing to the waypoint that every fix reports.

Fixes are taken a chunk at a time against the active waypoint; numpy finds the first passing
fix in the chunk; the engine advances and goes on from that fix, which is tested at once
against the following waypoint (so several waypoints may be passed at one fix, e.g. after a
gap). The chunk length follows the progress toward the waypoint, so each fix is examined
against O(1) waypoints.

What the rules give in the awkward cases:

* a skipped waypoint: the craft heads for a later one and crosses the skipped waypoint's
  bisector on the way; the passage is recorded and marked ``skipped`` because the craft was
  farther from the waypoint than the skip distance;
* loitering or drifting at anchor short of a waypoint: no passage until the circle is
  entered or the bisector crossed; fixes keep their leg and their XTE, along-track and
  distances to go;
* turning back: the active leg never goes back by itself; along-track decreases (it may go
  negative before the leg's start) and the distances to go grow;
* fixes before the departure time are reported against leg 1 but never pass a waypoint and
  stay out of the statistics; so do fixes after the arrival (the passage of the last waypoint
  or the arrival time given);
* a plan revision in force from a time: the new route is taken from that time. If the last
  waypoint passed (or the start) is also a waypoint of the new route (same position within
  :data:`SAME_WAYPOINT_M`, the same name preferred), the craft goes on from there; otherwise
  the new route is entered at leg 1 and, at the first fix under the new revision, advanced
  silently over every waypoint that fix has already passed;
* suspect fixes never pass a waypoint and are left out of the statistics unless asked.

Cross-track and along-track come from :mod:`passagelog.nav.legs` (foot of the shortest geodesic
on the leg's line extended past its ends); the per-fix figures are computed once the leg
assignment is known, leg by leg, in batch.
"""

from __future__ import annotations

import math
from datetime import datetime
from typing import Any, Iterable, Mapping, Sequence

import numpy as np

from passagelog.errors import InputError, PassagelogError
from passagelog.model import LogEntry, Route
from passagelog.nav.earth import WGS84, Earth, get_earth
from passagelog.nav.geodesic import (
    SPHERE_AZIMUTH_TOL_DEG,
    SPHERE_SCREEN_MAX_M,
    inverse,
    inverse_np,
    sphere_np,
)
from passagelog.nav.units import KN_MPS
from passagelog.review.inputs import (
    PlanRevision,
    as_fix_arrays,
    as_revisions,
    clocks_from,
    to_seconds,
)
from passagelog.review.results import (
    ARRIVED,
    BEFORE_DEPARTURE,
    DEFERRED_GROUPS,
    MIN_PROGRESS_KN,
    UNDER_WAY,
    DeferredColumns,
    Episode,
    FixResults,
    Gap,
    LegStats,
    Passage,
    Review,
    Settings,
    SuspectFix,
)

#: Default window for the speed made good behind the ETA "by recent progress", seconds.
DEFAULT_WINDOW_S = 3 * 3600.0
#: Default threshold for a gap between fixes (position source lost), seconds.
DEFAULT_GAP_S = 3600.0
#: Course alterations larger than this are treated as folding back: the perpendicular to the
#: incoming leg replaces the bisector, degrees.
HAIRPIN_DEG = 175.0
#: Two waypoints of different revisions closer than this are the same waypoint, metres.
SAME_WAYPOINT_M = 1.0
#: A waypoint passed farther off than this (when no limits say otherwise) counts as skipped.
DEFAULT_SKIP_M = 1852.0
#: Chunk lengths of the state machine (fixes).
CHUNK_MIN, CHUNK_START, CHUNK_MAX = 64, 1024, 131072
#: A batch of inverse problems at least this long is split over two threads.
SPLIT_MIN = 50000


class _NoFoot(Exception):
    """Internal: these fixes have no cross-track foot on the leg they fell on."""

    def __init__(self, fixes: np.ndarray) -> None:
        super().__init__(f"{fixes.size} fix(es) with no cross-track foot")
        self.fixes = fixes


def _make_leg(lat1, lon1, lat2, lon2, sailing, earth):
    from passagelog.nav.legs import make_leg

    return make_leg(lat1, lon1, lat2, lon2, sailing, earth=earth)


def _signed(a: np.ndarray | float):
    return (np.asarray(a) + 180.0) % 360.0 - 180.0


class _RoutePlan:
    """One revision's route with its legs built and the constants the engine needs."""

    def __init__(self, rev: PlanRevision, earth: Earth, default_radius_m: float | None,
                 default_speed_kn: float | None, skip_m: float | None):
        route = rev.route
        self.rev = rev
        self.route = route
        wps = route.waypoints
        self.n_legs = len(route.legs)
        self.legs = []
        for k, plan in enumerate(route.legs):
            a, b = wps[k], wps[k + 1]
            try:
                self.legs.append(_make_leg(a.lat, a.lon, b.lat, b.lon, plan.sailing, earth))
            except PassagelogError as exc:  # e.g. GeometryError: a zero-length leg
                raise type(exc)(f"route {route.name!r} leg {k + 1} ({a.name} -> {b.name}): "
                                f"{exc}") from None
        self.length = np.array([leg.distance_m for leg in self.legs])
        self.cum_start = np.concatenate([[0.0], np.cumsum(self.length)[:-1]])
        self.total = float(self.length.sum())
        self.wp_cum = np.concatenate([[0.0], np.cumsum(self.length)])
        speeds = [p.speed_kn if p.speed_kn else default_speed_kn for p in route.legs]
        self.speed_kn = np.array([np.nan if v is None else float(v) for v in speeds])
        leg_time = self.length / (self.speed_kn * KN_MPS)
        # time by plan from the end of leg k to the destination
        self.time_after = np.concatenate([np.cumsum(leg_time[::-1])[::-1][1:], [0.0]])
        self.leg_time = leg_time
        self.port = np.array([np.inf if p.xtl_port_m is None else p.xtl_port_m
                              for p in route.legs])
        self.stbd = np.array([np.inf if p.xtl_stbd_m is None else p.xtl_stbd_m
                              for p in route.legs])
        self.radius = np.array([
            (w.arrival_radius_m if w.arrival_radius_m is not None else (default_radius_m or 0.0))
            for w in wps
        ])
        # bisector constants at the end of each leg
        self.c_in = np.array([leg.final_course for leg in self.legs])
        c_out = [self.legs[k + 1].initial_course if k + 1 < self.n_legs else math.nan
                 for k in range(self.n_legs)]
        self.c_out = np.array(c_out)
        alter = np.abs(_signed(self.c_out - self.c_in))
        self.perpendicular = ~(alter <= HAIRPIN_DEG)  # NaN (last waypoint) -> True
        # skip distance at each waypoint: the largest limit of the legs meeting there
        self.skip = np.full(len(wps), DEFAULT_SKIP_M if skip_m is None else skip_m)
        if skip_m is None:
            for w in range(len(wps)):
                lims = []
                for k in (w - 1, w):
                    if 0 <= k < self.n_legs:
                        p = route.legs[k]
                        lims += [x for x in (p.xtl_port_m, p.xtl_stbd_m) if x is not None]
                lims.append(self.radius[w])
                cand = max(lims) if lims else 0.0
                if cand > 0.0:
                    self.skip[w] = cand
        self.wp_lat = np.array([w.lat for w in wps])
        self.wp_lon = np.array([w.lon for w in wps])
        self.names = tuple(w.name for w in wps)
        self.e2 = earth.e2

    def may_have_passed_np(self, k: int, a_sigma: np.ndarray, azi2: np.ndarray) -> np.ndarray:
        """The cheap screen before :meth:`passed_np`: False only for fixes that surely have
        not passed waypoint k+1, from the spherical figures of
        :func:`~passagelog.nav.geodesic.sphere_np` (``a_sigma``, ``azi2``) and their bounds:
        the geodesic is at least (1 - e^2) a_sigma long, and its azimuth within
        SPHERE_AZIMUTH_TOL_DEG (the bisector test's function changes by at most 1, or 2 on
        the bisector, per radian of azimuth)."""
        wp = k + 1
        if abs(self.wp_lat[wp]) > 89.0:  # azimuths near the pole: no screen
            return np.ones(a_sigma.shape, bool)
        low = (1.0 - self.e2) * a_sigma
        far = (low > max(self.radius[wp], 1e-3) + 1.0) & (a_sigma < SPHERE_SCREEN_MAX_M)
        a = np.radians(azi2)
        tol = math.radians(SPHERE_AZIMUTH_TOL_DEG)
        if self.perpendicular[k]:
            ahead = np.cos(a - math.radians(self.c_in[k])) > tol
        else:
            ahead = (np.cos(a - math.radians(self.c_in[k]))
                     + np.cos(a - math.radians(self.c_out[k]))) > 2.0 * tol
        return ~(far & ahead)

    def passed_np(self, k: int, s: np.ndarray, azi2: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """Which fixes, at distance ``s`` and arriving azimuth ``azi2`` from waypoint k+1,
        have passed it: (passed, by_circle)."""
        r = self.radius[k + 1]
        circle = s <= r if r > 0.0 else np.zeros(s.shape, bool)
        a = np.radians(azi2)
        cin = math.radians(self.c_in[k])
        if self.perpendicular[k]:
            beyond = np.cos(a - cin) <= 0.0
        else:
            beyond = np.cos(a - cin) + np.cos(a - math.radians(self.c_out[k])) <= 0.0
        beyond |= s < 1e-3
        return circle | beyond, circle


def _schedule_times(rp: _RoutePlan, departure_s: float | None,
                    given: Sequence[Any] | None) -> tuple[np.ndarray, np.ndarray]:
    """Scheduled ``(arrival, departure)`` times at each waypoint (NaN where none; the two
    differ only at a stay): a given list (a time or an ``(ETA, ETD)`` pair per waypoint),
    else the route's own schedule (:meth:`~passagelog.model.Route.planned_times`), else the
    departure plus the planned leg times."""
    n = len(rp.route.waypoints)
    arrive = np.full(n, np.nan)
    depart = np.full(n, np.nan)

    def put(i: int, eta, etd) -> None:
        what = f"schedule time at waypoint {i + 1}"
        a = to_seconds(eta, what) if eta is not None else None
        d = to_seconds(etd, what) if etd is not None else None
        if i == 0:  # the departure point: its ETD is the time that counts
            a = d if d is not None else a
        if a is None:
            a = d
        if d is None or (a is not None and d < a):
            d = a
        if a is not None:
            arrive[i], depart[i] = a, d

    if given is not None:
        if len(given) != n:
            raise InputError(f"schedule for route {rp.route.name!r} has {len(given)} times; "
                             f"the route has {n} waypoints")
        for i, item in enumerate(given):
            eta, etd = item if isinstance(item, (tuple, list)) else (item, None)
            put(i, eta, etd)
    elif rp.route.schedule:
        for i, (eta, etd) in enumerate(rp.route.planned_times()):
            put(i, eta, etd)
    elif departure_s is not None and np.all(np.isfinite(rp.leg_time)):
        arrive = departure_s + np.concatenate([[0.0], np.cumsum(rp.leg_time)])
        depart = arrive.copy()
    if departure_s is not None and not np.isfinite(arrive[0]) and np.isfinite(arrive).any():
        arrive[0] = depart[0] = departure_s
    return arrive, depart


def _delays(rp: _RoutePlan, arrive: np.ndarray, depart: np.ndarray, done: np.ndarray,
            t: np.ndarray) -> np.ndarray:
    """Delay (s, + behind) of fixes at ``t``, ``done`` metres along the route: the time minus
    the schedule's time at the same distance, the schedule running from each waypoint's ETD
    on. Near a stay's waypoint (within its skip distance) a fix between the ETA and the ETD
    is on time, one before the ETA early and one after the ETD late by the difference."""
    fin = np.flatnonzero(np.isfinite(arrive))
    xs = np.repeat(rp.wp_cum[fin], 2)
    ts = np.column_stack([arrive[fin], depart[fin]]).ravel()
    delay = t - np.interp(done, xs, ts)  # a stay: two times at one distance
    for w in fin[depart[fin] > arrive[fin]]:
        near = np.abs(done - rp.wp_cum[w]) <= rp.skip[w]
        delay[near] = t[near] - np.clip(t[near], arrive[w], depart[w])
    return delay


def _entry_time(entries: Iterable[LogEntry], kind: str) -> float | None:
    times = [to_seconds(e.time_utc) for e in entries if e.kind == kind]
    return min(times) if times else None


def _prev_index(mask: np.ndarray) -> np.ndarray:
    """For each position, the index of the last earlier position where ``mask`` holds
    (-1 where none)."""
    n = mask.size
    idx = np.where(mask, np.arange(n), -1)
    last = np.maximum.accumulate(idx) if n else idx
    prev = np.empty(n, np.int64)
    if n:
        prev[0] = -1
        prev[1:] = last[:-1]
    return prev


#: Where both the step to the fix and the run through the water are this short (the bound
#: shrinks toward the poles, see :func:`_dr_currents`), the DR-to-fix vector is taken in the
#: tangent plane at the previous fix; it then differs from the rhumb-line construction by
#: less than this many metres.
PLANE_CURRENT_TOL_M = 1e-3
_EARTH_R_M = 6371008.8


def _dr_currents(f_lat, f_lon, t, heading, stw_kn, prev, ok, earth, step_d=None,
                 step_az=None):
    """Set and drift at each fix from the DR of the previous fix (its heading and speed
    through the water held over the interval) to the fix: arrays (set, drift_kn).

    The DR is run on the rhumb line of the heading, and set and drift are the rhumb course
    and distance (over the time) from the DR to the fix, as
    :func:`passagelog.nav.triangles.set_and_drift` takes them. For a step short enough
    (``s^2 (1 + 1.5 |tan lat|) < 2 R tol``, s the longer of the step and the run: about 70 m
    at 45 deg, a GNSS feed of a fix every few seconds) the same vector is taken in the tangent plane
    at the previous fix, the geodesic step ``step_d``/``step_az`` minus the run along the
    heading, which differs from the rhumb construction by under :data:`PLANE_CURRENT_TOL_M`
    and costs no further geodesic work."""
    n = t.size
    set_deg = np.full(n, np.nan)
    drift = np.full(n, np.nan)
    i = np.flatnonzero(ok)
    if i.size == 0:
        return set_deg, drift
    p = prev[i]
    dt = t[i] - t[p]
    run = stw_kn[p] * KN_MPS * dt
    plane = np.zeros(i.size, bool)
    if step_d is not None:
        d = step_d[i]
        longest = np.maximum(np.where(np.isfinite(d), d, np.inf), run)
        slope = 1.0 + 1.5 * np.abs(np.tan(np.radians(f_lat[p])))
        bound = 2.0 * _EARTH_R_M * PLANE_CURRENT_TOL_M
        plane = (p == i - 1) & (longest * longest * slope < bound)
    if plane.any():
        ip = i[plane]
        az = np.radians(step_az[ip])
        hd = np.radians(heading[p[plane]])
        east = step_d[ip] * np.sin(az) - run[plane] * np.sin(hd)
        north = step_d[ip] * np.cos(az) - run[plane] * np.cos(hd)
        dist = np.hypot(east, north)
        drift[ip] = dist / dt[plane] / KN_MPS
        set_deg[ip] = np.where(dist > 0.0, np.mod(np.degrees(np.arctan2(east, north)), 360.0),
                               np.nan)
    rest = ~plane
    if rest.any():
        from passagelog.nav import rhumb

        ir, pr = i[rest], p[rest]
        dr_lat, dr_lon = rhumb.rhumb_direct_np(f_lat[pr], f_lon[pr], heading[pr], run[rest],
                                               earth)
        dist, course = rhumb.rhumb_inverse_np(dr_lat, dr_lon, f_lat[ir], f_lon[ir], earth)
        drift[ir] = dist / dt[rest] / KN_MPS
        set_deg[ir] = np.where(dist > 0.0, np.mod(course, 360.0), np.nan)
    set_deg[set_deg == 360.0] = 0.0
    return set_deg, drift


def _made_good_compute(lat, lon, t, counting, d0, window_s, earth, leg_to_go, route_to_go,
                       arrived):
    """The ``compute(idx)`` of the review's :class:`DeferredColumns`: made good from the
    departure fix (the first fix that counts) and over the window (from the first fix that
    counts at or after t - window, not before the departure fix), and the ETAs by that SMG,
    for the fixes from ``d0`` on (NaN before, and where there is nothing to measure)."""
    n = t.size
    state: dict[str, np.ndarray] = {}

    def compute(idx: np.ndarray | None) -> dict[str, np.ndarray]:
        if "cand" not in state:
            state["cand"] = np.flatnonzero(counting)
            state["t_cand"] = t[state["cand"]]
        cand = state["cand"]
        rows = np.arange(n) if idx is None else idx
        m = rows.size
        out = {name: np.full(m, np.nan) for name in DEFERRED_GROUPS[0]}
        if not cand.size:
            return out
        dep_fix = int(cand[0])
        at = np.flatnonzero(rows >= max(dep_fix, d0))
        after = rows[at]
        # from the departure fix
        d, a1, _ = _inverse_two_threads(np.full(after.size, lat[dep_fix]),
                                        np.full(after.size, lon[dep_fix]), lat[after],
                                        lon[after], earth)
        el = t[after] - t[dep_fix]
        out["dmg_dep_m"][at] = d
        out["cmg_dep"][at] = np.where(d > 0.0, a1, np.nan)
        with np.errstate(divide="ignore", invalid="ignore"):
            out["smg_dep_kn"][at] = np.where(el > 0, d / el / KN_MPS, np.nan)
        # over the window
        j = np.minimum(np.searchsorted(state["t_cand"], t[after] - window_s, side="left"),
                       cand.size - 1)
        w0 = cand[j]
        ok = (w0 < after) & (t[w0] < t[after])
        smg = np.full(after.size, np.nan)
        if ok.any():
            aa, ww = after[ok], w0[ok]
            dw, _, _ = _inverse_two_threads(lat[ww], lon[ww], lat[aa], lon[aa], earth)
            smg[ok] = dw / (t[aa] - t[ww]) / KN_MPS
        out["smg_window_kn"][at] = smg
        vw = np.where(smg > MIN_PROGRESS_KN, smg * KN_MPS, np.nan)
        tt = t[after]
        with np.errstate(divide="ignore", invalid="ignore"):
            eta_wp = tt + np.maximum(leg_to_go[after], 0.0) / vw
            eta_dest = tt + np.maximum(route_to_go[after], 0.0) / vw
        done = arrived[after]
        eta_wp[done] = np.nan
        eta_dest[done] = np.nan
        out["eta_wp_smg_s"][at] = eta_wp
        out["eta_dest_smg_s"][at] = eta_dest
        return out

    return compute


def _to_waypoint_compute(lat, lon, plans, rev_of, leg0, earth):
    """The ``compute(idx)`` of the deferred DTW and BTW: the geodesic from each fix to the
    end waypoint of its leg (the last waypoint once arrived)."""
    offsets = np.cumsum([0] + [len(rp.wp_lat) for rp in plans])
    wlat = np.concatenate([rp.wp_lat for rp in plans])
    wlon = np.concatenate([rp.wp_lon for rp in plans])
    rev = rev_of.copy()
    leg = leg0.copy()

    def compute(idx: np.ndarray | None) -> dict[str, np.ndarray]:
        rows = np.arange(lat.size) if idx is None else idx
        w = offsets[rev[rows]] + leg[rows] + 1
        s, a1, _ = _inverse_two_threads(lat[rows], lon[rows], wlat[w], wlon[w], earth)
        return {"dtw_m": s, "btw": a1}

    return compute


def _inverse_two_threads(lat1, lon1, lat2, lon2, earth):
    """:func:`_split_inverse` with a second thread of its own (for the deferred columns,
    worked out after the review's own thread pool is gone)."""
    if lat2.size < SPLIT_MIN:
        return inverse_np(lat1, lon1, lat2, lon2, earth)
    from concurrent.futures import ThreadPoolExecutor

    with ThreadPoolExecutor(max_workers=1, thread_name_prefix="review") as pool:
        return _split_inverse(pool, lat1, lon1, lat2, lon2, earth)


def _split_inverse(pool, lat1, lon1, lat2, lon2, earth):
    """``inverse_np`` over two threads for a long batch (PROJ's C code runs without the
    GIL): the first half in ``pool``, the second here."""
    n = lat2.size
    if n < SPLIT_MIN:
        return inverse_np(lat1, lon1, lat2, lon2, earth)
    h = n // 2
    first = pool.submit(inverse_np, lat1[:h], lon1[:h], lat2[:h], lon2[:h], earth)
    second = inverse_np(lat1[h:], lon1[h:], lat2[h:], lon2[h:], earth)
    return tuple(np.concatenate([a, b]) for a, b in zip(first.result(), second))


def reconcile(plan: Route | Sequence[tuple[datetime | float | None, Route]], fixes: Any, *,
              departure_utc: datetime | float | None = None,
              planned_departure_utc: datetime | float | None = None,
              arrival_utc: datetime | float | None = None,
              zd_minutes: int = 0,
              entries: Iterable[LogEntry] = (),
              window_s: float = DEFAULT_WINDOW_S,
              gap_s: float = DEFAULT_GAP_S,
              include_suspect: bool = False,
              max_speed_kn: float | None = None,
              arrival_radius_m: float | None = None,
              skip_distance_m: float | None = None,
              default_speed_kn: float | None = None,
              schedule: Mapping[int, Sequence[Any]] | Sequence[Any] | None = None,
              earth: Earth | str = WGS84,
              detail_from_utc: datetime | float | None = None) -> Review:
    """Reconcile ``fixes`` with ``plan`` and return the :class:`Review`.

    ``plan``: a Route, or ``[(from_utc, Route), ...]`` for revisions in force from a time.
    ``fixes``: Fix objects or columns (see :func:`passagelog.review.inputs.as_fix_arrays`).
    ``departure_utc``/``arrival_utc``: actual times (else the first ``departure``/``arrival``
    log entry; else the first fix and the passage of the last waypoint). ``zd_minutes``: the
    ship's zone description at departure, changed by ``clock-change`` entries (noon figures).
    ``planned_departure_utc``: where a route has no schedule of its own, the plan's schedule
    runs from this time at the planned speeds (default: the actual departure).
    ``window_s``: window of the SMG behind the ETA by recent progress. ``gap_s``: intervals
    without a fix longer than this are gaps. ``include_suspect``: let suspect fixes count.
    ``max_speed_kn``: also flag fixes whose implied speed from the previous good fix exceeds
    it. ``arrival_radius_m``: arrival circle for waypoints that have none. ``skip_distance_m``:
    a passage farther off than this is marked skipped (default: the largest cross-track limit
    or arrival radius at the waypoint, else 1 NM). ``default_speed_kn``: planned speed of
    legs that have none. ``schedule``: scheduled time per waypoint, or an ``(ETA, ETD)``
    pair where the plan stays at it (one list for a single route, or ``{revision: list}``),
    overriding the route's own. ``earth``: figure for all
    distances (WGS84).

    ``detail_from_utc`` (for a watch display on a long voyage): the leg state machine still
    runs over every fix, but the per-fix figures are computed only for fixes from that time
    on (NaN before it, ``inside_xtl`` False), the engine's own speed check looks only there,
    and the leg table, episodes and noon figures are left empty (``Review.detail_from_s``).
    """
    earth = get_earth(earth)
    entries = list(entries)
    if not (isinstance(window_s, (int, float)) and math.isfinite(window_s) and window_s > 0):
        raise InputError(f"SMG window {window_s!r} s must be a positive number of seconds")
    if not (isinstance(gap_s, (int, float)) and math.isfinite(gap_s) and gap_s > 0):
        raise InputError(f"gap threshold {gap_s!r} s must be a positive number of seconds")
    if max_speed_kn is not None and not (math.isfinite(max_speed_kn) and max_speed_kn > 0):
        raise InputError(f"maximum speed {max_speed_kn!r} kn must be a positive number")
    revisions = as_revisions(plan)
    clocks = clocks_from(zd_minutes, entries)
    plans = [_RoutePlan(r, earth, arrival_radius_m, default_speed_kn, skip_distance_m)
             for r in revisions]

    raw = as_fix_arrays(fixes)
    valid = (np.isfinite(raw.time_s) & np.isfinite(raw.lat) & np.isfinite(raw.lon)
             & (np.abs(raw.lat) <= 90.0))
    if valid.all() and (raw.time_s.size < 2 or bool(np.all(np.diff(raw.time_s) >= 0))):
        order = np.arange(raw.time_s.size)  # already in time order (a logbook's arrays)
        f = raw
    else:
        order = np.flatnonzero(valid)
        order = order[np.argsort(raw.time_s[order], kind="stable")]
        f = raw.take(order)
    n = len(f)
    t = f.time_s
    lat = f.lat
    lon = (f.lon + 180.0) % 360.0 - 180.0

    detail_s = to_seconds(detail_from_utc, "detail start time")
    d0 = int(np.searchsorted(t, detail_s, side="left")) if detail_s is not None else 0

    # ---------------------------------------------------------------- suspects
    from concurrent.futures import ThreadPoolExecutor

    # a second thread for work that does not wait on the leg state machine
    pool = ThreadPoolExecutor(max_workers=1, thread_name_prefix="review")
    try:
        return _reconcile_fixes(**locals())
    finally:
        pool.shutdown(wait=True)


def _reconcile_fixes(*, plans, revisions, clocks, entries, earth, raw, valid, order, f, n, t,
                     lat, lon, d0, detail_s, pool, departure_utc, planned_departure_utc,
                     arrival_utc, window_s, gap_s, include_suspect, max_speed_kn, schedule,
                     **_unused) -> Review:
    """:func:`reconcile` once the fixes are in time order."""
    suspect = f.suspect.copy()
    reason = np.where(suspect, "logbook", "")
    implied = np.full(n, np.nan)
    step_d = np.full(n, np.nan)  # geodesic from the fix before, for every fix
    step_az = np.full(n, np.nan)
    s0 = max(d0, 1)
    if n > s0:
        d, az, _ = _split_inverse(pool, lat[s0 - 1:-1], lon[s0 - 1:-1], lat[s0:], lon[s0:],
                                  earth)
        step_d[s0:] = d
        step_az[s0:] = az
        dt = np.diff(t[s0 - 1:])
        with np.errstate(divide="ignore", invalid="ignore"):
            implied[s0:] = np.where(dt > 0, d / dt / KN_MPS, np.where(d > 0, np.inf, 0.0))
    if max_speed_kn is not None and n > 1:
        # against the previous good fix: sequential (one wild fix must not condemn the next
        # one), but only where something happens: at fast steps and after flagged fixes
        events = np.flatnonzero((implied > max_speed_kn) | np.concatenate([[False],
                                                                            suspect[:-1]]))
        events = events[events >= d0]
        i = int(events[0]) if events.size else n
        last = i - 1
        while last >= 0 and suspect[last]:
            last -= 1
        while i < n:
            if suspect[i]:
                i += 1
                continue
            if last < 0:
                sp = 0.0  # the first good fix has nothing to be measured from
            elif last == i - 1:
                sp = implied[i]
            else:
                dd, _, _ = inverse(float(lat[last]), float(lon[last]), float(lat[i]),
                                   float(lon[i]), earth)
                dti = t[i] - t[last]
                sp = dd / dti / KN_MPS if dti > 0 else (math.inf if dd > 0 else 0.0)
                implied[i] = sp
            if sp > max_speed_kn:
                suspect[i] = True
                reason[i] = "speed"
                i += 1
                continue
            last = i
            pos = int(np.searchsorted(events, i, side="right"))
            if pos >= events.size:
                break
            nxt = int(events[pos])
            if nxt > i + 1:
                last = nxt - 1
                while last > i and suspect[last]:
                    last -= 1
            i = nxt
    no_foot = np.zeros(n, dtype=bool)
    while True:
        good = (~suspect | include_suspect) & ~no_foot

        # set and drift need only the fixes and the previous good fix of each: start them
        # now in a second thread (numpy lets go of the GIL), while the state machine runs
        prev = _prev_index(good)
        has_prev = (prev >= 0) & (np.arange(n) >= d0)
        pp0 = np.maximum(prev, 0)
        cur_ok = (has_prev & good & np.isfinite(f.heading[pp0]) & np.isfinite(f.stw_kn[pp0])
                  & (t - t[pp0] > 0) & (t - t[pp0] <= gap_s))
        currents = None
        if cur_ok.any():
            currents = pool.submit(_dr_currents, lat, lon, t, f.heading, f.stw_kn, prev,
                                   cur_ok, earth, step_d, step_az)
        try:
            return _reconcile_rest(**locals())
        except _NoFoot as found:
            # a fix with no cross-track foot on the leg it fell on (at the pole of a
            # great-circle leg, or too far from a rhumb line): set aside as a suspect fix
            # and the voyage reconciled again without it (rare: a wild position)
            if currents is not None:
                currents.cancel()
            if reason.dtype != object:
                reason = reason.astype(object)
            no_foot[found.fixes] = True
            suspect[found.fixes] = True
            reason[found.fixes] = "no-foot"


def _reconcile_rest(*, plans, revisions, clocks, entries, earth, raw, valid, order, f, n, t,
                    lat, lon, d0, detail_s, suspect, reason, implied, step_d, step_az, good,
                    prev, has_prev, currents, pool, no_foot, departure_utc, planned_departure_utc,
                    arrival_utc, window_s, gap_s, include_suspect, max_speed_kn, schedule,
                    **_unused) -> Review:
    """The rest of :func:`reconcile`, once the fixes are in order and the suspects known."""

    # ---------------------------------------------------------------- departure, arrival
    dep_s = to_seconds(departure_utc, "departure time")
    if dep_s is None:
        dep_s = _entry_time(entries, "departure")
    if dep_s is None and n:
        dep_s = float(t[np.argmax(good)]) if good.any() else float(t[0])
    planned_dep_s = to_seconds(planned_departure_utc, "planned departure time")
    arr_given = to_seconds(arrival_utc, "arrival time")
    if arr_given is None:
        arr_given = _entry_time(entries, "arrival")
    phase = np.full(n, UNDER_WAY, np.int8)
    if dep_s is not None:
        phase[t < dep_s] = BEFORE_DEPARTURE
    if arr_given is not None:
        phase[t > arr_given] = ARRIVED
    # made good from the departure fix (the first good fix not before departure) and over
    # the window: worked out when read (DeferredColumns)
    counting_made_good = good & (phase != BEFORE_DEPARTURE)
    dep_fix = int(np.argmax(counting_made_good)) if counting_made_good.any() else None

    # ---------------------------------------------------------------- state machine
    rev_starts = np.array([r.from_s for r in revisions])
    rev_of = np.searchsorted(rev_starts, t, side="right") - 1
    rev_of[rev_of < 0] = 0
    leg0 = np.zeros(n, np.int64)  # 0-based leg
    # the spherical screen's a*sigma from each fix to the waypoint it was screened against
    # ((revision, waypoint) in screened_for), kept for the closest approach at the passage
    screened = np.full(n, np.nan)
    screened_for = np.full(n, -1, np.int64)
    passage_raw: list[tuple[int, int, int, str, float]] = []  # (rev, k, fix, how, dist)
    can_pass = good & (phase == UNDER_WAY)
    arrived_at: int | None = None
    last_wp: tuple[int, int] = (0, 0)  # (revision, waypoint index) last passed or started at
    k = 0
    for r, rp in enumerate(plans):
        idx = np.flatnonzero(rev_of == r)
        if idx.size == 0:
            continue
        a, b = int(idx[0]), int(idx[-1]) + 1
        if r > 0:
            k = _enter_revision(plans[last_wp[0]], last_wp[1], rp, earth)
            first = a + int(np.argmax(can_pass[a:b])) if can_pass[a:b].any() else None
            if first is not None:
                while k < rp.n_legs - 1:
                    s1, _, a2 = inverse(lat[first], lon[first], rp.wp_lat[k + 1],
                                        rp.wp_lon[k + 1], earth)
                    ok, _ = rp.passed_np(k, np.array([s1]), np.array([a2]))
                    if not ok[0]:
                        break
                    k += 1
            last_wp = (r, k)
        i = a
        chunk = CHUNK_START
        while i < b:
            m = min(b, i + chunk)
            w_lat, w_lon = rp.wp_lat[k + 1], rp.wp_lon[k + 1]
            # the exact test only where the spherical screen cannot rule a passage out
            a_sig, a2s = sphere_np(lat[i:m], lon[i:m], w_lat, w_lon, earth)
            maybe = np.flatnonzero(can_pass[i:m] & rp.may_have_passed_np(k, a_sig, a2s))
            j = None
            c0, batch = 0, CHUNK_MIN  # in order, a few at a time: the first usually passes
            while j is None and c0 < maybe.size:
                cand = maybe[c0:c0 + batch]
                s, _, a2 = inverse_np(lat[i + cand], lon[i + cand], w_lat, w_lon, earth)
                passed, circle = rp.passed_np(k, s, a2)
                if passed.any():
                    q = int(np.argmax(passed))
                    j = int(cand[q])
                    how = "arrival-circle" if circle[q] else "bisector"
                    passage_raw.append((r, k, i + j, how, float(s[q])))
                c0 += batch
                batch *= 4
            last = m if j is None else i + j
            screened[i:last] = a_sig[:last - i]
            screened_for[i:last] = r * 100000 + k + 1
            if j is not None:
                leg0[i:i + j] = k
                k += 1
                i += j
                last_wp = (r, k)
                chunk = CHUNK_START
                if k == rp.n_legs:
                    arrived_at = i
                    break
            else:
                leg0[i:m] = k
                span = m - i
                i = m
                rate = (a_sig[0] - a_sig[-1]) / (span - 1) if span > 1 else 0.0
                if rate > 0.0:
                    chunk = int(min(CHUNK_MAX, max(CHUNK_MIN, 1.1 * a_sig[-1] / rate + 32)))
                else:
                    chunk = min(CHUNK_MAX, chunk * 2)
        if arrived_at is not None:
            break
    if arrived_at is not None:
        r_arr = passage_raw[-1][0]
        rev_of[arrived_at:] = r_arr
        leg0[arrived_at:] = plans[r_arr].n_legs - 1
        phase[arrived_at:] = ARRIVED
        arr_s = float(t[arrived_at])
        if arr_given is not None:
            arr_s = min(arr_s, arr_given)
    else:
        arr_s = arr_given
    can_count = good & (phase == UNDER_WAY)

    # ---------------------------------------------------------------- offsets, leg by leg
    xte = np.full(n, np.nan)
    along = np.full(n, np.nan)
    if n:
        key = rev_of * 100000 + leg0
        cuts = np.flatnonzero(np.diff(key)) + 1
        starts = np.concatenate([[0], cuts])
        ends = np.concatenate([cuts, [n]])
        # every other run of fixes on one leg goes to the second thread
        pending = []
        for m, (a, b) in enumerate(zip(starts.tolist(), ends.tolist())):
            if b <= d0:
                continue
            a = max(a, d0)
            leg = plans[int(rev_of[a])].legs[int(leg0[a])]
            if m % 2:
                pending.append((a, b, pool.submit(leg.offsets_np, lat[a:b], lon[a:b],
                                                  False)))
            else:
                xte[a:b], along[a:b] = leg.offsets_np(lat[a:b], lon[a:b], False)
        for a, b, job in pending:
            xte[a:b], along[a:b] = job.result()
        # a fix with no cross-track foot on its leg (at the pole of a great-circle leg, or
        # too far from a rhumb line for its foot): set aside as suspect, named in the review
        found = ~np.isfinite(xte) & ~no_foot
        found[:d0] = False
        if found.any():
            raise _NoFoot(np.flatnonzero(found))
    length = np.zeros(n)
    cum_start = np.zeros(n)
    total = np.zeros(n)
    speed = np.full(n, np.nan)
    time_after = np.full(n, np.nan)
    port = np.full(n, np.inf)
    stbd = np.full(n, np.inf)
    for r, rp in enumerate(plans):
        sel = rev_of == r
        if not sel.any():
            continue
        kk = leg0[sel]
        length[sel] = rp.length[kk]
        cum_start[sel] = rp.cum_start[kk]
        total[sel] = rp.total
        speed[sel] = rp.speed_kn[kk]
        time_after[sel] = rp.time_after[kk]
        port[sel] = rp.port[kk]
        stbd[sel] = rp.stbd[kk]
    leg_to_go = length - along
    route_to_go = leg_to_go + (total - cum_start - length)
    limit = np.where(xte >= 0.0, stbd, port)
    inside = np.where(xte >= 0.0, xte <= stbd, -xte <= port)
    xtl = np.where(np.isfinite(limit), limit, np.nan)

    # ---------------------------------------------------------------- made good
    cmg_prev = np.full(n, np.nan)
    smg_prev = np.full(n, np.nan)
    dist_prev = np.full(n, np.nan)
    if has_prev.any():
        ii = np.flatnonzero(has_prev)
        pp = prev[ii]
        d = step_d[ii]
        a1 = step_az[ii]
        far = pp != ii - 1  # the fix before was left out: measure from the last good one
        if far.any():
            d = d.copy()
            a1 = a1.copy()
            d[far], a1[far], _ = inverse_np(lat[pp[far]], lon[pp[far]], lat[ii[far]],
                                            lon[ii[far]], earth)
        dtp = t[ii] - t[pp]
        dist_prev[ii] = d
        cmg_prev[ii] = np.where(d > 0.0, a1, np.nan)
        with np.errstate(divide="ignore", invalid="ignore"):
            smg_prev[ii] = np.where(dtp > 0, d / dtp / KN_MPS, np.nan)
    # ETAs by plan (those by SMG are deferred)
    v = speed * KN_MPS
    tg = np.maximum(leg_to_go, 0.0)
    with np.errstate(divide="ignore", invalid="ignore"):
        eta_wp_plan = t + tg / v
        eta_dest_plan = eta_wp_plan + time_after
    arrived_mask = phase == ARRIVED
    for arr in (eta_wp_plan, eta_dest_plan):
        arr[arrived_mask] = np.nan
    # delay against the schedule at the same distance along the route
    delay = np.full(n, np.nan)
    scheds = []
    for r, rp in enumerate(plans):
        given = None
        if isinstance(schedule, Mapping):
            given = schedule.get(r)
        elif schedule is not None and len(plans) == 1:
            given = schedule
        arrive, depart = _schedule_times(
            rp, planned_dep_s if planned_dep_s is not None else dep_s, given)
        scheds.append(arrive)
        sel = (rev_of == r) & (phase == UNDER_WAY)
        if sel.any() and np.isfinite(arrive).sum() >= 2:
            done = np.clip(rp.total - route_to_go[sel], 0.0, rp.total)
            delay[sel] = _delays(rp, arrive, depart, done, t[sel])
    # set and drift (computed in the second thread)
    if currents is not None:
        set_deg, drift = currents.result()
    else:
        set_deg, drift = np.full(n, np.nan), np.full(n, np.nan)

    def ro(x):
        x = np.ascontiguousarray(x)
        x.setflags(write=False)
        return x

    fr = FixResults(
        index=ro(order), fix_id=ro(f.fix_id), time_s=ro(t), lat=ro(lat), lon=ro(lon),
        suspect=ro(suspect), phase=ro(phase), revision=ro(rev_of.astype(np.int16)),
        leg=ro((leg0 + 1).astype(np.int16)), xte_m=ro(xte), along_m=ro(along),
        leg_to_go_m=ro(leg_to_go), route_to_go_m=ro(route_to_go), xtl_m=ro(xtl),
        inside_xtl=ro(inside), cmg_prev=ro(cmg_prev),
        smg_prev_kn=ro(smg_prev), dist_prev_m=ro(dist_prev),
        eta_wp_plan_s=ro(eta_wp_plan), eta_dest_plan_s=ro(eta_dest_plan), delay_s=ro(delay),
        set=ro(set_deg), drift_kn=ro(drift),
        deferred=DeferredColumns([
            _made_good_compute(lat, lon, t, ro(counting_made_good), d0, window_s, earth,
                               ro(leg_to_go), ro(route_to_go), ro(arrived_mask)),
            _to_waypoint_compute(lat, lon, plans, rev_of, leg0, earth)]),
    )

    # ---------------------------------------------------------------- passages
    passages = []
    prev_pass = -1
    for r, kk, i, how, dist in passage_raw:
        rp = plans[r]
        x_in, _ = rp.legs[kk].offset(float(lat[i]), float(lon[i]))
        wp = kk + 1
        planned = float(scheds[r][wp]) if np.isfinite(scheds[r][wp]) else None
        closest = _closest_approach(fr, can_pass, prev_pass, i, rp.wp_lat[wp], rp.wp_lon[wp],
                                    dist, earth, screened, screened_for == r * 100000 + wp)
        passages.append(Passage(
            revision=r, waypoint=wp + 1, name=rp.names[wp], time_s=float(t[i]), how=how,
            xte_m=float(x_in), distance_m=dist, closest_m=closest, lat=float(lat[i]),
            lon=float(lon[i]), planned_s=planned,
            delay_s=None if planned is None else float(t[i]) - planned,
            skipped=bool(closest > rp.skip[wp]), fix=i,
        ))
        prev_pass = i

    gaps = _gaps(fr, gap_s, earth)
    if d0 == 0:
        from passagelog.review.noon import noon_figures

        episodes = _episodes(fr, can_count)
        legs = _leg_stats(fr, plans, passage_raw, can_count, episodes, dep_s, gap_s, earth,
                          revisions)
        noon = noon_figures(fr, plans, clocks, good, dep_fix, dep_s, arr_s, gap_s, earth)
    else:
        episodes, legs, noon = [], [], []
    suspects = tuple(
        SuspectFix(fix=int(i), time_s=float(t[i]), lat=float(lat[i]), lon=float(lon[i]),
                   implied_speed_kn=float(implied[i]) if np.isfinite(implied[i]) else None,
                   reason=str(reason[i]), revision=int(rev_of[i]), leg=int(leg0[i]) + 1,
                   fix_id=int(f.fix_id[i]))
        for i in np.flatnonzero(suspect)
    )
    settings = Settings(window_s=float(window_s), gap_s=float(gap_s),
                        include_suspect=include_suspect, max_speed_kn=max_speed_kn,
                        departure_s=dep_s, arrival_s=arr_s, earth=earth.name)
    return Review(
        fixes=fr, passages=tuple(passages), episodes=tuple(episodes), legs=tuple(legs),
        noon=tuple(noon), gaps=tuple(gaps), suspects=suspects,
        routes=tuple(r.route for r in revisions),
        revision_from_s=tuple(r.from_s for r in revisions), departure_s=dep_s,
        arrival_s=arr_s, departure_fix=dep_fix, settings=settings,
        invalid_fixes=int((~valid).sum()), detail_from_s=detail_s if d0 > 0 else None,
    )


def _enter_revision(old: _RoutePlan, wp_index: int, new: _RoutePlan, earth: Earth) -> int:
    """The leg (0-based) of the new route to go on with, after waypoint ``wp_index`` of the
    old route was the last passed (or the start)."""
    w_lat, w_lon = old.wp_lat[wp_index], old.wp_lon[wp_index]
    name = old.names[wp_index]
    best = None
    for j in range(len(new.names)):
        d, _, _ = inverse(w_lat, w_lon, new.wp_lat[j], new.wp_lon[j], earth)
        if d <= SAME_WAYPOINT_M:
            score = (0 if new.names[j] == name else 1, d)
            if best is None or score < best[0]:
                best = (score, j)
    if best is None:
        return 0
    return min(best[1], new.n_legs - 1)


def _closest_approach(fr: FixResults, can_pass: np.ndarray, since: int, i: int,
                      w_lat: float, w_lon: float, dist: float, earth: Earth,
                      screened: np.ndarray, screened_here: np.ndarray) -> float:
    """Closest approach of the track to a waypoint passed at fix ``i``: the least distance
    of the fixes since the previous passage (fix ``since``) and of the geodesic from the last
    fix before ``i`` to fix ``i`` (the track between two fixes taken as a geodesic)."""
    best = dist
    lo = max(since, 0)
    sel = np.flatnonzero(can_pass[lo:i]) + lo
    if sel.size:
        a_sig = np.where(screened_here[sel], screened[sel], np.nan)
        best = min(best, _least_distance(fr.lat[sel], fr.lon[sel], w_lat, w_lon, earth, a_sig))
        j = int(sel[-1])
        try:
            from passagelog.nav.legs import make_leg

            seg = make_leg(float(fr.lat[j]), float(fr.lon[j]), float(fr.lat[i]),
                           float(fr.lon[i]), "great-circle", earth=earth)
            x, a = seg.offset(float(w_lat), float(w_lon))
        except PassagelogError:  # a zero-length step, or a foot that is not defined
            return best
        if 0.0 <= a <= seg.distance_m:
            best = min(best, abs(float(x)))
    return best


def _least_distance(lat, lon, w_lat: float, w_lon: float, earth: Earth,
                    a_sig: np.ndarray | None = None) -> float:
    """The least geodesic distance from the positions to a point, solving the inverse
    problem only where the spherical screen's lower bound, (1 - e^2) a sigma, does not
    already exceed the distance of the nearest on the sphere. ``a_sig``: the screen's
    figures where already known (NaN where not)."""
    if a_sig is None:
        a_sig = np.full(lat.shape, np.nan)
    todo = np.isnan(a_sig)
    if todo.any():
        a_sig = a_sig.copy()
        a_sig[todo], _ = sphere_np(lat[todo], lon[todo], w_lat, w_lon, earth)
    first = int(np.argmin(a_sig))
    d0, _, _ = inverse(float(lat[first]), float(lon[first]), w_lat, w_lon, earth)
    maybe = np.flatnonzero((1.0 - earth.e2) * a_sig <= d0)
    d, _, _ = inverse_np(lat[maybe], lon[maybe], w_lat, w_lon, earth)
    return min(d0, float(d.min())) if d.size else d0


def _runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """(start, end) of the runs of True in ``mask``, end exclusive."""
    if mask.size == 0:
        return []
    m = np.concatenate([[False], mask, [False]]).astype(np.int8)
    d = np.diff(m)
    return list(zip(np.flatnonzero(d == 1).tolist(), np.flatnonzero(d == -1).tolist()))


def _episodes(fr: FixResults, can_count: np.ndarray) -> list[Episode]:
    """Spells outside the limit, per leg and side, over the fixes that count."""
    rows = np.flatnonzero(can_count)
    if rows.size == 0:
        return []
    x = fr.xte_m[rows]
    side = np.where(fr.inside_xtl[rows], 0, np.where(x > 0, 1, -1)).astype(np.int64)
    key = (fr.revision[rows].astype(np.int64) * 100000 + fr.leg[rows]) * 3 + side + 1
    out = []
    outside = side != 0
    brk = np.concatenate([[True], key[1:] != key[:-1]])
    run_id = np.cumsum(brk)
    for a, b in _runs(outside):
        # split further where the key (leg or side) changes inside the run
        ids = run_id[a:b]
        cut = np.flatnonzero(np.diff(ids)) + 1
        for s, e in zip(np.concatenate([[0], cut]).tolist(), np.concatenate([cut, [b - a]])
                        .tolist()):
            s0, e0 = a + s, a + e  # positions in rows
            first, last = int(rows[s0]), int(rows[e0 - 1])
            end_row = int(rows[e0]) if e0 < rows.size else last
            xs = np.abs(x[s0:e0])
            sd = int(side[s0])
            out.append(Episode(
                revision=int(fr.revision[first]), leg=int(fr.leg[first]),
                side="starboard" if sd > 0 else "port", start_s=float(fr.time_s[first]),
                end_s=float(fr.time_s[end_row]), max_abs_xte_m=float(xs.max()),
                limit_m=float(fr.xtl_m[first]), fixes=e0 - s0, first_fix=first,
                last_fix=last,
            ))
    return out


def _leg_stats(fr, plans, passage_raw, can_count, episodes, dep_s, gap_s, earth, revisions):
    t = fr.time_s
    # passage times per (rev, waypoint index)
    passed_at = {(r, kk + 1): int(i) for r, kk, i, _, _ in passage_raw}
    # the fixes that count, grouped by (revision, leg), each group in time order
    rows = np.flatnonzero(can_count)
    key = fr.revision[rows].astype(np.int64) * 100000 + (fr.leg[rows] - 1)
    by_key = rows[np.argsort(key, kind="stable")]
    keys, first = np.unique(np.sort(key), return_index=True)
    bounds = dict(zip(keys.tolist(), zip(first.tolist(), first[1:].tolist() + [rows.size])))
    used = sorted({divmod(x, 100000) for x in keys.tolist()}
                  | {(r, kk) for r, kk, _, _, _ in passage_raw})
    out = []
    for r, kk in used:
        rp = plans[r]
        lo, hi = bounds.get(r * 100000 + kk, (0, 0))
        sel = by_key[lo:hi]
        plan = rp.route.legs[kk]
        # start: passage of the leg's first waypoint; else, on the first leg sailed under a
        # revision, the departure (first revision) or the revision's start; else its first fix
        first_leg = min(k2 for r2, k2 in used if r2 == r) == kk
        if (r, kk) in passed_at:
            start = float(t[passed_at[(r, kk)]])
        elif sel.size:
            start = float(t[sel[0]])
            origin = dep_s if r == 0 else revisions[r].from_s
            if first_leg and origin is not None and math.isfinite(origin) and origin <= start:
                start = origin
        else:
            start = None
        completed = (r, kk + 1) in passed_at
        if completed:
            end = float(t[passed_at[(r, kk + 1)]])
        elif sel.size:
            end = float(t[sel[-1]])
        else:
            end = None
        # run: the steps onto the fixes after the passage of the leg's first waypoint (the
        # step onto that passage ends the leg before), up to and including the step onto the
        # passage of its last waypoint; the first leg sailed also has the step onto its first
        # fix. So the legs share out the track without overlap, over the same span as the time
        i_start = passed_at.get((r, kk))
        onto = sel[1:] if sel.size and sel[0] == i_start else sel
        run = float(np.nansum(fr.dist_prev_m[onto])) if onto.size else 0.0
        if completed:
            i_end = passed_at[(r, kk + 1)]
            if (i_end != i_start and i_end not in onto
                    and np.isfinite(fr.dist_prev_m[i_end])):
                run += float(fr.dist_prev_m[i_end])
        dmg = smg = None
        if sel.size >= 2:
            last = passed_at[(r, kk + 1)] if completed else int(sel[-1])
            d, _, _ = inverse(float(fr.lat[sel[0]]), float(fr.lon[sel[0]]),
                              float(fr.lat[last]), float(fr.lon[last]), earth)
            el = float(t[last] - t[sel[0]])
            dmg = d
            smg = d / el / KN_MPS if el > 0 else None
        x = fr.xte_m[sel]
        ax = np.abs(x)
        n_out = int((~fr.inside_xtl[sel]).sum())
        t_out = sum(e.duration_s for e in episodes if e.revision == r and e.leg == kk + 1)
        cur = sel[np.isfinite(fr.drift_kn[sel])]
        set_deg = drift = None
        if cur.size:
            s_rad = np.radians(fr.set[cur])
            dk = fr.drift_kn[cur]
            east = float(np.mean(np.where(dk > 0, dk * np.sin(s_rad), 0.0)))
            north = float(np.mean(np.where(dk > 0, dk * np.cos(s_rad), 0.0)))
            drift = math.hypot(east, north)
            set_deg = math.degrees(math.atan2(east, north)) % 360.0 if drift > 0 else None
        speed = rp.speed_kn[kk]
        out.append(LegStats(
            revision=r, leg=kk + 1, from_wp=rp.names[kk], to_wp=rp.names[kk + 1],
            sailing=plan.sailing, planned_distance_m=float(rp.length[kk]),
            planned_speed_kn=float(speed) if np.isfinite(speed) else None,
            planned_time_s=float(rp.leg_time[kk]) if np.isfinite(rp.leg_time[kk]) else None,
            start_s=start, end_s=end, completed=completed, run_m=run, dmg_m=dmg, smg_kn=smg,
            fixes=int(sel.size),
            max_abs_xte_m=float(ax.max()) if sel.size else None,
            mean_xte_m=float(x.mean()) if sel.size else None,
            rms_xte_m=float(np.sqrt(np.mean(x * x))) if sel.size else None,
            fixes_outside=n_out, time_outside_s=float(t_out), set=set_deg, drift_kn=drift,
            set_fixes=int(cur.size),
        ))
    return out


def _gaps(fr: FixResults, gap_s: float, earth: Earth) -> list[Gap]:
    t = fr.time_s
    if t.size < 2:
        return []
    dt = np.diff(t)
    out = []
    for i in np.flatnonzero(dt > gap_s).tolist():
        d, _, _ = inverse(float(fr.lat[i]), float(fr.lon[i]), float(fr.lat[i + 1]),
                          float(fr.lon[i + 1]), earth)
        out.append(Gap(
            start_s=float(t[i]), end_s=float(t[i + 1]), from_lat=float(fr.lat[i]),
            from_lon=float(fr.lon[i]), to_lat=float(fr.lat[i + 1]),
            to_lon=float(fr.lon[i + 1]), distance_m=float(d), revision=int(fr.revision[i]),
            leg=int(fr.leg[i]), first_fix=i,
        ))
    return out


def watch(plan, fixes, *, window_s: float = DEFAULT_WINDOW_S, **options):
    """The watch summary (:class:`~passagelog.review.status.Status`) of the latest fix.

    The same as ``reconcile(plan, fixes, ...).status()`` but quicker on a long voyage: the
    per-fix figures are computed only over the last window (see ``detail_from_utc``)."""
    raw = as_fix_arrays(fixes)
    t = raw.time_s[np.isfinite(raw.time_s)]
    if t.size == 0:
        raise InputError("there are no fixes to report against the plan")
    start = float(t.max()) - window_s - 60.0
    rv = reconcile(plan, raw, window_s=window_s, detail_from_utc=start, **options)
    return rv.status()
