"""What the offset benchmarks share: timing, positions scattered about a leg, and the
per-position baseline loop with its batch-vs-loop difference.

The scripts are run as ``python benchmarks/<name>.py``, so this folder is on ``sys.path``
and they import it as ``_common``.
"""

from __future__ import annotations

import argparse
import time
from dataclasses import dataclass

import numpy as np


def arguments(doc: str, count_flag: str, count_default: int, argv=None) -> argparse.Namespace:
    """The command line of an offsets benchmark: how many positions (``count_flag``), how
    many of them the baseline loop runs on (``--loop``, 300) and the seed (``--seed``)."""
    ap = argparse.ArgumentParser(description=doc.splitlines()[0])
    ap.add_argument(count_flag, type=int, default=count_default)
    ap.add_argument("--loop", type=int, default=300)
    ap.add_argument("--seed", type=int, default=2026)
    return ap.parse_args(argv)


def best_of(fn, repeat: int = 2) -> float:
    """The shortest of ``repeat`` wall-clock runs of ``fn()``, seconds."""
    best = float("inf")
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def scatter_about(leg, n: int, rng, spread_deg: float = 0.8,
                  lon_factor: float = 1.5) -> tuple[np.ndarray, np.ndarray]:
    """``n`` positions about ``leg``: along-track from 10 % before its start to 10 % past its
    end, then normally spread by ``spread_deg`` degrees of latitude and ``lon_factor`` times
    that of longitude (0.8 degrees: some 50 NM); latitudes kept within 89 degrees,
    longitudes wrapped into [-180, 180)."""
    along = rng.uniform(-0.1, 1.1, n) * leg.distance_m
    lat, lon = leg.points_at_np(along)
    lat = np.clip(lat + rng.normal(0.0, spread_deg, n), -89.0, 89.0)
    lon = (lon + rng.normal(0.0, lon_factor * spread_deg, n) + 180.0) % 360.0 - 180.0
    return lat, lon


@dataclass(frozen=True)
class LoopRun:
    """The baseline: the leg's scalar ``offset`` on a subset of the positions."""

    seconds_each: float
    max_dxte_m: float
    max_dalong_m: float

    @property
    def max_diff_m(self) -> float:
        return max(self.max_dxte_m, self.max_dalong_m)


def loop_offsets(leg, lat: np.ndarray, lon: np.ndarray, xte: np.ndarray, along: np.ndarray,
                 m: int, rng) -> LoopRun:
    """Time ``leg.offset`` over ``m`` of the positions (drawn by ``rng``, one run) and
    compare it with the batch results ``xte``/``along`` at the same positions."""
    sub = rng.choice(len(lat), size=m, replace=False)
    out = np.empty((m, 2))

    def loop():
        for k, i in enumerate(sub):
            out[k] = leg.offset(float(lat[i]), float(lon[i]))

    seconds = best_of(loop, 1)
    return LoopRun(seconds / m, float(np.max(np.abs(xte[sub] - out[:, 0]))),
                   float(np.max(np.abs(along[sub] - out[:, 1]))))
