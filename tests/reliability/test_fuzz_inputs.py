"""Bad input: every parser takes generated and mutated input and either answers sanely or
raises a passagelog error that names its place. Nothing else may escape.

The normal run tries a few thousand inputs; ``python -m pytest -m slow tests/reliability``
tries well over 100,000 (counts and seeds in docs/reliability.md).
"""

from __future__ import annotations

import io
import math
import random
import sys
from datetime import datetime, timedelta, timezone
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

sys.path.insert(0, str(Path(__file__).parent))
import relkit  # noqa: E402

from passagelog.errors import InputError, PassagelogError, PositionError  # noqa: E402
from passagelog.formats import read_fixes, read_routes  # noqa: E402
from passagelog.model import LegPlan, Route, Waypoint  # noqa: E402
from passagelog.nav.position import parse_lat, parse_lon, parse_position  # noqa: E402
from passagelog.nav.zonetime import parse_time_utc  # noqa: E402

FAST = settings(max_examples=300, deadline=None,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
LONG = settings(max_examples=5_000, deadline=None, derandomize=True,
                suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])

#: seeds of the mutation loops (the slow run uses SEEDS_SLOW after SEEDS_FAST)
SEEDS_FAST = range(0, 1000)
SEEDS_SLOW = range(1000, 61_000)

# ---------------------------------------------------------------------------------------------
# positions


@st.composite
def dm_position(draw):
    """A position in whole thousandths of a minute, and its text in one of the usual
    notations (degrees-decimal-minutes with symbols or spaces, decimal degrees, DMS)."""
    lat_k = draw(st.integers(-90 * 60_000, 90 * 60_000))
    lon_k = draw(st.integers(-180 * 60_000, 180 * 60_000 - 1))
    lat, lon = lat_k / 60_000, lon_k / 60_000

    def dm(k: int, width: int, pos: str, neg: str, style: int) -> str:
        hemi = pos if k >= 0 else neg
        k = abs(k)
        d, m = divmod(k, 60_000)
        if style == 0:
            return f"{d:0{width}d}°{m // 1000:02d}.{m % 1000:03d}'{hemi}"
        if style == 1:
            return f"{d} {m // 1000:02d}.{m % 1000:03d}{hemi}"
        if style == 2:
            return f"{hemi} {d} {m // 1000:02d}.{m % 1000:03d}"
        return f"{'-' if hemi == neg else ''}{k / 60_000:.9f}"

    style = draw(st.integers(0, 3))
    sep = draw(st.sampled_from([" ", "  ", ", "])) if style == 3 else draw(
        st.sampled_from([" ", "  ", " / ", ", "]))
    text = dm(lat_k, 2, "N", "S", style) + sep + dm(lon_k, 3, "E", "W", style)
    return text, lat, lon


@FAST
@given(dm_position())
def test_position_notations_read_back_exactly(case):
    text, lat, lon = case
    got_lat, got_lon = parse_position(text)
    # decimal degrees are printed with 9 places: 1e-9 deg (0.1 mm); dm is exact to rounding
    assert math.isclose(got_lat, lat, abs_tol=1e-9), (text, got_lat, lat)
    assert math.isclose(got_lon, lon, abs_tol=1e-9), (text, got_lon, lon)


def _check_position_text(text: str) -> None:
    try:
        lat, lon = parse_position(text)
    except PositionError as exc:
        msg = str(exc)
        assert msg and "\n" not in msg, msg
        return
    assert math.isfinite(lat) and math.isfinite(lon), (text, lat, lon)
    assert -90.0 <= lat <= 90.0 and -180.0 <= lon < 180.0, (text, lat, lon)


@FAST
@given(st.text(alphabet=st.characters(codec="utf-8"), max_size=40))
def test_position_from_any_text_is_a_position_or_a_position_error(text):
    _check_position_text(text)


@FAST
@given(dm_position(), st.randoms(use_true_random=False))
def test_position_mutated_is_a_position_or_a_position_error(case, rng):
    text = relkit.mutate(rng, case[0].encode("utf-8")).decode("utf-8", "replace")
    _check_position_text(text)
    for fn in (parse_lat, parse_lon):
        try:
            v = fn(text.split(" ")[0])
            assert math.isfinite(v)
        except PositionError:
            pass


