"""SI scale factors, engineering-notation display and parsing of quantities as written in the trade.

photorx computes in SI everywhere. The factors here only make user code read like a
data sheet: ``area = (100 * um) ** 2``, ``nd = 1e15 * per_cm3``, ``rf = 10 * kohm``.

Strings such as ``"2.2 pF"``, ``"10 kohm"``, ``"1e15 cm^-3"``, ``"1310 nm"`` or
``"-20 dBm"`` are parsed by :func:`parse_quantity` with the units library *pint*, and
shown by :func:`format_eng` with an engineering prefix.
"""

from __future__ import annotations

import functools
import math
import re
from decimal import Decimal

import numpy as np

from .errors import DesignError

__all__ = [
    # length
    "m", "cm", "mm", "um", "nm", "pm",
    # capacitance
    "F", "uF", "nF", "pF", "fF",
    # resistance
    "ohm", "kohm", "Mohm", "Gohm",
    # frequency and time
    "Hz", "kHz", "MHz", "GHz", "s", "ms", "us", "ns", "ps", "fs",
    # current, voltage, power
    "A", "mA", "uA", "nA", "pA", "fA", "V", "mV", "uV", "nV", "W", "mW", "uW", "nW", "pW",
    # doping and other densities
    "per_cm3", "per_cm4", "cm2", "cm2_per_Vs", "cm_per_s", "per_cm", "V_per_cm",
    # helpers
    "format_eng", "parse_quantity", "dbm_to_watt", "watt_to_dbm",
    # display text of values in tables and results
    "NONE", "display_value", "figure_text",
]

# length [m]
m = 1.0
cm = 1e-2
mm = 1e-3
um = 1e-6
nm = 1e-9
pm = 1e-12
# capacitance [F]
F = 1.0
uF = 1e-6
nF = 1e-9
pF = 1e-12
fF = 1e-15
# resistance [ohm]
ohm = 1.0
kohm = 1e3
Mohm = 1e6
Gohm = 1e9
# frequency [Hz] and time [s]
Hz = 1.0
kHz = 1e3
MHz = 1e6
GHz = 1e9
s = 1.0
ms = 1e-3
us = 1e-6
ns = 1e-9
ps = 1e-12
fs = 1e-15
# current [A], voltage [V], power [W]
A = 1.0
mA = 1e-3
uA = 1e-6
nA = 1e-9
pA = 1e-12
fA = 1e-15
V = 1.0
mV = 1e-3
uV = 1e-6
nV = 1e-9
W = 1.0
mW = 1e-3
uW = 1e-6
nW = 1e-9
pW = 1e-12
# densities and material units expressed in SI
per_cm3 = 1e6  #: 1 cm^-3 in m^-3
per_cm4 = 1e8  #: 1 cm^-4 in m^-4 (graded-junction gradient)
per_cm = 1e2  #: 1 cm^-1 in m^-1 (absorption coefficient)
cm2 = 1e-4  #: 1 cm^2 in m^2
cm2_per_Vs = 1e-4  #: mobility, 1 cm^2/(V s) in m^2/(V s)
cm_per_s = 1e-2  #: velocity, 1 cm/s in m/s
V_per_cm = 1e2  #: field, 1 V/cm in V/m

_PREFIXES = {
    -18: "a", -15: "f", -12: "p", -9: "n", -6: "u", -3: "m", 0: "",
    3: "k", 6: "M", 9: "G", 12: "T", 15: "P",
}


_NO_PREFIX = frozenset({"", "dB", "dBm", "deg", "%", "A/W", "V/V", "W/W"})


