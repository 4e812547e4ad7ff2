"""The receiver: photodiode + transimpedance stage + optional post filter at one operating point.

:class:`Receiver` is the thin shell that joins the stages; :meth:`Receiver.evaluate` calls
each stage's vectorised core once (photodiode, loop figures, noise integration,
sensitivity) and collects every figure of merit in a :class:`ReceiverResult`. No physics
is implemented here: every number comes from the stage that owns it. Any field may be an
array (one element per design point), which is how :func:`photorx.sweep` evaluates a
whole grid in one call.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np
import pandas as pd

from .._validate import require_in_range, require_nonnegative, require_positive
from ..circuit.filters import PostFilter
from ..circuit.tia import Tia
from ..errors import DesignError

__all__ = ["Receiver", "ReceiverResult", "FIGURES"]

#: Every scalar figure of a :class:`ReceiverResult`: name -> (unit, budget table, description).
FIGURES = {
    # operating point
    "reverse_bias": ("V", "operating point", "reverse bias"),
    "wavelength": ("m", "operating point", "wavelength"),
    "optical_power": ("W", "operating point", "average optical power"),
    "temperature": ("K", "operating point", "temperature"),
    "depletion_width": ("m", "operating point", "depletion width"),
    "capacitance": ("F", "operating point", "photodiode capacitance"),
    "input_capacitance": ("F", "operating point", "total capacitance at the summing node"),
    "responsivity": ("A/W", "operating point", "responsivity"),
    "quantum_efficiency": ("", "operating point", "external quantum efficiency"),
    "photocurrent": ("A", "operating point", "signal photocurrent"),
    "background_current": ("A", "operating point", "background photocurrent"),
    "dark_current": ("A", "operating point", "dark current"),
    "shunt_resistance": ("ohm", "operating point", "shunt resistance"),
    "series_resistance": ("ohm", "operating point", "series resistance"),
    "breakdown_voltage": ("V", "operating point", "breakdown voltage (estimate)"),
    "peak_photocurrent": ("A", "operating point",
                          "largest photocurrent: signal peak (one level) + background + dark"),
    "peak_output": ("V", "operating point", "output at the largest photocurrent, |Zt(0)| x that current"),
    "average_output": ("V", "operating point",
                       "output at the average photocurrent (DC level), |Zt(0)| x that current"),
    "output_swing": ("V", "operating point", "output swing of the amplifier"),
    # speed
    "bandwidth": ("Hz", "speed", "-3 dB bandwidth of the whole chain"),
    "loop_bandwidth": ("Hz", "speed", "-3 dB bandwidth of the transimpedance stage"),
    "photodiode_bandwidth": ("Hz", "speed", "intrinsic bandwidth of the photodiode (transit and diffusion)"),
    "transit_bandwidth": ("Hz", "speed", "transit-limited bandwidth of the photodiode"),
    "transit_time": ("s", "speed", "carrier transit time across the depletion layer"),
    "filter_bandwidth": ("Hz", "speed", "post-filter cutoff"),
    "limited_by": ("", "speed", "the part that sets the bandwidth"),
    "rise_time": ("s", "speed", "10-90 % rise time of the stage"),
    "dc_transimpedance": ("ohm", "speed", "DC transimpedance"),
    # stability
    "stable": ("", "stability", "closed loop stable"),
    "phase_margin": ("deg", "stability", "phase margin"),
    "gain_margin_db": ("dB", "stability", "gain margin"),
    "crossover": ("Hz", "stability", "loop-gain crossover frequency"),
    "peaking_db": ("dB", "stability", "closed-loop peaking"),
    "overshoot": ("", "stability", "step overshoot (fraction)"),
    "q": ("", "stability", "closed-loop Q of the dominant pole pair"),
    "settling_time": ("s", "stability", "1 % settling time"),
    # noise
    "noise_bandwidth": ("Hz", "noise", "equivalent noise bandwidth of the chain"),
    "output_noise_rms": ("V", "noise", "integrated output noise"),
    "input_noise_rms": ("A", "noise", "input-referred noise current"),
    "input_noise_density": ("A/rtHz", "noise", "average input-referred density, rms/sqrt(ENBW)"),
    "circuit_noise_rms": ("A", "noise", "input-referred noise without signal and dark shot noise"),
    "noise_floor_rms": ("A", "noise", "input-referred noise without the signal's shot noise (the floor)"),
    "noise_floor_density": ("A/rtHz", "noise", "noise floor, rms/sqrt(ENBW)"),
    "dominant_noise_source": ("", "noise", "largest noise source"),
    # sensitivity
    "nep": ("W/rtHz", "sensitivity", "noise-equivalent power (noise floor / responsivity)"),
    "min_detectable_power": ("W", "sensitivity", "optical power for SNR = 1 in the noise bandwidth (noise floor)"),
    "snr": ("", "sensitivity", "analog SNR (power ratio) at the optical power"),
    "snr_db": ("dB", "sensitivity", "analog SNR"),
    "max_photocurrent": ("A", "sensitivity", "photocurrent at the output-swing limit"),
    "dynamic_range_db": ("dB", "sensitivity", "output-swing limit over the noise floor (20 log10 of the current ratio)"),
    "bit_rate": ("bit/s", "sensitivity", "NRZ bit rate (none: an analog receiver)"),
    "target_ber": ("", "sensitivity", "target bit-error ratio"),
    "sensitivity": ("W", "sensitivity", "average optical power for the target BER"),
    "sensitivity_dbm": ("dBm", "sensitivity", "sensitivity for the target BER"),
    # checks
    "bias_power": ("W", "checks", "power from the bias supply, bias x diode current"),
    "bias_below_breakdown": ("", "checks", "reverse bias below the breakdown estimate"),
    "bias_within_limit": ("", "checks", "reverse bias within the supply limit"),
    "dark_current_within_limit": ("", "checks", "dark current within its limit"),
    "bias_power_within_limit": ("", "checks", "bias-supply power within its limit"),
    "bandwidth_for_bit_rate": ("", "checks", "bandwidth >= 0.7 x bit rate (NRZ rule of thumb)"),
}

#: Figures of a digital receiver only: an analog design (no bit rate) does not show them.
BER_FIGURES = ("bit_rate", "target_ber", "sensitivity", "sensitivity_dbm", "bandwidth_for_bit_rate")

_TABLE_ORDER = ("operating point", "speed", "stability", "noise", "sensitivity", "checks")


@dataclass(frozen=True)
class Receiver:
    """A photodiode, its transimpedance stage and an operating point.

    Parameters
    ----------
    photodiode : Photodiode
        The detector (its junction temperature is replaced by ``temperature``).
    tia : Tia
        The transimpedance stage.
    reverse_bias : float or array_like
        Reverse bias [V]; negative is forward bias.
    wavelength : float or array_like
        Optical wavelength [m].
    optical_power : float or array_like
        Average optical signal power [W], >= 0.
    temperature : float or array_like
        Operating temperature of the photodiode and resistors [K].
    post_filter : PostFilter, optional
        Low-pass filter after the stage.
    background_power : float or array_like
        Unmodulated background optical power at the same wavelength [W], >= 0.
    modulation_depth : float
        Optical modulation index m of the analog signal, 0 < m <= 1.
    bit_rate : float, optional
        NRZ bit rate [bit/s]; enables the bandwidth check.
    extinction_ratio : float
        P1/P0 of the digital signal, > 1; ``inf`` for an ideal zero level.
    target_ber : float
        Bit-error ratio for the sensitivity figure, in (0, 0.5).
    max_dark_current : float, optional
        Dark-current limit [A] for the checks.
    max_bias : float, optional
        Bias-supply limit [V] for the checks.
    max_bias_power : float, optional
        Limit [W] on the power the bias supply delivers to the diode, reverse bias times
        (dark + signal + background) current, for the checks.
    min_phase_margin : float
        Smallest acceptable phase margin [deg], 0 to 90; default 45 (common practice).
    max_peaking : float
        Largest acceptable closed-loop peaking [dB], >= 0; default 3 (common practice).
    max_overshoot : float, optional
        Largest acceptable step overshoot (fraction of the final value), > 0.
    noise_band_low : float
        Lower edge of the noise integration [Hz], > 0 (1/f noise diverges at 0 Hz);
        the upper edge is infinite (the integral is extended until it converges).
    """

    photodiode: object
    tia: Tia
    reverse_bias: float = 5.0
    wavelength: float = 1310e-9
    optical_power: float = 10e-6
    temperature: float = 300.0
    post_filter: PostFilter | None = None
    background_power: float = 0.0
    modulation_depth: float = 1.0
    bit_rate: float | None = None
    extinction_ratio: float = np.inf
    target_ber: float = 1e-12
    max_dark_current: float | None = None
    max_bias: float | None = None
    max_bias_power: float | None = None
    noise_band_low: float = 1.0
    # common practice for a feedback loop: >= 45 deg phase margin, <= 3 dB peaking
    min_phase_margin: float = 45.0
    max_peaking: float = 3.0
    max_overshoot: float | None = None

    def __post_init__(self):
        set_ = object.__setattr__
        if not isinstance(self.tia, Tia):
            raise DesignError(f"tia must be a Tia, got {type(self.tia).__name__}", parameter="tia")
        if self.post_filter is not None and not isinstance(self.post_filter, PostFilter):
            raise DesignError(f"post_filter must be a PostFilter or None, got "
                              f"{type(self.post_filter).__name__}", parameter="post_filter")
        if not hasattr(self.photodiode, "equivalent_circuit"):
            raise DesignError(f"photodiode must be a Photodiode, got {type(self.photodiode).__name__}",
                              parameter="photodiode")
        set_(self, "reverse_bias", require_in_range("reverse_bias", self.reverse_bias, "V"))
        set_(self, "wavelength", require_positive("wavelength", self.wavelength, "m"))
        set_(self, "optical_power", require_nonnegative("optical_power", self.optical_power, "W"))
        set_(self, "temperature", require_in_range("temperature", self.temperature, "K", 50.0, 600.0))
        set_(self, "background_power",
             require_nonnegative("background_power", self.background_power, "W"))
        set_(self, "modulation_depth", require_in_range("modulation_depth", self.modulation_depth, "",
                                                        0.0, 1.0, low_inclusive=False))
        if self.bit_rate is not None:
            set_(self, "bit_rate", require_positive("bit_rate", self.bit_rate, "bit/s"))
        ratio = float(self.extinction_ratio)
        if not ratio > 1:
            raise DesignError.out_of_range("extinction_ratio", ratio, "", "> 1 (inf allowed)")
        set_(self, "target_ber", require_in_range("target_ber", self.target_ber, "", 0.0, 0.5,
                                                  low_inclusive=False, high_inclusive=False))
        if self.max_dark_current is not None:
            set_(self, "max_dark_current", require_positive("max_dark_current", self.max_dark_current, "A"))
        if self.max_bias is not None:
            set_(self, "max_bias", require_positive("max_bias", self.max_bias, "V"))
        if self.max_bias_power is not None:
            set_(self, "max_bias_power", require_positive("max_bias_power", self.max_bias_power, "W"))
        set_(self, "noise_band_low", require_positive("noise_band_low", self.noise_band_low, "Hz"))
        set_(self, "min_phase_margin", float(require_in_range("min_phase_margin", self.min_phase_margin,
                                                              "deg", 0.0, 90.0)))
        set_(self, "max_peaking", float(require_nonnegative("max_peaking", self.max_peaking, "dB")))
        if self.max_overshoot is not None:
            set_(self, "max_overshoot", float(require_positive("max_overshoot", self.max_overshoot, "")))

    # -- composition -------------------------------------------------------------------
    def photodiode_at_temperature(self):
        """The photodiode with its junction at the receiver's temperature."""
        pd_ = self.photodiode
        junction = getattr(pd_, "junction", None)
        if junction is not None and dataclasses.is_dataclass(junction) and \
                "temperature" in {f.name for f in dataclasses.fields(junction)}:
            if not np.array_equal(np.asarray(junction.temperature), np.asarray(self.temperature)):
                pd_ = dataclasses.replace(pd_, junction=dataclasses.replace(junction,
                                                                            temperature=self.temperature))
        if dataclasses.is_dataclass(pd_) and "temperature" in {f.name for f in dataclasses.fields(pd_)}:
            pd_ = dataclasses.replace(pd_, temperature=self.temperature)
        return pd_

    def equivalent_circuit(self):
        """The photodiode's equivalent circuit at this operating point."""
        return self.photodiode_at_temperature().equivalent_circuit(
            self.reverse_bias, optical_power=self.optical_power, wavelength=self.wavelength,
            background_power=self.background_power)

    def noise(self):
        """The :class:`~photorx.analysis.noise_spectrum.NoiseSpectrum` of this design (scalar designs)."""
        pd_ = self.photodiode_at_temperature()
        net = self.equivalent_circuit()
        r = pd_.responsivity(self.wavelength, self.reverse_bias)
        return self.tia.noise(net, temperature=self.temperature, post_filter=self.post_filter,
                              # |I_dark|: forward-biased dark current is negative (see
                              # EquivalentCircuit.current); its shot noise is 2 q |I|
                              dark_current=np.abs(pd_.dark_current(self.reverse_bias)),
                              signal_current=r * self.optical_power,
                              background_current=r * self.background_power,
                              f_lo=self.noise_band_low)

    def evaluate(self) -> "ReceiverResult":
        """Every figure of merit at this operating point (arrays if any field is an array).

        See :func:`photorx.analysis.evaluation.evaluate_receiver`.
        """
        from .evaluation import evaluate_receiver

        try:
            return evaluate_receiver(self)
        except DesignError as exc:
            if exc.parameter != "v_r":
                raise
            # the device models call the bias v_r; the receiver's user knows it as reverse_bias
            text = str(exc).replace("v_r = ", "reverse_bias = ", 1).replace(
                "breakdown_voltage()", "the photodiode's breakdown estimate")
            raise DesignError(text, parameter="reverse_bias") from None

    def budget(self, title: str | None = None):
        """Budget tables of this (scalar) design: a :class:`~photorx.views.tables.Budget`."""
        from .budget import receiver_budget

        return receiver_budget(self, title=title)

    def checks(self) -> pd.DataFrame:
        """Every check of this (scalar) design against its limits, one row per check.

        Columns ``check`` (words), ``value``, ``limit``, ``unit`` (SI), ``ok`` (bool);
        see :func:`photorx.analysis.checks.receiver_checks`.
        """
        from .checks import receiver_checks

        return receiver_checks(self)


