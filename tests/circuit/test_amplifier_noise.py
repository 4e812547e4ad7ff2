"""Tabulated amplifier noise curves: interpolation, extrapolation, validation, the OpAmp rule."""

import dataclasses

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.interpolate import interp1d

from photorx.circuit.amplifier import OpAmp, voltage_noise_density
from photorx.circuit.amplifier_noise import (
    NoiseCurve,
    as_noise_curve,
    noise_power_shape,
    tabulated_noise_density,
)
from photorx.errors import DesignError

F = (10.0, 1e3, 1e4, 1e6)
D = (100e-9, 10e-9, 4e-9, 4e-9)


@st.composite
def tables(draw, max_points=8):
    """Random tables: strictly increasing frequencies (decades apart by 0.05 to 2), densities
    over eight decades."""
    n = draw(st.integers(2, max_points))
    steps = draw(st.lists(st.floats(0.05, 2.0), min_size=n - 1, max_size=n - 1))
    lf = draw(st.floats(-2.0, 6.0)) + np.concatenate([[0.0], np.cumsum(steps)])
    ld = draw(st.lists(st.floats(-16.0, -8.0), min_size=n, max_size=n))
    return 10.0 ** lf, 10.0 ** np.asarray(ld)


def test_against_scipy_linear_interpolation_of_the_logs():
    # Source: scipy.interpolate.interp1d (linear, extrapolating) on (ln f, ln d): the same
    # piecewise power law inside the table and, below it, the first segment continued
    f = np.geomspace(0.01, 1e6, 301)
    ref = np.exp(interp1d(np.log(F), np.log(D), fill_value="extrapolate")(np.log(f)))
    np.testing.assert_allclose(tabulated_noise_density(f, F, D), ref, rtol=1e-12)


def test_extrapolation_below_continues_the_first_slope_and_holds_above():
    c = NoiseCurve(F, D)
    # first segment: a decade of density per two decades of frequency, d ~ f^-1/2
    assert c.density(0.1) == pytest.approx(1e-6, rel=1e-12)
    assert c.density(1e-3) == pytest.approx(1e-5, rel=1e-12)
    # above the last point: the white level, to infinity
    np.testing.assert_allclose(c.density([1e6, 1e9, np.inf]), 4e-9, rtol=1e-12)
    assert c.white == 4e-9
    # at 0 Hz: inf for a falling first segment, the value for a flat one, 0 for a rising one
    assert c.density(0.0) == np.inf
    assert NoiseCurve((1.0, 10.0), (2e-9, 2e-9)).density(0.0) == pytest.approx(2e-9, rel=1e-14)
    assert NoiseCurve((1.0, 10.0), (1e-9, 2e-9)).density(0.0) == 0.0
    np.testing.assert_allclose(c.power_shape([1e6, 1e3]), [1.0, 6.25], rtol=1e-12)


def test_shapes_broadcast_like_the_frequency():
    f = np.geomspace(1.0, 1e7, 12).reshape(3, 4)
    c = NoiseCurve(F, D)
    assert c.density(f).shape == (3, 4) and np.ndim(c.density(5.0)) == 0
    np.testing.assert_array_equal(noise_power_shape(f, 0.0, c), c.power_shape(f))
    np.testing.assert_array_equal(noise_power_shape(f, 0.0, c.power_shape), c.power_shape(f))
    np.testing.assert_array_equal(noise_power_shape(f, 1e3), 1.0 + 1e3 / f)


@settings(max_examples=60, deadline=None)
@given(tables())
def test_passes_through_every_point(table):
    # property: the interpolant returns each tabulated density at its frequency
    f, d = table
    np.testing.assert_allclose(tabulated_noise_density(f, f, d), d, rtol=1e-12)


@settings(max_examples=60, deadline=None)
@given(tables(), st.lists(st.floats(0.0, 1.0), min_size=2, max_size=6))
def test_monotone_and_straight_between_points_in_log_log(table, ts):
    # property: between two points the density is the straight log-log line, so it lies
    # between the end values and moves monotonically from one to the other
    f, d = table
    ts = np.sort(ts)
    for i in range(f.size - 1):
        fi = f[i] ** (1 - ts) * f[i + 1] ** ts
        y = tabulated_noise_density(fi, f, d)
        np.testing.assert_allclose(y, d[i] ** (1 - ts) * d[i + 1] ** ts, rtol=1e-9)
        lo, hi = sorted((d[i], d[i + 1]))
        assert np.all(y >= lo * (1 - 1e-12)) and np.all(y <= hi * (1 + 1e-12))
        steps = np.diff(y) * np.sign(d[i + 1] - d[i])
        assert np.all(steps >= -1e-12 * hi)


def test_a_sampled_corner_model_is_close_between_points():
    # common practice: linear interpolation error of y(u) = ln d is <= h^2/8 max|y''|, and
    # for d = e_w sqrt(1 + f_c/f), |y''| <= 1/8 in u = ln f, so <= h^2/64 with h = ln 10 / 20
    f_tab = np.geomspace(1.0, 1e8, 161)
    c = NoiseCurve.from_white_and_corner(5e-9, 1e4, f_tab)
    f = np.geomspace(1.0, 1e8, 4001)
    exact = voltage_noise_density(f, 5e-9, 1e4)
    bound = (np.log(10.0) / 20) ** 2 / 64
    err = np.abs(np.log(c.density(f) / exact))
    assert err.max() <= bound and err.max() > 0.2 * bound  # tight, and really an error


