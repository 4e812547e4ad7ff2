"""Sensitivity: NEP, minimum detectable power, analog SNR, dynamic range, BER and Q, required power."""

from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants as sc
from scipy import stats

from photorx.analysis.sensitivity import (
    analog_snr,
    ber_from_q,
    dynamic_range,
    maximum_input_current,
    minimum_detectable_power,
    noise_equivalent_power,
    q_factor,
    q_from_ber,
    required_average_power,
    sensitivity_dbm,
)
from photorx.errors import DesignError

REFERENCE = Path(__file__).resolve().parents[2] / "reference"
Q_E = sc.e


def test_q_ber_published_points():
    # Source: Agrawal, Fiber-Optic Communication Systems, sec. 4.5 (reference/noise_and_ber_checks.csv):
    # Q = 6 -> BER ~ 1e-9, Q = 7.03 -> 1e-12; rtol from the rounding of the quoted figure
    table = pd.read_csv(REFERENCE / "noise_and_ber_checks.csv", comment="#")
    rows = table[table["quantity"] == "ber_from_q"]
    assert len(rows) == 2
    for row in rows.itertuples():
        assert ber_from_q(row.value) == pytest.approx(row.expected, rel=row.rtol)
    assert q_from_ber(1e-9) == pytest.approx(6.0, abs=0.01)
    assert q_from_ber(1e-12) == pytest.approx(7.03, abs=0.01)


def test_ber_is_the_gaussian_tail():
    # Source: scipy.stats.norm.sf (Gaussian upper tail); BER = Q(x) tail; rtol 1e-10
    q = np.array([0.5, 2.0, 6.0, 7.03, 9.0])
    np.testing.assert_allclose(ber_from_q(q), stats.norm.sf(q), rtol=1e-10)
    np.testing.assert_allclose(q_from_ber(stats.norm.sf(q)), q, rtol=1e-10)


@settings(max_examples=40, deadline=None)
@given(st.floats(1e-15, 0.49))
def test_q_ber_round_trip(ber):
    assert ber_from_q(q_from_ber(ber)) == pytest.approx(ber, rel=1e-9)


def test_required_power_closed_form_without_extinction_and_dark_current():
    # Source: Agrawal, Fiber-Optic Communication Systems, sec. 4.5.2: for an ideal zero level and no
    # dark current P = (Q/R)(q B Q + sigma_T) (p-i-n receiver, M = 1; from memory). rtol 1e-10
    q_v, r, sigma, b = np.array([6.0, 7.03]), 0.85, np.array([[1e-7], [3e-8]]), 2.5e9
    expected = q_v / r * (Q_E * b * q_v + sigma)
    np.testing.assert_allclose(required_average_power(q_v, r, sigma, b), expected, rtol=1e-10)


@pytest.mark.parametrize("ratio", [2.0, 5.0, 10.0, 30.0])
def test_extinction_ratio_penalty_thermal_limited(ratio):
    # Source: Agrawal, Fiber-Optic Communication Systems, extinction-ratio penalty
    # delta = 10 log10((1 + r_ex)/(1 - r_ex)), r_ex = P0/P1, thermal-noise limit (from memory).
    # Thermal limit made by a 1 Hz shot-noise bandwidth; rtol 1e-6
    p_inf = required_average_power(6.0, 0.9, 1e-7, 1.0)
    p_r = required_average_power(6.0, 0.9, 1e-7, 1.0, extinction_ratio=ratio)
    r_ex = 1.0 / ratio
    assert p_r / p_inf == pytest.approx((1 + r_ex) / (1 - r_ex), rel=1e-6)


def test_required_power_meets_the_target_q_with_dark_current():
    # The solution reproduces the target through q_factor with shot noise of each level; rtol 1e-9
    r, sigma, b, i_d, ratio = 0.8, 2e-7, 1e10, 5e-9, 8.0
    p = required_average_power(7.03, r, sigma, b, extinction_ratio=ratio, dark_current=i_d)
    p1, p0 = 2 * p * ratio / (ratio + 1), 2 * p / (ratio + 1)
    i1, i0 = r * p1 + i_d, r * p0 + i_d
    s1, s0 = np.sqrt(sigma**2 + 2 * Q_E * i1 * b), np.sqrt(sigma**2 + 2 * Q_E * i0 * b)
    assert q_factor(i1, i0, s1, s0) == pytest.approx(7.03, rel=1e-9)


