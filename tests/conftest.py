"""Shared test set-up: hypothesis profile and headless plotting.

This folder is put on ``sys.path`` by pytest (the conftest's own folder), so reference
helpers such as ``tests/spice.py`` import as ``from spice import run_ngspice``.
"""

import os

import matplotlib
from hypothesis import settings

matplotlib.use("Agg")
os.environ.setdefault("MPLBACKEND", "Agg")

# Deadlines off: a shared CI machine has erratic timing; speed is measured in tests/benchmarks/.
settings.register_profile("photorx", deadline=None, print_blob=True)
settings.load_profile("photorx")
