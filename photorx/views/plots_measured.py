"""Plots of fits to measured data: the curve with the fit, residuals below; doping profiles.

Like :mod:`photorx.views.plots`, these only draw numbers a fit already computed and return
the matplotlib Figure (made without pyplot, so they work headless).
"""

from __future__ import annotations

import numpy as np

from .plots import _eng, _new_axes

__all__ = ["plot_fit_residuals", "plot_doping_profile"]


def plot_fit_residuals(bias, measured, fitted, normalised, misfit_ranges=(), ax=None, yunit="",
                       ylabel="", title=None, logy=False):
    """Measured points and the fitted curve above, normalised residuals below.

    Parameters
    ----------
    bias : array_like
        Reverse bias [V].
    measured, fitted : array_like
        Data and model at ``bias`` [``yunit``].
    normalised : array_like
        (fitted - measured) / sigma [-].
    misfit_ranges : sequence of (float, float), optional
        Bias ranges [V] to shade as not fitted.
    ax : pair of matplotlib.axes.Axes, optional
        Axes for the curve and the residuals; default a new Figure.
    yunit : str, optional
        SI unit of the data for the tick labels.
    ylabel : str, optional
        Label of the data axis.
    title : str, optional
        Title of the upper axes.
    logy : bool, optional
        Logarithmic data axis (of the magnitude).

    Returns
    -------
    matplotlib.figure.Figure
    """
    fig, (top, bottom) = _new_axes(ax, nrows=2, figsize=(6.4, 5.0))
    v = np.asarray(bias, dtype=float)
    y, yf = np.asarray(measured, dtype=float), np.asarray(fitted, dtype=float)
    if logy:
        y, yf = np.abs(y), np.abs(yf)
        top.set_yscale("log")
    top.plot(v, y, "o", ms=3, color="C0", label="measured")
    top.plot(v, yf, "-", color="C3", label="fit")
    top.legend(loc="best", fontsize="small")
    top.set_ylabel(ylabel)
    if not logy:
        _eng(top.yaxis, yunit)
    bottom.plot(v, np.asarray(normalised, dtype=float), "o", ms=3, color="C0")
    bottom.axhline(0.0, color="k", lw=0.8)
    for limit in (-3.0, 3.0):
        bottom.axhline(limit, color="C7", lw=0.8, ls="--")
    for lo, hi in misfit_ranges:
        for a in (top, bottom):
            a.axvspan(lo, hi if hi > lo else lo + 1e-3, color="C1", alpha=0.2, lw=0)
    bottom.set_ylabel("residual / sigma")
    bottom.set_xlabel("Reverse bias")
    _eng(bottom.xaxis, "V")
    if title:
        top.set_title(title)
    for a in (top, bottom):
        a.grid(True, alpha=0.3)
    return fig


def plot_doping_profile(depth, doping, ax=None, label=None, title="Doping profile"):
    """Doping [m^-3] against depth [m] on a logarithmic doping axis.

    Parameters
    ----------
    depth, doping : array_like
        Depth [m] and doping [m^-3] (e.g. the columns of ``doping_profile``).
    ax : matplotlib.axes.Axes, optional
        Axes to draw into; default a new Figure.
    label : str, optional
        Legend label.
    title : str, optional
        Axes title.

    Returns
    -------
    matplotlib.figure.Figure
    """
    fig, (a,) = _new_axes(ax)
    a.plot(np.asarray(depth, dtype=float), np.asarray(doping, dtype=float), "o-", ms=3,
           label=label)
    a.set_yscale("log")
    a.set_xlabel("Depth")
    a.set_ylabel("Doping [m^-3]")
    _eng(a.xaxis, "m")
    if label:
        a.legend(loc="best", fontsize="small")
    if title:
        a.set_title(title)
    a.grid(True, which="both", alpha=0.3)
    return fig
