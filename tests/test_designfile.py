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
    # unit slips: a bare number is SI, so these are farads, square metres and metres
    ('cf = "40 fF"', "cf = 40", ["[feedback] cf", "40 F", "implausibly large", "'0.2 pF'"]),
    ('area = "1250 um^2"', "area = 1250", ["[photodiode.junction] area", "1250 m^2",
                                           "plain number"]),
    ('i_thickness = "2 um"', 'i_thickness = "2"', ["[photodiode.junction] i_thickness",
                                                   "2 m", "at most 1 cm"]),
    ('optical_power = "-20 dBm"', 'optical_power = "-20 dBx"',
     ["[operating_point] optical_power", "dBx", "'-20 dBm'"]),
    ('wavelength = "1310 nm"', 'wavelength = "0 nm"', ["[operating_point] wavelength",
                                                       "10 nm to 100 um"]),
    # a bare number is SI: "1310" is 1310 m, and the message says how to write nanometres
    ('wavelength = "1310 nm"', "wavelength = 1310", ["[operating_point] wavelength",
                                                     "1310 m", "plain number", "'1310 nm'"]),
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
    # the schema maps onto OpAmp's arguments exactly, besides the keys read only on load
    # (gain points and the numbers of poles and zeros fitted to them)
    import dataclasses

    from photorx.circuit.amplifier import OpAmp

    fields = {f.name for f in dataclasses.fields(OpAmp)}
    load_only = {"gain_points", "fit_poles", "fit_zeros"}
    assert {k.arg for k in SCHEMA if k.section == "amplifier"} - load_only == fields


def test_spec_arrays_cannot_be_written():
    with pytest.raises(DesignError, match="array"):
        dfile._scalar(np.array([1.0, 2.0]), "[operating_point] reverse_bias")


# -- whole designs: build, round trip, constructor errors with the file's key ---------------------
@pytest.fixture(scope="module")
def demos():
    return {name: dfile.load_design(name) for name in dfile.DEMO_DESIGNS}


def test_demo_designs_load(demos):
    from photorx.analysis.receiver import Receiver

    for name, rx in demos.items():
        assert isinstance(rx, Receiver), name
    rx = demos["ingaas-pin-1310"]
    assert rx == dfile.demo_receiver() == dfile.load_design()
    # the file's values reach the objects unchanged (exact decimals, rtol=0)
    assert rx.tia.rf == 3e3 and rx.tia.cf == 60e-15 and rx.wavelength == 1310e-9
    assert rx.photodiode.junction.area == 5000e-12
    assert rx.photodiode.junction.material.name == "InGaAs"
    assert rx.post_filter.kind == "bessel" and rx.post_filter.cutoff == 1.2e9
    assert rx.extinction_ratio == pytest.approx(10.0, rel=1e-15)
    # the junction runs at the operating temperature
    photometer = demos["si-photometer"]
    assert photometer.photodiode.junction.temperature == photometer.temperature == 295.0


@pytest.mark.parametrize("name", list(dfile.DEMO_DESIGNS))
def test_round_trip_is_exact_and_text_stable(demos, name, tmp_path):
    rx = demos[name]
    path = dfile.save_design(rx, tmp_path / f"{name}.toml", name=name)
    again = dfile.load_design(path)
    assert again == rx
    text = path.read_text()
    assert dfile.dumps_design(again, name=name) == text
    assert dfile.dumps_design(dfile.loads_design(text), name=name) == text


def test_round_trip_of_changed_values(demos, tmp_path):
    # values with long binary expansions survive: the writer uses repr's digits
    import dataclasses

    from photorx.circuit.filters import PostFilter

    rx = demos["ingaas-pin-1310"]
    amp = dataclasses.replace(rx.tia.amp, gbw=1 / 3 * 1e10, poles=(2.2e10, 3.3e10))
    tia = dataclasses.replace(rx.tia, amp=amp, rf=4.7e3, cf=(0.1 + 0.2) * 1e-12)
    junction = dataclasses.replace(rx.photodiode.junction, temperature=310.0)
    pd_ = dataclasses.replace(rx.photodiode, junction=junction, series_resistance=12.5,
                              leakage_resistance=1e12)
    changed = dataclasses.replace(rx, tia=tia, photodiode=pd_, reverse_bias=-0.2,
                                  optical_power=1.2345678901234567e-6,
                                  post_filter=PostFilter("butterworth", 3, 9.9e8),
                                  max_dark_current=None, bit_rate=None)
    path = dfile.save_design(changed, tmp_path / "changed.toml")
    assert dfile.load_design(path) == changed
    text = path.read_text()
    assert "temperature = \"310 K\"" in text      # the junction's own temperature is kept
    assert "max_dark_current" not in text and "bit_rate" not in text


