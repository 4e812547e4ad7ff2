"""Assemble a receiver's budget tables from its evaluated figures (no physics here)."""

from __future__ import annotations

from ..errors import DesignError
from .noise import SOURCE_LABELS
from .result import _TABLE_ORDER, FIGURES

__all__ = ["receiver_budget"]


def receiver_budget(rx, title: str | None = None):
    """Budget of one receiver design: operating point, speed, stability, noise, sensitivity, checks.

    Parameters
    ----------
    rx : Receiver
        A design whose fields are scalars (use :func:`photorx.sweep` for many points).
    title : str, optional
        Title of the budget.

    Returns
    -------
    photorx.views.tables.Budget
    """
    import pandas as pd

    from ..views.tables import Budget

    result = rx.evaluate()
    if result.size != 1:
        raise DesignError("budget() needs a single design point; use photorx.sweep() for arrays",
                          parameter="receiver")
    values = result.to_dict()
    values["dominant_noise_source"] = SOURCE_LABELS.get(values["dominant_noise_source"],
                                                        values["dominant_noise_source"])
    # A check without its limit is not a pass: say so instead of "yes".
    for name, given in (("bias_within_limit", rx.max_bias), ("dark_current_within_limit", rx.max_dark_current),
                        ("bias_power_within_limit", rx.max_bias_power),
                        ("bandwidth_for_bit_rate", rx.bit_rate)):
        if given is None:
            values[name] = "no limit set" if name != "bandwidth_for_bit_rate" else "no bit rate set"
    tables = {}
    for table in _TABLE_ORDER:
        rows = [dict(quantity=desc, value=values[name], unit=unit)
                for name, (unit, tab, desc) in FIGURES.items() if tab == table and name in values]
        tables[table] = pd.DataFrame(rows, columns=["quantity", "value", "unit"])
        if table == "noise":
            # read from the same evaluation: the noise is integrated once
            tables["noise by source"] = result.noise_table(rx.noise_band_low)
    notes = list(result.warnings)
    notes.append("Noise integrated over the closed-loop response (times the post filter) from "
                 f"{rx.noise_band_low:g} Hz to where the integral converges; input-referred values "
                 "divide by the DC transimpedance.")
    return Budget(tables, title=title or "Receiver budget", notes=notes)

