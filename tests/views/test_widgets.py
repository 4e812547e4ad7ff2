"""The interactive panels, headless: build each one, drive its controls, check what it shows.

The panels must show what the package computes (the plotted data are compared with direct
calls of the package's public API, rtol stated), move their artists in place (the same
Figure and Line2D objects after every change), report invalid combinations in the message
area instead of raising, and follow facts of the trade where a control's effect has one
(capacitance proportional to area, dark current rising with temperature, ...).
"""

import dataclasses
import html

import numpy as np
import pytest

import photorx as prx
from photorx.views import widgets as pw

pytest.importorskip("ipywidgets")

PNG = b"\x89PNG"


@pytest.fixture(scope="module")
def rx():
    return prx.demo_receiver()


def ydata(line):
    return np.asarray(line.get_ydata(), dtype=float)


def xdata(line):
    return np.asarray(line.get_xdata(), dtype=float)


# ------------------------------------------------------------------------------ common
@pytest.mark.parametrize("name", list(pw.PANELS))
def test_every_panel_builds_headless_with_controls_figure_and_message(name, rx, tmp_path):
    kw = {"export_folder": tmp_path} if name == "tradeoff" else {}
    panel = pw.PANELS[name](rx, **kw)
    assert panel.error == "", panel.message.value
    assert panel.controls and all(hasattr(c, "value") for c in panel.controls.values())
    assert bytes(panel.image.value).startswith(PNG)
    assert "<table" in panel.table.value
    assert panel.update() is True
    bundle = panel._repr_mimebundle_()
    assert "application/vnd.jupyter.widget-view+json" in bundle
    # the static figure beside the live view, for a notebook read without a kernel
    assert __import__("base64").b64decode(bundle["image/png"]) == bytes(panel.image.value)


def test_builders_default_to_the_demo_design():
    panel = pw.loop_panel(render=False)
    assert panel.receiver == prx.demo_receiver()
    by_name = pw.noise_panel("si-pin-850", render=False)
    assert by_name.receiver == prx.load_design("si-pin-850")


def test_update_redraws_the_same_figure_and_artists(rx):
    panel = pw.junction_panel(rx)
    fig, line, png = panel.figure, panel.lines["c_junction"], bytes(panel.image.value)
    before = ydata(line).copy()
    panel.controls["area"].value = panel.value("area") * 3.0
    assert panel.figure is fig and panel.lines["c_junction"] is line
    assert not np.allclose(ydata(line), before, rtol=1e-6, atol=0.0)
    assert bytes(panel.image.value).startswith(PNG) and bytes(panel.image.value) != png


# ------------------------------------------------------------------------------ junction
def test_junction_curves_are_the_package_values_and_scale_with_area(rx):
    panel = pw.junction_panel(rx, render=False)
    j = panel.current
    v = xdata(panel.lines["c_junction"])
    # the plotted curves are what the junction model returns (rtol 1e-12: same numbers)
    np.testing.assert_allclose(ydata(panel.lines["c_junction"]), j.capacitance(v), rtol=1e-12)
    np.testing.assert_allclose(ydata(panel.lines["width"]), j.depletion_width(v) / 1e-6,
                               rtol=1e-12)
    np.testing.assert_allclose(ydata(panel.lines["charge"]), j.charge(v), rtol=1e-12)
    c0, w0 = ydata(panel.lines["c_junction"]), ydata(panel.lines["width"])
    panel.controls["area"].value = 2.0 * panel.value("area")
    # parallel-plate capacitance: C = eps A / W is proportional to the area at fixed bias and
    # the depletion width does not depend on it (common practice; Sze and Ng, 3rd ed., ch. 2)
    np.testing.assert_allclose(ydata(panel.lines["c_junction"]), 2.0 * c0, rtol=1e-2)
    np.testing.assert_allclose(ydata(panel.lines["width"]), w0, rtol=1e-9)


@pytest.mark.parametrize("kind, cls", [("abrupt", prx.AbruptJunction),
                                       ("linearly graded", prx.LinearlyGradedJunction),
                                       ("p-i-n", prx.PinJunction)])
def test_junction_type_control_switches_the_model(kind, cls, rx):
    panel = pw.junction_panel(rx, render=False)
    panel.set(kind=kind, material="Si", max_bias=5.0)
    assert isinstance(panel.current, cls) and panel.error == ""
    assert ("punch-through" in panel.table.value) == (kind == "p-i-n")
    v = xdata(panel.lines["c_junction"])
    np.testing.assert_allclose(ydata(panel.lines["c_junction"]), panel.current.capacitance(v),
                               rtol=1e-12)
    assert v.min() < 0 < v.max()  # forward and reverse bias are both drawn