def test_datasheet_style_design_round_trips(tmp_path):
    text = BASE.replace(
        '''model = "pin"
material = "InGaAs"
area = "1250 um^2"
i_thickness = "2 um"
i_doping = "5e14 cm^-3"
p_doping = "1e18 cm^-3"
n_doping = "1e18 cm^-3"''', '''model = "parametric"
cj0 = "0.5 pF"
vj = "0.7 V"
m = 0.5''').replace("[photodiode]\n", '''[photodiode]
responsivity = [["1270 nm", "0.85 A/W"], ["1310 nm", "0.9 A/W"], ["1550 nm", "0.95 A/W"]]
dark_current = "0.5 nA"
dark_current_bias = "5 V"
intrinsic_bandwidth = "8 GHz"
''')
    rx = dfile.loads_design(text, "ds.toml")
    pd_ = rx.photodiode
    assert pd_.given_responsivity == ((1270e-9, 1310e-9, 1550e-9), (0.85, 0.9, 0.95))
    assert pd_.reference_dark_current == 0.5e-9 and pd_.intrinsic_bandwidth == 8e9
    path = dfile.save_design(rx, tmp_path / "ds.toml")
    assert dfile.load_design(path) == rx
    assert '["1310 nm", "0.9 A/W"]' in path.read_text().replace("\n    ", " ")


def test_template_is_the_default_demo():
    rx = dfile.loads_design(dfile.design_template(), "template.toml")
    assert rx == dfile.demo_receiver()


@pytest.mark.parametrize("old, new, words", [
    # constructor checks, restated with the file's section and key
    ('temperature = "300 K"', 'temperature = "5000 K"',
     ["[operating_point] temperature", "5000", "[50, 600]"]),
    ('material = "InGaAs"', 'material = "Unobtainium"',
     ["[photodiode.junction] material", "Unobtainium", "Si"]),
    ('i_doping = "5e14 cm^-3"', 'i_doping = "5e19 cm^-3"', ["[photodiode.junction] i_doping"]),
    ("order = 4", "order = 9", ["[post_filter] order", "1 to 6"]),
    ("[photodiode]\n", '[photodiode]\ndark_current = "1 nA"\n',
     ["[photodiode] dark_current_bias", "required with dark_current"]),
])
def test_constructor_errors_name_the_file_key(old, new, words):
    assert old in BASE
    with pytest.raises(DesignError) as err:
        dfile.loads_design(BASE.replace(old, new, 1), "t.toml")
    message = str(err.value)
    assert message.startswith("t.toml: [")
    for w in words:
        assert w in message, (w, message)


def test_parametric_junction_needs_responsivity():
    text = BASE.replace('model = "pin"',
                        'model = "parametric"\ncj0 = "1 pF"\nvj = "0.7 V"\nm = 0.5')
    text = "\n".join(line for line in text.splitlines()
                     if not line.startswith(("material", "area", "i_", "p_doping", "n_doping")))
    with pytest.raises(DesignError) as err:
        dfile.loads_design(text, "t.toml")
    # the constructor's argument (given_responsivity) is restated as the file key
    assert "[photodiode] responsivity is required" in str(err.value)
    assert "given_responsivity" not in str(err.value)


def test_array_receiver_cannot_be_saved(demos, tmp_path):
    from photorx.analysis.parameters import with_parameters

    rx = with_parameters(demos["ingaas-pin-1310"], reverse_bias=np.array([1.0, 2.0]))
    with pytest.raises(DesignError, match="reverse_bias is an array"):
        dfile.save_design(rx, tmp_path / "x.toml")
    assert not (tmp_path / "x.toml").exists()


