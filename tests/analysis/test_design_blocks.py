"""Blocks of design rows (analysis/design_blocks.py): the eye figures of evaluate() computed a
few rows at a time are the figures computed with the whole chunk, bit for bit.

The reference is the unblocked evaluation itself (block larger than the chunk): the blocks
only bound memory, so any difference, even in the last bit, is a defect (common practice
for a pure memory optimisation).
"""

from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import photorx as prx
from photorx.analysis import design_blocks
from photorx.analysis.digital import DIGITAL_FIGURES
from photorx.analysis.parameters import with_parameters

DESIGNS = Path(prx.__file__).parent / "designs"


def _figures(rx, axes):
    values = with_parameters(rx, **axes).evaluate().values
    return {name: np.asarray(values[name]) for name in DIGITAL_FIGURES}


def _same_bits(a, b):
    return a.shape == b.shape and np.array_equal(a.view(np.uint64), b.view(np.uint64))


@pytest.fixture(scope="module")
def designs():
    return {name: prx.load_design(DESIGNS / f"{name}.toml")
            for name in ("ingaas-pin-1310", "si-apd-850")}


@settings(max_examples=6, deadline=None)
@given(name=st.sampled_from(["ingaas-pin-1310", "si-apd-850"]), n=st.integers(2, 110),
       block=st.integers(1, 50), seed=st.integers(0, 2**32 - 1))
def test_blocked_eye_figures_are_the_unblocked_ones_bit_for_bit(designs, name, n, block, seed):
    rx = designs[name]
    rng = np.random.default_rng(seed)
    v0 = float(np.max(rx.reverse_bias))
    rf0 = float(rx.tia.rf)
    axes = {"reverse_bias": v0 * rng.uniform(0.5, 1.0, n),  # below an APD's breakdown
            "rf": rf0 * np.exp(rng.uniform(np.log(0.5), np.log(2.0), n))}
    saved = design_blocks.BLOCK
    try:
        design_blocks.BLOCK = 10**9  # one block: the whole chunk at once
        whole = _figures(rx, axes)
        design_blocks.BLOCK = block
        blocked = _figures(rx, axes)
    finally:
        design_blocks.BLOCK = saved
    for figure in DIGITAL_FIGURES:
        assert _same_bits(whole[figure], blocked[figure]), figure
    assert np.any(np.isfinite(whole["eye_opening"]))  # the figures exist: a real comparison


@pytest.mark.parametrize("n", [64, 95, 96, 127, 128, 300])
def test_blocks_cover_the_rows_once(n):
    blocks = design_blocks.design_blocks((n,), block=32)
    rows = np.concatenate([np.arange(n)[b] for b in blocks])
    assert np.array_equal(rows, np.arange(n))
    sizes = [len(np.arange(n)[b]) for b in blocks]
    assert all(32 <= s < 64 for s in sizes) and all(b.start % 32 == 0 for b in blocks)


def test_no_block_below_the_least_size():
    assert design_blocks.design_blocks((63,), block=32) == [None]  # one block of 63 rows
    assert design_blocks.design_blocks((100,), block=1) == design_blocks.design_blocks((100,),
                                                                                      block=32)
    assert design_blocks.design_blocks((3, 400), block=32) == [None]  # only 1-D shapes
    assert design_blocks.design_blocks((), block=32) == [None]


def test_design_rows_slices_only_full_design_axes():
    shape = (6,)
    tree = {"a": np.arange(6.0)[:, None], "b": np.ones(1), "poles": (np.arange(6.0)[:, None], 2.0),
            "kind": "butterworth"}
    part = design_blocks.design_rows(tree, shape, slice(2, 4))
    assert np.array_equal(part["a"], [[2.0], [3.0]])
    assert part["b"] is tree["b"] and part["kind"] == "butterworth"
    assert np.array_equal(part["poles"][0], [[2.0], [3.0]]) and part["poles"][1] == 2.0
    assert design_blocks.design_rows(tree, shape, None) is tree
    assert design_blocks.rows_shape(shape, slice(4, 8)) == (2,)
    assert design_blocks.rows_shape(shape, None) == shape


def test_rows_memo_evaluates_once_per_grid():
    calls = []

    def response(f):
        calls.append(f.size)
        return np.outer(np.arange(3.0), f)
    memo = design_blocks.rows_memo(response)
    f = np.linspace(0.0, 1.0, 5)
    assert np.array_equal(memo(f), memo(f.copy()))
    memo(np.zeros(1))
    assert calls == [5, 1]
    assert design_blocks.rows_memo(None) is None
