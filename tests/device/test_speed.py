"""Checks of photorx.device.speed: transit response and bandwidth, diffusion response, RC limit."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import quad, solve_bvp
from scipy.optimize import brentq

from photorx.device import optics, speed
from photorx.errors import DesignError

SETTINGS = settings(max_examples=25, deadline=None)


def _ramo_impulse(t, w, v_far, v_near, alpha):
    """Ramo-Shockley current per pair, written directly from the carrier counts (not from
    photorx): far carriers from x < W - v_far t and near carriers from x > v_near t are
    still moving, each inducing q v / W; generation ~ alpha e^{-alpha x} on 0 < x < W."""
    norm = 1 - np.exp(-alpha * w)
    n_far = (1 - np.exp(-alpha * max(w - v_far * t, 0.0))) / norm
    n_near = (np.exp(-alpha * min(v_near * t, w)) - np.exp(-alpha * w)) / norm
    return v_far / w * n_far + v_near / w * n_near


@pytest.mark.parametrize("w, v_far, v_near, alpha", [
    (2e-6, 6.5e4, 4.8e4, 7e5),
    (10e-6, 1e5, 8e4, 1e4),
    (1e-6, 1e5, 1e5, 1e7),
])
def test_drift_response_against_numerical_fourier_transform(w, v_far, v_near, alpha):
    # Fourier transform of the Ramo-Shockley impulse response by scipy.integrate.quad
    # (S. Ramo, Proc. IRE 27, 584 (1939)); rtol 1e-6.
    t_end = w / min(v_far, v_near)
    for f in (0.0, 0.3 / t_end, 1.0 / t_end, 3.0 / t_end):
        w0 = 2 * np.pi * f
        re = quad(lambda t: _ramo_impulse(t, w, v_far, v_near, alpha) * np.cos(w0 * t), 0, t_end,
                  points=[w / v_far, w / v_near], limit=400, epsabs=1e-12)[0]
        im = -quad(lambda t: _ramo_impulse(t, w, v_far, v_near, alpha) * np.sin(w0 * t), 0,
                   t_end, points=[w / v_far, w / v_near], limit=400, epsabs=1e-12)[0]
        h = speed.drift_response(f, w, v_far, v_near, alpha)
        assert h == pytest.approx(re + 1j * im, rel=1e-6, abs=1e-9)


def test_uniform_transit_bandwidth_bowers_burrus():
    # J. E. Bowers and C. A. Burrus, J. Lightwave Technol. LT-5, 1339 (1987): uniform
    # absorption, f_3dB = 3.5 v / (2 pi W) (from memory; 2 digits quoted, rtol 1 %).
    w, v = 3e-6, 6e4
    assert speed.transit_bandwidth(w, v, v) == pytest.approx(3.5 * v / (2 * np.pi * w), rel=0.01)


def test_uniform_transit_factor_against_scipy():
    # The triangular pulse (2/t)(1 - t/T) has |H|^2 = 1/2 at omega T = x solving
    # |2/(jx) (1 - (1 - e^{-jx})/(jx))|^2 = 1/2, found here with scipy.optimize.brentq;
    # rtol 1e-9.
    def h2(x):
        return abs(2 / (1j * x) * (1 - (1 - np.exp(-1j * x)) / (1j * x))) ** 2 - 0.5
    x = brentq(h2, 0.5, 6.0, xtol=1e-14)
    assert speed.UNIFORM_TRANSIT_FACTOR == pytest.approx(x / (2 * np.pi), rel=1e-9)
    assert speed.transit_bandwidth(1e-6, 1e5, 1e5) * 1e-6 / 1e5 == pytest.approx(
        x / (2 * np.pi), rel=1e-8)


def test_edge_generation_transit_bandwidth_sze():
    # Generation at the illuminated edge: one carrier type crosses the whole layer, the
    # response is the sinc of the transit time; |sinc(f t)|^2 = 1/2 at f t = 0.443
    # (numpy.sinc + brentq), the "f_3dB about 0.4-0.45 v_s/W" of S. M. Sze and K. K. Ng,
    # Physics of Semiconductor Devices, 3rd ed., 2007, ch. 13 (from memory); rtol 1e-6.
    ft = brentq(lambda x: np.sinc(x) ** 2 - 0.5, 0.1, 0.9, xtol=1e-14)
    assert speed.EDGE_TRANSIT_FACTOR == pytest.approx(ft, rel=1e-9)
    w, v = 2e-6, 7e4
    assert speed.transit_bandwidth(w, v, 3e4, alpha=1e11) == pytest.approx(ft * v / w, rel=1e-6)
    assert 0.4 <= ft <= 0.45


def test_transit_bandwidth_array_broadcast():
    w = np.array([1e-6, 2e-6, 4e-6])[:, None]
    v = np.array([5e4, 1e5])
    f = speed.transit_bandwidth(w, v, v)
    assert f.shape == (3, 2)
    np.testing.assert_allclose(f, speed.UNIFORM_TRANSIT_FACTOR * v / w, rtol=1e-8)


@SETTINGS
@given(st.floats(1e-7, 1e-4), st.floats(1e4, 2e5), st.floats(1e4, 2e5), st.floats(0.0, 1e7))
def test_drift_response_invariants(w, vf, vn, alpha):
    # H(0) = 1 (all charge collected) and |H| <= 1 (a nonnegative impulse response).
    assert speed.drift_response(0.0, w, vf, vn, alpha) == pytest.approx(1.0, abs=1e-9)
    f = np.array([0.1, 1.0, 10.0]) * vf / w
    assert np.all(np.abs(speed.drift_response(f, w, vf, vn, alpha)) <= 1 + 1e-9)


def test_photocurrent_spectrum_dc_equals_collection():
    # At f = 0 the spectrum reproduces the DC collection model of photorx.device.optics.
    kw = dict(alpha=3e4, top_thickness=0.3e-6, depletion_width=5e-6, bottom_thickness=20e-6,
              top_diffusion_length=1e-6, bottom_diffusion_length=30e-6)
    dc = speed.photocurrent_spectrum(0.0, top_lifetime=1e-8, bottom_lifetime=1e-5, v_far=1e5,
                                     v_near=8e4, **kw)
    np.testing.assert_allclose(np.real(dc), optics.collection_fractions(**kw), rtol=1e-12)


def test_spectrum_of_a_validated_stack_is_the_sum_of_the_parts():
    # The search path (photocurrent_layers once, photocurrent_spectrum_of per step) must give
    # exactly the public function's top + drift + bottom (same arithmetic, no revalidation).
    kw = dict(alpha=3e4, top_thickness=0.3e-6, depletion_width=np.array([[2e-6], [5e-6]]),
              bottom_thickness=np.inf, top_diffusion_length=1e-6, bottom_diffusion_length=30e-6,
              top_lifetime=1e-8, bottom_lifetime=1e-5, v_far=1e5, v_near=8e4)
    f = np.logspace(3, 11, 9)
    top, drift, bottom = speed.photocurrent_spectrum(f, **kw)
    np.testing.assert_array_equal(speed.photocurrent_spectrum_of(f, speed.photocurrent_layers(**kw)),
                                  top + drift + bottom)
    with pytest.raises(DesignError, match="v_near"):
        speed.photocurrent_layers(**{**kw, "v_near": -1.0})


def test_diffusion_response_against_bvp():
    # Small-signal diffusion in the bottom layer: D n'' - n (1 + j w tau)/tau = -G(x),
    # n(0) = 0 at the depletion edge, n'(H) = 0 (reflecting back); collected flux D n'(0)
    # per photon, solved numerically with scipy.integrate.solve_bvp (real and imaginary
    # parts); rtol 1e-4.
    alpha, hh, d_n, tau = 2e4, 30e-6, 1e-3, 1e-6  # [m^-1], [m], [m^2/s], [s]
    ln = np.sqrt(d_n * tau)
    omega = 1.5 / tau

    al, hl, wt = alpha * ln, hh / ln, omega * tau  # dimensionless: u = x / L, m = n D / L

    def rhs(u, y):  # y = [Re m, Im m, Re m', Im m']; m'' = m (1 + j w tau) - alpha L e^{-alpha L u}
        g = al * np.exp(-al * u)
        return np.vstack([y[2], y[3], y[0] - wt * y[1] - g, y[1] + wt * y[0]])

    def bc(ya, yb):
        return np.array([ya[0], ya[1], yb[2], yb[3]])

    u = np.linspace(0, hl, 201)
    sol = solve_bvp(rhs, bc, u, np.zeros((4, u.size)), tol=1e-9, max_nodes=100000)
    assert sol.success
    ref = sol.sol(0.0)[2] + 1j * sol.sol(0.0)[3]  # collected flux D n'(0) per photon
    _, _, bottom = speed.photocurrent_spectrum(
        omega / (2 * np.pi), alpha, 0.0, 1e-12, hh, 1e-6, ln, 1e-9, tau, 1e5, 1e5)
    assert bottom == pytest.approx(ref, rel=1e-4)


def test_rc_and_combined_bandwidth():
    # Common practice: 1 pF on 50 ohm gives 3.18 GHz; rtol 1e-3.
    assert speed.rc_bandwidth(1e-12, 50.0) == pytest.approx(3.183e9, rel=1e-3)
    assert speed.rc_bandwidth(1e-12, 0.0) == np.inf
    # Bowers and Burrus (1987): f = (f_t^-2 + f_RC^-2)^-1/2; inf entries drop out; rtol 1e-12.
    assert speed.combined_bandwidth(3e9, 4e9) == pytest.approx(2.4e9, rel=1e-12)
    assert speed.combined_bandwidth(3e9, np.inf) == pytest.approx(3e9, rel=1e-12)


def test_diffusion_time():
    # S. M. Sze and K. K. Ng, 3rd ed., ch. 13: t_diff = d^2 / (2 D); 10 um in Si holes
    # (D = 12 cm^2/s) takes about 42 ns; rtol 1e-3.
    assert speed.diffusion_time(10e-6, 12e-4) == pytest.approx(41.7e-9, rel=1e-3)


@SETTINGS
@given(st.floats(1.0, 1e8), st.floats(0.01, 0.2), st.floats(1e4, 2e5))
def test_drift_velocity_limits(field, mu, vs):
    # Caughey and Thomas (1967) form: below both mu E and v_sat, increasing in E.
    v = speed.drift_velocity(field, mu, vs)
    assert v <= min(mu * field, vs) * (1 + 1e-12)
    assert speed.drift_velocity(2 * field, mu, vs) > v


@pytest.mark.parametrize("call, name", [
    (lambda: speed.transit_bandwidth(-1e-6, 1e5, 1e5), "width"),
    (lambda: speed.transit_bandwidth(1e-6, 0.0, 1e5), "v_far"),
    (lambda: speed.drift_response(-1.0, 1e-6, 1e5, 1e5), "f"),
    (lambda: speed.rc_bandwidth(0.0, 50.0), "capacitance"),
    (lambda: speed.transit_time(1e-6, -1.0), "velocity"),
    (lambda: speed.combined_bandwidth(1e9, -1.0), "bandwidths[1]"),
])
def test_bad_inputs_name_parameter(call, name):
    with pytest.raises(DesignError) as err:
        call()
    assert err.value.parameter == name
    assert name in str(err.value)


@settings(max_examples=25, deadline=None)
@given(seed=st.integers(0, 2**32 - 1), n_stacks=st.integers(1, 4), n=st.integers(8, 40))
def test_repeated_stacks_evaluate_once_with_the_same_values(seed, n_stacks, n):
    # A grid repeats each bias's stack for every amplifier: photocurrent_spectrum_of then
    # computes each distinct (stack, f) once. Reference: photocurrent_spectrum (the three
    # parts summed), which never takes that path; shared, per-design lattice and random
    # per-design grids; exact up to the summation order (rtol 1e-13).
    rng = np.random.default_rng(seed)
    pick = rng.integers(0, n_stacks, n)
    width = rng.uniform(0.5e-6, 5e-6, n_stacks)[pick][:, None]
    v_far = rng.uniform(3e4, 1e5, n_stacks)[pick][:, None]
    kw = dict(alpha=np.full((1, 1), 3e5), top_thickness=0.2e-6, depletion_width=width,
              bottom_thickness=np.inf, top_diffusion_length=1e-6, bottom_diffusion_length=8e-6,
              top_lifetime=1e-9, bottom_lifetime=5e-9, v_far=v_far, v_near=6e4)
    layers = speed.photocurrent_layers(**kw)
    grids = [np.geomspace(1e3, 1e11, 30),
             10.0 ** ((rng.integers(15, 25, n)[:, None] + np.arange(20)) / 5),
             rng.uniform(0.0, 3e10, (n, 3))]
    for f in grids:
        ref = sum(speed.photocurrent_spectrum(f, **kw))
        np.testing.assert_allclose(speed.photocurrent_spectrum_of(f, layers), ref, rtol=1e-13)
    # the first grid found the distinct stacks (a few, so the shared path was taken)
    assert (layers["distinct"] is not None) == (len(np.unique(pick)) <= n // 2)
