"""Measured C-V and I-V tables: read from CSV with the units written in the header.

A measurement file is plain comma-separated text. The first line that is not blank and
does not start with ``#`` is the header: one ``name [unit]`` per column, e.g.
``reverse_bias [V], capacitance [pF]``. Lines starting with ``#`` are comments (say where
the data came from there). Reverse bias is positive and forward bias negative, as
everywhere in photorx; current is positive in the reverse direction.

:func:`read_cv` and :func:`read_iv` return :class:`pandas.DataFrame` tables in SI units
(the units are recorded in ``DataFrame.attrs["units"]``), sorted by temperature and bias.
Every bad cell is a :class:`~photorx.errors.DesignError` naming its line and column.
"""

from __future__ import annotations

import csv
import io
import os
import re

import numpy as np

from ..errors import DesignError
from ..units import parse_quantity

__all__ = ["read_cv", "read_iv", "table_text", "demo_measurements", "DEMO_AREA", "CV_COLUMNS",
           "IV_COLUMNS"]

#: Columns of a C-V table: name -> (SI unit, required)
CV_COLUMNS = {"reverse_bias": ("V", True), "capacitance": ("F", True),
              "temperature": ("K", False)}
#: Columns of an I-V table: name -> (SI unit, required)
IV_COLUMNS = {"reverse_bias": ("V", True), "current": ("A", True),
              "temperature": ("K", False)}

_HEADER = re.compile(r"^\s*([A-Za-z_][A-Za-z0-9_ ]*?)\s*(?:\[\s*([^\]]*?)\s*\])?\s*$")


def _read_lines(source):
    """(line number, text) of the non-blank, non-comment lines of a path or open text file."""
    if hasattr(source, "read"):
        text = source.read()
        name = getattr(source, "name", "<text>")
    else:
        path = os.fspath(source)
        name = path
        try:
            with open(path, encoding="utf-8-sig", newline="") as handle:
                text = handle.read()
        except FileNotFoundError:
            raise DesignError(f"measurement file {path!r} does not exist",
                              parameter="path") from None
        except UnicodeDecodeError as exc:
            raise DesignError(f"measurement file {path!r} is not UTF-8 text ({exc.reason} at "
                              f"byte {exc.start})", parameter="path") from None
    if isinstance(text, bytes):
        text = text.decode("utf-8-sig", errors="replace")
    lines = [(n, line) for n, line in enumerate(text.splitlines(), start=1)
             if line.strip() and not line.lstrip().startswith("#")]
    return name, lines


def _unit_conversion(unit_text, si_unit, column, name):
    """(scale, offset) with value_SI = offset + scale * value for a header unit."""
    if not unit_text:
        raise DesignError(f"{name}: column {column!r} has no unit; write it in the header as "
                          f"'{column} [{si_unit}]'", parameter=column)
    try:
        zero = parse_quantity(f"0 {unit_text}", si_unit)
        one = parse_quantity(f"1 {unit_text}", si_unit)
    except DesignError as exc:
        raise DesignError(f"{name}: the unit [{unit_text}] of column {column!r} is not a unit "
                          f"of {si_unit}: {exc}", parameter=column) from None
    return one - zero, zero


