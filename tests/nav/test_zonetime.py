"""Zone time: zone descriptions, letters, ship's time <-> UTC, reading and printing times.

Sources:
* NGA Pub. 9, The American Practical Navigator (Bowditch), chapter "Time", zone time: the
  zones are 15° wide centred on meridians divisible by 15°, zone 0 from 7°30'W to 7°30'E, ZD
  positive in west longitude, ZT + ZD = UTC, zone 12 divided by the 180th meridian, +12 on
  the west side and -12 on the east; also REFERENCE.md ("Zone time").
* Zone letters: Z for zone 0, A-M (J omitted) for the east zones -1 to -12, N-Y for the west
  zones +1 to +12 (the time-zone chart in Bowditch; from memory).
* IANA time zone database (Python zoneinfo): ``Etc/GMT+N`` is N hours *behind* UTC, so its
  sign is the sign of ZD (REFERENCE.md "from memory", confirmed here).
"""

from __future__ import annotations

from datetime import datetime, timedelta, timezone
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from passagelog.errors import InputError
from passagelog.nav.zonetime import (
    format_ship_time,
    format_utc,
    format_zd,
    parse_time_utc,
    parse_zd,
    read_time,
    ship_time,
    utc_from_ship_time,
    zd_from_lon,
    zone_letter,
)

UTC = timezone.utc


@pytest.mark.parametrize(
    "lon, zd",
    [
        (0.0, 0),  # Bowditch: zone 0 centred on Greenwich
        (7.4, 0),
        (-7.4, 0),  # Bowditch: zone 0 spans 7°30'W to 7°30'E
        (7.5, 0),  # on the boundary: the zone nearer Greenwich (passagelog's choice)
        (-7.5, 0),
        (7.6, -1),  # east longitude: negative ZD (Bowditch)
        (-7.6, 1),  # west longitude: positive ZD (Bowditch)
        (-15.0, 1),
        (-22.5, 1),
        (-22.6, 2),
        (-45.0, 3),  # 45°W, central meridian of zone +3 (Bowditch)
        (-75.0, 5),
        (-122.3351, 8),
        (82.5, -5),  # boundary 82°30'E: the zone nearer Greenwich
        (82.6, -6),
        (151.2, -10),
        (-156.33, 10),  # 156°20'W lies in zone +10 (156.33/15 = 10.4)
        (172.5, -11),
        (172.6, -12),  # zone 12 split at 180°: -12 east of it (Bowditch)
        (179.999, -12),
        (-172.6, 12),  # +12 west of 180° (Bowditch)
        (-179.999, 12),
        (-180.0, 12),  # 180° itself, -180 in [-180, 180): +12
        (180.0, 12),  # folded to -180
        (360.0 - 122.3351, 8),  # 237.66°E folded to 122.34°W
        (-0.0, 0),
    ],
)
def test_zd_from_lon(lon, zd):
    assert zd_from_lon(lon) == zd


@settings(max_examples=500, deadline=None)
@given(st.floats(min_value=-180.0, max_value=180.0, exclude_max=True, allow_nan=False))
def test_zone_is_within_7_5_degrees_of_its_meridian(lon):
    """Bowditch: each zone extends 7°30' either side of its central meridian (ZD * 15°W);
    zone 12 is split: +12 only west of 180°, -12 only east of it."""
    zd = zd_from_lon(lon)
    assert -12 <= zd <= 12
    central = -15.0 * zd
    gap = (lon - central + 180.0) % 360.0 - 180.0
    assert abs(gap) <= 7.5
    if zd == 12:
        assert lon <= -172.5
    if zd == -12:
        assert lon > 172.5


@pytest.mark.parametrize("bad", [float("nan"), float("inf"), "12", None, True])
def test_zd_from_lon_rejects(bad):
    with pytest.raises(InputError, match="must be a finite number of degrees"):
        zd_from_lon(bad)


