"""Junction closed forms of photorx.symbolic against the numeric engine and the textbook forms.

Engine: photorx.device.junction (numpy, written independently). Textbook forms are typed in
from S. M. Sze and K. K. Ng, Physics of Semiconductor Devices, 3rd ed., Wiley, 2007, ch. 2
(section 2.2 abrupt and linearly graded junctions), cited "from memory" where the equation is
recalled without the text at hand.
"""

import numpy as np
import pytest
import sympy as sp
from hypothesis import given, settings
from hypothesis import strategies as st

import photorx as prx
from photorx.constants import k as K_B
from photorx.constants import eps0 as sc_eps0
from photorx.constants import q as Q_E
from photorx.device import junction as eng
from photorx.symbolic import (
    abrupt_junction,
    diffusion_capacitance,
    linearly_graded_junction,
    pin_junction,
)
from photorx.symbolic.derivation import q
from photorx.symbolic.junction import N_A, N_D, N_i, V_bi, V_r, W, a, d, eps_s, k_B, n_i, T

SETTINGS = settings(max_examples=25, deadline=None)
V_TOT = sp.Symbol("V_tot", positive=True)  # Vbi + V_R > 0 wherever the depletion layer exists
RTOL = 1e-10  # exact closed forms: the two evaluation orders differ only by rounding
SI = prx.material("Si")
MATERIALS = st.sampled_from(["Si", "Ge", "GaAs", "InP"])


def logu(lo, hi):
    return st.floats(np.log10(lo), np.log10(hi)).map(lambda e: 10.0 ** e)


def same(expr, textbook):
    """Symbolic equality for Vbi + V_R > 0 (substitute V_R = V_tot - Vbi)."""
    diff = (sp.sympify(expr) - textbook).subs(V_r, V_TOT - V_bi)
    return sp.simplify(diff) == 0


def bias_grid(vbi, vbr, n=9):
    """Reverse biases from -0.5 Vbi to 0.9 of breakdown (at most 200 V)."""
    top = min(0.9 * vbr, 200.0) if vbr > 0 else 0.0
    return np.linspace(-0.5 * vbi, max(top, 0.0), n)


@SETTINGS
@given(MATERIALS, logu(1e22, 1e26), logu(1e22, 1e26), logu(1e-10, 1e-4), st.floats(250, 350))
def test_abrupt_junction_matches_engine(mat, na, nd, area, temp):
    m = prx.material(mat)
    j = prx.AbruptJunction(m, na=na, nd=nd, area=area, temperature=temp)
    vbi = j.built_in_potential()
    v = bias_grid(vbi, j.breakdown_voltage())
    dv = abrupt_junction()
    args = dict(N_A=na, N_D=nd, V_bi=vbi, V_r=v, epsilon_s=m.permittivity)
    np.testing.assert_allclose(dv.lambdify("depletion_width")(**args), j.depletion_width(v), rtol=RTOL)
    x_p, x_n = j.depletion_edges(v)
    np.testing.assert_allclose(dv.lambdify("x_p")(**args), x_p, rtol=RTOL)
    np.testing.assert_allclose(dv.lambdify("x_n")(**args), x_n, rtol=RTOL)
    np.testing.assert_allclose(dv.lambdify("peak_field")(**args), j.peak_field(v), rtol=RTOL)
    np.testing.assert_allclose(dv.lambdify("capacitance")(A=area, **args), j.capacitance(v), rtol=RTOL)
    np.testing.assert_allclose(dv.lambdify("charge")(A=area, **args), j.charge(v), rtol=RTOL)
    # built-in potential from Boltzmann statistics with the engine's n_i(T)
    vbi_sym = dv.lambdify("built_in_potential")(N_A=na, N_D=nd, n_i=m.intrinsic_density(temp), T=temp)
    np.testing.assert_allclose(vbi_sym, vbi, rtol=RTOL)


