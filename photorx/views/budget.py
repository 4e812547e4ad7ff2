"""Assemble a receiver's budget tables from its evaluated figures (no physics here).

A view of the one evaluation (:class:`~photorx.analysis.result.ReceiverResult`): the rows
follow the :data:`~photorx.analysis.result.FIGURES` table, the checks come from
:func:`~photorx.analysis.checks.receiver_checks` and the noise by source from the same
result (the noise is integrated once). :meth:`photorx.Receiver.budget` hands its design
here.
"""

from __future__ import annotations

import numpy as np

from ..errors import DesignError
from ..analysis.checks import CHECK_COLUMNS, check_rows, checks_frame
from ..analysis.result import _TABLE_ORDER, APD_FIGURES, BER_FIGURES, FIGURES
from ..circuit.noise import SOURCE_LABELS

__all__ = ["receiver_budget", "checks_table"]


def checks_table(checks):
    """The checks of :meth:`Receiver.checks` as a budget table: the same rows, and a check
    without its limit says so instead of passing.

    Parameters
    ----------
    checks : pandas.DataFrame
        The table of :func:`photorx.analysis.checks.receiver_checks`.
    """
    table = checks.copy()
    unset = [not isinstance(value, (bool, np.bool_)) and (limit is None or limit != limit)
             for limit, value in zip(checks["limit"], checks["value"])]  # limit != limit: NaN
    table["ok"] = ["no limit set" if u else bool(ok) for u, ok in zip(unset, checks["ok"])]
    table["limit"] = [None if u or limit != limit else limit
                      for u, limit in zip(unset, checks["limit"].tolist())]
    return table


def _checks_table_rows(rows) -> list:
    """:func:`checks_table` on the rows of :func:`~photorx.analysis.checks.check_rows`."""
    out = []
    for row in rows:
        limit, value = row["limit"], row["value"]
        unset = not isinstance(value, (bool, np.bool_)) and (limit is None or limit != limit)
        out.append({**row, "ok": "no limit set" if unset else bool(row["ok"]),
                    "limit": None if unset or limit != limit else limit})
    return out


def receiver_budget(rx, title: str | None = None, result=None):
    """Budget of one receiver design: operating point, speed, stability, noise, sensitivity, checks.

    Parameters
    ----------
    rx : Receiver
        A design whose fields are scalars (use :func:`photorx.sweep` for many points).
    title : str, optional
        Title of the budget.
    result : ReceiverResult, optional
        ``rx.evaluate()``, when the caller has it already (computed when not given).

    Returns
    -------
    photorx.views.tables.Budget
    """
    from ..circuit.noise_spectrum import source_rows, source_table
    from .tables import Budget, RowTable

    result = rx.evaluate() if result is None else result
    if result.size != 1:
        raise DesignError("budget() needs a single design point; use photorx.sweep() for arrays",
                          parameter="receiver")
    values = result.to_dict()
    values["dominant_noise_source"] = SOURCE_LABELS.get(values["dominant_noise_source"],
                                                        values["dominant_noise_source"])
    digital = rx.bit_rate is not None  # an analog design shows analog figures only
    # the gain rows only for a diode that multiplies (a PIN's are 1, 1 and "does not apply")
    hidden = set() if callable(getattr(rx.photodiode, "multiplication", None)) else set(APD_FIGURES)
    # every table goes to the Budget as its rows and makes its pandas frame only when asked
    # (the text of `photorx budget` needs no frame)
    tables = {}
    for table in _TABLE_ORDER:
        if table == "checks":
            checks, names = check_rows(rx, result)
            tables[table] = RowTable(
                CHECK_COLUMNS, _checks_table_rows(checks), attrs={"names": names},
                frame=lambda checks=checks, names=names: checks_table(checks_frame(checks, names)))
            continue
        rows = [dict(quantity=desc, value=values[name], unit=unit)
                for name, (unit, tab, desc) in FIGURES.items() if tab == table and name in values
                and (digital or name not in BER_FIGURES) and name not in hidden]
        tables[table] = RowTable(["quantity", "value", "unit"], rows,
                                 frame=lambda rows=rows: _long_frame(rows))
        if table == "noise":
            # read from the same evaluation: the noise is integrated once
            parts = result._noise_table_arguments(rx.noise_band_low)
            sources, attrs = source_rows(**parts)
            tables["noise by source"] = RowTable(
                list(next(iter(sources.values()))), list(sources.values()),
                attrs=attrs, frame=lambda parts=parts: source_table(**parts)) \
                if sources else source_table(**parts)
    notes = list(result.warnings)
    notes.append("Noise integrated over the closed-loop response (times the post filter) from "
                 f"{rx.noise_band_low:g} Hz to where the integral converges; input-referred values "
                 "divide by the DC transimpedance.")
    return Budget(tables, title=title or "Receiver budget", notes=notes)


def _long_frame(rows):
    """A long-form budget table (quantity, value, unit) as a pandas.DataFrame."""
    import pandas as pd

    return pd.DataFrame(rows, columns=["quantity", "value", "unit"])

