"""Amplifier zeros: open-loop gain, closed loop, margins, step, noise and pulse with real zeros.

Sources: scipy.signal.freqs on the same zero-pole-gain model, python-control
(``stability_margins``, ``step_response`` and transfer-function arithmetic on the loop built
from the circuit, tests/circuit/tia_reference_models.py) and ngspice AC and .noise analyses
of a macro-model whose zero is an exact differentiator stage (a capacitor's current read by
a current-controlled voltage source and added to its input).
"""

from __future__ import annotations

import sys
from pathlib import Path

import control
import numpy as np
import pytest
import scipy.constants as sc
import scipy.signal
from hypothesis import assume, given, settings
from hypothesis import strategies as st

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from spice import run_ngspice  # noqa: E402  (tests/spice.py, the project's ngspice runner)
from tia_reference_models import SCALE, closed_tf, loop_tf  # noqa: E402

from photorx.analysis.digital_response import rational_chain, rational_impulse  # noqa: E402
from photorx.circuit.noise import input_noise_psd, output_noise_psd  # noqa: E402
from photorx.circuit.amplifier import OpAmp, open_loop_gain  # noqa: E402
from photorx.circuit.loop_poles import closed_loop_poles  # noqa: E402
from photorx.circuit.metrics import loop_margins, tia_figures  # noqa: E402
from photorx.circuit.step import step_response  # noqa: E402
from photorx.circuit.tia import Tia, transimpedance  # noqa: E402
from photorx.device.equivalent_circuit import EquivalentCircuit  # noqa: E402
from photorx.errors import DesignError  # noqa: E402

# a zero below the crossover of a two-extra-pole amplifier, with Rs and a finite shunt
DESIGN = {"gbw": 300e6, "dc_gain": 5e4, "poles": (250e6, 1.2e9), "zeros": (120e6,),
          "rf": 2e4, "cf": 0.25e-12, "cd": 3e-12, "rsh": 5e7, "rs": 30.0, "cin": 1.5e-12}
KT = sc.k * 300.0


def test_open_loop_gain_against_scipy_freqs():
    # Source: scipy.signal.freqs of the same zpk (zeros -w_z, poles -w_d and -w_k, gain set
    # for A(0) = A0); rtol 1e-12
    gbw, a0, poles, zeros = 200e6, 3e5, (400e6, 2e9), (90e6, 700e6)
    wd = 2 * np.pi * gbw / a0
    z = -2 * np.pi * np.array(zeros)
    p = -np.r_[wd, 2 * np.pi * np.array(poles)]
    k = a0 * np.prod(-p) / np.prod(-z)
    b, a = scipy.signal.zpk2tf(z, p, k)
    f = np.logspace(0, 10.5, 300)
    _, ref = scipy.signal.freqs(b, a, worN=2 * np.pi * f)
    np.testing.assert_allclose(open_loop_gain(f, gbw, a0, poles, zeros), ref, rtol=1e-12)
    amp = OpAmp(gbw=gbw, dc_gain=a0, poles=poles, zeros=zeros)
    np.testing.assert_allclose(amp.gain(f), ref, rtol=1e-12)


def test_no_zeros_is_bit_identical():
    # zeros=() and an all-inf zero take different code paths; () must equal the old call
    p = {k: v for k, v in DESIGN.items() if k != "zeros"}
    a = tia_figures(**p)
    b = tia_figures(**p, zeros=())
    for key in a:
        np.testing.assert_array_equal(a[key], b[key])
    # an absent zero (inf) gives the same figures to rounding
    c = tia_figures(**p, zeros=(np.inf,))
    for key in ("bandwidth", "phase_margin", "rise_time", "overshoot", "peaking_db"):
        assert c[key] == pytest.approx(a[key], rel=1e-9)


