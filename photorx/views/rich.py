"""Rich display of design objects: compact parameter tables (HTML) and closed forms (LaTeX).

Junctions, photodiodes, amplifiers, the transimpedance stage and the receiver call
:func:`parameter_table_html` from their ``_repr_html_`` and :func:`closed_form_latex` from
their ``_repr_latex_`` (lazily, inside the method). Parameter names, units and help texts
come from the design-file schema (:data:`photorx.designschema.SCHEMA`), so the table reads
like the design file; doping is shown in cm^-3, wavelengths in nm and areas in um^2 or
mm^2 (the units the file is written in), everything else with an engineering prefix.

The closed forms are the textbook expressions of each model with the object's values
substituted (sympy renders them); they describe the model, the numbers still come from the
numeric engine.
"""

from __future__ import annotations

import html
import re

import numpy as np

__all__ = ["parameter_rows", "parameter_table_html", "closed_form", "closed_form_latex",
           "SECTION_TITLES"]

#: Display title of each design-file section.
SECTION_TITLES = {
    "photodiode.junction": "junction", "photodiode": "photodiode", "amplifier": "amplifier",
    "feedback": "feedback network", "operating_point": "operating point",
    "signal": "signal", "post_filter": "post filter", "limits": "limits",
    "analysis": "analysis",
}

_JUNCTIONS = ("AbruptJunction", "PinJunction", "LinearlyGradedJunction", "ParametricJunction")
_SECTION_OF = {"Photodiode": "photodiode", "OpAmp": "amplifier", "Tia": "feedback",
               "PostFilter": "post_filter", **{name: "photodiode.junction" for name in _JUNCTIONS}}
_WRITE_SCALE = {"A/W": 0, "um^2": -12, "mm^2": -6, "cm^-3": 6, "cm^-4": 8, "nm": -9,
                "um": -6, "K": 0}


def _value_text(key, value) -> tuple[str, str]:
    """(number text, unit text) of one parameter value, in its design-file display unit."""
    if key.kind == "text" or key.unit is None or isinstance(value, str):
        return str(value), ""
    if key.kind == "table" and isinstance(value, tuple) and len(value) == 2 \
            and np.ndim(value[0]):  # a table against wavelength: its size only
        return f"table of {len(value[0])} wavelengths", ""
    if key.kind == "list" or isinstance(value, (tuple, list)):
        parts = [_scalar_text(key, v) for v in value]
        if not parts:
            return "none", ""
        unit = parts[0][1] if len({p[1] for p in parts}) == 1 else ""
        return ", ".join(p[0] if unit else " ".join(p) for p in parts), unit
    return _scalar_text(key, value)


def _scalar_text(key, value) -> tuple[str, str]:
    from ..units import format_eng

    v = float(np.asarray(value))
    if not np.isfinite(v):
        return ("none" if np.isnan(v) else ("inf" if v > 0 else "-inf")), key.unit
    write = key.write
    if write == "area":
        write = "mm^2" if abs(v) >= 1e-6 else "um^2"
    if write in _WRITE_SCALE:
        return f"{v / 10.0 ** _WRITE_SCALE[write]:.4g}", write
    if key.kind == "integer":
        return f"{int(v)}", ""
    if key.unit == "":
        return f"{v:.4g}", ""
    number, _, unit = format_eng(v, key.unit, digits=4).partition(" ")
    return number, unit or key.unit


def _object_values(obj) -> dict:
    """{section: {key name: value}} of a design object (or a whole receiver)."""
    from ..designfile import _design_values
    from ..designschema import SCHEMA

    kind = type(obj).__name__
    if kind == "Receiver":
        return _design_values(obj)
    section = _SECTION_OF.get(kind)
    if section is None:
        raise TypeError(f"no parameter table for {kind}")
    values = {}
    for key in SCHEMA:
        if key.section != section or key.name == "model":
            continue
        if key.name == "material":
            if hasattr(obj, "material"):
                values["material"] = obj.material.name
            continue
        value = getattr(obj, key.arg, None)
        if value is not None:
            values[key.name] = value
    out = {section: values}
    if kind == "Photodiode":  # the junction it is built on, then the diode's own keys
        out = {**_object_values(obj.junction), **out}
    elif kind == "Tia":
        out = {**_object_values(obj.amp), **out}
    return out


