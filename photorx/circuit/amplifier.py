"""Voltage-feedback operational amplifier: open-loop gain, noise densities, input capacitance.

Functional core: :func:`open_loop_gain` and :func:`voltage_noise_density` /
:func:`current_noise_density` broadcast over frequency and every parameter.
Shell: :class:`OpAmp`, a frozen dataclass that validates and routes calls.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .._validate import require_nonnegative, require_positive
from ..errors import DesignError
from .amplifier_noise import settle_noise

__all__ = ["OpAmp", "open_loop_gain", "voltage_noise_density", "current_noise_density",
           "flicker_factor"]


def open_loop_gain(f, gbw, dc_gain, poles=(), zeros=()):
    """Open-loop voltage gain of a dominant-pole amplifier with optional extra poles and zeros.

    Parameters
    ----------
    f : array_like
        Frequency [Hz], >= 0.
    gbw : array_like
        Gain-bandwidth product [Hz] (unity-gain frequency of the dominant-pole response).
    dc_gain : array_like
        DC open-loop gain A0 [V/V].
    poles : sequence of array_like
        Extra (non-dominant) pole frequencies [Hz]; ``inf`` marks an absent pole.
    zeros : sequence of array_like
        Real left-half-plane zero frequencies [Hz], > 0; ``inf`` marks an absent zero.

    Returns
    -------
    numpy.ndarray
        Complex gain A(jf), positive real at DC (the inverting stage supplies the sign).

    Notes
    -----
    A(s) = A0 prod_j (1 + s/w_zj) / ((1 + s/w_d) prod_k (1 + s/w_k)), w_d = 2 pi GBW / A0.
    GBW stays the gain-bandwidth product of the dominant pole alone (A0 w_d / 2 pi); a zero
    below the unity-gain frequency moves the actual crossover.

    References
    ----------
    .. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996, ch. 2.
    """
    s = 2j * np.pi * np.asarray(f, dtype=float)
    gbw = np.asarray(gbw, dtype=float)
    a0 = np.asarray(dc_gain, dtype=float)
    a = a0 / (1.0 + s * a0 / (2 * np.pi * gbw))
    for fp in poles:
        a = a / (1.0 + s / (2 * np.pi * np.asarray(fp, dtype=float)))
    for fz in zeros:
        a = a * (1.0 + s / (2 * np.pi * np.asarray(fz, dtype=float)))
    return a


def flicker_factor(f, corner):
    """Power factor 1 + f_c/f of white noise with a 1/f corner ``corner`` [Hz] at ``f`` [Hz].

    Exactly 1 where the corner is 0 (no 1/f noise), also at f = 0, where 0/0 would give NaN;
    ``inf`` at f = 0 with a corner (the 1/f density diverges there).

    Parameters
    ----------
    f : float or array_like
        Frequency [Hz], >= 0.
    corner : float or array_like
        1/f corner frequency f_c [Hz], >= 0 (0 = no 1/f noise); broadcasts against ``f``.

    Returns
    -------
    numpy.ndarray
        1 + f_c/f [-], >= 1.
    """
    f = np.asarray(f, dtype=float)
    corner = np.asarray(corner, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = corner / f
    return 1.0 + np.where(corner == 0, 0.0, ratio)


def voltage_noise_density(f, white, corner):
    """Amplifier input voltage noise density with a 1/f corner [V/rtHz].

    e_n(f) = e_w * sqrt(1 + f_c / f). Common practice (Motchenbacher and Connelly,
    *Low-Noise Electronic System Design*, 1993, ch. 1). With f_c = 0 the density is e_w at
    every frequency, including 0 Hz.

    Parameters
    ----------
    f : float or array_like
        Frequency [Hz], >= 0 (> 0 with a corner; the density is ``inf`` at 0 Hz then).
    white : float or array_like
        White (high-frequency) noise density e_w [V/rtHz], >= 0.
    corner : float or array_like
        1/f corner frequency f_c [Hz], >= 0 (0 = no 1/f noise).

    Returns
    -------
    numpy.ndarray
        e_n(f) [V/rtHz], broadcast over all arguments.
    """
    return np.asarray(white, dtype=float) * np.sqrt(flicker_factor(f, corner))


def current_noise_density(f, white, corner):
    """Amplifier input current noise density with a 1/f corner [A/rtHz]; same form as the voltage noise.

    i_n(f) = i_w * sqrt(1 + f_c / f), see :func:`voltage_noise_density`.

    Parameters
    ----------
    f : float or array_like
        Frequency [Hz], >= 0 (> 0 with a corner; the density is ``inf`` at 0 Hz then).
    white : float or array_like
        White (high-frequency) noise density i_w [A/rtHz], >= 0.
    corner : float or array_like
        1/f corner frequency f_c [Hz], >= 0 (0 = no 1/f noise).

    Returns
    -------
    numpy.ndarray
        i_n(f) [A/rtHz], broadcast over all arguments.
    """
    return voltage_noise_density(f, white, corner)


def _corner_tuple(name, value):
    """Pole or zero frequencies [Hz] as a tuple of floats, each > 0 and finite."""
    # a scalar is one corner (0 is rejected below, not read as "none"); None means none
    raw = () if value is None else value
    try:
        out = tuple(float(p) for p in np.atleast_1d(np.asarray(raw, dtype=float)).ravel())
    except (TypeError, ValueError):
        raise DesignError(f"{name} = {value!r} is not a sequence of frequencies in Hz",
                          parameter=name) from None
    for p in out:
        require_positive(name, p, "Hz")
    return out


@dataclass(frozen=True)
class OpAmp:
    """A voltage-feedback amplifier used as a transimpedance stage (non-inverting input grounded).

    Parameters
    ----------
    gbw : float
        Gain-bandwidth product [Hz], > 0.
    dc_gain : float
        DC open-loop gain [V/V], > 0.
    poles : tuple of float
        Extra pole frequencies beyond the dominant one [Hz], each > 0 (a single number is
        one pole; ``()`` or ``None`` for none).
    voltage_noise : float or None
        White input voltage noise density [V/rtHz], >= 0; None (default) is 5 nV/rtHz, or
        the white level (last density) of ``voltage_noise_curve`` when one is given.
    current_noise : float or None
        White input current noise density [A/rtHz], >= 0; None (default) is 1 fA/rtHz, or
        the white level of ``current_noise_curve``.
    voltage_noise_corner, current_noise_corner : float
        1/f corner frequencies [Hz], >= 0 (0 = no 1/f noise; must be 0 with a curve).
    input_capacitance : float
        Common-mode plus differential input capacitance seen at the inverting input [F], >= 0.
    output_swing : float
        Largest output voltage magnitude before clipping [V], > 0.
    voltage_noise_curve, current_noise_curve : NoiseCurve, array_like or None
        Tabulated input noise densities (data-sheet points, interpolated log-log; see
        :mod:`photorx.circuit.amplifier_noise`): a :class:`NoiseCurve`, a (frequencies
        [Hz], densities) pair or rows of [frequency, density]. The curve is the shape and
        the white level scales it: e_n(f) = voltage_noise * c(f) / c_white. None (default)
        for the white-plus-1/f model.
    zeros : tuple of float
        Real left-half-plane zeros of the open-loop gain [Hz], each > 0 (a single number is
        one zero; ``()`` or ``None`` for none); at most as many as ``poles``, so that the
        gain still falls at high frequency (an amplifier's gain does; a flat top would give
        the voltage noise an unbounded bandwidth).
    """

    gbw: float = 100e6
    dc_gain: float = 1e5
    poles: tuple = field(default_factory=tuple)
    voltage_noise: float | None = None
    current_noise: float | None = None
    voltage_noise_corner: float = 0.0
    current_noise_corner: float = 0.0
    input_capacitance: float = 2e-12
    output_swing: float = 2.0
    voltage_noise_curve: object = None
    current_noise_curve: object = None
    # after the fields of the first release, so that positional construction keeps working
    zeros: tuple = field(default_factory=tuple)

    def __post_init__(self):
        set_ = object.__setattr__
        set_(self, "gbw", require_positive("gbw", self.gbw, "Hz"))
        set_(self, "dc_gain", require_positive("dc_gain", self.dc_gain, "V/V"))
        set_(self, "poles", _corner_tuple("poles", self.poles))
        set_(self, "zeros", _corner_tuple("zeros", self.zeros))
        if len(self.zeros) > len(self.poles):
            raise DesignError(f"zeros = {self.zeros!r} Hz: {len(self.zeros)} zeros with "
                              f"{len(self.poles)} extra poles; valid range: at most "
                              f"{len(self.poles)} zeros (len(poles)), so that the open-loop "
                              "gain still falls at high frequency", parameter="zeros")
        for kind, unit, default in (("voltage", "V/rtHz", 5e-9), ("current", "A/rtHz", 1e-15)):
            for name, value in zip((f"{kind}_noise", f"{kind}_noise_curve"), settle_noise(
                    self, kind, unit, default)):
                set_(self, name, value)
        set_(self, "voltage_noise_corner",
             require_nonnegative("voltage_noise_corner", self.voltage_noise_corner, "Hz"))
        set_(self, "current_noise_corner",
             require_nonnegative("current_noise_corner", self.current_noise_corner, "Hz"))
        set_(self, "input_capacitance",
             require_nonnegative("input_capacitance", self.input_capacitance, "F"))
        set_(self, "output_swing", require_positive("output_swing", self.output_swing, "V"))

    @classmethod
    def from_gain_points(cls, frequency, magnitude_db, phase_deg=None, *, poles=0, zeros=0,
                         magnitude_tolerance=1.0, phase_tolerance=5.0, **fields):
        """An amplifier whose open-loop gain is fitted to data-sheet magnitude/phase points.

        The points are represented by the fitted poles and zeros (the engine works on that
        rational model); a fit that misses a point by more than its tolerance warns
        (:class:`~photorx.errors.ModelRangeWarning`). Use
        :func:`photorx.circuit.amplifier_fit.fit_open_loop_gain` for the residuals and
        uncertainties.

        Parameters
        ----------
        frequency : array_like
            Frequencies of the points [Hz], > 0.
        magnitude_db : array_like
            Open-loop gain 20 log10 |A| [dB].
        phase_deg : array_like, optional
            Phase of A [deg], 0 at DC and falling; None for magnitude only.
        poles, zeros : int
            Numbers of extra real poles and of real zeros to fit.
        magnitude_tolerance, phase_tolerance : float
            Expected errors of the points [dB], [deg], > 0 (weights and acceptance limits).
        **fields
            The other :class:`OpAmp` fields (noise, input capacitance, output swing).

        Returns
        -------
        OpAmp
        """
        from .amplifier_fit import fit_open_loop_gain

        fit = fit_open_loop_gain(frequency, magnitude_db, phase_deg, poles=poles, zeros=zeros,
                                 magnitude_tolerance=magnitude_tolerance,
                                 phase_tolerance=phase_tolerance)
        return fit.amplifier(**fields)

    @property
    def dominant_pole(self):
        """Dominant pole frequency GBW/A0 [Hz]."""
        return self.gbw / self.dc_gain

    def gain(self, f):
        """Open-loop gain A(jf), complex [V/V]; see :func:`open_loop_gain`.

        Parameters
        ----------
        f : float or array_like
            Frequency [Hz], >= 0.
        """
        return open_loop_gain(f, self.gbw, self.dc_gain, self.poles, self.zeros)

    def voltage_noise_density(self, f):
        """Input voltage noise density at ``f`` [V/rtHz]; see :func:`voltage_noise_density`.

        Parameters
        ----------
        f : float or array_like
            Frequency [Hz], >= 0 (> 0 with a ``voltage_noise_corner``).
        """
        if self.voltage_noise_curve is not None:
            return np.asarray(self.voltage_noise) * np.sqrt(self.voltage_noise_curve.power_shape(f))
        return voltage_noise_density(f, self.voltage_noise, self.voltage_noise_corner)

    def current_noise_density(self, f):
        """Input current noise density at ``f`` [A/rtHz]; see :func:`current_noise_density`.

        Parameters
        ----------
        f : float or array_like
            Frequency [Hz], >= 0 (> 0 with a ``current_noise_corner``).
        """
        if self.current_noise_curve is not None:
            return np.asarray(self.current_noise) * np.sqrt(self.current_noise_curve.power_shape(f))
        return current_noise_density(f, self.current_noise, self.current_noise_corner)

    def _repr_html_(self):
        """Jupyter display: a compact parameter table with units (the closed form, where
        there is one, is the LaTeX display)."""
        from ..views.rich import parameter_table_html

        return parameter_table_html(self)

    def _repr_latex_(self):
        """Jupyter display of the model's closed form with this object's values."""
        from ..views.rich import closed_form_latex

        return closed_form_latex(self)
