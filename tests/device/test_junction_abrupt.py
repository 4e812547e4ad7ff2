"""Tests of the abrupt and linearly graded junctions (photorx.device.junction_abrupt).

Outside checks: textbook worked examples in reference/abrupt_junction_examples.toml
(Neamen 2003; Streetman and Banerjee 2006; Sze 2002), and facts of the trade as
hypothesis properties (C falls with reverse bias, C*W = eps*A, dQ/dV = C, -1/2 and -1/3
power laws, Sze and Ng's universal breakdown law).
"""

from __future__ import annotations

import dataclasses
import tomllib
from pathlib import Path

import numpy as np
import pytest
import scipy.constants as sc
from hypothesis import assume, given, settings
from hypothesis import strategies as st

import photorx as prx
from photorx.errors import DesignError
from photorx.units import mm, per_cm3, per_cm4, um

REF = Path(__file__).resolve().parents[2] / "reference"
EXAMPLES = tomllib.loads((REF / "abrupt_junction_examples.toml").read_text())["example"]
SI = prx.material("Si")


def _example_junction(ex):
    # the book's own eps_r and ni, everything else from photorx
    mat = dataclasses.replace(SI, eps_r=ex["eps_r"], ni_300=ex["ni"] * per_cm3)
    return prx.AbruptJunction(mat, na=ex["na"] * per_cm3, nd=ex["nd"] * per_cm3,
                              area=ex.get("area_cm2", 1.0) * 1e-4, temperature=300.0)


# -- textbook worked examples (sources named in the reference file; from memory) -------------------
@pytest.mark.parametrize("ex", EXAMPLES, ids=[e["source"][:30] for e in EXAMPLES])
def test_textbook_worked_examples(ex):
    j = _example_junction(ex)
    rtol = ex["rtol"]  # 1 %: the books round kT/q to 0.0259 V and print 3 digits
    v = ex["v_r"]
    assert j.built_in_potential() == pytest.approx(ex["vbi"], rel=rtol)
    assert j.depletion_width(v) == pytest.approx(ex["w_um"] * um, rel=rtol)
    if "x_n_um" in ex:
        assert j.depletion_edges(v)[1] == pytest.approx(ex["x_n_um"] * um, rel=rtol)
    if "c_per_cm2" in ex:
        assert j.capacitance(v) / (j.area / 1e-4) == pytest.approx(ex["c_per_cm2"], rel=rtol)
    if "c_pf" in ex:
        assert j.capacitance(v) == pytest.approx(ex["c_pf"] * 1e-12, rel=rtol)
    if "peak_field_v_per_cm" in ex:
        assert j.peak_field(v) == pytest.approx(ex["peak_field_v_per_cm"] * 1e2, rel=rtol)


def test_design_example_scalar_and_array():
    j = prx.AbruptJunction(SI, na=1e19 * per_cm3, nd=1e15 * per_cm3, area=(1 * mm) ** 2)
    assert isinstance(j.capacitance(5.0), float)
    v = np.linspace(0, 20, 5)
    c = j.capacitance(v)
    assert c.shape == (5,)
    np.testing.assert_allclose(c, [j.capacitance(x) for x in v], rtol=1e-15)
    x_p, x_n = j.depletion_edges(v)
    np.testing.assert_allclose(x_p + x_n, j.depletion_width(v), rtol=1e-14)
    # charge neutrality Na x_p = Nd x_n (Sze & Ng ch. 2, Eq. 11), rtol 1e-12
    np.testing.assert_allclose(j.na * x_p, j.nd * x_n, rtol=1e-12)


def test_designs_broadcast_against_bias():
    # many designs at once: param[..., None] against a 1-D bias grid
    nd = np.array([1e14, 1e15, 1e16]) * per_cm3
    j = prx.AbruptJunction(SI, na=1e19 * per_cm3, nd=nd[:, None], area=(1 * mm) ** 2)
    v = np.linspace(0, 10, 7)
    c = j.capacitance(v)
    assert c.shape == (3, 7)
    single = prx.AbruptJunction(SI, na=1e19 * per_cm3, nd=nd[1], area=(1 * mm) ** 2)
    np.testing.assert_allclose(c[1], single.capacitance(v), rtol=1e-14)


