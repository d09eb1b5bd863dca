"""Rhumb lines in batch: inverse, direct and leg offsets, against per-item loops.

Each figure is a ratio against a loop measured in the same run (so it means the same on any
machine):

* ``rhumb_inverse_np`` / ``rhumb_direct_np`` on N legs against a loop of the scalar
  ``rhumb_inverse`` / ``rhumb_direct`` (the same formulas on Python floats);
* ``RhumbLeg.offsets_np`` on N positions against a loop of the scalar ``RhumbLeg.offset``,
  which runs the same foot iteration with geographiclib's Python ``Geodesic.Inverse``, for
  legs of several kinds; with the number of vectorised geodesic inversions per position
  and the largest batch-vs-loop difference.

    python benchmarks/bench_rhumb.py [--n N] [--loop M] [--seed S]

Target (issue 2): offsets >= 100x the loop, differences < 1 mm.
"""

from __future__ import annotations

import sys

import numpy as np
from _common import arguments, best_of, loop_offsets, scatter_about

from passagelog.nav import rhumb
from passagelog.nav.rhumb import (
    RhumbLeg,
    rhumb_direct,
    rhumb_direct_np,
    rhumb_inverse,
    rhumb_inverse_np,
)

LEGS = {
    "ocean 50N 4W -> 40N 70W": (50.0, -4.0, 40.0, -70.0),
    "meridian 30S -> 30N": (-30.0, 20.0, 30.0, 20.0),
    "parallel 45N": (45.0, -10.0, 45.0, 30.0),
    "antimeridian": (10.0, 170.0, 14.0, -172.0),
    "high latitude 84N -> 85N": (84.0, -170.0, 85.0, 170.0),
}


def bench_problems(n: int, m: int, rng) -> None:
    lat1 = rng.uniform(-80, 80, n)
    lon1 = rng.uniform(-180, 180, n)
    lat2 = rng.uniform(-80, 80, n)
    lon2 = rng.uniform(-180, 180, n)
    t_inv = best_of(lambda: rhumb_inverse_np(lat1, lon1, lat2, lon2)) / n
    t_inv_loop = best_of(lambda: [rhumb_inverse(lat1[i], lon1[i], lat2[i], lon2[i])
                                  for i in range(m)], 1) / m
    dist, course = rhumb_inverse_np(lat1, lon1, lat2, lon2)
    t_dir = best_of(lambda: rhumb_direct_np(lat1, lon1, course, dist)) / n
    t_dir_loop = best_of(lambda: [rhumb_direct(lat1[i], lon1[i], course[i], dist[i])
                                  for i in range(m)], 1) / m
    print(f"inverse  batch {t_inv * 1e6:6.2f} us, loop {t_inv_loop * 1e6:6.1f} us: "
          f"{t_inv_loop / t_inv:,.0f}x")
    print(f"direct   batch {t_dir * 1e6:6.2f} us, loop {t_dir_loop * 1e6:6.1f} us: "
          f"{t_dir_loop / t_dir:,.0f}x")


def bench_offsets(name: str, leg_ends, n: int, m: int, rng) -> float:
    leg = RhumbLeg(*leg_ends)
    # degrees: some 6 NM near the pole, 50 NM elsewhere
    lat, lon = scatter_about(leg, n, rng, spread_deg=0.1 if "high" in name else 0.8)

    count = [0]
    real = rhumb._geodesic.inverse_np

    def counting(*args, **kw):
        count[0] += np.size(args[0])
        return real(*args, **kw)

    rhumb._geodesic.inverse_np = counting
    try:
        xte, al = leg.offsets_np(lat, lon)
    finally:
        rhumb._geodesic.inverse_np = real
    t_batch = best_of(lambda: leg.offsets_np(lat, lon)) / n
    loop = loop_offsets(leg, lat, lon, xte, al, m, rng)
    ratio = loop.seconds_each / t_batch
    print(f"offsets  {name:<26} batch {t_batch * 1e6:5.2f} us, "
          f"loop {loop.seconds_each * 1e6:6.1f} us: {ratio:4.0f}x; "
          f"{count[0] / n:.2f} inversions/position; "
          f"max |batch - loop| {loop.max_diff_m * 1e3:.5f} mm")
    return ratio


def main(argv: list[str] | None = None) -> int:
    args = arguments(__doc__, "--n", 200_000, argv)
    rng = np.random.default_rng(args.seed)
    bench_problems(args.n, args.loop * 10, rng)
    for name, ends in LEGS.items():
        bench_offsets(name, ends, args.n, args.loop, rng)
    return 0


if __name__ == "__main__":
    sys.exit(main())
