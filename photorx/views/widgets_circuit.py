"""Panels of the amplifier loop and of the noise.

Numbers come from :class:`~photorx.Tia` (loop gain, noise gain, transimpedance,
``analyze``), :func:`~photorx.design_feedback_capacitor`, :meth:`~photorx.Receiver.noise`
(a :class:`~photorx.NoiseSpectrum`) and :meth:`~photorx.Receiver.evaluate`. The panels move
artists and format tables; see :mod:`photorx.views.widgets_base`.
"""

from __future__ import annotations

import dataclasses

import numpy as np

from ..circuit.feedback_design import design_feedback_capacitor
from ..circuit.filters import PostFilter
from ..circuit.metrics import FIGURE_UNITS
from ..errors import DesignError
from ..units import format_eng
from .widgets_base import Panel, _widgets, frame_html, lin_slider, log_slider, rows_html
from .widgets_device import _receiver

__all__ = ["LoopPanel", "NoisePanel", "loop_panel", "noise_panel"]

_TARGETS = {"Butterworth (Q = 0.707)": dict(target="butterworth"),
            "Bessel (Q = 0.577)": dict(target="bessel"),
            "critical (Q = 0.5)": dict(target="critical"),
            "phase margin 45 deg": dict(phase_margin=45.0),
            "phase margin 60 deg": dict(phase_margin=60.0),
            "phase margin 70 deg": dict(phase_margin=70.0)}
_CF_MIN = 1e-16  # [F] the slider's lowest value stands for "no feedback capacitor"


def _db(x):
    with np.errstate(divide="ignore"):
        return 20.0 * np.log10(np.abs(x))


def _step_response(tia, net, metrics):
    """Normalised photocurrent step response (t [s], v/v_final) from the package."""
    return tia.step_response(net)


def _metrics_rows(m):
    labels = {"dc_transimpedance": "DC transimpedance", "bandwidth": "-3 dB bandwidth",
              "peaking_db": "peaking", "phase_margin": "phase margin",
              "gain_margin_db": "gain margin", "crossover": "crossover frequency",
              "q": "Q of the dominant pair", "rise_time": "rise time 10-90 %",
              "overshoot": "step overshoot", "settling_time": "1 % settling time",
              "stable": "stable"}
    rows = []
    for key, label in labels.items():
        value = getattr(m, key)
        if key == "stable":
            text = "yes" if value else "NO: unstable loop"
        elif key == "overshoot":
            text = f"{100 * value:.3g} %" if np.isfinite(value) else "-"
        elif np.isfinite(value):
            text = format_eng(value, FIGURE_UNITS[key])
        else:
            text = "inf" if np.isinf(value) else "-"
        rows.append((label, text))
    return rows