def test_junction_forward_bias_shows_diffusion_capacitance_growing_with_lifetime(rx):
    panel = pw.junction_panel(rx, render=False)
    panel.set(kind="abrupt", material="Si", lifetime=1e-7)
    short = ydata(panel.lines["c_diffusion"])
    panel.controls["lifetime"].value = 1e-5
    long_ = ydata(panel.lines["c_diffusion"])
    both = np.isfinite(short) & np.isfinite(long_)
    assert both.any()
    # charge control: C_D = tau I_F / (n V_T) (Sze and Ng, 3rd ed., ch. 2); for a long diode
    # I_F ~ 1/sqrt(tau), so C_D ~ sqrt(tau) still grows with the lifetime at the same bias
    assert np.all(long_[both] > short[both])


def test_junction_parametric_fit_drawn_and_removed(rx):
    panel = pw.junction_panel(rx, render=False)
    assert panel.fitted is not None and "fit m" in panel.table.value
    v = xdata(panel.lines["c_fit"])
    np.testing.assert_allclose(ydata(panel.lines["c_fit"]), panel.fitted.capacitance(v),
                               rtol=1e-12)
    panel.controls["fit"].value = False
    assert len(xdata(panel.lines["c_fit"])) == 0 and "fit m" not in panel.table.value


def test_junction_bias_beyond_breakdown_is_a_message_not_an_exception(rx):
    panel = pw.junction_panel(rx, render=False)
    vbr = panel.current.breakdown_voltage()
    panel.controls["max_bias"].value = min(2.0 * vbr, panel.controls["max_bias"].max)
    assert "breakdown" in panel.message.value
    assert xdata(panel.lines["c_junction"]).max() < vbr


def test_junction_temperature_lowers_the_built_in_potential(rx):
    panel = pw.junction_panel(rx, render=False)
    panel.set(kind="abrupt", material="Si", temperature=250.0)
    vbi_cold = panel.current.built_in_potential()
    table_cold = panel.table.value
    panel.controls["temperature"].value = 400.0
    # Vbi = kT/q ln(Na Nd / ni^2) falls with temperature as ni rises (Sze and Ng, 3rd ed.,
    # ch. 2, Eq. for the built-in potential)
    assert panel.current.built_in_potential() < vbi_cold
    assert panel.table.value != table_cold


# ------------------------------------------------------------------------------ photodiode
def test_photodiode_plots_follow_bias_and_wavelength(rx):
    panel = pw.photodiode_panel(rx, render=False)
    pd_ = rx.photodiode
    panel.set(bias=0.2, wavelength=1550.0)
    wl = xdata(panel.lines["qe_bias"]) * 1e-9
    np.testing.assert_allclose(ydata(panel.lines["qe_bias"]), pd_.quantum_efficiency(wl, 0.2),
                               rtol=1e-12)
    assert ydata(panel.lines["capacitance_mark"])[0] == pytest.approx(pd_.capacitance(0.2),
                                                                      rel=1e-12)
    c_low = ydata(panel.lines["capacitance_mark"])[0]
    panel.controls["bias"].value = 5.0
    # more reverse bias, wider depletion layer, less capacitance (Sze and Ng, ch. 2)
    assert ydata(panel.lines["capacitance_mark"])[0] < c_low
    assert xdata(panel.lines["responsivity_mark"])[0] == pytest.approx(5.0)
    assert "1550 nm" in panel.table.value


def test_photodiode_dark_current_rises_with_temperature(rx):
    panel = pw.photodiode_panel(rx, render=False)
    panel.controls["temperature"].value = 280.0
    cold = ydata(panel.lines["dark_temperature_mark"])[0]
    panel.controls["temperature"].value = 360.0
    hot = ydata(panel.lines["dark_temperature_mark"])[0]
    # generation current ~ ni(T), diffusion ~ ni^2: dark current grows steeply with
    # temperature (Sze and Ng, 3rd ed., ch. 2; roughly doubling every ~8-10 K in Si is
    # common practice)
    assert hot > 10.0 * cold
    curve = ydata(panel.lines["dark_temperature"])
    assert np.all(np.diff(curve[np.isfinite(curve)]) > 0)


