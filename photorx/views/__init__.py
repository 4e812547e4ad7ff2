"""photorx.views stage: tables, plots, widgets, report and rich display of results.

Only light helpers are imported here (matplotlib, ipywidgets and schemdraw load when
something is drawn).
"""

from .result_plots import plot_sweep
from .sweep_units import read_sweep_csv, write_sweep_csv

__all__ = ["plot_sweep", "read_sweep_csv", "write_sweep_csv"]
