"""The closed-forms panel: sympy derivations rendered, with numeric checks beside them.

Each derivation of :mod:`photorx.symbolic` is rendered from its own steps and results
(LaTeX through MathJax in an ``ipywidgets.HTMLMath``). Beside it, its closed forms are
evaluated with :meth:`~photorx.symbolic.Derivation.lambdify` at the demo design's values and
compared with photorx's numeric engine (junction classes, :class:`~photorx.Tia`,
:class:`~photorx.NoiseSpectrum`, :meth:`~photorx.Receiver.evaluate`). The panel computes
nothing itself: both columns come from the package, the panel takes their ratio.
"""

from __future__ import annotations

import dataclasses
import html

import numpy as np
import pandas as pd

from ..units import format_eng, per_cm3, per_cm4, um
from .widgets_base import Panel, _widgets, frame_html, lin_slider
from .widgets_device import _receiver

__all__ = ["ClosedFormsPanel", "closed_forms_panel", "numeric_checks", "derivation_html",
           "DERIVATIONS"]

#: label shown in the panel -> function name in photorx.symbolic
DERIVATIONS = {
    "abrupt junction": "abrupt_junction",
    "linearly graded junction": "linearly_graded_junction",
    "p-i-n junction": "pin_junction",
    "diffusion capacitance": "diffusion_capacitance",
    "TIA nodal analysis": "tia_nodal_analysis",
    "TIA, single-pole amplifier": "tia_single_pole",
    "TIA, two-pole amplifier": "tia_two_pole",
    "TIA, second-order response": "tia_second_order",
    "feedback capacitor": "tia_feedback_capacitor",
    "phase margin": "tia_phase_margin",
    "input-referred noise": "tia_input_noise",
    "noise-equivalent power": "nep",
}


def _derivation(name):
    from .. import symbolic

    return getattr(symbolic, name)()


def derivation_html(d) -> str:
    """HTML (with ``$$...$$`` LaTeX for MathJax) of a :class:`~photorx.symbolic.Derivation`.

    Parameters
    ----------
    d : photorx.symbolic.Derivation
        The derivation; its title, steps, results, assumptions and references are shown
        (text escaped).
    """
    import sympy as sp

    def text(t):
        return html.escape(str(t))

    out = [f"<h4>{text(d.title)}</h4>", "<ol>"]
    for step in d.steps:
        out.append(f"<li>{text(step.description)}<br>$${html.escape(step.to_latex())}$$</li>")
    out.append("</ol><p><b>Results</b></p><ul>")
    for name, eq in d.results.items():
        out.append(f"<li>{text(name)}: $${html.escape(sp.latex(eq))}$$</li>")
    out.append("</ul>")
    if d.assumptions:
        out.append("<p><b>Assumptions</b></p><ul>"
                   + "".join(f"<li>{text(a)}</li>" for a in d.assumptions) + "</ul>")
    if d.references:
        out.append("<p><b>References</b></p><ul>"
                   + "".join(f"<li>{text(r)}</li>" for r in d.references) + "</ul>")
    return "".join(out)


# ------------------------------------------------------------------------------------------
# numeric checks: (quantity, unit, closed form, engine) at the design's values
# ------------------------------------------------------------------------------------------
def _junctions(rx):
    from ..device.junction import AbruptJunction, LinearlyGradedJunction, PinJunction
    from ..device.materials import material

    j = rx.photodiode_at_temperature().junction
    if hasattr(j, "material"):
        mat, area, temp = j.material, float(j.area), float(j.temperature)
    else:  # parametric design: an invented silicon junction of the same role
        mat, area, temp = material("Si"), 1e-6, float(np.max(rx.temperature))
    if isinstance(j, AbruptJunction):
        abrupt = j
    elif isinstance(j, PinJunction):  # the p+ / i junction below punch-through
        abrupt = AbruptJunction(mat, na=j.p_doping, nd=j.i_doping, area=area, temperature=temp)
    else:
        abrupt = AbruptJunction(mat, na=1e19 * per_cm3, nd=1e15 * per_cm3, area=area,
                                temperature=temp)
    graded = j if isinstance(j, LinearlyGradedJunction) else LinearlyGradedJunction(
        mat, gradient=1e22 * per_cm4, area=area, temperature=temp)
    pin = j if isinstance(j, PinJunction) else PinJunction(
        mat, i_thickness=10 * um, i_doping=1e13 * per_cm3, area=area, p_doping=1e19 * per_cm3,
        n_doping=1e19 * per_cm3, temperature=temp)
    return abrupt, graded, pin


def _bias_for(junction, bias):
    return float(min(bias, 0.9 * junction.breakdown_voltage()))


