"""Panels of the device stage: the junction and the photodiode.

Every number comes from :mod:`photorx.device` (junction classes, :class:`~photorx.Photodiode`,
:func:`~photorx.fit_parametric_junction`); the panels only convert display units to SI and
move artists. See :mod:`photorx.views.widgets_base` for the common behaviour.
"""

from __future__ import annotations

import dataclasses

import numpy as np

from ..device.junction import (FORWARD_LIMIT, AbruptJunction, LinearlyGradedJunction,
                               PinJunction, fit_parametric_junction)
from ..device.materials import known_materials, material
from ..device.photodiode import Photodiode
from ..units import format_eng, mm, nm, per_cm3, per_cm4, um
from .widgets_base import Panel, _widgets, lin_slider, log_slider, rows_html

__all__ = ["JunctionPanel", "PhotodiodePanel", "junction_panel", "photodiode_panel"]

_KINDS = ("abrupt", "linearly graded", "p-i-n")
_N_BIAS = 161


def _receiver(receiver):
    if receiver is None:
        from ..designfile import demo_receiver

        return demo_receiver()
    if isinstance(receiver, str):
        from ..designfile import load_design

        return load_design(receiver)
    return receiver


def _design_junction_values(junction):
    """Start values of the junction controls from a design's junction (display units)."""
    v = dict(kind="p-i-n", material="Si", na=1e19, nd=1e15, gradient=1e22, i_thickness=10.0,
             i_doping=1e13, area=1.0, temperature=300.0)
    if hasattr(junction, "material"):
        v["material"] = junction.material.name
        v["area"] = float(np.max(junction.area)) / mm**2
        v["temperature"] = float(np.max(junction.temperature))
    if isinstance(junction, AbruptJunction):
        v.update(kind="abrupt", na=junction.na / per_cm3, nd=junction.nd / per_cm3)
    elif isinstance(junction, LinearlyGradedJunction):
        v.update(kind="linearly graded", gradient=junction.gradient / per_cm4)
    elif isinstance(junction, PinJunction):
        v.update(kind="p-i-n", na=junction.p_doping / per_cm3, nd=junction.n_doping / per_cm3,
                 i_thickness=junction.i_thickness / um, i_doping=junction.i_doping / per_cm3)
    return v