def test_abrupt_field_and_potential_profiles():
    # the piecewise E(x) and psi(x) obey the boundary conditions they were derived with
    dv = abrupt_junction()
    args = dict(N_A=1e24, N_D=1e22, V_bi=0.8, V_r=5.0, epsilon_s=SI.permittivity)
    w = dv.lambdify("depletion_width")(**args)
    xp, xn = dv.lambdify("x_p")(**args), dv.lambdify("x_n")(**args)
    x = np.array([-2 * xp, -xp, 0.0, xn, 2 * xn])
    field = dv.lambdify("field")(x=x, **args)
    psi = dv.lambdify("potential")(x=x, **args)
    np.testing.assert_allclose(field[[0, 1, 3, 4]], 0.0, atol=1e-6 * abs(field[2]))
    np.testing.assert_allclose(-field[2], dv.lambdify("peak_field")(**args), rtol=1e-12)
    np.testing.assert_allclose(psi, [0, 0, psi[2], 5.8, 5.8], atol=1e-12)
    # Sze and Ng, sec. 2.2.1 (from memory): E_m = 2 (Vbi + V_R) / W
    np.testing.assert_allclose(-field[2], 2 * 5.8 / w, rtol=1e-12)


def test_abrupt_junction_textbook_forms():
    dv = abrupt_junction()
    v = V_bi + V_r
    # Sze and Ng, sec. 2.2.1 (from memory): W = sqrt(2 eps_s/q (N_A + N_D)/(N_A N_D) (Vbi - V)),
    # with V = -V_R; the 2kT/q majority-tail correction is not part of the depletion approximation
    sze_w = sp.sqrt(2 * eps_s / q * (N_A + N_D) / (N_A * N_D) * v)
    assert same(dv["depletion_width"], sze_w)
    # one-sided: W = sqrt(2 eps_s (Vbi - V) / (q N_B)), C/A = sqrt(q eps_s N_B / (2 (Vbi - V)))
    assert same(dv["depletion_width_one_sided"], sp.sqrt(2 * eps_s * v / (q * N_D)))
    c_one = sp.limit(dv["capacitance"], N_A, sp.oo) / dv.symbol("A")
    assert same(c_one, sp.sqrt(q * eps_s * N_D / (2 * v)))
    # C = dQ/dV equals eps_s A / W (Sze and Ng, sec. 2.2.4, from memory): the derivation's residual
    assert dv["identity_residual"] == 0
    assert same(dv["capacitance"], dv["capacitance_eps_a_over_w"])
    # Vbi = (kT/q) ln(N_A N_D / n_i^2) (Sze and Ng, sec. 2.2.1, from memory)
    assert sp.simplify(dv["built_in_potential"] - k_B * T / q * sp.log(N_A * N_D / n_i ** 2)) == 0


@SETTINGS
@given(MATERIALS, logu(1e26, 1e31), logu(1e-10, 1e-4))
def test_linearly_graded_junction_matches_engine(mat, grad, area):
    m = prx.material(mat)
    try:
        j = prx.LinearlyGradedJunction(m, gradient=grad, area=area)
    except prx.DesignError:  # gradient too shallow for the model (engine's own range)
        return
    vbi = j.built_in_potential()
    v = bias_grid(vbi, j.breakdown_voltage())
    dv = linearly_graded_junction()
    args = dict(a=grad, V_bi=vbi, V_r=v, epsilon_s=m.permittivity)
    np.testing.assert_allclose(dv.lambdify("depletion_width")(**args), j.depletion_width(v), rtol=RTOL)
    np.testing.assert_allclose(dv.lambdify("capacitance")(A=area, **args), j.capacitance(v), rtol=RTOL)
    np.testing.assert_allclose(dv.lambdify("charge")(A=area, **args), j.charge(v), rtol=RTOL)
    np.testing.assert_allclose(dv.lambdify("peak_field")(**args), j.peak_field(v), rtol=RTOL)


