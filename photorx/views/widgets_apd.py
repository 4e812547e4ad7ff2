"""The avalanche-photodiode panel: gain against bias, excess noise, the optimum gain and the
temperature-compensated bias.

Every number comes from the package: :func:`photorx.optimum_gain` (its scan is sampled in
gain, as ``photorx.sweep(rx, gain=...)`` is) and :func:`photorx.bias_for_constant_gain`.
The panel only lays them out.
"""

from __future__ import annotations

import dataclasses

import numpy as np

from ..errors import DesignError
from ..units import format_eng
from .widgets_base import Panel, _widgets, lin_slider, log_slider, rows_html

__all__ = ["AvalanchePanel", "avalanche_panel", "DEMO_APD"]

#: Demo design the panel falls back to for a receiver without an avalanche photodiode.
DEMO_APD = "si-apd-850"
_N_GAIN = 25
_T_LOW, _T_HIGH = 233.15, 358.15  # -40 and 85 degC


def _receiver(receiver):
    from ..designfile import load_design

    if receiver is None:
        return load_design(DEMO_APD), False
    if isinstance(receiver, str):
        receiver = load_design(receiver)
    if not callable(getattr(receiver.photodiode, "multiplication", None)):
        return load_design(DEMO_APD), True
    return receiver, False


