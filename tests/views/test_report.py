"""Tests of photorx.views.report: one self-contained HTML file with tables, plots and cautions.

The step response drawn in the report is checked against the loop figures the circuit
stage computes (overshoot and rise time) with an independent time-domain simulation by
scipy.signal.
"""

from __future__ import annotations

import base64
import re
from html.parser import HTMLParser

import numpy as np
import pytest

pytest.importorskip("matplotlib")

from photorx.designfile import load_design  # noqa: E402
from photorx import _files  # noqa: E402
from photorx.views import report  # noqa: E402


@pytest.fixture(scope="module")
def rx():
    return load_design()


@pytest.fixture(scope="module")
def page(rx):
    return report.build_report(rx, title="Demo report", bias_points=9)


class _Tags(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags, self.srcs = [], []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.srcs += [v for k, v in attrs if k in ("src", "href")]


def test_report_is_self_contained(page):
    parser = _Tags()
    parser.feed(page)
    assert page.startswith("<!DOCTYPE html>") and "<title>Demo report</title>" in page
    # every image is embedded; nothing is fetched from elsewhere
    assert parser.srcs and all(s.startswith("data:image/") for s in parser.srcs)
    for uri in parser.srcs:
        assert base64.b64decode(uri.split(",", 1)[1]).startswith(b"\x89PNG")


def test_report_sections(page):
    titles = re.findall(r"<h3>([^<]*)</h3>", page)
    for expected in ["Loop gain and closed-loop response", "Step response",
                     "Output noise density by source", "Bias trade-off",
                     "Operating point: capacitance against bias",
                     "operating point", "speed", "stability", "noise by source", "sensitivity"]:
        assert expected in titles, expected
    assert "not available" not in page
    assert page.count("<table") >= 6
    assert "IEC 60825-1" in page and "verified on hardware" in page
    assert "[feedback]" in page and 'rf = &quot;3 kohm&quot;' in page  # the design itself


def test_figures_in_svg(rx):
    figs = report.report_figures(rx, bias_points=3, fmt="svg")
    assert len(figs) == 5
    assert all(uri.startswith("data:image/svg+xml;base64,") for _, uri, _ in figs)


def test_step_response_matches_loop_figures(rx):
    # scipy.signal's simulation of the closed-loop polynomial against the circuit stage's
    # overshoot and 10-90 % rise time (its own analytic step evaluation)
    net = rx.equivalent_circuit()
    t, y = report._step_response(rx, net, n=4000)
    metrics = rx.tia.analyze(net)
    assert y[-1] == pytest.approx(1.0, abs=2e-3)
    assert max(y.max() - 1.0, 0.0) == pytest.approx(metrics.overshoot, abs=2e-3)
    t10 = np.interp(0.1, y[: np.argmax(y >= 0.9) + 1], t[: np.argmax(y >= 0.9) + 1])
    t90 = t[np.argmax(y >= 0.9)]
    assert t90 - t10 == pytest.approx(metrics.rise_time, rel=0.01)


def test_write_report_atomic(rx, tmp_path, monkeypatch):
    target = tmp_path / "r.html"

    def fail(fd):
        raise OSError("disk full")

    monkeypatch.setattr(report, "build_report", lambda rx, **kw: "<html>" + "x" * 10000)
    monkeypatch.setattr(_files.os, "fsync", fail)
    with pytest.raises(OSError):
        report.write_report(rx, target)
    assert list(tmp_path.iterdir()) == []


def test_bias_limit_beyond_breakdown_still_reports(rx):
    import dataclasses

    vbr = float(rx.evaluate().breakdown_voltage)
    high = dataclasses.replace(rx, max_bias=3.0 * vbr)  # a supply limit above breakdown
    figures = report.report_figures(high, bias_points=7)
    assert [t for t, uri, _ in figures if uri is None] == []
    # the trade-off axis stops below the breakdown estimate, where the junction models end
    bias = report._bias_grid(high, 7, vbr)
    assert bias.max() == pytest.approx(0.95 * vbr, rel=1e-12) and bias.max() < vbr


def test_failed_checks_come_first(rx, page):
    import dataclasses

    assert "Failed checks" not in page  # the demo passes every check
    weak = dataclasses.replace(rx, tia=dataclasses.replace(rx.tia, cf=6e-15))
    text = report.build_report(weak, bias_points=5)
    section = text[text.index("Failed checks"):text.index("<h2>Design</h2>")]
    assert "phase margin" in section and "45 deg" in section
    assert section.count("<li>") == len(weak.checks().query("not ok"))


def test_eye_section_for_a_digital_design_only(rx, page):
    """The demo has a bit rate: its eye figures (from Receiver.eye, checked in
    tests/analysis/test_digital.py) and the density eye are in the page; an analog design
    (no bit rate) has no eye section."""
    import dataclasses

    eye = rx.eye()
    section = page[page.index("<h2>Eye at the bit rate</h2>"):]
    assert f"{eye.isi_penalty_db:.3f} dB" in section and 'alt="eye diagram"' in section
    analog = report.build_report(dataclasses.replace(rx, bit_rate=None), bias_points=5)
    assert "Eye at the bit rate" not in analog


# -- issue 17: the design as a table, a schematic, aligned tables, labelled plots ------------
def test_design_table_schematic_and_appendix(rx, page):
    design = page[page.index("<h2>Design</h2>"):page.index("<h2>Budget</h2>")]
    assert 'class="photorx-parameters"' in design and "<pre>" not in design
    assert ">rf</td>" in design and ">kohm</td>" in design
    assert 'alt="schematic of the transimpedance stage"' in design
    # the TOML only as a collapsed appendix, after the cautions
    appendix = page[page.index("<h2>Appendix</h2>"):]
    assert appendix.count("<details") == 1 and "[feedback]" in appendix
    assert page.index("IEC 60825-1") < page.index("<h2>Appendix</h2>")


def test_schematic_shows_the_component_values(rx):
    from photorx.units import format_eng
    from photorx.views.schematic import draw_tia_schematic, schematic_labels

    fig = draw_tia_schematic(rx)
    texts = [t.get_text() for t in fig.axes[0].texts]
    assert sorted(texts) == sorted(schematic_labels(rx).values())
    joined = "\n".join(texts)
    net = rx.equivalent_circuit()
    for value in ("3 k\u03a9", format_eng(rx.tia.cf, "F"), format_eng(net.capacitance, "F"),
                  format_eng(rx.reverse_bias, "V"), format_eng(rx.tia.amp.gbw, "Hz")):
        assert value in joined, value


def test_budget_alignment_text_left_numbers_right(page):
    cells = re.findall(r'<td( class="num")?>([^<]*)</td>', page)
    right = {c for k, c in cells if k}
    left = {c for k, c in cells if not k}
    assert "-3 dB bandwidth of the whole chain" in left
    assert "10-90 % rise time of the stage" in left
    assert {"3.3 V", "1310 nm", "63 deg"} <= right
    # the spot density column says where it is taken (ENBW/10 of the demo, about 96 MHz)
    assert re.search(r'<th class="num">input density at 9\d\.?\d* MHz</th>', page)
    # headers over numbers are right-aligned with them, over text left-aligned
    assert '<th class="num">value</th>' in page and "<th>quantity</th>" in page


def test_every_report_plot_has_labelled_axes_with_units(rx, monkeypatch):
    from photorx.views import plots

    drawn = []
    real = plots.figure_to_base64

    def keep(fig, fmt="png", dpi=110):
        drawn.append(fig)
        return real(fig, fmt, dpi=40)

    monkeypatch.setattr(plots, "figure_to_base64", keep)
    figures = report.report_figures(rx, bias_points=5)
    assert len(drawn) == len(figures) == 5
    for fig in drawn:
        for ax in fig.axes:
            shared_x = ax.get_xlabel() == "" and ax is not fig.axes[-1]
            assert shared_x or re.search(r"\[[^\]]+\]", ax.get_xlabel()), ax.get_xlabel()
            assert re.search(r"\[[^\]]+\]|normalised", ax.get_ylabel()), ax.get_ylabel()
    noise = drawn[[t for t, _, _ in figures].index("Output noise density by source")]
    assert noise.axes[0].get_xlim()[0] == pytest.approx(rx.noise_band_low)