def test_linearly_graded_textbook_forms():
    dv = linearly_graded_junction()
    v = V_bi + V_r
    # Sze and Ng, sec. 2.2.3 (from memory): W = (12 eps_s (Vbi - V) / (q a))^(1/3),
    # C/A = (q a eps_s^2 / (12 (Vbi - V)))^(1/3), E_m = q a W^2 / (8 eps_s)
    assert same(dv["depletion_width"], sp.cbrt(12 * eps_s * v / (q * a)))
    c = dv["capacitance"] / dv.symbol("A")
    assert same(c, sp.cbrt(q * a * eps_s ** 2 / (12 * v)))
    em = (q * a * W ** 2 / (8 * eps_s)).subs(W, dv["depletion_width"])
    assert same(dv["peak_field"], em)
    assert dv["identity_residual"] == 0
    # cube-root law: C ~ (Vbi + V_R)^(-1/3)
    assert same(sp.diff(sp.log(c), V_r) * v, sp.Rational(-1, 3))


@SETTINGS
@given(logu(1e23, 1e26), logu(1e23, 1e26), logu(1e18, 1e21), logu(1e-6, 5e-5), logu(1e-10, 1e-6))
def test_pin_junction_matches_engine_both_regimes(na, nd, nid, thick, area):
    j = prx.PinJunction(SI, i_thickness=thick, i_doping=nid, area=area, p_doping=na, n_doping=nd)
    vbi, vpt, vbr = j.built_in_potential(), j.punch_through_voltage(), j.breakdown_voltage()
    v = bias_grid(vbi, vbr, 13)
    v = np.concatenate([v, [vpt * 0.999, vpt * 1.001]])
    v = v[(v > -0.5 * vbi) & (v < vbr)]
    dv = pin_junction()
    args = dict(N_A=na, N_D=nd, N_i=nid, d=thick, V_bi=vbi, V_r=v, epsilon_s=SI.permittivity)
    np.testing.assert_allclose(dv.lambdify("depletion_width")(**args), j.depletion_width(v), rtol=1e-9)
    np.testing.assert_allclose(dv.lambdify("capacitance")(A=area, **args), j.capacitance(v), rtol=1e-9)
    pt = {k: args[k] for k in dv.arguments("punch_through_voltage")}
    np.testing.assert_allclose(dv.lambdify("punch_through_voltage")(**pt), vpt, rtol=1e-9,
                               atol=1e-12 * vbi)


def test_pin_junction_textbook_forms():
    dv = pin_junction()
    # continuity at punch-through: both regimes give W = d + x_p there
    vpt = dv["punch_through_voltage"]
    below = dv["depletion_width_below"].subs(V_r, vpt)
    above = dv["depletion_width_above"].subs(V_r, vpt)
    assert sp.simplify(below - above) == 0
    # W = d + x_p with x_p = N_i d / N_A (factor the radicand so sympy sees the square)
    below = below.replace(lambda e: e.is_Pow and e.exp == sp.S.Half, lambda e: sp.sqrt(sp.factor(e.base)))
    assert sp.simplify(sp.simplify(below) - d * (1 + N_i / N_A)) == 0
    # common practice (Sze and Ng ch. 13, p-i-n photodiode, from memory): with heavily doped
    # contacts the depletion width is the i-layer thickness and C = eps A / d
    w_heavy = sp.limit(sp.limit(dv["depletion_width_above"], N_A, sp.oo), N_D, sp.oo)
    assert same(w_heavy, d)
    assert dv["identity_residual_above"] == 0
    # below punch-through the p+/i junction is a one-sided abrupt junction (N_A >> N_i)
    w_one = sp.limit(dv["depletion_width_below"], N_A, sp.oo)
    assert same(w_one, sp.sqrt(2 * eps_s * (V_bi + V_r) / (q * N_i)))


@SETTINGS
@given(logu(1e-9, 1e-1), logu(1e-12, 1e-6), st.floats(1.0, 2.0), st.floats(250, 400),
       logu(1e-16, 1e-10))
