"""Speed of avalanche-photodiode receivers: bias and gain sweeps, the optimum gain, the
temperature-compensated bias, against the PIN demo in the same run (ratios, not seconds).

Run: python tests/benchmarks/bench_apd.py   (prints figures; asserts nothing)
"""

from __future__ import annotations

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
    pin, apd = prx.demo_receiver("si-pin-850"), prx.load_design("si-apd-850")
    pin.evaluate(), apd.evaluate()  # warm caches and imports
    vb = float(apd.evaluate().breakdown_voltage)
    n = 1000
    t_pin = _best_of(lambda: prx.sweep(pin, reverse_bias=np.linspace(0.0, 10.0, n)))
    t_apd = _best_of(lambda: prx.sweep(apd, reverse_bias=np.linspace(0.5 * vb, 0.999 * vb, n)))
    print(f"bias sweep, {n} points: PIN {n / t_pin:8.0f} points/s, APD {n / t_apd:8.0f} "
          f"points/s (APD/PIN time ratio {t_apd / t_pin:.2f})")
    t_gain = _best_of(lambda: prx.sweep(apd, gain=np.geomspace(1.05, 500.0, n)))
    print(f"gain sweep, {n} points: {n / t_gain:8.0f} points/s "
          f"(gain/bias sweep time ratio {t_gain / t_apd:.2f})")
    t_opt = _best_of(lambda: prx.optimum_gain(apd, objective="sensitivity"), 2)
    print(f"optimum gain (sensitivity): {t_opt / t_apd:.2f} x the 1000-point bias sweep")
    temps = np.linspace(233.15, 358.15, 26)
    t_cmp = _best_of(lambda: prx.bias_for_constant_gain(apd.photodiode, 50.0, temps), 2)
    print(f"compensated bias, {temps.size} temperatures: {t_cmp / t_apd:.2f} x the bias sweep")


if __name__ == "__main__":
    main()
