"""The TIA closed forms of photorx.symbolic against the numeric engine and the textbooks.

Engine: photorx.circuit.tia (nodal model written independently in numpy). External
references: python-control (phase margin of the two-pole loop), textbook forms typed in
from the sources named beside each check.
"""

import numpy as np
import pytest
import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st

from photorx.circuit import tia as eng
from photorx.symbolic import (
    tia_feedback_capacitor,
    tia_nodal_analysis,
    tia_phase_margin,
    tia_second_order,
    tia_single_pole,
    tia_two_pole,
)
from photorx.symbolic.tia import A_0, C_f, C_i, GBW, Q, R_f, zeta

SETTINGS = settings(max_examples=25, deadline=None)
F = np.logspace(2, 10, 33)  # Hz


def logu(lo, hi):
    """Log-uniform float strategy on [lo, hi]."""
    return st.floats(np.log10(lo), np.log10(hi)).map(lambda e: 10.0 ** e)


circuit = st.fixed_dictionaries({
    "gbw": logu(1e6, 1e10), "dc_gain": logu(1e2, 1e7), "rf": logu(1e2, 1e7),
    "cf": logu(1e-15, 1e-11), "cd": logu(1e-13, 1e-9), "rsh": logu(1e5, 1e11),
    "rs": logu(1e-1, 1e3), "cin": logu(1e-13, 1e-11),
})


def sym_args(p, s):
    return dict(A_0=p["dc_gain"], GBW=p["gbw"], R_f=p["rf"], C_f=p["cf"], C_d=p["cd"],
                R_sh=p["rsh"], R_s=p["rs"], C_in=p["cin"], s=s)


@SETTINGS
@given(circuit)
def test_single_pole_transimpedance_matches_engine(p):
    # exact closed form: rtol 1e-9 (double-precision rounding of two algebraically equal forms)
    zt = tia_single_pole().lambdify("transimpedance")(**sym_args(p, 2j * np.pi * F))
    ref = eng.transimpedance(F, p["gbw"], p["dc_gain"], (), p["rf"], p["cf"], p["cd"], p["rsh"],
                             p["rs"], p["cin"])
    np.testing.assert_allclose(zt, ref, rtol=1e-9)


@SETTINGS
@given(circuit, logu(1e6, 1e10))
def test_two_pole_transimpedance_and_loop_gain_match_engine(p, f2):
    d = tia_two_pole()
    args = sym_args(p, 2j * np.pi * F)
    args["f_2"] = f2
    zt = d.lambdify("transimpedance")(**args)
    ref = eng.transimpedance(F, p["gbw"], p["dc_gain"], (f2,), p["rf"], p["cf"], p["cd"],
                             p["rsh"], p["rs"], p["cin"])
    np.testing.assert_allclose(zt, ref, rtol=1e-9)
    t = d.lambdify("loop_gain")(**args)
    ref_t = eng.loop_gain(F, p["gbw"], p["dc_gain"], (f2,), p["rf"], p["cf"], p["cd"], p["rsh"],
                          p["rs"], p["cin"])
    np.testing.assert_allclose(t, ref_t, rtol=1e-9)


@SETTINGS
@given(circuit)
def test_feedback_factor_and_noise_gain_match_engine(p):
    d = tia_nodal_analysis()
    args = {k: v for k, v in sym_args(p, 2j * np.pi * F).items() if k not in ("A_0", "GBW")}
    passive = (p["rf"], p["cf"], p["cd"], p["rsh"], p["rs"], p["cin"])
    np.testing.assert_allclose(d.lambdify("feedback_factor")(**args),
                               eng.feedback_factor(F, *passive), rtol=1e-9)
    np.testing.assert_allclose(d.lambdify("noise_gain")(**args), eng.noise_gain(F, *passive),
                               rtol=1e-9)


def test_nodal_transimpedance_equals_textbook_factored_form():
    # Graeme 1996 ch. 2 / Hobbs 2009 ch. 18: Zt = Zf * Zd/(Zd+Rs) * T/(1+T) (the engine's form)
    d = tia_nodal_analysis()
    assert sp.simplify(d["transimpedance"] - d["transimpedance_factored"]) == 0
    # noise gain = 1/beta exactly (Graeme 1996 ch. 3: noise gain is the reciprocal feedback factor)
    assert sp.simplify(d["noise_gain"] * d["feedback_factor"] - 1) == 0


