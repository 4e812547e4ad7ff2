"""Plots of receiver results with engineering-unit axes.

Every function takes numbers that the analysis already computed (arrays, dicts of arrays,
DataFrames), draws them, and returns the matplotlib Figure. None of them computes any
physics. Pass ``ax`` to draw into an existing axes (``axes`` pair for Bode plots); with
``ax=None`` a new Figure is made without pyplot, so the functions work headless.
matplotlib is imported only when a plot is drawn.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "plot_bode", "plot_step", "plot_noise_stack", "plot_bias_tradeoff", "plot_curve",
    "figure_to_base64",
]


def _new_axes(ax, nrows: int = 1, figsize=(6.4, 4.0), sharex=True):
    """(figure, list of axes): the given axes, or a new Figure with ``nrows`` stacked axes."""
    if ax is not None:
        axes = list(ax) if isinstance(ax, (list, tuple, np.ndarray)) else [ax]
        if len(axes) != nrows:
            raise ValueError(f"expected {nrows} axes, got {len(axes)}")
        return axes[0].figure, axes
    from matplotlib.figure import Figure

    fig = Figure(figsize=figsize, layout="constrained")
    axes = fig.subplots(nrows, 1, sharex=sharex, squeeze=False)[:, 0]
    return fig, list(axes)


def _eng(axis, unit: str):
    from matplotlib.ticker import EngFormatter

    axis.set_major_formatter(EngFormatter(unit=unit, sep=" "))


def _light_log_ticks(fig):
    """Minor ticks at 2 and 5 of each decade on every log axis of ``fig``.

    The default eight minor ticks a decade cost most of the drawing time of a many-decade
    plot (seconds for a Bode plot) and show little more; matplotlib's LogLocator.
    """
    from matplotlib.ticker import LogLocator

    for ax in fig.axes:
        for axis, scale in ((ax.xaxis, ax.get_xscale()), (ax.yaxis, ax.get_yscale())):
            if scale == "log":
                axis.set_minor_locator(LogLocator(base=10.0, subs=(2.0, 5.0)))


def plot_bode(f, loop_gain=None, closed_loop=None, ax=None, closed_loop_unit="ohm",
              title="Loop gain and closed-loop response"):
    """Bode plot of the loop gain and/or the closed-loop response.

    Parameters
    ----------
    f : array_like
        Frequency [Hz].
    loop_gain : array_like of complex, optional
        Loop gain T(jf) [dimensionless].
    closed_loop : array_like of complex, optional
        Closed-loop response, e.g. the transimpedance [ohm].
    ax : pair of Axes, optional
        (magnitude axes, phase axes).
    closed_loop_unit : str
        Unit of ``closed_loop`` for the legend (magnitude shown in dB re 1 unit).
    title : str, optional
        Title above the magnitude axes.

    Returns
    -------
    matplotlib.figure.Figure
    """
    fig, (ax_mag, ax_ph) = _new_axes(ax, 2, figsize=(6.4, 5.2))
    f = np.asarray(f, dtype=float)
    curves = [(loop_gain, "loop gain T", "C0"),
              (closed_loop, f"closed loop (dB re 1 {closed_loop_unit})", "C1")]
    for values, label, color in curves:
        if values is None:
            continue
        h = np.asarray(values, dtype=complex)
        ax_mag.semilogx(f, 20 * np.log10(np.abs(h)), color=color, label=label)
        ax_ph.semilogx(f, np.degrees(np.unwrap(np.angle(h))), color=color, label=label)
    ax_mag.axhline(0.0, color="0.6", lw=0.8)
    ax_ph.axhline(-180.0, color="0.6", lw=0.8, ls="--")
    ax_mag.set_ylabel("magnitude [dB]")
    ax_ph.set_ylabel("phase [deg]")
    ax_ph.set_xlabel("frequency [Hz]")
    _eng(ax_ph.xaxis, "Hz")
    ax_mag.legend(loc="best", fontsize="small")
    ax_mag.set_title(title)
    for a in (ax_mag, ax_ph):
        a.grid(True, which="both", alpha=0.3)
    _light_log_ticks(fig)
    return fig


def plot_step(t, response, ax=None, unit="V", title="Step response", final=None):
    """Step response against time.

    Parameters
    ----------
    t : array_like
        Time [s].
    response : array_like
        Output [``unit``], e.g. normalised to its final value (unit ``""``).
    ax : matplotlib.axes.Axes, optional
        Axes to draw into; by default a new Figure is made.
    unit : str, optional
        SI unit of ``response`` for the axis label and engineering ticks (default
        ``"V"``); ``""`` labels the axis "output (normalised)".
    title : str, optional
        Axes title.
    final : float, optional
        Final value [``unit``], drawn as a dashed line with the 10 % and 90 % levels.

    Returns
    -------
    matplotlib.figure.Figure
    """
    fig, (a,) = _new_axes(ax)
    a.plot(np.asarray(t, dtype=float), np.asarray(response, dtype=float), color="C0")
    if final is not None:
        for level, style in ((1.0, "--"), (0.1, ":"), (0.9, ":")):
            a.axhline(level * final, color="0.6", lw=0.8, ls=style)
    a.set_xlabel("time [s]")
    a.set_ylabel("output" + (f" [{unit}]" if unit else " (normalised to the final value)"))
    _eng(a.xaxis, "s")
    if unit:
        _eng(a.yaxis, unit)
    a.set_title(title)
    a.grid(True, alpha=0.3)
    return fig


def plot_noise_stack(f, densities, ax=None, unit="V", title="Output noise by source", logy=False):
    """Stacked noise power density by source against frequency.

    Parameters
    ----------
    f : array_like
        Frequency [Hz].
    densities : dict of str to array_like, or pandas.DataFrame
        Amplitude density of each source [``unit``/rtHz] on the grid ``f``. The powers
        (squares) are stacked, since uncorrelated sources add in power.
    ax : matplotlib.axes.Axes, optional
        Axes to draw into; by default a new Figure is made.
    unit : str
        Unit of the amplitude densities without /rtHz (default ``"V"``; ``"A"`` for
        input-referred densities).
    title : str, optional
        Axes title.
    logy : bool, optional
        Logarithmic power axis, from a hundredth of the median total (default linear).

    Returns
    -------
    matplotlib.figure.Figure
    """
    fig, (a,) = _new_axes(ax)
    f = np.asarray(f, dtype=float)
    items = list(densities.items())
    powers = [np.asarray(v, dtype=float) ** 2 for _, v in items]
    # Show the powers in (prefix unit)^2/Hz, e.g. nV^2/Hz: an engineering prefix on a
    # squared unit would be misread ("800 a" for 800 aV^2/Hz = 800e-18 V^2/Hz).
    prefix, scale = _squared_prefix(np.sum(powers, axis=0) if powers else np.zeros(1))
    a.stackplot(f, *[p / scale for p in powers], labels=[str(k) for k, _ in items], alpha=0.85)
    a.set_xscale("log")
    total = np.sum(powers, axis=0) / scale if powers else np.zeros(1)
    if logy and np.any(total > 0):
        # down to a hundredth of the typical (median) level: the layers that matter stay
        # readable, the roll-off far above the band leaves the axes
        a.set_yscale("log")
        a.set_ylim(1e-2 * np.median(total[total > 0]), 2.0 * np.max(total))
    a.set_xlabel("frequency [Hz]")
    a.set_ylabel(f"noise power density [{prefix}{unit}$^2$/Hz]")
    _eng(a.xaxis, "Hz")
    a.legend(loc="upper left", fontsize="small")
    a.set_title(title)
    a.grid(True, which="both", alpha=0.3)
    _light_log_ticks(fig)
    return fig


def _squared_prefix(total) -> tuple:
    """(prefix, scale) so that ``total / scale`` is in (prefix unit)^2 with values 1..1e6."""
    from ..units import _PREFIXES

    total = np.asarray(total, dtype=float)
    finite = total[np.isfinite(total) & (total > 0)]
    if not finite.size:
        return "", 1.0
    exp3 = int(np.floor(np.log10(np.sqrt(finite.max())) / 3) * 3)
    exp3 = max(min(exp3, 15), -18)
    return _PREFIXES[exp3], 10.0 ** (2 * exp3)


def plot_curve(x, y, ax=None, xlabel="", ylabel="", xunit="", yunit="", mark=None,
               logx=False, logy=False, title=None, label=None):
    """One curve with engineering-unit axes, optionally marking a point (e.g. the operating point).

    Parameters
    ----------
    x, y : array_like
        Data in SI units ``xunit`` and ``yunit``.
    ax : matplotlib.axes.Axes, optional
        Axes to draw into; by default a new Figure is made.
    xlabel, ylabel : str, optional
        Axis labels, without the unit (the tick labels carry it).
    xunit, yunit : str, optional
        SI units of ``x`` and ``y`` for engineering tick labels (``"V"`` gives 500 mV).
    mark : (float, float), optional
        Point to mark, e.g. the operating bias and its value.
    logx, logy : bool, optional
        Logarithmic x or y axis (default linear).
    title : str, optional
        Axes title; none by default.
    label : str, optional
        Legend label of the curve (the legend is drawn with ``mark``).

    Returns
    -------
    matplotlib.figure.Figure
    """
    fig, (a,) = _new_axes(ax)
    a.plot(np.asarray(x, dtype=float), np.asarray(y, dtype=float), color="C0", label=label)
    if mark is not None:
        a.plot([mark[0]], [mark[1]], "o", color="C3", label="operating point")
        a.legend(loc="best", fontsize="small")
    if logx:
        a.set_xscale("log")
    if logy:
        a.set_yscale("log")
    a.set_xlabel(xlabel)
    a.set_ylabel(ylabel)
    _eng(a.xaxis, xunit)
    _eng(a.yaxis, yunit)
    if title:
        a.set_title(title)
    a.grid(True, which="both", alpha=0.3)
    _light_log_ticks(fig)
    return fig


def plot_bias_tradeoff(bias, series, ax=None, mark=None, title="Bias trade-off"):
    """Several figures against reverse bias, one panel each, sharing the bias axis.

    Parameters
    ----------
    bias : array_like
        Reverse bias [V].
    series : sequence of (label, values, unit, log)
        Each panel: its label, the values on the ``bias`` grid in SI ``unit``, and
        whether the y axis may be logarithmic (it is when the values span a decade).
    ax : sequence of Axes, optional
        One axes per series.
    mark : float, optional
        Operating bias [V], drawn as a vertical line.
    title : str, optional
        Title above the first panel.

    Returns
    -------
    matplotlib.figure.Figure
    """
    series = list(series)
    fig, axes = _new_axes(ax, len(series), figsize=(6.4, 1.9 * len(series) + 0.6))
    bias = np.asarray(bias, dtype=float)
    for a, (label, values, unit, log) in zip(axes, series):
        y = np.asarray(values, dtype=float)
        a.plot(bias, y, color="C0")
        finite = y[np.isfinite(y)]
        # a log axis only pays when the data span a decade (else its labels are minor ticks)
        if log and finite.size and np.all(finite > 0) and finite.max() >= 10 * finite.min():
            a.set_yscale("log")
        a.set_ylabel(label)
        _eng(a.yaxis, unit)
        if mark is not None:
            a.axvline(mark, color="C3", lw=0.8, ls="--")
        a.grid(True, which="both", alpha=0.3)
    axes[-1].set_xlabel("reverse bias [V]")
    _eng(axes[-1].xaxis, "V")
    axes[0].set_title(title)
    _light_log_ticks(fig)
    return fig


def figure_to_base64(fig, fmt: str = "png", dpi: int = 110) -> str:
    """The figure as a base64 ``data:`` URI (``png`` or ``svg``) for a self-contained page.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
        The figure to encode.
    fmt : {"png", "svg"}, optional
        Image format (default ``"png"``).
    dpi : int, optional
        Resolution of the PNG [dots per inch] (default 110).

    Returns
    -------
    str
        ``"data:image/png;base64,..."`` (or ``image/svg+xml``).
    """
    import base64
    import io

    buf = io.BytesIO()
    fig.savefig(buf, format=fmt, dpi=dpi)
    mime = {"png": "image/png", "svg": "image/svg+xml"}[fmt]
    return f"data:{mime};base64,{base64.b64encode(buf.getvalue()).decode('ascii')}"
