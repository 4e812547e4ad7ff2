"""What every interactive panel shares: controls, a figure drawn headless, a message area.

A :class:`Panel` holds its ipywidgets controls (``controls``, a dict by name), one
matplotlib :class:`~matplotlib.figure.Figure` made without pyplot (so it works with the Agg
backend and no live frontend), the output area (``image``: the figure rendered to PNG,
``table``: HTML tables) and a ``message`` area. Moving a control calls :meth:`Panel.update`,
which asks the package for new numbers, moves the existing artists (``set_data``,
``set_verts``) and re-renders the same figure: the figure is never recreated.

Bad combinations (an unstable loop, a bias beyond breakdown, any
:class:`~photorx.errors.DesignError`) are shown in the message area; ``update`` never
raises for them. Model warnings of the package are listed there too.

Panels compute no physics: every number comes from photorx's public functions and
objects. This module only converts display units (a slider in cm^-3 or um) to SI.
"""

from __future__ import annotations

import html
import io
import re
import time
import warnings

import numpy as np

from ..errors import DesignError, PhotorxWarning
from ..units import _PREFIXES, format_eng

__all__ = ["Panel", "log_slider", "lin_slider", "frame_html", "rows_html"]

_OK_STYLE = "color:#1a5e20"
_WARN_STYLE = "color:#8a5a00"
_ERROR_STYLE = "color:#b00020;font-weight:bold"


def _widgets():
    import ipywidgets

    return ipywidgets


#: Units whose slider readout takes an SI prefix ("60.0f" next to "Cf [F]", not "6e-14").
_PREFIX_UNITS = frozenset({"F", "ohm", "Hz", "W", "A", "s", "V"})


def _readout(description: str) -> str:
    """d3 readout format: SI prefixes for prefixable units in ``[...]``, else 3 digits."""
    unit = description[description.rfind("[") + 1:description.rfind("]")] \
        if "[" in description else ""
    return ".3s" if unit in _PREFIX_UNITS else ".3g"


def log_slider(description, value, low, high, step=0.02, readout=None):
    """A logarithmic slider between ``low`` and ``high`` (display units) starting at ``value``.

    The readout shows an SI prefix when the unit in the description takes one
    (``"Cf [F]"`` reads ``60.0f``), otherwise three significant digits.

    Parameters
    ----------
    description : str
        Label beside the slider, with its display unit in brackets (``"Cf [F]"``).
    value : float
        Start value in display units; clipped into ``[low, high]``.
    low, high : float
        Ends of the slider in display units; both > 0, ``low < high``.
    step : float
        Step in decades (log10 units); default 0.02.
    readout : str or None
        d3 format of the readout; default None picks ``".3s"`` (SI prefix) or ``".3g"``
        from the unit in ``description``.
    """
    w = _widgets()
    readout = readout or _readout(description)
    value = float(np.clip(value, low, high))
    return w.FloatLogSlider(value=value, base=10, min=np.log10(low), max=np.log10(high),
                            step=step, description=description, readout_format=readout,
                            continuous_update=False, style={"description_width": "initial"},
                            layout=w.Layout(width="340px"))


def lin_slider(description, value, low, high, step, readout=".4"):
    """A linear slider in display units (readout: 4 significant digits, zeros trimmed, so
    a wavelength reads 1310 rather than 1.31e+3).

    Parameters
    ----------
    description : str
        Label beside the slider, with its display unit in brackets (``"wavelength [nm]"``).
    value : float
        Start value in display units; clipped into ``[low, high]``.
    low, high : float
        Ends of the slider in display units, ``low < high``.
    step : float
        Step in display units, > 0.
    readout : str
        d3 format of the readout; default ``".4"``.
    """
    w = _widgets()
    value = float(np.clip(value, low, high))
    return w.FloatSlider(value=value, min=low, max=high, step=step, description=description,
                         readout_format=readout, continuous_update=False,
                         style={"description_width": "initial"}, layout=w.Layout(width="340px"))


def rows_html(rows, header=("quantity", "value")) -> str:
    """A small HTML table from ``(name, text)`` rows (texts already formatted).

    Parameters
    ----------
    rows : iterable of sequence
        Table rows, one cell per header column; cells are shown with ``str`` and escaped.
    header : sequence of str
        Column headings; default ``("quantity", "value")``.
    """
    head = "".join(f"<th style='text-align:left;padding:0 8px'>{html.escape(h)}</th>"
                   for h in header)
    body = "".join("<tr>" + "".join(f"<td style='padding:0 8px'>{html.escape(str(c))}</td>"
                                    for c in row) + "</tr>" for row in rows)
    return f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


