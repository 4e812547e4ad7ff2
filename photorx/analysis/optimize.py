"""Design optimisation: the best reverse bias, Rf, Cf (or any parameter) under a receiver's constraints.

Two stages. A coarse cartesian grid over the varied parameters is evaluated in one
vectorised sweep, which finds a feasible start and guards against local optima; then
SciPy's COBYLA (a derivative-free method that handles inequality constraints, robust to
the small numerical noise of found bandwidths) refines it in normalised coordinates
(logarithmic for parameters that span a decade or more).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy import optimize as _sopt

from ..errors import DesignError
from .parameters import get_parameter, resolve_parameter, with_parameters
from .sweep import grid

__all__ = ["optimize", "OptimizationResult", "MAXIMIZE", "MINIMIZE"]

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

    Attributes
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

    def to_frame(self) -> pd.DataFrame:
        """The optimum parameters and objective as a one-row table."""
        row = dict(self.parameters)
        row[self.objective] = self.value
        return pd.DataFrame([row])

    def plot(self, ax=None):
        """The trade curve: objective and constraint figures against reverse bias, the
        optimum marked. Returns the matplotlib figure."""
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
        head = f"<p><b>{self.objective}</b> = {self.value:.6g} ({'feasible' if self.success else 'infeasible'})</p>"
        return head + self.to_frame().to_html(index=False) + self.constraints.to_html(index=False)


def _parse_constraints(constraints) -> list[tuple[str, str, float]]:
    out = []
    for name, spec in (constraints or {}).items():
        if isinstance(spec, (tuple, list)) and len(spec) == 2 and spec[0] in _OPS:
            op, limit = spec
        elif isinstance(spec, dict) and set(spec) <= {"min", "max"}:
            for key, op in (("min", ">="), ("max", "<=")):
                if key in spec:
                    out.append((name, op, float(spec[key])))
            continue
        else:
            raise DesignError(
                f"constraint {name!r} = {spec!r} is invalid; write (\">=\", value), (\"<=\", value) "
                "or {'min': value, 'max': value}", parameter=name)
        out.append((name, op, float(limit)))
    return out


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
             grid_points: int = 2000, trade_points: int = 41) -> OptimizationResult:
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

    Returns
    -------
    OptimizationResult
    """
    if not vary:
        raise DesignError("optimize needs at least one parameter to vary, e.g. vary={'reverse_bias': (0, 20)}",
                          parameter="vary")
    for name in vary:
        resolve_parameter(receiver, name)
    space = _Space(vary)
    obj_name, sign = _objective_direction(objective)
    cons = _parse_constraints(constraints)

    def table(values: dict) -> pd.DataFrame:
        return with_parameters(receiver, **values).evaluate().to_frame()

    def scores(frame: pd.DataFrame):
        obj = np.asarray(objective(frame) if callable(objective) else frame[_column(frame, obj_name)],
                         dtype=float) * (1.0 if callable(objective) else sign)
        viol = np.zeros(len(frame))
        for name, op, limit in cons:
            value = frame[_column(frame, name)].to_numpy(dtype=float)
            scale = abs(limit) if limit != 0 else 1.0
            slack = (value - limit) / scale if op == ">=" else (limit - value) / scale
            viol += np.where(np.isfinite(slack), np.clip(-slack, 0, None), 1e3)
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
    for name, op, limit in cons:
        value = float(best_frame[_column(best_frame, name)].iloc[0])
        slack = value - limit if op == ">=" else limit - value
        tol = 0.01 * (abs(limit) if limit else 1.0)
        rows.append(dict(figure=name, relation=op, limit=limit, value=value, slack=slack,
                         satisfied=bool(slack >= -tol), active=bool(abs(slack) <= tol)))
    cons_frame = pd.DataFrame(rows, columns=["figure", "relation", "limit", "value", "slack",
                                             "satisfied", "active"])

    trade = _trade_curve(best_rx, vary, trade_points, obj_name if not callable(objective) else None,
                         [c[0] for c in cons])
    return OptimizationResult(
        receiver=best_rx, result=best_result,
        objective=f"{'max' if sign < 0 else 'min'} {obj_name}",
        value=float(best_frame[_column(best_frame, obj_name)].iloc[0]) if not callable(objective) else o_best,
        parameters=best_values, constraints=cons_frame, trade_curve=trade,
        success=bool(v_best <= 0), message=str(res.message), evaluations=evaluations,
    )


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

