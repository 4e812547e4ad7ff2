"""Noise sources, their transfer to the output, integration, and the NoiseSpectrum shell."""

import itertools
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants as sc

from photorx.circuit.integration import integrate_psd
from photorx.circuit.noise import (
    NoiseSpectrum,
    chain_enbw,
    input_noise_psd,
    integrated_output_noise,
    johnson_current_density,
    johnson_voltage_density,
    output_noise_psd,
    shot_current_density,
)
from photorx.circuit.amplifier import OpAmp
from photorx.circuit.filters import PostFilter
from photorx.circuit.tia import Tia
from photorx.device.equivalent_circuit import EquivalentCircuit
from photorx.errors import DesignError, ModelRangeWarning

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # tests/ holds the ngspice runner
from spice import run_ngspice

REFERENCE = Path(__file__).resolve().parents[2] / "reference"
KT = sc.k * 300.0

# Design A: single-pole amplifier, no series resistance, white noise only.
DESIGN_A = {
    "gbw": 100e6,
    "dc_gain": 3e4,
    "poles": (),
    "rf": 47e3,
    "cf": 0.2e-12,
    "cd": 2e-12,
    "rsh": 5e7,
    "rs": 0.0,
    "cin": 1.5e-12,
    "en": 8e-9,
    "en_corner": 0.0,
    "in_": 5e-15,
    "in_corner": 0.0,
    "i_shot": 3e-6,
}
# Design B: series resistance, a second amplifier pole and 1/f corners on e_n and i_n.
DESIGN_B = {
    "gbw": 200e6,
    "dc_gain": 1e5,
    "poles": (400e6,),
    "rf": 1e4,
    "cf": 0.5e-12,
    "cd": 5e-12,
    "rsh": 1e8,
    "rs": 50.0,
    "cin": 3e-12,
    "en": 5e-9,
    "en_corner": 2e3,
    "in_": 2e-15,
    "in_corner": 500.0,
    "i_shot": 1e-6,
}


# ------------------------------------------------------------------------------------------
# ngspice netlist of the same circuit.  ngspice's .noise has no noise-source element, so each
# source density is made by a resistor noise generator: a 1 kohm resistor shorted by a
# voltage source (its 4kT/R current noise flows through the source), scaled into the circuit
# by a current-controlled current source (F, for current noise) or current-controlled voltage
# source (H, for voltage noise).  1/f corners: the generator resistor carries 1 mA DC and has
# the resistor flicker-noise model S = KF I^AF / f with AF = 2 and KF set for the corner.
# The op-amp is a VCVS with RC poles whose resistors are declared noiseless (noisy=0).
def _generator(name, node_p, node_n, density, corner, kind):
    rg, vb = 1e3, (1.0 if corner > 0 else 0.0)
    base = np.sqrt(4 * KT / rg)
    lines = [f"V{name} g{name} 0 DC {vb}"]
    if corner > 0:
        kf = 4 * KT / rg * corner / (vb / rg) ** 2
        lines += [f"R{name} g{name} 0 {rg} m{name}", f".model m{name} R(kf={kf:.12e} af=2)"]
    else:
        lines.append(f"R{name} g{name} 0 {rg}")
    lines.append(f"{kind}{name} {node_p} {node_n} V{name} {density / base:.12e}")
    return lines


def _netlist(p):
    j = "j" if p["rs"] > 0 else "inm"
    lines = [
        ".options temp=26.85 tnom=26.85",
        f"Iin 0 {j} DC 0 AC 1",
        f"Cd {j} 0 {p['cd']}",
        f"Rsh {j} 0 {p['rsh']}",
    ]
    if p["rs"] > 0:
        lines.append(f"Rs j inm {p['rs']}")
    lines += [f"Cin inm 0 {p['cin']}", f"Rf inm out {p['rf']}", f"Cf inm out {p['cf']}"]
    lines += _generator("shot", 0, j, np.sqrt(2 * sc.e * p["i_shot"]), 0.0, "F")
    lines += _generator("in", 0, "inm", p["in_"], p["in_corner"], "F")
    lines += _generator("en", "p", 0, p["en"], p["en_corner"], "H")
    fd = p["gbw"] / p["dc_gain"]
    lines += [
        f"Ea na 0 p inm {p['dc_gain']}",
        "Rp0 na nb 1 noisy=0",
        f"Cp0 nb 0 {1 / (2 * np.pi * fd):.12e}",
    ]
    last = "nb"
    for i, fp in enumerate(p["poles"]):
        lines += [
            f"Eb{i} c{i} 0 {last} 0 1",
            f"Rp{i + 1} c{i} d{i} 1 noisy=0",
            f"Cp{i + 1} d{i} 0 {1 / (2 * np.pi * fp):.12e}",
        ]
        last = f"d{i}"
    lines.append(f"Eo out 0 {last} 0 1")
    return "\n".join(lines)


