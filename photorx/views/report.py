"""One self-contained HTML report of a receiver design: numbers, plots, budget, cautions.

The report asks the package for every number (the receiver's evaluation and budget, the
amplifier loop's responses, the noise spectrum, a bias sweep) and hands them to
:mod:`photorx.views.plots`; it computes no physics itself. Plots are embedded as base64
PNG (or SVG) so the single file can be mailed or archived.
"""

from __future__ import annotations

import html
from pathlib import Path

import numpy as np

from ..errors import DesignError
from .._files import atomic_write_text
from .cautions import cautions_html
from .report_apd import apd_section
from .tables import html_page

__all__ = ["build_report", "write_report", "report_figures", "SECTIONS"]


def _scalar(value) -> float:
    return float(np.asarray(value, dtype=float))


def _frequency_grid(result, n: int = 400) -> np.ndarray:
    """Log grid over seven decades up to 30 times the chain bandwidth or the loop crossover."""
    edges = [_scalar(getattr(result, name)) for name in ("bandwidth", "crossover")]
    edges = [e for e in edges if np.isfinite(e) and e > 0]
    top = 30.0 * max(edges) if edges else 1e10
    return np.geomspace(top * 1e-7, top, n)


def _step_response(rx, net, n: int = 800):
    """Closed-loop step response of the stage, normalised to its final value: (t [s], y)."""
    return rx.tia.step_response(net, n=n)


def _bias_grid(rx, n: int, breakdown: float = np.inf) -> np.ndarray:
    """Bias axis of the trade-off plots: 0 V to the bias limit (or twice the operating bias),
    stopping at 95 % of the breakdown estimate ``breakdown`` [V] (the models end there)."""
    v0 = _scalar(rx.reverse_bias)
    limit = getattr(rx, "max_bias", None)
    top = _scalar(limit) if limit is not None else max(2.0 * v0, 10.0)
    if np.isfinite(breakdown) and breakdown > 0:
        top = min(top, 0.95 * breakdown)
    return np.linspace(0.0, max(top, v0), n)


def _network(rx):
    """The photodiode's equivalent circuit at the operating point (from the receiver)."""
    if hasattr(rx, "equivalent_circuit"):
        return rx.equivalent_circuit()
    return rx.photodiode.equivalent_circuit(
        rx.reverse_bias, optical_power=rx.optical_power, wavelength=rx.wavelength,
        background_power=rx.background_power)


def _noise(rx, net):
    if hasattr(rx, "noise"):
        return rx.noise()
    return rx.tia.noise(net, temperature=rx.temperature, post_filter=rx.post_filter)


def report_figures(rx, bias_points: int = 41, fmt: str = "png") -> list:
    """The report's figures as ``(title, data URI, caption)``; a failed part gives a caption only.

    Parameters
    ----------
    rx : Receiver
        The design.
    bias_points : int
        Points of the bias trade-off sweep.
    fmt : {"png", "svg"}
        Image format embedded in the page.
    """
    from . import plots
    from ..analysis.sweep import sweep

    out = []

    def add(title, make, caption=""):
        try:
            fig = make()
        except DesignError as exc:
            out.append((title, None, f"not available: {exc}"))
            return
        out.append((title, plots.figure_to_base64(fig, fmt), caption))

    result = rx.evaluate()
    f = _frequency_grid(result)
    net = _network(rx)
    bias = _bias_grid(rx, bias_points, _scalar(getattr(result, "breakdown_voltage", np.inf)))
    v0 = _scalar(rx.reverse_bias)
    frame = sweep(rx, reverse_bias=bias)

    def col(name):
        return frame[name].to_numpy(dtype=float) if name in frame.columns else None

    cap = col("capacitance")
    if cap is not None:
        at = float(np.interp(v0, bias, cap))
        add("Operating point: capacitance against bias",
            lambda: plots.plot_curve(bias, cap, xlabel="reverse bias [V]",
                                     ylabel="capacitance [F]", xunit="V", yunit="F", mark=(v0, at),
                                     title="Photodiode capacitance"),
            "Total photodiode capacitance; the dot is the operating bias.")
    add("Loop gain and closed-loop response",
        lambda: rx.tia.analyze(net).plot(f=f),
        "Loop gain T = A*beta (its 0 dB crossing, marked, sets the phase margin, drawn as the "
        "gap to -180 deg) and the closed-loop transimpedance in dB re 1 ohm with its -3 dB "
        "bandwidth.")

    def make_step():
        t, y = _step_response(rx, net)
        return plots.plot_step(t, y, unit="", final=1.0,
                               title="Step response of the transimpedance stage")
    add("Step response", make_step,
        "Output of the transimpedance stage for a photocurrent step, normalised to its final "
        "value; dotted lines at 10 % and 90 %.")

    ns = _noise(rx, net)
    add("Output noise density by source", lambda: ns.plot(),
        f"Noise power density of each source at the output (stacked: uncorrelated powers "
        f"add), from {ns.f_lo:g} Hz, the lower limit of the noise integration, to 100 times "
        f"the equivalent noise bandwidth.")

    series = [(label, col(name), unit, log) for label, name, unit, log in (
        ("bandwidth [Hz]", "bandwidth", "Hz", False),
        ("phase margin [deg]", "phase_margin", "deg", False),
        ("input noise [A rms]", "input_noise_rms", "A", True),
        ("NEP [W/rtHz]", "nep", "W/rtHz", True),
        ("dark current [A]", "dark_current", "A", True)) if col(name) is not None]
    if series:
        add("Bias trade-off", lambda: plots.plot_bias_tradeoff(bias, series, mark=v0),
            "Figures of the whole receiver against reverse bias; the dashed line is the "
            "operating bias.")
    return out