def _check_abrupt(d, rx, bias):
    j = _junctions(rx)[0]
    v = _bias_for(j, bias)
    m = j.material
    args = dict(N_A=j.na, N_D=j.nd, V_bi=j.built_in_potential(), V_r=v, epsilon_s=m.permittivity)
    vbi = d.lambdify("built_in_potential")(N_A=j.na, N_D=j.nd, T=j.temperature,
                                           n_i=m.intrinsic_density(j.temperature))
    return [("depletion width", "m", d.lambdify("depletion_width")(**args), j.depletion_width(v)),
            ("capacitance", "F", d.lambdify("capacitance")(A=j.area, **args), j.capacitance(v)),
            ("charge", "C", d.lambdify("charge")(A=j.area, **args), j.charge(v)),
            ("peak field", "V/m", d.lambdify("peak_field")(**args), j.peak_field(v)),
            ("built-in potential", "V", vbi, j.built_in_potential())]


def _check_graded(d, rx, bias):
    j = _junctions(rx)[1]
    v = _bias_for(j, bias)
    args = dict(a=j.gradient, V_bi=j.built_in_potential(), V_r=v,
                epsilon_s=j.material.permittivity)
    return [("depletion width", "m", d.lambdify("depletion_width")(**args), j.depletion_width(v)),
            ("capacitance", "F", d.lambdify("capacitance")(A=j.area, **args), j.capacitance(v)),
            ("charge", "C", d.lambdify("charge")(A=j.area, **args), j.charge(v)),
            ("peak field", "V/m", d.lambdify("peak_field")(**args), j.peak_field(v))]


def _check_pin(d, rx, bias):
    j = _junctions(rx)[2]
    v = _bias_for(j, bias)
    args = dict(N_A=j.p_doping, N_D=j.n_doping, N_i=j.i_doping, d=j.i_thickness,
                V_bi=j.built_in_potential(), V_r=v, epsilon_s=j.material.permittivity)
    pt = {k: args[k] for k in d.arguments("punch_through_voltage")}
    return [("depletion width", "m", d.lambdify("depletion_width")(**args), j.depletion_width(v)),
            ("capacitance", "F", d.lambdify("capacitance")(A=j.area, **args), j.capacitance(v)),
            ("punch-through voltage", "V", d.lambdify("punch_through_voltage")(**pt),
             j.punch_through_voltage())]


def _check_diffusion(d, rx, bias):
    from ..device.junction import diffusion_capacitance

    temp = float(np.max(rx.temperature))
    rows = []
    for i_f, tau in ((1e-3, 1e-9), (1e-5, 1e-6)):
        rows.append((f"C_D at {format_eng(i_f, 'A')}, tau {format_eng(tau, 's')}", "F",
                     d.lambdify("capacitance")(I=i_f, T=temp, n=1.0, tau=tau),
                     diffusion_capacitance(i_f, tau, 1.0, temp)))
    return rows


def _loop(rx, poles=None, ideal=False, white=False):
    """(tia, net) of the design; optionally other amplifier poles, an ideal diode, white noise."""
    from ..device.equivalent_circuit import EquivalentCircuit

    tia = rx.tia
    amp = tia.amp
    if poles is not None:  # the symbolic models have poles only: the zeros go too
        amp = dataclasses.replace(amp, poles=poles, zeros=())
    if white:
        amp = dataclasses.replace(amp, voltage_noise_corner=0.0, current_noise_corner=0.0)
    tia = dataclasses.replace(tia, amp=amp)
    net = rx.equivalent_circuit()
    if ideal:
        net = EquivalentCircuit(capacitance=float(net.capacitance), series_resistance=0.0,
                                shunt_resistance=np.inf, current=float(net.current))
    return tia, net


def _spot_frequency(tia, net):
    m = tia.analyze(net)
    return 0.3 * m.bandwidth if m.stable else 0.1 * tia.amp.gbw / tia.amp.dc_gain


def _circuit_args(tia, net, f):
    a = tia.amp
    return dict(C_d=net.capacitance, C_f=tia.cf, C_in=a.input_capacitance, R_f=tia.rf,
                R_s=net.series_resistance, R_sh=net.shunt_resistance, s=2j * np.pi * f)


def _check_nodal(d, rx, bias):
    tia, net = _loop(rx)
    f = _spot_frequency(tia, net)
    args = _circuit_args(tia, net, f)
    args_a = dict(args, A=tia.amp.gain(f))
    label = f" at {format_eng(f, 'Hz')}"
    return [("|transimpedance|" + label, "ohm", d.lambdify("transimpedance")(**args_a),
             tia.transimpedance(f, net)),
            ("|loop gain|" + label, "", d.lambdify("loop_gain")(**args_a), tia.loop_gain(f, net)),
            ("|noise gain|" + label, "", d.lambdify("noise_gain")(**args), tia.noise_gain(f, net))]


