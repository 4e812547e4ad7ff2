"""Tests of measured C-V tables: reading, doping profiles and junction fits.

Outside checks: the depletion-approximation C-V of abrupt, linearly graded, p-i-n and
step-doped junctions (Sze and Ng, Physics of Semiconductor Devices, 3rd ed. 2007, ch. 2:
1/C^2 = 2 (Vbi + V) / (q eps N A^2) and the C-V profiling relation N = 2 / (q eps A^2
d(1/C^2)/dV) at W = eps A / C), scipy.optimize.curve_fit for the parameter covariance, and
pint (through photorx.units) for the header units.
"""

from __future__ import annotations

import io

import numpy as np
import pytest
import scipy.constants as sc
from hypothesis import given, settings
from hypothesis import strategies as st

import photorx as prx
from photorx.errors import DesignError

SI = prx.material("Si")
AREA = 1e-6  # [m^2] (1 mm)^2
EPS = SI.permittivity


def _csv(rows, header="reverse_bias [V], capacitance [pF]"):
    return io.StringIO(header + "\n" + "\n".join(", ".join(str(x) for x in r) for r in rows))


# -- reading ---------------------------------------------------------------------------------------
def test_read_cv_converts_header_units_to_si():
    text = ("# synthetic test data\n"
            "reverse_bias [mV], capacitance [nF], temperature [degC]\n"
            "2000, 0.006, 25\n0, 0.010, 25\n1000, 0.007, 25\n")
    cv = prx.read_cv(io.StringIO(text))
    # pint's unit definitions: 1 mV = 1e-3 V, 1 nF = 1e-9 F, 0 degC = 273.15 K
    np.testing.assert_allclose(cv["reverse_bias"], [0.0, 1.0, 2.0], rtol=1e-15)
    np.testing.assert_allclose(cv["capacitance"], [10e-12, 7e-12, 6e-12], rtol=1e-12)
    np.testing.assert_allclose(cv["temperature"], 298.15, rtol=1e-12)
    assert cv.attrs["units"] == {"reverse_bias": "V", "capacitance": "F", "temperature": "K"}
    assert cv.attrs["lines"] == [4, 5, 3]  # sorted by bias; file lines kept


def test_read_iv_keeps_sign_and_units(tmp_path):
    path = tmp_path / "iv.csv"
    path.write_text("reverse_bias [V], current [nA]\n-0.2, -3.5\n0, 0\n5, 1.25\n")
    iv = prx.read_iv(path)
    np.testing.assert_allclose(iv["current"], [-3.5e-9, 0.0, 1.25e-9], rtol=1e-12)
    assert list(iv.columns) == ["reverse_bias", "current"]


@pytest.mark.parametrize("text, where", [
    ("reverse_bias [V], capacitance [pF]\n0, 10\n1, abc\n2, 6\n", "line 3, column 'capacitance'"),
    ("reverse_bias [V], capacitance [pF]\n0, 10\nx, 7\n2, 6\n", "line 3, column 'reverse_bias'"),
    ("reverse_bias [V], capacitance [pF]\n0, 10\n1, -7\n2, 6\n", "line 3, column 'capacitance'"),
    ("reverse_bias [V], capacitance [pF]\n0, 10\n1, nan\n2, 6\n", "line 3, column 'capacitance'"),
    ("reverse_bias [V], capacitance [V]\n0, 10\n1, 7\n2, 6\n", "column 'capacitance'"),
    ("reverse_bias [V], capacitance\n0, 10\n1, 7\n2, 6\n", "column 'capacitance' has no unit"),
    ("reverse_bias [V]\n0\n1\n2\n", "capacitance"),
    ("reverse_bias [V], capacitance [pF]\n0, 10\n1, 7, 3\n2, 6\n", "line 3"),
    ("reverse_bias [V], capacitance [pF]\n0, 10\n0, 7\n2, 6\n", "lines 2 and 3"),
    ("bias [V], capacitance [pF]\n0, 10\n1, 7\n2, 6\n", "unknown column 'bias'"),
])
def test_bad_cells_name_line_and_column(text, where):
    with pytest.raises(DesignError) as info:
        prx.read_cv(io.StringIO(text))
    assert where in str(info.value)