def test_photodiode_bias_beyond_breakdown_is_a_message(rx):
    panel = pw.photodiode_panel(rx, render=False)
    vbr = rx.photodiode.junction.breakdown_voltage()
    assert panel.set(max_bias=vbr + 20.0, bias=vbr + 5.0) is False
    assert panel.error and "breakdown" in panel.error
    assert "breakdown" in panel.message.value
    panel.controls["bias"].value = 1.0  # back to a valid bias: the message goes away
    assert panel.error == ""


def test_photodiode_load_moves_the_rc_limit(rx):
    panel = pw.photodiode_panel(rx, render=False)
    panel.controls["load"].value = 50.0
    f50 = ydata(panel.lines["rc"])
    panel.controls["load"].value = 500.0
    # f_RC = 1 / (2 pi (Rs + RL) C) (common practice; Saleh and Teich, Fundamentals of
    # Photonics, photodiode circuit response): the ratio of the two loads, rtol 1e-9
    rs = rx.photodiode.series_resistance
    np.testing.assert_allclose(ydata(panel.lines["rc"]) / f50, (rs + 50.0) / (rs + 500.0),
                               rtol=1e-9)


# ------------------------------------------------------------------------------ loop
def test_loop_bode_data_are_the_tia_responses(rx):
    panel = pw.loop_panel(rx, render=False)
    _, tia, net = panel.design()
    f = xdata(panel.lines["loop_gain"])
    np.testing.assert_allclose(ydata(panel.lines["loop_gain"]),
                               20 * np.log10(np.abs(tia.loop_gain(f, net))), rtol=1e-12)
    np.testing.assert_allclose(ydata(panel.lines["noise_gain"]),
                               20 * np.log10(np.abs(tia.noise_gain(f, net))), rtol=1e-12)
    np.testing.assert_allclose(ydata(panel.lines["open_loop"]),
                               20 * np.log10(np.abs(tia.amp.gain(f))), rtol=1e-12)
    np.testing.assert_equal(panel.metrics.to_dict(), tia.analyze(net).to_dict())
    assert "phase margin" in panel.table.value


def test_loop_step_response_settles_to_one_with_the_metrics_overshoot(rx):
    panel = pw.loop_panel(rx, render=False)
    y = ydata(panel.lines["step"])
    m = panel.metrics
    # a stable all-pole loop settles to its final value; the peak is 1 + overshoot
    # (Ogata, Modern Control Engineering, 5th ed., sec. 5-3), rtol 2e-2 for the sampling
    assert y[-1] == pytest.approx(1.0, abs=1e-2)
    assert y.max() == pytest.approx(1.0 + m.overshoot, abs=2e-2)


def test_loop_more_cf_more_phase_margin(rx):
    panel = pw.loop_panel(rx, render=False)
    panel.controls["cf"].value = 20e-15
    pm_small = panel.metrics.phase_margin
    line_small = ydata(panel.lines["loop_gain"]).copy()
    panel.controls["cf"].value = 200e-15
    # Cf puts a pole in the noise gain (a zero in the loop gain) below the crossover:
    # more phase margin (Graeme, Photodiode Amplifiers, 1996, ch. 3)
    assert panel.metrics.phase_margin > pm_small
    assert not np.allclose(ydata(panel.lines["loop_gain"]), line_small)


def test_loop_design_button_moves_cf_to_the_target(rx):
    panel = pw.loop_panel(rx, render=False)
    panel.set(target="Butterworth (Q = 0.707)", cf=1e-12)
    cf = panel.design_cf()
    assert panel.value("cf") == pytest.approx(cf, rel=1e-12)
    # the designed loop has the dominant pair's Q of the target, rtol 1e-6
    assert panel.metrics.q == pytest.approx(1 / np.sqrt(2), rel=1e-6)
    assert "designed Cf" in panel.message.value
    panel.controls["target"].value = "phase margin 60 deg"
    panel.design_button.click()
    assert panel.metrics.phase_margin == pytest.approx(60.0, abs=1e-3)


def test_loop_unstable_is_reported_in_the_message_area(rx):
    panel = pw.loop_panel(rx, render=False)
    panel.set(gbw=1e11, rf=1e3, cf=1e-16)  # no Cf, fast amplifier with its extra pole
    assert panel.metrics.stable is False
    assert "unstable" in panel.message.value and "color:#b00020" in panel.message.value
    assert len(xdata(panel.lines["step"])) == 0  # no step response, no bandwidth mark
    assert np.all(np.isnan(ydata(panel.lines["closed_loop"])))  # no closed-loop response
    assert len(xdata(panel.lines["bandwidth_mark"])) == 0
    assert "NO: unstable loop" in panel.table.value
    panel.controls["cf"].value = 100e-15
    assert panel.metrics.stable and "unstable" not in panel.message.value


