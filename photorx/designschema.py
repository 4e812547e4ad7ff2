"""The design-file schema: one declarative row per key, and validation of a parsed document.

:data:`SCHEMA` lists every key of a design file with its section, SI unit, default,
constructor argument, range check and help text; :func:`read_design` turns a parsed TOML
document into SI values, raising :class:`~photorx.errors.DesignError` for unknown sections
or keys, missing keys, wrong dimensions and out-of-range values, each naming the key with
its section path (``[photodiode.junction] area``) and what was expected. A new parameter
is one new :class:`Key` row. :mod:`photorx.designfile` reads, writes and builds receivers
from it.
"""

from __future__ import annotations

import difflib
import math
import re
import reprlib
from dataclasses import dataclass

from .errors import DesignError
from .units import _dimension_name, format_eng, parse_quantity

__all__ = ["Key", "SCHEMA", "SECTIONS", "STUDY_SECTIONS", "REQUIRED", "OMIT", "read_design",
           "section_keys"]

REQUIRED = "<required>"
#: Default of keys whose absence leaves the constructor's own default in force; such keys
#: are written only when the design's value differs from that default.
OMIT = "<constructor default>"


@dataclass(frozen=True)
class Key:
    """One row of the design-file schema.

    Parameters
    ----------
    section : str
        Dotted section path, e.g. ``"photodiode.junction"``; one of :data:`SECTIONS`.
    name : str
        Key as written in the file.
    unit : str or None
        SI unit of the value (pint syntax): a quantity string is converted to it and a
        quantity of another dimension is an error. ``""`` (default) for a plain number,
        ``None`` for text.
    default : object
        Value used when the key is absent; :data:`REQUIRED` (default) makes it mandatory;
        ``None`` makes it optional with no value; :data:`OMIT` leaves the constructor's default.
    argument : str or None
        Constructor argument; default ``None`` means ``name``.
    write : str or None
        Unit the value is written in (``"nm"``, ``"cm^-3"``, ``"area"`` for um^2 or mm^2);
        None (default) picks an engineering prefix of ``unit``.
    check : str
        Valid range of the SI value: an interval ``"[1e-12..1e-2]"`` (brackets inclusive,
        parentheses exclusive; ``"[1..inf]"`` also admits infinity, any other bound
        refuses it), a named check (``">0"``, ``">=0"``, ``">1"``, ``"0..1"``, ``"(0..1]"``,
        ``"(0..1)"``, ``"(0..0.5)"``, ``"optical"`` = 10 nm to 100 um) or ``""`` (default,
        no check). Errors and the template show it.
    kind : str
        ``"quantity"`` (default), ``"text"``, ``"integer"``, ``"list"`` (of quantities),
        ``"ratio"`` (a plain number or decibels, ``"10 dB"``), ``"table"`` (a quantity, or
        a list of ``[wavelength, value]`` pairs), ``"curve"`` (a list of
        ``[frequency, value]`` pairs, read as ``(frequencies, values)``) or ``"points"`` (a
        list of ``[frequency, magnitude, phase]`` rows: Hz, dB, deg).
    when : tuple of str
        The key applies only when the section's selector (``model`` or ``kind``) takes one
        of these values; empty (default) = always.
    choices : tuple of str
        Allowed values of a text key; empty (default) = any text.
    doc : str
        Help text for the template and for error messages; default ``""``.
    example : str
        Example value shown in messages and commented template lines; default ``""``.
    """

    section: str
    name: str
    unit: str | None = ""
    default: object = REQUIRED
    argument: str | None = None
    write: str | None = None
    check: str = ""
    kind: str = "quantity"
    when: tuple = ()
    choices: tuple = ()
    doc: str = ""
    example: str = ""

    @property
    def arg(self) -> str:
        return self.argument or self.name

    @property
    def where(self) -> str:
        return f"[{self.section}] {self.name}"


_JM = ("abrupt", "pin", "graded", "parametric")
_PHYSICAL = ("abrupt", "pin", "graded")