def test_one_sided_limit():
    # p+ n: W -> sqrt(2 eps (Vbi+V)/(q Nd)) (Sze & Ng 3rd ed. ch. 2, Eq. 13), rtol 1e-5
    j = prx.AbruptJunction(SI, na=1e20 * per_cm3, nd=1e15 * per_cm3, area=1e-6)
    v = 5.0
    w1 = np.sqrt(2 * SI.permittivity * (j.built_in_potential() + v) / (sc.e * 1e15 * per_cm3))
    assert j.depletion_width(v) == pytest.approx(w1, rel=1e-4)


def test_built_in_potential_falls_with_temperature():
    # ni rises with T, so Vbi falls (Sze & Ng ch. 2; common practice), and stays below Eg/q
    vbi = [prx.AbruptJunction(SI, 1e18 * per_cm3, 1e16 * per_cm3, 1e-6, temperature=t)
           .built_in_potential() for t in (250.0, 300.0, 350.0, 400.0)]
    assert np.all(np.diff(vbi) < 0)
    assert max(vbi) < SI.band_gap(250.0)


# -- properties (facts of the trade) ---------------------------------------------------------------
dopings = st.floats(14.0, 19.0).map(lambda e: 10.0 ** e * per_cm3)
areas = st.floats(-10.0, -5.0).map(lambda e: 10.0 ** e)
materials = st.sampled_from(["Si", "Ge", "GaAs", "InP", "InGaAs"])


def _bias_grid(j, n=60):
    top = min(0.99 * j.breakdown_voltage(), 100.0)
    return np.linspace(-0.8 * j.built_in_potential(), top, n)


@settings(max_examples=40, deadline=None)
@given(name=materials, na=dopings, nd=dopings, area=areas)
def test_abrupt_invariants(name, na, nd, area):
    j = prx.AbruptJunction(prx.material(name), na=na, nd=nd, area=area)
    # two heavily doped sides make a tunnel junction with (almost) no reverse range: skip
    assume(j.breakdown_voltage() > 0.1)
    v = _bias_grid(j)
    c = j.capacitance(v)
    w = j.depletion_width(v)
    assert np.all(np.isfinite(c)) and np.all(c > 0)
    # C decreases monotonically with reverse bias (Sze & Ng ch. 2; common practice)
    assert np.all(np.diff(c) < 0)
    # C W = eps A exactly (parallel-plate form of the depletion capacitance), rtol 1e-13
    np.testing.assert_allclose(c * w, j.material.permittivity * area, rtol=1e-13)
    # dQ/dV = C, central difference, rtol 1e-5
    h = 1e-4 * (j.built_in_potential() + v)
    dq = (j.charge(v + h) - j.charge(v - h)) / (2 * h)
    np.testing.assert_allclose(dq, c, rtol=1e-5)
    # Gauss: peak field = q Na x_p / eps (Sze & Ng ch. 2, Eq. 9), rtol 1e-12
    x_p, _ = j.depletion_edges(v)
    np.testing.assert_allclose(j.peak_field(v), sc.e * na * x_p / j.material.permittivity,
                               rtol=1e-12)


