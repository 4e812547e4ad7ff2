"""Figures of merit of a transimpedance loop: bandwidth, margins, peaking, step response.

Functional core: :func:`tia_figures` takes broadcastable parameter arrays (one element per
design) and returns a dict of arrays, with no Python loop over design points, so that a sweep
of 10^4 designs is one call. :func:`closed_loop_polynomial`, :func:`closed_loop_poles` and
:func:`loop_margins` are the pieces it is built from; they live in
:mod:`~photorx.circuit.loop_poles` (polynomial and poles), :mod:`~photorx.circuit.loop_margins`
and :mod:`~photorx.circuit.step_figures` (rise, overshoot, settling), and are re-exported
here. Shell: :class:`TiaMetrics` (a frozen dataclass holding the figures) and
:func:`analyze_tia` (what ``Tia.analyze`` calls).

Method
------
With the nodal analysis of :mod:`photorx.circuit.tia` (A = A0/D_A(s), Yf = Gf + s Cf,
Zd = 1/(Gsh + s Cd), P(s) = 1 + Rs Gsh + s Rs Cd, Yin P = N_in(s), Q2 = Yf P + N_in)
the closed-loop transimpedance is all-pole::

    Zt(s) = A0 / Den(s),   Den(s) = Q2(s) D_A(s) + A0 Yf(s) P(s)

and Den(s) = 0 is also 1 + T(s) = 0 with the loop gain T = A0 Yf P / (D_A Q2). An amplifier
with real zeros, A = A0 N_A(s)/D_A(s), N_A = prod(1 + s/w_z), gives
Zt = A0 N_A / Den with Den = Q2 D_A + A0 N_A Yf P: the amplifier's zeros are the only zeros
of Zt, and every |Den|^2 below reads |Den|^2/|N_A|^2, each residue gains a factor N_A(p_i)
and the group delay loses Re(N_A'/N_A). Hence

* poles: eigenvalues of the companion matrix of Den (batched ``numpy.linalg.eigvals``; the
  polynomial is scaled to s/w0 with w0 = sqrt(c0/c2) first); ``stable`` = every pole has
  Re p < 0. Leading coefficients that vanish (Rs = 0, absent poles) lower the degree; designs
  are grouped by degree (a loop over at most a handful of degrees, never over designs).
* DC transimpedance Zt(0) = A0 / (A0 Gf (1 + Rs Gsh) + Gsh + Gf (1 + Rs Gsh)), i.e. Rf
  reduced by the finite gain and the shunt path.
* -3 dB bandwidth: |Zt(jw)/Zt(0)|^2 = Den(0)^2/|Den(jw)|^2 on a log grid (which also holds
  the pole frequencies, so no resonance is stepped over); the *first* fall below 1/2 is
  bracketed and refined by bisection. Peaking above the DC value does not stop the search
  (it is not a fall), and a response that falls below -3 dB and later rises above it again
  at a resonance (a low-phase-margin pole pair above a slow real pole) is measured where it
  first falls: the band over which it stays within 3 dB of DC, as the receiver's chain
  bandwidth (:func:`photorx.analysis.evaluation.minus_3db_frequency`) is.
* peaking: maximum of |Zt/Zt(0)| in dB (0 if the response never rises above DC), refined by
  bisection on d|Den(jw)|^2/dw.
* group-delay variation: tau_g(w) = Re(Den'(jw)/Den(jw)); peak-to-peak over 65 points from
  DC to the -3 dB frequency [s].
* margins: from the loop gain T written as T0 prod(1 + s/wz)/prod(1 + s/wp) with its real
  corners (the passive network Yf + Yin is RC-only, so every corner is real). Phase margin
  = 180 deg + arg T at each |T| = 1 crossing, wrapped to (-180, 180]; with several crossings
  the worst is reported, i.e. the one nearest the critical point (smallest magnitude), with
  its frequency ``crossover``. Gain margin = -20 log10 |T| at each crossing of -180 deg
  (mod 360); the one closest to 0 dB is reported with ``phase_crossover``. Both choices and
  the wrapping are those of python-control's ``stability_margins``. A negative phase margin
  with ``stable = True`` can occur only in multi-crossing (conditionally stable) loops;
  ``stable`` always comes from the closed-loop poles. No gain crossover gives
  phase_margin = inf and crossover = NaN; no phase crossover gives gain_margin_db = inf and
  phase_crossover = NaN (both also python-control's convention).
* Q and damping describe the dominant second-order part of the closed loop: among the
  complex-conjugate pole pairs and the pair made of the two lowest real poles, the one with
  the lowest natural frequency w_n = sqrt(p1 p2); Q = w_n / -(p1 + p2), damping = 1/(2 Q).
  Computed from the pair's sum and product, Q is continuous through critical damping.
* step response of the photocurrent: v(t)/v(inf) = 1 + sum_i c_i exp(p_i t),
  c_i = Den(0) / (p_i Den'(p_i)) (exact residues, simple poles). It is sampled on a uniform
  grid long enough that every term has decayed below the settling band (and with >= 6
  samples per ringing period, up to 65536 samples, i.e. Q up to about 5000; beyond that rise
  time and overshoot come from an early window at the same density); crossings, the
  highest of the first peaks and every ringing peak near the band edge are then refined by
  Newton steps on the exact expression. Rise time is 10 % to 90 % (first crossings);
  overshoot is the fraction (max - final)/final, 0.05 meaning 5 %; settling time is the last
  time the response is outside the +-1 % band (``settling_tolerance``).
* maximum photocurrent: output_swing / |Zt(0)| for a steady (DC) photocurrent;
  ``max_step_photocurrent`` = output_swing / (|Zt(0)| (1 + overshoot)) for a photocurrent
  step from zero, whose overshoot reaches the rail first. (For a sinusoid at the peaking
  frequency divide by 10^(peaking_db/20) instead.)

An unstable loop (any closed-loop pole with Re >= 0) has ``stable = False``; its margins,
DC transimpedance and DC maximum photocurrent are reported, while bandwidth, peaking, Q,
damping, rise, overshoot, settling, group-delay variation and step maximum are NaN, as
documented here: an unstable loop never gets a bandwidth.

References
----------
.. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996, ch. 2-3.
.. [2] K. Ogata, *Modern Control Engineering*, 5th ed., Prentice Hall, 2010, ch. 5 and 7
       (step-response specifications, phase and gain margin).
.. [3] P. C. D. Hobbs, *Building Electro-Optical Systems*, 2nd ed., Wiley, 2009, ch. 18.
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

from .._validate import as_float_array
from ..errors import DesignError
from .loop_margins import _loop_corners, _margins, loop_margins
from .loop_poles import (_TWO_PI, _bisect_rows, _den_parts, _denominator, _deriv,
                         _normalised_poles, _numerator, _on_axis, _prepare, closed_loop_poles,
                         closed_loop_polynomial)
from .step_figures import _step_figures

__all__ = [
    "TiaMetrics",
    "analyze_tia",
    "tia_figures",
    "closed_loop_polynomial",
    "closed_loop_poles",
    "loop_margins",
    "FIGURE_UNITS",
]

#: Output keys of :func:`tia_figures` (= fields of :class:`TiaMetrics`) and their units.
FIGURE_UNITS = {
    "dc_transimpedance": "ohm",
    "bandwidth": "Hz",
    "peaking_db": "dB",
    "phase_margin": "deg",
    "gain_margin_db": "dB",
    "crossover": "Hz",
    "phase_crossover": "Hz",
    "q": "",
    "damping": "",
    "rise_time": "s",
    "overshoot": "",
    "settling_time": "s",
    "group_delay_variation": "s",
    "max_photocurrent": "A",
    "max_step_photocurrent": "A",
    "stable": "",
}

_N_FREQ = 160          # log-grid points for bandwidth and peaking (plus the pole frequencies)


# ---------------------------------------------------------------------------------------------
# closed-loop figures from the normalised poles
# ---------------------------------------------------------------------------------------------
def _dominant_pair(x):
    """Q and damping of the dominant second-order pair; see the module notes."""
    mag = np.abs(x)
    valid = ~np.isnan(x)
    is_cplx = valid & (x.imag > 1e-6 * mag)
    is_real = valid & (np.abs(x.imag) <= 1e-6 * mag)
    wn_c = np.where(is_cplx, mag, np.inf)
    kc = np.argmin(wn_c, -1)
    xc = np.take_along_axis(x, kc[:, None], -1)[:, 0]
    wn_c = np.take_along_axis(wn_c, kc[:, None], -1)[:, 0]
    sum_c = 2 * xc.real
    order = np.argsort(np.where(is_real, mag, np.inf), -1)[:, :2]
    two = np.take_along_axis(x, order, -1)
    two_ok = np.take_along_axis(is_real, order, -1).all(-1)
    with np.errstate(invalid="ignore"):
        wn_r = np.where(two_ok, np.sqrt(np.abs(two[:, 0] * two[:, 1])), np.inf)
    sum_r = (two[:, 0] + two[:, 1]).real
    use_c = wn_c <= wn_r
    wn = np.where(use_c, wn_c, wn_r)
    ssum = np.where(use_c, sum_c, sum_r)
    with np.errstate(divide="ignore", invalid="ignore"):
        damping = -ssum / (2 * wn)
        q = 1.0 / (2 * damping)
    return q, damping


def _frequency_figures(x, d, nn=None):
    """Bandwidth, peaking (linear ratio) and group-delay variation, in units of w0.

    ``nn`` is the normalised numerator N_A(s w0) of the amplifier's zeros (None: all-pole).
    """
    n_rows = x.shape[0]
    mag = np.abs(x)
    lo = np.nanmin(mag, -1) * 0.01
    hi = np.nanmax(mag, -1) * 100.0
    u = np.linspace(0.0, 1.0, _N_FREQ)
    w = lo[:, None] * (hi / lo)[:, None] ** u
    extra = np.concatenate([np.abs(x.imag), mag], -1)
    extra = np.where(np.isnan(extra) | (extra < lo[:, None]), lo[:, None], extra)
    w = np.sort(np.concatenate([w, extra], -1), -1)
    dd = _deriv(d)
    if nn is None:
        def inv_gain(r, ww):  # |Den(jw)/Den(0)|^2 = 1/|H|^2
            return np.abs(_on_axis(d[r], ww)) ** 2

        def inv_slope(r, ww):  # the sign of d(1/|H|^2)/dw
            return (np.conj(_on_axis(d[r], ww)) * 1j * _on_axis(dd[r], ww)).real
    else:
        nd = _deriv(nn) if nn.shape[-1] > 1 else np.zeros_like(nn)

        def inv_gain(r, ww):  # |Den(jw)|^2 / |N_A(jw)|^2, N_A(0) = Den(0) = 1
            return np.abs(_on_axis(d[r], ww)) ** 2 / np.abs(_on_axis(nn[r], ww)) ** 2

        def inv_slope(r, ww):  # |N|^2 d|D|^2/dw - |D|^2 d|N|^2/dw (halved), same sign
            dv, nv = _on_axis(d[r], ww), _on_axis(nn[r], ww)
            return ((np.conj(dv) * 1j * _on_axis(dd[r], ww)).real * np.abs(nv) ** 2
                    - (np.conj(nv) * 1j * _on_axis(nd[r], ww)).real * np.abs(dv) ** 2)
    rows = np.arange(n_rows)
    g = inv_gain(rows, w)
    # first grid point below -3 dB (the grid starts at 1 % of the slowest pole, well inside
    # the pass band); the band ends there even if a resonance further up rises above -3 dB
    # again: a response that is down 3 dB over a span is not "flat" across it
    first = np.maximum(np.argmax(g > 2.0, -1), 1)

    def f_bw(xx, r):
        return 2.0 - inv_gain(r, xx[:, None])[:, 0]

    bw = _bisect_rows(f_bw, w[rows, first - 1], w[rows, first], rows)
    # peaking: minimum of |Den|^2, refined where d|Den|^2/dw changes sign around the grid minimum
    k = np.argmin(g, -1)
    peak = 1.0 / g[rows, k]
    kl, kh = np.maximum(k - 1, 0), np.minimum(k + 1, w.shape[1] - 1)

    def slope(xx, r):
        return inv_slope(r, xx[:, None])[:, 0]

    ok = (slope(w[rows, kl], rows) < 0) & (slope(w[rows, kh], rows) > 0)
    if np.any(ok):
        r = rows[ok]
        xm = _bisect_rows(slope, w[r, kl[ok]], w[r, kh[ok]], r)
        gm = inv_gain(r, xm[:, None])[:, 0]
        peak[r] = np.maximum(peak[r], 1.0 / gm)
    peak = np.maximum(peak, 1.0)
    wg = bw[:, None] * np.linspace(0.0, 1.0, 65)
    tau = (_on_axis(dd, wg) / _on_axis(d, wg)).real
    if nn is not None:  # arg H = arg N_A - arg Den: each zero takes its delay off
        tau = tau - (_on_axis(nd, wg) / _on_axis(nn, wg)).real
    gdv = tau.max(-1) - tau.min(-1)
    return bw, peak, gdv


def tia_figures(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, output_swing=np.inf, *,
                zeros=(), settling_tolerance=0.01):
    """Every figure of merit of the transimpedance loop for many designs at once.

    Parameters
    ----------
    gbw : array_like
        Amplifier gain-bandwidth product [Hz], > 0.
    dc_gain : array_like
        Amplifier DC open-loop gain [V/V], > 0.
    poles : sequence of array_like
        Extra amplifier poles [Hz], > 0, one entry per pole; ``inf`` marks an absent pole
        (pad with ``inf`` when designs differ in their number of poles). ``()`` for none.
    rf : array_like
        Feedback resistance [ohm], > 0.
    cf : array_like
        Feedback capacitance [F], >= 0.
    cd : array_like
        Photodiode capacitance [F], > 0.
    rsh : array_like
        Photodiode shunt resistance [ohm], > 0, ``inf`` for none.
    rs : array_like
        Photodiode series resistance [ohm], >= 0.
    cin : array_like
        Amplifier input capacitance [F], >= 0.
    output_swing : array_like, optional
        Largest output magnitude [V], > 0; ``inf`` (default) means no limit and gives an
        infinite maximum photocurrent.
    zeros : sequence of array_like, optional
        Real amplifier zeros [Hz], > 0, one entry per zero; ``inf`` marks an absent zero.
        ``()`` (default) for none; they become the zeros of Zt (module notes).
    settling_tolerance : float, optional
        Settling band as a fraction of the final value, in (0, 0.5); default 0.01 (1 %).

    Returns
    -------
    dict of numpy.ndarray
        Keys and units as in :data:`FIGURE_UNITS` (the fields of :class:`TiaMetrics`),
        each shaped like the broadcast of the inputs. ``stable`` is boolean; figures that
        have no meaning for an unstable loop are NaN exactly where ``stable`` is False.

    Notes
    -----
    See the module notes for every formula. Work scales linearly with the number of
    designs (about 2e4 designs/s on one core, tests/benchmarks/bench_tia_metrics.py); the
    only Python loops run over polynomial degree, pole index, refinement steps, step-response
    sample-count bins and memory blocks of about 2e6 samples, never over design points.
    A bare 1-D array for ``poles`` is read as several poles (as in :class:`OpAmp`); give one
    array per pole inside a tuple to vary a pole across designs.

    References
    ----------
    .. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996.
    .. [2] K. Ogata, *Modern Control Engineering*, 5th ed., Prentice Hall, 2010.
    """
    tol = float(as_float_array("settling_tolerance", settling_tolerance))
    if not 0.0 < tol < 0.5:
        raise DesignError.out_of_range("settling_tolerance", tol, "", "(0, 0.5)")
    shape, p, pk = _prepare(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, output_swing, zeros)
    n = p["gbw"].size
    parts = _den_parts(p, pk)
    a0 = p["dc_gain"]
    den = _denominator(p, parts)
    zt0 = a0 / den[:, 0]
    x, w0, d = _normalised_poles(den)
    nn = _numerator(p, parts, w0)
    stable = np.all(np.isnan(x) | (x.real < 0), -1)
    pm, gm, fc, fpc = _margins(*_loop_corners(p, pk, parts))

    out = {key: np.full(n, np.nan) for key in FIGURE_UNITS}
    out.update(dc_transimpedance=zt0, phase_margin=pm, gain_margin_db=gm, crossover=fc,
               phase_crossover=fpc, max_photocurrent=p["output_swing"] / np.abs(zt0))
    out["stable"] = stable
    s = np.nonzero(stable)[0]
    if s.size:
        q, damping = _dominant_pair(x[s])
        ns = None if nn is None else nn[s]
        bw, peak, gdv = _frequency_figures(x[s], d[s], ns)
        out["q"][s], out["damping"][s] = q, damping
        out["bandwidth"][s] = bw * w0[s] / _TWO_PI
        out["peaking_db"][s] = 10.0 * np.log10(peak)  # peak is |H|^2
        out["group_delay_variation"][s] = gdv / w0[s]
        rise, over, settle = _step_figures(x[s], d[s], tol, ns)
        out["rise_time"][s] = rise / w0[s]
        out["overshoot"][s] = over
        out["settling_time"][s] = settle / w0[s]
        out["max_step_photocurrent"][s] = out["max_photocurrent"][s] / (1.0 + out["overshoot"][s])
    return {k: v.reshape(shape) for k, v in out.items()}


# ---------------------------------------------------------------------------------------------
# shell
# ---------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class TiaMetrics:
    """Figures of merit of a transimpedance stage (fields are floats, or arrays for many designs).

    Parameters
    ----------
    dc_transimpedance : float or numpy.ndarray
        DC closed-loop transimpedance [ohm] (finite gain and shunt included).
    bandwidth : float or numpy.ndarray
        -3 dB frequency of the transimpedance [Hz] (first fall; NaN if unstable).
    peaking_db : float or numpy.ndarray
        Peak of |Zt| above its DC value [dB], >= 0.
    phase_margin : float or numpy.ndarray
        Worst phase margin of the loop gain [deg], in (-180, 180]; inf without a crossover.
    gain_margin_db : float or numpy.ndarray
        Gain margin closest to 0 dB [dB]; inf without a -180 deg crossing.
    crossover : float or numpy.ndarray
        Gain-crossover frequency of the reported phase margin [Hz]; NaN without one.
    phase_crossover : float or numpy.ndarray
        Frequency of the reported gain margin [Hz]; NaN without one.
    q : float or numpy.ndarray
        Quality factor of the dominant pole pair (dimensionless), > 0.
    damping : float or numpy.ndarray
        Damping ratio of the dominant pole pair, 1/(2 Q) (dimensionless).
    rise_time : float or numpy.ndarray
        10-90 % rise time of the step response [s].
    overshoot : float or numpy.ndarray
        Step overshoot as a fraction of the final value (0.05 = 5 %), >= 0.
    settling_time : float or numpy.ndarray
        Time after which the step response stays within the settling band
        (+-1 % by default) of its final value [s].
    group_delay_variation : float or numpy.ndarray
        Peak-to-peak group delay from DC to the bandwidth [s].
    max_photocurrent : float or numpy.ndarray
        output_swing / |Zt(0)|, the largest steady photocurrent [A]; inf without a swing limit.
    max_step_photocurrent : float or numpy.ndarray
        Largest photocurrent step whose overshoot stays inside the output swing [A].
    stable : bool or numpy.ndarray
        True when every closed-loop pole has a negative real part.

    Unstable loops carry ``stable=False``, their margins and DC figures; the other figures
    are NaN there (see :mod:`photorx.circuit.metrics`).
    """

    dc_transimpedance: float
    bandwidth: float
    peaking_db: float
    phase_margin: float
    gain_margin_db: float
    crossover: float
    phase_crossover: float
    q: float
    damping: float
    rise_time: float
    overshoot: float
    settling_time: float
    group_delay_variation: float
    max_photocurrent: float
    max_step_photocurrent: float
    stable: bool

    @classmethod
    def from_figures(cls, figures):
        """Build from the dict of :func:`tia_figures` (0-d arrays become Python scalars).

        Parameters
        ----------
        figures : mapping of str to array_like
            The output of :func:`tia_figures`: every key of :data:`FIGURE_UNITS`, SI units.

        Returns
        -------
        TiaMetrics
            Floats for one design, arrays (shape of the inputs) for many.
        """
        def plain(v):
            a = np.asarray(v)
            return a.item() if a.ndim == 0 else a
        return cls(**{f.name: plain(figures[f.name]) for f in fields(cls)})

    def to_dict(self):
        """Field name -> value (floats or arrays)."""
        return {f.name: getattr(self, f.name) for f in fields(self)}

    def to_frame(self):
        """A pandas DataFrame: one row per design, one column per figure (SI units)."""
        import pandas as pd

        cols = {k: np.ravel(v) for k, v in self.to_dict().items()}
        size = max(c.size for c in cols.values())
        return pd.DataFrame({k: np.broadcast_to(c, (size,)) for k, c in cols.items()})

    def _repr_html_(self):
        from ..units import format_eng

        rows = []
        for name, value in self.to_dict().items():
            unit = FIGURE_UNITS[name]
            if np.ndim(value):
                text = f"array, shape {np.shape(value)}"
            elif name == "stable":
                text = "yes" if value else "<b>no: unstable loop</b>"
            elif name == "overshoot":
                text = format_eng(100.0 * value, "%")
            else:
                text = format_eng(value, unit)
            rows.append(f"<tr><td>{name}</td><td>{text}</td></tr>")
        return ("<table><thead><tr><th>figure</th><th>value</th></tr></thead><tbody>"
                + "".join(rows) + "</tbody></table>")

    def plot(self, ax=None, f=None):
        """Bode plot of the loop gain and closed loop, crossover and phase margin marked.

        Needs the stage: metrics made by :meth:`photorx.Tia.analyze` remember it. See
        :func:`photorx.views.result_plots.plot_tia_metrics`.

        Parameters
        ----------
        ax : pair of matplotlib.axes.Axes, optional
            (magnitude axes, phase axes); by default a new Figure.
        f : array_like, optional
            Frequency grid [Hz]; default seven decades up to 30 x the crossover.

        Returns
        -------
        matplotlib.figure.Figure
        """
        from ..views.result_plots import plot_tia_metrics

        return plot_tia_metrics(self, f=f, ax=ax)


def analyze_tia(tia, net, settling_tolerance=0.01):
    """Figures of merit of ``tia`` loaded by the photodiode circuit ``net``.

    Parameters
    ----------
    tia : photorx.circuit.tia.Tia
        The stage (amplifier, Rf, Cf); the amplifier's ``output_swing`` bounds the photocurrent.
    net : photorx.device.equivalent_circuit.EquivalentCircuit
        The photodiode as the amplifier sees it (fields may be arrays).
    settling_tolerance : float, optional
        Settling band, fraction of the final value (default 0.01).

    Returns
    -------
    TiaMetrics
    """
    figures = tia_figures(**tia._args(net), output_swing=tia.amp.output_swing,
                          settling_tolerance=settling_tolerance)
    return TiaMetrics.from_figures(figures)
