"""Units: exact definitions and published conversion factors.

Sources:
* International nautical mile = 1852 m exactly (International Hydrographic Conference,
  Monaco 1929; BIPM, The International System of Units, 9th ed. 2019, Table 8).
* Knot = one nautical mile per hour = 1852/3600 m/s (BIPM SI Brochure, Table 8).
* International yard = 0.9144 m, foot = 0.3048 m, statute mile = 1760 yd = 1609.344 m
  (international yard and pound agreement, 1959).
* NIST Special Publication 811 (2008), Appendix B.8/B.9 factors: knot 5.144 444 E-01 m/s,
  mile per hour 4.4704 E-01 m/s, kilometer per hour 2.777 778 E-01 m/s, mile (international)
  1.609 344 E+03 m, nautical mile 1.852 E+03 m (from memory).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from passagelog.errors import InputError
from passagelog.nav import units
from passagelog.nav.units import (
    canonical_unit,
    convert,
    convert_distance,
    convert_speed,
    kn_to_mps,
    mps_to_kn,
    unit_kind,
)


def test_exact_definitions():
    assert units.NM_M == 1852.0  # IHC 1929 / BIPM Table 8
    assert units.SM_M == 1760 * 3 * 0.3048 == 1609.344  # 1959 agreement
    assert units.FT_M == 0.3048
    assert units.KN_MPS == 1852.0 / 3600.0  # BIPM Table 8


@pytest.mark.parametrize(
    "value, src, dst, expected, rel",
    [
        (1, "kn", "m/s", 5.144444e-01, 1e-6),  # NIST SP 811 App. B
        (1, "mph", "m/s", 4.4704e-01, 1e-15),  # NIST SP 811 App. B (exact)
        (1, "km/h", "m/s", 2.777778e-01, 1e-6),  # NIST SP 811 App. B
        (1, "sm", "m", 1.609344e03, 1e-15),  # NIST SP 811 App. B (exact)
        (1, "nm", "m", 1.852e03, 0),  # exact by definition
        (1, "kn", "km/h", 1.852, 0),  # 1852 m per hour, exact
        (100, "nm", "km", 185.2, 0),
        (1, "nm", "sm", 1852 / 1609.344, 1e-15),  # 1.150779448... statute miles
        (1, "sm", "nm", 1609.344 / 1852, 1e-15),  # 0.868976241...
        (1, "kn", "mph", 1852 / 1609.344, 1e-15),
        (6076.115485564304, "ft", "nm", 1.0, 1e-15),  # 1852 / 0.3048 ft
        (-2.5, "nm", "m", -4630.0, 0),  # signed values (an XTE to port)
        (0, "km", "nm", 0.0, 0),
    ],
)
def test_published_factors(value, src, dst, expected, rel):
    got = convert(value, src, dst)
    assert got == pytest.approx(expected, rel=rel, abs=0)


@pytest.mark.parametrize(
    "spelling, unit",
    [("NM", "nm"), ("nmi", "nm"), ("Nautical Miles", "nm"), ("kt", "kn"), ("kts", "kn"),
     ("knots", "kn"), ("KN", "kn"), ("kph", "km/h"), ("KM/H", "km/h"), ("mi", "sm"),
     ("statute  miles", "sm"), ("metres", "m"), ("feet", "ft"), (" m/s ", "m/s"),
     ("mi/h", "mph")],
)
def test_spellings(spelling, unit):
    assert canonical_unit(spelling) == unit


def test_kinds():
    assert unit_kind("knots") == "speed"
    assert unit_kind("NM") == "distance"


@pytest.mark.parametrize(
    "args, words",
    [
        ((1.0, "furlong", "m"), "unit 'furlong' is not known; distances: m, nm, km, sm, ft; "
                                "speeds: m/s, kn, km/h, mph"),
        ((1.0, "kn", "nm"), "cannot convert a speed (kn) to a distance (nm)"),
        ((1.0, "NM", "knots"), "cannot convert a distance (NM) to a speed (knots)"),
        ((float("nan"), "m", "nm"), "value nan to convert must be a finite number"),
        ((float("inf"), "m", "nm"), "must be a finite number"),
        (("1", "m", "nm"), "must be a finite number"),
    ],
)
def test_convert_rejects(args, words):
    with pytest.raises(InputError) as info:
        convert(*args)
    assert words in str(info.value)


def test_array_conversions_and_spellings():
    got = convert_distance(np.array([1.0, 2.0]), "NM", "m")
    assert got.tolist() == [1852.0, 3704.0]
    assert convert_speed(10.0, "knots", "m/s") == pytest.approx(10 * 1852 / 3600, rel=1e-15)
    with pytest.raises(InputError, match="distance unit 'kn' is not known"):
        convert_distance(1.0, "kn", "m")


def test_kn_mps():
    assert kn_to_mps(3600.0) == 1852.0
    assert mps_to_kn(1852.0) == 3600.0


finite = st.floats(min_value=-1e12, max_value=1e12, allow_nan=False)
distance_units = st.sampled_from(list(units.DISTANCE_UNITS_M))
speed_units = st.sampled_from(list(units.SPEED_UNITS_MPS))


@settings(max_examples=300, deadline=None)
@given(finite, distance_units, distance_units, distance_units)
def test_distance_chains_agree(value, a, b, c):
    direct = convert(value, a, c)
    via = convert(convert(value, a, b), b, c)
    assert via == pytest.approx(direct, rel=4e-16, abs=1e-300)
    # against the float factors (independent path through metres)
    assert direct == pytest.approx(value * units.DISTANCE_UNITS_M[a] / units.DISTANCE_UNITS_M[c],
                                   rel=4e-16, abs=1e-300)


@settings(max_examples=300, deadline=None)
@given(finite, speed_units, speed_units)
def test_speed_round_trip(value, a, b):
    back = convert(convert(value, a, b), b, a)
    assert back == pytest.approx(value, rel=4e-16, abs=1e-300)
    assert math.copysign(1, back) == math.copysign(1, value) or value == 0


def test_regression_underflow_keeps_sign():
    """Hypothesis found -5e-324 km/h -> m/s coming back as +0.0 (Fraction has no -0)."""
    assert math.copysign(1, convert(-5e-324, "km/h", "m/s")) == -1.0
    assert math.copysign(1, convert(-0.0, "m", "nm")) == -1.0
