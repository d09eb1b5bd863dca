"""Benchmark: reconcile 1,000,000 fixes (a 30-day track) against a 100-waypoint plan.

Targets (issue 5, 2-core machine): <= 10 s wall, <= 1.5 GB peak memory, and >= 100x the
throughput of a per-fix loop over geographiclib's Python API, measured on a subset in the
same run. It also states how far the engine is from the floor of about one vectorised
geodesic inverse per fix (pyproj's Geod.inv, PROJ's C port of Karney's algorithms).

    python benchmarks/bench_review.py [--fixes N] [--subset N] [--json]

The baseline loop computes, fix by fix, the same figures the engine gives: the offset on the
active leg (the navigation core's scalar ``offset``, which iterates geographiclib's
``GeodesicLine`` and ``Inverse``), geographiclib ``Inverse`` to the next waypoint, from the
previous fix, from the departure fix and from the start of the SMG window, and set and drift
from a rhumb-line DR. The engine uses two threads (PROJ's geodesic code runs without the GIL),
so its CPU time is also shown: the CPU ratio is the gain per core.
"""

from __future__ import annotations

import argparse
import json
import resource
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

from passagelog.model import LegPlan, Route, Waypoint  # noqa: E402
from passagelog.nav.geodesic import direct, direct_np, inverse_np  # noqa: E402
from passagelog.nav.legs import make_leg  # noqa: E402
from passagelog.review import reconcile, watch  # noqa: E402

T0 = 1_780_000_000.0  # 2026-05-28T20:26:40Z
DAYS = 30


def _rhumb_available() -> bool:
    try:
        make_leg(10.0, 0.0, 10.5, 0.5, "rhumb")
    except ImportError:
        return False
    return True


def build_plan(n_wp: int = 100, seed: int = 7) -> Route:
    """A 100-waypoint ocean route eastward across the Pacific (over the antimeridian),
    legs alternating great circle and rhumb line, about 100 NM each."""
    rng = np.random.default_rng(seed)
    sailings = ["great-circle", "rhumb"] if _rhumb_available() else ["great-circle"]
    lat, lon = 30.0, 140.0
    wps = [Waypoint("WP001", lat, lon, arrival_radius_m=926.0)]
    for i in range(1, n_wp):
        course = 90.0 + rng.uniform(-35.0, 35.0)
        lat, lon, _ = direct(lat, lon, course, rng.uniform(150e3, 220e3))
        wps.append(Waypoint(f"WP{i + 1:03d}", lat, lon, arrival_radius_m=926.0))
    legs = [LegPlan(sailing=sailings[k % len(sailings)], speed_kn=14.0, xtl_port_m=1852.0,
                    xtl_stbd_m=1852.0) for k in range(n_wp - 1)]
    return Route("bench", tuple(wps), tuple(legs))


def build_track(route: Route, n: int, seed: int = 11) -> dict:
    """``n`` fixes spread evenly over 30 days along the route, wandering up to ~2 km off
    the line (a slow sinusoid plus GNSS-like noise), a little past the last waypoint."""
    rng = np.random.default_rng(seed)
    wps = route.waypoints
    legs = [make_leg(wps[k].lat, wps[k].lon, wps[k + 1].lat, wps[k + 1].lon, p.sailing)
            for k, p in enumerate(route.legs)]
    lengths = np.array([lg.distance_m for lg in legs])
    cum = np.concatenate([[0.0], np.cumsum(lengths)])
    t = T0 + np.linspace(0.0, DAYS * 86400.0, n)
    s = np.linspace(0.0, cum[-1] * 1.0005, n)  # a little past the end: arrival
    k = np.minimum(np.searchsorted(cum, s, side="right") - 1, len(legs) - 1)
    lat = np.empty(n)
    lon = np.empty(n)
    for j, lg in enumerate(legs):
        sel = np.flatnonzero(k == j)
        if sel.size:
            la, lo = lg.points_at_np(s[sel] - cum[j])
            lat[sel], lon[sel] = la, lo
    off = 2000.0 * np.sin(2 * np.pi * t / 86400.0 * 0.7) + rng.normal(0.0, 8.0, n)
    lat, lon, _ = direct_np(lat, lon, np.zeros(n), off)  # wander north and south
    # heading and speed through the water logged with every fix (an NMEA HDT + VHW feed)
    return {"time_s": t, "lat": lat, "lon": lon, "heading": np.full(n, 90.0),
            "stw_kn": np.full(n, 14.0), "legs": legs, "k": k}


