"""The cautions that travel with every report and exported budget (one place, one wording).

Optical receivers sit next to lasers, often invisible infrared ones; avalanche photodiodes
need high bias voltages; photodiode inputs are sensitive to electrostatic discharge; and
every figure photorx gives is a model estimate. The report, the HTML and Markdown exports
of a budget and the command line take their text from here.
"""

from __future__ import annotations

import html

__all__ = ["CAUTIONS", "CAUTIONS_TITLE", "cautions_text", "cautions_markdown", "cautions_html",
           "cautions_short"]

CAUTIONS_TITLE = "Cautions"

CAUTIONS = (
    "Laser eye safety: receivers are tested with lasers, often at invisible infrared "
    "wavelengths such as 850 nm, 1310 nm and 1550 nm. Classify and operate sources according "
    "to IEC 60825-1, never look into a fibre end or connector, and use the protective eyewear "
    "and interlocks the laser class calls for.",
    "High-voltage bias: avalanche photodiodes need bias supplies of tens to hundreds of volts. "
    "Current-limit the supply, insulate and guard exposed nodes, and discharge filter "
    "capacitors before touching the circuit.",
    "Electrostatic discharge: photodiode and amplifier inputs are easily damaged by ESD. Handle "
    "devices at a grounded workstation and keep inputs protected until the circuit is complete.",
    "Model estimates: every figure here is computed from device and circuit models and "
    "invented or entered parameters. Verify bandwidth, stability, noise and sensitivity on "
    "hardware before relying on them.",
    "Local rules: defer to local codes, the standards that apply to your product and licensed "
    "professional practice; these notes do not replace them.",
)


def cautions_short() -> str:
    """Two lines for the terminal table: what the cautions are and where to read them."""
    return ("Cautions: model estimates, verify on hardware; laser eye safety (IEC 60825-1), "
            "high-voltage bias\nand ESD apply on the bench. Full text: `photorx report` or "
            "the Markdown/HTML export.")


def cautions_text() -> str:
    """The cautions as plain text, one bullet per line."""
    return CAUTIONS_TITLE + "\n" + "\n".join(f"- {c}" for c in CAUTIONS)


def cautions_markdown(level: int = 2) -> str:
    """The cautions as a Markdown section with a heading of the given level.

    Parameters
    ----------
    level : int, optional
        Heading level, the number of ``#`` (default 2, a section under the document
        title); 1 to 6 for a heading Markdown renders (not checked).
    """
    return "#" * level + f" {CAUTIONS_TITLE}\n\n" + "\n".join(f"- {c}" for c in CAUTIONS) + "\n"


def cautions_html(level: int = 2) -> str:
    """The cautions as an HTML fragment (heading and list), text escaped.

    Parameters
    ----------
    level : int, optional
        Heading level of the ``<hN>`` element (default 2); 1 to 6, the levels HTML has
        (not checked).
    """
    items = "\n".join(f"  <li>{html.escape(c)}</li>" for c in CAUTIONS)
    return (f'<section class="cautions">\n<h{level}>{CAUTIONS_TITLE}</h{level}>\n'
            f"<ul>\n{items}\n</ul>\n</section>\n")
