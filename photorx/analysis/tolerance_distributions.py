"""Component tolerances: how a tolerance is written, checked and sampled.

A tolerance names a design parameter (any name or dotted path that
:func:`~photorx.analysis.sweep.sweep` accepts) and the distribution of its value over
built units:

=====================================  =====================================================
written as                             distribution of the built value ``x``
=====================================  =====================================================
``"1 %"`` (also ``"+-1 %"``)            uniform within nominal x (1 -+ 0.01)
``("normal", 0.02)`` or ``"normal:2 %"``  normal, mean = nominal, sigma = 0.02 x nominal
``("uniform", low, high)``             uniform between ``low`` and ``high`` [SI or with units]
``("lognormal", 0.05)``                ln x normal: median = nominal, sigma of ln x = 0.05
=====================================  =====================================================

The same forms are read on the command line (``--tol rf=1%``, ``--tol
cf=normal:2%``, ``--tol rf=uniform:9k:11k``) and in a design file's ``[tolerances]``
section.

Samples are reproducible and independent of how a study is chunked or scheduled: each
parameter draws all its samples up front from its own stream,
``numpy.random.SeedSequence(seed, spawn_key=(crc32(parameter),))``, so the values of one
parameter do not change when other tolerances are added or removed.
"""

from __future__ import annotations

import math
import re
import zlib
from dataclasses import dataclass

import numpy as np

from ..errors import DesignError

__all__ = ["Tolerance", "parse_tolerance", "parameter_unit", "KINDS"]

#: Distribution kinds and what their parameters mean.
KINDS = {
    "uniform": "('uniform', low, high) in SI, or 'P %' for nominal x (1 -+ P/100)",
    "normal": "('normal', sigma) with sigma relative to the nominal value, 0 < sigma <= 0.3",
    "lognormal": "('lognormal', sigma) with sigma of ln(value), 0 < sigma <= 1",
}

#: Largest relative sigma of a normal tolerance: 0.3 puts zero 3.3 sigma from the nominal
#: (every sample is still checked to keep the nominal's sign).
MAX_NORMAL_SIGMA = 0.3
#: Largest sigma of ln(value) of a lognormal tolerance (a factor e per sigma).
MAX_LOG_SIGMA = 1.0

_PERCENT = re.compile(r"^\s*(?:\+-|\+/-|±)?\s*([-+]?[0-9]*\.?[0-9]+(?:[eE][-+]?[0-9]+)?)\s*%\s*$")


@dataclass(frozen=True)
class Tolerance:
    """One parameter's tolerance: its distribution over built units.

    Parameters
    ----------
    parameter : str
        The parameter as the user named it (``"rf"``, ``"tia.amp.gbw"``).
    kind : str
        ``"uniform"``, ``"normal"`` or ``"lognormal"``.
    nominal : float
        The design's value of the parameter [SI].
    low : float, optional
        Lower end of a uniform tolerance [SI].
    high : float, optional
        Upper end of a uniform tolerance [SI].
    sigma : float, optional
        Relative sigma (normal) or sigma of ln(value) (lognormal).
    text : str
        The tolerance as written, for tables.
    """

    parameter: str
    kind: str
    nominal: float
    low: float | None = None
    high: float | None = None
    sigma: float | None = None
    text: str = ""

    def sample(self, n: int, seed: int = 0) -> np.ndarray:
        """``n`` values of the parameter [SI], the same for the same ``seed`` and name.

        Parameters
        ----------
        n : int
            Number of samples.
        seed : int
            Study seed (non-negative); the parameter's name picks its own stream.

        Returns
        -------
        numpy.ndarray
            Shape ``(n,)``, float64.

        Raises
        ------
        DesignError
            A sample crosses zero when the nominal value does not (a normal tolerance
            too wide for a parameter that must keep its sign).
        """
        rng = np.random.default_rng(np.random.SeedSequence(
            int(seed), spawn_key=(zlib.crc32(self.parameter.encode("utf-8")),)))
        if self.kind == "uniform":
            values = rng.uniform(self.low, self.high, n)
        elif self.kind == "normal":
            values = self.nominal * (1.0 + self.sigma * rng.standard_normal(n))
        else:  # lognormal
            values = self.nominal * np.exp(self.sigma * rng.standard_normal(n))
        if self.nominal != 0 and n and np.any(np.sign(values) != np.sign(self.nominal)):
            worst = values[np.argmin(values * np.sign(self.nominal))]
            raise DesignError(
                f"tolerances[{self.parameter!r}] = {self.text}: a sample, {worst:.6g}, has "
                f"the other sign than the nominal {self.nominal:.6g}; valid: a tolerance that "
                "keeps the sign (a smaller sigma, or ('lognormal', sigma))",
                parameter=self.parameter)
        return values

    def describe(self) -> str:
        """Short text of the distribution, e.g. ``"uniform 900 .. 1100"``."""
        if self.kind == "uniform":
            return f"uniform {self.low:.6g} .. {self.high:.6g}"
        if self.kind == "normal":
            return f"normal, sigma {100 * self.sigma:.4g} % of {self.nominal:.6g}"
        return f"lognormal, median {self.nominal:.6g}, sigma(ln) {self.sigma:.4g}"


def parameter_unit(name: str) -> str | None:
    """SI unit of a design parameter from the design-file schema (None: unknown or bare).

    Parameters
    ----------
    name : str
        Field name or dotted path; the last part is looked up.
    """
    from ..designschema import SCHEMA

    leaf = name.replace("__", ".").split(".")[-1]
    for key in SCHEMA:
        if leaf in (key.arg, key.name) and key.kind == "quantity" and key.unit:
            return key.unit
    return {"temperature": "K"}.get(leaf)


