"""NMEA 0183 reading and writing: checksums, validation, epochs, dates, talkers, streaming.

Every checksum in these tests is computed (tests/formats/nmea_lines.py) by the definition in
NMEA 0183 (XOR of the characters between '$' and '*'), cross-checked once against the
widely published RMC example sentence.
"""

from __future__ import annotations

import io
import sys
import tracemalloc
from datetime import date, datetime, timedelta, timezone
from pathlib import Path

import pynmea2
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from passagelog.formats import iter_fixes, read_fixes, write_fixes
from passagelog.formats._common import ReadSummary
from passagelog.formats.nmea import NmeaReader, checksum
from passagelog.model import Fix

sys.path.insert(0, str(Path(__file__).parent))
from nmea_lines import gga, line, rmc, xor_checksum, zero_checksum_rmc  # noqa: E402

UTC = timezone.utc
#: The RMC example of the NMEA 0183 literature (e.g. the gpsd "NMEA revealed" pages and
#: many receiver manuals): 12:35:19 UTC, 48 07.038' N 11 31.000' E, 22.4 kn, 84.4 deg,
#: 23 March 1994, variation 3.1 W (from memory).
PUBLISHED_RMC = "$GPRMC,123519,A,4807.038,N,01131.000,E,022.4,084.4,230394,003.1,W*6A"


def read(lines, **options):
    summary = ReadSummary("test.nmea")
    fixes = list(NmeaReader(lines, summary, **options))
    return fixes, summary


def accounted(summary: ReadSummary) -> int:
    return (summary.lines_used + summary.lines_rejected + sum(summary.dropped.values())
            + sum(summary.ignored.values()) + summary.blank_lines)


# -- checksums ----------------------------------------------------------------------------

def test_published_example_checksum_is_6a():
    body = PUBLISHED_RMC[1:PUBLISHED_RMC.index("*")]
    assert xor_checksum(body) == 0x6A  # the helper agrees with the published sentence
    assert checksum(body) == 0x6A
    assert rmc().rstrip() == PUBLISHED_RMC


@given(st.text(alphabet=st.characters(min_codepoint=32, max_codepoint=126), max_size=300))
def test_folded_checksum_equals_the_definition(body):
    assert checksum(body) == xor_checksum(body)


def test_published_example_reads():
    fixes, summary = read([PUBLISHED_RMC + "\r\n"])
    (fix,) = fixes
    assert fix.time_utc == datetime(1994, 3, 23, 12, 35, 19, tzinfo=UTC)  # two-digit year 94
    assert fix.lat == pytest.approx(48 + 7.038 / 60, abs=1e-12)
    assert fix.lon == pytest.approx(11 + 31.0 / 60, abs=1e-12)
    assert fix.sog_kn == 22.4 and fix.cog == 84.4
    assert fix.source == PUBLISHED_RMC
    assert summary.lines_read == 1 and summary.fixes_kept == 1 and not summary.rejected


def test_missing_checksum_rejected_unless_allowed():
    bare = PUBLISHED_RMC[:PUBLISHED_RMC.index("*")] + "\r\n"
    fixes, summary = read([rmc(time="123518"), bare])
    assert len(fixes) == 1
    assert summary.rejected == {"missing checksum": 1}
    assert summary.rejected_at["missing checksum"] == [2]
    fixes, summary = read([bare], require_checksum=False)
    assert len(fixes) == 1 and not summary.rejected


@pytest.mark.parametrize("tail", ["*6", "*", "*6A0", "*G1", "*+A"])
def test_malformed_checksum_rejected(tail):
    body = PUBLISHED_RMC[:PUBLISHED_RMC.index("*")]
    fixes, summary = read([body + tail + "\r\n"])
    assert fixes == []
    assert summary.rejected == {"malformed checksum (two hex digits required)": 1}


def test_wrong_checksum_rejected():
    fixes, summary = read([PUBLISHED_RMC[:-2] + "6B\r\n"])
    assert fixes == [] and summary.rejected == {"checksum mismatch": 1}


