"""Reference C-V of a 1-D abrupt p-n diode from DEVSIM (the TCAD device simulator on PyPI).

Run as a script (DEVSIM keeps global state, so each case runs in its own process):

    python tests/devsim_reference.py '{"na": 1e16, "nd": 1e16, "xj": 6e-4, "length": 1.2e-3,
                                       "bias": [1.0, 5.0]}'

prints a JSON object: reverse biases [V], small-signal capacitance per area [F/cm^2] from
DEVSIM's drift-diffusion DC solutions (C = -q d(integral n dx)/dV_R, a central difference
of the electron count at V_R +- 1 mV), and the physical constants DEVSIM's simple_physics
module uses (CGS units: cm, cm^-3). The set-up follows DEVSIM's own 1-D diode examples
(examples/diode/diode_common.py and ssac_diode.py shipped with DEVSIM): Potential-only
start, then drift-diffusion with SRH recombination, the p side at the "top" contact
driven by a circuit voltage source.

`import devsim` needs a BLAS/LAPACK library: DEVSIM reads it from ``DEVSIM_MATH_LIBS``;
where that is unset, the subprocesses here point it at Debian's OpenBLAS
(``libopenblas0-pthread``, which ``.ci/run`` installs) when it is present.
"""

from __future__ import annotations

import json
import math
import sys


_DEBIAN_OPENBLAS = "/usr/lib/*-linux-gnu/libopenblas.so.0"  # Debian's multiarch path


def _environment() -> dict:
    """This process's environment with DEVSIM pointed at a system BLAS/LAPACK if needed."""
    import os

    env = dict(os.environ)
    if "DEVSIM_MATH_LIBS" not in env:
        import glob

        found = sorted(glob.glob(_DEBIAN_OPENBLAS))
        if found:
            env["DEVSIM_MATH_LIBS"] = found[0]
    return env


def available() -> bool:
    """True when DEVSIM imports here (used by the tests to skip cleanly)."""
    import subprocess

    try:
        return subprocess.run([sys.executable, "-c", "import devsim"], capture_output=True,
                              timeout=60, check=False, env=_environment()).returncode == 0
    except (OSError, subprocess.TimeoutExpired):
        return False


def run_case(case: dict) -> dict:
    """Run the DEVSIM diode of ``case`` in a subprocess and return its JSON result."""
    import subprocess

    out = subprocess.run([sys.executable, __file__, json.dumps(case)], capture_output=True,
                         text=True, timeout=300, check=True, env=_environment())
    return json.loads(out.stdout.strip().splitlines()[-1])


def _simulate(case: dict) -> dict:
    import contextlib
    import io

    noise = io.StringIO()
    with contextlib.redirect_stdout(noise):
        import devsim as ds
        import devsim.python_packages.simple_physics as sp
        from devsim.python_packages.model_create import CreateNodeModel, CreateSolution

        device, region = "diode", "bulk"
        na, nd, xj, length = (float(case[k]) for k in ("na", "nd", "xj", "length"))
        fine = float(case.get("fine_step", 1e-7))
        ds.create_1d_mesh(mesh="m")
        ds.add_1d_mesh_line(mesh="m", pos=0.0, ps=float(case.get("coarse_step", 2e-6)),
                            tag="top")
        ds.add_1d_mesh_line(mesh="m", pos=xj, ps=fine, tag="mid")
        ds.add_1d_mesh_line(mesh="m", pos=length, ps=float(case.get("coarse_step", 2e-6)),
                            tag="bot")
        ds.add_1d_contact(mesh="m", name="top", tag="top", material="metal")
        ds.add_1d_contact(mesh="m", name="bot", tag="bot", material="metal")
        ds.add_1d_region(mesh="m", material="Si", region=region, tag1="top", tag2="bot")
        ds.finalize_mesh(mesh="m")
        ds.create_device(mesh="m", device=device)
        sp.SetSiliconParameters(device, region, 300)
        CreateNodeModel(device, region, "Acceptors", f"{na:.17e}*step({xj:.17e}-x)")
        CreateNodeModel(device, region, "Donors", f"{nd:.17e}*step(x-{xj:.17e})")
        CreateNodeModel(device, region, "NetDoping", "Donors-Acceptors")
        ds.circuit_element(name="V1", n1=sp.GetContactBiasName("top"), n2=0, value=0.0,
                           acreal=1.0, acimag=0.0)
        CreateSolution(device, region, "Potential")
        sp.CreateSiliconPotentialOnly(device, region)
        sp.CreateSiliconPotentialOnlyContact(device, region, "top", True)
        ds.set_parameter(device=device, name=sp.GetContactBiasName("bot"), value=0.0)
        sp.CreateSiliconPotentialOnlyContact(device, region, "bot")
        ds.solve(type="dc", absolute_error=1.0, relative_error=1e-12, maximum_iterations=40)
        CreateSolution(device, region, "Electrons")
        CreateSolution(device, region, "Holes")
        ds.set_node_values(device=device, region=region, name="Electrons",
                           init_from="IntrinsicElectrons")
        ds.set_node_values(device=device, region=region, name="Holes",
                           init_from="IntrinsicHoles")
        sp.CreateSiliconDriftDiffusion(device, region)
        sp.CreateSiliconDriftDiffusionAtContact(device, region, "top", True)
        sp.CreateSiliconDriftDiffusionAtContact(device, region, "bot")
        ds.solve(type="dc", absolute_error=1e10, relative_error=1e-10, maximum_iterations=40)
        caps, v_now, step = [], 0.0, float(case.get("step", 1e-3))
        for v_r in case["bias"]:
            n_steps = max(1, math.ceil(abs(v_r - v_now) / float(case.get("ramp", 1.0))))
            for k in range(1, n_steps + 1):
                v = v_now + (v_r - v_now) * k / n_steps
                ds.circuit_alter(name="V1", value=-v)  # p side negative: reverse bias
                ds.solve(type="dc", absolute_error=1e10, relative_error=1e-10,
                         maximum_iterations=40)
            v_now = v_r
            counts = []
            for dv in (-step, step):
                ds.circuit_alter(name="V1", value=-(v_r + dv))
                ds.solve(type="dc", absolute_error=1e10, relative_error=1e-10,
                         maximum_iterations=40)
                n = ds.get_node_model_values(device=device, region=region, name="Electrons")
                vol = ds.get_node_model_values(device=device, region=region, name="NodeVolume")
                counts.append(sum(a * b for a, b in zip(n, vol)))
            ds.circuit_alter(name="V1", value=-v_r)
            # electrons leave through the n contact: C = -q d(integral n dx)/dV_R
            caps.append(-sp.q * (counts[1] - counts[0]) / (2 * step))
    return {"bias": list(case["bias"]), "capacitance": caps,
            "constants": {"q": sp.q, "k": sp.k, "eps": sp.eps_si * sp.eps_0, "ni": sp.n_i}}


if __name__ == "__main__":
    print(json.dumps(_simulate(json.loads(sys.argv[1]))))
