"""Open-loop gain from data-sheet points: a rational model fitted to magnitude and phase.

An amplifier's data sheet gives its open-loop gain as curves of magnitude [dB] and phase
[deg] against frequency. :func:`fit_open_loop_gain` fits the rational gain of
:func:`photorx.circuit.amplifier.open_loop_gain` (DC gain, gain-bandwidth product of the
dominant pole, ``poles`` extra real poles and ``zeros`` real left-half-plane zeros) to such
points by weighted least squares, and :meth:`GainFit.amplifier` (or
:meth:`photorx.OpAmp.from_gain_points`) turns the result into an :class:`~photorx.OpAmp`.

The tabulated points are represented by the fitted poles and zeros, never interpolated:
every stage of the engine (closed-loop poles, margins, bandwidth, step, noise, pulse
response) works unchanged on the fitted rational model, and the fit error is reported
(:attr:`GainFit.worst_magnitude_error`, :attr:`GainFit.worst_phase_error`, a
:class:`~photorx.errors.ModelRangeWarning` when a residual exceeds its tolerance).

References
----------
.. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996, ch. 2
       (open-loop gain of a voltage-feedback amplifier as poles and zeros).
.. [2] W. H. Press et al., *Numerical Recipes*, 3rd ed., Cambridge University Press, 2007,
       sec. 15.5 (nonlinear least squares and parameter covariance).
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np

from .._validate import require_finite, require_positive
from ..device.fitting import weighted_least_squares
from ..errors import DesignError, ModelRangeWarning
from .amplifier import OpAmp, open_loop_gain

__all__ = ["GainFit", "fit_open_loop_gain"]

_STARTS = 12        # start points of the multi-start search (one deterministic stream)
_LN10_20 = 20.0 / math.log(10.0)


@dataclass(frozen=True, eq=False)  # holds arrays: compared by identity
class GainFit:
    """Result of :func:`fit_open_loop_gain`.

    Parameters
    ----------
    dc_gain : float
        Fitted DC open-loop gain A0 [V/V].
    gbw : float
        Fitted gain-bandwidth product of the dominant pole, A0 f_d [Hz].
    poles : tuple of float
        Fitted extra poles [Hz], ascending.
    zeros : tuple of float
        Fitted real zeros [Hz], ascending.
    uncertainty : dict
        Relative 1-sigma standard errors [-] of ``dc_gain``, ``gbw`` (floats) and of each
        entry of ``poles`` and ``zeros`` (tuples), from the covariance of the log
        parameters scaled by the reduced chi-square; ``inf`` where the points do not
        determine a parameter.
    frequency : numpy.ndarray
        The points' frequencies [Hz].
    magnitude_error : numpy.ndarray
        Model minus data magnitude at each point [dB].
    phase_error : numpy.ndarray
        Model minus data phase at each point [deg], wrapped to (-180, 180]; NaN without
        phase points.
    magnitude_tolerance, phase_tolerance : float
        The tolerances the fit was weighted and judged by [dB], [deg].
    """

    dc_gain: float
    gbw: float
    poles: tuple
    zeros: tuple
    uncertainty: dict
    frequency: np.ndarray
    magnitude_error: np.ndarray
    phase_error: np.ndarray
    magnitude_tolerance: float
    phase_tolerance: float

    @property
    def dominant_pole(self):
        """Fitted dominant pole GBW/A0 [Hz]."""
        return self.gbw / self.dc_gain

    @property
    def worst_magnitude_error(self):
        """Largest |model - data| magnitude over the points [dB]."""
        return float(np.max(np.abs(self.magnitude_error)))

    @property
    def worst_phase_error(self):
        """Largest |model - data| phase over the points [deg]; NaN without phase points."""
        ph = self.phase_error
        return float(np.max(np.abs(ph))) if np.all(np.isfinite(ph)) else math.nan

    @property
    def acceptable(self):
        """True when every residual is within its tolerance (magnitude and phase)."""
        ok = self.worst_magnitude_error <= self.magnitude_tolerance
        ph = self.worst_phase_error
        return bool(ok and (math.isnan(ph) or ph <= self.phase_tolerance))

    def gain(self, f):
        """Fitted open-loop gain A(jf), complex [V/V]; see
        :func:`photorx.circuit.amplifier.open_loop_gain`.

        Parameters
        ----------
        f : float or array_like
            Frequency [Hz], >= 0.
        """
        return open_loop_gain(f, self.gbw, self.dc_gain, self.poles, self.zeros)

    def amplifier(self, **fields):
        """An :class:`~photorx.OpAmp` with the fitted gain and the other ``fields`` given.

        Parameters
        ----------
        **fields
            Any other :class:`~photorx.OpAmp` field (noise, input capacitance, output
            swing); ``gbw``, ``dc_gain``, ``poles`` and ``zeros`` come from the fit.

        Returns
        -------
        OpAmp
        """
        taken = sorted({"gbw", "dc_gain", "poles", "zeros"} & set(fields))
        if taken:
            raise DesignError(f"{taken[0]} comes from the fitted gain points; valid range: the "
                              "other OpAmp fields only", parameter=taken[0])
        return OpAmp(gbw=self.gbw, dc_gain=self.dc_gain, poles=self.poles, zeros=self.zeros,
                     **fields)


def _points(frequency, magnitude_db, phase_deg):
    f = np.atleast_1d(require_positive("frequency", frequency, "Hz")).astype(float).ravel()
    mag = np.atleast_1d(require_finite("magnitude_db", magnitude_db, "dB")).astype(float).ravel()
    if mag.size != f.size:
        raise DesignError(f"magnitude_db has {mag.size} values for {f.size} frequencies; "
                          "valid range: one magnitude per frequency", parameter="magnitude_db")
    if phase_deg is None:
        ph = None
    else:
        ph = np.atleast_1d(require_finite("phase_deg", phase_deg, "deg")).astype(float).ravel()
        if ph.size != f.size:
            raise DesignError(f"phase_deg has {ph.size} values for {f.size} frequencies; "
                              "valid range: one phase per frequency (or none)",
                              parameter="phase_deg")
    if np.unique(f).size != f.size:
        raise DesignError("frequency has repeated values; valid range: distinct frequencies "
                          "[Hz]", parameter="frequency")
    return f, mag, ph


def _count(name, value):
    try:
        n = int(value)
    except (TypeError, ValueError):
        raise DesignError(f"{name} = {value!r} is not a whole number; valid range: 0 to 6",
                          parameter=name) from None
    if n != value or not 0 <= n <= 6:
        raise DesignError.out_of_range(name, value, "", "whole numbers 0 to 6")
    return n


def _model(x, f, n_p):
    """20 log10 |A| [dB] and arg A [deg] from the log parameters (exact sums, no wrapping)."""
    ln_a0, ln_gbw = x[0], x[1]
    fd = math.exp(ln_gbw - ln_a0)
    fp = np.exp(x[2:2 + n_p])
    fz = np.exp(x[2 + n_p:])
    rd, rp, rz = f / fd, f[:, None] / fp, f[:, None] / fz
    mag = _LN10_20 * (ln_a0 - 0.5 * np.log1p(rd * rd) - 0.5 * np.log1p(rp * rp).sum(-1)
                      + 0.5 * np.log1p(rz * rz).sum(-1))
    phase = np.degrees(-np.arctan(rd) - np.arctan(rp).sum(-1) + np.arctan(rz).sum(-1))
    return mag, phase


def _wrap(deg):
    return 180.0 - np.mod(180.0 - deg, 360.0)


def _start(f, mag):
    """ln A0 and ln GBW from the points: the low-frequency plateau and the unity crossing."""
    order = np.argsort(f)
    fs, ms = f[order], mag[order]
    a0 = 10.0 ** (ms.max() / 20.0)
    below = np.nonzero(ms <= 0.0)[0]
    if below.size and below[0] > 0:  # interpolate the 0 dB crossing in log f
        k = below[0]
        t = ms[k - 1] / (ms[k - 1] - ms[k])
        fc = math.exp(math.log(fs[k - 1]) + t * (math.log(fs[k]) - math.log(fs[k - 1])))
    else:  # no crossing among the points: extrapolate a -20 dB/decade slope from the last one
        fc = fs[-1] * 10.0 ** (ms[-1] / 20.0)
    gbw = max(fc, fs[0] * 1e-3)
    return math.log(a0), math.log(gbw), fc


def fit_open_loop_gain(frequency, magnitude_db, phase_deg=None, *, poles=0, zeros=0,
                       magnitude_tolerance=1.0, phase_tolerance=5.0, warn=True):
    """Fit DC gain, gain-bandwidth product, extra poles and zeros to open-loop gain points.

    Parameters
    ----------
    frequency : array_like
        Frequencies of the points [Hz], > 0, distinct (any order).
    magnitude_db : array_like
        Open-loop gain magnitude 20 log10 |A| at each frequency [dB].
    phase_deg : array_like, optional
        Phase of A at each frequency [deg]: 0 at DC, falling through -90 at the dominant pole
        (the sign inversion of the stage is not included). Any multiple of 360 deg is
        immaterial (residuals are wrapped). None: magnitude only.
    poles : int
        Number of extra real poles to fit beyond the dominant one, 0 to 6.
    zeros : int
        Number of real left-half-plane zeros to fit, 0 to 6, at most ``poles`` (the fitted
        gain must fall at high frequency, as :class:`~photorx.OpAmp` requires).
    magnitude_tolerance : float
        Expected error of the magnitude points [dB], > 0 (default 1 dB): the weight of each
        magnitude residual and the limit a good fit stays within.
    phase_tolerance : float
        Expected error of the phase points [deg], > 0 (default 5 deg); same role.
    warn : bool
        Issue a :class:`~photorx.errors.ModelRangeWarning` when a residual exceeds its
        tolerance (default True); :attr:`GainFit.acceptable` tells either way.

    Returns
    -------
    GainFit
        Fitted parameters, their relative uncertainties and the residuals; build the
        amplifier with :meth:`GainFit.amplifier`.

    Notes
    -----
    Model (:func:`photorx.circuit.amplifier.open_loop_gain`):
    A(s) = A0 prod_j (1 + s/w_zj) / ((1 + s/w_d) prod_k (1 + s/w_k)), w_d = 2 pi GBW / A0.
    The variables are ln A0, ln GBW and the logs of the corner frequencies, so every one
    stays positive and the problem is scaled alike over decades; GBW rather than the
    dominant pole is fitted because points on the -20 dB/decade slope fix it even when they
    do not reach the DC plateau. The residuals are (model - data)/tolerance in dB and in
    degrees, minimised by :func:`scipy.optimize.least_squares` (trust-region reflective)
    from several starts: A0 from the highest magnitude, GBW from the 0 dB crossing, and
    the extra corners drawn log-uniformly over [f_min, 10 f_max] from one fixed random
    stream (deterministic); the best solution is kept. Poles and zeros are sorted. The
    uncertainties come from the Jacobian at the solution (covariance scaled by the reduced
    chi-square, as :func:`scipy.optimize.curve_fit` with ``absolute_sigma=False``); for a
    log variable the standard error is the relative error of the parameter.

    The fit represents the tabulated points by real poles and zeros; corners far outside
    the points' frequency range are not determined by them (large uncertainty), and a
    curve that needs complex poles (a resonant output stage) is only approximated: check
    :attr:`GainFit.worst_magnitude_error` and :attr:`GainFit.worst_phase_error`.

    References
    ----------
    .. [1] W. H. Press et al., *Numerical Recipes*, 3rd ed., 2007, sec. 15.5.
    .. [2] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996, ch. 2.
    """
    f, mag, ph = _points(frequency, magnitude_db, phase_deg)
    n_p, n_z = _count("poles", poles), _count("zeros", zeros)
    if n_z > n_p:
        raise DesignError(f"zeros = {n_z} with poles = {n_p}; valid range: at most poles = "
                          f"{n_p} zeros (the gain must fall at high frequency, as "
                          "photorx.OpAmp requires)", parameter="zeros")
    tol_m = float(require_positive("magnitude_tolerance", magnitude_tolerance, "dB"))
    tol_p = float(require_positive("phase_tolerance", phase_tolerance, "deg"))
    n_par = 2 + n_p + n_z
    n_res = f.size * (1 if ph is None else 2)
    if n_res < n_par:
        raise DesignError(f"{f.size} points give {n_res} values for {n_par} parameters; valid "
                          f"range: at least {n_par} values (more points or fewer poles/zeros)",
                          parameter="frequency")
    ln_a0, ln_gbw, _ = _start(f, mag)
    lo_f, hi_f = math.log(f.min()), math.log(f.max())

    def residual(x):
        m, p = _model(x, f, n_p)
        r = (m - mag) / tol_m
        if ph is None:
            return r
        return np.concatenate([r, _wrap(p - ph) / tol_p])

    # bounds keep every corner within a few decades of the points (beyond, they are not
    # determined and only drift); A0 and GBW get wide ones
    span = 3.0 * math.log(10.0)
    lower = np.r_[ln_a0 - 4 * span, ln_gbw - 2 * span, np.full(n_p + n_z, lo_f - span)]
    upper = np.r_[ln_a0 + 4 * span, ln_gbw + 2 * span, np.full(n_p + n_z, hi_f + span)]
    rng = np.random.default_rng(0)
    best = None
    for i in range(_STARTS if n_p + n_z else 1):
        corners = rng.uniform(lo_f, hi_f + math.log(10.0), n_p + n_z)
        if i == 0:  # a spread start: poles above the crossover, zeros interleaved below them
            corners = np.linspace(lo_f, hi_f + math.log(10.0), n_p + n_z + 2)[1:-1]
        x0 = np.clip(np.r_[ln_a0, ln_gbw, corners], lower + 1e-9, upper - 1e-9)
        sol = weighted_least_squares(residual, x0, (lower, upper), absolute=False)
        if best is None or sol.chi_square < best.chi_square:
            best = sol
    x = best.x
    # the dominant pole and the extra poles are interchangeable in A(s): report the lowest
    # pole as the dominant one. q = (ln A0, ln f_d, ln f_k..., ln f_z...) = T x, cov_q = T C T'
    t = np.eye(n_par)
    t[1, 0] = -1.0
    q = t @ x
    with np.errstate(invalid="ignore"):  # inf * 0 of an undetermined parameter
        cov = np.nan_to_num(t @ best.covariance @ t.T, nan=np.inf)
    pole_idx = 1 + np.argsort(q[1:2 + n_p])
    zero_idx = 2 + n_p + np.argsort(q[2 + n_p:])
    dom, extra = pole_idx[0], pole_idx[1:]
    var_gbw = cov[0, 0] + cov[dom, dom] + 2.0 * cov[0, dom]
    sd = np.sqrt(np.abs(np.diag(cov)))
    m, p = _model(x, f, n_p)
    result = GainFit(
        dc_gain=math.exp(q[0]), gbw=math.exp(q[0] + q[dom]),
        poles=tuple(float(v) for v in np.exp(q[extra])),
        zeros=tuple(float(v) for v in np.exp(q[zero_idx])),
        uncertainty={"dc_gain": float(sd[0]), "gbw": float(np.sqrt(abs(var_gbw))),
                     "poles": tuple(float(v) for v in sd[extra]),
                     "zeros": tuple(float(v) for v in sd[zero_idx])},
        frequency=f, magnitude_error=m - mag,
        phase_error=np.full(f.size, np.nan) if ph is None else _wrap(p - ph),
        magnitude_tolerance=tol_m, phase_tolerance=tol_p)
    if warn and not result.acceptable:
        warnings.warn(
            f"open-loop gain fit with {n_p} extra poles and {n_z} zeros misses the points: "
            f"worst error {result.worst_magnitude_error:.3g} dB (tolerance {tol_m:g} dB), "
            f"{result.worst_phase_error:.3g} deg (tolerance {tol_p:g} deg); the engine uses "
            "the fitted model, so try more poles or zeros", ModelRangeWarning, stacklevel=2)
    return result
