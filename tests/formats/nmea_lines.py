"""Helpers that build NMEA 0183 test lines with checksums computed, never typed in."""

from __future__ import annotations

import itertools
import string


def xor_checksum(body: str) -> int:
    """The NMEA 0183 checksum by its definition: XOR of every character between '$' and '*'
    (a plain loop, independent of the reader's folded implementation)."""
    value = 0
    for ch in body:
        value ^= ord(ch)
    return value


def line(body: str, end: str = "\r\n") -> str:
    """``$body*hh`` plus a line ending, with the checksum computed."""
    return f"${body}*{xor_checksum(body):02X}{end}"


def rmc(time: str = "123519", date: str = "230394", *, talker: str = "GP", status: str = "A",
        lat: str = "4807.038", ns: str = "N", lon: str = "01131.000", ew: str = "E",
        sog: str = "022.4", cog: str = "084.4", mode: str | None = None) -> str:
    body = f"{talker}RMC,{time},{status},{lat},{ns},{lon},{ew},{sog},{cog},{date},003.1,W"
    if mode is not None:
        body += f",{mode}"
    return line(body)


def gga(time: str = "123519", *, talker: str = "GP", quality: str = "1",
        lat: str = "4807.038", ns: str = "N", lon: str = "01131.000", ew: str = "E",
        sats: str = "08", hdop: str = "0.9") -> str:
    return line(f"{talker}GGA,{time},{lat},{ns},{lon},{ew},{quality},{sats},{hdop},545.4,M,"
                "46.9,M,,")


def zero_checksum_rmc() -> str:
    """A valid RMC sentence whose checksum is 00, found by search over the talker letters,
    the decimals of the time and speed fields and the mode letter (every variant is a valid
    sentence saying the same thing)."""
    for a, b in itertools.product(string.ascii_uppercase, repeat=2):
        for frac in ("", ".0", ".00", ".000"):
            for sog in ("022.4", "22.4", "022.40", "22.40"):
                for mode in ("", ",A", ",D"):
                    body = (f"{a}{b}RMC,123519{frac},A,4807.038,N,01131.000,E,{sog},084.4,"
                            f"230394,003.1,W{mode}")
                    if xor_checksum(body) == 0:
                        return f"${body}*00\r\n"
    raise AssertionError("no RMC body with checksum 00 in the search space")