def _check_amplifier_model(d, rx, poles):
    tia, net = _loop(rx, poles=poles)
    f = _spot_frequency(tia, net)
    args = dict(_circuit_args(tia, net, f), A_0=tia.amp.dc_gain, GBW=tia.amp.gbw)
    if poles:
        args["f_2"] = poles[0]
    label = f" at {format_eng(f, 'Hz')}"
    return [("|transimpedance|" + label, "ohm", d.lambdify("transimpedance")(**args),
             tia.transimpedance(f, net)),
            ("|loop gain|" + label, "", d.lambdify("loop_gain")(**args), tia.loop_gain(f, net))]


def _check_single_pole(d, rx, bias):
    return _check_amplifier_model(d, rx, ())


def _check_two_pole(d, rx, bias):
    poles = rx.tia.amp.poles
    return _check_amplifier_model(d, rx, (poles[0],) if poles else (10.0 * rx.tia.amp.gbw,))


def _second_order_args(rx):
    tia, net = _loop(rx, poles=(), ideal=True)
    a = tia.amp
    args = dict(A_0=a.dc_gain, C_f=tia.cf, C_i=net.capacitance + a.input_capacitance,
                GBW=a.gbw, R_f=tia.rf)
    return tia, net, args


def _check_second_order(d, rx, bias):
    tia, net, args = _second_order_args(rx)
    m = tia.analyze(net)
    return [("DC transimpedance", "ohm", d.lambdify("dc_transimpedance")(A_0=args["A_0"],
                                                                          R_f=args["R_f"]),
             m.dc_transimpedance),
            ("Q of the pole pair", "", d.lambdify("q")(**args), m.q),
            ("-3 dB bandwidth", "Hz", d.lambdify("bandwidth")(**args), m.bandwidth)]


def _check_feedback(d, rx, bias):
    from ..circuit.feedback_design import design_feedback_capacitor

    tia, net, args = _second_order_args(rx)
    design = design_feedback_capacitor(tia.amp, tia.rf, net, target="butterworth")
    args.pop("C_f")
    return [("Cf for Butterworth", "F", d.lambdify("cf_butterworth")(**args), design.cf)]


def _check_phase_margin(d, rx, bias):
    tia, net, args = _second_order_args(rx)
    m = tia.analyze(net)
    return [("phase margin", "deg", d.lambdify("phase_margin")(**args), m.phase_margin)]


def _check_input_noise(d, rx, bias):
    from ..device.equivalent_circuit import EquivalentCircuit

    tia, net = _loop(rx, white=True)
    net = EquivalentCircuit(capacitance=float(net.capacitance), series_resistance=0.0,
                            shunt_resistance=float(net.shunt_resistance),
                            current=float(net.current))
    temp = float(np.max(rx.temperature))
    ns = tia.noise(net, temperature=temp)
    f = _spot_frequency(tia, net)
    a = tia.amp
    args = dict(C_d=net.capacitance, C_f=tia.cf, C_in=a.input_capacitance, I=net.current,
                R_f=tia.rf, R_sh=net.shunt_resistance, T=temp, e_n=a.voltage_noise, f=f,
                i_n=a.current_noise)
    return [(f"input noise density at {format_eng(f, 'Hz')}", "A/rtHz",
             d.lambdify("input_noise_density")(**args), ns.input_density(f))]


def _check_nep(d, rx, bias):
    r = rx.evaluate()
    return [("NEP", "W/rtHz", d.lambdify("nep_density")(S_i=r.noise_floor_density ** 2,
                                                         eta=r.quantum_efficiency,
                                                         lambda_0=r.wavelength), r.nep)]


_CHECKS = {
    "abrupt_junction": _check_abrupt,
    "linearly_graded_junction": _check_graded,
    "pin_junction": _check_pin,
    "diffusion_capacitance": _check_diffusion,
    "tia_nodal_analysis": _check_nodal,
    "tia_single_pole": _check_single_pole,
    "tia_two_pole": _check_two_pole,
    "tia_second_order": _check_second_order,
    "tia_feedback_capacitor": _check_feedback,
    "tia_phase_margin": _check_phase_margin,
    "tia_input_noise": _check_input_noise,
    "nep": _check_nep,
}


