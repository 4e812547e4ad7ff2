"""Junction models: depletion width, charge, capacitance and peak field versus bias.

This module gathers the public names; the models live in
:mod:`~photorx.device.junction_abrupt` (abrupt and linearly graded),
:mod:`~photorx.device.junction_pin` (p-i-n with punch-through),
:mod:`~photorx.device.junction_parametric` (the simulator-style parametric form and its
fit) and :mod:`~photorx.device.junction_base` (diffusion capacitance, shared checks).

Conventions: SI units; ``v_r`` is the reverse bias [V] (negative = forward bias);
temperature explicit, default 300 K.

Examples
--------
>>> import photorx as prx
>>> from photorx.units import per_cm3, mm
>>> j = prx.AbruptJunction(prx.material("Si"), na=1e19 * per_cm3, nd=1e15 * per_cm3,
...                        area=(1 * mm) ** 2)
>>> round(j.built_in_potential(), 3)
0.835
"""

from __future__ import annotations

from .junction_abrupt import (
    AbruptJunction,
    LinearlyGradedJunction,
    abrupt_built_in_potential,
    abrupt_depletion_width,
    graded_breakdown_voltage,
    graded_built_in_potential,
    graded_depletion_width,
)
from .junction_base import FORWARD_LIMIT, MAX_DOPING, JunctionBase, diffusion_capacitance
from .junction_parametric import (
    ParametricFit,
    ParametricJunction,
    fit_parametric_junction,
    parametric_capacitance,
    parametric_charge,
)
from .junction_pin import (
    PinJunction,
    pin_breakdown_field,
    pin_built_in_potential,
    pin_depletion_edges,
    pin_punch_through_potential,
)

__all__ = [
    "AbruptJunction",
    "LinearlyGradedJunction",
    "PinJunction",
    "ParametricJunction",
    "ParametricFit",
    "fit_parametric_junction",
    "diffusion_capacitance",
    "JunctionBase",
    "FORWARD_LIMIT",
    "MAX_DOPING",
    "abrupt_built_in_potential",
    "abrupt_depletion_width",
    "graded_built_in_potential",
    "graded_depletion_width",
    "graded_breakdown_voltage",
    "pin_breakdown_field",
    "pin_built_in_potential",
    "pin_depletion_edges",
    "pin_punch_through_potential",
    "parametric_capacitance",
    "parametric_charge",
]
