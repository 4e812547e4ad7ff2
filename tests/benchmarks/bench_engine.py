"""Speed and memory of the receiver engine, measured in one run (prints figures; asserts nothing).

Run: python tests/benchmarks/bench_engine.py [--quick] [--max-points N] [--only PART ...]

Prints, for the machine it runs on (with its load from ``os.getloadavg``):

- designs per second of :func:`photorx.sweep` for every shipped demo design, on a bias sweep
  and on a 3-axis grid (reverse bias x Rf x Cf), 10^4 points each;
- the time of one ``Receiver.evaluate()`` and one ``Receiver.budget()`` (demo design);
- one ngspice process running AC plus .noise of the demo's equivalent circuit, and the
  ratio of that time to photorx's time per design point (if ngspice is installed);
- the peak resident memory of a 10^5-point sweep (a fresh subprocess, ``VmHWM``), split into
  the imports, the result table and the rest (one chunk's working set);
- the wall and CPU time of ``photorx budget`` on the embedded demo (a fresh subprocess),
  with the bytecode cache as a user has it and without (``PYTHONDONTWRITEBYTECODE=1``);
- the cost of a bias sweep from 10^3 to 10^6 points (``--max-points``), per point, in time
  and in peak memory (a fresh subprocess each), to show that both are linear.

Each time is the best of a few repeats (``time.perf_counter``), one core (numpy's own
threads are left as configured; the core paths are single-threaded numpy ufuncs).
"""

from __future__ import annotations

import argparse
import os
import resource
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

import photorx as prx

DESIGNS = Path(prx.__file__).parent / "designs"


def _best_of(fn, repeat=3):
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def _load():
    return f"load average {os.getloadavg()[0]:.2f} {os.getloadavg()[1]:.2f} {os.getloadavg()[2]:.2f}"


def _bias_axis(rx, n):
    v0 = float(np.max(rx.reverse_bias))
    top = max(2.0 * v0, 1.0)
    if hasattr(rx.photodiode, "gain"):  # an APD: up to just below its breakdown
        top = min(top, 0.995 * float(rx.evaluate().breakdown_voltage))
    return np.linspace(0.0, top, n)


def bench_designs(n, repeat):
    print(f"\n== sweep throughput, {n} points per run (best of {repeat}) ==")
    rates = []
    for path in sorted(DESIGNS.glob("*.toml")):
        rx = prx.load_design(path)
        rx.evaluate()
        biases = _bias_axis(rx, n)
        t_bias = _best_of(lambda: prx.sweep(rx, reverse_bias=biases), repeat)
        side = round(n ** (1 / 3))
        rf0, cf0 = float(rx.tia.rf), float(rx.tia.cf)
        axes = dict(reverse_bias=_bias_axis(rx, side), rf=np.geomspace(0.5 * rf0, 2 * rf0, side),
                    cf=np.geomspace(0.5 * cf0, 2 * cf0, side))
        t_grid = _best_of(lambda: prx.sweep(rx, **axes), repeat)
        m = side ** 3
        print(f"{path.stem:22s} bias sweep {n / t_bias:9.0f} designs/s ({t_bias / n * 1e6:7.1f} us/point)"
              f"   grid {m} {m / t_grid:9.0f} designs/s ({t_grid / m * 1e6:7.1f} us/point)")
        rates += [t_bias / n, t_grid / m]
    return max(rates)


def bench_single(repeat):
    print("\n== one design (embedded demo) ==")
    rx = prx.demo_receiver()
    rx.evaluate()
    rx.budget()
    t_eval = _best_of(rx.evaluate, repeat)
    t_budget = _best_of(rx.budget, repeat)
    print(f"Receiver.evaluate(): {t_eval * 1e3:8.2f} ms")
    print(f"Receiver.budget():   {t_budget * 1e3:8.2f} ms")
    return t_eval, t_budget


_KT = 1.380649e-23 * 300.0


def _generator(name, node_p, node_n, density, corner, kind):
    """A noise source of ``density`` (white, 1/f corner) as tests/analysis/test_noise.py builds it."""
    rg, vb = 1e3, (1.0 if corner > 0 else 0.0)
    base = np.sqrt(4 * _KT / rg)
    lines = [f"V{name} g{name} 0 DC {vb}"]
    if corner > 0:
        kf = 4 * _KT / rg * corner / (vb / rg) ** 2
        lines += [f"R{name} g{name} 0 {rg} m{name}", f".model m{name} R(kf={kf:.12e} af=2)"]
    else:
        lines.append(f"R{name} g{name} 0 {rg}")
    lines.append(f"{kind}{name} {node_p} {node_n} V{name} {density / base:.12e}")
    return lines


