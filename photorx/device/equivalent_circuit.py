"""The small-signal equivalent circuit of a biased photodiode, as the amplifier sees it.

Topology (common practice): a current source (photocurrent plus dark current) in
parallel with the junction capacitance and the shunt resistance, all behind the series
resistance that leads to the amplifier's summing node.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._validate import require_nonnegative, require_positive

__all__ = ["EquivalentCircuit"]


@dataclass(frozen=True)
class EquivalentCircuit:
    """Photodiode equivalent circuit at one operating point (fields may be arrays that broadcast).

    Parameters
    ----------
    capacitance : float or array_like
        Total diode capacitance (junction plus diffusion plus package) [F], > 0.
    series_resistance : float or array_like
        Series resistance between the junction and the amplifier input [ohm], >= 0.
    shunt_resistance : float or array_like
        Shunt (dynamic) resistance across the junction [ohm], > 0; ``numpy.inf`` for none.
    current : float or array_like
        DC current through the junction whose shot noise counts: dark plus signal plus
        background photocurrent [A], >= 0.
    shot_current : float or array_like, optional
        Equivalent full-shot current [A], >= 0: the diode's white shot-noise density is
        2 q shot_current. Default None: ``current`` (no multiplication). An avalanche
        photodiode sets I_ds + M^2 F(M) (I_ph + I_bg + I_dm) (McIntyre 1966).
    """

    capacitance: float = 1e-12
    series_resistance: float = 0.0
    shunt_resistance: float = np.inf
    current: float = 0.0
    shot_current: float | None = None

    def __post_init__(self):
        object.__setattr__(self, "capacitance", require_positive("capacitance", self.capacitance, "F"))
        object.__setattr__(self, "series_resistance",
                           require_nonnegative("series_resistance", self.series_resistance, "ohm"))
        rsh = np.asarray(self.shunt_resistance, dtype=float)
        if np.any(~(rsh > 0)):
            require_positive("shunt_resistance", rsh, "ohm")  # raises with the message
        object.__setattr__(self, "shunt_resistance", rsh if rsh.ndim else float(rsh))
        object.__setattr__(self, "current", require_nonnegative("current", self.current, "A"))
        shot = self.current if self.shot_current is None else self.shot_current
        object.__setattr__(self, "shot_current", require_nonnegative("shot_current", shot, "A"))

    def admittance(self, f):
        """Admittance of the diode branch seen from the summing node [S], complex.

        Y = 1 / (Rs + Zd), Zd = Rsh || 1/(j 2 pi f Cd).

        Parameters
        ----------
        f : float or array_like
            Frequency [Hz], >= 0; broadcasts against the circuit's array fields (give
            array fields a trailing axis, ``value[..., None]``, to pair them with a 1-D grid).
        """
        yd = 1.0 / self.shunt_resistance + 2j * np.pi * np.asarray(f, dtype=float) * self.capacitance
        return yd / (1.0 + self.series_resistance * yd)

    def junction_impedance(self, f):
        """Impedance of Rsh || Cd [ohm], complex.

        Parameters
        ----------
        f : float or array_like
            Frequency [Hz], > 0 (>= 0 with a finite ``shunt_resistance``: without a shunt
            the junction is an open circuit at DC); broadcasts against the circuit's array
            fields (give array fields a trailing axis, ``value[..., None]``, to pair them
            with a 1-D grid).
        """
        s = 2j * np.pi * np.asarray(f, dtype=float)
        return 1.0 / (1.0 / self.shunt_resistance + s * self.capacitance)

    def current_divider(self, f):
        """Fraction of a current source across the junction that reaches the summing node.

        Zd / (Zd + Rs): the Norton short-circuit current of the source, Cd, Rsh and Rs branch,
        exact whatever the summing-node voltage. Dimensionless, complex.

        Parameters
        ----------
        f : float or array_like
            Frequency [Hz], >= 0; broadcasts against the circuit's array fields (give
            array fields a trailing axis, ``value[..., None]``, to pair them with a 1-D grid).
        """
        yd = 1.0 / self.shunt_resistance + 2j * np.pi * np.asarray(f, dtype=float) * self.capacitance
        return 1.0 / (1.0 + self.series_resistance * yd)  # finite at f = 0 with Rsh = inf
