"""Zone time: zone descriptions, zone letters, ship's time and UTC.

Conventions (NGA Pub. 9, *American Practical Navigator*, chapter "Time"):

* The zone description ZD is the whole number of hours (here carried as minutes,
  ``zd_minutes``, so that clocks kept on half-hour zones fit) that is added to zone time to get
  UTC: **ZT + ZD = UTC**. ZD is positive in west longitude, negative in east longitude.
* The geographic zone of a longitude is ``lon / 15`` rounded: zone 0 spans 7°30'W to 7°30'E,
  zone ±1 the next 15°, and so on; zone 12 is split at the 180th meridian, +12 west of it and
  -12 east of it. A longitude exactly on a zone boundary (7°30', 22°30', ...) is given the zone
  nearer Greenwich, and 180° itself (``-180`` in passagelog's [-180, 180) range) is +12.
* Zone letters: Z for 0, A to M (J is not used) for -1 to -12, N to Y for +1 to +12.
* A time written with a numeric UTC offset such as ``-03:00`` has ZD = -offset (+3 here).

Nothing here reads the clock; "now" is the caller's business.
"""

from __future__ import annotations

import math
import re
from datetime import datetime, timedelta, timezone

from passagelog.errors import InputError

#: Allowed zone descriptions, minutes: UTC-12 (ZD +12) to UTC+14 (ZD -14), as in the logbook.
ZD_MIN_MINUTES = -14 * 60
ZD_MAX_MINUTES = 12 * 60

_EAST_LETTERS = "ABCDEFGHIKLM"  # ZD -1 .. -12 (no J)
_WEST_LETTERS = "NOPQRSTUVWXY"  # ZD +1 .. +12


def zd_from_lon(lon: float) -> int:
    """The zone description, whole hours, of the geographic zone holding ``lon`` (degrees,
    east positive; folded into [-180, 180)). Positive in west longitude."""
    if isinstance(lon, bool) or not isinstance(lon, (int, float)) or not math.isfinite(lon):
        raise InputError(f"longitude {lon!r} must be a finite number of degrees")
    lon = math.fmod(float(lon), 360.0)
    if lon >= 180.0:
        lon -= 360.0
    elif lon < -180.0:
        lon += 360.0
    zone = math.ceil(abs(lon) / 15.0 - 0.5)  # boundaries go to the zone nearer Greenwich
    if zone == 0:
        return 0
    return zone if lon < 0 else -zone


def zone_letter(zd_hours: int) -> str:
    """The zone letter of a whole-hour ZD: Z for 0, A-M (no J) for -1..-12, N-Y for +1..+12."""
    if isinstance(zd_hours, bool) or not isinstance(zd_hours, int):
        raise InputError(f"zone description {zd_hours!r} must be whole hours for a zone letter")
    if zd_hours == 0:
        return "Z"
    if -12 <= zd_hours <= -1:
        return _EAST_LETTERS[-zd_hours - 1]
    if 1 <= zd_hours <= 12:
        return _WEST_LETTERS[zd_hours - 1]
    raise InputError(f"zone description {zd_hours:+d} has no zone letter; letters cover "
                     "-12 to +12")


def _check_zd(zd_minutes: int) -> int:
    if isinstance(zd_minutes, bool) or not isinstance(zd_minutes, int):
        raise InputError(f"zone description {zd_minutes!r} must be whole minutes")
    if not ZD_MIN_MINUTES <= zd_minutes <= ZD_MAX_MINUTES:
        raise InputError(f"zone description {zd_minutes} min is outside -14 h to +12 h")
    return zd_minutes


def format_zd(zd_minutes: int) -> str:
    """A zone description as the trade writes it: ``+3``, ``-5:30``, ``0``."""
    _check_zd(zd_minutes)
    if zd_minutes == 0:
        return "0"
    sign = "+" if zd_minutes > 0 else "-"
    hours, minutes = divmod(abs(zd_minutes), 60)
    return f"{sign}{hours}" + (f":{minutes:02d}" if minutes else "")


_ZD_NUMBER = re.compile(r"([+\-−])?(\d{1,2})(?::?(\d{2}))?")