#: The design-file schema: one row per key. Order is the order of written files.
SCHEMA: tuple[Key, ...] = (
    # -- free text ----------------------------------------------------------------------------
    Key("design", "name", None, "", kind="text", doc="Short name of the design."),
    Key("design", "description", None, "", kind="text", doc="What the design is for."),
    # -- photodiode junction -------------------------------------------------------------------
    Key("photodiode.junction", "model", None, REQUIRED, kind="text", choices=_JM,
        doc="Junction model: abrupt (step), pin, graded (linearly graded) or parametric "
            "(Cj0/(1+Vr/Vj)^m, for datasheet numbers).", example="pin"),
    Key("photodiode.junction", "material", None, REQUIRED, kind="text", when=_PHYSICAL,
        doc="Semiconductor: Si, Ge, GaAs, InP or InGaAs (In0.53Ga0.47As).", example="Si"),
    Key("photodiode.junction", "area", "m^2", REQUIRED, write="area", check="[1e-12..1e-2]",
        when=_PHYSICAL, doc="Junction (active) area.", example="(100 um)^2"),
    Key("photodiode.junction", "na", "m^-3", REQUIRED, write="cm^-3", check="[1e14..1e28]",
        when=("abrupt",), doc="Acceptor doping of the p side.", example="1e19 cm^-3"),
    Key("photodiode.junction", "nd", "m^-3", REQUIRED, write="cm^-3", check="[1e14..1e28]",
        when=("abrupt",), doc="Donor doping of the n side.", example="1e15 cm^-3"),
    Key("photodiode.junction", "i_thickness", "m", REQUIRED, write="um", check="[1e-9..1e-2]",
        when=("pin",), doc="Thickness of the intrinsic (absorbing) layer.", example="2 um"),
    Key("photodiode.junction", "i_doping", "m^-3", REQUIRED, write="cm^-3", check="[1e14..1e28]",
        when=("pin",), doc="Residual doping of the intrinsic layer.", example="1e14 cm^-3"),
    Key("photodiode.junction", "p_doping", "m^-3", REQUIRED, write="cm^-3", check="[1e14..1e28]",
        when=("pin",), doc="Doping of the p contact layer.", example="1e19 cm^-3"),
    Key("photodiode.junction", "n_doping", "m^-3", REQUIRED, write="cm^-3", check="[1e14..1e28]",
        when=("pin",), doc="Doping of the n contact layer.", example="1e19 cm^-3"),
    Key("photodiode.junction", "gradient", "m^-4", REQUIRED, write="cm^-4", check="[1e20..1e36]",
        when=("graded",), doc="Net doping gradient.", example="1e20 cm^-4"),
    Key("photodiode.junction", "cj0", "F", REQUIRED, check="(0..1e-6]", when=("parametric",),
        doc="Zero-bias junction capacitance.", example="1 pF"),
    Key("photodiode.junction", "vj", "V", REQUIRED, check="(0..10]", when=("parametric",),
        doc="Junction potential.", example="0.7 V"),
    Key("photodiode.junction", "m", "", REQUIRED, when=("parametric",), check="[0..2]",
        doc="Grading coefficient, 0 to 2 (0.5 abrupt, 1/3 graded, 0 fixed capacitance).",
        example="0.5"),
    Key("photodiode.junction", "fc", "", 0.5, when=("parametric",), check="[0..0.95]",
        doc="Forward-bias linearisation point as a fraction of vj, 0 to 0.95.", example="0.5"),
    Key("photodiode.junction", "temperature", "K", None, write="K", check=">0", when=_PHYSICAL,
        doc="Junction temperature when it differs from the operating point's.",
        example="300 K"),
    # -- photodiode (beyond its junction); absent keys keep the Photodiode defaults -----------
    Key("photodiode", "responsivity", "A/W", OMIT, argument="given_responsivity", write="A/W",
        kind="table", check="[0..10]",
        doc="Given responsivity instead of the absorption model: a number, or a table of "
            "[wavelength, responsivity] pairs (required with the parametric junction).",
        example="0.9 A/W"),
    Key("photodiode", "reflectance", "", OMIT, check="0..1",
        doc="Front power reflectance (default: bare surface of the material).",
        example="0.03"),
    Key("photodiode", "top_thickness", "m", OMIT, write="um", check="[0..1e-2]",
        doc="Undepleted absorbing layer above the depletion layer (default 0.3 um; 0 for a "
            "transparent window).", example="0.2 um"),
    Key("photodiode", "absorber_thickness", "m", OMIT, write="um", check="[1e-9..inf]",
        doc="Absorbing material below the top layer (default inf: thick substrate).",
        example="2 um"),
    Key("photodiode", "top_diffusion_length", "m", OMIT, write="um", check="[1e-9..1e-2]",
        doc="Minority-carrier diffusion length in the top layer (default 1 um).",
        example="1 um"),
    Key("photodiode", "lifetime", "s", OMIT, check="[1e-15..1]",
        doc="Minority-carrier lifetime in the undepleted bottom layer (default by material).",
        example="1 us"),
    Key("photodiode", "generation_lifetime", "s", OMIT, check="[1e-15..1]",
        doc="Generation lifetime of the depletion layer (default by material).",
        example="1 ms"),
    Key("photodiode", "leakage_resistance", "ohm", OMIT, check="[1..inf]",
        doc="Ohmic surface leakage resistance (default inf).", example="100 Gohm"),
    Key("photodiode", "series_resistance", "ohm", OMIT, check="[0..1e6]",
        doc="Series resistance (default 10 ohm).", example="10 ohm"),
    Key("photodiode", "package_capacitance", "F", OMIT, check="[0..1e-9]",
        doc="Package and pad capacitance in parallel with the junction (default 0).",
        example="0.1 pF"),
    Key("photodiode", "illuminated_side", None, OMIT, kind="text", choices=("p", "n"),
        doc="Doping type of the illuminated top layer (default p, p-on-n).", example="p"),
    Key("photodiode", "intrinsic_bandwidth", "Hz", OMIT, check="[1..1e13]",
        doc="Given intrinsic (transit) bandwidth replacing the transit model.",
        example="5 GHz"),
    Key("photodiode", "dark_current", "A", OMIT, argument="reference_dark_current",
        check="[1e-18..1e-2]",
        doc="Measured dark current at dark_current_bias (replaces the dark-current model).",
        example="1 nA"),
    Key("photodiode", "dark_current_bias", "V", OMIT, argument="reference_bias", check="[0..1e4]",
        doc="Reverse bias of the measured dark current.", example="5 V"),
    Key("photodiode", "shunt_resistance", "ohm", OMIT, argument="zero_bias_resistance",
        check="[1..inf]", doc="Measured zero-bias shunt resistance R0.", example="1 Gohm"),
    Key("photodiode", "coating_index", "", OMIT, check="[1..5]",
        doc="Index of a single-layer anti-reflection coating (default none: bare surface).",
        example="1.9"),
    Key("photodiode", "coating_thickness", "m", OMIT, write="nm", check="[0..1e-5]",
        doc="Coating thickness (default quarter-wave at coating_wavelength).", example="110 nm"),
    Key("photodiode", "coating_wavelength", "m", OMIT, write="nm", check="optical",
        doc="Design wavelength of the quarter-wave coating.", example="850 nm"),
    Key("photodiode", "reference_temperature", "K", OMIT, write="K", check="[50..600]",
        doc="Temperature of the datasheet values (parametric junction; default 300 K).",
        example="298 K"),
    Key("photodiode", "band_gap", "eV", OMIT, check="[0.1..10]",
        doc="Band gap for rescaling datasheet values with temperature.", example="1.12 eV"),
    # -- avalanche photodiode: the junction above multiplies (Si or InP, abrupt or pin) -------
    Key("photodiode", "kind", None, "photodiode", kind="text", choices=("photodiode", "avalanche"),
        doc="photodiode (no gain) or avalanche: the junction's own field multiplies the "
            "carriers (McIntyre gain; Si or InP, abrupt or pin junction). APD bias supplies "
            "run at tens to hundreds of volts: limit their current.", example="avalanche"),
    Key("photodiode", "injection", None, OMIT, kind="text", choices=("electron", "hole"),
        when=("avalanche",),
        doc="Carrier that enters the multiplier (default electron: p-on-n lit from the p side).",
        example="electron"),
    Key("photodiode", "surface_dark_current", "A", OMIT, check="[0..1e-2]", when=("avalanche",),
        doc="Unmultiplied (surface) dark current I_ds (default 0).", example="100 pA"),
    Key("photodiode", "bulk_dark_current", "A", None, check="[0..1e-2]", when=("avalanche",),
        doc="Primary bulk dark current I_dm that the gain multiplies (default: the "
            "photodiode's dark-current model).", example="1 pA"),
    Key("photodiode", "saturation_velocity", "m/s", OMIT, check="[1e3..1e6]", when=("avalanche",),
        doc="Carrier velocity for the transit and avalanche build-up times (default 1e5 m/s).",
        example="1e5 m/s"),
    # -- amplifier -----------------------------------------------------------------------------
    Key("amplifier", "gbw", "Hz", None, check="[1e3..1e12]",
        doc="Gain-bandwidth product (required unless gain_points are given).",
        example="1 GHz"),
    Key("amplifier", "dc_gain", "", OMIT, check="[1..1e10]",
        doc="DC open-loop gain [V/V] (default 1e5).", example="1e5"),
    Key("amplifier", "poles", "Hz", (), kind="list", check="[1e3..1e13]",
        doc="Extra poles beyond the dominant one.", example='["3 GHz"]'),
    Key("amplifier", "zeros", "Hz", OMIT, kind="list", check="[1e3..1e13]",
        doc="Real zeros of the open-loop gain (at most as many as the extra poles).",
        example='["1.5 GHz"]'),
    Key("amplifier", "gain_points", None, None, kind="points",
        doc="Data-sheet open-loop gain as [frequency, magnitude, phase] rows, fitted on load "
            "to gbw, dc_gain and fit_poles extra poles and fit_zeros zeros (then leave "
            "those four keys out; files written back hold the fitted values).",
        example='[["100 Hz", "100 dB", "-6 deg"], ["10 kHz", "80 dB", "-84 deg"], '
                '["1 MHz", "40 dB", "-90 deg"], ["100 MHz", "-0.5 dB", "-108 deg"], '
                '["1 GHz", "-30.8 dB", "-163 deg"]]'),
    Key("amplifier", "fit_poles", None, None, kind="integer",
        doc="Extra real poles fitted to gain_points (0 to 6; default 0).", example="1"),
    Key("amplifier", "fit_zeros", None, None, kind="integer",
        doc="Real zeros fitted to gain_points (at most fit_poles; default 0).", example="0"),
    Key("amplifier", "voltage_noise", "V/rtHz", REQUIRED, check="[0..1e-6]",
        doc="White input voltage noise density.", example="5 nV/rtHz"),
    Key("amplifier", "current_noise", "A/rtHz", REQUIRED, check="[0..1e-9]",
        doc="White input current noise density.", example="2 pA/rtHz"),
    Key("amplifier", "voltage_noise_corner", "Hz", 0.0, check="[0..1e9]",
        doc="1/f corner of the voltage noise (0 = none).", example="10 kHz"),
    Key("amplifier", "current_noise_corner", "Hz", 0.0, check="[0..1e9]",
        doc="1/f corner of the current noise (0 = none).", example="1 kHz"),
    Key("amplifier", "input_capacitance", "F", 0.0, check="[0..1e-9]",
        doc="Common-mode plus differential input capacitance.", example="1 pF"),
    Key("amplifier", "output_swing", "V", 2.0, check="(0..1000]",
        doc="Largest output magnitude before clipping.", example="1.5 V"),
    Key("amplifier", "voltage_noise_curve", "V/rtHz", None, kind="curve", check="(0..1e-6]",
        doc="Voltage noise density read off the data sheet, interpolated log-log (the "
            "first segment's slope continues below, the last value holds above); "
            "voltage_noise scales it to its white level (write the last density).",
        example='[["10 Hz", "30 nV/rtHz"], ["1 kHz", "6 nV/rtHz"], ["100 kHz", "5 nV/rtHz"]]'),
    Key("amplifier", "current_noise_curve", "A/rtHz", None, kind="curve", check="(0..1e-9]",
        doc="Current noise density read off the data sheet, as voltage_noise_curve; "
            "current_noise scales it to its white level.",
        example='[["10 Hz", "20 pA/rtHz"], ["1 kHz", "2 pA/rtHz"]]'),
    # -- feedback ------------------------------------------------------------------------------
    Key("feedback", "rf", "ohm", REQUIRED, check="[1..1e15]", doc="Feedback resistance.",
        example="10 kohm"),
    Key("feedback", "cf", "F", REQUIRED, check="[0..1e-6]",
        doc="Feedback capacitance (include the resistor's parasitic).", example="0.2 pF"),
    # -- operating point -----------------------------------------------------------------------
    Key("operating_point", "reverse_bias", "V", REQUIRED, check="[-1..1e4]",
        doc="Reverse bias across the photodiode (negative = forward).", example="5 V"),
    Key("operating_point", "wavelength", "m", REQUIRED, write="nm", check="optical",
        doc="Signal wavelength.", example="1310 nm"),
    Key("operating_point", "optical_power", "W", REQUIRED, check="[0..1]",
        doc="Average optical signal power at the photodiode (W or dBm).", example="-20 dBm"),
    Key("operating_point", "temperature", "K", 300.0, write="K", check=">0",
        doc="Device temperature (K or degC).", example="300 K"),
    Key("operating_point", "background_power", "W", 0.0, check="[0..1]",
        doc="Background (ambient) optical power.", example="0 W"),
    # -- signal --------------------------------------------------------------------------------
    Key("signal", "modulation_depth", "", 1.0, check="(0..1]",
        doc="Analog modulation depth of the signal.", example="1.0"),
    Key("signal", "bit_rate", "bit/s", None, check="[1..1e12]",
        doc="Bit rate of a digital receiver (enables the BER sensitivity).",
        example="10 Gbit/s"),
    Key("signal", "extinction_ratio", "", math.inf, kind="ratio", check="(1..inf]",
        doc="Extinction ratio P1/P0 (a number or decibels).", example="10 dB"),
    Key("signal", "target_ber", "", 1e-12, check="[1e-30..0.5)", doc="Target bit-error ratio.",
        example="1e-12"),
    # -- optional post filter ------------------------------------------------------------------
    Key("post_filter", "kind", None, REQUIRED, kind="text",
        choices=("butterworth", "bessel", "brickwall"), doc="Filter family.",
        example="bessel"),
    Key("post_filter", "order", None, 4, kind="integer", doc="Order 1 to 6.", example="4"),
    Key("post_filter", "cutoff", "Hz", REQUIRED, check="[1e-3..1e12]", doc="-3 dB frequency.",
        example="7 GHz"),
    # -- optional limits -----------------------------------------------------------------------
    Key("limits", "max_dark_current", "A", None, check="(0..1]",
        doc="Largest acceptable dark current.", example="10 nA"),
    Key("limits", "max_bias", "V", None, check="(0..1e4]",
        doc="Largest bias the supply provides.", example="20 V"),
    Key("limits", "max_bias_power", "W", None, check="(0..10]",
        doc="Largest power the bias supply may deliver to the diode (bias times current).",
        example="1 mW"),
    # common practice for a feedback loop: phase margin >= 45 deg, peaking <= 3 dB
    Key("limits", "min_phase_margin", "deg", OMIT, check="[0..180]",
        doc="Smallest acceptable phase margin of the feedback loop (default 45 deg).",
        example="45 deg"),
    Key("limits", "max_peaking", "dB", OMIT, check="[0..60]",
        doc="Largest acceptable closed-loop peaking (default 3 dB).", example="3 dB"),
    Key("limits", "max_overshoot", "", None, check="(0..10]",
        doc="Largest acceptable step overshoot, a fraction of the final value.",
        example="0.2"),
    # -- optional analysis settings ------------------------------------------------------------
    Key("analysis", "noise_band_low", "Hz", 1.0, check="[1e-6..1e9]",
        doc="Lower edge of the noise integration (1/f noise diverges at 0 Hz).",
        example="1 Hz"),
)