def test_missing_file_is_a_design_error(tmp_path):
    with pytest.raises(DesignError, match="does not exist"):
        prx.read_cv(tmp_path / "nothing.csv")


_BAD_CELLS = st.sampled_from(["abc", "", "nan", "inf", "-inf", "1..2", "1e", "--1", "0x10"])


@settings(max_examples=60)
@given(n=st.integers(3, 12), row=st.integers(0, 11), col=st.integers(0, 1), bad=_BAD_CELLS)
def test_any_bad_cell_is_named_by_line_and_column(n, row, col, bad):
    row = row % n
    rows = [[float(i), 10.0 - 0.5 * i] for i in range(n)]
    rows[row][col] = bad
    with pytest.raises(DesignError) as info:
        prx.read_cv(_csv(rows))
    name = ["reverse_bias", "capacitance"][col]
    assert f"line {row + 2}, column '{name}'" in str(info.value)


@settings(max_examples=40)
@given(values=st.lists(st.floats(1e-3, 1e3), min_size=3, max_size=10, unique=True),
       unit=st.sampled_from([("fF", 1e-15), ("pF", 1e-12), ("nF", 1e-9), ("uF", 1e-6)]))
def test_values_in_any_capacitance_unit_arrive_in_farad(values, unit):
    rows = [[i, x] for i, x in enumerate(values)]
    cv = prx.read_cv(_csv(rows, f"reverse_bias [V], capacitance [{unit[0]}]"))
    # SI prefixes (pint's definitions), rtol 1e-12
    np.testing.assert_allclose(cv["capacitance"], np.asarray(values) * unit[1], rtol=1e-12)


# -- doping profile --------------------------------------------------------------------------------
def test_profile_of_an_abrupt_junction_is_its_doping():
    j = prx.AbruptJunction(SI, na=1e25, nd=1e21, area=AREA)
    v = np.linspace(0.0, 20.0, 41)
    prof = prx.doping_profile((v, j.capacitance(v)), area=AREA, material="Si")
    # one-sided abrupt junction: the profile is Na Nd/(Na + Nd) (Sze and Ng ch. 2), 2 %
    np.testing.assert_allclose(prof["doping"], j.effective_doping, rtol=0.02)
    # depth = eps A / C = W of the junction
    np.testing.assert_allclose(prof["depth"], j.depletion_width(prof["reverse_bias"]), rtol=1e-6)
    assert prof.attrs["units"]["doping"] == "m^-3"


def test_profile_of_a_graded_junction_is_a_w_over_4():
    a = 1e26  # [m^-4] 1e18 cm^-4
    j = prx.LinearlyGradedJunction(SI, gradient=a, area=AREA)
    v = np.linspace(0.0, 20.0, 41)
    prof = prx.doping_profile((v, j.capacitance(v)), area=AREA, material=SI)
    # two-sided junction: series combination of the edge dopings a W/2 on each side, a W/4
    # (derived from W^3 = 12 eps (Vbi + V)/(q a), Sze and Ng Eq. (31)), 2 %
    np.testing.assert_allclose(prof["doping"], a * prof["depth"] / 4.0, rtol=0.02)


def test_profile_of_a_pin_before_punch_through_is_the_i_layer_doping():
    j = prx.PinJunction(SI, i_thickness=20e-6, i_doping=1e19, area=AREA, p_doping=1e25,
                        n_doping=1e25)
    v = np.linspace(0.0, 0.9 * j.punch_through_voltage(), 31)
    prof = prx.doping_profile((v, j.capacitance(v)), area=AREA, material=SI)
    np.testing.assert_allclose(prof["doping"], 1e19, rtol=0.02)