def test_loop_bias_beyond_breakdown_is_a_message(rx):
    panel = pw.loop_panel(rx, render=False)
    vbr = rx.photodiode.junction.breakdown_voltage()
    panel.controls["bias"].max = 2 * vbr
    panel.controls["bias"].value = 1.5 * vbr
    assert panel.error and "breakdown" in panel.message.value


# ------------------------------------------------------------------------------ noise
def test_noise_stack_and_budget_are_the_spectrum_values(rx):
    panel = pw.noise_panel(rx, render=False)
    design = panel.current
    ns = design.noise()
    f = xdata(panel.lines["total"])
    total = sum(d**2 for d in ns.by_source(f).values())
    np.testing.assert_allclose(ydata(panel.lines["total"]), total, rtol=1e-12)
    # the top of the stack is the total power density (uncorrelated sources add in power)
    top = max(panel._layers.values(), key=lambda p: p.get_paths()[0].vertices[:, 1].max()
              if p.get_visible() else 0)
    assert top.get_paths()[0].vertices[:, 1].max() == pytest.approx(total.max(), rel=1e-9)
    r = design.evaluate()
    assert prx.units.format_eng(r.nep, "W/rtHz") in panel.table.value
    for label in ns.budget()["source"]:
        assert label in panel.table.value


def test_noise_lower_filter_cutoff_less_noise(rx):
    panel = pw.noise_panel(rx, render=False)
    panel.set(filter="butterworth", order=2, cutoff=2e9)
    wide = panel.result.output_noise_rms
    panel.controls["cutoff"].value = 2e8
    # a narrower post filter integrates less of the noise (ENBW shrinks)
    assert panel.result.output_noise_rms < wide
    # ENBW of a 2nd-order Butterworth low pass: (pi/4)/sin(pi/4) fc = 1.1107 fc (common
    # practice); the stage in front only narrows the chain, rtol 1e-3
    assert panel.result.noise_bandwidth < 1.1107 * 2e8 * 1.001
    panel.controls["filter"].value = "none"
    assert panel.current.post_filter is None and panel.error == ""


def test_noise_input_referral_and_log_scale(rx):
    panel = pw.noise_panel(rx, render=False)
    out_label = panel.axes["noise"].get_ylabel()
    panel.set(referred="input", log_y=True)
    assert panel.axes["noise"].get_yscale() == "log"
    label = panel.axes["noise"].get_ylabel()
    assert label != out_label and "A^2" in label
    f = xdata(panel.lines["total"])
    ns = panel.current.noise()
    np.testing.assert_allclose(ydata(panel.lines["total"]), ns.input_density(f) ** 2,
                               rtol=1e-9)


def test_noise_unstable_loop_is_reported(rx):
    amp = dataclasses.replace(rx.tia.amp, gbw=1e11)
    unstable = dataclasses.replace(rx, tia=prx.Tia(amp, rf=1e3, cf=0.0))
    panel = pw.noise_panel(unstable, render=False)
    assert "unstable" in panel.message.value


# ------------------------------------------------------------------------------ trade-off
def test_tradeoff_sweep_data_and_operating_marker(rx, tmp_path):
    panel = pw.tradeoff_panel(rx, render=False, export_folder=tmp_path)
    frame = panel.frame
    ref = prx.sweep(panel.design(), reverse_bias=frame["reverse_bias"].to_numpy())
    np.testing.assert_allclose(ydata(panel.lines["bandwidth"]), ref["bandwidth"], rtol=1e-12)
    panel.controls["bias"].value = 7.0
    assert panel.frame is frame  # moving the operating point does not re-sweep
    assert xdata(panel.lines["bandwidth_bias"])[0] == pytest.approx(7.0)
    assert panel.result.reverse_bias == pytest.approx(7.0)
    panel.controls["rf"].value = 1e4
    assert panel.frame is not frame  # a design change does
    # a larger Rf: less bandwidth and less thermal noise current (Graeme 1996, ch. 2-3)
    assert panel.frame["bandwidth"].max() < frame["bandwidth"].max()
    assert panel.frame["input_noise_rms"].min() < frame["input_noise_rms"].min()


