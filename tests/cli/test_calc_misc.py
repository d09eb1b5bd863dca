"""``passagelog calc position | convert | zone`` through the real entry point (exit codes,
stdout data only, one-line errors on stderr).

Expected values: sexagesimal notation by definition (ISO 6709 Annex D); unit factors exact by
definition (NM 1852 m, IHC 1929; statute mile 1609.344 m, 1959 agreement); zone rules of
NGA Pub. 9 (Bowditch), chapter "Time": ZD = lon/15 rounded, + in west longitude,
ZT + ZD = UTC; zone letters Z, A-M (no J) east, N-Y west (from memory).
"""

from __future__ import annotations

import json
from datetime import datetime, timezone

import pytest
from click.testing import CliRunner

from passagelog.cli import main


def run(*args: str) -> tuple[int, str, str]:
    """Run ``passagelog ARGS`` as the console script does: (exit code, stdout, stderr)."""
    runner = CliRunner()
    with runner.isolation() as (out, err, _):
        try:
            main(list(args))
            code = 0
        except SystemExit as exc:
            code = exc.code if isinstance(exc.code, int) else 1
        return code, out.getvalue().decode(), err.getvalue().decode()


# ------------------------------------------------------------------------------------------
# calc position


@pytest.mark.parametrize(
    "args, printed",
    [
        (["47°36.512'N 122°20.107'W"], "47°36.512'N 122°20.107'W\n"),
        (["47 36.512N 122 20.107W"], "47°36.512'N 122°20.107'W\n"),
        (["47", "36.512N", "122", "20.107W"], "47°36.512'N 122°20.107'W\n"),  # no quotes
        (["N47°36.512' W122°20.107'", "--ascii"], "47 36.512N 122 20.107W\n"),
        (["47.6085,", "-122.3351"], "47°36.510'N 122°20.106'W\n"),  # 0.6085° = 36.510'
        (["47.6085, -122.3351", "--style", "dms"], "47°36'30.60\"N 122°20'06.36\"W\n"),
        (["47°36'30.6\"N 122°20'06.36\"W", "--style", "decimal"],
         "47.608500, -122.335100\n"),
        (["05-03.1S 4-01W", "--decimals", "1"], "05°03.1'S 004°01.0'W\n"),
        (["10°59.9996'N 0E", "--decimals", "3"], "11°00.000'N 000°00.000'E\n"),  # carried
        (["--style", "dms", "--decimals", "0", "--ascii", "--", "-33.8568 151.2153"],
         "33 51 24S 151 12 55E\n"),  # 0.8568° = 51.408' = 51' 24.48"; .2153° = 12' 55.08"
    ],
)
def test_position_human(args, printed):
    code, out, err = run("calc", "position", *args)
    assert (code, out, err) == (0, printed, "")


def test_position_json():
    code, out, err = run("calc", "position", "47°36.512'N 122°20.107'W", "--json")
    assert code == 0 and err == ""
    data = json.loads(out)
    assert set(data) == {"lat", "lon", "text"}
    assert data["lat"] == pytest.approx(47 + 36.512 / 60, abs=1e-12)
    assert data["lon"] == pytest.approx(-(122 + 20.107 / 60), abs=1e-12)
    assert data["text"] == "47°36.512'N 122°20.107'W"


def test_position_json_antimeridian_is_folded():
    code, out, _ = run("calc", "position", "0N 180E", "--json", "--style", "decimal")
    assert code == 0
    assert json.loads(out) == {"lat": 0.0, "lon": -180.0, "text": "0.000000, -180.000000"}


@pytest.mark.parametrize(
    "text, message",
    [
        ("91N 0E", "passagelog: cannot read position '91N 0E': latitude 91° is out of range; "
                   "it must be at most 90°\n"),
        ("47°60'N 0E", "passagelog: cannot read position \"47°60'N 0E\": minutes 60 must be "
                       "below 60\n"),
        ("-47N 0E", "passagelog: cannot read position '-47N 0E': a sign (-) and a hemisphere "
                    "letter (N) together; write one or the other\n"),
        ("47N 122W x", "passagelog: cannot read position '47N 122W x': unexpected 'x'; "
                       "expected numbers, degree, minute and second signs and hemisphere "
                       "letters N S E W\n"),
        ("47N", "passagelog: cannot read position '47N': expected a latitude and a "
                "longitude, found 1 coordinate\n"),
        ("nan 0", "passagelog: cannot read position 'nan 0': 'nan' is not a finite number\n"),
        # N on the latitude and no W on the longitude: refused, not read as east
        ("38 12.5N 10 06.1", "passagelog: cannot read position '38 12.5N 10 06.1': "
                             "longitude '10 06.1' has no hemisphere: add E or W (the latitude "
                             "has one, so a longitude without a letter or a sign is not taken "
                             "as east)\n"),
        ("50 00.6 4 18.8W", "passagelog: cannot read position '50 00.6 4 18.8W': latitude "
                            "'50 00.6' has no hemisphere: add N or S (the longitude has one, so "
                            "a latitude without a letter or a sign is not taken as north)\n"),
    ],
)
def test_position_bad_input_exits_1(text, message):
    assert run("calc", "position", text) == (1, "", message)


