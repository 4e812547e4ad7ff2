"""Speed of receiver sweeps: vectorised grid against a per-point Python loop.

Run: python tests/benchmarks/bench_sweep.py   (prints figures; asserts nothing)
"""

from __future__ import annotations

import dataclasses
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
    rx = prx.demo_receiver()
    rx.evaluate()  # warm caches and imports
    for n in (100, 1000, 10000):
        biases = np.linspace(0.0, 0.9 * float(rx.reverse_bias) * 4, n)
        t = _best_of(lambda: prx.sweep(rx, reverse_bias=biases), repeat=2 if n > 1000 else 3)
        print(f"vectorised sweep, {n:6d} bias points with full noise integration: "
              f"{t * 1e3:8.1f} ms  ({n / t:9.0f} points/s)")
    n_loop = 50
    biases = np.linspace(0.0, float(rx.reverse_bias) * 2, n_loop)
    t = _best_of(lambda: [dataclasses.replace(rx, reverse_bias=float(v)).evaluate() for v in biases], 1)
    print(f"per-point Python loop, {n_loop} points: {t * 1e3:8.1f} ms  ({n_loop / t:9.0f} points/s, "
          f"{t / n_loop * 1e3:.1f} ms per full evaluation)")
    t = _best_of(lambda: prx.sweep(rx, reverse_bias=np.linspace(0, 10, 20), rf=np.geomspace(2e3, 50e3, 10),
                                   cf=np.geomspace(0.05e-12, 1e-12, 5)))
    print(f"3-axis grid, 1000 points: {t * 1e3:8.1f} ms")


if __name__ == "__main__":
    main()
