"""Rhumb lines (loxodromes) on an ellipsoid of revolution: the sailing on a constant course.

Method
------
On the Mercator chart a rhumb line is straight. With the isometric latitude ``psi`` as the
chart's northing and the longitude ``lambda`` (radians) as its easting, a rhumb line of
course ``alpha`` obeys ``tan(alpha) = d_lambda / d_psi`` (Bowditch, NGA Pub. 9, "Mercator
sailing": ``tan C = DLo / m``, ``m`` the difference of meridional parts), and its length is
the difference of meridian arc divided by ``cos(alpha)`` (G. G. Bennett 1996, "Practical rhumb
line calculations on the spheroid", Journal of Navigation 49(1):112-119).

That quotient is 0/0 on due and nearly east-west courses. Following Karney ("The rhumb
line", GeographicLib documentation, and his ``Rhumb`` class, 2014), we write the length as

    s12 = hypot(d_lambda, d_psi) * (M2 - M1) / (psi2 - psi1)

and evaluate the divided difference ``(M2 - M1) / (psi2 - psi1)`` as the quotient of two
divided differences with respect to the geodetic latitude ``phi``, each in a form with no
cancellation (the addition formulas of tan, asinh, atanh and sin):

    (M2 - M1) / (phi2 - phi1)   from the series of the rectifying latitude (below), and
    (psi2 - psi1) / (phi2 - phi1) = Dasinh(tan) * Dtan - e * Datanh(e sin) * Dsin.

When ``phi1 == phi2`` it becomes the radius of the parallel ``N cos(phi)``, i.e. the parallel
sailing of the textbooks (departure = d_lambda * r).

Figures
-------
* isometric latitude ``psi = asinh(tan phi) - e atanh(e sin phi)`` (exact closed form);
* meridional parts ``MP = psi * 10800 / pi``, minutes of arc of the equator, as tabulated in
  Bowditch's Table of Meridional Parts (NGA Pub. 9);
* meridian arc ``M(phi) = A * mu(phi)`` with the rectifying radius
  ``A = a / (1 + n) * (1 + n^2/4 + n^4/64 + n^6/256)`` (Karney 2011, "Transverse Mercator with an
  accuracy of a few nanometers", J. Geod. 85:475-485) and the rectifying latitude
  ``mu = phi + sum_k c_k(n) sin(2 k phi)`` and its inverse ``phi = mu + sum_k d_k(n) sin(2 k mu)``
  (Helmert's series in the third flattening ``n = f / (2 - f)``, as given by Karney 2011 and
  Deakin & Hunter, "Geodesics on an ellipsoid", 2010), carried to order n^6. The terms left
  out are O(n^7), below 1e-12 m on WGS84 (the series are meant for |f| < 0.01, which covers
  every terrestrial ellipsoid; ``f = 0`` is a sphere and works exactly).

Conventions
-----------
Degrees for latitudes, longitudes and courses (true, [0, 360)), metres for distances.
Longitude differences are taken the shorter way (|d_lon| <= 180; exactly 180 apart, in the
direction of lon2 - lon1 as given, as GeographicLib's RhumbSolve does), so a leg across the
antimeridian is handled naturally.
A zero-length rhumb line has no course: ``rhumb_inverse`` then returns course ``0.0``.
An end point exactly at a pole gives course 0 or 180 and the meridian distance (the rhumb line
spirals into the pole in finite length; the longitude there means nothing).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache
from types import SimpleNamespace

import numpy as np

from passagelog.errors import GeometryError, InputError, PositionError
from passagelog.nav.earth import WGS84, Earth, get_earth
from passagelog.nav import geodesic as _geodesic

__all__ = [
    "isometric_lat",
    "lat_from_isometric",
    "meridional_parts",
    "meridian_arc",
    "rhumb_inverse",
    "rhumb_direct",
    "rhumb_inverse_np",
    "rhumb_direct_np",
    "OFFSET_TOL_M",
    "OFFSET_MAX_ITER",
]

#: Minutes of arc in one radian: meridional parts are psi expressed in minutes of the equator.
MINUTES_PER_RADIAN = 10800.0 / math.pi

#: The foot of the perpendicular is iterated until the along-track step is below this (metres).
OFFSET_TOL_M = 1e-4

#: At most this many geodesic inversions per position when finding the foot.
OFFSET_MAX_ITER = 30

_R_MEAN_M = 6371008.8  # a length scale for the error bound of the foot iteration

_DEG = math.pi / 180.0


# ----------------------------------------------------------------------------------------
# The figure's constants


@dataclass(frozen=True)
class _Figure:
    e2: float  # first eccentricity squared
    e: float
    A: float  # rectifying radius, metres: meridian arc = A * mu
    c: tuple[float, ...]  # mu = phi + sum c[k-1] sin(2 k phi), k = 1..6
    d: tuple[float, ...]  # phi = mu + sum d[k-1] sin(2 k mu)
    a: float


@lru_cache(maxsize=16)
def _figure(earth: Earth) -> _Figure:
    f = earth.f
    if not abs(f) < 0.01:
        raise InputError(
            f"earth model {earth.name!r}: flattening f={f!r} is outside what the rhumb-line "
            "series support (|f| < 0.01)"
        )
    n = f / (2.0 - f)
    n2 = n * n
    n3 = n2 * n
    n4, n5, n6 = n2 * n2, n2 * n3, n3 * n3
    # Rectifying radius (Karney 2011).
    A = earth.a / (1.0 + n) * (1.0 + n2 / 4.0 + n4 / 64.0 + n6 / 256.0)
    # phi -> mu (Helmert's series, as in Deakin & Hunter 2010; each coefficient was checked
    # to O(n^6) against numerical quadrature of the meridian arc: the residual falls as n^7).
    c = (
        -3.0 / 2.0 * n + 9.0 / 16.0 * n3 - 3.0 / 32.0 * n5,
        15.0 / 16.0 * n2 - 15.0 / 32.0 * n4 + 135.0 / 2048.0 * n6,
        -35.0 / 48.0 * n3 + 105.0 / 256.0 * n5,
        315.0 / 512.0 * n4 - 189.0 / 512.0 * n6,
        -693.0 / 1280.0 * n5,
        1001.0 / 2048.0 * n6,
    )
    # mu -> phi (the reverted series, same sources and the same check).
    d = (
        3.0 / 2.0 * n - 27.0 / 32.0 * n3 + 269.0 / 512.0 * n5,
        21.0 / 16.0 * n2 - 55.0 / 32.0 * n4 + 6759.0 / 4096.0 * n6,
        151.0 / 96.0 * n3 - 417.0 / 128.0 * n5,
        1097.0 / 512.0 * n4 - 15543.0 / 2560.0 * n6,
        8011.0 / 2560.0 * n5,
        293393.0 / 61440.0 * n6,
    )
    return _Figure(e2=earth.e2, e=math.sqrt(earth.e2), A=A, c=c, d=d, a=earth.a)


# ----------------------------------------------------------------------------------------
# One implementation for scalars and arrays: the formulas below take a namespace ``xp`` of
# elementary functions, either numpy's (arrays) or the math module's (Python floats, which is
# some 20 times faster than numpy on single values). Both branches of ``xp.where`` are always
# evaluated, so every expression is kept finite in both.


class _NullContext:
    def __enter__(self):
        return self

    def __exit__(self, *exc):
        return False


_NULL = _NullContext()


def _np_quadrant(q, s, c):
    q = q.astype(np.int64) % 4
    return np.choose(q, [s, c, -s, -c]), np.choose(q, [c, -s, -c, s])


def _py_quadrant(q, s, c):
    return ((s, c), (c, -s), (-s, -c), (-c, s))[int(q) % 4]


def _py_sinc(x: float) -> float:
    if x == 0.0:
        return 1.0
    y = math.pi * x
    return math.sin(y) / y


_NP = SimpleNamespace(
    sin=np.sin, cos=np.cos, tan=np.tan, sqrt=np.sqrt, asinh=np.arcsinh, atanh=np.arctanh,
    atan=np.arctan, atan2=np.arctan2, sinh=np.sinh, hypot=np.hypot, radians=np.radians,
    degrees=np.degrees, mod=np.mod, fmod=np.fmod, abs=np.abs, sign=np.sign, where=np.where,
    sinc=np.sinc,
    isinf=np.isinf, clip=np.clip, quadrant=_np_quadrant, asin=np.arcsin, tanh=np.tanh,
    any=lambda x: bool(np.any(x)),
    quiet=lambda: np.errstate(invalid="ignore", divide="ignore", over="ignore"),
)

_PY = SimpleNamespace(
    sin=math.sin, cos=math.cos, tan=math.tan, sqrt=math.sqrt, asinh=math.asinh,
    atanh=math.atanh, atan=math.atan, atan2=math.atan2, sinh=math.sinh, hypot=math.hypot,
    radians=math.radians, degrees=math.degrees, mod=lambda x, y: x % y, fmod=math.fmod,
    abs=abs,
    sign=lambda x: 0.0 if x == 0.0 else math.copysign(1.0, x),
    where=lambda c, a, b: a if c else b, sinc=_py_sinc, isinf=math.isinf,
    clip=lambda x, lo, hi: min(max(x, lo), hi), quadrant=_py_quadrant, any=bool,
    asin=math.asin, tanh=math.tanh,
    quiet=lambda: _NULL,
)


# ----------------------------------------------------------------------------------------
# Elementary functions and their divided differences, D f(x, y) = (f(x) - f(y)) / (x - y),
# written so that nothing cancels when x is close to y (Karney, "The rhumb line" notes and
# GeographicLib's Rhumb class).


def _asinhc(xp, z):
    """asinh(z) / z, 1 at z = 0."""
    return xp.where(z == 0.0, 1.0, xp.asinh(z) / xp.where(z == 0.0, 1.0, z))


def _atanhc(xp, z):
    """atanh(z) / z, 1 at z = 0."""
    return xp.where(z == 0.0, 1.0, xp.atanh(z) / xp.where(z == 0.0, 1.0, z))


def _dasinh(xp, x, y):
    """D asinh(x, y)."""
    d = x - y
    hx = xp.hypot(1.0, x)
    hy = xp.hypot(1.0, y)
    same = x * y > 0.0
    # same sign: asinh(x) - asinh(y) = asinh(d (x + y) / (x hy + y hx))
    q = (x + y) / xp.where(same, x * hy + y * hx, 1.0)
    v_same = q * _asinhc(xp, d * q)
    # opposite signs, or one is zero (no cancellation): asinh(x hy - y hx) / d
    v_opp = xp.asinh(x * hy - y * hx) / xp.where(d == 0.0, 1.0, d)
    return xp.where(same, v_same, xp.where(d == 0.0, 1.0 / hx, v_opp))


def _dtan(xp, x, y):
    """D tan(x, y), radians: tan x - tan y = tan(x - y) (1 + tan x tan y)."""
    d = x - y
    tx = xp.tan(x)
    ty = xp.tan(y)
    txy = tx * ty
    # tan(d) / d = sinc(d) / cos(d); |d| < pi, and cos(d) is never exactly 0 in floating point
    tan_d = xp.sinc(d / math.pi) / xp.cos(d)
    v_big = (tx - ty) / xp.where(d == 0.0, 1.0, d)
    return xp.where(2.0 * txy > -1.0, (1.0 + txy) * tan_d, v_big)


def _dsin(xp, x, y):
    """D sin(x, y) = cos((x + y)/2) sin(d/2) / (d/2)."""
    return xp.cos((x + y) / 2.0) * xp.sinc((x - y) / (2.0 * math.pi))


def _deatanhe(xp, fig: _Figure, x, y):
    """D [e atanh(e x)](x, y): e atanh(e x) - e atanh(e y) = e atanh(e d / (1 - e^2 x y))."""
    den = 1.0 - fig.e2 * x * y
    return fig.e2 / den * _atanhc(xp, fig.e * (x - y) / den)


def _dpsi_dphi(xp, fig: _Figure, phi1, phi2):
    """(psi1 - psi2) / (phi1 - phi2), radians; the derivative when phi1 == phi2."""
    v = _dasinh(xp, xp.tan(phi1), xp.tan(phi2)) * _dtan(xp, phi1, phi2)
    if fig.e2 != 0.0:
        v = v - _deatanhe(xp, fig, xp.sin(phi1), xp.sin(phi2)) * _dsin(xp, phi1, phi2)
    return v


def _dmu_dphi(xp, fig: _Figure, phi1, phi2):
    """(mu1 - mu2) / (phi1 - phi2), using D sin(2k phi) = 2k cos(k (x + y)) sinc(k (x - y))."""
    dd = phi1 - phi2
    ss = phi1 + phi2
    v = 1.0 + 0.0 * dd
    for k, ck in enumerate(fig.c, start=1):
        if ck != 0.0:
            v = v + ck * 2.0 * k * xp.cos(k * ss) * xp.sinc(k * dd / math.pi)
    return v


def _sin_series(xp, coeffs, x):
    """sum_k coeffs[k-1] sin(2 k x) by Clenshaw's recurrence (two trigonometric calls)."""
    if not any(coeffs):
        return 0.0 * x
    two_cos = 2.0 * xp.cos(2.0 * x)
    b1 = 0.0 * x
    b2 = b1
    for ck in reversed(coeffs):
        b1, b2 = ck + two_cos * b1 - b2, b1
    return b1 * xp.sin(2.0 * x)