def test_sensitivity_dbm():
    # 10 log10(P / 1 mW) (common practice): choose sigma so that P = 1 uW exactly -> -30 dBm
    r, b, q_v = 1.0, 1e9, 6.0
    sigma = 1e-6 * r / q_v - Q_E * b * q_v
    assert sensitivity_dbm(q_v, r, sigma, b) == pytest.approx(-30.0, abs=1e-9)


def test_analog_snr_limits():
    # Source: Agrawal, Fiber-Optic Communication Systems, sec. 4.4.3 (shot-noise limit
    # SNR = R P / (2 q B) and thermal limit (R P)^2 / sigma_T^2, signal power I_p^2). Our signal is
    # a sinusoid of depth m, power (m I_p)^2 / 2, hence the factor m^2/2. rtol 1e-12
    r, b, m = 0.9, 1e6, 0.5
    p = np.array([1e-9, 1e-6, 1e-3])
    shot = analog_snr(p, r, 0.0, b, modulation_depth=m)
    np.testing.assert_allclose(shot, m**2 / 2 * r * p / (2 * Q_E * b), rtol=1e-12)
    thermal = analog_snr(p, r, 1e-6, 1e-30, modulation_depth=1.0)
    np.testing.assert_allclose(thermal, 0.5 * (r * p) ** 2 / 1e-12, rtol=1e-12)
    assert np.all(np.diff(analog_snr(p, r, 1e-9, b)) > 0)


def test_nep_and_minimum_detectable_power():
    # NEP = i_n / R; for white input noise P_min = NEP sqrt(ENBW) (Hobbs, Building Electro-Optical
    # Systems, 2nd ed. 2009, sec. 3.4); rtol 1e-12
    i_n, r, enbw = 2e-12, 0.6, 1e8
    nep = noise_equivalent_power(i_n, r)
    assert nep == pytest.approx(i_n / r, rel=1e-12)
    assert minimum_detectable_power(i_n * np.sqrt(enbw), r) == pytest.approx(
        nep * np.sqrt(enbw), rel=1e-12
    )
    np.testing.assert_allclose(noise_equivalent_power([1e-12, 2e-12], r), [1e-12 / r, 2e-12 / r])


def test_dynamic_range():
    # DR = (V_swing/|Zt|)/i_rms = V_swing/v_rms,out (common practice); rtol 1e-12
    assert maximum_input_current(2.0, 1e4) == pytest.approx(2e-4)
    assert dynamic_range(2.0, 1e4, 50e-9) == pytest.approx(2.0 / (1e4 * 50e-9), rel=1e-12)
    np.testing.assert_allclose(dynamic_range(2.0, np.array([1e3, 1e4]), 1e-8), [2e5, 2e4])


@pytest.mark.parametrize(
    "call, name",
    [
        (lambda: q_from_ber(0.6), "ber"),
        (lambda: q_from_ber(0.0), "ber"),
        (lambda: noise_equivalent_power(1e-12, 0.0), "responsivity"),
        (lambda: analog_snr(1e-6, 0.9, 1e-9, 1e6, modulation_depth=1.5), "modulation_depth"),
        (lambda: analog_snr(-1e-6, 0.9, 1e-9, 1e6), "optical_power"),
        (lambda: analog_snr(0.0, 0.9, 0.0, 1e6), "circuit_noise_rms"),
        (
            lambda: required_average_power(6.0, 0.9, 1e-7, 1e9, extinction_ratio=1.0),
            "extinction_ratio",
        ),
        (lambda: required_average_power(6.0, 0.9, 1e-7, -1.0), "noise_bandwidth"),
        (lambda: dynamic_range(-2.0, 1e4, 1e-8), "output_swing"),
        (lambda: ber_from_q(np.nan), "q_value"),
        # Q of noiseless levels or of a NaN level is undefined: an error, not inf/NaN
        (lambda: q_factor(1e-6, 0.0, 0.0, 0.0), "sigma_one"),
        (lambda: q_factor(np.nan, 0.0, 1e-7, 1e-7), "i_one"),
    ],
)
def test_bad_inputs_name_the_parameter(call, name):
    with pytest.raises(DesignError, match=name) as err:
        call()
    assert err.value.parameter == name