def format_eng(value, unit: str = "", digits: int = 3) -> str:
    """Format a number with an engineering prefix, e.g. ``format_eng(2.2e-12, "F") == "2.2 pF"``.

    Parameters
    ----------
    value : float
        Value in SI units.
    unit : str
        SI unit symbol appended after the prefix (``"F"``, ``"ohm"``, ``"Hz"``...).
        Units that take no prefix by convention (``"dB"``, ``"deg"``, ``"%"``,
        ``"dBm"``, ratios such as ``"A/W"``), units with a power (``"m^-3"``, ``"m^2"``,
        where a prefix would be ambiguous) and empty units are shown in plain notation.
    digits : int
        Significant digits.

    Returns
    -------
    str
        ``"nan"``/``"inf"`` pass through; zero shows as ``"0 unit"``.
    """
    v = float(value)
    unit = unit or ""
    sep = " " if unit else ""
    if not math.isfinite(v):
        return f"{v}{sep}{unit}"
    if unit in _NO_PREFIX or unit.startswith("dB") or re.search(r"\^|\*\*|\d", unit):
        # a prefix on a powered unit would be misread ((1 um)^2 is 1e-12 m^2, not 1e-6 m^2)
        return f"{v:.{digits}g}{sep}{unit}"
    if v == 0:
        return f"0{sep}{unit}"
    exp3 = int(math.floor(math.log10(abs(v)) / 3) * 3)
    if not -18 <= exp3 <= 15:  # beyond the prefixes: scientific notation, not "2.5e+03 Pohm"
        return f"{v:.{digits}g} {unit}"
    mant = v / 10 ** exp3
    # rounding may carry to 1000 (999.96 -> 1000): step up one prefix
    if abs(float(f"{mant:.{digits}g}")) >= 1000 and exp3 < 15:
        exp3 += 3
        mant = v / 10 ** exp3
    text = f"{mant:.{digits}g}"
    return f"{text} {_PREFIXES[exp3]}{unit}"


def dbm_to_watt(p_dbm):
    """Optical or electrical power from dBm to W: P = 1 mW * 10^(dBm/10).

    Parameters
    ----------
    p_dbm : float or array_like
        Power [dBm], any real value.

    Returns
    -------
    numpy.ndarray
        Power [W], > 0 (0-d array for scalar input).
    """
    return 1e-3 * 10.0 ** (np.asarray(p_dbm, dtype=float) / 10.0)


def watt_to_dbm(p_watt):
    """Power from W to dBm; zero or negative power is a DesignError (no -inf).

    Parameters
    ----------
    p_watt : float or array_like
        Power [W], > 0.

    Returns
    -------
    float or numpy.ndarray
        Power [dBm]: 10 log10(P / 1 mW).
    """
    p = np.asarray(p_watt, dtype=float)
    if np.any(p <= 0):
        raise DesignError.out_of_range("power", p[p <= 0][0] if p.ndim else p, "W",
                                       "> 0 for a value in dBm")
    out = 10.0 * np.log10(p / 1e-3)
    return out if out.ndim else float(out)


@functools.lru_cache(maxsize=1)
def _registry():
    import pint

    ureg = pint.UnitRegistry()
    # Trade spellings pint does not know by itself.
    ureg.define("rtHz = Hz ** 0.5")
    return ureg


_NUMBER = r"[-+]?(?:inf\b|(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)"

# Names shown in dimension errors instead of pint's base-dimension formulas.
_DIMENSION_NAMES = (
    ("", "a plain number"), ("m", "a length"), ("m**2", "an area"), ("m**-3", "a density"),
    ("m**-4", "a doping gradient"), ("F", "a capacitance"), ("ohm", "a resistance"),
    ("Hz", "a frequency"), ("s", "a time"), ("A", "a current"), ("V", "a voltage"),
    ("W", "a power"), ("K", "a temperature"), ("V/rtHz", "a voltage noise density"),
    ("A/rtHz", "a current noise density"), ("A/W", "a responsivity"),
    ("m**-1", "an inverse length"),
)


def _clean_unit(text: str) -> str:
    """Trade spellings -> pint syntax (Ω, µ, √Hz, ^)."""
    text = (text.replace("Ω", "ohm").replace("µ", "u").replace("μ", "u")
            .replace("√Hz", "rtHz").replace("sqrt(Hz)", "rtHz").replace("^", "**").strip())
    # data sheets write "10 kOhm" and "1 MOhms"; pint knows only lower-case "ohm"
    return re.sub(r"Ohms?\b", "ohm", text)


def _dimension_name(units) -> str:
    ureg = _registry()
    dim = ureg.Quantity(1.0, units).dimensionality
    for spelled, name in _DIMENSION_NAMES:
        if ureg.Quantity(1.0, spelled).dimensionality == dim:
            return name
    return f"dimension {dim}"


def _parse_units(text: str, raw: str):
    ureg = _registry()
    _guard_expression(text, raw)
    try:
        return ureg.Unit(_clean_unit(text))
    except Exception as exc:  # pint raises several unrelated types
        raise DesignError(f"cannot read '{raw}' as a quantity (unknown unit '{text}': {exc}); "
                          "write e.g. '2.2 pF'") from None


#: Limits on what reaches pint: its parser evaluates powers exactly (``9**9**9`` would run
#: for hours), so exponents are plain numbers of modest size, and expressions are short.
MAX_EXPRESSION_LENGTH = 80
MAX_EXPONENT = 6
MAX_PARENTHESES = 4
MAX_DBM = 300.0
_EXPONENT = re.compile(r"\s*(\()?\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:\s*/\s*\d+)?)\s*(\))?")