def test_checksum_00_is_valid_when_it_is_the_xor():
    text = zero_checksum_rmc()
    assert text.rstrip().endswith("*00")
    fixes, summary = read([text])
    assert len(fixes) == 1 and not summary.rejected
    # and *00 on a sentence whose XOR is not zero is rejected
    fixes, summary = read([PUBLISHED_RMC[:-2] + "00\r\n"])
    assert fixes == [] and summary.rejected == {"checksum mismatch": 1}


def test_lowercase_hex_checksum_accepted():
    fixes, _ = read([PUBLISHED_RMC[:-2] + "6a\n"])
    assert len(fixes) == 1


# -- whitespace in the last field ---------------------------------------------------------

def test_cr_or_spaces_added_to_the_last_field_after_the_checksum_was_made():
    body = PUBLISHED_RMC[1:PUBLISHED_RMC.index("*")]
    cs = f"{xor_checksum(body):02X}"
    for junk in (" ", "  ", "\r", " \r"):
        fixes, summary = read([f"${body}{junk}*{cs}\r\n"])
        assert len(fixes) == 1, repr(junk)
        assert fixes[0].lat == pytest.approx(48.1173)


def test_space_in_the_last_field_covered_by_the_checksum_is_trimmed():
    fixes, summary = read([rmc(), line("HEHDT,274.07,T ")])
    assert fixes[0].heading == 274.07 and not summary.rejected


def test_crlf_line_endings_and_trailing_cr():
    fixes, _ = read([rmc(time="000001").rstrip() + "\r\r\n", rmc(time="000002").rstrip() + "\n"])
    assert len(fixes) == 2


def test_space_inside_a_number_is_a_bad_field():
    fixes, summary = read([rmc(lat="4807 .038")])
    assert fixes == [] and summary.rejected == {"bad field: RMC latitude": 1}


# -- field counts and contents ------------------------------------------------------------

def test_truncated_sentence_with_valid_checksum_is_a_wrong_field_count():
    fixes, summary = read([line("GPRMC,123519,A,4807.038,N,011")])
    assert fixes == [] and summary.rejected == {"wrong field count for RMC": 1}


def test_wrong_field_count_gga():
    text = line("GPGGA,123519,4807.038,N,01131.000,E,1,08,0.9,545.4,M,46.9,M,")  # 13 fields
    fixes, summary = read([text])
    assert summary.rejected == {"wrong field count for GGA": 1}


def test_truncated_position_field_is_rejected_not_zero():
    # pynmea2 would give 0.0 here; the reader refuses it
    fixes, summary = read([rmc(lat="48"), rmc(lon="011", time="123520"),
                           gga(lat="", time="123521")])
    assert fixes == []
    assert summary.rejected == {"bad field: RMC latitude": 1, "bad field: RMC longitude": 1,
                                "bad field: GGA latitude": 1}


def test_empty_optional_fields_give_none():
    fixes, summary = read([rmc(sog="", cog="")])
    assert fixes[0].sog_kn is None and fixes[0].cog is None and not summary.rejected


@pytest.mark.parametrize("kwargs, reason", [
    (dict(ns="X"), "bad field: RMC latitude"),
    (dict(lat="9100.000"), "bad field: RMC latitude"),
    (dict(lat="4860.000"), "bad field: RMC latitude"),
    (dict(lon="18100.000"), "bad field: RMC longitude"),
    (dict(time="246000"), "bad field: RMC time"),
    (dict(date="320394"), "bad field: RMC date"),
    (dict(date="2303"), "bad field: RMC date"),
    (dict(sog="-1.0"), "bad field: RMC speed"),
    (dict(sog="1e3"), "bad field: RMC speed"),
    (dict(cog="400.0"), "bad field: RMC course"),
    (dict(status="X"), "bad field: RMC status"),
    (dict(mode="Q"), "bad field: RMC mode"),
])
def test_bad_field_contents(kwargs, reason):
    fixes, summary = read([rmc(**kwargs)])
    assert fixes == [] and summary.rejected == {reason: 1}