# ---------------------------------------------------------------------------------------------
# zone time


@FAST
@given(st.datetimes(min_value=datetime(1900, 1, 2), max_value=datetime(2199, 12, 30)),
       st.integers(-12 * 60, 14 * 60).map(lambda m: m - m % 15))
def test_time_with_an_offset_reads_as_that_utc(naive, offset_min):
    naive = naive.replace(microsecond=0)
    sign = "+" if offset_min >= 0 else "-"
    text = naive.strftime("%Y-%m-%dT%H:%M:%S") + f"{sign}{abs(offset_min) // 60:02d}:" \
                                                  f"{abs(offset_min) % 60:02d}"
    got = parse_time_utc(text)
    # ISO 8601: local time = UTC + offset, so UTC = local - offset
    assert got == naive.replace(tzinfo=timezone.utc) - timedelta(minutes=offset_min)
    assert got.utcoffset() == timedelta(0)


def _check_time_text(text: str) -> None:
    try:
        got = parse_time_utc(text)
    except InputError as exc:
        assert str(exc) and "\n" not in str(exc)
        return
    assert got.tzinfo is not None and got.utcoffset() == timedelta(0), (text, got)


@FAST
@given(st.one_of(st.text(max_size=40), st.sampled_from(relkit.NASTY_VALUES)),
       st.randoms(use_true_random=False))
def test_time_from_any_text_is_utc_or_an_input_error(text, rng):
    _check_time_text(text)
    seed = rng.choice(["2026-05-01T06:00Z", "2026-05-01 06:00 ZD+3", "2026-05-01T06:00-03:30"])
    _check_time_text(relkit.mutate(rng, seed.encode()).decode("utf-8", "replace"))


# ---------------------------------------------------------------------------------------------
# NMEA 0183 lines (the reader under the import and the feed)

GOOD_LINES = relkit.sample_nmea_lines(12)


@st.composite
def nmea_log(draw):
    """A log of good sentences, some with one field replaced (checksum recomputed or not),
    some cut short, some of random text."""
    lines = []
    for _ in range(draw(st.integers(1, 30))):
        base = draw(st.sampled_from(GOOD_LINES))
        kind = draw(st.integers(0, 4))
        if kind == 0:
            lines.append(base)
        elif kind in (1, 2):
            fields = base[1:base.rfind("*")].split(",")
            i = draw(st.integers(0, len(fields) - 1))
            fields[i] = draw(st.one_of(st.sampled_from(relkit.NASTY_VALUES),
                                       st.text(max_size=12)))
            body = ",".join(fields)
            lines.append(relkit.nmea(body) if kind == 1 else f"${body}*{base[-2:]}")
        elif kind == 3:
            lines.append(base[:draw(st.integers(0, len(base)))])
        else:
            lines.append(draw(st.text(max_size=80)))
    return lines


def _check_nmea(lines: list[str]) -> None:
    # a line that holds a line break is more than one line to the reader
    text = "".join(ln.replace("\r", " ").replace("\n", " ") + "\r\n" for ln in lines)
    fixes, summary = read_fixes(io.StringIO(text), fmt="nmea")
    for fix in fixes:
        relkit.check_fix(fix)
    n = len(lines)
    for reason, places in summary.rejected_at.items():
        assert places and all(isinstance(p, int) and 1 <= p <= n for p in places), \
            (reason, places)


@settings(FAST, max_examples=150)
@given(nmea_log())
def test_nmea_lines_give_sane_fixes_and_counted_rejects(lines):
    try:
        _check_nmea(lines)
    except PassagelogError as exc:  # only a log whose first line is not NMEA is refused
        assert "<stdin>" in str(exc)


def test_nmea_sentence_with_valid_checksum_but_nasty_fields_is_rejected_by_line():
    # every field of every sentence kind, in turn, replaced by every nasty value
    count = 0
    for base in GOOD_LINES[:6]:
        fields = base[1:base.rfind("*")].split(",")
        for i in range(1, len(fields)):
            for value in relkit.NASTY_VALUES:
                mutated = list(fields)
                mutated[i] = value
                lines = [GOOD_LINES[0], relkit.nmea(",".join(mutated)), GOOD_LINES[6]]
                _check_nmea(lines)
                count += 1
    assert count > 1000


