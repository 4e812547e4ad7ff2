"""Tolerance studies: analytic yields, reproducibility, drivers, corners, errors, views.

The analytic yields are probabilities of the sampled distributions themselves (common
practice): a unit meets ``dc_transimpedance >= k * nominal`` exactly when its Rf does
(the DC transimpedance is Rf times a loop factor within 1e-4 of one for these loops), so
the yield is P(Rf >= k Rf0) of the distribution. Statistical checks allow 4 standard errors
of a binomial proportion, sqrt(p (1 - p) / n).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.stats import norm

import photorx as prx
from photorx.analysis.parameters import with_parameters
from photorx.analysis.tolerance_distributions import parse_tolerance
from photorx.analysis.tolerance_result import wilson_interval


@pytest.fixture(scope="module")
def rx():
    return prx.demo_receiver()


@pytest.fixture(scope="module")
def nominal(rx):
    return rx.evaluate()


def _study(rx, tolerances, specs, **kw):
    kw.setdefault("progress", False)
    kw.setdefault("figures", [])
    return prx.tolerance_study(rx, tolerances, specs, **kw)


def _within_errors(observed, expected, n, k=4.0):
    return abs(observed - expected) <= k * math.sqrt(expected * (1 - expected) / n)


def test_uniform_rf_against_a_dc_spec_yields_three_quarters(rx, nominal):
    # Rf uniform within +-10 %: P(Rf >= 0.95 Rf0) = (1.10 - 0.95) / 0.20 = 0.75
    # (uniform distribution function; common practice)
    n = 3000
    study = _study(rx, {"rf": "10 %"}, {"dc_transimpedance": (">=", 0.95 * nominal.dc_transimpedance)},
                   n=n)
    assert _within_errors(study.yield_fraction, 0.75, n)
    low, high = study.yield_interval
    assert low < study.yield_fraction < high and high - low < 0.04
    rf = study.samples["rf"].to_numpy()
    assert rf.min() >= 0.9 * rx.tia.rf and rf.max() <= 1.1 * rx.tia.rf


@pytest.mark.parametrize("kind, threshold, expected", [
    # normal, sigma 5 %: P(Rf >= 0.97 Rf0) = P(z >= -0.6) (scipy.stats.norm)
    (("normal", 0.05), 0.97, norm.sf(-0.6)),
    # lognormal, sigma(ln) 0.1: P(Rf >= Rf0 e^0.05) = P(z >= 0.5)
    (("lognormal", 0.1), math.exp(0.05), norm.sf(0.5)),
])
def test_normal_and_lognormal_tolerances_match_the_normal_cdf(rx, nominal, kind, threshold,
                                                              expected):
    n = 3000
    study = _study(rx, {"rf": kind}, {"dc_transimpedance": f">= {threshold * nominal.dc_transimpedance} ohm"},
                   n=n)
    assert _within_errors(study.yield_fraction, expected, n)


def test_a_spec_the_nominal_fails_yields_below_half(rx, nominal):
    study = _study(rx, {"rf": "5 %", "cf": "5 %"}, {"bandwidth": (">=", 1.02 * nominal.bandwidth)},
                   n=600)
    assert study.yield_fraction < 0.5
    assert study.yield_interval[1] < 0.5
    # the nominal design itself fails this spec (a check that the spec is the hard one)
    assert nominal.bandwidth < 1.02 * nominal.bandwidth


def test_specs_nobody_can_fail_give_one(rx):
    study = _study(rx, {"rf": "10 %", "cf": "10 %"},
                   ["bandwidth>=1 Hz", "dc_transimpedance<=1e12"], n=300)
    assert study.yield_fraction == 1.0
    assert (study.by_spec["pass_fraction"] == 1.0).all()
    assert study.yield_interval[1] == pytest.approx(1.0)
    assert study.drivers["measure"].eq("margin").all()  # nothing fails: ranked by margin


def test_same_seed_same_samples_whatever_the_chunking(rx):
    tols = {"rf": "3 %", "cf": ("normal", 0.05), "gbw": ("lognormal", 0.1)}
    spec = {"bandwidth": ">= 900 MHz"}
    a = _study(rx, tols, spec, n=120, seed=7)
    b = _study(rx, tols, spec, n=120, seed=7, chunk_size=17)
    c = _study(rx, tols, spec, n=120, seed=8)
    for name in tols:
        assert np.array_equal(a.samples[name], b.samples[name])  # bit for bit
        assert not np.array_equal(a.samples[name], c.samples[name])
    # figures agree to rounding between chunk sizes (vectorised sums change order)
    np.testing.assert_allclose(a.samples["bandwidth"], b.samples["bandwidth"], rtol=1e-12)
    # a parameter's stream does not depend on the other tolerances
    d = _study(rx, {"rf": "3 %"}, spec, n=120, seed=7)
    assert np.array_equal(a.samples["rf"], d.samples["rf"])


def test_drivers_rank_the_dominant_tolerance_first(rx, nominal):
    # the bandwidth depends on Cf and Rf; with Cf 20 % and the others 0.5 %, Cf leads
    study = _study(rx, {"rf": "0.5 %", "cf": "20 %", "gbw": "0.5 %"},
                   {"bandwidth": (">=", nominal.bandwidth)}, n=800)
    assert study.drivers.index[0] == "cf"
    assert study.drivers["measure"].iloc[0] == "failure"
    assert abs(study.drivers["rho"].iloc[0]) > 0.7
    assert study.drivers["share"].iloc[0] > 0.8
    # the DC transimpedance does not depend on Cf at all: Rf leads even at a smaller spread
    dc = _study(rx, {"cf": "20 %", "rf": "2 %"},
                {"dc_transimpedance": (">=", nominal.dc_transimpedance)}, n=400)
    assert dc.drivers.index[0] == "rf"
    assert abs(dc.drivers.loc["cf", "rho"]) < 0.2
    # per spec: a larger Rf gives more DC transimpedance margin, Cf none
    per = dc.spec_drivers.iloc[:, 0]
    assert per["rf"] > 0.95 and abs(per["cf"]) < 0.2


def test_temperature_corners_evaluate_every_unit_at_every_corner(rx):
    study = _study(rx, {"rf": "5 %", "cf": "10 %"}, {"bandwidth": ">= 930 MHz"}, n=50,
                   temperatures=["-40 degC", 298.15, "85 degC"], figures=["input_noise_rms"])
    frame = study.samples
    assert len(frame) == 150
    np.testing.assert_allclose(frame["temperature"][:3], [233.15, 298.15, 358.15])
    assert (frame["sample"].to_numpy() == np.repeat(np.arange(50), 3)).all()
    # row 4 is unit 1 at -40 degC: the engine on that design gives the same figures
    row = frame.iloc[3]
    direct = with_parameters(rx, rf=row["rf"], cf=row["cf"], temperature=233.15).evaluate()
    assert row["bandwidth"] == pytest.approx(float(direct.bandwidth), rel=1e-12)
    assert row["input_noise_rms"] == pytest.approx(float(direct.input_noise_rms), rel=1e-12)
    # a unit passes only when it passes at every corner
    by_t = study.by_temperature
    np.testing.assert_allclose(by_t.index, [233.15, 298.15, 358.15])
    assert study.yield_fraction <= by_t["yield"].min()
    assert frame.attrs["units"]["rf"] == "ohm" and frame.attrs["units"]["bandwidth"] == "Hz"


def test_temperature_as_a_distribution_is_a_sampled_parameter(rx):
    study = _study(rx, {"rf": "1 %"}, {"bandwidth": ">= 1 Hz"}, n=40,
                   temperatures=("uniform", "-40 degC", "85 degC"))
    t = study.samples["temperature"].to_numpy()
    assert t.min() >= 233.15 and t.max() <= 358.15 and np.ptp(t) > 50
    assert set(study.drivers.index) == {"rf", "temperature"}
    assert study.by_temperature is None


def test_worst_samples_and_summary_table(rx, nominal):
    study = _study(rx, {"rf": "5 %", "cf": "5 %"},
                   {"bandwidth": (">=", 0.98 * nominal.bandwidth), "phase_margin": ">= 45 deg"},
                   n=200)
    worst = study.worst
    first = worst[worst["spec"].str.startswith("bandwidth")]
    assert len(first) == 5 and (np.diff(first["margin"]) >= 0).all()
    assert first["bandwidth"].iloc[0] == study.samples["bandwidth"].min()
    table = study.to_frame()
    assert table.index[0] == "all specs"
    assert table.loc["all specs", "pass_fraction"] == study.yield_fraction
    assert table.loc["all specs", "failures"] == (~study.passed).sum()
    assert set(table.index[1:]) == set(study.by_spec.index)


def test_wilson_interval_matches_published_values():
    # Newcombe, "Two-sided confidence intervals for the single proportion: comparison of
    # seven methods", Stat. Med. 17 (1998) 857-872, Table I, method 3 (Wilson score)
    # (from memory): 81/263 -> 0.2553 .. 0.3662; 15/148 -> 0.0624 .. 0.1605;
    # 0/20 -> 0 .. 0.1611
    for k, n, low, high in ((81, 263, 0.2553, 0.3662), (15, 148, 0.0624, 0.1605),
                            (0, 20, 0.0, 0.1611)):
        got = wilson_interval(k, n)
        assert got == pytest.approx((low, high), abs=1.5e-4)


@pytest.mark.parametrize("tolerances, specs, words", [
    ({"rf": ("triangle", 0.1)}, {"bandwidth": ">= 1 Hz"}, ["rf", "triangle", "uniform"]),
    ({"rf": "150 %"}, {"bandwidth": ">= 1 Hz"}, ["rf", "150 %", "below 100 %"]),
    ({"rf": ("normal", 2.0)}, {"bandwidth": ">= 1 Hz"}, ["rf", "2", "at most 0.3"]),
    ({"rf": ("uniform", 5e3, 1e3)}, {"bandwidth": ">= 1 Hz"}, ["rf", "1000", "high > low"]),
    ({"rf": ("uniform", "1 pF", "2 pF")}, {"bandwidth": ">= 1 Hz"}, ["rf", "pF"]),
    ({"rff": "1 %"}, {"bandwidth": ">= 1 Hz"}, ["rff", "known"]),
    ({"rf": "1 %"}, {"bandwith": ">= 1 Hz"}, ["bandwith", "known"]),
    ({"rf": "1 %"}, {"bandwidth": "~ 1 Hz"}, ["bandwidth", "~ 1 Hz", ">="]),
    ({"rf": "1 %"}, {"bandwidth": ">= 1 pF"}, ["bandwidth", "pF"]),
    ({"rf": "1 %"}, ["bandwidth = 1 Hz"], ["bandwidth = 1 Hz", "FIGURE>=VALUE"]),
])
def test_bad_distributions_and_specs_name_parameter_value_and_range(rx, tolerances, specs,
                                                                     words):
    with pytest.raises(prx.DesignError) as info:
        _study(rx, tolerances, specs, n=10)
    for word in words:
        assert word in str(info.value), (word, str(info.value))


@pytest.mark.parametrize("kw, words", [
    (dict(n=0), ["n = 0", "1 to"]),
    (dict(temperatures=[-5.0]), ["temperatures", "> 0 K"]),
    (dict(seed=-1), ["seed", ">= 0"]),
    (dict(chunk_size=0), ["chunk_size", ">= 1"]),
    (dict(temperatures="nonsense"), ["temperatures", "nonsense"]),
])
def test_bad_study_settings_are_design_errors(rx, kw, words):
    with pytest.raises(prx.DesignError) as info:
        _study(rx, {"rf": "1 %"}, {"bandwidth": ">= 1 Hz"}, **kw)
    for word in words:
        assert word in str(info.value)


def test_a_normal_tolerance_that_crosses_zero_is_refused(rx):
    # 0.3 relative sigma puts zero 3.3 sigma away: some of 10^5 draws cross it
    with pytest.raises(prx.DesignError, match="lognormal"):
        parse_tolerance("rf", ("normal", 0.3), 1e4).sample(100_000)


@settings(max_examples=150, deadline=None)
@given(st.one_of(st.text(max_size=20),
                 st.floats(allow_nan=True).map(lambda v: f"{v} %"),
                 st.tuples(st.sampled_from(["normal", "uniform", "lognormal", "x"]),
                           st.one_of(st.floats(allow_nan=True), st.text(max_size=6))),
                 st.tuples(st.just("uniform"), st.floats(allow_nan=True),
                           st.floats(allow_nan=True))))
def test_tolerance_parser_accepts_or_names_the_parameter(spec):
    try:
        tol = parse_tolerance("rf", spec, 1e4)
    except prx.DesignError as exc:
        assert "rf" in str(exc)
        return
    assert tol.kind in ("uniform", "normal", "lognormal")
    x = tol.sample(50)
    assert np.all(np.isfinite(x)) and np.all(x > 0)
    if tol.kind == "uniform":
        assert 0 < tol.low < tol.high and np.all((x >= tol.low) & (x <= tol.high))


@settings(max_examples=60, deadline=None)
@given(st.floats(min_value=1e-3, max_value=99.9))
def test_percent_tolerance_is_the_symmetric_interval(p):
    tol = parse_tolerance("cf", f"+-{p} %", 2e-12)
    assert tol.low == pytest.approx(2e-12 * (1 - p / 100), rel=1e-12)
    assert tol.high == pytest.approx(2e-12 * (1 + p / 100), rel=1e-12)


def test_plot_and_html(rx, nominal):
    import matplotlib

    matplotlib.use("Agg")
    study = _study(rx, {"rf": "5 %", "cf": "5 %"},
                   {"bandwidth": (">=", 0.98 * nominal.bandwidth), "phase_margin": ">= 45"},
                   n=40, temperatures=[273.15, 323.15])
    fig = study.plot()
    axes = fig.axes
    assert len(axes) == 3  # two spec figures and the yield against temperature
    assert "bandwidth" in axes[0].get_xlabel() and "phase_margin" in axes[1].get_xlabel()
    assert axes[2].get_ylabel() == "yield [%]" and "temperature" in axes[2].get_xlabel()
    assert any(abs(line.get_xdata()[0] - 0.98 * nominal.bandwidth) < 1 for line in axes[0].lines)
    page = study._repr_html_()
    assert "Drivers" in page and "all specs" in page and "Yield by temperature" in page


def test_distributed_cluster_gives_the_same_result_bit_for_bit(rx):
    distributed = pytest.importorskip("distributed")
    try:
        cluster = distributed.LocalCluster(n_workers=2, processes=True, threads_per_worker=1,
                                           dashboard_address=None, silence_logs=40)
    except Exception as exc:  # pragma: no cover - sandboxes without process spawning
        pytest.skip(f"dask.distributed cannot start a local cluster here: {exc}")
    kw = dict(n=60, chunk_size=15, figures=["input_noise_rms"], temperatures=[253.15, 323.15])
    tols = {"rf": "5 %", "cf": ("normal", 0.05)}
    spec = {"bandwidth": ">= 900 MHz"}
    try:
        with distributed.Client(cluster) as client:
            remote = _study(rx, tols, spec, client=client, **kw)
    finally:
        cluster.close()
    local = _study(rx, tols, spec, **kw)
    pd.testing.assert_frame_equal(remote.samples, local.samples, check_exact=True)
    assert remote.yield_fraction == local.yield_fraction
