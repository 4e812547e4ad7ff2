"""Tolerance-study views: histograms with spec lines, yield against temperature, HTML tables.

They draw and format what :class:`~photorx.analysis.tolerance_result.ToleranceResult`
already computed; nothing here evaluates a receiver.
"""

from __future__ import annotations

import html

import numpy as np

from .plots import _eng, _new_axes

__all__ = ["plot_tolerance", "tolerance_html"]


def _spec_figures(result) -> list[str]:
    return list(dict.fromkeys(s["figure"] for s in result.specs))


def plot_tolerance(result, ax=None):
    """Histogram of every spec figure (limits dashed, nominal dotted) and, with temperature
    corners, the yield against temperature with its Wilson interval. Returns the figure.

    Parameters
    ----------
    result : ToleranceResult
        The study to draw.
    ax : sequence of matplotlib.axes.Axes, optional
        One axes per spec figure, plus one when there are corners; default None makes a
        new figure.
    """
    from ..analysis.result import FIGURES

    names = _spec_figures(result)
    corners = result.by_temperature
    count = len(names) + (corners is not None)
    fig, axes = _new_axes(ax, nrows=count, figsize=(6.4, 2.6 * count), sharex=False)
    units = result.samples.attrs.get("units", {})
    for axis, name in zip(axes, names):
        values = result.samples[name].to_numpy(dtype=float)
        finite = values[np.isfinite(values)]
        unit = units.get(name, "")
        axis.hist(finite, bins=min(60, max(10, int(np.sqrt(max(finite.size, 1))))),
                  color="tab:blue", alpha=0.75)
        for spec in result.specs:
            if spec["figure"] == name:
                axis.axvline(spec["limit"], color="tab:red", ls="--",
                             label=f"spec {spec['relation']}")
        nominal = result.nominal.get(name)
        if nominal is not None and np.isfinite(float(nominal)):
            axis.axvline(float(nominal), color="0.3", ls=":", label="nominal")
        description = FIGURES.get(name, ("", "", name))[2]
        axis.set_xlabel(f"{name} ({description})" + (f" [{unit}]" if unit and unit in
                                                       ("deg", "dB", "dBm") else ""))
        if unit and unit not in ("deg", "dB", "dBm", ""):
            _eng(axis.xaxis, unit.replace("rtHz", "√Hz"))
        axis.set_ylabel("units")
        axis.legend(loc="best", fontsize="small")
    if corners is not None:
        axis = axes[-1]
        t = corners.index.to_numpy(dtype=float)
        y = corners["yield"].to_numpy()
        err = np.vstack([y - corners["ci_low"].to_numpy(), corners["ci_high"].to_numpy() - y])
        axis.errorbar(t - 273.15, 100 * y, yerr=100 * err, marker="o", capsize=3)
        axis.set_xlabel("temperature [degC]")
        axis.set_ylabel("yield [%]")
        axis.set_ylim(min(100 * float(np.min(corners["ci_low"])), 95) - 5, 101)
    low, high = result.yield_interval
    fig.suptitle(f"Tolerance study: yield {100 * result.yield_fraction:.1f} % "
                 f"({100 * low:.1f} .. {100 * high:.1f} %), {result.n} units")
    return fig


def tolerance_html(result, level: int = 3) -> str:
    """The study as HTML: the yield line, pass fractions per spec, drivers, corner yields.

    Parameters
    ----------
    result : ToleranceResult
        The study.
    level : int
        Heading level of the sub-tables (1 to 6); default 3.
    """
    h = f"h{max(1, min(6, int(level)))}"
    parts = [f"<p><b>{html.escape(result.summary())}</b></p>",
             f"<{h}>Pass fraction per spec</{h}>",
             _percent(result.to_frame()).to_html(),
             f"<{h}>Drivers (Spearman rank correlation with failure)</{h}>",
             result.drivers.to_html(float_format=lambda v: f"{v:.3f}")]
    if result.by_temperature is not None:
        parts += [f"<{h}>Yield by temperature corner</{h}>",
                  _percent(result.by_temperature).to_html()]
    return "\n".join(parts)


def _percent(frame):
    out = frame.copy()
    for col in out.columns:
        if col in ("pass_fraction", "ci_low", "ci_high", "yield") or " " in str(col) \
                or col == "stable":
            out[col] = [f"{100 * v:.2f} %" if np.isfinite(v) else "" for v in out[col]]
    return out
