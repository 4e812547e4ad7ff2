"""Tests of photorx.designfile: schema validation, exact writing, round trips, demo designs.

Quantities in design files are read with pint (an independent units library) through
photorx.units.parse_quantity; the expected SI values below are the written decimals times
their SI prefix (BIPM, *The International System of Units*, 9th ed., 2019, Table 7),
compared exactly (rtol=0) because the reader and the writer are correctly rounded.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import photorx.designfile as dfile
from photorx.designfile import SCHEMA, SECTIONS, format_quantity, read_design
from photorx.designschema import _CHECKS
from photorx.errors import DesignError
from photorx.units import parse_quantity

if True:  # tomllib on 3.11+, tomli before
    try:
        import tomllib
    except ImportError:  # pragma: no cover
        import tomli as tomllib

BASE = """
[design]
name = "test receiver"

[photodiode]

[photodiode.junction]
model = "pin"
material = "InGaAs"
area = "1250 um^2"
i_thickness = "2 um"
i_doping = "5e14 cm^-3"
p_doping = "1e18 cm^-3"
n_doping = "1e18 cm^-3"

[amplifier]
gbw = "10 GHz"
dc_gain = 3000
poles = ["20 GHz"]
voltage_noise = "3 nV/rtHz"
current_noise = "2 pA/rtHz"
input_capacitance = "0.3 pF"
output_swing = "1 V"

[feedback]
rf = "5 kohm"
cf = "40 fF"

[operating_point]
reverse_bias = "3.3 V"
wavelength = "1310 nm"
optical_power = "-20 dBm"
temperature = "300 K"

[signal]
bit_rate = "1.25 Gbit/s"
extinction_ratio = "10 dB"
target_ber = 1e-12

[post_filter]
kind = "bessel"
order = 4
cutoff = "940 MHz"

