"""Shared pieces of the reliability tests: valid samples, seeded mutators, the checks.

Samples are written by passagelog's own writers from model objects (so they are valid by
construction) or spelled out by hand from the standards (NMEA 0183 checksums are the XOR of
every character between ``$`` and ``*``, REFERENCE.md). Mutators take a ``random.Random`` so
every mutated input is reproducible from its seed.
"""

from __future__ import annotations

import io
import math
import random
import re
from dataclasses import dataclass, field
from datetime import datetime, timedelta, timezone
from functools import reduce
from pathlib import Path
from typing import Callable

from passagelog.errors import PassagelogError

T0 = datetime(2026, 5, 1, 6, 0, tzinfo=timezone.utc)

# Values that break naive parsers: huge, tiny, not-a-number, signs, unicode look-alikes,
# control characters, right-to-left override, full-width digits, an SQL quote.
NASTY_VALUES = [
    "", " ", "-", "+", ".", "-0", "0e0", "1e308", "-1e308", "1e309", "9" * 400, "1" + "0" * 30,
    "4.9e-324", "NaN", "nan", "-nan", "inf", "-inf", "Infinity", "0x1F", "1_000", "٣", "１２",
    "ü", "\u202e", "𝟘", "\x00", "\t", "\u00a0", "5000.000.0", "--1", "1e", "e1", "′″",
    "x'); DROP TABLE fix;--", "<script>", "&amp;", "]]>", "%s", "{0}", "\\", '"',
]


def nmea_checksum(body: str) -> int:
    """XOR of the characters between '$' and '*' (NMEA 0183, REFERENCE.md)."""
    return reduce(lambda a, c: a ^ ord(c), body, 0)


def nmea(body: str) -> str:
    return f"${body}*{nmea_checksum(body):02X}"


def reframe(line: str) -> str:
    """``line`` with its checksum recomputed (so a field mutation reaches the field parser)."""
    text = line.rstrip("\r\n")
    if not text.startswith("$"):
        return line
    star = text.rfind("*")
    body = text[1:star] if star > 0 else text[1:]
    return nmea(body)


# ---------------------------------------------------------------------------------------------
# valid samples


def sample_nmea_lines(n: int = 40, start: datetime = T0, step_s: int = 60) -> list[str]:
    """A small valid log: RMC + GGA + VTG + HDT + ZDA + GSV per epoch (NMEA 0183 layouts)."""
    out = []
    for i in range(n):
        t = start + timedelta(seconds=i * step_s)
        lat_min = 7.038 + i * 0.05
        hhmmss = f"{t:%H%M%S}"
        out.append(nmea(f"GPRMC,{hhmmss}.00,A,48{lat_min:06.3f},N,01131.000,E,022.4,084.4,"
                        f"{t:%d%m%y},003.1,W,A"))
        out.append(nmea(f"GPGGA,{hhmmss}.00,48{lat_min:06.3f},N,01131.000,E,1,08,0.9,545.4,M,"
                        "46.9,M,,"))
        out.append(nmea("GPVTG,084.4,T,087.5,M,022.4,N,041.5,K,A"))
        out.append(nmea("HEHDT,085.0,T"))
        if i % 10 == 0:
            out.append(nmea(f"GPZDA,{hhmmss}.00,{t:%d},{t:%m},{t:%Y},00,00"))
            out.append(nmea("GPGSV,3,1,11,03,03,111,00,04,15,270,00,06,01,010,00,13,06,292,00"))
    return out


def sample_fixes(n: int = 12):
    from passagelog.model import Fix

    return [Fix(T0 + timedelta(minutes=i), 50.0 + i * 0.01, -1.0 - i * 0.005, sog_kn=6.0,
                cog=200.0, heading=201.5, remarks=f"fix {i} <b>&</b> ü")
            for i in range(n)]


