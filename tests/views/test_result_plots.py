"""The results' own ``.plot()`` and ``plot_sweep``: axes count, labelled axes with units, data.

The drawn data are read back from matplotlib and compared with the result's numbers; the
marked margins are checked against python-control's margin computation on the drawn loop
gain, and the noise plot's Rf layer against the Johnson-Nyquist density 4kTR with k from
scipy.constants.
"""

from __future__ import annotations

import numpy as np
import pytest

matplotlib = pytest.importorskip("matplotlib")
matplotlib.use("Agg")

import photorx as prx  # noqa: E402
from photorx.circuit.noise import SOURCE_LABELS  # noqa: E402
from photorx.views import plot_sweep, read_sweep_csv, write_sweep_csv  # noqa: E402
from photorx.views.result_plots import GLANCE_SPEED  # noqa: E402


@pytest.fixture(scope="module")
def rx():
    return prx.demo_receiver()


def _bar_values(ax):
    return [p.get_width() for p in ax.patches]


def _labels(ax):
    return [t.get_text() for t in ax.get_yticklabels()]


def test_receiver_result_plot_draws_its_figures(rx):
    result = rx.evaluate()
    fig = result.plot()
    a_speed, a_noise, a_power = fig.axes
    assert len(fig.axes) == 3
    assert "[Hz]" in a_speed.get_xlabel() and "[A rms]" in a_noise.get_xlabel() \
        and "[W]" in a_power.get_xlabel()
    # speed: every finite bandwidth of the chain, exactly as evaluated
    expected = [float(result.values[k]) for k, _ in GLANCE_SPEED
                if np.isfinite(float(result.values[k]))]
    np.testing.assert_allclose(_bar_values(a_speed), expected, rtol=0)
    # noise: the sources that contribute, largest first, with the result's rms currents
    noise = {SOURCE_LABELS[k]: float(v) for k, v in result.noise_by_source.items() if v > 0}
    drawn = dict(zip(_labels(a_noise), _bar_values(a_noise)))
    assert drawn == pytest.approx(noise, rel=0, abs=0)
    assert _bar_values(a_noise) == sorted(_bar_values(a_noise), reverse=True)
    # a digital receiver shows its BER sensitivity beside the noise-floor power
    np.testing.assert_allclose(_bar_values(a_power),
                               [result.min_detectable_power, result.sensitivity,
                                result.optical_power], rtol=0)


def test_receiver_result_plot_needs_one_point(rx):
    from photorx.analysis.parameters import with_parameters

    result = with_parameters(rx, reverse_bias=np.array([1.0, 2.0])).evaluate()
    with pytest.raises(ValueError, match="plot_sweep"):
        result.plot()


def test_tia_metrics_bode_marks_the_margins(rx):
    control = pytest.importorskip("control")
    net = rx.equivalent_circuit()
    metrics = rx.tia.analyze(net)
    fig = metrics.plot()
    ax_mag, ax_ph = fig.axes
    assert len(fig.axes) == 2
    assert "[dB]" in ax_mag.get_ylabel() and "[deg]" in ax_ph.get_ylabel()
    assert "[Hz]" in ax_ph.get_xlabel()
    loop, closed = ax_mag.get_lines()[:2]
    f = loop.get_xdata()
    t = rx.tia.loop_gain(f, net)
    np.testing.assert_allclose(loop.get_ydata(), 20 * np.log10(np.abs(t)), rtol=1e-12)
    np.testing.assert_allclose(closed.get_ydata(),
                               20 * np.log10(np.abs(rx.tia.transimpedance(f, net))), rtol=1e-12)
    # the marked crossover and phase margin are the metrics' numbers ...
    marks = {ln.get_label().split()[0]: ln for ln in ax_mag.get_lines() + ax_ph.get_lines()
             if not ln.get_label().startswith("_") and ln.get_marker() in ("o", "s")}
    fc = marks["crossover"].get_xdata()[0]
    assert fc == metrics.crossover
    assert marks["phase"].get_ydata()[0] == pytest.approx(-180.0 + metrics.phase_margin)
    # ... and python-control finds the same margin on the drawn loop-gain data
    # (python-control, control.stability_margins on a frequency-response data model)
    dense = np.geomspace(fc / 3, fc * 3, 4001)
    frd = control.frd(rx.tia.loop_gain(dense, net), 2 * np.pi * dense)
    _, pm, _, _, wgc, _ = control.stability_margins(frd, returnall=False)
    assert pm == pytest.approx(metrics.phase_margin, abs=0.05)
    assert wgc / (2 * np.pi) == pytest.approx(fc, rel=1e-3)


