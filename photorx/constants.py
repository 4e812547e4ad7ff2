"""Physical constants (CODATA, taken from :mod:`scipy.constants`) and derived helpers.

All values are SI. Nothing here is typed in by hand, so photorx follows the CODATA
release that the installed SciPy carries.
"""

from __future__ import annotations

from scipy import constants as _sc

from ._validate import require_positive

__all__ = ["q", "k", "h", "c", "eps0", "thermal_voltage", "T_ROOM"]

q: float = _sc.elementary_charge  #: elementary charge [C]
k: float = _sc.Boltzmann  #: Boltzmann constant [J/K]
h: float = _sc.Planck  #: Planck constant [J s]
c: float = _sc.speed_of_light  #: speed of light in vacuum [m/s]
eps0: float = _sc.epsilon_0  #: vacuum permittivity [F/m]
T_ROOM: float = 300.0  #: default temperature of every model [K]


def thermal_voltage(temperature=T_ROOM):
    """Thermal voltage kT/q.

    Parameters
    ----------
    temperature : float or array_like
        Absolute temperature [K], > 0.

    Returns
    -------
    float or numpy.ndarray
        Thermal voltage [V]; 25.85 mV at 300 K.

    Notes
    -----
    V_T = k T / q.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed.,
       Wiley, 2007, ch. 1.
    """
    t = require_positive("temperature", temperature, "K")
    return k * t / q
