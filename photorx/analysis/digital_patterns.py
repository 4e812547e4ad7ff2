"""Test patterns for digital receivers: PRBS bit sequences and NRZ / PAM4 symbol streams.

A PRBS of degree n is the output of an n-stage linear feedback shift register whose
feedback polynomial x^n + x^m + 1 is primitive; it repeats after 2^n - 1 bits and holds every
non-zero n-bit word exactly once per period (so every run of up to n - 1 equal bits, and
one run of n ones). Symbols are the levels a_k in [0, 1] that multiply the optical
swing: NRZ maps a bit to 0 or 1; PAM4 maps pairs of bits, Gray-coded, to 0, 1/3, 2/3, 1.

References
----------
.. [1] ITU-T Recommendation O.150, *General requirements for instrumentation for
   performance measurements on digital transmission equipment*, 1996, sec. 5
   (PRBS polynomials x^9 + x^5 + 1, x^11 + x^9 + 1, x^15 + x^14 + 1).
.. [2] S. W. Golomb, *Shift Register Sequences*, Holden-Day, 1967, ch. 3 (period,
   balance and run properties of maximal-length sequences).
"""

from __future__ import annotations

from functools import cache

import numpy as np

from ..errors import DesignError

__all__ = ["PRBS_TAPS", "MODULATIONS", "prbs", "pattern_symbols", "parse_pattern", "levels_per_symbol"]

#: PRBS degree n -> the middle tap m of the primitive feedback polynomial x^n + x^m + 1.
#: 9, 11, 15: ITU-T O.150 sec. 5; 7 (x^7 + x^6 + 1) and 10 (x^10 + x^7 + 1): common
#: practice (from memory); the tests check every period is 2^n - 1 (so each is primitive).
PRBS_TAPS = {7: 6, 9: 5, 10: 7, 11: 9, 15: 14}

#: Modulation name -> number of levels.
MODULATIONS = {"nrz": 2, "pam4": 4}

_GRAY_PAM4 = np.array([0, 1, 3, 2])  # bit pair (b1 b0) 00, 01, 10, 11 -> level 0, 1, 3, 2


@cache
def _prbs_cached(n: int) -> np.ndarray:
    m = PRBS_TAPS[n]
    period = 2 ** n - 1
    out = np.empty(period + n, dtype=np.uint8)
    out[:n] = 1  # all-ones seed (any non-zero seed gives a cyclic shift of the same sequence)
    # a_{k+n} = a_{k+m} xor a_k satisfies the recurrence of x^n + x^m + 1; blocks of
    # min(m, n - m) terms depend only on terms already known, so each block is one xor
    step = min(m, n - m)
    k = 0
    while k < period:
        e = min(k + step, period)
        out[k + n:e + n] = out[k + m:e + m] ^ out[k:e]
        k = e
    seq = out[:period].copy()
    seq.setflags(write=False)
    return seq


def prbs(n: int) -> np.ndarray:
    """One period of the PRBS of degree ``n`` (bits 0/1, uint8, length 2^n - 1, read-only).

    Parameters
    ----------
    n : int
        Degree of the shift register, one of the keys of :data:`PRBS_TAPS` (7, 9, 10, 11, 15).

    Returns
    -------
    numpy.ndarray
        The bits; the register starts from all ones.

    Notes
    -----
    Recurrence a_{k+n} = a_{k+m} XOR a_k of the primitive polynomial x^n + x^m + 1.
    """
    if isinstance(n, bool) or not isinstance(n, (int, np.integer)) or int(n) not in PRBS_TAPS:
        raise DesignError.out_of_range("pattern", n, "", "PRBS degrees " +
                                       ", ".join(str(k) for k in PRBS_TAPS))
    return _prbs_cached(int(n))


def parse_pattern(pattern) -> int:
    """The PRBS degree named by ``pattern`` ("prbs7", "PRBS9", ..., or an int degree).

    Parameters
    ----------
    pattern : str or int
        ``"prbs<n>"`` (case-insensitive) or the degree n itself, n in :data:`PRBS_TAPS`.
    """
    valid = "prbs7, prbs9, prbs10, prbs11 or prbs15"
    if isinstance(pattern, str):
        text = pattern.strip().lower()
        if text.startswith("prbs") and text[4:].isdigit() and int(text[4:]) in PRBS_TAPS:
            return int(text[4:])
        raise DesignError(f"pattern = {pattern!r} is not a known pattern; valid values: {valid}",
                          parameter="pattern")
    if isinstance(pattern, (int, np.integer)) and not isinstance(pattern, bool) \
            and int(pattern) in PRBS_TAPS:
        return int(pattern)
    raise DesignError(f"pattern = {pattern!r} is not a known pattern; valid values: {valid}",
                      parameter="pattern")


def levels_per_symbol(modulation: str) -> int:
    """Number of levels of a modulation name ("nrz": 2, "pam4": 4).

    Parameters
    ----------
    modulation : str
        ``"nrz"`` or ``"pam4"`` (case-insensitive).
    """
    key = modulation.strip().lower() if isinstance(modulation, str) else modulation
    if key not in MODULATIONS:
        raise DesignError(f"modulation = {modulation!r} is not known; valid values: "
                          f"{', '.join(MODULATIONS)}", parameter="modulation")
    return MODULATIONS[key]


def pattern_symbols(pattern="prbs7", modulation="nrz") -> np.ndarray:
    """One period of the symbol levels a_k in [0, 1] for a pattern and a modulation.

    Parameters
    ----------
    pattern : str or int
        PRBS name (see :func:`parse_pattern`).
    modulation : str
        ``"nrz"`` (a_k = bit) or ``"pam4"`` (Gray-coded bit pairs -> 0, 1/3, 2/3, 1).

    Returns
    -------
    numpy.ndarray
        Levels (float), length 2^n - 1 for both: PAM4 reads two periods of the odd-length
        PRBS as pairs, so one symbol period still holds 2^n - 1 symbols and every pair of
        bit words.
    """
    n = parse_pattern(pattern)
    levels = levels_per_symbol(modulation)
    bits = prbs(n)
    if levels == 2:
        return bits.astype(float)
    pairs = np.concatenate([bits, bits]).reshape(-1, 2)
    return _GRAY_PAM4[2 * pairs[:, 0] + pairs[:, 1]] / 3.0