def test_tradeoff_sixth_plot_shows_any_figure_of_the_sweep(rx, tmp_path):
    panel = pw.tradeoff_panel(rx, render=False, export_folder=tmp_path)
    assert "capacitance" in panel.controls["plot"].options
    frame = panel.frame
    panel.controls["plot"].value = "capacitance"
    assert panel.frame is frame  # no new sweep for another view of it
    np.testing.assert_allclose(ydata(panel.lines["choice"]), frame["capacitance"], rtol=1e-12)
    assert "capacitance" in panel.axes["choice"].get_ylabel()
    panel.controls["plot"].value = "phase_margin"
    assert panel.axes["choice"].get_yscale() == "linear"


def test_tradeoff_constraint_lines_follow_the_controls(rx, tmp_path):
    panel = pw.tradeoff_panel(rx, render=False, export_folder=tmp_path)
    panel.controls["min_phase_margin"].value = 55.0
    assert panel.limit_lines["phase_margin"].get_ydata()[0] == 55.0
    assert panel.constraints()["phase_margin"] == (">=", 55.0)


def test_tradeoff_optimiser_marks_and_applies_the_optimum(rx, tmp_path):
    panel = pw.tradeoff_panel(rx, render=False, export_folder=tmp_path)
    panel.set(min_phase_margin=45.0, min_bandwidth=0.7 * rx.bit_rate)
    result = panel.run_optimizer(grid_points=30)
    assert result is not None and result.success
    v_opt = result.parameters["reverse_bias"]
    assert 0.0 <= v_opt <= panel.value("span")
    assert panel.lines["bandwidth_optimum"].get_visible()
    assert xdata(panel.lines["bandwidth_optimum"])[0] == pytest.approx(v_opt)
    assert "optimum" in panel.table.value
    panel.apply_optimum()
    assert panel.value("bias") == pytest.approx(v_opt, abs=panel.controls["bias"].step)
    panel.controls["rf"].value = 2.0 * panel.value("rf")  # another design: optimum is stale
    assert panel.optimum is None and not panel.lines["bandwidth_optimum"].get_visible()


def test_tradeoff_exports_budget_tables_and_report(rx, tmp_path):
    folder = tmp_path / "out"
    panel = pw.tradeoff_panel(rx, render=False, export_folder=folder)
    panel.controls["formats"].value = ("csv", "md", "latex")
    written = panel.export_budget()
    assert sorted(p.suffix for p in written) == [".csv", ".md", ".tex"]
    assert all(p.parent == folder and p.stat().st_size > 0 for p in written)
    assert folder.joinpath("budget.csv").read_text().startswith("table,")
    assert "\\begin{tabular}" in folder.joinpath("budget.tex").read_text()
    report = panel.export_report()
    assert report == folder / "report.html" and "<html" in report.read_text()
    assert "report.html" in panel.message.value


def test_tradeoff_span_beyond_breakdown_is_a_message(rx, tmp_path):
    panel = pw.tradeoff_panel(rx, render=False, export_folder=tmp_path)
    vbr = rx.photodiode.junction.breakdown_voltage()
    panel.controls["span"].value = vbr + 10.0
    assert "breakdown" in panel.message.value and panel.error == ""
    assert panel.frame["reverse_bias"].max() < vbr


def test_tradeoff_optimiser_error_goes_to_the_message_area(rx, tmp_path):
    panel = pw.tradeoff_panel(rx, render=False, export_folder=tmp_path)
    panel.controls["objective"].options = ("not_a_figure",)
    assert panel.run_optimizer(grid_points=10) is None
    assert "not_a_figure" in panel.message.value


# ------------------------------------------------------------------------------ closed forms
@pytest.mark.parametrize("label", ["abrupt junction", "p-i-n junction", "feedback capacitor",
                                   "input-referred noise"])
def test_closed_forms_rendered_with_numeric_checks(label, rx):
    panel = pw.closed_forms_panel(rx, render=False, derivation="diffusion capacitance")
    first = panel.table.value
    panel.controls["derivation"].value = label
    assert panel.error == ""
    assert "$$" in panel.derivation_view.value
    assert panel.derivation.title.split()[0] in panel.derivation_view.value
    checks = panel.checks
    assert len(checks) >= 1 and panel.table.value != first
    # closed form against the numeric engine: exact forms agree to rounding, rtol 1e-9
    assert np.all(checks["relative difference"] < 1e-9), checks
    bars = panel.lines["bars"]
    assert len(bars.patches) == len(checks)


