"""PRBS and PAM4 patterns against the properties of maximal-length sequences.

Sources: ITU-T O.150 sec. 5 (the polynomials x^9 + x^5 + 1, x^11 + x^9 + 1, x^15 + x^14 + 1);
S. W. Golomb, Shift Register Sequences, 1967, ch. 3 (period 2^n - 1, every non-zero n-bit
word once per period, the run-length distribution, two-valued autocorrelation).
"""

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

import photorx as prx
from photorx.analysis.digital_patterns import PRBS_TAPS, parse_pattern, pattern_symbols, prbs


def _runs(bits):
    """Run lengths of a cyclic sequence, as {(bit, length): count}."""
    b = np.asarray(bits)
    start = int(np.argmax(b != b[-1]))  # rotate so that a run starts at index 0
    b = np.roll(b, -start)
    edges = np.nonzero(np.diff(b))[0] + 1
    bounds = np.concatenate([[0], edges, [b.size]])
    out = {}
    for lo, hi in zip(bounds[:-1], bounds[1:]):
        key = (int(b[lo]), int(hi - lo))
        out[key] = out.get(key, 0) + 1
    return out


@pytest.mark.parametrize("n", sorted(PRBS_TAPS))
def test_prbs_follows_its_polynomial_and_has_the_full_period(n):
    bits = prbs(n)
    m = PRBS_TAPS[n]
    period = 2 ** n - 1
    assert bits.size == period
    # the recurrence of x^n + x^m + 1 holds cyclically (Golomb ch. 3)
    k = np.arange(period)
    assert np.array_equal(bits[(k + n) % period], bits[(k + m) % period] ^ bits[k])
    # every non-zero n-bit word exactly once per period => minimal period 2^n - 1
    words = np.zeros(period, dtype=np.int64)
    for i in range(n):
        words = (words << 1) | bits[(k + i) % period]
    assert np.array_equal(np.sort(words), np.arange(1, 2 ** n))
    # two-valued autocorrelation of the +-1 sequence: N at shift 0, -1 at every other shift
    x = 1.0 - 2.0 * bits
    acf = np.real(np.fft.ifft(np.abs(np.fft.fft(x)) ** 2))
    np.testing.assert_allclose(acf[1:], -1.0, atol=1e-6)
    assert bits.sum() == 2 ** (n - 1)  # balance: one more one than zeros


@pytest.mark.parametrize("n", sorted(PRBS_TAPS))
def test_prbs_run_lengths(n):
    """Golomb's run property: 2^(n-k-2) runs of ones and of zeros of each length k <= n-2,
    one run of n - 1 zeros and one run of n ones."""
    runs = _runs(prbs(n))
    for k in range(1, n - 1):
        assert runs.get((1, k), 0) == 2 ** (n - k - 2)
        assert runs.get((0, k), 0) == 2 ** (n - k - 2)
    assert runs.get((0, n - 1)) == 1 and runs.get((1, n)) == 1
    assert runs.get((1, n - 1), 0) == 0 and max(length for _, length in runs) == n


def test_pam4_gray_levels_are_equiprobable():
    sym = pattern_symbols("prbs9", "pam4")
    levels = np.rint(sym * 3).astype(int)
    counts = np.bincount(levels, minlength=4)
    # two periods of 511 bits read as pairs: every 2-bit word once per 2-word window, so the
    # counts differ by at most the missing all-zero word (Golomb balance)
    assert counts.sum() == 511 and counts.max() - counts.min() <= 1
    assert set(np.unique(sym)) == {0.0, 1 / 3, 2 / 3, 1.0}


@given(st.text(max_size=12))
@settings(max_examples=60)
def test_unknown_pattern_names_are_rejected_by_name(text):
    if text.strip().lower() in {f"prbs{n}" for n in PRBS_TAPS}:
        assert parse_pattern(text) in PRBS_TAPS
        return
    with pytest.raises(prx.DesignError) as err:
        parse_pattern(text)
    assert err.value.parameter == "pattern" and "valid values" in str(err.value)


@given(st.sampled_from(sorted(PRBS_TAPS)), st.sampled_from(["PRBS", "prbs", "Prbs"]))
@settings(max_examples=20)
def test_pattern_names_are_case_insensitive(n, prefix):
    assert parse_pattern(f" {prefix}{n} ") == n
    assert np.array_equal(pattern_symbols(f"{prefix}{n}"), prbs(n).astype(float))


def test_unknown_modulation_is_rejected():
    with pytest.raises(prx.DesignError) as err:
        pattern_symbols("prbs7", "pam8")
    assert err.value.parameter == "modulation"
