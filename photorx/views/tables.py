"""Receiver budget tables: engineering-unit display and machine-readable exports.

A :class:`Budget` holds named pandas tables handed to it by the receiver (operating point,
speed, stability, noise by source, sensitivity, ...). It only formats and writes them;
it never computes physics.

Table format
------------
Each table is a :class:`pandas.DataFrame`. The usual long form has the columns

``quantity``
    Name of the figure (``"bandwidth"``, ``"phase margin"``...).
``value``
    The value in SI units (float), or a bool/str for flags and labels.
``unit``
    The SI unit symbol (``"Hz"``, ``"F"``, ``"A/rtHz"``, ``"deg"``, ``""``).
``display`` (optional)
    Text shown instead of the engineering-formatted value.

Any other columns (``"note"``, ``"limit"``, ``"status"``...) are shown as they are. A wide
table (for instance one row per noise source and one column per figure) gives the units of
its numeric columns in the header (``"output rms [V]"``) or in
``df.attrs["units"] = {"column": "unit"}``; those columns are then shown with engineering
prefixes too (the header without its unit). CSV and JSON exports keep the SI floats and the unit
column so that they can be read back by programs.
"""

from __future__ import annotations

import html
import json
import math
import re
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from ..errors import DesignError
from ..units import NONE, _is_number, _wavelength_text, display_value, figure_text, format_eng  # noqa: F401
from .._files import atomic_write_text
from .cautions import CAUTIONS, cautions_html, cautions_markdown, cautions_short, cautions_text

if TYPE_CHECKING:
    import pandas as pd

__all__ = ["Budget", "EXPORT_FORMATS", "NONE", "display_value", "figure_text"]

# pandas is imported where a frame is built: the text of ``photorx budget`` reads the
# receiver's rows directly (RowTable) and the command line starts without pandas


class RowTable:
    """A budget table as the receiver hands it over: rows of plain values, its frame made
    on first use.

    The text rendering reads the rows; everything else (the ``tables`` of a
    :class:`Budget`, its exports) works on the :class:`pandas.DataFrame` that ``frame``
    builds, the same frame the receiver would have handed over.

    Parameters
    ----------
    columns : sequence of str
        Column names, in order.
    rows : sequence of dict
        One dict per row, column -> value (every column present).
    frame : callable
        ``frame()`` -> the table as a pandas.DataFrame (same columns, rows and attrs).
    attrs : dict, optional
        What the frame carries in ``attrs`` (``"units"``, ``"f [Hz]"``...).
    """

    def __init__(self, columns, rows, frame, attrs=None):
        self.columns = list(columns)
        self._rows = list(rows)
        self._frame = frame
        self.attrs = dict(attrs or {})

    def __len__(self) -> int:
        return len(self._rows)

    def column(self, name) -> list:
        """Values of column ``name`` as the frame's ``tolist()`` reads them: a missing value
        (None) among numbers, or among text and NaN (pandas counts NaN as missing when it
        infers a text column), is NaN there.

        Parameters
        ----------
        name : str
            Column name.
        """
        values = [row[name] for row in self._rows]
        given = [v for v in values if v is not None]
        if given and len(given) < len(values):
            present = [v for v in given if not (isinstance(v, float) and math.isnan(v))]
            if all(_is_number(v) for v in given) or (
                    present and all(isinstance(v, str) for v in present)):
                return [math.nan if v is None else v for v in values]
        return values

    def frame(self):
        """The table as a pandas.DataFrame."""
        return self._frame()


def _column(table, name) -> list:
    """Values of one column of a DataFrame or a RowTable."""
    return table.column(name) if isinstance(table, RowTable) else table[name].tolist()

#: export format -> file suffix
EXPORT_FORMATS = {"csv": ".csv", "md": ".md", "latex": ".tex", "html": ".html", "json": ".json"}
_ALIASES = {"markdown": "md", "tex": "latex", "htm": "html"}

