"""The avalanche-photodiode section of the HTML report: gain, k, F, the optimum gain, the
temperature-compensated bias and the high-voltage caution.

Every number comes from the package (the receiver's evaluation, a sweep sampled in gain,
:func:`photorx.analysis.apd_optimum.optimum_gain`,
:func:`photorx.device.apd_receiver.bias_for_constant_gain`); this module only lays them
out and plots them.
"""

from __future__ import annotations

import html

import numpy as np

from ..errors import DesignError

__all__ = ["is_avalanche", "apd_section", "HIGH_VOLTAGE_CAUTION"]

#: The caution at the head of the APD section (the full cautions close the report).
HIGH_VOLTAGE_CAUTION = (
    "Avalanche photodiode bias supplies run at tens to hundreds of volts. Current-limit the "
    "supply (an APD at or near breakdown draws whatever the supply gives), insulate and "
    "guard the bias node, discharge filter capacitors before touching the circuit, handle "
    "the diode and amplifier inputs at a grounded (ESD-safe) workstation, and classify and "
    "operate test lasers for eye safety. Defer to local codes and licensed practice.")

#: Temperatures of the compensated-bias table [K]: -40 to 85 degC.
_TEMPERATURES = np.array([233.15, 253.15, 273.15, 298.15, 323.15, 358.15])


def is_avalanche(rx) -> bool:
    """True when the receiver's photodiode multiplies (an avalanche photodiode).

    Parameters
    ----------
    rx : Receiver
        The design.
    """
    return callable(getattr(rx.photodiode, "multiplication", None))


def _row(name, value):
    return f"<tr><th>{html.escape(name)}</th><td>{html.escape(value)}</td></tr>"


def apd_section(rx, fmt: str = "png") -> str:
    """HTML of the APD section (empty for a photodiode without gain).

    Parameters
    ----------
    rx : Receiver
        The design (a scalar receiver).
    fmt : {"png", "svg"}
        Image format of the embedded plot.
    """
    if not is_avalanche(rx):
        return ""
    from ..analysis.apd_optimum import optimum_gain
    from ..analysis.sweep import sweep
    from ..device.apd_receiver import bias_for_constant_gain
    from ..units import format_eng
    from . import plots

    r = rx.evaluate()
    gain, k, f = (float(np.asarray(getattr(r, n))) for n in ("gain", "k_effective",
                                                             "excess_noise_factor"))
    share = float(np.asarray(r.multiplied_shot_noise_share))
    vb = float(np.asarray(r.breakdown_voltage))
    parts = ['<section class="avalanche">', "<h2>Avalanche photodiode</h2>",
             f'<p class="caution"><strong>Caution:</strong> {html.escape(HIGH_VOLTAGE_CAUTION)}</p>',
             "<table>",
             _row("reverse bias", format_eng(float(np.asarray(rx.reverse_bias)), "V")),
             _row("breakdown voltage", format_eng(vb, "V")),
             _row("avalanche gain M", f"{gain:.4g}"),
             _row("effective ionisation ratio k", f"{k:.3g}"),
             _row("excess noise factor F(M) = kM + (1-k)(2-1/M)", f"{f:.4g}"),
             _row("multiplied shot noise, share of the output noise power", f"{100 * share:.3g} %")]
    objective = "sensitivity" if rx.bit_rate is not None else "snr"
    try:
        opt = optimum_gain(rx, objective=objective)
        what = "BER sensitivity" if objective == "sensitivity" else "analog SNR"
        parts += [_row(f"optimum gain for the {what} (numeric)",
                       f"{opt.gain:.4g} at {format_eng(opt.bias, 'V')}"),
                  _row("optimum gain, thermal-noise-limited closed form",
                       f"{opt.closed_form_gain:.4g} ({opt.penalty_db:.3g} dB worse in the full "
                       "model)")]
    except DesignError as exc:
        opt = None
        parts.append(_row("optimum gain", f"not available: {exc}"))
    parts.append("</table>")
    try:
        v_t = bias_for_constant_gain(rx.photodiode, gain, _TEMPERATURES)
        parts += [f"<h3>Temperature-compensated bias for M = {gain:.3g}</h3>", "<table>",
                  "<tr><th>temperature</th><th>reverse bias</th></tr>"]
        parts += [f"<tr><td>{t - 273.15:.0f} degC</td><td>{html.escape(format_eng(v, 'V'))}"
                  "</td></tr>" for t, v in zip(_TEMPERATURES, np.atleast_1d(v_t))]
        parts.append("</table>")
    except DesignError as exc:
        parts.append(f"<p><em>Temperature-compensated bias not available: "
                     f"{html.escape(str(exc))}</em></p>")
    try:
        top = min(1000.0, 4.0 * max(gain, opt.gain if opt is not None else gain))
        frame = sweep(rx, gain=np.geomspace(1.05, top, 25))
        fig = plots.plot_curve(frame["reverse_bias"], frame["gain"], xlabel="reverse bias",
                               ylabel="gain M", xunit="V", logy=True,
                               mark=(float(np.asarray(rx.reverse_bias)), gain),
                               title="Avalanche gain against bias (sampled in gain)")
        uri = plots.figure_to_base64(fig, fmt)
        parts.append(f'<figure><img alt="avalanche gain against bias" src="{uri}"><figcaption>'
                     "Gain against reverse bias, sampled evenly in log gain so that the steep "
                     "part near breakdown is resolved; the dot is the operating point."
                     "</figcaption></figure>")
    except DesignError as exc:
        parts.append(f"<p><em>Gain plot not available: {html.escape(str(exc))}</em></p>")
    parts.append("</section>")
    return "\n".join(parts) + "\n"
