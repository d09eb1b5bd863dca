"""What the reconciliation engine gives back: frozen dataclasses and per-fix numpy columns.

Every table has rows with stable keys (:data:`TABLE_COLUMNS`), for the CLI, the reports and
scripts. Times in rows are ISO 8601 UTC text with ``Z``; distances metres, speeds knots,
courses degrees true; a missing value is ``None`` (never NaN). Legs and waypoints are
numbered from 1 in rows (leg k runs from waypoint k to waypoint k+1). In rows a revision is
the route's own number (a logbook plan's revision, from 1), or for a route without one its
place in the sequence of routes in force, from 1; the result objects keep the 0-based index
into ``Review.routes``.
"""

from __future__ import annotations

import math
import threading
from dataclasses import dataclass, field, fields
from typing import Any, Callable, Iterator, Sequence

import numpy as np

from passagelog.model import Route
from passagelog.review.inputs import iso_z, iso_z_np

#: Phase of a fix in the voyage (``FixResults.phase`` holds the index).
PHASES = ("before-departure", "under-way", "arrived")
BEFORE_DEPARTURE, UNDER_WAY, ARRIVED = 0, 1, 2

#: Below this SMG over the window the craft is not making progress: no ETA by SMG, knots.
MIN_PROGRESS_KN = 0.05

#: Ways a waypoint is passed.
PASSAGE_HOW = ("arrival-circle", "bisector")

#: The columns of each table, in order (the first ones of ``fixes`` are the scripting
#: contract of docs/cli.md and stay as they are).
TABLE_COLUMNS: dict[str, tuple[str, ...]] = {
    "fixes": (
        "time_utc", "lat", "lon", "leg", "xte_m", "along_m", "leg_to_go_m", "route_to_go_m",
        "inside_xtl", "xtl_m", "side", "revision", "phase", "suspect", "from_wp", "to_wp",
        "dtw_m", "btw", "cmg_prev", "smg_prev_kn", "cmg_dep", "dmg_dep_m", "smg_dep_kn",
        "smg_window_kn", "eta_wp_plan_utc", "eta_dest_plan_utc", "eta_wp_smg_utc",
        "eta_dest_smg_utc", "delay_s", "set", "drift_kn", "fix_id",
    ),
    "legs": (
        "revision", "leg", "from_wp", "to_wp", "sailing", "planned_distance_m",
        "planned_speed_kn", "planned_time_s", "start_utc", "end_utc", "actual_time_s",
        "completed", "run_m", "dmg_m", "smg_kn", "fixes", "max_abs_xte_m", "mean_xte_m",
        "rms_xte_m", "fixes_outside", "share_outside", "time_outside_s", "set", "drift_kn",
        "set_fixes",
    ),
    "passages": (
        "revision", "waypoint", "name", "time_utc", "how", "xte_m", "distance_m", "closest_m",
        "lat", "lon",
        "planned_utc", "delay_s", "skipped",
    ),
    "episodes": (
        "revision", "leg", "side", "start_utc", "end_utc", "duration_s", "max_abs_xte_m",
        "limit_m", "fixes",
    ),
    "noon": (
        "ship_date", "noon_utc", "zone", "day_hours", "partial", "lat", "lon", "in_gap",
        "run_m", "dmg_m", "cmg", "avg_speed_kn", "smg_kn", "route_to_go_m", "revision", "leg",
        "eta_dest_plan_utc", "eta_dest_smg_utc",
    ),
    "gaps": (
        "start_utc", "end_utc", "duration_s", "from_lat", "from_lon", "to_lat", "to_lon",
        "distance_m", "revision", "leg",
    ),
    "suspects": (
        "time_utc", "lat", "lon", "implied_speed_kn", "reason", "revision", "leg", "fix_id",
    ),
}

TABLES = ("fixes", "legs", "passages", "episodes", "noon", "gaps", "suspects")


def _f(x: Any) -> float | None:
    """A float for a row, None for NaN or missing."""
    if x is None:
        return None
    x = float(x)
    return x if math.isfinite(x) else None


