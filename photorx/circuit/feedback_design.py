"""Choose the feedback capacitance of a transimpedance stage for a target response.

:func:`design_feedback_capacitor` solves on the full model (amplifier with its finite gain and
extra poles, input capacitance, photodiode series and shunt resistance) and reports the
classic two-pole closed form beside the numerical answer, with its relative error.

Targets
-------
The response targets are set on the dominant closed-loop pole pair (see
:mod:`photorx.circuit.metrics`): Q = 1/sqrt(2) ("butterworth", maximally flat magnitude),
Q = 1/sqrt(3) ("bessel", maximally flat group delay), Q = 1/2 ("critical", critically
damped: the fastest step without overshoot for two poles). For a two-pole loop these are the
textbook definitions; with extra poles they apply to the dominant pair. A phase-margin target
solves phase_margin(Cf) = target on the loop gain.

Closed form
-----------
With an integrator amplifier A = w_t/s (w_t = 2 pi GBW), Rs = 0 and Rsh = inf the
transimpedance is Rf / (1 + s (Rf Cf + 1/w_t) + s^2 Rf C / w_t), C = Ci + Cf, Ci = Cd + Cin,
so w_n = sqrt(w_t / (Rf C)) and damping zeta = (w_n / 2)(Rf Cf + 1/w_t). Neglecting 1/w_t and
Cf against Ci::

    Cf ~ 2 zeta sqrt(Ci / (2 pi Rf GBW))

zeta = 1/sqrt(2), sqrt(3)/2 and 1 for the three response targets; for a phase margin PM the
same loop gives 2 zeta = sin(PM) / sqrt(cos(PM)). zeta = 1/2 (Q = 1, PM ~ 52 deg) is the
frequently quoted Cf = sqrt(Ci / (2 pi Rf GBW)) that puts the noise-gain pole at the geometric
mean of its zero and GBW (Graeme's "45 degree" compensation).

References
----------
.. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996, ch. 3
       (phase compensation of the photodiode amplifier).
.. [2] K. Ogata, *Modern Control Engineering*, 5th ed., Prentice Hall, 2010, sec. 7-6
       (phase margin and damping of a second-order loop).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._validate import require_in_range, require_positive
from ..errors import DesignError
from .amplifier import OpAmp
from .metrics import TiaMetrics, closed_loop_poles, loop_margins, _dominant_pair
from .tia import Tia

__all__ = ["FeedbackDesign", "design_feedback_capacitor", "closed_form_feedback_capacitor",
           "TARGET_Q"]

#: Quality factor of the dominant pair for each named response target.
TARGET_Q = {"butterworth": 1.0 / np.sqrt(2.0), "bessel": 1.0 / np.sqrt(3.0), "critical": 0.5}


@dataclass(frozen=True)
class FeedbackDesign:
    """Result of :func:`design_feedback_capacitor`; ``float(result)`` is the capacitance.

    Each parameter is also the attribute of that name.

    Parameters
    ----------
    cf : float
        Feedback capacitance solved on the full model [F], >= 0.
    target : str
        ``"butterworth"``, ``"bessel"``, ``"critical"`` or ``"phase_margin"``.
    target_value : float
        The Q of the dominant pair [-], or the phase margin [deg], that was solved for.
    closed_form_cf : float
        Two-pole closed form 2 zeta sqrt(Ci/(2 pi Rf GBW)) [F].
    closed_form_error : float
        (closed_form_cf - cf) / cf [-]; ``inf`` when ``cf`` is 0.
    metrics : TiaMetrics
        Figures of the stage with ``cf``.
    tia : Tia
        The stage with ``cf``.
    note : str
        Empty, or why the answer is a limit (target already met with Cf = 0).
    """

    cf: float
    target: str
    target_value: float
    closed_form_cf: float
    closed_form_error: float
    metrics: TiaMetrics
    tia: Tia
    note: str = ""

    def __float__(self):
        return float(self.cf)


def closed_form_feedback_capacitor(gbw, rf, ci, zeta):
    """Two-pole closed form Cf = 2 zeta sqrt(Ci / (2 pi Rf GBW)) [F].

    Parameters
    ----------
    gbw : array_like
        Gain-bandwidth product [Hz].
    rf : array_like
        Feedback resistance [ohm].
    ci : array_like
        Total capacitance at the summing node, photodiode plus amplifier input [F].
    zeta : array_like
        Target damping ratio of the closed loop.

    Notes
    -----
    Valid when Cf << Ci and 2 pi GBW Rf Ci >> 1 (see the module notes); Graeme (1996),
    ch. 3; Ogata (2010), sec. 7-6.
    """
    return 2.0 * np.asarray(zeta) * np.sqrt(np.asarray(ci) / (2.0 * np.pi * np.asarray(rf)
                                                            * np.asarray(gbw)))


def _zeta_for_phase_margin(pm_deg):
    pm = np.radians(pm_deg)
    return np.sin(pm) / (2.0 * np.sqrt(np.cos(pm)))


def design_feedback_capacitor(amp, rf, net, target="butterworth", phase_margin=None,
                              cf_max=None):
    """Feedback capacitance for a target response or phase margin, on the full model.

    Parameters
    ----------
    amp : OpAmp
        The amplifier.
    rf : float
        Feedback resistance [ohm], > 0.
    net : EquivalentCircuit
        The photodiode as the amplifier sees it (scalar fields).
    target : {"butterworth", "bessel", "critical"}
        Response of the dominant pole pair (Q = 0.707, 0.577, 0.5); ignored when
        ``phase_margin`` is given.
    phase_margin : float, optional
        Target phase margin [deg], in (0, 90).
    cf_max : float, optional
        Largest capacitance searched [F]; default 1000 times the closed form (at least 1 nF).

    Returns
    -------
    FeedbackDesign
        ``.cf`` [F] (also ``float(result)``), the closed form and its error, and the metrics.

    Raises
    ------
    DesignError
        Unknown target, phase margin outside (0, 90) deg, or no Cf in [0, cf_max] reaches
        the target (for example when an extra amplifier pole limits the margin).

    Notes
    -----
    Solves Q(Cf) = Q_target (or PM(Cf) = PM_target) with Brent's method on log Cf, in the
    first bracket found on a logarithmic scan from small Cf upwards: the smallest
    capacitance that meets the target, i.e. the widest bandwidth. If the loop already meets
    the target with Cf = 0 the result is Cf = 0 with a note.

    References
    ----------
    .. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996, ch. 3.
    .. [2] R. P. Brent, *Algorithms for Minimization without Derivatives*, 1973, ch. 4.
    """
    if not isinstance(amp, OpAmp):
        raise DesignError(f"amp must be an OpAmp, got {type(amp).__name__}", parameter="amp")
    rf = require_positive("rf", rf, "ohm")
    if np.ndim(rf) or any(np.ndim(v) for v in (net.capacitance, net.shunt_resistance,
                                                 net.series_resistance)):
        raise DesignError("design_feedback_capacitor takes one design (scalar rf and net); "
                          "use photorx.circuit.metrics.tia_figures for arrays", parameter="rf")
    if phase_margin is not None:
        pm_t = require_in_range("phase_margin", phase_margin, "deg", 0.0, 90.0,
                                low_inclusive=False, high_inclusive=False)
        target, target_value, zeta = "phase_margin", float(pm_t), _zeta_for_phase_margin(pm_t)
    else:
        if target not in TARGET_Q:
            raise DesignError(f"target = {target!r} is invalid; valid: "
                              f"{', '.join(map(repr, TARGET_Q))} or phase_margin=<deg>",
                              parameter="target")
        target_value = float(TARGET_Q[target])
        zeta = 1.0 / (2.0 * target_value)
    ci = net.capacitance + amp.input_capacitance
    closed = float(closed_form_feedback_capacitor(amp.gbw, rf, ci, zeta))
    args = dict(gbw=amp.gbw, dc_gain=amp.dc_gain, poles=amp.poles, rf=rf, cd=net.capacitance,
                rsh=net.shunt_resistance, rs=net.series_resistance, cin=amp.input_capacitance,
                zeros=amp.zeros)
    if cf_max is None:
        cf_max = max(1e3 * closed, 1e-9)
    cf_max = float(require_positive("cf_max", cf_max, "F"))

    def excess(cf):
        """> 0 while the response is still under-compensated (vectorised over cf)."""
        if target == "phase_margin":
            return target_value - loop_margins(cf=cf, **args)["phase_margin"]
        x = closed_loop_poles(cf=cf, **args)
        shape = np.shape(x)
        q, _ = _dominant_pair(x.reshape(-1, shape[-1]))
        stable = np.all(np.isnan(x) | (x.real < 0), -1).reshape(-1)
        return np.where(stable, q, np.inf).reshape(shape[:-1]) - target_value

    note = ""
    if excess(0.0) <= 0:
        cf, note = 0.0, "target already met without a feedback capacitor (Cf = 0)"
    else:
        grid = np.geomspace(cf_max * 1e-7, cf_max, 141)
        ex = excess(grid)
        done = np.nonzero(ex <= 0)[0]
        if done.size == 0:
            what = "phase margin" if target == "phase_margin" else "Q of the dominant pair"
            best = target_value - np.nanmin(ex) if target == "phase_margin" \
                else target_value + np.nanmin(ex)
            raise DesignError(
                f"target = {target} ({what} {target_value:.4g}) is not reached for cf from 0 "
                f"to cf_max = {cf_max:.4g} F (closest {what}: {best:.4g}); an extra amplifier "
                "pole or too little gain-bandwidth may limit it", parameter="target")
        from scipy.optimize import brentq  # lazy: scipy.optimize costs ~0.3 s to import

        k = done[0]
        if k == 0:
            lo, hi = 0.0, grid[0]
            cf = brentq(lambda c: float(excess(c)), lo, hi, xtol=1e-30, rtol=1e-12)
        else:
            lo, hi = np.log(grid[k - 1]), np.log(grid[k])
            cf = float(np.exp(brentq(lambda u: float(excess(np.exp(u))), lo, hi,
                                     xtol=1e-12, rtol=1e-12)))
    tia = Tia(amp, rf=float(rf), cf=float(cf))
    metrics = tia.analyze(net)
    error = (closed - cf) / cf if cf > 0 else np.inf
    return FeedbackDesign(cf=float(cf), target=target, target_value=target_value,
                          closed_form_cf=closed, closed_form_error=float(error),
                          metrics=metrics, tia=tia, note=note)