_CSS = """
body { font-family: system-ui, sans-serif; margin: 2em auto; max-width: 60em; color: #222; }
table.photorx-budget { border-collapse: collapse; margin: 0.5em 0 1.5em 0; }
table.photorx-budget th, table.photorx-budget td { border-bottom: 1px solid #ccc;
  padding: 0.2em 0.8em; text-align: left; }
table.photorx-budget td.num, table.photorx-budget th.num { text-align: right;
  font-variant-numeric: tabular-nums; }
table.photorx-budget td.num { white-space: nowrap; }
section.cautions { border-left: 4px solid #c60; padding-left: 1em; }
"""


class Budget:
    """Named receiver budget tables with engineering-unit display and exports.

    Parameters
    ----------
    tables : dict of str to pandas.DataFrame
        The tables, in display order (see the module notes for their columns).
    title : str
        Title of the budget (first heading of every export).
    notes : str or sequence of str
        Free-text notes printed under the tables (assumptions, warnings of the evaluation).

    Examples
    --------
    >>> import pandas as pd
    >>> t = pd.DataFrame({"quantity": ["bandwidth"], "value": [1.2e9], "unit": ["Hz"]})
    >>> print(Budget({"speed": t}, title="demo"))  # doctest: +NORMALIZE_WHITESPACE
    demo
    ====
    <BLANKLINE>
    speed
    -----
    quantity    value
    ----------  -------
    bandwidth   1.2 GHz
    <BLANKLINE>
    Cautions: model estimates, verify on hardware; laser eye safety (IEC 60825-1), high-voltage bias
    and ESD apply on the bench. Full text: `photorx report` or the Markdown/HTML export.
    """

    def __init__(self, tables, title: str = "Receiver budget", notes=()):
        if not isinstance(tables, dict) or not tables:
            raise DesignError("tables must be a non-empty dict of name -> pandas.DataFrame",
                              parameter="tables")
        for name, table in tables.items():
            if isinstance(table, RowTable):
                continue
            import pandas as pd

            if not isinstance(table, pd.DataFrame):
                raise DesignError(f"tables[{name!r}] must be a pandas.DataFrame, got "
                                  f"{type(table).__name__}", parameter="tables")
        self._given = {str(k): v if isinstance(v, RowTable) else v.copy()
                       for k, v in tables.items()}
        self.title = str(title)
        self.notes = (notes,) if isinstance(notes, str) else tuple(str(n) for n in notes)

    @property
    def _tables(self) -> dict:
        """The tables as DataFrames (a RowTable builds its frame here, once)."""
        for name, table in self._given.items():
            if isinstance(table, RowTable):
                self._given[name] = table.frame()
        return self._given

    # -- access ------------------------------------------------------------------------------
    @property
    def tables(self) -> dict:
        """The tables (copies, so the budget cannot be changed through them)."""
        return {k: v.copy() for k, v in self._tables.items()}

    @property
    def names(self) -> list:
        """Table names in display order."""
        return list(self._given)

    def __getitem__(self, name) -> pd.DataFrame:
        return self._tables[name].copy()

    def __iter__(self):
        return iter(self._given)

    def __len__(self) -> int:
        return len(self._given)

    def __repr__(self) -> str:
        return f"Budget(title={self.title!r}, tables={self.names})"

    def to_frame(self) -> pd.DataFrame:
        """All tables in one tidy frame with a leading ``table`` column (SI values)."""
        import pandas as pd

        frames = [t.assign(table=name)[["table"] + list(t.columns)]
                  for name, t in self._tables.items()]
        return pd.concat(frames, ignore_index=True, sort=False)

    def display_table(self, name) -> pd.DataFrame:
        """Table ``name`` as text for display: values with engineering prefixes, units merged.

        Parameters
        ----------
        name : str
            Name of the table (one of :attr:`names`); KeyError if absent.
        """
        return _display_frame(self._tables[name])

    # -- rendering ---------------------------------------------------------------------------
    def __str__(self) -> str:
        from tabulate import tabulate

        out = [self.title, "=" * len(self.title), ""]
        for name, table in self._given.items():  # the rows themselves: no frames needed
            shown = _display_columns(table)
            rows = [list(row) for row in zip(*shown.values())]
            out += [name, "-" * len(name),
                    tabulate(rows, headers=list(shown), tablefmt="simple",
                             disable_numparse=True), ""]
        import textwrap

        for n in self.notes:  # wrapped for an ordinary terminal
            out += textwrap.wrap(f"Note: {n}", width=100, subsequent_indent="      ")
        if self.notes:
            out.append("")
        out.append(cautions_short())
        return "\n".join(out).rstrip() + "\n"

    def _html_tables(self, level: int) -> str:
        parts = []
        for name in self._tables:
            parts.append(f"<h{level}>{html.escape(name)}</h{level}>")
            parts.append(_html_table(self.display_table(name)))
        if self.notes:
            parts.append("<ul class=\"notes\">" + "".join(
                f"<li>{html.escape(n)}</li>" for n in self.notes) + "</ul>")
        return "\n".join(parts) + "\n"

    def _repr_html_(self) -> str:
        short = html.escape(" ".join(cautions_short().split()))
        return (f'<div class="photorx-budget"><h3>{html.escape(self.title)}</h3>\n'
                + self._html_tables(4) + f"<p><small>{short}</small></p></div>")

    # -- exports -----------------------------------------------------------------------------
    def to_csv(self, path=None):
        """All tables as one CSV (``table`` column first, SI floats, unit column).

        Figures that do not exist (NaN, infinite) are written ``none``; read the file back
        with ``pandas.read_csv(path, na_values=["none"])``.

        Returns the text when ``path`` is None, otherwise writes it atomically and returns
        the path.

        Parameters
        ----------
        path : str, os.PathLike or None
            Destination file, written atomically; default None returns the text instead.
        """
        import pandas as pd

        # figures that do not exist read "none" here too (pandas: na_values=["none"]); a
        # column that a table does not have stays empty
        frames = []
        for name, table in self._tables.items():
            t = table.astype(object)
            for col in t.columns:
                t[col] = [NONE if _is_number(v) and not math.isfinite(float(v)) else v
                          for v in t[col].tolist()]
            frames.append(t.assign(table=name)[["table"] + list(t.columns)])
        frame = pd.concat(frames, ignore_index=True, sort=False)
        text = frame.to_csv(index=False, lineterminator="\n")
        return _emit(text, path)

    def to_json(self, path=None):
        """JSON: ``{"title", "notes", "tables": {name: [row, ...]}, "cautions"}`` with SI floats.

        Units of wide tables' columns (``attrs["units"]``) go under ``"column_units"``.

        NaN and infinities are written as ``null`` (strict JSON); every row also carries
        its ``display`` text, where a figure that does not exist reads ``"none"``.

        Parameters
        ----------
        path : str, os.PathLike or None
            Destination file, written atomically; default None returns the text instead.
        """
        tables = {}
        for name, table in self._tables.items():
            shown = _display_cells(table)
            rows = []
            for i, row in enumerate(table.to_dict(orient="records")):
                record = {str(k): _json_value(v) for k, v in row.items()}
                record.setdefault("display", shown[i])
                rows.append(record)
            tables[name] = rows
        units = {name: dict(t.attrs["units"]) for name, t in self._tables.items()
                 if t.attrs.get("units")}
        doc = {"title": self.title, "notes": list(self.notes), "tables": tables}
        if units:
            doc["column_units"] = units
        doc["cautions"] = list(CAUTIONS)
        text = json.dumps(doc, indent=2, allow_nan=False, ensure_ascii=False) + "\n"
        return _emit(text, path)

    def to_markdown(self, path=None, cautions: bool = True):
        """Markdown: title, one pipe table per budget table, notes and the cautions.

        Parameters
        ----------
        path : str, os.PathLike or None
            Destination file, written atomically; default None returns the text instead.
        cautions : bool
            Append the safety and model cautions section; default True.
        """
        out = [f"# {self.title}", ""]
        for name in self._tables:
            shown = self.display_table(name)
            out += [f"## {name}", "", shown.to_markdown(index=False, disable_numparse=True), ""]
        out += [f"- Note: {n}" for n in self.notes]
        if self.notes:
            out.append("")
        if cautions:
            out.append(cautions_markdown(2))
        return _emit("\n".join(out).rstrip() + "\n", path)

    def to_latex(self, path=None):
        """LaTeX: one ``booktabs`` tabular per table (needs ``\\usepackage{booktabs}``).

        The cautions are always appended as LaTeX comments.

        Parameters
        ----------
        path : str, os.PathLike or None
            Destination file, written atomically; default None returns the text instead.
        """
        out = [f"% {_latex_escape(self.title)} (written by photorx)"]
        for name in self._tables:
            shown = self.display_table(name)
            cols = "l" * len(shown.columns)
            out += [r"\begin{table}[htbp]", r"\centering",
                    rf"\caption{{{_latex_escape(name)}}}",
                    rf"\begin{{tabular}}{{{cols}}}", r"\toprule",
                    " & ".join(_latex_escape(c) for c in shown.columns) + r" \\", r"\midrule"]
            out += [" & ".join(_latex_escape(c) for c in row) + r" \\"
                    for row in shown.values.tolist()]
            out += [r"\bottomrule", r"\end{tabular}", r"\end{table}", ""]
        out += [f"% {line}" for line in cautions_text().splitlines()]
        return _emit("\n".join(out) + "\n", path)

    def to_html(self, path=None, cautions: bool = True):
        """A standalone HTML page with the tables, the notes and the cautions.

        Parameters
        ----------
        path : str, os.PathLike or None
            Destination file, written atomically; default None returns the text instead.
        cautions : bool
            Include the safety and model cautions section; default True.
        """
        body = (f"<h1>{html.escape(self.title)}</h1>\n" + self._html_tables(2)
                + (cautions_html(2) if cautions else ""))
        return _emit(html_page(self.title, body), path)

    def export(self, target, formats=("csv", "md", "latex", "html", "json")) -> list:
        """Write several formats at once.

        Parameters
        ----------
        target : str or path
            An existing directory (files are named ``budget.<suffix>`` inside it) or a file
            stem (``out/rx1`` gives ``out/rx1.csv``, ``out/rx1.md``...).
        formats : sequence of str
            Any of ``"csv"``, ``"md"``, ``"latex"``, ``"html"``, ``"json"``.

        Returns
        -------
        list of pathlib.Path
            The files written (each atomically).
        """
        target = Path(target)
        stem = target / "budget" if target.is_dir() else target
        written = []
        for fmt in formats:
            key = normalize_format(fmt)
            path = stem.with_name(stem.name + EXPORT_FORMATS[key])
            writer = {"csv": self.to_csv, "md": self.to_markdown, "latex": self.to_latex,
                      "html": self.to_html, "json": self.to_json}[key]
            written.append(writer(path))
        return written