def _guard_expression(text: str, raw: str) -> None:
    """Refuse expressions that would stall or overflow the units parser (DesignError)."""
    if len(raw) > MAX_EXPRESSION_LENGTH:
        raise DesignError(f"cannot read '{raw[:40]}...' as a quantity: longer than "
                          f"{MAX_EXPRESSION_LENGTH} characters; write e.g. '2.2 pF'")
    depth = deepest = 0
    for char in text:
        depth += {"(": 1, ")": -1}.get(char, 0)
        deepest = max(deepest, depth)
    if deepest > MAX_PARENTHESES:
        raise DesignError(f"cannot read '{raw}' as a quantity: parentheses nested deeper than "
                          f"{MAX_PARENTHESES}; write e.g. '(100 um)^2'")
    cleaned = _clean_unit(text)
    for match in re.finditer(r"\*\*", cleaned):
        power = _EXPONENT.match(cleaned, match.end())
        rest = cleaned[power.end():].lstrip() if power else ""
        ok = (power is not None and (power.group(1) is None) == (power.group(3) is None)
              and not rest.startswith("**"))
        if ok:
            num, _, den = power.group(2).partition("/")
            divisor = float(den) if den.strip() else 1.0
            # a zero denominator ("^(1/0)") is no number at all
            ok = divisor != 0 and abs(float(num) / divisor) <= MAX_EXPONENT
        if not ok:
            raise DesignError(f"cannot read '{raw}' as a quantity: an exponent must be a plain "
                              f"number from -{MAX_EXPONENT} to {MAX_EXPONENT} (as in 'cm^-3' or "
                              "'(100 um)^2')")


def _exact_scale(number: str, factor: float) -> float:
    """number * factor, correctly rounded when the factor is a power of ten.

    ``"2.2 pF"`` gives the float nearest to 2.2e-12 (as the literal ``2.2e-12`` does),
    not ``2.2 * 1e-12``; this makes written design files read back bit for bit.
    """
    if factor > 0 and math.isfinite(float(number)):
        k = round(math.log10(factor))
        if abs(factor / 10.0 ** k - 1.0) < 1e-12:
            try:
                return float(Decimal(number).scaleb(k))
            except ArithmeticError:  # beyond Decimal's exponent range: the float answer
                pass
    return float(number) * factor


def _counting_units(units) -> list[str]:
    """Names in a unit that pint treats as dimensionless counts (bit, rad, cycle, percent)."""
    ureg = _registry()
    out = []
    for name in units._units:
        if ureg.Quantity(1.0, name).dimensionless and name != "dimensionless":
            out.append(name)
    return out


def _same_kind(source, target, raw: str, unit: str) -> None:
    """Refuse a bit rate given for a frequency and the other way round (pint equates them).

    pint reads ``bit`` and ``radian`` as dimensionless, so ``"1.2 bit/s"`` would pass as
    1.2 Hz and ``"1 kcycle/s"`` as 6.28 kHz; for photorx a bit rate is not a frequency.
    """
    ureg = _registry()
    wants_bits = "bit" in ureg.Quantity(1.0, target).to_base_units().units._units
    base = ureg.Quantity(1.0, source).to_base_units().units._units
    if wants_bits:
        if "bit" not in base:
            raise DesignError(f"'{raw}' is not a bit rate; write it in bit/s, e.g. '10 Gbit/s'")
        return
    counts = _counting_units(source)
    if counts and not _counting_units(target):
        what = "a bit rate" if "bit" in base else f"a quantity in '{', '.join(counts)}'"
        raise DesignError(f"'{raw}' is {what}, not {_dimension_name(target)} in {unit}")


_BARE_PREFIXES = {"f": 1e-15, "p": 1e-12, "n": 1e-9, "u": 1e-6, "µ": 1e-6, "k": 1e3, "M": 1e6,
                  "G": 1e9, "T": 1e12}


_PLAIN_PREFIXES = {"": 1.0, "m": 1e-3, "c": 1e-2, **_BARE_PREFIXES}


