"""The result object of every symbolic derivation: named steps, final closed forms, symbols with units.

A :class:`Derivation` records how a closed form follows from its starting equations
(Poisson's equation, charge control, Kirchhoff's current law, ...): an ordered list of
:class:`Step` (a sentence and a sympy expression or equation), the closed forms it ends in
(``results``, keyed by a quantity name, the first one being the main result), and the meaning
and SI unit of every symbol. It renders itself for Jupyter (``_repr_latex_``), exports
LaTeX and Markdown, and turns any of its closed forms into a vectorised numpy function
(:meth:`Derivation.lambdify`) that the tests compare with photorx's numeric engine.

Physical constants (q, k_B, epsilon_0, h, c_0) stay symbols in the derivation; ``lambdify``
substitutes their CODATA values from :mod:`photorx.constants` unless asked not to.
"""

from __future__ import annotations

import inspect
from dataclasses import dataclass, field
from types import MappingProxyType
from typing import Mapping

import numpy as np
import sympy as sp

from .. import constants as _const
from ..errors import DesignError

__all__ = ["Step", "SymbolInfo", "Derivation", "eq", "q", "k_B", "epsilon_0", "h", "c_0", "CONSTANTS"]

#: elementary charge, Boltzmann constant and vacuum permittivity as sympy symbols
q = sp.Symbol("q", positive=True)
k_B = sp.Symbol("k_B", positive=True)
epsilon_0 = sp.Symbol("epsilon_0", positive=True)
h = sp.Symbol("h", positive=True)
c_0 = sp.Symbol("c_0", positive=True)

#: numeric values substituted by :meth:`Derivation.lambdify` (CODATA via scipy.constants)
CONSTANTS = MappingProxyType({q: _const.q, k_B: _const.k, epsilon_0: _const.eps0, h: _const.h,
                              c_0: _const.c})

_CONSTANT_INFO = {
    q: ("elementary charge", "C"),
    k_B: ("Boltzmann constant", "J/K"),
    epsilon_0: ("vacuum permittivity", "F/m"),
    h: ("Planck constant", "J s"),
    c_0: ("speed of light in vacuum", "m/s"),
}


def eq(lhs, rhs) -> sp.Equality:
    """An unevaluated equation ``lhs = rhs``: a result shown with its own symbol on the left.

    Parameters
    ----------
    lhs : sympy expression
        Left side, usually the result's own symbol.
    rhs : sympy expression
        Right side, the closed form.
    """
    return sp.Eq(lhs, rhs, evaluate=False)


@dataclass(frozen=True)
class SymbolInfo:
    """Meaning and SI unit of one symbol (unit ``"1"`` for a dimensionless quantity).

    Parameters
    ----------
    description : str
        What the symbol stands for, in words.
    unit : str
        Its SI unit as text (``"F"``, ``"J/K"``); ``"1"`` when dimensionless.
    """

    description: str
    unit: str


@dataclass(frozen=True)
class Step:
    """One step of a derivation: what is done, and the expression or equation it gives.

    Parameters
    ----------
    description : str
        What the step does, in words; inline ``$math$`` is set as LaTeX.
    expression : sympy.Basic
        The expression or equation the step arrives at.
    """

    description: str
    expression: sp.Basic

    def to_latex(self) -> str:
        """The step's expression in LaTeX (math mode content, no delimiters)."""
        return sp.latex(self.expression)


def _as_eq(name: str, value) -> sp.Eq:
    if isinstance(value, sp.Equality):
        return value
    return sp.Eq(sp.Symbol(name), value, evaluate=False)


def _lhs_latex(name: str, eq: sp.Equality) -> str:
    """LaTeX of a result's left side: its symbol, or the result's name set upright."""
    if eq.lhs == sp.Symbol(name):
        return r"\mathrm{" + name.replace("_", r"\_") + "}"
    return sp.latex(eq.lhs)


def _latex_text(text: str) -> str:
    """Escape plain text for ``\\text{...}`` and split out inline ``$math$``."""
    parts = text.split("$")
    out = []
    for i, part in enumerate(parts):
        if i % 2:
            out.append(part)
        elif part:
            esc = (part.replace("\\", r"\textbackslash ").replace("{", r"\{").replace("}", r"\}")
                   .replace("%", r"\%").replace("&", r"\&").replace("#", r"\#").replace("_", r"\_"))
            out.append(r"\text{" + esc + "}")
    return "".join(out)


