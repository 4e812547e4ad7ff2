"""Sweeps: every receiver figure over a cartesian grid of design parameters, in one array call.

The grid is flattened to one axis of N points, the receiver's fields are replaced by
arrays of length N (see :mod:`photorx.analysis.parameters`), and
:meth:`~photorx.analysis.receiver.Receiver.evaluate` computes every figure for all N
points at once through the vectorised core: no Python loop over design points.
"""

from __future__ import annotations

import itertools
import math

import numpy as np
import pandas as pd

from ..errors import DesignError
from .parameters import resolve_parameter, with_parameters

__all__ = ["sweep", "grid", "column_units", "evaluate_points"]

#: Grids larger than this are evaluated in chunks (memory: each point carries a frequency grid).
#: Each chunk pays the fixed cost of one evaluation (some 20 ms of Python and small-array
#: overhead), so larger chunks are faster (2,048: about a fifth less CPU per point) but hold
#: more at once (the noise stage works in blocks of its own, ``noise_integrals._BLOCK``, the
#: eye figures in ``design_blocks.BLOCK`` rows; the speed stage holds about 12 kB per
#: design): a 1,024-design chunk peaks near 24 MB. A 10^5-point sweep of the demo then peaks
#: near 170 MB resident: 88 MB of imports (numpy, scipy, pandas), 54 MB of table (70 float
#: columns), the chunk and the allocator's slack.
CHUNK = 1024
#: Smallest chunk when a progress callback is given.
PROGRESS_CHUNK = 256


def grid(max_points=None, **axes) -> dict[str, np.ndarray]:
    """Cartesian grid of the given axes, flattened: ``{name: array of length prod(len(axis))}``.

    The first axis varies slowest (row-major order, as ``itertools.product``). A grid of
    more than ``max_points`` points (None: no limit) is a :class:`DesignError`, raised
    before the grid is built.

    Parameters
    ----------
    max_points : int, optional
        Largest number of grid points allowed; default None, no limit.
    **axes : array_like
        Axis name -> non-empty 1-D sequence of numbers (SI units of that parameter); at
        least one axis.
    """
    if not axes:
        raise DesignError("a sweep needs at least one axis, e.g. reverse_bias=np.linspace(0, 20, 81)")
    arrays = {}
    for name, values in axes.items():
        try:
            arr = np.atleast_1d(np.asarray(values, dtype=float))
        except (TypeError, ValueError):
            raise DesignError(f"sweep axis {name!r} must be a 1-D sequence of numbers",
                              parameter=name) from None
        if arr.ndim != 1 or arr.size == 0:
            raise DesignError(f"sweep axis {name!r} must be a non-empty 1-D sequence of numbers",
                              parameter=name)
        arrays[name] = arr
    total = math.prod(a.size for a in arrays.values())
    if max_points is not None and total > max_points:
        raise DesignError(f"the sweep grid has {total} points, more than max_points = "
                          f"{max_points}; use fewer points or raise max_points",
                          parameter="max_points")
    mesh = np.meshgrid(*arrays.values(), indexing="ij")
    return {name: m.ravel() for name, m in zip(arrays, mesh)}


