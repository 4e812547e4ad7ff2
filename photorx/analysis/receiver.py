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

from .._validate import require_in_range, require_nonnegative, require_positive
from ..circuit.filters import PostFilter
from ..circuit.tia import Tia
from ..errors import DesignError
from .evaluation import evaluate_receiver
from .multiplication import multiplied_currents
from .result import _TABLE_ORDER, BER_FIGURES, FIGURES, ReceiverResult  # noqa: F401  (re-exported)

__all__ = ["Receiver", "ReceiverResult", "FIGURES"]


@dataclass(frozen=True)
class Receiver:
    """A photodiode, its transimpedance stage and an operating point.

    Parameters
    ----------
    photodiode : Photodiode or AvalanchePhotodiode
        The detector (its junction temperature is replaced by ``temperature``). An
        avalanche photodiode multiplies: signal current M R P, shot noise
        2 q I_ds + 2 q (I_ph + I_bg + I_dm) M^2 F(M).
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
        """The photodiode with its junction at the receiver's temperature.

        An avalanche photodiode (anything with ``receiver_view``) gives its view at the
        receiver's temperature(s): :class:`~photorx.device.apd_receiver.ApdAtTemperature`.
        """
        pd_ = self.photodiode
        view = getattr(pd_, "receiver_view", None)
        if callable(view):
            return view(self.temperature)
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
        return self._circuit_of(self.photodiode_at_temperature())

    def _circuit_of(self, pd_):
        """The equivalent circuit of ``pd_`` (this receiver's photodiode at its temperature,
        built once by the caller: an APD view memoises its ionisation pass) at this point."""
        return pd_.equivalent_circuit(self.reverse_bias, optical_power=self.optical_power,
                                      wavelength=self.wavelength,
                                      background_power=self.background_power)

    def noise(self):
        """The :class:`~photorx.circuit.noise_spectrum.NoiseSpectrum` of this design (scalar designs)."""
        pd_ = self.photodiode_at_temperature()
        net = self._circuit_of(pd_)
        r = pd_.responsivity(self.wavelength, self.reverse_bias)
        # equivalent full-shot currents: |I_dark| for a PIN (forward-biased dark current is
        # negative; its shot noise is 2 q |I|), I_ds + M^2 F I_dm and M^2 F R P for an APD
        i = multiplied_currents(pd_, self.reverse_bias, r, self.optical_power,
                                self.background_power, pd_.dark_current(self.reverse_bias))
        return self.tia.noise(net, temperature=self.temperature, post_filter=self.post_filter,
                              dark_current=i["shot_dark"], signal_current=i["shot_signal"],
                              background_current=i["shot_background"],
                              f_lo=self.noise_band_low)

    def evaluate(self) -> "ReceiverResult":
        """Every figure of merit at this operating point (arrays if any field is an array).

        See :func:`photorx.analysis.evaluation.evaluate_receiver`.
        """
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
        """Budget tables of this (scalar) design: a :class:`~photorx.views.tables.Budget`.

        Parameters
        ----------
        title : str, optional
            Title of the budget; default None (or empty) gives ``"Receiver budget"``.
        """
        from ..views.budget import receiver_budget  # the budget is a view of evaluate()

        return receiver_budget(self, title=title)

    def checks(self):
        """Every check of this (scalar) design against its limits, one row per check.

        Columns ``check`` (words), ``value``, ``limit``, ``unit`` (SI), ``ok`` (bool);
        see :func:`photorx.analysis.checks.receiver_checks`.
        """
        from .checks import receiver_checks

        return receiver_checks(self)

    # -- time domain (photorx.analysis.digital) -----------------------------------------
    def pulse_response(self, t, bit_rate=None):
        """Output for a 1 A photocurrent pulse lasting one bit [V per A = ohm] (scalar designs).

        Parameters
        ----------
        t : array_like
            Times after the pulse starts [s], finite.
        bit_rate : float, optional
            Bit rate [bit/s], 1 to 1e12; default the receiver's ``bit_rate``.

        See :func:`photorx.analysis.digital.pulse_response`.
        """
        from .digital import pulse_response

        return pulse_response(self, t, bit_rate=bit_rate)

    def impulse_response(self, t):
        """Impulse response of the chain, photocurrent to output [ohm/s] (scalar designs).

        Parameters
        ----------
        t : array_like
            Times [s], finite; the area over all t is Zt(0).

        See :func:`photorx.analysis.digital.impulse_response`.
        """
        from .digital import impulse_response

        return impulse_response(self, t)

    def eye(self, bit_rate=None, pattern="prbs7", modulation="nrz", samples_per_symbol=32):
        """The eye for a PRBS pattern: an :class:`~photorx.analysis.digital_eye.Eye`.

        Parameters
        ----------
        bit_rate : float, optional
            [bit/s], 1 to 1e12; default the receiver's ``bit_rate``.
        pattern : str
            ``"prbs7"`` (default), ``"prbs9"``, ``"prbs10"``, ``"prbs11"`` or ``"prbs15"``.
        modulation : str
            ``"nrz"`` (default) or ``"pam4"`` (bit_rate / 2 symbols per second).
        samples_per_symbol : int
            Phases per symbol, 8 to 256 (default 32).

        See :func:`photorx.analysis.digital.receiver_eye`.
        """
        from .digital import receiver_eye

        return receiver_eye(self, bit_rate=bit_rate, pattern=pattern, modulation=modulation,
                            samples_per_symbol=samples_per_symbol)

    def _repr_html_(self):
        """Jupyter display: a compact parameter table with units (the closed form, where
        there is one, is the LaTeX display)."""
        from ..views.rich import parameter_table_html

        return parameter_table_html(self)
