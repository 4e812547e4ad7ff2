"""Interactive panels for Jupyter: one per stage of the receiver, all logic in the package.

Each builder returns a panel object holding its ipywidgets controls (``panel.controls``),
its matplotlib figure (``panel.figure``, made once and updated in place), its output area
(``panel.image``, ``panel.table``) and a message area (``panel.message``), with an
``update()`` method. Display a panel with ``display(panel)`` or by leaving it as the last
expression of a cell. The notebooks in ``notebooks/`` are thin wrappers around these.

=========================  ==================================================================
builder                    what it shows
=========================  ==================================================================
:func:`junction_panel`     W, Q and C against bias for each junction type; forward bias with
                           diffusion capacitance; the parametric fit
:func:`photodiode_panel`   QE and responsivity against wavelength and bias, speed limits and
                           dark current against bias and temperature
:func:`loop_panel`         loop gain against open-loop gain and noise gain, closed-loop and
                           step response, margins; designs Cf for a target
:func:`noise_panel`        stacked noise density by source, the budget table, NEP and SNR,
                           post-filter choice
:func:`tradeoff_panel`     every figure against reverse bias, the constrained optimiser,
                           exports of the budget tables and the report
:func:`closed_forms_panel` sympy derivations rendered, numeric checks beside them
:func:`avalanche_panel`    APD gain and excess noise against bias, SNR or sensitivity against
                           gain with the optimum, temperature-compensated bias
:func:`measured_panel`     measured C-V fit with residuals, doping profile, dark-current fit
=========================  ==================================================================

Every builder takes an optional receiver (a :class:`~photorx.Receiver`, or the name or path
of a design file) and defaults to the embedded demo design. Panels need no live frontend:
the figure is drawn with matplotlib's Agg canvas and shown as a PNG image widget, so they
work (and are tested) headless. Invalid combinations, such as an unstable loop or a bias
beyond breakdown, appear in the message area instead of raising.

Examples
--------
>>> import photorx.views.widgets as pw
>>> panel = pw.loop_panel()                       # doctest: +SKIP
>>> panel.controls["rf"].value = 10e3             # doctest: +SKIP
>>> panel.metrics.phase_margin                    # doctest: +SKIP
"""

from __future__ import annotations

from .widgets_base import Panel
from .widgets_circuit import LoopPanel, NoisePanel, loop_panel, noise_panel
from .widgets_device import JunctionPanel, PhotodiodePanel, junction_panel, photodiode_panel
from .widgets_receiver import TradeoffPanel, tradeoff_panel
from .widgets_symbolic import ClosedFormsPanel, closed_forms_panel
from .widgets_apd import AvalanchePanel, avalanche_panel
from .widgets_measured import MeasuredPartsPanel, measured_panel

__all__ = [
    "Panel",
    "JunctionPanel",
    "PhotodiodePanel",
    "LoopPanel",
    "NoisePanel",
    "TradeoffPanel",
    "ClosedFormsPanel",
    "junction_panel",
    "photodiode_panel",
    "loop_panel",
    "noise_panel",
    "tradeoff_panel",
    "closed_forms_panel",
    "AvalanchePanel",
    "avalanche_panel",
    "MeasuredPartsPanel",
    "measured_panel",
    "PANELS",
]

#: builder name -> builder, in the order of the stages
PANELS = {
    "junction": junction_panel,
    "photodiode": photodiode_panel,
    "loop": loop_panel,
    "noise": noise_panel,
    "tradeoff": tradeoff_panel,
    "closed_forms": closed_forms_panel,
    "avalanche": avalanche_panel,
}
