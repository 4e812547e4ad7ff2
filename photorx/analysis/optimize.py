"""Design optimisation: the best reverse bias, Rf, Cf (or any parameter) under a receiver's constraints.

Two stages. A coarse cartesian grid over the varied parameters is evaluated in one
vectorised sweep, which finds a feasible start and guards against local optima; then
SciPy's COBYLA (a derivative-free method that handles inequality constraints, robust to
the small numerical noise of found bandwidths) refines it in normalised coordinates
(logarithmic for parameters that span a decade or more).
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy import optimize as _sopt

from ..errors import DesignError
from .parameters import get_parameter, resolve_parameter, with_parameters
from .sweep import grid

__all__ = ["optimize", "OptimizationResult", "MAXIMIZE", "MINIMIZE", "parse_condition"]

#: Figures for which larger is better; an objective named here is maximised.
MAXIMIZE = {"snr", "snr_db", "bandwidth", "phase_margin", "dynamic_range_db", "gain_margin_db",
            "responsivity", "dc_transimpedance"}
#: Figures for which smaller is better.
MINIMIZE = {"nep", "min_detectable_power", "input_noise_rms", "output_noise_rms",
            "input_noise_density", "sensitivity_dbm", "sensitivity", "dark_current", "rise_time",
            "capacitance", "peaking_db", "overshoot"}

_OPS = {">=": np.greater_equal, "<=": np.less_equal}


@dataclass(frozen=True)
class OptimizationResult:
    """Outcome of :func:`optimize`.

    Parameters
    ----------
    receiver : Receiver
        The best design found.
    result : ReceiverResult
        Its evaluation.
    objective : str
        Name of the objective figure and its direction, e.g. ``"max snr"``.
    value : float
        Objective value at the optimum.
    parameters : dict
        The varied parameters at the optimum [SI].
    constraints : pandas.DataFrame
        One row per constraint: figure, relation, limit, value, slack, satisfied, active
        (binding within 1 % of its limit).
    trade_curve : pandas.DataFrame
        The objective and every constraint figure against reverse bias with the other
        varied parameters held at their optimum.
    success : bool
        True when a design satisfying every constraint was found.
    message : str
        What the optimiser reported.
    evaluations : int
        Designs evaluated.
    flat : bool
        True when the objective is flat: a feasible design with at least 10 % less reverse
        bias comes within ``flat_tolerance`` of the optimum.
    flat_tolerance : float
        Relative objective tolerance of the flatness test (0.01: within 1 %).
    low_bias_parameters : dict or None
        When ``flat``: the varied parameters of the lowest-bias feasible design within the
        tolerance (the others held at the optimum) [SI]; otherwise None.
    low_bias_value : float or None
        When ``flat``: the objective at that design.
    notes : tuple of str
        How the design's limits narrowed ``vary`` (e.g. the bias bounded by ``max_bias``).
    """

    receiver: object
    result: object
    objective: str
    value: float
    parameters: dict
    constraints: pd.DataFrame
    trade_curve: pd.DataFrame
    success: bool
    message: str = ""
    evaluations: int = 0
    flat: bool = False
    flat_tolerance: float = 0.01
    low_bias_parameters: dict | None = None
    low_bias_value: float | None = None
    notes: tuple = ()

    def to_frame(self) -> pd.DataFrame:
        """The optimum's parameters and objective; a flat objective adds a second row, the
        lowest-bias design within the tolerance (column ``point`` says which)."""
        row = {"point": "optimum", **self.parameters, self.objective: self.value}
        rows = [row]
        if self.flat:
            rows.append({"point": f"least bias within {100 * self.flat_tolerance:g} %",
                         **self.low_bias_parameters, self.objective: self.low_bias_value})
        return pd.DataFrame(rows)

    def summary(self) -> str:
        """A few lines of text: objective, feasibility, and what a flat objective means."""
        lines = [f"{self.objective} = {self.value:.6g} "
                 f"({'feasible' if self.success else 'infeasible'})"]
        if self.flat:
            lines.append(_flat_text(self))
        return "\n".join(lines)

    def plot(self, ax=None):
        """The trade curve: objective and constraint figures against reverse bias, the
        optimum marked. Returns the matplotlib figure.

        Parameters
        ----------
        ax : sequence of matplotlib.axes.Axes, optional
            One axes per plotted figure (the objective and every constraint figure except
            ``stable``); default None makes a new figure.
        """
        from ..views.plots import plot_bias_tradeoff
        from .receiver import FIGURES

        curve = self.trade_curve
        names = [c for c in curve.columns if c not in ("reverse_bias", "stable")]
        series = [(FIGURES.get(n, ("", "", n))[2], curve[n].to_numpy(dtype=float),
                   FIGURES.get(n, ("",))[0], True) for n in names]
        bias = self.parameters.get("reverse_bias", getattr(self.receiver, "reverse_bias", None))
        return plot_bias_tradeoff(curve["reverse_bias"].to_numpy(dtype=float), series, ax=ax,
                                  mark=None if bias is None else float(bias),
                                  title=f"Trade curve ({self.objective})")

    def _repr_html_(self) -> str:
        import html

        head = f"<p><b>{self.objective}</b> = {self.value:.6g} ({'feasible' if self.success else 'infeasible'})</p>"
        if self.flat:
            head += f"<p>{html.escape(_flat_text(self))}</p>"
        return head + self.to_frame().to_html(index=False) + self.constraints.to_html(index=False)


def _flat_text(res) -> str:
    v_best = res.parameters["reverse_bias"]
    v_low = res.low_bias_parameters["reverse_bias"]
    return (f"the objective is flat: {v_low:.4g} V gives {res.objective.split(' ', 1)[-1]} = "
            f"{res.low_bias_value:.6g}, within {100 * res.flat_tolerance:g} % of the optimum at "
            f"{v_best:.4g} V; the least bias for the same result is {v_low:.4g} V")


def _constraint(name, op, limit, source="given", absolute=False) -> dict:
    return dict(figure=name, relation=op, limit=limit, source=source, absolute=absolute)


def _parse_constraints(constraints) -> list[dict]:
    out = []
    for name, spec in (constraints or {}).items():
        if isinstance(spec, str):  # ">= 900 MHz"
            spec = parse_condition(name, spec)
        if (isinstance(spec, list) and spec and spec[0] not in _OPS
                and all(isinstance(s, (str, tuple)) for s in spec)):  # several conditions
            for item in spec:
                out += _parse_constraints({name: item})
            continue
        if isinstance(spec, (tuple, list)) and len(spec) == 2 and spec[0] in _OPS:
            op, limit = spec
        elif isinstance(spec, dict) and set(spec) <= {"min", "max"}:
            for key, op in (("min", ">="), ("max", "<=")):
                if key in spec:
                    out.append(_constraint(name, op, float(spec[key])))
            continue
        else:
            raise DesignError(
                f"constraint {name!r} = {spec!r} is invalid; write '>= value', (\">=\", value), "
                "(\"<=\", value) or {'min': value, 'max': value}", parameter=name)
        out.append(_constraint(name, op, float(limit)))
    return out


def _design_limits(receiver, vary: dict) -> tuple[dict, list[dict], list[str]]:
    """The limits a design sets: bias bounds on ``vary`` and constraints for the rest.

    The reverse bias stays within the supply limit (``max_bias``) and below 99 % of the
    breakdown estimate (the device models end there), as the trade-off notebook's span
    does; every limit of :func:`photorx.analysis.checks.design_constraints` is a
    constraint. Returns the narrowed ``vary``, the constraints and notes on what changed.
    """
    from .checks import design_constraints

    vary = dict(vary)
    notes = []
    if "reverse_bias" in vary:
        lo, hi = (float(b) for b in vary["reverse_bias"])
        top, why = hi, ""
        if receiver.max_bias is not None and float(receiver.max_bias) < top:
            top, why = float(receiver.max_bias), f"the supply limit max_bias = {float(receiver.max_bias):g} V"
        junction = getattr(receiver.photodiode_at_temperature(), "junction", None)
        if callable(getattr(junction, "breakdown_voltage", None)):
            vbr = float(np.min(junction.breakdown_voltage()))
            if 0.99 * vbr < top:
                top, why = 0.99 * vbr, f"99 % of the breakdown estimate {vbr:.4g} V"
        if top < hi:
            if top <= lo:
                raise DesignError(f"vary['reverse_bias'] = ({lo:g}, {hi:g}) V lies beyond {why}; "
                                  f"valid range: below {top:.4g} V", parameter="reverse_bias")
            vary["reverse_bias"] = (lo, top)
            notes.append(f"reverse bias bounded to {lo:g} .. {top:.4g} V by {why}")
    cons = [_constraint(c["figure"], c["relation"], c["limit"], "design limit", c["absolute"])
            for c in design_constraints(receiver)]
    return vary, cons, notes


def _objective_direction(objective) -> tuple[str, float]:
    if callable(objective):
        return getattr(objective, "__name__", "objective"), -1.0
    name = str(objective)
    if name.startswith("max:"):
        return name[4:], -1.0
    if name.startswith("min:"):
        return name[4:], 1.0
    if name in MAXIMIZE:
        return name, -1.0
    if name in MINIMIZE:
        return name, 1.0
    raise DesignError(f"objective {name!r} has no known direction; prefix it with 'max:' or 'min:' "
                      f"(maximised by default: {sorted(MAXIMIZE)}; minimised: {sorted(MINIMIZE)})",
                      parameter="objective")


class _Space:
    """Maps the varied parameters to the unit cube (log scale for spans of a decade or more)."""

    def __init__(self, vary):
        self.names, self.low, self.high, self.log = [], [], [], []
        for name, bounds in vary.items():
            try:
                lo, hi = (float(b) for b in bounds)
            except (TypeError, ValueError):
                raise DesignError(f"vary[{name!r}] = {bounds!r} must be a (low, high) pair in SI units",
                                  parameter=name) from None
            if not (math.isfinite(lo) and math.isfinite(hi) and hi > lo):
                raise DesignError.out_of_range(f"vary[{name!r}]", hi, "", f"finite bounds with high > low ({lo:g})")
            self.names.append(name)
            self.low.append(lo)
            self.high.append(hi)
            self.log.append(lo > 0 and hi / lo >= 10)
        self.low, self.high, self.log = map(np.asarray, (self.low, self.high, self.log))

    def to_values(self, u):
        u = np.clip(np.asarray(u, dtype=float), 0.0, 1.0)
        lin = self.low + u * (self.high - self.low)
        with np.errstate(divide="ignore"):
            logv = np.exp(np.log(np.where(self.log, self.low, 1.0))
                          + u * np.log(np.where(self.log, self.high / np.where(self.log, self.low, 1.0), 1.0)))
        # exp(log) can overshoot a bound by one rounding step; the bounds are hard limits
        return np.clip(np.where(self.log, logv, lin), self.low, self.high)

    def to_unit(self, values):
        v = np.asarray(values, dtype=float)
        lin = (v - self.low) / (self.high - self.low)
        with np.errstate(divide="ignore", invalid="ignore"):
            logu = np.log(v / self.low) / np.log(self.high / self.low)
        return np.where(self.log, logu, lin)


def optimize(receiver, vary: dict, objective="snr", constraints: dict | None = None,
             grid_points: int = 2000, trade_points: int = 41, design_limits: bool = True,
             flat_tolerance: float = 0.01) -> OptimizationResult:
    """Find the design that optimises ``objective`` subject to ``constraints``.

    Parameters
    ----------
    receiver : Receiver
        Starting design; parameters not in ``vary`` are held.
    vary : dict
        ``{parameter: (low, high)}`` in SI units, e.g. ``{"reverse_bias": (0, 20),
        "rf": (1e3, 1e5), "cf": (0.05e-12, 2e-12)}``. Names as in
        :func:`~photorx.analysis.sweep.sweep`.
    objective : str or callable
        A figure of :class:`~photorx.analysis.receiver.ReceiverResult` (``"snr"``,
        ``"nep"``, ``"sensitivity_dbm"``...; known figures have a direction, others take
        a ``"max:"`` or ``"min:"`` prefix), or a callable mapping the result table
        (pandas DataFrame) to an array to minimise.
    constraints : dict, optional
        ``{figure: (">=", limit)}`` or ``{figure: {"min": a, "max": b}}``, e.g.
        ``{"bandwidth": (">=", 1e9), "phase_margin": (">=", 60.0), "dark_current":
        ("<=", 1e-9)}``. A bias limit is a bound in ``vary``. Unstable loops are always
        infeasible.
    grid_points : int
        Approximate size of the coarse vectorised grid.
    trade_points : int
        Points of the trade curve against reverse bias.
    design_limits : bool
        Honour every limit the design sets (default): ``max_bias`` and the breakdown
        estimate bound the reverse bias; the other limits of ``receiver.checks()`` (phase
        margin, peaking, overshoot, output swing, dark current, bias power, bandwidth for
        the bit rate) are constraints, listed with source ``"design limit"``.
    flat_tolerance : float
        Relative tolerance of the flatness test: when a feasible design with at least 10 %
        less reverse bias comes within it of the optimum, the result is ``flat`` and
        names the lowest-bias such design (a designer prefers the least bias for the same
        result). 0 disables the test.

    Returns
    -------
    OptimizationResult
    """
    if not vary:
        raise DesignError("optimize needs at least one parameter to vary, e.g. vary={'reverse_bias': (0, 20)}",
                          parameter="vary")
    for name in vary:
        resolve_parameter(receiver, name)
    obj_name, sign = _objective_direction(objective)
    cons = _parse_constraints(constraints)
    notes = []
    if design_limits:
        vary, design_cons, notes = _design_limits(receiver, vary)
        cons += design_cons
    space = _Space(vary)

    def table(values: dict) -> pd.DataFrame:
        return with_parameters(receiver, **values).evaluate().to_frame()

    def scores(frame: pd.DataFrame):
        obj = np.asarray(objective(frame) if callable(objective) else frame[_column(frame, obj_name)],
                         dtype=float) * (1.0 if callable(objective) else sign)
        viol = np.zeros(len(frame))
        for c in cons:
            value, limit = _constraint_values(frame, c)
            scale = np.where(limit != 0, np.abs(limit), 1.0)
            with np.errstate(invalid="ignore"):
                slack = (value - limit) / scale if c["relation"] == ">=" else (limit - value) / scale
            # a limit at infinity (no breakdown estimate) holds, and so does an infinite
            # value on the right side (no phase crossover: gain margin >= 6 dB); a missing
            # value (NaN) does not
            slack = np.where(np.isinf(limit) & ~np.isnan(value), 1.0, slack)
            viol += np.where(np.isnan(slack), 1e3, np.minimum(np.clip(-slack, 0, None), 1e3))
        viol += np.where(frame["stable"].to_numpy(dtype=bool), 0.0, 1e3)
        obj = np.where(np.isfinite(obj), obj, np.inf)
        return obj, viol

    # Stage 1: coarse vectorised grid.
    n_axis = max(3, int(round(grid_points ** (1.0 / len(space.names)))))
    unit_axes = {n: np.linspace(0, 1, n_axis) for n in space.names}
    pts = grid(**unit_axes)
    u_grid = np.column_stack([pts[n] for n in space.names])
    values_grid = space.to_values(u_grid)
    frame = table({n: values_grid[:, i] for i, n in enumerate(space.names)})
    obj, viol = scores(frame)
    evaluations = len(frame)
    feasible = viol <= 0
    if np.any(feasible):
        start = int(np.argmin(np.where(feasible, obj, np.inf)))
    else:
        start = int(np.argmin(viol))

    # Stage 2: local refinement with COBYLA on the unit cube.
    cache: dict[tuple, tuple[float, float, np.ndarray]] = {}

    def point(u):
        key = tuple(np.round(np.clip(u, 0, 1), 12))
        if key not in cache:
            vals = space.to_values(np.asarray(key))
            f = table({n: float(vals[i]) for i, n in enumerate(space.names)})
            o, v = scores(f)
            cache[key] = (float(o[0]), float(v[0]))
        return cache[key]

    scale = abs(obj[start]) if np.isfinite(obj[start]) and obj[start] != 0 else 1.0
    res = _sopt.minimize(
        lambda u: point(u)[0] / scale + 1e3 * point(u)[1],
        u_grid[start], method="COBYLA",
        constraints=[{"type": "ineq", "fun": lambda u: -point(u)[1]}],
        bounds=[(0.0, 1.0)] * len(space.names),
        options={"rhobeg": 0.5 / (n_axis - 1), "maxiter": 200, "tol": 1e-6},
    )
    evaluations += len(cache)
    u_best = np.clip(res.x, 0, 1)
    o_best, v_best = point(u_best)
    o_start, v_start = float(obj[start]), float(viol[start])
    if (v_start <= 0 and (v_best > 0 or o_start < o_best)) or (v_start > 0 and v_start < v_best):
        u_best, o_best, v_best = u_grid[start], o_start, v_start  # the refinement did not improve
    best_values = {n: float(v) for n, v in zip(space.names, space.to_values(u_best))}
    best_rx = with_parameters(receiver, **best_values)
    best_result = best_rx.evaluate()
    best_frame = best_result.to_frame()

    rows = []
    for c in cons:
        value, limit = (float(x[0]) for x in _constraint_values(best_frame, c))
        with np.errstate(invalid="ignore"):
            slack = value - limit if c["relation"] == ">=" else limit - value
        tol = 0.01 * (abs(limit) if limit and np.isfinite(limit) else 1.0)
        rows.append(dict(figure=c["figure"], relation=c["relation"], limit=limit, value=value,
                         slack=slack, satisfied=bool(slack >= -tol) or bool(np.isinf(limit)),
                         active=bool(abs(slack) <= tol), source=c["source"]))
    cons_frame = pd.DataFrame(rows, columns=["figure", "relation", "limit", "value", "slack",
                                             "satisfied", "active", "source"])

    value = (float(best_frame[_column(best_frame, obj_name)].iloc[0]) if not callable(objective)
             else o_best)
    flat = None
    if (flat_tolerance > 0 and not callable(objective) and "reverse_bias" in space.names
            and v_best <= 0):
        flat = _least_bias(best_rx, best_values, vary["reverse_bias"][0], value, sign,
                           flat_tolerance, scores)
        evaluations += _FLAT_POINTS
    trade = _trade_curve(best_rx, vary, trade_points, obj_name if not callable(objective) else None,
                         [c["figure"] for c in cons])
    return OptimizationResult(
        receiver=best_rx, result=best_result,
        objective=f"{'max' if sign < 0 else 'min'} {obj_name}",
        value=value, parameters=best_values, constraints=cons_frame, trade_curve=trade,
        success=bool(v_best <= 0), message=str(res.message), evaluations=evaluations,
        flat=flat is not None, flat_tolerance=float(flat_tolerance),
        low_bias_parameters=None if flat is None else flat[0],
        low_bias_value=None if flat is None else flat[1], notes=tuple(notes),
    )


_FLAT_POINTS = 201  # bias points of the flatness test (a 0.5 % step of the bias span)


def _least_bias(best_rx, best_values, low, value, sign, tolerance, scores):
    """The lowest feasible bias, other parameters at the optimum, whose objective comes
    within ``tolerance`` of ``value``; None unless it is at least 10 % below the optimum."""
    v_best = best_values["reverse_bias"]
    if not v_best > low:
        return None
    bias = np.linspace(low, v_best, _FLAT_POINTS)
    frame = with_parameters(best_rx, reverse_bias=bias).evaluate().to_frame()
    obj, viol = scores(frame)  # obj is signed: smaller is better
    good = (viol <= 0) & (obj <= sign * value + tolerance * abs(value))
    if not good.any():
        return None
    i = int(np.argmax(good))
    if bias[i] > 0.9 * v_best:
        return None  # nothing much cheaper: the objective is not flat
    params = dict(best_values, reverse_bias=float(bias[i]))
    return params, float(sign * obj[i])


def _constraint_values(frame: pd.DataFrame, c: dict):
    """Value and limit arrays of constraint ``c`` over the rows of ``frame``."""
    value = frame[_column(frame, c["figure"])].to_numpy(dtype=float)
    if c["absolute"]:
        value = np.abs(value)
    limit = c["limit"]
    limit = (frame[_column(frame, limit)].to_numpy(dtype=float) if isinstance(limit, str)
             else np.full(len(frame), float(limit)))
    return value, limit


def _trade_curve(rx, vary, n, obj_name, cons_names) -> pd.DataFrame:
    from .sweep import sweep

    if "reverse_bias" in vary:
        lo, hi = (float(b) for b in vary["reverse_bias"])
    else:
        v0 = float(np.max(get_parameter(rx, "reverse_bias")))
        lo, hi = 0.0, max(2.0 * v0, 1.0)
    frame = sweep(rx, reverse_bias=np.linspace(lo, hi, n))
    keep = ["reverse_bias"] + [c for c in ([obj_name] if obj_name else []) + list(cons_names) + ["stable"]
                               if c in frame.columns]
    return frame[list(dict.fromkeys(keep))]


def _column(frame: pd.DataFrame, name: str) -> str:
    if name not in frame.columns:
        raise DesignError(f"unknown receiver figure {name!r}; known: {', '.join(frame.columns)}",
                          parameter=name)
    if frame[name].dtype.kind not in "biuf":  # a label such as limited_by has no order
        numeric = [c for c in frame.columns if frame[c].dtype.kind in "biuf"]
        raise DesignError(f"receiver figure {name!r} is not numeric and cannot be an objective or "
                          f"constraint; numeric figures: {', '.join(numeric)}", parameter=name)
    return name



_CONDITION = re.compile(r"^\s*(>=|<=)\s*(\S.*?)\s*$")


def parse_condition(figure: str, text: str) -> tuple[str, float]:
    """``">= 900 MHz"`` -> ``(">=", 9e8)``: a condition on a receiver figure, in SI.

    Parameters
    ----------
    figure : str
        The figure the condition bounds (a name of :data:`~photorx.analysis.result.FIGURES`);
        a limit written with a unit must carry that figure's unit (degrees, dB and dBm
        figures take bare numbers).
    text : str
        ``">= VALUE"`` or ``"<= VALUE"``; VALUE a number (SI) or a quantity with units.

    Returns
    -------
    tuple of (str, float)
        The relation and the limit [SI unit of the figure].

    Raises
    ------
    DesignError
        Any other text, or a limit of the wrong dimension; the message names the figure.
    """
    from ..units import parse_quantity
    from .result import FIGURES

    m = _CONDITION.match(str(text))
    if not m:
        raise DesignError(f"condition on {figure!r} = {text!r} is invalid; write '>= VALUE' or "
                          "'<= VALUE', e.g. '>= 900 MHz'", parameter=figure)
    unit = FIGURES.get(figure, (None,))[0]
    unit = None if unit in (None, "", "deg", "dB", "dBm", "bit/s") else unit.replace("rtHz", "Hz^0.5")
    try:
        limit = parse_quantity(m.group(2), unit)
    except DesignError as exc:
        raise DesignError(f"condition on {figure!r} = {text!r}: {exc}", parameter=figure) from None
    if math.isnan(limit):
        raise DesignError.out_of_range(f"condition on {figure!r}", limit, "", "a number, not NaN")
    return m.group(1), limit
