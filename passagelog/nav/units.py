"""Units of the trade, as exact constants.

Inside passagelog distances are metres, times seconds, angles degrees; speeds are carried
in knots with ``_kn`` in the name. Conversions happen only at the edges, with these.
"""

from __future__ import annotations

import math
from fractions import Fraction

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

#: The same factors as exact fractions: distances in metres, speeds in metres per hour (so
#: that kn -> km/h is 1852/1000 exactly, with no rounded 1852/3600 in between).
_EXACT_M = {"m": Fraction(1), "nm": Fraction(1852), "km": Fraction(1000),
            "sm": Fraction(1609344, 1000), "ft": Fraction(3048, 10000)}
_EXACT_M_PER_H = {"m/s": Fraction(3600), "kn": Fraction(1852), "km/h": Fraction(1000),
                  "mph": Fraction(1609344, 1000)}

#: Other spellings accepted for each unit (matched ignoring case and surrounding spaces).
UNIT_ALIASES = {
    "m": ("m", "metre", "metres", "meter", "meters"),
    "nm": ("nm", "nmi", "nautical mile", "nautical miles"),
    "km": ("km", "kilometre", "kilometres", "kilometer", "kilometers"),
    "sm": ("sm", "mi", "mile", "miles", "statute mile", "statute miles"),
    "ft": ("ft", "foot", "feet"),
    "m/s": ("m/s", "mps"),
    "kn": ("kn", "kt", "kts", "knot", "knots"),
    "km/h": ("km/h", "kmh", "kph"),
    "mph": ("mph", "mi/h"),
}
_ALIAS_TO_UNIT = {alias: unit for unit, names in UNIT_ALIASES.items() for alias in names}


def canonical_unit(name: str) -> str:
    """The passagelog name (a key of DISTANCE_UNITS_M or SPEED_UNITS_MPS) of a unit spelling,
    e.g. ``"knots"`` -> ``"kn"``, ``"NM"`` -> ``"nm"``, ``"statute miles"`` -> ``"sm"``."""
    from passagelog.errors import InputError

    key = " ".join(str(name).split()).lower() if isinstance(name, str) else None
    if key not in _ALIAS_TO_UNIT:
        raise InputError(
            f"unit {name!r} is not known; distances: " + ", ".join(DISTANCE_UNITS_M)
            + "; speeds: " + ", ".join(SPEED_UNITS_MPS)
        )
    return _ALIAS_TO_UNIT[key]


def unit_kind(unit: str) -> str:
    """``"distance"`` or ``"speed"`` for a unit in any accepted spelling."""
    return "distance" if canonical_unit(unit) in DISTANCE_UNITS_M else "speed"


def convert(value: float, from_unit: str, to_unit: str) -> float:
    """Convert one distance or speed, correctly rounded (exact factors, one rounding).

    Units in any spelling of :data:`UNIT_ALIASES`; both must measure the same quantity.
    """
    from passagelog.errors import InputError

    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(
            value):
        raise InputError(f"value {value!r} to convert must be a finite number")
    src, dst = canonical_unit(from_unit), canonical_unit(to_unit)
    kinds = (unit_kind(src), unit_kind(dst))
    if kinds[0] != kinds[1]:
        raise InputError(f"cannot convert a {kinds[0]} ({from_unit}) to a {kinds[1]} "
                         f"({to_unit})")
    table = _EXACT_M if kinds[0] == "distance" else _EXACT_M_PER_H
    result = float(Fraction(value) * table[src] / table[dst])
    return math.copysign(result, value) if result == 0.0 else result  # keep the sign of 0


def m_to_nm(metres: float) -> float:
    """Metres to nautical miles."""
    return metres / NM_M


def nm_to_m(nm: float) -> float:
    """Nautical miles to metres."""
    return nm * NM_M


def _spelt(name: str, table: dict) -> str:
    """``name`` as a key of ``table`` when it is another spelling of one, else unchanged."""
    if name in table:
        return name
    key = " ".join(name.split()).lower() if isinstance(name, str) else name
    unit = _ALIAS_TO_UNIT.get(key)
    return unit if unit in table else name


def convert_distance(value: float, from_unit: str, to_unit: str) -> float:
    """Convert a distance between ``m``, ``nm``, ``km``, ``sm`` and ``ft`` (or another
    spelling of :data:`UNIT_ALIASES`); works on numpy arrays too."""
    from_unit, to_unit = _spelt(from_unit, DISTANCE_UNITS_M), _spelt(to_unit, DISTANCE_UNITS_M)
    try:
        return value * DISTANCE_UNITS_M[from_unit] / DISTANCE_UNITS_M[to_unit]
    except KeyError as exc:
        from passagelog.errors import InputError

        raise InputError(
            f"distance unit {exc.args[0]!r} is not known; use one of "
            + ", ".join(DISTANCE_UNITS_M)
        ) from None


def convert_speed(value: float, from_unit: str, to_unit: str) -> float:
    """Convert a speed between ``m/s``, ``kn``, ``km/h`` and ``mph`` (or another spelling of
    :data:`UNIT_ALIASES`); works on numpy arrays too."""
    from_unit, to_unit = _spelt(from_unit, SPEED_UNITS_MPS), _spelt(to_unit, SPEED_UNITS_MPS)
    try:
        return value * SPEED_UNITS_MPS[from_unit] / SPEED_UNITS_MPS[to_unit]
    except KeyError as exc:
        from passagelog.errors import InputError

        raise InputError(
            f"speed unit {exc.args[0]!r} is not known; use one of " + ", ".join(SPEED_UNITS_MPS)
        ) from None


def kn_to_mps(speed_kn: float) -> float:
    """Knots to metres per second (1 kn = 1852/3600 m/s)."""
    return speed_kn * NM_M / HOUR_S


def mps_to_kn(speed_mps: float) -> float:
    """Metres per second to knots."""
    return speed_mps * HOUR_S / NM_M


def hours_to_seconds(hours: float) -> float:
    return hours * HOUR_S


def travel_seconds(distance_m: float, speed_kn: float) -> float:
    """Time to cover ``distance_m`` at ``speed_kn``, seconds."""
    return distance_m / (speed_kn * KN_MPS)
