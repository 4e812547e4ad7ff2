"""The loop's polynomial ratios (photorx.circuit.loop_rational) against the nodal form,
python-control and scipy.signal."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.signal
from hypothesis import given, settings
from hypothesis import strategies as st

from photorx.circuit.noise import noise_transfer_functions
from photorx.circuit.loop_rational import PATHS, loop_polynomials
from photorx.circuit.tia import transimpedance
from photorx.errors import DesignError

from tia_reference_models import DESIGNS, SCALE, closed_tf

F = np.logspace(-1, 12, 157)


def _with_axis(p):
    return {k: (tuple(np.asarray(x)[..., None] for x in v) if k == "poles"
                else np.asarray(v)[..., None]) for k, v in p.items()}


@pytest.mark.parametrize("name", sorted(DESIGNS))
def test_transimpedance_against_python_control(name):
    # Source: python-control (PyPI "control") transfer-function arithmetic, assembled from
    # the circuit in tia_reference_models.py independently of photorx's polynomial algebra.
    p = DESIGNS[name]
    ref = closed_tf(p)(2j * np.pi * F / SCALE)
    ours = loop_polynomials(**p).transimpedance(F)
    np.testing.assert_allclose(ours, ref, rtol=1e-9)


@pytest.mark.parametrize("name", sorted(DESIGNS))
def test_denominator_evaluation_against_scipy_freqs(name):
    # Source: scipy.signal.freqs evaluates b(jw)/a(jw) from descending coefficients; our
    # even/odd split must give the same junction path A0 / Den(jw).
    p = DESIGNS[name]
    lp = loop_polynomials(**p)
    w = 2 * np.pi * F
    _, h = scipy.signal.freqs(lp.numerators["junction"][0, ::-1], lp.den[0, ::-1], worN=w)
    np.testing.assert_allclose(lp.transimpedance(F), h, rtol=1e-12)
    mags = lp.squared_magnitudes(F)
    for path in PATHS:
        _, h = scipy.signal.freqs(lp.numerators[path][0, ::-1], lp.den[0, ::-1], worN=w)
        np.testing.assert_allclose(mags[path], np.abs(h) ** 2, rtol=1e-12)


_designs = st.fixed_dictionaries({
    "gbw": st.floats(1e6, 1e10), "dc_gain": st.floats(1e2, 1e6),
    "pole": st.one_of(st.just(np.inf), st.floats(1e6, 1e11)),
    "rf": st.floats(1e2, 1e7), "cf": st.one_of(st.just(0.0), st.floats(1e-15, 1e-11)),
    "cd": st.floats(1e-13, 1e-10), "rsh": st.one_of(st.just(np.inf), st.floats(1e4, 1e11)),
    "rs": st.one_of(st.just(0.0), st.floats(1.0, 1e3)), "cin": st.floats(0.0, 1e-11),
    "zero": st.one_of(st.just(None), st.floats(1e5, 1e10))})


@settings(max_examples=60, deadline=None)
@given(_designs)
def test_every_path_matches_the_nodal_form(d):
    # The nodal form (photorx.circuit.tia, photorx.circuit.noise.noise_transfer_functions)
    # is checked against ngspice in test_tia_ngspice.py and tests/analysis/test_noise.py;
    # the polynomial ratios must equal it to rounding (the algebra of the module notes).
    p = dict(gbw=d["gbw"], dc_gain=d["dc_gain"], poles=(d["pole"],), rf=d["rf"], cf=d["cf"],
             cd=d["cd"], rsh=d["rsh"], rs=d["rs"], cin=d["cin"])
    if d["zero"] is not None:  # a real amplifier zero: every path carries N_A(s)
        p["zeros"] = (d["zero"],)
    nodal = noise_transfer_functions(F, **p)
    lp = loop_polynomials(**p)
    mags = lp.squared_magnitudes(F)
    for path in PATHS:
        np.testing.assert_allclose(mags[path], np.abs(nodal[path]) ** 2, rtol=1e-10)
    np.testing.assert_allclose(lp.transimpedance(F), transimpedance(F, **p), rtol=1e-10)


def test_design_shapes_and_per_design_grids():
    # common practice: the result follows the designs' broadcast shape; a grid per design
    # (shape + (M,)) gives the same values as the shared grid
    p = dict(DESIGNS["rs_rsh_pole"])
    p["rf"] = np.array([[1e4], [2e4]]) * np.ones((2, 3))
    lp = loop_polynomials(**p, shape=(4, 2, 3))
    assert lp.shape == (4, 2, 3)
    shared = lp.transimpedance(F)
    assert shared.shape == (4, 2, 3, F.size)
    per_design = lp.transimpedance(np.broadcast_to(F, (4, 2, 3, F.size)))
    np.testing.assert_array_equal(shared, per_design)
    ref = transimpedance(F, **_with_axis({**p, "rf": np.broadcast_to(p["rf"], (4, 2, 3))}))
    np.testing.assert_allclose(shared, ref, rtol=1e-10)


def test_bad_input_is_a_design_error():
    p = dict(DESIGNS["plain"], cd=-1e-12)
    with pytest.raises(DesignError, match="cd"):
        loop_polynomials(**p)