def _spice_noise(p, f_lo, f_hi):
    net = _netlist(p)
    spec = run_ngspice(
        net,
        f"noise v(out) Iin dec 10 {f_lo} {f_hi}",
        ["frequency", "onoise_spectrum", "inoise_spectrum"],
        plot="noise1",
    )
    total = run_ngspice(
        net, f"noise v(out) Iin dec 100 {f_lo} {f_hi}", ["onoise_total"], plot="noise2"
    )
    return (
        np.real(spec["frequency"]),
        spec["onoise_spectrum"],
        spec["inoise_spectrum"],
        total["onoise_total"][0],
    )


def test_design_a_against_ngspice():
    # Source: ngspice-39 .noise (Debian package) on the same circuit, 300 K.
    # Densities rtol 1e-4 (agree to ~1e-7); integrated rms rtol 2e-3 (ngspice integrates
    # its own 100-point-per-decade sweep; the issue asks for 1 %).
    f, onoise, inoise, total = _spice_noise(DESIGN_A, 1.0, 1e10)
    ours = np.sqrt(sum(output_noise_psd(f, **DESIGN_A).values()))
    np.testing.assert_allclose(ours, onoise, rtol=1e-4)
    np.testing.assert_allclose(
        np.sqrt(sum(input_noise_psd(f, **DESIGN_A).values())), inoise, rtol=1e-4
    )
    rms = np.sqrt(sum(integrated_output_noise(1.0, 1e10, **DESIGN_A).values()))
    assert rms == pytest.approx(total, rel=2e-3)


def test_design_b_against_ngspice_through_the_shell():
    # Source: ngspice-39 .noise; series resistance, second pole, 1/f corners (resistor
    # flicker-noise generators). Tolerances as in design A.
    p = DESIGN_B
    amp = OpAmp(
        gbw=p["gbw"],
        dc_gain=p["dc_gain"],
        poles=p["poles"],
        voltage_noise=p["en"],
        current_noise=p["in_"],
        voltage_noise_corner=p["en_corner"],
        current_noise_corner=p["in_corner"],
        input_capacitance=p["cin"],
    )
    net = EquivalentCircuit(
        capacitance=p["cd"],
        series_resistance=p["rs"],
        shunt_resistance=p["rsh"],
        current=p["i_shot"],
    )
    ns = Tia(amp, rf=p["rf"], cf=p["cf"]).noise(net, temperature=300.0)
    f, onoise, inoise, total = _spice_noise(p, 10.0, 1e10)
    np.testing.assert_allclose(ns.output_density(f), onoise, rtol=1e-4)
    np.testing.assert_allclose(ns.input_density(f), inoise, rtol=1e-4)
    assert ns.output_rms(10.0, 1e10) == pytest.approx(total, rel=2e-3)
    # the 1/f part is really there: at 10 Hz e_n alone is sqrt(1 + 200) times its white value
    assert ns.by_source(10.0)["amp_voltage"] / ns.by_source(1e5)["amp_voltage"] == pytest.approx(
        np.sqrt(201 / 1.02), rel=2e-2
    )


def test_spot_values_from_reference_table():
    # Source: reference/noise_and_ber_checks.csv (Johnson 4kTR, shot 2qI: common practice)
    table = pd.read_csv(REFERENCE / "noise_and_ber_checks.csv", comment="#")
    fn = {
        "johnson_voltage_density": johnson_voltage_density,
        "shot_current_density": shot_current_density,
    }
    for row in table.itertuples():
        if row.quantity in fn:
            assert fn[row.quantity](row.value) == pytest.approx(row.expected, rel=row.rtol)


def test_johnson_current_density_and_arrays():
    # 4kT/R with scipy.constants (CODATA); rtol 1e-12; inf ohm is noiseless
    r = np.array([1e3, 1e6, np.inf])
    np.testing.assert_allclose(johnson_current_density(r), np.sqrt(4 * KT / r), rtol=1e-12)
    assert johnson_voltage_density(50.0, 77.0) == pytest.approx(
        np.sqrt(4 * sc.k * 77.0 * 50.0), rel=1e-12
    )