def _mu(xp, fig: _Figure, phi):
    """Rectifying latitude (radians) of geodetic latitude ``phi`` (radians)."""
    return phi + _sin_series(xp, fig.c, phi)


def _phi_of_mu(xp, fig: _Figure, mu):
    """Geodetic latitude (radians) of rectifying latitude ``mu`` (radians)."""
    return mu + _sin_series(xp, fig.d, mu)


def _psi_rad(xp, fig: _Figure, phi):
    """Isometric latitude of ``phi`` (radians), finite for |phi| < pi/2."""
    psi = xp.asinh(xp.tan(phi))
    if fig.e2 != 0.0:
        psi = psi - fig.e * xp.atanh(fig.e * xp.sin(phi))
    return psi


def _phi_of_psi(xp, fig: _Figure, psi, iterations: int = 2):
    """Geodetic latitude (radians) of isometric latitude ``psi``: Newton's method on tan(phi)
    (as in Karney 2011, section 2). One step from the start tau' / (1 - e^2) already gives
    full double precision on WGS84 for |lat| <= 89.9 (checked over 100,001 latitudes); two
    are taken."""
    taup = xp.sinh(xp.clip(psi, -40.0, 40.0))
    if fig.e2 == 0.0:
        phi = xp.atan(taup)
    else:
        e2m = 1.0 - fig.e2
        tau = taup / e2m
        for _ in range(iterations):
            h = xp.hypot(1.0, tau)
            sig = xp.sinh(fig.e * xp.atanh(fig.e * tau / h))
            taupa = tau * xp.hypot(1.0, sig) - sig * h
            tau = tau + (taup - taupa) * (1.0 + e2m * tau * tau) / (
                e2m * h * xp.hypot(1.0, taupa)
            )
        phi = xp.atan(tau)
    return xp.where(xp.isinf(psi), xp.sign(psi) * (math.pi / 2.0), phi)