def test_closed_loop_against_python_control():
    # Source: python-control transfer-function arithmetic on the circuit (closed_tf), its
    # poles and its step_response. Transimpedance rtol 1e-9; poles rtol 1e-7; step figures
    # from control.step_info (rise 10-90 %, overshoot, 1 % settling) within 1e-3 relative.
    p = DESIGN
    zt = closed_tf(p)
    f = np.logspace(2, 10, 200)
    ref = zt(2j * np.pi * f / SCALE)
    np.testing.assert_allclose(transimpedance(f, **p), ref, rtol=1e-9)
    ours = np.sort_complex(np.asarray(closed_loop_poles(**p)))
    theirs = np.sort_complex(control.poles(zt) * SCALE)
    np.testing.assert_allclose(ours[~np.isnan(ours)], theirs, rtol=1e-7)
    fig = tia_figures(**p)
    t = np.linspace(0, 4 * fig["settling_time"] / 1e-6, 40001)
    _, y = control.step_response(zt, t)
    info = control.step_info(y, t, SettlingTimeThreshold=0.01, RiseTimeLimits=(0.1, 0.9))
    assert fig["rise_time"] == pytest.approx(info["RiseTime"] * 1e-6, rel=1e-3)
    assert fig["overshoot"] == pytest.approx(info["Overshoot"] / 100, rel=1e-3)
    assert fig["settling_time"] == pytest.approx(info["SettlingTime"] * 1e-6, rel=1e-3)
    # the waveform (partial fractions with N_A(p_k)) against the same step response, 1e-8
    yy = step_response(t * 1e-6, **p)
    np.testing.assert_allclose(yy, y / y[-1], atol=1e-8)
    # the pulse response's residues: impulse response of Zt, against control.impulse_response
    poles, residues = rational_chain(p)
    _, h = control.impulse_response(zt, t[:4000])
    np.testing.assert_allclose(rational_impulse(t[:4000] * 1e-6, poles, residues) * 1e-6, h,
                               rtol=1e-7, atol=1e-9 * np.max(np.abs(h)))


def test_bandwidth_and_peaking_with_a_zero_against_dense_grid():
    # Source: python-control frequency response of the closed loop on a dense grid (1e5
    # points per decade), first fall below -3 dB interpolated log-linearly; rtol 1e-6
    p = DESIGN
    fig = tia_figures(**p)
    zt = closed_tf(p)
    f = np.logspace(6, 9, 300001)
    mag = np.abs(zt(2j * np.pi * f / SCALE))
    dc = np.abs(zt(0))
    level = dc / np.sqrt(2)
    k = np.argmax(mag < level)
    lf = np.interp(np.log(level), np.log(mag[[k, k - 1]]), np.log(f[[k, k - 1]]))
    assert fig["bandwidth"] == pytest.approx(np.exp(lf), rel=1e-6)
    assert fig["peaking_db"] == pytest.approx(max(20 * np.log10(mag.max() / dc), 0.0), abs=1e-6)


def test_phase_margin_with_a_zero_against_python_control():
    # Source: python-control stability_margins on the loop with the zero (as the existing
    # margin check, tests/circuit/test_tia_metrics.py); abs 0.01 deg, 0.01 dB
    for zeros in [(120e6,), (40e6, 600e6)]:
        p = DESIGN | {"zeros": zeros, "poles": (250e6, 1.2e9, 3e9)}
        t = loop_tf(p)[0]
        gm, pm, _, _wpc, wgc, _ = control.stability_margins(t, returnall=True)
        ours = loop_margins(**p)
        k = np.argmin(np.abs(pm))
        assert ours["phase_margin"] == pytest.approx(pm[k], abs=0.01)
        assert ours["crossover"] == pytest.approx(wgc[k] * SCALE / (2 * np.pi), rel=1e-6)
        if len(gm) == 0:  # no -180 deg crossing: both report an infinite gain margin
            assert np.isinf(ours["gain_margin_db"])
        else:
            j = np.argmin(np.abs(np.log(gm)))
            assert ours["gain_margin_db"] == pytest.approx(20 * np.log10(gm[j]), abs=0.01)


# ------------------------------------------------------------------------------------------
# ngspice: the amplifier as a VCVS, RC pole stages behind unity buffers and, for each zero, a
# stage v_out = v_in + tau_z dv_in/dt (the current of a capacitor C from the buffered input
# through a 0 V source, turned into a voltage tau_z/C times it by an H source, in series with
# an E copy of the input). Every element of the macro-model is noiseless (noisy=0).
def _amplifier(p, plus, minus, out):
    lines = [f"Ea a0 0 {plus} {minus} {p['dc_gain']:.15g}"]
    taus = [p["dc_gain"] / (2 * np.pi * p["gbw"])] + [1 / (2 * np.pi * fp) for fp in p["poles"]]
    node = "a0"
    for k, tau in enumerate(taus, start=1):
        lines += [f"Rp{k} {node} b{k} 1 noisy=0", f"Cp{k} b{k} 0 {tau:.15g}",
                  f"Eb{k} a{k} 0 b{k} 0 1"]
        node = f"a{k}"
    for k, fz in enumerate(p.get("zeros", ()), start=1):
        tau = 1 / (2 * np.pi * fz)
        lines += [f"Cz{k} {node} zc{k} 1", f"Vz{k} zc{k} 0 DC 0",
                  f"Hz{k} zd{k} 0 Vz{k} {tau:.15g}",
                  f"Ez{k} z{k} zd{k} {node} 0 1"]
        node = f"z{k}"
    lines.append(f"Eo {out} 0 {node} 0 1")
    return lines