def _netlist(rx):
    """AC + noise netlist of the demo's equivalent circuit: diode C, Rsh, Rs, shot, e_n and i_n
    generators with their 1/f corners, op-amp (VCVS + RC poles), Rf || Cf: the circuit that
    tests/analysis/test_noise.py checks against ngspice."""
    net = rx.equivalent_circuit()
    amp, tia = rx.tia.amp, rx.tia
    cd, rsh, rs = float(net.capacitance), float(net.shunt_resistance), float(net.series_resistance)
    j = "j" if rs > 0 else "inm"
    lines = [".options temp=26.85 tnom=26.85", f"Iin 0 {j} DC 0 AC 1", f"Cd {j} 0 {cd:.12e}",
             f"Rsh {j} 0 {min(rsh, 1e15):.12e}"]
    if rs > 0:
        lines.append(f"Rs j inm {rs:.12e}")
    lines += [f"Cin inm 0 {float(amp.input_capacitance):.12e}", f"Rf inm out {float(tia.rf):.12e}",
              f"Cf inm out {float(tia.cf):.12e}"]
    lines += _generator("shot", 0, j, np.sqrt(2 * 1.602176634e-19 * float(net.current)), 0.0, "F")
    lines += _generator("in", 0, "inm", float(amp.current_noise), float(amp.current_noise_corner), "F")
    lines += _generator("en", "p", 0, float(amp.voltage_noise), float(amp.voltage_noise_corner), "H")
    lines += [
              f"Ea na 0 p inm {float(amp.dc_gain):.12e}", "Rp0 na nb 1 noisy=0",
              f"Cp0 nb 0 {float(amp.dc_gain) / (2 * np.pi * float(amp.gbw)):.12e}"]
    last = "nb"
    for i, fp in enumerate(amp.poles):
        lines += [f"Eb{i} c{i} 0 {last} 0 1", f"Rp{i + 1} c{i} d{i} 1 noisy=0",
                  f"Cp{i + 1} d{i} 0 {1 / (2 * np.pi * float(fp)):.12e}"]
        last = f"d{i}"
    lines.append(f"Eo out 0 {last} 0 1")
    return "\n".join(lines)


def bench_ngspice(per_point, repeat):
    print("\n== ngspice, one process: AC + .noise of the demo's equivalent circuit, 100 points per "
          "decade from 1 Hz to 100 GHz (the density tests/analysis/test_noise.py integrates) ==")
    exe = shutil.which("ngspice")
    if exe is None:
        print("ngspice not installed: ratio not measured")
        return None
    rx = prx.demo_receiver()
    body = "\n".join(["* photorx benchmark", _netlist(rx), ".control", "set noaskquit",
                      "ac dec 100 1 1e11", "noise v(out) Iin dec 100 1 1e11", "quit", ".endc", ".end", ""])
    with tempfile.TemporaryDirectory() as tmp:
        cir = Path(tmp) / "bench.cir"
        cir.write_text(body)
        t = _best_of(lambda: subprocess.run([exe, "-b", str(cir)], capture_output=True, check=True,
                                            cwd=tmp), repeat)
    print(f"ngspice process: {t * 1e3:8.1f} ms; photorx per design point (slowest demo sweep): "
          f"{per_point * 1e6:.1f} us; ratio {t / per_point:8.0f} x")
    return t / per_point


# VmHWM (the process's own resident high-water mark, reset by exec) rather than ru_maxrss,
# which Linux carries over from the forking parent. The fresh process reports the mark after
# import + one evaluation, after the sweep module (pandas) is imported, and after the sweep,
# with the sweep's wall time and the size of its table: the peak is their sum plus one
# chunk's working set.
_MEMORY_SCRIPT = """
import sys, time, numpy as np, photorx as prx
def hwm():
    for line in open('/proc/self/status'):
        if line.startswith('VmHWM'):
            return float(line.split()[1]) / 1024
rx = prx.demo_receiver(); rx.evaluate()
base = hwm()
import photorx.analysis.sweep
with_pandas = hwm()
biases = np.linspace(0.0, 20.0, int(sys.argv[1]))
t0 = time.perf_counter()
df = prx.sweep(rx, reverse_bias=biases)
t = time.perf_counter() - t0
print(base, with_pandas, hwm(), t, df.memory_usage(deep=True).sum() / 2**20, len(df))
"""


