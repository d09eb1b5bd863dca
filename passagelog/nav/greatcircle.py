"""Great-circle legs: geodesics on the WGS84 ellipsoid (or a sphere), with offsets.

A :class:`GreatCircleLeg` is the shortest geodesic between two points, solved with
geographiclib (Karney 2013, "Algorithms for geodesics", J. Geod. 87:43-55). On the sphere
models it is a great circle in the strict sense; on the ellipsoid the trade's "great circle"
is the geodesic, which is what is computed.

Offsets (cross-track error and along-track distance) are measured to the foot of the shortest
geodesic from the position to the leg's geodesic extended past its ends. The foot is where
that shortest geodesic meets the line at a right angle: this is the *intercept* problem of
Karney (2011), "Geodesics on an ellipsoid of revolution", arXiv:1102.1215, sec. 8. It is solved
here by iterating on the foot's parameter along the line:

1. a first foot from the auxiliary sphere (reduced latitude; the geodesic maps to a great
   circle there), with the longitude lag of the geodesic applied to the position;
2. from the current foot F, one inverse problem F -> P gives the distance ``d`` and the angle
   ``theta`` between the line and the geodesic to P at F; the right spherical triangle gives
   the move along the line ``ds = R atan2(sin(d/R) cos(theta), cos(d/R))``, with R the
   radius of Gaussian curvature at the mean latitude of F and P (exact on a sphere; on the
   ellipsoid each step shrinks the error by a factor well below f (d/R)^2);
3. repeat on the positions that have not yet moved by less than :data:`FOOT_TOLERANCE_M`.

The line extended passes the position once per turn round the Earth, so there is one
candidate foot per turn (on the ellipsoid the line does not close, and the candidates are not
one point). The foot taken is the one nearest the leg's middle along the line, with the
along-track signed from the leg's start: ``along_m - distance_m / 2`` lies within about half
a turn (some 20,000 km; up to some 10 % more for positions near the pole of the line, where
the candidates lie farther apart). Along-track and XTE are then continuous for positions
within 90 degrees of arc of the leg; they jump only where two candidates are equally far
along the line from the middle, near the antipode of the leg's middle, some 90 degrees of arc
or more from every point of the leg. Such a position gets the geometric figures (finite, a
foot in the strict sense), but they tell a navigator nothing about that leg. Within about 100
km of the pole of the leg's great circle (|XTE| near a quarter meridian) the foot is badly
conditioned: the iteration may not converge (a GeometryError says so), and the foot found may
not be the candidate nearest the middle; within about 0.6 km there is no foot at all.

The batch version (:meth:`GreatCircleLeg.offsets_np`) evaluates points of the line in numpy
(the series of geographiclib's ``GeodesicLine``) and runs one vectorised pyproj inverse per
iteration on the positions not yet converged; the scalar version (:meth:`GreatCircleLeg.offset`)
runs the same algorithm with geographiclib's ``GeodesicLine.ArcPosition`` and ``Inverse``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from passagelog.errors import GeometryError, InputError
from passagelog.nav.earth import WGS84, Earth, get_earth

#: Iteration for the foot stops once the last move along the line is below this, metres.
FOOT_TOLERANCE_M = 5e-5
#: The foot iteration also stops when ``SETTLE_GAIN * |step| * (d/R)^2`` is below
#: FOOT_TOLERANCE_M (d the distance from the current foot to the position, R the fitted
#: sphere's radius): the right triangle solved at that foot already gives XTE and along-track
#: to within the tolerance. Sampled over 900,000 positions on legs of 5 km to 5,000 km at
#: latitudes to 85 deg and up to 2,000 km off the line, the change from one more iteration
#: never exceeded 8.4 * |step| * (d/R)^2; the gain takes a margin of 12 over that
#: (tests/nav/test_greatcircle.py checks the result against the fully converged foot).
SETTLE_GAIN = 100.0
#: Iterations allowed for the foot before giving up with a GeometryError.
FOOT_MAX_ITERATIONS = 40
#: A leg shorter than this has no defined course, metres.
MIN_LEG_M = 1e-6
#: A position closer than this (radians on the auxiliary sphere, about 0.6 km) to the pole
#: of the leg's great circle has no usable foot: every point of the line is nearly equally
#: far, and a change of 1e-15 rad in an azimuth moves the foot by some 6e-9 m / this angle.
POLE_TOLERANCE_RAD = 1e-4
#: Beyond this angular distance (radians of the fitted sphere) from the foot, the step is
#: taken on the auxiliary sphere, whose distance to the line's pole is right to O(f).
FAR_RAD = 1.3
#: A foot within this arc (radians on the auxiliary sphere) of half a turn from the leg's
#: middle is checked against the foot one turn of the line the other way round: the line
#: does not close on the ellipsoid (one turn in arc is some 2 pi f short of, or beyond, the
#: place where it passes the position again), so the first foot may be the farther one.
WRAP_CHECK_RAD = 0.1
#: Largest move of the foot in one iteration (radians of arc): no foot is farther than a
#: quarter turn from where a step is taken, and near the pole of the line a secant gain
#: can otherwise send the iteration several turns round.
MAX_STEP_RAD = 0.5 * math.pi


def _course(azi: float) -> float:
    c = azi % 360.0
    return 0.0 if c >= 360.0 else c + 0.0


def _lon(lon: float) -> float:
    x = (lon + 180.0) % 360.0 - 180.0
    return 0.0 if x == 0.0 else (-180.0 if x >= 180.0 else x)


def _lon_np(lon):
    x = np.mod(np.asarray(lon, dtype=np.float64) + 180.0, 360.0) - 180.0
    return np.where(x >= 180.0, x - 360.0, x) + 0.0


def _course_np(azi):
    c = np.mod(azi, 360.0)
    return np.where(c >= 360.0, 0.0, c) + 0.0


def _sincos_series_np(sinx, cosx, c):
    """Clenshaw sum of ``c[k] sin(2 k x)``, k = 1..n (geographiclib's ``_SinCosSeries``)."""
    k = len(c)
    n = k - 1
    ar = 2 * (cosx - sinx) * (cosx + sinx)
    y1 = np.zeros_like(sinx)
    if n & 1:
        k -= 1
        y0 = np.full_like(sinx, c[k])
    else:
        y0 = np.zeros_like(sinx)
    n //= 2
    while n:
        n -= 1
        k -= 1
        y1 = ar * y0 - y1 + c[k]
        k -= 1
        y0 = ar * y1 - y0 + c[k]
    return 2 * sinx * cosx * y0


def _settled(ds, dr):
    """Whether the foot iteration may stop after a step ``ds`` (metres) taken at ``dr``
    (radians of the fitted sphere) from the position (see :data:`SETTLE_GAIN`)."""
    ads = np.abs(ds)
    return (ads < FOOT_TOLERANCE_M) | (SETTLE_GAIN * ads * dr * dr < FOOT_TOLERANCE_M)


def _secant_step_np(sig, f, prev_sig, prev_f):
    """The step of the foot iteration. ``f`` is the right-triangle step from ``sig``; it is
    taken as it is unless the previous iterate shows its gain to be clearly off (near a
    quarter circle from the line, where the fitted sphere's tan(d/R) is far from the
    ellipsoid's reduced length / geodesic scale): then the gain measured by the secant
    through the last two iterates corrects it, which turns an oscillation into convergence."""
    step = f
    have = np.isfinite(prev_f)
    if np.any(have):
        with np.errstate(divide="ignore", invalid="ignore"):
            gain = (prev_f - f) / (sig - prev_sig)
            use = have & np.isfinite(gain) & (gain > 0.02) & (gain < 50.0) & (
                np.abs(gain - 1.0) > 0.1)
            step = np.where(use, f / np.where(use, gain, 1.0), f)
    return np.clip(step, -MAX_STEP_RAD, MAX_STEP_RAD)


def check_point(thing: str, lat: float, lon: float) -> float:
    """Validate one position; returns the longitude folded into [-180, 180)."""
    for name, value in (("latitude", lat), ("longitude", lon)):
        if isinstance(value, bool) or not isinstance(value, (int, float, np.floating,
                                                             np.integer)):
            raise InputError(f"{thing} {name} must be a number, not {value!r}")
        if not math.isfinite(value):
            raise InputError(f"{thing} {name} is {value!r}; a finite number is required")
    if not -90.0 <= lat <= 90.0:
        raise InputError(f"{thing} latitude {lat!r} is out of range; allowed -90 to 90")
    if not -180.0 <= lon <= 180.0:
        raise InputError(f"{thing} longitude {lon!r} is out of range; allowed -180 to 180")
    return _lon(float(lon))


def check_points_np(thing: str, lats, lons):
    """Validate a batch of positions; returns float64 arrays (lons folded)."""
    lats, lons = np.broadcast_arrays(np.asarray(lats, dtype=np.float64),
                                     np.asarray(lons, dtype=np.float64))
    bad = ~(np.isfinite(lats) & np.isfinite(lons))
    if bad.any():
        i = int(np.flatnonzero(bad.ravel())[0])
        raise InputError(
            f"{thing} {i} is ({lats.ravel()[i]!r}, {lons.ravel()[i]!r}); finite latitude and "
            "longitude are required")
    bad = (np.abs(lats) > 90.0) | (np.abs(lons) > 180.0)
    if bad.any():
        i = int(np.flatnonzero(bad.ravel())[0])
        raise InputError(
            f"{thing} {i} is ({lats.ravel()[i]!r}, {lons.ravel()[i]!r}); latitude must be in "
            "-90..90 and longitude in -180..180")
    return lats, _lon_np(lons)


class GreatCircleLeg:
    """The shortest geodesic from (lat1, lon1) to (lat2, lon2) on ``earth``.

    Attributes: ``lat1, lon1, lat2, lon2`` (degrees), ``earth``, ``distance_m``,
    ``initial_course`` and ``final_course`` (degrees true, [0, 360)), ``sailing``
    (``"great-circle"``). Raises GeometryError for a leg of zero length (no course).
    """

    sailing = "great-circle"

    def __init__(self, lat1: float, lon1: float, lat2: float, lon2: float,
                 earth: Earth | str = WGS84):
        lon1 = check_point("leg start", lat1, lon1)
        lon2 = check_point("leg end", lat2, lon2)
        self.lat1, self.lon1, self.lat2, self.lon2 = float(lat1), lon1, float(lat2), lon2
        self.earth = get_earth(earth)
        from geographiclib.geodesic import Geodesic

        g = self.earth.geodesic
        self._geod = g
        self._line = g.InverseLine(self.lat1, self.lon1, self.lat2, self.lon2,
                                   Geodesic.ALL | Geodesic.LONG_UNROLL)
        self.distance_m = float(self._line.s13)
        if not self.distance_m > MIN_LEG_M:
            raise GeometryError(
                f"leg from ({self.lat1}, {self.lon1}) to ({self.lat2}, {self.lon2}) has zero "
                "length; its course is not defined")
        self.arc_deg = float(self._line.a13)
        end = self._line.ArcPosition(self.arc_deg, Geodesic.STANDARD | Geodesic.LONG_UNROLL)
        self.initial_course = _course(self._line.azi1)
        azi2 = end["azi2"]
        if abs(self.lat2) == 90.0:  # at a pole, refer the course to the meridian lon2 given,
            azi2 = g.Inverse(self.lat1, self.lon1, self.lat2, self.lon2)["azi2"]  # as GeodSolve
        self.final_course = _course(azi2)
        self._lon12_unrolled = end["lon2"] - self._line.lon1
        ln = self._line
        # Constants of the line, as geographiclib's GeodesicLine keeps them (Karney 2013,
        # sec. 3-4): alpha0, sigma1, omega1, the series for distance and longitude.
        self._salp0, self._calp0 = ln._salp0, ln._calp0
        self._sig1 = math.atan2(ln._ssig1, ln._csig1)
        self._omg1 = math.atan2(ln._somg1, ln._comg1)
        self._E = 1.0 if self._salp0 >= 0 else -1.0
        self._omg1E = math.atan2(self._E * ln._somg1, ln._comg1)
        self._k2 = ln._k2
        self._A1 = 1.0 + ln._A1m1
        self._C1a = list(ln._C1a)
        self._B11 = ln._B11
        self._A3c = ln._A3c
        self._C3a = list(ln._C3a)
        self._B31 = ln._B31
        self._b = ln._b
        self._f1 = ln._f1

    def __repr__(self) -> str:
        return (f"GreatCircleLeg({self.lat1!r}, {self.lon1!r}, {self.lat2!r}, {self.lon2!r}, "
                f"earth={self.earth.name!r})")

    # ----------------------------------------------------------------- points on the line
    def point_at(self, along_m: float) -> tuple[float, float]:
        """Position ``along_m`` metres along the line from the start (negative: before it)."""
        p = self._line.Position(float(along_m))
        return p["lat2"], _lon(p["lon2"])

    def course_at(self, along_m: float) -> float:
        """Course (azimuth) of the line ``along_m`` metres from the start, degrees true."""
        return _course(self._line.Position(float(along_m))["azi2"])

    def points_at_np(self, along):
        """Positions at the distances ``along`` (array, metres): ``(lats, lons)`` arrays."""
        along = np.asarray(along, dtype=np.float64)
        sig12 = self._sigma_of_s_np(along)
        lat, lon, _, _, _ = self._at_sigma_np(sig12)
        return lat, lon

    def _at_sigma_np(self, sig12):
        """Line at arc ``sig12`` (radians from the start): lat, lon, azi, s, dn (numpy)."""
        sig = self._sig1 + sig12
        ssig2, csig2 = np.sin(sig), np.cos(sig)
        salp0, calp0 = self._salp0, self._calp0
        sbet2 = calp0 * ssig2
        cbet2 = np.hypot(salp0, calp0 * csig2)
        lat = np.degrees(np.arctan2(sbet2, self._f1 * cbet2))
        azi = np.degrees(np.arctan2(np.full_like(csig2, salp0), calp0 * csig2))
        # unrolled longitude on the auxiliary sphere (geographiclib's LONG_UNROLL form)
        E = self._E
        omg12 = E * (sig12 - (np.arctan2(ssig2, csig2) - self._sig1)
                     + (np.arctan2(E * salp0 * ssig2, csig2) - self._omg1E))
        lam12 = omg12 + self._A3c * (sig12 + (_sincos_series_np(ssig2, csig2, self._C3a)
                                              - self._B31))
        lon = _lon_np(self.lon1 + np.degrees(lam12))
        B12 = _sincos_series_np(ssig2, csig2, self._C1a)
        s = self._b * self._A1 * (sig12 + (B12 - self._B11))
        dn = np.sqrt(1.0 + self._k2 * ssig2 * ssig2)
        return lat, lon, _course_np(azi), s, dn

    def _foot_np(self, sig12):
        """Lean line evaluation for the foot iteration: lat, lon (not folded), azimuth
        (degrees, not folded) and dn = (ds/dsigma)/b at arc ``sig12`` from the start."""
        sig = self._sig1 + sig12
        ssig2, csig2 = np.sin(sig), np.cos(sig)
        salp0, calp0 = self._salp0, self._calp0
        ccs = calp0 * csig2
        lat = np.degrees(np.arctan2(calp0 * ssig2, self._f1 * np.hypot(salp0, ccs)))
        azi = np.degrees(np.arctan2(salp0, ccs))
        E = self._E
        # longitude on the auxiliary sphere; whole turns do not matter to the inverse problem
        lam12 = E * (np.arctan2(E * salp0 * ssig2, csig2) - self._omg1E)
        if self._A3c != 0.0:
            lam12 += self._A3c * (sig12 + (_sincos_series_np(ssig2, csig2, self._C3a)
                                           - self._B31))
        lon = self.lon1 + np.degrees(lam12)
        dn = np.sqrt(1.0 + self._k2 * ssig2 * ssig2) if self._k2 else 1.0
        return lat, lon, azi, dn

    def _sigma_of_s_np(self, s):
        """Arc (radians from the start) at distance ``s`` along the line (Newton, numpy)."""
        s = np.asarray(s, dtype=np.float64)
        sig12 = s / (self._b * self._A1)
        for _ in range(8):
            sig = self._sig1 + sig12
            ssig2, csig2 = np.sin(sig), np.cos(sig)
            B12 = _sincos_series_np(ssig2, csig2, self._C1a)
            serr = self._b * self._A1 * (sig12 + (B12 - self._B11)) - s
            step = serr / (self._b * np.sqrt(1.0 + self._k2 * ssig2 * ssig2))
            sig12 = sig12 - step
            if np.all(np.abs(step) < 1e-15 * (1.0 + np.abs(sig12))):
                break
        return sig12

    def points_every(self, step_m: float) -> list[tuple[float, float]]:
        """Points along the leg every ``step_m`` metres from the start, both ends included."""
        if not (math.isfinite(step_m) and step_m > 0.0):
            raise InputError(f"track step {step_m!r} m must be a positive distance")
        n = int(math.floor(self.distance_m / step_m * (1.0 + 1e-12)))
        if n > 100_000:
            raise InputError(
                f"track step {step_m!r} m gives {n} points on a leg of {self.distance_m:.0f} m;"
                " at most 100000 are allowed")
        alongs = [k * step_m for k in range(n + 1)]
        if self.distance_m - alongs[-1] > 1e-6:
            alongs.append(self.distance_m)
        else:
            alongs[-1] = self.distance_m
        pts = [self.point_at(s) for s in alongs[:-1]]
        pts.append((self.lat2, self.lon2))
        pts[0] = (self.lat1, self.lon1)
        return pts

    def points_at_meridians(self, step_deg: float = 5.0) -> list[tuple[float, float]]:
        """Points where the leg crosses each meridian that is a multiple of ``step_deg``,
        with both ends: the turning points of the chain of rhumb lines by which a great
        circle is sailed in practice (commonly every 5 degrees of longitude)."""
        if not (math.isfinite(step_deg) and 0.0 < step_deg <= 180.0):
            raise InputError(f"meridian step {step_deg!r} degrees must be in (0, 180]")
        lon12 = self._lon12_unrolled
        pts = [(self.lat1, self.lon1)]
        if abs(lon12) > 1e-12 and abs(self._salp0) > 1e-15:
            sgn = 1.0 if lon12 > 0 else -1.0
            start = self._line.lon1
            end = start + lon12
            lo, hi = (start, end) if sgn > 0 else (end, start)
            k0 = math.floor(lo / step_deg) + 1
            k1 = math.ceil(hi / step_deg) - 1
            ks = range(k0, k1 + 1) if sgn > 0 else range(k1, k0 - 1, -1)
            for k in ks:
                target = k * step_deg
                if not (lo + 1e-9 < target < hi - 1e-9):
                    continue
                sig = self._sigma_at_lon(target)
                p = self._line.ArcPosition(math.degrees(sig))
                pts.append((p["lat2"], _lon(target)))
        pts.append((self.lat2, self.lon2))
        return pts

    def _lon_unrolled_at_sigma(self, sig12: float) -> float:
        from geographiclib.geodesic import Geodesic

        p = self._line.ArcPosition(math.degrees(sig12), Geodesic.LONGITUDE | Geodesic.LONG_UNROLL)
        return p["lon2"]

    def _sigma_at_lon(self, target: float) -> float:
        """Arc from the start where the unrolled longitude equals ``target`` (bracketed
        secant, Illinois variant; the longitude is monotone along a non-meridional leg)."""
        a, b = 0.0, math.radians(self.arc_deg)
        fa = self._lon_unrolled_at_sigma(a) - target
        fb = self._lon_unrolled_at_sigma(b) - target
        side = 0
        x = a
        for _ in range(200):
            x = (a * fb - b * fa) / (fb - fa) if fb != fa else 0.5 * (a + b)
            fx = self._lon_unrolled_at_sigma(x) - target
            if abs(fx) < 1e-13 or abs(b - a) < 1e-15:
                return x
            if (fx > 0) == (fb > 0):
                b, fb = x, fx
                if side == -1:
                    fa *= 0.5
                side = -1
            else:
                a, fa = x, fx
                if side == 1:
                    fb *= 0.5
                side = 1
        return x

    def vertex(self) -> tuple[float, float] | None:
        """The vertex (point of highest latitude) of the geodesic if it lies on the leg,
        else None (also None for a leg along the equator, which has no vertex)."""
        if abs(self._calp0) < 1e-15:
            return None
        sig1 = self._sig1
        sig_end = sig1 + math.radians(self.arc_deg)
        # vertices are at sigma = pi/2 + k pi (measured from the northward equator crossing)
        k = math.ceil((sig1 - math.pi / 2) / math.pi - 1e-15)
        sig_v = math.pi / 2 + k * math.pi
        tol = 1e-14
        if sig1 - tol <= sig_v <= sig_end + tol:
            p = self._line.ArcPosition(math.degrees(sig_v - sig1))
            return p["lat2"], _lon(p["lon2"])
        return None

    # ---------------------------------------------------------------------------- offsets
    def _first_foot(self, lats, lons):
        """First foot (arc from start, radians) from the auxiliary sphere, numpy."""
        f1 = self._f1
        phi = np.radians(lats)
        beta = np.arctan2(f1 * np.sin(phi), np.cos(phi))
        cb, sb = np.cos(beta), np.sin(beta)
        salp0, calp0 = self._salp0, self._calp0
        half = 0.5 * math.radians(self.arc_deg)
        dlon = np.radians(_lon_np(lons - self.lon1))
        sig = np.full_like(phi, half)
        for _ in range(2):
            # longitude lag lambda - omega between the start and the current foot
            # (its secular part: the periodic part is of order f^2, below what a first
            # guess needs)
            omg = self._omg1 + dlon - self._A3c * sig
            px, py, pz = cb * np.cos(omg), cb * np.sin(omg), sb
            u = px
            v = salp0 * py + calp0 * pz
            sig_abs = np.arctan2(v, u)
            sig = half + np.mod(sig_abs - self._sig1 - half + np.pi, 2 * np.pi) - np.pi
        return sig, u, v

    def _plane_np(self, lats, lons, sig):
        """The position in the plane of the line's great circle on the auxiliary sphere,
        ``(u, v)``, with the longitude lag of the line at arc ``sig`` from the start."""
        phi = np.radians(lats)
        beta = np.arctan2(self._f1 * np.sin(phi), np.cos(phi))
        cb, sb = np.cos(beta), np.sin(beta)
        omg = self._omg1 + np.radians(_lon_np(lons - self.lon1)) - self._A3c * sig
        return cb * np.cos(omg), self._salp0 * cb * np.sin(omg) + self._calp0 * sb

    def _first_foot_scalar(self, lat, lon):
        s, u, v = self._first_foot(np.array([lat], dtype=np.float64),
                                   np.array([lon], dtype=np.float64))
        return float(s[0]), float(u[0]), float(v[0])

    def _step_np(self, d, theta, R, sig12, u, v):
        """Step along the line, metres, from the foot at ``sig12``: the right spherical
        triangle on the fitted sphere, or on the auxiliary sphere far from the line."""
        dr = d / R
        ds = R * np.arctan2(np.sin(dr) * np.cos(theta), np.cos(dr))
        far = dr > FAR_RAD
        if np.any(far):
            sig = self._sig1 + sig12[far]
            # cos of the auxiliary-sphere arc foot -> position, position at (u, v) in the
            # plane of the line's great circle
            cd = np.clip(np.cos(sig) * u[far] + np.sin(sig) * v[far], -1.0, 1.0)
            sd = np.sqrt(1.0 - cd * cd)
            dsig = np.arctan2(sd * np.cos(theta[far]), cd)
            ds[far] = dsig * self._b * np.sqrt(1.0 + self._k2 * np.sin(sig) ** 2)
        return ds, dr

    def _step(self, d, theta, R, sig12, u, v):
        """:meth:`_step_np` for one position, in plain floats."""
        dr = d / R
        if dr <= FAR_RAD:
            return R * math.atan2(math.sin(dr) * math.cos(theta), math.cos(dr)), dr
        sig = self._sig1 + sig12
        cd = max(-1.0, min(1.0, math.cos(sig) * u + math.sin(sig) * v))
        dsig = math.atan2(math.sqrt(1.0 - cd * cd) * math.cos(theta), cd)
        return dsig * self._b * math.sqrt(1.0 + self._k2 * math.sin(sig) ** 2), dr

    def offsets_np(self, lats, lons, strict: bool = True):
        """Cross-track and along-track distances of many positions: ``(xte_m, along_m)``
        float64 arrays of the broadcast shape. XTE is + to the right of the direction of
        travel. Raises InputError for a bad position, GeometryError where a foot is not
        defined (a position at the pole of the leg's great circle) or does not converge;
        with ``strict=False`` such a position gets NaN for both and the rest their
        figures."""
        lats, lons = check_points_np("position", lats, lons)
        shape = lats.shape
        lat = lats.ravel()
        lon = lons.ravel()
        n = lat.size
        xte = np.empty(n)
        along = np.empty(n)
        if n == 0:
            return xte.reshape(shape), along.reshape(shape)
        sig, u, v = self._first_foot(lat, lon)
        at_pole = np.hypot(u, v) < POLE_TOLERANCE_RAD
        if at_pole.any():
            if strict:
                i = int(np.flatnonzero(at_pole)[0])
                raise GeometryError(self._pole_message(lat[i], lon[i], i))
            xte.fill(np.nan)
            along.fill(np.nan)
            keep = np.flatnonzero(~at_pole)
            if keep.size:
                x_k, a_k = self.offsets_np(lat[keep], lon[keep], strict=False)
                xte[keep], along[keep] = x_k, a_k
            return xte.reshape(shape), along.reshape(shape)
        xte, sig = self._feet_np(lat, lon, sig, u, v, strict=strict)
        # near half a turn from the middle: the candidate foot one turn the other way round
        # may be the nearer one along the line (module docstring)
        half = 0.5 * math.radians(self.arc_deg)
        wrap = np.abs(sig - half) > math.pi - WRAP_CHECK_RAD
        if wrap.any():
            idx = np.flatnonzero(wrap)
            sig_b = self._other_turn(sig[idx], half)
            u_b, v_b = self._plane_np(lat[idx], lon[idx], sig_b)
            # no answer there (near the pole of the line) leaves the foot found first
            xte_b, sig_b = self._feet_np(lat[idx], lon[idx], sig_b, u_b, v_b, strict=False)
            mid = 0.5 * self.distance_m
            with np.errstate(invalid="ignore"):
                better = (np.abs(self._s_of_sigma_np(sig_b) - mid)
                          < np.abs(self._s_of_sigma_np(sig[idx]) - mid))
            xte[idx] = np.where(better, xte_b, xte[idx])
            sig[idx] = np.where(better, sig_b, sig[idx])
        along = self._s_of_sigma_np(sig)
        return xte.reshape(shape), along.reshape(shape)

    @staticmethod
    def _other_turn(sig, half):
        """Where to look for the other candidate foot: the foot's arc brought within half a
        turn of the middle (near the pole of the line the iteration may have gone round more
        than once), else one turn the other way round."""
        turns = np.round((sig - half) / (2.0 * math.pi))
        turns = np.where(turns == 0.0, np.sign(sig - half), turns)
        return sig - 2.0 * math.pi * turns

    def _feet_np(self, lat, lon, sig, u, v, strict=True):
        """Iterate from the arcs ``sig`` to the feet: ``(xte_m, sig_foot)`` arrays. A foot
        that does not converge raises GeometryError, or with ``strict=False`` is NaN."""
        n = lat.size
        xte = np.empty(n)
        sig_foot = np.empty(n)
        geod = self.earth.geod
        a = self.earth.a
        sphere = self.earth.is_sphere
        todo = np.arange(n)
        s_todo = sig
        lat_t, lon_t = lat, lon
        u_t, v_t = u, v
        prev_s = np.full(n, np.nan)
        prev_f = np.full(n, np.nan)
        for _ in range(FOOT_MAX_ITERATIONS):
            flat, flon, fazi, dn = self._foot_np(s_todo)
            # one vectorised inverse problem foot -> position (pyproj, PROJ's geodesic.c)
            azi_fp, _, d = geod.inv(flon, flat, lon_t, lat_t)
            R = a if sphere else self._gauss_radius_np(flat, lat_t)
            theta = np.radians(np.asarray(azi_fp) - fazi)
            ds, dr = self._step_np(np.asarray(d), theta, R, s_todo, u_t, v_t)
            f = ds / (self._b * dn)
            s_new = s_todo + _secant_step_np(s_todo, f, prev_s, prev_f)
            prev_s, prev_f = s_todo, f
            done = _settled(ds, dr)
            if done.any():
                idx = todo[done]
                xte[idx] = self._xte_np(dr[done], theta[done],
                                        R if sphere else R[done])
                sig_foot[idx] = s_new[done]
            keep = ~done
            if not keep.any():
                return xte, sig_foot
            todo = todo[keep]
            s_todo = s_new[keep]
            prev_s, prev_f = prev_s[keep], prev_f[keep]
            lat_t, lon_t = lat_t[keep], lon_t[keep]
            u_t, v_t = u_t[keep], v_t[keep]
        if not strict:
            xte[todo] = np.nan
            sig_foot[todo] = np.nan
            return xte, sig_foot
        i = int(todo[0])
        raise GeometryError(
            f"position {i} ({lat[i]!r}, {lon[i]!r}): the foot on the great-circle leg "
            f"{self._ends()} did not converge in {FOOT_MAX_ITERATIONS} iterations")

    def _gauss_radius_np(self, lat_a, lat_b):
        """Radius of Gaussian curvature sqrt(M N) at the mean of two latitudes: the sphere
        that best fits the ellipsoid between the foot and the position."""
        e2 = self.earth.e2
        sm = np.sin(np.radians(0.5 * (lat_a + lat_b)))
        return self.earth.a * math.sqrt(1.0 - e2) / (1.0 - e2 * sm * sm)

    @staticmethod
    def _xte_np(dr, theta, R):
        """Signed distance to the line at the (converged) foot: the right spherical triangle
        on the fitting sphere; the plain distance with its sign beyond a quarter circle."""
        sin_t = np.sin(theta)
        near = R * np.arcsin(np.clip(np.sin(dr) * sin_t, -1.0, 1.0))
        far = np.copysign(dr * R, sin_t)
        return np.where(dr < 1.0, near, far)

    def _s_of_sigma_np(self, sig12):
        sig = self._sig1 + sig12
        B12 = _sincos_series_np(np.sin(sig), np.cos(sig), self._C1a)
        return self._b * self._A1 * (sig12 + (B12 - self._B11))

    def _ends(self) -> str:
        return f"({self.lat1}, {self.lon1}) -> ({self.lat2}, {self.lon2})"

    def _pole_message(self, lat, lon, i=None) -> str:
        which = "position" if i is None else f"position {i}"
        return (f"{which} ({lat!r}, {lon!r}) is at the pole of the great-circle leg "
                f"{self._ends()} (within about 0.6 km): every point of the line is nearly "
                "equally far, so the cross-track foot is not defined")

    def offset(self, lat: float, lon: float) -> tuple[float, float]:
        """Cross-track and along-track distance of one position: ``(xte_m, along_m)``.

        The same algorithm as :meth:`offsets_np` with geographiclib's scalar
        ``GeodesicLine.ArcPosition`` and ``Geodesic.Inverse``."""
        lon = check_point("position", lat, lon)
        lat = float(lat)
        sig, u, v = self._first_foot_scalar(lat, lon)
        if math.hypot(u, v) < POLE_TOLERANCE_RAD:
            raise GeometryError(self._pole_message(lat, lon))
        xte, sig = self._foot_scalar(lat, lon, sig, u, v)
        half = 0.5 * math.radians(self.arc_deg)
        if abs(sig - half) > math.pi - WRAP_CHECK_RAD:  # as in offsets_np
            sig_b = float(self._other_turn(np.array([sig]), half)[0])
            u_b, v_b = (float(x[0]) for x in self._plane_np(np.array([lat]), np.array([lon]),
                                                            np.array([sig_b])))
            try:
                xte_b, sig_b = self._foot_scalar(lat, lon, sig_b, u_b, v_b)
            except GeometryError:  # no answer there: the foot found first stands
                pass
            else:
                mid = 0.5 * self.distance_m
                if abs(self._s_of_sigma(sig_b) - mid) < abs(self._s_of_sigma(sig) - mid):
                    xte, sig = xte_b, sig_b
        return xte, self._s_of_sigma(sig)

    def _s_of_sigma(self, sig12: float) -> float:
        """Distance along the line from the start at arc ``sig12`` (geographiclib)."""
        from geographiclib.geodesic import Geodesic

        return self._line.ArcPosition(math.degrees(sig12), Geodesic.DISTANCE)["s12"]

    def _foot_scalar(self, lat: float, lon: float, sig: float, u: float, v: float):
        """Iterate from the arc ``sig`` to the foot: ``(xte_m, sig_foot)``."""
        from geographiclib.geodesic import Geodesic

        line, g = self._line, self._geod
        a, e2 = self.earth.a, self.earth.e2
        mask = Geodesic.LATITUDE | Geodesic.LONGITUDE | Geodesic.AZIMUTH
        prev_s = prev_f = math.nan
        for _ in range(FOOT_MAX_ITERATIONS):
            p = line.ArcPosition(math.degrees(sig), mask)
            inv = g.Inverse(p["lat2"], p["lon2"], lat, lon,
                            Geodesic.DISTANCE | Geodesic.AZIMUTH)
            sm = math.sin(math.radians(0.5 * (p["lat2"] + lat)))
            R = a * math.sqrt(1.0 - e2) / (1.0 - e2 * sm * sm)
            theta = math.radians(inv["azi1"] - p["azi2"])
            ds, dr = self._step(inv["s12"], theta, R, sig, u, v)
            ssig2 = math.sin(self._sig1 + sig)
            f = ds / (self._b * math.sqrt(1.0 + self._k2 * ssig2 * ssig2))
            step = f
            if math.isfinite(prev_f) and sig != prev_s:
                gain = (prev_f - f) / (sig - prev_s)
                if 0.02 < gain < 50.0 and abs(gain - 1.0) > 0.1:
                    step = f / gain
            prev_s, prev_f = sig, f
            sig += max(-MAX_STEP_RAD, min(MAX_STEP_RAD, step))
            if _settled(ds, dr):
                sin_t = math.sin(theta)
                if dr < 1.0:
                    xte = R * math.asin(max(-1.0, min(1.0, math.sin(dr) * sin_t)))
                else:
                    xte = math.copysign(dr * R, sin_t)
                return xte, sig
        raise GeometryError(
            f"position ({lat!r}, {lon!r}): the foot on the great-circle leg {self._ends()} "
            f"did not converge in {FOOT_MAX_ITERATIONS} iterations")


# ------------------------------------------------------------------------ composite sailing
@dataclass(frozen=True)
class SailingPart:
    """One part of a composite sailing: ``kind`` is ``"great-circle"`` or ``"parallel"``."""

    kind: str
    lat1: float
    lon1: float
    lat2: float
    lon2: float
    distance_m: float
    initial_course: float
    final_course: float


@dataclass(frozen=True)
class CompositeSailing:
    """A composite sailing (or the plain great circle when no limit is reached).

    ``composite`` is False when the great circle's vertex does not lie between the ends
    beyond the limiting latitude; ``parts`` then holds the great circle alone."""

    parts: tuple[SailingPart, ...]
    distance_m: float
    limit_lat: float
    composite: bool


def _vertex_from(geod, lat: float, lon: float, azi: float) -> tuple[float, float, float]:
    """Follow the geodesic from (lat, lon) along ``azi`` to its next vertex:
    ``(lat_v, lon_v, s_m)``."""
    from geographiclib.geodesic import Geodesic

    line = geod.Line(lat, lon, azi, Geodesic.ALL | Geodesic.LONG_UNROLL)
    sig1 = math.atan2(line._ssig1, line._csig1)
    k = math.ceil((sig1 - math.pi / 2) / math.pi - 1e-15)
    sig_v = math.pi / 2 + k * math.pi
    p = line.ArcPosition(math.degrees(sig_v - sig1))
    return p["lat2"], p["lon2"], p["s12"]


def composite(lat1: float, lon1: float, lat2: float, lon2: float, limit_lat: float,
              earth: Earth | str = WGS84) -> CompositeSailing:
    """Composite sailing from (lat1, lon1) to (lat2, lon2) not going beyond ``limit_lat``
    (signed: positive north, negative south).

    A great circle from departure tangent to the limiting parallel (its vertex on the
    parallel), along the parallel, then a great circle tangent to the parallel to the
    destination. Used only when the direct great circle's vertex lies between the ends and
    beyond the limit; otherwise the direct great circle is returned alone. Raises
    GeometryError when an end itself lies beyond the limit.
    """
    earth = get_earth(earth)
    if isinstance(limit_lat, bool) or not isinstance(limit_lat, (int, float)) or not (
            math.isfinite(limit_lat) and 0.0 < abs(limit_lat) < 90.0):
        raise InputError(
            f"limiting latitude {limit_lat!r} must be a latitude between 0 and 90 degrees "
            "north or south (not 0)")
    hemi = 1.0 if limit_lat > 0 else -1.0
    L = abs(float(limit_lat))
    gc = GreatCircleLeg(lat1, lon1, lat2, lon2, earth)
    for name, lat in (("departure", gc.lat1), ("destination", gc.lat2)):
        if hemi * lat > L:
            raise GeometryError(
                f"composite sailing: the {name} latitude {lat!r} lies beyond the limiting "
                f"latitude {limit_lat!r}; both ends must be on the near side of the limit")
    plain = CompositeSailing(
        (SailingPart("great-circle", gc.lat1, gc.lon1, gc.lat2, gc.lon2, gc.distance_m,
                     gc.initial_course, gc.final_course),),
        gc.distance_m, float(limit_lat), False)
    v = gc.vertex()
    if v is None or hemi * v[0] <= L:
        return plain
    g = earth.geodesic
    f1 = 1.0 - earth.f

    def cbeta(lat):
        phi = math.radians(lat)
        return math.cos(math.atan2(f1 * math.sin(phi), math.cos(phi)))

    east = 1.0 if math.sin(math.radians(gc.initial_course)) >= 0 else -1.0
    cbl = cbeta(L)
    # departure: sin(alpha1) cos(beta1) = sin(alpha0) = cos(beta_L) (Clairaut), heading
    # poleward toward the vertex
    sa = min(1.0, cbl / cbeta(gc.lat1))
    a1 = math.degrees(math.asin(sa))
    azi_a = east * (a1 if hemi > 0 else 180.0 - a1)
    lat_v1, lon_v1, s1 = _vertex_from(g, gc.lat1, gc.lon1, azi_a)
    # destination: the geodesic reached backward from it, heading poleward
    sb = min(1.0, cbl / cbeta(gc.lat2))
    b1 = math.degrees(math.asin(sb))
    azi_b_back = -east * (b1 if hemi > 0 else 180.0 - b1)
    lat_v2, lon_v2, s2 = _vertex_from(g, gc.lat2, gc.lon2, azi_b_back)
    dlon = (east * (lon_v2 - lon_v1)) % 360.0
    if dlon > 180.0:
        # the two tangent circles overlap: the limit does not bite
        return plain
    # parallel of latitude L: radius a cos(beta) (ellipsoid of revolution)
    s_par = earth.a * cbl * math.radians(dlon)
    lat_v = hemi * L
    ends_v1 = (_lon(lon_v1),)
    parts = []
    if s1 > 0:
        parts.append(SailingPart("great-circle", gc.lat1, gc.lon1, lat_v, ends_v1[0], s1,
                                 _course(azi_a), 90.0 if east > 0 else 270.0))
    if s_par > 0:
        parts.append(SailingPart("parallel", lat_v, _lon(lon_v1), lat_v, _lon(lon_v2), s_par,
                                 90.0 if east > 0 else 270.0, 90.0 if east > 0 else 270.0))
    if s2 > 0:
        leg2 = GreatCircleLeg(lat_v, _lon(lon_v2), gc.lat2, gc.lon2, earth)
        parts.append(SailingPart("great-circle", lat_v, _lon(lon_v2), gc.lat2, gc.lon2, s2,
                                 90.0 if east > 0 else 270.0, leg2.final_course))
    del lat_v1, lat_v2
    return CompositeSailing(tuple(parts), s1 + s_par + s2, float(limit_lat), True)
