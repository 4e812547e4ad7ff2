"""Former home of :mod:`photorx.circuit.noise_spectrum`, kept so that code written against it still runs.

The noise of the transimpedance circuit (sources, transfer functions, spectra and their
integrals) belongs to the circuit stage, below the analysis: ``photorx.circuit.noise_spectrum``.
Every name, public or not, is looked up there.
"""

from __future__ import annotations

from ..circuit import noise_spectrum as _moved

__all__ = list(_moved.__all__)


def __getattr__(name):
    return getattr(_moved, name)