class AvalanchePanel(Panel):
    """Gain and excess noise against bias, SNR or sensitivity against gain with its optimum,
    and the bias that holds the gain from -40 to 85 degC.

    Controls: reverse bias, temperature, optical power and the objective of the optimum
    (analog SNR or BER sensitivity; the latter needs a bit rate).

    Parameters
    ----------
    receiver : Receiver, str or None
        A receiver on an avalanche photodiode, or the name or path of a design file;
        default None, the ``si-apd-850`` demo (also used, with a note, for a receiver
        whose photodiode has no gain).
    render : bool
        Render the figure to PNG after every update; default True.
    """

    title = "Avalanche photodiode: gain, excess noise, optimum gain, temperature"
    figsize = (10.0, 6.4)

    def __init__(self, receiver=None, render=True):
        self.receiver, self.replaced = _receiver(receiver)
        self.apd = self.receiver.photodiode
        self.optimum = None
        super().__init__(render=render)

    def _breakdown(self, temperature):
        return float(self.apd.at_temperature(temperature).breakdown_voltage())

    def _build_controls(self):
        w = _widgets()
        rx = self.receiver
        t = float(np.asarray(rx.temperature))
        vb = self._breakdown(t)
        power = float(np.asarray(rx.optical_power))
        self.controls = {
            "bias": lin_slider("reverse bias [V]", float(np.asarray(rx.reverse_bias)),
                               0.5 * vb, 0.9999 * vb, vb / 2000),
            "temperature": lin_slider("temperature [K]", t, _T_LOW, _T_HIGH, 5.0),
            "power": log_slider("optical power [W]", power if power > 0 else 1e-7, 1e-10,
                                1e-3),
            "objective": w.Dropdown(options=["sensitivity", "snr"] if rx.bit_rate is not None
                                    else ["snr"], description="optimum for",
                                    style={"description_width": "initial"}),
        }

    def _build_figure(self):
        axs = self.figure.subplots(2, 2)
        names = ("gain", "noise", "objective", "temperature")
        self.axes = dict(zip(names, axs.ravel()))
        a = self.axes
        (self.lines["gain"],) = a["gain"].plot([], [], color="C0")
        (self.lines["gain_mark"],) = a["gain"].plot([], [], "o", color="C3")
        (self.lines["excess"],) = a["noise"].plot([], [], color="C1", label="F(M)")
        (self.lines["excess_mark"],) = a["noise"].plot([], [], "o", color="C3")
        (self.lines["objective"],) = a["objective"].plot([], [], color="k")
        (self.lines["optimum"],) = a["objective"].plot([], [], "*", color="C2", ms=10,
                                                       label="numeric optimum")
        self.lines["closed_form"] = a["objective"].axvline(1.0, color="C1", ls="--",
                                                          label="closed form")
        (self.lines["objective_mark"],) = a["objective"].plot([], [], "o", color="C3")
        (self.lines["compensated"],) = a["temperature"].plot([], [], color="C0")
        (self.lines["compensated_mark"],) = a["temperature"].plot([], [], "o", color="C3")
        for key, (xl, yl) in {"gain": ("reverse bias [V]", "gain M"),
                              "noise": ("gain M", "excess noise factor F"),
                              "objective": ("gain M", "objective"),
                              "temperature": ("temperature [K]", "bias for this gain [V]")
                              }.items():
            a[key].set_xlabel(xl)
            a[key].set_ylabel(yl)
            a[key].grid(True, alpha=0.3)
        a["gain"].set_yscale("log")
        for key in ("noise", "objective"):
            a[key].set_xscale("log")
        a["objective"].legend(fontsize="x-small", loc="best")

    def _sync_controls(self):
        # the bias range follows breakdown, which moves with temperature
        vb = self._breakdown(self.value("temperature"))
        slider = self.controls["bias"]
        if not np.isclose(slider.max, 0.9999 * vb):
            slider.max, slider.min, slider.step = 0.9999 * vb, 0.5 * vb, vb / 2000

    def _refresh(self):
        from ..analysis.apd_optimum import optimum_gain
        from ..device.apd_receiver import bias_for_constant_gain

        if self.replaced:
            self.note(f"note: the given receiver's photodiode has no gain; showing the "
                      f"{DEMO_APD} demo instead")
        t, bias = self.value("temperature"), self.value("bias")
        rx = dataclasses.replace(self.receiver, reverse_bias=bias, temperature=t,
                                 optical_power=self.value("power"))
        vb = self._breakdown(t)
        if bias >= vb:
            self.fail(f"reverse bias = {bias:.4g} V is at or beyond the breakdown voltage "
                      f"{vb:.4g} V at {t:.0f} K; choose a bias below it",
                      parameter="reverse_bias")
        r = rx.evaluate()
        m_op = float(np.asarray(r.gain))
        objective = self.value("objective")
        opt = optimum_gain(rx, objective=objective, n_points=_N_GAIN)
        frame = opt.scan  # the optimiser's scan, sampled in gain
        g = frame["gain"].to_numpy()
        self.set_line(self.lines["gain"], frame["reverse_bias"], g)
        self.set_line(self.lines["gain_mark"], [bias], [m_op])
        self.set_line(self.lines["excess"], g, frame["excess_noise_factor"])
        self.set_line(self.lines["excess_mark"], [m_op], [float(np.asarray(r.excess_noise_factor))])
        if objective == "snr":
            y, op_value, best = frame["snr_db"], float(np.asarray(r.snr_db)), \
                10 * np.log10(opt.value)
            self.axes["objective"].set_ylabel("analog SNR [dB]")
        else:
            y, op_value, best = frame["sensitivity_dbm"], float(np.asarray(r.sensitivity_dbm)), \
                10 * np.log10(opt.value / 1e-3)
            self.axes["objective"].set_ylabel("sensitivity [dBm]")
        self.set_line(self.lines["objective"], g, y)
        self.set_line(self.lines["optimum"], [opt.gain], [best])
        self.set_line(self.lines["objective_mark"], [m_op], [op_value])
        self.lines["closed_form"].set_xdata([opt.closed_form_gain, opt.closed_form_gain])
        temps = np.linspace(_T_LOW, _T_HIGH, 6)
        try:
            v_t = bias_for_constant_gain(self.apd, m_op, temps)
            self.set_line(self.lines["compensated"], temps, v_t)
            self.set_line(self.lines["compensated_mark"], [t], [bias])
            span = f"{format_eng(v_t[0], 'V')} at -40 degC to {format_eng(v_t[-1], 'V')} at 85 degC"
        except DesignError as exc:  # a gain out of reach at some temperature
            self.set_line(self.lines["compensated"], [], [])
            span = f"not available: {exc}"
        for ax in self.axes.values():
            self.rescale(ax)
        self.optimum = opt
        what = "SNR" if objective == "snr" else "sensitivity"
        rows = [("breakdown voltage", format_eng(vb, "V")),
                ("gain M", f"{m_op:.4g}"),
                ("k_eff", f"{float(np.asarray(r.k_effective)):.3g}"),
                ("excess noise factor F", f"{float(np.asarray(r.excess_noise_factor)):.4g}"),
                ("multiplied shot noise share",
                 f"{100 * float(np.asarray(r.multiplied_shot_noise_share)):.3g} %"),
                (f"optimum gain for {what} (numeric)",
                 f"{opt.gain:.4g} at {format_eng(opt.bias, 'V')}"),
                ("optimum gain, closed form", f"{opt.closed_form_gain:.4g} "
                 f"({opt.penalty_db:.2g} dB worse)"),
                (f"bias holding M = {m_op:.3g}", span)]
        self.table.value = rows_html(rows, header=(f"at {bias:.4g} V, {t:.0f} K", "value"))
        self.note("caution: APD bias supplies run at tens to hundreds of volts; current-limit "
                  "them, mind ESD and laser eye safety, and follow local codes and licensed "
                  "practice")
        self.current = rx


def avalanche_panel(receiver=None, render=True) -> AvalanchePanel:
    """Build the avalanche-photodiode panel (default: the ``si-apd-850`` demo design).

    Parameters
    ----------
    receiver : Receiver, str or None
        A receiver on an avalanche photodiode, or the name or path of a design file;
        default None, the ``si-apd-850`` demo.
    render : bool
        Render the figure to PNG after every update; default True (False for scripts).
    """
    return AvalanchePanel(receiver, render=render)
