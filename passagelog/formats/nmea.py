"""NMEA 0183 logs: RMC, GGA, GLL, VTG, HDT and ZDA from any talker, in and out.

Reading
-------
Every line is framed and checked here, strictly: ``$``, talker and sentence type, fields,
``*hh`` checksum (the XOR of every character between ``$`` and ``*``). pynmea2 is not used
for the framing because it is too lenient for a logbook (a missing checksum passes unless
``check=True``, empty or truncated positions come back as 0.0 and failed numeric conversions
as strings), and because the framing and the two high-volume sentences (RMC and GGA) must be
fast. RMC and GGA fields are read by own code; a clean RMC goes through one strict pattern
(the fast path below), reading the line and making its Fix in about 7.6 us where
``pynmea2.parse`` plus reading the position and the time takes about 20 us (figures from
benchmarks/bench_import.py, 1,000,000 lines, quiet 2-core machine). The rarer
sentences (GLL, VTG, HDT, ZDA) are split into named fields by pynmea2 after the strict
framing, and every field it returns is validated again from its raw text here.

Sentences are grouped into epochs (consecutive sentences with the same UTC time of day).
One epoch gives at most one fix: when several talkers report the same epoch (GP and GN, say)
the preferred talker's position is kept and the others are counted as dropped. VTG (course
and speed) and HDT (heading) carry no time; they are merged into the epoch that is open when
they arrive, filling only what the epoch lacks. Dates come from RMC or ZDA; GGA and GLL carry
only the time of day, so the date is carried forward and advanced by one day when the time
of day falls back by more than twelve hours (the midnight rollover). Epochs seen before any
date are held (a bounded number) and dated backwards once a date arrives.

Rejected lines are counted by reason, with the first few line numbers, in the reader's
:class:`~passagelog.formats._common.ReadSummary`; they never stop the read.
"""

from __future__ import annotations

import math
import re
from collections import deque
from datetime import date, datetime, timedelta, timezone
from typing import IO, Iterable, Iterator, Sequence

import pynmea2

from passagelog.errors import InputError
from passagelog.formats._common import ReadSummary
import passagelog.model as _model
from passagelog.model import Fix

UTC = timezone.utc
_DAY = timedelta(days=1)
_HALF_DAY_MS = 12 * 3600 * 1000

#: Fields after the address field, per sentence type (NMEA 0183 2.x to 4.x layouts).
FIELD_COUNTS = {
    "RMC": (11, 12, 13),  # +mode indicator (2.3), +navigational status (4.1)
    "GGA": (14,),
    "GLL": (6, 7),        # +mode indicator (2.3)
    "VTG": (8, 9),        # +mode indicator (2.3)
    "HDT": (2,),
    "ZDA": (6,),
}
#: Mode indicators of RMC/GLL/VTG (NMEA 0183 2.3+): A autonomous, D differential,
#: E estimated (dead reckoning), F float RTK, M manual input, N not valid, P precise,
#: R RTK, S simulator.
MODE_LETTERS = frozenset("ADEFMNPRS")
#: Talkers preferred when several report the same epoch, best first (GN is the combined
#: multi-constellation solution).
DEFAULT_TALKER_ORDER = ("GN", "GP", "GL", "GA", "GB", "BD")
#: Undated epochs held while waiting for the first RMC or ZDA date.
MAX_PENDING_EPOCHS = 3600
#: Two-digit years: 80-99 are 1980-1999 (GPS began in 1980), 00-79 are 2000-2079
#: (common practice).
YEAR_PIVOT = 80


_HEX_PAIRS = {f"{a}{b}": int(f"{a}{b}", 16)
              for a in "0123456789ABCDEFabcdef" for b in "0123456789ABCDEFabcdef"}