def test_every_constructor_argument_has_a_schema_row():
    # meta-test: a new constructor argument must get a design-file key (or be structural)
    import dataclasses

    from photorx.analysis.receiver import Receiver
    from photorx.circuit.filters import PostFilter
    from photorx.circuit.tia import Tia
    from photorx.device import junction as jn
    from photorx.device.photodiode import Photodiode

    def args(cls):
        return {f.name for f in dataclasses.fields(cls) if f.init}

    def rows(*sections, model=None):
        return {k.arg for k in SCHEMA if k.section in sections
                and (not k.when or model in k.when) and k.name != "model"}

    assert args(Receiver) - {"photodiode", "tia", "post_filter"} == rows(
        "operating_point", "signal", "limits", "analysis")
    assert args(Photodiode) - {"junction"} == rows("photodiode") - {"kind"}
    # the avalanche photodiode on a junction: its own arguments are the avalanche-only rows
    # (structure, reflectance and series resistance belong to the SAM kind or the photodiode)
    from photorx.device.apd import AvalanchePhotodiode

    assert args(AvalanchePhotodiode) - {"photodiode", "structure", "reflectance",
                                        "series_resistance"} == \
        rows("photodiode", model="avalanche") - rows("photodiode")
    assert args(Tia) - {"amp"} == rows("feedback")
    assert args(PostFilter) == rows("post_filter")
    for model, cls in [("abrupt", jn.AbruptJunction), ("pin", jn.PinJunction),
                       ("graded", jn.LinearlyGradedJunction),
                       ("parametric", jn.ParametricJunction)]:
        assert args(cls) == rows("photodiode.junction", model=model), model


def test_design_name():
    assert dfile.design_name() == "Short-reach 1310 nm InGaAs PIN link receiver"
    assert dfile.design_name("si-pin-850") == "Silicon PIN receiver at 850 nm"
    assert dfile.design_name("/nonexistent.toml") == ""


def test_graded_junction_design_round_trips(tmp_path):
    text = BASE.replace('''model = "pin"
material = "InGaAs"
area = "1250 um^2"
i_thickness = "2 um"
i_doping = "5e14 cm^-3"
p_doping = "1e18 cm^-3"
n_doping = "1e18 cm^-3"''', '''model = "graded"
material = "Si"
area = "0.25 mm^2"
gradient = "1e20 cm^-4"''').replace('wavelength = "1310 nm"', 'wavelength = "850 nm"')
    rx = dfile.loads_design(text, "g.toml")
    assert type(rx.photodiode.junction).__name__ == "LinearlyGradedJunction"
    assert rx.photodiode.junction.gradient == 1e28      # 1e20 cm^-4 = 1e28 m^-4
    assert rx.photodiode.junction.area == 0.25e-6
    assert dfile.load_design(dfile.save_design(rx, tmp_path / "g.toml")) == rx


# -- implausible values refused at the key, with the key's valid range (issue 11) ----------------
@pytest.mark.parametrize("old, new, words", [
    # a bare number is SI: each of these is a unit slip, refused with the range and a hint
    ('voltage_noise = "3 nV/rtHz"', "voltage_noise = 3.5",
     ["[amplifier] voltage_noise", "3.5 V/rtHz", "<= 1 uV/rtHz", "plain number"]),
    ('current_noise = "2 pA/rtHz"', "current_noise = 2",
     ["[amplifier] current_noise", "<= 1 nA/rtHz", "plain number"]),
    ('gbw = "10 GHz"', "gbw = 10", ["[amplifier] gbw", ">= 1 kHz", "plain number"]),
    ('gbw = "10 GHz"', 'gbw = "10"', ["[amplifier] gbw", ">= 1 kHz", "plain number"]),
    ('cutoff = "940 MHz"', "cutoff = 9.4e15", ["[post_filter] cutoff", "<= 1 THz"]),
    ('optical_power = "-20 dBm"', "optical_power = 10",
     ["[operating_point] optical_power", "<= 1 W", "plain number"]),
    ('bit_rate = "1.25 Gbit/s"', "bit_rate = 0.5", ["[signal] bit_rate", ">= 1 bit/s"]),
    ('max_bias = "20 V"', "max_bias = 1e6", ["[limits] max_bias", "<= 10 kV"]),
    # values that overflow later stages: refused here, never as an internal figure
    ('optical_power = "-20 dBm"', 'optical_power = "1e30 W"',
     ["[operating_point] optical_power", "1e+30 W", "<= 1 W"]),
    ('optical_power = "-20 dBm"', 'optical_power = "1e300 dBm"',
     ["[operating_point] optical_power", "dBm"]),
    ('area = "1250 um^2"', 'area = "1e-300 mm^2"',
     ["[photodiode.junction] area", ">= 1 um^2 and <= 100 cm^2"]),
    ("[photodiode]\n", '[photodiode]\nlifetime = "1e300 s"\n',
     ["[photodiode] lifetime", ">= 1 fs and <= 1 s"]),
    ("[photodiode]\n", '[photodiode]\ngeneration_lifetime = "1e-30 s"\n',
     ["[photodiode] generation_lifetime", ">= 1 fs"]),
    ('i_doping = "5e14 cm^-3"', 'i_doping = "1e40 cm^-3"',
     ["[photodiode.junction] i_doping", "<= 1e+22 cm^-3"]),
    ('rf = "5 kohm"', 'rf = "inf ohm"', ["[feedback] rf", "inf ohm", "<= 1 Pohm"]),
    ('rf = "5 kohm"', 'rf = "1e400 ohm"', ["[feedback] rf", "inf"]),
    ('reverse_bias = "3.3 V"', 'reverse_bias = "-inf V"', ["[operating_point] reverse_bias"]),
    ('extinction_ratio = "10 dB"', 'extinction_ratio = "1e300 dB"',
     ["[signal] extinction_ratio", "decibels", "300 dB"]),
    # a bit rate is not a frequency, and the other way round
    ('cutoff = "940 MHz"', 'cutoff = "1.2 bit/s"', ["[post_filter] cutoff", "bit rate"]),
    ('bit_rate = "1.25 Gbit/s"', 'bit_rate = "1.25 GHz"', ["[signal] bit_rate", "bit/s"]),
    # expressions that would hang or overflow the units parser
    ('area = "1250 um^2"', 'area = "(9**9**9 um)^2"', ["[photodiode.junction] area",
                                                       "exponent"]),
    ('area = "1250 um^2"', 'area = "(10**1000 um)^2"', ["[photodiode.junction] area",
                                                        "exponent"]),
])
def test_implausible_values_are_refused_at_the_key(old, new, words):
    assert old in BASE
    message = error(BASE.replace(old, new, 1))
    assert message.startswith("t.toml: ")
    assert "\n" not in message
    for w in words:
        assert w in message, (w, message)