@dataclass(frozen=True, eq=False)
class Derivation:
    """A derivation: its steps, closed-form results and the symbols they use.

    Parameters
    ----------
    title : str
        What is derived.
    steps : sequence of Step
        The derivation in order, from the starting equations to the results.
    results : mapping of str to sympy equation or expression
        The closed forms, keyed by quantity name; the first entry is the main result.
        An expression ``e`` is stored as the equation ``name = e``.
    symbols : mapping of sympy.Symbol to (description, unit)
        Meaning and SI unit of every symbol that appears.
    assumptions : sequence of str
        Approximations and validity range, in words.
    references : sequence of str
        Published sources the derivation follows or is checked against.
    _cache : dict
        Internal: memo of compiled :meth:`lambdify` functions; leave at its default.
    """

    title: str
    steps: tuple
    results: Mapping[str, sp.Equality]
    symbols: Mapping[sp.Symbol, SymbolInfo]
    assumptions: tuple = ()
    references: tuple = ()
    _cache: dict = field(default_factory=dict, repr=False, compare=False)

    def __post_init__(self):
        set_ = object.__setattr__
        set_(self, "steps", tuple(s if isinstance(s, Step) else Step(*s) for s in self.steps))
        results = {name: _as_eq(name, v) for name, v in dict(self.results).items()}
        if not results:
            raise DesignError("results = {} is empty; a derivation needs at least one result",
                              parameter="results")
        set_(self, "results", MappingProxyType(results))
        info = {}
        for s, v in dict(self.symbols).items():
            info[s] = v if isinstance(v, SymbolInfo) else SymbolInfo(*v)
        for s, v in _CONSTANT_INFO.items():
            info.setdefault(s, SymbolInfo(*v))
        set_(self, "symbols", MappingProxyType(info))
        set_(self, "assumptions", tuple(self.assumptions))
        set_(self, "references", tuple(self.references))

    # -- access ---------------------------------------------------------------------------
    @property
    def result(self) -> sp.Equality:
        """The main result (the first entry of ``results``) as a sympy equation."""
        return next(iter(self.results.values()))

    @property
    def names(self) -> tuple:
        """Names of the closed-form results, main result first."""
        return tuple(self.results)

    def expr(self, name: str | None = None) -> sp.Expr:
        """Right-hand side of the result ``name`` (default: the main result).

        Parameters
        ----------
        name : str, optional
            One of :attr:`names`; None (default) means the main result.
        """
        if name is None:
            return self.result.rhs
        try:
            return self.results[name].rhs
        except KeyError:
            raise DesignError(f"name = {name!r} is not a result of '{self.title}'; valid: "
                              f"{', '.join(self.results)}", parameter="name") from None

    def __getitem__(self, name: str) -> sp.Expr:
        return self.expr(name)

    def symbol(self, name: str) -> sp.Symbol:
        """The symbol called ``name`` (as in :attr:`symbols`).

        Parameters
        ----------
        name : str
            Name of a symbol used in the derivation (a key of :attr:`symbols`).
        """
        for s in self.symbols:
            if s.name == name:
                return s
        raise DesignError(f"symbol = {name!r} is not used in '{self.title}'; valid: "
                          f"{', '.join(sorted(s.name for s in self.symbols))}", parameter="symbol")

    def arguments(self, name: str | None = None, constants: bool = True) -> tuple:
        """Names of the free symbols of a result, in the order :meth:`lambdify` takes them.

        Parameters
        ----------
        name : str, optional
            One of :attr:`names`; None (default) means the main result.
        constants : bool
            Substitute the physical constants (:data:`CONSTANTS`) first, so that they are
            not arguments (default True).
        """
        e = self.expr(name)
        if constants:
            e = e.subs(dict(CONSTANTS))
        return tuple(sorted((s.name for s in e.free_symbols), key=str))

    # -- numbers --------------------------------------------------------------------------
    def lambdify(self, name: str | None = None, args=None, constants: bool = True):
        """Turn a closed form into a vectorised numpy function.

        Parameters
        ----------
        name : str, optional
            Which result (default: the main one).
        args : sequence of str, optional
            Argument order; default: the free symbols sorted by name (see :meth:`arguments`).
        constants : bool
            Substitute q, k_B and epsilon_0 by their CODATA values (default) instead of
            taking them as arguments.

        Returns
        -------
        callable
            ``f(*values, **by_name)``: broadcasts over all arguments, returns a float (or
            complex) ndarray of the broadcast shape; arguments keep the symbols' SI units.
        """
        key = (name, tuple(args) if args is not None else None, constants)
        if key in self._cache:
            return self._cache[key]
        e = self.expr(name)
        if constants:
            e = e.subs(dict(CONSTANTS))
        free = {s.name: s for s in e.free_symbols}
        if args is None:
            order = sorted(free)
        else:
            order = list(args)
            missing = sorted(set(free) - set(order))
            if missing:
                raise DesignError(f"args = {order!r} lacks {missing} needed by result "
                                  f"{name or self.names[0]!r}", parameter="args")
        syms = [free.get(n, sp.Symbol(n)) for n in order]
        raw = sp.lambdify(syms, e, modules="numpy")
        params = [inspect.Parameter(n, inspect.Parameter.POSITIONAL_OR_KEYWORD) for n in order]
        sig = inspect.Signature(params)
        label = name or self.names[0]

        def fn(*a, **kw):
            bound = sig.bind(*a, **kw)
            vals = [np.asarray(v) for v in bound.args]
            with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
                # Piecewise results evaluate every branch; the discarded ones may be NaN.
                out = np.asarray(raw(*vals))
            shape = np.broadcast_shapes(out.shape, *(v.shape for v in vals))
            out = np.broadcast_to(out, shape).copy()
            return out if out.ndim else out[()]

        fn.__signature__ = sig
        fn.__name__ = label
        units = {s.name: self.symbols[s].unit for s in syms if s in self.symbols}
        fn.__doc__ = (f"{label} from '{self.title}' = {sp.sstr(e)}\n\nArguments (SI): "
                      + ", ".join(f"{n} [{units.get(n, '?')}]" for n in order))
        self._cache[key] = fn
        return fn

    # -- rendering ------------------------------------------------------------------------
    def _used_symbols(self):
        used = set()
        for st in self.steps:
            used |= st.expression.free_symbols
        for eq in self.results.values():
            used |= eq.free_symbols
        return sorted((s for s in self.symbols if s in used), key=lambda s: s.name)

    def to_latex(self) -> str:
        """LaTeX fragment (needs amsmath): title, numbered steps, results, symbol table."""
        lines = [r"\subsection*{" + self.title + "}", r"\begin{enumerate}"]
        for st in self.steps:
            lines += [r"\item " + _latex_body(st.description),
                      r"\begin{equation*}", st.to_latex(), r"\end{equation*}"]
        lines += [r"\end{enumerate}", r"\paragraph{Results}", r"\begin{align*}"]
        lines.append(" \\\\\n".join(_lhs_latex(n, eq) + " &= " + sp.latex(eq.rhs)
                                 for n, eq in self.results.items()))
        lines += [r"\end{align*}", r"\paragraph{Symbols}", r"\begin{tabular}{lll}",
                  r"Symbol & Meaning & Unit \\ \hline"]
        for s in self._used_symbols():
            i = self.symbols[s]
            lines.append(f"${sp.latex(s)}$ & {_latex_body(i.description)} & {_latex_body(i.unit)} " + r"\\")
        lines.append(r"\end{tabular}")
        if self.assumptions:
            lines += [r"\paragraph{Assumptions}", r"\begin{itemize}"]
            lines += [r"\item " + _latex_body(a) for a in self.assumptions]
            lines.append(r"\end{itemize}")
        if self.references:
            lines += [r"\paragraph{References}", r"\begin{itemize}"]
            lines += [r"\item " + _latex_body(r) for r in self.references]
            lines.append(r"\end{itemize}")
        return "\n".join(lines) + "\n"

    def to_markdown(self) -> str:
        """Markdown with ``$...$`` math (renders in Jupyter and most Markdown viewers)."""
        out = [f"### {self.title}", ""]
        for i, st in enumerate(self.steps, 1):
            out += [f"{i}. {st.description}", "", f"   $${st.to_latex()}$$", ""]
        out += ["**Results**", ""]
        out += [f"- {name}: ${_lhs_latex(name, eq)} = {sp.latex(eq.rhs)}$" for name, eq in self.results.items()]
        out += ["", "| Symbol | Meaning | Unit |", "|---|---|---|"]
        for s in self._used_symbols():
            i = self.symbols[s]
            out.append(f"| ${sp.latex(s)}$ | {i.description} | {i.unit} |")
        if self.assumptions:
            out += ["", "**Assumptions**", ""] + [f"- {a}" for a in self.assumptions]
        if self.references:
            out += ["", "**References**", ""] + [f"- {r}" for r in self.references]
        return "\n".join(out) + "\n"

    def _repr_latex_(self) -> str:
        rows = [r"\large " + _latex_text(self.title)]
        for i, st in enumerate(self.steps, 1):
            rows.append(_latex_text(f"{i}. {st.description}"))
            rows.append(r"\qquad " + st.to_latex())
        rows.append(_latex_text("Results:"))
        rows += [r"\qquad " + _lhs_latex(n, eq) + " = " + sp.latex(eq.rhs) for n, eq in self.results.items()]
        return "$$\\begin{array}{l}\n" + " \\\\[4pt]\n".join(rows) + "\n\\end{array}$$"

    def __repr__(self) -> str:
        return (f"Derivation({self.title!r}, {len(self.steps)} steps, "
                f"results: {', '.join(self.results)})")


def _latex_body(text: str) -> str:
    """Escape plain text for a LaTeX document body, keeping inline ``$math$``."""
    parts = text.split("$")
    out = []
    for i, part in enumerate(parts):
        if i % 2:
            out.append("$" + part + "$")
        else:
            out.append(part.replace("\\", r"\textbackslash{}").replace("%", r"\%").replace("&", r"\&")
                       .replace("#", r"\#").replace("_", r"\_"))
    return "".join(out)