def sample_route():
    from passagelog.model import LegPlan, Route, Waypoint

    wps = (Waypoint("Start <&>", 50.0, -1.0), Waypoint("WP 'two'", 50.5, -1.5),
           Waypoint("Ünïcode", 51.0, -2.0), Waypoint("End", 51.0, -3.0))
    legs = (LegPlan("great-circle", 10.0, xtl_port_m=185.2, xtl_stbd_m=370.4),
            LegPlan("rhumb", 8.0), LegPlan("rhumb", 12.5, notes="a note, with \"quotes\""))
    return Route("Sample route", wps, legs)


def write_route_text(route, fmt: str) -> str:
    from passagelog.formats import write_route

    buf = io.StringIO()
    write_route(route, fmt, buf)
    return buf.getvalue()


def write_fixes_text(fixes, fmt: str) -> str:
    from passagelog.formats import write_fixes

    buf = io.StringIO()
    write_fixes(fixes, fmt, buf)
    return buf.getvalue()


def valid_documents() -> dict[str, bytes]:
    """One valid document per readable kind (route: rtz, gpx, route-csv; fixes: nmea, gpx,
    fix-csv), as bytes."""
    route, fixes = sample_route(), sample_fixes()
    docs = {f"route.{f}": write_route_text(route, f) for f in ("rtz", "gpx", "route-csv")}
    docs.update({f"fixes.{f}": write_fixes_text(fixes, f) for f in ("gpx", "fix-csv")})
    docs["fixes.nmea"] = "\r\n".join(sample_nmea_lines()) + "\r\n"
    return {k: v.encode("utf-8") for k, v in docs.items()}


# ---------------------------------------------------------------------------------------------
# mutators: bytes -> bytes, driven by a seeded Random


def _lines(data: bytes) -> list[bytes]:
    return data.split(b"\n")


def flip_bytes(rng: random.Random, data: bytes) -> bytes:
    if not data:
        return bytes([rng.randrange(256)])
    b = bytearray(data)
    for _ in range(rng.randint(1, 6)):
        i = rng.randrange(len(b))
        b[i] = rng.choice([b[i] ^ (1 << rng.randrange(8)), rng.randrange(256)])
    return bytes(b)


def truncate(rng: random.Random, data: bytes) -> bytes:
    return data[:rng.randrange(len(data) + 1)]


def duplicate_line(rng: random.Random, data: bytes) -> bytes:
    ls = _lines(data)
    i = rng.randrange(len(ls))
    ls.insert(i, ls[i])
    return b"\n".join(ls)


def remove_line(rng: random.Random, data: bytes) -> bytes:
    ls = _lines(data)
    del ls[rng.randrange(len(ls))]
    return b"\n".join(ls)


def swap_lines(rng: random.Random, data: bytes) -> bytes:
    ls = _lines(data)
    i, j = rng.randrange(len(ls)), rng.randrange(len(ls))
    ls[i], ls[j] = ls[j], ls[i]
    return b"\n".join(ls)


_FIELD = re.compile(rb"[^,*\n\"<>= ]+")
_ATTR = re.compile(rb'="([^"]*)"')
_TEXT = re.compile(rb">([^<]+)<")


def _fix_nmea(rng: random.Random, data: bytes) -> bytes:
    """Recompute the checksums of most NMEA lines (so mutations reach the fields)."""
    if not data.lstrip().startswith(b"$") or rng.random() < 0.25:
        return data
    out = []
    for ln in _lines(data):
        text = ln.decode("latin-1")
        out.append(reframe(text).encode("latin-1") + (b"\r" if text.endswith("\r") else b"")
                   if text.startswith("$") else ln)
    return b"\n".join(out)


def replace_field(rng: random.Random, data: bytes) -> bytes:
    """A comma field, an XML attribute value or element text replaced by a nasty value."""
    value = rng.choice(NASTY_VALUES).encode("utf-8")
    pattern = rng.choice([_FIELD, _ATTR, _TEXT])
    spans = [m.span(1 if pattern is not _FIELD else 0) for m in pattern.finditer(data)]
    if not spans:
        return data + value
    a, b = rng.choice(spans)
    return _fix_nmea(rng, data[:a] + value + data[b:])


