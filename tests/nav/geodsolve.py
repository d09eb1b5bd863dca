"""Run GeographicLib's C++ GeodSolve (Debian package geographiclib-tools) once per batch.

Every call sends all its lines through stdin to one GeodSolve process and reads one output
line per input line, so a few hundred problems cost one process start.

Also an independent search for the foot of the perpendicular from a position to a geodesic
extended past its ends, done only with GeodSolve: a coarse scan of the distance along the
whole line, then bisection on the right-angle condition (the geodesic from the foot to the
position leaves the line at 90 degrees). It shares no code with passagelog.
"""

from __future__ import annotations

import shutil
import subprocess

import numpy as np
import pytest

BINARY = shutil.which("GeodSolve")

needs_geodsolve = pytest.mark.skipif(
    BINARY is None,
    reason="GeodSolve not found (install Debian's geographiclib-tools to run these checks)",
)


def _run(args: list[str], rows) -> np.ndarray:
    # fixed-point text: GeodSolve reads "1e-05" as 1 degree East followed by junk
    text = "".join(" ".join(format(float(v), ".12f") for v in row) + "\n" for row in rows)
    res = subprocess.run([BINARY, *args, "-p", "10"], input=text, capture_output=True,
                         text=True)
    assert res.returncode == 0, [ln for ln in res.stdout.splitlines() if "ERROR" in ln][:3]
    out = res.stdout
    lines = out.splitlines()
    assert len(lines) == len(rows), (args, len(lines), len(rows))
    return np.array([[float(x) for x in ln.split()] for ln in lines], dtype=np.float64)


def _ellipsoid(a: float | None, f: float | None) -> list[str]:
    return [] if a is None else ["-e", repr(a), repr(f)]


def inverse(rows, a=None, f=None) -> np.ndarray:
    """Rows of (lat1, lon1, lat2, lon2) -> array of (azi1, azi2, s12)."""
    return _run(["-i", *_ellipsoid(a, f)], rows)


def direct(rows, a=None, f=None) -> np.ndarray:
    """Rows of (lat1, lon1, azi1, s12) -> array of (lat2, lon2, azi2)."""
    return _run(_ellipsoid(a, f), rows)


def _perp(lat1, lon1, azi1, s, plat, plon, a, f):
    """cos of the angle at F(s) between the line and the geodesic to P, and the distance."""
    pts = direct(np.column_stack([lat1, lon1, azi1, s]), a, f)
    inv = inverse(np.column_stack([pts[:, 0], pts[:, 1], plat, plon]), a, f)
    dazi = np.radians(inv[:, 0] - pts[:, 2])
    return np.cos(dazi), np.sin(dazi), inv[:, 2]


def foot(lat1, lon1, lat2, lon2, plat, plon, a=None, f=None, scan=200):
    """Reference (xte_m, along_m) of positions against the geodesic lines through
    (lat1, lon1) -> (lat2, lon2) (arrays of equal length, one leg per position).

    The search runs over the line from the leg's midpoint back and forward by half the
    equatorial circumference, keeps the nearest scan point, then
    bisects on the sign of cos(angle) between the line's azimuth at the foot and the
    azimuth of the geodesic from the foot to the position, to 1e-6 m.
    """
    lat1, lon1, lat2, lon2, plat, plon = (np.asarray(x, dtype=np.float64) for x in
                                          (lat1, lon1, lat2, lon2, plat, plon))
    n = lat1.size
    leg = inverse(np.column_stack([lat1, lon1, lat2, lon2]), a, f)
    azi1, s12 = leg[:, 0], leg[:, 2]
    aa = 6378137.0 if a is None else a
    half = np.pi * aa  # half the equatorial circumference
    offs = np.linspace(-half, half, scan)
    s_grid = (0.5 * s12)[:, None] + offs[None, :]
    rep = lambda x: np.repeat(x, scan)  # noqa: E731
    _, _, d = _perp(rep(lat1), rep(lon1), rep(azi1), s_grid.ravel(), rep(plat), rep(plon),
                    a, f)
    best = np.argmin(d.reshape(n, scan), axis=1)
    step = offs[1] - offs[0]
    s_best = s_grid[np.arange(n), best]
    lo, hi = s_best - step, s_best + step
    c_lo, _, _ = _perp(lat1, lon1, azi1, lo, plat, plon, a, f)
    c_hi, _, _ = _perp(lat1, lon1, azi1, hi, plat, plon, a, f)
    # distance decreases where cos > 0 (the position is ahead): root from + to -.
    # On an ellipsoid the geodesic does not close, so "the line extended" is taken as half a
    # circumference either side of the leg's midpoint; a nearest foot out near those ends
    # (3 % of the way), or the nearest scan point at an end, is ambiguous and comes back as NaN.
    ok = ((c_lo > 0) & (c_hi < 0) & (best > 0) & (best < scan - 1)
          & (np.abs(s_best - 0.5 * s12) < 0.97 * half))
    while np.max(hi - lo) > 1e-6:
        mid = 0.5 * (lo + hi)
        c, _, _ = _perp(lat1, lon1, azi1, mid, plat, plon, a, f)
        ahead = c > 0
        lo = np.where(ahead, mid, lo)
        hi = np.where(ahead, hi, mid)
    s = 0.5 * (lo + hi)
    _, sn, d = _perp(lat1, lon1, azi1, s, plat, plon, a, f)
    xte = np.where(sn >= 0, d, -d)
    ok &= np.abs(s - 0.5 * s12) < 0.97 * half
    return np.where(ok, xte, np.nan), np.where(ok, s, np.nan)
