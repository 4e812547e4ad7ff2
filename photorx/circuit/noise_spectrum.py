"""NoiseSpectrum: the thin shell over :mod:`photorx.circuit.noise` for one receiver design.

It holds validated parameters, routes every call to the vectorised core and formats the
noise budget as pandas tables; it computes no physics of its own.
"""

from __future__ import annotations

import itertools
import math
import warnings
from dataclasses import dataclass, field

import numpy as np

from .._validate import require_nonnegative, require_positive
from ..errors import DesignError, ModelRangeWarning
from ..units import format_eng
from .integration import DEFAULT_RTOL
from .noise import (
    SOURCE_LABELS,
    chain_enbw,
    input_noise_psd,
    integrated_output_noise,
    noise_equivalent_power,
    noise_transfer_functions,
    output_noise_psd,
)

__all__ = ["NoiseSpectrum", "source_table", "source_rows", "tia_noise"]

_CIRCUIT = ("gbw", "dc_gain", "poles", "rf", "cf", "cd", "rsh", "rs", "cin", "zeros")


def source_table(mean_square, density, *, zt0, enbw, f_spot, f_lo, f_hi, drop_zero=True):
    """Noise budget table of one design from its integrated noise: one row per source.

    Parameters
    ----------
    mean_square : dict of float
        Source key -> mean-square output noise [V^2].
    density : dict of float
        Source key -> input-referred density at ``f_spot`` [A/rtHz].
    zt0 : float
        Mid-band (DC) transimpedance [ohm], refers rms values to the input.
    enbw, f_spot, f_lo, f_hi : float
        Noise bandwidth, spot frequency and integration band [Hz] (kept in ``attrs``).
    drop_zero : bool
        Leave out sources that contribute nothing.

    Returns
    -------
    pandas.DataFrame
        See :meth:`NoiseSpectrum.budget`; :meth:`photorx.ReceiverResult.noise_table` builds
        the same table from a receiver evaluation.
    """
    import pandas as pd

    rows, attrs = source_rows(mean_square, density, zt0=zt0, enbw=enbw, f_spot=f_spot, f_lo=f_lo,
                              f_hi=f_hi, drop_zero=drop_zero)
    for row in rows.values():
        del row["dominant"]
    df = pd.DataFrame.from_dict(rows, orient="index")
    df.index.name = "key"
    df["dominant"] = df["share [%]"] == df["share [%]"].max()
    df.attrs.update(attrs)
    return df


def source_rows(mean_square, density, *, zt0, enbw, f_spot, f_lo, f_hi, drop_zero=True):
    """The rows and attrs of :func:`source_table` as plain dicts (no pandas).

    Parameters
    ----------
    mean_square, density : dict of float
        As :func:`source_table`.
    zt0, enbw, f_spot, f_lo, f_hi : float
        As :func:`source_table`.
    drop_zero : bool
        As :func:`source_table`.

    Returns
    -------
    tuple of (dict, dict)
        Source key -> row (``source``, the four figures, ``dominant``), and the table's
        attrs.
    """
    total = sum(mean_square.values())
    rows = {}
    for name, value in mean_square.items():
        if drop_zero and value == 0.0:
            continue
        rows[name] = {
            "source": SOURCE_LABELS.get(name, name),
            "input density [A/rtHz]": float(density[name]),
            "output rms [V]": math.sqrt(value),
            "input rms [A]": math.sqrt(value) / zt0,
            "share [%]": 100.0 * value / total if total > 0 else 0.0,
        }
    if rows:
        top = max(row["share [%]"] for row in rows.values())
        for row in rows.values():
            row["dominant"] = row["share [%]"] == top
    attrs = {
        "f [Hz]": f_spot,
        "f_lo [Hz]": f_lo,
        "f_hi [Hz]": f_hi,
        "output rms [V]": math.sqrt(total),
        "input rms [A]": math.sqrt(total) / zt0,
        "input density [A/rtHz]": float(np.sqrt(sum(v**2 for v in density.values()))),
        "enbw [Hz]": enbw,
        "transimpedance [ohm]": zt0,
    }
    return rows, attrs


