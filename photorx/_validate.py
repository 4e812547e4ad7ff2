"""Input checks shared by every model; each raises :class:`~photorx.errors.DesignError`.

The functions return the value as a float or a float ndarray so that callers can write
``w = require_positive("area", area, "m^2")`` and go on with a clean array.
"""

from __future__ import annotations

import math

import numpy as np

from .errors import DesignError

__all__ = [
    "as_float_array",
    "require_finite",
    "require_positive",
    "require_nonnegative",
    "require_in_range",
    "require_below",
]


def as_float_array(name: str, value, unit: str = ""):
    """Return ``value`` as float (scalar in, scalar out) or float ndarray; reject non-numbers."""
    if type(value) is float:  # the common case, without an array round trip
        return value
    try:
        arr = np.asarray(value, dtype=float)
    except (TypeError, ValueError):
        raise DesignError(f"{name} = {value!r} is not a number{' in ' + unit if unit else ''}",
                          parameter=name) from None
    return arr if arr.ndim else float(arr)


def require_finite(name: str, value, unit: str = ""):
    """Reject NaN and infinities."""
    arr = as_float_array(name, value, unit)
    # fast paths: these checks run hundreds of times per receiver evaluation
    if type(arr) is float:
        if math.isfinite(arr):
            return arr
    elif np.isfinite(arr).all():
        return arr
    bad = ~np.isfinite(arr)
    if np.any(bad):
        raise DesignError.out_of_range(name, np.asarray(arr)[bad] if np.ndim(arr) else arr, unit,
                                       "finite numbers")
    return arr


def require_positive(name: str, value, unit: str = ""):
    """Require ``value > 0`` (and finite)."""
    arr = require_finite(name, value, unit)
    if (arr > 0) if type(arr) is float else (arr > 0).all():
        return arr
    bad = np.asarray(arr) <= 0
    if np.any(bad):
        raise DesignError.out_of_range(name, _first(arr, bad), unit, "> 0")
    return arr


def require_nonnegative(name: str, value, unit: str = ""):
    """Require ``value >= 0`` (and finite)."""
    arr = require_finite(name, value, unit)
    if (arr >= 0) if type(arr) is float else (arr >= 0).all():
        return arr
    bad = np.asarray(arr) < 0
    if np.any(bad):
        raise DesignError.out_of_range(name, _first(arr, bad), unit, ">= 0")
    return arr


def require_in_range(name: str, value, unit: str, low=-np.inf, high=np.inf,
                     low_inclusive: bool = True, high_inclusive: bool = True):
    """Require ``low <= value <= high`` (inclusiveness configurable)."""
    arr = require_finite(name, value, unit)
    a = np.asarray(arr)
    bad = (a < low) if low_inclusive else (a <= low)
    bad = bad | ((a > high) if high_inclusive else (a >= high))
    if np.any(bad):
        lo = "[" if low_inclusive else "("
        hi = "]" if high_inclusive else ")"
        raise DesignError.out_of_range(name, _first(arr, bad), unit, f"{lo}{low:g}, {high:g}{hi}")
    return arr


def require_below(name: str, value, unit: str, limit, what: str):
    """Require ``value < limit`` where ``limit`` may itself be an array; ``what`` names the limit."""
    arr = require_finite(name, value, unit)
    a, lim = np.broadcast_arrays(np.asarray(arr), np.asarray(limit, dtype=float))
    bad = a >= lim
    if np.any(bad):
        raise DesignError.out_of_range(name, a[bad][0], unit,
                                       f"< {what} ({lim[bad][0]:.4g} {unit})".strip())
    return arr


def _first(arr, bad):
    a = np.asarray(arr)
    return a[np.asarray(bad)][0] if a.ndim else float(a)
