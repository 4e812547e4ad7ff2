"""Tests of the 1-D Poisson solver against the depletion approximation, its classic
Debye-length correction and the DEVSIM device simulator.

Outside checks:
- depletion approximation of the abrupt junction (Sze and Ng, Physics of Semiconductor
  Devices, 3rd ed. 2007, ch. 2, Eqs. (10)-(12)): C = A sqrt(q eps N / (2 (Vbi + V))).
- the mobile-carrier correction of the 1/C^2 line, Vbi -> Vbi - 2kT/q (D. P. Kennedy,
  P. C. Murley and W. Kleinfelder, IBM J. Res. Dev. 12, 399 (1968); Sze and Ng ch. 2).
- DEVSIM (PyPI `devsim`, with Debian's OpenBLAS for BLAS), full drift-diffusion of the
  same diode, run by tests/devsim_reference.py; skipped where DEVSIM does not import.
"""

from __future__ import annotations

import os
import numpy as np
import pytest
import scipy.constants as sc
from hypothesis import given, settings
from hypothesis import strategies as st

import photorx as prx
from photorx.device.poisson import junction_mesh, poisson_cv, solve_poisson
from photorx.errors import DesignError

SI = prx.material("Si")
AREA = 1e-6
VT = sc.k * 300.0 / sc.e


def _device(na, nd, xj=6e-6, length=12e-6, fine=5e-9):
    x = junction_mesh(length, xj, fine, 20e-9, fine_width=0.3e-6)
    return x, (lambda z: np.where(z < xj, -na, nd))


def _depletion_c(na, nd, v, shift=0.0):
    ni = SI.intrinsic_density(300.0)
    vbi = VT * np.log(na * nd / ni**2)
    neff = na * nd / (na + nd)
    return AREA * np.sqrt(sc.e * SI.permittivity * neff / (2 * (vbi + v - shift))), vbi


@pytest.mark.parametrize("na, nd", [(1e22, 1e22), (1e22, 1e21)])
def test_far_from_zero_bias_the_depletion_approximation_holds(na, nd):
    x, n = _device(na, nd)
    v = np.array([0.0, 20.0])
    cv = poisson_cv(x, n, v, AREA, SI)
    c_da, _ = _depletion_c(na, nd, v)
    # 20 V: the carrier correction kT/q / (Vbi + V) is ~0.1 %; depletion approx within 0.3 %
    assert cv["capacitance"].iloc[1] == pytest.approx(c_da[1], rel=3e-3)
    # zero bias: the depletion approximation is low by several % (Debye tails)
    assert cv["capacitance"].iloc[0] / c_da[0] - 1 > 0.02


@pytest.mark.parametrize("na, nd", [(1e22, 1e22), (1e22, 1e21)])
def test_the_1_over_c2_intercept_is_vbi_minus_2kt_over_q(na, nd):
    x, n = _device(na, nd)
    v = np.linspace(3.0, 10.0, 8)
    c = poisson_cv(x, n, v, AREA, SI)["capacitance"].to_numpy()
    slope, offset = np.polyfit(v, 1 / c**2, 1)
    _, vbi = _depletion_c(na, nd, v)
    # Kennedy, Murley and Kleinfelder (1968): intercept at -(Vbi - 2kT/q); 2 mV (~VT/13)
    assert offset / slope == pytest.approx(vbi - 2 * VT, abs=2e-3)
    # and the slope still gives the doping (Sze and Ng ch. 2, C-V profiling), 0.1 %
    neff = na * nd / (na + nd)
    assert 2 / (sc.e * SI.permittivity * AREA**2 * slope) == pytest.approx(neff, rel=1e-3)
    # near zero bias the corrected formula is far closer than the plain one
    c0 = poisson_cv(x, n, [0.2], AREA, SI)["capacitance"].iloc[0]
    plain, _ = _depletion_c(na, nd, 0.2)
    corrected, _ = _depletion_c(na, nd, 0.2, shift=2 * VT)
    assert abs(c0 / corrected - 1) < 0.25 * abs(c0 / plain - 1)