def normalize_format(fmt: str) -> str:
    """Canonical export format name (``"markdown"`` -> ``"md"``); DesignError if unknown."""
    key = _ALIASES.get(str(fmt).lower(), str(fmt).lower())
    if key not in EXPORT_FORMATS:
        raise DesignError(f"format = {fmt!r} is not known; valid: {', '.join(EXPORT_FORMATS)}",
                          parameter="format")
    return key


def html_page(title: str, body: str) -> str:
    """A complete, self-contained HTML document around ``body``."""
    return ("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
            f"<title>{html.escape(title)}</title>\n<style>{_CSS}</style>\n</head>\n<body>\n"
            f"{body}</body>\n</html>\n")


# -- helpers ---------------------------------------------------------------------------------
def _emit(text: str, path):
    if path is None:
        return text
    return atomic_write_text(path, text)


def _display_cells(table) -> list:
    """The formatted value of each row of a long-form table ("" when there is no value)."""
    n = len(table)
    if "value" not in table.columns:
        return [""] * n
    units = _column(table, "unit") if "unit" in table.columns else [""] * n
    names = _column(table, "quantity") if "quantity" in table.columns else [""] * n
    cells = [_wavelength_text(v) if u == "m" and "wavelength" in str(q) and _is_number(v)
             else display_value(v, u)
             for v, u, q in zip(_column(table, "value"), list(units), names)]
    if "display" in table.columns:
        cells = [d if isinstance(d, str) and d else c
                 for d, c in zip(_column(table, "display"), cells)]
    return cells


