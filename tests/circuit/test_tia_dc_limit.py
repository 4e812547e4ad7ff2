"""The nodal-analysis core at f = 0 with no shunt path (Rsh = inf) stays finite.

Reference: the DC limit of an ideal-feedback transimpedance stage with finite open-loop
gain A0 and no input conductance is Zt(0) = Rf * A0 / (1 + A0) (common practice:
closed-loop gain of a feedback amplifier with beta = 1 at DC).
"""

import numpy as np
import pytest

import photorx as prx


@pytest.mark.parametrize("rs", [0.0, 50.0])
def test_dc_transimpedance_without_shunt_path(rs):
    amp = prx.OpAmp(gbw=100e6, dc_gain=1e4)
    tia = prx.Tia(amp, rf=10e3, cf=1e-12)
    net = prx.EquivalentCircuit(capacitance=2e-12, series_resistance=rs, shunt_resistance=np.inf)
    zt = tia.transimpedance(np.array([0.0, 1.0]), net)
    assert np.all(np.isfinite(zt))
    np.testing.assert_allclose(zt[0].real, 10e3 * 1e4 / (1 + 1e4), rtol=1e-12)
    assert tia.noise_gain(0.0, net) == pytest.approx(1.0, rel=1e-12)  # 1 + Yin/Yf with Yin(0) = 0
    assert net.current_divider(0.0) == pytest.approx(1.0)
