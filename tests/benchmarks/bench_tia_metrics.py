"""Speed of the vectorised loop figures (photorx.circuit.metrics.tia_figures).

Prints designs per second for 10^3 and 10^4 random designs (one call each, best of three).
Run: python tests/benchmarks/bench_tia_metrics.py   (not collected by pytest)
"""

from __future__ import annotations

import time

import numpy as np

from photorx.circuit.metrics import tia_figures


def random_designs(n, seed=1):
    """Invented spread of designs: 10 MHz-1 GHz GBW, 1 kohm-1 Mohm Rf, 10 fF-3 pF Cf,
    1-100 pF diodes, half of them with an extra amplifier pole, some series resistance."""
    rng = np.random.default_rng(seed)
    gbw = 10 ** rng.uniform(7, 9, n)
    pole = np.where(rng.random(n) < 0.5, gbw * 10 ** rng.uniform(0.3, 1.5, n), np.inf)
    return dict(gbw=gbw, dc_gain=10 ** rng.uniform(4, 6, n), poles=(pole,),
                rf=10 ** rng.uniform(3, 6, n), cf=10 ** rng.uniform(-14, -11.5, n),
                cd=10 ** rng.uniform(-12, -10, n), rsh=10 ** rng.uniform(6, 10, n),
                rs=rng.uniform(0, 50, n), cin=2e-12, output_swing=2.0)


def main():
    tia_figures(**random_designs(100))  # warm-up
    for n in (10 ** 3, 10 ** 4):
        params = random_designs(n)
        best = np.inf
        for _ in range(3):
            t0 = time.perf_counter()
            fig = tia_figures(**params)
            best = min(best, time.perf_counter() - t0)
        print(f"{n:>6d} designs: {best * 1e3:8.1f} ms  ->  {n / best:10.0f} designs/s"
              f"  ({fig['stable'].mean() * 100:.1f} % stable)")


if __name__ == "__main__":
    main()