#: Sections in file order, with whether each must be present.
SECTIONS = {
    "design": False,
    "photodiode": True,
    "photodiode.junction": True,
    "amplifier": True,
    "feedback": True,
    "operating_point": True,
    "signal": False,
    "post_filter": False,
    "limits": False,
    "analysis": False,
}

#: Optional sections of a tolerance study, read as free tables (parameter or figure -> text):
#: ``[tolerances]`` maps a design parameter to its distribution, ``[specs]`` a receiver
#: figure to its condition; :func:`photorx.designfile.load_study` checks their content.
STUDY_SECTIONS = ("tolerances", "specs")

#: Selector key of sections whose keys depend on a model choice.
_SELECTOR = {"photodiode.junction": "model", "photodiode": "kind"}

def section_keys(section: str) -> list[Key]:
    """The schema rows of one section, in order.

    Parameters
    ----------
    section : str
        Dotted section path, e.g. ``"amplifier"`` or ``"photodiode.junction"``; a name
        outside :data:`SECTIONS` gives an empty list.
    """
    return [k for k in SCHEMA if k.section == section]


def _flatten(doc: dict, source: str) -> dict[str, dict]:
    """TOML document -> {section path: {key: value}}; unknown sections are errors."""
    out: dict[str, dict] = {}

    def walk(table: dict, path: str):
        values = {}
        for key, value in table.items():
            sub = f"{path}.{key}" if path else key
            if not path and key in STUDY_SECTIONS:
                out[key] = _study_table(key, value, source)
                continue
            if isinstance(value, dict):
                if sub not in SECTIONS:
                    raise DesignError(f"{source}unknown section [{sub}]; known sections: "
                                      f"{', '.join(f'[{s}]' for s in SECTIONS)}"
                                      f"{_suggest(sub, SECTIONS)}", parameter=sub)
                walk(value, sub)
            elif not path:
                raise DesignError(f"{source}key '{key}' outside any section; put it under one of "
                                  f"{', '.join(f'[{s}]' for s in SECTIONS)}", parameter=key)
            else:
                values[key] = value
        if path:
            out[path] = values

    walk(doc, "")
    return out


