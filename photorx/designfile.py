"""TOML design files: a receiver written as the trade writes it, read back exactly.

A design file describes the photodiode (a junction model with its doping and geometry,
or datasheet-style numbers), the amplifier, the feedback network, the operating point,
the signal, and optionally a post filter and limits. Quantities are strings with units
(``"5 pF"``, ``"10 kohm"``, ``"1310 nm"``, ``"-20 dBm"``, ``"1e15 cm^-3"``) read with the
units library *pint* through :func:`photorx.units.parse_quantity`; plain numbers are SI.

Every key lives in one declarative table, :data:`~photorx.designschema.SCHEMA` (section,
key, unit, default, constructor argument, check, help text); reading, validation, writing
and the commented template are all driven by it, so a new parameter is one new row.
Unknown sections or keys, missing keys, wrong dimensions and out-of-range values raise
:class:`~photorx.errors.DesignError` naming the key with its section path
(``[photodiode.junction] area``) and what was expected.

Writing is exact: every number is written as a decimal with an engineering prefix that
reads back to the same float, so ``load_design(save_design(rx, p)) == rx`` and the text
of a saved file is stable under load/save.
"""

from __future__ import annotations

import dataclasses
import json
import math
import re
import sys
import textwrap
from decimal import Decimal
from importlib import resources
from pathlib import Path

import numpy as np

from .designschema import (
    _SELECTOR, OMIT, REQUIRED, SCHEMA, SECTIONS, Key, _expected, _flatten, read_design,
)
from .designschema import section_keys as _keys
from .errors import DesignError
from .units import _PREFIXES

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

__all__ = [
    "SCHEMA", "Key", "SECTIONS", "REQUIRED", "OMIT", "DEMO_DESIGNS", "DEFAULT_DESIGN",
    "load_design", "save_design", "loads_design", "dumps_design", "demo_receiver",
    "demo_design_path", "design_name", "read_design", "design_template", "write_template",
    "format_quantity", "load_study",
]

DEMO_DESIGNS = {
    "ingaas-pin-1310": "Short-reach 1310 nm InGaAs PIN link receiver",
    "si-pin-850": "Silicon PIN receiver at 850 nm",
    "si-photometer": "Low-light silicon photometry front end",
    "si-apd-850": "Silicon avalanche photodiode receiver at 850 nm",
}
DEFAULT_DESIGN = "ingaas-pin-1310"


# ============================================================================================
# reading
# ============================================================================================
def _build(spec: dict, where: str = ""):
    """Design spec -> Receiver; constructor errors are re-raised with the section path."""
    from .analysis.receiver import Receiver
    from .circuit.filters import PostFilter
    from .circuit.tia import Tia

    def make(sections, factory, **kwargs):
        try:
            return factory(**kwargs)
        except DesignError as exc:
            raise _in_file(exc, sections, where) from None

    jspec = dict(spec["photodiode.junction"])
    j_sections = ("photodiode.junction",)
    if jspec["model"] != "parametric" and "temperature" not in jspec:
        # the junction runs at the operating temperature unless the file says otherwise
        jspec["temperature"] = spec["operating_point"]["temperature"]
        j_sections = ("photodiode.junction", "operating_point")
    junction = make(j_sections, _junction_factory, **jspec)
    photodiode = make("photodiode", _photodiode_factory, junction=junction, **spec["photodiode"])
    amp = make("amplifier", _amplifier_factory, **spec["amplifier"])
    tia = make("feedback", Tia, amp=amp, **spec["feedback"])
    post = (make("post_filter", PostFilter, **spec["post_filter"])
            if "post_filter" in spec else None)
    kwargs = dict(spec["operating_point"])
    kwargs.update(spec.get("signal", {}))
    kwargs.update(spec.get("limits", {}))
    kwargs.update(spec.get("analysis", {}))
    return make(("operating_point", "signal", "limits", "analysis"), Receiver,
                photodiode=photodiode, tia=tia, post_filter=post, **kwargs)