def test_not_a_sentence_and_blank_lines_and_ignored_types():
    lines = ["hello\n", "\n", "   \n", line("GPGSV,1,1,01,01,40,083,46"),
             line("PGRME,15.0,M,45.0,M,25.0,M"), "!AIVDM,1,1,,A,13u?etPv2;0n:dDPwUM1U1Cb069D,0*24\n",
             rmc()]
    fixes, summary = read(lines)
    assert len(fixes) == 1
    assert summary.rejected == {"not an NMEA sentence": 1}
    assert summary.blank_lines == 2
    assert summary.ignored["GSV"] == 1 and summary.ignored["proprietary (P)"] == 1
    assert accounted(summary) == summary.lines_read == 7


# -- validity ----------------------------------------------------------------------------

def test_status_v_with_coordinates_filled_in_is_no_fix():
    fixes, summary = read([rmc(status="V")])
    assert fixes == [] and summary.rejected == {"no fix: RMC status V": 1}


def test_mode_n_is_no_fix_even_with_status_a():
    fixes, summary = read([rmc(mode="N")])
    assert fixes == [] and summary.rejected == {"no fix: mode N": 1}


def test_gga_quality_0_with_coordinates_is_no_fix():
    fixes, summary = read([gga(quality="0"), rmc(time="123520", date="230394")])
    assert len(fixes) == 1 and summary.rejected == {"no fix: GGA quality 0": 1}


def test_gll_status_v_is_no_fix_and_a_is_a_fix():
    v = line("GPGLL,4916.45,N,12311.12,W,225444,V,N")
    a = line("GPGLL,4916.45,N,12311.12,W,225445,A,A")
    fixes, summary = read([rmc(time="225443", date="010124"), v, a])
    assert summary.rejected == {"no fix: GLL status V": 1}
    assert fixes[-1].time_utc == datetime(2024, 1, 1, 22, 54, 45, tzinfo=UTC)
    assert fixes[-1].lat == pytest.approx(49 + 16.45 / 60)
    assert fixes[-1].lon == pytest.approx(-(123 + 11.12 / 60))


# -- dates -------------------------------------------------------------------------------

@pytest.mark.parametrize("yymmdd, expected", [
    ("230394", date(1994, 3, 23)),
    ("010180", date(1980, 1, 1)),   # GPS time began 6 January 1980; 80-99 are 19xx
    ("311299", date(1999, 12, 31)),
    ("010100", date(2000, 1, 1)),
    ("290224", date(2024, 2, 29)),
    ("311279", date(2079, 12, 31)),  # the pivot (common practice)
])
def test_two_digit_years(yymmdd, expected):
    fixes, _ = read([rmc(date=yymmdd)])
    assert fixes[0].time_utc.date() == expected


def test_midnight_rollover_for_gga_after_rmc():
    lines = [rmc(time="235958", date="311224"), gga(time="235959"), gga(time="000000"),
             gga(time="000001.5")]
    fixes, summary = read(lines)
    assert [f.time_utc for f in fixes] == [
        datetime(2024, 12, 31, 23, 59, 58, tzinfo=UTC),
        datetime(2024, 12, 31, 23, 59, 59, tzinfo=UTC),
        datetime(2025, 1, 1, 0, 0, 0, tzinfo=UTC),
        datetime(2025, 1, 1, 0, 0, 1, 500000, tzinfo=UTC),
    ]


def test_gga_before_the_first_date_is_dated_backwards():
    lines = [gga(time="235958"), gga(time="235959"), rmc(time="000000", date="010125")]
    fixes, summary = read(lines)
    assert [f.time_utc for f in fixes] == [
        datetime(2024, 12, 31, 23, 59, 58, tzinfo=UTC),
        datetime(2024, 12, 31, 23, 59, 59, tzinfo=UTC),
        datetime(2025, 1, 1, 0, 0, 0, tzinfo=UTC),
    ]