def baseline_loop(route: Route, track: dict, start: int, count: int) -> tuple[float, float]:
    """Seconds per fix (wall, CPU) for a per-fix loop computing the same figures one fix at
    a time: geographiclib's Python ``Inverse`` (and the core's scalar ``offset``, which
    iterates geographiclib's ``GeodesicLine``) for the geodesics, and the core's scalar
    rhumb-line DR for set and drift (geographiclib's Python package has no rhumb lines)."""
    from geographiclib.geodesic import Geodesic

    from passagelog.nav.rhumb import rhumb_direct, rhumb_inverse

    g = Geodesic.WGS84
    wps = route.waypoints
    legs, k = track["legs"], track["k"]
    lat, lon, t = track["lat"], track["lon"], track["time_s"]
    hdg, stw = track["heading"], track["stw_kn"]
    t0, c0 = time.perf_counter(), time.process_time()
    for i in range(start, start + count):
        kk = int(k[i])
        legs[kk].offset(float(lat[i]), float(lon[i]))  # XTE, along-track
        w = wps[kk + 1]
        g.Inverse(lat[i], lon[i], w.lat, w.lon)  # DTW, BTW, passage test
        g.Inverse(lat[i - 1], lon[i - 1], lat[i], lon[i])  # made good since the last fix
        g.Inverse(lat[0], lon[0], lat[i], lon[i])  # ... since departure
        j = int(np.searchsorted(t, t[i] - 3 * 3600.0))
        g.Inverse(lat[j], lon[j], lat[i], lon[i])  # ... over the window
        dt = t[i] - t[i - 1]  # set and drift from the DR of the last fix
        dr = rhumb_direct(float(lat[i - 1]), float(lon[i - 1]), float(hdg[i - 1]),
                          float(stw[i - 1]) * 1852.0 / 3600.0 * dt)
        rhumb_inverse(dr[0], dr[1], float(lat[i]), float(lon[i]))
    return (time.perf_counter() - t0) / count, (time.process_time() - c0) / count


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--fixes", type=int, default=1_000_000)
    ap.add_argument("--subset", type=int, default=1000)
    ap.add_argument("--json", action="store_true")
    args = ap.parse_args(argv)

    route = build_plan()
    track = build_track(route, args.fixes)
    cols = {key: track[key] for key in ("time_s", "lat", "lon", "heading", "stw_kn")}
    rss0 = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0

    # the loop is timed in two halves, before and after the engine, so that a change in the
    # machine's load during the run weighs on both alike
    half = max(args.subset // 2, 1)
    w1, c1 = baseline_loop(route, track, args.fixes // 3, half)

    # warm up (imports, PROJ's geodesic set-up, numpy's first allocations), as the loop's
    # first half has warmed up geographiclib
    reconcile(route, {key: value[:20000] for key, value in cols.items()})

    t0, c0 = time.perf_counter(), time.process_time()
    rv = reconcile(route, cols)
    wall, cpu = time.perf_counter() - t0, time.process_time() - c0
    rss1 = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0

    w2, c2 = baseline_loop(route, track, args.fixes // 2, half)
    per_fix_loop, per_fix_loop_cpu = (w1 + w2) / 2, (c1 + c2) / 2

    t0, c0 = time.perf_counter(), time.process_time()
    st = watch(route, cols)
    watch_s, watch_cpu = time.perf_counter() - t0, time.process_time() - c0
    assert st == rv.status(), "the watch summary must equal the full review's"

    t0, c0 = time.perf_counter(), time.process_time()
    inverse_np(track["lat"], track["lon"], route.waypoints[-1].lat, route.waypoints[-1].lon)
    floor, floor_cpu = time.perf_counter() - t0, time.process_time() - c0

    per_fix = wall / args.fixes
    ratio = per_fix_loop / per_fix
    ratio_cpu = per_fix_loop_cpu / (cpu / args.fixes)
    sailings = sorted({p.sailing for p in route.legs})
    res = {
        "fixes": args.fixes, "waypoints": len(route.waypoints), "sailings": sailings,
        "passages": len(rv.passages), "episodes": len(rv.episodes), "noon_rows": len(rv.noon),
        "wall_s": round(wall, 3), "cpu_s": round(cpu, 3), "us_per_fix": round(per_fix * 1e6, 3),
        "peak_rss_mb": round(rss1, 1), "rss_before_mb": round(rss0, 1),
        "loop_us_per_fix": round(per_fix_loop * 1e6, 1), "loop_subset": args.subset,
        "speedup_vs_loop": round(ratio, 1), "speedup_vs_loop_cpu": round(ratio_cpu, 1),
        "floor_one_inverse_s": round(floor, 3), "watch_latest_fix_s": round(watch_s, 3),
        "watch_latest_fix_cpu_s": round(watch_cpu, 3),
        "x_floor": round(wall / floor, 2), "x_floor_cpu": round(cpu / floor_cpu, 2),
        "load_average_1min": round(__import__("os").getloadavg()[0], 2),
        "targets": {"wall_s<=10": wall <= 10.0, "peak_mb<=1536": rss1 <= 1536.0,
                    "throughput>=100x the loop (wall time, both measured here)":
                        ratio >= 100.0},
    }
    if args.json:
        print(json.dumps(res))
    else:
        print(f"reconcile {args.fixes:,} fixes x {len(route.waypoints)}-waypoint plan "
              f"({', '.join(sailings)} legs): {wall:.2f} s wall ({cpu:.2f} s CPU), "
              f"{per_fix * 1e6:.2f} us/fix")
        print(f"  passages {len(rv.passages)}, deviation episodes {len(rv.episodes)}, "
              f"noon rows {len(rv.noon)}")
        print(f"  peak RSS of the process {rss1:.0f} MB (before reconcile {rss0:.0f} MB)")
        print(f"  per-fix loop over geographiclib (subset of {args.subset}): "
              f"{per_fix_loop * 1e6:.0f} us/fix -> engine is {ratio:.0f}x faster by wall time, "
              f"{ratio_cpu:.0f}x by CPU time")
        print(f"  watch summary of the latest fix (state machine over all, figures over the "
              f"last window): {watch_s:.2f} s ({watch_cpu:.2f} s CPU)")
        print(f"  floor, one vectorised geodesic inverse per fix: {floor:.2f} s "
              f"({floor / args.fixes * 1e6:.2f} us/fix); engine = {wall / floor:.1f}x floor "
              f"(CPU: {cpu / floor_cpu:.1f}x)")
        print(f"  load average over the last minute: {res['load_average_1min']} "
              "(other work on the machine stretches wall times; ratios are of the same run)")
        for name, ok in res["targets"].items():
            print(f"  target {name}: {'met' if ok else 'NOT met'}")
    return 0 if all(res["targets"].values()) else 1


if __name__ == "__main__":
    sys.exit(main())
