"""The Derivation result object: rendering, documentation of every symbol, lambdify contract."""

import numpy as np
import pytest
import sympy as sp

import photorx.symbolic as ps
from photorx.errors import DesignError
from photorx.symbolic.derivation import CONSTANTS, Derivation, Step

ALL = ps.all_derivations()  # cached: each derivation runs once per process


def _balanced(text):
    depth = 0
    for ch in text:
        depth += {"{": 1, "}": -1}.get(ch, 0)
        if depth < 0:
            return False
    return depth == 0


@pytest.mark.parametrize("name", sorted(ALL))
def test_every_symbol_is_documented_with_a_unit(name):
    d = ALL[name]
    used = set()
    for st in d.steps:
        used |= st.expression.free_symbols
    for eq in d.results.values():
        used |= eq.rhs.free_symbols
    undocumented = {s.name for s in used} - {s.name for s in d.symbols}
    assert not undocumented, f"{name}: symbols without meaning/unit: {sorted(undocumented)}"
    for s in used:
        assert d.symbols[s].unit and d.symbols[s].description


@pytest.mark.parametrize("name", sorted(ALL))
def test_rendering(name):
    d = ALL[name]
    tex = d.to_latex()
    assert tex.count(r"\item") >= len(d.steps) and _balanced(tex)
    assert r"\begin{align*}" in tex and tex.count(" &= ") == len(d.results)
    md = d.to_markdown()
    assert md.startswith(f"### {d.title}") and md.count("$$") == 2 * len(d.steps)
    assert all(f"- {n}:" in md for n in d.names)
    rl = d._repr_latex_()
    assert rl.startswith("$$") and rl.endswith("$$") and _balanced(rl)
    assert d.references, "every derivation names its published source"


@pytest.mark.parametrize("name", sorted(ALL))
def test_every_result_lambdifies_to_finite_numbers(name):
    # evaluate each closed form at a neutral point (every argument 1.0, s = 1j, phase margin 1 rad,
    # Q = 2 so that peaking exists) to catch unprintable or non-numeric results
    d = ALL[name]
    for res in d.names:
        fn = d.lambdify(res)
        args = {a: 1.0 for a in d.arguments(res)}
        for a in args:
            if a == "s":
                args[a] = 1j
            elif a in ("Q",):
                args[a] = 2.0
            elif a == "x":
                args[a] = 0.0
        if name == "tia_feedback_capacitor":  # needs 2 pi GBW Rf Ci > 1/2
            args.update({k: 10.0 for k in ("GBW", "R_f", "C_i") if k in args})
        if name == "pin_junction":  # the i layer is lighter than the contacts
            args.update({k: 100.0 for k in ("N_A", "N_D") if k in args})
        if name == "tia_phase_margin" and "zeta" in args:
            args["zeta"] = 0.5
        out = np.asarray(fn(**args))
        assert np.all(np.isfinite(out)), f"{name}.{res} gave {out}"


def test_lambdify_constants_and_argument_errors():
    d = ps.diffusion_capacitance()
    assert d.arguments() == ("I", "T", "n", "tau")
    assert set(d.arguments(constants=False)) == {"I", "T", "n", "tau", "k_B", "q"}
    with_consts = d.lambdify(constants=False)
    assert with_consts(I=1e-3, T=300.0, n=1.0, tau=1e-9, k_B=CONSTANTS[d.symbol("k_B")],
                       q=CONSTANTS[d.symbol("q")]) == pytest.approx(
        d.lambdify()(I=1e-3, T=300.0, n=1.0, tau=1e-9), rel=1e-15)
    with pytest.raises(DesignError, match="args"):
        d.lambdify(args=["I", "T"])
    with pytest.raises(DesignError, match="name"):
        d.expr("nonsense")
    with pytest.raises(DesignError, match="symbol"):
        d.symbol("nonsense")
    with pytest.raises(TypeError):
        d.lambdify()(1.0, 2.0)  # missing arguments


def test_derivation_needs_a_result_and_accepts_tuples():
    x = sp.Symbol("x", positive=True)
    d = Derivation("toy", steps=[("start", sp.Eq(x, 1))], results={"y": 2 * x},
                   symbols={x: ("a length", "m")})
    assert isinstance(d.steps[0], Step)
    assert d.result.lhs == sp.Symbol("y") and d["y"] == 2 * x
    assert d.lambdify()(x=np.array([1.0, 2.0])).tolist() == [2.0, 4.0]
    assert "Derivation('toy'" in repr(d)
    with pytest.raises(DesignError, match="results"):
        Derivation("empty", steps=[], results={}, symbols={})


def test_derivations_are_cached():
    assert ps.tia_second_order() is ps.tia_second_order()
    assert ps.abrupt_junction() is ALL["abrupt_junction"]
