"""Tests of photorx.units: scale factors, engineering display, parsing of trade-written quantities.

Scale factors are checked against scipy.constants' SI prefixes (BIPM, *The International
System of Units*, 9th ed., 2019, Table 7). Exact comparisons (rtol=0) are used where the
result is a correctly rounded decimal; otherwise rtol is stated.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
import scipy.constants as sc
from hypothesis import given, settings
from hypothesis import strategies as st

from photorx import units as u
from photorx.errors import DesignError


# -- scale factors: SI prefixes from scipy.constants (BIPM SI Brochure 2019, Table 7) -------------
@pytest.mark.parametrize("name, expected", [
    ("cm", sc.centi), ("mm", sc.milli), ("um", sc.micro), ("nm", sc.nano), ("pm", sc.pico),
    ("uF", sc.micro), ("nF", sc.nano), ("pF", sc.pico), ("fF", sc.femto),
    ("kohm", sc.kilo), ("Mohm", sc.mega), ("Gohm", sc.giga),
    ("kHz", sc.kilo), ("MHz", sc.mega), ("GHz", sc.giga),
    ("ms", sc.milli), ("us", sc.micro), ("ns", sc.nano), ("ps", sc.pico), ("fs", sc.femto),
    ("mA", sc.milli), ("uA", sc.micro), ("nA", sc.nano), ("pA", sc.pico), ("fA", sc.femto),
    ("mV", sc.milli), ("uV", sc.micro), ("nV", sc.nano),
    ("mW", sc.milli), ("uW", sc.micro), ("nW", sc.nano), ("pW", sc.pico),
])
def test_prefix_factors_match_si(name, expected):
    assert getattr(u, name) == pytest.approx(expected, rel=1e-15)


def test_derived_factors():
    # 1 cm^-3 = (1e-2 m)^-3; 1 cm^2 = (1e-2 m)^2 (definition of the SI prefix centi, BIPM 2019)
    assert u.per_cm3 == pytest.approx(sc.centi ** -3, rel=1e-15)
    assert u.per_cm4 == pytest.approx(sc.centi ** -4, rel=1e-15)
    assert u.per_cm == pytest.approx(sc.centi ** -1, rel=1e-15)
    assert u.cm2 == pytest.approx(sc.centi ** 2, rel=1e-15)
    assert u.cm2_per_Vs == pytest.approx(sc.centi ** 2, rel=1e-15)
    assert u.V_per_cm == pytest.approx(1 / sc.centi, rel=1e-15)
    # user code reads like the trade: (100 um)^2 is 1e-8 m^2
    assert (100 * u.um) ** 2 == pytest.approx(1e-8, rel=1e-15)


# -- parse_quantity -------------------------------------------------------------------------------
@pytest.mark.parametrize("text, expected", [
    ("2.2 pF", 2.2e-12),
    ("10 kohm", 1e4),
    ("10 kΩ", 1e4),
    ("1 MΩ", 1e6),
    ("10 kOhm", 1e4),  # data-sheet spellings (common practice)
    ("1 MOhms", 1e6),
    ("-20 dbm", 1e-5),  # 1 mW * 10^(-20/10) (definition of dBm)
    ("4.7 Ohm", 4.7),
    ("1e15 cm^-3", 1e21),
    ("1e15 cm**-3", 1e21),
    ("1310 nm", 1310e-9),
    ("850nm", 850e-9),
    ("10 µm", 10e-6),
    ("10 μm", 10e-6),
    ("5 nV/rtHz", 5e-9),
    ("5 nV/√Hz", 5e-9),
    ("2 pA/sqrt(Hz)", 2e-12),
    ("200 MHz", 2e8),
    ("100 um^2", 100e-12),
    ("(100 um)^2", 1e-8),
    ("300 K", 300.0),
    ("0.5", 0.5),
    ("-3", -3.0),
])
def test_parse_quantity_trade_spellings(text, expected):
    # exact: prefixes are applied in decimal, so the result is the float nearest the written value
    assert u.parse_quantity(text) == pytest.approx(expected, rel=1e-15)


def test_parse_quantity_is_correctly_rounded():
    # 2.2 * 1e-12 is 2.2000000000000003e-12 in binary floating point; the written "2.2 pF"
    # must read back as the literal 2.2e-12 so that design files round-trip bit for bit
    assert u.parse_quantity("2.2 pF") == 2.2e-12
    assert u.parse_quantity("1310 nm") == 1.31e-6
    assert u.parse_quantity("1e15 cm^-3") == 1e21


def test_parse_infinity():
    # an ideal part: no shunt path (inf ohm), no 1/f noise
    assert u.parse_quantity("inf ohm", "ohm") == math.inf
    assert u.parse_quantity("-inf V") == -math.inf
    assert u.parse_quantity("inf") == math.inf


def test_parse_dbm():
    # P[W] = 1 mW * 10^(dBm/10) (definition of dBm, common practice)
    assert u.parse_quantity("-20 dBm") == pytest.approx(10e-6, rel=1e-14)
    assert u.parse_quantity("0 dBm", "W") == pytest.approx(1e-3, rel=1e-14)
    assert u.parse_quantity("-30 dBm", "uW") == pytest.approx(1.0, rel=1e-14)
    assert u.parse_quantity("3 dBm") == pytest.approx(1.9952623149688795e-3, rel=1e-14)


def test_parse_celsius():
    # 0 degC = 273.15 K (BIPM SI Brochure 2019, sec. 2.3.1)
    assert u.parse_quantity("26.85 degC", "K") == pytest.approx(300.0, rel=1e-12)


def test_parse_with_target_unit():
    assert u.parse_quantity("1310 nm", "um") == pytest.approx(1.31, rel=1e-15)
    assert u.parse_quantity("1e15 cm^-3", "m^-3") == 1e21
    assert u.parse_quantity("10 kohm", "ohm") == 1e4
    assert u.parse_quantity(2.5, "F") == 2.5  # numbers are SI already


@pytest.mark.parametrize("text, unit, words", [
    ("2.2 pF", "ohm", ["2.2 pF", "capacitance", "resistance", "ohm"]),
    ("-20 dBm", "F", ["-20 dBm", "power", "capacitance"]),
    ("5 pF", "m^-3", ["capacitance", "density"]),
    ("1310 nm", "Hz", ["length", "frequency"]),
    ("5 nV/rtHz", "A/rtHz", ["voltage noise density", "current noise density"]),
])
def test_parse_wrong_dimension(text, unit, words):
    with pytest.raises(DesignError) as err:
        u.parse_quantity(text, unit)
    for w in words:
        assert w in str(err.value)


@pytest.mark.parametrize("text", ["", "5 foo", "pF", "five pF", "1e15 cm^", "(5 pF"])
def test_parse_unreadable(text):
    with pytest.raises(DesignError, match="cannot read"):
        u.parse_quantity(text, "F")


@pytest.mark.parametrize("value", [None, True, [1, 2], {"a": 1}])
def test_parse_rejects_non_quantities(value):
    with pytest.raises(DesignError):
        u.parse_quantity(value)


@settings(max_examples=50, deadline=None)
@given(st.floats(min_value=1e-20, max_value=1e20, allow_nan=False, allow_infinity=False),
       st.sampled_from([("pF", 1e-12), ("kohm", 1e3), ("nm", 1e-9), ("MHz", 1e6), ("uW", 1e-6)]))
def test_parse_matches_decimal_literal(x, prefixed):
    # property: "<x> <prefix-unit>" reads as x times the SI prefix (BIPM 2019, Table 7)
    unit, factor = prefixed
    assert u.parse_quantity(f"{x!r} {unit}") == pytest.approx(x * factor, rel=1e-15)


# -- format_eng -----------------------------------------------------------------------------------
@pytest.mark.parametrize("value, unit, text", [
    (2.2e-12, "F", "2.2 pF"),
    (1e4, "ohm", "10 kohm"),
    (1.31e-6, "m", "1.31 um"),
    (-1e-3, "A", "-1 mA"),
    (0.0, "V", "0 V"),
    (999.96, "Hz", "1 kHz"),      # rounding carries into the next prefix
    (-999.96, "V", "-1 kV"),
    (123456.0, "Hz", "123 kHz"),
    (12.3456, "dB", "12.3 dB"),
    (60.0, "deg", "60 deg"),
    (0.85, "A/W", "0.85 A/W"),
    (1e21, "m^-3", "1e+21 m^-3"),   # no prefix on a powered unit
    (1e-10, "m^2", "1e-10 m^2"),
    (0.5, "", "0.5"),
    (2.46e18, "ohm", "2.46e+18 ohm"),  # beyond the largest prefix: scientific
    (3e-21, "A", "3e-21 A"),
])
def test_format_eng(value, unit, text):
    assert u.format_eng(value, unit) == text


def test_format_eng_nonfinite_and_digits():
    assert u.format_eng(float("nan"), "V") == "nan V"
    assert u.format_eng(float("inf"), "Hz") == "inf Hz"
    assert u.format_eng(2.2222e-12, "F", digits=2) == "2.2 pF"
    assert u.format_eng(np.float64(4.7e3), "ohm") == "4.7 kohm"


@settings(max_examples=50, deadline=None)
@given(st.floats(min_value=1e-17, max_value=1e17, allow_nan=False, allow_infinity=False),
       st.booleans())
def test_format_eng_parses_back(x, negative):
    # property: the displayed text reads back within the displayed precision (3 digits)
    v = -x if negative else x
    text = u.format_eng(v, "F")
    assert u.parse_quantity(text, "F") == pytest.approx(v, rel=5e-3)
    mantissa = float(text.split()[0])
    if 1e-18 <= x < 1e18 - 5e14:  # within the prefixes: a mantissa of 1 to 999
        assert 1 <= abs(mantissa) < 1000


def test_dbm_conversions():
    # 0 dBm = 1 mW, 10 dB per decade (definition, common practice)
    np.testing.assert_allclose(u.dbm_to_watt([0.0, -10.0, 10.0]), [1e-3, 1e-4, 1e-2], rtol=1e-14)
    assert u.watt_to_dbm(1e-5) == pytest.approx(-20.0, abs=1e-12)
    np.testing.assert_allclose(u.watt_to_dbm(np.array([1e-3, 1e-6])), [0.0, -30.0], atol=1e-12)
    with pytest.raises(DesignError, match="power"):
        u.watt_to_dbm(0.0)


# -- expressions that cannot hang or overflow the parser (issue 11) ------------------------------
@pytest.mark.parametrize("text, unit, words", [
    ("(9**9**9 um)^2", "m^2", ["exponent", "-6 to 6"]),     # would run for hours in pint
    ("(10**1000 um)^2", "m^2", ["exponent"]),
    ("(1 um)**(2**64)", "m^2", ["exponent"]),
    ("(1 um)^7", "m^7", ["exponent"]),
    ("(1 um)^(1/0)", "m", ["exponent"]),                    # a zero denominator (fuzz find)
    ("((((((1 um)))))) ", "m", ["parentheses"]),
    ("1 um * " * 20 + "1 um", None, ["longer than 80 characters"]),
    ("(1e200 um)^2", "m^2", ["overflows"]),
    ("1e300 dB", "", ["overflows"]),
    ("1e300 dBm", "W", ["dBm", "300"]),
    ("-1e300 dBm", "W", ["dBm", "300"]),
])
def test_hostile_expressions_are_refused_quickly(text, unit, words):
    import time

    t0 = time.perf_counter()
    with pytest.raises(DesignError) as err:
        u.parse_quantity(text, unit)
    # within a second even on a loaded machine (the parse of '9**9**9' alone never ends)
    assert time.perf_counter() - t0 < 1.0
    for w in words:
        assert w in str(err.value), (w, str(err.value))


@pytest.mark.parametrize("text, unit, expected", [
    # the exponents the trade writes still read (definition of the SI prefixes, BIPM 2019)
    ("1e15 cm^-3", "m^-3", 1e21), ("1e20 cm^-4", "m^-4", 1e28), ("(100 um)^2", "m^2", 1e-8),
    ("5 nV/rtHz", "V/rtHz", 5e-9), ("5 nV/Hz^0.5", "V/rtHz", 5e-9),
    ("(2 um)**(1/2)", "m^0.5", math.sqrt(2e-6)),
])
def test_ordinary_exponents_still_read(text, unit, expected):
    assert u.parse_quantity(text, unit) == pytest.approx(expected, rel=1e-12)


def test_huge_numbers_do_not_crash():
    # beyond Decimal's and float's exponent range: the float answer (inf, 0), never an
    # ArithmeticError or OverflowError
    assert u.parse_quantity("1e9999999 pF", "F") == math.inf
    assert u.parse_quantity("1e-9999999 pF", "F") == 0.0
    with pytest.raises(DesignError, match="beyond the range"):
        u.parse_quantity(10**400, "F")
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # no numpy/pint overflow warning either
        assert u.parse_quantity("-1e300 dB", "") == 0.0


# -- a bit rate is not a frequency (pint equates bit/s with Hz; photorx does not) ----------------
@pytest.mark.parametrize("text, unit, words", [
    ("1.2 bit/s", "Hz", ["bit rate", "frequency"]),
    ("10 Gbit/s", "Hz", ["bit rate"]),
    ("1 kcycle/s", "Hz", ["not a frequency"]),     # pint: 1 cycle = 2 pi rad, 6.28 kHz
    ("5 %/s", "Hz", ["not a frequency"]),
    ("10 GHz", "bit/s", ["not a bit rate", "bit/s"]),
])
def test_bit_rates_and_frequencies_do_not_mix(text, unit, words):
    with pytest.raises(DesignError) as err:
        u.parse_quantity(text, unit)
    for w in words:
        assert w in str(err.value)


def test_bit_rates_still_read():
    assert u.parse_quantity("1.25 Gbit/s", "bit/s") == 1.25e9
    assert u.parse_quantity("10 kbaud", "bit/s") == 1e4  # pint: 1 baud = 1 bit/s
    assert u.parse_quantity("2 GHz", "Hz") == 2e9
