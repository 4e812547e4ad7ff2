"""TOML design files: a receiver written as the trade writes it, read back exactly.

A design file describes the photodiode (a junction model with its doping and geometry,
or datasheet-style numbers), the amplifier, the feedback network, the operating point,
the signal, and optionally a post filter and limits. Quantities are strings with units
(``"5 pF"``, ``"10 kohm"``, ``"1310 nm"``, ``"-20 dBm"``, ``"1e15 cm^-3"``) read with the
units library *pint* through :func:`photorx.units.parse_quantity`; plain numbers are SI.

Every key lives in one declarative table, :data:`SCHEMA` (section, key, unit, default,
constructor argument, check, help text); reading, validation, writing and the commented
template are all driven by it, so a new parameter is one new row. Unknown sections or
keys, missing keys, wrong dimensions and out-of-range values raise
:class:`~photorx.errors.DesignError` naming the key with its section path
(``[photodiode.junction] area``) and what was expected.

Writing is exact: every number is written as a decimal with an engineering prefix that
reads back to the same float, so ``load_design(save_design(rx, p)) == rx`` and the text
of a saved file is stable under load/save.
"""

from __future__ import annotations

import dataclasses
import difflib
import math
import sys
import textwrap
from dataclasses import dataclass
from decimal import Decimal
from importlib import resources
from pathlib import Path

import numpy as np

from .errors import DesignError
from .units import _PREFIXES, _dimension_name, parse_quantity

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

__all__ = [
    "SCHEMA", "Key", "SECTIONS", "DEMO_DESIGNS", "DEFAULT_DESIGN",
    "load_design", "save_design", "loads_design", "dumps_design", "demo_receiver",
    "demo_design_path", "read_design", "design_template", "write_template",
]

REQUIRED = "<required>"
#: Default of keys whose absence leaves the constructor's own default in force; such keys
#: are written only when the design's value differs from that default.
OMIT = "<constructor default>"


