"""Speed of the vectorised noise core: full noise integration for 10^3 designs at once.

Run: python tests/benchmarks/bench_noise.py   (prints designs per second; not a test)
"""

import time

import numpy as np

from photorx.analysis.noise import chain_enbw, integrated_output_noise

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