def _sincosd(xp, deg):
    """sin and cos of an angle in degrees, exact (0, +-1) at multiples of 90 degrees."""
    r = xp.mod(deg, 360.0)
    q = xp.where(r < 45.0, 0.0, xp.where(r < 135.0, 1.0, xp.where(r < 225.0, 2.0,
                 xp.where(r < 315.0, 3.0, 4.0))))
    x = xp.radians(r - 90.0 * q)
    s, c = xp.quadrant(q, xp.sin(x), xp.cos(x))
    return s + 0.0, c + 0.0


def _angdiff(xp, lon1, lon2):
    """lon2 - lon1 reduced to [-180, 180], degrees; exactly 180 apart keeps the sign of
    lon2 - lon1 as given (as GeographicLib's AngDiff, so RhumbSolve, does). fmod and the
    shift by 360 are exact, so a small difference keeps all its digits."""
    d = xp.fmod(lon2 - lon1, 360.0)  # (-360, 360), exact
    return xp.where(d > 180.0, d - 360.0, xp.where(d < -180.0, d + 360.0, d))


def _norm_lon(xp, lon):
    """Longitude reduced to [-180, 180) exactly."""
    x = xp.fmod(lon, 360.0)
    return xp.where(x >= 180.0, x - 360.0, xp.where(x < -180.0, x + 360.0, x)) + 0.0


def _norm_course(xp, c):
    c = xp.fmod(c, 360.0)
    c = xp.where(c < 0.0, c + 360.0, c)
    return xp.where(c >= 360.0, 0.0, c) + 0.0


# ----------------------------------------------------------------------------------------
# Input checks


def _arrays(*xs):
    return np.broadcast_arrays(*(np.asarray(x, dtype=np.float64) for x in xs))


def _first_bad(ok, x):
    i = int(np.flatnonzero(~np.ravel(ok))[0])
    where = f" (element {i})" if np.ndim(x) else ""
    return float(np.ravel(x)[i]), where


