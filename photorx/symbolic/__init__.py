"""Closed forms of the receiver's physics, derived with sympy from their starting equations.

Every function returns a :class:`Derivation` (named steps, closed-form results, symbols
with units, LaTeX/Markdown export, ``lambdify`` to vectorised numpy) and is cached, so
the (slow) sympy work runs once per process.

Junction (Poisson's equation in the depletion approximation, charge control):
:func:`abrupt_junction`, :func:`linearly_graded_junction`, :func:`pin_junction`,
:func:`diffusion_capacitance`.

Transimpedance amplifier (nodal analysis): :func:`tia_nodal_analysis`,
:func:`tia_single_pole`, :func:`tia_two_pole`, :func:`tia_second_order`,
:func:`tia_feedback_capacitor`, :func:`tia_phase_margin`.

Noise: :func:`tia_input_noise`, :func:`tia_output_noise`, :func:`nep`.
"""

from .derivation import CONSTANTS, Derivation, Step, SymbolInfo
from .junction import abrupt_junction, diffusion_capacitance, linearly_graded_junction, pin_junction
from .noise import nep, tia_input_noise, tia_output_noise
from .tia import (
    tia_feedback_capacitor,
    tia_nodal_analysis,
    tia_phase_margin,
    tia_second_order,
    tia_single_pole,
    tia_two_pole,
)

__all__ = [
    "Derivation",
    "Step",
    "SymbolInfo",
    "CONSTANTS",
    "abrupt_junction",
    "linearly_graded_junction",
    "pin_junction",
    "diffusion_capacitance",
    "tia_nodal_analysis",
    "tia_single_pole",
    "tia_two_pole",
    "tia_second_order",
    "tia_feedback_capacitor",
    "tia_phase_margin",
    "tia_input_noise",
    "tia_output_noise",
    "nep",
    "all_derivations",
]


def all_derivations():
    """Every derivation, keyed by function name (derives each once; a few seconds in total)."""
    funcs = (abrupt_junction, linearly_graded_junction, pin_junction, diffusion_capacitance,
             tia_nodal_analysis, tia_single_pole, tia_two_pole, tia_second_order,
             tia_feedback_capacitor, tia_phase_margin, tia_input_noise, tia_output_noise, nep)
    return {fn.__name__: fn() for fn in funcs}
