"""Speed of the optical-constant lookups and the photodiode's QE on large arrays.

Run: python tests/benchmarks/bench_optics.py   (prints figures; asserts nothing)
"""

from __future__ import annotations

import time

import numpy as np

import photorx as prx
from photorx.device import optics
from photorx.device.demo import demo_silicon_pin


def _best_of(fn, repeat=5):
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def main():
    si = prx.material("Si")
    wl = np.linspace(400e-9, 1100e-9, 100_000)
    optics.absorption_coefficient(wl, si)  # warm the table cache
    t = _best_of(lambda: optics.absorption_coefficient(wl, si, 320.0))
    print(f"absorption_coefficient, 1e5 wavelengths: {t * 1e3:7.2f} ms ({wl.size / t:.3g} /s)")
    pd = demo_silicon_pin()
    v = np.linspace(0.0, 20.0, 100)[:, None]
    w = np.linspace(400e-9, 1050e-9, 1000)
    pd.responsivity(w, v)
    t = _best_of(lambda: pd.responsivity(w, v))
    print(f"Photodiode.responsivity, 100 biases x 1000 wavelengths: {t * 1e3:7.2f} ms")
    t = _best_of(lambda: [pd.responsivity(850e-9, 5.0) for _ in range(1000)], 3)
    print(f"Photodiode.responsivity, 1000 scalar calls: {t * 1e3:7.2f} ms "
          f"({t * 1e3:.3f} us per call x 1000)")


if __name__ == "__main__":
    main()
