"""What the Review view shows, as plain data that can be kept in the logbook.

The reconciliation of a long voyage takes seconds (a million fixes: the engine works out the
leg, XTE and made-good figures of every fix). What the view shows of it is small: the rows of
its tables, and the plot series thinned to what a terminal can draw. :func:`summarize` takes
that from a :class:`~passagelog.review.Review`; :func:`encode`/:func:`decode` turn it into
bytes and back (numpy's ``.npz``, loaded without pickles: a logbook from elsewhere cannot run
code), and the view keeps it in the logbook's derived results under the content stamp of the
records it came from (:mod:`passagelog.store.derived`). Opening the logbook again shows it at
once; when the records have changed since, the view shows the kept one marked with its time
and fix count while it reconciles again.
"""

from __future__ import annotations

import hashlib
import io
import json
import math
import threading
from dataclasses import dataclass, field

import numpy as np

import passagelog

#: The derived-result kind, versioned with the layout of :class:`ReviewSummary`.
KIND = "tui-review-2"

#: One reconciliation of the whole voyage at a time in this process: the view, shown while
#: the one started ahead of it (:func:`prefetch`) runs, waits for it and shows its result.
RECONCILE_LOCK = threading.Lock()

#: points kept per series for the plots (a terminal chart has a few tens of thousands of dots)
PLOT_POINTS = 20_000

#: The review tables the view shows.
TABLE_KEYS = ("legs", "passages", "episodes", "noon", "gaps", "suspects")

_ARRAYS = ("plan_lon", "plan_lat", "fix_lon", "fix_lat", "wp_lon", "wp_lat", "xte_t", "xte_nm",
           "port_nm", "stbd_nm")


@dataclass
class ReviewSummary:
    """The Review view's content. Longitudes of the plot are unwrapped about the plan's start
    (a track across 180° stays in one piece); XTE series in NM, + starboard."""

    fixes: int
    first_s: float | None
    last_s: float | None
    counts: dict[str, int]  # passages, episodes, gaps, suspects
    rows: dict[str, list[dict]]
    waypoints: int
    arrays: dict[str, np.ndarray] = field(default_factory=dict)