def duplicate_field(rng: random.Random, data: bytes) -> bytes:
    spans = [m.span() for m in _FIELD.finditer(data)]
    if not spans:
        return data
    a, b = rng.choice(spans)
    return _fix_nmea(rng, data[:b] + b"," + data[a:b] + data[b:])


def remove_field(rng: random.Random, data: bytes) -> bytes:
    spans = [m.span() for m in _FIELD.finditer(data)]
    if not spans:
        return data
    a, b = rng.choice(spans)
    if rng.random() < 0.5 and data[b:b + 1] == b",":
        b += 1  # the comma too: the fields shift
    return _fix_nmea(rng, data[:a] + data[b:])


def wrong_checksum(rng: random.Random, data: bytes) -> bytes:
    ls = _lines(data)
    cands = [i for i, ln in enumerate(ls) if b"*" in ln]
    if not cands:
        return data + b"*ZZ"
    i = rng.choice(cands)
    ln = ls[i]
    star = ln.rfind(b"*")
    ls[i] = ln[:star + 1] + rng.choice([b"00", b"FF", b"G1", b"", b"7", b"123", b"\xff\xfe",
                                          b"%02X" % rng.randrange(256)]) + ln[star + 3:]
    return b"\n".join(ls)


def huge_number(rng: random.Random, data: bytes) -> bytes:
    nums = [m.span() for m in re.finditer(rb"-?\d+(?:\.\d+)?", data)]
    if not nums:
        return data
    a, b = rng.choice(nums)
    big = rng.choice([b"1e308", b"9" * rng.randint(20, 500), b"-9" * 3, b"1e-400", b"NaN",
                      b"inf", b"-0.0", b"99999999999999999999.5", b"00000000000000000001"])
    return _fix_nmea(rng, data[:a] + big + data[b:])


def insert_unicode(rng: random.Random, data: bytes) -> bytes:
    i = rng.randrange(len(data) + 1)
    blob = rng.choice(["ü", "\u202e", "𝟘", "\x00", "\ufeff", "\ud7ff", "日本", "\U0001F6A2",
                       "\r", "\n\n", "<", "&", "]]>", "<!--", "<!DOCTYPE x [<!ENTITY a 'b'>]>",
                       "&a;", "&#0;", "&#x110000;"]).encode("utf-8", "surrogatepass")
    return _fix_nmea(rng, data[:i] + blob + data[i:])


def random_bytes(rng: random.Random, data: bytes) -> bytes:
    i = rng.randrange(len(data) + 1)
    return data[:i] + rng.randbytes(rng.randint(1, 64)) + data[i:]


def bad_encoding(rng: random.Random, data: bytes) -> bytes:
    text = data.decode("utf-8", "replace")
    enc = rng.choice(["utf-16", "utf-16-le", "latin-1", "cp1252", "utf-32"])
    return text.encode(enc, "replace")


MUTATORS: tuple[Callable[[random.Random, bytes], bytes], ...] = (
    flip_bytes, truncate, duplicate_line, remove_line, swap_lines, replace_field,
    duplicate_field, remove_field, wrong_checksum, huge_number, insert_unicode, random_bytes,
    bad_encoding,
)


def mutate(rng: random.Random, data: bytes, rounds: int | None = None) -> bytes:
    """``data`` after 1-3 (or ``rounds``) randomly chosen mutations."""
    for _ in range(rounds if rounds is not None else rng.choice((1, 1, 1, 2, 3))):
        data = rng.choice(MUTATORS)(rng, data)
    return data


# ---------------------------------------------------------------------------------------------
# the checks


#: Python's own messages for a failed conversion: they name the value, never the field.
PYTHON_TEXTS = ("could not convert", "invalid literal", "NoneType", "has no attribute",
                "object is not", "unsupported operand")


class Escaped(AssertionError):
    """An exception that is not a passagelog error escaped from the library."""


@dataclass
class Tally:
    """What a fuzz run did: inputs tried, accepted, refused (by error class)."""

    tried: int = 0
    accepted: int = 0
    refused: dict[str, int] = field(default_factory=dict)

    def refuse(self, exc: BaseException) -> None:
        name = type(exc).__name__
        self.refused[name] = self.refused.get(name, 0) + 1