[limits]
max_bias = "20 V"
"""


def doc(text=BASE):
    return tomllib.loads(text)


def spec(text=BASE):
    return read_design(doc(text), "t.toml")


def error(text) -> str:
    with pytest.raises(DesignError) as err:
        read_design(doc(text), "t.toml")
    return str(err.value)


# -- reading: values in SI ------------------------------------------------------------------
def test_read_values_in_si():
    s = spec()
    j = s["photodiode.junction"]
    assert j["model"] == "pin" and j["material"] == "InGaAs"
    assert j["area"] == 1250e-12                 # 1250 um^2
    assert j["i_thickness"] == 2e-6
    assert j["i_doping"] == 5e20                 # 5e14 cm^-3 = 5e20 m^-3
    a = s["amplifier"]
    assert a["gbw"] == 1e10 and a["dc_gain"] == 3000 and a["poles"] == (2e10,)
    assert a["voltage_noise"] == 3e-9 and a["current_noise"] == 2e-12
    assert a["voltage_noise_corner"] == 0.0      # default
    assert s["feedback"] == {"rf": 5e3, "cf": 40e-15}
    op = s["operating_point"]
    assert op["wavelength"] == 1310e-9 and op["reverse_bias"] == 3.3
    # -20 dBm = 10 uW (definition of dBm, common practice)
    assert op["optical_power"] == pytest.approx(10e-6, rel=1e-15)
    assert op["background_power"] == 0.0
    sig = s["signal"]
    assert sig["bit_rate"] == 1.25e9
    assert sig["extinction_ratio"] == pytest.approx(10.0, rel=1e-15)  # 10 dB = 10x
    assert sig["modulation_depth"] == 1.0
    assert s["post_filter"] == {"kind": "bessel", "order": 4, "cutoff": 940e6}
    assert s["limits"] == {"max_bias": 20.0}     # max_dark_current left out (None default)


def test_temperature_in_celsius_and_numbers_as_si():
    s = spec(BASE.replace('temperature = "300 K"', 'temperature = "26.85 degC"')
             .replace('rf = "5 kohm"', "rf = 5000"))
    # 0 degC = 273.15 K (BIPM SI Brochure 2019, sec. 2.3.1)
    assert s["operating_point"]["temperature"] == pytest.approx(300.0, rel=1e-12)
    assert s["feedback"]["rf"] == 5000.0


# -- reading: errors name the key with its section and what was expected --------------------
@pytest.mark.parametrize("old, new, words", [
    # unknown key, with a suggestion
    ('rf = "5 kohm"', 'rf = "5 kohm"\nrff = "1 pF"', ["[feedback]", "unknown key 'rff'",
                                                      "did you mean 'rf'", "known keys"]),
    # missing key
    ('cf = "40 fF"', "", ["missing key [feedback] cf", "capacitance", "F"]),
    # wrong dimension
    ('cf = "40 fF"', 'cf = "40 kohm"', ["[feedback] cf", "resistance", "capacitance"]),
    ('wavelength = "1310 nm"', 'wavelength = "-20 dBm"', ["[operating_point] wavelength",
                                                          "power", "length"]),
    ('area = "1250 um^2"', 'area = "1250 um"', ["[photodiode.junction] area", "length", "area"]),
    # out of range
    ('cf = "40 fF"', 'cf = "-40 fF"', ["[feedback] cf", "-4e-14", ">= 0"]),
    ('wavelength = "1310 nm"', 'wavelength = "0 nm"', ["[operating_point] wavelength", "> 0"]),
    ("target_ber = 1e-12", "target_ber = 0.7", ["[signal] target_ber", "0.7", "< 0.5"]),
    ('extinction_ratio = "10 dB"', 'extinction_ratio = "-3 dB"', ["[signal] extinction_ratio",
                                                                  "> 1"]),
    # wrong types
    ('rf = "5 kohm"', "rf = true", ["[feedback] rf = True", "resistance"]),
    ("order = 4", "order = 4.5", ["[post_filter] order", "integer"]),
    ('model = "pin"', 'model = "pn"', ["[photodiode.junction] model", "'abrupt'", "'pin'"]),
    ("dc_gain = 3000", 'dc_gain = "3000 V"', ["[amplifier] dc_gain", "plain number"]),
    ('poles = ["20 GHz"]', 'poles = "20 GHz"', ["[amplifier] poles", "list"]),
    ('poles = ["20 GHz"]', 'poles = ["20 GHz", "2 ns"]', ["[amplifier] poles", "time",
                                                          "frequency"]),
    ('rf = "5 kohm"', 'rf = "five kohm"', ["[feedback] rf", "cannot read"]),
    # a key of another model
    ('i_thickness = "2 um"', 'i_thickness = "2 um"\nna = "1e19 cm^-3"',
     ["[photodiode.junction] na", "does not apply", "model = 'pin'", "abrupt"]),
    # unknown and missing sections, keys outside sections
    ("[limits]", "[limitz]", ["unknown section [limitz]", "did you mean 'limits'"]),
    ("[photodiode.junction]", "[photodiode.junction]\n[photodiode.lens]",
     ["unknown section [photodiode.lens]"]),
    ("[feedback]", "[feedbak]", ["unknown section [feedbak]"]),
])
def test_bad_input_messages(old, new, words):
    assert old in BASE
    message = error(BASE.replace(old, new, 1))
    assert message.startswith("t.toml: ")
    for w in words:
        assert w in message, (w, message)


def test_missing_section_and_stray_key():
    text = BASE.replace("[amplifier]", "[amplifier_x]")
    assert "unknown section [amplifier_x]" in error(text)
    without = "\n".join(line for line in BASE.splitlines() if not line.startswith("[feedback]")
                        and not line.startswith(("rf =", "cf =")))
    assert "missing section [feedback]" in error(without)
    assert "key 'x' outside any section" in error('x = 1\n' + BASE)


def test_missing_model_selector():
    assert "missing key [photodiode.junction] model" in error(BASE.replace('model = "pin"\n', ""))


def test_invalid_toml():
    with pytest.raises(DesignError, match="t.toml: not a valid TOML file"):
        dfile.loads_design("[feedback\nrf = 1", name="t.toml")


def test_missing_file(tmp_path):
    with pytest.raises(DesignError, match="no such design file"):
        dfile.load_design(tmp_path / "nope.toml")
    with pytest.raises(DesignError, match="is a directory"):
        dfile.load_design(tmp_path)
    with pytest.raises(DesignError, match="no demo design named 'x'"):
        dfile.demo_design_path("x")


# -- writing: exact decimal text ----------------------------------------------------------------
@pytest.mark.parametrize("value, unit, write, text", [
    (2.2e-12, "F", None, "2.2 pF"),
    (1e4, "ohm", None, "10 kohm"),
    (1.31e-6, "m", "nm", "1310 nm"),
    (1e21, "m^-3", "cm^-3", "1e15 cm^-3"),
    (1.25e-9, "m^2", "area", "1250 um^2"),
    (6.25e-6, "m^2", "area", "6.25 mm^2"),
    (5e-9, "V/rtHz", None, "5 nV/rtHz"),
    (1.25e9, "bit/s", None, "1.25 Gbit/s"),
    (0.0, "W", None, "0 W"),
    (math.inf, "ohm", None, "inf ohm"),
    (-3.3, "V", None, "-3.3 V"),
])
def test_format_quantity(value, unit, write, text):
    assert format_quantity(value, unit, write) == text
    assert parse_quantity(text, unit) == value


_UNITS = [("F", None), ("ohm", None), ("Hz", None), ("V/rtHz", None), ("A", None),
          ("m^-3", "cm^-3"), ("m", "nm"), ("m", "um"), ("m^2", "area"), ("m^-4", "cm^-4"),
          ("K", "K"), ("W", None)]


@settings(max_examples=50, deadline=None)
@given(st.floats(min_value=1e-30, max_value=1e30, allow_nan=False), st.booleans(),
       st.sampled_from(_UNITS))
def test_format_quantity_reads_back_exactly(x, negative, unit_write):
    # property: every float survives text and back bit for bit (rtol=0)
    unit, write = unit_write
    v = -x if negative else x
    assert parse_quantity(format_quantity(v, unit, write), unit) == v


# -- the schema table itself ---------------------------------------------------------------------
def test_schema_is_consistent():
    seen = set()
    for key in SCHEMA:
        assert key.section in SECTIONS, key
        assert key.doc, key
        assert key.check in _CHECKS or key.check == "", key
        ident = (key.section, key.name, key.when)
        assert ident not in seen, key
        seen.add(ident)
        if key.unit not in (None, ""):
            parse_quantity(f"1 {key.unit}", key.unit)   # pint knows every unit
        if key.example and key.kind == "quantity" and key.unit:
            parse_quantity(key.example, key.unit)      # the examples have the right dimension


def test_amplifier_keys_match_constructor():
    # the schema maps onto OpAmp's arguments exactly
    import dataclasses

    from photorx.circuit.amplifier import OpAmp

    fields = {f.name for f in dataclasses.fields(OpAmp)}
    assert {k.arg for k in SCHEMA if k.section == "amplifier"} == fields


def test_spec_arrays_cannot_be_written():
    with pytest.raises(DesignError, match="array"):
        dfile._scalar(np.array([1.0, 2.0]), "[operating_point] reverse_bias")
