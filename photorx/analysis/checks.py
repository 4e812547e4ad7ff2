"""Checks of a receiver design against its limits: one row per check, value against limit.

Pure bookkeeping, no physics: every value is a figure the evaluation already computed
(:data:`~photorx.analysis.receiver.FIGURES`), every limit is a field of the
:class:`~photorx.analysis.receiver.Receiver` (set in the design file's ``[limits]``
section) or another figure (the breakdown estimate, the amplifier's output swing). The same
table of checks feeds :meth:`Receiver.checks`, the budget's checks table, the command
line's warnings and the optimiser, which treats every limit a design sets as a constraint
(:func:`design_constraints`), so a limit is never only a line in a later budget.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import DesignError

__all__ = ["Check", "CHECKS", "CHECK_COLUMNS", "receiver_checks", "check_rows", "checks_frame",
           "design_constraints", "failed_checks", "check_warning"]

#: Columns of the checks table.
CHECK_COLUMNS = ["check", "value", "limit", "unit", "ok"]


@dataclass(frozen=True)
class Check:
    """One check: a figure compared with a limit.

    Parameters
    ----------
    name : str
        Short identifier (``"phase_margin"``).
    words : str
        What is checked, in words (the ``check`` column).
    figure : str
        The receiver figure compared (its unit is the row's unit).
    relation : {">=", "<=", "<", "=="}
        How the figure must stand to the limit; ``"=="`` marks a flag figure that must be
        true (no limit).
    unit : str
        SI unit of value and limit.
    limit_field : str, optional
        Receiver field holding the limit (None there means no limit is set); default None.
    limit_figure : str, optional
        Receiver figure holding the limit (for limits that follow the design point);
        default None.
    factor : float
        The limit is ``factor`` times the field (0.7 x bit rate); default 1.0.
    absolute : bool
        Compare ``|figure|`` (a dark current is negative in forward bias); default False.
    digital_only : bool
        Only for a receiver with a bit rate; default False.
    """

    name: str
    words: str
    figure: str
    relation: str
    unit: str
    limit_field: str | None = None
    limit_figure: str | None = None
    factor: float = 1.0
    absolute: bool = False
    digital_only: bool = False


#: Every check, in table order.
CHECKS = (
    Check("stable", "closed loop stable", "stable", "==", ""),
    # common practice: phase margin >= 45 deg and peaking <= 3 dB (the Receiver defaults)
    Check("phase_margin", "phase margin at least its limit", "phase_margin", ">=", "deg",
          limit_field="min_phase_margin"),
    Check("peaking", "closed-loop peaking within its limit", "peaking_db", "<=", "dB",
          limit_field="max_peaking"),
    Check("overshoot", "step overshoot (fraction) within its limit", "overshoot", "<=", "",
          limit_field="max_overshoot"),
    # the DC level (average photocurrent) must fit first; the one level of NRZ (or the analog
    # crest) must fit too, or the peaks clip (common practice)
    Check("average_output", "output at the average photocurrent within the output swing "
          "(DC level)", "average_output", "<=", "V", limit_figure="output_swing"),
    Check("output_swing", "output at the largest photocurrent within the output swing "
          "(no clipping)", "peak_output", "<=", "V", limit_figure="output_swing"),
    Check("breakdown", "reverse bias below the breakdown estimate", "reverse_bias", "<", "V",
          limit_figure="breakdown_voltage"),
    Check("max_bias", "reverse bias within the supply limit", "reverse_bias", "<=", "V",
          limit_field="max_bias"),
    Check("dark_current", "dark current within its limit", "dark_current", "<=", "A",
          limit_field="max_dark_current", absolute=True),
    Check("bias_power", "bias-supply power (bias x diode current) within its limit",
          "bias_power", "<=", "W", limit_field="max_bias_power"),
    # NRZ rule of thumb: bandwidth of about 0.7 x bit rate (common practice; Agrawal,
    # Fiber-Optic Communication Systems, 4th ed., 2010, sec. 4.3)
    Check("bit_rate", "bandwidth for the bit rate (>= 0.7 x bit rate, NRZ)", "bandwidth", ">=",
          "Hz", limit_field="bit_rate", factor=0.7, digital_only=True),
)


def _limit(check: Check, rx, values: dict):
    """The check's limit for a scalar design, or None when the design sets none."""
    if check.limit_figure is not None:
        limit = float(np.asarray(values[check.limit_figure], dtype=float))
        return limit if np.isfinite(limit) else None  # no breakdown estimate: no limit
    if check.limit_field is None:
        return None
    given = getattr(rx, check.limit_field)
    return None if given is None else check.factor * float(given)


def _passes(relation: str, value, limit) -> bool:
    if relation == ">=":
        return bool(value >= limit)
    if relation == "<=":
        return bool(value <= limit)
    return bool(value < limit)


def receiver_checks(rx, result=None):
    """Every check of one design: ``check``, ``value``, ``limit``, ``unit``, ``ok``.

    Parameters
    ----------
    rx : Receiver
        A design with scalar fields (its limits are read from it).
    result : ReceiverResult, optional
        Its evaluation (computed when not given).

    Returns
    -------
    pandas.DataFrame
        One row per check of :data:`CHECKS`: ``value`` and ``limit`` in SI units (``limit``
        is None where the design sets no limit; such a row is ``ok``), ``ok`` a bool. The
        bit-rate check appears only for a design with a bit rate. ``df.attrs["names"]``
        lists the checks' identifiers.

    Notes
    -----
    A loop without a gain crossover has no phase margin to fail; an unstable loop fails
    the phase-margin, peaking and overshoot checks whatever its numbers.
    """
    rows, names = check_rows(rx, result)
    return checks_frame(rows, names)


def check_rows(rx, result=None) -> tuple:
    """The rows of :func:`receiver_checks` as plain dicts, and the checks' identifiers.

    Parameters
    ----------
    rx : Receiver
        A design with scalar fields.
    result : ReceiverResult, optional
        Its evaluation (computed when not given).

    Returns
    -------
    tuple of (list of dict, list of str)
        One dict per check (keys :data:`CHECK_COLUMNS`) and the names of the checks.
    """
    result = rx.evaluate() if result is None else result
    if result.size != 1:
        raise DesignError("checks() needs a single design point; use photorx.sweep() for arrays",
                          parameter="receiver")
    values = result.values
    stable = bool(np.asarray(values["stable"]))
    rows, names = [], []
    for check in CHECKS:
        if check.digital_only and getattr(rx, check.limit_field) is None:
            continue  # an analog design shows analog figures only
        raw = np.asarray(values[check.figure]).item()
        if check.relation == "==":
            rows.append(dict(check=check.words, value=bool(raw), limit=True, unit=check.unit,
                             ok=bool(raw)))
            names.append(check.name)
            continue
        value = abs(float(raw)) if check.absolute else float(raw)
        limit = _limit(check, rx, values)
        if limit is None:
            ok = True
        elif check.name in ("phase_margin", "peaking", "overshoot") and not stable:
            ok = False
        elif check.name == "phase_margin" and not np.isfinite(value):
            ok = True  # no gain crossover: nothing to fail
        else:
            ok = _passes(check.relation, value, limit)
        rows.append(dict(check=check.words, value=value, limit=limit, unit=check.unit, ok=ok))
        names.append(check.name)
    return rows, names


def checks_frame(rows, names):
    """The table of :func:`receiver_checks` from its rows and names (:func:`check_rows`).

    Parameters
    ----------
    rows : list of dict
        One dict per check (keys :data:`CHECK_COLUMNS`).
    names : list of str
        The checks' identifiers (``attrs["names"]``).
    """
    import pandas as pd  # imported where used: the command line starts faster

    frame = pd.DataFrame(rows, columns=CHECK_COLUMNS)
    frame["ok"] = frame["ok"].astype(bool)
    frame.attrs["names"] = names
    return frame




def failed_checks(frame):
    """The rows of a :func:`receiver_checks` table that fail.

    Parameters
    ----------
    frame : pandas.DataFrame
        A table of :func:`receiver_checks`.
    """
    return frame[~frame["ok"].astype(bool)]


def check_warning(row) -> str:
    """One line for a failed check: what, the value and the limit, with units.

    Parameters
    ----------
    row : pandas.Series or dict
        A row of a :func:`receiver_checks` table (or of :func:`check_rows`).
    """
    from ..units import display_value

    if isinstance(row["value"], (bool, np.bool_)):
        return f"{row['check']}: no"
    value = display_value(row["value"], row["unit"])
    if row["limit"] is None or (isinstance(row["limit"], float) and np.isnan(row["limit"])):
        return f"{row['check']}: no ({value})"
    return f"{row['check']}: no, {value} against a limit of {display_value(row['limit'], row['unit'])}"


def design_constraints(rx) -> list:
    """The limits a design sets, as optimiser constraints.

    Parameters
    ----------
    rx : Receiver
        The design (its limit fields are read; array-valued designs are fine).

    Returns
    -------
    list of dict
        One per check with a limit: ``name``, ``figure``, ``relation`` (``">="`` or
        ``"<="``; the strict breakdown check counts as ``"<="``), ``limit`` (a float, or the
        name of the figure holding it), ``absolute``. Stability is not listed: the
        optimiser always requires a stable loop.
    """
    out = []
    for check in CHECKS:
        if check.relation == "==":
            continue
        if check.limit_figure is not None:
            limit = check.limit_figure
        else:
            given = getattr(rx, check.limit_field)
            if given is None:
                continue
            limit = check.factor * float(given)
        out.append(dict(name=check.name, figure=check.figure,
                        relation=">=" if check.relation == ">=" else "<=",
                        limit=limit, absolute=check.absolute))
    return out