@pytest.mark.parametrize(
    "args, words",
    [
        (["47N 0E", "--style", "dd"], "Invalid value for '--style'"),
        (["47N 0E", "--decimals", "13"], "Invalid value for '--decimals'"),
        (["47N 0E", "--decimls", "3"], "no such option: --decimls"),
        ([], "Missing argument 'TEXT...'"),
    ],
)
def test_position_usage_exits_2(args, words):
    code, out, err = run("calc", "position", *args)
    assert code == 2 and out == ""
    assert words in err


# ------------------------------------------------------------------------------------------
# calc convert


@pytest.mark.parametrize(
    "args, printed",
    [
        (["100", "nm", "km"], "185.2 km\n"),  # 1852 m exactly
        (["1", "kn", "km/h"], "1.852 km/h\n"),
        (["1", "sm", "nm"], "0.8689762419 nm\n"),  # 1609.344/1852
        (["10", "knots", "m/s"], "5.144444444 m/s\n"),  # 10 * 1852/3600
        (["-2.5", "NM", "m"], "-4630 m\n"),
        (["1e3", "ft", "m"], "304.8 m\n"),
        (["60", "mph", "kn"], "52.13857451 kn\n"),  # 60 * 1609.344/1852
    ],
)
def test_convert_human(args, printed):
    assert run("calc", "convert", *args) == (0, printed, "")


def test_convert_json():
    code, out, err = run("calc", "convert", "12.5", "kts", "km/h", "--json")
    assert (code, err) == (0, "")
    assert json.loads(out) == {"value": 12.5, "from_unit": "kn", "to_unit": "km/h",
                               "result": 23.15, "quantity": "speed"}


@pytest.mark.parametrize(
    "args, message",
    [
        (["abc", "nm", "km"], "passagelog: value 'abc' to convert is not a number\n"),
        (["nan", "nm", "km"], "passagelog: value nan to convert must be a finite number\n"),
        (["1", "nm", "kn"], "passagelog: cannot convert a distance (nm) to a speed (kn)\n"),
        (["1", "furlong", "m"], "passagelog: unit 'furlong' is not known; distances: m, nm, "
                                "km, sm, ft; speeds: m/s, kn, km/h, mph\n"),
    ],
)
def test_convert_bad_input_exits_1(args, message):
    assert run("calc", "convert", *args) == (1, "", message)


def test_convert_usage_exits_2():
    code, out, err = run("calc", "convert", "1", "nm")
    assert code == 2 and out == "" and "Missing argument 'TO_UNIT'" in err


# ------------------------------------------------------------------------------------------
# calc zone


def test_zone_human():
    code, out, err = run("calc", "zone", "122°20.107'W")
    assert (code, err) == (0, "")
    # 122.34°W / 15 = 8.16 -> ZD +8, letter U (Bowditch)
    assert out == "longitude    122°20.107'W\nZD           +8 (zone U)\n"


@pytest.mark.parametrize(
    "lon, zd, letter",
    [("0", "0", "Z"), ("-7.5", "0", "Z"), ("7.6", "-1", "A"), ("151.2", "-10", "K"),
     ("179.9", "-12", "M"), ("-179.9", "+12", "Y"), ("180", "+12", "Y"),
     ("47°36.512'N 122°20.107'W", "+8", "U"), ("004°01'W", "0", "Z")],
)
def test_zone_json(lon, zd, letter):
    code, out, err = run("calc", "zone", "--json", "--", lon)
    assert (code, err) == (0, "")
    data = json.loads(out)
    assert (data["zd"], data["zone_letter"]) == (zd, letter)
    assert set(data) == {"lon", "zd", "zd_minutes", "zone_letter"}