@settings(max_examples=30, deadline=None)
@given(name=materials, a=st.floats(19.5, 23.0).map(lambda e: 10.0 ** e * per_cm4), area=areas)
def test_graded_invariants(name, a, area):
    j = prx.LinearlyGradedJunction(prx.material(name), gradient=a, area=area)
    v = _bias_grid(j)
    c = j.capacitance(v)
    assert np.all(np.isfinite(c)) and np.all(np.diff(c) < 0)
    np.testing.assert_allclose(c * j.depletion_width(v), j.material.permittivity * area,
                               rtol=1e-13)
    h = 1e-4 * (j.built_in_potential() + v)
    np.testing.assert_allclose((j.charge(v + h) - j.charge(v - h)) / (2 * h), c, rtol=1e-5)
    # self-consistency: Vbi = 2 V_T ln(a W0 / 2 ni) (Sze & Ng ch. 2, Eq. 32), rtol 1e-10
    vt = sc.k * 300.0 / sc.e
    w0 = j.depletion_width(0.0)
    ni = j.material.intrinsic_density(300.0)
    assert j.built_in_potential() == pytest.approx(2 * vt * np.log(a * w0 / (2 * ni)), rel=1e-10)


def test_power_laws_far_from_zero_bias():
    # C ~ V^-1/2 (abrupt) and V^-1/3 (graded) for V >> Vbi (Sze & Ng ch. 2, Eqs. 22, 34);
    # log-slope between 100 V and 200 V, rtol 1 % (the Vbi offset costs 0.6 %)
    ab = prx.AbruptJunction(SI, na=1e19 * per_cm3, nd=1e14 * per_cm3, area=1e-6)
    gr = prx.LinearlyGradedJunction(SI, gradient=1e19 * per_cm4, area=1e-6)
    for j, slope in ((ab, -0.5), (gr, -1.0 / 3.0)):
        c1, c2 = j.capacitance(100.0), j.capacitance(200.0)
        assert np.log(c2 / c1) / np.log(2.0) == pytest.approx(slope, rel=0.01)


def test_breakdown_follows_universal_law():
    # one-sided abrupt Si: VB = 60 (Eg/1.1)^1.5 (N/1e16)^-3/4 V with Eg = 1.12 eV (Sze & Ng
    # 3rd ed. ch. 2, universal expression, and Appendix G). photorx subtracts Vbi (the law
    # gives the total potential at breakdown), which matters at high doping: rtol 3 % up to
    # 1e16 cm^-3, 10 % at 1e17 cm^-3 where Vbi is 9 % of VB.
    for n_cm3, rtol in ((1e15, 0.03), (1e16, 0.03), (1e17, 0.10)):
        vb = 60.0 * (1.12 / 1.1) ** 1.5 * (n_cm3 / 1e16) ** -0.75
        j = prx.AbruptJunction(SI, na=1e20 * per_cm3, nd=n_cm3 * per_cm3, area=1e-6)
        assert j.breakdown_voltage() == pytest.approx(vb, rel=rtol)
    # graded Si: VB = 60 (Eg/1.1)^1.2 (a/3e20 cm^-4)^-0.4 V (same section), rtol 3 %
    for a_cm4 in (3e20, 3e21):
        g = prx.LinearlyGradedJunction(SI, gradient=a_cm4 * per_cm4, area=1e-6)
        vb = 60.0 * (1.12 / 1.1) ** 1.2 * (a_cm4 / 3e20) ** -0.4
        assert g.breakdown_voltage() == pytest.approx(vb, rel=0.03)


# -- bad input -------------------------------------------------------------------------------------
@pytest.mark.parametrize("kw, name", [
    (dict(na=-1e21), "na"), (dict(nd=0.0), "nd"), (dict(nd=1e3), "nd"), (dict(na=1e30), "na"),
    (dict(area=-1e-6), "area"), (dict(temperature=20.0), "temperature"),
    (dict(temperature=650.0), "temperature"), (dict(material="Sn"), "material"),
    (dict(material=3.0), "material"), (dict(nd=np.nan), "nd"),
])
def test_bad_design_raises_naming_parameter(kw, name):
    args = dict(material=SI, na=1e24, nd=1e21, area=1e-6)
    args.update(kw)
    with pytest.raises(DesignError, match=name) as info:
        prx.AbruptJunction(**args)
    assert info.value.parameter == name


