"""photorx: optical-receiver design from the photodiode junction up.

The public names are re-exported here (see ``__all__``); submodules are imported on
first use so that ``import photorx`` stays fast and plotting libraries load only when
a plot is drawn.
"""

# no ``from __future__ import annotations`` here: it would bind the name ``annotations``
# in the package namespace (and so in ``dir(photorx)``); this module needs no postponed
# annotations
import importlib as _importlib

__version__ = "0.1.0"

# public name -> module that owns it
_EXPORTS = {
    "DesignError": "photorx.errors",
    "PhotorxWarning": "photorx.errors",
    "ModelRangeWarning": "photorx.errors",
    "thermal_voltage": "photorx.constants",
    "material": "photorx.device.materials",
    "Material": "photorx.device.materials",
    "known_materials": "photorx.device.materials",
    "ParametricFit": "photorx.device.junction",
    "AbruptJunction": "photorx.device.junction",
    "LinearlyGradedJunction": "photorx.device.junction",
    "PinJunction": "photorx.device.junction",
    "ParametricJunction": "photorx.device.junction",
    "fit_parametric_junction": "photorx.device.junction",
    "diffusion_capacitance": "photorx.device.junction",
    "EquivalentCircuit": "photorx.device.equivalent_circuit",
    "Photodiode": "photorx.device.photodiode",
    "AvalanchePhotodiode": "photorx.device.apd",
    "SamStructure": "photorx.device.apd",
    "excess_noise_factor": "photorx.device.avalanche",
    "miller_gain": "photorx.device.avalanche",
    "fit_miller": "photorx.device.avalanche",
    "MillerFit": "photorx.device.avalanche",
    "ionization_coefficients": "photorx.device.ionization",
    "OpAmp": "photorx.circuit.amplifier",
    "NoiseCurve": "photorx.circuit.amplifier_noise",
    "fit_open_loop_gain": "photorx.circuit.amplifier_fit",
    "GainFit": "photorx.circuit.amplifier_fit",
    "Tia": "photorx.circuit.tia",
    "TiaMetrics": "photorx.circuit.metrics",
    "design_feedback_capacitor": "photorx.circuit.feedback_design",
    "PostFilter": "photorx.circuit.filters",
    "NoiseSpectrum": "photorx.circuit.noise_spectrum",
    "Receiver": "photorx.analysis.receiver",
    "ReceiverResult": "photorx.analysis.receiver",
    "Budget": "photorx.views.tables",
    "sweep": "photorx.analysis.sweep",
    "optimize": "photorx.analysis.optimize",
    "OptimizationResult": "photorx.analysis.optimize",
    "load_design": "photorx.designfile",
    "save_design": "photorx.designfile",
    "demo_receiver": "photorx.designfile",
    "ApdAtTemperature": "photorx.device.apd_receiver",
    "bias_for_constant_gain": "photorx.device.apd_receiver",
    "optimum_gain": "photorx.analysis.apd_optimum",
    "optimum_gain_closed_form": "photorx.analysis.apd_optimum",
    "OptimumGain": "photorx.analysis.apd_optimum",
    "gain_axis": "photorx.analysis.apd_optimum",
    "read_cv": "photorx.device.measurements",
    "read_iv": "photorx.device.measurements",
    "doping_profile": "photorx.device.cv_profile",
    "fit_junction": "photorx.device.junction_fit",
    "JunctionFit": "photorx.device.junction_fit",
    "fit_dark_current": "photorx.device.dark_fit",
    "DarkCurrentFit": "photorx.device.dark_fit",
    "demo_measurements": "photorx.device.measurements",
    "Eye": "photorx.analysis.digital_eye",
    "prbs": "photorx.analysis.digital_patterns",
    "bandwidth_ratio_study": "photorx.analysis.digital",
    "tolerance_study": "photorx.analysis.tolerance",
    "ToleranceResult": "photorx.analysis.tolerance_result",
    "load_study": "photorx.designfile",
}

__all__ = sorted(_EXPORTS) + ["__version__"]


def __getattr__(name: str):
    try:
        module = _EXPORTS[name]
    except KeyError:
        raise AttributeError(f"module 'photorx' has no attribute {name!r}") from None
    value = getattr(_importlib.import_module(module), name)
    globals()[name] = value  # cache: later lookups skip __getattr__
    return value


def __dir__():
    return sorted(set(globals()) | set(__all__))
