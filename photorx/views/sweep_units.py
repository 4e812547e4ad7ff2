"""Sweep tables on disk with their units: unit-suffixed CSV headers, read back into ``attrs``.

The CSV format (written by ``photorx sweep`` and :func:`write_sweep_csv`): one header row,
each column named ``name [unit]`` with its SI unit in pint syntax (``bandwidth [Hz]``,
``nep [W/rtHz]``, ``area [m^2]``); a column without a unit (a ratio, a count, text, a
flag) is named bare (``q``, ``stable``). Values are plain SI numbers without prefixes; a
figure that does not exist (no post filter, no phase crossover, an infinite margin) reads
``none``. A single header row keeps the file a plain numeric table for any spreadsheet or
``pandas.read_csv``; :func:`read_sweep_csv` splits the headers again and puts the units
in ``df.attrs["units"]``.
"""

from __future__ import annotations

import io
import re

import numpy as np

from .._files import atomic_write_text

__all__ = ["sweep_csv_text", "write_sweep_csv", "read_sweep_csv", "NONE_TEXT"]

#: How a missing figure reads in the CSV.
NONE_TEXT = "none"

_HEADER = re.compile(r"^(?P<name>.*\S)\s*\[(?P<unit>[^\[\]]*)\]$")


def _header(name: str, unit: str) -> str:
    return f"{name} [{unit}]" if unit else str(name)


def sweep_csv_text(df) -> str:
    """The sweep table as CSV text with unit-suffixed headers (see the module notes).

    Parameters
    ----------
    df : pandas.DataFrame
        A sweep table; units from ``df.attrs["units"]`` (columns missing there are
        written bare).

    Returns
    -------
    str
        CSV text, "\\n" line ends, infinite and missing values as ``none``.
    """
    units = dict(df.attrs.get("units", {}))
    frame = df.replace([np.inf, -np.inf], np.nan)
    frame.columns = [_header(c, units.get(c, "")) for c in df.columns]
    return frame.to_csv(index=False, lineterminator="\n", na_rep=NONE_TEXT)


def write_sweep_csv(df, path):
    """Write :func:`sweep_csv_text` to ``path`` atomically (no partly written file).

    Parameters
    ----------
    df : pandas.DataFrame
        A sweep table with ``attrs["units"]``.
    path : str or os.PathLike
        Destination CSV file.

    Returns
    -------
    pathlib.Path
        The path written.
    """
    return atomic_write_text(path, sweep_csv_text(df))


def read_sweep_csv(source):
    """Read a sweep CSV back: bare column names, SI numbers, units in ``attrs["units"]``.

    Parameters
    ----------
    source : str, os.PathLike or file-like
        A CSV written by ``photorx sweep`` or :func:`write_sweep_csv` (a path, or an open
        text buffer; a str containing a newline is read as the CSV text itself).

    Returns
    -------
    pandas.DataFrame
        ``none`` cells become NaN; ``attrs["units"]`` maps every column to its unit
        (``""`` for bare headers).
    """
    import pandas as pd

    if isinstance(source, str) and "\n" in source:
        source = io.StringIO(source)
    frame = pd.read_csv(source, na_values=[NONE_TEXT], keep_default_na=False)
    names, units = [], {}
    for header in frame.columns:
        match = _HEADER.match(str(header))
        name, unit = (match["name"], match["unit"]) if match else (str(header), "")
        names.append(name)
        units[name] = unit
    frame.columns = names
    frame.attrs["units"] = units
    return frame