def test_ideal_amplifier_limits():
    # Ideal amplifier, Rf || Cf only (common practice, e.g. Hobbs, Building Electro-Optical
    # Systems, 2nd ed. 2009, ch. 18): low-frequency output density sqrt(4kT Rf); integrated Rf
    # noise kT/Cf ("kT/C noise"); single-pole ENBW = (pi/2) f_p = 1/(4 Rf Cf). rtol 1e-4.
    p = {"gbw": 1e15, "dc_gain": 1e9, "rf": 1e5, "cf": 1e-12, "cd": 1e-12, "cin": 0.0}
    s = output_noise_psd(10.0, **p)
    assert np.sqrt(s["rf_thermal"]) == pytest.approx(np.sqrt(4 * KT * 1e5), rel=1e-4)
    ms = integrated_output_noise(0.0, np.inf, **p)
    assert ms["rf_thermal"] == pytest.approx(KT / 1e-12, rel=1e-4)
    assert chain_enbw(**p) == pytest.approx(1 / (4 * 1e5 * 1e-12), rel=1e-4)


def test_en_c_noise_gain_plateau():
    # Graeme, Photodiode Amplifiers, 1996, ch. 4: above the noise-gain zero and below the loop
    # crossover the e_n term is e_n (1 + (Cd + Cin)/Cf). rtol 2e-2 (residual loop error).
    p = {
        "gbw": 10e9,
        "dc_gain": 1e6,
        "rf": 1e6,
        "cf": 1e-12,
        "cd": 10e-12,
        "cin": 2e-12,
        "en": 4e-9,
    }
    out = np.sqrt(output_noise_psd(2e6, **p)["amp_voltage"])
    assert out == pytest.approx(4e-9 * (1 + 12 / 1), rel=2e-2)


def test_larger_capacitance_raises_high_frequency_output_noise():
    # en*C noise (Graeme 1996, ch. 4): at 5 MHz the output density rises with Cd
    f = 5e6
    dens = [
        np.sqrt(sum(output_noise_psd(f, **{**DESIGN_A, "cd": cd}).values()))
        for cd in (1e-12, 5e-12, 20e-12)
    ]
    assert dens[0] < dens[1] < dens[2]


# ------------------------------------------------------------------------------------------
# integrator
def test_integrator_lorentzian_finite_infinite_and_vectorised():
    # Analytic: int_a^b df / (1 + (f/fc)^2) = fc (atan(b/fc) - atan(a/fc)); rtol 1e-4 (the
    # integrator's tolerance)
    fc = np.array([1e3, 3e5, 2e8])

    def psd(f):
        return 1.0 / (1.0 + (f / fc[:, None]) ** 2)

    np.testing.assert_allclose(integrate_psd(psd, 0.0, np.inf), np.pi / 2 * fc, rtol=1e-4)
    a, b = 10.0, 1e6
    np.testing.assert_allclose(
        integrate_psd(psd, a, b), fc * (np.arctan(b / fc) - np.arctan(a / fc)), rtol=1e-4
    )
    # per-design limits: grid of shape (3, F)
    hi = np.array([1e3, 1e5, 1e9])
    np.testing.assert_allclose(
        integrate_psd(psd, 1.0, hi), fc * (np.arctan(hi / fc) - np.arctan(1 / fc)), rtol=1e-4
    )


def test_integrator_one_over_f_and_errors():
    # Analytic: int_a^b df/f = ln(b/a); rtol 1e-4
    assert integrate_psd(lambda f: 1.0 / f, 1.0, 1e7) == pytest.approx(np.log(1e7), rel=1e-4)
    with pytest.raises(DesignError, match="f_lo"):
        integrate_psd(lambda f: 1.0 / f, 0.0, 1e3)
    with pytest.raises(DesignError, match="f_hi"):
        integrate_psd(lambda f: np.ones_like(f), 1.0, np.inf)
    with pytest.raises(DesignError, match="f_hi"):
        integrate_psd(lambda f: np.ones_like(f), 10.0, 5.0)


def test_one_over_f_from_zero_raises_through_the_shell():
    ns = Tia(OpAmp(voltage_noise_corner=1e3), rf=1e4, cf=1e-12).noise(
        EquivalentCircuit(capacitance=1e-12)
    )
    with pytest.raises(DesignError, match="f_lo"):
        ns.output_rms(0.0, 1e6)