def _check_lat(name: str, lat) -> None:
    if isinstance(lat, float):
        if not (abs(lat) <= 90.0):
            raise PositionError(
                f"rhumb line: latitude {name}={lat!r} is not allowed; "
                "use a finite number of degrees in [-90, 90]"
            )
        return
    ok = np.isfinite(lat) & (np.abs(lat) <= 90.0)
    if not np.all(ok):
        bad, where = _first_bad(ok, lat)
        raise PositionError(
            f"rhumb line: latitude {name}={bad!r}{where} is not allowed; "
            "use a finite number of degrees in [-90, 90]"
        )


def _check_finite(name: str, x, what: str) -> None:
    if isinstance(x, float):
        if not math.isfinite(x):
            raise InputError(f"rhumb line: {name}={x!r} is not allowed; use {what}")
        return
    ok = np.isfinite(x)
    if not np.all(ok):
        bad, where = _first_bad(ok, x)
        raise InputError(f"rhumb line: {name}={bad!r}{where} is not allowed; use {what}")


def _scalar(name: str, x) -> float:
    try:
        return float(x)
    except (TypeError, ValueError):
        raise InputError(f"rhumb line: {name}={x!r} is not a number") from None


_LON = "a finite longitude in degrees"


# ----------------------------------------------------------------------------------------
# Auxiliary latitudes


def _is_scalar(x) -> bool:
    return np.ndim(x) == 0 and not isinstance(x, np.ndarray)


def isometric_lat(lat, earth: Earth | str = WGS84):
    """Isometric latitude ``psi`` (radians) of the geodetic latitude ``lat`` (degrees).

    ``psi = asinh(tan phi) - e atanh(e sin phi)``: the northing of the Mercator projection
    divided by ``a``; +-inf at the poles. A float for a scalar, else an array.
    """
    fig = _figure(get_earth(earth))
    if _is_scalar(lat):
        x = _scalar("lat", lat)
        _check_lat("lat", x)
        if abs(x) == 90.0:
            return math.copysign(math.inf, x)
        return _psi_rad(_PY, fig, math.radians(x))
    (latv,) = _arrays(lat)
    _check_lat("lat", latv)
    with np.errstate(divide="ignore", invalid="ignore"):
        psi = _psi_rad(_NP, fig, np.radians(latv))
        return np.where(np.abs(latv) == 90.0, np.sign(latv) * np.inf, psi)


def lat_from_isometric(psi, earth: Earth | str = WGS84):
    """Geodetic latitude (degrees) of the isometric latitude ``psi`` (radians): the inverse of
    :func:`isometric_lat`. A float for a scalar, else an array."""
    fig = _figure(get_earth(earth))
    if _is_scalar(psi):
        x = _scalar("psi", psi)
        if math.isnan(x):
            raise InputError("isometric latitude: psi=nan is not allowed; use a number (radians)")
        return math.degrees(_phi_of_psi(_PY, fig, x))
    (psiv,) = _arrays(psi)
    if np.any(np.isnan(psiv)):
        raise InputError("isometric latitude: psi=nan is not allowed; use numbers (radians)")
    return np.degrees(_phi_of_psi(_NP, fig, psiv))


def meridional_parts(lat, earth: Earth | str = WGS84):
    """Meridional parts of latitude ``lat`` (degrees): the Mercator northing in minutes of
    arc of the equator, as in Bowditch's Table of Meridional Parts (NGA Pub. 9).

    The difference of meridional parts ``m`` of two latitudes gives the course of the rhumb
    line between them, ``tan C = DLo' / m`` (Mercator sailing).
    """
    return isometric_lat(lat, earth) * MINUTES_PER_RADIAN


def meridian_arc(lat, earth: Earth | str = WGS84):
    """Length of the meridian from the equator to latitude ``lat`` (degrees), metres, signed
    (negative south). Series in ``n`` to O(n^6): truncation error below 1e-9 m on WGS84."""
    fig = _figure(get_earth(earth))
    if _is_scalar(lat):
        x = _scalar("lat", lat)
        _check_lat("lat", x)
        return fig.A * _mu(_PY, fig, math.radians(x))
    (latv,) = _arrays(lat)
    _check_lat("lat", latv)
    return fig.A * _mu(_NP, fig, np.radians(latv))


# ----------------------------------------------------------------------------------------
# Inverse and direct problems


def _inverse_core(xp, fig: _Figure, lat1, lon1, lat2, lon2):
    lam = xp.radians(_angdiff(xp, lon1, lon2))
    pole = (xp.abs(lat1) == 90.0) | (xp.abs(lat2) == 90.0)
    # Keep the numbers finite in the pole cases; they are replaced below.
    la1 = xp.where(pole, 0.0, lat1)
    la2 = xp.where(pole, 0.0, lat2)
    phi1 = xp.radians(la1)
    phi2 = xp.radians(la2)
    dpsi_dphi = _dpsi_dphi(xp, fig, phi2, phi1)
    dpsi = dpsi_dphi * xp.radians(la2 - la1)
    # s12 = hypot(d_lambda, d_psi) * (M2 - M1) / (psi2 - psi1)
    dist = xp.hypot(lam, dpsi) * (fig.A * _dmu_dphi(xp, fig, phi2, phi1) / dpsi_dphi)
    course = xp.degrees(xp.atan2(lam, dpsi))
    if xp.any(pole):
        # To or from a pole the line runs due north or south (it spirals into the pole in a
        # finite length); the length is the difference of meridian arc.
        half = math.pi / 2.0
        m1 = xp.where(xp.abs(lat1) == 90.0, xp.sign(lat1) * half, _mu(xp, fig, xp.radians(lat1)))
        m2 = xp.where(xp.abs(lat2) == 90.0, xp.sign(lat2) * half, _mu(xp, fig, xp.radians(lat2)))
        dist = xp.where(pole, fig.A * xp.abs(m2 - m1), dist)
        course = xp.where(pole, xp.where(lat2 < lat1, 180.0, 0.0), course)
    return dist + 0.0, _norm_course(xp, course)