def _in_file(exc: DesignError, sections, where: str) -> DesignError:
    """A constructor's DesignError restated with the file's key and section path.

    The constructor names its argument (``given_responsivity``); the file's key may differ
    (``responsivity``), so the message is rewritten with the key and prefixed with
    ``[section]``.
    """
    sections = (sections,) if isinstance(sections, str) else tuple(sections)
    message, section = str(exc), sections[0]
    keys = [k for k in SCHEMA if k.section in sections]
    for key in keys:
        if key.arg == exc.parameter:
            section = key.section  # the last listed section that has it: where it came from
        if key.arg != key.name:
            message = re.sub(rf"\b{re.escape(key.arg)}\b", key.name, message)
    name = next((k.name for k in keys if k.arg == exc.parameter), exc.parameter or "")
    return DesignError(f"{where}[{section}] {message}", parameter=f"[{section}] {name}".strip())


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
        raise DesignError(str(exc), parameter="material") from None
    return cls(material=mat, **kwargs)


#: Constructor arguments of the avalanche photodiode among the [photodiode] keys.
_APD_ARGS = ("injection", "surface_dark_current", "bulk_dark_current", "saturation_velocity")


def _photodiode_factory(junction, kind="photodiode", **kwargs):
    from .device.photodiode import Photodiode

    apd_args = {k: kwargs.pop(k) for k in _APD_ARGS if k in kwargs}
    pd_ = Photodiode(junction=junction, **kwargs)
    if kind != "avalanche":
        return pd_
    from .device.apd import AvalanchePhotodiode

    return AvalanchePhotodiode(photodiode=pd_, **apd_args)


def _amplifier_factory(gain_points=None, fit_poles=None, fit_zeros=None, **fields):
    """OpAmp from the [amplifier] keys: given gain parameters, or fitted to gain points."""
    from .circuit.amplifier import OpAmp

    if gain_points is None:
        for name, value in (("fit_poles", fit_poles), ("fit_zeros", fit_zeros)):
            if value is not None:
                raise DesignError(f"{name} = {value}: applies only with gain_points; valid "
                                  "range: leave it out, or give gain_points", parameter=name)
        if "gbw" not in fields:
            raise DesignError("missing key gbw: expected a frequency in Hz such as '1 GHz' "
                              "(or gain_points to fit)", parameter="gbw")
        return OpAmp(**fields)
    from .circuit.amplifier_fit import fit_open_loop_gain

    given = [k for k in ("gbw", "dc_gain", "zeros") if k in fields] + (
        ["poles"] if fields.get("poles") else [])
    if given:
        raise DesignError(f"{given[0]} and gain_points both given; valid range: one of them "
                          "(the fit of gain_points sets gbw, dc_gain, poles and zeros)",
                          parameter=given[0])
    fields.pop("poles", None)
    freq, mag, phase = gain_points
    fit = fit_open_loop_gain(freq, mag, phase, poles=fit_poles or 0, zeros=fit_zeros or 0)
    return fit.amplifier(**fields)


#: Deepest nesting of arrays and inline tables a design file may use (a wavelength table
#: needs 2); deeper nesting would exhaust the TOML parser's recursion.
MAX_NESTING = 16


