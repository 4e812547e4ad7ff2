"""Sweeps and the optimiser: vectorised grids equal per-point evaluation; constraints hold."""

import numpy as np
import pytest

import photorx as prx
from photorx.units import GHz, kohm, mm, nm, pF, per_cm3, uW, um


@pytest.fixture(scope="module")
def rx():
    si = prx.material("Si")
    j = prx.PinJunction(si, i_thickness=30 * um, i_doping=1e12 * per_cm3, area=(0.4 * mm) ** 2,
                        p_doping=1e19 * per_cm3, n_doping=1e19 * per_cm3)
    amp = prx.OpAmp(gbw=1 * GHz, dc_gain=1e4, voltage_noise=4e-9, current_noise=2e-15,
                    input_capacitance=1.5 * pF, output_swing=2.0)
    return prx.Receiver(photodiode=prx.Photodiode(junction=j), tia=prx.Tia(amp, rf=10 * kohm, cf=0.3 * pF),
                        reverse_bias=5.0, wavelength=850 * nm, optical_power=10 * uW)


def test_sweep_is_a_cartesian_grid_matching_point_evaluations(rx):
    import dataclasses

    df = prx.sweep(rx, reverse_bias=[0.0, 5.0, 10.0], rf=[5e3, 20e3])
    assert len(df) == 6
    assert list(df.columns[:2]) == ["reverse_bias", "rf"]
    assert set(zip(df.reverse_bias, df.rf)) == {(v, r) for v in (0.0, 5.0, 10.0) for r in (5e3, 20e3)}
    for _, row in df.iterrows():
        one = dataclasses.replace(rx, reverse_bias=row.reverse_bias,
                                  tia=dataclasses.replace(rx.tia, rf=row.rf)).evaluate()
        for name in ("bandwidth", "phase_margin", "input_noise_rms", "capacitance"):
            np.testing.assert_allclose(row[name], one.values[name], rtol=1e-6, err_msg=name)


def test_sweep_over_junction_geometry(rx):
    df = prx.sweep(rx, area=[(0.2e-3) ** 2, (0.4e-3) ** 2, (0.8e-3) ** 2])
    # C = eps*A/W at a fixed bias: capacitance proportional to area (Sze & Ng, 3rd ed., eq. 2.23)
    ratio = df.capacitance.to_numpy() / df.area.to_numpy()
    np.testing.assert_allclose(ratio, ratio[0], rtol=0.05)  # package capacitance may add a little


def test_sweep_rejects_unknown_axis(rx):
    with pytest.raises(prx.DesignError, match="bogus"):
        prx.sweep(rx, bogus=[1, 2])


def test_optimize_meets_constraints(rx):
    res = prx.optimize(rx, vary={"reverse_bias": (0.0, 20.0), "cf": (0.05e-12, 2e-12)},
                       objective="min:input_noise_rms",
                       constraints={"phase_margin": (">=", 60.0)}, grid_points=200)
    assert res.success
    assert res.result.phase_margin >= 60.0 * 0.99
    # The optimum is no worse than any feasible point of an independent grid.
    df = prx.sweep(rx, reverse_bias=np.linspace(0, 20, 9), cf=np.geomspace(0.05e-12, 2e-12, 9))
    feasible = df[(df.phase_margin >= 60.0) & df.stable]
    assert res.value <= feasible.input_noise_rms.min() * (1 + 1e-3)
    assert {"reverse_bias", "input_noise_rms", "phase_margin"} <= set(res.trade_curve.columns)
    assert res.constraints.loc[0, "figure"] == "phase_margin"


def test_optimize_bad_constraint(rx):
    with pytest.raises(prx.DesignError, match="bandwidth"):
        prx.optimize(rx, vary={"reverse_bias": (0, 10)}, constraints={"bandwidth": 1e9})


@pytest.mark.parametrize("axis, values", [("i_thickness", [10e-6, 30e-6]), ("temperature", [280.0, 330.0]),
                                          ("series_resistance", [1.0, 100.0])])
def test_sweep_over_photodiode_fields_matches_point_evaluations(rx, axis, values):
    """Fields deep in the photodiode tree broadcast against the frequency grids too."""
    from photorx.analysis.parameters import with_parameters

    df = prx.sweep(rx, **{axis: values})
    for value, (_, row) in zip(values, df.iterrows()):
        one = with_parameters(rx, **{axis: value}).evaluate()
        for name in ("capacitance", "bandwidth", "photodiode_bandwidth", "input_noise_rms", "dark_current"):
            np.testing.assert_allclose(row[name], one.values[name], rtol=1e-6, err_msg=f"{axis} {name}")


def test_optimization_result_plots_its_trade_curve(rx):
    res = prx.optimize(rx, vary={"reverse_bias": (0.0, 20.0)}, objective="min:input_noise_rms",
                       constraints={"phase_margin": (">=", 45.0)}, grid_points=20, trade_points=7)
    fig = res.plot()
    lines = [a.get_lines()[0] for a in fig.axes]
    # the plotted data are the trade curve's own numbers
    np.testing.assert_allclose(lines[0].get_xdata(), res.trade_curve.reverse_bias, rtol=0)
    np.testing.assert_allclose(lines[0].get_ydata(), res.trade_curve.input_noise_rms, rtol=0)


@pytest.mark.parametrize("kwargs, name", [
    (dict(constraints={"limited_by": (">=", 1.0)}), "limited_by"),
    (dict(objective="max:dominant_noise_source"), "dominant_noise_source"),
])
def test_optimize_rejects_label_figures(rx, kwargs, name):
    # A text figure has no order: a DesignError naming it, not a ValueError from pandas.
    with pytest.raises(prx.DesignError, match=name) as info:
        prx.optimize(rx, vary={"reverse_bias": (1.0, 5.0)}, grid_points=5, trade_points=3, **kwargs)
    assert info.value.parameter == name
