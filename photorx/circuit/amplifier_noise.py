"""Tabulated amplifier noise densities: data-sheet points interpolated log-log.

Functional core: :func:`tabulated_noise_density` (a piecewise power law through the
points, vectorised over frequency) and :func:`noise_power_shape` (the factor the noise
core multiplies a white level's power by: 1 + f_c/f, or a curve's shape).
Shell: :class:`NoiseCurve`, a frozen, validated table of (frequency, density) points;
:func:`as_noise_curve` turns what a user or a design file gives into one.

How a curve coexists with the white level of :class:`~photorx.circuit.amplifier.OpAmp`:
the curve is the *shape* and the white level scales it,
e_n(f) = e_w * c(f) / c_w, where c(f) is the interpolated curve and c_w its white level
(its last, highest-frequency density, held above the table). Without an explicit white
level the amplifier takes e_w = c_w, so the density IS the curve; a sweep or tolerance of
``voltage_noise`` scales the whole curve (parts of one type differ mostly by a factor).
The 1/f corner must then be 0: the curve carries the 1/f part.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._validate import require_nonnegative
from ..errors import DesignError

__all__ = ["NoiseCurve", "as_noise_curve", "noise_power_shape", "settle_noise",
           "tabulated_noise_density"]


def _table(parameter: str, frequencies, densities, unit: str):
    """Validated 1-D float arrays (frequencies [Hz], densities [unit]) of one curve."""
    try:
        f = np.asarray(frequencies, dtype=float)
        d = np.asarray(densities, dtype=float)
    except (TypeError, ValueError):
        raise DesignError(f"{parameter}: frequencies {frequencies!r} and densities "
                          f"{densities!r} must be numbers (Hz and {unit})",
                          parameter=parameter) from None
    if f.ndim != 1 or d.ndim != 1 or f.shape != d.shape or f.size < 2:
        raise DesignError(f"{parameter}: expected two 1-D tables of equal length >= 2 "
                          f"(frequencies in Hz, densities in {unit}); got shapes "
                          f"{f.shape} and {d.shape}", parameter=parameter)
    bad = ~(np.isfinite(f) & (f > 0))
    if bad.any():
        raise DesignError(f"{parameter}: frequency = {f[bad][0]:.6g} Hz is invalid; valid "
                          "range: > 0 and finite", parameter=parameter)
    steps = np.diff(f)
    if np.any(steps <= 0):
        i = int(np.argmax(steps <= 0))
        raise DesignError(f"{parameter}: frequency {f[i + 1]:.6g} Hz after {f[i]:.6g} Hz; "
                          "valid range: strictly increasing frequencies (no repeats)",
                          parameter=parameter)
    bad = ~(np.isfinite(d) & (d > 0))
    if bad.any():
        raise DesignError(f"{parameter}: density = {d[bad][0]:.6g} {unit} is invalid; valid "
                          "range: > 0 and finite", parameter=parameter)
    return f, d


def tabulated_noise_density(f, frequencies, densities):
    """Noise density interpolated log-log through tabulated points [V/rtHz or A/rtHz].

    Parameters
    ----------
    f : float or array_like
        Frequency [Hz], >= 0 (``inf`` gives the white level); any shape.
    frequencies : array_like
        Table frequencies f_i [Hz], 1-D, >= 2 points, strictly increasing, > 0.
    densities : array_like
        Densities d_i at ``frequencies`` [V/rtHz or A/rtHz], > 0 and finite.

    Returns
    -------
    numpy.ndarray
        d(f), shaped like ``f``, in the unit of ``densities``.

    Notes
    -----
    Between f_i and f_(i+1) the density is the power law through both points,
    ln d = ln d_i + s_i (ln f - ln f_i), s_i = ln(d_(i+1)/d_i) / ln(f_(i+1)/f_i), which is
    a straight line on the log-log plot a data sheet draws. Beyond the table:

    * below f_0 the first segment's power law continues (the 1/f or 1/sqrt(f) slope of
      flicker noise goes on down in frequency); at f = 0 that is ``inf`` for a falling
      first segment, d_0 for a flat one and 0 for a rising one;
    * above the last point the last density is held (the white level).

    Valid within the table; the extrapolation below it is the usual flicker-noise
    assumption, not a measurement.

    References
    ----------
    .. [1] C. D. Motchenbacher and J. A. Connelly, *Low-Noise Electronic System Design*,
       Wiley, 1993, ch. 1 (e_n and i_n against frequency, 1/f and white regions; from
       memory).
    """
    lf, ld = (np.log(x) for x in _table("noise curve", frequencies, densities, "(density)"))
    return _loglog(f, lf, ld)


def _loglog(f, lf, ld):
    """The interpolation of :func:`tabulated_noise_density` on validated ln f, ln d tables."""
    f = np.asarray(f, dtype=float)
    if not np.all(f >= 0):  # also catches NaN
        raise DesignError.out_of_range("f", f[~(f >= 0)][0], "Hz", ">= 0")
    positive = f > 0
    with np.errstate(divide="ignore"):
        x = np.log(np.where(positive, f, 1.0))
    slope0 = (ld[1] - ld[0]) / (lf[1] - lf[0])
    y = np.interp(x, lf, ld)  # holds the end values beyond the table
    y = np.where(x < lf[0], ld[0] + slope0 * (x - lf[0]), y)
    with np.errstate(over="ignore"):  # a steep first segment far below the table: inf
        d = np.exp(y)
    at_zero = np.inf if slope0 < 0 else (np.exp(ld[0]) if slope0 == 0 else 0.0)
    return np.where(positive, d, at_zero)


@dataclass(frozen=True)
class NoiseCurve:
    """A noise density given as data-sheet points, interpolated log-log.

    Parameters
    ----------
    frequencies : sequence of float
        Frequencies [Hz], >= 2 points, strictly increasing, > 0 and finite.
    densities : sequence of float
        Densities at those frequencies [``unit``], > 0 and finite.
    unit : str
        ``"V/rtHz"`` (default, a voltage noise) or ``"A/rtHz"`` (a current noise).

    Notes
    -----
    See :func:`tabulated_noise_density` for the interpolation and the extrapolation
    (first segment's power law below the table, the last density held above it). The
    white level :attr:`white` is the last density.

    References
    ----------
    .. [1] C. D. Motchenbacher and J. A. Connelly, *Low-Noise Electronic System Design*,
       Wiley, 1993, ch. 1 (from memory).
    """

    frequencies: tuple
    densities: tuple
    unit: str = "V/rtHz"

    def __post_init__(self):
        if self.unit not in ("V/rtHz", "A/rtHz"):
            raise DesignError(f"unit = {self.unit!r} is invalid; valid: 'V/rtHz' or 'A/rtHz'",
                              parameter="unit")
        f, d = _table("NoiseCurve", self.frequencies, self.densities, self.unit)
        object.__setattr__(self, "frequencies", tuple(float(v) for v in f))
        object.__setattr__(self, "densities", tuple(float(v) for v in d))

    @classmethod
    def from_white_and_corner(cls, white, corner, frequencies, unit="V/rtHz"):
        """Sample the white-plus-1/f model x_w sqrt(1 + f_c/f) at ``frequencies`` [Hz].

        Parameters
        ----------
        white : float
            White level x_w [``unit``], > 0.
        corner : float
            1/f corner f_c [Hz], >= 0.
        frequencies : array_like
            Sample frequencies [Hz] (strictly increasing, > 0).
        unit : str
            ``"V/rtHz"`` (default) or ``"A/rtHz"``.

        Returns
        -------
        NoiseCurve
            The sampled curve; sqrt(1 + f_c/f) is not a power law, so the curve matches the
            model only at the points (the interpolation error between them falls as the
            square of the spacing in ln f).
        """
        from .amplifier import flicker_factor  # amplifier imports this module

        f = np.asarray(frequencies, dtype=float)
        return cls(tuple(f), tuple(white * np.sqrt(flicker_factor(f, corner))), unit)

    @property
    def white(self) -> float:
        """White level: the density at the last (highest) frequency, held above it [unit]."""
        return self.densities[-1]

    def density(self, f):
        """Interpolated density at ``f`` [unit]; see :func:`tabulated_noise_density`.

        Parameters
        ----------
        f : float or array_like
            Frequency [Hz], >= 0.
        """
        return _loglog(f, np.log(self.frequencies), np.log(self.densities))

    def power_shape(self, f):
        """Power relative to the white level, (d(f) / d_white)^2 [-], at ``f`` [Hz] (>= 0).

        Parameters
        ----------
        f : float or array_like
            Frequency [Hz], >= 0.
        """
        return (self.density(f) / self.white) ** 2


def as_noise_curve(value, parameter: str, unit: str):
    """A :class:`NoiseCurve` from what a user or a design file gives, or None.

    Parameters
    ----------
    value : NoiseCurve, pair of sequences, array_like of shape (N, 2), or None
        A curve; a ``(frequencies, densities)`` pair (shape (2, N)); or N rows of
        ``[frequency, density]`` (shape (N, 2)). A 2 x 2 array is read as a pair when
        every entry of its first row exceeds every entry of its second (frequencies above
        densities), else as rows. None gives None.
    parameter : str
        Name used in error messages, e.g. ``"voltage_noise_curve"``.
    unit : str
        ``"V/rtHz"`` or ``"A/rtHz"``: the unit of the densities.

    Returns
    -------
    NoiseCurve or None
    """
    if value is None:
        return None
    if isinstance(value, NoiseCurve):
        if value.unit != unit:
            raise DesignError(f"{parameter} has densities in {value.unit}; valid: a curve in "
                              f"{unit}", parameter=parameter)
        return value
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise DesignError(f"{parameter} = {value!r} is not a table of numbers; valid: a "
                          f"(frequencies [Hz], densities [{unit}]) pair or rows of "
                          "[frequency, density]", parameter=parameter) from None
    if arr.ndim != 2 or 2 not in arr.shape:
        raise DesignError(f"{parameter} has shape {arr.shape}; valid: (2, N) (frequencies, "
                          "densities) or (N, 2) rows of [frequency, density], N >= 2",
                          parameter=parameter)
    # 2 x 2: a pair holds the frequencies (large) in its first row and the densities (tiny)
    # in its second; rows hold a density at [0, 1] below the frequency at [1, 0]
    rows = arr.shape[0] != 2 or (arr.shape[1] == 2 and not arr[0].min() > arr[1].max())
    f, d = (arr[:, 0], arr[:, 1]) if rows else (arr[0], arr[1])
    _table(parameter, f, d, unit)  # errors name the amplifier's parameter
    return NoiseCurve(tuple(f), tuple(d), unit)


def noise_power_shape(f, corner, shape=None):
    """Power factor of an amplifier noise source over its white level at ``f`` [-].

    Parameters
    ----------
    f : float or array_like
        Frequency [Hz], >= 0.
    corner : float or array_like
        1/f corner [Hz], >= 0; used when ``shape`` is None.
    shape : NoiseCurve, callable or None
        A tabulated curve (its :meth:`NoiseCurve.power_shape`) or any callable of ``f``
        giving the power factor; None (default) for the white-plus-1/f model.

    Returns
    -------
    numpy.ndarray
        1 + f_c/f without a shape, else ``shape(f)``; broadcast against ``f``.
    """
    if shape is None:
        from .amplifier import flicker_factor  # amplifier imports this module

        return flicker_factor(f, corner)
    if isinstance(shape, NoiseCurve):
        return shape.power_shape(f)
    return np.asarray(shape(f), dtype=float)


def settle_noise(amp, kind: str, unit: str, default: float):
    """The white level and curve of one amplifier noise source, validated.

    Parameters
    ----------
    amp : OpAmp
        The amplifier being built (its ``<kind>_noise``, ``<kind>_noise_corner`` and
        ``<kind>_noise_curve`` fields are read).
    kind : str
        ``"voltage"`` or ``"current"``.
    unit : str
        Unit of the density, ``"V/rtHz"`` or ``"A/rtHz"``.
    default : float
        White level without a curve when the field is None [unit].

    Returns
    -------
    white : float or numpy.ndarray
        The white level [unit]: the given one, else the curve's last density, else
        ``default``.
    curve : NoiseCurve or None
    """
    name = f"{kind}_noise"
    curve = as_noise_curve(getattr(amp, f"{name}_curve"), f"{name}_curve", unit)
    white = getattr(amp, name)
    if white is None:
        white = default if curve is None else curve.white
    white = require_nonnegative(name, white, unit)
    corner = require_nonnegative(f"{name}_corner", getattr(amp, f"{name}_corner"), "Hz")
    if curve is not None and np.any(np.asarray(corner) != 0):
        raise DesignError.out_of_range(f"{name}_corner", corner, "Hz",
                                       f"0 with a {name}_curve (the curve carries the 1/f part)")
    return white, curve