def test_infinity_only_where_the_range_admits_it():
    # an open leakage path and a thick substrate are infinite by nature (Key rows "[..inf]")
    s = spec(BASE.replace("[photodiode]\n", '[photodiode]\nleakage_resistance = "inf ohm"\n'
                          'absorber_thickness = "inf um"\n'))
    assert s["photodiode"]["leakage_resistance"] == math.inf
    assert s["photodiode"]["absorber_thickness"] == math.inf
    assert s["signal"]["extinction_ratio"] == 10.0  # 10 dB, exactly


def test_every_dimensioned_key_has_a_range():
    # the ranges live in the Key rows, so the template and the errors show them
    for key in SCHEMA:
        if key.kind in ("quantity", "list", "table") and key.unit and \
                key.name != "temperature":  # temperatures: the constructors' [50, 600] K
            assert key.check, key
    template = " ".join(dfile.design_template().replace("#", " ").split())  # unwrapped
    assert "(>= 1 kHz and <= 1 THz)" in template          # gbw
    assert "(>= 0 V/rtHz and <= 1 uV/rtHz)" in template   # voltage_noise


@pytest.mark.parametrize("depth", [17, 1000, 100_000])
def test_deep_nesting_names_the_key_quickly(depth):
    import time

    text = BASE.replace("dc_gain = 3000", "dc_gain = " + "[" * depth + "1" + "]" * depth)
    t0 = time.perf_counter()
    with pytest.raises(DesignError) as err:
        dfile.loads_design(text, "t.toml")
    assert time.perf_counter() - t0 < 1.0
    assert "[amplifier] dc_gain" in str(err.value) and "nested deeper" in str(err.value)


def test_nesting_scan_ignores_strings_and_comments():
    text = BASE.replace('name = "test receiver"',
                        'name = "[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[[["  # [[[[[[[[[[[[[[[[[[[[[[[[')
    assert dfile.loads_design(text, "t.toml").wavelength == 1310e-9


def test_deep_value_in_message_is_shortened():
    text = BASE.replace("dc_gain = 3000", "dc_gain = " + "[" * 16 + "1" + "]" * 16)
    with pytest.raises(DesignError) as err:
        dfile.loads_design(text, "t.toml")
    assert len(str(err.value)) < 300 and "[amplifier] dc_gain" in str(err.value)


def test_integer_of_thousands_of_digits_names_the_key():
    text = BASE.replace("dc_gain = 3000", "dc_gain = " + "1" * 5000)
    with pytest.raises(DesignError, match="dc_gain: an integer of more than 1,000 digits"):
        dfile.loads_design(text, "t.toml")
    # within TOML's reach but beyond a float
    text = BASE.replace("dc_gain = 3000", "dc_gain = " + "1" * 400)
    with pytest.raises(DesignError, match=r"\[amplifier\] dc_gain.*beyond the range"):
        dfile.loads_design(text, "t.toml")


