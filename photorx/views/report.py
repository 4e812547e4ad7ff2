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
from .tables import html_page

__all__ = ["build_report", "write_report", "report_figures"]


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
            lambda: plots.plot_curve(bias, cap, xlabel="reverse bias", ylabel="capacitance",
                                     xunit="V", yunit="F", mark=(v0, at),
                                     title="Photodiode capacitance"),
            "Total photodiode capacitance; the dot is the operating bias.")
    add("Loop gain and closed-loop response",
        lambda: plots.plot_bode(f, loop_gain=rx.tia.loop_gain(f, net),
                                closed_loop=rx.tia.transimpedance(f, net)),
        "Loop gain T = A*beta (its 0 dB crossing sets the phase margin) and the closed-loop "
        "transimpedance in dB re 1 ohm.")

    def make_step():
        t, y = _step_response(rx, net)
        return plots.plot_step(t, y, unit="", final=1.0,
                               title="Step response of the transimpedance stage")
    add("Step response", make_step,
        "Output of the transimpedance stage for a photocurrent step, normalised to its final "
        "value; dotted lines at 10 % and 90 %.")

    ns = _noise(rx, net)
    fn = f[f >= _scalar(getattr(rx, "noise_band_low", 1.0))]

    def make_noise():
        from ..analysis.noise import SOURCE_LABELS

        dens = {SOURCE_LABELS.get(k, k): v for k, v in ns.by_source(fn).items()
                if np.any(np.asarray(v) > 0)}  # sources that contribute nothing are left out
        return plots.plot_noise_stack(fn, dens, unit="V")
    add("Output noise density by source", make_noise,
        "Noise power density of each source at the output (stacked: uncorrelated powers add).")

    series = [(label, col(name), unit, log) for label, name, unit, log in (
        ("bandwidth", "bandwidth", "Hz", False),
        ("phase margin", "phase_margin", "deg", False),
        ("input noise", "input_noise_rms", "A", True),
        ("NEP", "nep", "W/rtHz", True),
        ("dark current", "dark_current", "A", True)) if col(name) is not None]
    if series:
        add("Bias trade-off", lambda: plots.plot_bias_tradeoff(bias, series, mark=v0),
            "Figures of the whole receiver against reverse bias; the dashed line is the "
            "operating bias.")
    return out


def build_report(rx, title: str = "photorx receiver report", bias_points: int = 41,
                 fmt: str = "png", study=None) -> str:
    """The report as one HTML document (plots embedded, no external files).

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
    from ..designfile import dumps_design

    budget = rx.budget()
    parts = [f"<h1>{html.escape(title)}</h1>",
             "<p>Computed by photorx from the design below. Every figure is a model estimate "
             "to be verified on hardware; see the cautions at the end.</p>"]
    try:
        design_text = dumps_design(rx)
    except DesignError as exc:
        design_text = f"(design not expressible as a design file: {exc})"
    from ..analysis.checks import check_warning, failed_checks

    failed = failed_checks(rx.checks())
    if len(failed):  # the checks that fail come first, in words (full table in the budget)
        parts += ['<section class="failed-checks"><h2>Failed checks</h2><ul>']
        parts += [f"<li>{html.escape(check_warning(row))}</li>" for _, row in failed.iterrows()]
        parts += ["</ul></section>"]
    parts += ["<h2>Design</h2>", f"<pre>{html.escape(design_text)}</pre>"]
    parts += ["<h2>Budget</h2>", budget._html_tables(3)]
    parts.append("<h2>Plots</h2>")
    for fig_title, uri, caption in report_figures(rx, bias_points, fmt):
        parts.append(f"<h3>{html.escape(fig_title)}</h3>")
        if uri is not None:
            parts.append(f'<figure><img alt="{html.escape(fig_title)}" src="{uri}">'
                         f"<figcaption>{html.escape(caption)}</figcaption></figure>")
        else:
            parts.append(f"<p><em>{html.escape(caption)}</em></p>")
    if study is not None:
        parts += _yield_section(study, fmt)
    parts.append(cautions_html(2))
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