@dataclass(frozen=True)
class Key:
    """One row of the design-file schema.

    Attributes
    ----------
    section : str
        Dotted section path, e.g. ``"photodiode.junction"``.
    name : str
        Key as written in the file.
    unit : str or None
        SI unit of the value (pint syntax): a quantity string is converted to it and a
        quantity of another dimension is an error. ``""`` for a plain number.
    default : object
        Value used when the key is absent; :data:`REQUIRED` makes it mandatory; ``None``
        makes it optional with no value; :data:`OMIT` leaves the constructor's default.
    argument : str
        Constructor argument (defaults to ``name``).
    write : str or None
        Unit the value is written in (``"nm"``, ``"cm^-3"``, ``"area"`` for um^2 or mm^2);
        None picks an engineering prefix of ``unit``.
    check : str
        Range check: ``">0"``, ``">=0"``, ``"0..1"``, ``"(0..1]"``, ``"(0..0.5)"`` or ``""``.
    kind : str
        ``"quantity"``, ``"text"``, ``"integer"``, ``"list"`` (of quantities), ``"ratio"``
        (a plain number or decibels, ``"10 dB"``) or ``"table"`` (a quantity, or a list of
        ``[wavelength, value]`` pairs).
    when : tuple of str
        The key applies only when the section's selector (``model`` or ``kind``) takes one
        of these values; empty = always.
    choices : tuple of str
        Allowed values of a text key.
    doc : str
        Help text for the template and for error messages.
    example : str
        Example value shown in messages and commented template lines.
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
    Key("photodiode.junction", "area", "m^2", REQUIRED, write="area", check=">0",
        when=_PHYSICAL, doc="Junction (active) area.", example="(100 um)^2"),
    Key("photodiode.junction", "na", "m^-3", REQUIRED, write="cm^-3", check=">0",
        when=("abrupt",), doc="Acceptor doping of the p side.", example="1e19 cm^-3"),
    Key("photodiode.junction", "nd", "m^-3", REQUIRED, write="cm^-3", check=">0",
        when=("abrupt",), doc="Donor doping of the n side.", example="1e15 cm^-3"),
    Key("photodiode.junction", "i_thickness", "m", REQUIRED, write="um", check=">0",
        when=("pin",), doc="Thickness of the intrinsic (absorbing) layer.", example="2 um"),
    Key("photodiode.junction", "i_doping", "m^-3", REQUIRED, write="cm^-3", check=">0",
        when=("pin",), doc="Residual doping of the intrinsic layer.", example="1e14 cm^-3"),
    Key("photodiode.junction", "p_doping", "m^-3", REQUIRED, write="cm^-3", check=">0",
        when=("pin",), doc="Doping of the p contact layer.", example="1e19 cm^-3"),
    Key("photodiode.junction", "n_doping", "m^-3", REQUIRED, write="cm^-3", check=">0",
        when=("pin",), doc="Doping of the n contact layer.", example="1e19 cm^-3"),
    Key("photodiode.junction", "gradient", "m^-4", REQUIRED, write="cm^-4", check=">0",
        when=("graded",), doc="Net doping gradient.", example="1e20 cm^-4"),
    Key("photodiode.junction", "cj0", "F", REQUIRED, check=">0", when=("parametric",),
        doc="Zero-bias junction capacitance.", example="1 pF"),
    Key("photodiode.junction", "vj", "V", REQUIRED, check=">0", when=("parametric",),
        doc="Junction potential.", example="0.7 V"),
    Key("photodiode.junction", "m", "", REQUIRED, when=("parametric",),
        doc="Grading coefficient, 0 to 2 (0.5 abrupt, 1/3 graded, 0 fixed capacitance).",
        example="0.5"),
    Key("photodiode.junction", "fc", "", 0.5, when=("parametric",),
        doc="Forward-bias linearisation point as a fraction of vj, 0 to 0.95.", example="0.5"),
    Key("photodiode.junction", "temperature", "K", None, write="K", check=">0", when=_PHYSICAL,
        doc="Junction temperature when it differs from the operating point's.",
        example="300 K"),
    # -- photodiode (beyond its junction); absent keys keep the Photodiode defaults -----------
    Key("photodiode", "responsivity", "A/W", OMIT, argument="given_responsivity", write="A/W",
        kind="table", check=">=0",
        doc="Given responsivity instead of the absorption model: a number, or a table of "
            "[wavelength, responsivity] pairs (required with the parametric junction).",
        example="0.9 A/W"),
    Key("photodiode", "reflectance", "", OMIT, check="0..1",
        doc="Front power reflectance (default: bare surface of the material).",
        example="0.03"),
    Key("photodiode", "top_thickness", "m", OMIT, write="um", check=">=0",
        doc="Undepleted absorbing layer above the depletion layer (default 0.3 um; 0 for a "
            "transparent window).", example="0.2 um"),
    Key("photodiode", "absorber_thickness", "m", OMIT, write="um", check=">0",
        doc="Absorbing material below the top layer (default inf: thick substrate).",
        example="2 um"),
    Key("photodiode", "top_diffusion_length", "m", OMIT, write="um", check=">0",
        doc="Minority-carrier diffusion length in the top layer (default 1 um).",
        example="1 um"),
    Key("photodiode", "lifetime", "s", OMIT, check=">0",
        doc="Minority-carrier lifetime in the undepleted bottom layer (default by material).",
        example="1 us"),
    Key("photodiode", "generation_lifetime", "s", OMIT, check=">0",
        doc="Generation lifetime of the depletion layer (default by material).",
        example="1 ms"),
    Key("photodiode", "leakage_resistance", "ohm", OMIT, check=">0",
        doc="Ohmic surface leakage resistance (default inf).", example="100 Gohm"),
    Key("photodiode", "series_resistance", "ohm", OMIT, check=">=0",
        doc="Series resistance (default 10 ohm).", example="10 ohm"),
    Key("photodiode", "package_capacitance", "F", OMIT, check=">=0",
        doc="Package and pad capacitance in parallel with the junction (default 0).",
        example="0.1 pF"),
    Key("photodiode", "illuminated_side", None, OMIT, kind="text", choices=("p", "n"),
        doc="Doping type of the illuminated top layer (default p, p-on-n).", example="p"),
    Key("photodiode", "intrinsic_bandwidth", "Hz", OMIT, check=">0",
        doc="Given intrinsic (transit) bandwidth replacing the transit model.",
        example="5 GHz"),
    Key("photodiode", "dark_current", "A", OMIT, argument="reference_dark_current", check=">0",
        doc="Measured dark current at dark_current_bias (replaces the dark-current model).",
        example="1 nA"),
    Key("photodiode", "dark_current_bias", "V", OMIT, argument="reference_bias",
        doc="Reverse bias of the measured dark current.", example="5 V"),
    Key("photodiode", "shunt_resistance", "ohm", OMIT, argument="zero_bias_resistance",
        check=">0", doc="Measured zero-bias shunt resistance R0.", example="1 Gohm"),
    # -- amplifier -----------------------------------------------------------------------------
    Key("amplifier", "gbw", "Hz", REQUIRED, check=">0", doc="Gain-bandwidth product.",
        example="1 GHz"),
    Key("amplifier", "dc_gain", "", 1e5, check=">0", doc="DC open-loop gain [V/V].",
        example="1e5"),
    Key("amplifier", "poles", "Hz", (), kind="list", check=">0",
        doc="Extra poles beyond the dominant one.", example='["3 GHz"]'),
    Key("amplifier", "voltage_noise", "V/rtHz", REQUIRED, check=">=0",
        doc="White input voltage noise density.", example="5 nV/rtHz"),
    Key("amplifier", "current_noise", "A/rtHz", REQUIRED, check=">=0",
        doc="White input current noise density.", example="2 pA/rtHz"),
    Key("amplifier", "voltage_noise_corner", "Hz", 0.0, check=">=0",
        doc="1/f corner of the voltage noise (0 = none).", example="10 kHz"),
    Key("amplifier", "current_noise_corner", "Hz", 0.0, check=">=0",
        doc="1/f corner of the current noise (0 = none).", example="1 kHz"),
    Key("amplifier", "input_capacitance", "F", 0.0, check=">=0",
        doc="Common-mode plus differential input capacitance.", example="1 pF"),
    Key("amplifier", "output_swing", "V", 2.0, check=">0",
        doc="Largest output magnitude before clipping.", example="1.5 V"),
    # -- feedback ------------------------------------------------------------------------------
    Key("feedback", "rf", "ohm", REQUIRED, check=">0", doc="Feedback resistance.",
        example="10 kohm"),
    Key("feedback", "cf", "F", REQUIRED, check=">=0",
        doc="Feedback capacitance (include the resistor's parasitic).", example="0.2 pF"),
    # -- operating point -----------------------------------------------------------------------
    Key("operating_point", "reverse_bias", "V", REQUIRED,
        doc="Reverse bias across the photodiode (negative = forward).", example="5 V"),
    Key("operating_point", "wavelength", "m", REQUIRED, write="nm", check=">0",
        doc="Signal wavelength.", example="1310 nm"),
    Key("operating_point", "optical_power", "W", REQUIRED, check=">=0",
        doc="Average optical signal power at the photodiode (W or dBm).", example="-20 dBm"),
    Key("operating_point", "temperature", "K", 300.0, write="K", check=">0",
        doc="Device temperature (K or degC).", example="300 K"),
    Key("operating_point", "background_power", "W", 0.0, check=">=0",
        doc="Background (ambient) optical power.", example="0 W"),
    # -- signal --------------------------------------------------------------------------------
    Key("signal", "modulation_depth", "", 1.0, check="(0..1]",
        doc="Analog modulation depth of the signal.", example="1.0"),
    Key("signal", "bit_rate", "bit/s", None, check=">0",
        doc="Bit rate of a digital receiver (enables the BER sensitivity).",
        example="10 Gbit/s"),
    Key("signal", "extinction_ratio", "", math.inf, kind="ratio", check=">1",
        doc="Extinction ratio P1/P0 (a number or decibels).", example="10 dB"),
    Key("signal", "target_ber", "", 1e-12, check="(0..0.5)", doc="Target bit-error ratio.",
        example="1e-12"),
    # -- optional post filter ------------------------------------------------------------------
    Key("post_filter", "kind", None, REQUIRED, kind="text",
        choices=("butterworth", "bessel", "brickwall"), doc="Filter family.",
        example="bessel"),
    Key("post_filter", "order", None, 4, kind="integer", doc="Order 1 to 6.", example="4"),
    Key("post_filter", "cutoff", "Hz", REQUIRED, check=">0", doc="-3 dB frequency.",
        example="7 GHz"),
    # -- optional limits -----------------------------------------------------------------------
    Key("limits", "max_dark_current", "A", None, check=">0",
        doc="Largest acceptable dark current.", example="10 nA"),
    Key("limits", "max_bias", "V", None, check=">0",
        doc="Largest bias the supply provides.", example="20 V"),
    # -- optional analysis settings ------------------------------------------------------------
    Key("analysis", "noise_band_low", "Hz", 1.0, check=">0",
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

#: Selector key of sections whose keys depend on a model choice.
_SELECTOR = {"photodiode.junction": "model", "photodiode": "model"}

DEMO_DESIGNS = {
    "ingaas-pin-1310": "Short-reach 1310 nm InGaAs PIN link receiver (the default)",
    "si-pin-850": "Silicon PIN receiver at 850 nm",
    "si-photometer": "Low-light silicon photometry front end",
}
DEFAULT_DESIGN = "ingaas-pin-1310"


# ============================================================================================
# reading
# ============================================================================================
def _keys(section: str) -> list[Key]:
    return [k for k in SCHEMA if k.section == section]


def _flatten(doc: dict, source: str) -> dict[str, dict]:
    """TOML document -> {section path: {key: value}}; unknown sections are errors."""
    out: dict[str, dict] = {}

    def walk(table: dict, path: str):
        values = {}
        for key, value in table.items():
            sub = f"{path}.{key}" if path else key
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


def _suggest(word: str, options) -> str:
    close = difflib.get_close_matches(word, list(options), n=1, cutoff=0.6)
    return f" (did you mean '{close[0]}'?)" if close else ""


def _expected(key: Key) -> str:
    if key.kind == "text":
        return "one of " + ", ".join(repr(c) for c in key.choices) if key.choices else "text"
    if key.kind == "integer":
        return "an integer"
    if key.kind == "list":
        return f"a list, each {_dimension_name(key.unit)} in {key.unit}, e.g. {key.example}"
    if key.kind == "ratio":
        return f"a number or decibels, e.g. '{key.example}'"
    if key.unit == "":
        return f"a plain number, e.g. {key.example}"
    if key.unit == "bit/s":
        return f"a bit rate in bit/s, e.g. '{key.example}'"
    return f"{_dimension_name(key.unit)} in {key.unit}, e.g. '{key.example}'"


_CHECKS = {
    ">0": (lambda v: v > 0, "> 0"),
    ">=0": (lambda v: v >= 0, ">= 0"),
    ">1": (lambda v: v > 1, "> 1"),
    "0..1": (lambda v: 0 <= v <= 1, "0 to 1"),
    "(0..1]": (lambda v: 0 < v <= 1, "> 0 and <= 1"),
    "(0..1)": (lambda v: 0 < v < 1, "> 0 and < 1"),
    "(0..0.5)": (lambda v: 0 < v < 0.5, "> 0 and < 0.5"),
}


def _parse_value(key: Key, raw, source: str):
    """One raw TOML value -> SI value (float, int, str or tuple); errors name the key."""
    prefix = f"{source}{key.where}"
    if key.kind == "text":
        if not isinstance(raw, str):
            raise DesignError(f"{prefix} = {raw!r}: expected {_expected(key)}", parameter=key.where)
        value = raw.strip()
        if key.choices and value.lower() not in key.choices:
            raise DesignError(f"{prefix} = {raw!r}: expected {_expected(key)}"
                              f"{_suggest(value.lower(), key.choices)}", parameter=key.where)
        return value.lower() if key.choices else value
    if key.kind == "integer":
        if isinstance(raw, bool) or not isinstance(raw, int):
            raise DesignError(f"{prefix} = {raw!r}: expected {_expected(key)}", parameter=key.where)
        return int(raw)
    if key.kind == "list":
        if not isinstance(raw, list):
            raise DesignError(f"{prefix} = {raw!r}: expected {_expected(key)}", parameter=key.where)
        return tuple(_parse_scalar(key, item, prefix) for item in raw)
    if key.kind == "table" and isinstance(raw, list):
        pairs = []
        for item in raw:
            if not (isinstance(item, list) and len(item) == 2):
                raise DesignError(f"{prefix} = {raw!r}: expected a list of [wavelength, "
                                  f"value] pairs, e.g. [[\"850 nm\", \"{key.example}\"]]",
                                  parameter=key.where)
            wl = _parse_scalar(Key(key.section, key.name, "m", check=">0", example="850 nm"),
                               item[0], prefix)
            pairs.append((wl, _parse_scalar(key, item[1], prefix)))
        return tuple(p[0] for p in pairs), tuple(p[1] for p in pairs)
    if key.kind == "ratio" and isinstance(raw, str) and raw.strip().endswith("dB"):
        db = _parse_scalar(Key(key.section, key.name, ""), raw.strip()[:-2], prefix)
        return _checked(key, 10.0 ** (db / 10.0), prefix)
    return _parse_scalar(key, raw, prefix)


def _parse_scalar(key: Key, raw, prefix: str) -> float:
    if isinstance(raw, bool) or not isinstance(raw, (int, float, str)):
        raise DesignError(f"{prefix} = {raw!r}: expected {_expected(key)}", parameter=key.where)
    try:
        value = parse_quantity(raw, key.unit or None)
    except DesignError as exc:
        raise DesignError(f"{prefix}: {exc}; expected {_expected(key)}",
                          parameter=key.where) from None
    if key.unit == "" and isinstance(raw, str) and not _is_plain_number(raw):
        # parse_quantity without a unit accepts any dimension; a plain number must be plain
        raise DesignError(f"{prefix} = {raw!r}: expected {_expected(key)}", parameter=key.where)
    if math.isnan(value):
        raise DesignError(f"{prefix} = nan: expected {_expected(key)}", parameter=key.where)
    return _checked(key, value, prefix)


def _is_plain_number(text: str) -> bool:
    try:
        float(text)
        return True
    except ValueError:
        return False


def _checked(key: Key, value: float, prefix: str) -> float:
    if key.check:
        ok, text = _CHECKS[key.check]
        if not ok(value):
            unit = f" {key.unit}" if key.unit else ""
            raise DesignError(f"{prefix} = {value:.6g}{unit} is out of range; valid range: "
                              f"{text}{unit}", parameter=key.where)
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
        keys = _keys(section)
        selector = _SELECTOR.get(section)
        chosen = None
        if selector and any(k.name == selector for k in keys):
            sel_key = next(k for k in keys if k.name == selector)
            if selector not in values:
                raise DesignError(f"{where}missing key {sel_key.where}: expected "
                                  f"{_expected(sel_key)}", parameter=sel_key.where)
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


def _build(spec: dict, where: str = ""):
    """Design spec -> Receiver; constructor errors are re-raised with the section path."""
    from .analysis.receiver import Receiver
    from .circuit.amplifier import OpAmp
    from .circuit.filters import PostFilter
    from .circuit.tia import Tia

    def make(section, factory, **kwargs):
        try:
            return factory(**kwargs)
        except DesignError as exc:
            raise DesignError(f"{where}[{section}] {exc}",
                              parameter=f"[{section}] {exc.parameter or ''}".strip()) from None

    jspec = dict(spec["photodiode.junction"])
    if jspec["model"] != "parametric":
        # the junction runs at the operating temperature unless the file says otherwise
        jspec.setdefault("temperature", spec["operating_point"]["temperature"])
    junction = make("photodiode.junction", _junction_factory, **jspec)
    photodiode = make("photodiode", _photodiode_factory, junction=junction, **spec["photodiode"])
    amp = make("amplifier", OpAmp, **spec["amplifier"])
    tia = make("feedback", Tia, amp=amp, **spec["feedback"])
    post = (make("post_filter", PostFilter, **spec["post_filter"])
            if "post_filter" in spec else None)
    kwargs = dict(spec["operating_point"])
    kwargs.update(spec.get("signal", {}))
    kwargs.update(spec.get("limits", {}))
    kwargs.update(spec.get("analysis", {}))
    return make("operating_point", Receiver, photodiode=photodiode, tia=tia, post_filter=post,
                **kwargs)


def _junction_factory(model, material=None, **kwargs):
    from .device import junction as jn

    if model == "parametric":
        return jn.ParametricJunction(**kwargs)
    from .device.materials import material as get_material

    cls = {"abrupt": jn.AbruptJunction, "pin": jn.PinJunction,
           "graded": jn.LinearlyGradedJunction}[model]
    try:
        mat = get_material(material)
    except DesignError as exc:
        raise DesignError(f"material: {exc}", parameter="material") from None
    return cls(material=mat, **kwargs)


def _photodiode_factory(junction, **kwargs):
    from .device.photodiode import Photodiode

    return Photodiode(junction=junction, **kwargs)


def loads_design(text: str, name: str = ""):
    """Build a :class:`~photorx.analysis.receiver.Receiver` from design-file text."""
    where = f"{name}: " if name else ""
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DesignError(f"{where}not a valid TOML file ({exc})") from None
    return _build(read_design(doc, name), where)


def load_design(path=None):
    """Read a design file and return its :class:`~photorx.analysis.receiver.Receiver`.

    Parameters
    ----------
    path : str or path-like, optional
        The TOML file, or the name of a shipped demo design (see :data:`DEMO_DESIGNS`);
        None loads the embedded default demo.

    Raises
    ------
    DesignError
        Missing or unreadable file, invalid TOML, unknown or missing keys, wrong
        dimensions or out-of-range values; the message names the file and the key.
    """
    if path is None or str(path) in DEMO_DESIGNS:
        p = demo_design_path(path or DEFAULT_DESIGN)
        return loads_design(p.read_text(encoding="utf-8"), name=p.name)
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise DesignError(f"{p}: no such design file") from None
    except IsADirectoryError:
        raise DesignError(f"{p}: is a directory, not a design file") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise DesignError(f"{p}: cannot read design file ({exc})") from None
    return loads_design(text, name=str(p))


def demo_design_path(name: str = DEFAULT_DESIGN) -> Path:
    """Path of a shipped demo design (package data in ``photorx/designs``)."""
    if name not in DEMO_DESIGNS:
        raise DesignError(f"no demo design named {name!r}; known: {', '.join(DEMO_DESIGNS)}",
                          parameter="design")
    return Path(str(resources.files("photorx") / "designs" / f"{name}.toml"))


def demo_receiver(name: str = DEFAULT_DESIGN):
    """The receiver of a shipped demo design (default: the 1310 nm InGaAs PIN link receiver)."""
    return load_design(name)


# ============================================================================================
# writing
# ============================================================================================
def _decimal_text(d: Decimal) -> str:
    d = d.normalize()
    if d == 0:
        return "0"
    if -4 <= d.adjusted() < 6:
        return format(d, "f")
    sign, digits, _ = d.as_tuple()
    mant = str(digits[0]) + ("." + "".join(map(str, digits[1:])) if len(digits) > 1 else "")
    return f"{'-' if sign else ''}{mant}e{d.adjusted()}"


_WRITE_SCALE = {"A/W": 0, "um^2": -12, "mm^2": -6, "cm^-3": 6, "cm^-4": 8, "nm": -9, "um": -6, "K": 0}


def format_quantity(value: float, unit: str, write: str | None = None) -> str:
    """Exact text of an SI value: ``format_quantity(2.2e-12, "F") == "2.2 pF"``.

    The decimal digits are those of ``repr(value)`` shifted by a power of ten, so the text
    reads back (with :func:`~photorx.units.parse_quantity`) to exactly ``value``.
    """
    v = float(value)
    if not math.isfinite(v):
        return f"{v} {write or unit}"
    d = Decimal(repr(v))
    if write == "area":  # um^2 below a square millimetre, mm^2 above
        write = "mm^2" if abs(v) >= 1e-6 else "um^2"
    if write is not None:
        return f"{_decimal_text(d.scaleb(-_WRITE_SCALE[write]))} {write}"
    exp3 = 0 if v == 0 else max(min((d.adjusted() // 3) * 3, 15), -18)
    if unit == "bit/s":
        exp3 = max(exp3, 0)
        return f"{_decimal_text(d.scaleb(-exp3))} {_PREFIXES[exp3]}bit/s"
    return f"{_decimal_text(d.scaleb(-exp3))} {_PREFIXES[exp3]}{unit}"


def _scalar(value, where: str) -> float:
    arr = np.asarray(value)
    if arr.ndim:
        raise DesignError(f"{where} is an array (shape {arr.shape}); a design file holds one "
                          "design: save a single point", parameter=where)
    return float(arr)


def _written(key: Key, value):
    if key.kind == "text":
        return str(value)
    if key.kind == "integer":
        return int(value)
    if key.kind == "list":
        return [format_quantity(_scalar(v, key.where), key.unit, key.write) for v in value]
    if key.kind == "table" and isinstance(value, tuple):
        wavelengths, values = value
        return [[format_quantity(w, "m", "nm"), format_quantity(v, key.unit, key.write)]
                for w, v in zip(wavelengths, values)]
    v = _scalar(value, key.where)
    if key.unit in ("", None):
        return v
    return format_quantity(v, key.unit, key.write)


_JUNCTION_MODELS = {"AbruptJunction": "abrupt", "PinJunction": "pin",
                    "LinearlyGradedJunction": "graded", "ParametricJunction": "parametric"}


def _design_values(rx) -> dict[str, dict]:
    """Receiver -> {section: {key name: SI value}} by the schema's constructor arguments."""
    junction = rx.photodiode.junction
    model = _JUNCTION_MODELS.get(type(junction).__name__)
    if model is None:
        raise DesignError(f"junction of type {type(junction).__name__} cannot be written to a "
                          "design file", parameter="junction")
    objects = {
        "photodiode.junction": junction, "photodiode": rx.photodiode, "amplifier": rx.tia.amp,
        "feedback": rx.tia, "operating_point": rx, "signal": rx, "limits": rx, "analysis": rx,
        "post_filter": rx.post_filter,
    }
    chosen = {"photodiode.junction": model}
    out: dict[str, dict] = {}
    for section in SECTIONS:
        obj = objects.get(section)
        if obj is None:
            continue
        values = {}
        for key in _keys(section):
            if key.when and chosen.get(section) not in key.when:
                continue
            if section == "photodiode.junction" and key.name == "model":
                values["model"] = model
            elif section == "photodiode.junction" and key.name == "material":
                values["material"] = junction.material.name
            elif section == "photodiode.junction" and key.name == "temperature":
                if float(np.asarray(junction.temperature)) != _scalar(rx.temperature,
                                                                      "temperature"):
                    values["temperature"] = junction.temperature
            else:
                value = getattr(obj, key.arg)
                if value is None or (key.default is OMIT and _is_default(obj, key.arg, value)):
                    continue
                values[key.name] = value
        out[section] = values
    return out