def _parse_plain(raw: str, unit: str | None):
    """``"<number> <prefix><unit>"`` in exactly the expected unit, without pint; else None.

    Most design-file values look like this ("10 kohm", "0.3 pF", "4 nV/rtHz"); reading them
    without the units library keeps the command line fast (pint takes about 0.4 s to load).
    A power of one unit (``m^-3``) takes the prefix to that power (``cm^-3`` = 1e6 m^-3);
    anything else - other units, offsets, dimension errors - goes the general way.
    """
    match = re.fullmatch(rf"({_NUMBER})\s*(\S*)", raw)
    if not match:
        return None
    if not match.group(2):
        return float(match.group(1))  # bare number: SI already
    if not math.isfinite(float(match.group(1))):
        return None  # overflowing numbers are named by the general path
    if unit == "W" and match.group(2).lower() == "dbm":
        if not abs(float(match.group(1))) <= MAX_DBM:
            return None  # out of range: the general path names the limits
        return float(dbm_to_watt(float(match.group(1))))
    if unit is None or unit == "degC":
        return None
    written = _clean_unit(match.group(2))
    if unit == "K":  # offset scales (degC) go the general way
        return float(match.group(1)) if written == "K" else None
    power = re.fullmatch(r"([A-Za-z]+)(?:\^|\*\*)(-?\d+)", unit)
    base, exponent = (power.group(1), int(power.group(2))) if power else (unit, 1)
    suffix = base if exponent == 1 else f"{base}**{exponent}"
    if not power and ("^" in unit or "**" in unit):
        return None
    if not written.endswith(suffix):
        return None
    factor = _PLAIN_PREFIXES.get(written[: len(written) - len(suffix)])
    return None if factor is None else _exact_scale(match.group(1), factor ** exponent)


def parse_quantity(text, unit: str | None = None) -> float:
    """Parse a quantity written as the trade writes it and return it in SI.

    Parameters
    ----------
    text : str or float
        ``"2.2 pF"``, ``"10 kohm"``, ``"10 kΩ"``, ``"1e15 cm^-3"``, ``"1310 nm"``,
        ``"5 nV/rtHz"``, ``"-20 dBm"``, ``"25 degC"``, ``"(100 um)^2"``, ``"inf ohm"``.
        A bare number (Python number or numeric string) is taken as SI already, and a
        number with a bare SI prefix (``"10k"``, ``"2.2p"``) as that multiple of SI.
    unit : str, optional
        Expected SI unit (pint syntax, e.g. ``"F"``, ``"ohm"``, ``"m^-3"``, ``"W"``).
        When given, a quantity of another dimension is a :class:`DesignError` and the
        result is expressed in this unit.

    Returns
    -------
    float
        Value in ``unit`` (SI base units when ``unit`` is None). Power-of-ten prefixes
        are applied in decimal, so ``parse_quantity("2.2 pF") == 2.2e-12`` exactly.

    Raises
    ------
    DesignError
        Unparseable text or wrong dimension; the message names both.
    """
    if isinstance(text, (int, float, np.integer, np.floating)) and not isinstance(text, bool):
        try:
            return float(text)
        except OverflowError:  # an integer beyond the float range
            digits = int(int(text).bit_length() * math.log10(2)) + 1  # str() may refuse it
            raise DesignError(f"cannot read an integer of about {digits} digits as a quantity: "
                              "beyond the range of floating-point numbers") from None
    if not isinstance(text, str):
        raise DesignError(f"cannot read {text!r} as a quantity; write e.g. '2.2 pF'")
    raw = text.strip()
    fast = _parse_plain(raw, unit)
    if fast is not None:
        return fast
    ureg = _registry()
    target = None if unit is None else _parse_units(unit, unit)
    match = re.fullmatch(rf"({_NUMBER})\s*(.*)", raw)
    if match and not match.group(2).strip():
        return float(match.group(1))  # bare number: SI already
    if match and match.group(2).strip() in _BARE_PREFIXES:
        # "10k", "2.2p": a bare SI prefix, as resistor and capacitor values are often written;
        # the unit is the expected one (pint alone would read "k" as Boltzmann's constant).
        return _exact_scale(match.group(1), _BARE_PREFIXES[match.group(2).strip()])
    if match and match.group(2).strip().lower() == "dbm":  # "dbm", "DBM" are slips for dBm
        if not abs(float(match.group(1))) <= MAX_DBM:
            raise DesignError(f"'{raw}' is beyond the range of a power in dBm "
                              f"(-{MAX_DBM:g} to {MAX_DBM:g} dBm)")
        watts = float(dbm_to_watt(float(match.group(1))))
        if target is None:
            return watts
        if target.dimensionality != ureg.Unit("W").dimensionality:
            raise DesignError(f"'{raw}' is a power but {_dimension_name(target)} in {unit} "
                              "was expected")
        return watts * ureg.Quantity(1.0, "W").to(target).magnitude
    if match:
        number, source = match.group(1), _parse_units(match.group(2), raw)
    else:  # a general expression such as "(100 um)^2"
        if not raw.startswith("("):
            raise DesignError(f"cannot read '{raw}' as a quantity (no leading number); "
                              "write e.g. '2.2 pF'")
        _guard_expression(raw, raw)
        try:
            with np.errstate(all="ignore"):
                qty = ureg.Quantity(_clean_unit(raw))
        except OverflowError:
            raise DesignError(f"cannot read '{raw}' as a quantity: the value overflows; "
                              "write e.g. '(100 um)^2'") from None
        except Exception as exc:
            raise DesignError(f"cannot read '{raw}' as a quantity ({exc}); write e.g. '2.2 pF'"
                              ) from None
        if not isinstance(qty, ureg.Quantity):
            return float(qty)
        try:
            number, source = repr(float(qty.magnitude)), qty.units
        except (TypeError, ValueError, OverflowError) as exc:
            raise DesignError(f"cannot read '{raw}' as a quantity ({exc}); write e.g. '2.2 pF'"
                              ) from None
    if target is None:
        target = ureg.Quantity(1.0, source).to_base_units().units
    if ureg.Quantity(1.0, source).dimensionality != ureg.Quantity(1.0, target).dimensionality:
        raise DesignError(f"'{raw}' is {_dimension_name(source)} but {_dimension_name(target)} "
                          f"in {unit} was expected")
    if unit and not ureg.Quantity(1.0, target).dimensionless:
        _same_kind(source, target, raw, unit)
    try:
        with np.errstate(all="ignore"):  # a logarithmic unit may overflow: "1e300 dB"
            if ureg.Quantity(0.0, source).to(target).magnitude != 0.0:  # offset unit (degC)
                value = float(ureg.Quantity(float(number), source).to(target).magnitude)
                if math.isfinite(float(number)) and not math.isfinite(value):
                    raise DesignError(f"cannot read '{raw}' as a quantity: the value overflows")
                return value
        return _exact_scale(number, float(ureg.Quantity(1.0, source).to(target).magnitude))
    except DesignError:
        raise
    except Exception as exc:
        raise DesignError(f"cannot convert '{raw}' to {unit} ({exc})") from None