#: One strict pattern for a whole RMC body (ASCII digits only): status A, time, position,
#: optional speed and course, date, variation, optional mode letter and navigational status.
_RMC_FAST = re.compile(
    r"([A-Z0-9]{2})RMC,([01]\d|2[0-3])([0-5]\d)([0-5]\d)(?:\.(\d{1,3})\d*)?,A,"
    r"(\d\d)([0-5]\d(?:\.\d*)?),([NS]),(\d{3})([0-5]\d(?:\.\d*)?),([EW]),"
    r"(\d{1,9}(?:\.\d{0,9})?)?,(\d{1,3}(?:\.\d{0,9})?)?,"
    r"((?:0[1-9]|[12]\d|3[01])(?:0[1-9]|1[0-2])\d\d),"
    r"[^,*$]*,[^,*$]*(?:,([ADEFMPRS]?)(?:,[^,*$]*)?)?", re.ASCII).fullmatch


class _Bad(Exception):
    """A field that does not hold what the sentence type allows (the reason is args[0])."""


# ---------------------------------------------------------------------------------------
# checksums and fields


def checksum(body: str) -> int:
    """The NMEA 0183 checksum: XOR of the characters between ``$`` and ``*``."""
    data = body.encode("latin-1")
    if len(data) > 128:
        x = 0
        for b in data:
            x ^= b
        return x
    # Fold the bytes as one integer: XOR of the two halves keeps the byte-wise XOR in each
    # byte lane, so seven folds reduce up to 128 bytes to one (about 3x faster than a loop).
    x = int.from_bytes(data, "little")
    x ^= x >> 512
    x &= (1 << 512) - 1
    x ^= x >> 256
    x &= (1 << 256) - 1
    x ^= x >> 128
    x &= (1 << 128) - 1
    x ^= x >> 64
    x &= 0xFFFFFFFFFFFFFFFF
    x ^= x >> 32
    x &= 0xFFFFFFFF
    x ^= x >> 16
    x &= 0xFFFF
    x ^= x >> 8
    return x & 0xFF


def sentence(body: str) -> str:
    """``$`` + ``body`` + ``*hh`` with the checksum computed (no line ending)."""
    return f"${body}*{checksum(body):02X}"


def _time_ms(text: str, what: str) -> int:
    """``hhmmss`` or ``hhmmss.s...`` -> milliseconds of the day."""
    if len(text) < 6 or not text[:6].isdigit():
        raise _Bad(f"{what} time")
    h = int(text[:2])
    m = int(text[2:4])
    s = int(text[4:6])
    frac = 0
    if len(text) > 6:
        if text[6] != "." or (len(text) > 7 and not text[7:].isdigit()):
            raise _Bad(f"{what} time")
        digits = (text[7:] + "000")[:3]
        frac = int(digits) if digits else 0
    if h > 23 or m > 59 or s > 59:
        raise _Bad(f"{what} time")
    return ((h * 60 + m) * 60 + s) * 1000 + frac


def _angle(text: str, hemi: str, int_digits: int, limit: int, pos: str, neg: str,
           what: str) -> float:
    """``ddmm.mmm`` / ``dddmm.mmm`` with its hemisphere letter -> signed degrees."""
    dot = text.find(".")
    whole = text if dot < 0 else text[:dot]
    if len(whole) != int_digits + 2 or not whole.isdigit() or (
            dot >= 0 and dot + 1 < len(text) and not text[dot + 1:].isdigit()):
        raise _Bad(what)
    deg = int(whole[:int_digits])
    minutes = float(text[int_digits:])
    if minutes >= 60.0 or deg > limit or (deg == limit and minutes > 0.0):
        raise _Bad(what)
    value = deg + minutes / 60.0
    if hemi == pos:
        return value
    if hemi == neg:
        return -value
    raise _Bad(what)


def _lat(text: str, hemi: str, kind: str) -> float:
    return _angle(text, hemi, 2, 90, "N", "S", f"{kind} latitude")


def _lon(text: str, hemi: str, kind: str) -> float:
    return _angle(text, hemi, 3, 180, "E", "W", f"{kind} longitude")