def test_zda_dates_gga_and_gll():
    lines = [line("GPZDA,235959.00,31,12,2023,00,00"), gga(time="235959.50"),
             gga(time="000000.50")]
    fixes, summary = read(lines)
    assert [f.time_utc for f in fixes] == [
        datetime(2023, 12, 31, 23, 59, 59, 500000, tzinfo=UTC),
        datetime(2024, 1, 1, 0, 0, 0, 500000, tzinfo=UTC),
    ]
    assert summary.lines_used == 3


def test_gga_only_without_date_is_rejected_then_dated_by_option():
    lines = [gga(time="120000"), gga(time="120001")]
    fixes, summary = read(lines)
    assert fixes == []
    assert summary.rejected == {"no date (no RMC or ZDA before it)": 2}
    assert summary.rejected_at["no date (no RMC or ZDA before it)"] == [1, 2]
    fixes, summary = read(lines, start_date=date(2024, 5, 1))
    assert [f.time_utc.hour for f in fixes] == [12, 12] and not summary.rejected


# -- several talkers, merging ----------------------------------------------------------------

def test_same_epoch_from_gp_and_gn_is_one_fix_preferring_gn():
    lines = [rmc(talker="GP"), rmc(talker="GN", lat="4807.039"),
             rmc(talker="GP", time="123520"), rmc(talker="GN", time="123520", lat="4807.041")]
    fixes, summary = read(lines)
    assert len(fixes) == 2
    assert all(f.source.startswith("$GNRMC") for f in fixes)
    assert fixes[0].lat == pytest.approx(48 + 7.039 / 60)
    assert summary.dropped["same epoch from another talker"] == 2
    assert accounted(summary) == summary.lines_read


def test_talker_choice_keeps_only_the_listed_talkers():
    lines = [rmc(talker="GP"), rmc(talker="GN", lat="4807.039"), rmc(talker="GL", lat="4807.1")]
    fixes, summary = read(lines, talkers=("GP",))
    assert len(fixes) == 1 and fixes[0].source.startswith("$GPRMC")
    assert summary.ignored == {"talker GN not selected": 1, "talker GL not selected": 1}


def test_gga_and_rmc_of_one_epoch_merge_and_vtg_hdt_fill_in():
    lines = [gga(time="101010", sats="11", hdop="0.7"), rmc(time="101010", sog="", cog=""),
             line("GPVTG,054.7,T,034.4,M,005.5,N,010.2,K,A"), line("HEHDT,052.10,T"),
             line("HEHDT,052.20,T")]
    fixes, summary = read(lines)
    (fix,) = fixes
    assert (fix.satellites, fix.hdop) == (11, 0.7)
    assert (fix.cog, fix.sog_kn, fix.heading) == (54.7, 5.5, 52.1)
    assert fix.source.count("\n") == 3  # GGA, RMC, VTG, HDT kept as the raw text
    assert summary.dropped == {"VTG/HDT already given for the epoch": 1}
    assert accounted(summary) == summary.lines_read == 5


def test_vtg_before_any_fix_has_nothing_to_merge_into():
    fixes, summary = read([line("GPVTG,054.7,T,034.4,M,005.5,N,010.2,K"), rmc()])
    assert summary.dropped == {"VTG/HDT with no epoch to merge into": 1}


def test_repeated_epoch_is_not_a_second_fix():
    fixes, summary = read([rmc(time="000001", date="010124"), rmc(time="000002", date="010124"),
                           rmc(time="000001", date="010124")])
    assert len(fixes) == 2 and summary.dropped == {"repeated epoch": 1}


# -- thinning and streaming ----------------------------------------------------------------

def _second_lines(n: int, start: datetime = datetime(2024, 5, 1, 12, 0, tzinfo=UTC)):
    for k in range(n):
        t = start + timedelta(seconds=k)
        yield rmc(time=t.strftime("%H%M%S"), date=t.strftime("%d%m%y"))