def _study_table(section: str, table, source: str) -> dict:
    """A ``[tolerances]`` or ``[specs]`` table: text values or short lists, no sub-tables."""
    if not isinstance(table, dict):
        raise DesignError(f"{source}[{section}] must be a section (a table), not "
                          f"{_shown(table)}", parameter=section)
    for key, value in table.items():
        where = f"[{section}] {key}"
        if isinstance(value, dict):
            raise DesignError(f"{source}{where}: a table where a distribution or condition "
                              "belongs; write a dotted name in quotes, e.g. "
                              "\"tia.amp.gbw\" = \"5 %\"", parameter=where)
        items = value if isinstance(value, list) else [value]
        if not items or len(items) > 4 or not all(
                isinstance(v, (str, int, float)) and not isinstance(v, bool) for v in items):
            raise DesignError(f"{source}{where} = {_shown(value)}: expected text such as "
                              + ("'1 %' or 'normal:2 %'" if section == "tolerances"
                                 else "'>= 900 MHz'"), parameter=where)
    return dict(table)


def _suggest(word: str, options) -> str:
    close = difflib.get_close_matches(word, list(options), n=1, cutoff=0.6)
    return f" (did you mean '{close[0]}'?)" if close else ""


def _expected(key: Key) -> str:
    if key.kind == "text":
        return "one of " + ", ".join(repr(c) for c in key.choices) if key.choices else "text"
    if key.kind == "integer":
        return "an integer"
    valid = f" ({_range_text(key)})" if key.check in _INTERVALS else ""
    if key.kind == "list":
        return (f"a list, each {_dimension_name(key.unit)} in {key.unit}{valid}, "
                f"e.g. {key.example}")
    if key.kind == "table":
        return (f"{_dimension_name(key.unit)} in {key.unit}{valid} such as '{key.example}', "
                "or a list of [wavelength, value] pairs")
    if key.kind == "curve":
        return (f"a list of at least two [frequency, density] pairs, frequencies rising, "
                f"densities in {key.unit}{valid}, e.g. {key.example}")
    if key.kind == "points":
        return ("a list of [frequency, magnitude, phase] rows such as "
                "[\"1 MHz\", \"40 dB\", \"-90 deg\"]")
    if key.kind == "ratio":
        return f"a number or decibels{valid}, e.g. '{key.example}'"
    if key.unit == "":
        return f"a plain number{valid}, e.g. {key.example}"
    if key.unit == "bit/s":
        return f"a bit rate in bit/s{valid}, e.g. '{key.example}'"
    return f"{_dimension_name(key.unit)} in {key.unit}{valid}, e.g. '{key.example}'"