@dataclass(frozen=True, eq=False)
class NoiseSpectrum:
    """Noise of one receiver design, source by source; made by :meth:`photorx.Tia.noise`.

    Parameters
    ----------
    params : dict
        Keywords of :func:`photorx.circuit.noise.output_noise_psd` (circuit, noise
        densities, temperature, shot currents, second-stage noise), scalars.
    post_filter : photorx.PostFilter, optional
        Filter after the stage.
    f_lo, f_hi : float
        Default integration band [Hz]; ``f_hi`` may be ``inf``.
    rtol : float
        Relative tolerance of the integrals.

    Notes
    -----
    Output quantities are at the output of the post filter (unity DC gain) [V/rtHz, V];
    input-referred densities divide by |Zt(f)| [A/rtHz]; input-referred rms values divide
    the output rms by the mid-band (DC) transimpedance |Zt(0)| [A].
    """

    params: dict
    post_filter: object = None
    f_lo: float = 1.0
    f_hi: float = np.inf
    rtol: float = DEFAULT_RTOL
    _cache: dict = field(default_factory=dict, init=False, repr=False, compare=False)

    def __post_init__(self):
        object.__setattr__(self, "f_lo", float(require_nonnegative("f_lo", self.f_lo, "Hz")))
        if not float(self.f_hi) > self.f_lo:
            raise DesignError.out_of_range("f_hi", self.f_hi, "Hz", f"> f_lo ({self.f_lo:g} Hz)")
        object.__setattr__(self, "f_hi", float(self.f_hi))
        object.__setattr__(self, "rtol", float(require_positive("rtol", self.rtol, "")))

    # -- routing --------------------------------------------------------------------------
    def _filter_kwargs(self):
        pf = self.post_filter
        if pf is None:
            return {}
        return {"filter_kind": pf.kind, "filter_order": pf.order, "filter_cutoff": pf.cutoff}

    def _band(self, f_lo, f_hi):
        return (self.f_lo if f_lo is None else f_lo), (self.f_hi if f_hi is None else f_hi)

    @property
    def sources(self):
        """Keys of the noise sources, in budget order (see ``SOURCE_LABELS``)."""
        return tuple(output_noise_psd(1.0, **self.params))

    def transimpedance(self, f):
        """Closed-loop transimpedance Zt(f) without the post filter [ohm], complex.

        Parameters
        ----------
        f : array_like
            Frequency [Hz], >= 0.
        """
        circuit = {k: self.params[k] for k in _CIRCUIT}
        return noise_transfer_functions(f, **circuit)["junction"]

    @property
    def midband_transimpedance(self):
        """|Zt(0)|, the transimpedance used to refer integrated noise to the input [ohm]."""
        return float(np.abs(self.transimpedance(0.0)))

    # -- spectra --------------------------------------------------------------------------
    def by_source(self, f, referred="output"):
        """Noise density of every source at ``f``.

        Parameters
        ----------
        f : array_like
            Frequency [Hz], > 0.
        referred : {"output", "input", "input_midband"}
            ``"output"``: at the filter output [V/rtHz]; ``"input"``: the unfiltered output
            divided by |Zt(f)| [A/rtHz]; ``"input_midband"``: the filtered output divided by
            the mid-band |Zt(0)| [A/rtHz] (what integrates to :meth:`input_rms`).

        Returns
        -------
        dict of numpy.ndarray
        """
        f = require_positive("f", f, "Hz")
        if referred == "output":
            psd = output_noise_psd(f, **self.params, **self._filter_kwargs())
        elif referred == "input":
            psd = input_noise_psd(f, **self.params)
        elif referred == "input_midband":
            zt0 = self.midband_transimpedance
            psd = {
                k: v / zt0**2
                for k, v in output_noise_psd(f, **self.params, **self._filter_kwargs()).items()
            }
        else:
            raise DesignError(
                f"referred = {referred!r} is invalid; valid values: 'output', 'input', "
                "'input_midband'",
                parameter="referred",
            )
        return {name: np.sqrt(v) for name, v in psd.items()}

    def output_density(self, f):
        """Total output noise density [V/rtHz] (root of the summed PSDs).

        Parameters
        ----------
        f : array_like
            Frequency [Hz], > 0 (the 1/f terms are infinite at 0 Hz).
        """
        return np.sqrt(sum(v**2 for v in self.by_source(f).values()))

    def input_density(self, f):
        """Total input-referred noise current density [A/rtHz].

        Parameters
        ----------
        f : array_like
            Frequency [Hz], > 0 (the 1/f terms are infinite at 0 Hz).
        """
        return np.sqrt(sum(v**2 for v in self.by_source(f, "input").values()))

    def nep(self, f, responsivity):
        """Spectral noise-equivalent power at ``f`` [W/rtHz]: floor density / responsivity [A/W].

        The floor is the input-referred density without the shot noise of the signal
        photocurrent (``shot_signal``): NEP is the power giving SNR = 1 in 1 Hz, defined at
        vanishing signal (Hobbs, *Building Electro-Optical Systems*, 2nd ed., 2009, sec. 3.4),
        as :attr:`photorx.ReceiverResult.nep` is.

        Parameters
        ----------
        f : array_like
            Frequency [Hz], > 0 (the 1/f terms are infinite at 0 Hz).
        responsivity : array_like
            Photodiode responsivity [A/W], > 0.
        """
        dens = self.by_source(f, "input")
        floor = np.sqrt(sum(v**2 for k, v in dens.items() if k != "shot_signal"))
        return noise_equivalent_power(floor, responsivity)

    # -- integrals ------------------------------------------------------------------------
    def mean_square(self, f_lo=None, f_hi=None):
        """Mean-square output noise of every source over [f_lo, f_hi] [V^2] (dict).

        Parameters
        ----------
        f_lo, f_hi : float, optional
            Band [Hz], 0 <= f_lo < f_hi, ``f_hi`` may be ``inf``; None (default) takes the
            spectrum's own band (``self.f_lo``, ``self.f_hi``). f_lo must be > 0 when a 1/f
            corner is set.
        """
        f_lo, f_hi = self._band(f_lo, f_hi)
        key = ("ms", float(f_lo), float(f_hi))
        if key not in self._cache:
            ms = integrated_output_noise(
                f_lo, f_hi, rtol=self.rtol, **self.params, **self._filter_kwargs()
            )
            self._cache[key] = {name: float(v) for name, v in ms.items()}
        return dict(self._cache[key])

    def output_rms(self, f_lo=None, f_hi=None):
        """Total rms output noise over [f_lo, f_hi] [V]; defaults to the spectrum's band.

        Parameters
        ----------
        f_lo, f_hi : float, optional
            Band [Hz], 0 <= f_lo < f_hi, ``f_hi`` may be ``inf``; None (default) takes the
            spectrum's own band (``self.f_lo``, ``self.f_hi``). f_lo must be > 0 when a 1/f
            corner is set.
        """
        return math.sqrt(sum(self.mean_square(f_lo, f_hi).values()))

    def input_rms(self, f_lo=None, f_hi=None):
        """Total rms noise referred to the input through |Zt(0)| [A].

        Parameters
        ----------
        f_lo, f_hi : float, optional
            Band [Hz], 0 <= f_lo < f_hi, ``f_hi`` may be ``inf``; None (default) takes the
            spectrum's own band (``self.f_lo``, ``self.f_hi``). f_lo must be > 0 when a 1/f
            corner is set.
        """
        return self.output_rms(f_lo, f_hi) / self.midband_transimpedance

    def enbw(self):
        """Equivalent noise bandwidth of the transimpedance times the post filter [Hz].

        ENBW = integral_0^inf |Zt H|^2 df / |Zt(0)|^2; see
        :func:`photorx.circuit.noise.chain_enbw`.
        """
        if "enbw" not in self._cache:
            circuit = {k: self.params[k] for k in _CIRCUIT}
            self._cache["enbw"] = float(
                chain_enbw(**circuit, **self._filter_kwargs(), rtol=self.rtol)
            )
        return self._cache["enbw"]

    # -- tables ---------------------------------------------------------------------------
    def budget(self, f=None, f_lo=None, f_hi=None, drop_zero=True):
        """Noise budget: one row per source.

        Parameters
        ----------
        f : float, optional
            Frequency of the input-referred spot density [Hz]; default ENBW/10 (in the
            flat part of the response).
        f_lo, f_hi : float, optional
            Integration band [Hz]; default the spectrum's band.
        drop_zero : bool
            Leave out sources that contribute nothing (e.g. Rs thermal when Rs = 0).

        Returns
        -------
        pandas.DataFrame
            Index: source key. Columns ``source`` (label), ``input density [A/rtHz]`` at
            ``f``, ``output rms [V]``, ``input rms [A]`` (through |Zt(0)|), ``share [%]`` of
            the total noise power, ``dominant`` (True for the largest). ``attrs`` holds the
            totals, ``f``, the band and the ENBW.
        """
        f_lo, f_hi = self._band(f_lo, f_hi)
        f_spot = self.enbw() / 10.0 if f is None else float(require_positive("f", f, "Hz"))
        dens = {name: float(v) for name, v in self.by_source(f_spot, "input").items()}
        return source_table(self.mean_square(f_lo, f_hi), dens, zt0=self.midband_transimpedance,
                            enbw=self.enbw(), f_spot=f_spot, f_lo=f_lo, f_hi=f_hi,
                            drop_zero=drop_zero)

    def by_decade(self, f_lo=None, f_hi=None, quantity="share", drop_zero=True):
        """Split of the noise by source and frequency decade.

        Parameters
        ----------
        f_lo, f_hi : float, optional
            Band [Hz]; the first and last columns are partial decades. With ``f_hi = inf``
            the last column runs from the first decade above 100 x ENBW to infinity.
        quantity : {"share", "output_rms", "input_rms"}
            Cell values: percent of the total noise power (cells sum to 100), rms output
            noise in that band [V], or rms noise referred to the input [A].
        drop_zero : bool
            Leave out sources that contribute nothing (default True).

        Returns
        -------
        pandas.DataFrame
            Index: source key; columns: band labels such as ``"1 kHz-10 kHz"``. Sources
            that contribute nothing are left out when ``drop_zero``.
        """
        import pandas as pd

        if quantity not in ("share", "output_rms", "input_rms"):
            raise DesignError(
                f"quantity = {quantity!r} is invalid; valid values: 'share', "
                "'output_rms', 'input_rms'",
                parameter="quantity",
            )
        f_lo, f_hi = self._band(f_lo, f_hi)
        start = 10.0 ** math.floor(math.log10(f_lo)) if f_lo > 0 else None
        top = f_hi if math.isfinite(f_hi) else 10.0 ** math.ceil(math.log10(100.0 * self.enbw()))
        edges = [f_lo]
        e = start * 10.0 if start is not None else 10.0 ** math.floor(math.log10(top / 1e6))
        while e < top:
            if e > f_lo:
                edges.append(e)
            e *= 10.0
        edges.append(f_hi)
        columns = {}
        for a, b in itertools.pairwise(edges):
            label = f"{format_eng(a, 'Hz')}-{format_eng(b, 'Hz') if math.isfinite(b) else 'inf'}"
            columns[label] = self.mean_square(a, b)
        df = pd.DataFrame(columns)
        if drop_zero:
            df = df[df.sum(axis=1) > 0]
        total = df.to_numpy().sum()
        if quantity == "share":
            df = 100.0 * df / total
        elif quantity == "output_rms":
            df = np.sqrt(df)
        else:
            df = np.sqrt(df) / self.midband_transimpedance
        df.index.name = "key"
        return df

    def to_frame(self, f, referred="output"):
        """Densities by source and total on the grid ``f`` (index) as a DataFrame.

        Parameters
        ----------
        f : array_like
            Frequency grid [Hz], > 0.
        referred : {"output", "input", "input_midband"}
            Where the densities are referred, as in :meth:`by_source` (default
            ``"output"``, [V/rtHz]; the input choices give [A/rtHz]).
        """
        import pandas as pd

        f = np.atleast_1d(np.asarray(f, dtype=float))
        data = self.by_source(f, referred)
        df = pd.DataFrame(data, index=pd.Index(f, name="f [Hz]"))
        df["total"] = np.sqrt((df**2).sum(axis=1))
        return df

    # -- display --------------------------------------------------------------------------
    def plot(self, ax=None, f=None, referred="output"):
        """Stacked noise power density by source (powers add) versus frequency, log axes.

        Parameters
        ----------
        ax : matplotlib.axes.Axes, optional
            Axes to draw into; by default a new Figure is made.
        f : array_like, optional
            Frequency grid [Hz]; default from the integration's lower limit ``f_lo`` to
            100 x ENBW.
        referred : {"output", "input", "input_midband"}
            Where the densities are referred (default ``"output"``, V^2/Hz; else A^2/Hz).

        Returns
        -------
        matplotlib.figure.Figure
        """
        from ..views.result_plots import plot_noise_spectrum

        return plot_noise_spectrum(self, f=f, ax=ax, referred=referred)

    def _repr_html_(self):
        df = self.budget()
        a = df.attrs
        head = (
            f"<p><b>NoiseSpectrum</b>: {format_eng(a['output rms [V]'], 'V')} rms at the output, "
            f"{format_eng(a['input rms [A]'], 'A')} rms at the input, band "
            f"{format_eng(a['f_lo [Hz]'], 'Hz')} to {format_eng(a['f_hi [Hz]'], 'Hz')}, "
            f"ENBW {format_eng(a['enbw [Hz]'], 'Hz')}, "
            f"|Zt(0)| {format_eng(a['transimpedance [ohm]'], 'ohm')}</p>"
        )
        return head + df.to_html(float_format=lambda v: f"{v:.4g}")