#: On courses at least this far from east-west (|cos| >= 0.1, within some 84 degrees of north
#: or south) the change of longitude is computed as tan(course) * d_psi, which is then
#: well conditioned (error below 1e-14 radian); nearer east-west, by the divided differences.
_STEEP_COS = 0.1


def _direct_lat_lon(xp, fig: _Figure, phi1, mu1, lon1, sina, cosa, s, psi1=None):
    """End (phi2 [rad], unreduced lon2 [deg]) of the rhumb line from (phi1 [rad], lon1 [deg])
    on the course of sine ``sina`` and cosine ``cosa`` over ``s`` metres. No checks: phi1 must
    not be a pole and ``|mu1 + s cosa / A|`` must stay below pi/2. With a single course
    (``cosa`` a float) at least :data:`_STEEP_COS` from east-west and ``psi1`` given, the
    cheaper form ``d_lambda = tan(course) * (psi2 - psi1)`` is used."""
    mu2 = mu1 + s * cosa / fig.A
    if psi1 is not None and isinstance(cosa, float) and abs(cosa) >= _STEEP_COS:
        phi2 = _phi_of_mu(xp, fig, mu2)
        dlam = (sina / cosa) * (_psi_rad(xp, fig, phi2) - psi1)
        return phi2, lon1 + xp.degrees(dlam)
    phi2 = xp.where(cosa == 0.0, phi1, _phi_of_mu(xp, fig, mu2))  # due E/W: the parallel
    # d_lambda = s sin(alpha) / (DM/Dpsi) = s sin(alpha) (Dpsi/Dphi) / (A Dmu/Dphi)
    dlam = s * sina * _dpsi_dphi(xp, fig, phi2, phi1) / (fig.A * _dmu_dphi(xp, fig, phi2, phi1))
    return phi2, lon1 + xp.degrees(dlam)


def _direct_core(xp, fig: _Figure, lat1, lon1, course, dist):
    half = math.pi / 2.0
    sina, cosa = _sincosd(xp, course)
    at_pole = xp.abs(lat1) == 90.0
    phi1 = xp.radians(xp.where(at_pole, 0.0, lat1))
    mu1 = xp.where(at_pole, xp.sign(lat1) * half, _mu(xp, fig, phi1))
    mu2 = mu1 + dist * cosa / fig.A
    off_meridian = sina != 0.0
    # Along a meridian, an end within a nanometre past the pole is the pole (rounding).
    bad = (at_pole & off_meridian & (dist != 0.0)) | (xp.abs(mu2) > half + 1e-9 / fig.A) | (
        (xp.abs(mu2) >= half) & off_meridian
    )
    mu2 = xp.clip(mu2, -half, half)
    if xp.any(bad):
        _raise_pole(fig, lat1, course, dist, mu1, cosa, bad)
    phi2, lon2 = _direct_lat_lon(xp, fig, phi1, mu1, lon1, sina, cosa, dist)
    lat2 = xp.degrees(xp.where(at_pole, _phi_of_mu(xp, fig, mu2), phi2))
    # along a meridian to within a nanometre of a pole: the pole
    lat2 = xp.where(xp.abs(mu2) >= half - 1e-9 / fig.A, xp.sign(mu2) * 90.0, lat2)
    lat2 = xp.where(cosa == 0.0, lat1, xp.clip(lat2, -90.0, 90.0))
    lon2 = xp.where(off_meridian, lon2, lon1)
    return lat2 + 0.0, _norm_lon(xp, lon2)


def _raise_pole(fig, lat1, course, dist, mu1, cosa, bad):
    i = int(np.flatnonzero(np.ravel(bad))[0])
    where = f" (element {i})" if np.ndim(bad) else ""
    la, c, s, m, cc = (float(np.ravel(v)[i]) for v in (lat1, course, dist, mu1, cosa))
    if abs(la) == 90.0 and abs(m) == math.pi / 2.0 and (s * cc) * m <= 0.0 and s != 0.0:
        why = "starts at a pole, where only a meridian course (0 or 180) defines a longitude"
    else:
        pole = "north" if s * cc > 0.0 else "south"
        room = fig.A * (math.pi / 2.0 - abs(m)) if s * cc * m >= 0 else fig.A * (
            math.pi / 2.0 + abs(m))
        why = (
            f"reaches or passes the {pole} pole, where the longitude is undefined; on this "
            f"course less than {room / abs(cc):.3f} m can be sailed"
        )
    raise GeometryError(
        f"rhumb line direct problem{where}: lat1={la!r}, course={c!r}, distance_m={s!r} {why}"
    )


def rhumb_inverse_np(lat1, lon1, lat2, lon2, earth: Earth | str = WGS84):
    """Batch rhumb-line inverse over broadcast arrays (degrees).

    Returns ``(distance_m, course)`` as float64 arrays; courses true in [0, 360), 0.0 for
    zero-length lines. Longitude differences are taken the shorter way (|d_lon| <= 180).
    """
    fig = _figure(get_earth(earth))
    lat1, lon1, lat2, lon2 = _arrays(lat1, lon1, lat2, lon2)
    _check_lat("lat1", lat1)
    _check_lat("lat2", lat2)
    _check_finite("lon1", lon1, _LON)
    _check_finite("lon2", lon2, _LON)
    with _NP.quiet():
        return _inverse_core(_NP, fig, lat1, lon1, lat2, lon2)