def _thin(*columns: np.ndarray) -> list[np.ndarray]:
    """Every k-th point so that at most PLOT_POINTS remain (the last one kept)."""
    n = len(columns[0])
    if n <= PLOT_POINTS:
        return [np.asarray(c, dtype=float) for c in columns]
    idx = np.unique(np.concatenate([np.arange(0, n, n // PLOT_POINTS + 1), [n - 1]]))
    return [np.asarray(c, dtype=float)[idx] for c in columns]


def _envelope(t: np.ndarray, *columns: np.ndarray) -> list[np.ndarray]:
    """Min and max of each column over PLOT_POINTS/2 time bins: the plot keeps every spike."""
    n = len(t)
    if n <= PLOT_POINTS:
        return [np.asarray(t, dtype=float)] + [np.asarray(c, dtype=float) for c in columns]
    bins = PLOT_POINTS // 2
    edges = np.linspace(0, n, bins + 1).astype(np.int64)
    starts = edges[:-1]
    out = [np.repeat(np.asarray(t, dtype=float)[starts], 2)]
    for c in columns:
        c = np.asarray(c, dtype=float)
        lo = np.fmin.reduceat(np.where(np.isnan(c), np.inf, c), starts)
        hi = np.fmax.reduceat(np.where(np.isnan(c), -np.inf, c), starts)
        lo[~np.isfinite(lo)] = np.nan
        hi[~np.isfinite(hi)] = np.nan
        out.append(np.column_stack([lo, hi]).ravel())
    return out


def summarize(review) -> ReviewSummary:
    """The view's content from a review (the tables' rows, thinned plot series)."""
    from passagelog.nav.legs import make_leg
    from passagelog.nav.units import NM_M

    fr = review.fixes
    route = review.routes[-1]
    plan_lat, plan_lon = [], []
    for k, leg in enumerate(route.legs):
        a, b = route.waypoints[k], route.waypoints[k + 1]
        solved = make_leg(a.lat, a.lon, b.lat, b.lon, leg.sailing)
        lats, lons = solved.points_at_np(np.linspace(0.0, solved.distance_m, 60))
        plan_lat.append(np.asarray(lats, dtype=float))
        plan_lon.append(np.asarray(lons, dtype=float))
    plat = np.concatenate(plan_lat) if plan_lat else np.array(
        [w.lat for w in route.waypoints], dtype=float)
    plon = np.concatenate(plan_lon) if plan_lon else np.array(
        [w.lon for w in route.waypoints], dtype=float)
    ref = float(plon[0]) if plon.size else 0.0

    def unwrap(lon):
        return (np.asarray(lon, dtype=float) - ref + 180.0) % 360.0 - 180.0 + ref

    flat, flon = _thin(np.asarray(fr.lat), unwrap(fr.lon))
    t = np.asarray(fr.time_s, dtype=float)
    xte = np.asarray(fr.xte_m, dtype=float) / NM_M
    # each fix's limits, looked up by (revision, leg) in a table of every route's legs
    width = max(len(rroute.legs) for rroute in review.routes) + 1
    port_of = np.full((len(review.routes), width), np.nan)
    stbd_of = np.full((len(review.routes), width), np.nan)
    for r, rroute in enumerate(review.routes):
        for k, leg in enumerate(rroute.legs):
            if leg.xtl_port_m is not None:
                port_of[r, k + 1] = -leg.xtl_port_m / NM_M
            if leg.xtl_stbd_m is not None:
                stbd_of[r, k + 1] = leg.xtl_stbd_m / NM_M
    rev = np.asarray(fr.revision, dtype=np.int64)
    legno = np.asarray(fr.leg, dtype=np.int64)
    port = port_of[rev, legno]
    stbd = stbd_of[rev, legno]
    xt, xx, xp, xs = _envelope(t, xte, port, stbd)
    n = len(t)
    return ReviewSummary(
        fixes=n, first_s=float(t[0]) if n else None, last_s=float(t[-1]) if n else None,
        counts={"passages": len(review.passages), "episodes": len(review.episodes),
                "gaps": len(review.gaps), "suspects": len(review.suspects)},
        rows={key: list(review.iter_rows(key)) for key in TABLE_KEYS},
        waypoints=len(route.waypoints),
        arrays={"plan_lon": unwrap(plon), "plan_lat": plat, "fix_lon": flon, "fix_lat": flat,
                "wp_lon": unwrap([w.lon for w in route.waypoints]),
                "wp_lat": np.array([w.lat for w in route.waypoints], dtype=float),
                "xte_t": xt, "xte_nm": xx, "port_nm": xp, "stbd_nm": xs})


def _clean(value):
    if isinstance(value, float) and not math.isfinite(value):
        return None
    if isinstance(value, np.generic):
        return _clean(value.item())
    return value


def encode(summary: ReviewSummary) -> bytes:
    """The summary as ``.npz`` bytes: float arrays and one JSON document, no pickles."""
    meta = {"kind": KIND, "fixes": summary.fixes, "first_s": summary.first_s,
            "last_s": summary.last_s, "counts": summary.counts, "waypoints": summary.waypoints,
            "rows": {k: [{c: _clean(v) for c, v in row.items()} for row in rows]
                     for k, rows in summary.rows.items()}}
    text = json.dumps(meta, allow_nan=False, separators=(",", ":")).encode("utf-8")
    buf = io.BytesIO()
    np.savez_compressed(buf, meta=np.frombuffer(text, dtype=np.uint8),
                        **{k: np.asarray(summary.arrays[k], dtype=np.float64) for k in _ARRAYS})
    return buf.getvalue()


def decode(data: bytes) -> ReviewSummary | None:
    """The summary from :func:`encode`'s bytes; None if they are not one this release
    writes (another layout, damaged): the caller computes it again."""
    try:
        with np.load(io.BytesIO(data), allow_pickle=False) as z:
            meta = json.loads(bytes(z["meta"]).decode("utf-8"))
            if meta.get("kind") != KIND:
                return None
            arrays = {k: np.array(z[k], dtype=np.float64) for k in _ARRAYS}
        rows = meta["rows"]
        if set(rows) != set(TABLE_KEYS) or not all(isinstance(r, list) for r in rows.values()):
            return None
        return ReviewSummary(fixes=int(meta["fixes"]), first_s=meta["first_s"],
                             last_s=meta["last_s"], counts=dict(meta["counts"]), rows=rows,
                             waypoints=int(meta["waypoints"]), arrays=arrays)
    except Exception:  # noqa: BLE001 - anything unreadable is simply not used
        return None


def stamp(content_stamp: str, settings: dict) -> str:
    """The key a kept summary is valid under: the records' content stamp, this release and
    the review settings the view used."""
    text = json.dumps([content_stamp, passagelog.__version__, KIND, settings], sort_keys=True)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def reconcile_session(session):
    """The whole voyage of ``session`` reconciled with its plan revisions (a Review)."""
    from passagelog.errors import PassagelogError
    from passagelog.review.engine import reconcile

    session.reload_route()
    if session.route is None:
        raise PassagelogError("this voyage has no plan yet: make one in Plan (F2, then Ins)")
    plan = [(t, r) for t, r in session.plan_revisions] or session.route
    return reconcile(plan, session.fix_arrays(), zd_minutes=session.zd_minutes,
                     entries=session.entries(),
                     planned_departure_utc=session.voyage.departure_utc)


def current_key(session) -> str:
    """The stamp a summary of the session's voyage must carry to be current."""
    from passagelog.store import derived

    return stamp(derived.content_stamp(session.logbook, session.voyage.voyage_id), {})


def read_kept(session):
    """``(summary, kept_stamp, written_utc)`` of the kept review, or None."""
    from passagelog.store import derived

    kept = derived.read_result(session.logbook, session.voyage.voyage_id, KIND)
    summary = decode(kept.data) if kept is not None else None
    if summary is None:
        return None
    return summary, kept.stamp, kept.written_utc


def keep(session, key: str, data: bytes) -> None:
    """Keep an encoded summary in the logbook under ``key`` (a busy or read-only logbook is
    fine: it is kept only to open faster next time)."""
    from passagelog.errors import PassagelogError
    from passagelog.store import derived

    try:
        derived.write_result(session.logbook, session.voyage.voyage_id, KIND, key, data)
    except PassagelogError:
        pass


def reconcile_and_keep(db_path: str, voyage_id: int) -> tuple[str, bytes]:
    """Run in a process of its own (:func:`passagelog.tui.apart.call_apart`): reconcile the
    voyage, keep its summary in the logbook and return ``(stamp, encoded summary)``. The
    stamp is taken before the records are read, so a record added meanwhile leaves the kept
    summary stale (worked out again), never wrongly current."""
    from passagelog.tui.session import Session

    session = Session(db_path, voyage=voyage_id)
    try:
        key = current_key(session)
        data = encode(summarize(reconcile_session(session)))
        keep(session, key, data)
    finally:
        session.close()
    return key, data


def reconcile_apart(session) -> tuple[str, ReviewSummary]:
    """The voyage reconciled and kept by :func:`reconcile_and_keep` in a process of its own
    (the app's UI stays quick meanwhile): ``(stamp, summary)``."""
    from passagelog.errors import PassagelogError
    from passagelog.tui.apart import call_apart

    key, data = call_apart(reconcile_and_keep, str(session.db_path), session.voyage.voyage_id)
    summary = decode(data)
    if summary is None:
        raise PassagelogError("the reconciled review could not be read back")
    return key, summary


def prefetch(session) -> bool:
    """Reconcile the voyage ahead of the Review view and keep the summary, unless the kept
    one is current or a reconciliation is already running. True when it reconciled; any
    failure is left for the view to report when shown."""
    if session.voyage is None or not RECONCILE_LOCK.acquire(blocking=False):
        return False
    try:
        kept = read_kept(session)
        if kept is not None and kept[1] == current_key(session):
            return False
        reconcile_apart(session)
        return True
    except Exception:  # noqa: BLE001 - the view reconciles again and shows the error
        return False
    finally:
        RECONCILE_LOCK.release()