def parse_tolerance(parameter: str, spec, nominal: float) -> Tolerance:
    """Read one tolerance (see the module docstring for the forms).

    Parameters
    ----------
    parameter : str
        The parameter's name (used in messages and to pick its random stream).
    spec : str or tuple
        ``"1 %"``, ``"normal:2 %"``, ``"uniform:LOW:HIGH"``, ``"lognormal:0.05"``,
        ``("normal", sigma)``, ``("uniform", low, high)`` or ``("lognormal", sigma)``;
        a relative sigma may be written ``"2 %"``; uniform ends are SI numbers or
        quantities in the parameter's unit.
    nominal : float
        The design's value of the parameter [SI]; a relative tolerance needs it non-zero.

    Returns
    -------
    Tolerance

    Raises
    ------
    DesignError
        Unknown form or kind, a width or sigma out of range, ends not finite or not
        ordered, a relative tolerance of a zero nominal; the message names the parameter,
        the value and the valid range.
    """
    where = f"tolerances[{parameter!r}]"
    try:
        nominal = float(nominal)
    except (TypeError, ValueError):
        raise DesignError(f"{where}: the parameter's nominal value {nominal!r} is not a "
                          "single number; a tolerance needs a scalar parameter",
                          parameter=parameter) from None
    text = spec if isinstance(spec, str) else repr(tuple(spec)) if isinstance(spec, (tuple, list)) else repr(spec)
    if isinstance(spec, str):
        m = _PERCENT.match(spec)
        if m:
            half = float(m.group(1))
            if not (0 < half < 100):
                raise DesignError.out_of_range(where, spec, "", "a half width above 0 % and "
                                               "below 100 %, e.g. '1 %'")
            _need_nominal(where, spec, nominal)
            ends = sorted((nominal * (1 - half / 100), nominal * (1 + half / 100)))
            if not ends[0] < ends[1]:  # narrower than the floating-point spacing
                raise DesignError.out_of_range(where, spec, "", "a half width wider than "
                                               "the rounding of the nominal, e.g. '1 %'")
            return Tolerance(parameter, "uniform", nominal, low=ends[0], high=ends[1], text=spec)
        parts = [p.strip() for p in spec.split(":")]
        if len(parts) < 2 or parts[0].lower() not in KINDS:
            raise DesignError(f"{where} = {spec!r} is invalid; valid: 'P %' (uniform within "
                              "+-P % of nominal), 'normal:SIGMA', 'uniform:LOW:HIGH' or "
                              "'lognormal:SIGMA'", parameter=parameter)
        spec = (parts[0], *parts[1:])
    if not isinstance(spec, (tuple, list)) or not spec or not isinstance(spec[0], str):
        raise DesignError(f"{where} = {text} is invalid; valid: '1 %', ('normal', sigma), "
                          "('uniform', low, high) or ('lognormal', sigma)", parameter=parameter)
    kind = spec[0].strip().lower()
    if kind not in KINDS:
        raise DesignError(f"{where} = {text}: unknown distribution {spec[0]!r}; valid: "
                          f"{', '.join(KINDS)}", parameter=parameter)
    args = spec[1:]
    if kind == "uniform":
        if len(args) != 2:
            raise DesignError(f"{where} = {text}: {KINDS['uniform']}", parameter=parameter)
        low, high = (_number(where, a, parameter_unit(parameter)) for a in args)
        if not (math.isfinite(low) and math.isfinite(high) and low < high):
            raise DesignError.out_of_range(where, high, "", f"finite ends with high > low "
                                           f"({low:.6g})")
        if nominal > 0 and low <= 0 or nominal < 0 and high >= 0:
            raise DesignError.out_of_range(where, low if nominal > 0 else high, "",
                                           f"ends of the nominal's sign ({nominal:.6g})")
        return Tolerance(parameter, "uniform", nominal, low=low, high=high, text=text)
    if len(args) != 1:
        raise DesignError(f"{where} = {text}: {KINDS[kind]}", parameter=parameter)
    sigma = _relative(where, args[0])
    top = MAX_NORMAL_SIGMA if kind == "normal" else MAX_LOG_SIGMA
    if not (0 < sigma <= top):
        raise DesignError.out_of_range(f"{where} sigma", sigma, "", f"above 0 and at most {top:g}")
    _need_nominal(where, text, nominal)
    return Tolerance(parameter, kind, nominal, sigma=sigma, text=text)


def _need_nominal(where, text, nominal):
    if nominal == 0 or not math.isfinite(nominal):
        raise DesignError(f"{where} = {text}: a relative tolerance of a nominal value of "
                          f"{nominal:g} has no width; valid: a non-zero finite nominal, or "
                          "('uniform', low, high)", parameter=where)


def _relative(where, value) -> float:
    """A relative sigma: a number or ``"2 %"``."""
    if isinstance(value, str):
        m = _PERCENT.match(value)
        if m:
            return float(m.group(1)) / 100
    return _number(where, value, None)


def _number(where, value, unit) -> float:
    from ..units import parse_quantity

    if isinstance(value, bool):
        raise DesignError(f"{where}: {value!r} is not a number", parameter=where)
    try:
        out = parse_quantity(value, unit)
    except DesignError as exc:
        raise DesignError(f"{where}: {exc}", parameter=where) from None
    if math.isnan(out):
        raise DesignError.out_of_range(where, out, "", "a number, not NaN")
    return out