def _check_nesting(text: str, where: str) -> None:
    """Refuse arrays or inline tables nested deeper than :data:`MAX_NESTING`, naming the key.

    A linear scan that skips strings and comments; table headers (``[a.b]``, ``[[a]]``)
    open no nesting.
    """
    section, key, depth, i, n = "", "", 0, 0, len(text)
    line_start = True
    while i < n:
        c = text[i]
        if c in "\"'":
            quote = text[i:i + 3] if text[i:i + 3] in ('"""', "'''") else c
            j = i + len(quote)
            while j < n and not text.startswith(quote, j):
                j += 2 if (c == '"' and text[j] == "\\") else 1
            i, line_start = j + len(quote), False
            continue
        if c == "#":
            i = text.find("\n", i)
            i = n if i < 0 else i
            continue
        if c == "\n":
            line_start = True
        elif c in " \t\r":
            pass
        elif line_start and depth == 0 and c == "[":
            end = text.find("\n", i)
            section = text[i:n if end < 0 else end].strip("[] \t\r").split("]")[0].strip()
            i = n if end < 0 else end
            continue
        elif line_start and depth == 0:
            m = re.match(r"[^=\n]*", text[i:])
            key = m.group(0).strip()
            i += len(m.group(0))
            line_start = False
            continue
        elif c in "[{":
            depth += 1
            if depth > MAX_NESTING:
                place = f"[{section}] {key}" if section else key
                raise DesignError(f"{where}{place}: arrays or tables nested deeper than "
                                  f"{MAX_NESTING} levels; expected a value such as '5 pF'",
                                  parameter=place)
        elif c in "]}":
            depth = max(depth - 1, 0)
        if c != "\n":
            line_start = line_start and c in " \t\r"
        i += 1


def loads_design(text: str, name: str = ""):
    """Build a :class:`~photorx.analysis.receiver.Receiver` from design-file text.

    Parameters
    ----------
    text : str
        The TOML text of a design file.
    name : str
        Source name (usually the file name) put in front of error messages; default ``""``.
    """
    where = f"{name}: " if name else ""
    _check_nesting(text, where)
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DesignError(f"{where}not a valid TOML file ({exc})") from None
    except (RecursionError, ValueError) as exc:  # an integer of 5,000 digits, ...
        long = re.search(r"^[ \t]*([^=\n#]+?)[ \t]*=[ \t]*[-+]?[\d_]{1000,}", text, re.M)
        place = f"{long.group(1)}: an integer of more than 1,000 digits; " if long else ""
        raise DesignError(f"{where}{place}not a valid TOML file ({type(exc).__name__}: "
                          f"{str(exc)[:80]})", parameter=long.group(1) if long else None
                          ) from None
    spec = read_design(doc, name)
    rx = _build(spec, where)
    _study_settings(spec, rx, where)  # a bad [tolerances] or [specs] entry fails the load
    return rx


def _study_settings(spec: dict, rx, where: str = "") -> tuple[dict, dict]:
    """The file's ``[tolerances]`` and ``[specs]``, checked against the built receiver."""
    if not spec.get("tolerances") and not spec.get("specs"):
        return {}, {}  # nothing to check: the study machinery (pandas, scipy) stays unloaded
    from .analysis.tolerance import parse_study

    tolerances = dict(spec.get("tolerances", {}))
    specs = {k: (v if isinstance(v, str) else list(v) if isinstance(v, list) else str(v))
             for k, v in spec.get("specs", {}).items()}
    for section, table in (("tolerances", tolerances), ("specs", specs)):
        for key, value in table.items():
            one = ({key: tuple(value) if isinstance(value, list) else value}, {"bandwidth": ">= 0"}
                   ) if section == "tolerances" else ({"rf": "1 %"}, {key: value})
            try:
                parse_study(rx, *one)
            except DesignError as exc:
                raise DesignError(f"{where}[{section}] {key}: {exc}",
                                  parameter=f"[{section}] {key}") from None
    return ({k: tuple(v) if isinstance(v, list) else v for k, v in tolerances.items()}, specs)


def load_study(path=None) -> tuple:
    """Read a design file with its tolerance study: the receiver, tolerances and specs.

    Parameters
    ----------
    path : str or path-like, optional
        As :func:`load_design`.

    Returns
    -------
    tuple
        ``(receiver, tolerances, specs)``; the dicts hold the ``[tolerances]`` and
        ``[specs]`` sections as :func:`~photorx.analysis.tolerance.tolerance_study` takes
        them (empty when the file has none).
    """
    text, name = _design_text(path)
    where = f"{name}: "
    _check_nesting(text, where)
    rx = loads_design(text, name=name)
    spec = read_design(tomllib.loads(text), name)
    return (rx, *_study_settings(spec, rx, where))


