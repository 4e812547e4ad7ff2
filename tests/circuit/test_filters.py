"""Post filters: responses against scipy.signal, noise bandwidths against published values."""

from pathlib import Path

import numpy as np
import pandas as pd
import pytest
import scipy.signal as ss
from scipy import integrate

from photorx.circuit.filters import (
    PostFilter,
    filter_enbw_factor,
    filter_power_response,
    filter_response,
    normalized_poles,
)
from photorx.errors import DesignError

REFERENCE = Path(__file__).resolve().parents[2] / "reference"
F = np.logspace(-3, 3, 61)  # relative to the cutoff


@pytest.mark.parametrize("order", range(1, 7))
def test_butterworth_matches_scipy_butter(order):
    # Source: scipy.signal.butter(analog=True) + freqs; rtol 1e-9
    fc = 3.3e6
    b, a = ss.butter(order, 2 * np.pi * fc, analog=True)
    _, h_ref = ss.freqs(b, a, 2 * np.pi * F * fc)
    np.testing.assert_allclose(filter_response(F * fc, "butterworth", order, fc), h_ref, rtol=1e-9)


@pytest.mark.parametrize("order", range(1, 7))
def test_bessel_matches_scipy_bessel_mag_normalised(order):
    # Source: scipy.signal.bessel(norm='mag', analog=True): -3 dB at the cutoff; rtol 1e-9
    fc = 250e3
    b, a = ss.bessel(order, 2 * np.pi * fc, analog=True, norm="mag")
    _, h_ref = ss.freqs(b, a, 2 * np.pi * F * fc)
    np.testing.assert_allclose(filter_response(F * fc, "bessel", order, fc), h_ref, rtol=1e-9)
    np.testing.assert_allclose(
        abs(PostFilter("bessel", order, fc).response(fc)), 2**-0.5, rtol=1e-12
    )


def test_butterworth_enbw_published():
    # Source: Motchenbacher and Connelly, Low-Noise Electronic System Design, 1993, ch. 1
    # (reference/butterworth_enbw.csv, 3 decimals -> atol 6e-4 on the factor)
    table = pd.read_csv(REFERENCE / "butterworth_enbw.csv", comment="#")
    assert list(table["order"]) == [1, 2, 3, 4]
    for order, factor in zip(table["order"], table["enbw_over_f3db"]):
        assert filter_enbw_factor("butterworth", int(order)) == pytest.approx(factor, abs=6e-4)
        assert PostFilter("butterworth", int(order), 2e6).enbw() == pytest.approx(
            factor * 2e6, abs=6e-4 * 2e6
        )


@pytest.mark.parametrize("order", range(1, 7))
def test_butterworth_enbw_closed_form(order):
    # Source: ENBW/fc = (pi/2n)/sin(pi/2n) (Motchenbacher and Connelly 1993, ch. 1); rtol 1e-9
    x = np.pi / (2 * order)
    assert filter_enbw_factor("butterworth", order) == pytest.approx(x / np.sin(x), rel=1e-9)


@pytest.mark.parametrize("order", range(1, 7))
def test_bessel_enbw_against_scipy_response(order):
    # Source: scipy.signal.bessel(norm='mag') response integrated by scipy.integrate.quad; rtol 1e-7
    b, a = ss.bessel(order, 1.0, analog=True, norm="mag")

    def power(x):
        return abs(ss.freqs(b, a, [x])[1][0]) ** 2

    ref = (
        integrate.quad(power, 0, 1, epsrel=1e-10)[0]
        + integrate.quad(power, 1, np.inf, epsrel=1e-10, limit=200)[0]
    )
    assert filter_enbw_factor("bessel", order) == pytest.approx(ref, rel=1e-7)


def test_brickwall():
    # Definition of the ideal filter (common practice): |H| = 1 up to the edge, 0 above; ENBW = edge
    pf = PostFilter("brickwall", 1, 1e6)
    np.testing.assert_array_equal(pf.response([1e3, 1e6, 1.0001e6, 1e9]), [1, 1, 0, 0])
    assert pf.enbw() == 1e6


def test_butterworth_poles_unit_circle():
    # Butterworth poles lie on the unit circle in the left half plane (common practice); atol 1e-12
    for n in range(1, 7):
        p = np.array(normalized_poles("butterworth", n))
        np.testing.assert_allclose(abs(p), 1.0, atol=1e-12)
        assert np.all(p.real < 0)


def test_scalar_and_array_broadcast_over_cutoff():
    # Broadcasting: cutoff[..., None] against a 1-D grid equals the scalar calls; rtol 0
    cut = np.array([1e6, 2e6, 5e6])
    f = np.logspace(4, 8, 9)
    many = filter_response(f, "bessel", 3, cut[:, None])
    assert many.shape == (3, 9)
    for i, c in enumerate(cut):
        np.testing.assert_array_equal(many[i], filter_response(f, "bessel", 3, c))
    assert np.ndim(filter_response(1e6, "butterworth", 2, 1e6)) == 0


@pytest.mark.parametrize(
    "kwargs, name",
    [
        ({"kind": "chebyshev", "order": 2, "cutoff": 1e6}, "kind"),
        ({"kind": "bessel", "order": 0, "cutoff": 1e6}, "order"),
        ({"kind": "bessel", "order": 7, "cutoff": 1e6}, "order"),
        ({"kind": "bessel", "order": 2.5, "cutoff": 1e6}, "order"),
        ({"kind": "butterworth", "order": 2, "cutoff": -1.0}, "cutoff"),
        ({"kind": "butterworth", "order": 2, "cutoff": np.inf}, "cutoff"),
    ],
)
def test_bad_inputs_name_the_parameter(kwargs, name):
    with pytest.raises(DesignError, match=name) as err:
        PostFilter(**kwargs)
    assert err.value.parameter == name


def test_order_message_names_range():
    with pytest.raises(DesignError, match="1 to 6"):
        PostFilter("butterworth", 9, 1e6)
    with pytest.raises(DesignError, match="Hz"):
        PostFilter("butterworth", 2, 0.0)


@pytest.mark.parametrize("kind", ["butterworth", "bessel"])
@pytest.mark.parametrize("order", range(1, 7))
def test_power_response_matches_scipy_squared_magnitude(kind, order):
    # Source: scipy.signal.butter / bessel(norm='mag', analog=True) + freqs, |H|^2; rtol 1e-9
    fc = 1.7e6
    design = ss.butter if kind == "butterworth" else (
        lambda n, w, analog: ss.bessel(n, w, analog=analog, norm="mag"))
    b, a = design(order, 2 * np.pi * fc, analog=True)
    _, h_ref = ss.freqs(b, a, 2 * np.pi * F * fc)
    cut = np.array([fc, 2 * fc])[:, None]  # broadcasts over cutoff as filter_response does
    got = filter_power_response(F * fc, kind, order, cut)
    np.testing.assert_allclose(got[0], np.abs(h_ref) ** 2, rtol=1e-9)
    np.testing.assert_allclose(got[1], np.abs(filter_response(F * fc, kind, order, 2 * fc)) ** 2,
                               rtol=1e-12)


def test_power_response_brickwall():
    # Definition: pass band 1, stop band 0 (common practice)
    np.testing.assert_array_equal(filter_power_response([1.0, 2.0, 3.0], "brickwall", 1, 2.0),
                                  [1.0, 1.0, 0.0])