def _generator(name, node_p, node_n, density, kind):
    """White noise of ``density`` from a 1 kohm resistor's 4kT/R, scaled by an F or H source
    (as tests/analysis/test_noise.py builds its sources)."""
    rg = 1e3
    return [f"V{name} g{name} 0 DC 0", f"R{name} g{name} 0 {rg}",
            f"{kind}{name} {node_p} {node_n} V{name} {density / np.sqrt(4 * KT / rg):.15e}"]


def _netlist(p, en=0.0, in_=0.0):
    j = "j" if p["rs"] > 0 else "inm"
    lines = [".options temp=26.85 tnom=26.85", f"Iin 0 {j} DC 0 AC 1",
             f"Cd {j} 0 {p['cd']:.15g}", f"Rsh {j} 0 {p['rsh']:.15g}"]
    if p["rs"] > 0:
        lines.append(f"Rs j inm {p['rs']:.15g}")
    lines += [f"Cin inm 0 {p['cin']:.15g}", f"Rf inm out {p['rf']:.15g}",
              f"Cf inm out {p['cf']:.15g}"]
    lines += _generator("in", 0, "inm", in_, "F") + _generator("en", "p", 0, en, "H")
    lines += _amplifier(p, "p", "inm", "out")
    return "\n".join(lines)


@pytest.mark.ngspice
def test_transimpedance_and_noise_with_a_zero_against_ngspice():
    # Source: ngspice (Debian package) AC and .noise of the macro-model above, 300 K.
    # ngspice prints 12 digits and solves the same linear network: transimpedance rtol 1e-6,
    # noise densities rtol 1e-6 (the existing .noise checks use 1e-4; the zero is exact here).
    p = DESIGN
    en, in_ = 4e-9, 3e-15
    net = _netlist(p, en, in_)
    ac = run_ngspice(net, "ac dec 20 1e3 1e10", ["frequency", "v(out)"])
    f = np.real(ac["frequency"])
    # Iin flows into the diode node from ground: v(out) = -Zt i with our sign (drawn out)
    zt_spice = -ac["v(out)"]
    np.testing.assert_allclose(transimpedance(f, **p), zt_spice, rtol=1e-6)
    spec = run_ngspice(net, "noise v(out) Iin dec 20 1e3 1e10",
                       ["frequency", "onoise_spectrum", "inoise_spectrum"], plot="noise1")
    fn = np.real(spec["frequency"])
    src = {"en": en, "in_": in_, "temperature": 300.0}
    out = np.sqrt(sum(output_noise_psd(fn, **p, **src).values()))
    inp = np.sqrt(sum(input_noise_psd(fn, **p, **src).values()))
    np.testing.assert_allclose(out, np.real(spec["onoise_spectrum"]), rtol=1e-6)
    np.testing.assert_allclose(inp, np.real(spec["inoise_spectrum"]), rtol=1e-6)
    # the zero matters here: without it the densities differ by far more than the tolerance
    no_zero = {k: v for k, v in p.items() if k != "zeros"}
    out0 = np.sqrt(sum(output_noise_psd(fn, **no_zero, **src).values()))
    assert np.max(np.abs(out0 / out - 1)) > 0.05


