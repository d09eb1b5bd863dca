"""Batch offsets (XTE and along-track) of 1,000,000 positions against one leg of each kind.

Reported as a ratio against a per-position loop over geographiclib's Python ``Geodesic``
doing the same offset computation (the legs' scalar ``offset``), timed on a subset in the
same run, so the figure does not depend on the machine. Also shown: how far the batch is from
the floor of one vectorised pyproj inverse per position, and the largest difference between
batch and loop on the subset (the same accuracy is part of the target).

    python benchmarks/bench_offsets.py [--positions N] [--loop M] [--seed S]

Target (issue 2): batch >= 100x the loop's throughput, differences < 1 mm.
"""

from __future__ import annotations

import sys

import numpy as np
from _common import arguments, best_of, loop_offsets, scatter_about

from passagelog.nav.geodesic import inverse_np
from passagelog.nav.legs import make_leg

LEG = (50.0, -4.0, 40.0, -70.0)  # western approaches of the English Channel -> off Nantucket


def bench(sailing: str, n: int, m: int, seed: int) -> float | None:
    try:
        leg = make_leg(*LEG, sailing)
    except ImportError as exc:
        print(f"{sailing}: not available in this build ({exc})", flush=True)
        return None
    rng = np.random.default_rng(seed)
    lat, lon = scatter_about(leg, n, rng)  # up to some 250 NM either side

    t_batch = best_of(lambda: leg.offsets_np(lat, lon), 2)
    xte, along = leg.offsets_np(lat, lon)
    loop = loop_offsets(leg, lat, lon, xte, along, m, rng)
    # floor: one vectorised inverse problem per position (pyproj's C geodesic)
    rlat, rlon = lat[::-1].copy(), lon[::-1].copy()
    t_floor = best_of(lambda: inverse_np(lat, lon, rlat, rlon), 2)

    per_batch = t_batch / n
    per_loop = loop.seconds_each
    per_floor = t_floor / n
    ratio = per_loop / per_batch
    print(f"{sailing} leg {LEG[0]:g},{LEG[1]:g} -> {LEG[2]:g},{LEG[3]:g} "
          f"({leg.distance_m / 1852:.1f} NM), |XTE| up to {np.max(np.abs(xte)) / 1852:.0f} NM")
    print(f"  batch   {n:>9,} positions  {1 / per_batch:>12,.0f} positions/s "
          f"({per_batch * 1e6:.2f} us each)")
    print(f"  loop    {m:>9,} positions  {1 / per_loop:>12,.0f} positions/s "
          f"({per_loop * 1e6:.1f} us each)")
    print(f"  ratio   {ratio:,.0f}x the loop (target >= 100x): "
          f"{'met' if ratio >= 100 else 'NOT met'}")
    print(f"  floor   one vectorised inverse per position: {1 / per_floor:,.0f} positions/s; "
          f"the batch costs {per_batch / per_floor:.2f} of those per position")
    print(f"  same accuracy: batch vs loop max |dXTE| {loop.max_dxte_m * 1e3:.4f} mm, "
          f"max |dalong| {loop.max_dalong_m * 1e3:.4f} mm "
          f"({'ok' if loop.max_diff_m < 1e-3 else 'DIFFERENT'})")
    return ratio


def main(argv: list[str] | None = None) -> int:
    args = arguments(__doc__, "--positions", 1_000_000, argv)
    for sailing in ("great-circle", "rhumb"):
        bench(sailing, args.positions, args.loop, args.seed)
    return 0


if __name__ == "__main__":
    sys.exit(main())
