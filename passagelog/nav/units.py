"""Units of the trade, as exact constants.

Inside passagelog distances are metres, times seconds, angles degrees; speeds are carried
in knots with ``_kn`` in the name. Conversions happen only at the edges, with these.
"""

from __future__ import annotations

#: One international nautical mile, metres (exact; International Hydrographic Conference 1929).
NM_M = 1852.0
#: One statute mile, metres (exact; international yard of 1959, 1760 yd of 0.9144 m).
SM_M = 1609.344
#: One kilometre, metres.
KM_M = 1000.0
#: One international foot, metres (exact).
FT_M = 0.3048
#: Seconds in one hour.
HOUR_S = 3600.0
#: One knot, metres per second (1852/3600, exact).
KN_MPS = NM_M / HOUR_S
#: One km/h, metres per second.
KMH_MPS = KM_M / HOUR_S
#: One statute mile per hour, metres per second.
MPH_MPS = SM_M / HOUR_S

DISTANCE_UNITS_M = {"m": 1.0, "nm": NM_M, "km": KM_M, "sm": SM_M, "ft": FT_M}
SPEED_UNITS_MPS = {"m/s": 1.0, "kn": KN_MPS, "km/h": KMH_MPS, "mph": MPH_MPS}


def m_to_nm(metres: float) -> float:
    """Metres to nautical miles."""
    return metres / NM_M


def nm_to_m(nm: float) -> float:
    """Nautical miles to metres."""
    return nm * NM_M


def convert_distance(value: float, from_unit: str, to_unit: str) -> float:
    """Convert a distance between ``m``, ``nm``, ``km``, ``sm`` and ``ft``."""
    try:
        return value * DISTANCE_UNITS_M[from_unit] / DISTANCE_UNITS_M[to_unit]
    except KeyError as exc:
        from passagelog.errors import InputError

        raise InputError(
            f"distance unit {exc.args[0]!r} is not known; use one of "
            + ", ".join(DISTANCE_UNITS_M)
        ) from None


def convert_speed(value: float, from_unit: str, to_unit: str) -> float:
    """Convert a speed between ``m/s``, ``kn``, ``km/h`` and ``mph``."""
    try:
        return value * SPEED_UNITS_MPS[from_unit] / SPEED_UNITS_MPS[to_unit]
    except KeyError as exc:
        from passagelog.errors import InputError

        raise InputError(
            f"speed unit {exc.args[0]!r} is not known; use one of " + ", ".join(SPEED_UNITS_MPS)
        ) from None


def hours_to_seconds(hours: float) -> float:
    return hours * HOUR_S


def travel_seconds(distance_m: float, speed_kn: float) -> float:
    """Time to cover ``distance_m`` at ``speed_kn``, seconds."""
    return distance_m / (speed_kn * KN_MPS)
