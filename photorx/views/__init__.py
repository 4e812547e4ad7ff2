"""photorx.views stage: tables, plots, widgets, report and rich display of results.

Only light helpers are imported here (matplotlib, ipywidgets and schemdraw load when
something is drawn).
"""

import importlib as _importlib

__all__ = ["plot_sweep", "read_sweep_csv", "write_sweep_csv"]

# imported on first use: the budget tables (views.tables) load without the sweep helpers
_EXPORTS = {"plot_sweep": "result_plots", "read_sweep_csv": "sweep_units",
            "write_sweep_csv": "sweep_units"}


def __getattr__(name):
    if name in _EXPORTS:
        value = getattr(_importlib.import_module(f".{_EXPORTS[name]}", __name__), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def __dir__():
    return sorted(set(globals()) | set(__all__))