def _design_text(path=None) -> tuple[str, str]:
    """(text, name) of a design file or shipped demo; errors as :func:`load_design`."""
    if path is None or str(path) in DEMO_DESIGNS:
        p = demo_design_path(path or DEFAULT_DESIGN)
        return p.read_text(encoding="utf-8"), p.name
    p = Path(path)
    try:
        return p.read_text(encoding="utf-8"), str(p)
    except FileNotFoundError:
        demos = "" if p.suffix else f" or demo name (demos: {', '.join(DEMO_DESIGNS)})"
        raise DesignError(f"{p}: no such design file{demos}") from None
    except IsADirectoryError:
        raise DesignError(f"{p}: is a directory, not a design file") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise DesignError(f"{p}: cannot read design file ({exc})") from None


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
    text, name = _design_text(path)
    return loads_design(text, name=name)


def demo_design_path(name: str = DEFAULT_DESIGN) -> Path:
    """Path of a shipped demo design (package data in ``photorx/designs``).

    Parameters
    ----------
    name : str
        One of :data:`DEMO_DESIGNS`; default :data:`DEFAULT_DESIGN`. Any other name is a
        :class:`~photorx.errors.DesignError`.
    """
    if name not in DEMO_DESIGNS:
        raise DesignError(f"no demo design named {name!r}; known: {', '.join(DEMO_DESIGNS)}",
                          parameter="design")
    return Path(str(resources.files("photorx") / "designs" / f"{name}.toml"))


def design_name(path=None) -> str:
    """The ``[design] name`` of a design file or demo ("" when absent or unreadable).

    Parameters
    ----------
    path : str or path-like, optional
        The TOML file or a name from :data:`DEMO_DESIGNS`; None means the default demo.
    """
    try:
        p = demo_design_path(path or DEFAULT_DESIGN) if path is None or str(path) in DEMO_DESIGNS \
            else Path(path)
        doc = tomllib.loads(p.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError, DesignError):
        return ""
    design = doc.get("design")
    name = design.get("name", "") if isinstance(design, dict) else ""
    return name if isinstance(name, str) else ""


def demo_receiver(name: str = DEFAULT_DESIGN):
    """The receiver of a shipped demo design (default: the 1310 nm InGaAs PIN link receiver).

    Parameters
    ----------
    name : str
        One of :data:`DEMO_DESIGNS`; default :data:`DEFAULT_DESIGN`.
    """
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


#: fixed write units -> power of ten of their factor to SI
_WRITE_SCALE = {"A/W": 0, "um^2": -12, "mm^2": -6, "cm^-3": 6, "cm^-4": 8, "nm": -9, "um": -6,
                "K": 0}