@pytest.mark.parametrize("freqs, dens, words", [
    ((10.0, 1.0), (1e-9, 1e-9), ["strictly increasing", "1 Hz after 10 Hz"]),
    ((10.0, 10.0, 100.0), (1e-9, 1e-9, 1e-9), ["strictly increasing"]),
    ((0.0, 10.0), (1e-9, 1e-9), ["frequency = 0 Hz", "> 0"]),
    ((-1.0, 10.0), (1e-9, 1e-9), ["frequency = -1 Hz"]),
    ((1.0, np.inf), (1e-9, 1e-9), ["frequency = inf Hz"]),
    ((1.0, 10.0), (0.0, 1e-9), ["density = 0 V/rtHz", "> 0 and finite"]),
    ((1.0, 10.0), (-1e-9, 1e-9), ["density = -1e-09 V/rtHz"]),
    ((1.0, 10.0), (np.nan, 1e-9), ["density = nan V/rtHz"]),
    ((1.0, 10.0), (np.inf, 1e-9), ["density = inf"]),
    ((1.0,), (1e-9,), ["length >= 2"]),
    ((1.0, 10.0, 100.0), (1e-9, 1e-9), ["equal length"]),
    (((1.0, 10.0),), ((1e-9, 1e-9),), ["1-D"]),
    (("a", "b"), (1e-9, 1e-9), ["must be numbers"]),
])
def test_bad_tables_raise_design_error(freqs, dens, words):
    with pytest.raises(DesignError) as err:
        NoiseCurve(freqs, dens)
    for w in words:
        assert w in str(err.value), (w, str(err.value))
    with pytest.raises(DesignError) as err:  # the amplifier names its own field
        OpAmp(voltage_noise_curve=(freqs, dens))
    assert err.value.parameter == "voltage_noise_curve"
    assert "voltage_noise_curve" in str(err.value)


def test_bad_curve_values_and_frequencies():
    with pytest.raises(DesignError, match="shape"):
        OpAmp(current_noise_curve=np.ones((3, 3)))
    with pytest.raises(DesignError, match="shape"):
        OpAmp(current_noise_curve=[1.0, 2.0, 3.0])
    with pytest.raises(DesignError, match="not a table of numbers"):
        OpAmp(current_noise_curve={"f": 1})
    with pytest.raises(DesignError, match="A/rtHz"):  # a voltage curve as the current noise
        OpAmp(current_noise_curve=NoiseCurve(F, D))
    with pytest.raises(DesignError, match="unit"):
        NoiseCurve(F, D, unit="V")
    with pytest.raises(DesignError, match="f = -1"):
        tabulated_noise_density(-1.0, F, D)
    with pytest.raises(DesignError, match="f = nan"):
        NoiseCurve(F, D).density(np.nan)
    with pytest.raises(DesignError) as err:  # the curve carries the 1/f part
        OpAmp(voltage_noise_curve=(F, D), voltage_noise_corner=1e3)
    assert err.value.parameter == "voltage_noise_corner" and "voltage_noise_curve" in str(err.value)


def test_table_forms_are_read_alike():
    pair = as_noise_curve((F, D), "c", "V/rtHz")
    assert as_noise_curve(np.column_stack([F, D]), "c", "V/rtHz") == pair
    assert as_noise_curve([list(F), list(D)], "c", "V/rtHz") == pair
    assert as_noise_curve(pair, "c", "V/rtHz") is pair and as_noise_curve(None, "c", "") is None
    two = NoiseCurve((10.0, 1e3), (20e-9, 5e-9))  # 2 x 2: pair when the first row rises
    assert as_noise_curve([[10.0, 1e3], [20e-9, 5e-9]], "c", "V/rtHz") == two
    assert as_noise_curve([[10.0, 20e-9], [1e3, 5e-9]], "c", "V/rtHz") == two
    with pytest.raises(DesignError, match="1000 Hz after 10 Hz|10 Hz after 1000 Hz"):
        as_noise_curve([[1e3, 10.0], [5e-9, 9e-9]], "c", "V/rtHz")  # a falling pair, not rows


def test_opamp_rule_the_curve_is_the_shape_and_the_white_level_scales_it():
    f = np.geomspace(0.1, 1e8, 50)
    amp = OpAmp(voltage_noise_curve=(F, D), current_noise_curve=((1.0, 1e3), (1e-13, 1e-14)))
    # without an explicit white level the density is the curve
    assert amp.voltage_noise == 4e-9 and amp.current_noise == 1e-14
    np.testing.assert_allclose(amp.voltage_noise_density(f), NoiseCurve(F, D).density(f),
                               rtol=1e-12)
    np.testing.assert_allclose(amp.current_noise_density([1.0, 1e6]), [1e-13, 1e-14], rtol=1e-12)
    # a given white level scales the whole curve (a sweep of voltage_noise does the same)
    scaled = dataclasses.replace(amp, voltage_noise=np.array([[2e-9], [8e-9]]))
    np.testing.assert_allclose(scaled.voltage_noise_density(f),
                               np.array([[0.5], [2.0]]) * amp.voltage_noise_density(f),
                               rtol=1e-12)
    # replacing another field keeps the curve and its white level
    assert dataclasses.replace(amp, gbw=1e9).voltage_noise_density(10.0) == pytest.approx(1e-7)
    # without curves nothing changed: the defaults and the corner model
    plain = OpAmp()
    assert (plain.voltage_noise, plain.current_noise) == (5e-9, 1e-15)
    assert plain.voltage_noise_curve is None
    assert OpAmp(voltage_noise_corner=1e3).voltage_noise_density(1e3) == pytest.approx(
        5e-9 * np.sqrt(2))
    with pytest.raises(DesignError, match="voltage_noise"):
        OpAmp(voltage_noise_curve=(F, D), voltage_noise=-1e-9)