def parse_zd(text: str) -> int:
    """A zone description in minutes from ``+3``, ``-5:30``, ``-0530``, ``+03:00``, ``0``,
    ``Z`` or a zone letter (case-insensitive); an optional ``ZD`` in front is allowed.

    A non-zero number needs its sign: ZD is + in west longitude (ZT + ZD = UTC).
    """
    if not isinstance(text, str):
        raise InputError(f"zone description must be text, not {text!r}")
    raw = text
    body = text.strip()
    if body[:2].upper() == "ZD":
        body = body[2:].strip()
    allowed = ("expected a zone description such as +3, -5:30, -0530, 0, Z or a zone letter "
               "(ZT + ZD = UTC, + in west longitude)")
    if not body:
        raise InputError(f"zone description {raw!r} is empty; {allowed}")
    if len(body) == 1 and body.isalpha() and body.isascii():
        letter = body.upper()
        if letter == "Z":
            return 0
        if letter in _EAST_LETTERS:
            return -(_EAST_LETTERS.index(letter) + 1) * 60
        if letter in _WEST_LETTERS:
            return (_WEST_LETTERS.index(letter) + 1) * 60
        raise InputError(f"zone description {raw!r}: J is not a zone letter; {allowed}")
    m = _ZD_NUMBER.fullmatch(body)
    if not m:
        raise InputError(f"cannot read zone description {raw!r}; {allowed}")
    sign, hours, minutes = m.group(1), int(m.group(2)), int(m.group(3) or 0)
    if minutes >= 60:
        raise InputError(f"zone description {raw!r}: minutes {minutes} must be below 60")
    total = hours * 60 + minutes
    if total and sign is None:
        raise InputError(f"zone description {raw!r} needs its sign: + in west longitude, "
                         f"- in east (ZT + ZD = UTC), e.g. +{body} or -{body}")
    value = -total if sign in ("-", "−") else total
    if not ZD_MIN_MINUTES <= value <= ZD_MAX_MINUTES:
        raise InputError(f"zone description {raw!r} is outside -14 h to +12 h")
    return value


def _zone_tz(zd_minutes: int) -> timezone:
    return timezone(timedelta(minutes=-zd_minutes), f"ZD{format_zd(zd_minutes)}")


def ship_time(utc_dt: datetime, zd_minutes: int) -> datetime:
    """The ship's (zone) time of an aware instant: ZT = UTC - ZD, as an aware datetime whose
    fixed offset is -ZD (tzname ``ZD+3`` and the like)."""
    _check_zd(zd_minutes)
    if not isinstance(utc_dt, datetime) or utc_dt.utcoffset() is None:
        raise InputError(f"time {utc_dt!r} must be a timezone-aware datetime")
    return utc_dt.astimezone(_zone_tz(zd_minutes))


def utc_from_ship_time(dt: datetime, zd_minutes: int) -> datetime:
    """UTC (aware) of a ship's time kept on ``zd_minutes``: UTC = ZT + ZD.

    A naive ``dt`` is read as the zone time; an aware one must carry the offset -ZD.
    """
    _check_zd(zd_minutes)
    if not isinstance(dt, datetime):
        raise InputError(f"ship's time {dt!r} must be a datetime")
    offset = dt.utcoffset()
    if offset is None:
        dt = dt.replace(tzinfo=_zone_tz(zd_minutes))
    elif offset != timedelta(minutes=-zd_minutes):
        raise InputError(f"ship's time {dt.isoformat()} carries UTC offset {offset}, which is "
                         f"not ZD {format_zd(zd_minutes)}")
    return dt.astimezone(timezone.utc)


_TIME = re.compile(
    r"""
    (?P<date>\d{4}-\d{2}-\d{2})
    [Tt\ ]
    (?P<hour>\d{2}):(?P<minute>\d{2})(?::(?P<second>\d{2})(?:[.,](?P<frac>\d{1,9}))?)?
    \s*
    (?:
        (?P<utc>[Zz]|UTC|utc|GMT)
      | (?P<offset>[+\-−]\d{2}(?::?\d{2})?)
      | (?:ZD|zd)\s*(?P<zd>\S.*)
    )?
    """,
    re.VERBOSE,
)