class LoopPanel(Panel):
    """Bode plot of the loop gain against the open-loop gain and the noise gain, closed-loop
    response, step response and margins; controls for Rf, Cf, GBW and bias, and a button that
    designs Cf for a chosen target with :func:`~photorx.design_feedback_capacitor`.

    Parameters
    ----------
    receiver : Receiver, str or None
        The design whose values start the controls, or the name of a shipped demo design or
        the path (str) of a design file; default None, the embedded demo design.
    render : bool
        Render the figure to PNG after every update; default True (False for scripts and
        timing the computation).
    """

    title = "Amplifier loop: loop gain, noise gain, closed loop, step response"
    figsize = (10.0, 6.0)

    def __init__(self, receiver=None, render=True):
        self.receiver = _receiver(receiver)
        super().__init__(render=render)

    def _build_controls(self):
        w = _widgets()
        rx = self.receiver
        bias = float(np.max(rx.reverse_bias))
        span = float(rx.max_bias) if rx.max_bias is not None else max(2 * bias, 10.0)
        cf = max(float(rx.tia.cf), _CF_MIN)
        self.controls = {
            "rf": log_slider("Rf [ohm]", float(rx.tia.rf), 10.0, 1e10),
            "cf": log_slider("Cf [F] (lowest = none)", cf, _CF_MIN, 1e-8),
            "gbw": log_slider("amplifier GBW [Hz]", float(rx.tia.amp.gbw), 1e4, 1e11),
            "bias": lin_slider("reverse bias [V]", bias, 0.0, max(span, 2 * bias, 1.0),
                               max(span, 1.0) / 200),
            "target": w.Dropdown(options=list(_TARGETS), value="Butterworth (Q = 0.707)",
                                 description="Cf target"),
        }
        self.design_button = w.Button(description="design Cf", button_style="info",
                                      tooltip="choose Cf for the target on the full model")
        self.design_button.on_click(lambda _: self.design_cf())

    def _layout_controls(self):
        w = _widgets()
        c = self.controls
        return w.VBox([w.HBox([c["rf"], c["cf"], c["gbw"]]),
                       w.HBox([c["bias"], c["target"], self.design_button])])

    def _build_figure(self):
        axs = self.figure.subplots(2, 2)
        self.axes = dict(zip(("magnitude", "closed_loop", "phase", "step"), axs.ravel()))
        a = self.axes
        (self.lines["open_loop"],) = a["magnitude"].semilogx([], [], color="C7",
                                                             label="open loop |A|")
        (self.lines["noise_gain"],) = a["magnitude"].semilogx([], [], color="C1", ls="--",
                                                              label="noise gain |1/beta|")
        (self.lines["loop_gain"],) = a["magnitude"].semilogx([], [], color="C0",
                                                             label="loop gain |T|")
        (self.lines["crossover"],) = a["magnitude"].plot([], [], "o", color="C3")
        (self.lines["loop_phase"],) = a["phase"].semilogx([], [], color="C0",
                                                         label="phase of T")
        (self.lines["phase_mark"],) = a["phase"].plot([], [], "o", color="C3")
        (self.lines["closed_loop"],) = a["closed_loop"].semilogx([], [], color="C2")
        (self.lines["bandwidth_mark"],) = a["closed_loop"].plot([], [], "o", color="C3")
        (self.lines["step"],) = a["step"].plot([], [], color="C2")
        a["magnitude"].axhline(0.0, color="0.6", lw=0.8)
        a["phase"].axhline(-180.0, color="0.6", lw=0.8, ls="--")
        a["closed_loop"].axhline(-3.0, color="0.6", lw=0.8, ls=":")
        for level, style in ((1.0, "--"), (0.1, ":"), (0.9, ":")):
            a["step"].axhline(level, color="0.6", lw=0.8, ls=style)
        labels = {"magnitude": ("frequency [Hz]", "gain [dB]"),
                  "phase": ("frequency [Hz]", "phase of T [deg]"),
                  "closed_loop": ("frequency [Hz]", "|Zt| / Zt(0) [dB]"),
                  "step": ("time [s]", "step response (normalised)")}
        for key, (xl, yl) in labels.items():
            a[key].set_xlabel(xl)
            a[key].set_ylabel(yl)
            a[key].grid(True, alpha=0.3)
        a["magnitude"].legend(fontsize="x-small", loc="lower left")

    def design(self):
        """(receiver, tia, equivalent circuit) of the current control values."""
        rx = self.receiver
        amp = dataclasses.replace(rx.tia.amp, gbw=self.value("gbw"))
        cf = self.value("cf")
        tia = dataclasses.replace(rx.tia, amp=amp, rf=self.value("rf"),
                                  cf=0.0 if cf <= _CF_MIN * 1.0001 else cf)
        rx2 = dataclasses.replace(rx, tia=tia, reverse_bias=self.value("bias"))
        return rx2, tia, rx2.equivalent_circuit()

    def design_cf(self):
        """Design Cf for the chosen target and move the Cf slider there; returns Cf [F] or None."""
        try:
            _, tia, net = self.design()
            result = design_feedback_capacitor(tia.amp, tia.rf, net,
                                               **_TARGETS[self.value("target")])
        except DesignError as exc:
            self.error = f"Cf design failed: {exc}"
            self.notes, self.alarms = [], []
            self._show_messages()
            return None
        slider = self.controls["cf"]
        cf = float(np.clip(max(result.cf, _CF_MIN), 10 ** slider.min, 10 ** slider.max))
        self._design_note = (f"designed Cf = {format_eng(result.cf, 'F')} for "
                             f"{self.value('target')} (two-pole closed form "
                             f"{format_eng(result.closed_form_cf, 'F')})"
                             + (f"; {result.note}" if result.note else ""))
        if slider.value == cf:
            self.update()
        else:
            slider.value = cf  # triggers update()
        return result.cf

    def _refresh(self):
        rx, tia, net = self.design()
        note = getattr(self, "_design_note", "")
        if note:
            self.note(note)
            self._design_note = ""
        gbw = tia.amp.gbw
        f = np.geomspace(gbw * 1e-7, gbw * 30.0, 320)
        t = tia.loop_gain(f, net)
        a = tia.amp.gain(f)
        ng = tia.noise_gain(f, net)
        zt = tia.transimpedance(f, net)
        m = tia.analyze(net)
        self.metrics = m
        self.set_line(self.lines["open_loop"], f, _db(a))
        self.set_line(self.lines["noise_gain"], f, _db(ng))
        self.set_line(self.lines["loop_gain"], f, _db(t))
        self.set_line(self.lines["loop_phase"], f, np.degrees(np.unwrap(np.angle(t))))
        if np.isfinite(m.crossover):
            self.set_line(self.lines["crossover"], [m.crossover], [0.0])
            self.set_line(self.lines["phase_mark"], [m.crossover], [m.phase_margin - 180.0])
        else:
            self.set_line(self.lines["crossover"], [], [])
            self.set_line(self.lines["phase_mark"], [], [])
        zt0 = m.dc_transimpedance
        self.set_line(self.lines["closed_loop"], f, _db(zt / zt0) if m.stable else np.nan * f)
        if m.stable:
            self.set_line(self.lines["bandwidth_mark"], [m.bandwidth], [-3.0])
            t_step, v_step = _step_response(tia, net, m)
            self.set_line(self.lines["step"], t_step, v_step)
        else:
            self.alarm(f"unstable loop: a closed-loop pole lies in the right half plane "
                       f"(phase margin {m.phase_margin:.3g} deg); no bandwidth or step response. "
                       "Raise Cf, lower Rf or choose a faster amplifier.")
            self.set_line(self.lines["bandwidth_mark"], [], [])
            self.set_line(self.lines["step"], [], [])
        if m.stable and m.phase_margin < 45.0:
            self.note(f"warning: phase margin {m.phase_margin:.3g} deg is low (peaking "
                      f"{m.peaking_db:.3g} dB)")
        for ax in self.axes.values():
            self.rescale(ax)
        if m.stable:
            lo = max(-60.0, float(np.nanmin(_db(zt / zt0))))
            self.axes["closed_loop"].set_ylim(lo - 3.0, max(3.0, m.peaking_db + 3.0))
        self.table.value = rows_html(_metrics_rows(m), header=("loop figure", "value"))
        self.current = rx


