"""Time and peak memory of a large tolerance study (10^6 units by default), chunked on dask.

Run: python tests/benchmarks/bench_tolerance.py [--n 1000000] [--scheduler threads]
(prints figures; asserts nothing). A small study runs first so that the peak memory of the
large one can be read against it: the chunks keep the working set bounded, so the peak
grows by the result table (the kept columns), not by the engine's per-point arrays.
"""

from __future__ import annotations

import argparse
import os
import resource
import sys
import time

import photorx as prx


def _peak_mib() -> float:
    """Peak resident memory of this process and its finished children [MiB] (Linux: KiB)."""
    own = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss
    kids = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    return max(own, kids) / 1024


def _study(rx, n, scheduler, chunk_size):
    t0 = time.perf_counter()
    study = prx.tolerance_study(
        rx, {"rf": "1 %", "cf": "5 %", "gbw": ("normal", 0.1), "reverse_bias": "2 %"},
        {"bandwidth": ">= 900 MHz", "phase_margin": ">= 45 deg"}, n=n, seed=1,
        figures=["input_noise_rms"], scheduler=scheduler, chunk_size=chunk_size,
        progress=sys.stderr.isatty())
    return study, time.perf_counter() - t0


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--n", type=int, default=10**6)
    parser.add_argument("--small", type=int, default=10**4)
    parser.add_argument("--scheduler", default="threads")
    parser.add_argument("--chunk-size", type=int, default=None)
    args = parser.parse_args(argv)
    print(f"load average before: {' '.join(f'{v:.2f}' for v in os.getloadavg())} "
          f"({os.cpu_count()} cores)")
    rx = prx.demo_receiver()
    rx.evaluate()  # imports and caches
    base = _peak_mib()
    for n in (args.small, args.n):
        study, seconds = _study(rx, n, args.scheduler, args.chunk_size)
        table = study.samples.memory_usage(deep=True).sum() / 2**20
        print(f"{n:>9d} units, scheduler {args.scheduler}, chunk {study.chunk_size}: "
              f"{seconds:8.1f} s ({n / seconds:7.0f} units/s); peak RSS {_peak_mib():7.0f} MiB "
              f"(after import {base:.0f} MiB); result table {table:.0f} MiB; "
              f"yield {100 * study.yield_fraction:.2f} %")
        del study
    print(f"load average after: {' '.join(f'{v:.2f}' for v in os.getloadavg())}")


if __name__ == "__main__":
    main()
