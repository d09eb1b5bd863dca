"""Latitudes, longitudes and positions: reading every notation a navigator types, and printing.

Accepted on input (case-insensitive hemisphere letters, any spacing)::

    47°36.512'N 122°20.107'W     degrees and decimal minutes, hemisphere after
    47 36.512N 122 20.107W       the same with spaces for symbols (the ASCII form we print)
    N47°36.512' W122°20.107'     hemisphere before
    47°36'30.7"N                 degrees, minutes, seconds
    47-36.512N                   a dash between degrees and minutes
    47.6085, -122.3351           signed decimal degrees, comma or space between
    47.6085N 122.3351W           decimal degrees with hemisphere letters
    47 122                       bare numbers only: the first half latitude, the rest longitude

Hemispheres: a coordinate with neither a hemisphere letter nor a sign is north or east, as in
signed decimal degrees (``-33.9 18.4``, ``47 122``), but only when the position has no letter
at all. When one coordinate carries a letter, the other must carry a letter (or a sign):
``38 12.5N 10 06.1`` is refused, never read as 10°06.1'E, since a navigator who writes N on
the latitude and forgets W on the longitude would otherwise get a position on the other side
of the prime meridian.

Degree signs: ``°`` ``º`` ``˚`` ``d`` ``deg``; minute signs: ``'`` ``′`` ``’`` ``‘`` ``´`` `````;
second signs: ``"`` ``″`` ``”`` ``“`` ``''`` ``′′``; minus: ``-`` ``−`` ``–``. Only the last
component may carry a decimal fraction. A comma, semicolon or slash may stand between latitude
and longitude. Latitude is written first in a position. A sign and a
hemisphere letter never go together; minutes and seconds are below 60; |lat| <= 90 and
|lon| <= 180 (longitudes are returned folded into [-180, 180), so 180°E reads as -180).

Printed (:func:`format_position`): degrees zero-padded to two digits for latitude and three for
longitude, minutes and seconds to two, as on charts: ``05°03.100'S 004°01.000'W``. Rounding
carries into the next minute or degree (59.9996' prints as the next degree, never 60.000').
A position that rounds to zero on a parallel or meridian prints N or E. The ASCII form replaces
the symbols with spaces (``05 03.100S 004 01.000W``) and reads back with :func:`parse_position`.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field

from passagelog.errors import PositionError

STYLES = ("dm", "dms", "decimal")

_DEG_SIGNS = "°º˚"
_MIN_SIGNS = "'′’‘´`"
_SEC_SIGNS = '"″”“'
_MINUS_SIGNS = "-−–"

_TOKEN = re.compile(
    r"""
    (?P<space>\s+)
  | (?P<number>\d+(?:\.\d*)?|\.\d+)
  | (?P<sec>''|′′|’’|[""" + _SEC_SIGNS + r"""])
  | (?P<min>[""" + _MIN_SIGNS + r"""])
  | (?P<deg>[""" + _DEG_SIGNS + r"""])
  | (?P<minus>[""" + _MINUS_SIGNS + r"""])
  | (?P<plus>\+)
  | (?P<comma>[,;/])
  | (?P<word>[^\W\d_]+)
  | (?P<other>.)
    """,
    re.VERBOSE,
)

_ROLE_NAMES = ("degrees", "minutes", "seconds")
_ROLE_OF_SIGN = {"deg": 0, "min": 1, "sec": 2}


@dataclass
class _Coord:
    """One coordinate while it is being read."""

    lead_hemi: str | None = None
    sign: str | None = None
    parts: list[tuple[str, int]] = field(default_factory=list)  # (digits, role)
    trail_hemi: str | None = None
    start: int | None = None  # where it is written in the text: text[start:end]
    end: int = 0

    @property
    def hemi(self) -> str | None:
        return self.lead_hemi or self.trail_hemi

    def reach(self, start: int, end: int) -> None:
        """Take the token at text[start:end] into the written extent."""
        self.start = start if self.start is None else min(self.start, start)
        self.end = max(self.end, end)

    def written(self, text: str) -> str:
        return text[self.start:self.end] if self.start is not None else ""

    def next_role(self) -> int | None:
        """The role a bare number would take next, or None when no more can follow."""
        if not self.parts:
            return 0
        digits, role = self.parts[-1]
        if "." in digits or role >= 2:
            return None
        return role + 1


def _fail(text: str, why: str, what: str = "position") -> PositionError:
    return PositionError(f"cannot read {what} {text!r}: {why}")


def _tokens(text: str):
    """(kind, value, preceded_by_space, start, end) for each token; whitespace is folded into
    the flag."""
    spaced = True
    for m in _TOKEN.finditer(text):
        kind = m.lastgroup
        value = m.group()
        if kind == "space":
            spaced = True
            continue
        yield kind, value, spaced, m.start(), m.end()
        spaced = False


_EXAMPLES = {
    "position": "a latitude and a longitude such as 47°36.512'N 122°20.107'W",
    "latitude": "a latitude such as 47°36.512'N",
    "longitude": "a longitude such as 122°20.107'W",
}


def _read_coords(text: str, what: str) -> tuple[list[_Coord], list[int]]:
    """Split ``text`` into coordinates; also return the indexes after which a comma stood."""
    if not isinstance(text, str):
        raise PositionError(f"a {what} must be text, not {text!r}")
    if not text.strip():
        raise PositionError(f"{what} text {text!r} is empty; expected {_EXAMPLES[what]}")

    def fail(text: str, why: str) -> PositionError:
        return _fail(text, why, what)

    coords: list[_Coord] = []
    commas: list[int] = []
    cur = _Coord()
    toks = list(_tokens(text))

    def close() -> None:
        nonlocal cur
        if cur.parts:
            coords.append(cur)
        elif cur.lead_hemi or cur.sign:
            lone = f"hemisphere {cur.lead_hemi!r}" if cur.lead_hemi else f"sign {cur.sign!r}"
            raise fail(text, f"{lone} is not followed by a number")
        cur = _Coord()

    # "47d36.512" or "47deg 36.512": a degree sign spelt with letters right after a number
    for k in range(1, len(toks)):
        kind, value, spaced, start, end = toks[k]
        if (kind == "word" and value.lower() in ("d", "deg") and not spaced
                and toks[k - 1][0] == "number"):
            toks[k] = ("deg", value, spaced, start, end)

    for kind, value, *_ in toks:
        if kind == "word" and value.lower() in ("nan", "inf", "infinity"):
            raise fail(text, f"{value!r} is not a finite number")

    i = 0
    while i < len(toks):
        kind, value, spaced, start, end = toks[i]
        nxt = toks[i + 1] if i + 1 < len(toks) else None
        if kind == "number":
            role = cur.next_role()
            if nxt and nxt[0] in _ROLE_OF_SIGN:
                # the sign after the number fixes its role
                wanted = _ROLE_OF_SIGN[nxt[0]]
                i += 1
                if cur.parts:
                    last_digits, last_role = cur.parts[-1]
                    if wanted > last_role and "." in last_digits:
                        raise fail(text, f"only the last part of a coordinate may have a "
                                         f"decimal fraction ({last_digits} is followed by "
                                         f"{value}{nxt[1]})")
                    if role is None or wanted < role:  # going back: the next coordinate
                        close()
                        role = 0
                if wanted != role:
                    if role == 0:
                        raise fail(text, f"{value}{nxt[1]} ({_ROLE_NAMES[wanted]}) has no "
                                         "degrees before it")
                    raise fail(text, f"{value}{nxt[1]} ({_ROLE_NAMES[wanted]}) follows "
                                     f"the {_ROLE_NAMES[role - 1]} directly")
            elif role is None:
                close()
                role = 0
            cur.parts.append((value, role))
            cur.reach(start, toks[i][4])  # the number and its sign, if any
        elif kind in _ROLE_OF_SIGN:
            raise fail(text, f"{value!r} does not follow a number")
        elif kind == "word":
            word = value.lower()
            if word in ("n", "s", "e", "w"):
                hemi = word.upper()
                if cur.parts and cur.lead_hemi is None:
                    if cur.sign:
                        raise fail(text, f"a sign ({cur.sign}) and a hemisphere letter "
                                         f"({hemi}) together; write one or the other")
                    cur.trail_hemi = hemi
                    cur.reach(start, end)
                    close()
                else:
                    close()
                    cur.lead_hemi = hemi
                    cur.reach(start, end)
            else:
                raise fail(text, f"unexpected {value!r}; expected numbers, degree, minute "
                                 "and second signs and hemisphere letters N S E W")
        elif kind in ("minus", "plus"):
            sign = "-" if kind == "minus" else "+"
            if (kind == "minus" and not spaced and i > 0 and toks[i - 1][0] == "number"
                    and nxt and nxt[0] == "number" and not nxt[2]):
                # "47-36.512N": a dash between whole degrees and the minutes
                last_digits, last_role = cur.parts[-1]
                if last_role != 0 or "." in last_digits:
                    raise fail(text, f"a dash may only stand between whole degrees and "
                                     f"minutes, not after {last_digits}")
            else:
                if cur.lead_hemi and not cur.parts:
                    raise fail(text, f"a sign ({sign}) and a hemisphere letter "
                                     f"({cur.lead_hemi}) together; write one or the other")
                close()
                if not nxt or nxt[0] != "number" or nxt[2]:
                    raise fail(text, f"sign {value!r} is not followed by a number")
                cur.sign = sign
                cur.reach(start, end)
        elif kind == "comma":
            close()
            commas.append(len(coords))
        else:
            raise fail(text, f"unexpected {value!r}; expected numbers, degree, minute and "
                             "second signs and hemisphere letters N S E W")
        i += 1
    close()
    return coords, commas


def _value(text: str, c: _Coord, axis: str, what: str) -> float:
    """The signed value in degrees of one coordinate, checked; ``axis`` is lat or lon."""

    def fail(text: str, why: str) -> PositionError:
        return _fail(text, why, what)

    hemi = c.hemi
    if c.sign and hemi:
        raise fail(text, f"a sign ({c.sign}) and a hemisphere letter ({hemi}) together; "
                         "write one or the other")
    if hemi:
        found = "lat" if hemi in "NS" else "lon"
        if found != axis:
            if axis == "lat":
                raise fail(text, f"a longitude ({hemi}) where a latitude (N or S) is expected")
            raise fail(text, f"a latitude ({hemi}) where a longitude (E or W) is expected")
    nums = [float(d) for d, _ in c.parts]
    roles = [r for _, r in c.parts]
    if roles != list(range(len(roles))):
        raise fail(text, "degrees, minutes and seconds must come in that order")
    for (digits, role), num in zip(c.parts, nums):
        if role > 0 and num >= 60.0:
            raise fail(text, f"{_ROLE_NAMES[role]} {digits} must be below 60")
    if len(nums) == 1:
        deg = nums[0]
    elif len(nums) == 2:
        deg = nums[0] + nums[1] / 60.0
    else:
        deg = nums[0] + (nums[1] * 60.0 + nums[2]) / 3600.0
    negative = c.sign == "-" or hemi in ("S", "W")
    limit = 90.0 if axis == "lat" else 180.0
    name = "latitude" if axis == "lat" else "longitude"
    if not deg <= limit:  # also a string of digits too long for a float (inf)
        shown = f" {deg:.10g}°" if math.isfinite(deg) else ""
        raise fail(text, f"{name}{shown} is out of range; it must be at most {limit:g}°")
    value = -deg if negative else deg
    if axis == "lon":
        value = _fold_lon(value)
    return value + 0.0


def _fold_lon(lon: float) -> float:
    lon = math.fmod(lon, 360.0)
    if lon >= 180.0:
        lon -= 360.0
    elif lon < -180.0:
        lon += 360.0
    return lon + 0.0


def _single(text: str, axis: str) -> float:
    name = "latitude" if axis == "lat" else "longitude"
    coords, commas = _read_coords(text, name)
    if commas:
        raise _fail(text, f"a comma in a single {name}", name)
    if len(coords) != 1:
        raise _fail(text, f"expected one {name}, found {len(coords)} coordinates", name)
    return _value(text, coords[0], axis, name)


def parse_lat(text: str) -> float:
    """A latitude in degrees, north positive, from any usual notation (see the module)."""
    return _single(text, "lat")


def parse_lon(text: str) -> float:
    """A longitude in degrees, east positive, folded into [-180, 180)."""
    return _single(text, "lon")


def parse_position(text: str) -> tuple[float, float]:
    """``(lat, lon)`` in degrees from a position written latitude first in any usual notation.

    Raises :class:`~passagelog.errors.PositionError` quoting the text and saying what was
    expected.
    """
    coords, commas = _read_coords(text, "position")
    if isinstance(text, str):
        toks = list(_tokens(text))
        if len(toks) in (2, 4, 6) and all(tok[0] == "number" for tok in toks):
            # bare numbers only ("47 122", "47 36.5 122 20.1"): half for each coordinate
            half = len(toks) // 2
            coords = [_Coord(parts=[(tok[1], r) for r, tok in enumerate(part)],
                             start=part[0][3], end=part[-1][4])
                      for part in (toks[:half], toks[half:])]
            for c in coords:
                for digits, _ in c.parts[:-1]:
                    if "." in digits:
                        raise _fail(text, f"only the last part of a coordinate may have a "
                                          f"decimal fraction ({digits} is followed by more)")
    if len(coords) != 2:
        raise _fail(text, f"expected a latitude and a longitude, found {len(coords)} "
                          "coordinate" + ("" if len(coords) == 1 else "s"))
    if commas not in ([], [1]):
        raise _fail(text, "a comma may only stand between the latitude and the longitude")
    first, second = coords
    if first.hemi in ("E", "W") and second.hemi in ("N", "S"):
        raise _fail(text, "the latitude (N or S) must come first")
    lat = _value(text, first, "lat", "position")
    lon = _value(text, second, "lon", "position")
    gap = _hemisphere_gap(first, second)
    if gap is not None:
        coord = first if gap == "lat" else second
        raise _fail(text, _no_hemisphere(gap, coord.written(text)))
    return lat, lon


def _hemisphere_gap(lat: _Coord, lon: _Coord) -> str | None:
    """``"lat"`` or ``"lon"``: the coordinate that has neither a hemisphere letter nor a sign
    while the other has a letter (it may not be taken as north or east); else None."""
    if lat.hemi and not (lon.hemi or lon.sign):
        return "lon"
    if lon.hemi and not (lat.hemi or lat.sign):
        return "lat"
    return None


def _no_hemisphere(axis: str, written: str) -> str:
    if axis == "lat":
        return (f"latitude {written!r} has no hemisphere: add N or S (the longitude has one, "
                "so a latitude without a letter or a sign is not taken as north)")
    return (f"longitude {written!r} has no hemisphere: add E or W (the latitude has one, "
            "so a longitude without a letter or a sign is not taken as east)")


def hemisphere_gap(lat_text: str, lon_text: str) -> tuple[str, str] | None:
    """For a latitude and a longitude written apart (two cells of a row), the rule of
    :func:`parse_position`: when one carries a hemisphere letter and the other has neither a
    letter nor a sign, ``("lat" or "lon", why)`` names the one refused; else None.

    Each text is expected to read on its own (:func:`parse_lat`, :func:`parse_lon`)."""
    lat, _ = _read_coords(lat_text, "latitude")
    lon, _ = _read_coords(lon_text, "longitude")
    if len(lat) != 1 or len(lon) != 1:
        return None
    gap = _hemisphere_gap(lat[0], lon[0])
    if gap is None:
        return None
    return gap, _no_hemisphere(gap, (lat_text if gap == "lat" else lon_text).strip())


# ---------------------------------------------------------------------------------------------
# printing


def _check_style(style: str, decimals: int) -> None:
    if style not in STYLES:
        raise PositionError(f"position style {style!r} is not known; use one of "
                            + ", ".join(STYLES))
    if isinstance(decimals, bool) or not isinstance(decimals, int) or not 0 <= decimals <= 12:
        raise PositionError(f"position decimals {decimals!r} must be a whole number 0 to 12")


def _format(value: float, axis: str, style: str, decimals: int, ascii: bool) -> str:
    _check_style(style, decimals)
    name = "latitude" if axis == "lat" else "longitude"
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise PositionError(f"{name} {value!r} is not a finite number of degrees")
    if axis == "lat":
        if not -90.0 <= value <= 90.0:
            raise PositionError(f"latitude {value!r} is out of range; it must be in [-90, 90]")
    else:
        value = _fold_lon(float(value))
    if style == "decimal":
        out = f"{value:.{decimals}f}"
        if float(out) == 0.0:
            out = out.lstrip("-")
        return out
    scale = 10 ** decimals
    per_degree = (60 if style == "dm" else 3600) * scale
    total = round(abs(value) * per_degree)  # whole units of the last printed digit
    deg, rest = divmod(total, per_degree)
    width = 2 if axis == "lat" else 3
    if total == 0:
        hemi = "N" if axis == "lat" else "E"
    elif axis == "lat":
        hemi = "S" if value < 0 else "N"
    else:
        hemi = "W" if value < 0 else "E"

    def fixed(units: int) -> str:  # units of 1/scale, printed as 2 digits + decimals
        whole, frac = divmod(units, scale)
        return f"{whole:02d}" + (f".{frac:0{decimals}d}" if decimals else "")

    if style == "dm":
        mins = fixed(rest)
        if ascii:
            return f"{deg:0{width}d} {mins}{hemi}"
        return f"{deg:0{width}d}°{mins}'{hemi}"
    mins, secs = divmod(rest, 60 * scale)
    secs_text = fixed(secs)
    if ascii:
        return f"{deg:0{width}d} {mins:02d} {secs_text}{hemi}"
    return f"{deg:0{width}d}°{mins:02d}'{secs_text}\"{hemi}"


def format_lat(lat: float, style: str = "dm", decimals: int = 3, ascii: bool = False) -> str:
    """A latitude as ``47°36.512'N`` (``dm``), ``47°36'30.720"N`` (``dms``) or ``47.609``
    (``decimal``, signed); ``decimals`` applies to the last component; ``ascii`` prints
    ``47 36.512N``."""
    return _format(lat, "lat", style, decimals, ascii)


def format_lon(lon: float, style: str = "dm", decimals: int = 3, ascii: bool = False) -> str:
    """A longitude as ``122°20.107'W`` (three-digit degrees), folded into [-180, 180)."""
    return _format(lon, "lon", style, decimals, ascii)


def format_position(lat: float, lon: float, style: str = "dm", decimals: int = 3,
                    ascii: bool = False) -> str:
    """A position: ``47°36.512'N 122°20.107'W``; decimal style ``47.609, -122.335``."""
    sep = ", " if style == "decimal" else " "
    return format_lat(lat, style, decimals, ascii) + sep + format_lon(lon, style, decimals,
                                                                      ascii)
