"""Run GeographicLib's C++ RhumbSolve (Debian package geographiclib-tools) once per batch.

Every call sends all its lines through stdin to one RhumbSolve process and reads one output
line per input line, so a few hundred problems cost one process start. RhumbSolve computes
rhumb lines exactly in terms of elliptic integrals (Karney, GeographicLib 2.1); it shares no
code with passagelog.
"""

from __future__ import annotations

import shutil
import subprocess

import numpy as np
import pytest

BINARY = shutil.which("RhumbSolve")

needs_rhumbsolve = pytest.mark.skipif(
    BINARY is None,
    reason="RhumbSolve not found (install Debian's geographiclib-tools to run these checks)",
)


def as_sent(rows) -> np.ndarray:
    """The rows exactly as RhumbSolve reads them (12 decimals), to feed both sides alike."""
    return np.array([[float(format(float(v), ".12f")) for v in row] for row in rows])


def _run(args: list[str], rows) -> np.ndarray:
    # Fixed-point text: RhumbSolve, like GeodSolve, would read "1e-05" as 1 degree East
    # followed by junk.
    text = "".join(" ".join(format(float(v), ".12f") for v in row) + "\n" for row in rows)
    res = subprocess.run([BINARY, *args, "-p", "9"], input=text, capture_output=True,
                         text=True, check=False)
    assert res.returncode == 0, [ln for ln in res.stdout.splitlines() if "ERROR" in ln][:3]
    lines = res.stdout.splitlines()
    assert len(lines) == len(rows), (args, len(lines), len(rows))
    return np.array([[float(x) for x in ln.split()] for ln in lines], dtype=np.float64)


def _ellipsoid(a: float | None, f: float | None) -> list[str]:
    return [] if a is None else ["-e", repr(float(a)), repr(float(f))]


def inverse(rows, a=None, f=None) -> np.ndarray:
    """Rows of (lat1, lon1, lat2, lon2) -> array of (azi12, s12, S12)."""
    return _run(["-i", *_ellipsoid(a, f)], rows)


def direct(rows, a=None, f=None) -> np.ndarray:
    """Rows of (lat1, lon1, azi12, s12) -> array of (lat2, lon2, S12)."""
    return _run(_ellipsoid(a, f), rows)