_INTERVAL = re.compile(r"^([\[(])(-?[\d.e+-]+|-?inf)\.\.(-?[\d.e+-]+|inf)([\])])$")
#: Units shown in a range as the file writes them (SI factor of one of that unit).
_SHOWN_IN = {"cm^-3": 1e6, "cm^-4": 1e8, "K": 1.0, "A/W": 1.0}


def _interval(check: str):
    """``"(0..1e-2]"`` -> (test, None); the range text depends on the key (its unit)."""
    m = _INTERVAL.match(check)
    if not m:
        raise ValueError(f"schema check {check!r} is not an interval such as '[1e-12..1e-2]'")
    lo, hi = float(m.group(2)), float(m.group(3))
    lo_in, hi_in = m.group(1) == "[", m.group(4) == "]"

    def test(v, lo=lo, hi=hi, lo_in=lo_in, hi_in=hi_in):
        return (v >= lo if lo_in else v > lo) and (v <= hi if hi_in else v < hi)

    return test, None


def _bounds(check: str):
    m = _INTERVAL.match(check)
    return float(m.group(2)), float(m.group(3)), m.group(1) == "[", m.group(4) == "]"


def _show(key: Key, value: float) -> str:
    """A range bound in the unit a designer writes for this key."""
    if math.isinf(value):
        return "inf"
    if key.unit == "":
        return f"{value:g}"
    write = key.write
    if write == "area":
        write = "um^2" if value < 1e-6 else ("mm^2" if value < 1e-4 else "cm^2")
        return f"{value / {'um^2': 1e-12, 'mm^2': 1e-6, 'cm^2': 1e-4}[write]:g} {write}"
    if write in _SHOWN_IN:
        return f"{value / _SHOWN_IN[write]:g} {write}"
    return format_eng(value, key.unit)