def rhumb_direct_np(lat1, lon1, course, distance_m, earth: Earth | str = WGS84):
    """Batch rhumb-line direct problem over broadcast arrays: ``(lat2, lon2)`` in degrees,
    longitudes in [-180, 180). A negative distance sails the reciprocal course.

    Raises :class:`GeometryError` (naming the first such element) if any line would reach or
    pass a pole, except along a meridian exactly into it.
    """
    fig = _figure(get_earth(earth))
    lat1, lon1, course, distance_m = _arrays(lat1, lon1, course, distance_m)
    _check_lat("lat1", lat1)
    _check_finite("lon1", lon1, _LON)
    _check_finite("course", course, "a finite course in degrees true")
    _check_finite("distance_m", distance_m, "a finite distance in metres")
    with _NP.quiet():
        return _direct_core(_NP, fig, lat1, lon1, course, distance_m)


def rhumb_inverse(lat1: float, lon1: float, lat2: float, lon2: float,
                  earth: Earth | str = WGS84) -> tuple[float, float]:
    """Rhumb line from (lat1, lon1) to (lat2, lon2), degrees: ``(distance_m, course)``.

    ``course`` is true, in [0, 360), the same all along the line; it is ``0.0`` when the two
    points coincide (a zero-length line has no course). The line goes the shorter way in
    longitude (|d_lon| <= 180; exactly 180 apart, the way of lon2 - lon1 as given, as
    RhumbSolve does). Agrees
    with GeographicLib's RhumbSolve to nanometres and 1e-12 degrees on WGS84.
    """
    fig = _figure(get_earth(earth))
    la1, lo1, la2, lo2 = (_scalar(n, v) for n, v in
                          (("lat1", lat1), ("lon1", lon1), ("lat2", lat2), ("lon2", lon2)))
    _check_lat("lat1", la1)
    _check_lat("lat2", la2)
    _check_finite("lon1", lo1, _LON)
    _check_finite("lon2", lo2, _LON)
    return _inverse_core(_PY, fig, la1, lo1, la2, lo2)


def rhumb_direct(lat1: float, lon1: float, course: float, distance_m: float,
                 earth: Earth | str = WGS84) -> tuple[float, float]:
    """Position reached from (lat1, lon1) after ``distance_m`` metres on the rhumb ``course``
    (degrees true): ``(lat2, lon2)``, lon2 in [-180, 180). A negative distance sails the
    reciprocal course.

    Raises :class:`passagelog.errors.GeometryError` if the line would reach or pass a pole
    (except along a meridian exactly into it), where the longitude is undefined.
    """
    fig = _figure(get_earth(earth))
    la1, lo1, c, s = (_scalar(n, v) for n, v in
                      (("lat1", lat1), ("lon1", lon1), ("course", course),
                       ("distance_m", distance_m)))
    _check_lat("lat1", la1)
    _check_finite("lon1", lo1, _LON)
    _check_finite("course", c, "a finite course in degrees true")
    _check_finite("distance_m", s, "a finite distance in metres")
    return _direct_core(_PY, fig, la1, lo1, c, s)


# ----------------------------------------------------------------------------------------
# A rhumb-line leg and the offsets of positions from it