def _missing(value) -> bool:
    """True for a limit that is not set (None or NaN)."""
    return value is None or (_is_number(value) and math.isnan(float(value)))


def _display_frame(table) -> pd.DataFrame:
    import pandas as pd

    shown = pd.DataFrame(index=range(len(table)))
    for name, cells in _display_columns(table).items():
        shown[name] = cells
    return shown


def _display_columns(table) -> dict:
    """Shown column name -> its cells (text), in order, of a DataFrame or a RowTable."""
    units = dict(table.attrs.get("units", {}))
    shown = {}
    for col in table.columns:
        if col in ("unit", "display"):
            continue
        if col == "value":
            shown["value"] = _display_cells(table)
        elif col == "limit" and "unit" in table.columns:  # a limit has the row's unit
            shown["limit"] = [NONE if _missing(v) else display_value(v, u)
                              for v, u in zip(_column(table, "limit"), _column(table, "unit"))]
        else:
            name, unit = str(col), units.get(col)
            match = _HEADER_UNIT.fullmatch(name)
            if unit is None and match:  # "output rms [V]": the unit is in the header
                name, unit = match.group(1), match.group(2)
            spot = table.attrs.get("f [Hz]")
            if name == "input density" and _is_number(spot):  # a spot density: say where
                name = f"input density at {format_eng(float(spot), 'Hz')}"
            shown[name] = [display_value(v, unit or "") for v in _column(table, col)]
    return shown