def _range_text(key: Key) -> str:
    """The valid range of an interval-checked key, e.g. ``">= 1 kHz and <= 1 THz"``."""
    lo, hi, lo_in, hi_in = _bounds(key.check)
    if math.isinf(hi) and hi_in:
        return f"{'>=' if lo_in else '>'} {_show(key, lo)}, or inf"
    return (f"{'>=' if lo_in else '>'} {_show(key, lo)} and {'<=' if hi_in else '<'} "
            f"{_show(key, hi)}")


def _allows_inf(key: Key) -> bool:
    return key.check in _INTERVALS and math.isinf(_bounds(key.check)[1]) and \
        _bounds(key.check)[3]


#: Raw values in messages: short, whatever their size or nesting.
_REPR = reprlib.Repr()
_REPR.maxlevel, _REPR.maxstring, _REPR.maxother, _REPR.maxlist, _REPR.maxdict = 3, 60, 60, 4, 4


def _shown(raw) -> str:
    return _REPR.repr(raw)


_CHECKS = {
    ">0": (lambda v: v > 0, "> 0"),
    ">=0": (lambda v: v >= 0, ">= 0"),
    ">1": (lambda v: v > 1, "> 1"),
    "0..1": (lambda v: 0 <= v <= 1, "0 to 1"),
    "(0..1]": (lambda v: 0 < v <= 1, "> 0 and <= 1"),
    "(0..1)": (lambda v: 0 < v < 1, "> 0 and < 1"),
    "(0..0.5)": (lambda v: 0 < v < 0.5, "> 0 and < 0.5"),
    # catches a wavelength written as a bare number of nanometres ("1310" reads as 1310 m)
    "optical": (lambda v: 10e-9 <= v <= 100e-6, "10 nm to 100 um"),
}
#: checks whose range text already carries its unit
_CHECKS_WITH_UNIT = frozenset({"optical"})
#: interval checks of the schema rows, added to the named ones
_INTERVALS = frozenset(k.check for k in SCHEMA if k.check and k.check not in _CHECKS)
_CHECKS.update({check: _interval(check) for check in _INTERVALS})
#: Largest size of a ratio in decibels (10^30 either way is beyond any receiver).
_MAX_DB = 300.0


