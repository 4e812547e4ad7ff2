"""The bias trade-off panel: every receiver figure against reverse bias, the optimiser, exports.

Numbers come from :func:`photorx.sweep`, :func:`photorx.optimize`,
:meth:`~photorx.Receiver.evaluate` and :meth:`~photorx.Receiver.budget`; files are written by
:meth:`~photorx.Budget.export` and :func:`photorx.views.report.write_report`. See
:mod:`photorx.views.widgets_base` for the common behaviour.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np

from ..analysis.optimize import optimize
from ..analysis.sweep import sweep
from ..errors import DesignError
from ..units import format_eng
from .widgets_base import Panel, _widgets, frame_html, lin_slider, log_slider, rows_html
from .widgets_device import _receiver

__all__ = ["TradeoffPanel", "tradeoff_panel"]

#: figure -> (axis label, unit, log axis)
_PLOTTED = {
    "bandwidth": ("bandwidth", "Hz", True),
    "phase_margin": ("phase margin", "deg", False),
    "input_noise_rms": ("input noise (rms)", "A", True),
    "sensitivity_dbm": ("sensitivity", "dBm", False),
    "dark_current": ("dark current", "A", True),
    "choice": ("SNR", "dB", False),  # the sixth axes shows the figure chosen in "plot"
}
#: figures that are not numbers (or are yes/no checks) cannot be plotted against bias
_NOT_PLOTTED = {"stable", "limited_by", "dominant_noise_source", "reverse_bias"}
_OBJECTIVES = ("snr_db", "sensitivity_dbm", "nep", "bandwidth", "input_noise_rms")
_FORMATS = ("csv", "md", "latex", "html", "json")


class TradeoffPanel(Panel):
    """Every figure of the whole receiver against reverse bias; the constrained optimiser;
    buttons that export the budget tables and the report into a chosen folder.

    Parameters
    ----------
    receiver : Receiver, str or None
        The design whose values start the controls, or the name of a shipped demo design or
        the path (str) of a design file; default None, the embedded demo design.
    render : bool
        Render the figure to PNG after every update; default True (False for scripts and
        timing the computation).
    export_folder : str or os.PathLike
        Start value of the export-folder control; default ``"photorx-export"``. The folder
        is created only when a file is written.
    """

    title = "Bias trade-off: the whole receiver against reverse bias"
    figsize = (10.0, 5.6)

    def __init__(self, receiver=None, render=True, export_folder="photorx-export"):
        self.receiver = _receiver(receiver)
        self._export_folder = str(export_folder)
        self._sweep_key = None
        self.frame = None
        self.optimum = None
        self.written = []
        super().__init__(render=render)

    def _build_controls(self):
        w = _widgets()
        rx = self.receiver
        bias = float(np.max(rx.reverse_bias))
        span = float(rx.max_bias) if rx.max_bias is not None else max(2 * bias, 10.0)
        bw_min = 0.7 * rx.bit_rate if rx.bit_rate is not None else 0.5 * float(
            np.max(rx.evaluate().bandwidth))
        dark_max = rx.max_dark_current if rx.max_dark_current is not None else 1e-6
        self.controls = {
            "bias": lin_slider("operating bias [V]", bias, 0.0, span, span / 200),
            "span": lin_slider("bias span [V]", span, 1.0, 200.0, 1.0),
            "points": w.IntSlider(value=21, min=5, max=101, description="points",
                                  continuous_update=False),
            "rf": log_slider("Rf [ohm]", float(rx.tia.rf), 10.0, 1e10),
            "cf": log_slider("Cf [F]", max(float(rx.tia.cf), 1e-16), 1e-16, 1e-8),
            "objective": w.Dropdown(options=_OBJECTIVES, value="snr_db",
                                    description="objective"),
            "plot": w.Dropdown(options=self._plottable(), value="snr_db",
                               description="6th plot"),
            "min_bandwidth": log_slider("min bandwidth [Hz]", bw_min, 1.0, 1e11),
            "min_phase_margin": lin_slider("min phase margin [deg]", 45.0, 0.0, 89.0, 1.0),
            "max_dark_current": log_slider("max dark current [A]", dark_max, 1e-15, 1e-3),
            "vary_rf": w.Checkbox(value=False, description="also vary Rf (x0.1 to x10)"),
            "vary_cf": w.Checkbox(value=False, description="also vary Cf (x0.1 to x10)"),
            "folder": w.Text(value=self._export_folder, description="export folder"),
            "formats": w.SelectMultiple(options=_FORMATS, value=("csv", "md", "latex"),
                                        description="formats", rows=3),
        }
        self.optimize_button = w.Button(description="optimise", button_style="info")
        self.apply_button = w.Button(description="use optimum")
        self.export_button = w.Button(description="export budget")
        self.report_button = w.Button(description="export report")
        self.optimize_button.on_click(lambda _: self.run_optimizer())
        self.apply_button.on_click(lambda _: self.apply_optimum())
        self.export_button.on_click(lambda _: self.export_budget())
        self.report_button.on_click(lambda _: self.export_report())

    @staticmethod
    def _plottable():
        from ..analysis.receiver import FIGURES

        return [name for name, (_, table, _) in FIGURES.items()
                if table != "checks" and name not in _NOT_PLOTTED] + ["bias_power"]

    def _layout_controls(self):
        w = _widgets()
        c = self.controls
        return w.VBox([
            w.HBox([c["bias"], c["span"], c["points"], c["plot"]]),
            w.HBox([c["rf"], c["cf"], c["objective"]]),
            w.HBox([c["min_bandwidth"], c["min_phase_margin"], c["max_dark_current"]]),
            w.HBox([c["vary_rf"], c["vary_cf"], self.optimize_button, self.apply_button]),
            w.HBox([c["folder"], c["formats"], self.export_button, self.report_button]),
        ])

    def _on_change(self, change):
        # export settings change no figure
        if change["owner"] in (self.controls["folder"], self.controls["formats"]):
            return
        super()._on_change(change)

    def _build_figure(self):
        axs = self.figure.subplots(2, 3, sharex=True)
        self.axes = dict(zip(_PLOTTED, axs.ravel()))
        self.limit_lines = {}
        for key, ax in self.axes.items():
            label, unit, log = _PLOTTED[key]
            (self.lines[key],) = ax.plot([], [], color="C0", marker=".", ms=3)
            self.lines[f"{key}_bias"] = ax.axvline(0.0, color="C3", lw=0.9, ls="--")
            self.lines[f"{key}_optimum"] = ax.axvline(0.0, color="C2", lw=1.2, visible=False)
            if log:
                ax.set_yscale("log")
            ax.set_ylabel(f"{label} [{unit}]")
            ax.grid(True, alpha=0.3)
        for key in ("bandwidth", "phase_margin", "dark_current"):
            self.limit_lines[key] = self.axes[key].axhline(1.0, color="0.5", lw=0.8, ls=":")
        for ax in axs[-1]:
            ax.set_xlabel("reverse bias [V]")

    # -- the design ------------------------------------------------------------------------
    def design(self, bias=None):
        """The receiver described by the controls (operating bias unless ``bias`` is given).

        Parameters
        ----------
        bias : float, array_like or None
            Reverse bias [V] of the returned design, >= 0; default None uses the
            operating-bias control.
        """
        rx = self.receiver
        tia = dataclasses.replace(rx.tia, rf=self.value("rf"), cf=self.value("cf"))
        return dataclasses.replace(rx, tia=tia, reverse_bias=self.value("bias")
                                   if bias is None else bias)

    @staticmethod
    def _label_choice(ax, column, y):
        """Label and scale of the freely chosen axes (log for positive data over a decade)."""
        from ..analysis.receiver import FIGURES

        unit, _, description = FIGURES.get(column, ("", "", column))
        ax.set_ylabel(f"{description} [{unit}]" if unit else description, fontsize="small")
        good = y[np.isfinite(y)]
        log = good.size > 1 and np.all(good > 0) and good.max() > 10.0 * good.min()
        ax.set_yscale("log" if log else "linear")

    def constraints(self):
        """The constraints of the controls, in :func:`photorx.optimize` form."""
        return {"bandwidth": (">=", self.value("min_bandwidth")),
                "phase_margin": (">=", self.value("min_phase_margin")),
                "dark_current": ("<=", self.value("max_dark_current"))}

    def _sync_controls(self):
        span = self.value("span")
        slider = self.controls["bias"]
        if slider.max != span:  # moving the end may clip the value (callers hold _updating)
            slider.max, slider.step = span, span / 200

    def _refresh(self):
        span = self.value("span")
        key = (span, self.value("points"), self.value("rf"), self.value("cf"))
        if key != self._sweep_key:
            self.frame = None
            bias = np.linspace(0.0, span, self.value("points"))
            junction = self.receiver.photodiode.junction
            if hasattr(junction, "breakdown_voltage"):
                vbr = junction.breakdown_voltage()
                if span >= vbr:
                    self.alarm(f"bias span {span:g} V reaches beyond the breakdown estimate "
                               f"{vbr:.4g} V: the sweep stops below breakdown")
                    bias = bias[bias < vbr]
            self.frame = sweep(self.design(), reverse_bias=bias)
            if self._sweep_key is not None and self.optimum is not None:
                self.optimum = None  # found for another design: run the optimiser again
                for name in self.axes:
                    self.lines[f"{name}_optimum"].set_visible(False)
            self._sweep_key = key
            self._limit_alarms = list(self.alarms)
        else:
            self.alarms.extend(self._limit_alarms)
        for name, (op, limit) in self.constraints().items():  # before autoscaling
            self.limit_lines[name].set_ydata([limit, limit])
        frame = self.frame
        v = frame["reverse_bias"].to_numpy(dtype=float)
        for name, ax in self.axes.items():
            column = self.value("plot") if name == "choice" else name
            if column not in frame.columns:
                self.fail(f"plot = {column!r} is not a figure of the sweep", parameter="plot")
            y = frame[column].to_numpy(dtype=float)
            if name == "choice":
                self._label_choice(ax, column, y)
            self.set_line(self.lines[name], v, y)
            self.rescale(ax)
        if not frame["stable"].all():
            n = int((~frame["stable"]).sum())
            self.alarm(f"unstable loop at {n} of {len(frame)} swept biases (no bandwidth there)")
        op = self.value("bias")
        for name in self.axes:
            self.lines[f"{name}_bias"].set_xdata([op, op])
        r = self.design().evaluate()
        self.result = r
        for text in r.warnings:
            self.note(f"warning: {text}")
        rows = [("reverse bias", format_eng(op, "V")),
                ("bandwidth", format_eng(r.bandwidth, "Hz") if r.stable else "unstable loop"),
                ("limited by", str(r.limited_by)),
                ("phase margin", f"{r.phase_margin:.3g} deg"),
                ("input noise (rms)", format_eng(r.input_noise_rms, "A")),
                ("NEP", format_eng(r.nep, "W/rtHz")),
                ("SNR", f"{r.snr_db:.3g} dB"),
                ("sensitivity", f"{r.sensitivity_dbm:.3g} dBm"),
                ("dark current", format_eng(r.dark_current, "A"))]
        html = rows_html(rows, header=("at the operating bias", "value"))
        if self.optimum is not None:
            o = self.optimum
            html += (f"<p><b>optimum</b> ({'feasible' if o.success else 'no feasible design'}): "
                     f"{o.objective} = {o.value:.4g}; "
                     + ", ".join(f"{k} = {format_eng(v, 'V' if k == 'reverse_bias' else '')}"
                                 for k, v in o.parameters.items()) + "</p>"
                     + frame_html(o.constraints.drop(columns=["active"])))
        self.table.value = html
        self.current = self.design()

    # -- actions -----------------------------------------------------------------------------
    def _act(self, action):
        """Run a button action; a DesignError goes to the message area."""
        try:
            return action()
        except DesignError as exc:
            self.error = str(exc)
            self._show_messages()
            return None

    def run_optimizer(self, grid_points=120):
        """Run :func:`photorx.optimize` over the bias span (and Rf, Cf when ticked).

        Returns the :class:`~photorx.analysis.optimize.OptimizationResult`, or None when a
        DesignError is shown in the message area.

        Parameters
        ----------
        grid_points : int
            Approximate size of the optimiser's coarse grid over the varied parameters
            (passed on to :func:`photorx.optimize`); default 120.
        """
        def go():
            vary = {"reverse_bias": (0.0, 0.999 * self.value("span"))}
            junction = self.receiver.photodiode.junction
            if hasattr(junction, "breakdown_voltage"):
                vary["reverse_bias"] = (0.0, min(vary["reverse_bias"][1],
                                                 0.99 * junction.breakdown_voltage()))
            if self.value("vary_rf"):
                vary["rf"] = (0.1 * self.value("rf"), 10.0 * self.value("rf"))
            if self.value("vary_cf"):
                vary["cf"] = (0.1 * self.value("cf"), 10.0 * self.value("cf"))
            self.optimum = optimize(self.design(), vary=vary, objective=self.value("objective"),
                                    constraints=self.constraints(), grid_points=grid_points,
                                    trade_points=5)
            v_opt = self.optimum.parameters["reverse_bias"]
            for name in self.axes:
                line = self.lines[f"{name}_optimum"]
                line.set_xdata([v_opt, v_opt])
                line.set_visible(True)
            self.update()
            if not self.optimum.success:
                self.alarm("no design meets every constraint; the optimum shown violates the "
                           "least")
                self._show_messages()
            return self.optimum
        return self._act(go)

    def apply_optimum(self):
        """Move the controls to the optimum found by :meth:`run_optimizer`."""
        if self.optimum is None:
            self.error = "run the optimiser first"
            self._show_messages()
            return
        values = {"bias": self.optimum.parameters["reverse_bias"]}
        for name in ("rf", "cf"):
            if name in self.optimum.parameters:
                values[name] = self.optimum.parameters[name]
        self.set(**values)

    def _folder(self):
        folder = Path(self.value("folder")).expanduser()
        folder.mkdir(parents=True, exist_ok=True)
        return folder

    def export_budget(self):
        """Write the budget tables of the current design in the chosen formats; returns paths."""
        def go():
            formats = tuple(self.value("formats")) or ("csv",)
            written = self.design().budget().export(self._folder(), formats=formats)
            self.written = [Path(p) for p in written]
            self.notes = [f"wrote {p}" for p in self.written]
            self._show_messages()
            return self.written
        return self._act(go)

    def export_report(self):
        """Write the HTML report of the current design into the folder; returns its path."""
        from .report import write_report

        def go():
            path = Path(write_report(self.design(), self._folder() / "report.html"))
            self.written = [path]
            self.notes = [f"wrote {path}"]
            self._show_messages()
            return path
        return self._act(go)


def tradeoff_panel(receiver=None, render=True, export_folder="photorx-export") -> TradeoffPanel:
    """Build the bias trade-off panel for ``receiver`` (default: the demo design).

    Parameters
    ----------
    receiver : Receiver or str, optional
        The design, or the name/path of a design file.
    render : bool
        Render the figure after each update.
    export_folder : str or path
        Default folder of the export buttons (created when writing).
    """
    return TradeoffPanel(receiver, render=render, export_folder=export_folder)