def _read_table(source, columns, kind):
    name, lines = _read_lines(source)
    if not lines:
        raise DesignError(f"{name}: no header line; the first line must name the columns, e.g. "
                          f"'{', '.join(f'{c} [{u}]' for c, (u, _) in columns.items())}'",
                          parameter="path")
    header_line, header_text = lines[0]
    header = next(csv.reader([header_text]))
    names, conversions = [], []
    for cell in header:
        match = _HEADER.match(cell)
        if match is None:
            raise DesignError(f"{name}, line {header_line}: cannot read column header "
                              f"{cell.strip()!r}; write 'name [unit]'", parameter="path")
        col = match.group(1).strip().replace(" ", "_").lower()
        if col not in columns:
            raise DesignError(f"{name}, line {header_line}: unknown column {col!r} in a {kind} "
                              f"table; known columns: {', '.join(columns)}", parameter=col)
        if col in names:
            raise DesignError(f"{name}, line {header_line}: column {col!r} appears twice",
                              parameter=col)
        names.append(col)
        conversions.append(_unit_conversion(match.group(2), columns[col][0], col, name))
    missing = [c for c, (_, required) in columns.items() if required and c not in names]
    if missing:
        raise DesignError(f"{name}: a {kind} table needs the column(s) {', '.join(missing)}; "
                          f"the header has {', '.join(names)}", parameter=missing[0])
    data = {c: [] for c in names}
    raw = {c: [] for c in names}
    line_numbers = []
    for number, text in lines[1:]:
        cells = next(csv.reader([text]))
        if len(cells) != len(names):
            raise DesignError(f"{name}, line {number}: {len(cells)} values but the header has "
                              f"{len(names)} columns ({', '.join(names)})", parameter="path")
        for col, cell, (scale, offset) in zip(names, cells, conversions):
            try:
                value = float(cell)
            except ValueError:
                raise DesignError(f"{name}, line {number}, column {col!r}: {cell.strip()!r} is "
                                  "not a number", parameter=col) from None
            if not np.isfinite(value):
                raise DesignError(f"{name}, line {number}, column {col!r}: {cell.strip()!r} is "
                                  "not a finite number", parameter=col)
            data[col].append(offset + scale * value)
            raw[col].append(cell.strip())
        line_numbers.append(number)
    if len(line_numbers) < 3:
        raise DesignError(f"{name}: {len(line_numbers)} data line(s); a {kind} table needs at "
                          "least 3", parameter="path")
    data = {c: np.asarray(v) for c, v in data.items()}
    data["_raw"] = raw
    return name, names, data, np.asarray(line_numbers)


def _check_rows(name, data, lines, column, valid, what):
    bad = ~valid
    if np.any(bad):
        i = int(np.flatnonzero(bad)[0])
        raise DesignError(f"{name}, line {lines[i]}, column {column!r}: "
                          f"{data['_raw'][column][i]!r} is invalid; {what}", parameter=column)


def _finish(name, names, data, lines, units):
    import pandas as pd

    if "temperature" in data:
        _check_rows(name, data, lines, "temperature",
                    (data["temperature"] >= 50.0) & (data["temperature"] <= 600.0),
                    "valid range 50 to 600 K")
    temperature = data.get("temperature", np.zeros(lines.size))
    order = np.lexsort((data["reverse_bias"], temperature))
    v, t, ln = data["reverse_bias"][order], temperature[order], lines[order]
    same = (np.diff(v) == 0) & (np.diff(t) == 0)
    if np.any(same):
        i = int(np.flatnonzero(same)[0])
        raise DesignError(f"{name}, lines {min(ln[i], ln[i + 1])} and {max(ln[i], ln[i + 1])}, "
                          f"column 'reverse_bias': the bias {v[i]:.6g} V appears twice"
                          + (" at the same temperature" if "temperature" in data else "")
                          + "; average repeated readings before import", parameter="reverse_bias")
    frame = pd.DataFrame({c: data[c][order] for c in names})
    frame = frame[[c for c in units if c in names]]
    frame.attrs["units"] = {c: units[c] for c in frame.columns}
    frame.attrs["source"] = str(name)
    frame.attrs["lines"] = ln.tolist()
    return frame


