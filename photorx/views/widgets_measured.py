"""Panel of measured parts: C-V fit with residuals, doping profile and dark-current fit.

Every number comes from :mod:`photorx.device` (:func:`~photorx.fit_junction`,
:func:`~photorx.doping_profile`, :func:`~photorx.fit_dark_current`); the panel converts
display units to SI and moves artists. See :mod:`photorx.views.widgets_base`.
"""

from __future__ import annotations

import numpy as np

from ..device.cv_profile import doping_profile
from ..device.dark_fit import fit_dark_current
from ..device.junction_fit import fit_junction
from ..device.measurements import DEMO_AREA, demo_measurements
from ..units import format_eng, mm
from .widgets_base import Panel, _widgets, lin_slider, log_slider, rows_html

__all__ = ["MeasuredPartsPanel", "measured_panel"]

_MODELS = ("pin", "abrupt", "graded", "parametric")
_N_CURVE = 200


class MeasuredPartsPanel(Panel):
    """Fit junction models to a measured C-V, extract the doping profile, fit the I-V.

    Controls: the junction model, the junction area, the C-V noise (standard deviation as
    a fraction of C plus a floor; 0 % uses relative weights) and the I-V noise.

    Parameters
    ----------
    cv : pandas.DataFrame, optional
        Measured C-V (:func:`~photorx.read_cv`); default the synthetic demo table.
    iv : pandas.DataFrame, optional
        Measured I-V (:func:`~photorx.read_iv`); default the synthetic demo table.
    area : float, optional
        Junction area [m^2]; default the demo diode's.
    material : str, optional
        Semiconductor (default "Si").
    render : bool
        Render the figure to PNG after every update; default True.
    """

    title = "Measured parts: C-V fit, doping profile, dark-current fit"
    figsize = (12.0, 3.4)

    def __init__(self, cv=None, iv=None, area=None, material="Si", render=True):
        if cv is None or iv is None:
            demo_cv, demo_iv = demo_measurements()
            cv = demo_cv if cv is None else cv
            iv = demo_iv if iv is None else iv
        self.cv, self.iv = cv, iv
        self.area0 = DEMO_AREA if area is None else float(area)
        self.material = material
        self.fit = None
        self.dark = None
        self.profile = None
        super().__init__(render=render)

    def _build_controls(self):
        w = _widgets()
        self.controls = {
            "model": w.Dropdown(options=_MODELS, value="pin", description="C-V model"),
            "area": log_slider("area [mm^2]", self.area0 / mm**2, 1e-3, 100.0),
            "cv_noise": lin_slider("C-V noise [%]", 0.2, 0.0, 5.0, 0.05),
            "iv_noise": lin_slider("I-V noise [%]", 1.0, 0.0, 20.0, 0.5),
        }

    def _build_figure(self):
        ax_c, ax_r, ax_n, ax_i = self.figure.subplots(1, 4)
        self.axes = {"cv": ax_c, "residual": ax_r, "profile": ax_n, "iv": ax_i}
        (self.lines["c_data"],) = ax_c.plot([], [], "o", ms=2.5, color="C0", label="measured")
        (self.lines["c_fit"],) = ax_c.plot([], [], "-", color="C3", label="fit")
        (self.lines["residual"],) = ax_r.plot([], [], "o", ms=2.5, color="C0")
        for limit in (-3.0, 0.0, 3.0):
            ax_r.axhline(limit, color="0.6", lw=0.8, ls="--" if limit else "-")
        (self.lines["profile"],) = ax_n.plot([], [], "o-", ms=2.5, color="C0")
        ax_n.set_yscale("log")
        ax_i.set_yscale("log")
        for ax, (x, y) in zip((ax_c, ax_r, ax_n, ax_i),
                              (("reverse bias [V]", "capacitance [F]"),
                               ("reverse bias [V]", "residual / sigma"),
                               ("depth [m]", "doping [m^-3]"),
                               ("reverse bias [V]", "|dark current| [A]"))):
            ax.set_xlabel(x)
            ax.set_ylabel(y)
            ax.grid(True, alpha=0.3)
        ax_c.legend(fontsize="x-small")

    def _refresh(self):
        area = self.value("area") * mm**2
        cv_v = self.cv["reverse_bias"].to_numpy(float)
        cv_c = self.cv["capacitance"].to_numpy(float)
        frac = self.value("cv_noise") / 100.0
        sigma = None if frac == 0 else frac * cv_c + 1e-3 * frac * np.max(cv_c)
        model = self.value("model")
        self.fit = fit_junction(self.cv, model, sigma=sigma, material=self.material, area=area)
        v = np.linspace(cv_v.min(), cv_v.max(), _N_CURVE)
        self.set_line(self.lines["c_data"], cv_v, cv_c)
        self.set_line(self.lines["c_fit"], v, self.fit.junction.capacitance(v))
        r = self.fit.residuals
        self.set_line(self.lines["residual"], r["reverse_bias"], r["normalised"])
        self.profile = doping_profile(self.cv, area=area, material=self.material)
        self.set_line(self.lines["profile"], self.profile["depth"], self.profile["doping"])
        ifrac = self.value("iv_noise") / 100.0
        cur = self.iv["current"].to_numpy(float)
        isig = None if ifrac == 0 else ifrac * np.abs(cur) + 1e-3 * ifrac * np.max(np.abs(cur))
        self.dark = fit_dark_current(self.iv, junction=self.fit.junction, sigma=isig,
                                     material=self.material)
        self._draw_iv()
        for ax in self.axes.values():
            self.rescale(ax)
        rows = [(name, _pm(value, self.fit.uncertainties[name]))
                for name, value in self.fit.parameters.items()]
        rows += [("reduced chi-square (C-V)", f"{self.fit.reduced_chi_square:.3g}"),
                 ("bias ranges not fitted (C-V)", _ranges(self.fit.misfit_ranges))]
        rows += [(name, _pm(value, self.dark.uncertainties[name]))
                 for name, value in self.dark.parameters.items()]
        rows += [("bias ranges not fitted (I-V)",
                  _ranges([(lo, hi) for lo, hi, _ in self.dark.misfit_ranges]))]
        self.table.value = rows_html(rows, header=("fitted", "value +- 1 sigma (SI)"))
        if not self.fit.fits:
            self.note(f"warning: the {model} model misses the C-V at "
                      f"{_ranges(self.fit.misfit_ranges)}")

    def _draw_iv(self):
        ax = self.axes["iv"]
        for line in list(ax.lines):
            line.remove()
        temps = np.unique(self.iv["temperature"]) if "temperature" in self.iv.columns else [None]
        for k, t in enumerate(temps):
            sel = (np.ones(len(self.iv), dtype=bool) if t is None
                   else self.iv["temperature"].to_numpy() == t)
            v = self.iv["reverse_bias"].to_numpy(float)[sel]
            ax.plot(v, np.abs(self.iv["current"].to_numpy(float)[sel]), "o", ms=2, color=f"C{k}",
                    label=None if t is None else f"{t - 273.15:.0f} degC")
            grid = np.linspace(v.min(), v.max(), _N_CURVE)
            ax.plot(grid, np.abs(self.dark.current(grid, t)), "-", lw=0.9, color=f"C{k}")
        if temps[0] is not None:
            ax.legend(fontsize="x-small")


def _pm(value, sigma):
    return f"{format_eng(value, '')} +- {format_eng(sigma, '')}"


def _ranges(ranges):
    return ", ".join(f"{lo:g} to {hi:g} V" for lo, hi in ranges) or "none"


def measured_panel(cv=None, iv=None, area=None, material="Si", render=True):
    """Build a :class:`MeasuredPartsPanel` (default: the synthetic demo measurements).

    Parameters
    ----------
    cv : pandas.DataFrame, optional
        Measured C-V; default the synthetic demo table.
    iv : pandas.DataFrame, optional
        Measured I-V; default the synthetic demo table.
    area : float, optional
        Junction area [m^2]; default the demo diode's.
    material : str, optional
        Semiconductor (default "Si").
    render : bool
        Render the figure after every update; default True.
    """
    return MeasuredPartsPanel(cv=cv, iv=iv, area=area, material=material, render=render)
