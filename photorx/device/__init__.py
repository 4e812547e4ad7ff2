"""photorx.device stage.

The avalanche names are re-exported here on first use (the module stays light to import).
"""

import importlib as _importlib

_EXPORTS = {
    "AvalanchePhotodiode": "photorx.device.apd",
    "SamStructure": "photorx.device.apd",
    "excess_noise_factor": "photorx.device.avalanche",
    "multiplication_gain": "photorx.device.avalanche",
    "ionization_integral": "photorx.device.avalanche",
    "miller_gain": "photorx.device.avalanche",
    "fit_miller": "photorx.device.avalanche",
    "ionization_coefficients": "photorx.device.ionization",
}

__all__ = sorted(_EXPORTS)


def __getattr__(name: str):
    try:
        module = _EXPORTS[name]
    except KeyError:
        raise AttributeError(f"module 'photorx.device' has no attribute {name!r}") from None
    return getattr(_importlib.import_module(module), name)
