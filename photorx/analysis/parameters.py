"""Finding and replacing a design parameter anywhere in a receiver's object tree.

A receiver is a tree of frozen dataclasses (receiver -> tia -> amp, receiver ->
photodiode -> junction -> material). Sweeps and the optimiser name parameters by their
field name (``rf``, ``area``) or by a dotted path (``photodiode.junction.area``); this
module resolves a name to its path and builds a new tree with the value replaced.
Values may be arrays: every dataclass validates and broadcasts them, which is how a sweep
evaluates a whole grid in one call.
"""

from __future__ import annotations

import dataclasses

from ..errors import DesignError

__all__ = ["parameter_paths", "resolve_parameter", "get_parameter", "with_parameters",
           "with_trailing_axis"]

# Breadth-first search order: the receiver's own fields win over same-named deeper ones
# (the receiver's temperature is the operating temperature of every part).
_SKIP = {"material", "sources"}


def parameter_paths(obj, prefix: str = "") -> dict[str, str]:
    """Map every numeric leaf field of ``obj``'s dataclass tree to its dotted path.

    Shallower fields shadow deeper ones of the same name; the dotted path always works.
    Material and source tables (fields ``material``, ``sources``) are not searched.

    Parameters
    ----------
    obj : dataclass instance
        Root of the tree, usually a :class:`~photorx.analysis.receiver.Receiver`.
    prefix : str, optional
        Dotted path of ``obj`` itself, put in front of every path (default ``""``, the
        root).

    Returns
    -------
    dict of str to str
        Field name -> dotted path (e.g. ``"area"`` -> ``"photodiode.junction.area"``).
    """
    found: dict[str, str] = {}
    level = [(prefix, obj)]
    while level:
        nxt = []
        for path, node in level:
            for fld in dataclasses.fields(node):
                if fld.name in _SKIP:
                    continue
                value = getattr(node, fld.name)
                dotted = f"{path}.{fld.name}" if path else fld.name
                if dataclasses.is_dataclass(value):
                    nxt.append((dotted, value))
                elif _is_number(value) and fld.name not in found:
                    found[fld.name] = dotted
        level = nxt
    return found


def resolve_parameter(obj, name: str) -> str:
    """Dotted path of the parameter called ``name`` (a field name or a dotted path).

    Parameters
    ----------
    obj : dataclass instance
        Root of the tree, usually a :class:`~photorx.analysis.receiver.Receiver`.
    name : str
        A numeric field name found by :func:`parameter_paths` (``"rf"``) or a dotted path
        (``"tia.rf"``).

    Returns
    -------
    str
        The dotted path.

    Raises
    ------
    DesignError
        No such parameter; the message lists the known names.
    """
    if "." in name:
        get_parameter(obj, name)  # raises if absent
        return name
    paths = parameter_paths(obj)
    if name not in paths:
        raise DesignError(
            f"unknown design parameter {name!r}; known: {', '.join(sorted(paths))}",
            parameter=name)
    return paths[name]


def get_parameter(obj, path: str):
    """Value at a dotted path.

    Parameters
    ----------
    obj : dataclass instance
        Root of the tree.
    path : str
        Dotted path of field names from ``obj`` (``"photodiode.junction.area"``).

    Returns
    -------
    object
        The field's value (a number, an array or a nested dataclass).

    Raises
    ------
    DesignError
        A part of the path is not a field of the dataclass reached so far.
    """
    node = obj
    for part in path.split("."):
        if not dataclasses.is_dataclass(node) or part not in {f.name for f in dataclasses.fields(node)}:
            raise DesignError(f"unknown design parameter path {path!r} (no field {part!r})",
                              parameter=path)
        node = getattr(node, part)
    return node


def with_parameters(obj, **values):
    """Copy of ``obj`` with each named parameter replaced (names or dotted paths via ``__``).

    Parameters
    ----------
    obj : dataclass
        Root of the tree, usually a :class:`~photorx.analysis.receiver.Receiver`.
    **values
        ``name=value``; a dotted path can be written with double underscores
        (``photodiode__junction__area=...``). Values may be numpy arrays, in SI units.
        An unknown name raises :class:`~photorx.errors.DesignError` listing the known
        ones.

    Returns
    -------
    dataclass instance
        A new tree; each dataclass on the way is rebuilt, so its checks run again.
    """
    out = obj
    for key, value in values.items():
        path = resolve_parameter(out, key.replace("__", "."))
        out = _replace_path(out, path.split("."), value)
    return out


def _replace_path(node, parts, value):
    head = parts[0]
    if len(parts) == 1:
        return dataclasses.replace(node, **{head: value})
    return dataclasses.replace(node, **{head: _replace_path(getattr(node, head), parts[1:], value)})


def _is_number(value) -> bool:
    import numpy as np

    if isinstance(value, bool) or value is None:
        return False
    try:
        arr = np.asarray(value)
    except Exception:  # pragma: no cover
        return False
    return arr.dtype.kind in "fiu"


def with_trailing_axis(obj, shape):
    """Copy of a dataclass tree with every design-point array (of exactly ``shape``) given a
    trailing axis, ``value[..., None]``, so that the tree broadcasts against a frequency grid
    of shape ``shape + (n,)``. Scalars and other arrays (tables) are left alone.

    Parameters
    ----------
    obj : dataclass instance
        Root of the tree.
    shape : tuple of int
        Shape of the design points; ``()`` returns ``obj`` unchanged.

    Returns
    -------
    dataclass instance
        ``obj`` itself when nothing changed, else a rebuilt copy.
    """
    import numpy as np

    if not shape:
        return obj
    changes = {}
    for fld in dataclasses.fields(obj):
        if fld.name in _SKIP:
            continue
        value = getattr(obj, fld.name)
        if dataclasses.is_dataclass(value) and not isinstance(value, type):
            new = with_trailing_axis(value, shape)
            if new is not value:
                changes[fld.name] = new
        elif isinstance(value, np.ndarray) and value.shape == tuple(shape):
            changes[fld.name] = value[..., None]
    return dataclasses.replace(obj, **changes) if changes else obj
