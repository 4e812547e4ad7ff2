"""Density eye diagram of an :class:`~photorx.analysis.digital_eye.Eye`.

Draws the traces the analysis computed: two symbols wide, centred on the eye, as a
density (how many traces pass each pixel), each trace optionally spread by the Gaussian
noise of its level (the rms the analysis gives). matplotlib is imported only here.
"""

from __future__ import annotations

import numpy as np

from .plots import _eng, _new_axes

__all__ = ["plot_eye"]


def _windows(traces):
    """Every symbol's trace from half a symbol before its window to half after: (N, 2M)."""
    n, m = traces.shape
    wave = traces.reshape(-1)
    start = np.arange(n)[:, None] * m - m // 2
    idx = (start + np.arange(2 * m)[None, :]) % wave.size
    return wave[idx]


def plot_eye(eye, ax=None, bins=200, noise=True):
    """Density eye over two symbols with an engineering time axis; returns the figure.

    Parameters
    ----------
    eye : Eye
        The result of :meth:`photorx.Receiver.eye`.
    ax : matplotlib.axes.Axes, optional
        Axes to draw into (default: a new figure).
    bins : int
        Vertical bins of the density, 20 to 2000.
    noise : bool
        Spread every trace by its level's Gaussian noise.

    Returns
    -------
    matplotlib.figure.Figure
    """
    if isinstance(bins, bool) or not isinstance(bins, (int, np.integer)) or not 20 <= bins <= 2000:
        from ..errors import DesignError

        raise DesignError.out_of_range("bins", bins, "", "integers 20 to 2000")
    fig, (axis,) = _new_axes(ax)
    win = _windows(np.asarray(eye.traces))
    n, m2 = win.shape
    period = 1.0 / eye.symbol_rate
    t = (np.arange(m2) - m2 // 2) * period / (m2 // 2)
    sig = np.asarray(eye.level_noise)[np.asarray(eye.levels)] if noise else np.zeros(n)
    lo = float(np.min(win - 4 * sig[:, None]))
    hi = float(np.max(win + 4 * sig[:, None]))
    edges = np.linspace(lo, hi, bins + 1)
    centres = 0.5 * (edges[1:] + edges[:-1])
    density = np.zeros((bins, m2))
    levels = np.asarray(eye.levels)
    for level in np.unique(levels):
        rows = win[levels == level]
        hist = np.stack([np.histogram(rows[:, j], edges)[0] for j in range(m2)], axis=-1)
        s = float(np.asarray(eye.level_noise)[level]) if noise else 0.0
        if s > 0:  # each trace spread by its level's Gaussian noise (rms in bins)
            from scipy.ndimage import gaussian_filter1d

            hist = gaussian_filter1d(hist.astype(float), s / (edges[1] - edges[0]), axis=0,
                                     mode="constant")
        density += hist
    density /= density.max() if density.max() > 0 else 1.0
    axis.pcolormesh(t, centres, np.sqrt(density), shading="nearest", cmap="magma")
    axis.axvline(0.0, color="w", lw=0.6, ls=":")
    _eng(axis.xaxis, "s")
    _eng(axis.yaxis, "V")
    axis.set_xlabel("time from the decision instant")
    axis.set_ylabel("output")
    axis.set_title(f"{eye.modulation.upper()} {eye.pattern.upper()} eye: opening "
                   f"{eye.opening:.2f}, ISI penalty {eye.isi_penalty_db:.2f} dB")
    return fig
