"""The transimpedance stage as a circuit drawing with its component values (schemdraw).

The drawing shows the photodiode (its capacitance and shunt resistance at the operating
point) reverse-biased from the bias supply into the amplifier's summing node, the feedback
resistor and capacitor, the amplifier's gain-bandwidth product, DC gain and input
capacitance, and the post filter at the output. The values come from the design and from
the photodiode's equivalent circuit (:meth:`photorx.Receiver.equivalent_circuit`); nothing
is computed here. schemdraw draws into a matplotlib Axes made without pyplot, so the
drawing works headless and embeds like any other figure.
"""

from __future__ import annotations

import numpy as np

from ..units import format_eng

__all__ = ["schematic_labels", "draw_tia_schematic"]


def _v(x) -> float:
    return float(np.asarray(x, dtype=float))


def _ohm(value) -> str:
    return format_eng(_v(value), "ohm").replace("ohm", "\u03a9")


def schematic_labels(rx) -> dict:
    """The text of every component label of :func:`draw_tia_schematic`.

    Parameters
    ----------
    rx : Receiver
        The design (one design point).

    Returns
    -------
    dict of str to str
        ``"rf"``, ``"cf"``, ``"photodiode"``, ``"bias"``, ``"amplifier"`` and ``"output"``
        -> label text with engineering units.
    """
    net = rx.equivalent_circuit()
    amp = rx.tia.amp
    pf = rx.post_filter
    out = "output"
    if pf is not None:
        order = int(pf.order)
        suffix = {1: "st", 2: "nd", 3: "rd"}.get(order, "th")
        out = (f"output \u2192 post filter\n{order}{suffix}-order {str(pf.kind).capitalize()}, "
               f"{format_eng(_v(pf.cutoff), 'Hz')}")
    shunt = _v(net.shunt_resistance)
    return {
        "rf": f"Rf\n{_ohm(rx.tia.rf)}",
        "cf": f"Cf\n{format_eng(_v(rx.tia.cf), 'F')}",
        "photodiode": (f"photodiode\nCd {format_eng(_v(net.capacitance), 'F')}\n"
                       f"Rsh {_ohm(shunt) if np.isfinite(shunt) else 'open'}"),
        "bias": f"VR\n{format_eng(_v(rx.reverse_bias), 'V')}",
        "amplifier": (f"GBW {format_eng(_v(amp.gbw), 'Hz')}\nA0 {_v(amp.dc_gain):.4g}\n"
                      f"Cin {format_eng(_v(amp.input_capacitance), 'F')}"),
        "output": out,
    }


def draw_tia_schematic(rx, ax=None):
    """Draw the transimpedance stage of ``rx`` with its component values.

    Parameters
    ----------
    rx : Receiver
        The design (one design point).
    ax : matplotlib.axes.Axes, optional
        Axes to draw into; by default a new Figure (no pyplot).

    Returns
    -------
    matplotlib.figure.Figure
    """
    import schemdraw
    import schemdraw.elements as elm

    if ax is None:
        from matplotlib.figure import Figure

        fig = Figure(figsize=(8.0, 5.2))
        ax = fig.add_axes((0, 0, 1, 1))
    fig = ax.figure
    labels = schematic_labels(rx)
    with schemdraw.Drawing(canvas=ax, show=False) as d:
        d.config(fontsize=10, unit=2.2)
        op = d.add(elm.Opamp(leads=True).label(labels["amplifier"], loc="center",
                                               ofst=(0.1, -1.9), fontsize=9))
        d.add(elm.Line().at(op.in2).down(0.9))
        d.add(elm.Ground())
        d.add(elm.Line().at(op.in1).left(2.6))
        node = d.add(elm.Dot())
        # the diode's cathode at the summing node, its anode at -VR: reverse biased
        d.add(elm.Photodiode().at(node.center).down(2.6).reverse()
              .label(labels["photodiode"], loc="top", ofst=0.3, fontsize=9))
        # "-" towards the diode: the anode sits at -VR
        d.add(elm.SourceV().down(2.0).label(labels["bias"], loc="top", ofst=0.3, fontsize=9))
        d.add(elm.Ground())
        d.add(elm.Line().at(node.center).up(1.4))
        split = d.add(elm.Dot())
        d.add(elm.Resistor().right().tox(op.out).label(labels["rf"], loc="top", fontsize=9))
        join = d.add(elm.Dot())
        d.add(elm.Line().down().toy(op.out))
        d.add(elm.Line().at(split.center).up(1.6))
        d.add(elm.Capacitor().right().tox(op.out).label(labels["cf"], loc="top", fontsize=9))
        d.add(elm.Line().down().toy(join.center))
        d.add(elm.Line().at(op.out).right(1.0))
        d.add(elm.Dot(open=True).label(labels["output"], loc="right", fontsize=9))
        d.draw(show=False)
        bbox = d.get_bbox()
    # the labels beside the diode and after the output reach beyond the wires' box
    ax.set_xlim(bbox.xmin - 3.2, bbox.xmax + 4.6)
    ax.set_ylim(bbox.ymin - 0.6, bbox.ymax + 1.0)
    ax.set_aspect("equal")
    ax.set_axis_off()
    return fig