def _is_default(obj, argument: str, value) -> bool:
    """True when ``value`` is the dataclass default of ``argument`` (so it need not be written)."""
    for fld in dataclasses.fields(obj):
        if fld.name == argument and fld.default is not dataclasses.MISSING:
            try:
                return bool(np.all(np.asarray(value) == np.asarray(fld.default)))
            except (TypeError, ValueError):
                return False
    return False


def dumps_design(rx, name: str = "", description: str = "") -> str:
    """Design-file text of a receiver (stable: the same receiver always gives the same text)."""
    import tomli_w

    values = _design_values(rx)
    if name or description:
        values["design"] = {"name": name, "description": description}
    doc: dict = {}
    for section in SECTIONS:
        if section not in values:
            continue
        table = {}
        for key in _keys(section):
            if key.name in values[section]:
                table[key.name] = _written(key, values[section][key.name])
        if not table and not SECTIONS[section]:
            continue  # an optional section with nothing to say
        node = doc
        for part in section.split(".")[:-1]:
            node = node.setdefault(part, {})
        node[section.split(".")[-1]] = {**node.get(section.split(".")[-1], {}), **table}
    header = "# photorx design file (TOML); quantities carry their units. See `photorx template`.\n\n"
    return header + tomli_w.dumps(_order(doc))