def parameter_rows(obj) -> list[tuple]:
    """The parameters of a design object as display rows.

    Parameters
    ----------
    obj : junction, Photodiode, OpAmp, Tia, PostFilter or Receiver
        A design object of photorx.

    Returns
    -------
    list of tuple
        ``(section title, parameter, number text, unit text, help text)`` in design-file
        order; the parameter names are the design file's keys.
    """
    from ..designschema import SCHEMA

    keys = {(k.section, k.name): k for k in SCHEMA}
    rows = []
    order = list(SECTION_TITLES)
    sections = sorted(_object_values(obj).items(),
                      key=lambda kv: order.index(kv[0]) if kv[0] in order else len(order))
    for section, values in sections:
        for name, value in values.items():
            key = keys[(section, name)]
            number, unit = _value_text(key, value)
            rows.append((SECTION_TITLES.get(section, section), name, number, unit, key.doc))
    return rows


_NUMBER = re.compile(r"^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?(, [-+]?[\d.eE+-]+)*$")


def parameter_table_html(obj, title: str | None = None) -> str:
    """A compact HTML table of a design object's parameters with units, by section.

    Text is left-aligned, numbers right-aligned in their own column beside the unit; the
    help text of each key shows as a tooltip on its name.

    Parameters
    ----------
    obj : junction, Photodiode, OpAmp, Tia, PostFilter or Receiver
        A design object of photorx.
    title : str, optional
        Caption; default the object's type name.

    Returns
    -------
    str
        An HTML fragment (a ``<table class="photorx-parameters">``).
    """
    caption = html.escape(title if title is not None else type(obj).__name__)
    parts = ['<table class="photorx-parameters" style="border-collapse:collapse">',
             f'<caption style="text-align:left;font-weight:bold">{caption}</caption>',
             '<thead><tr><th style="text-align:left">parameter</th>'
             '<th style="text-align:right">value</th><th style="text-align:left">unit</th>'
             "</tr></thead><tbody>"]
    section = None
    for sec, name, number, unit, doc in parameter_rows(obj):
        if sec != section:
            section = sec
            parts.append(f'<tr><th colspan="3" style="text-align:left;padding-top:0.4em">'
                         f"{html.escape(sec)}</th></tr>")
        align = "right" if _NUMBER.match(number) else "left"
        parts.append(
            f'<tr><td style="text-align:left" title="{html.escape(doc)}">{html.escape(name)}</td>'
            f'<td class="{"num" if align == "right" else "text"}" style="text-align:{align};'
            f'font-variant-numeric:tabular-nums">{html.escape(number)}</td>'
            f'<td style="text-align:left">{html.escape(unit)}</td></tr>')
    parts.append("</tbody></table>")
    return "".join(parts)


# -- closed forms ----------------------------------------------------------------------------
_CLOSED_FORMS = ("AbruptJunction", "LinearlyGradedJunction", "ParametricJunction", "OpAmp",
                 "Tia")
_MODEL_FIELDS = {"AbruptJunction": ("na", "nd", "area", "temperature"),
                 "LinearlyGradedJunction": ("gradient", "area", "temperature"),
                 "ParametricJunction": ("cj0", "vj", "m"), "OpAmp": ("gbw", "dc_gain"),
                 "Tia": ("rf", "cf")}


def _scalar_model(obj) -> bool:
    """True when the model's parameters are single numbers (one design, one formula)."""
    return all(np.ndim(getattr(obj, name)) == 0 for name in _MODEL_FIELDS[type(obj).__name__])


