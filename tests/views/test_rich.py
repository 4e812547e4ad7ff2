"""Rich display of design objects: parameter tables with units, closed forms in LaTeX.

The table's text (number and unit) is read back with pint (through
:func:`photorx.units.parse_quantity`) and must give the design's SI value; the closed forms
are evaluated with sympy and compared with the numeric engine: the abrupt and linearly
graded depletion capacitance (Sze and Ng, Physics of Semiconductor Devices, 3rd ed., 2007,
eqs. 2.12 and 2.30), the SPICE junction form, the dominant-pole amplifier and the
ideal-amplifier transimpedance Rf/(1 + s Rf Cf) (Graeme, Photodiode Amplifiers, 1996, ch. 2).
"""

from __future__ import annotations

from html.parser import HTMLParser

import numpy as np
import pytest

import photorx as prx
from photorx.designfile import _design_values
from photorx.designschema import SCHEMA
from photorx.units import parse_quantity
from photorx.views import rich


@pytest.fixture(scope="module")
def rx():
    return prx.demo_receiver()


class _Cells(HTMLParser):
    def __init__(self):
        super().__init__()
        self.rows, self._row, self._cell, self._style = [], None, None, ""

    def handle_starttag(self, tag, attrs):
        if tag == "tr":
            self._row = []
        elif tag in ("td", "th") and self._row is not None:
            self._cell, self._style = "", dict(attrs).get("style", "")

    def handle_data(self, data):
        if self._cell is not None:
            self._cell += data

    def handle_endtag(self, tag):
        if tag in ("td", "th") and self._cell is not None:
            align = "right" if "text-align:right" in self._style else "left"
            self._row.append((tag, self._cell, align))
            self._cell = None
        elif tag == "tr" and self._row is not None:
            self.rows.append(self._row)
            self._row = None


def test_receiver_table_reads_back_to_the_design(rx):
    keys = {(k.section, k.name): k for k in SCHEMA}
    values = {name: (section, v) for section, vals in _design_values(rx).items()
              for name, v in vals.items()}
    rows = rich.parameter_rows(rx)
    assert {name for _, name, *_ in rows} == set(values)
    for _, name, number, unit, _doc in rows:
        section, value = values[name]
        key = keys[(section, name)]
        if key.unit in (None,) or key.kind in ("text", "integer", "table"):
            continue
        if key.kind == "list":
            got = [parse_quantity(f"{n} {unit}", key.unit) for n in number.split(", ")]
            np.testing.assert_allclose(got, value, rtol=1e-3)
            continue
        text = f"{number} {unit}".strip()
        # pint converts the shown unit (kohm, cm^-3, nm, um^2, nV/rtHz ...) back to SI
        assert parse_quantity(text, key.unit or None) == pytest.approx(float(value), rel=1e-3), name


def test_table_alignment_and_sections(rx):
    parser = _Cells()
    parser.feed(rx._repr_html_())
    body = [r for r in parser.rows if r and r[0][0] == "td"]
    sections = [r[0][1] for r in parser.rows if len(r) == 1]
    assert sections[:4] == ["junction", "photodiode", "amplifier", "feedback network"]
    for (_, name, name_align), (_, number, num_align), (_, unit, unit_align) in body:
        assert name_align == "left" and unit_align == "left"
        numeric = number.replace(".", "", 1).replace("e+", "").replace("e-", "").isdigit()
        assert num_align == ("right" if numeric else "left"), (name, number)
    shown = {r[0][1]: (r[1][1], r[2][1]) for r in body}
    assert shown["rf"] == ("3", "kohm") and shown["wavelength"] == ("1310", "nm")
    assert shown["material"] == ("InGaAs", "")


