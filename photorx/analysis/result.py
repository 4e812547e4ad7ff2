"""What a receiver evaluation returns: the figure table and the result object.

:data:`FIGURES` names every scalar figure once (unit, budget table, description); the
budget tables, sweeps, the optimiser, the command line and the widgets read it.
:class:`ReceiverResult` holds the figures of one evaluation (scalars or arrays, one element
per design point) together with the noise of every source, so that the figures and the
budget's by-source table come from one noise integration.

This module sits below :mod:`photorx.analysis.evaluation` (which fills a result),
:mod:`photorx.views.budget` (which formats one) and :mod:`photorx.analysis.receiver`
(the shell that calls both), so data flows one way between them.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

__all__ = ["FIGURES", "BER_FIGURES", "APD_FIGURES", "ReceiverResult"]

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
    # digital receivers in the time domain (photorx.analysis.digital; NaN without a bit rate)
    "eye_opening": ("", "sensitivity", "vertical eye opening at the bit rate (PRBS7, fraction of ideal)"),
    "worst_case_eye_opening": ("", "sensitivity", "eye opening for the worst-case pattern (peak distortion)"),
    "sensitivity_isi": ("W", "sensitivity", "average optical power for the target BER with ISI (PRBS7)"),
    "sensitivity_isi_dbm": ("dBm", "sensitivity", "sensitivity with ISI and noise (PRBS7 statistical eye)"),
    "isi_penalty_db": ("dB", "sensitivity", "ISI power penalty: sensitivity with ISI over noise only"),
    # checks
    "bias_power": ("W", "checks", "power from the bias supply, bias x diode current"),
    "bias_below_breakdown": ("", "checks", "reverse bias below the breakdown estimate"),
    "bias_within_limit": ("", "checks", "reverse bias within the supply limit"),
    "dark_current_within_limit": ("", "checks", "dark current within its limit"),
    "bias_power_within_limit": ("", "checks", "bias-supply power within its limit"),
    "bandwidth_for_bit_rate": ("", "checks", "bandwidth >= 0.7 x bit rate (NRZ rule of thumb)"),
    # avalanche multiplication (a PIN: gain 1, F 1, k NaN = does not apply)
    "gain": ("", "operating point", "avalanche gain M (1 for a PIN)"),
    "excess_noise_factor": ("", "operating point", "excess noise factor F(M) (McIntyre; 1 for a PIN)"),
    "k_effective": ("", "operating point", "effective ionisation ratio k (NaN for a PIN: does not apply)"),
    "multiplied_shot_noise_share": ("", "noise",
                                    "share of the output noise power from multiplied shot noise, "
                                    "2q (I_ph + I_bg + I_dm) M^2 F"),
}

#: Figures of an avalanche photodiode: the budget shows them only for a diode that multiplies.
APD_FIGURES = ("gain", "excess_noise_factor", "k_effective", "multiplied_shot_noise_share")

#: Figures of a digital receiver only: an analog design (no bit rate) does not show them.
BER_FIGURES = ("bit_rate", "target_ber", "sensitivity", "sensitivity_dbm", "bandwidth_for_bit_rate",
               "eye_opening", "worst_case_eye_opening", "sensitivity_isi", "sensitivity_isi_dbm",
               "isi_penalty_db")

_TABLE_ORDER = ("operating point", "speed", "stability", "noise", "sensitivity", "checks")


@dataclass(frozen=True)
class ReceiverResult:
    """Every figure of a :class:`Receiver` evaluation; see :data:`FIGURES` for names and units.

    ``values`` maps each figure name to a scalar or an array (one element per design
    point); figures are also attributes (``result.bandwidth``). ``noise_by_source`` maps
    each noise source to its input-referred rms current [A]. ``warnings`` lists model
    warnings of the evaluation. ``noise_mean_square`` maps each source to its mean-square
    output noise [V^2] and ``noise_spot_density`` to its input-referred density [A/rtHz] at
    a tenth of the noise bandwidth; :meth:`noise_table` formats them.

    Parameters
    ----------
    values : dict
        Figure name (see :data:`FIGURES`) -> scalar or array, SI units; must hold
        ``"bandwidth"`` (it sets the number of design points).
    noise_by_source : dict
        Noise source key -> input-referred rms noise current [A].
    warnings : tuple of str
        Model warnings of the evaluation; default none.
    noise_mean_square : dict
        Noise source key -> mean-square output noise [V^2]; default empty (then
        :meth:`noise_table` is unavailable).
    noise_spot_density : dict
        Noise source key -> input-referred density [A/rtHz] at a tenth of the noise
        bandwidth; default empty.
    """

    values: dict
    noise_by_source: dict
    warnings: tuple = ()
    noise_mean_square: dict = field(default_factory=dict)
    noise_spot_density: dict = field(default_factory=dict)

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

    def noise_table(self, f_lo: float, drop_zero: bool = True):
        """Noise budget of a single design, one row per source (pandas DataFrame).

        The same table as :meth:`photorx.circuit.noise_spectrum.NoiseSpectrum.budget`
        (spot density at ENBW/10, band ``f_lo`` to infinity), read from this result instead
        of integrating the noise again.

        Parameters
        ----------
        f_lo : float
            Lower edge of the band the noise was integrated over [Hz] (the receiver's
            ``noise_band_low``); only recorded in the table's ``attrs``, nothing is
            integrated again.
        drop_zero : bool
            Leave out sources that contribute nothing (default True).

        Raises
        ------
        ValueError
            If the result holds more than one design point or no noise breakdown.
        """
        from ..circuit.noise_spectrum import source_table

        return source_table(**self._noise_table_arguments(f_lo, drop_zero))

    def _noise_table_arguments(self, f_lo=0.0, drop_zero=True) -> dict:
        """Keywords of :func:`~photorx.analysis.noise_spectrum.source_table` for this result."""
        if self.size != 1 or not self.noise_mean_square:
            raise ValueError("noise_table() needs the result of a single design point")
        return dict(
            mean_square={k: float(v) for k, v in self.noise_mean_square.items()},
            density={k: float(v) for k, v in self.noise_spot_density.items()},
            zt0=float(self.values["dc_transimpedance"]), enbw=float(self.values["noise_bandwidth"]),
            f_spot=float(self.values["noise_bandwidth"]) / 10.0, f_lo=float(f_lo), f_hi=np.inf,
            drop_zero=drop_zero)

    def to_frame(self):
        """One row per design point, one column per figure (noise sources as ``noise_<source>`` [A])."""
        import pandas as pd

        data = {k: np.ravel(np.broadcast_to(np.asarray(v), np.shape(self.values["bandwidth"])))
                for k, v in self.to_dict().items()}
        return pd.DataFrame(data)

    def _shown(self) -> list:
        """Figures to show (scalar results): BER figures only for a digital receiver."""
        digital = np.all(np.isfinite(np.asarray(self.values.get("bit_rate", 1.0), dtype=float)))
        return [k for k in FIGURES if k in self.values and (digital or k not in BER_FIGURES)]

    def __repr__(self) -> str:
        # text, one figure a line: description, value with engineering prefix and unit
        from ..units import figure_text
        from ..circuit.noise import SOURCE_LABELS

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
        from ..units import display_value

        frame = self.to_frame()
        if len(frame) != 1:
            return frame._repr_html_()
        rows = "".join(
            f"<tr><td>{FIGURES[k][2]}</td><td>{display_value(frame[k].iloc[0], FIGURES[k][0])}</td></tr>"
            for k in self._shown() if k in frame)
        return f"<table><tr><th>figure</th><th>value</th></tr>{rows}</table>"

    def plot(self, ax=None):
        """The receiver at a glance: speed limits, noise by source, optical power levels.

        See :func:`photorx.views.result_plots.plot_receiver_result`.

        Parameters
        ----------
        ax : sequence of three matplotlib.axes.Axes, optional
            Axes for the speed, noise and power panels; by default a new Figure.

        Returns
        -------
        matplotlib.figure.Figure
        """
        from ..views.result_plots import plot_receiver_result

        return plot_receiver_result(self, ax=ax)