def test_zone_with_utc_shows_ships_time():
    code, out, err = run("calc", "zone", "-45", "--utc", "2026-03-01T14:30Z")
    assert (code, err) == (0, "")
    # 45°W: ZD +3; ZT = UTC - ZD = 11:30 (Bowditch: ZT + ZD = UTC)
    assert out == ("longitude    045°00.000'W\nZD           +3 (zone P)\n"
                   "UTC          2026-03-01T14:30:00Z\n"
                   "ship's time  2026-03-01T11:30:00 ZD+3\n")


def test_zone_utc_json_with_clock_zone():
    code, out, _ = run("calc", "zone", "77.2E", "--utc", "2026-03-01 14:30:00Z", "--zd",
                       "-5:30", "--json")
    assert code == 0
    assert json.loads(out) == {
        "lon": 77.2, "zd": "-5", "zd_minutes": -300, "zone_letter": "E",
        "utc": "2026-03-01T14:30:00Z", "ship_time": "2026-03-01T20:00:00+05:30",
        "ship_zd": "-5:30", "ship_zd_minutes": -330,
    }


@pytest.mark.parametrize(
    "extra, utc, ship_zd",
    [
        (["--ship-time", "2026-03-01T11:30", "--zd", "+3"], "2026-03-01T14:30:00Z", "+3"),
        (["--ship-time", "2026-03-01T11:30 ZD+3"], "2026-03-01T14:30:00Z", "+3"),
        (["--ship-time", "2026-03-01T11:30 ZD+3", "--zd", "P"], "2026-03-01T14:30:00Z", "+3"),
        (["--ship-time", "2026-03-01T12:30"], "2026-03-01T14:30:00Z", "+2"),  # LON's zone
        (["--ship-time", "2026-03-01T23:30", "--zd", "-10"], "2026-03-01T13:30:00Z", "-10"),
        (["--utc", "2026-03-01T14:30"], "2026-03-01T14:30:00Z", "+2"),  # bare time is UTC
        (["--utc", "2026-03-01T11:30-03:00"], "2026-03-01T14:30:00Z", "+2"),
    ],
)
def test_zone_ship_time_to_utc(extra, utc, ship_zd):
    code, out, err = run("calc", "zone", "30W", *extra, "--json")
    assert (code, err) == (0, "")
    data = json.loads(out)
    assert (data["utc"], data["ship_zd"]) == (utc, ship_zd)


def test_zone_utc_now():
    before = datetime.now(timezone.utc).replace(microsecond=0)
    code, out, _ = run("calc", "zone", "0", "--utc", "now", "--json")
    after = datetime.now(timezone.utc)
    assert code == 0
    got = datetime.fromisoformat(json.loads(out)["utc"])
    assert before <= got and (got - after).total_seconds() <= 1


@pytest.mark.parametrize(
    "args, message",
    [
        (["47N"], "passagelog: cannot read longitude '47N': a latitude (N) where a longitude "
                  "(E or W) is expected\n"),
        (["30W", "--ship-time", "2026-03-01T11:30 ZD+3", "--zd", "+2"],
         "passagelog: ship's time '2026-03-01T11:30 ZD+3' carries ZD +3 but --zd is +2\n"),
        (["30W", "--utc", "2026-02-30T11:30Z"],
         "passagelog: time '2026-02-30T11:30Z' is not a valid date and time (day is out of "
         "range for month)\n"),
        (["30W", "--utc", "tomorrow"],
         "passagelog: cannot read time 'tomorrow'; expected YYYY-MM-DDTHH:MM[:SS] followed "
         "by Z, an offset such as -03:00, or the ship's zone as ZD+3\n"),
        (["30W", "--utc", "now", "--zd", "3"],
         "passagelog: zone description '3' needs its sign: + in west longitude, - in east "
         "(ZT + ZD = UTC), e.g. +3 or -3\n"),
    ],
)
def test_zone_bad_input_exits_1(args, message):
    assert run("calc", "zone", *args) == (1, "", message)


@pytest.mark.parametrize(
    "args, words",
    [
        (["30W", "--utc", "now", "--ship-time", "2026-03-01T11:30"],
         "give --utc or --ship-time, not both"),
        (["30W", "--zd", "+3"], "--zd needs --utc or --ship-time"),
        ([], "Missing argument 'LON...'"),
        (["30W", "--utx", "now"], "no such option: --utx"),
    ],
)
def test_zone_usage_exits_2(args, words):
    code, out, err = run("calc", "zone", *args)
    assert code == 2 and out == ""
    assert words in err