def test_diffusion_capacitance_matches_engine(i_f, tau, n, temp, i_s):
    dv = diffusion_capacitance()
    c = dv.lambdify("capacitance")(I=i_f, T=temp, n=n, tau=tau)
    np.testing.assert_allclose(c, eng.diffusion_capacitance(i_f, tau, n, temp), rtol=RTOL)
    # the stated bound: C_approx / C_exact - 1 = -I_s/(I + I_s), i.e. |error| < I_s / I
    c_exact = dv.lambdify("capacitance_exact")(I=i_f, I_s=i_s, T=temp, n=n, tau=tau)
    assert abs(c / c_exact - 1) <= i_s / i_f + 1e-13  # + rounding of the ratio


def test_diffusion_capacitance_textbook_form():
    dv = diffusion_capacitance()
    # Sze and Ng, sec. 2.3 (from memory) / common practice: C_D = tau I q / (n k T)
    tau, i_f, n = dv.symbol("tau"), dv.symbol("I"), dv.symbol("n")
    assert sp.simplify(dv["capacitance"] - tau * i_f * q / (n * k_B * T)) == 0
    # hand check with CODATA constants: 1 mA, 1 ns, n = 1, 300 K -> tau I / V_T = 38.68 pF
    c = dv.lambdify("capacitance")(I=1e-3, T=300.0, n=1.0, tau=1e-9)
    assert c == pytest.approx(1e-12 * Q_E / (K_B * 300.0), rel=1e-12)
    assert c == pytest.approx(38.68e-12, rel=1e-3)


def test_scalar_and_array_inputs():
    w = abrupt_junction().lambdify("depletion_width")
    scalar = w(N_A=1e24, N_D=1e21, V_bi=0.8, V_r=5.0, epsilon_s=SI.permittivity)
    assert np.ndim(scalar) == 0
    arr = w(N_A=1e24, N_D=np.array([1e21, 1e22])[:, None], V_bi=0.8, V_r=np.linspace(0, 10, 4),
            epsilon_s=SI.permittivity)
    assert arr.shape == (2, 4)
    assert arr[0, 1] == pytest.approx(float(w(1e24, 1e21, 0.8, 10 / 3, SI.permittivity)), rel=1e-15)


def _examples():
    import tomllib
    from pathlib import Path

    path = Path(__file__).resolve().parents[2] / "reference" / "abrupt_junction_examples.toml"
    return tomllib.loads(path.read_text())["example"]


@pytest.mark.parametrize("ex", _examples(), ids=lambda ex: ex["source"][:40])
def test_abrupt_closed_forms_reproduce_published_examples(ex):
    # reference/abrupt_junction_examples.toml (Neamen 2003 ch. 7; Streetman and Banerjee 2006
    # Ex. 5-1/5-2; Sze 2002 ch. 4; all from memory), each at its own rtol (1 %): the books round
    # kT/q to 0.0259 V, so the built-in potential is evaluated at that thermal voltage and the
    # electrostatics at the published Vbi
    dv = abrupt_junction()
    cm3, eps = 1e6, ex["eps_r"] * sc_eps0
    na, nd, rtol = ex["na"] * cm3, ex["nd"] * cm3, ex["rtol"]
    t_book = 0.0259 * Q_E / K_B
    vbi = dv.lambdify("built_in_potential")(N_A=na, N_D=nd, n_i=ex["ni"] * cm3, T=t_book)
    assert vbi == pytest.approx(ex["vbi"], rel=rtol)
    args = dict(N_A=na, N_D=nd, V_bi=ex["vbi"], V_r=ex["v_r"], epsilon_s=eps)
    assert dv.lambdify("depletion_width")(**args) == pytest.approx(ex["w_um"] * 1e-6, rel=rtol)
    if "x_n_um" in ex:
        assert dv.lambdify("x_n")(**args) == pytest.approx(ex["x_n_um"] * 1e-6, rel=rtol)
    if "c_per_cm2" in ex:
        assert dv.lambdify("capacitance")(A=1e-4, **args) == pytest.approx(ex["c_per_cm2"], rel=rtol)
    if "peak_field_v_per_cm" in ex:
        assert dv.lambdify("peak_field")(**args) == pytest.approx(ex["peak_field_v_per_cm"] * 100,
                                                                  rel=rtol)