def closed_form(obj):
    """The textbook closed form of a model with the object's values, as a sympy equation.

    Forms (SI units): abrupt junction C(V_R) = A sqrt(q eps N_A N_D / (2 (N_A + N_D)
    (V_bi + V_R))); linearly graded C(V_R) = A (q a eps^2 / (12 (V_bi + V_R)))^(1/3) (Sze
    and Ng, Physics of Semiconductor Devices, 3rd ed., 2007, eqs. 2.12 and 2.30); the
    parametric form C(V_R) = Cj0 / (1 + V_R/Vj)^m (the SPICE junction model); the amplifier
    A(s) = A0 / (1 + s A0/(2 pi GBW)) prod 1/(1 + s/(2 pi f_k)) and the ideal-amplifier
    transimpedance Zt(s) = Rf / (1 + s Rf Cf) (Graeme, Photodiode Amplifiers, 1996, ch. 2).

    Parameters
    ----------
    obj : AbruptJunction, LinearlyGradedJunction, ParametricJunction, OpAmp or Tia
        The model.

    Returns
    -------
    sympy.Eq or None
        ``lhs = rhs`` in the symbol ``V_R`` [V] (junctions) or ``s`` [rad/s]; None for a
        model without a closed form here (or one holding arrays).
    """
    kind = type(obj).__name__
    if kind not in _CLOSED_FORMS or not _scalar_model(obj):
        return None
    import sympy as sp

    from ..constants import q

    def num(v, digits=4):
        a = np.asarray(v, dtype=float)
        if a.ndim:
            raise ValueError
        return sp.Float(float(a), digits)

    vr, s = sp.Symbol("V_R"), sp.Symbol("s")
    try:
        if kind == "AbruptJunction":
            neff = num(obj.na) * num(obj.nd) / (num(obj.na) + num(obj.nd))
            rhs = num(obj.area) * sp.sqrt(num(q) * num(obj.material.permittivity) * neff
                                          / (2 * (num(obj.built_in_potential()) + vr)))
            return sp.Eq(sp.Function("C")(vr), rhs, evaluate=False)
        if kind == "LinearlyGradedJunction":
            rhs = num(obj.area) * sp.cbrt(num(q) * num(obj.gradient)
                                          * num(obj.material.permittivity) ** 2
                                          / (12 * (num(obj.built_in_potential()) + vr)))
            return sp.Eq(sp.Function("C")(vr), rhs, evaluate=False)
        if kind == "ParametricJunction":
            rhs = num(obj.cj0) / (1 + vr / num(obj.vj)) ** num(obj.m)
            return sp.Eq(sp.Function("C")(vr), rhs, evaluate=False)
        if kind == "OpAmp":
            a0 = num(obj.dc_gain)
            rhs = a0 / (1 + s * a0 / (2 * sp.pi * num(obj.gbw)))
            for fp in obj.poles or ():
                rhs = rhs / (1 + s / (2 * sp.pi * num(fp)))
            return sp.Eq(sp.Function("A")(s), rhs, evaluate=False)
        if kind == "Tia":
            rhs = num(obj.rf) / (1 + s * num(obj.rf) * num(obj.cf))
            return sp.Eq(sp.Function("Z_t")(s), rhs, evaluate=False)
    except ValueError:  # arrays: one closed form per design point is not shown
        return None
    return None