def read_time(text: str) -> tuple[datetime, int | None]:
    """A written time and the zone description it carries, if any.

    Returns ``(dt, zd_minutes)``: ``dt`` aware with its own offset when the text carries a zone
    (``Z``/``UTC`` gives ZD 0, an offset ``-03:00`` gives ZD +180, a suffix ``ZD+3`` gives 180),
    else naive with ``zd_minutes`` None.
    """
    if not isinstance(text, str):
        raise InputError(f"time must be text, not {text!r}")
    shape = ("expected YYYY-MM-DDTHH:MM[:SS] followed by Z, an offset such as -03:00, "
             "or the ship's zone as ZD+3")
    m = _TIME.fullmatch(text.strip())
    if not m:
        raise InputError(f"cannot read time {text!r}; {shape}")
    try:
        year, month, day = (int(v) for v in m["date"].split("-"))
        micro = int((m["frac"] or "0").ljust(6, "0")[:6])
        dt = datetime(year, month, day, int(m["hour"]), int(m["minute"]),
                      int(m["second"] or 0), micro)
    except ValueError as exc:
        raise InputError(f"time {text!r} is not a valid date and time ({exc})") from None
    if m["utc"]:
        zd = 0
    elif m["offset"]:
        off = m["offset"].replace("−", "-").replace(":", "")
        hours, minutes = int(off[1:3]), int(off[3:5] or 0)
        if minutes >= 60:
            raise InputError(f"time {text!r}: offset minutes {minutes} must be below 60")
        zd = hours * 60 + minutes
        zd = zd if off[0] == "-" else -zd
        if not ZD_MIN_MINUTES <= zd <= ZD_MAX_MINUTES:
            raise InputError(f"time {text!r}: offset {m['offset']} is outside -12:00 to "
                             "+14:00")
    elif m["zd"]:
        try:
            zd = parse_zd(m["zd"])
        except InputError as exc:
            raise InputError(f"time {text!r}: {exc}") from None
    else:
        return dt, None
    return dt.replace(tzinfo=_zone_tz(zd) if zd else timezone.utc), zd


def parse_time_utc(text: str, zd_minutes: int | None = None) -> datetime:
    """An aware UTC datetime from written text.

    Accepts ISO 8601 with ``Z`` or an offset (``2026-03-01T14:30:00Z``,
    ``2026-03-01T11:30-03:00``), a space for the ``T``, seconds optional, and ship's time with
    its zone as a suffix (``2026-03-01T11:30 ZD+3``, ``ZD-5:30``, ``ZD Q``). ``zd_minutes`` is
    the zone of text that carries none of its own; a zone in the text wins. Text with no zone
    and no ``zd_minutes`` is refused.
    """
    dt, zd = read_time(text)
    if zd is None:
        if zd_minutes is None:
            raise InputError(
                f"time {text!r} has no zone: add Z for UTC (2026-03-01T14:30Z), an offset "
                "(2026-03-01T11:30-03:00) or the ship's zone description (2026-03-01T11:30 "
                "ZD+3; ZT + ZD = UTC)"
            )
        return utc_from_ship_time(dt, zd_minutes)
    return dt.astimezone(timezone.utc)


def format_utc(dt: datetime) -> str:
    """ISO 8601 UTC with ``Z`` and whole seconds (rounded to the nearest second, half up):
    ``2026-03-01T14:30:00Z``."""
    if not isinstance(dt, datetime) or dt.utcoffset() is None:
        raise InputError(f"time {dt!r} must be a timezone-aware datetime")
    dt = dt.astimezone(timezone.utc)
    if dt.microsecond >= 500_000:
        dt += timedelta(seconds=1)
    dt = dt.replace(microsecond=0)
    return (f"{dt.year:04d}-{dt.month:02d}-{dt.day:02d}T"
            f"{dt.hour:02d}:{dt.minute:02d}:{dt.second:02d}Z")


def format_ship_time(utc_dt: datetime, zd_minutes: int) -> str:
    """Ship's time with its zone, whole seconds: ``2026-03-01T11:30:00 ZD+3``
    (read back by :func:`parse_time_utc`)."""
    zt = ship_time(utc_dt, zd_minutes)
    if zt.microsecond >= 500_000:
        zt += timedelta(seconds=1)
    zt = zt.replace(microsecond=0)
    return (f"{zt.year:04d}-{zt.month:02d}-{zt.day:02d}T"
            f"{zt.hour:02d}:{zt.minute:02d}:{zt.second:02d} ZD{format_zd(zd_minutes)}")