def test_nodal_transimpedance_limits():
    # common practice: Zt -> Rf at DC with an ideal amplifier and no diode leakage
    d = tia_nodal_analysis()
    a, r_sh, s = d.symbol("A"), d.symbol("R_sh"), d.symbol("s")
    zt_ideal = sp.limit(sp.limit(d["transimpedance"], a, sp.oo), r_sh, sp.oo)
    assert sp.simplify(zt_ideal.subs(s, 0) - d.symbol("R_f")) == 0


second_order = st.fixed_dictionaries({
    "gbw": logu(1e6, 1e10), "dc_gain": logu(1e2, 1e7), "rf": logu(1e2, 1e7),
    "cf": logu(1e-15, 1e-11), "cd": logu(1e-13, 1e-9), "cin": logu(1e-13, 1e-11),
})


def so_args(p):
    return dict(A_0=p["dc_gain"], GBW=p["gbw"], R_f=p["rf"], C_f=p["cf"], C_i=p["cd"] + p["cin"])


def engine_zt(p, f, cf=None):
    # f = 0 with rsh = inf gives NaN in the engine (1/(1/inf + 0)); callers pass f > 0
    return eng.transimpedance(f, p["gbw"], p["dc_gain"], (), p["rf"], p["cf"] if cf is None else cf,
                              p["cd"], np.inf, 0.0, p["cin"])


@SETTINGS
@given(second_order)
def test_canonical_second_order_matches_engine(p):
    d = tia_second_order()
    a = so_args(p)
    z0, f0, qv = (d.lambdify(n)(**{k: a[k] for k in d.arguments(n)})
                  for n in ("dc_transimpedance", "natural_frequency", "q"))
    s = 2j * np.pi * F
    w0 = 2 * np.pi * f0
    canonical = z0 * w0 ** 2 / (s ** 2 + s * w0 / qv + w0 ** 2)
    np.testing.assert_allclose(canonical, engine_zt(p, F), rtol=1e-9)
    np.testing.assert_allclose(d.lambdify("transimpedance")(s=s, **a), engine_zt(p, F), rtol=1e-9)


@SETTINGS
@given(second_order)
def test_bandwidth_and_peaking_match_engine(p):
    d = tia_second_order()
    a = so_args(p)
    f3 = d.lambdify("bandwidth")(**{k: a[k] for k in d.arguments("bandwidth")})
    z0 = abs(engine_zt(p, 1e-7 * f3))  # |H| differs from 1 by O(1e-14) there
    # exact: |Zt(f_3dB)| = Z0/sqrt(2) on the engine, rtol 1e-9
    np.testing.assert_allclose(abs(engine_zt(p, f3)), z0 / np.sqrt(2), rtol=1e-9)
    qv = d.lambdify("q")(**a)
    if qv > 1 / np.sqrt(2) * 1.01:
        f0 = d.lambdify("natural_frequency")(**{k: a[k] for k in d.arguments("natural_frequency")})
        f_pk = f0 * np.sqrt(1 - 1 / (2 * qv ** 2))
        peak = d.lambdify("peaking")(**a)
        np.testing.assert_allclose(abs(engine_zt(p, f_pk)) / z0, peak, rtol=1e-9)
        near = abs(engine_zt(p, f_pk * np.array([0.97, 1.03]))) / z0
        assert np.all(near < peak)


