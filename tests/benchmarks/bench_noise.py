"""Speed of the vectorised noise core: full noise integration for 10^3 designs at once.

Run: python tests/benchmarks/bench_noise.py   (prints designs per second; not a test)
"""

import dataclasses
import time

import numpy as np

import photorx as prx
from photorx.circuit.noise import chain_enbw, integrated_output_noise
from photorx.analysis.noise_integrals import chain_noise
from photorx.analysis.sweep import sweep
from photorx.circuit.amplifier_noise import NoiseCurve

rng = np.random.default_rng(1)
N = 1000
params = {
    "gbw": rng.uniform(50e6, 2e9, N),
    "dc_gain": rng.uniform(1e4, 1e6, N),
    "poles": (rng.uniform(1e9, 5e9, N),),
    "rf": rng.uniform(1e3, 1e5, N),
    "cf": rng.uniform(0.1e-12, 1e-12, N),
    "cd": rng.uniform(0.5e-12, 10e-12, N),
    "rsh": rng.uniform(1e7, 1e10, N),
    "rs": rng.uniform(0.0, 50.0, N),
    "cin": rng.uniform(0.5e-12, 3e-12, N),
    "en": rng.uniform(1e-9, 10e-9, N),
    "en_corner": rng.uniform(0.0, 1e4, N),
    "in_": rng.uniform(1e-15, 1e-12, N),
    "in_corner": rng.uniform(0.0, 1e3, N),
    "temperature": 300.0,
    "i_shot": {"dark": rng.uniform(0, 1e-8, N), "signal": rng.uniform(0, 1e-4, N)},
}


def run(label, fn, repeat=3):
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        best = min(best, time.perf_counter() - t0)
    print(f"{label:60s} {best * 1e3:8.1f} ms  {N / best:10.0f} designs/s")
    return out


run(
    "integrated_output_noise, 1 Hz to inf, no filter",
    lambda: integrated_output_noise(1.0, np.inf, **params),
)
run(
    "integrated_output_noise, 1 Hz to inf, Bessel-4 post filter",
    lambda: integrated_output_noise(
        1.0,
        np.inf,
        filter_kind="bessel",
        filter_order=4,
        filter_cutoff=rng.uniform(10e6, 500e6, N),
        **params,
    ),
)
run("integrated_output_noise, 1 Hz to 1 GHz", lambda: integrated_output_noise(1.0, 1e9, **params))
circuit = {k: params[k] for k in ("gbw", "dc_gain", "poles", "rf", "cf", "cd", "rsh", "rs", "cin")}
run("chain_enbw (0 to inf)", lambda: chain_enbw(**circuit))

# tabulated noise curves (one for every design) against the white-plus-corner model, on the
# sweep path (chain_noise's fixed grid) and through a whole receiver sweep

curve_v = NoiseCurve((1e2, 1e4, 1e6, 1e8, 1e9), (60e-9, 8e-9, 4e-9, 4e-9, 6e-9))
curve_i = NoiseCurve((1e2, 1e5, 1e9), (20e-15, 2e-15, 3e-15), "A/rtHz")
shaped = {**params, "en": curve_v.white, "in_": curve_i.white, "en_corner": 0.0,
          "in_corner": 0.0, "en_shape": curve_v, "in_shape": curve_i}


def _time(fn, repeat=5):
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


a = _time(lambda: chain_noise(1.0, **params))
b = _time(lambda: chain_noise(1.0, **shaped))
print(f"chain_noise with curves / with corners: {b / a:.2f}")

rx = prx.demo_receiver()
amp = dataclasses.replace(rx.tia.amp, voltage_noise=None, current_noise=None,
                          voltage_noise_corner=0.0, voltage_noise_curve=curve_v)
rx_curve = dataclasses.replace(rx, tia=dataclasses.replace(rx.tia, amp=amp))
axes = {"rf": np.geomspace(1e3, 1e4, 32), "cf": np.geomspace(20e-15, 200e-15, 32)}
a = _time(lambda: sweep(rx, **axes))
b = _time(lambda: sweep(rx_curve, **axes))
print(f"receiver sweep of {32 * 32} designs: {a * 1e3:.0f} ms with a corner, "
      f"{b * 1e3:.0f} ms with a curve; ratio {b / a:.2f}")