def _parse_value(key: Key, raw, source: str):
    """One raw TOML value -> SI value (float, int, str or tuple); errors name the key."""
    prefix = f"{source}{key.where}"
    if key.kind == "text":
        if not isinstance(raw, str):
            raise DesignError(f"{prefix} = {_shown(raw)}: expected {_expected(key)}", parameter=key.where)
        value = raw.strip()
        if key.choices and value.lower() not in key.choices:
            raise DesignError(f"{prefix} = {_shown(raw)}: expected {_expected(key)}"
                              f"{_suggest(value.lower(), key.choices)}", parameter=key.where)
        return value.lower() if key.choices else value
    if key.kind == "integer":
        if isinstance(raw, bool) or not isinstance(raw, int):
            raise DesignError(f"{prefix} = {_shown(raw)}: expected {_expected(key)}", parameter=key.where)
        return int(raw)
    if key.kind == "list":
        if not isinstance(raw, list):
            raise DesignError(f"{prefix} = {_shown(raw)}: expected {_expected(key)}", parameter=key.where)
        return tuple(_parse_scalar(key, item, prefix) for item in raw)
    if key.kind == "points":
        return _parse_points(key, raw, prefix)
    if key.kind == "table" and isinstance(raw, list):
        pairs = []
        for item in raw:
            if not (isinstance(item, list) and len(item) == 2):
                raise DesignError(f"{prefix} = {_shown(raw)}: expected a list of [wavelength, "
                                  f"value] pairs, e.g. [[\"850 nm\", \"{key.example}\"]]",
                                  parameter=key.where)
            wl = _parse_scalar(Key(key.section, key.name, "m", check=">0", example="850 nm"),
                               item[0], prefix)
            pairs.append((wl, _parse_scalar(key, item[1], prefix)))
        return tuple(p[0] for p in pairs), tuple(p[1] for p in pairs)
    if key.kind == "curve":
        if not (isinstance(raw, list) and len(raw) >= 2
                and all(isinstance(item, list) and len(item) == 2 for item in raw)):
            raise DesignError(f"{prefix} = {_shown(raw)}: expected {_expected(key)}",
                              parameter=key.where)
        freq = Key(key.section, key.name, "Hz", check=">0", example="10 Hz")
        return (tuple(_parse_scalar(freq, item[0], prefix) for item in raw),
                tuple(_parse_scalar(key, item[1], prefix) for item in raw))
    if key.kind == "ratio" and isinstance(raw, str) and raw.strip().endswith("dB"):
        db = _parse_scalar(Key(key.section, key.name, ""), raw.strip()[:-2], prefix)
        if not abs(db) <= _MAX_DB:
            raise DesignError(f"{prefix} = {_shown(raw)}: decibels beyond -{_MAX_DB:g} to "
                              f"{_MAX_DB:g} dB; expected {_expected(key)}", parameter=key.where)
        return _checked(key, 10.0 ** (db / 10.0), prefix)
    return _parse_scalar(key, raw, prefix)


def _parse_points(key: Key, raw, prefix: str):
    """[[frequency, magnitude, phase], ...] -> (f [Hz], |A| [dB], arg A [deg]) tuples."""
    if not (isinstance(raw, list) and raw
            and all(isinstance(row, list) and len(row) == 3 for row in raw)):
        raise DesignError(f"{prefix} = {_shown(raw)}: expected {_expected(key)}",
                          parameter=key.where)
    freq = Key(key.section, key.name, "Hz", check=">0", example="1 MHz")
    cols = ([], [], [])
    for row in raw:
        cols[0].append(_parse_scalar(freq, row[0], prefix))
        for col, item, unit in ((cols[1], row[1], "dB"), (cols[2], row[2], "deg")):
            text = item.strip() if isinstance(item, str) else item
            if isinstance(text, str) and text.endswith(unit):
                text = text[:-len(unit)]  # the unit is optional; no other unit is accepted
            col.append(_parse_scalar(Key(key.section, key.name, "", example=f"-90 {unit}"),
                                     text, f"{prefix} ({unit})"))
    return tuple(tuple(c) for c in cols)


def _parse_scalar(key: Key, raw, prefix: str) -> float:
    if isinstance(raw, bool) or not isinstance(raw, (int, float, str)):
        raise DesignError(f"{prefix} = {_shown(raw)}: expected {_expected(key)}", parameter=key.where)
    try:
        value = parse_quantity(raw, key.unit or None)
    except DesignError as exc:
        text = str(exc)
        if "was expected" not in text:  # the key's own example beats the generic one
            text = text.replace("; write e.g. '2.2 pF'", "") + f"; expected {_expected(key)}"
        raise DesignError(f"{prefix}: {text}", parameter=key.where) from None
    if key.unit == "" and isinstance(raw, str) and not _is_plain_number(raw):
        # parse_quantity without a unit accepts any dimension; a plain number must be plain
        raise DesignError(f"{prefix} = {_shown(raw)}: expected {_expected(key)}", parameter=key.where)
    if math.isnan(value):
        raise DesignError(f"{prefix} = nan: expected {_expected(key)}", parameter=key.where)
    return _checked(key, value, prefix, raw)


