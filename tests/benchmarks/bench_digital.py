"""Cost of the time-domain figures, measured in one run (prints figures; asserts nothing).

Run: python tests/benchmarks/bench_digital.py [--points N]

Prints, for the machine it runs on (with its load from ``os.getloadavg``):

- the time of a bias sweep of the 1310 nm demo with its bit rate (ISI figures on) and
  without (analog: no ISI work), and their ratio;
- one ``Receiver.eye()`` for PRBS7, PRBS11 and PRBS15 (NRZ) and PRBS9 PAM4;
- one ``Receiver.pulse_response`` on 10^4 times.

Each time is the best of a few repeats (``time.perf_counter``).
"""

from __future__ import annotations

import argparse
import dataclasses
import os
import time

import numpy as np

import photorx as prx


def _best_of(fn, repeat=3):
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def main():
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--points", type=int, default=1000, help="bias points of the sweep")
    args = parser.parse_args()
    print(f"load average: {os.getloadavg()}")
    rx = prx.demo_receiver()
    analog = dataclasses.replace(rx, bit_rate=None)
    bias = np.linspace(0.2, 10.0, args.points)
    prx.sweep(rx, reverse_bias=bias[:10])  # imports and caches
    t_dig = _best_of(lambda: prx.sweep(rx, reverse_bias=bias))
    t_ana = _best_of(lambda: prx.sweep(analog, reverse_bias=bias))
    print(f"sweep of {args.points} points: with bit rate {t_dig:.3f} s, without {t_ana:.3f} s, "
          f"ratio {t_dig / t_ana:.2f}")
    for pattern, modulation in (("prbs7", "nrz"), ("prbs11", "nrz"), ("prbs15", "nrz"),
                                ("prbs9", "pam4")):
        t = _best_of(lambda: rx.eye(pattern=pattern, modulation=modulation), repeat=2)
        print(f"eye {modulation} {pattern}: {t:.3f} s")
    times = np.linspace(0.0, 20e-9, 10_000)
    print(f"pulse response on 1e4 times: {_best_of(lambda: rx.pulse_response(times)):.3f} s")


if __name__ == "__main__":
    main()