def zone_text(zd_minutes: int) -> str:
    """A zone description as the trade writes it: ``+3``, ``-5``, ``-5:30``, ``0``."""
    if zd_minutes == 0:
        return "0"
    sign = "+" if zd_minutes > 0 else "-"
    h, m = divmod(abs(zd_minutes), 60)
    return f"{sign}{h}" if m == 0 else f"{sign}{h}:{m:02d}"


#: Per-fix columns worked out only when first read (:class:`DeferredColumns`), by group:
#: made good from the departure and over the window with the ETAs by that SMG; distance
#: and bearing to the active leg's end waypoint.
DEFERRED_GROUPS = (
    ("cmg_dep", "dmg_dep_m", "smg_dep_kn", "smg_window_kn", "eta_wp_smg_s", "eta_dest_smg_s"),
    ("dtw_m", "btw"),
)
DEFERRED = tuple(name for group in DEFERRED_GROUPS for name in group)


class DeferredColumns:
    """Per-fix columns that cost an ellipsoidal inverse problem per fix and that most
    readers want at a few fixes only: worked out when first asked for, whole
    (:meth:`column`, then kept) or at some fixes (:meth:`at`). ``computes`` holds, for each
    group of :data:`DEFERRED_GROUPS`, a ``compute(idx)`` that gives every column of the
    group at the rows ``idx`` (all rows for None)."""

    def __init__(self, computes: Sequence[Callable[[np.ndarray | None],
                                                   dict[str, np.ndarray]]]):
        self._group = {name: g for g, names in enumerate(DEFERRED_GROUPS) for name in names}
        self._computes = list(computes)
        self._cols: dict[str, np.ndarray] = {}
        self._lock = threading.Lock()

    def column(self, name: str) -> np.ndarray:
        with self._lock:
            if name not in self._cols:
                cols = self._computes[self._group[name]](None)
                for a in cols.values():
                    a.setflags(write=False)
                self._cols.update(cols)
        return self._cols[name]

    def at(self, name: str, idx) -> np.ndarray:
        idx = np.atleast_1d(np.asarray(idx, dtype=np.int64))
        whole = self._cols.get(name)
        if whole is not None:
            return whole[idx]
        return self._computes[self._group[name]](idx)[name]


def _deferred(name: str) -> property:
    return property(lambda self: self.deferred.column(name),
                    doc=f"``{name}`` (worked out on first read: :class:`DeferredColumns`)")