class RhumbLeg:
    """A rhumb-line leg from (lat1, lon1) to (lat2, lon2), degrees, on ``earth``.

    Attributes: ``distance_m``; ``course`` (true, constant: ``initial_course ==
    final_course == course``); ``sailing == "rhumb"``; the end points as given (longitudes
    reduced to [-180, 180)); ``earth``.

    Offsets follow DESIGN.md: the cross-track error ``xte_m`` and the along-track distance
    ``along_m`` of a position are measured to the foot of the shortest (geodesic) connection
    from the position to the leg's line, the rhumb line extended past both ends. ``xte_m`` is
    positive to the right (starboard) of the direction of travel; ``along_m`` is negative
    before the start and exceeds ``distance_m`` past the end.

    The foot is found in two stages. First on the Mercator chart, where the rhumb line is
    straight and angles are true (the projection is conformal): the perpendicular from the
    position, corrected to second order for the bending of geodesics on the chart, gives an
    along-track estimate. Then Newton's method on the along-track parameter ``s``: a
    geodesic inverse from the foot estimate R(s) to the position P (one vectorised call of
    pyproj's port of Karney 2013 per iteration, on the positions not yet converged) gives
    the distance ``d`` and the angle ``t`` at R between the course and P; on the sphere of
    R's Gaussian radius the right triangle R-foot-P gives the shift along the tangent, which
    is divided by ``1 + kappa * xte`` for the line's geodesic curvature ``kappa =
    sin(course) tan(lat) / N`` (Liouville's formula for a loxodrome). The iteration stops
    when what remains of ``s`` is below :data:`OFFSET_TOL_M` (0.1 mm; see ``_accept``):
    positions within a few tens of nautical miles of a mid-latitude line need one inversion,
    those hundreds of miles off two. ``xte_m`` is the cross-track leg of that triangle.
    The scalar :meth:`offset` runs the same iteration with geographiclib's scalar inverse.

    A leg with coincident ends has no course and a leg ending at a pole no defined line:
    both raise :class:`GeometryError`.
    """

    sailing = "rhumb"

    def __init__(self, lat1: float, lon1: float, lat2: float, lon2: float,
                 earth: Earth | str = WGS84):
        self.earth = get_earth(earth)
        fig = self._fig = _figure(self.earth)
        la1, lo1, la2, lo2 = (_scalar(n, v) for n, v in
                              (("lat1", lat1), ("lon1", lon1), ("lat2", lat2), ("lon2", lon2)))
        for name, v in (("lat1", la1), ("lat2", la2)):
            _check_lat(name, v)
        _check_finite("lon1", lo1, _LON)
        _check_finite("lon2", lo2, _LON)
        where = f"rhumb leg from ({la1!r}, {lo1!r}) to ({la2!r}, {lo2!r})"
        if abs(la1) == 90.0 or abs(la2) == 90.0:
            raise GeometryError(
                f"{where}: an end at a pole leaves the line's longitude undefined; "
                "use end points with |lat| < 90"
            )
        self.lat1, self.lon1 = la1, float(_norm_lon(_PY, lo1))
        self.lat2, self.lon2 = la2, float(_norm_lon(_PY, lo2))
        self.distance_m, self.course = _inverse_core(_PY, fig, la1, lo1, la2, lo2)
        if self.distance_m == 0.0:
            raise GeometryError(
                f"{where}: the two ends coincide, so the leg has no course; "
                "a leg needs two distinct points"
            )
        self.initial_course = self.final_course = self.course
        self._b_over_a = math.sqrt(1.0 - fig.e2)
        self._sina, self._cosa = _sincosd(_PY, self.course)
        self._phi1 = math.radians(la1)
        self._mu1 = _mu(_PY, fig, self._phi1)
        self._psi1 = _psi_rad(_PY, fig, self._phi1)
        dlon = _angdiff(_PY, lo1, lo2)
        self._lam_mid = math.radians(dlon) / 2.0  # Mercator easting of the leg's middle
        self._lon_mid = lo1 + dlon / 2.0
        # Along-track limits that keep the extended line off the poles (within ~1 km).
        if self._cosa != 0.0:
            room = fig.A * (math.pi / 2.0) * (1.0 - 1e-4)
            lims = sorted(((-room - fig.A * self._mu1) / self._cosa,
                           (room - fig.A * self._mu1) / self._cosa))
            self._s_min, self._s_max = lims
        else:
            self._s_min, self._s_max = -math.inf, math.inf

    def __repr__(self) -> str:
        return (f"RhumbLeg({self.lat1!r}, {self.lon1!r}, {self.lat2!r}, {self.lon2!r}, "
                f"earth={self.earth.name!r})")

    # -- points on the line

    def point_at(self, along_m: float) -> tuple[float, float]:
        """The point ``along_m`` metres along the line from the start (negative: before it;
        beyond ``distance_m``: past the end): ``(lat, lon)``."""
        return rhumb_direct(self.lat1, self.lon1, self.course, along_m, self.earth)

    def points_at_np(self, along_m):
        """Batch :meth:`point_at`: ``(lats, lons)`` arrays."""
        return rhumb_direct_np(self.lat1, self.lon1, self.course, along_m, self.earth)

    def _points(self, s):
        phi, lon = _direct_lat_lon(_NP, self._fig, self._phi1, self._mu1, self.lon1,
                                   self._sina, self._cosa, s)
        return np.degrees(phi), lon

    # -- offsets

    def offset(self, lat: float, lon: float) -> tuple[float, float]:
        """``(xte_m, along_m)`` of the position (lat, lon): see the class notes. The same
        iteration as :meth:`offsets_np`, on Python floats, with geographiclib's scalar
        geodesic inverse (so it is also the per-position baseline of the benchmarks)."""
        plat, plon = _scalar("lat", lat), _scalar("lon", lon)
        _check_lat("lat", plat)
        _check_finite("lon", plon, _LON)
        s = self._initial_along(_PY, plat, plon)
        prev = math.nan  # no step yet: no rate of convergence
        for _ in range(OFFSET_MAX_ITER):
            phi, rlon = _direct_lat_lon(_PY, self._fig, self._phi1, self._mu1, self.lon1,
                                        self._sina, self._cosa, s, self._psi1)
            d, azi, _ = _geodesic.inverse(math.degrees(phi), _norm_lon(_PY, rlon), plat, plon,
                                          self.earth)
            step, v = self._step(_PY, phi, azi, d)
            if self._accept(_PY, step, prev, d, phi):
                return v + 0.0, s + step + 0.0
            prev = step
            s = min(max(s + step, self._s_min), self._s_max)
        raise self._no_foot(0, plat, plon, 1)

    def offsets_np(self, lats, lons, strict: bool = True) -> tuple[np.ndarray, np.ndarray]:
        """Batch :meth:`offset` over broadcast arrays: ``(xte_m, along_m)`` float64 arrays.

        Raises :class:`GeometryError` (naming the first such position) if the foot of a
        position cannot be found: positions thousands of kilometres from the line, or
        hundreds near a pole, where the extended line spirals toward the pole and the
        distance to it has several minima. Never returns NaN, except with ``strict=False``,
        where such a position gets NaN for both and the rest their figures.
        """
        lats, lons = _arrays(lats, lons)
        _check_lat("lat", lats)
        _check_finite("lon", lons, _LON)
        shape = lats.shape
        plat = lats.ravel()
        plon = lons.ravel()
        with _NP.quiet():
            s = self._initial_along(_NP, plat, plon)
            xte, along, bad = self._newton(plat, plon, np.array(s, dtype=np.float64, ndmin=1))
        if bad.size:
            if not strict:
                xte = np.array(xte, dtype=np.float64, ndmin=1)
                along = np.array(along, dtype=np.float64, ndmin=1)
                xte[bad] = np.nan
                along[bad] = np.nan
                return xte.reshape(shape), along.reshape(shape)
            i = int(bad[0])
            raise self._no_foot(i, float(plat[i]), float(plon[i]), bad.size)
        return xte.reshape(shape), along.reshape(shape)

    def _no_foot(self, i, lat, lon, count):
        return GeometryError(
            f"{self!r}: the foot of the perpendicular from position {i} ({lat!r}, {lon!r}) "
            f"on the extended line was not found in {OFFSET_MAX_ITER} steps ({count} "
            "position(s) affected); the position is too far from the line, whose extension "
            "spirals toward the poles so that the distance to it has several minima"
        )

    def _initial_along(self, xp, plat, plon):
        """Along-track (metres) of the foot of the perpendicular in the Mercator plane."""
        fig = self._fig
        psi_cap = 20.0  # |lat| ~ 89.99999998 degrees: keeps a position at a pole finite
        x = self._lam_mid + xp.radians(_angdiff(xp, self._lon_mid, plon))
        y = xp.clip(_psi_rad(xp, fig, xp.radians(xp.clip(plat, -89.9999999, 89.9999999))),
                    -psi_cap, psi_cap) - self._psi1
        h = x * self._sina + y * self._cosa  # Mercator (psi-radian) units along the line
        # Second order: on the Mercator chart (scale 1/r, r = N cos(lat), d ln r / d psi =
        # -sin(lat)) a geodesic bends toward the equator with curvature sin(lat) per unit of
        # chart length, so the geodesic leaving the foot at right angles reaches the
        # position's chart distance L from the line displaced along it by sin(lat) cos(course)
        # L^2 / 2. sin(lat) at the middle of the connection: tanh(psi) is the sine of the
        # conformal latitude, and sin(lat) = sin(chi) (1 + e^2 cos^2(chi)) to O(e^4).
        dist = x * self._cosa - y * self._sina
        sin_chi = xp.tanh(self._psi1 + h * self._cosa - 0.5 * dist * self._sina)
        h = h + sin_chi * (1.0 + fig.e2 * (1.0 - sin_chi * sin_chi)) * self._cosa * (
            0.5 * dist * dist)
        phi_f = _phi_of_psi(xp, fig, xp.clip(self._psi1 + h * self._cosa, -psi_cap, psi_cap),
                            iterations=1)
        if abs(self._cosa) >= _STEEP_COS:
            # metres along the rhumb line: the meridian arc over cos(course)
            s = fig.A * (_mu(xp, fig, phi_f) - self._mu1) / self._cosa
        else:
            # h * (M_f - M_1) / (psi_f - psi_1), by divided differences
            s = h * (fig.A * _dmu_dphi(xp, fig, phi_f, self._phi1)
                     / _dpsi_dphi(xp, fig, phi_f, self._phi1))
        return xp.clip(s, self._s_min, self._s_max)

    def _step(self, xp, phir, azi, d):
        """Newton step along the line from the foot estimate R (latitude ``phir``, radians),
        given the geodesic distance ``d`` and azimuth ``azi`` from R to the position; and the
        cross-track distance (+ right) that goes with it.

        On the sphere of R's Gaussian radius ``r`` the right triangle R-foot-P gives the
        along-track leg ``r atan(tan(d/r) cos t)`` and the cross-track leg
        ``r asin(sin(d/r) sin t)``, t the angle at R from the course to P. The line bends
        (geodesic curvature ``kappa = sin(course) tan(lat) / N``, to the left when positive),
        so the foot on it moves ``u / (1 + kappa * xte)`` for a shift ``u`` on the tangent."""
        fig = self._fig
        theta = xp.radians(azi - self.course)
        sphi = xp.sin(phir)
        w2 = 1.0 - fig.e2 * sphi * sphi
        w = xp.sqrt(w2)  # N = a / w, rho = a (1 - e^2) / w^3
        r = self._b_over_a * fig.a / w2  # Gaussian radius sqrt(rho N) = a sqrt(1 - e^2) / w^2
        sig = d / r
        u = r * xp.atan(xp.tan(sig) * xp.cos(theta))
        v = r * xp.asin(xp.sin(sig) * xp.sin(theta))
        kappa = self._sina * xp.tan(phir) * w / fig.a
        den = 1.0 + kappa * v
        return u / xp.where(den > 0.5, den, 0.5), v

    def _accept(self, xp, step, prev, d, phir):
        """Whether the foot has converged (to :data:`OFFSET_TOL_M`) once ``step`` is taken.

        Yes when the step itself is below the tolerance; or when the rate of convergence seen
        over the last two steps puts what remains below a tenth of it; or, after the first
        inversion (``prev`` is NaN), when a bound on the error of the step does. The step is
        exact to first order; its error was found to stay below
        ``sec^2(lat) * ((d/R)^3 |step| + step^2 / R)`` (R = 6371 km) for |lat| <= 85 degrees
        and offsets to 250 NM; twice that is used, and only for d/R < 0.05."""
        a = xp.abs(step)
        tol = OFFSET_TOL_M
        rate = a * a < 0.1 * tol * xp.abs(prev)
        cphi = xp.cos(phir)
        dr = d / _R_MEAN_M
        bound = 2.0 / (cphi * cphi) * (dr * dr * dr * a + a * a / _R_MEAN_M)
        first = (prev != prev) & (bound < 0.1 * tol) & (dr < 0.05)  # prev is NaN
        return (a < tol) | rate | first

    def _newton(self, plat, plon, s):
        n = plat.size
        xte = np.zeros(n)
        along = np.zeros(n)
        prev = np.full(n, np.nan)  # no step yet: no rate of convergence
        active = np.arange(n)
        for it in range(OFFSET_MAX_ITER):
            if active.size == 0:
                break
            if it == 0:  # all positions: no gathering
                sa, alat, alon = s, plat, plon
            else:
                sa, alat, alon = s[active], plat[active], plon[active]
            phi, rlon = _direct_lat_lon(_NP, self._fig, self._phi1, self._mu1, self.lon1,
                                        self._sina, self._cosa, sa, self._psi1)
            d, azi, _ = _geodesic.inverse_np(np.degrees(phi), _norm_lon(_NP, rlon), alat, alon,
                                             self.earth)
            step, v = self._step(_NP, phi, azi, d)
            done = self._accept(_NP, step, np.nan if it == 0 else prev[active], d, phi)
            fin = active[done]
            xte[fin] = v[done]
            along[fin] = sa[done] + step[done]
            keep = ~done
            active = active[keep]
            prev[active] = step[keep]
            s[active] = np.clip(sa[keep] + step[keep], self._s_min, self._s_max)
        return xte + 0.0, along + 0.0, active
