"""Figures of the Earth: WGS84 (the default everywhere) and two spheres for textbook work.

* ``wgs84``: the WGS 84 ellipsoid, a = 6378137 m, 1/f = 298.257223563 (NIMA TR8350.2).
* ``sphere``: the IUGG mean radius R1 = 6371008.8 m (Moritz, Geodetic Reference System 1980).
* ``sphere-nm``: the sphere on which one minute of arc of a great circle is exactly one
  nautical mile, R = 1852 * 60 * 180 / pi = 6366707.0195... m, as in the sailings of the
  navigation textbooks.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from functools import cached_property

from passagelog.errors import InputError


@dataclass(frozen=True)
class Earth:
    """An ellipsoid of revolution (``f = 0`` for a sphere). ``a`` in metres."""

    name: str
    a: float
    f: float

    @property
    def b(self) -> float:
        """Polar semi-axis, metres."""
        return self.a * (1.0 - self.f)

    @property
    def e2(self) -> float:
        """First eccentricity squared."""
        return self.f * (2.0 - self.f)

    @property
    def e(self) -> float:
        return math.sqrt(self.e2)

    @property
    def is_sphere(self) -> bool:
        return self.f == 0.0

    @cached_property
    def geodesic(self):
        """geographiclib's ``Geodesic`` for this figure (scalar, exact)."""
        from geographiclib.geodesic import Geodesic

        if self.name == "wgs84":
            return Geodesic.WGS84
        return Geodesic(self.a, self.f)

    @cached_property
    def geod(self):
        """pyproj's ``Geod`` for this figure (vectorised C port of the same algorithms)."""
        from pyproj import Geod

        return Geod(a=self.a, f=self.f)


WGS84 = Earth("wgs84", 6378137.0, 1.0 / 298.257223563)
SPHERE = Earth("sphere", 6371008.8, 0.0)
SPHERE_NM = Earth("sphere-nm", 1852.0 * 60.0 * 180.0 / math.pi, 0.0)

EARTHS = {e.name: e for e in (WGS84, SPHERE, SPHERE_NM)}


def get_earth(name: str | Earth) -> Earth:
    """The figure named ``name`` (``wgs84``, ``sphere`` or ``sphere-nm``)."""
    if isinstance(name, Earth):
        return name
    try:
        return EARTHS[name]
    except KeyError:
        raise InputError(
            f"earth model {name!r} is not known; use one of: {', '.join(EARTHS)}"
        ) from None