def test_thinning_keeps_one_fix_per_interval():
    fixes, summary = read(list(_second_lines(181)), thin_s=60)
    assert [f.time_utc.strftime("%H:%M:%S") for f in fixes] == [
        "12:00:00", "12:01:00", "12:02:00", "12:03:00"]
    assert summary.dropped == {"thinned": 177}
    assert accounted(summary) == summary.lines_read == 181


def _peak_bytes(n: int) -> int:
    summary = ReadSummary("big.nmea")
    tracemalloc.start()
    count = sum(1 for _ in NmeaReader(_second_lines(n), summary))
    _, peak = tracemalloc.get_traced_memory()
    tracemalloc.stop()
    assert count == n == summary.fixes_kept
    return peak


def test_reading_streams_in_flat_memory():
    """Four times the lines, without keeping the fixes, and the traced peak does not grow
    (holding the fixes would cost about 1 kB each)."""
    small, large = _peak_bytes(1_000), _peak_bytes(4_000)
    assert large < small + 100_000, (small, large)


def test_summary_keeps_the_first_five_line_numbers():
    lines = [rmc(status="V", time=f"0000{k:02d}") for k in range(9)]
    _, summary = read(lines)
    assert summary.rejected["no fix: RMC status V"] == 9
    assert summary.rejected_at["no fix: RMC status V"] == [1, 2, 3, 4, 5]
    text = "\n".join(summary.report_lines())
    assert "rejected 9: no fix: RMC status V (lines 1, 2, 3, 4, 5, ...)" in text


# -- against pynmea2 (an outside parser) --------------------------------------------------

@settings(max_examples=200, deadline=None)
@given(
    lat_deg=st.integers(0, 89), lat_min=st.integers(0, 59999), ns=st.sampled_from("NS"),
    lon_deg=st.integers(0, 179), lon_min=st.integers(0, 59999), ew=st.sampled_from("EW"),
    t=st.datetimes(datetime(2000, 1, 1), datetime(2068, 12, 31)),
    sog=st.integers(0, 9999), cog=st.integers(0, 3599),
)
def test_fast_path_agrees_with_pynmea2(lat_deg, lat_min, ns, lon_deg, lon_min, ew, t, sog,
                                       cog):
    text = rmc(time=t.strftime("%H%M%S"), date=t.strftime("%d%m%y"),
               lat=f"{lat_deg:02d}{lat_min // 1000:02d}.{lat_min % 1000:03d}", ns=ns,
               lon=f"{lon_deg:03d}{lon_min // 1000:02d}.{lon_min % 1000:03d}", ew=ew,
               sog=f"{sog / 10:.1f}", cog=f"{cog / 10:.1f}")
    ref = pynmea2.parse(text.strip(), check=True)
    (fix,), _ = read([text])
    assert fix.lat == pytest.approx(ref.latitude, abs=1e-12)
    assert fix.lon == pytest.approx(ref.longitude if ref.longitude < 180 else -180.0, abs=1e-12)
    assert fix.time_utc == ref.datetime.replace(tzinfo=UTC)
    assert fix.sog_kn == ref.spd_over_grnd and fix.cog == ref.true_course


@settings(max_examples=150, deadline=None)
@given(st.lists(st.sampled_from([
    rmc(), rmc(time="123520"), rmc(status="V"), gga(), gga(quality="0"), rmc(talker="GN"),
    line("GPVTG,054.7,T,034.4,M,005.5,N,010.2,K"), line("HEHDT,1.0,T"), "\n", "junk\n",
    line("GPGSV,1,1,00"), PUBLISHED_RMC[:-2] + "00\n", line("GPRMC,1,2"),
    line("GPZDA,123519,23,03,1994,00,00"), gga(time="000001"),
]), max_size=40))
def test_every_line_is_accounted_for(lines):
    fixes, summary = read(lines)
    assert summary.lines_read == len(lines)
    assert accounted(summary) == len(lines)
    assert summary.fixes_kept == len(fixes)
    times = [f.time_utc for f in fixes]
    assert len(set(times)) == len(times)  # never two fixes of one epoch


