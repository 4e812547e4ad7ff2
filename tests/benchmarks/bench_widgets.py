"""Update time of every panel per control change (printed, not asserted).

Run: ``python tests/benchmarks/bench_widgets.py``. For each panel of
:mod:`photorx.views.widgets` on the default demo design and its default grids, each control
is moved between two values a few times; the median time of ``update()`` (the package's
computation plus moving the artists) is printed, and separately the time to render the
figure to PNG (what a notebook shows). Target: update under 100 ms.
"""

from __future__ import annotations

import os
import statistics
import time

os.environ.setdefault("MPLBACKEND", "Agg")

import photorx as prx  # noqa: E402
from photorx.views import widgets as pw  # noqa: E402

REPEATS = 3

#: panel -> control -> two values it alternates between
MOVES = {
    "junction": {"area": (5e-3, 2e-2), "temperature": (300.0, 350.0), "max_bias": (10.0, 20.0),
                 "kind": ("p-i-n", "abrupt"), "i_thickness": (2.0, 4.0), "fit": (True, False)},
    "photodiode": {"bias": (3.3, 6.0), "wavelength": (1310.0, 1550.0),
                   "temperature": (300.0, 340.0), "load": (50.0, 500.0)},
    "loop": {"rf": (3e3, 6e3), "cf": (60e-15, 120e-15), "gbw": (2e10, 1e10), "bias": (3.3, 6.0)},
    "noise": {"bias": (3.3, 6.0), "rf": (3e3, 6e3), "cutoff": (1.2e9, 6e8),
              "filter": ("bessel", "butterworth"), "referred": ("output", "input")},
    "tradeoff": {"bias": (3.3, 6.0), "rf": (3e3, 6e3), "min_phase_margin": (45.0, 60.0)},
    "closed_forms": {"bias": (3.3, 6.0)},
}


def bench(name, builder, rx):
    kw = {"export_folder": "/tmp/photorx-bench-export"} if name == "tradeoff" else {}
    panel = builder(rx, render=False, **kw)
    rows = []
    for control, values in MOVES[name].items():
        times, renders = [], []
        for i in range(2 * REPEATS):
            panel.controls[control].value = values[(i + 1) % 2]
            times.append(panel.last_update_seconds)
            start = time.perf_counter()
            panel.render()
            renders.append(time.perf_counter() - start)
        rows.append((control, statistics.median(times), statistics.median(renders), panel.error))
    return rows


def main():
    rx = prx.demo_receiver()
    print(f"{'panel':<13} {'control':<17} {'update [ms]':>11} {'render [ms]':>11}")
    worst = 0.0
    for name, builder in pw.PANELS.items():
        for control, t_update, t_render, error in bench(name, builder, rx):
            worst = max(worst, t_update)
            flag = "" if t_update < 0.1 else "  > 100 ms"
            note = f"  (message: {error})" if error else ""
            print(f"{name:<13} {control:<17} {1e3 * t_update:11.1f} {1e3 * t_render:11.1f}"
                  f"{flag}{note}")
    print(f"slowest update: {1e3 * worst:.1f} ms (target < 100 ms; render is the PNG for the "
          "notebook, drawn once per update)")


if __name__ == "__main__":
    main()