def _is_plain_number(text: str) -> bool:
    try:
        float(text)
        return True
    except ValueError:
        return False


#: Largest SI value of a unit that any photodiode receiver needs: a capacitance of a farad or
#: a length or area of metres is a unit slip (``cf = 60`` meant pF, ``area = 5000`` um^2).
_PLAUSIBLE_MAX = {"F": (1e-3, "1 mF"), "m": (1e-2, "1 cm"), "m^2": (1e-2, "(10 cm)^2")}


def _checked(key: Key, value: float, prefix: str, raw=None) -> float:
    limit = _PLAUSIBLE_MAX.get(key.unit)
    if limit and math.isfinite(value) and abs(value) > limit[0] and key.check != "optical":
        plain = isinstance(raw, (int, float)) or (isinstance(raw, str) and _is_plain_number(raw))
        hint = (f"; a plain number is read in {key.unit}: write the unit, e.g. '{key.example}'"
                if plain else "")
        raise DesignError(f"{prefix} = {value:.6g} {key.unit} is implausibly large for a "
                          f"photodiode receiver (at most {limit[1]}){hint}", parameter=key.where)
    if key.check or (key.unit is not None and not math.isfinite(value)):
        ok, text = _CHECKS.get(key.check, (None, "finite numbers"))
        if ok is None or not ok(value) or (math.isinf(value) and not _allows_inf(key)):
            unit = f" {key.unit}" if key.unit else ""
            valid = (_range_text(key) if text is None else text
                     if key.check in _CHECKS_WITH_UNIT or ok is None else f"{text}{unit}")
            hint = ""
            if key.unit and (isinstance(raw, (int, float)) or
                             (isinstance(raw, str) and _is_plain_number(raw))):
                # the usual slip: a number without its unit is read in SI
                hint = (f" (a plain number is read in {key.unit}; write the unit, "
                        f"e.g. '{key.example}')")
            raise DesignError(f"{prefix} = {value:.6g}{unit} is out of range; valid range: "
                              f"{valid}{hint}", parameter=key.where)
    return value


def read_design(source, name: str = "") -> dict[str, dict]:
    """Parse and validate a design document without building any object.

    Parameters
    ----------
    source : dict
        The TOML document as parsed by :mod:`tomllib`.
    name : str
        File name used as a prefix in error messages.

    Returns
    -------
    dict
        ``{section: {argument: SI value}}`` for every section present (absent optional
        keys take their defaults; keys with a ``None`` default are left out).
    """
    where = f"{name}: " if name else ""
    sections = _flatten(source, where)
    for section, required in SECTIONS.items():
        if required and section not in sections:
            raise DesignError(f"{where}missing section [{section}]", parameter=section)
    spec: dict[str, dict] = {}
    for section, values in sections.items():
        if section in STUDY_SECTIONS:  # checked against the built receiver by load_study
            spec[section] = dict(values)
            continue
        keys = section_keys(section)
        selector = _SELECTOR.get(section)
        chosen = None
        if selector and any(k.name == selector for k in keys):
            sel_key = next(k for k in keys if k.name == selector)
            if selector not in values and sel_key.default is not REQUIRED:
                chosen = sel_key.default  # an optional selector (photodiode kind)
            elif selector not in values:
                raise DesignError(f"{where}missing key {sel_key.where}: expected "
                                  f"{_expected(sel_key)}", parameter=sel_key.where)
            else:
                chosen = _parse_value(sel_key, values[selector], where)
        applicable = {k.name: k for k in keys if not k.when or chosen in k.when}
        for key in values:
            if key not in applicable:
                other = [k for k in keys if k.name == key]
                if other:
                    raise DesignError(f"{where}[{section}] {key}: does not apply to {selector} = "
                                      f"'{chosen}' (only to {', '.join(other[0].when)})",
                                      parameter=f"[{section}] {key}")
                raise DesignError(f"{where}[{section}] unknown key '{key}'"
                                  f"{_suggest(key, applicable)}; known keys: "
                                  f"{', '.join(applicable)}", parameter=f"[{section}] {key}")
        parsed = {}
        for key in applicable.values():
            if key.name in values:
                parsed[key.arg] = _parse_value(key, values[key.name], where)
            elif key.default is REQUIRED:
                raise DesignError(f"{where}missing key {key.where}: expected {_expected(key)}",
                                  parameter=key.where)
            elif key.default is not None and key.default is not OMIT:
                parsed[key.arg] = key.default
        spec[section] = parsed
    return spec