def _sweep_in_fresh_process(n):
    """(MB after import + evaluation, MB with pandas, peak MB, sweep s, table MB) of an n-point
    bias sweep of the demo in a fresh process."""
    out = subprocess.run([sys.executable, "-c", _MEMORY_SCRIPT, str(n)], capture_output=True,
                         text=True, check=True).stdout.split()
    assert int(out[5]) == n, out
    return tuple(float(x) for x in out[:5])


def bench_memory(n):
    print(f"\n== peak memory of a {n}-point sweep (fresh process, VmHWM) ==")
    base, with_pandas, peak, t, table = _sweep_in_fresh_process(n)
    print(f"after import + one evaluation: {base:7.1f} MB; with the sweep module (pandas): "
          f"{with_pandas:7.1f} MB; peak during the sweep: {peak:7.1f} MB (sweep adds "
          f"{peak - with_pandas:7.1f} MB, of which the result table {table:6.1f} MB; "
          f"{t:.1f} s)")
    return peak


def _run_cpu(cmd, env):
    """(wall s, CPU s of the child: user + system) of one run of ``cmd``."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    t0 = time.perf_counter()
    subprocess.run(cmd, capture_output=True, check=True, env=env)
    wall = time.perf_counter() - t0
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    return wall, (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)


def bench_cli(repeat):
    print("\n== `photorx budget` on the embedded demo (fresh process; best of "
          f"{repeat} wall and CPU) ==")
    exe = shutil.which("photorx")
    cmd = [exe, "budget"] if exe else [sys.executable, "-m", "photorx.cli", "budget"]
    with tempfile.TemporaryDirectory() as cache:
        # as a user runs it: modules read from their bytecode cache (kept out of the source
        # tree); and with PYTHONDONTWRITEBYTECODE=1 (every module compiled on every run)
        envs = {"bytecode cached": {**os.environ, "PYTHONPYCACHEPREFIX": cache},
                "no bytecode cache": {**os.environ, "PYTHONDONTWRITEBYTECODE": "1"}}
        envs["bytecode cached"].pop("PYTHONDONTWRITEBYTECODE", None)
        best = {}
        for label, env in envs.items():
            subprocess.run(cmd, capture_output=True, check=True, env=env)  # warm file cache
            runs = [_run_cpu(cmd, env) for _ in range(repeat)]
            best[label] = (min(w for w, _ in runs), min(c for _, c in runs))
            print(f"photorx budget, {label:17s}: {best[label][0]:6.2f} s wall, "
                  f"{best[label][1]:6.2f} s CPU")
    return best["bytecode cached"][0]


def bench_linearity(max_points):
    print("\n== cost against the number of points (demo design, bias sweep, one fresh process "
          "each: wall time and peak memory) ==")
    n = 1000
    while n <= max_points:
        _, with_pandas, peak, t, table = _sweep_in_fresh_process(n)
        print(f"{n:8d} points: {t:8.2f} s  {t / n * 1e6:7.1f} us/point  {n / t:9.0f} designs/s;"
              f"  peak {peak:7.1f} MB, {(peak - with_pandas) * 2**20 / n:7.0f} B/point over the "
              f"imports (table {table * 2**20 / n:4.0f} B/point)")
        n *= 10


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="fewer points and repeats")
    parser.add_argument("--max-points", type=int, default=1_000_000,
                        help="largest sweep of the linearity run (default 10^6)")
    parser.add_argument("--only", choices=("designs", "single", "ngspice", "memory", "cli",
                                           "linearity"), action="append",
                        help="run only these parts (repeatable; default all)")
    args = parser.parse_args(argv)
    n, repeat = (2000, 1) if args.quick else (10_000, 3)
    print(f"photorx {prx.__version__}, numpy {np.__version__}, python {sys.version.split()[0]}, "
          f"{os.cpu_count()} cores, {_load()}")
    parts = set(args.only or ("designs", "single", "ngspice", "memory", "cli", "linearity"))
    per_point = bench_designs(n, repeat) if parts & {"designs", "ngspice"} else None
    if "single" in parts:
        bench_single(5 if not args.quick else 2)
    if "ngspice" in parts:
        bench_ngspice(per_point, 3)
    if "memory" in parts:
        bench_memory(100_000 if not args.quick else 10_000)
    if "cli" in parts:
        bench_cli(5)
    if "linearity" in parts:
        bench_linearity(args.max_points if not args.quick else 10_000)
    print(f"\nend: {_load()}")


if __name__ == "__main__":
    main()