def sweep(receiver, progress=None, max_points=None, **axes) -> pd.DataFrame:
    """Evaluate ``receiver`` over the cartesian grid of ``axes``.

    Parameters
    ----------
    receiver : Receiver
        The base design; parameters not swept keep its values.
    progress : callable, optional
        Called as ``progress(done, total)`` after each chunk (the command line shows a bar);
        with it, grids are evaluated in at least about 20 chunks so that the bar moves.
    max_points : int, optional
        Largest grid to evaluate; a larger one is a :class:`DesignError` raised before any
        work (None: no limit; the command line sets 10^6).
    **axes : array_like
        Parameter name (a field name anywhere in the receiver tree such as
        ``reverse_bias``, ``rf``, ``cf``, ``area``, ``i_thickness``, ``wavelength``,
        ``optical_power``, ``temperature``, or a dotted path written with ``__``) to the
        1-D values it takes, in SI units. For an avalanche photodiode, ``gain`` [-] is an
        axis too: each gain becomes the reverse bias that gives it at the point's
        temperature (:func:`photorx.analysis.apd_optimum.gain_axis`), so the steep part of
        M(V) near breakdown is sampled evenly; the table then has ``reverse_bias`` as the
        axis column and ``gain`` as a figure.

    Returns
    -------
    pandas.DataFrame
        One row per grid point: the swept parameters first, then every scalar figure of
        :class:`~photorx.analysis.receiver.ReceiverResult`. ``attrs["units"]`` maps every
        column to its SI unit (``""`` for numbers without one and for text), see
        :func:`column_units`.

    Examples
    --------
    >>> import numpy as np, photorx as prx
    >>> rx = prx.demo_receiver()
    >>> df = prx.sweep(rx, reverse_bias=np.linspace(0, 10, 11), rf=[5e3, 10e3])
    >>> len(df)
    22
    """
    for name in axes:
        if name != "gain":
            resolve_parameter(receiver, name.replace("__", "."))  # fail early, naming the axis
    points = grid(max_points=max_points, **axes)
    if "gain" in points:  # an avalanche gain axis: the bias that gives each gain
        from .apd_optimum import gain_points

        points = gain_points(receiver, points)
    total = len(next(iter(points.values())))
    # a progress bar needs steps; each chunk stays large enough to stay vectorised
    size = CHUNK if progress is None else min(CHUNK, max(PROGRESS_CHUNK, -(-total // 20)))
    # every column is allocated once at its full length and filled chunk by chunk: no
    # per-chunk frames and no concatenation, so the peak memory is one copy of the result
    # plus one chunk's working set
    columns: dict[str, np.ndarray] = {}
    text_labels: dict[str, dict[str, int]] = {}
    for start in range(0, total, size):
        chunk = {k: v[start:start + size] for k, v in points.items()}
        figures = evaluate_points(receiver, chunk)
        # column order as before: a swept figure keeps its place, a new axis column goes
        # in at 1 + its axis index counting a leading "point" column (dropped below)
        order = ["point", *figures]
        for i, (name, values) in enumerate(chunk.items()):
            column = name.replace("__", ".")
            if column not in figures:
                order.insert(1 + i, column)
            figures[column] = np.asarray(values)
        for column in order[1:]:
            values = figures[column]
            if values.dtype.kind not in "biufc":  # text: a few distinct labels, stored as codes
                labels = text_labels.setdefault(column, {})
                distinct, where = np.unique(values, return_inverse=True)
                values = np.array([labels.setdefault(v, len(labels)) for v in distinct],
                                  dtype=np.int32)[where]
            if column not in columns:
                columns[column] = np.empty(total, dtype=values.dtype)
            columns[column][start:start + len(values)] = values
        if progress is not None:
            progress(min(start + size, total), total)
    for column, labels in text_labels.items():  # categorical: one small integer per row
        columns[column] = pd.Categorical.from_codes(columns[column], categories=list(labels))
    frame = pd.DataFrame(columns, copy=False)
    frame.attrs["units"] = column_units(frame.columns)
    return frame


def evaluate_points(receiver, columns) -> dict[str, np.ndarray]:
    """Every scalar figure at explicit design points given as columns, in one vectorised call.

    Parameters
    ----------
    receiver : Receiver
        The base design; parameters not given keep its values.
    columns : dict
        Parameter name (as :func:`sweep` accepts it; dotted paths written with ``__``) ->
        1-D array of its values at the points [SI]; all of one length N.

    Returns
    -------
    dict of str to numpy.ndarray
        Figure name (every entry of :meth:`ReceiverResult.to_dict`) -> 1-D array of N
        values (text figures as string arrays).
    """
    result = with_parameters(receiver, **columns).evaluate()
    shape = np.shape(result.values["bandwidth"])
    return {k: np.ravel(np.broadcast_to(np.asarray(v), shape))
            for k, v in result.to_dict().items()}


def sweep_points(receiver, points) -> pd.DataFrame:
    """Evaluate a list of explicit design points (dicts of parameter values), vectorised."""
    keys = sorted(set(itertools.chain.from_iterable(points)))
    cols = {k: np.array([p[k] for p in points], dtype=float) for k in keys}
    rx = with_parameters(receiver, **cols)
    frame = rx.evaluate().to_frame()
    for k in keys:
        frame[k] = cols[k]
    return frame


def _n_points(axes) -> int:  # pragma: no cover - helper for callers sizing progress bars
    return math.prod(len(np.atleast_1d(v)) for v in axes.values())


def column_units(columns) -> dict:
    """SI unit of each sweep column: a receiver figure, a noise source or a design parameter.

    Figures take their unit from :data:`~photorx.analysis.result.FIGURES`, ``noise_<source>``
    columns are input-referred rms currents [A], swept parameters (dotted paths allowed)
    take the unit of their design-file key; anything else is ``""``.

    Parameters
    ----------
    columns : iterable of str
        Column names of a sweep table.

    Returns
    -------
    dict of str to str
        Column -> unit (pint syntax, e.g. ``"Hz"``, ``"A/rtHz"``, ``"m^2"``).
    """
    from ..designschema import SCHEMA
    from .result import FIGURES

    parameters = {}
    for key in SCHEMA:
        if key.unit is not None:
            parameters.setdefault(key.arg, key.unit)
    units = {}
    for column in columns:
        name = str(column)
        leaf = name.split(".")[-1]
        if name in FIGURES:
            units[name] = FIGURES[name][0]
        elif name.startswith("noise_"):
            units[name] = "A"
        else:
            units[name] = parameters.get(leaf, FIGURES.get(leaf, ("",))[0])
    return units