def test_white_stage2_noise_needs_a_band_limit():
    tia = Tia(OpAmp(), rf=1e4, cf=1e-12)
    net = EquivalentCircuit(capacitance=1e-12)
    with pytest.raises(DesignError, match="f_hi"):
        tia.noise(net, stage2_noise=10e-9).output_rms()
    # with a brick wall the stage-2 term is e_2^2 x (cutoff - f_lo), exactly (rtol 1e-4)
    ns = tia.noise(net, stage2_noise=10e-9, post_filter=PostFilter("brickwall", 1, 1e6))
    assert ns.mean_square(1.0, np.inf)["stage2_voltage"] == pytest.approx(
        1e-16 * (1e6 - 1.0), rel=1e-4
    )


# ------------------------------------------------------------------------------------------
# properties
design = st.fixed_dictionaries(
    {
        "gbw": st.floats(1e7, 5e9),
        "dc_gain": st.floats(1e3, 1e6),
        "rf": st.floats(1e3, 1e6),
        "cf": st.floats(0.05e-12, 2e-12),
        "cd": st.floats(0.1e-12, 50e-12),
        "rsh": st.floats(1e6, 1e10),
        "cin": st.floats(0.0, 5e-12),
        "en": st.floats(1e-9, 20e-9),
        "in_": st.floats(1e-16, 1e-12),
        "i_shot": st.floats(0.0, 1e-4),
    }
)


@settings(max_examples=30, deadline=None)
@given(p=design, f=st.floats(1e2, 1e9))
def test_uncorrelated_powers_add(p, f):
    # Uncorrelated sources add in power: switching one source on raises the total PSD by
    # exactly that source's PSD and leaves the others unchanged (rtol 1e-9); the total is
    # never below a single source.
    on = output_noise_psd(f, **p)
    for key, param in (("amp_voltage", "en"), ("amp_current", "in_"), ("shot", "i_shot")):
        off = output_noise_psd(f, **{**p, param: 0.0})
        assert sum(on.values()) - sum(off.values()) == pytest.approx(
            on[key], rel=1e-9, abs=1e-12 * sum(on.values())
        )
        for other in on:
            if other != key:
                assert off[other] == pytest.approx(on[other], rel=1e-12)
    assert all(sum(on.values()) >= v for v in on.values())


@settings(max_examples=15, deadline=None)
@given(p=design)
def test_integrated_total_not_below_any_source(p):
    ms = integrated_output_noise(1.0, np.inf, **p)
    total = sum(ms.values())
    assert all(total >= v for v in ms.values())


@settings(max_examples=30, deadline=None)
@given(p=design, f=st.floats(1e3, 1e9), factor=st.floats(1.1, 10.0))
def test_larger_capacitance_raises_input_referred_noise(p, f, factor):
    # Graeme 1996, ch. 4: with Rs = 0 the input-referred e_n term is e_n |1/Zf + 1/Zd + s Cin|,
    # which grows with Cd; the other sources do not fall.
    small = sum(input_noise_psd(f, **p).values())
    large = sum(input_noise_psd(f, **{**p, "cd": p["cd"] * factor}).values())
    assert large > small


# ------------------------------------------------------------------------------------------
# shell
@pytest.fixture(scope="module")
def spectrum():
    amp = OpAmp(
        gbw=300e6,
        dc_gain=1e5,
        poles=(800e6,),
        voltage_noise=4e-9,
        current_noise=3e-15,
        voltage_noise_corner=1e3,
        current_noise_corner=100.0,
        input_capacitance=2e-12,
    )
    net = EquivalentCircuit(
        capacitance=3e-12, series_resistance=10.0, shunt_resistance=1e9, current=2e-6
    )
    return Tia(amp, rf=2e4, cf=0.3e-12).noise(
        net,
        dark_current=1e-9,
        signal_current=2e-6 - 1e-9,
        post_filter=PostFilter("bessel", 4, 20e6),
    )


def test_budget_table(spectrum):
    df = spectrum.budget()
    assert {
        "source",
        "input density [A/rtHz]",
        "output rms [V]",
        "input rms [A]",
        "share [%]",
        "dominant",
    } <= set(df.columns)
    assert df["share [%]"].sum() == pytest.approx(100.0, rel=1e-12)
    assert df["dominant"].sum() == 1
    assert "stage2_voltage" not in df.index and "shot_dark" in df.index
    # powers add: the per-source rms values add in quadrature to the total (rtol 1e-12)
    assert np.sqrt((df["output rms [V]"] ** 2).sum()) == pytest.approx(
        spectrum.output_rms(), rel=1e-12
    )
    assert spectrum.input_rms() == pytest.approx(
        spectrum.output_rms() / spectrum.midband_transimpedance
    )


