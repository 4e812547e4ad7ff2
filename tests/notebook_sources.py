"""Source of the notebooks in notebooks/: run ``python tests/notebook_sources.py`` to rewrite them.

Each stage notebook is a worked study: a short explanation, two or three computed cells
whose plots display statically (a saved or exported notebook shows them without a kernel),
then a panel of :mod:`photorx.views.widgets` built on a demo design (the panel also
carries a static image of its figure). They are stored with outputs cleared;
tests/test_notebooks.py checks that and executes each one. Not collected by pytest.
"""

from __future__ import annotations

from pathlib import Path

import nbformat

NOTEBOOK_DIR = Path(__file__).resolve().parents[1] / "notebooks"

_SETUP = """%matplotlib inline
import photorx as prx
from photorx.views import widgets as pw"""

NOTEBOOKS = {
    "01_junction.ipynb": [
        ("markdown", """# 1. The junction

A photodiode is first of all a p-n junction. Reverse bias widens the depletion layer: the
charge stored on each side grows, and the capacitance, which is what the amplifier sees,
falls. How fast it falls depends on the doping profile: as the inverse square root of the
total potential for an abrupt junction, the inverse cube root for a linearly graded one,
and hardly at all for a p-i-n diode once the intrinsic layer is fully depleted
(punch-through). Too much bias ends in avalanche breakdown.

In forward bias the stored minority carriers add a diffusion capacitance that soon dwarfs
the depletion capacitance. Circuit simulators describe the junction by three numbers, Cj0,
Vj and m in Cj0 / (1 + V_R/Vj)^m; the panel fits them to the physical model.

This study starts from the junction of the demo design (an invented InGaAs p-i-n diode):
its parameters, then its capacitance and depletion width against bias, then an abrupt
silicon junction with its textbook closed form, and finally the interactive panel."""),
        ("code", _SETUP + """
import numpy as np
from photorx.views import plot_sweep

rx = prx.demo_receiver()
rx.photodiode.junction"""),
        ("markdown", """**Capacitance against bias.** The receiver is evaluated over a bias sweep in
one vectorised call; every column keeps its SI unit (`df.attrs["units"]`), so the panels are
labelled without further work. The p-i-n capacitance flattens once the i-layer is depleted;
the dark current rises with the depleted volume."""),
        ("code", """df = prx.sweep(rx, reverse_bias=np.linspace(0.0, 10.0, 41))
plot_sweep(df, x="reverse_bias", y=["capacitance", "depletion_width", "dark_current"],
           title="Demo p-i-n junction against reverse bias")"""),
        ("markdown", """**A closed form.** For a one-sided abrupt silicon junction the depletion
approximation gives C = A sqrt(q eps N_eff / (2 (V_bi + V_R))) (Sze and Ng, 3rd ed., 2007,
eq. 2.12); the object shows its parameters and the formula with its numbers, and its
capacitance against bias follows the square-root law."""),
        ("code", """from IPython.display import Latex, display
from photorx.views.plots import plot_curve

abrupt = prx.AbruptJunction(prx.material("Si"), na=1e25, nd=1e21, area=1e-6)
display(abrupt, Latex(abrupt._repr_latex_()))
v = np.linspace(0.0, 10.0, 101)
plot_curve(v, abrupt.capacitance(v), xlabel="reverse bias [V]", ylabel="capacitance [F]",
           xunit="V", yunit="F", title="Abrupt Si junction: C falls as 1/sqrt(Vbi + V_R)")"""),
        ("markdown", """**The panel.** Change the junction type, material, dopings, i-layer
thickness, area or temperature; the table lists the built-in potential, the breakdown
estimate and the fitted parameters. A saved notebook shows the panel's figure as an image."""),
        ("code", """panel = pw.junction_panel(rx)
panel"""),
        ("markdown", """The controls can also be driven from code, for example to compare the
three junction types at the same area; the fitted parametric junction is kept on the panel:"""),
        ("code", """panel.set(kind="abrupt")
panel.fitted"""),
    ],
    "02_photodiode.ipynb": [
        ("markdown", """# 2. The photodiode

Light absorbed in the depletion layer is collected quickly by drift; light absorbed in the
undepleted layers must first diffuse to it, slowly, and part of it recombines on the way.
So the quantum efficiency depends on the wavelength (through the absorption length) and on
the bias (through the depletion width). Speed has two limits: the carriers' transit time
across the depletion layer, which grows with its width, and the RC time of the diode's
capacitance with its load. The dark current has a diffusion part, a generation part that
grows with the depleted volume, and surface leakage; all of them rise steeply with
temperature.

This study uses the invented silicon p-i-n receiver at 850 nm: its photodiode, the
spectral response, the speed and dark current against bias, then the interactive panel."""),
        ("code", _SETUP + """
import numpy as np
from photorx.views import plot_sweep

rx = prx.load_design("si-pin-850")
rx.photodiode"""),
        ("markdown", """**Spectral response.** Silicon absorbs weakly towards its band edge near
1.1 um, so the quantum efficiency and the responsivity fall off there; at short wavelengths
the light is absorbed close to the surface."""),
        ("code", """spectrum = prx.sweep(rx, wavelength=np.linspace(400e-9, 1100e-9, 36))
plot_sweep(spectrum, x="wavelength", y=["responsivity", "quantum_efficiency"],
           title="Spectral response at the operating bias")"""),
        ("markdown", """**Speed and dark current against bias.** Once the i-layer is depleted the
capacitance stops falling; the photodiode's own bandwidth and the receiver's bandwidth
follow."""),
        ("code", """bias = prx.sweep(rx, reverse_bias=np.linspace(0.0, 20.0, 41))
plot_sweep(bias, x="reverse_bias", y=["capacitance", "photodiode_bandwidth", "bandwidth",
                                      "dark_current"], title="Against reverse bias")"""),
        ("markdown", """**The panel.** Move the bias, wavelength, temperature and load to see each
figure change. High bias voltages need current limiting; see the cautions in the README."""),
        ("code", """panel = pw.photodiode_panel(rx)
panel"""),
    ],
    "03_amplifier_loop.ipynb": [
        ("markdown", """# 3. The amplifier loop

In a transimpedance stage the photodiode capacitance sits at the amplifier's inverting
input. The feedback factor therefore falls with frequency and the noise gain 1/beta rises,
so the loop gain T = A beta reaches 0 dB with an extra lag: without a feedback capacitor
the loop rings or oscillates. A small Cf across Rf puts a pole in the noise gain and
restores the phase margin, at the price of some bandwidth.

This study draws the demo design's loop (Bode plot with the crossover and the phase margin
marked), sweeps Cf to show the trade between margin and bandwidth, and ends with the
interactive panel, whose *design Cf* button chooses Cf on the full model."""),
        ("code", _SETUP + """
import numpy as np
from photorx.views import plot_sweep

rx = prx.demo_receiver()
rx.tia"""),
        ("markdown", """**The loop at the operating point.** `Tia.analyze` returns the figures of
merit; their `.plot()` draws the loop gain and the closed-loop transimpedance."""),
        ("code", """metrics = rx.tia.analyze(rx.equivalent_circuit())
metrics.plot()"""),
        ("markdown", """**Cf against margin and bandwidth.** More Cf buys phase margin (less peaking
and overshoot) and costs bandwidth."""),
        ("code", """loop = prx.sweep(rx, cf=np.geomspace(20e-15, 200e-15, 25))
plot_sweep(loop, x="cf", y=["phase_margin", "peaking_db", "bandwidth"],
           title="Feedback capacitor sweep")"""),
        ("markdown", """**The panel.** The Bode plot shows the open-loop gain, the noise gain and
the loop gain; the closed-loop response, the step response and the margins follow each
change of Rf, Cf, the gain-bandwidth product and the reverse bias."""),
        ("code", """panel = pw.loop_panel(rx)
panel"""),
        ("markdown", """The same design step from code: choose Cf for a 60 degree phase margin and
read the loop figures."""),
        ("code", """panel.set(target="phase margin 60 deg")
panel.design_cf()
panel.metrics"""),
    ],
    "04_noise.ipynb": [
        ("markdown", """# 4. Noise

Every resistor and every current contributes noise: the thermal noise of Rf, of the
diode's shunt and series resistance, the amplifier's current noise, the shot noise of the
dark, signal and background currents, and the amplifier's voltage noise, which the noise
gain lifts at high frequency (the e_n C term). The sources are uncorrelated, so their
powers add: the stacked plot shows which one dominates where. Integrated over the real
response of the stage and its post filter, they give the input-referred noise current,
the noise-equivalent power and the signal-to-noise ratio.

This study draws the demo design's noise spectrum from the lower limit of the noise
integration, the receiver at a glance, and the noise against Rf, then the interactive
panel."""),
        ("code", _SETUP + """
import numpy as np
from photorx.views import plot_sweep

rx = prx.demo_receiver()
noise = rx.noise()
noise.plot()"""),
        ("markdown", """**The receiver at a glance.** The bandwidth of each part of the chain, the
input-referred noise of each source and the optical power levels, all from one
evaluation."""),
        ("code", """result = rx.evaluate()
result.plot()"""),
        ("markdown", """**Noise against Rf.** A larger Rf adds less current noise but narrows the
bandwidth; the SNR at the operating power shows the balance."""),
        ("code", """rf = prx.sweep(rx, rf=np.geomspace(1e3, 20e3, 21))
plot_sweep(rf, x="rf", y=["input_noise_rms", "bandwidth", "snr_db"],
           title="Feedback resistor sweep")"""),
        ("markdown", """**The panel.** Change the bias, Rf, the optical power and the post filter;
the table lists every source's share of the total."""),
        ("code", """panel = pw.noise_panel(rx)
panel"""),
    ],
    "05_bias_tradeoff.ipynb": [
        ("markdown", """# 5. The bias trade-off

Reverse bias couples the three budgets. More bias shrinks the capacitance (a faster, more
stable loop with less e_n C noise) and widens the depletion layer (longer transit, better
response at long wavelengths), but raises the dark current and its shot noise, and the
supply and breakdown set a ceiling. This panel sweeps the whole receiver against bias,
marks the operating point and the constraints, finds the best bias (and optionally Rf and
Cf) with the optimiser, and writes the budget tables (CSV, Markdown, LaTeX, ...) and the
report into a folder of your choice.

Results are model estimates: verify them on hardware, respect laser eye safety
(IEC 60825-1), take care with high-voltage bias supplies and protect photodiode inputs
against electrostatic discharge."""),
        ("code", _SETUP + """

rx = prx.demo_receiver()
panel = pw.tradeoff_panel(rx)
panel"""),
        ("markdown", """Run the optimiser from code: maximise the SNR with the constraints set on
the panel; the optimum is marked on the plots and listed under them."""),
        ("code", """result = panel.run_optimizer()
result.parameters, result.success"""),
        ("markdown", """## The eye at the bit rate

A data receiver is judged by its eye: the output for a PRBS pattern, built by superposing
the pulse response of the whole chain (the photodiode's transit and diffusion response,
the closed loop, the post filter), with each level's Gaussian noise from the noise budget.
`rx.eye()` gives the vertical opening (1 without intersymbol interference), the height and
width left at the target BER, the ISI jitter and the ISI power penalty: the sensitivity
with ISI and noise over the noise-only sensitivity. At twice the demo's bit rate the
bandwidth is short and the eye starts to close."""),
        ("code", """import dataclasses

fast = dataclasses.replace(rx, bit_rate=2.5e9)
eye = fast.eye()
print(eye)
eye.plot()"""),
        ("markdown", """How the eye closes as the bias falls: towards zero bias (and into forward bias)
the junction capacitance grows, the loop slows and the opening shrinks; the ISI penalty
rises by dB before the noise changes much. The same figures are columns of every sweep of a
design with a bit rate."""),
        ("code", """table = prx.sweep(fast, reverse_bias=[-0.3, 0.0, 0.5, 1.0, 3.3])
table[["reverse_bias", "capacitance", "bandwidth", "eye_opening", "isi_penalty_db",
       "sensitivity_isi_dbm"]]"""),
        ("code", """dataclasses.replace(fast, reverse_bias=-0.3).eye().plot()"""),
    ],
    "06_closed_forms.ipynb": [
        ("markdown", """# 6. Closed forms

The numeric engine solves the full models; the textbook closed forms explain them. Each
derivation here starts from its governing equations (Poisson's equation in the depletion
approximation, charge control, Kirchhoff's current law at the summing node, the noise
sources' spectral densities) and is carried out by sympy step by step. Beside each
derivation, its results are evaluated at the demo design's values and compared with the
numeric engine; the bar chart shows the relative difference of each quantity."""),
        ("code", _SETUP + """

rx = prx.demo_receiver()
panel = pw.closed_forms_panel(rx)
panel"""),
        ("markdown", "The comparison table of another derivation, from code:"),
        ("code", """panel.set(derivation="feedback capacitor")
panel.checks"""),
    ],
    "07_avalanche.ipynb": [
        ("markdown", """# 7. Avalanche photodiodes

**Caution.** An avalanche photodiode's bias supply runs at tens to hundreds of volts (the
demo here sits at about 310 V). Current-limit the supply (near breakdown the diode draws
whatever it is given), insulate and guard the bias node and discharge its filter
capacitors before touching the circuit; handle the diode and the amplifier input with ESD
precautions; classify and operate test lasers for eye safety (often invisible infrared);
and defer to local codes and licensed practice. Every figure below is a model estimate.

A few volts below breakdown the field in the junction is strong enough for carriers to
ionise the lattice: each primary photoelectron becomes M electrons (McIntyre's gain
from the ionisation integral over the junction's own field). The gain is noisy: the
multiplied shot noise is 2 q I M^2 F(M), with the excess noise factor
F = k M + (1 - k)(2 - 1/M) and k the ionisation ratio (small for silicon). The signal
power grows as M^2, the multiplied shot noise faster, so there is an optimum gain, and
hence an optimum bias, for the SNR or the BER sensitivity. Breakdown moves up with
temperature, so a constant gain needs a bias that tracks it.

The panel shows the invented silicon APD receiver at 850 nm: gain against bias (sampled in
gain, so that the steep part is resolved), F(M), the objective against gain with the
numeric optimum and the thermal-noise-limited closed form, and the bias that holds the
operating gain from -40 to 85 degC."""),
        ("code", _SETUP + """

rx = prx.load_design("si-apd-850")
panel = pw.avalanche_panel(rx)
panel"""),
        ("markdown", """Gain, k and F at the biases that give chosen gains (a sweep in gain
maps each gain to its bias):"""),
        ("code", """apd = rx.photodiode
bias = prx.gain_axis(rx, [2.0, 10.0, 50.0, 100.0])
bias, apd.gain(bias), apd.k_effective(bias), apd.excess_noise_factor(bias)"""),
        ("markdown", """The optimum gain for the BER sensitivity, numeric (full model: k_eff,
dark current and bandwidth follow the bias) and in Personick's closed form (constant k,
thermal noise only), as the panel computed it with `prx.optimum_gain`; `penalty_db` is what
the closed-form gain costs in the full model:"""),
        ("code", """best = panel.optimum  # what prx.optimum_gain(rx, objective="sensitivity") returns
best.summary()"""),
        ("markdown", """The temperature-compensated bias: the reverse bias that holds M = 50
from -40 to 85 degC (233 to 358 K):"""),
        ("code", """temperatures = [233.15, 253.15, 273.15, 298.15, 323.15, 358.15]
prx.bias_for_constant_gain(apd, 50.0, temperatures)"""),
    ],
    "08_measured_parts.ipynb": [
        ("markdown", """# 8. Real parts in: measured C-V and I-V

A designer often has a diode on the bench rather than its doping levels. This notebook
reads a C-V and a dark I-V measurement (CSV files with the units in the header), fits
photorx's junction models to them with uncertainties and residuals, extracts the doping
profile from the slope of 1/C^2 (W = eps A / C), fits the dark current's diffusion,
generation and shunt parts over three temperatures, and builds a receiver on the measured
diode.

The data shipped with photorx for this are **synthetic**: photorx's own model of an
invented silicon p-i-n diode plus random noise (see the comment lines of the files). Use
your own files the same way.

Bench work on real parts: limit the current of high-voltage bias supplies, protect the
diode and the amplifier input against electrostatic discharge, and respect laser eye
safety (IEC 60825-1); results are model estimates to verify on hardware."""),
        ("code", _SETUP + """

cv, iv = prx.demo_measurements()
print(cv.attrs["source"], len(cv), "points;", iv.attrs["source"], len(iv), "points")
panel = pw.measured_panel(cv, iv)
panel"""),
        ("markdown", """The same from code: a p-i-n fit with the noise of the data as sigma, its
parameters with one standard deviation, and the doping profile (the i-layer level, then
the n+ contact at the i-layer thickness):"""),
        ("code", """from photorx.device.measurements import DEMO_AREA

fit = prx.fit_junction(cv, "pin", material="Si", area=DEMO_AREA,
                       sigma=0.002 * cv["capacitance"] + 2e-15)
profile = prx.doping_profile(cv, area=DEMO_AREA, material="Si")
fit.parameters, fit.uncertainties, fit.reduced_chi_square, profile["doping"].median()"""),
        ("markdown", """A photodiode built from the measured tables works wherever a modelled
one does. Its capacitance and dark current are the measured ones, so a bias outside the
measured range is refused rather than extrapolated:"""),
        ("code", """import dataclasses

diode = prx.Photodiode.from_measurements(cv=cv, iv=iv, responsivity=0.55)
rx = dataclasses.replace(prx.demo_receiver(), photodiode=diode, wavelength=850e-9,
                         reverse_bias=10.0)
prx.sweep(rx, reverse_bias=[2.0, 5.0, 10.0, 15.0])[
    ["reverse_bias", "capacitance", "dark_current", "bandwidth", "input_noise_rms"]]"""),
        ("markdown", """## The amplifier from its data sheet

An amplifier's data sheet gives its noise densities and its open-loop gain as plotted
curves. Read off as points, the noise curve is interpolated log-log and integrated as it
stands (the 1/f region below the first point continues its slope, the white level above
the last holds); the gain points (magnitude and phase) are fitted with real poles and
zeros, and the rest of photorx works on the fitted model, with the fit's worst misfit
reported. The points below are invented for this notebook."""),
        ("code", """import numpy as np

noise_points = ([10.0, 100.0, 1e3, 1e4, 1e5, 1e7],            # Hz
                [60e-9, 21e-9, 8e-9, 4.2e-9, 3.2e-9, 3.0e-9])  # V/rtHz
f_pts = np.logspace(3, 10.5, 12)                              # Hz
reference = prx.OpAmp(gbw=20e9, dc_gain=3000.0, poles=(60e9,))  # stands in for the plot
a = reference.gain(f_pts)
gain_fit = prx.fit_open_loop_gain(f_pts, 20 * np.log10(np.abs(a)),
                                  np.degrees(np.angle(a)), poles=1, zeros=0)
amp = dataclasses.replace(gain_fit.amplifier(input_capacitance=0.3e-12, output_swing=1.0,
                                             current_noise=2e-12),
                          voltage_noise_curve=noise_points)
print(f"fit: A0 = {gain_fit.dc_gain:.4g}, GBW = {gain_fit.gbw:.4g} Hz, "
      f"poles = {gain_fit.poles}, worst misfit {gain_fit.worst_magnitude_error:.2g} dB")
rx_sheet = dataclasses.replace(rx, tia=dataclasses.replace(rx.tia, amp=amp))
import pandas as pd

figures = ("bandwidth", "phase_margin", "input_noise_rms", "sensitivity_dbm")
pd.DataFrame({name: {fig: float(getattr(r, fig)) for fig in figures}
              for name, r in (("modelled amplifier", rx.evaluate()),
                              ("data-sheet amplifier", rx_sheet.evaluate()))})"""),
    ],
}


def build(name):
    """The notebook ``name`` as an nbformat NotebookNode (outputs empty)."""
    nb = nbformat.v4.new_notebook()
    nb.metadata["kernelspec"] = {"name": "python3", "display_name": "Python 3",
                                 "language": "python"}
    nb.metadata["language_info"] = {"name": "python"}
    for kind, source in NOTEBOOKS[name]:
        cell = (nbformat.v4.new_markdown_cell(source) if kind == "markdown"
                else nbformat.v4.new_code_cell(source))
        cell.pop("id", None)
        nb.cells.append(cell)
    return nb


def write_all(folder=NOTEBOOK_DIR):
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    for name in NOTEBOOKS:
        nb = build(name)
        for i, cell in enumerate(nb.cells):  # stable ids keep diffs small
            cell["id"] = f"{Path(name).stem[:2]}-{i}"
        nbformat.validate(nb)
        nbformat.write(nb, folder / name)


if __name__ == "__main__":
    write_all()
