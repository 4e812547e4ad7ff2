"""The ``.plot()`` of each result object, and sweep tables drawn panel by panel.

:class:`~photorx.analysis.result.ReceiverResult`,
:class:`~photorx.circuit.metrics.TiaMetrics` and
:class:`~photorx.circuit.noise_spectrum.NoiseSpectrum` hand themselves to the functions
here (lazily, inside their ``plot`` method). The functions draw numbers the result already
holds or that its own stage returns (loop gain, transimpedance, noise densities); none
computes physics. Each returns the matplotlib Figure; with ``ax=None`` a new Figure is made
without pyplot, so they work headless.
"""

from __future__ import annotations

import numpy as np

from ..errors import DesignError
from ..units import format_eng
from .plots import _eng, _light_log_ticks, _new_axes, plot_bode, plot_noise_stack

__all__ = ["plot_receiver_result", "plot_tia_metrics", "plot_noise_spectrum", "plot_sweep",
           "GLANCE_SPEED", "GLANCE_POWER"]

#: Speed figures of the at-a-glance plot: (figure name, bar label).
GLANCE_SPEED = (("photodiode_bandwidth", "photodiode (transit, diffusion)"),
                ("loop_bandwidth", "transimpedance stage"),
                ("filter_bandwidth", "post filter"),
                ("bandwidth", "whole chain"),
                ("crossover", "loop-gain crossover"))
#: Optical-power levels of the at-a-glance plot: (figure name, bar label).
GLANCE_POWER = (("min_detectable_power", "SNR = 1 (noise floor)"),
                ("sensitivity", "target BER"),
                ("optical_power", "operating power"))


def _single(result, name):
    if result.size != 1:
        raise DesignError(f"{name}.plot() draws one design point, this result holds "
                          f"{result.size}; draw a sweep with photorx.views.plot_sweep",
                          parameter="result")


def _bars(ax, labels, values, unit, title):
    """Horizontal bars on a log axis; non-finite or non-positive values are left out."""
    pairs = [(lab, float(v)) for lab, v in zip(labels, values)
             if np.isfinite(float(v)) and float(v) > 0]
    y = np.arange(len(pairs))
    bars = ax.barh(y, [v for _, v in pairs], color="C0", alpha=0.85)
    ax.bar_label(bars, labels=[format_eng(v, unit) for _, v in pairs], padding=3,
                 fontsize="small")
    ax.margins(x=0.25)  # room for the value labels
    ax.set_yticks(y, [lab for lab, _ in pairs])
    ax.invert_yaxis()
    if pairs:
        ax.set_xscale("log")
    _eng(ax.xaxis, unit)
    ax.set_title(title, fontsize="medium")
    ax.grid(True, axis="x", which="both", alpha=0.3)
    return pairs


def plot_receiver_result(result, ax=None):
    """The receiver at a glance: speed limits, noise by source and optical power levels.

    Three panels of horizontal bars (log axes, engineering units): the bandwidth of each
    part of the chain and the loop crossover [Hz]; the input-referred rms noise current of
    each source [A]; the optical power for SNR = 1, for the target bit-error ratio (digital
    receivers) and the operating power [W]. Every bar is a figure of ``result``.

    Parameters
    ----------
    result : photorx.analysis.result.ReceiverResult
        The evaluation of one design point.
    ax : sequence of three matplotlib.axes.Axes, optional
        Axes for the speed, noise and power panels; by default a new Figure is made.

    Returns
    -------
    matplotlib.figure.Figure

    Raises
    ------
    photorx.DesignError
        If ``result`` holds more than one design point.
    """
    from ..circuit.noise import SOURCE_LABELS

    _single(result, "ReceiverResult")
    fig, (a_speed, a_noise, a_power) = _new_axes(ax, 3, figsize=(9.0, 7.6), sharex=False)
    values = result.values
    speed = [(lab, values[k]) for k, lab in GLANCE_SPEED if k in values]
    _bars(a_speed, *zip(*speed), "Hz", "Speed: bandwidth of each part")
    a_speed.set_xlabel("frequency [Hz]")
    noise = sorted(result.noise_by_source.items(), key=lambda kv: -float(kv[1]))
    _bars(a_noise, [SOURCE_LABELS.get(k, k) for k, _ in noise], [v for _, v in noise], "A",
          f"Noise: input-referred rms current by source (total "
          f"{format_eng(float(values['input_noise_rms']), 'A')})")
    a_noise.set_xlabel("input-referred noise current [A rms]")
    power = [(lab, values[k]) for k, lab in GLANCE_POWER
             if k in values and k in result._shown()]
    _bars(a_power, *zip(*power), "W", "Sensitivity: optical power levels")
    a_power.set_xlabel("average optical power [W]")
    fig.suptitle("Receiver at a glance")
    _light_log_ticks(fig)
    return fig