def test_decade_split_adds_up(spectrum):
    # integrals over adjacent bands add to the whole-band integral (rtol 1e-3)
    shares = spectrum.by_decade()
    assert shares.to_numpy().sum() == pytest.approx(100.0, rel=1e-9)
    rms = spectrum.by_decade(quantity="output_rms")
    np.testing.assert_allclose(
        np.sqrt((rms**2).sum(axis=1)), spectrum.budget()["output rms [V]"], rtol=1e-3
    )


def test_split_shot_currents_equal_single_source(spectrum):
    # 2q(I1 + I2) = 2q I1 + 2q I2 (linearity of shot noise in the current); rtol 1e-12
    d = spectrum.by_source(1e6)
    zt = abs(spectrum.transimpedance(1e6)) * abs(PostFilter("bessel", 4, 20e6).response(1e6))
    assert d["shot_dark"] ** 2 + d["shot_signal"] ** 2 == pytest.approx(
        2 * sc.e * 2e-6 * zt**2, rel=1e-9
    )


def test_filter_reduces_noise_and_enbw(spectrum):
    p = dict(spectrum.params)
    plain = NoiseSpectrum(params=p)
    assert spectrum.output_rms() < plain.output_rms()
    assert spectrum.enbw() < plain.enbw()


def test_views(spectrum):
    import matplotlib

    matplotlib.use("Agg")
    assert "<table" in spectrum._repr_html_()
    frame = spectrum.to_frame(np.logspace(3, 8, 6))
    assert frame.shape == (6, len(spectrum.sources) + 1)
    ax = spectrum.plot().axes[0]  # the Figure (tests/views/test_result_plots.py checks it)
    assert ax.get_xscale() == "log" and ax.get_yscale() == "log"


def test_scalar_and_array_frequency(spectrum):
    f = np.array([1e3, 1e6])
    np.testing.assert_allclose(
        spectrum.output_density(f), [spectrum.output_density(x) for x in f], rtol=1e-12
    )
    assert np.ndim(spectrum.output_density(1e6)) == 0


def test_bad_inputs(spectrum):
    tia = Tia(OpAmp(), rf=1e4, cf=1e-12)
    net = EquivalentCircuit(capacitance=1e-12, current=1e-6)
    with pytest.raises(DesignError, match="temperature"):
        tia.noise(net, temperature=-1.0)
    with pytest.raises(DesignError, match="dark_current"):
        tia.noise(net, dark_current=-1e-9)
    with pytest.raises(DesignError, match="post_filter"):
        tia.noise(net, post_filter="bessel")
    with pytest.raises(DesignError, match="f_hi"):
        tia.noise(net, f_lo=10.0, f_hi=1.0)
    with pytest.raises(DesignError, match="f = -1 Hz"):
        spectrum.by_source(-1.0)
    with pytest.raises(DesignError, match="referred"):
        spectrum.by_source(1e3, referred="sideways")
    with pytest.raises(DesignError, match="quantity"):
        spectrum.by_decade(quantity="volume")
    with pytest.warns(ModelRangeWarning, match="differs"):
        tia.noise(net, dark_current=1e-9)


def test_integral_against_scipy_quad_for_a_peaking_design():
    # Source: scipy.integrate.quad (independent adaptive quadrature, epsrel 1e-10, piecewise by
    # decade) on a design with strong peaking and 1/f noise; our tolerance rtol 1e-4.
    from scipy import integrate

    p = {
        "gbw": 1e9,
        "dc_gain": 1e5,
        "poles": (2e9,),
        "rf": 1e5,
        "cf": 0.02e-12,
        "cd": 10e-12,
        "rsh": 1e9,
        "rs": 5.0,
        "cin": 2e-12,
        "en": 3e-9,
        "en_corner": 1e3,
        "in_": 1e-15,
        "i_shot": 1e-6,
    }

    def total(f):
        return sum(output_noise_psd(f, **p).values())

    edges = np.logspace(0, 12, 49)
    ref = sum(
        integrate.quad(total, a, b, epsrel=1e-10, limit=200)[0]
        for a, b in itertools.pairwise(edges)
    )
    ref += integrate.quad(total, 1e12, np.inf, epsrel=1e-10, limit=200)[0]
    assert sum(integrated_output_noise(1.0, np.inf, **p).values()) == pytest.approx(ref, rel=1e-4)