def test_potential_field_and_carriers_are_consistent():
    na, nd = 1e22, 1e21
    x, n = _device(na, nd)
    sol = solve_poisson(x, n, [5.0], SI)[0]
    ni = SI.intrinsic_density(300.0)
    # contacts: total potential drop Vbi + V_R, Vbi = V_T ln(Na Nd / ni^2) (Sze and Ng Eq. 3)
    drop = sol.potential[-1] - sol.potential[0]
    assert drop == pytest.approx(VT * np.log(na * nd / ni**2) + 5.0, rel=1e-9)
    # neutral contacts: majority densities equal the doping, mass action n p = ni^2 there
    assert sol.holes[0] == pytest.approx(na, rel=1e-6)
    assert sol.electrons[-1] == pytest.approx(nd, rel=1e-6)
    # Gauss: the integral of the field is the potential drop (box integration), 1e-12
    assert np.sum(-sol.field * np.diff(x)) == pytest.approx(drop, rel=1e-12)
    # peak field near the depletion value 2 (Vbi + V) / W (Sze and Ng Eq. 12), 2 %
    j = prx.AbruptJunction(SI, na=na, nd=nd, area=AREA)
    assert sol.peak_field == pytest.approx(j.peak_field(5.0), rel=0.02)


def test_profile_of_the_poisson_cv_recovers_the_doping():
    na, nd = 1e24, 1e21
    x, n = _device(na, nd, xj=0.3e-6, length=10e-6, fine=1e-9)
    v = np.linspace(1.0, 15.0, 15)
    cv = poisson_cv(x, n, v, AREA, SI)
    prof = prx.doping_profile(cv, area=AREA, material=SI)
    # beyond a few Debye lengths (130 nm here) the C-V profile is the doping, 1 %
    np.testing.assert_allclose(prof["doping"], nd, rtol=0.01)


def test_input_errors():
    x = np.linspace(0, 1e-6, 50)
    with pytest.raises(DesignError, match="opposite signs"):
        solve_poisson(x, np.full(x.size, 1e21), 0.0, SI)
    with pytest.raises(DesignError, match="strictly increasing"):
        solve_poisson(x[::-1], lambda z: np.where(z < 5e-7, -1e21, 1e21), 0.0, SI)
    with pytest.raises(DesignError, match="material"):
        solve_poisson(x, lambda z: np.where(z < 5e-7, -1e21, 1e21), 0.0)


def test_agrees_with_devsim():
    import devsim_reference

    if not devsim_reference.available():
        if os.environ.get("PHOTORX_REQUIRE_DEVSIM"):
            pytest.fail("DEVSIM does not import, and PHOTORX_REQUIRE_DEVSIM is set (CI)")
        pytest.skip("DEVSIM does not import here (needs a BLAS/LAPACK: libopenblas0-pthread)")
    # p+n junction, CGS units as DEVSIM takes them: 1e18 / 1e15 cm^-3, junction at 2 um
    case = {"na": 1e18, "nd": 1e15, "xj": 2e-4, "length": 1.2e-3, "bias": [1.0, 5.0],
            "fine_step": 3e-8, "coarse_step": 5e-6, "ramp": 1.0}
    ref = devsim_reference.run_case(case)
    k = ref["constants"]
    x, n = _device(1e24, 1e21, xj=2e-6, length=12e-6, fine=1e-9)
    cv = poisson_cv(x, n, case["bias"], 1.0, permittivity=k["eps"] * 1e2,  # F/cm -> F/m
                    intrinsic_density=k["ni"] * 1e6)
    # DEVSIM's constants differ from CODATA (q = 1.6e-19 C, its own kT/q) by ~0.14 %; the
    # two solvers agree within 0.5 % per unit area (F/cm^2 -> F/m^2: x 1e4)
    np.testing.assert_allclose(cv["capacitance"], np.asarray(ref["capacitance"]) * 1e4,
                               rtol=5e-3)


@settings(max_examples=5)
@given(log_na=st.floats(21.0, 23.0), log_nd=st.floats(21.0, 23.0))
def test_capacitance_falls_with_bias_and_exceeds_the_depletion_value(log_na, log_nd):
    na, nd = 10.0**log_na, 10.0**log_nd
    x, n = _device(na, nd, xj=4e-6, length=8e-6)
    v = np.array([0.5, 2.0, 6.0])
    c = poisson_cv(x, n, v, AREA, SI)["capacitance"].to_numpy()
    c_da, _ = _depletion_c(na, nd, v)
    # physical invariants: C falls with reverse bias; the Debye tails add charge at the
    # edges, so C lies above the depletion approximation, by a few % at most here
    # (Kennedy, Murley and Kleinfelder 1968)
    assert np.all(np.diff(c) < 0)
    assert np.all(c > c_da) and np.all(c < 1.1 * c_da)