class JunctionPanel(Panel):
    """Depletion width, charge and capacitance against bias for the three junction types.

    Controls: junction type, material, dopings, gradient, i-layer thickness and doping,
    area, temperature, bias span, minority-carrier lifetime (diffusion capacitance in
    forward bias) and the parametric fit Cj0/(1 + V_R/Vj)^m.

    Parameters
    ----------
    receiver : Receiver, str or None
        The design whose values start the controls, or the name of a shipped demo design or
        the path (str) of a design file; default None, the embedded demo design.
    render : bool
        Render the figure to PNG after every update; default True (False for scripts and
        timing the computation).
    """

    title = "Junction: depletion width, charge and capacitance against bias"
    figsize = (10.0, 3.6)

    def __init__(self, receiver=None, render=True):
        self.receiver = _receiver(receiver)
        self._start = _design_junction_values(self.receiver.photodiode.junction)
        super().__init__(render=render)

    def _build_controls(self):
        w = _widgets()
        s = self._start
        self.controls = {
            "kind": w.Dropdown(options=_KINDS, value=s["kind"], description="junction"),
            "material": w.Dropdown(options=known_materials(), value=s["material"],
                                   description="material"),
            "na": log_slider("N_A, p side [cm^-3]", s["na"], 1e14, 1e20),
            "nd": log_slider("N_D, n side [cm^-3]", s["nd"], 1e13, 1e20),
            "gradient": log_slider("gradient [cm^-4]", s["gradient"], 1e18, 1e25),
            "i_thickness": log_slider("i layer [um]", s["i_thickness"], 0.1, 200.0),
            "i_doping": log_slider("i doping [cm^-3]", s["i_doping"], 1e11, 1e17),
            "area": log_slider("area [mm^2]", s["area"], 1e-5, 100.0),
            "temperature": lin_slider("temperature [K]", s["temperature"], 200.0, 450.0, 5.0),
            "max_bias": lin_slider("max reverse bias [V]", 10.0, 1.0, 500.0, 1.0),
            "lifetime": log_slider("lifetime [s]", 1e-6, 1e-10, 1e-3),
            "fit": w.Checkbox(value=True, description="fit Cj0/(1+V/Vj)^m"),
        }

    def _build_figure(self):
        ax_w, ax_q, ax_c = self.figure.subplots(1, 3)
        self.axes = {"width": ax_w, "charge": ax_q, "capacitance": ax_c}
        (self.lines["width"],) = ax_w.plot([], [], color="C0")
        (self.lines["charge"],) = ax_q.plot([], [], color="C0")
        (self.lines["c_junction"],) = ax_c.plot([], [], color="C0", label="junction")
        (self.lines["c_diffusion"],) = ax_c.plot([], [], color="C2", ls="--",
                                                 label="diffusion (forward)")
        (self.lines["c_total"],) = ax_c.plot([], [], color="C3", lw=0.8, label="total")
        (self.lines["c_fit"],) = ax_c.plot([], [], color="k", ls=":", label="parametric fit")
        ax_c.set_yscale("log")
        for ax, label in ((ax_w, "depletion width [um]"), (ax_q, "depletion charge [C]"),
                          (ax_c, "capacitance [F]")):
            ax.set_xlabel("reverse bias [V]")
            ax.set_ylabel(label)
            ax.grid(True, alpha=0.3)
            ax.axvline(0.0, color="0.7", lw=0.8)
        ax_c.legend(fontsize="x-small", loc="upper right")

    def _layout_controls(self):
        w = _widgets()
        c = self.controls
        return w.VBox([w.HBox([c["kind"], c["material"], c["fit"]]),
                       w.HBox([c["na"], c["nd"], c["gradient"]]),
                       w.HBox([c["i_thickness"], c["i_doping"], c["area"]]),
                       w.HBox([c["temperature"], c["max_bias"], c["lifetime"]])])

    def junction(self):
        """The junction described by the controls (SI), built by :mod:`photorx.device`."""
        v = self.value
        mat = material(v("material"))
        common = dict(area=v("area") * mm**2, temperature=v("temperature"))
        kind = v("kind")
        if kind == "abrupt":
            return AbruptJunction(mat, na=v("na") * per_cm3, nd=v("nd") * per_cm3, **common)
        if kind == "linearly graded":
            return LinearlyGradedJunction(mat, gradient=v("gradient") * per_cm4, **common)
        return PinJunction(mat, i_thickness=v("i_thickness") * um,
                           i_doping=v("i_doping") * per_cm3, p_doping=v("na") * per_cm3,
                           n_doping=v("nd") * per_cm3, **common)

    def _refresh(self):
        kind = self.value("kind")
        for name in ("na", "nd"):
            self.controls[name].disabled = kind == "linearly graded"
        self.controls["gradient"].disabled = kind != "linearly graded"
        for name in ("i_thickness", "i_doping"):
            self.controls[name].disabled = kind != "p-i-n"
        j = self.junction()
        vbi = j.built_in_potential()
        vbr = j.breakdown_voltage()
        top = self.value("max_bias")
        if top >= vbr:
            self.note(f"warning: the bias span reaches {top:g} V, beyond the breakdown estimate "
                      f"{vbr:.4g} V of this junction; curves stop just below breakdown")
            top = 0.999 * vbr
        low = -0.95 * FORWARD_LIMIT * vbi
        v = np.linspace(low, top, _N_BIAS)
        width = j.depletion_width(v)
        charge = j.charge(v)
        cj = j.capacitance(v)
        # forward bias: the photodiode model's diffusion capacitance of the forward current
        pd_ = Photodiode(junction=j, lifetime=self.value("lifetime"), package_capacitance=0.0,
                         series_resistance=0.0)
        fwd = v < 0
        c_total = pd_.capacitance(v)
        c_diff = np.where(fwd, c_total - cj, np.nan)
        self.set_line(self.lines["width"], v, width / um)
        self.set_line(self.lines["charge"], v, charge)
        self.set_line(self.lines["c_junction"], v, cj)
        floor = 1e-3 * np.min(cj)  # keep the log axis on the scale of the junction
        self.set_line(self.lines["c_diffusion"], v[fwd],
                      np.where(c_diff[fwd] > floor, c_diff[fwd], np.nan))
        self.set_line(self.lines["c_total"], v, c_total)
        rows = [("built-in potential", format_eng(vbi, "V")),
                ("breakdown (estimate)", format_eng(vbr, "V")),
                ("C at 0 V", format_eng(j.capacitance(0.0), "F")),
                (f"C at {top:.3g} V", format_eng(cj[-1], "F")),
                (f"W at {top:.3g} V", format_eng(width[-1], "m")),
                (f"peak field at {top:.3g} V", format_eng(j.peak_field(top), "V/m"))]
        if isinstance(j, PinJunction):
            rows.insert(2, ("punch-through", format_eng(j.punch_through_voltage(), "V")))
        if self.value("fit"):
            fit_top = max(top, 1.0)
            fitted, resid = fit_parametric_junction(j, bias_range=(0.0, fit_top))
            self.set_line(self.lines["c_fit"], v, fitted.capacitance(v))
            rows += [("fit Cj0", format_eng(fitted.cj0, "F")),
                     ("fit Vj", format_eng(fitted.vj, "V")),
                     ("fit m", f"{fitted.m:.4g}"), ("fit rms error", f"{100 * resid:.3g} %")]
            self.fitted = fitted
        else:
            self.set_line(self.lines["c_fit"], [], [])
            self.fitted = None
        for ax in self.axes.values():
            self.rescale(ax)
        self.table.value = rows_html(rows)
        self.current = j