@dataclass(frozen=True, eq=False)
class FixResults:
    """One row per valid fix in time order, as read-only numpy columns.

    ``index`` points back into the fixes handed in. ``leg`` is 1-based within the revision
    in force (``revision``, 0-based). ``phase`` indexes :data:`PHASES`. Distances metres,
    speeds knots, courses degrees true, times float seconds since the epoch (UTC); NaN where
    a figure does not exist (no previous fix, no planned speed, no progress...).

    ``xte_m`` is + right of the leg; ``along_m`` from the leg's start (negative before it);
    ``leg_to_go_m`` = leg length - along (negative past the leg's end); ``route_to_go_m`` the
    leg to go plus the remaining legs of the plan; ``xtl_m`` the limit on the side the
    craft is on (NaN when none is set); ``inside_xtl`` true within it (or when none is set).
    ``dtw_m``/``btw`` to the active leg's end waypoint (geodesic). ``*_prev`` since the
    previous fix, ``*_dep`` since the departure fix, ``smg_window_kn`` over the recent window.
    ``eta_*_s`` by remaining planned speeds (``plan``) or by the window SMG (``smg``);
    ``delay_s`` = time now minus the plan's scheduled time at the same distance along the
    route (+ behind schedule). ``set``/``drift_kn``: the current found from the DR of the
    previous fix's heading and speed through the water to this fix.

    The columns of :data:`DEFERRED` read like the others but are worked out when first read
    (``deferred``, a :class:`DeferredColumns`); :meth:`value` reads one at a single row
    without working out the whole column.
    """

    index: np.ndarray
    fix_id: np.ndarray
    time_s: np.ndarray
    lat: np.ndarray
    lon: np.ndarray
    suspect: np.ndarray
    phase: np.ndarray
    revision: np.ndarray
    leg: np.ndarray
    xte_m: np.ndarray
    along_m: np.ndarray
    leg_to_go_m: np.ndarray
    route_to_go_m: np.ndarray
    xtl_m: np.ndarray
    inside_xtl: np.ndarray
    cmg_prev: np.ndarray
    smg_prev_kn: np.ndarray
    dist_prev_m: np.ndarray
    eta_wp_plan_s: np.ndarray
    eta_dest_plan_s: np.ndarray
    delay_s: np.ndarray
    set: np.ndarray
    drift_kn: np.ndarray
    deferred: DeferredColumns = field(repr=False)

    cmg_dep = _deferred("cmg_dep")
    dmg_dep_m = _deferred("dmg_dep_m")
    smg_dep_kn = _deferred("smg_dep_kn")
    smg_window_kn = _deferred("smg_window_kn")
    eta_wp_smg_s = _deferred("eta_wp_smg_s")
    eta_dest_smg_s = _deferred("eta_dest_smg_s")
    dtw_m = _deferred("dtw_m")
    btw = _deferred("btw")

    def __len__(self) -> int:
        return int(self.time_s.size)

    def value(self, name: str, i: int) -> float:
        """Column ``name`` at row ``i``, without working out a whole deferred column."""
        if name in DEFERRED:
            return float(self.deferred.at(name, range(len(self))[i])[0])
        return float(getattr(self, name)[i])


@dataclass(frozen=True)
class Passage:
    """A waypoint passed: ``waypoint`` is its 1-based number in the route of ``revision``.

    ``how`` is ``arrival-circle`` or ``bisector`` (of the course alteration at the waypoint;
    at the last waypoint the perpendicular to the leg). ``xte_m`` is the XTE against the leg
    that ends at the waypoint, ``distance_m`` the distance of the passing fix from the
    waypoint; ``closest_m`` the closest approach of the track (fixes since the previous
    passage, and the geodesic step onto the passing fix); ``skipped`` is true when even that
    exceeded the skip distance (the craft passed the waypoint by without coming near it).
    """

    revision: int
    waypoint: int
    name: str
    time_s: float
    how: str
    xte_m: float
    distance_m: float
    closest_m: float
    lat: float
    lon: float
    planned_s: float | None
    delay_s: float | None
    skipped: bool
    fix: int  # row in FixResults

    def row(self) -> dict:
        return {
            "revision": self.revision, "waypoint": self.waypoint, "name": self.name,
            "time_utc": iso_z(self.time_s), "how": self.how, "xte_m": _f(self.xte_m),
            "distance_m": _f(self.distance_m), "closest_m": _f(self.closest_m),
            "lat": self.lat, "lon": self.lon,
            "planned_utc": iso_z(self.planned_s), "delay_s": _f(self.delay_s),
            "skipped": self.skipped,
        }


@dataclass(frozen=True)
class Episode:
    """A spell outside the cross-track limit on one side of one leg.

    It starts at the first fix found outside and ends at the next fix that is not outside on
    that side of that leg (back inside, over to the other side, or on the next leg), or at
    its own last fix when no fix follows.
    """

    revision: int
    leg: int
    side: str  # "port" or "starboard"
    start_s: float
    end_s: float
    max_abs_xte_m: float
    limit_m: float
    fixes: int
    first_fix: int
    last_fix: int

    @property
    def duration_s(self) -> float:
        return self.end_s - self.start_s

    def row(self) -> dict:
        return {
            "revision": self.revision, "leg": self.leg, "side": self.side,
            "start_utc": iso_z(self.start_s), "end_utc": iso_z(self.end_s),
            "duration_s": self.duration_s, "max_abs_xte_m": _f(self.max_abs_xte_m),
            "limit_m": _f(self.limit_m), "fixes": self.fixes,
        }