def _order(doc: dict) -> dict:
    """Scalars before sub-tables at every level (TOML requires it for readable output)."""
    scalars = {k: v for k, v in doc.items() if not isinstance(v, dict)}
    tables = {k: _order(v) for k, v in doc.items() if isinstance(v, dict)}
    return {**scalars, **tables}


def save_design(rx, path, name: str = "", description: str = "") -> Path:
    """Write a receiver to a design file atomically; ``load_design(path) == rx``.

    Parameters
    ----------
    rx : Receiver
        A single design (array-valued parameters are an error).
    path : str or path-like
        Destination ``.toml`` file.
    name, description : str
        Optional ``[design]`` text.

    Returns
    -------
    pathlib.Path
    """
    from .views._files import atomic_write_text

    return atomic_write_text(path, dumps_design(rx, name, description))


# ============================================================================================
# template
# ============================================================================================
def design_template() -> str:
    """A commented template design file (the default demo, every key explained).

    Optional keys left at their defaults appear commented out with an example value; the
    template itself loads as a valid design.
    """
    import tomli_w

    demo = demo_design_path(DEFAULT_DESIGN)
    doc = tomllib.loads(demo.read_text(encoding="utf-8"))
    sections = _flatten(doc, "")
    lines = ["# photorx design file template.",
             "# Quantities are strings with units as the trade writes them: \"5 pF\", \"10 kohm\",",
             "# \"1310 nm\", \"-20 dBm\", \"1e15 cm^-3\", \"5 nV/rtHz\"; plain numbers are SI.",
             "# Sections marked optional may be left out.", ""]
    for section, required in SECTIONS.items():
        values = sections.get(section, {})
        keys = _keys(section)
        selector = _SELECTOR.get(section)
        chosen = values.get(selector) if selector else None
        lines.append(f"[{section}]" + ("" if required else "  # optional section"))
        if section not in sections:
            for key in keys:
                lines += textwrap.wrap(key.doc, width=88, initial_indent="# ",
                                       subsequent_indent="#   ")
                lines.append(f"# {key.name} = {_example(key)}")
            lines.append("")
            continue
        for key in keys:
            if key.when and chosen not in key.when:
                continue
            need = "required" if key.default is REQUIRED else "optional"
            lines += textwrap.wrap(f"{key.doc} ({need}; {_expected(key)})", width=88,
                                   initial_indent="# ", subsequent_indent="#   ")
            if key.name in values:
                lines.append(tomli_w.dumps({key.name: values[key.name]}).rstrip())
            else:
                lines.append(f"# {key.name} = {_example(key)}")
        if selector and any(k.when for k in keys):
            others = sorted({m for k in keys for m in k.when} - {chosen})
            for other in others:
                names = ", ".join(k.name for k in keys if k.when and other in k.when)
                lines.append(f"# with {selector} = \"{other}\": {names}")
        lines.append("")
    return "\n".join(lines)


def _example(key: Key) -> str:
    if key.kind in ("text",):
        return f'"{key.example}"'
    if key.kind in ("list", "integer") or (key.unit == "" and key.kind != "ratio"):
        return key.example
    return f'"{key.example}"'


def write_template(path) -> Path:
    """Write :func:`design_template` to ``path`` atomically."""
    from .views._files import atomic_write_text

    return atomic_write_text(path, design_template())