class PhotodiodePanel(Panel):
    """Quantum efficiency and responsivity, speed and dark current of the design's photodiode.

    Controls: operating reverse bias, wavelength, temperature, load resistance of the RC
    limit and the bias span.

    Parameters
    ----------
    receiver : Receiver, str or None
        The design whose values start the controls, or the name of a shipped demo design or
        the path (str) of a design file; default None, the embedded demo design.
    render : bool
        Render the figure to PNG after every update; default True (False for scripts and
        timing the computation).
    """

    title = "Photodiode: quantum efficiency, speed and dark current"
    figsize = (10.0, 6.4)

    def __init__(self, receiver=None, render=True):
        self.receiver = _receiver(receiver)
        self.photodiode = self.receiver.photodiode
        super().__init__(render=render)

    def _wavelength_span(self, temperature=300.0):
        """Wavelengths [nm] where the absorption table, shifted with the band gap, applies."""
        from ..constants import c, h, q
        from ..device import optics

        mat = self.photodiode.material
        if mat is None:
            table = self.photodiode.given_responsivity
            if isinstance(table, tuple):
                return table[0][0] / nm, table[0][-1] / nm
            wl = float(np.max(self.receiver.wavelength)) / nm
            return 0.5 * wl, 1.5 * wl
        table_wl = optics.absorption_table(mat.name)[0]
        lo, hi = float(table_wl[0]), float(table_wl[-1])
        # the table moves with the gap (optics.interpolate_absorption): a hotter, narrower
        # gap moves its short-wavelength end up; beyond the long end alpha is 0 anyway
        shift = mat.band_gap(temperature) - mat.band_gap(300.0)
        if shift < 0:
            hc = h * c / q  # [eV m]
            lo = max(lo, hc / (hc / lo + shift) * (1 + 1e-9))
        return lo / nm, hi / nm

    def _build_controls(self):
        rx = self.receiver
        lo, hi = self._wavelength_span()
        bias = float(np.max(rx.reverse_bias))
        span = float(rx.max_bias) if rx.max_bias is not None else max(2 * bias, 10.0)
        wl = float(np.clip(float(np.max(rx.wavelength)) / nm, lo, hi))
        self.controls = {
            "bias": lin_slider("reverse bias [V]", bias, 0.0, span, span / 200),
            "wavelength": lin_slider("wavelength [nm]", wl, lo, hi, 5.0),
            "temperature": lin_slider("temperature [K]", float(np.max(rx.temperature)), 220.0,
                                      420.0, 5.0),
            "load": log_slider("load for RC limit [ohm]", 50.0, 1.0, 1e5),
            "max_bias": lin_slider("bias span [V]", span, 1.0, 200.0, 1.0),
        }

    def _build_figure(self):
        axs = self.figure.subplots(2, 3)
        names = ("qe", "responsivity", "capacitance", "speed", "dark_bias", "dark_temperature")
        self.axes = dict(zip(names, axs.ravel()))
        a = self.axes
        (self.lines["qe_zero"],) = a["qe"].plot([], [], color="C0", ls="--", label="0 V")
        (self.lines["qe_bias"],) = a["qe"].plot([], [], color="C0", label="at bias")
        (self.lines["qe_mark"],) = a["qe"].plot([], [], "o", color="C3")
        (self.lines["responsivity"],) = a["responsivity"].plot([], [], color="C1")
        (self.lines["responsivity_mark"],) = a["responsivity"].plot([], [], "o", color="C3")
        (self.lines["capacitance"],) = a["capacitance"].plot([], [], color="C0")
        (self.lines["capacitance_mark"],) = a["capacitance"].plot([], [], "o", color="C3")
        (self.lines["transit"],) = a["speed"].plot([], [], color="C0", label="transit")
        (self.lines["rc"],) = a["speed"].plot([], [], color="C1", label="RC (load)")
        (self.lines["combined"],) = a["speed"].plot([], [], color="k", lw=0.8, label="combined")
        for key, color in (("dark_total", "k"), ("dark_diffusion", "C0"),
                           ("dark_generation", "C1"), ("dark_leakage", "C2")):
            (self.lines[key],) = a["dark_bias"].plot([], [], color=color,
                                                     label=key.split("_")[1])
        (self.lines["dark_temperature"],) = a["dark_temperature"].plot([], [], color="k")
        (self.lines["dark_temperature_mark"],) = a["dark_temperature"].plot([], [], "o",
                                                                            color="C3")
        labels = {"qe": ("wavelength [nm]", "quantum efficiency"),
                  "responsivity": ("reverse bias [V]", "responsivity [A/W]"),
                  "capacitance": ("reverse bias [V]", "capacitance [F]"),
                  "speed": ("reverse bias [V]", "bandwidth [Hz]"),
                  "dark_bias": ("reverse bias [V]", "dark current [A]"),
                  "dark_temperature": ("temperature [K]", "dark current at bias [A]")}
        for key, (xl, yl) in labels.items():
            a[key].set_xlabel(xl)
            a[key].set_ylabel(yl)
            a[key].grid(True, alpha=0.3)
        for key in ("speed", "dark_bias", "dark_temperature"):
            a[key].set_yscale("log")
        for key in ("qe", "speed", "dark_bias"):
            a[key].legend(fontsize="x-small", loc="best")

    def _sync_controls(self):
        span = self.value("max_bias")
        slider = self.controls["bias"]
        if slider.max != span:  # moving the end may clip the value (callers hold _updating)
            slider.max, slider.step = span, span / 200

    def _refresh(self):
        pd0 = self.photodiode
        temp = self.value("temperature")
        physical_t = pd0.material is not None and pd0.reference_dark_current is None \
            and pd0.zero_bias_resistance is None
        pd_ = pd0.at_temperature(temp) if physical_t else pd0
        if not physical_t:
            self.note("note: this photodiode is described by datasheet values; the temperature "
                      "control does not apply to it")
        span = self.value("max_bias")
        bias = self.value("bias")
        wl = self.value("wavelength") * nm
        junction = pd_.junction
        if hasattr(junction, "breakdown_voltage"):
            vbr = junction.breakdown_voltage()
            if bias >= vbr:
                self.fail(f"reverse bias = {bias:g} V is beyond the breakdown estimate "
                          f"{vbr:.4g} V of this photodiode; choose a bias below it",
                          parameter="reverse_bias")
            if span >= vbr:
                self.note(f"warning: bias span cut at the breakdown estimate {vbr:.4g} V")
                span = 0.999 * vbr
        v = np.linspace(0.0, max(span, bias), _N_BIAS)
        lo, hi = self._wavelength_span(temp)
        wls = np.linspace(lo, hi, 181) * nm
        self.set_line(self.lines["qe_zero"], wls / nm, pd_.quantum_efficiency(wls, 0.0))
        self.set_line(self.lines["qe_bias"], wls / nm, pd_.quantum_efficiency(wls, bias))
        self.set_line(self.lines["qe_mark"], [wl / nm], [pd_.quantum_efficiency(wl, bias)])
        r_v = pd_.responsivity(wl, v)
        r_op = pd_.responsivity(wl, bias)
        self.set_line(self.lines["responsivity"], v, r_v)
        self.set_line(self.lines["responsivity_mark"], [bias], [r_op])
        c_v = pd_.capacitance(v)
        self.set_line(self.lines["capacitance"], v, c_v)
        self.set_line(self.lines["capacitance_mark"], [bias], [pd_.capacitance(bias)])
        load = self.value("load")
        f_t = np.broadcast_to(pd_.transit_bandwidth(v, wl), v.shape)
        f_rc = pd_.rc_bandwidth(v, load)
        f_c = pd_.bandwidth(v, load, wl)
        self.set_line(self.lines["transit"], v, f_t)
        self.set_line(self.lines["rc"], v, f_rc)
        self.set_line(self.lines["combined"], v, f_c)
        parts = pd_.dark_current_components(v)
        total = pd_.dark_current(v)
        self.set_line(self.lines["dark_total"], v, np.where(total > 0, total, np.nan))
        for key in ("diffusion", "generation", "leakage"):
            y = np.broadcast_to(np.asarray(parts[key], dtype=float), v.shape)
            self.set_line(self.lines[f"dark_{key}"], v, np.where(y > 0, y, np.nan))
        temps = np.linspace(self.controls["temperature"].min, self.controls["temperature"].max,
                            41)
        if physical_t:
            dark_t = pd0.at_temperature(temps).dark_current(bias)
            self.set_line(self.lines["dark_temperature"], temps, np.where(dark_t > 0, dark_t,
                                                                          np.nan))
        else:
            self.set_line(self.lines["dark_temperature"], [], [])
        dark_op = pd_.dark_current(bias)
        self.set_line(self.lines["dark_temperature_mark"], [temp], [dark_op if dark_op > 0
                                                                    else np.nan])
        for ax in self.axes.values():
            self.rescale(ax)
        rows = [("responsivity", format_eng(r_op, "A/W")),
                ("quantum efficiency", f"{100 * pd_.quantum_efficiency(wl, bias):.3g} %"),
                ("capacitance", format_eng(pd_.capacitance(bias), "F")),
                ("transit bandwidth", format_eng(float(pd_.transit_bandwidth(bias, wl)), "Hz")),
                ("RC bandwidth (load)", format_eng(pd_.rc_bandwidth(bias, load), "Hz")),
                ("dark current", format_eng(dark_op, "A")),
                ("shunt resistance", format_eng(pd_.shunt_resistance(bias), "ohm"))]
        self.table.value = rows_html(rows, header=(f"at {bias:.3g} V, {wl / nm:.0f} nm, "
                                                   f"{temp:.0f} K", "value"))
        self.current = dataclasses.replace(self.receiver, reverse_bias=bias, wavelength=wl,
                                           temperature=temp)


def junction_panel(receiver=None, render=True) -> JunctionPanel:
    """Build the junction panel; start values from ``receiver``'s junction (default: demo design).

    Parameters
    ----------
    receiver : Receiver or str, optional
        A design (or the name/path of a design file); default the embedded demo.
    render : bool
        Render the figure to PNG after each update (turn off for timing the computation).
    """
    return JunctionPanel(receiver, render=render)


def photodiode_panel(receiver=None, render=True) -> PhotodiodePanel:
    """Build the photodiode panel for ``receiver``'s photodiode (default: the demo design).

    Parameters
    ----------
    receiver : Receiver, str or None
        The design whose values start the controls, or the name of a shipped demo design or
        the path (str) of a design file; default None, the embedded demo design.
    render : bool
        Render the figure to PNG after every update; default True (False for scripts and
        timing the computation).
    """
    return PhotodiodePanel(receiver, render=render)