def format_quantity(value: float, unit: str, write: str | None = None) -> str:
    """Exact text of an SI value: ``format_quantity(2.2e-12, "F") == "2.2 pF"``.

    The decimal digits are those of ``repr(value)`` shifted by a power of ten, so the text
    reads back (with :func:`~photorx.units.parse_quantity`) to exactly ``value``.

    Parameters
    ----------
    value : float
        The value in SI units; any float (``inf`` and ``nan`` are written as such).
    unit : str
        SI unit symbol appended after an engineering prefix (``"F"``, ``"ohm"``; ``"bit/s"``
        takes no prefix below one).
    write : str or None
        Fixed unit to write in instead of a prefix of ``unit``: ``"A/W"``, ``"um^2"``,
        ``"mm^2"``, ``"cm^-3"``, ``"cm^-4"``, ``"nm"``, ``"um"``, ``"K"`` or ``"area"``
        (um^2 below 1 mm^2, else mm^2); default None.
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
    if key.kind == "curve":  # a NoiseCurve (or a (frequencies, values) pair)
        pairs = zip(*((value.frequencies, value.densities) if hasattr(value, "densities")
                      else value))
        return [[format_quantity(f, "Hz"), format_quantity(v, key.unit, key.write)]
                for f, v in pairs]
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
    photodiode, apd = rx.photodiode, None
    if callable(getattr(photodiode, "multiplication", None)):  # an avalanche photodiode
        apd, photodiode = photodiode, getattr(photodiode, "photodiode", None)
        if photodiode is None:
            raise DesignError("a separate-absorption-multiplication APD (structure) cannot be "
                              "written to a design file; valid: an APD on a photodiode "
                              "junction", parameter="photodiode")
    junction = photodiode.junction
    model = _JUNCTION_MODELS.get(type(junction).__name__)
    if model is None:
        raise DesignError(f"junction of type {type(junction).__name__} cannot be written to a "
                          "design file", parameter="junction")
    objects = {
        "photodiode.junction": junction, "photodiode": photodiode, "amplifier": rx.tia.amp,
        "feedback": rx.tia, "operating_point": rx, "signal": rx, "limits": rx, "analysis": rx,
        "post_filter": rx.post_filter,
    }
    chosen = {"photodiode.junction": model,
              "photodiode": "photodiode" if apd is None else "avalanche"}
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
            elif section == "photodiode" and key.name == "kind":
                if apd is not None:
                    values["kind"] = "avalanche"
            elif section == "photodiode" and key.arg in _APD_ARGS:
                value = getattr(apd, key.arg)
                if value is None or (key.default is OMIT and _is_default(apd, key.arg, value)):
                    continue
                values[key.name] = value
            elif section == "photodiode.junction" and key.name == "material":
                values["material"] = junction.material.name
            elif section == "photodiode.junction" and key.name == "temperature":
                if float(np.asarray(junction.temperature)) != _scalar(rx.temperature,
                                                                      "temperature"):
                    values["temperature"] = junction.temperature
            else:
                value = getattr(obj, key.arg, None)  # None: a load-only key (gain_points)
                if value is None or (key.default is OMIT and _is_default(obj, key.arg, value)):
                    continue
                if key.default is OMIT and key.kind == "list" and not len(value):
                    continue  # an empty list left to its constructor default (zeros)
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
    """Design-file text of a receiver (stable: the same receiver always gives the same text).

    Sections and keys come in schema order; lists are written inline; keys whose
    constructor default is in force (and optional keys without a value) are left out.

    Parameters
    ----------
    rx : Receiver
        A single design (array-valued parameters are an error).
    name, description : str
        Optional ``[design]`` text; default ``""`` (section left out when both are empty).
    """
    values = _design_values(rx)
    if name or description:
        values["design"] = {k: v for k, v in (("name", name), ("description", description)) if v}
    lines = ["# photorx design file (TOML); quantities carry their units. "
             "See `photorx template`.", ""]
    for section in SECTIONS:
        if section not in values:
            continue
        rows = [f"{key.name} = {_toml_value(_written(key, values[section][key.name]))}"
                for key in _keys(section) if key.name in values[section]]
        if not rows and not SECTIONS[section]:
            continue  # an optional section with nothing to say
        lines += [f"[{section}]", *rows, ""]
    return "\n".join(lines)


def _toml_value(value) -> str:
    """TOML text of a written value: string, integer, float (inf allowed) or inline list."""
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)  # JSON strings are TOML basic strings
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value)
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_toml_value(v) for v in value) + "]"
    raise DesignError(f"cannot write {value!r} to a design file")


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
    from ._files import atomic_write_text

    return atomic_write_text(path, dumps_design(rx, name, description))


# ============================================================================================
# template
# ============================================================================================
def design_template() -> str:
    """A commented template design file (the default demo, every key explained).

    Optional keys left at their defaults appear commented out with an example value; the
    template itself loads as a valid design.
    """
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
        sel_key = next((k for k in keys if k.name == selector), None)
        chosen = values.get(selector, None if sel_key is None or sel_key.default is REQUIRED
                            else sel_key.default) if selector else None
        lines.append(f"[{section}]" + ("" if required else "  # optional section"))
        if section not in sections:
            for key in keys:
                need = "required in the section" if key.default is REQUIRED else "optional"
                lines += textwrap.wrap(f"{key.doc} ({need}; {_expected(key)})", width=88,
                                       initial_indent="# ", subsequent_indent="#   ")
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
                lines.append(f"{key.name} = {_toml_value(values[key.name])}")
            else:
                lines.append(f"# {key.name} = {_example(key)}")
        if selector and any(k.when for k in keys):
            # the keys of the other choices, with an example each, so that switching the
            # model needs no guessing of names or units
            others = [m for k in keys for m in k.when if m != chosen]
            for other in dict.fromkeys(others):
                extra = [k for k in keys if k.when and other in k.when
                         and chosen not in k.when]
                shared = [k.name for k in keys if k.when and other in k.when
                          and chosen in k.when]
                common = any(not k.when and k.name != selector for k in keys)
                lines.append(f"# with {selector} = \"{other}\", replace the {chosen}-only "
                             "keys above by:" if shared else
                             f"# with {selector} = \"{other}\", add these keys:" if common else
                             f"# with {selector} = \"{other}\", use only these keys:")
                for k in extra:
                    need = "required" if k.default is REQUIRED else "optional"
                    lines += textwrap.wrap(f"{k.name} = {_example(k)}  # {k.doc} ({need})",
                                           width=88, initial_indent="#   ",
                                           subsequent_indent="#       ")
        lines.append("")
    lines += _STUDY_TEMPLATE
    return "\n".join(lines)


#: The template's commented ``[tolerances]`` and ``[specs]`` sections (read by
#: ``photorx tolerance`` and :func:`load_study`).
_STUDY_TEMPLATE = [
    "# [tolerances]  # optional section: component tolerances for 'photorx tolerance'",
    "# Design parameter (a field name such as rf, cf, gbw, area, reverse_bias, or a dotted",
    "# path in quotes) = its distribution over built units: \"P %\" is uniform within +-P %",
    "# of the nominal; \"normal:SIGMA\" (relative sigma, e.g. \"normal:2 %\", at most 30 %);",
    "# \"uniform:LOW:HIGH\" (ends with units); \"lognormal:SIGMA\" (sigma of ln value, <= 1).",
    "# rf = \"1 %\"",
    "# cf = \"normal:5 %\"",
    "# \"tia.amp.gbw\" = \"lognormal:0.2\"",
    "",
    "# [specs]  # optional section: what every built unit must meet",
    "# Receiver figure = condition, \">= VALUE\" or \"<= VALUE\" with the figure's unit (a list",
    "# for both bounds); a unit passes when it meets every spec at every temperature corner.",
    "# bandwidth = \">= 900 MHz\"",
    "# phase_margin = \">= 45\"",
    "# input_noise_rms = [\">= 1 pA\", \"<= 200 nA\"]",
    "",
]


def _example(key: Key) -> str:
    if key.kind in ("text",):
        return f'"{key.example}"'
    if key.kind in ("list", "integer", "curve", "points") or (key.unit == "" and key.kind != "ratio"):
        return key.example
    return f'"{key.example}"'


def write_template(path) -> Path:
    """Write :func:`design_template` to ``path`` atomically.

    Parameters
    ----------
    path : str or path-like
        Destination file; replaced whole or left untouched on error.

    Returns
    -------
    pathlib.Path
    """
    from ._files import atomic_write_text

    return atomic_write_text(path, design_template())