# -- tabulated amplifier noise curves -----------------------------------------------------------
_CURVES = ('voltage_noise_curve = [["10 Hz", "30 nV/rtHz"], ["1 kHz", "6 nV/rtHz"], '
           '["100 kHz", "3 nV/rtHz"]]\n'
           'current_noise_curve = [["10 Hz", "20 pA/rtHz"], ["1 kHz", "2 pA/rtHz"]]\n')


def test_noise_curves_load_and_round_trip(tmp_path):
    text = BASE.replace('output_swing = "1 V"\n', 'output_swing = "1 V"\n' + _CURVES)
    rx = dfile.loads_design(text, "c.toml")
    amp = rx.tia.amp
    # exact decimals (rtol=0), the white levels as written
    assert amp.voltage_noise_curve.frequencies == (10.0, 1e3, 1e5)
    assert amp.voltage_noise_curve.densities == (30e-9, 6e-9, 3e-9)
    assert amp.current_noise_curve.densities == (20e-12, 2e-12)
    assert amp.current_noise_curve.unit == "A/rtHz"
    assert amp.voltage_noise_density(10.0) == pytest.approx(30e-9, rel=1e-12)
    path = dfile.save_design(rx, tmp_path / "c.toml")
    assert dfile.load_design(path) == rx
    written = path.read_text()
    assert '["1 kHz", "6 nV/rtHz"]' in written and '["10 Hz", "20 pA/rtHz"]' in written
    # without curves nothing about them is written
    assert "noise_curve" not in dfile.dumps_design(dfile.loads_design(BASE, "b.toml"))


def test_template_shows_a_noise_curve_that_loads():
    lines = [ln[2:] for ln in dfile.design_template().splitlines()
             if ln.startswith(("# voltage_noise_curve =", "# current_noise_curve ="))]
    assert len(lines) == 2
    text = BASE.replace('output_swing = "1 V"\n', 'output_swing = "1 V"\n' + "\n".join(lines)
                        + "\n")
    amp = dfile.loads_design(text, "t.toml").tia.amp
    assert len(amp.voltage_noise_curve.frequencies) >= 2
    assert len(amp.current_noise_curve.frequencies) >= 2


@pytest.mark.parametrize("line, words", [
    ('voltage_noise_curve = "5 nV/rtHz"', ["[amplifier] voltage_noise_curve", "[frequency, density]"]),
    ('voltage_noise_curve = [["10 Hz", "5 nV/rtHz"]]', ["at least two"]),
    ('voltage_noise_curve = [["10 Hz"], ["1 kHz", "5 nV/rtHz"]]', ["pairs"]),
    ('voltage_noise_curve = [["10 Hz", "5 nA/rtHz"], ["1 kHz", "5 nV/rtHz"]]',
     ["[amplifier] voltage_noise_curve", "V/rtHz"]),
    ('voltage_noise_curve = [["10 m", "5 nV/rtHz"], ["1 kHz", "5 nV/rtHz"]]',
     ["[amplifier] voltage_noise_curve"]),
    ('voltage_noise_curve = [["10 Hz", "5 uV/rtHz"], ["1 kHz", "5 nV/rtHz"]]',
     ["[amplifier] voltage_noise_curve", "out of range", "1 uV/rtHz"]),
    ('voltage_noise_curve = [["10 Hz", "0 nV/rtHz"], ["1 kHz", "5 nV/rtHz"]]',
     ["[amplifier] voltage_noise_curve", "out of range"]),
    ('voltage_noise_curve = [["1 kHz", "5 nV/rtHz"], ["10 Hz", "9 nV/rtHz"]]',
     ["[amplifier] voltage_noise_curve", "10 Hz after 1000 Hz", "strictly increasing"]),
    ('voltage_noise_curve = [["1 kHz", "5 nV/rtHz"], ["1 kHz", "9 nV/rtHz"]]',
     ["[amplifier] voltage_noise_curve", "strictly increasing"]),
    (('voltage_noise_curve = [["10 Hz", "9 nV/rtHz"], ["1 kHz", "5 nV/rtHz"]]\n'
      'voltage_noise_corner = "1 kHz"'), ["[amplifier] voltage_noise_corner", "curve"]),
    ('current_noise_curve = [["10 Hz", "9 nV/rtHz"], ["1 kHz", "5 nV/rtHz"]]',
     ["[amplifier] current_noise_curve", "A/rtHz"]),
])
def test_bad_noise_curves_name_the_key(line, words):
    text = BASE.replace('output_swing = "1 V"\n', f'output_swing = "1 V"\n{line}\n')
    with pytest.raises(DesignError) as err:
        dfile.loads_design(text, "t.toml")
    for w in words:
        assert w in str(err.value), (w, str(err.value))