def _tex(value, unit="", write=None) -> str:
    """LaTeX of a value with an engineering prefix (or in ``write`` units, e.g. cm^-3)."""
    from ..units import format_eng

    v = float(np.asarray(value))
    if write:
        mant, exp = f"{v / 10.0 ** _WRITE_SCALE[write]:.3e}".split("e")
        mant = mant.rstrip("0").rstrip(".")
        number = f"{mant} \\times 10^{{{int(exp)}}}" if int(exp) else mant
        unit_tex = write.replace("um", "\\mu m").replace("^", "^{") + ("}" if "^" in write else "")
        return f"{number}\\ \\mathrm{{{unit_tex}}}"
    number, _, unit_text = format_eng(v, unit, digits=4).partition(" ")
    unit_text = unit_text.replace("ohm", "\\Omega").replace("u", "\\mu ", 1) \
        if unit_text.startswith("u") else unit_text.replace("ohm", "\\Omega")
    number = number.replace("e", " \\times 10^{") + "}" if "e" in number else number
    return f"{number}\\ \\mathrm{{{unit_text}}}" if unit_text else number


def _where(pairs) -> str:
    return r",\qquad " + r",\ ".join(f"{name} = {text}" for name, text in pairs)


def closed_form_latex(obj) -> str | None:
    """``$$...$$`` LaTeX of the model's closed form and this object's values, or None.

    The forms are those of :func:`closed_form`, written symbolically, followed by the
    values of their symbols.

    Parameters
    ----------
    obj : AbruptJunction, LinearlyGradedJunction, ParametricJunction, OpAmp or Tia
        The model.

    Returns
    -------
    str or None
        None for a model without a closed form here, or one holding arrays.
    """
    kind = type(obj).__name__
    if kind not in _CLOSED_FORMS or not _scalar_model(obj):
        return None
    if kind == "AbruptJunction":
        body = (r"C(V_R) = A\sqrt{\frac{q\,\varepsilon_s}{2\,(V_{bi}+V_R)}\,"
                r"\frac{N_A N_D}{N_A+N_D}}" + _where([
                    ("A", _tex(obj.area, write="mm^2" if obj.area >= 1e-6 else "um^2")),
                    ("N_A", _tex(obj.na, write="cm^-3")), ("N_D", _tex(obj.nd, write="cm^-3")),
                    (r"\varepsilon_s", _tex(obj.material.permittivity, "F/m")),
                    ("V_{bi}", _tex(obj.built_in_potential(), "V"))]))
    elif kind == "LinearlyGradedJunction":
        body = (r"C(V_R) = A\left(\frac{q\,a\,\varepsilon_s^2}{12\,(V_{bi}+V_R)}\right)^{1/3}"
                + _where([("A", _tex(obj.area, write="mm^2" if obj.area >= 1e-6 else "um^2")),
                          ("a", _tex(obj.gradient, write="cm^-4")),
                          (r"\varepsilon_s", _tex(obj.material.permittivity, "F/m")),
                          ("V_{bi}", _tex(obj.built_in_potential(), "V"))]))
    elif kind == "ParametricJunction":
        body = (r"C(V_R) = \frac{C_{j0}}{(1 + V_R/V_j)^{m}}"
                + _where([("C_{j0}", _tex(obj.cj0, "F")), ("V_j", _tex(obj.vj, "V")),
                          ("m", f"{float(obj.m):.4g}")]))
    elif kind == "OpAmp":
        extra = "".join(rf"\left(1 + \frac{{s}}{{2\pi f_{{{i + 1}}}}}\right)"
                        for i in range(len(obj.poles or ())))
        body = (rf"A(s) = \frac{{A_0}}{{\left(1 + \frac{{s A_0}}{{2\pi\,\mathrm{{GBW}}}}\right)"
                rf"{extra}}}" + _where(
                    [("A_0", f"{float(obj.dc_gain):.4g}"), (r"\mathrm{GBW}", _tex(obj.gbw, "Hz"))]
                    + [(f"f_{{{i + 1}}}", _tex(fp, "Hz")) for i, fp in enumerate(obj.poles or ())]))
    else:  # Tia
        body = (r"|Z_t(s)| = \left|\frac{R_f}{1 + s R_f C_f}\right|"
                + _where([("R_f", _tex(obj.rf, "ohm")), ("C_f", _tex(obj.cf, "F"))])
                + r"\quad\text{(ideal amplifier)}")
    return f"$${body}$$"