def _num(text: str, what: str) -> float | None:
    """An unsigned decimal number, or None when the field is empty."""
    if not text:
        return None
    if not text.replace(".", "", 1).isdigit():
        raise _Bad(what)
    value = float(text)
    if value == math.inf:  # 400 digits read as a float
        raise _Bad(what)
    return value


def _course(text: str, what: str) -> float | None:
    value = _num(text, what)
    if value is None:
        return None
    if value > 360.0:
        raise _Bad(what)
    return 0.0 if value == 360.0 else value


def _year(two: int) -> int:
    return 1900 + two if two >= YEAR_PIVOT else 2000 + two


def _rmc_date(text: str) -> date:
    if len(text) != 6 or not text.isdigit():
        raise _Bad("RMC date")
    try:
        return date(_year(int(text[4:6])), int(text[2:4]), int(text[:2]))
    except ValueError:
        raise _Bad("RMC date") from None


# ---------------------------------------------------------------------------------------
# epochs


class _Epoch:
    __slots__ = ("tod_ms", "date", "talker", "rank", "lat", "lon", "sog", "cog", "heading",
                 "hdop", "sats", "mode", "lines", "aux", "first_line")

    def __init__(self, tod_ms: int, day: date | None):
        self.tod_ms = tod_ms
        self.date = day
        self.talker: str | None = None
        self.rank = 0
        self.lat = self.lon = 0.0
        self.sog = self.cog = self.heading = self.hdop = None
        self.sats: int | None = None
        self.mode: str | None = None
        self.lines: list[str] = []
        self.aux: list[str] = []
        self.first_line = 0


def _fix_factory():
    """A maker of :class:`Fix` for values this module has already checked.

    ``Fix.__post_init__`` re-validates every field (about 6 us a fix, more than reading the
    sentence); the reader's own checks are stricter (digits only, hemisphere letters,
    minutes below 60, courses in [0, 360], at most three digits of satellites), so here the
    dataclass is filled directly from a valid template, folding the longitude as the model
    does. Anything outside what the reader guarantees goes through the real constructor,
    and tests/formats/test_nmea.py checks that both give equal fixes. If the model's layout
    changes (slots), the real constructor is used throughout.
    """
    template = Fix(datetime(2000, 1, 1, tzinfo=UTC), 0.0, 0.0)
    if not hasattr(template, "__dict__"):
        return _slow_fix
    base = dict(template.__dict__)
    max_sats = getattr(_model, "MAX_SATELLITES", None)
    new = object.__new__
    set_attr = object.__setattr__
    fields = ("time_utc", "lat", "lon", "hdop", "satellites", "fix_mode", "cog", "sog_kn",
              "heading", "source")
    if not set(fields) <= set(base):
        return _slow_fix

    def make(t, lat, lon, hdop, sats, mode, cog, sog, heading, source) -> Fix:
        if (not -90.0 <= lat <= 90.0 or not -180.0 <= lon <= 180.0
                or (sats is not None and max_sats is not None and sats > max_sats)
                or (cog is not None and not 0.0 <= cog < 360.0)
                or (heading is not None and not 0.0 <= heading < 360.0)):
            return _slow_fix(t, lat, lon, hdop, sats, mode, cog, sog, heading, source)
        if lon >= 180.0:
            lon -= 360.0
        values = base.copy()
        values.update(time_utc=t, lat=lat, lon=lon + 0.0, hdop=hdop, satellites=sats,
                      fix_mode=mode, cog=cog, sog_kn=sog, heading=heading, source=source)
        fix = new(Fix)
        set_attr(fix, "__dict__", values)
        return fix

    return make


def _slow_fix(t, lat, lon, hdop, sats, mode, cog, sog, heading, source) -> Fix:
    return Fix(t, lat, lon, hdop=hdop, satellites=sats, fix_mode=mode, cog=cog, sog_kn=sog,
               heading=heading, source=source)


make_fix = _fix_factory()