def read_cv(path):
    """Read a capacitance-voltage measurement from CSV into SI units.

    Parameters
    ----------
    path : str, os.PathLike or text file
        CSV file whose header names the columns with their units, e.g.
        ``reverse_bias [V], capacitance [pF]``, optionally ``temperature [K]`` (or
        ``[degC]``). Any unit of the right dimension is accepted (``mV``, ``nF``, ...).
        Lines starting with ``#`` are comments.

    Returns
    -------
    pandas.DataFrame
        Columns ``reverse_bias`` [V], ``capacitance`` [F] and, when given,
        ``temperature`` [K], sorted by temperature then bias. ``attrs["units"]`` maps each
        column to its SI unit; ``attrs["source"]`` is the file name and ``attrs["lines"]``
        the file line of each row.

    Raises
    ------
    DesignError
        Missing or unknown columns, a unit of the wrong dimension, a cell that is not a
        finite number, a capacitance <= 0, a temperature outside 50 to 600 K, a bias
        repeated at one temperature, or fewer than 3 rows. The message names the line
        and the column.

    Examples
    --------
    >>> import io, photorx as prx
    >>> cv = prx.read_cv(io.StringIO("reverse_bias [V], capacitance [pF]\\n0, 10\\n1, 7\\n"
    ...                              "2, 6\\n"))
    >>> float(cv["capacitance"].iloc[0])
    1e-11
    """
    name, names, data, lines = _read_table(path, CV_COLUMNS, "C-V")
    _check_rows(name, data, lines, "capacitance", data["capacitance"] > 0, "valid range > 0")
    return _finish(name, names, data, lines, {c: u for c, (u, _) in CV_COLUMNS.items()})


def read_iv(path):
    """Read a (dark) current-voltage measurement from CSV into SI units.

    Parameters
    ----------
    path : str, os.PathLike or text file
        CSV file whose header names the columns with their units, e.g.
        ``reverse_bias [V], current [nA]``, optionally ``temperature [K]``. The current
        is positive in the reverse direction (the dark current of a reverse-biased
        diode), negative in forward bias. Lines starting with ``#`` are comments.

    Returns
    -------
    pandas.DataFrame
        Columns ``reverse_bias`` [V], ``current`` [A] and, when given, ``temperature``
        [K], sorted by temperature then bias; ``attrs`` as for :func:`read_cv`.

    Raises
    ------
    DesignError
        As :func:`read_cv` (a current may have either sign).
    """
    name, names, data, lines = _read_table(path, IV_COLUMNS, "I-V")
    return _finish(name, names, data, lines, {c: u for c, (u, _) in IV_COLUMNS.items()})


def table_text(frame, units=None):
    """CSV text of a measurement table in SI units, readable back by :func:`read_cv`/``read_iv``.

    Parameters
    ----------
    frame : pandas.DataFrame
        Table with SI columns (``attrs["units"]`` or ``units`` give their units).
    units : dict, optional
        Column -> unit text; default ``frame.attrs["units"]``.

    Returns
    -------
    str
    """
    units = units or frame.attrs.get("units", {})
    out = io.StringIO()
    out.write(", ".join(f"{c} [{units.get(c, '')}]" for c in frame.columns) + "\n")
    for row in frame.itertuples(index=False):
        out.write(", ".join(repr(float(x)) for x in row) + "\n")
    return out.getvalue()


#: Junction area of the invented diode behind the demo measurements [m^2] (0.8 mm diameter).
DEMO_AREA = float(np.pi * 0.4e-3**2)


def demo_measurements():
    """The SYNTHETIC demo C-V and I-V tables shipped with photorx (read with units).

    Returns
    -------
    cv, iv : pandas.DataFrame
        As :func:`read_cv` and :func:`read_iv` return them. Invented data: photorx's model
        of an invented silicon p-i-n photodiode (area :data:`DEMO_AREA`, 20 um i layer)
        plus seeded noise, written by ``photorx/data/make_demo_measurements.py``; the C-V
        at 25 degC, the I-V at 25, 40 and 55 degC. Not data of any real device.
    """
    from importlib import resources

    folder = resources.files("photorx").joinpath("data")
    with folder.joinpath("demo_measured_cv.csv").open("r", encoding="utf-8") as handle:
        cv = read_cv(handle)
    with folder.joinpath("demo_measured_iv.csv").open("r", encoding="utf-8") as handle:
        iv = read_iv(handle)
    cv.attrs["source"] = "demo_measured_cv.csv (synthetic)"
    iv.attrs["source"] = "demo_measured_iv.csv (synthetic)"
    return cv, iv