@dataclass(frozen=True)
class LegStats:
    """Planned against actual for one leg of one revision (fixes under way, suspects left
    out unless asked). ``run_m`` is the distance over the ground from fix to fix over the
    leg's time: the steps onto the fixes after the passage of its first waypoint (or, on the
    first leg sailed, from its first fix) up to and including the step onto the passage of
    its last waypoint; so the legs' runs add up to the track. ``dmg_m``/``smg_kn`` from the
    first to the last fix on the leg; ``time_outside_s`` sums the leg's deviation episodes;
    ``set`` and ``drift_kn`` are the vector mean of the current found at the leg's fixes
    where heading and speed through the water were logged (``set_fixes`` of them)."""

    revision: int
    leg: int
    from_wp: str
    to_wp: str
    sailing: str
    planned_distance_m: float
    planned_speed_kn: float | None
    planned_time_s: float | None
    start_s: float | None
    end_s: float | None
    completed: bool
    run_m: float
    dmg_m: float | None
    smg_kn: float | None
    fixes: int
    max_abs_xte_m: float | None
    mean_xte_m: float | None
    rms_xte_m: float | None
    fixes_outside: int
    time_outside_s: float
    set: float | None
    drift_kn: float | None
    set_fixes: int

    @property
    def actual_time_s(self) -> float | None:
        if self.start_s is None or self.end_s is None:
            return None
        return self.end_s - self.start_s

    @property
    def share_outside(self) -> float | None:
        return self.fixes_outside / self.fixes if self.fixes else None

    def row(self) -> dict:
        return {
            "revision": self.revision, "leg": self.leg, "from_wp": self.from_wp,
            "to_wp": self.to_wp, "sailing": self.sailing,
            "planned_distance_m": self.planned_distance_m,
            "planned_speed_kn": _f(self.planned_speed_kn),
            "planned_time_s": _f(self.planned_time_s), "start_utc": iso_z(self.start_s),
            "end_utc": iso_z(self.end_s), "actual_time_s": _f(self.actual_time_s),
            "completed": self.completed, "run_m": self.run_m, "dmg_m": _f(self.dmg_m),
            "smg_kn": _f(self.smg_kn), "fixes": self.fixes,
            "max_abs_xte_m": _f(self.max_abs_xte_m), "mean_xte_m": _f(self.mean_xte_m),
            "rms_xte_m": _f(self.rms_xte_m), "fixes_outside": self.fixes_outside,
            "share_outside": _f(self.share_outside), "time_outside_s": self.time_outside_s,
            "set": _f(self.set), "drift_kn": _f(self.drift_kn), "set_fixes": self.set_fixes,
        }


@dataclass(frozen=True)
class NoonFigures:
    """The figures of one ship's day, from the previous noon (or the departure, ``partial``)
    to this noon in ship's time. ``day_hours`` is 23, 24 or 25 when the clocks changed by an
    hour. ``run_m`` over the ground, ``dmg_m``/``cmg`` from the previous noon position (or
    the departure fix); ``avg_speed_kn`` = run / time, ``smg_kn`` = DMG / time. ``in_gap``:
    the noon position is interpolated across a gap in the fixes."""

    ship_date: str
    noon_s: float
    zd_minutes: int
    day_hours: float
    partial: bool
    lat: float
    lon: float
    in_gap: bool
    run_m: float
    dmg_m: float
    cmg: float | None
    avg_speed_kn: float | None
    smg_kn: float | None
    route_to_go_m: float
    revision: int
    leg: int
    eta_dest_plan_s: float | None
    eta_dest_smg_s: float | None

    def row(self) -> dict:
        return {
            "ship_date": self.ship_date, "noon_utc": iso_z(self.noon_s),
            "zone": zone_text(self.zd_minutes), "day_hours": self.day_hours,
            "partial": self.partial, "lat": self.lat, "lon": self.lon, "in_gap": self.in_gap,
            "run_m": self.run_m, "dmg_m": self.dmg_m, "cmg": _f(self.cmg),
            "avg_speed_kn": _f(self.avg_speed_kn), "smg_kn": _f(self.smg_kn),
            "route_to_go_m": _f(self.route_to_go_m), "revision": self.revision,
            "leg": self.leg, "eta_dest_plan_utc": iso_z(self.eta_dest_plan_s),
            "eta_dest_smg_utc": iso_z(self.eta_dest_smg_s),
        }