def numeric_checks(name, receiver, bias):
    """Closed form against the numeric engine for derivation ``name`` at the design's values.

    Parameters
    ----------
    name : str
        Function name of the derivation in :mod:`photorx.symbolic` (a value of
        :data:`DERIVATIONS`, e.g. ``"abrupt_junction"``).
    receiver : Receiver
        The design whose values are put into the closed forms and the engine (a junction
        type the design does not have is stood in for by a typical silicon junction).
    bias : float
        Reverse bias [V], >= 0, of the abrupt, graded and p-i-n checks; capped at 90 % of
        the junction's breakdown estimate. The other checks use ``receiver``'s own bias.

    Returns
    -------
    pandas.DataFrame
        Columns ``quantity``, ``closed form``, ``engine``, ``relative difference``, ``unit``;
        complex quantities are compared as complex numbers and shown by magnitude.
    """
    d = _derivation(name)
    rows = []
    for quantity, unit, closed, engine in _CHECKS[name](d, receiver, bias):
        closed, engine = complex(np.asarray(closed)), complex(np.asarray(engine))
        scale = abs(engine) if engine != 0 else 1.0
        rows.append({"quantity": quantity, "closed form": abs(closed) if closed.imag
                     or engine.imag else closed.real,
                     "engine": abs(engine) if closed.imag or engine.imag else engine.real,
                     "relative difference": abs(closed - engine) / scale, "unit": unit})
    return pd.DataFrame(rows, columns=["quantity", "closed form", "engine",
                                       "relative difference", "unit"])


class ClosedFormsPanel(Panel):
    """A derivation of :mod:`photorx.symbolic` rendered, with its numeric checks.

    Parameters
    ----------
    receiver : Receiver, str or None
        The design whose values the numeric checks use, or the name of a shipped demo design
        or the path (str) of a design file; default None, the embedded demo design.
    render : bool
        Render the figure to PNG after every update; default True (False for scripts and
        timing the computation).
    derivation : str
        Label of the first derivation shown, a key of :data:`DERIVATIONS`; default
        ``"abrupt junction"``.
    """

    title = "Closed forms: derivations and numeric checks"
    figsize = (5.0, 2.6)

    def __init__(self, receiver=None, render=True, derivation="abrupt junction"):
        self.receiver = _receiver(receiver)
        self._first = derivation
        super().__init__(render=render)
        self.output.children = (self.derivation_view,) + tuple(self.output.children)

    def _build_controls(self):
        w = _widgets()
        bias = float(np.max(self.receiver.reverse_bias))
        self.controls = {
            "derivation": w.Dropdown(options=list(DERIVATIONS), value=self._first,
                                     description="derivation",
                                     layout=w.Layout(width="340px")),
            "bias": lin_slider("reverse bias [V]", bias, 0.0, max(4 * bias, 10.0), 0.1),
        }
        self.derivation_view = w.HTMLMath()

    def _build_figure(self):
        ax = self.figure.subplots(1, 1)
        self.axes = {"checks": ax}
        self.lines["bars"] = None
        ax.set_xscale("log")
        ax.set_xlabel("|closed form / engine - 1|")
        ax.set_xlim(1e-17, 1.0)

    def _layout_controls(self):
        w = _widgets()
        return w.HBox([self.controls["derivation"], self.controls["bias"]])

    def _refresh(self):
        name = DERIVATIONS[self.value("derivation")]
        d = _derivation(name)
        self.derivation = d
        rx = dataclasses.replace(self.receiver, reverse_bias=self.value("bias"))
        self.checks = numeric_checks(name, rx, self.value("bias"))
        self.derivation_view.value = derivation_html(d)
        ax = self.axes["checks"]
        err = np.maximum(self.checks["relative difference"].to_numpy(dtype=float), 1e-17)
        y = np.arange(len(err))
        if self.lines["bars"] is not None:
            self.lines["bars"].remove()  # the bar count changes with the derivation
        self.lines["bars"] = ax.barh(y, err, color="C0", left=1e-17)
        ax.set_yticks(y, list(self.checks["quantity"]), fontsize="x-small")
        ax.set_ylim(-0.6, max(len(err), 1) - 0.4)
        worst = float(np.max(err)) if len(err) else 0.0
        if worst > 1e-3:
            self.note(f"warning: the closed form differs from the engine by up to "
                      f"{100 * worst:.3g} % here; see the derivation's assumptions")
        shown = self.checks.copy()
        units = dict(zip(shown["quantity"], shown["unit"]))
        for col in ("closed form", "engine"):
            shown[col] = [format_eng(v, units[q], 6) for q, v in zip(shown["quantity"], shown[col])]
        shown["relative difference"] = [f"{v:.2e}" for v in shown["relative difference"]]
        self.table.value = frame_html(shown.drop(columns=["unit"]))


def closed_forms_panel(receiver=None, render=True, derivation="abrupt junction"):
    """Build the closed-forms panel (default: the demo design, the abrupt-junction derivation).

    Parameters
    ----------
    receiver : Receiver or str, optional
        The design whose values the numeric checks use.
    render : bool
        Render the figure to PNG after every update; default True.
    derivation : str
        Label of the first derivation shown (a key of :data:`DERIVATIONS`).
    """
    return ClosedFormsPanel(receiver, render=render, derivation=derivation)
