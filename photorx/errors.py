"""Errors and warnings raised by photorx.

Every check of user input raises :class:`DesignError`, whose message names the
parameter, the offending value with its unit, and the valid range, so that a
designer can fix the input without reading the source.
"""

from __future__ import annotations

__all__ = ["DesignError", "PhotorxWarning", "ModelRangeWarning"]


class DesignError(ValueError):
    """A design parameter is outside the range where photorx's models hold.

    Parameters
    ----------
    message : str
        Full message. Prefer :meth:`out_of_range` which composes a uniform one.
    parameter : str, optional
        Name of the offending parameter (as the user wrote it).
    """

    def __init__(self, message: str, parameter: str | None = None):
        super().__init__(message)
        self.parameter = parameter

    @classmethod
    def out_of_range(cls, parameter: str, value, unit: str, valid: str) -> "DesignError":
        """Build the standard message: ``parameter = value unit; valid range: valid``.

        Parameters
        ----------
        parameter : str
            Name of the parameter.
        value : float or array_like
            The offending value (arrays are summarised by their worst element).
        unit : str
            Unit of ``value`` as written for display, e.g. ``"V"``, ``"m^-3"``.
            Use ``""`` for dimensionless quantities.
        valid : str
            Human-readable valid range, e.g. ``"> 0"`` or ``"0 to 0.9*Vbi"``.
        """
        unit_text = f" {unit}" if unit else ""
        return cls(f"{parameter} = {_describe(value)}{unit_text} is invalid; valid range: {valid}",
                   parameter=parameter)


class PhotorxWarning(UserWarning):
    """Base class of photorx warnings."""


class ModelRangeWarning(PhotorxWarning):
    """A model is used near the edge of its validity range (result still returned)."""


def _describe(value) -> str:
    try:
        import numpy as np

        arr = np.asarray(value)
        if arr.ndim == 0:
            return f"{arr.item():.6g}" if np.issubdtype(arr.dtype, np.number) else str(arr.item())
        return f"array (shape {arr.shape}, e.g. {arr.ravel()[0]:.6g})"
    except Exception:  # pragma: no cover - display only
        return repr(value)