@dataclass(frozen=True)
class Gap:
    """An interval longer than the gap threshold between two consecutive fixes."""

    start_s: float
    end_s: float
    from_lat: float
    from_lon: float
    to_lat: float
    to_lon: float
    distance_m: float
    revision: int
    leg: int
    first_fix: int

    @property
    def duration_s(self) -> float:
        return self.end_s - self.start_s

    def row(self) -> dict:
        return {
            "start_utc": iso_z(self.start_s), "end_utc": iso_z(self.end_s),
            "duration_s": self.duration_s, "from_lat": self.from_lat,
            "from_lon": self.from_lon, "to_lat": self.to_lat, "to_lon": self.to_lon,
            "distance_m": self.distance_m, "revision": self.revision, "leg": self.leg,
        }


@dataclass(frozen=True)
class SuspectFix:
    """A fix left out of the statistics: flagged by the logbook, or by the engine because
    the speed implied from the previous good fix exceeds the craft's maximum."""

    fix: int
    time_s: float
    lat: float
    lon: float
    implied_speed_kn: float | None
    reason: str
    revision: int
    leg: int
    fix_id: int

    def row(self) -> dict:
        return {
            "time_utc": iso_z(self.time_s), "lat": self.lat, "lon": self.lon,
            "implied_speed_kn": _f(self.implied_speed_kn), "reason": self.reason,
            "revision": self.revision, "leg": self.leg,
            "fix_id": None if self.fix_id < 0 else self.fix_id,
        }


@dataclass(frozen=True)
class Settings:
    """The parameters a review was made with (for provenance)."""

    window_s: float
    gap_s: float
    include_suspect: bool
    max_speed_kn: float | None
    departure_s: float | None
    arrival_s: float | None
    earth: str


