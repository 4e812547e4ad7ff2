"""Blocks of design rows: a stage whose working set grows with designs x samples (the eye
figures hold several complex arrays of designs x harmonics) runs over a sweep chunk a few
rows at a time, with the same values.

The design parameters of an evaluation are arrays of the design shape with a trailing
frequency axis (``p[..., None]``); a block takes rows of the ones that have the full
design axis and passes the rest (scalars, broadcast axes of length 1) unchanged. Every
operation of the blocked stages is elementwise along the design axis or works on one row
(an FFT along the last axis), so a row computed in a block is the row computed with the
whole chunk, bit for bit, for blocks of :data:`MIN_BLOCK` rows or more. Only 1-D design
shapes (sweep chunks) are blocked.
"""

from __future__ import annotations

import numpy as np

__all__ = ["BLOCK", "MIN_BLOCK", "design_blocks", "design_rows", "rows_memo", "rows_shape"]

#: Designs per block: the eye figures hold about 95 kB per design at once (complex
#: transfer functions at 1,017 harmonics, real waveforms of 2,032 samples), so 128 rows keep
#: them near 12 MB; below about 64 rows the per-block Python overhead starts to show.
BLOCK = 128
#: Fewest rows per block: with fewer, numpy's loops over the designs x harmonics arrays take
#: other paths and the eye figures can differ from the whole chunk's in the last bits
#: (measured: blocks of 16 rows differ by up to 3e-13 relative, 32 and more never did).
MIN_BLOCK = 32


def design_blocks(shape, block=None) -> list:
    """Row slices covering a 1-D design shape ``(N,)`` in blocks of ``block`` rows.

    Parameters
    ----------
    shape : tuple of int
        The design shape of the evaluation.
    block : int, optional
        Rows per block; default :data:`BLOCK`, at least :data:`MIN_BLOCK`.

    Returns
    -------
    list
        ``[None]`` (everything at once) for a shape that is not 1-D or has fewer than
        ``2 block`` rows, else one ``slice`` per block: ``block`` rows each from row 0, the
        last one with the rest (``block`` to ``2 block - 1`` rows).

    Notes
    -----
    The blocks start at multiples of ``block`` and none is smaller than ``block`` (nor than
    :data:`MIN_BLOCK`): numpy's loops then treat every block's rows as they treat the whole
    chunk's, bit for bit (checked on every demo design, tests/analysis/test_design_blocks.py);
    a block of a few rows takes other code paths and can differ in the last bit.
    """
    block = max(MIN_BLOCK, BLOCK if block is None else int(block))
    if len(shape) != 1 or shape[0] < 2 * block:
        return [None]
    starts = list(range(0, shape[0], block))
    if shape[0] - starts[-1] < block:  # the rest joins the block before it: no small blocks
        starts.pop()
    return [slice(start, start + block) for start in starts[:-1]] + [slice(starts[-1], None)]


def design_rows(tree, shape, rows):
    """``tree`` (an array, or a dict / tuple / list of them) restricted to design rows ``rows``.

    Parameters
    ----------
    tree : array_like or dict or tuple or list
        Values of the design shape with one trailing axis, ``shape + (k,)``; anything else
        (scalars, strings, arrays whose design axis is broadcast) is returned unchanged.
    shape : tuple of int
        The 1-D design shape ``(N,)``.
    rows : slice or None
        The rows; None returns ``tree`` itself.
    """
    if rows is None:
        return tree
    if isinstance(tree, dict):
        return {name: design_rows(value, shape, rows) for name, value in tree.items()}
    if isinstance(tree, (tuple, list)):
        return type(tree)(design_rows(value, shape, rows) for value in tree)
    if isinstance(tree, np.ndarray) and tree.ndim == len(shape) + 1 and tree.shape[0] == shape[0]:
        return tree[rows]
    return tree


def rows_shape(shape, rows) -> tuple:
    """The design shape of the rows ``rows`` of ``shape`` (``shape`` itself for None).

    Parameters
    ----------
    shape : tuple of int
        The design shape.
    rows : slice or None
        The rows of a 1-D shape.
    """
    if rows is None:
        return tuple(shape)
    return (len(range(shape[0])[rows]),)


def rows_memo(response):
    """``response(f)`` remembered per frequency grid, so that every block takes its rows from
    one evaluation over all designs (the photodiode model is computed once per grid).

    Parameters
    ----------
    response : callable or None
        ``f -> array`` of the design shape plus ``f.shape``; None is returned as it is.
    """
    if response is None:
        return None
    memo = {}

    def remembered(f):
        f = np.asarray(f)
        key = (f.shape, f.dtype.str, f.tobytes())
        if key not in memo:
            memo[key] = response(f)
        return memo[key]
    return remembered