def plot_tia_metrics(metrics, f=None, ax=None):
    """Bode plot of the loop gain and the closed-loop transimpedance, margins marked.

    The loop gain T and the transimpedance Zt come from the stage that made ``metrics``
    (:meth:`photorx.Tia.loop_gain`, :meth:`photorx.Tia.transimpedance`). The gain crossover
    is marked on both panels, the phase margin as the gap between -180 deg and the loop
    phase there, and the -3 dB bandwidth on the closed-loop curve.

    Parameters
    ----------
    metrics : photorx.circuit.metrics.TiaMetrics
        Figures of one design, made by :meth:`photorx.Tia.analyze`.
    f : array_like, optional
        Frequency grid [Hz]; default 400 points over seven decades up to 30 times the
        larger of the crossover and the bandwidth.
    ax : pair of matplotlib.axes.Axes, optional
        (magnitude axes, phase axes).

    Returns
    -------
    matplotlib.figure.Figure

    Raises
    ------
    ValueError
        If ``metrics`` holds arrays or was not made by :meth:`photorx.Tia.analyze`.
    """
    stage = getattr(metrics, "_stage", None)
    if stage is None:
        raise ValueError("TiaMetrics.plot() needs the stage: make the metrics with "
                         "Tia.analyze(net)")
    if np.ndim(metrics.crossover) or np.ndim(metrics.bandwidth):
        raise ValueError("TiaMetrics.plot() draws one design; these metrics hold arrays")
    tia, net = stage
    if f is None:
        edges = [float(v) for v in (metrics.crossover, metrics.bandwidth)
                 if np.isfinite(float(v)) and float(v) > 0]
        top = 30.0 * max(edges) if edges else 1e10
        f = np.geomspace(top * 1e-7, top, 400)
    f = np.asarray(f, dtype=float)
    t = tia.loop_gain(f, net)
    zt = tia.transimpedance(f, net)
    fig = plot_bode(f, loop_gain=t, closed_loop=zt, ax=ax,
                    title="Loop gain T and closed-loop transimpedance Zt")
    ax_mag, ax_ph = fig.axes[-2:] if ax is None else list(ax)
    fc, pm = float(metrics.crossover), float(metrics.phase_margin)
    if np.isfinite(fc) and fc > 0:
        for a in (ax_mag, ax_ph):
            a.axvline(fc, color="C3", lw=0.8, ls=":")
        ax_mag.plot([fc], [0.0], "o", color="C3", label=f"crossover {format_eng(fc, 'Hz')}")
        if np.isfinite(pm):
            ax_ph.annotate("", xy=(fc, -180.0 + pm), xytext=(fc, -180.0),
                           arrowprops=dict(arrowstyle="<->", color="C3"))
            ax_ph.plot([fc], [-180.0 + pm], "o", color="C3",
                       label=f"phase margin {pm:.1f} deg")
            ax_ph.legend(loc="lower left", fontsize="small")
    bw = float(metrics.bandwidth)
    if np.isfinite(bw) and bw > 0:
        z0 = 20 * np.log10(abs(float(metrics.dc_transimpedance)))
        ax_mag.plot([bw], [z0 - 3.0], "s", color="C1",
                    label=f"-3 dB bandwidth {format_eng(bw, 'Hz')}")
    ax_mag.legend(loc="best", fontsize="small")
    ax_mag.set_ylabel("magnitude [dB] (T; Zt re 1 ohm)")
    ax_ph.set_xlabel("frequency [Hz]")
    _light_log_ticks(fig)
    return fig


