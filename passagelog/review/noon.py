"""Noon figures: one row per ship's day, noon to noon in ship's time.

Ship's time is zone time: ZT = UTC - ZD. The zone description in force changes at the
clock-change log entries, so a ship's day from one noon to the next lasts 24 hours, or 25
when the clocks were retarded an hour (westbound: ZD grows by 60 min) and 23 when they were
advanced (eastbound). Noon is 12:00 ZT in the zone in force at that moment.

The noon position is interpolated on the geodesic between the fixes either side of noon at
the fraction of the interval's time (exact for a craft moving steadily between them); when
those fixes are more than the gap threshold apart, the row says so (``in_gap``). Distance run
is over the ground, fix to fix; distance made good is the geodesic from the previous noon
position (the departure fix for the first, ``partial``, day).
"""

from __future__ import annotations

import math
from datetime import datetime, timezone

import numpy as np

from passagelog.nav.geodesic import direct, inverse
from passagelog.nav.units import KN_MPS
from passagelog.review.inputs import Clocks
from passagelog.review.results import MIN_PROGRESS_KN, FixResults, NoonFigures


def ship_noons(clocks: Clocks, start_s: float, end_s: float) -> list[tuple[float, int]]:
    """Noons (UTC seconds, ZD minutes in force) strictly after ``start_s`` and at or
    before ``end_s``, in time order."""
    out = []
    bounds = list(clocks.from_s[1:]) + [math.inf]
    for a, b, z in zip(clocks.from_s, bounds, clocks.zd_minutes):
        lo, hi = max(a, start_s), min(b, end_s + 1e-9)
        if lo > hi:
            continue
        shift = 43200.0 + 60.0 * z
        d0 = math.floor((lo - shift) / 86400.0)
        d1 = math.floor((hi - shift) / 86400.0)
        for d in range(d0, d1 + 1):
            tn = d * 86400.0 + shift
            if a <= tn < b and start_s < tn <= end_s:
                out.append((tn, z))
    out.sort()
    return out


def noon_figures(fr: FixResults, plans, clocks: Clocks, good: np.ndarray,
                 dep_fix: int | None, dep_s: float | None, arr_s: float | None,
                 gap_s: float, earth) -> list[NoonFigures]:
    if dep_fix is None:
        return []
    gi = np.flatnonzero(good & (fr.phase != 0))
    gi = gi[gi >= dep_fix]
    if gi.size == 0:
        return []
    t = fr.time_s
    gt = t[gi]
    run_cum = np.cumsum(np.where(np.isfinite(fr.dist_prev_m[gi]), fr.dist_prev_m[gi], 0.0))
    run_cum -= run_cum[0]  # from the departure fix
    end = float(gt[-1]) if arr_s is None else min(float(arr_s), float(gt[-1]))
    start = float(t[dep_fix]) if dep_s is None else max(float(dep_s), float(t[dep_fix]))
    out = []
    prev_t = float(dep_s) if dep_s is not None else float(t[dep_fix])
    prev_lat, prev_lon = float(fr.lat[dep_fix]), float(fr.lon[dep_fix])
    prev_run = 0.0
    partial = True
    for tn, z in ship_noons(clocks, start, end):
        j = int(np.searchsorted(gt, tn, side="right")) - 1
        if j < 0:
            continue
        ia = int(gi[j])
        if gt[j] == tn or j + 1 >= gi.size:
            if gt[j] != tn:
                continue
            lat, lon, frac, seg, in_gap, run = (float(fr.lat[ia]), float(fr.lon[ia]), 0.0,
                                                0.0, False, float(run_cum[j]))
        else:
            ib = int(gi[j + 1])
            seg, azi, _ = inverse(float(fr.lat[ia]), float(fr.lon[ia]), float(fr.lat[ib]),
                                  float(fr.lon[ib]), earth)
            frac = (tn - gt[j]) / (gt[j + 1] - gt[j])
            lat, lon, _ = direct(float(fr.lat[ia]), float(fr.lon[ia]), azi, seg * frac, earth)
            in_gap = bool(gt[j + 1] - gt[j] > gap_s)
            run = float(run_cum[j] + frac * seg)
        r = int(fr.revision[ia])
        k = int(fr.leg[ia]) - 1
        rp = plans[r]
        _, along = rp.legs[k].offset(lat, lon)
        leg_to_go = float(rp.length[k] - along)
        rtg = leg_to_go + float(rp.total - rp.cum_start[k] - rp.length[k])
        dmg, cmg, _ = inverse(prev_lat, prev_lon, lat, lon, earth)
        hours = (tn - prev_t) / 3600.0
        el = tn - prev_t
        v = rp.speed_kn[k] * KN_MPS
        eta_plan = tn + max(leg_to_go, 0.0) / v + rp.time_after[k] if v > 0 else math.nan
        smg_w = fr.value("smg_window_kn", ia)
        eta_smg = (tn + max(rtg, 0.0) / (smg_w * KN_MPS)
                   if math.isfinite(smg_w) and smg_w > MIN_PROGRESS_KN else math.nan)
        zt = datetime.fromtimestamp(tn - 60.0 * z, tz=timezone.utc)
        out.append(NoonFigures(
            ship_date=zt.strftime("%Y-%m-%d"), noon_s=tn, zd_minutes=z,
            day_hours=hours, partial=partial, lat=lat, lon=lon, in_gap=in_gap,
            run_m=run - prev_run, dmg_m=dmg, cmg=cmg if dmg > 0 else None,
            avg_speed_kn=(run - prev_run) / el / KN_MPS if el > 0 else None,
            smg_kn=dmg / el / KN_MPS if el > 0 else None, route_to_go_m=rtg,
            revision=r, leg=k + 1,
            eta_dest_plan_s=eta_plan if math.isfinite(eta_plan) else None,
            eta_dest_smg_s=eta_smg if math.isfinite(eta_smg) else None,
        ))
        prev_t, prev_lat, prev_lon, prev_run, partial = tn, lat, lon, run, False
    return out
