r"""Transimpedance amplifier: loop gain, noise gain and closed-loop transimpedance.

Circuit (common practice; Graeme, *Photodiode Amplifiers*, 1996, ch. 2-3)::

              Cf
         +----||----+
         +---/\/\---+          Rf || Cf from the summing node (-) to the output
         |   Rf     |
    Rs   |  |\      |
  --/\/\-+--|- \    |
  |      |  |   >---+-- v_out
 [Id,Cd, Cin|+ /
  Rsh]   |  |/ (+ input grounded)
  |      |
  GND   GND

Nodal analysis at the summing node with v_out = -A(s) v_n gives

* feedback factor  beta = Yf / (Yf + Yin),   Yf = 1/Rf + s Cf,
  Yin = 1/(Rs + Zd) + s Cin,   Zd = Rsh || 1/(s Cd)
* loop gain        T = A beta
* noise gain       1/beta = 1 + Yin/Yf  (gain from the amplifier's input voltage noise)
* transimpedance   Zt = v_out / i_ph = Zf * Zd/(Zd + Rs) * T / (1 + T)

with the photocurrent drawn out of the summing node so that Zt -> +Rf at DC for an
ideal amplifier. Every function broadcasts over frequency and all parameters; pass
``param[..., None]`` and a 1-D frequency grid to evaluate many designs at once.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._validate import require_nonnegative, require_positive
from .amplifier import OpAmp, open_loop_gain

__all__ = [
    "Tia",
    "feedback_admittance",
    "input_admittance",
    "feedback_factor",
    "loop_gain",
    "noise_gain",
    "closed_loop_factor",
    "transimpedance",
]


def _s(f):
    return 2j * np.pi * np.asarray(f, dtype=float)


def feedback_admittance(f, rf, cf):
    """Admittance of the feedback network Rf || Cf [S]: Yf = 1/Rf + j 2 pi f Cf.

    Parameters
    ----------
    f : array_like
        Frequency [Hz], >= 0.
    rf : array_like
        Feedback resistance [ohm], > 0.
    cf : array_like
        Feedback capacitance [F], >= 0.
    """
    return 1.0 / np.asarray(rf, dtype=float) + _s(f) * np.asarray(cf, dtype=float)


def input_admittance(f, cd, rsh, rs, cin):
    """Admittance from the summing node to ground [S].

    Yin = 1/(Rs + Zd) + j 2 pi f Cin with Zd = Rsh || 1/(j 2 pi f Cd).
    ``rsh`` may be ``inf`` (no shunt path).

    Parameters
    ----------
    f : array_like
        Frequency [Hz], >= 0.
    cd : array_like
        Photodiode capacitance [F], > 0.
    rsh : array_like
        Photodiode shunt resistance [ohm], > 0; ``inf`` for no shunt path.
    rs : array_like
        Photodiode series resistance [ohm], >= 0.
    cin : array_like
        Amplifier input capacitance (common-mode plus differential) [F], >= 0.
    """
    s = _s(f)
    # Written with the junction admittance yd so that Rsh = inf at f = 0 stays finite.
    yd = 1.0 / np.asarray(rsh, dtype=float) + s * np.asarray(cd, dtype=float)
    return yd / (1.0 + np.asarray(rs, dtype=float) * yd) + s * np.asarray(cin, dtype=float)


def feedback_factor(f, rf, cf, cd, rsh, rs, cin):
    """Feedback factor beta = Yf / (Yf + Yin), complex, dimensionless.

    Parameters
    ----------
    f : array_like
        Frequency [Hz], >= 0.
    rf : array_like
        Feedback resistance [ohm], > 0.
    cf : array_like
        Feedback capacitance [F], >= 0.
    cd : array_like
        Photodiode capacitance [F], > 0.
    rsh : array_like
        Photodiode shunt resistance [ohm], > 0; ``inf`` for no shunt path.
    rs : array_like
        Photodiode series resistance [ohm], >= 0.
    cin : array_like
        Amplifier input capacitance (common-mode plus differential) [F], >= 0.
    """
    yf = feedback_admittance(f, rf, cf)
    return yf / (yf + input_admittance(f, cd, rsh, rs, cin))


def noise_gain(f, rf, cf, cd, rsh, rs, cin):
    """Noise gain 1/beta = 1 + Yin/Yf, complex: the gain from the amplifier's input voltage noise
    to the output for an ideal amplifier (the rising "en*C" term at high frequency).

    Parameters
    ----------
    f : array_like
        Frequency [Hz], >= 0.
    rf : array_like
        Feedback resistance [ohm], > 0.
    cf : array_like
        Feedback capacitance [F], >= 0.
    cd : array_like
        Photodiode capacitance [F], > 0.
    rsh : array_like
        Photodiode shunt resistance [ohm], > 0; ``inf`` for no shunt path.
    rs : array_like
        Photodiode series resistance [ohm], >= 0.
    cin : array_like
        Amplifier input capacitance (common-mode plus differential) [F], >= 0.
    """
    return 1.0 + input_admittance(f, cd, rsh, rs, cin) / feedback_admittance(f, rf, cf)


def loop_gain(f, gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros=()):
    """Loop gain T = A(jf) beta(jf), complex.

    Parameters
    ----------
    f : array_like
        Frequency [Hz].
    gbw, dc_gain, poles
        Amplifier, see :func:`photorx.circuit.amplifier.open_loop_gain`.
    rf, cf : array_like
        Feedback resistance [ohm] and capacitance [F].
    cd, rsh, rs : array_like
        Photodiode capacitance [F], shunt [ohm] and series resistance [ohm].
    cin : array_like
        Amplifier input capacitance [F].
    zeros : sequence of array_like, optional
        Amplifier zeros [Hz], see :func:`photorx.circuit.amplifier.open_loop_gain`.
    """
    return (open_loop_gain(f, gbw, dc_gain, poles, zeros)
            * feedback_factor(f, rf, cf, cd, rsh, rs, cin))


def closed_loop_factor(t):
    """T / (1 + T): how far the loop falls short of ideal feedback, complex.

    Parameters
    ----------
    t : array_like
        Loop gain T [V/V], complex (see :func:`loop_gain`); any value except -1.
    """
    return t / (1.0 + t)


def transimpedance(f, gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros=()):
    """Closed-loop transimpedance v_out / i_ph [ohm], complex; +Rf at DC for an ideal amplifier.

    Zt = Zf * Zd/(Zd + Rs) * T/(1 + T); see the module notes for the derivation.

    Parameters
    ----------
    f : array_like
        Frequency [Hz], >= 0.
    gbw : array_like
        Gain-bandwidth product [Hz], > 0.
    dc_gain : array_like
        DC open-loop gain A0 [V/V], > 0.
    poles : sequence of array_like
        Extra (non-dominant) pole frequencies [Hz], > 0; ``inf`` marks an absent pole.
        See :func:`photorx.circuit.amplifier.open_loop_gain`.
    rf : array_like
        Feedback resistance [ohm], > 0.
    cf : array_like
        Feedback capacitance [F], >= 0.
    cd : array_like
        Photodiode capacitance [F], > 0.
    rsh : array_like
        Photodiode shunt resistance [ohm], > 0; ``inf`` for no shunt path.
    rs : array_like
        Photodiode series resistance [ohm], >= 0.
    cin : array_like
        Amplifier input capacitance (common-mode plus differential) [F], >= 0.
    zeros : sequence of array_like, optional
        Real zeros of the open-loop gain [Hz], > 0; ``inf`` marks an absent zero.
        See :func:`photorx.circuit.amplifier.open_loop_gain`.

    References
    ----------
    .. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996, ch. 2.
    .. [2] P. C. D. Hobbs, *Building Electro-Optical Systems*, 2nd ed., Wiley, 2009, ch. 18.
    """
    s = _s(f)
    zf = 1.0 / feedback_admittance(f, rf, cf)
    yd = 1.0 / np.asarray(rsh, dtype=float) + s * np.asarray(cd, dtype=float)
    divider = 1.0 / (1.0 + np.asarray(rs, dtype=float) * yd)  # Zd/(Zd + Rs), finite at f = 0
    t = loop_gain(f, gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros)
    return zf * divider * closed_loop_factor(t)


@dataclass(frozen=True)
class Tia:
    """A transimpedance stage: amplifier with feedback Rf || Cf.

    Parameters
    ----------
    amp : OpAmp
        The amplifier.
    rf : float
        Feedback resistance [ohm], > 0.
    cf : float
        Feedback capacitance [F], >= 0 (include the resistor's parasitic capacitance).
    """

    amp: OpAmp
    rf: float = 10e3
    cf: float = 0.5e-12

    def __post_init__(self):
        if not isinstance(self.amp, OpAmp):
            from ..errors import DesignError

            raise DesignError(f"amp must be an OpAmp, got {type(self.amp).__name__}", parameter="amp")
        object.__setattr__(self, "rf", require_positive("rf", self.rf, "ohm"))
        object.__setattr__(self, "cf", require_nonnegative("cf", self.cf, "F"))

    # -- parameter routing ---------------------------------------------------------------
    def _args(self, net):
        a = self.amp
        args = dict(gbw=a.gbw, dc_gain=a.dc_gain, poles=a.poles, rf=self.rf, cf=self.cf,
                    cd=net.capacitance, rsh=net.shunt_resistance, rs=net.series_resistance,
                    cin=a.input_capacitance)
        if a.zeros:  # only when present: an all-pole amplifier keeps its keywords unchanged
            args["zeros"] = a.zeros
        return args

    def _passive(self, net):
        a = self._args(net)
        return {k: a[k] for k in ("rf", "cf", "cd", "rsh", "rs", "cin")}

    def transimpedance(self, f, net):
        """Closed-loop transimpedance [ohm], complex; see :func:`transimpedance`.

        Parameters
        ----------
        f : array_like
            Frequency [Hz], >= 0; give array fields of ``net`` a trailing axis to pair them
            with a 1-D grid.
        net : photorx.device.equivalent_circuit.EquivalentCircuit
            The photodiode at its operating point (fields may be arrays that broadcast).
        """
        return transimpedance(f, **self._args(net))

    def loop_gain(self, f, net):
        """Loop gain A*beta, complex; see :func:`loop_gain`.

        Parameters
        ----------
        f : array_like
            Frequency [Hz], >= 0; give array fields of ``net`` a trailing axis to pair them
            with a 1-D grid.
        net : photorx.device.equivalent_circuit.EquivalentCircuit
            The photodiode at its operating point (fields may be arrays that broadcast).
        """
        return loop_gain(f, **self._args(net))

    def noise_gain(self, f, net):
        """Noise gain 1/beta, complex; see :func:`noise_gain`.

        Parameters
        ----------
        f : array_like
            Frequency [Hz], >= 0; give array fields of ``net`` a trailing axis to pair them
            with a 1-D grid.
        net : photorx.device.equivalent_circuit.EquivalentCircuit
            The photodiode at its operating point (fields may be arrays that broadcast).
        """
        return noise_gain(f, **self._passive(net))

    def feedback_factor(self, f, net):
        """Feedback factor beta, complex; see :func:`feedback_factor`.

        Parameters
        ----------
        f : array_like
            Frequency [Hz], >= 0; give array fields of ``net`` a trailing axis to pair them
            with a 1-D grid.
        net : photorx.device.equivalent_circuit.EquivalentCircuit
            The photodiode at its operating point (fields may be arrays that broadcast).
        """
        return feedback_factor(f, **self._passive(net))

    # -- analyses owned by other modules (imported lazily to keep the core light) --------
    def analyze(self, net, **options):
        """Bandwidth, margins, peaking and step-response figures; see :mod:`photorx.circuit.metrics`.

        Parameters
        ----------
        net : photorx.device.equivalent_circuit.EquivalentCircuit
            The photodiode at its operating point (fields may be arrays that broadcast).
        **options
            Passed to :func:`photorx.circuit.metrics.analyze_tia` (``settling_tolerance``).
        """
        from .metrics import analyze_tia

        metrics = analyze_tia(self, net, **options)
        object.__setattr__(metrics, "_stage", (self, net))  # for metrics.plot(); not a field
        return metrics

    def step_response(self, net, t=None, n: int = 400):
        """Output after a photocurrent step, relative to its final value: ``(t [s], y)``.

        Parameters
        ----------
        net : EquivalentCircuit
            The photodiode at its operating point (scalar fields).
        t : array_like, optional
            Times [s]; default ``n`` points up to three settling times (or eight rise times).
        n : int
            Number of default time points.

        See :func:`photorx.circuit.step.step_response`.
        """
        from .step import step_response

        if t is None:
            m = self.analyze(net)
            span = np.nanmax([3.0 * m.settling_time, 8.0 * m.rise_time])
            if not np.isfinite(span) or span <= 0:  # unstable: show the growth over a few periods
                span = 10.0 / (2 * np.pi * max(float(m.crossover) if np.isfinite(m.crossover) else 0.0, 1.0))
            t = np.linspace(0.0, span, n)
        t = np.asarray(t, dtype=float)
        return t, step_response(t, **self._args(net))

    def noise(self, net, temperature=300.0, **options):
        """Noise spectrum of every source at the output; see :mod:`photorx.circuit.noise`.

        Parameters
        ----------
        net : photorx.device.equivalent_circuit.EquivalentCircuit
            The photodiode at its operating point.
        temperature : float
            Temperature of the resistors [K], > 0; default 300 K.
        **options
            Passed to :func:`photorx.circuit.noise_spectrum.tia_noise` (post filter, current
            split, second-stage noise, integration band).
        """
        from .noise_spectrum import tia_noise

        return tia_noise(self, net, temperature=temperature, **options)

    def _repr_html_(self):
        """Jupyter display: a compact parameter table with units (the closed form, where
        there is one, is the LaTeX display)."""
        from ..views.rich import parameter_table_html

        return parameter_table_html(self)

    def _repr_latex_(self):
        """Jupyter display of the model's closed form with this object's values."""
        from ..views.rich import closed_form_latex

        return closed_form_latex(self)