def frame_html(frame, units=None, digits=4) -> str:
    """A pandas DataFrame as HTML with numbers in engineering notation.

    ``units`` maps a column to its SI unit; a column header ending in ``[unit]`` is read
    the same way.

    Parameters
    ----------
    frame : pandas.DataFrame
        The table; its float and integer columns are formatted, other columns shown as
        they are.
    units : dict of str to str or None
        SI unit symbol by column name; default None (units from ``[unit]`` headers only).
    digits : int
        Significant digits of the formatted numbers; default 4.
    """
    units = dict(units or {})
    shown = frame.copy()
    for col in shown.columns:
        name = str(col)
        unit = units.get(name)
        if unit is None and name.endswith("]") and "[" in name:
            unit = name[name.rindex("[") + 1:-1]
            if unit == "%":
                unit = ""
        if shown[col].dtype.kind in "fi":
            shown[col] = [format_eng(float(v), unit or "", digits) for v in shown[col]]
    return shown.to_html(escape=True, border=0)


_LABEL_UNIT = re.compile(r"^(.*?)\s*\[([^\[\]]+)\]\s*$")
_SQUARED_DENSITY = re.compile(r"^([AV])\^2/Hz$")


def _engineering_axes(figure):
    """Tick labels with engineering prefixes on every axis labelled with an SI unit.

    An axis labelled ``"capacitance [F]"`` gets ticks like ``400 fF`` and the label
    ``"capacitance"``; ``"noise [V^2/Hz]"`` is shown in ``nV^2/Hz`` (a prefix on a squared
    unit would be misread). Labels in display units (``[um]``, ``[cm^-3]``, ``[dB]``) keep
    matplotlib's formatting. Axes are re-examined on each render, since a panel may change
    a label or a scale; the label the panel set is remembered on the axis.
    """
    from matplotlib.ticker import EngFormatter, FuncFormatter, LogLocator

    for ax in figure.axes:
        for axis, scale in ((ax.xaxis, ax.get_xscale()), (ax.yaxis, ax.get_yscale())):
            label = axis.get_label_text()
            if label != getattr(axis, "_photorx_shown", None):
                axis._photorx_label = label  # the panel set (or reset) this label
            match = _LABEL_UNIT.match(axis._photorx_label)
            unit = match.group(2) if match else ""
            squared = _SQUARED_DENSITY.match(unit)
            ours = getattr(axis.get_major_formatter(), "_photorx", False)
            if unit in _PREFIX_UNITS | {"C"}:
                major = EngFormatter(unit=unit, sep=" ")
                minor = _MinorEng(unit) if scale == "log" else None
                shown = match.group(1)
            elif squared and scale == "linear":
                low, high = axis.get_view_interval()
                exp3 = _squared_exponent(max(abs(low), abs(high)))
                major = FuncFormatter(lambda x, pos, k=10.0 ** (2 * exp3): f"{x / k:g}")
                minor = None
                shown = (f"{match.group(1)} [{_PREFIXES[exp3]}{squared.group(1)}$^2$/Hz]")
            else:
                if ours:  # the label's unit changed to one shown as is: undo ours
                    default = axis.get_major_formatter()._photorx_default
                    axis.set_major_formatter(default[0])
                    axis.set_minor_formatter(default[1])
                axis._photorx_shown = label
                continue
            # matplotlib's own formatters, restored if the label later loses its SI unit
            default = (axis.get_major_formatter()._photorx_default if ours else
                       (axis.get_major_formatter(), axis.get_minor_formatter()))
            major._photorx = True
            major._photorx_default = default
            if not ours and scale == "log" and axis is ax.xaxis:
                # "100 kHz" is wider than "10^5": label every other decade when crowded
                axis.set_major_locator(LogLocator(base=10.0, numticks=6))
            axis.set_major_formatter(major)
            if minor is not None:
                axis.set_minor_formatter(minor)
            elif scale == "linear":
                axis.set_minor_formatter(default[1])
            axis.set_label_text(shown)
            axis._photorx_shown = shown


def _squared_exponent(vmax: float) -> int:
    """Power of ten (multiple of 3) of the amplitude unit for a squared density."""
    if not np.isfinite(vmax) or vmax <= 0:
        return 0
    return int(max(min(np.floor(np.log10(np.sqrt(vmax)) / 3) * 3, 15), -18))


def _minor_eng_class():
    from matplotlib.ticker import EngFormatter

    class MinorEng(EngFormatter):
        """Minor log ticks labelled only when the axis spans under 2.5 decades."""

        def __call__(self, x, pos=None):
            low, high = sorted(self.axis.get_view_interval())
            if low <= 0 or np.log10(high / low) >= 2.5:
                return ""
            return super().__call__(x, pos)

    return MinorEng