def test_tia_metrics_without_stage(rx):
    from photorx.circuit.metrics import TiaMetrics

    plain = TiaMetrics(**rx.tia.analyze(rx.equivalent_circuit()).to_dict())
    with pytest.raises(ValueError, match="Tia.analyze"):
        plain.plot()


def test_noise_spectrum_plot_from_the_lower_limit(rx):
    import scipy.constants as sc

    ns = rx.noise()
    fig = ns.plot()
    (a,) = fig.axes
    assert a.get_xscale() == "log" and a.get_yscale() == "log"
    assert "[Hz]" in a.get_xlabel() and "V$^2$/Hz]" in a.get_ylabel()
    assert ns.f_lo == rx.noise_band_low == 1.0
    assert a.get_xlim()[0] == pytest.approx(ns.f_lo)  # from the integration's lower limit
    labels = [t.get_text() for t in a.get_legend().get_texts()]
    layers = a.collections
    assert len(layers) == len(labels) == sum(np.any(v > 0) for v in
                                             ns.by_source(np.array([1.0, 1e9])).values())
    # each layer's height is that source's power density; the top of the stack is the
    # total output density squared (uncorrelated powers add)
    f, lower, upper = _edges(layers[-1])
    dens = {SOURCE_LABELS.get(k, k): v ** 2 for k, v in ns.by_source(f).items()}
    total = sum(dens.values())
    scale = total[0] / upper[0]  # the axis shows (prefix V)^2/Hz
    np.testing.assert_allclose(upper * scale, total, rtol=1e-9)
    for layer, label in zip(layers, labels):
        _, lo, hi = _edges(layer)
        np.testing.assert_allclose((hi - lo) * scale, dens[label], rtol=1e-6,
                                   atol=1e-12 * total.max())
    # the Rf layer at the band start: 4 k T Rf |Zt/Rf|^2 (Johnson-Nyquist; k from
    # scipy.constants), Zt the stage's transimpedance at 1 Hz
    _, lo, hi = _edges(layers[labels.index(SOURCE_LABELS["rf_thermal"])])
    zt = abs(rx.tia.transimpedance(1.0, rx.equivalent_circuit()))
    johnson = 4 * sc.k * rx.temperature * rx.tia.rf * (zt / rx.tia.rf) ** 2
    assert (hi[0] - lo[0]) * scale == pytest.approx(johnson, rel=1e-3)


def _edges(layer):
    """(x, lower edge, upper edge) of a stackplot layer (a fill_between polygon:
    start point, the lower edge forward, a turning point, the upper edge backward)."""
    v = layer.get_paths()[0].vertices
    n = (len(v) - 3) // 2
    return v[1:n + 1, 0], v[1:n + 1, 1], v[n + 2:2 * n + 2, 1][::-1]


@pytest.fixture(scope="module")
def table(rx):
    return prx.sweep(rx, reverse_bias=np.linspace(0.5, 5, 4), rf=[2e3, 4e3])