# -- files, writing, round trips ----------------------------------------------------------

def test_iter_fixes_on_a_file_fills_the_summary_as_it_goes(tmp_path):
    path = tmp_path / "log.nmea"
    path.write_text("".join(_second_lines(10)) + rmc(status="V"), encoding="ascii")
    reader = iter_fixes(path)
    it = iter(reader)
    next(it)
    assert reader.summary.fixes_kept >= 1
    rest = list(it)
    assert len(rest) == 9
    assert reader.summary.lines_read == 11 and reader.summary.fixes_kept == 10
    assert reader.summary.rejected_at == {"no fix: RMC status V": [11]}
    with pytest.raises(RuntimeError):
        list(reader)


def test_read_fixes_from_a_stream():
    fixes, summary = read_fixes(io.StringIO("".join(_second_lines(5))))
    assert len(fixes) == 5 and summary.source == "<stdin>"


fix_strategy = st.builds(
    Fix,
    time_utc=st.datetimes(datetime(1990, 1, 1), datetime(2070, 1, 1),
                          timezones=st.just(UTC)),
    lat=st.floats(-89.999, 89.999), lon=st.floats(-180, 179.999),
    sog_kn=st.none() | st.floats(0, 60), cog=st.none() | st.floats(0, 359.99),
    heading=st.none() | st.floats(0, 359.99),
    hdop=st.none() | st.floats(0.1, 50), satellites=st.none() | st.integers(0, 40),
)


@settings(max_examples=100, deadline=None)
@given(st.lists(fix_strategy, min_size=1, max_size=5))
def test_nmea_round_trip(fixes):
    fixes = sorted({f.time_utc.replace(microsecond=0): f for f in fixes}.values(),
                   key=lambda f: f.time_utc)
    fixes = [Fix(f.time_utc.replace(microsecond=0), f.lat, f.lon, sog_kn=f.sog_kn, cog=f.cog,
                 heading=f.heading, hdop=f.hdop, satellites=f.satellites) for f in fixes]
    out = io.StringIO()
    write_fixes(fixes, "nmea", out, gga=True)
    got, summary = read([ln + "\n" for ln in out.getvalue().splitlines()])
    assert not summary.rejected
    assert [g.time_utc for g in got] == [f.time_utc for f in fixes]
    for f, g in zip(fixes, got):
        # six decimals of a minute: within 5e-7' = 8.4e-9 degrees
        assert g.lat == pytest.approx(f.lat, abs=1e-8)
        assert g.lon == pytest.approx(f.lon, abs=1e-8) or abs(abs(g.lon) - 180) < 1e-8
        for a, b in ((f.sog_kn, g.sog_kn), (f.cog, g.cog), (f.heading, g.heading)):
            assert (a is None and b is None) or b == pytest.approx(a, abs=0.005 + 1e-9) \
                or (a > 359.99 and b == 0.0)
        assert g.satellites == f.satellites
        assert (f.hdop is None and g.hdop is None) or g.hdop == pytest.approx(f.hdop, abs=0.05)


def test_written_sentences_pass_pynmea2_strict_check():
    fix = Fix(datetime(2024, 2, 29, 23, 59, 59, 996000, tzinfo=UTC), -33.85, 151.27,
              sog_kn=12.345, cog=359.999, heading=0.0, hdop=0.9, satellites=7)
    out = io.StringIO()
    write_fixes([fix], "nmea", out, gga=True)
    texts = out.getvalue().split("\r\n")[:-1]
    msgs = [pynmea2.parse(t, check=True) for t in texts]
    # centiseconds round up across midnight and into 1 March
    assert msgs[0].datestamp == date(2024, 3, 1) and msgs[0].timestamp.hour == 0
    assert msgs[0].latitude == pytest.approx(-33.85) and msgs[0].longitude == pytest.approx(151.27)
    assert msgs[0].true_course == 0.0  # 359.999 rounds to 360.00, written as 0.00
    assert msgs[1].gps_qual == 1 and msgs[1].num_sats == "07"
    assert msgs[2].heading == 0.0