def test_second_order_textbook_forms():
    d = tia_second_order()
    # Graeme 1996 ch. 3 (from memory): with Cf -> 0 and A0 -> inf the response's pole pair sits at
    # f0 = sqrt(GBW / (2 pi Rf Ci)).
    f0 = d["natural_frequency_gbw_limit"].subs(C_f, 0)
    assert sp.simplify(f0 - sp.sqrt(GBW / (2 * sp.pi * R_f * C_i))) == 0
    # Ogata, Modern Control Engineering (bandwidth of the standard second-order system, from memory):
    # w_b = w_n sqrt(1 - 2 z^2 + sqrt(4 z^4 - 4 z^2 + 2))
    ogata = sp.sqrt(1 - 2 * zeta ** 2 + sp.sqrt(4 * zeta ** 4 - 4 * zeta ** 2 + 2))
    ratio = d["bandwidth_ratio"].subs(Q, 1 / (2 * zeta))
    for z in (0.2, 0.5, 1 / np.sqrt(2), 1.0, 3.0):
        assert float(ratio.subs(zeta, z)) == pytest.approx(float(ogata.subs(zeta, z)), rel=1e-12)
    # common practice: the Butterworth (Q = 1/sqrt 2) response is 3 dB down at f0
    assert sp.simplify(d["bandwidth_ratio"].subs(Q, 1 / sp.sqrt(2)) - 1) == 0
    # Ogata (resonant peak, from memory): M_r = 1 / (2 z sqrt(1 - z^2))
    mr = sp.lambdify(zeta, 1 / (2 * zeta * sp.sqrt(1 - zeta ** 2)))
    peak_q = d.lambdify("peaking_of_q")
    zs = np.array([0.05, 0.2, 0.4, 0.6, 0.7])
    np.testing.assert_allclose(peak_q(Q=1 / (2 * zs)), mr(zs), rtol=1e-12)
    # no peaking for zeta >= 1/sqrt(2): the maximum is the DC value
    np.testing.assert_allclose(peak_q(Q=1 / (2 * np.array([0.71, 1.0, 3.0]))), 1.0, rtol=0)


fc_design = st.fixed_dictionaries({
    "gbw": logu(1e6, 1e10), "dc_gain": logu(1e3, 1e7), "rf": logu(1e3, 1e7),
    "cd": logu(1e-13, 1e-9), "cin": logu(1e-13, 1e-11), "cf": st.just(0.0),
})


@SETTINGS
@given(fc_design)
def test_butterworth_cf_gives_maximally_flat_engine_response(p):
    ci = p["cd"] + p["cin"]
    d, so = tia_feedback_capacitor(), tia_second_order()
    cf = d.lambdify("cf_butterworth")(A_0=p["dc_gain"], C_i=ci, GBW=p["gbw"], R_f=p["rf"])
    q0 = so.lambdify("q")(A_0=p["dc_gain"], C_f=0.0, C_i=ci, GBW=p["gbw"], R_f=p["rf"])
    if not q0 > 1 / np.sqrt(2) * (1 + 1e-9):
        # already overdamped without Cf: no Cf > 0 reaches Q = 1/sqrt(2) (stated assumption)
        assert not cf > 0
        return
    assert cf > 0
    a = dict(A_0=p["dc_gain"], GBW=p["gbw"], R_f=p["rf"], C_f=cf, C_i=ci)
    f0 = so.lambdify("natural_frequency")(**a)
    # Butterworth definition (common practice): |H|^2 = 1/(1 + (f/f0)^4) exactly; rtol 1e-8
    # (the quadratic's root loses a few digits when A0 is small)
    fr = f0 * np.logspace(-2, 1.5, 15)
    h = engine_zt(p, fr, cf) / engine_zt(p, 1e-7 * f0, cf)
    np.testing.assert_allclose(np.abs(h) ** 2, 1 / (1 + (fr / f0) ** 4), rtol=1e-8)


@SETTINGS
@given(logu(1e6, 1e10), logu(1e3, 1e7), logu(1e-13, 1e-9))
def test_butterworth_cf_approximation_within_stated_bound(gbw, rf, ci):
    d = tia_feedback_capacitor()
    x0 = 2 * np.pi * gbw * rf * ci
    if x0 < 1:
        return
    exact = d.lambdify("cf_butterworth_gbw_limit")(C_i=ci, GBW=gbw, R_f=rf)
    approx = d.lambdify("cf_butterworth_approx")(C_i=ci, GBW=gbw, R_f=rf)
    # bound (see tia_feedback_capacitor Notes): approx/exact = (1 - 1/(2 x0))^-1/2, which lies
    # in [1, 1 + 1/(2 x0)] for x0 >= 1 and is 1 + 1/(4 x0) to first order
    ratio = approx / exact
    assert 1.0 <= ratio <= 1.0 + 1.0 / (2 * x0) + 1e-12
    np.testing.assert_allclose(ratio, d.lambdify("approx_ratio")(C_i=ci, GBW=gbw, R_f=rf), rtol=1e-12)


