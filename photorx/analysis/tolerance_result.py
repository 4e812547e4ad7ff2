"""What a tolerance study returns: samples, yield, pass fractions, drivers and worst units.

Definitions (common practice in production yield analysis):

- A **unit** is one draw of every tolerance; with temperature corners it is evaluated at
  each corner, and it **passes** a spec when it meets it at every corner.
- The **yield** is the fraction of units that pass every spec (and are stable unless
  ``require_stable=False``), with the Wilson score interval at 95 % confidence
  (E. B. Wilson, "Probable inference, the law of succession, and statistical
  inference", J. Am. Stat. Assoc. 22, 209-212, 1927), computed by
  :meth:`scipy.stats.binomtest`'s ``proportion_ci(method="wilson")``.
- The **margin** of a spec is the distance to its limit relative to the limit,
  ``(value - limit) / |limit|`` for ``>=`` and ``(limit - value) / |limit|`` for ``<=``
  (``|limit|`` replaced by 1 for a zero limit); positive passes. A figure that does not
  exist (NaN) has margin minus infinity. A unit's margin is its smallest over corners.
- The **drivers** rank the tolerances by the Spearman rank correlation between a
  parameter's sampled value and failure (1 = the unit fails a spec, 0 = it passes), over
  units: ``|rho|`` near 1 means that parameter alone orders the failures. When no unit
  fails, or all do, the correlation with the unit's worst margin over all specs is used
  instead (``measure`` says which). ``share`` is rho^2 over the sum of rho^2 of all
  tolerances, a rough split of the explained ranking, valid for independent tolerances
  (Spearman, "The proof and measurement of association between two things", Am. J.
  Psychol. 15, 72-101, 1904; :func:`scipy.stats.spearmanr`).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property

import numpy as np
import pandas as pd

__all__ = ["ToleranceResult", "wilson_interval", "CONFIDENCE"]

#: Confidence level of every interval of a study.
CONFIDENCE = 0.95


def wilson_interval(successes: int, trials: int, confidence: float = CONFIDENCE) -> tuple:
    """Wilson score interval of a binomial proportion (Wilson 1927), via SciPy.

    Parameters
    ----------
    successes : int
        Units that passed, 0 to ``trials``.
    trials : int
        Units drawn, >= 1.
    confidence : float
        Confidence level, in (0, 1); default 0.95.

    Returns
    -------
    tuple of float
        ``(low, high)``.
    """
    from scipy.stats import binomtest

    ci = binomtest(int(successes), int(trials)).proportion_ci(confidence_level=confidence,
                                                             method="wilson")
    return float(ci.low), float(ci.high)


@dataclass(frozen=True, eq=False)
class ToleranceResult:
    """Outcome of :func:`~photorx.analysis.tolerance.tolerance_study`.

    Parameters
    ----------
    samples : pandas.DataFrame
        One row per unit and temperature corner (unit-major): ``sample`` (the unit's
        index), the sampled parameters, the kept figures; ``attrs["units"]`` maps each
        column to its SI unit.
    tolerances : tuple of Tolerance
        The parsed tolerances, in the order given.
    specs : tuple of dict
        The specs as optimize constraints (figure, relation, limit [SI]).
    n : int
        Units drawn.
    temperatures : numpy.ndarray or None
        Temperature corners [K]; None when the design's temperature (or a sampled one) was
        used.
    seed : int
        Seed of the random streams.
    chunk_size : int
        Units per dask task.
    nominal : dict
        Every figure of the nominal design (scalars).
    require_stable : bool
        Whether an unstable unit fails (the spec ``stable``).
    """

    samples: pd.DataFrame
    tolerances: tuple
    specs: tuple
    n: int
    temperatures: np.ndarray | None = None
    seed: int = 0
    chunk_size: int = 0
    nominal: dict = field(default_factory=dict)
    require_stable: bool = True

    # -- per-spec arrays, shape (units, corners) ----------------------------------------------
    @property
    def _corners(self) -> int:
        return 1 if self.temperatures is None else len(self.temperatures)

    def spec_label(self, spec: dict) -> str:
        """``"bandwidth >= 900 MHz"``: a spec as a designer reads it.

        Parameters
        ----------
        spec : dict
            One entry of :attr:`specs`.
        """
        from ..units import format_eng
        from .result import FIGURES

        unit = FIGURES.get(spec["figure"], ("",))[0]
        return f"{spec['figure']} {spec['relation']} {format_eng(spec['limit'], unit)}"

    @cached_property
    def margins(self) -> pd.DataFrame:
        """Relative margin of every spec, one column per spec label, one row per sample
        row (positive passes; see the module docstring)."""
        from .optimize import _constraint_values

        out = {}
        for spec in self.specs:
            value, limit = _constraint_values(self.samples, spec)
            scale = np.where(limit != 0, np.abs(limit), 1.0)
            with np.errstate(invalid="ignore"):
                margin = ((value - limit) if spec["relation"] == ">=" else (limit - value)) / scale
            out[self.spec_label(spec)] = np.where(np.isnan(margin), -np.inf, margin)
        return pd.DataFrame(out, index=self.samples.index)

    @cached_property
    def _unit_pass(self) -> dict:
        """Spec label -> bool per unit (passes at every corner)."""
        shape = (self.n, self._corners)
        out = {label: (col.to_numpy() >= 0).reshape(shape).all(axis=1)
               for label, col in self.margins.items()}
        if self.require_stable:
            out["stable"] = self.samples["stable"].to_numpy(dtype=bool).reshape(shape).all(axis=1)
        return out

    @cached_property
    def passed(self) -> np.ndarray:
        """True for every unit that passes every spec at every corner (shape ``(n,)``)."""
        return np.logical_and.reduce(list(self._unit_pass.values()))

    @property
    def yield_fraction(self) -> float:
        """Fraction of units that pass every spec."""
        return float(np.mean(self.passed))

    @property
    def yield_interval(self) -> tuple:
        """Wilson 95 % interval ``(low, high)`` of :attr:`yield_fraction`."""
        return wilson_interval(int(np.sum(self.passed)), self.n)

    @cached_property
    def by_spec(self) -> pd.DataFrame:
        """Pass fraction per spec with its Wilson 95 % interval (index: spec label)."""
        rows = []
        specs = {self.spec_label(s): s for s in self.specs}
        for label, ok in self._unit_pass.items():
            spec = specs.get(label, {"figure": "stable", "relation": "==", "limit": 1.0})
            k = int(np.sum(ok))
            low, high = wilson_interval(k, self.n)
            rows.append(dict(spec=label, figure=spec["figure"], relation=spec["relation"],
                             limit=spec["limit"], pass_fraction=k / self.n, ci_low=low,
                             ci_high=high, failures=self.n - k))
        return pd.DataFrame(rows).set_index("spec")

    @cached_property
    def by_temperature(self) -> pd.DataFrame | None:
        """Yield and pass fraction per spec at each temperature corner (None without corners)."""
        if self.temperatures is None:
            return None
        shape = (self.n, self._corners)
        per = {label: (col.to_numpy() >= 0).reshape(shape) for label, col in self.margins.items()}
        if self.require_stable:
            per["stable"] = self.samples["stable"].to_numpy(dtype=bool).reshape(shape)
        every = np.logical_and.reduce(list(per.values()))
        rows = []
        for j, t in enumerate(self.temperatures):
            k = int(every[:, j].sum())
            low, high = wilson_interval(k, self.n)
            rows.append({"temperature": float(t), "yield": k / self.n, "ci_low": low,
                         "ci_high": high, **{label: float(p[:, j].mean()) for label, p in per.items()}})
        return pd.DataFrame(rows).set_index("temperature")

    def _parameter_values(self, tol) -> np.ndarray:
        column = tol.parameter if tol.parameter in self.samples.columns else "temperature"
        return self.samples[column].to_numpy(dtype=float)[::self._corners]

    @cached_property
    def worst_margin(self) -> np.ndarray:
        """Each unit's smallest margin over specs and corners (shape ``(n,)``); an unstable
        unit counts minus infinity when stability is required."""
        m = self.margins.to_numpy().reshape(self.n, self._corners, -1).min(axis=(1, 2))
        if self.require_stable:
            m = np.where(self._unit_pass["stable"], m, -np.inf)
        return m

    @cached_property
    def drivers(self) -> pd.DataFrame:
        """Tolerances ranked by how well they order the failures (see the module docstring).

        Columns: ``rho`` (the Spearman correlation ranked by; positive means a larger value
        fails more often or, with ``measure == "margin"``, has more margin),
        ``rho_fail``, ``rho_margin``, ``share``, ``measure``, ``tolerance``.
        """
        fail = (~self.passed).astype(float)
        use_fail = 0 < fail.sum() < self.n
        margin = self.worst_margin
        rows = []
        for tol in self.tolerances:
            x = self._parameter_values(tol)
            r_fail = _spearman(x, fail)
            r_margin = _spearman(x, margin)
            rows.append(dict(parameter=tol.parameter, rho=r_fail if use_fail else r_margin,
                             rho_fail=r_fail, rho_margin=r_margin,
                             measure="failure" if use_fail else "margin",
                             tolerance=tol.describe()))
        frame = pd.DataFrame(rows).set_index("parameter")
        rho2 = np.nan_to_num(frame["rho"].to_numpy(dtype=float)) ** 2
        frame.insert(1, "share", rho2 / rho2.sum() if rho2.sum() > 0 else np.nan)
        order = np.argsort(-np.nan_to_num(np.abs(frame["rho"].to_numpy(dtype=float))), kind="stable")
        return frame.iloc[order]

    @cached_property
    def spec_drivers(self) -> pd.DataFrame:
        """Spearman correlation of every tolerance (rows) with every spec's unit margin
        (columns; the margin's smallest value over corners): which tolerance moves which
        spec. Positive: a larger value gives more margin."""
        shape = (self.n, self._corners)
        table = {label: {tol.parameter: _spearman(self._parameter_values(tol),
                                                  col.to_numpy().reshape(shape).min(axis=1))
                         for tol in self.tolerances}
                 for label, col in self.margins.items()}
        return pd.DataFrame(table)

    def worst_samples(self, count: int = 5) -> pd.DataFrame:
        """The ``count`` rows of least margin of every spec (spec, rank, margin, the row).

        Parameters
        ----------
        count : int
            Rows per spec, >= 1; default 5.
        """
        parts = []
        for label, margin in self.margins.items():
            values = margin.to_numpy()
            idx = np.argsort(values, kind="stable")[:max(1, int(count))]
            part = self.samples.iloc[idx].copy()
            part.insert(0, "margin", values[idx])
            part.insert(0, "rank", np.arange(1, len(idx) + 1))
            part.insert(0, "spec", label)
            parts.append(part)
        return pd.concat(parts, ignore_index=True) if parts else pd.DataFrame()

    @property
    def worst(self) -> pd.DataFrame:
        """:meth:`worst_samples` with the default count (5 rows per spec)."""
        return self.worst_samples()

    def to_frame(self) -> pd.DataFrame:
        """Summary table: the yield (row ``all specs``) and every spec's pass fraction, with
        Wilson 95 % intervals and failure counts."""
        low, high = self.yield_interval
        top = pd.DataFrame([dict(spec="all specs", figure="", relation="", limit=np.nan,
                                 pass_fraction=self.yield_fraction, ci_low=low, ci_high=high,
                                 failures=int(self.n - np.sum(self.passed)))]).set_index("spec")
        return pd.concat([top, self.by_spec])

    def summary(self) -> str:
        """A few lines: units, corners, yield with its interval."""
        low, high = self.yield_interval
        corners = ("" if self.temperatures is None else
                   f" at {len(self.temperatures)} temperature corners")
        return (f"{self.n} units{corners}: yield {100 * self.yield_fraction:.2f} % "
                f"(95 % interval {100 * low:.2f} .. {100 * high:.2f} %)")

    def __repr__(self) -> str:
        return f"<ToleranceResult: {self.summary()}>"

    def _repr_html_(self) -> str:
        from ..views.tolerance_view import tolerance_html

        return tolerance_html(self)

    def plot(self, ax=None):
        """Histograms of every spec figure with its limit and nominal, and the yield against
        temperature when there are corners. Returns the matplotlib figure.

        Parameters
        ----------
        ax : sequence of matplotlib.axes.Axes, optional
            One axes per spec figure, plus one for the yield against temperature when
            there are corners; default None makes a new figure.
        """
        from ..views.tolerance_view import plot_tolerance

        return plot_tolerance(self, ax=ax)


def _spearman(x: np.ndarray, y: np.ndarray) -> float:
    """Spearman's rho; NaN when either input is constant (no ranking to explain)."""
    from scipy.stats import spearmanr

    y = np.where(np.isneginf(y), np.finfo(float).min, y)  # a missing figure ranks lowest
    if len(x) < 3 or x.min() == x.max() or y.min() == y.max():
        return float("nan")
    return float(spearmanr(x, y).statistic)