@pytest.mark.parametrize(
    "zd, letter",
    [
        (0, "Z"),  # zone letters (Bowditch time-zone chart, from memory)
        (-1, "A"), (-2, "B"), (-3, "C"), (-4, "D"), (-5, "E"), (-6, "F"), (-7, "G"),
        (-8, "H"), (-9, "I"), (-10, "K"), (-11, "L"), (-12, "M"),  # J omitted
        (1, "N"), (2, "O"), (3, "P"), (4, "Q"), (5, "R"), (6, "S"), (7, "T"), (8, "U"),
        (9, "V"), (10, "W"), (11, "X"), (12, "Y"),
    ],
)
def test_zone_letters(zd, letter):
    assert zone_letter(zd) == letter
    assert parse_zd(letter) == zd * 60
    assert parse_zd(letter.lower()) == zd * 60


def test_no_letter_j_and_no_letter_beyond_12():
    letters = {zone_letter(z) for z in range(-12, 13)}
    assert len(letters) == 25 and "J" not in letters
    with pytest.raises(InputError, match="has no zone letter; letters cover -12 to \\+12"):
        zone_letter(13)
    with pytest.raises(InputError, match="must be whole hours"):
        zone_letter(5.5)  # type: ignore[arg-type]
    with pytest.raises(InputError, match="J is not a zone letter"):
        parse_zd("J")


@pytest.mark.parametrize(
    "minutes, text",
    [(0, "0"), (180, "+3"), (-300, "-5"), (-330, "-5:30"), (-345, "-5:45"), (570, "+9:30"),
     (720, "+12"), (-720, "-12"), (-840, "-14"), (30, "+0:30")],
)
def test_format_zd(minutes, text):
    assert format_zd(minutes) == text
    assert parse_zd(text) == minutes


@pytest.mark.parametrize(
    "text, minutes",
    [
        ("+3", 180), ("-5:30", -330), ("-0530", -330), ("+03:00", 180), ("+0300", 180),
        ("−5", -300), ("0", 0), ("+0", 0), ("-0", 0), ("Z", 0), ("z", 0), ("ZD+3", 180),
        ("ZD -5:30", -330), ("zd Q", 240), ("  +12 ", 720), ("-14", -840), ("00", 0),
    ],
)
def test_parse_zd(text, minutes):
    assert parse_zd(text) == minutes


@pytest.mark.parametrize(
    "text, words",
    [
        ("", "is empty"),
        ("ZD", "is empty"),
        ("3", "needs its sign: + in west longitude"),
        ("5:30", "needs its sign"),
        ("+5:75", "minutes 75 must be below 60"),
        ("+13", "is outside -14 h to +12 h"),
        ("-15", "is outside -14 h to +12 h"),
        ("+3.5", "cannot read zone description"),
        ("UTC+3", "cannot read zone description"),
        ("+3h", "cannot read zone description"),
    ],
)
def test_parse_zd_rejects(text, words):
    with pytest.raises(InputError) as info:
        parse_zd(text)
    assert repr(text) in str(info.value)
    assert words in str(info.value)


@pytest.mark.parametrize("bad", [13 * 60, -15 * 60, 3.0, True])
def test_format_zd_rejects(bad):
    with pytest.raises(InputError):
        format_zd(bad)


@settings(max_examples=300, deadline=None)
@given(st.integers(min_value=-14 * 60, max_value=12 * 60))
def test_zd_text_round_trip(minutes):
    assert parse_zd(format_zd(minutes)) == minutes


# ------------------------------------------------------------------------------------------
# ship's time and UTC: ZT + ZD = UTC (Bowditch)


def test_ship_time_and_back():
    utc = datetime(2026, 3, 1, 14, 30, tzinfo=UTC)
    zt = ship_time(utc, 180)  # ZD +3: clocks 3 h behind UTC
    assert (zt.year, zt.month, zt.day, zt.hour, zt.minute) == (2026, 3, 1, 11, 30)
    assert zt.utcoffset() == timedelta(hours=-3)
    assert zt.tzname() == "ZD+3"
    assert zt == utc  # the same instant
    assert utc_from_ship_time(zt, 180) == utc
    assert utc_from_ship_time(datetime(2026, 3, 1, 11, 30), 180) == utc
    east = ship_time(utc, -330)  # ZD -5:30: clocks 5 h 30 min ahead
    assert (east.hour, east.minute) == (20, 0)
    # ZT + ZD = UTC across midnight: 23:00 ZT at ZD -2 is 21:00 UTC the same day, at ZD +2
    # it is 01:00 UTC the next day.
    assert utc_from_ship_time(datetime(2026, 3, 1, 23, 0), -120) == datetime(
        2026, 3, 1, 21, 0, tzinfo=UTC)
    assert utc_from_ship_time(datetime(2026, 3, 1, 23, 0), 120) == datetime(
        2026, 3, 2, 1, 0, tzinfo=UTC)