@pytest.mark.parametrize("make", [
    lambda rx: rx.photodiode.junction, lambda rx: rx.photodiode, lambda rx: rx.tia.amp,
    lambda rx: rx.tia, lambda rx: prx.ParametricJunction(cj0=1e-12, vj=0.7, m=0.5),
    lambda rx: prx.AbruptJunction(prx.material("Si"), na=1e25, nd=1e21, area=1e-6),
], ids=["pin", "photodiode", "amplifier", "tia", "parametric", "abrupt"])
def test_every_design_object_shows_a_table(rx, make):
    obj = make(rx)
    page = obj._repr_html_()
    assert page.startswith('<table class="photorx-parameters"') and type(obj).__name__ in page
    assert "<td" in page


def _evaluate(obj, values):
    import sympy as sp

    eq = rich.closed_form(obj)
    (symbol,) = eq.rhs.free_symbols
    return sp.lambdify(symbol, eq.rhs, "numpy")(values)


def test_junction_closed_forms_match_the_engine():
    v = np.array([0.0, 1.0, 5.0, 20.0])
    abrupt = prx.AbruptJunction(prx.material("Si"), na=1e25, nd=1e21, area=1e-6)
    np.testing.assert_allclose(_evaluate(abrupt, v), abrupt.capacitance(v), rtol=2e-3)
    graded = prx.LinearlyGradedJunction(prx.material("Si"), gradient=1e26, area=1e-8)
    np.testing.assert_allclose(_evaluate(graded, v), graded.capacitance(v), rtol=2e-3)
    spice = prx.ParametricJunction(cj0=1.2e-12, vj=0.7, m=0.45)
    np.testing.assert_allclose(_evaluate(spice, v), spice.capacitance(v), rtol=2e-3)
    latex = abrupt._repr_latex_()
    assert "N_A N_D" in latex and r"10^{19}\ \mathrm{cm^{-3}}" in latex
    assert "C_{j0} = 1.2\\ \\mathrm{pF}" in spice._repr_latex_()
    # no closed form for the p-i-n model here (punch-through is piecewise)
    assert prx.demo_receiver().photodiode.junction._repr_latex_() is None


def test_circuit_closed_forms_match_the_engine(rx):
    from photorx.circuit.amplifier import open_loop_gain

    amp = rx.tia.amp
    f = np.geomspace(1e3, 1e11, 9)
    np.testing.assert_allclose(_evaluate(amp, 2j * np.pi * f),
                               open_loop_gain(f, amp.gbw, amp.dc_gain, amp.poles), rtol=2e-3)
    # with a zero (4-digit display rounding, as above)
    lead = prx.OpAmp(gbw=2e8, dc_gain=1e5, poles=(4e8,), zeros=(1.5e8,))
    np.testing.assert_allclose(_evaluate(lead, 2j * np.pi * f),
                               open_loop_gain(f, 2e8, 1e5, (4e8,), (1.5e8,)), rtol=2e-3)
    assert r"f_{z1} = 150\ \mathrm{MHz}" in lead._repr_latex_()
    # a near-ideal amplifier and a tiny diode: the stage approaches Rf / (1 + s Rf Cf)
    ideal = prx.Tia(prx.OpAmp(gbw=1e15, dc_gain=1e9), rf=1e4, cf=1e-12)
    net = prx.EquivalentCircuit(capacitance=1e-15, shunt_resistance=1e15)
    f = np.geomspace(1e3, 1e8, 6)
    np.testing.assert_allclose(np.abs(_evaluate(ideal, 2j * np.pi * f)),
                               np.abs(ideal.transimpedance(f, net)), rtol=2e-3)
    assert r"R_f = 10\ \mathrm{k\Omega}" in ideal._repr_latex_()


def test_amplifier_with_a_noise_curve_shows_the_table_span():
    # common practice: a tabulated curve is summarised by its size and frequency span
    amp = prx.OpAmp(voltage_noise_curve=([10.0, 1e3, 1e6], [30e-9, 8e-9, 5e-9]))
    html = amp._repr_html_()
    assert "table of 3 points" in html
    assert "10 Hz" in html and "1 MHz" in html