@dataclass(frozen=True)
class ReceiverResult:
    """Every figure of a :class:`Receiver` evaluation; see :data:`FIGURES` for names and units.

    ``values`` maps each figure name to a scalar or an array (one element per design
    point); figures are also attributes (``result.bandwidth``). ``noise_by_source`` maps
    each noise source to its input-referred rms current [A]. ``warnings`` lists model
    warnings of the evaluation.
    """

    values: dict
    noise_by_source: dict
    warnings: tuple = ()

    def __getattr__(self, name):
        values = object.__getattribute__(self, "values")
        if name in values:
            value = values[name]
            return np.asarray(value).item() if np.ndim(value) == 0 else value
        raise AttributeError(f"ReceiverResult has no figure {name!r}; figures: {', '.join(values)}")

    def __dir__(self):
        return sorted(set(super().__dir__()) | set(self.values))

    @property
    def size(self) -> int:
        """Number of design points."""
        return int(np.size(self.values["bandwidth"]))

    def to_dict(self) -> dict:
        """Figures as a dict of Python scalars (single design) or numpy arrays."""
        out = {}
        for name, value in self.values.items():
            arr = np.asarray(value)
            out[name] = arr.item() if arr.ndim == 0 else arr
        for name, value in self.noise_by_source.items():
            arr = np.asarray(value)
            out[f"noise_{name}"] = arr.item() if arr.ndim == 0 else arr
        return out

    def to_frame(self) -> pd.DataFrame:
        """One row per design point, one column per figure (noise sources as ``noise_<source>`` [A])."""
        data = {k: np.ravel(np.broadcast_to(np.asarray(v), np.shape(self.values["bandwidth"])))
                for k, v in self.to_dict().items()}
        return pd.DataFrame(data)

    def _shown(self) -> list:
        """Figures to show (scalar results): BER figures only for a digital receiver."""
        digital = np.all(np.isfinite(np.asarray(self.values.get("bit_rate", 1.0), dtype=float)))
        return [k for k in FIGURES if k in self.values and (digital or k not in BER_FIGURES)]

    def __repr__(self) -> str:
        # text, one figure a line: description, value with engineering prefix and unit
        from ..views.tables import figure_text
        from .noise import SOURCE_LABELS

        if self.size != 1:
            return f"ReceiverResult({self.size} design points; figures: {', '.join(self.values)})"
        shown = self._shown()
        width = max(len(FIGURES[k][2]) for k in shown)
        lines = []
        for k in shown:
            value = getattr(self, k)
            value = SOURCE_LABELS.get(value, value) if k == "dominant_noise_source" else value
            lines.append(f"  {FIGURES[k][2]:<{width}}  {figure_text(k, value, FIGURES[k][0])}")
        return "ReceiverResult\n" + "\n".join(lines)

    def _repr_html_(self) -> str:
        from ..views.tables import display_value

        frame = self.to_frame()
        if len(frame) != 1:
            return frame._repr_html_()
        rows = "".join(
            f"<tr><td>{FIGURES[k][2]}</td><td>{display_value(frame[k].iloc[0], FIGURES[k][0])}</td></tr>"
            for k in self._shown() if k in frame)
        return f"<table><tr><th>figure</th><th>value</th></tr>{rows}</table>"