def test_ship_time_rejects():
    with pytest.raises(InputError, match="must be a timezone-aware datetime"):
        ship_time(datetime(2026, 3, 1, 14, 30), 180)
    with pytest.raises(InputError, match="carries UTC offset .* which is not ZD \\+3"):
        utc_from_ship_time(datetime(2026, 3, 1, 11, 30, tzinfo=UTC), 180)
    with pytest.raises(InputError, match="outside -14 h to \\+12 h"):
        ship_time(datetime(2026, 3, 1, tzinfo=UTC), 13 * 60)


@pytest.mark.parametrize("zd_hours", range(-12, 13))
def test_iana_etc_gmt_has_the_sign_of_zd(zd_hours):
    """IANA tzdb: Etc/GMT+N is UTC-N, i.e. ZD +N (checks REFERENCE.md's note)."""
    name = "Etc/GMT" if zd_hours == 0 else f"Etc/GMT{zd_hours:+d}"
    try:
        tz = ZoneInfo(name)
    except ZoneInfoNotFoundError:  # pragma: no cover - tzdata missing
        pytest.skip("IANA time zone database not installed")
    utc = datetime(2026, 7, 1, 12, 0, tzinfo=UTC)
    assert tz.utcoffset(utc.replace(tzinfo=None)) == timedelta(hours=-zd_hours)
    ours = ship_time(utc, zd_hours * 60)
    theirs = utc.astimezone(tz)
    assert ours.replace(tzinfo=None) == theirs.replace(tzinfo=None)


@settings(max_examples=300, deadline=None)
@given(st.datetimes(min_value=datetime(1900, 1, 2), max_value=datetime(2200, 12, 30),
                    timezones=st.just(UTC)),
       st.integers(min_value=-14 * 60, max_value=12 * 60))
def test_ship_time_round_trip(utc, zd):
    zt = ship_time(utc, zd)
    assert zt.replace(tzinfo=None) + timedelta(minutes=zd) == utc.replace(tzinfo=None)
    assert utc_from_ship_time(zt.replace(tzinfo=None), zd) == utc


# ------------------------------------------------------------------------------------------
# reading and printing times


@pytest.mark.parametrize(
    "text, zd, expected",
    [
        ("2026-03-01T14:30:00Z", None, (2026, 3, 1, 14, 30, 0)),  # ISO 8601 with Z
        ("2026-03-01T14:30Z", None, (2026, 3, 1, 14, 30, 0)),
        ("2026-03-01 14:30Z", None, (2026, 3, 1, 14, 30, 0)),
        ("2026-03-01 14:30:15Z", None, (2026, 3, 1, 14, 30, 15)),
        ("2026-03-01t14:30z", None, (2026, 3, 1, 14, 30, 0)),
        ("2026-03-01 14:30 UTC", None, (2026, 3, 1, 14, 30, 0)),
        ("2026-03-01T11:30:00-03:00", None, (2026, 3, 1, 14, 30, 0)),  # offset -3 h: ZD +3
        ("2026-03-01T11:30-0300", None, (2026, 3, 1, 14, 30, 0)),
        ("2026-03-01T20:00+05:30", None, (2026, 3, 1, 14, 30, 0)),
        ("2026-03-01T11:30 ZD+3", None, (2026, 3, 1, 14, 30, 0)),  # ZT + ZD = UTC
        ("2026-03-01T11:30ZD+3", None, (2026, 3, 1, 14, 30, 0)),
        ("2026-03-01T20:00 ZD-5:30", None, (2026, 3, 1, 14, 30, 0)),
        ("2026-03-01T10:30 ZD Q", None, (2026, 3, 1, 14, 30, 0)),  # Q = +4
        ("2026-03-01T11:30", 180, (2026, 3, 1, 14, 30, 0)),  # ZD given separately
        ("2026-03-02T00:30", -600, (2026, 3, 1, 14, 30, 0)),
        ("2026-03-01T14:30Z", 180, (2026, 3, 1, 14, 30, 0)),  # the text's own zone wins
        ("2026-03-01T11:30 ZD+3", -60, (2026, 3, 1, 14, 30, 0)),
    ],
)
def test_parse_time_utc(text, zd, expected):
    got = parse_time_utc(text, zd)
    assert got.tzinfo is UTC
    assert (got.year, got.month, got.day, got.hour, got.minute, got.second) == expected