def _MinorEng(unit):
    return _minor_eng_class()(unit=unit, sep=" ")


class Panel:
    """Base of every panel: controls, a headless figure, an output area and a message area.

    Parameters
    ----------
    render : bool
        Render the figure to PNG after every update; default True. False skips the
        rendering (scripts and tests that read only the numbers); :meth:`render` can still
        be called.

    Attributes
    ----------
    controls : dict of str to ipywidgets.Widget
        The controls by name; set ``panel.controls[name].value`` to drive the panel.
    figure : matplotlib.figure.Figure
        The panel's figure, made once and updated in place.
    axes : dict of str to matplotlib.axes.Axes
        Its axes by name.
    lines : dict of str to matplotlib artists
        The artists that :meth:`update` moves.
    image : ipywidgets.Image
        The figure rendered to PNG (the output area's plot).
    table : ipywidgets.HTML
        Tables and figures of merit shown beside the plot.
    output : ipywidgets.VBox
        The output area: ``image`` and ``table`` (and a panel's extra views).
    message : ipywidgets.HTML
        Errors (red), model warnings (amber) and notes; empty when all is well.
    widget : ipywidgets.Box
        The whole panel, for display (``display(panel)`` also works).
    last_update_seconds : float
        Wall time of the last :meth:`update`, without the PNG rendering.
    error : str
        The last error message, or ``""``.
    """

    title = "panel"
    figsize = (9.0, 5.0)
    dpi = 72

    def __init__(self, render=True):
        w = _widgets()
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure

        self.render_enabled = bool(render)
        self.controls = {}
        self.axes = {}
        self.lines = {}
        self.error = ""
        self.notes = []
        self.alarms = []
        self.last_update_seconds = float("nan")
        self.last_render_seconds = float("nan")
        self.figure = Figure(figsize=self.figsize, dpi=self.dpi)
        FigureCanvasAgg(self.figure)  # headless canvas: no pyplot, no frontend needed
        self.image = w.Image(format="png", layout=w.Layout(max_width="100%"))
        self.table = w.HTML()
        self.message = w.HTML()
        self.output = w.VBox([self.image, self.table])
        self._updating = False
        self._build_controls()
        self._build_figure()
        for control in self.controls.values():
            if hasattr(control, "value"):
                control.observe(self._on_change, names="value")
        self.widget = w.VBox([w.HTML(f"<h3>{html.escape(self.title)}</h3>"),
                              self._layout_controls(), self.message, self.output])
        self._laid_out = False
        self.update()

    # -- to be provided by subclasses -------------------------------------------------------
    def _build_controls(self):  # pragma: no cover - abstract
        raise NotImplementedError

    def _build_figure(self):  # pragma: no cover - abstract
        raise NotImplementedError

    def _refresh(self):  # pragma: no cover - abstract
        """Ask the package for numbers and move the artists; may raise DesignError."""
        raise NotImplementedError

    def _sync_controls(self):
        """Adjust controls that depend on others (e.g. a slider's end); no update here."""

    def _layout_controls(self):
        w = _widgets()
        items = [c for c in self.controls.values()]
        rows = [w.HBox(items[i:i + 3]) for i in range(0, len(items), 3)]
        return w.VBox(rows)

    # -- behaviour ---------------------------------------------------------------------------
    def value(self, name):
        """Current value of control ``name``.

        Parameters
        ----------
        name : str
            Key in :attr:`controls`; KeyError if absent. The value is in that control's
            display unit.
        """
        return self.controls[name].value

    def set(self, **values):
        """Set several controls at once and update once (for scripts and tests).

        Parameters
        ----------
        **values
            ``name=value`` for controls in :attr:`controls`, each in the display unit of
            that control (the unit in its description, e.g. ``"area [mm^2]"``). An unknown
            name raises :class:`TypeError` listing the panel's controls; nothing is set then.

        Returns
        -------
        bool
            What :meth:`update` returned: False when an error is shown in ``message``.
        """
        unknown = [name for name in values if name not in self.controls]
        if unknown:
            # refuse before anything moves: a typo must not leave the panel half updated
            raise TypeError(f"{type(self).__name__}.set() got unknown control(s) "
                            f"{', '.join(map(repr, unknown))}; controls: "
                            f"{', '.join(sorted(self.controls))}")
        self._updating = True
        try:
            for name, v in values.items():
                self.controls[name].value = v
                self._sync_controls()
        finally:
            self._updating = False
        return self.update()

    def _on_change(self, change):
        if not self._updating:
            self._updating = True
            try:
                self._sync_controls()
            finally:
                self._updating = False
            self.update()

    def update(self):
        """Recompute through the package, update the artists in place, then re-render.

        Returns
        -------
        bool
            True when the update succeeded; False when an error is shown in ``message``.
        """
        start = time.perf_counter()
        self.notes = []
        self.alarms = []
        ok = True
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", PhotorxWarning)
            try:
                self._refresh()
                self.error = ""
            except DesignError as exc:
                self.error = str(exc)
                ok = False
        for item in caught:
            if issubclass(item.category, PhotorxWarning):
                self.notes.append(f"model warning: {item.message}")
        self._show_messages()
        self.last_update_seconds = time.perf_counter() - start
        if self.render_enabled:
            self.render()
        return ok

    def _show_messages(self):
        parts = []
        for text in ([self.error] if self.error else []) + self.alarms:
            parts.append(f"<div style='{_ERROR_STYLE}'>{html.escape(text)}</div>")
        for note in dict.fromkeys(self.notes):
            style = _WARN_STYLE if note.startswith(("model warning", "warning")) else _OK_STYLE
            parts.append(f"<div style='{style}'>{html.escape(note)}</div>")
        self.message.value = "".join(parts)

    def note(self, text):
        """Add a line to the message area for this update.

        Parameters
        ----------
        text : str
            The note (converted with ``str``); shown amber when it starts with "warning" or
            "model warning", else green. Cleared by the next :meth:`update`.
        """
        self.notes.append(str(text))

    def alarm(self, text):
        """Show ``text`` as an error in the message area while the panel still draws.

        Parameters
        ----------
        text : str
            The message (converted with ``str``); cleared by the next :meth:`update`.
        """
        self.alarms.append(str(text))

    def fail(self, text, parameter=None):
        """Stop this update with a message (raises DesignError, caught by :meth:`update`).

        Parameters
        ----------
        text : str
            The error message shown in the message area.
        parameter : str or None
            Name of the offending parameter, passed to :class:`~photorx.errors.DesignError`;
            default None.
        """
        raise DesignError(str(text), parameter=parameter)

    def render(self):
        """Draw the figure to PNG into ``image`` (the same figure every time)."""
        from matplotlib.ticker import LogLocator

        start = time.perf_counter()
        _engineering_axes(self.figure)
        if not self._laid_out:  # lay out once, with data in the axes; later draws keep it
            try:
                self.figure.tight_layout()
                self._laid_out = True
            except ValueError:  # an empty log axis (a failed first update): try next time
                pass
        for ax in self.figure.axes:  # 8 minor ticks a decade cost more to draw than they show
            for axis, scale in ((ax.xaxis, ax.get_xscale()), (ax.yaxis, ax.get_yscale())):
                if scale == "log" and not getattr(axis.get_minor_locator(), "_photorx", False):
                    locator = LogLocator(base=10.0, subs=(2.0, 5.0))
                    locator._photorx = True
                    axis.set_minor_locator(locator)
        buf = io.BytesIO()
        self.figure.canvas.print_png(buf, pil_kwargs={"compress_level": 1})
        self.image.value = buf.getvalue()
        self.last_render_seconds = time.perf_counter() - start

    # -- helpers for subclasses -------------------------------------------------------------
    @staticmethod
    def rescale(ax, x_tight=True):
        """Autoscale an axes to its (moved) artists.

        Parameters
        ----------
        ax : matplotlib.axes.Axes
            The axes to rescale (visible artists only).
        x_tight : bool
            Fit the x axis tightly to the data, without margins; default True.
        """
        ax.relim(visible_only=True)
        ax.autoscale_view(tight=None)
        if x_tight:
            ax.autoscale(enable=True, axis="x", tight=True)

    @staticmethod
    def set_line(line, x, y):
        """Move a line; NaN/inf values are hidden (matplotlib skips non-finite points).

        Parameters
        ----------
        line : matplotlib.lines.Line2D
            The line to move.
        x, y : array_like of float
            New data, same length, in the axes' units; non-finite ``y`` become NaN gaps.
        """
        y = np.asarray(y, dtype=float)
        line.set_data(np.asarray(x, dtype=float), np.where(np.isfinite(y), y, np.nan))

    # -- display -----------------------------------------------------------------------------
    def _repr_mimebundle_(self, **kwargs):
        # the live widget view, and beside it a static PNG of the current figure: a frontend
        # with a kernel shows the widget, a saved notebook read without one (an exported
        # page, a viewer) shows the figure instead of a blank panel
        import base64

        bundle = dict(self.widget._repr_mimebundle_(**kwargs))
        if not self.image.value:
            self.render()
        if self.image.value:
            bundle["image/png"] = base64.b64encode(bytes(self.image.value)).decode("ascii")
        return bundle

    def __repr__(self):
        return f"<{type(self).__name__}: {self.title}>"
