"""Noise closed forms of photorx.symbolic against the numeric engine, scipy and the textbooks.

Engine: photorx.circuit.noise (numeric PSDs and their integration, written independently)
and the NoiseSpectrum shell reached through photorx.Tia.noise. External: scipy.integrate.quad
and scipy.constants.
"""

import numpy as np
import pytest
import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants as sc
from scipy import integrate

import photorx as prx
from photorx.circuit import noise as eng
from photorx.symbolic import nep, tia_input_noise, tia_output_noise, tia_second_order
from photorx.symbolic.noise import C_T, Q, Z_0, e_nw, f, f_0

SETTINGS = settings(max_examples=20, deadline=None)
F = np.logspace(1, 10, 28)  # Hz


def logu(lo, hi):
    return st.floats(np.log10(lo), np.log10(hi)).map(lambda e: 10.0 ** e)


design = st.fixed_dictionaries({
    "gbw": logu(1e6, 1e10), "dc_gain": logu(1e3, 1e7), "rf": logu(1e3, 1e7),
    "cf": logu(1e-14, 1e-11), "cd": logu(1e-13, 1e-10), "cin": logu(1e-13, 1e-11),
    "rsh": logu(1e5, 1e11), "en": logu(1e-9, 1e-7), "in_": logu(1e-15, 1e-11),
    "i_shot": logu(1e-12, 1e-4), "temperature": st.floats(250.0, 400.0),
})


def input_psd_symbolic(p, f_hz, rsh=None):
    fn = tia_input_noise().lambdify("input_noise_psd")
    return fn(C_d=p["cd"], C_f=p["cf"], C_in=p["cin"], I=p["i_shot"], R_f=p["rf"],
              R_sh=p["rsh"] if rsh is None else rsh, T=p["temperature"], e_n=p["en"], f=f_hz,
              i_n=p["in_"])


def engine_params(p, rsh=None, poles=()):
    return dict(gbw=p["gbw"], dc_gain=p["dc_gain"], poles=poles, rf=p["rf"], cf=p["cf"],
                cd=p["cd"], rsh=p["rsh"] if rsh is None else rsh, rs=0.0, cin=p["cin"],
                en=p["en"], in_=p["in_"], temperature=p["temperature"], i_shot=p["i_shot"])


@SETTINGS
@given(design, logu(1e7, 1e10))
def test_input_referred_psd_matches_engine(p, f2):
    # exact for R_s = 0 and any amplifier A(s): checked with a two-pole amplifier; rtol 1e-9
    ref = sum(eng.input_noise_psd(F, **engine_params(p, poles=(f2,))).values())
    np.testing.assert_allclose(input_psd_symbolic(p, F), ref, rtol=1e-9)
    ref_inf = sum(eng.input_noise_psd(F, **engine_params(p, rsh=np.inf)).values())
    np.testing.assert_allclose(input_psd_symbolic(p, F, rsh=np.inf), ref_inf, rtol=1e-9)


def test_input_noise_textbook_form():
    d = tia_input_noise()
    # Graeme 1996 ch. 6 / Hobbs 2009 ch. 18 (from memory): the amplifier's voltage noise appears
    # at the input as e_n |Y_f + Y_in|, rising as e_n 2 pi f C_T above the noise corner, with
    # C_T = C_d + C_in + C_f the total capacitance at the summing node
    assert sp.simplify(d["input_noise_psd"] - d["input_noise_psd_tidy"].subs(
        C_T, d.symbol("C_d") + d.symbol("C_in") + d.symbol("C_f"))) == 0
    high_f = sp.limit(d["en_term"] / f ** 2, f, sp.oo)
    assert sp.simplify(high_f - (2 * sp.pi * e_nw * (d.symbol("C_d") + d.symbol("C_in")
                                                    + d.symbol("C_f"))) ** 2) == 0
    # the input-referred e_n transfer is independent of the amplifier gain A
    assert d.symbol("A") not in d["en_transfer"].free_symbols


@SETTINGS
@given(design)
def test_integrated_output_noise_matches_engine(p):
    # closed form exact for the dominant-pole, ideal-diode (rsh = inf, rs = 0) TIA; the engine
    # integrates numerically to rtol 1e-6, so agreement is asserted to rtol 1e-5
    d = tia_output_noise()
    v2 = d.lambdify("output_noise_ms_circuit")(
        A_0=p["dc_gain"], C_f=p["cf"], C_i=p["cd"] + p["cin"], GBW=p["gbw"], I=p["i_shot"],
        R_f=p["rf"], T=p["temperature"], e_n=p["en"], i_n=p["in_"])
    ref = eng.integrated_output_noise(0.0, np.inf, rtol=1e-6, **engine_params(p, rsh=np.inf))
    np.testing.assert_allclose(v2, sum(ref.values()), rtol=1e-5)