def test_vectorised_integration_equals_design_by_design():
    # The shared grid must give every design the same answer as integrating it alone (rtol 2e-4,
    # both within rtol 1e-4 of the truth); includes per-design brick-wall limits.
    rng = np.random.default_rng(7)
    n = 5
    p = {
        "gbw": rng.uniform(1e8, 1e9, n),
        "dc_gain": rng.uniform(1e4, 1e5, n),
        "poles": (rng.uniform(1e9, 3e9, n),),
        "rf": rng.uniform(1e3, 1e5, n),
        "cf": rng.uniform(0.1e-12, 1e-12, n),
        "cd": rng.uniform(1e-12, 1e-11, n),
        "rsh": 1e9,
        "rs": rng.uniform(0, 20, n),
        "cin": 2e-12,
        "en": 4e-9,
        "en_corner": 1e3,
        "in_": 1e-15,
        "i_shot": rng.uniform(0, 1e-5, n),
        "filter_kind": "brickwall",
        "filter_order": 1,
        "filter_cutoff": rng.uniform(1e6, 1e8, n),
    }
    many = integrated_output_noise(1.0, np.inf, **p)
    for i in range(n):
        one = {k: (v[i] if isinstance(v, np.ndarray) else v) for k, v in p.items()}
        one["poles"] = (p["poles"][0][i],)
        single = integrated_output_noise(1.0, np.inf, **one)
        assert sum(single.values()) == pytest.approx(sum(v[i] for v in many.values()), rel=2e-4)


def test_midband_referred_density_integrates_to_input_rms(spectrum):
    # input_rms is the output rms over |Zt(0)|: integrating the mid-band-referred PSD gives it (rtol 1e-4)
    band = (1.0, 1e10)
    ms = integrate_psd(
        lambda f: sum(v**2 for v in spectrum.by_source(f, "input_midband").values()), *band
    )
    assert np.sqrt(ms) == pytest.approx(spectrum.input_rms(*band), rel=1e-4)


@pytest.mark.parametrize(
    "kind, order, factor", [("butterworth", 2, 1.111), ("butterworth", 4, 1.026)]
)
def test_chain_enbw_is_the_filter_enbw_when_the_tia_is_fast(kind, order, factor):
    # A post filter far below a fast TIA sets the noise bandwidth: ENBW -> factor x f_3dB
    # (Motchenbacher and Connelly 1993, ch. 1; reference/butterworth_enbw.csv); atol 6e-4
    p = {"gbw": 1e13, "dc_gain": 1e8, "rf": 1e3, "cf": 1e-13, "cd": 1e-12}
    enbw = chain_enbw(**p, filter_kind=kind, filter_order=order, filter_cutoff=1e6)
    assert enbw / 1e6 == pytest.approx(factor, abs=6e-4)
    brick = chain_enbw(**p, filter_kind="brickwall", filter_order=1, filter_cutoff=1e6)
    assert brick == pytest.approx(1e6, rel=1e-4)


def test_white_noise_is_finite_at_zero_hertz():
    # Without 1/f corners every density is white at low frequency (Nyquist 4kT/R, Schottky
    # 2qI, flat amplifier densities; common practice), so the PSD at 0 Hz is the limit of the
    # PSD as f -> 0 (rtol 1e-9 against 1 mHz), not NaN from 0 * (1/0).
    p = {**DESIGN_A, "temperature": 300.0}
    with np.errstate(all="raise"):
        at0 = output_noise_psd(np.array([0.0]), **p)
        near = output_noise_psd(np.array([1e-3]), **p)
    for name in at0:
        np.testing.assert_allclose(at0[name], near[name], rtol=1e-9, err_msg=name)
    assert np.isinf(output_noise_psd(0.0, **{**p, "en_corner": 1e3})["amp_voltage"])


def test_spectral_nep_is_the_floor_without_signal_shot_noise(spectrum):
    # NEP = (input density at vanishing signal) / R (Hobbs, Building Electro-Optical Systems,
    # 2nd ed., 2009, sec. 3.4): the same stage with the signal removed gives the same NEP
    # (rtol 1e-12), while the total input density does include the signal's 2 q I shot noise.
    f, r = np.array([1e3, 1e6]), 0.8
    p = dict(spectrum.params)
    p["i_shot"] = {"dark": p["i_shot"]["dark"]}  # no signal photocurrent
    dark_only = NoiseSpectrum(params=p, post_filter=spectrum.post_filter)
    np.testing.assert_allclose(spectrum.nep(f, r), dark_only.input_density(f) / r, rtol=1e-12)
    assert np.all(spectrum.input_density(f) > dark_only.input_density(f))