def _step_cv(n1, n2, x0, vbi=0.8, n_points=60):
    """C-V of a one-sided junction with doping n1 to depth x0 and n2 beyond.

    Poisson's equation in the depletion approximation: V = (q/eps) integral_0^W x N(x) dx
    (Sze and Ng ch. 2), so V = q/eps [n1 x0^2/2 + n2 (W^2 - x0^2)/2] beyond the step.
    """
    w = np.linspace(0.3 * x0, 3.0 * x0, n_points)
    near = sc.e * n1 * w**2 / (2 * EPS)
    far = sc.e / EPS * (n1 * x0**2 / 2 + n2 * (w**2 - x0**2) / 2)
    return np.where(w <= x0, near, far) - vbi, EPS * AREA / w, w


def test_profile_of_a_step_recovers_both_levels():
    n1, n2, x0 = 1e22, 2e21, 1e-6
    v, c, _ = _step_cv(n1, n2, x0)
    prof = prx.doping_profile((v, c), area=AREA, material=SI)
    x, n = prof["depth"].to_numpy(), prof["doping"].to_numpy()
    # away from the step (the spline smooths over a few points): both levels within 2 %
    np.testing.assert_allclose(n[x < 0.85 * x0], n1, rtol=0.02)
    np.testing.assert_allclose(n[x > 1.3 * x0], n2, rtol=0.02)
    # and the step sits at x0: the profile crosses the geometric mean within 10 %
    cross = x[np.argmax(n < np.sqrt(n1 * n2))]
    assert cross == pytest.approx(x0, rel=0.1)


def test_profile_tolerates_noise():
    j = prx.AbruptJunction(SI, na=1e25, nd=1e21, area=AREA)
    v = np.linspace(0.0, 20.0, 81)
    rng = np.random.default_rng(7)
    c = j.capacitance(v) * (1 + 1e-3 * rng.standard_normal(v.size))
    for method in ("spline", "savgol"):
        prof = prx.doping_profile((v, c), area=AREA, material=SI, method=method, window=15)
        # 0.1 % capacitance noise; the smoothed slope keeps the doping within 5 %
        # (plain differences would give about 0.1 % * 2 * 80 points / (sqrt 2) ~ 10 %)
        np.testing.assert_allclose(prof["doping"], j.effective_doping, rtol=0.05)


def test_profile_refuses_uneven_savgol_and_bad_method():
    v = np.array([0.0, 1.0, 3.0, 4.0, 7.0, 8.0])
    c = 1e-12 / np.sqrt(1 + v)
    with pytest.raises(DesignError, match="evenly spaced"):
        prx.doping_profile((v, c), area=AREA, material=SI, method="savgol", window=5)
    with pytest.raises(DesignError, match="method"):
        prx.doping_profile((v, c), area=AREA, material=SI, method="magic")


# -- fits ------------------------------------------------------------------------------------------
def _noisy(c, rel, seed):
    rng = np.random.default_rng(seed)
    return c * (1 + rel * rng.standard_normal(c.size))


def test_abrupt_fit_recovers_the_doping_within_its_uncertainty():
    j = prx.AbruptJunction(SI, na=1e25, nd=3e21, area=AREA)
    v = np.linspace(0.0, 15.0, 31)
    c = _noisy(np.asarray(j.capacitance(v)), 3e-3, seed=3)
    fit = prx.fit_junction((v, c), "abrupt", material=SI, area=AREA, sigma=3e-3 * c)
    n, dn = fit.parameters["doping"], fit.uncertainties["doping"]
    assert abs(n - 3e21) < 3 * dn
    assert dn / n < 0.01
    assert fit.fits and fit.p_value > 1e-3
    assert isinstance(fit.junction, prx.AbruptJunction)
    # the uncertainty is what scipy.optimize.curve_fit (absolute_sigma) gives, 2 %
    from scipy.optimize import curve_fit

    def model(vv, log_n):
        return prx.AbruptJunction(SI, na=1e25, nd=np.exp(log_n), area=AREA).capacitance(vv)

    popt, pcov = curve_fit(model, v, c, p0=[np.log(2e21)], sigma=3e-3 * c, absolute_sigma=True)
    assert np.exp(popt[0]) == pytest.approx(n, rel=1e-5)
    assert np.sqrt(pcov[0, 0]) * n == pytest.approx(dn, rel=0.02)