def test_feedback_capacitor_textbook_forms():
    d = tia_feedback_capacitor()
    # Graeme 1996 ch. 3 (from memory): Cf = sqrt(Ci / (2 pi Rf GBW)) puts the feedback zero at the
    # intercept of the noise gain and the open-loop gain (45 degree design)
    assert sp.simplify(d["cf_45deg"] - sp.sqrt(C_i / (2 * sp.pi * R_f * GBW))) == 0
    # the usual Butterworth approximation is sqrt(2) times that (common practice)
    assert sp.simplify(d["cf_butterworth_approx"] / d["cf_45deg"] - sp.sqrt(2)) == 0
    # the A0 -> infinity limit of the finite-gain exact Cf is the GBW-limit form
    lim = sp.limit(d["cf_butterworth"], A_0, sp.oo)
    assert sp.simplify(lim - d["cf_butterworth_gbw_limit"]) == 0
    # the any-Q form at Q = 1/sqrt(2) is the Butterworth form
    assert sp.simplify(d["cf_for_q"].subs(Q, 1 / sp.sqrt(2)) - d["cf_butterworth_gbw_limit"]) == 0


pm_design = st.fixed_dictionaries({
    "gbw": logu(1e6, 1e10), "dc_gain": logu(1e3, 1e7), "rf": logu(1e3, 1e7),
    "cd": logu(1e-13, 1e-9), "cin": logu(1e-13, 1e-11), "cf": logu(1e-15, 1e-11),
})


@SETTINGS
@given(pm_design)
def test_phase_margin_matches_engine_loop_gain(p):
    d = tia_phase_margin()
    a = so_args(p)
    fc = d.lambdify("crossover")(**a)
    pm = d.lambdify("phase_margin")(**a)
    t = eng.loop_gain(fc, p["gbw"], p["dc_gain"], (), p["rf"], p["cf"], p["cd"], np.inf, 0.0,
                      p["cin"])
    # exact closed form (root of the quadratic in cancellation-free form): |T(fc)| = 1 to
    # rtol 1e-9, phase margin to 1e-7 degree
    np.testing.assert_allclose(abs(t), 1.0, rtol=1e-9)
    np.testing.assert_allclose(180 + np.degrees(np.angle(t)), pm, atol=1e-7)


@SETTINGS
@given(st.floats(0.05, 2.0))
def test_classical_pm_relation_matches_python_control(z):
    control = pytest.importorskip("control")
    # reference: python-control stability_margins of the two-pole loop w0^2/(s (s + 2 z w0))
    w0 = 1.0
    loop = control.tf([w0 ** 2], [1, 2 * z * w0, 0])
    _, pm_ref, *_ = control.stability_margins(loop)
    pm = tia_phase_margin().lambdify("phase_margin_of_zeta")(zeta=z)
    np.testing.assert_allclose(pm, pm_ref, atol=1e-6)


@SETTINGS
@given(logu(1e6, 1e10), logu(1e3, 1e7), logu(1e-13, 1e-9))
def test_classical_pm_relation_is_the_tia_with_cf_zero(gbw, rf, ci):
    # The TIA with Cf = 0 and A0 -> inf is exactly the two-pole loop: the closed-loop Q from
    # tia_second_order must give the engine's phase margin through the classical relation.
    # A0 = 1e12 stands for infinity: the error is of order 1/A0 relative.
    d, so = tia_phase_margin(), tia_second_order()
    a = dict(A_0=1e12, GBW=gbw, R_f=rf, C_f=0.0, C_i=ci)
    qv = so.lambdify("q")(**a)
    pm_rel = d.lambdify("phase_margin_of_q")(Q=qv)
    np.testing.assert_allclose(pm_rel, d.lambdify("phase_margin")(**a), atol=1e-6)