def check_fix(fix) -> None:
    """A fix out of a reader is a real position at an aware UTC time, nothing NaN."""
    assert -90.0 <= fix.lat <= 90.0 and -180.0 <= fix.lon < 180.0, fix
    assert fix.time_utc.tzinfo is not None and fix.time_utc.utcoffset() == timedelta(0), fix
    for name in ("cog", "sog_kn", "heading", "stw_kn", "hdop"):
        v = getattr(fix, name)
        assert v is None or math.isfinite(v), (name, fix)


def check_route(route) -> None:
    assert len(route.waypoints) >= 1
    for w in route.waypoints:
        assert -90.0 <= w.lat <= 90.0 and -180.0 <= w.lon < 180.0, w
    for leg in route.legs:
        for name in ("speed_kn", "xtl_port_m", "xtl_stbd_m", "turn_radius_m"):
            v = getattr(leg, name)
            assert v is None or math.isfinite(v), (name, leg)


def read_document(path: Path, tally: Tally | None = None) -> None:
    """Read ``path`` as a route and as fixes (whichever it is); raise :class:`Escaped` for
    anything but a passagelog error, and AssertionError for an error that does not name
    the file or a result that is not sane."""
    from passagelog.formats import read_fixes, read_routes

    name = path.name
    for what in ("route", "fixes"):
        try:
            if what == "route":
                for route in read_routes(path):
                    check_route(route)
            else:
                fixes, summary = read_fixes(path)
                for fix in fixes:
                    check_fix(fix)
                for reason, places in summary.rejected_at.items():
                    assert places, reason  # each reason keeps where it happened
                    assert all(isinstance(p, (int, str)) and p != "" for p in places), places
                assert summary.fixes_kept == len(fixes)
            if tally is not None:
                tally.accepted += 1
        except PassagelogError as exc:
            if tally is not None:
                tally.refuse(exc)
            text = str(exc)
            assert text.strip() and "\n" not in text, f"not one line: {text!r}"
            assert name in text, f"error does not name the file {name!r}: {text}"
            assert not any(raw in text for raw in PYTHON_TEXTS), \
                f"Python's own message, naming no field: {text}"
        except Exception as exc:  # noqa: BLE001 - this is what we are hunting
            raise Escaped(f"{type(exc).__name__} escaped reading {name} as {what}: "
                          f"{exc!r:.300}") \
                from exc
        finally:
            if tally is not None:
                tally.tried += 1


# ---------------------------------------------------------------------------------------------
# the command line, in process


def run_cli(argv: list[str], stdin: str = "", env: dict | None = None) -> tuple[int, str, str]:
    """``passagelog.cli.main(argv)`` with its streams captured: (exit code, stdout, stderr).

    Anything but SystemExit escaping main() is a traceback the user would see: Escaped.
    """
    from click.testing import CliRunner

    from passagelog.cli import main

    runner = CliRunner()
    with runner.isolation(input=stdin, env=env) as outs:
        try:
            main(list(argv))
            code = 0
        except SystemExit as exc:
            code = exc.code if isinstance(exc.code, int) else (0 if exc.code is None else 1)
        except BaseException as exc:  # noqa: BLE001 - this is what we are hunting
            raise Escaped(f"{type(exc).__name__} escaped main({argv!r}): {exc!r:.300}") \
                from exc
        out, err = outs[0].getvalue(), outs[1].getvalue()
    return code, out.decode("utf-8", "replace"), err.decode("utf-8", "replace")


def check_cli_result(argv: list[str], code: int, out: str, err: str) -> None:
    """Exit 0, 1 or 2; never a traceback; an exit 1 is one plain line on stderr."""
    assert code in (0, 1, 2), (argv, code, err)
    assert "Traceback" not in err and "Traceback" not in out, (argv, err)
    if code == 1:
        lines = [ln for ln in err.splitlines() if ln.strip()]
        assert len(lines) == 1, f"exit 1 should print one line on stderr: {argv!r} -> {err!r}"
    if code == 2:
        assert err.strip(), (argv, "a usage error says what is wrong")