@SETTINGS
@given(st.floats(0.2, 5.0), logu(1e3, 1e9))
def test_second_order_integrals_match_scipy_quad(qv, f0):
    # Lyapunov (Parseval) closed forms vs scipy.integrate.quad of |H|^2 and f^2 |H|^2;
    # quad's own tolerance is 1e-10 relative, asserted at 1e-7
    d = tia_output_noise()

    def h2(u):  # |H|^2 at the normalised frequency u = f / f0
        return 1.0 / ((1 - u ** 2) ** 2 + (u / qv) ** 2)

    def quad(g):
        return sum(integrate.quad(g, a, b, epsrel=1e-11, limit=400)[0]
                   for a, b in ((0, 1), (1, 10), (10, np.inf)))

    i0 = f0 * quad(h2)
    i2 = f0 ** 3 * quad(lambda u: u ** 2 * h2(u))
    np.testing.assert_allclose(d.lambdify("white_integral")(Q=qv, f_0=f0), i0, rtol=1e-7)
    np.testing.assert_allclose(d.lambdify("f2_integral")(Q=qv, f_0=f0), i2, rtol=1e-7)


def test_output_noise_textbook_forms():
    d = tia_output_noise()
    # Motchenbacher and Connelly 1993, ch. 1 (from memory): the noise bandwidth of a
    # second-order Butterworth low pass is pi/(2 sqrt 2) = 1.11 times its -3 dB frequency
    # (= f0 for Q = 1/sqrt 2)
    enbw_bw = d["enbw"].subs(Q, 1 / sp.sqrt(2)) / f_0
    assert sp.simplify(enbw_bw - sp.pi / (2 * sp.sqrt(2))) == 0
    assert float(enbw_bw) == pytest.approx(1.1107, abs=1e-4)
    # the e_n C_T term integrates with the third power of the bandwidth (Hobbs 2009 ch. 18,
    # from memory: "en C noise" grows as f^3/2 in rms)
    en_part = d["output_noise_ms"].subs(d.symbol("S_w"), 0)
    assert sp.simplify(sp.diff(sp.log(en_part), f_0) * f_0) == 3
    # the circuit form is the generic one with tia_second_order's Z0, f0, Q and the white
    # input PSD of Rf, shot and amplifier noise (e_n^2/Rf^2 included, no shunt resistance)
    so = tia_second_order()
    k_b, t, i_dc, i_n = (d.symbol(n) for n in ("k_B", "T", "I", "i_n"))
    r_f = so.symbol("R_f")
    s_w = 4 * k_b * t / r_f + 2 * d.symbol("q") * i_dc + i_n ** 2 + e_nw ** 2 / r_f ** 2
    generic = d["output_noise_ms"].subs({Z_0: so["dc_transimpedance"], f_0: so["natural_frequency"],
                                         Q: so["q"], C_T: so.symbol("C_i") + so.symbol("C_f"),
                                         d.symbol("S_w"): s_w})
    assert sp.simplify(generic - d["output_noise_ms_circuit"]) == 0


def test_output_noise_matches_noise_spectrum_shell():
    # one design through the public shell (Tia.noise -> NoiseSpectrum.output_rms), rtol 1e-3
    # (the shell integrates from 1 Hz with its default rtol 1e-4)
    amp = prx.OpAmp(gbw=200e6, dc_gain=1e5, voltage_noise=5e-9, current_noise=2e-15,
                    input_capacitance=3e-12)
    tia = prx.Tia(amp, rf=1e4, cf=0.5e-12)
    net = prx.EquivalentCircuit(capacitance=5e-12, series_resistance=0.0,
                                shunt_resistance=np.inf, current=1e-6)
    rms = tia.noise(net, temperature=300.0).output_rms()
    v2 = tia_output_noise().lambdify("output_noise_ms_circuit")(
        A_0=1e5, C_f=0.5e-12, C_i=8e-12, GBW=200e6, I=1e-6, R_f=1e4, T=300.0, e_n=5e-9, i_n=2e-15)
    np.testing.assert_allclose(rms, np.sqrt(v2), rtol=1e-3)


def test_nep_textbook_forms():
    d = nep()
    # Saleh and Teich, Fundamentals of Photonics (responsivity R = eta q lambda / (h c), from
    # memory): 1.2398 um / (hc/q in um eV) -> R = eta lambda[um] / 1.23984 A/W
    r = d.lambdify("responsivity")(eta=1.0, lambda_0=1.55e-6)
    assert r == pytest.approx(1.55 / (sc.h * sc.c / sc.e * 1e6), rel=1e-12)
    assert r == pytest.approx(1.2502, abs=1e-4)
    # NEP = i_rms / R: 1 nA rms at 1 A/W is 1 nW (definition, common practice)
    eta_1 = sc.h * sc.c / (sc.e * 1.55e-6)  # efficiency giving R = 1 A/W at 1550 nm
    assert d.lambdify("nep")(eta=eta_1, i_rms=1e-9, lambda_0=1.55e-6) == pytest.approx(1e-9, rel=1e-12)
    dens = d.lambdify("nep_density")(S_i=np.array([1e-24, 4e-24]), eta=eta_1, lambda_0=1.55e-6)
    np.testing.assert_allclose(dens, [1e-12, 2e-12], rtol=1e-12)


def test_noise_corner_is_where_en_c_term_equals_the_rest():
    d = tia_input_noise()
    args = dict(C_T=8e-12, I=1e-9, R_f=1e5, R_sh=np.inf, T=300.0, e_n=5e-9, i_n=1e-15)
    fc = d.lambdify("noise_corner")(**args)
    tidy = d.lambdify("input_noise_psd_tidy")
    total = tidy(f=fc, **args)
    white = tidy(f=0.0, **args)
    np.testing.assert_allclose(total, 2 * white, rtol=1e-12)