def section_failed_checks(rx, context) -> str:
    """The checks that fail, in words, first (the full table is in the budget)."""
    from ..analysis.checks import check_warning, failed_checks

    failed = failed_checks(rx.checks())
    if not len(failed):
        return ""
    items = "".join(f"<li>{html.escape(check_warning(row))}</li>" for _, row in failed.iterrows())
    return f'<section class="failed-checks"><h2>Failed checks</h2><ul>{items}</ul></section>'


def section_design(rx, context) -> str:
    """The design as a parameter table with units (the design file is in the appendix)."""
    from .rich import parameter_table_html

    return ("<h2>Design</h2>\n<p>The parameters of the design, in the units of the design "
            "file; the file itself is in the appendix.</p>\n"
            + parameter_table_html(rx, title="Design parameters"))


def section_schematic(rx, context) -> str:
    """The transimpedance stage drawn as a circuit with its component values."""
    from .plots import figure_to_base64
    from .schematic import draw_tia_schematic

    title = "Transimpedance stage"
    try:
        uri = figure_to_base64(draw_tia_schematic(rx), context.get("fmt", "png"))
    except DesignError as exc:
        return f"<h3>{title}</h3><p><em>not available: {html.escape(str(exc))}</em></p>"
    return (f'<h3>{title}</h3>\n<figure><img alt="schematic of the transimpedance stage" '
            f'src="{uri}"><figcaption>The photodiode (its capacitance Cd and shunt resistance '
            "Rsh at the operating bias) reverse-biased by VR into the summing node; Rf and Cf "
            "in the feedback; the amplifier's gain-bandwidth product, DC gain and input "
            "capacitance.</figcaption></figure>")


def section_budget(rx, context) -> str:
    """The budget tables."""
    return "<h2>Budget</h2>\n" + rx.budget()._html_tables(3)


def section_plots(rx, context) -> str:
    """Every plot of :func:`report_figures`, with its caption."""
    parts = ["<h2>Plots</h2>"]
    for fig_title, uri, caption in report_figures(rx, context.get("bias_points", 41),
                                                  context.get("fmt", "png")):
        parts.append(f"<h3>{html.escape(fig_title)}</h3>")
        if uri is not None:
            parts.append(f'<figure><img alt="{html.escape(fig_title)}" src="{uri}">'
                         f"<figcaption>{html.escape(caption)}</figcaption></figure>")
        else:
            parts.append(f"<p><em>{html.escape(caption)}</em></p>")
    return "\n".join(parts)


def section_cautions(rx, context) -> str:
    """Laser eye safety, bias supplies, ESD; local codes and licensed practice."""
    return cautions_html(2)


def section_design_file(rx, context) -> str:
    """Appendix: the design file (TOML), collapsed."""
    from ..designfile import dumps_design

    try:
        text = dumps_design(rx)
    except DesignError as exc:
        text = f"(design not expressible as a design file: {exc})"
    return ('<h2>Appendix</h2>\n<details class="design-file"><summary>Design file (TOML): '
            "load it with photorx.load_design or the photorx command</summary>\n"
            f"<pre>{html.escape(text)}</pre>\n</details>")


def section_avalanche(rx, context) -> str:
    """Gain, k, F, optimum gain and compensated bias; empty unless the photodiode multiplies."""
    return apd_section(rx, context["fmt"])


def section_eye(rx, context) -> str:
    """The eye at the bit rate; empty for an analog receiver (no bit rate)."""
    if getattr(rx, "bit_rate", None) is None:
        return ""
    return "\n".join(eye_section(rx, context["fmt"]))


def section_yield(rx, context) -> str:
    """Yield of a tolerance study (pass fractions, drivers, corners); empty without a study."""
    study = context.get("study")
    return "" if study is None else "\n".join(_yield_section(study, context["fmt"]))


#: The report's sections in order: each ``section(rx, context) -> HTML`` (``context``
#: holds the options ``bias_points``, ``fmt`` and ``study``); add a section by inserting
#: its function.
SECTIONS = [section_failed_checks, section_design, section_schematic, section_budget,
            section_avalanche, section_plots, section_eye, section_yield, section_cautions,
            section_design_file]