def tia_noise(
    tia,
    net,
    temperature=300.0,
    *,
    post_filter=None,
    dark_current=None,
    signal_current=None,
    background_current=None,
    stage2_noise=0.0,
    stage2_noise_corner=0.0,
    f_lo=1.0,
    f_hi=np.inf,
    rtol=DEFAULT_RTOL,
):
    """Noise spectrum of a transimpedance stage loaded by a photodiode.

    Parameters
    ----------
    tia : photorx.Tia
        The stage (amplifier, Rf, Cf).
    net : photorx.EquivalentCircuit
        Photodiode equivalent circuit at the operating point.
    temperature : float
        Temperature of the resistors [K], > 0.
    post_filter : photorx.PostFilter, optional
        Filter after the stage; multiplies every output density.
    dark_current, signal_current, background_current : float, optional
        Split of the diode's DC current [A], >= 0, shown as separate shot-noise sources
        ``shot_dark``, ``shot_signal``, ``shot_background``; when given they replace
        ``net.shot_current`` (a ModelRangeWarning if their sum differs from it by more
        than 1 %). When none is given, ``net.shot_current`` (``net.current`` unless the
        diode multiplies) is one source ``shot``.
    stage2_noise, stage2_noise_corner : float
        Input voltage noise of a following stage [V/rtHz] and its 1/f corner [Hz].
    f_lo, f_hi : float
        Default band of the integrals [Hz]: 1 Hz to infinity.
    rtol : float
        Relative tolerance of the integrals, default 1e-4.

    Returns
    -------
    NoiseSpectrum
    """
    from .filters import PostFilter
    from .tia import Tia

    if not isinstance(tia, Tia):
        raise DesignError(f"tia must be a Tia, got {type(tia).__name__}", parameter="tia")
    if post_filter is not None and not isinstance(post_filter, PostFilter):
        raise DesignError(
            f"post_filter must be a PostFilter or None, got {type(post_filter).__name__}",
            parameter="post_filter",
        )
    split = {
        name: value
        for name, value in (
            ("dark", dark_current),
            ("signal", signal_current),
            ("background", background_current),
        )
        if value is not None
    }
    for name, value in split.items():
        require_nonnegative(f"{name}_current", value, "A")
    shot_current = getattr(net, "shot_current", net.current)
    if split and np.any(np.asarray(shot_current) > 0):
        total = sum(np.asarray(v, dtype=float) for v in split.values())
        if np.any(np.abs(total - shot_current) > 0.01 * np.asarray(shot_current)):
            warnings.warn(
                f"dark + signal + background current ({np.max(total):.4g} A) differs from "
                f"net.shot_current ({np.max(shot_current):.4g} A); the split is used for the shot "
                "noise",
                ModelRangeWarning,
                stacklevel=3,
            )
    amp = tia.amp
    params = {
        "gbw": amp.gbw,
        "dc_gain": amp.dc_gain,
        "poles": tuple(amp.poles),
        "zeros": tuple(amp.zeros),
        "rf": tia.rf,
        "cf": tia.cf,
        "cd": net.capacitance,
        "rsh": net.shunt_resistance,
        "rs": net.series_resistance,
        "cin": amp.input_capacitance,
        "en": amp.voltage_noise,
        "en_corner": amp.voltage_noise_corner,
        "in_": amp.current_noise,
        "in_corner": amp.current_noise_corner,
        "en_shape": amp.voltage_noise_curve,
        "in_shape": amp.current_noise_curve,
        "temperature": float(require_positive("temperature", temperature, "K")),
        "i_shot": split if split else shot_current,
        "stage2_noise": float(require_nonnegative("stage2_noise", stage2_noise, "V/rtHz")),
        "stage2_corner": float(
            require_nonnegative("stage2_noise_corner", stage2_noise_corner, "Hz")
        ),
    }
    return NoiseSpectrum(params=params, post_filter=post_filter, f_lo=f_lo, f_hi=f_hi, rtol=rtol)