_FILTERS = ("none", "bessel", "butterworth", "brickwall")


class NoisePanel(Panel):
    """Stacked noise density by source, the noise budget table, NEP and SNR, post filter.

    Parameters
    ----------
    receiver : Receiver, str or None
        The design whose values start the controls, or the name of a shipped demo design or
        the path (str) of a design file; default None, the embedded demo design.
    render : bool
        Render the figure to PNG after every update; default True (False for scripts and
        timing the computation).
    """

    title = "Noise: density by source, budget, NEP and SNR"
    figsize = (9.0, 4.2)

    def __init__(self, receiver=None, render=True):
        self.receiver = _receiver(receiver)
        self._layers = {}
        super().__init__(render=render)

    def _build_controls(self):
        w = _widgets()
        rx = self.receiver
        pf = rx.post_filter
        bias = float(np.max(rx.reverse_bias))
        span = float(rx.max_bias) if rx.max_bias is not None else max(2 * bias, 10.0)
        cutoff = pf.cutoff if pf is not None else 0.7 * float(rx.tia.amp.gbw) * 1e-2
        self.controls = {
            "bias": lin_slider("reverse bias [V]", bias, 0.0, max(span, 1.0),
                               max(span, 1.0) / 200),
            "rf": log_slider("Rf [ohm]", float(rx.tia.rf), 10.0, 1e10),
            "power": log_slider("optical power [W]", max(float(np.max(rx.optical_power)), 1e-15),
                                1e-15, 1e-1),
            "filter": w.Dropdown(options=_FILTERS, value=pf.kind if pf is not None else "none",
                                 description="post filter"),
            "order": w.IntSlider(value=pf.order if pf is not None else 4, min=1, max=6,
                                 description="order", continuous_update=False),
            "cutoff": log_slider("cutoff [Hz]", cutoff, 1e-1, 1e11),
            "referred": w.Dropdown(options=("output", "input"), value="output",
                                   description="referred to"),
            "log_y": w.Checkbox(value=False, description="log scale"),
        }

    def _build_figure(self):
        ax = self.figure.subplots(1, 1)
        self.axes = {"noise": ax}
        (self.lines["total"],) = ax.plot([], [], color="k", lw=0.8, label="total")
        ax.set_xscale("log")
        ax.set_xlabel("frequency [Hz]")
        ax.grid(True, alpha=0.3)

    def design(self):
        """The receiver described by the controls."""
        rx = self.receiver
        kind = self.value("filter")
        pf = None if kind == "none" else PostFilter(kind, self.value("order"),
                                                    self.value("cutoff"))
        self.controls["order"].disabled = kind in ("none", "brickwall")
        self.controls["cutoff"].disabled = kind == "none"
        tia = dataclasses.replace(rx.tia, rf=self.value("rf"))
        return dataclasses.replace(rx, tia=tia, reverse_bias=self.value("bias"),
                                   optical_power=self.value("power"), post_filter=pf)

    def _layer(self, key, label, index):
        from matplotlib.collections import PolyCollection

        if key not in self._layers:
            poly = PolyCollection([np.zeros((0, 2))], facecolor=f"C{index % 10}", alpha=0.8,
                                  edgecolor="none", label=label)
            self.axes["noise"].add_collection(poly)
            self._layers[key] = poly
        return self._layers[key]

    def _refresh(self):
        from ..circuit.noise import SOURCE_LABELS

        rx = self.design()
        ns = rx.noise()
        enbw = ns.enbw()
        lo = max(rx.noise_band_low, enbw * 1e-5)
        f = np.geomspace(lo, 100.0 * enbw, 300)
        referred = self.value("referred")
        dens = ns.by_source(f, referred)
        ax = self.axes["noise"]
        log_y = self.value("log_y")
        ax.set_yscale("log" if log_y else "linear")
        total = sum(np.asarray(v) ** 2 for v in dens.values())
        floor = 1e-3 * float(np.min(total[total > 0])) if log_y and np.any(total > 0) else 0.0
        below = np.full(f.shape, floor)
        shown = []
        for index, (key, d) in enumerate(dens.items()):
            layer = self._layer(key, SOURCE_LABELS.get(key, key), index)
            power = np.asarray(d, dtype=float) ** 2
            if not np.any(power > 0):
                layer.set_visible(False)
                continue
            above = below + power
            layer.set_verts([np.column_stack([np.r_[f, f[::-1]], np.r_[above, below[::-1]]])])
            layer.set_visible(True)
            shown.append(layer)
            below = above
        for key, layer in self._layers.items():
            if key not in dens:
                layer.set_visible(False)
        self.set_line(self.lines["total"], f, total)
        ax.set_ylabel("output noise PSD [V^2/Hz]" if referred == "output"
                      else "input noise PSD [A^2/Hz]")
        ax.set_xlim(f[0], f[-1])
        ax.set_ylim(floor if log_y else 0.0, 1.15 * float(np.max(total)))
        ax.legend(handles=shown + [self.lines["total"]], fontsize="x-small", loc="upper left")
        budget = ns.budget()
        r = rx.evaluate()
        self.budget_frame = budget
        self.result = r
        for w in r.warnings:
            self.note(f"warning: {w}")
        if not bool(np.all(r.stable)):
            self.alarm("unstable loop: the noise figures below have no meaning; raise Cf or "
                       "lower Rf (see the amplifier-loop panel)")
        rows = [("input noise (rms)", format_eng(r.input_noise_rms, "A")),
                ("output noise (rms)", format_eng(r.output_noise_rms, "V")),
                ("noise bandwidth", format_eng(r.noise_bandwidth, "Hz")),
                ("NEP", format_eng(r.nep, "W/rtHz")),
                ("SNR", f"{r.snr_db:.3g} dB"),
                ("sensitivity", f"{r.sensitivity_dbm:.3g} dBm"),
                ("dominant source", SOURCE_LABELS.get(str(r.dominant_noise_source),
                                                      str(r.dominant_noise_source)))]
        self.table.value = (rows_html(rows, header=("noise figure", "value"))
                            + frame_html(budget.drop(columns=["dominant"])))
        self.current = rx


def loop_panel(receiver=None, render=True) -> LoopPanel:
    """Build the amplifier-loop panel for ``receiver`` (default: the demo design).

    Parameters
    ----------
    receiver : Receiver, str or None
        The design whose values start the controls, or the name of a shipped demo design or
        the path (str) of a design file; default None, the embedded demo design.
    render : bool
        Render the figure to PNG after every update; default True (False for scripts and
        timing the computation).
    """
    return LoopPanel(receiver, render=render)


def noise_panel(receiver=None, render=True) -> NoisePanel:
    """Build the noise panel for ``receiver`` (default: the demo design).

    Parameters
    ----------
    receiver : Receiver, str or None
        The design whose values start the controls, or the name of a shipped demo design or
        the path (str) of a design file; default None, the embedded demo design.
    render : bool
        Render the figure to PNG after every update; default True (False for scripts and
        timing the computation).
    """
    return NoisePanel(receiver, render=render)