def plot_noise_spectrum(spectrum, f=None, ax=None, referred="output"):
    """Stacked noise power density by source, log axes, from the integration's lower limit.

    Parameters
    ----------
    spectrum : photorx.circuit.noise_spectrum.NoiseSpectrum
        The noise of one design.
    f : array_like, optional
        Frequency grid [Hz]; default 400 log-spaced points from the spectrum's lower
        integration limit ``f_lo`` (or 1e-6 of the ENBW when ``f_lo`` is 0) to 100 x ENBW.
    ax : matplotlib.axes.Axes, optional
        Axes to draw into; by default a new Figure is made.
    referred : {"output", "input", "input_midband"}
        Where the densities are referred (see :meth:`NoiseSpectrum.by_source`).

    Returns
    -------
    matplotlib.figure.Figure
    """
    from ..circuit.noise import SOURCE_LABELS

    note = ""
    if f is None:
        note = " from the integration's lower limit"
        enbw = float(spectrum.enbw())
        lo = spectrum.f_lo if spectrum.f_lo > 0 else 1e-6 * enbw
        f = np.geomspace(lo, max(100.0 * enbw, 10.0 * lo), 400)
    f = np.asarray(f, dtype=float)
    dens = {SOURCE_LABELS.get(k, k): v for k, v in spectrum.by_source(f, referred).items()
            if np.any(np.asarray(v) > 0)}
    unit = "V" if referred == "output" else "A"
    where = "output" if referred == "output" else "input-referred"
    fig = plot_noise_stack(f, dens, ax=ax, unit=unit, logy=True,
                           title=f"{where.capitalize()} noise by source{note}")
    a = fig.axes[0] if ax is None else ax
    a.set_xlabel("frequency [Hz]")
    a.set_xlim(f[0], f[-1])
    if ax is None:  # a new figure: the legend beside the axes, not over the layers
        fig.set_size_inches(9.0, 4.2)
        a.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize="small")
    _light_log_ticks(fig)
    return fig


def plot_sweep(df, x, y, units=None, ax=None, title=None):
    """Sweep figures against one swept parameter: one engineering-unit panel per figure.

    Parameters
    ----------
    df : pandas.DataFrame
        A sweep table (:func:`photorx.sweep` or :func:`photorx.views.read_sweep_csv`);
        units are taken from ``df.attrs["units"]`` (column -> SI unit).
    x : str
        Column on the horizontal axis.
    y : str or sequence of str
        Column(s) to draw, one panel each.
    units : dict of str to str, optional
        Units overriding or completing ``df.attrs["units"]``.
    ax : sequence of matplotlib.axes.Axes, optional
        One axes per ``y`` column.
    title : str, optional
        Title above the first panel.

    Returns
    -------
    matplotlib.figure.Figure

    Raises
    ------
    photorx.DesignError
        If ``x`` or a ``y`` column is missing from ``df`` (the message lists the columns).
    """
    ys = [y] if isinstance(y, str) else list(y)
    missing = [c for c in [x, *ys] if c not in df.columns]
    if missing:
        raise DesignError(f"plot_sweep: no column {', '.join(map(repr, missing))} in the "
                          f"sweep; columns: {', '.join(map(str, df.columns))}", parameter="y")
    known = {**dict(df.attrs.get("units", {})), **dict(units or {})}
    fig, axes = _new_axes(ax, len(ys), figsize=(6.4, 1.9 * len(ys) + 0.8))
    xv = df[x].to_numpy(dtype=float)
    order = np.argsort(xv, kind="stable")
    for a, name in zip(axes, ys):
        unit = known.get(name, "")
        a.plot(xv[order], df[name].to_numpy(dtype=float)[order], color="C0", marker=".", ms=3)
        a.set_ylabel(f"{name} [{unit}]" if unit else name)
        _eng(a.yaxis, unit)
        a.grid(True, which="both", alpha=0.3)
    xunit = known.get(x, "")
    axes[-1].set_xlabel(f"{x} [{xunit}]" if xunit else x)
    _eng(axes[-1].xaxis, xunit)
    if title:
        axes[0].set_title(title)
    return fig