def test_parametric_fit_recovers_its_parameters_within_uncertainty():
    true = prx.ParametricJunction(cj0=5e-12, vj=0.75, m=0.45)
    v = np.linspace(-0.2, 10.0, 40)
    c = _noisy(np.asarray(true.capacitance(v)), 2e-3, seed=11)
    fit = prx.fit_junction((v, c), "parametric", sigma=2e-3 * c)
    for name, value in (("cj0", 5e-12), ("vj", 0.75), ("m", 0.45)):
        assert abs(fit.parameters[name] - value) < 3 * fit.uncertainties[name], name
    # relative weights give about the same uncertainties when the scatter is right
    rel = prx.fit_junction((v, c), "parametric")
    assert rel.uncertainties["m"] == pytest.approx(fit.uncertainties["m"], rel=0.3)


def test_pin_fit_recovers_thickness_and_doping():
    j = prx.PinJunction(SI, i_thickness=20e-6, i_doping=1e19, area=AREA, p_doping=1e25,
                        n_doping=1e25)
    v = np.linspace(0.0, 10.0, 41)  # punch-through near 2.3 V: both parameters show
    c = _noisy(np.asarray(j.capacitance(v)), 2e-3, seed=5)
    fit = prx.fit_junction((v, c), "pin", material=SI, area=AREA, sigma=2e-3 * c)
    assert abs(fit.parameters["i_doping"] - 1e19) < 3 * fit.uncertainties["i_doping"]
    assert abs(fit.parameters["i_thickness"] - 20e-6) < 3 * fit.uncertainties["i_thickness"]


def test_graded_fit_and_area_fit():
    g = prx.LinearlyGradedJunction(SI, gradient=1e26, area=AREA)
    v = np.linspace(0.0, 10.0, 21)
    fit = prx.fit_junction((v, g.capacitance(v)), "graded", material=SI, area=AREA)
    assert fit.parameters["gradient"] == pytest.approx(1e26, rel=1e-6)
    j = prx.AbruptJunction(SI, na=1e25, nd=1e21, area=AREA)
    fit = prx.fit_junction((v, j.capacitance(v)), "abrupt", material=SI, doping=1e21)
    assert fit.parameters["area"] == pytest.approx(AREA, rel=1e-6)


def test_wrong_model_is_flagged_where_it_misses():
    g = prx.LinearlyGradedJunction(SI, gradient=1e26, area=AREA)
    v = np.linspace(0.0, 20.0, 41)
    fit = prx.fit_junction((v, g.capacitance(v)), "abrupt", material=SI, area=AREA)
    # an m = 1/3 curve through an m = 1/2 model misses by several % at the ends
    assert not fit.fits
    assert fit.misfit_ranges[0][0] == 0.0
    assert fit.rms_relative_error > 0.01


def test_fit_plot_draws_two_axes():
    j = prx.AbruptJunction(SI, na=1e25, nd=1e21, area=AREA)
    v = np.linspace(0.0, 10.0, 21)
    fig = prx.fit_junction((v, _noisy(np.asarray(j.capacitance(v)), 1e-3, 1)), "abrupt",
                           material=SI, area=AREA).plot()
    assert len(fig.axes) == 2


def test_fit_input_errors():
    v = np.linspace(0.0, 10.0, 11)
    c = 1e-12 / np.sqrt(1 + v)
    with pytest.raises(DesignError, match="model"):
        prx.fit_junction((v, c), "exotic")
    with pytest.raises(DesignError, match="exactly one"):
        prx.fit_junction((v, c), "abrupt", material=SI)
    with pytest.raises(DesignError, match="sigma"):
        prx.fit_junction((v, c), "parametric", sigma=-1.0)
    cv = prx.read_cv(_csv([[0, 1, 300], [1, 0.8, 300], [2, 0.7, 300], [0, 1.1, 320],
                           [1, 0.9, 320], [2, 0.8, 320]],
                          "reverse_bias [V], capacitance [pF], temperature [K]"))
    with pytest.raises(DesignError, match="temperature"):
        prx.fit_junction(cv, "parametric")
    with pytest.raises(DesignError, match="number of fitted parameters"):
        prx.fit_junction(cv, "parametric", temperature=320)  # 3 points, 3 parameters