class NmeaReader:
    """Stream fixes out of NMEA 0183 text, one line at a time, in flat memory.

    ``lines`` is any iterable of text lines. ``thin_s`` keeps a fix only when it is at
    least that many seconds after the last fix kept. ``talkers`` (e.g. ``("GN", "GP")``)
    keeps only those talkers, best first; by default every talker is used and
    :data:`DEFAULT_TALKER_ORDER` decides between them. ``require_checksum=False`` accepts
    sentences without ``*hh`` (a bad checksum is always rejected). ``start_date`` dates a
    log of GGA/GLL alone.
    """

    def __init__(self, lines: Iterable[str], summary: ReadSummary, *,
                 thin_s: float | None = None, talkers: Sequence[str] | None = None,
                 require_checksum: bool = True, start_date: date | None = None):
        self._lines = lines
        self.summary = summary
        self._thin_ms = None if not thin_s else int(round(thin_s * 1000))
        if talkers:
            order = [t.upper() for t in talkers]
            self._rank = {t: i for i, t in enumerate(order)}
            self._only = True
        else:
            self._rank = {t: i for i, t in enumerate(DEFAULT_TALKER_ORDER)}
            self._only = False
        self._require_checksum = require_checksum
        self._date = start_date
        self._last_tod: int | None = None
        #: the fast RMC path (tests turn it off to compare it with the slow one)
        self._fast = True

    # -- per-line helpers (slow paths) --------------------------------------------------

    def _frame(self, line: str, no: int) -> list[str] | None:
        """Check the frame and checksum; the fields (address first) or None if rejected."""
        summary = self.summary
        if not line.isascii():
            summary.reject("not ASCII text", no)
            return None
        if line[0] != "$":
            if line[0] == "!":
                summary.ignored["AIS/encapsulated (!)"] += 1
            else:
                summary.reject("not an NMEA sentence", no)
            return None
        star = line.rfind("*")
        if star < 0:
            if self._require_checksum:
                summary.reject("missing checksum", no)
                return None
            body = line[1:]
        else:
            body = line[1:star]
            given = line[star + 1:].rstrip()
            if len(given) != 2 or not all(c in "0123456789ABCDEFabcdef" for c in given):
                summary.reject("malformed checksum (two hex digits required)", no)
                return None
            want = int(given, 16)
            if checksum(body) != want:
                # A logger that appends CR, LF or spaces to the last field before the '*'
                # leaves the sender's checksum valid for the data without them.
                stripped = body.rstrip(" \r\n\t")
                if stripped == body or checksum(stripped) != want:
                    summary.reject("checksum mismatch", no)
                    return None
                body = stripped
        if "*" in body or "$" in body[1:]:
            summary.reject("not an NMEA sentence", no)
            return None
        fields = body.split(",")
        if fields[0][:1] == "P":  # proprietary sentences: $P + maker + type
            summary.ignored["proprietary (P)"] += 1
            return None
        if len(fields[0]) != 5 or not fields[0].isalnum():
            summary.reject("not an NMEA sentence", no)
            return None
        return [f.strip() for f in fields] if (" " in body or "\r" in body or "\t" in body) \
            else fields

    def _via_pynmea2(self, fields: list[str], no: int):
        """pynmea2's named fields for GLL/VTG/HDT/ZDA (the frame is already checked)."""
        try:
            return pynmea2.parse(sentence(",".join(fields)), check=True)
        except (pynmea2.ParseError, ValueError, TypeError, AttributeError):
            self.summary.reject(f"{fields[0][2:]} not readable", no)
            return None

    # -- the read -----------------------------------------------------------------------

    def __iter__(self) -> Iterator[Fix]:
        summary = self.summary
        rank_of = self._rank
        only = self._only
        rmc_counts = FIELD_COUNTS["RMC"]
        out: list[Fix] = []
        epoch: _Epoch | None = None
        pending: deque[_Epoch] = deque()
        state = {"kept_ms": None, "recent": set(), "order": deque(), "base_date": None,
                 "base": None, "base_ms": 0}
        no = 0
        fast = self._fast
        last_date_text, last_day = None, None
        for raw in self._lines:
            no += 1
            line = raw.rstrip("\r\n")
            # The fast path: a clean RMC whose checksum and every field pass one strict
            # pattern and the range checks below. Anything else (or any doubt) goes the
            # slow way, which finds and counts the reason.
            m = None
            if (fast and line[3:7] == "RMC," and line[:1] == "$" and line[-3:-2] == "*"
                    and line.isascii()):
                body = line[1:-3]
                if checksum(body) == _HEX_PAIRS.get(line[-2:], -1):
                    m = _RMC_FAST(body)
            if m is not None:
                (talker, hh, mi, ss, frac, lat_d, lat_m, ns, lon_d, lon_m, ew, sog_t, cog_t,
                 date_t, mode) = m.groups()
                lat = int(lat_d) + float(lat_m) / 60.0
                lon = int(lon_d) + float(lon_m) / 60.0
                cog = float(cog_t) if cog_t else None
                if date_t == last_date_text:
                    day = last_day
                else:
                    try:
                        day = date(_year(int(date_t[4:])), int(date_t[2:4]), int(date_t[:2]))
                    except ValueError:
                        day = None
                    last_date_text, last_day = date_t, day
                if (lat > 90.0 or lon > 180.0 or day is None
                        or (cog is not None and cog > 360.0) or (only and talker not in rank_of)):
                    m = None  # the slow path says why
                else:
                    if ns == "S":
                        lat = -lat
                    if ew == "W":
                        lon = -lon
                    if cog == 360.0:
                        cog = 0.0
                    sog = float(sog_t) if sog_t else None
                    tod = ((int(hh) * 60 + int(mi)) * 60 + int(ss)) * 1000 + (
                        int((frac + "00")[:3]) if frac else 0)
                    mode = mode or None
                    kind = "RMC"
                    hdop = sats = None
                    self._date = day
                    self._last_tod = tod
            if m is None:
                if not line.strip():
                    summary.blank_lines += 1
                    continue
                fields = self._frame(line, no)
                if fields is None:
                    continue
                address = fields[0]
                talker = address[:2]
                kind = address[2:]
                if kind not in FIELD_COUNTS:
                    summary.ignored[kind] += 1
                    continue
                if only and talker not in rank_of:
                    summary.ignored[f"talker {talker} not selected"] += 1
                    continue
                n = len(fields) - 1
                if n not in FIELD_COUNTS[kind]:
                    summary.reject(f"wrong field count for {kind}", no)
                    continue
                try:
                    if kind == "RMC":
                        status = fields[2]
                        if status != "A":
                            summary.reject("no fix: RMC status V" if status == "V"
                                           else "bad field: RMC status", no)
                            continue
                        mode = (fields[12] or None) if n >= 12 else None
                        if mode is not None and mode not in MODE_LETTERS:
                            raise _Bad("RMC mode")
                        if mode == "N":
                            summary.reject("no fix: mode N", no)
                            continue
                        tod = _time_ms(fields[1], "RMC")
                        lat = _lat(fields[3], fields[4], "RMC")
                        lon = _lon(fields[5], fields[6], "RMC")
                        sog = _num(fields[7], "RMC speed")
                        cog = _course(fields[8], "RMC course")
                        day = _rmc_date(fields[9])
                        self._date = day
                        self._last_tod = tod
                        hdop = sats = None
                    elif kind == "GGA":
                        quality = fields[6]
                        if quality == "0":
                            summary.reject("no fix: GGA quality 0", no)
                            continue
                        if len(quality) != 1 or not quality.isdigit():
                            raise _Bad("GGA quality")
                        mode = quality
                        tod = _time_ms(fields[1], "GGA")
                        lat = _lat(fields[2], fields[3], "GGA")
                        lon = _lon(fields[4], fields[5], "GGA")
                        sats_text = fields[7]
                        if sats_text and (not sats_text.isdigit() or len(sats_text) > 3):
                            raise _Bad("GGA satellites")
                        sats = int(sats_text) if sats_text else None
                        hdop = _num(fields[8], "GGA HDOP")
                        sog = cog = None
                        day = self._day_for(tod)
                    elif kind == "GLL":
                        status = fields[6]
                        if status != "A":
                            summary.reject("no fix: GLL status V" if status == "V"
                                           else "bad field: GLL status", no)
                            continue
                        mode = (fields[7] or None) if n >= 7 else None
                        if mode is not None and mode not in MODE_LETTERS:
                            raise _Bad("GLL mode")
                        if mode == "N":
                            summary.reject("no fix: mode N", no)
                            continue
                        msg = self._via_pynmea2(fields, no)
                        if msg is None:
                            continue
                        tod = _time_ms(msg.data[4], "GLL")
                        lat = _lat(msg.lat, msg.lat_dir, "GLL")
                        lon = _lon(msg.lon, msg.lon_dir, "GLL")
                        sog = cog = hdop = sats = None
                        day = self._day_for(tod)
                    elif kind == "ZDA":
                        msg = self._via_pynmea2(fields, no)
                        if msg is None:
                            continue
                        tod = _time_ms(msg.data[0], "ZDA")
                        d, mo, y = msg.data[1], msg.data[2], msg.data[3]
                        if not (d.isdigit() and mo.isdigit() and y.isdigit()
                                and len(y) in (2, 4)):
                            raise _Bad("ZDA date")
                        year = int(y) if len(y) == 4 else _year(int(y))
                        try:
                            zday = date(year, int(mo), int(d))
                        except (ValueError, OverflowError):  # a day of 400 digits overflows
                            raise _Bad("ZDA date") from None
                        self._date = zday
                        self._last_tod = tod
                        summary.lines_used += 1
                        if epoch is not None and epoch.tod_ms == tod:
                            epoch.date = zday
                            epoch.aux.append(line)
                            summary.lines_used -= 1  # counted with the epoch
                        if pending:
                            self._resolve(pending, zday, tod, out, state)
                        if out:
                            yield from out
                            out.clear()
                        continue
                    else:  # VTG, HDT: merged into the open epoch
                        msg = self._via_pynmea2(fields, no)
                        if msg is None:
                            continue
                        if kind == "VTG":
                            if n >= 9 and fields[9] == "N":
                                summary.reject("no fix: mode N", no)
                                continue
                            if msg.data[1] not in ("T", ""):
                                raise _Bad("VTG course reference")
                            vcog = _course(msg.data[0], "VTG course")
                            vsog = _num(msg.data[4], "VTG speed")
                            if epoch is None:
                                summary.dropped["VTG/HDT with no epoch to merge into"] += 1
                            elif (epoch.cog is None and vcog is not None) or (
                                    epoch.sog is None and vsog is not None):
                                if epoch.cog is None:
                                    epoch.cog = vcog
                                if epoch.sog is None:
                                    epoch.sog = vsog
                                epoch.aux.append(line)
                            else:
                                summary.dropped["VTG/HDT already given for the epoch"] += 1
                        else:
                            if msg.data[1] != "T":
                                raise _Bad("HDT reference")
                            heading = _course(msg.data[0], "HDT heading")
                            if heading is None:
                                raise _Bad("HDT heading")
                            if epoch is None:
                                summary.dropped["VTG/HDT with no epoch to merge into"] += 1
                            elif epoch.heading is None:
                                epoch.heading = heading
                                epoch.aux.append(line)
                            else:
                                summary.dropped["VTG/HDT already given for the epoch"] += 1
                        continue
                except _Bad as bad:
                    summary.reject(f"bad field: {bad.args[0]}", no)
                    continue

            # A position sentence of epoch `tod`.
            if epoch is None or epoch.tod_ms != tod:
                if epoch is not None:
                    self._close(epoch, pending, out, state)
                epoch = _Epoch(tod, day)
            elif kind == "RMC" or (epoch.date is None and day is not None):
                epoch.date = day
            rank = rank_of.get(talker, len(rank_of))
            if epoch.talker is None:
                epoch.talker = talker
                epoch.rank = rank
                epoch.lat, epoch.lon = lat, lon
                epoch.sog, epoch.cog, epoch.hdop, epoch.sats, epoch.mode = (
                    sog, cog, hdop, sats, mode)
                epoch.lines.append(line)
                epoch.first_line = no
            elif talker == epoch.talker:
                if epoch.sog is None:
                    epoch.sog = sog
                if epoch.cog is None:
                    epoch.cog = cog
                if epoch.hdop is None:
                    epoch.hdop = hdop
                if epoch.sats is None:
                    epoch.sats = sats
                if kind == "RMC" and mode is not None:
                    epoch.mode = mode
                epoch.lines.append(line)
            elif rank < epoch.rank:
                summary.dropped["same epoch from another talker"] += len(epoch.lines)
                epoch.talker = talker
                epoch.rank = rank
                epoch.lat, epoch.lon = lat, lon
                epoch.sog, epoch.cog, epoch.hdop, epoch.sats, epoch.mode = (
                    sog, cog, hdop, sats, mode)
                epoch.lines = [line]
                epoch.first_line = no
            else:
                summary.dropped["same epoch from another talker"] += 1
            if out:
                yield from out
                out.clear()
        if epoch is not None:
            self._close(epoch, pending, out, state)
        for held in pending:
            summary.reject("no date (no RMC or ZDA before it)", held.first_line,
                           len(held.lines) + len(held.aux))
        pending.clear()
        summary.lines_read = no
        yield from out

    def _day_for(self, tod: int) -> date | None:
        """The date of a GGA/GLL time of day, with the midnight rollover."""
        day = self._date
        if day is not None:
            last = self._last_tod
            if last is not None and tod < last - _HALF_DAY_MS:
                day = day + _DAY
                self._date = day
        self._last_tod = tod
        return day

    def _resolve(self, pending: deque, day: date, tod: int, out: list, state: dict) -> None:
        """Date the held epochs backwards from a known (day, tod), then emit them."""
        held = list(pending)
        pending.clear()
        for ep in reversed(held):
            if ep.tod_ms > tod:
                day = day - _DAY
            ep.date = day
            tod = ep.tod_ms
        for ep in held:
            self._emit(ep, out, state)

    def _close(self, epoch: _Epoch, pending: deque, out: list, state: dict) -> None:
        if epoch.date is None:
            pending.append(epoch)
            if len(pending) > MAX_PENDING_EPOCHS:
                old = pending.popleft()
                self.summary.reject("no date (no RMC or ZDA before it)", old.first_line,
                                    len(old.lines) + len(old.aux))
            return
        if pending:
            self._resolve(pending, epoch.date, epoch.tod_ms, out, state)
        self._emit(epoch, out, state)

    def _emit(self, ep: _Epoch, out: list, state: dict) -> None:
        summary = self.summary
        d = ep.date
        ms = ep.tod_ms
        if state["base_date"] != d:
            state["base_date"] = d
            state["base"] = datetime(d.year, d.month, d.day, tzinfo=UTC)
            state["base_ms"] = d.toordinal() * 86_400_000
        stamp = state["base_ms"] + ms
        used = len(ep.lines) + len(ep.aux)
        recent = state["recent"]
        if stamp in recent:
            summary.dropped["repeated epoch"] += used
            return
        kept = state["kept_ms"]
        if self._thin_ms is not None and kept is not None and 0 <= stamp - kept < self._thin_ms:
            summary.dropped["thinned"] += used
            self._remember(stamp, state)
            return
        t = state["base"] + timedelta(milliseconds=ms)
        source = ep.lines[0] if used == 1 else "\n".join(ep.lines + ep.aux)
        try:
            fix = make_fix(t, ep.lat, ep.lon, ep.hdop, ep.sats, ep.mode, ep.cog, ep.sog,
                           ep.heading, source)
        except InputError as exc:  # the sentences were checked; this is a last guard
            summary.reject(f"fix refused: {exc.reason}", ep.first_line, used)
            return
        out.append(fix)
        state["kept_ms"] = stamp
        self._remember(stamp, state)
        summary.lines_used += used
        summary.fixes_kept += 1
        if summary.first_time_utc is None:
            summary.first_time_utc = t
        summary.last_time_utc = t

    @staticmethod
    def _remember(stamp: int, state: dict) -> None:
        """Keep the last few epochs emitted, to drop one that comes round again."""
        recent = state["recent"]
        order = state["order"]
        recent.add(stamp)
        order.append(stamp)
        if len(order) > 64:
            recent.discard(order.popleft())