# ---------------------------------------------------------------------------------------------
# documents: generated by the writers, then read back


names = st.text(alphabet=st.characters(codec="utf-8", exclude_categories=("Cs",)), max_size=20)
coords = st.tuples(st.floats(-90, 90), st.floats(-180, 180, exclude_max=True))


@st.composite
def routes(draw):
    pts = draw(st.lists(st.tuples(names, coords), min_size=2, max_size=6))
    wps = tuple(Waypoint(n, lat, lon) for n, (lat, lon) in pts)
    legs = tuple(LegPlan(draw(st.sampled_from(["rhumb", "great-circle"])),
                         draw(st.none() | st.floats(0.1, 60)), notes=draw(names))
                 for _ in pts[1:])
    return Route(draw(names) or "r", wps, legs)


@settings(FAST, max_examples=150)
@given(routes(), st.sampled_from(["rtz", "gpx", "route-csv"]))
def test_written_route_reads_back_or_the_writer_refuses(tmp_path, route, fmt):
    path = tmp_path / f"gen.{fmt}"
    try:
        text = relkit.write_route_text(route, fmt)
    except PassagelogError:
        return  # the writer may refuse text the format cannot carry, with our error
    path.write_text(text, encoding="utf-8")
    try:
        [back] = read_routes(path)
    except PassagelogError as exc:
        # a name of control characters or blanks may be refused, but only by our error
        assert "gen." in str(exc)
        return
    assert [(w.lat, w.lon) for w in back.waypoints] == [(w.lat, w.lon)
                                                         for w in route.waypoints]
    assert [l.sailing for l in back.legs] == [l.sailing for l in route.legs]


# ---------------------------------------------------------------------------------------------
# documents: valid samples mutated (byte flips, truncation, fields, checksums, numbers, unicode)

DOCS = relkit.valid_documents()


def test_valid_samples_read_cleanly(tmp_path):
    for name, data in DOCS.items():
        p = tmp_path / name
        p.write_bytes(data)
        if name.startswith("route"):
            [route] = read_routes(p)
            assert len(route.waypoints) == 4
        else:
            fixes, summary = read_fixes(p)
            assert len(fixes) in (12, 40) and summary.lines_rejected == 0, summary


def run_mutations(tmp_path: Path, seeds) -> relkit.Tally:
    tally = relkit.Tally()
    names_ = sorted(DOCS)
    for seed in seeds:
        rng = random.Random(seed)
        name = rng.choice(names_)
        p = tmp_path / name
        p.write_bytes(relkit.mutate(rng, DOCS[name]))
        try:
            relkit.read_document(p, tally)
        except AssertionError as exc:
            raise AssertionError(f"seed {seed} ({name}): {exc}") from None
    return tally


def test_mutated_documents(tmp_path):
    tally = run_mutations(tmp_path, SEEDS_FAST)
    assert tally.tried == 2 * len(SEEDS_FAST)
    assert tally.accepted and tally.refused  # both paths were exercised


@pytest.mark.slow
def test_mutated_documents_long(tmp_path):
    tally = run_mutations(tmp_path, SEEDS_SLOW)
    print(f"\nmutated documents: {tally}")
    assert tally.tried == 2 * len(SEEDS_SLOW)


@pytest.mark.slow
@LONG
@given(dm_position(), st.randoms(use_true_random=False))
def test_position_mutated_long(case, rng):
    test_position_mutated_is_a_position_or_a_position_error.hypothesis.inner_test(case, rng)


@pytest.mark.slow
@LONG
@given(nmea_log())
def test_nmea_lines_long(lines):
    test_nmea_lines_give_sane_fixes_and_counted_rejects.hypothesis.inner_test(lines)


@pytest.mark.slow
@settings(max_examples=5_000, deadline=None, derandomize=True,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
@given(routes(), st.sampled_from(["rtz", "gpx", "route-csv"]))
def test_written_route_reads_back_long(tmp_path, route, fmt):
    test_written_route_reads_back_or_the_writer_refuses.hypothesis.inner_test(
        tmp_path, route, fmt)