def test_phase_margin_q_relation_textbook_forms():
    d = tia_phase_margin()
    phi = d.symbol("phi_m")
    # inverse relation Q = sqrt(cos PM)/sin PM (common practice in op-amp stability notes,
    # from memory) and round trip PM(Q(PM)) = PM
    rad = phi * sp.pi / 180  # q_of_phase_margin takes degrees
    assert sp.simplify(d["q_of_phase_margin"] - sp.sqrt(sp.cos(rad)) / sp.sin(rad)) == 0
    pm_of_q = d.lambdify("phase_margin_of_q")
    q_of_pm = d.lambdify("q_of_phase_margin")
    pms = np.array([20.0, 45.0, 60.0, 76.35, 85.0])
    np.testing.assert_allclose(pm_of_q(Q=q_of_pm(phi_m=pms)), pms, rtol=1e-12)
    # Franklin, Powell and Emami-Naeini (from memory): PM = 65.5 deg at zeta = 0.707 and
    # PM ~ 100 zeta for zeta < 0.6 (a rule of thumb: within 3.5 degrees over 0.1..0.6, the
    # largest gap, 3.3 degrees, near zeta = 0.35)
    pm_z = d.lambdify("phase_margin_of_zeta")
    assert pm_z(zeta=1 / np.sqrt(2)) == pytest.approx(65.53, abs=0.01)
    zs = np.linspace(0.1, 0.6, 11)
    assert np.all(np.abs(pm_z(zeta=zs) - 100 * zs) < 3.5)
    # Q = 1/sqrt(2) at PM = 65.5 deg; Q = 1 at PM = 51.8 deg (common practice, from memory)
    assert q_of_pm(phi_m=65.53) == pytest.approx(1 / np.sqrt(2), rel=1e-3)
    assert d.lambdify("phase_margin_of_q")(Q=1.0) == pytest.approx(51.83, abs=0.01)


def test_array_broadcasting_and_bad_names():
    from photorx.errors import DesignError

    f0 = tia_second_order().lambdify("natural_frequency_gbw_limit")
    out = f0(C_f=np.array([0.1e-12, 1e-12])[:, None], C_i=np.array([1e-12, 2e-12, 5e-12]),
             GBW=1e8, R_f=1e4)
    assert out.shape == (2, 3)
    assert np.isscalar(f0(1e-12, 1e-12, 1e8, 1e4)) or np.ndim(f0(1e-12, 1e-12, 1e8, 1e4)) == 0
    with pytest.raises(DesignError, match="name"):
        tia_second_order().expr("no_such_result")
    with pytest.raises(DesignError, match="args"):
        tia_second_order().lambdify("q", args=["A_0", "GBW"])


@SETTINGS
@given(pm_design)
def test_second_order_figures_match_engine_metrics(p):
    # engine: photorx.circuit.metrics.tia_figures (closed-loop poles, bisection on a log grid).
    # The closed forms are exact for this loop (dominant-pole amplifier, ideal diode); the
    # engine refines crossings by bisection, so agreement is asserted to rtol 1e-7 (figures)
    # and 1e-6 degree / 1e-6 dB (phase margin, peaking)
    from photorx.circuit.metrics import tia_figures

    fig = tia_figures(p["gbw"], p["dc_gain"], (), p["rf"], p["cf"], p["cd"], np.inf, 0.0, p["cin"])
    assert fig["stable"]
    so, pmd = tia_second_order(), tia_phase_margin()
    a = so_args(p)

    def ev(d, name):
        return d.lambdify(name)(**{k: a[k] for k in d.arguments(name)})

    np.testing.assert_allclose(fig["dc_transimpedance"], ev(so, "dc_transimpedance"), rtol=1e-12)
    np.testing.assert_allclose(fig["q"], ev(so, "q"), rtol=1e-9)
    np.testing.assert_allclose(fig["damping"], ev(so, "damping"), rtol=1e-9)
    np.testing.assert_allclose(fig["bandwidth"], ev(so, "bandwidth"), rtol=1e-7)
    np.testing.assert_allclose(fig["peaking_db"], 20 * np.log10(ev(so, "peaking")), atol=1e-6)
    np.testing.assert_allclose(fig["phase_margin"], ev(pmd, "phase_margin"), atol=1e-6)
    np.testing.assert_allclose(fig["crossover"], ev(pmd, "crossover"), rtol=1e-7)