# ---------------------------------------------------------------------------------------
# writing


def _dm(value: float, int_digits: int) -> str:
    """Degrees and minutes with six decimals of a minute, rounding carried exactly."""
    micro = round(abs(value) * 60_000_000)
    deg, rem = divmod(micro, 60_000_000)
    whole, frac = divmod(rem, 1_000_000)
    return f"{deg:0{int_digits}d}{whole:02d}.{frac:06d}"


def _num_text(value: float | None, places: int = 2) -> str:
    return "" if value is None else f"{value:.{places}f}"


def _mode_letter(fix: Fix) -> str:
    if fix.fix_mode and len(fix.fix_mode) == 1 and fix.fix_mode in MODE_LETTERS - {"N"}:
        return fix.fix_mode
    if fix.method in ("dr", "ep"):
        return "E"
    return "A" if fix.method == "gnss" else "M"


def fix_sentences(fix: Fix, *, talker: str = "GP", gga: bool = False) -> list[str]:
    """The sentences for one fix: RMC (NMEA 2.3 layout), then GGA and HDT where asked/known."""
    t = fix.time_utc.astimezone(UTC)
    t = t.replace(microsecond=0) + timedelta(microseconds=round(t.microsecond, -4))
    hms = f"{t:%H%M%S}.{t.microsecond // 10000:02d}"
    lat = _dm(fix.lat, 2)
    lon = _dm(fix.lon, 3)
    ns = "N" if fix.lat >= 0 else "S"
    ew = "E" if fix.lon >= 0 else "W"
    cog = "" if fix.cog is None else f"{fix.cog:.2f}"
    if cog == "360.00":
        cog = "0.00"
    out = [sentence(
        f"{talker}RMC,{hms},A,{lat},{ns},{lon},{ew},{_num_text(fix.sog_kn)},{cog},"
        f"{t:%d%m%y},,,{_mode_letter(fix)}")]
    if gga:
        quality = fix.fix_mode if (fix.fix_mode and fix.fix_mode.isdigit()
                                   and fix.fix_mode != "0") else "1"
        sats = "" if fix.satellites is None else f"{fix.satellites:02d}"
        out.append(sentence(
            f"{talker}GGA,{hms},{lat},{ns},{lon},{ew},{quality},{sats},"
            f"{_num_text(fix.hdop, 1)},,M,,M,,"))
    if fix.heading is not None:
        heading = f"{fix.heading:.2f}"
        out.append(sentence(f"HEHDT,{'0.00' if heading == '360.00' else heading},T"))
    return out


def write_nmea(fixes: Iterable[Fix], stream: IO[str], *, gga: bool = False) -> int:
    """Write fixes as NMEA 0183 lines (CR LF); returns the number of fixes written."""
    count = 0
    for fix in fixes:
        for text in fix_sentences(fix, gga=gga):
            stream.write(text + "\r\n")
        count += 1
    return count