def test_fractional_seconds_are_kept():
    got = parse_time_utc("2026-03-01T14:30:05.25Z")
    assert got.microsecond == 250_000
    assert format_utc(got) == "2026-03-01T14:30:05Z"
    assert format_utc(parse_time_utc("2026-03-01T14:30:05.5Z")) == "2026-03-01T14:30:06Z"
    assert format_utc(parse_time_utc("2026-12-31T23:59:59.75Z")) == "2027-01-01T00:00:00Z"


@pytest.mark.parametrize(
    "text, words",
    [
        ("2026-03-01T11:30", "has no zone: add Z for UTC"),
        ("2026-03-01 11:30:00", "has no zone"),
        ("2026-03-01", "cannot read time"),
        ("14:30Z", "cannot read time"),
        ("", "cannot read time"),
        ("2026-03-01T14:30Z junk", "cannot read time"),
        ("2026-02-30T11:30Z", "is not a valid date and time"),
        ("2026-03-01T24:30Z", "is not a valid date and time"),
        ("2026-03-01T11:30 ZD3", "needs its sign"),
        ("2026-03-01T11:30+15:00", "is outside -12:00 to +14:00"),
        ("2026-03-01T11:30+05:75", "offset minutes 75 must be below 60"),
        ("now", "cannot read time"),
    ],
)
def test_parse_time_rejects(text, words):
    with pytest.raises(InputError) as info:
        parse_time_utc(text)
    assert repr(text) in str(info.value)
    assert words in str(info.value)


def test_read_time_reports_the_zone_carried():
    assert read_time("2026-03-01T11:30")[1] is None
    assert read_time("2026-03-01T11:30Z")[1] == 0
    assert read_time("2026-03-01T11:30-03:00")[1] == 180
    assert read_time("2026-03-01T11:30 ZD-5:30")[1] == -330


@pytest.mark.parametrize(
    "dt, text",
    [
        (datetime(2026, 3, 1, 14, 30, tzinfo=UTC), "2026-03-01T14:30:00Z"),
        (datetime(2026, 3, 1, 11, 30, tzinfo=timezone(timedelta(hours=-3))),
         "2026-03-01T14:30:00Z"),
        (datetime(987, 6, 5, 4, 3, 2, 499_999, tzinfo=UTC), "0987-06-05T04:03:02Z"),
    ],
)
def test_format_utc(dt, text):
    assert format_utc(dt) == text


def test_format_utc_rejects_naive():
    with pytest.raises(InputError, match="must be a timezone-aware datetime"):
        format_utc(datetime(2026, 3, 1, 14, 30))


def test_format_ship_time():
    utc = datetime(2026, 3, 1, 14, 30, tzinfo=UTC)
    assert format_ship_time(utc, 180) == "2026-03-01T11:30:00 ZD+3"
    assert format_ship_time(utc, -330) == "2026-03-01T20:00:00 ZD-5:30"
    assert format_ship_time(utc, 0) == "2026-03-01T14:30:00 ZD0"
    assert parse_time_utc("2026-03-01T14:30:00 ZD0") == utc


@settings(max_examples=300, deadline=None)
@given(st.datetimes(min_value=datetime(1900, 1, 2), max_value=datetime(2200, 12, 30),
                    timezones=st.just(UTC)),
       st.integers(min_value=-14 * 60, max_value=12 * 60))
def test_printed_times_read_back(utc, zd):
    whole = utc.replace(microsecond=0) + timedelta(seconds=utc.microsecond >= 500_000)
    assert parse_time_utc(format_utc(utc)) == whole
    assert parse_time_utc(format_ship_time(utc, zd)) == whole
    assert parse_time_utc(format_ship_time(utc, zd)[:19], zd) == whole