# -- the fast RMC path against the slow one -------------------------------------------------

def _both_ways(lines):
    fast_summary, slow_summary = ReadSummary("a"), ReadSummary("a")
    fast = list(NmeaReader(lines, fast_summary))
    reader = NmeaReader(lines, slow_summary)
    reader._fast = False
    slow = list(reader)
    return (fast, fast_summary), (slow, slow_summary)


field_text = st.text(alphabet="0123456789.-+ ,*NSEWAVDMX", max_size=12)
RMC_CHOICES = {
    "time": ["123519", "123519.5", "235959.999", "000000.05", "240000", "12351", "123519."],
    "date": ["230394", "290223", "290224", "310424", "000000", "2303945"],
    "status": ["A", "A", "A", "V", "", "a"],
    "lat": ["4807.038", "9000.000", "9000.001", "0000.0000", "4860.0", "4807.", "4807",
            "807.038"],
    "ns": ["N", "S", "S", "", "n"],
    "lon": ["01131.000", "18000.000", "18000.5", "17959.9999", "1131.000", "00000.0"],
    "ew": ["E", "W", "W", ""],
    "sog": ["022.4", "", ".5", "9" * 30, "0", "12."],
    "cog": ["084.4", "", "360.0", "360.1", "359.99", "0.0"],
    "mode": [None, "A", "D", "N", "", "Q", "E"],
    "talker": ["GP", "GN", "II", "G1"],
}


@st.composite
def rmc_variants(draw):
    """RMC sentences mostly valid, with edge values, and now and then one field garbled."""
    kw = {k: draw(st.just(v[0]) | st.sampled_from(v)) for k, v in RMC_CHOICES.items()}
    if draw(st.integers(0, 3)) == 0:
        key = draw(st.sampled_from([k for k in RMC_CHOICES if k not in ("mode", "talker")]))
        kw[key] = draw(field_text)
    return rmc(**kw)


@settings(max_examples=400, deadline=None)
@given(st.lists(rmc_variants(), max_size=6))
def test_fast_rmc_path_gives_what_the_slow_path_gives(lines):
    (fast, fs), (slow, ss) = _both_ways(lines)
    assert fast == slow
    assert fs.as_dict() == ss.as_dict()


@settings(max_examples=400, deadline=None)
@given(
    t=st.datetimes(datetime(1980, 1, 1), datetime(2079, 12, 31), timezones=st.just(UTC)),
    lat=st.sampled_from([90.0, -90.0, 0.0, -0.0]) | st.floats(-91, 91),
    lon=st.sampled_from([180.0, -180.0, 0.0, -0.0]) | st.floats(-181, 181),
    hdop=st.none() | st.floats(0, 100), sats=st.none() | st.integers(0, 1200),
    mode=st.none() | st.sampled_from(["A", "1", "E"]),
    cog=st.none() | st.sampled_from([0.0, 359.999, 360.0]) | st.floats(0, 361),
    sog=st.none() | st.floats(0, 1e9), heading=st.none() | st.floats(0, 361),
)
def test_the_checked_fix_maker_equals_the_model_constructor(t, lat, lon, hdop, sats, mode,
                                                           cog, sog, heading):
    from passagelog.errors import InputError
    from passagelog.formats.nmea import _slow_fix, make_fix

    args = (t, lat, lon, hdop, sats, mode, cog, sog, heading, "$src")
    try:
        expected = _slow_fix(*args)
    except InputError:
        with pytest.raises(InputError):
            make_fix(*args)
        return
    got = make_fix(*args)
    assert got == expected
    assert got.__dict__ == expected.__dict__
    assert str(got.lon) == str(expected.lon) and str(got.lat) == str(expected.lat)  # -0.0