def test_sweep_columns_all_carry_units(table):
    units = table.attrs["units"]
    assert set(units) == set(table.columns)
    # SI units of the figure table and of the design-file keys
    assert units["reverse_bias"] == "V" and units["rf"] == "ohm" and units["bandwidth"] == "Hz"
    assert units["nep"] == "W/rtHz" and units["noise_rf_thermal"] == "A"
    assert units["phase_margin"] == "deg" and units["q"] == "" and units["stable"] == ""
    area = prx.sweep(prx.demo_receiver(), area=[1e-9, 2e-9])
    assert area.attrs["units"]["area"] == "m^2"


def test_sweep_csv_round_trip_keeps_units(table, tmp_path):
    path = write_sweep_csv(table, tmp_path / "sweep.csv")
    header = path.read_text().splitlines()[0].split(",")
    assert header[:3] == ["reverse_bias [V]", "rf [ohm]", "depletion_width [m]"] or \
        "bandwidth [Hz]" in header
    back = read_sweep_csv(path)
    assert list(back.columns) == list(table.columns)
    assert back.attrs["units"] == table.attrs["units"]
    for col in table.columns:
        if table[col].dtype.kind in "fi":
            expected = table[col].replace([np.inf, -np.inf], np.nan).to_numpy(dtype=float)
            np.testing.assert_array_equal(back[col].to_numpy(dtype=float), expected)
        else:
            assert list(back[col].astype(str)) == list(table[col].astype(str)), col


def test_plot_sweep_one_panel_per_figure(table):
    fig = plot_sweep(table[table["rf"] == 2e3], x="reverse_bias",
                     y=["bandwidth", "phase_margin", "input_noise_rms"])
    assert len(fig.axes) == 3
    assert [a.get_ylabel() for a in fig.axes] == \
        ["bandwidth [Hz]", "phase_margin [deg]", "input_noise_rms [A]"]
    assert fig.axes[-1].get_xlabel() == "reverse_bias [V]"
    sub = table[table["rf"] == 2e3]
    line = fig.axes[0].get_lines()[0]
    np.testing.assert_array_equal(line.get_xdata(), sub["reverse_bias"].to_numpy())
    np.testing.assert_array_equal(line.get_ydata(), sub["bandwidth"].to_numpy())
    with pytest.raises(prx.DesignError, match="bogus"):
        plot_sweep(table, x="reverse_bias", y=["bogus"])


# -- the CSV format for any table: property test of the round trip ---------------------------
from hypothesis import given, settings, strategies as st  # noqa: E402

_NAMES = st.from_regex(r"[a-z][a-z0-9_]{0,8}(\.[a-z][a-z0-9_]{0,5})?", fullmatch=True)
_UNITS = st.sampled_from(["", "V", "Hz", "A/rtHz", "W/rtHz", "m^2", "m^-3", "deg", "dB",
                          "bit/s", "ohm"])
_VALUES = st.floats(allow_nan=True, allow_infinity=True, width=64)


@settings(max_examples=40, deadline=None)
@given(columns=st.lists(st.tuples(_NAMES, _UNITS), min_size=1, max_size=5,
                        unique_by=lambda c: c[0]),
       rows=st.integers(min_value=1, max_value=6), data=st.data())
def test_csv_round_trip_of_any_numeric_table(columns, rows, data):
    import pandas as pd

    from photorx.views.sweep_units import sweep_csv_text

    frame = pd.DataFrame({name: data.draw(st.lists(_VALUES, min_size=rows, max_size=rows))
                          for name, _ in columns})
    frame.attrs["units"] = dict(columns)
    text = sweep_csv_text(frame)
    assert "inf" not in text.lower() and "nan" not in text.lower()
    back = read_sweep_csv(text)
    assert list(back.columns) == list(frame.columns)
    assert back.attrs["units"] == dict(columns)
    # floats are written exactly (repr); inf and NaN both read back as missing ("none")
    expected = frame.replace([np.inf, -np.inf], np.nan).to_numpy(dtype=float)
    np.testing.assert_array_equal(back.to_numpy(dtype=float), expected)