_HEADER_UNIT = re.compile(r"(.*\S)\s*\[([^\[\]]+)\]")
#: A cell that is a number, optionally with one unit word ("1.2 GHz", "-3 dB", "62.5 deg"):
#: right-aligned. Text that merely starts with a digit ("-3 dB bandwidth", "10-90 % rise
#: time") stays left-aligned.
_NUMERIC_CELL = re.compile(r"^([<>] )?[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?( [^\s\d][^\s]*)?$")


def _html_table(shown) -> str:
    # a header sits over its cells: right-aligned over a column of numbers
    numeric = [sum(bool(_NUMERIC_CELL.match(c)) for c in shown[col]) * 2 > len(shown)
               for col in shown.columns]
    head = "".join(f'<th class="num">{html.escape(str(c))}</th>' if num
                   else f"<th>{html.escape(str(c))}</th>" for c, num in zip(shown.columns, numeric))
    rows = []
    for row in shown.values.tolist():
        cells = "".join(
            f'<td class="num">{html.escape(c)}</td>' if _NUMERIC_CELL.match(c)
            else f"<td>{html.escape(c)}</td>" for c in row)
        rows.append(f"<tr>{cells}</tr>")
    return (f'<table class="photorx-budget">\n<thead><tr>{head}</tr></thead>\n<tbody>\n'
            + "\n".join(rows) + "\n</tbody>\n</table>")


def _json_value(v):
    if isinstance(v, (bool, np.bool_)):
        return bool(v)
    if _is_number(v):
        f = float(v)
        return f if math.isfinite(f) else None
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return None
    return str(v)


_LATEX_SPECIAL = {"\\": r"\textbackslash{}", "&": r"\&", "%": r"\%", "$": r"\$", "#": r"\#",
                  "_": r"\_", "{": r"\{", "}": r"\}", "~": r"\textasciitilde{}",
                  "^": r"\textasciicircum{}"}


def _latex_escape(text) -> str:
    return "".join(_LATEX_SPECIAL.get(ch, ch) for ch in str(text))