@dataclass(frozen=True, eq=False)
class Review:
    """The whole reconciliation of a voyage's fixes against its plan.

    ``routes[r]`` is revision r's route and ``revision_from_s[r]`` when it came into force.
    """

    fixes: FixResults
    passages: tuple[Passage, ...]
    episodes: tuple[Episode, ...]
    legs: tuple[LegStats, ...]
    noon: tuple[NoonFigures, ...]
    gaps: tuple[Gap, ...]
    suspects: tuple[SuspectFix, ...]
    routes: tuple[Route, ...]
    revision_from_s: tuple[float, ...]
    departure_s: float | None
    arrival_s: float | None
    departure_fix: int | None
    settings: Settings
    invalid_fixes: int = 0
    detail_from_s: float | None = None  # per-fix figures only from this time (watch mode)

    @property
    def revision_numbers(self) -> tuple[int, ...]:
        """The number rows give each route in :attr:`routes`: its own revision number, else
        its 1-based place in the sequence."""
        return tuple(r.revision if r.revision is not None else i + 1
                     for i, r in enumerate(self.routes))

    # -------------------------------------------------------------------------- tables
    def iter_rows(self, table: str) -> Iterator[dict]:
        """The rows of ``table`` (one of :data:`TABLES`) as dicts with the keys of
        :data:`TABLE_COLUMNS`; the fixes table is produced in blocks, so a million rows
        need not sit in memory at once."""
        if table == "fixes":
            yield from self._fix_rows()
            return
        items = {
            "legs": self.legs, "passages": self.passages, "episodes": self.episodes,
            "noon": self.noon, "gaps": self.gaps, "suspects": self.suspects,
        }.get(table)
        if items is None:
            from passagelog.errors import InputError

            raise InputError(f"table {table!r} is not known; use one of: {', '.join(TABLES)}")
        numbers = self.revision_numbers
        for item in items:
            row = item.row()
            if row.get("revision") is not None:
                row["revision"] = numbers[row["revision"]]
            yield row

    def rows(self, table: str) -> list[dict]:
        """All rows of ``table`` as a list (see :meth:`iter_rows`)."""
        return list(self.iter_rows(table))

    def fix_blocks(self, block: int = 20000) -> Iterator[dict[str, list]]:
        """The fixes table in blocks of columns: each block maps every column of
        :data:`TABLE_COLUMNS` ``["fixes"]`` to a list of row values (None where missing),
        the same values :meth:`iter_rows` gives, for writers that go column by column."""
        fx = self.fixes
        names = [tuple(w.name for w in r.waypoints) for r in self.routes]
        numbers = self.revision_numbers
        time_cols = {"time_utc": "time_s", "eta_wp_plan_utc": "eta_wp_plan_s",
                     "eta_dest_plan_utc": "eta_dest_plan_s", "eta_wp_smg_utc": "eta_wp_smg_s",
                     "eta_dest_smg_utc": "eta_dest_smg_s"}
        float_cols = ("lat", "lon", "xte_m", "along_m", "leg_to_go_m", "route_to_go_m",
                      "xtl_m", "dtw_m", "btw", "cmg_prev", "smg_prev_kn", "cmg_dep",
                      "dmg_dep_m", "smg_dep_kn", "smg_window_kn", "delay_s", "set", "drift_kn")
        for a in range(0, len(fx), block):
            b = min(len(fx), a + block)
            cols: dict[str, list] = {}
            for key, name in time_cols.items():
                arr = getattr(fx, name)[a:b]
                ok = np.isfinite(arr)
                text = iso_z_np(np.where(ok, arr, 0.0)).tolist()
                cols[key] = [t if good else None for t, good in zip(text, ok.tolist())]
            for name in float_cols:
                cols[name] = [x if x == x else None for x in getattr(fx, name)[a:b].tolist()]
            x = fx.xte_m[a:b]
            side = np.where(x > 0, "R", np.where(x < 0, "L", "")).tolist()
            cols["side"] = [s if v == v else None for s, v in zip(side, x.tolist())]
            rev = fx.revision[a:b].tolist()
            leg = fx.leg[a:b].tolist()
            cols["leg"] = leg
            cols["revision"] = [numbers[r] for r in rev]
            cols["inside_xtl"] = fx.inside_xtl[a:b].tolist()
            cols["phase"] = [PHASES[p] for p in fx.phase[a:b].tolist()]
            cols["suspect"] = fx.suspect[a:b].tolist()
            cols["from_wp"] = [names[r][k - 1] for r, k in zip(rev, leg)]
            cols["to_wp"] = [names[r][k] for r, k in zip(rev, leg)]
            cols["fix_id"] = [None if i < 0 else i for i in fx.fix_id[a:b].tolist()]
            yield {c: cols[c] for c in TABLE_COLUMNS["fixes"]}

    def _fix_rows(self, block: int = 20000) -> Iterator[dict]:
        keys = TABLE_COLUMNS["fixes"]
        for cols in self.fix_blocks(block):
            for values in zip(*(cols[c] for c in keys)):
                yield dict(zip(keys, values))

    # -------------------------------------------------------------------------- watch
    def status(self, row: int = -1) -> "Status":
        """What a watch officer asks for, at fix ``row`` (default the latest)."""
        from passagelog.review.status import status_of

        return status_of(self, row)


def dataclass_dict(obj: Any) -> dict:
    """A frozen result's fields as a plain dict (NaN as None)."""
    out = {}
    for f in fields(obj):
        v = getattr(obj, f.name)
        out[f.name] = _f(v) if isinstance(v, float) else v
    return out


# the watch summary lives in status.py; imported here for type checkers only
Status = Any