def test_bias_limits_raise_not_nan():
    j = prx.AbruptJunction(SI, na=1e24, nd=1e21, area=1e-6)
    vbi, vb = j.built_in_potential(), j.breakdown_voltage()
    for bad in (-vbi, -0.95 * vbi, -5.0, vb * 1.01, np.array([1.0, 2 * vb]), np.nan):
        with pytest.raises(DesignError, match="v_r"):
            j.capacitance(bad)
    assert np.isfinite(j.capacitance(-0.89 * vbi))
    g = prx.LinearlyGradedJunction(SI, gradient=1e28, area=1e-6)
    with pytest.raises(DesignError, match="v_r"):
        g.capacitance(-g.built_in_potential())
    with pytest.raises(DesignError, match="gradient"):
        prx.LinearlyGradedJunction(SI, gradient=-1.0, area=1e-6)
    with pytest.raises(DesignError, match="gradient"):
        prx.LinearlyGradedJunction(prx.material("Ge"), gradient=1e24, area=1e-6,
                                   temperature=600.0)


def test_string_material_accepted():
    j = prx.AbruptJunction("GaAs", na=1e24, nd=1e22, area=1e-6)
    assert j.material is prx.material("GaAs")


@pytest.mark.parametrize("name", ["Si", "Ge", "GaAs", "InP", "InGaAs"])
@pytest.mark.parametrize("temperature", [50.0, 600.0])
def test_temperature_range_edges_finite_and_vbi_below_gap(name, temperature):
    # over the whole offered range Vbi stays positive and below Eg/q for doping below Nc and
    # Nv (non-degenerate junction; Sze & Ng ch. 2, common practice), and nothing is NaN
    mat = prx.material(name)
    na, nd = 1e17 * per_cm3, 1e15 * per_cm3
    assert na < mat.nv(temperature) and nd < mat.nc(temperature)
    try:
        j = prx.AbruptJunction(mat, na=na, nd=nd, area=1e-6, temperature=temperature)
    except DesignError as err:  # hot material: ni exceeds the doping, refused by name
        bad = {"na": na, "nd": nd}[err.parameter]
        assert mat.intrinsic_density(temperature) >= bad
        return
    vbi = j.built_in_potential()
    assert 0 < vbi < mat.band_gap(temperature)
    assert np.all(np.isfinite(j.capacitance(np.array([-0.5 * vbi, 0.0, 5.0]))))


def test_temperature_array_broadcasts():
    t = np.array([250.0, 300.0, 350.0])[:, None]
    j = prx.AbruptJunction(SI, na=1e24, nd=1e21, area=1e-6, temperature=t)
    c = j.capacitance(np.array([0.0, 5.0]))
    assert c.shape == (3, 2)
    one = prx.AbruptJunction(SI, na=1e24, nd=1e21, area=1e-6, temperature=350.0)
    np.testing.assert_allclose(c[2], one.capacitance(np.array([0.0, 5.0])), rtol=1e-14)


@pytest.mark.parametrize("call, name", [
    # the vectorised core returned NaN (sqrt) or a negative width (cbrt) for a nonpositive
    # total potential, and a nonpositive Vbi for a doping below ni; now a DesignError
    (lambda: prx.device.junction.abrupt_depletion_width(-1.0, 1e22, 1e22, 1e-10), "v_total"),
    (lambda: prx.device.junction.graded_depletion_width(np.array([1.0, -1.0]), 1e28, 1e-10),
     "v_total"),
    (lambda: prx.device.junction.pin_depletion_edges(np.nan, 1e25, 1e19, 1e25, 1e-6, 1e-10),
     "v_total"),
    (lambda: prx.device.junction.abrupt_built_in_potential(1e22, 1e10, 1e16), "na*nd"),
    (lambda: prx.device.junction.abrupt_built_in_potential(-1e22, 1e22, 1e16), "na"),
])
def test_core_functions_reject_unphysical_arguments(call, name):
    with pytest.raises(DesignError) as err:
        call()
    assert err.value.parameter == name