def test_closed_forms_checks_follow_the_bias(rx):
    panel = pw.closed_forms_panel(rx, render=False, derivation="abrupt junction")
    panel.controls["bias"].value = 3.0
    assert panel.checks.loc[0, "quantity"] == "depletion width"
    w_high = panel.checks.loc[0, "engine"]
    panel.controls["bias"].value = 1.0
    # less reverse bias, narrower depletion layer (Sze and Ng, 3rd ed., ch. 2)
    assert panel.checks.loc[0, "engine"] < w_high
    assert np.all(panel.checks["relative difference"] < 1e-9)


# ------------------------------------------------------------------------------ robustness
from hypothesis import given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402


def _log_in(slider):
    return st.floats(slider.min, slider.max).map(lambda e: 10.0 ** e)


_JUNCTION = pw.junction_panel(render=False)


@settings(max_examples=25, deadline=None)
@given(st.data())
def test_junction_panel_never_raises_over_its_control_ranges(data):
    # any combination the sliders allow gives curves or a message, never an exception
    c = _JUNCTION.controls
    values = {"kind": data.draw(st.sampled_from(c["kind"].options)),
              "material": data.draw(st.sampled_from(c["material"].options)),
              "temperature": data.draw(st.floats(c["temperature"].min, c["temperature"].max)),
              "max_bias": data.draw(st.floats(c["max_bias"].min, c["max_bias"].max))}
    for name in ("na", "nd", "gradient", "i_thickness", "i_doping", "area", "lifetime"):
        values[name] = data.draw(_log_in(c[name]))
    ok = _JUNCTION.set(**values)
    if ok:
        v = xdata(_JUNCTION.lines["c_junction"])
        np.testing.assert_allclose(ydata(_JUNCTION.lines["c_junction"]),
                                   _JUNCTION.current.capacitance(v), rtol=1e-12)
    else:
        assert _JUNCTION.error and _JUNCTION.error in html.unescape(_JUNCTION.message.value)


_LOOP = pw.loop_panel(render=False)


@settings(max_examples=25, deadline=None)
@given(st.data())
def test_loop_panel_never_raises_and_flags_every_unstable_loop(data):
    c = _LOOP.controls
    values = {name: data.draw(_log_in(c[name])) for name in ("rf", "cf", "gbw")}
    values["bias"] = data.draw(st.floats(c["bias"].min, c["bias"].max))
    assert _LOOP.set(**values)
    stable = _LOOP.metrics.stable
    assert ("unstable" in _LOOP.message.value) == (not stable)
    assert (len(xdata(_LOOP.lines["step"])) > 0) == stable


# ------------------------------------------------------------------------------ readability
def test_axes_show_engineering_prefixes_and_follow_label_changes(rx, tmp_path):
    from matplotlib.ticker import EngFormatter

    loop = pw.loop_panel(rx)
    step_axis = loop.axes["step"].xaxis
    fmt = step_axis.get_major_formatter()
    assert isinstance(fmt, EngFormatter) and fmt.unit == "s"
    assert "[s]" not in step_axis.get_label_text()  # the unit is on the ticks: "500 ps"
    assert fmt(5e-10) == "500 ps"
    # noise power density in nV^2/Hz, not "1e-15" over the axis (common practice)
    noise = pw.noise_panel(rx)
    label = noise.axes["noise"].get_ylabel()
    assert "nV$^2$/Hz" in label
    top = ydata(noise.lines["total"]).max()
    assert noise.axes["noise"].yaxis.get_major_formatter()(top) == f"{top / 1e-18:g}"
    # a label whose unit takes no prefix gets matplotlib's formatter back
    trade = pw.tradeoff_panel(rx, export_folder=tmp_path)
    trade.controls["plot"].value = "capacitance"
    assert isinstance(trade.axes["choice"].yaxis.get_major_formatter(), EngFormatter)
    trade.controls["plot"].value = "snr_db"
    assert not isinstance(trade.axes["choice"].yaxis.get_major_formatter(), EngFormatter)
    assert "[dB]" in trade.axes["choice"].get_ylabel()


def test_slider_readouts_use_si_prefixes():
    from photorx.views.widgets_base import lin_slider, log_slider

    assert log_slider("Cf [F]", 6e-14, 1e-16, 1e-8).readout_format == ".3s"  # "60.0f"
    assert log_slider("doping [cm^-3]", 1e18, 1e14, 1e20).readout_format == ".3g"
    assert lin_slider("wavelength [nm]", 1310, 800, 1700, 5).readout_format == ".4"