def test_shell_routes_zeros_everywhere():
    # Tia/OpAmp with a zero give the same figures and noise as the core functions
    amp = OpAmp(gbw=DESIGN["gbw"], dc_gain=DESIGN["dc_gain"], poles=DESIGN["poles"],
                zeros=DESIGN["zeros"], input_capacitance=DESIGN["cin"])
    net = EquivalentCircuit(capacitance=DESIGN["cd"], series_resistance=DESIGN["rs"],
                            shunt_resistance=DESIGN["rsh"], current=1e-6)
    tia = Tia(amp, rf=DESIGN["rf"], cf=DESIGN["cf"])
    m = tia.analyze(net)
    fig = tia_figures(**DESIGN)
    assert m.bandwidth == pytest.approx(fig["bandwidth"], rel=1e-12)
    assert m.phase_margin == pytest.approx(fig["phase_margin"], rel=1e-12)
    f = np.logspace(3, 9, 7)
    ns = tia.noise(net)
    ref = output_noise_psd(f, **DESIGN, en=amp.voltage_noise, in_=amp.current_noise,
                           i_shot=1e-6)
    np.testing.assert_allclose(ns.output_density(f), np.sqrt(sum(ref.values())), rtol=1e-12)


# ------------------------------------------------------------------------------------------
# properties and input paths
@settings(max_examples=40, deadline=None)
@given(gbw=st.floats(10e6, 2e9), dc_gain=st.floats(1e4, 1e6), rf=st.floats(1e3, 1e6),
       cd=st.floats(0.5e-12, 50e-12), cin=st.floats(0.0, 5e-12), where=st.floats(0.05, 0.95),
       far=st.floats(10.0, 1e3))
def test_zero_below_crossover_raises_phase_margin(gbw, dc_gain, rf, cd, cin, where, far):
    # Conditions (common practice, Graeme 1996 ch. 3: phase lead from a zero): Cf = 0,
    # Rs = 0, Rsh = inf, and the noise-gain corner f_ng = 1/(2 pi Rf (Cd + Cin)) at least 3x
    # below the crossover f_c of the loop without the zero (T falls at -40 dB/decade there:
    # the uncompensated receiver, phase margin below ~20 deg). A zero at f_z = where f_c
    # lifts |T| above f_z and moves the crossover up to about f_c / where; the one extra
    # amplifier pole sits ``far`` (>= 10) times above that. Then the zero's lead
    # (atan(1/where^2) >= 48 deg) outweighs the lag the higher crossover adds.
    p = {"gbw": gbw, "dc_gain": dc_gain, "rf": rf, "cf": 0.0, "cd": cd, "rsh": np.inf,
         "rs": 0.0, "cin": cin}
    fc = float(loop_margins(**p, poles=())["crossover"])
    assume(fc > 3.0 / (2 * np.pi * rf * (cd + cin)))
    p["poles"] = (far * fc / where,)
    m0 = loop_margins(**p)
    m1 = loop_margins(**p, zeros=(where * fc,))
    assert m1["phase_margin"] > m0["phase_margin"]


@pytest.mark.parametrize("zeros, match", [
    ((0.0,), "zeros"), ((-1e6,), "zeros"), ((np.nan,), "zeros"), ((np.inf,), "zeros"),
    (("fast",), "zeros"), ((1e8, 2e8), "zeros")])
def test_opamp_rejects_bad_zeros(zeros, match):
    with pytest.raises(DesignError, match=match) as err:
        OpAmp(poles=(3e8,), zeros=zeros)
    assert err.value.parameter == "zeros"


@settings(max_examples=30, deadline=None)
@given(z=st.one_of(st.floats(max_value=0.0), st.just(float("nan"))))
def test_core_rejects_nonpositive_zero(z):
    with pytest.raises(DesignError, match="zeros"):
        tia_figures(**DESIGN | {"zeros": (z,)})


def test_zeros_vectorise_over_designs_with_inf_for_none():
    # one array per zero across designs (inf = no zero) equals the designs one at a time
    z = np.array([np.inf, 120e6, 60e6])
    p = {k: v for k, v in DESIGN.items() if k != "zeros"}
    many = tia_figures(**p, zeros=(z,))
    for i, zi in enumerate(z):
        one = tia_figures(**p, zeros=() if np.isinf(zi) else (zi,))
        for key in ("bandwidth", "phase_margin", "rise_time", "settling_time", "peaking_db"):
            assert many[key][i] == pytest.approx(float(one[key]), rel=1e-9)
    f = np.logspace(4, 9, 5)
    zt = transimpedance(f, **p, zeros=(z[:, None],))
    np.testing.assert_allclose(zt[2], transimpedance(f, **p, zeros=(60e6,)), rtol=1e-14)
