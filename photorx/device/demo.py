"""Demo photodiodes of an invented scenario (no real product behind them).

Scenario: a short-reach optical link lab. One receiver uses an 850 nm source and a
silicon p-i-n diode; the other a 1310/1550 nm source and an InGaAs p-i-n diode on an InP
substrate (top-illuminated through a transparent InP window). All numbers are invented
but physically plausible; use them for examples and tests, not as data of any device.
"""

from __future__ import annotations

import numpy as np

from ..units import mm, per_cm3, pF, um
from .junction import PinJunction
from .materials import material
from .photodiode import Photodiode

__all__ = ["demo_silicon_pin", "demo_ingaas_pin"]


def demo_silicon_pin(temperature=300.0) -> Photodiode:
    """Invented silicon p-i-n photodiode for the visible and near infrared (e.g. 850 nm).

    0.8 mm diameter, 40 um lightly doped i layer (5e12 cm^-3),
    0.2 um p+ top layer, anti-reflection coating (3 %), 0.2 pF package, 15 ohm series
    resistance. About 0.64 A/W at 850 nm and 1.5 pF above punch-through (near 5 V).

    Parameters
    ----------
    temperature : float, optional
        Junction temperature [K] (default 300).
    """
    junction = PinJunction(material("Si"), i_thickness=40 * um, i_doping=5e12 * per_cm3,
                           area=np.pi * (0.4 * mm) ** 2, p_doping=1e19 * per_cm3,
                           n_doping=1e19 * per_cm3, temperature=temperature)
    return Photodiode(junction=junction, reflectance=0.03, top_thickness=0.2 * um,
                      lifetime=1e-6, generation_lifetime=1e-3, series_resistance=15.0,
                      package_capacitance=0.2 * pF)


def demo_ingaas_pin(temperature=300.0) -> Photodiode:
    """Invented In0.53Ga0.47As p-i-n photodiode for 1310 nm and 1550 nm.

    80 um diameter, 2 um i layer (5e14 cm^-3, punch-through near 1 V) on an InP
    substrate, lit through a transparent p+ InP window (no absorbing top layer),
    anti-reflection coating (2 %), 0.1 pF package, 10 ohm series resistance. About
    0.9 A/W at 1310/1550 nm, 0.4 pF in total, about 5 GHz with a 50 ohm load.

    Parameters
    ----------
    temperature : float, optional
        Junction temperature [K] (default 300).
    """
    junction = PinJunction(material("InGaAs"), i_thickness=2 * um, i_doping=5e14 * per_cm3,
                           area=np.pi * (40 * um) ** 2, p_doping=1e18 * per_cm3,
                           n_doping=1e18 * per_cm3, temperature=temperature)
    return Photodiode(junction=junction, reflectance=0.02, top_thickness=0.0,
                      absorber_thickness=2 * um, lifetime=1e-6, generation_lifetime=1e-6,
                      series_resistance=10.0, package_capacitance=0.1 * pF)