_STYLE = """<style>
table.photorx-parameters td, table.photorx-parameters th { padding: 0.15em 0.8em;
  border-bottom: 1px solid #eee; }
details.design-file pre { font-size: 0.9em; background: #f6f6f6; padding: 0.8em; }
figure img { max-width: 100%; }
</style>"""


def build_report(rx, title: str = "photorx receiver report", bias_points: int = 41,
                 fmt: str = "png", study=None) -> str:
    """The report as one HTML document (plots embedded, no external files).

    The page is the title and a short note, then each function of :data:`SECTIONS`.

    Parameters
    ----------
    rx : Receiver
        The design.
    title : str
        Page title.
    bias_points : int
        Points of the bias trade-off sweep.
    fmt : {"png", "svg"}
        Image format of the embedded plots.
    study : ToleranceResult, optional
        A tolerance study of the design; adds a yield section (pass fractions, drivers,
        corner yields and the histograms). Default None: no such section.
    """
    context = {"bias_points": bias_points, "fmt": fmt, "study": study}
    parts = [_STYLE, f"<h1>{html.escape(title)}</h1>",
             "<p>Computed by photorx from the design below. Every figure is a model estimate "
             "to be verified on hardware; see the cautions at the end.</p>"]
    parts += [text for text in (section(rx, context) for section in SECTIONS) if text]
    return html_page(title, "\n".join(parts) + "\n")


def _yield_section(study, fmt: str) -> list:
    """The report's yield section: the study's tables and its histograms."""
    from . import plots
    from .tolerance_view import tolerance_html

    tols = ", ".join(f"{t.parameter} {t.describe()}" for t in study.tolerances)
    parts = ['<section class="yield"><h2>Yield over tolerances</h2>',
             f"<p>Monte Carlo over {html.escape(tols)} (seed {study.seed}); a unit passes "
             "when it meets every spec at every temperature corner. Intervals are Wilson "
             "95 % intervals.</p>", tolerance_html(study, level=3)]
    uri = plots.figure_to_base64(study.plot(), fmt)
    parts.append(f'<figure><img alt="tolerance study" src="{uri}"><figcaption>Spec figures '
                 "over the units (dashed: spec limit, dotted: nominal design) and the yield "
                 "at each temperature corner.</figcaption></figure></section>")
    return parts


def write_report(rx, path, title: str = "photorx receiver report", **options) -> Path:
    """Write :func:`build_report` to ``path`` atomically; returns the path.

    Parameters
    ----------
    rx : Receiver
        The design.
    path : str or os.PathLike
        Destination HTML file; written through a temporary file, so on failure it keeps
        its previous content (or stays absent).
    title : str
        Page title; default ``"photorx receiver report"``.
    **options
        ``bias_points``, ``fmt`` and ``study`` (a tolerance study: adds the yield
        section), passed on to :func:`build_report`.
    """
    return atomic_write_text(path, build_report(rx, title=title, **options))


def eye_section(rx, fmt: str = "png") -> list:
    """HTML parts of the report's eye section: figures of the PRBS7 eye and the density eye.

    Parameters
    ----------
    rx : Receiver
        A design with a bit rate.
    fmt : {"png", "svg"}
        Image format of the embedded eye.
    """
    import pandas as pd

    from . import plots
    from ..units import display_value
    from .tables import _html_table

    parts = ["<h2>Eye at the bit rate</h2>"]
    try:
        eye = rx.eye()
    except DesignError as exc:
        return parts + [f"<p><em>not available: {html.escape(str(exc))}</em></p>"]
    rows = [("vertical eye opening (fraction of ideal)", f"{eye.opening:.4f}"),
            ("worst-case pattern opening (peak distortion)", f"{eye.worst_case_opening:.4f}"),
            (f"eye height at BER {eye.target_ber:g}", display_value(eye.height, "V")),
            (f"eye width at BER {eye.target_ber:g}", display_value(eye.width, "s")),
            ("ISI jitter, peak to peak", display_value(eye.jitter_pp, "s")),
            ("sensitivity, noise only",
             f"{10 * np.log10(eye.sensitivity_noise_only / 1e-3):.2f} dBm"),
            ("sensitivity with ISI and noise", f"{eye.sensitivity_dbm:.2f} dBm"),
            ("ISI power penalty", f"{eye.isi_penalty_db:.3f} dB"),
            ("Personick I2 (noise bandwidth / bit rate)", f"{eye.personick_i2:.4f}")]
    # the budget's table style: text left, numbers right-aligned under their header
    parts.append(_html_table(pd.DataFrame(rows, columns=["figure", "value"])))
    uri = plots.figure_to_base64(eye.plot(), fmt)
    parts.append(f'<figure><img alt="eye diagram" src="{uri}"><figcaption>Density eye of '
                 f"{eye.modulation.upper()} {eye.pattern.upper()} at "
                 f"{html.escape(display_value(eye.bit_rate, 'bit/s'))}: the pulse response of "
                 "the whole chain (photodiode, amplifier, filter) with each level's Gaussian "
                 "noise; the dotted line is the decision instant.</figcaption></figure>")
    return parts