# ---------------------------------------------------------------------------------------------
# display text of values (shared by result objects, checks and every table export)
# ---------------------------------------------------------------------------------------------
#: Text of a figure that does not exist (NaN or infinite in SI) in every table and export.
NONE = "none"


def _is_number(value) -> bool:
    return isinstance(value, (int, float, np.integer, np.floating)) and not isinstance(
        value, (bool, np.bool_))


def display_value(value, unit="", digits: int = 3) -> str:
    """Text for one budget cell: engineering prefix for numbers, yes/no for flags.

    Parameters
    ----------
    value : float, bool, str or None
        Value in SI units; NaN and infinities read :data:`NONE`.
    unit : str
        SI unit symbol, ``""`` for none.
    digits : int
        Significant digits of numbers.
    """
    unit = "" if unit is None or (isinstance(unit, float) and math.isnan(unit)) else str(unit)
    if value is None:
        return ""
    if isinstance(value, (bool, np.bool_)):
        return "yes" if value else "no"
    if _is_number(value):
        v = float(value)
        if not math.isfinite(v):
            # a figure that does not exist (no post filter, no phase crossover) or a
            # bound at infinity reads "none", never "inf"/"nan"
            return NONE
        if unit == "%" and 0 < abs(v) < 0.01:
            return "< 0.01 %"  # "5.51e-09 %" of a noise share reads as noise itself
        return format_eng(v, unit, digits)
    text = str(value)
    return f"{text} {unit}".strip() if unit else text


def figure_text(name: str, value, unit: str = "") -> str:
    """Text of one named figure: :func:`display_value`, with wavelengths in nm.

    Parameters
    ----------
    name : str
        Figure name (``"wavelength"`` is shown in nm).
    value : float, bool, str or None
        Value in SI units.
    unit : str
        SI unit symbol.
    """
    if unit == "m" and "wavelength" in str(name) and _is_number(value):
        return _wavelength_text(value)
    return display_value(value, unit)


def _wavelength_text(value) -> str:
    """Optical wavelengths in nm, as the trade writes them ("1310 nm", not "1.31 um")."""
    v = float(value)
    if not math.isfinite(v) or not 1e-8 <= v < 1e-4:
        return display_value(v, "m")
    return f"{v * 1e9:.4g} nm"
