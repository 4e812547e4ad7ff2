"""The ``photorx`` command: budgets, sweeps, optimisation, templates and reports of a design.

Every subcommand takes an optional design (a TOML file or the name of a shipped demo;
default: the embedded 1310 nm InGaAs PIN demo). Errors print one line on stderr and
exit with status 2 (bad usage or bad design) or 1 (could not complete: I/O, no feasible
design); never a traceback (set ``PHOTORX_DEBUG=1`` to see one).
"""

from __future__ import annotations

import argparse
import math
import os
import re
import sys
import warnings
from pathlib import Path

import numpy as np

from .errors import DesignError

__all__ = ["main", "parse_axis", "parse_constraint", "MAX_POINTS", "YES_NO_FIGURES"]

EXIT_OK, EXIT_FAILURE, EXIT_USAGE = 0, 1, 2
#: Exit status after the reader of standard output went away: 128 + SIGPIPE (13), what a
#: shell reports for a pipeline stage stopped by a broken pipe (common practice).
EXIT_BROKEN_PIPE = 141

#: Sweep axes offered as options (``--reverse-bias 0:20:81``); others via ``--axis NAME=SPEC``.
_AXIS_OPTIONS = ("reverse_bias", "rf", "cf", "wavelength", "optical_power", "temperature", "area")


class UsageError(Exception):
    """A command-line usage error (exit status 2)."""


class _Parser(argparse.ArgumentParser):
    def error(self, message):  # one line, no usage dump
        raise UsageError(f"{self.prog}: {message} (see '{self.prog} --help')")


# ------------------------------------------------------------------------------------------
# argument helpers
# ------------------------------------------------------------------------------------------
def _quantity(text: str, name: str | None = None) -> float:
    """Parse ``text``; when ``name`` is a known parameter or figure, require its unit."""
    from .units import parse_quantity

    return parse_quantity(text.strip(), _expected_unit(name))


def _expected_unit(name: str | None):
    """SI unit of a design parameter (from the design-file schema) or of a receiver figure."""
    if not name:
        return None
    from .analysis.receiver import FIGURES
    from .designschema import SCHEMA

    name = name.split(".")[-1]
    for key in SCHEMA:
        if name in (key.argument, key.name) and key.kind == "quantity" and key.unit:
            return key.unit
    unit = FIGURES.get(name, (None,))[0]
    if unit in (None, "", "deg", "dB", "dBm"):
        return None
    return unit.replace("rtHz", "Hz^0.5")


#: Largest sweep grid the command line evaluates unless --max-points raises it.
MAX_POINTS = 10**6


def parse_axis(name: str, spec: str, max_points: int = MAX_POINTS) -> np.ndarray:
    """Values of a sweep axis from ``START:STOP:N[:log]`` or a comma list, in SI.

    ``"0:20:81"`` is 81 points from 0 to 20 inclusive; ``"1 kohm:100 kohm:21:log"`` is
    logarithmically spaced; ``"1e3,5e3,10e3"`` or ``"1 pF,2 pF"`` lists the values.
    An axis of more than ``max_points`` points is a :class:`DesignError` (before any
    memory is allocated for it); so are ends that are not finite.

    Parameters
    ----------
    name : str
        Parameter swept (a receiver field, e.g. ``"reverse_bias"``); a value written with a
        unit must carry that parameter's unit, and error messages name ``--<name>``.
    spec : str
        ``START:STOP:N`` (linear, N >= 1 points, both ends included), ``START:STOP:N:log``
        (geometric; both ends > 0) or a comma-separated list; values as numbers in SI or
        quantities with units. The ends must be finite.
    max_points : int
        Largest N allowed for ``START:STOP:N`` (default ``MAX_POINTS`` = 10**6).

    Returns
    -------
    numpy.ndarray
        Axis values in SI units.
    """
    text = spec.strip()
    try:
        if ":" in text:
            parts = text.split(":")
            log = parts[-1].strip().lower() == "log"
            if log:
                parts = parts[:-1]
            if len(parts) != 3:
                raise ValueError
            start, stop = _quantity(parts[0], name), _quantity(parts[1], name)
            n = int(parts[2])
            if n < 1:
                raise ValueError
            if n > max_points:
                raise DesignError(f"--{name.replace('_', '-')} {spec!r}: {n} points, more than "
                                  f"--max-points {max_points}; raise --max-points to sweep "
                                  "that many", parameter=name)
            if not (math.isfinite(start) and math.isfinite(stop)):
                raise DesignError(f"--{name.replace('_', '-')} {spec!r}: the ends must be "
                                  "finite", parameter=name)
            if log:
                if start <= 0 or stop <= 0:
                    raise DesignError(f"--{name}: a log axis needs positive ends, got {spec!r}",
                                      parameter=name)
                return np.geomspace(start, stop, n)
            return np.linspace(start, stop, n)
        values = [_quantity(v, name) for v in text.split(",") if v.strip()]
        if not values:
            raise ValueError
        return np.asarray(values, dtype=float)
    except DesignError:
        raise
    except ValueError:
        raise DesignError(f"--{name.replace('_', '-')} {spec!r}: write START:STOP:N "
                          "(e.g. 0:20:81), "
                          "START:STOP:N:log or a comma-separated list", parameter=name) from None


_CONSTRAINT = re.compile(r"^\s*([A-Za-z_][\w.]*)\s*(>=|<=)\s*(.+)$")


def parse_constraint(text: str) -> tuple[str, tuple[str, float]]:
    """``"bandwidth>=1 GHz"`` -> ``("bandwidth", (">=", 1e9))``; yes/no figures are refused.

    Parameters
    ----------
    text : str
        ``FIGURE>=VALUE`` or ``FIGURE<=VALUE``: a numeric receiver figure and a number (SI)
        or a quantity in that figure's unit. Anything else is a :class:`DesignError`.
    """
    m = _CONSTRAINT.match(text)
    if not m:
        raise DesignError(f"--constraint {text!r}: write FIGURE>=VALUE or FIGURE<=VALUE, "
                          "e.g. 'bandwidth>=1 GHz'", parameter="constraint")
    _require_numeric_figure(m.group(1), f"--constraint {text!r}")
    return m.group(1), (m.group(2), _quantity(m.group(3), m.group(1)))


#: Receiver figures that are yes/no answers (checks), not numbers with an order.
YES_NO_FIGURES = frozenset({"stable", "bias_below_breakdown", "bias_within_limit",
                            "dark_current_within_limit", "bias_power_within_limit",
                            "bandwidth_for_bit_rate"})


def _is_yes_no(name: str) -> bool:
    return name in YES_NO_FIGURES or name.endswith("_within_limit")


def _require_numeric_figure(name: str, where: str) -> None:
    if _is_yes_no(name):
        raise DesignError(f"{where}: {name} is a yes/no figure, not a number to optimise or "
                          f"bound; the optimiser keeps every design stable and reports the "
                          "checks", parameter=name)


def _objective(text: str) -> str:
    """``--objective`` value: a figure name, optionally ``max:``/``min:``; not a yes/no figure."""
    name = text.split(":", 1)[1] if text.startswith(("max:", "min:")) else text
    try:
        _require_numeric_figure(name.strip(), f"--objective {text!r}")
    except DesignError as exc:
        raise argparse.ArgumentTypeError(str(exc).split(": ", 1)[1]) from None
    return text


def _at_least(low: int):
    """argparse type: an integer >= ``low``."""
    def parse(text: str) -> int:
        try:
            value = int(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"{text!r} is not an integer") from None
        if value < low:
            raise argparse.ArgumentTypeError(f"{value} is below the least value, {low}")
        return value

    parse.__name__ = f"integer >= {low}"
    return parse


def _parse_vary(text: str) -> tuple[str, tuple[float, float]]:
    name, sep, rng = text.partition("=")
    parts = rng.split(":")
    if not sep or len(parts) != 2 or not name.strip():
        raise DesignError(f"--vary {text!r}: write NAME=LOW:HIGH, e.g. reverse_bias=0:20",
                          parameter="vary")
    name = name.strip().replace("-", "_")
    low, high = _quantity(parts[0], name), _quantity(parts[1], name)
    if not low < high:
        raise DesignError(f"--vary {text!r}: LOW must be below HIGH, e.g. "
                          f"{name}={parts[1].strip()}:{parts[0].strip()}", parameter="vary")
    return name, (low, high)


#: Design being evaluated, named in errors raised after it loaded (the file is fine then,
#: but a figure cannot be computed at its operating point).
_CURRENT = {"design": None}

#: What an evaluation error's parameter means in the user's terms.
_EVALUATION_HINTS = {
    "v_r": "the reverse bias: [operating_point] reverse_bias or --reverse-bias",
    "reverse_bias": "set in [operating_point] reverse_bias or --reverse-bias",
    "responsivity": "no photocurrent: check [operating_point] wavelength against the "
                    "absorption edge of the photodiode material, or give [photodiode] "
                    "responsivity",
    "dark_current": "the diode current turns negative in forward bias (reverse_bias < 0); "
                    "evaluate the receiver at a reverse bias >= 0",
}


def _load(design):
    from .designfile import DEFAULT_DESIGN, load_design

    rx = load_design(design)
    _CURRENT["design"] = design or f"{DEFAULT_DESIGN} (embedded demo)"
    return rx


def _write_or_print(text: str, output) -> None:
    if output in (None, "-"):
        sys.stdout.write(text)
    else:
        from ._files import atomic_write_text

        atomic_write_text(output, text)
        print(f"wrote {output}", file=sys.stderr)


# ------------------------------------------------------------------------------------------
# subcommands
# ------------------------------------------------------------------------------------------
def _cmd_budget(args) -> int:
    from .views.tables import EXPORT_FORMATS, normalize_format

    fmt = args.format
    if fmt is None and args.output not in (None, "-"):
        suffix = Path(args.output).suffix.lower().lstrip(".")
        fmt = suffix if suffix in set(EXPORT_FORMATS) | {"markdown", "tex", "htm"} else "text"
        if fmt == "text" and suffix not in ("txt", "text", ""):
            print(f"photorx: note: suffix '.{suffix}' is not an export format; writing the "
                  "text table (use --format csv, md, latex, html or json)", file=sys.stderr)
    fmt = "text" if fmt in (None, "text") else normalize_format(fmt)
    from .designfile import design_name

    from .views.budget import receiver_budget

    rx = _load(args.design)
    result = rx.evaluate()  # once, for the budget and its warnings
    budget = receiver_budget(rx, title=design_name(args.design) or None, result=result)
    text = str(budget) if fmt == "text" else {
        "csv": budget.to_csv, "md": budget.to_markdown, "latex": budget.to_latex,
        "html": budget.to_html, "json": budget.to_json}[fmt]()
    _write_or_print(text, args.output)
    _warn_failed_checks(rx, result)
    return EXIT_OK


def _warn_failed_checks(rx, result=None) -> None:
    """One line on stderr for every check of ``rx.checks()`` that fails (``result``: its
    evaluation, computed when not given)."""
    from .analysis.checks import check_rows, check_warning

    rows, _ = check_rows(rx, result)  # the rows of rx.checks(), without building its frame
    for row in rows:
        if not row["ok"]:
            print(f"photorx: warning: {check_warning(row)}", file=sys.stderr)


def _cmd_sweep(args) -> int:
    from .analysis.sweep import sweep

    axes = {}
    for name in _AXIS_OPTIONS:
        spec = getattr(args, name)
        if spec is not None:
            axes[name] = parse_axis(name, spec, args.max_points)
    for item in args.axis or ():
        name, sep, spec = item.partition("=")
        if not sep or not name.strip():
            raise DesignError(f"--axis {item!r}: write NAME=SPEC, e.g. i_thickness=1e-6:4e-6:7",
                              parameter="axis")
        axes[name.strip().replace("-", "_").replace(".", "__")] = parse_axis(name.strip(), spec,
                                                                             args.max_points)
    if not axes:
        raise UsageError("photorx sweep: give at least one axis, e.g. --reverse-bias 0:20:81 "
                         "(see 'photorx sweep --help')")
    total = math.prod(len(v) for v in axes.values())
    if total > args.max_points:
        raise UsageError(f"photorx sweep: the grid has {total} points, more than --max-points "
                         f"{args.max_points}; use fewer points or raise --max-points")
    rx = _load(args.design)
    from tqdm import tqdm

    # the bar appears once the sweep has run for a second (or at once from the hidden
    # --progress-threshold number of points on, for tests)
    forced = args.progress_threshold is not None and total >= args.progress_threshold
    with tqdm(total=total, file=sys.stderr, disable=args.quiet, delay=0 if forced else 1.0,
              ascii=".#", unit="point", leave=True,
              bar_format="sweep [{bar:30}] {n_fmt}/{total_fmt} points "
                         "[{elapsed}<{remaining}]") as bar:

        def progress(done, n):
            bar.update(done - bar.n)

        frame = sweep(rx, progress=progress, max_points=args.max_points, **axes)
    if args.columns:
        wanted = [c.strip() for c in args.columns.split(",") if c.strip()]
        unknown = [c for c in wanted if c not in frame.columns]
        if unknown:
            raise DesignError(f"--columns: unknown column(s) {', '.join(unknown)}; known: "
                              f"{', '.join(frame.columns)}", parameter="columns")
        keep = list(dict.fromkeys([c.replace("__", ".") for c in axes] + wanted))
        frame = frame[[c for c in keep if c in frame.columns]]
    # headers carry the SI unit ("bandwidth [Hz]"); figures that do not exist (no post
    # filter, no phase crossover) read "none", as in the budget exports
    # (photorx.views.read_sweep_csv reads both back)
    from .analysis.sweep import column_units
    from .views.sweep_units import sweep_csv_text

    frame.attrs["units"] = column_units(frame.columns)
    _write_or_print(sweep_csv_text(frame), args.output)
    return EXIT_OK


def _cmd_optimize(args) -> int:
    from .analysis.optimize import optimize
    from .units import format_eng

    if not args.vary:
        raise UsageError("photorx optimize: give at least one --vary NAME=LOW:HIGH, e.g. "
                         "--vary reverse_bias=0:20 (see 'photorx optimize --help')")
    vary = dict(_parse_vary(v) for v in args.vary)
    constraints = dict(parse_constraint(c) for c in args.constraint or ())
    rx = _load(args.design)
    res = optimize(rx, vary=vary, objective=args.objective, constraints=constraints,
                   grid_points=args.grid_points)
    name = res.objective.split(" ", 1)[-1]
    unit = _figure_unit(name)
    lines = [f"objective: {res.objective} = {format_eng(res.value, unit)}",
             f"feasible: {'yes' if res.success else 'no'} ({res.evaluations} evaluations)"]
    lines += [f"  {name} = {format_eng(value, _unit_of(name))}"
              for name, value in res.parameters.items()]
    if res.flat:
        tol = f"{100 * res.flat_tolerance:g} %"
        lines.append(f"flat objective: within {tol} of the optimum at less bias; least bias "
                     f"for the same result ({name} = {format_eng(res.low_bias_value, unit)}):")
        lines += [f"  {p} = {format_eng(value, _unit_of(p))}"
                  for p, value in res.low_bias_parameters.items()]
    lines += [f"note: {note}" for note in res.notes]  # the design's bounds on vary
    if len(res.constraints):
        lines.append("constraints (given, then the design's limits):")
        for row in res.constraints.itertuples(index=False):
            state = "active" if row.active else ("ok" if row.satisfied else "VIOLATED")
            cunit = _figure_unit(row.figure)
            tag = "" if row.source == "given" else f" [{row.source}]"
            lines.append(f"  {row.figure} {row.relation} {format_eng(row.limit, cunit)}: "
                         f"{format_eng(row.value, cunit)} ({state}){tag}")
    print("\n".join(lines))
    _warn_failed_checks(res.receiver)
    if args.save:
        from .designfile import save_design

        save_design(res.receiver, args.save, name="optimised design")
        print(f"wrote {args.save}", file=sys.stderr)
    if args.trade_curve:
        # figures that do not exist read "none" in this export too
        curve = res.trade_curve.replace([np.inf, -np.inf], np.nan)
        _write_or_print(curve.to_csv(index=False, lineterminator="\n", na_rep="none"),
                        args.trade_curve)
    if not res.success:
        print("photorx optimize: no design satisfies every constraint", file=sys.stderr)
        return EXIT_FAILURE
    return EXIT_OK


def _figure_unit(name: str) -> str:
    from .analysis.receiver import FIGURES

    return FIGURES.get(name, ("",))[0]


def _unit_of(name: str) -> str:
    from .designfile import SCHEMA

    for key in SCHEMA:
        if key.arg == name.split(".")[-1].split("__")[-1] and key.unit:
            return key.unit if "^" not in key.unit else ""
    return ""


def _cmd_template(args) -> int:
    from .designfile import design_template

    if args.output not in (None, "-") and Path(args.output).exists() and not args.force:
        print(f"photorx template: {args.output} exists; use --force to overwrite", file=sys.stderr)
        return EXIT_FAILURE
    _write_or_print(design_template(), args.output)
    return EXIT_OK


def _cmd_report(args) -> int:
    from .views.report import write_report

    from .designfile import design_name

    rx = _load(args.design)
    title = (args.title or design_name(args.design)
             or (Path(args.design).stem if args.design else "photorx receiver report"))
    study = None
    if args.tolerance:  # the design file's [tolerances] and [specs]
        from .analysis.tolerance import tolerance_study
        from .designfile import load_study

        _, tolerances, specs = load_study(args.design)
        if not tolerances or not specs:
            raise UsageError("photorx report: --tolerance needs [tolerances] and [specs] "
                             "sections in the design file (see 'photorx template')")
        study = tolerance_study(rx, tolerances, specs, n=args.tolerance, figures=[])
    path = write_report(rx, args.output, title=title, study=study)
    print(f"wrote {path}", file=sys.stderr)
    _warn_failed_checks(rx)
    return EXIT_OK


def _cmd_tolerance(args) -> int:
    """Monte Carlo yield over tolerances (``--tol``, ``[tolerances]``) and specs."""
    from .analysis.tolerance import tolerance_study
    from .designfile import load_study
    from .units import format_eng

    rx, tolerances, specs = load_study(args.design)
    for item in args.tol or ():
        name, sep, spec = item.partition("=")
        if not sep or not name.strip() or not spec.strip():
            raise DesignError(f"--tol {item!r}: write NAME=TOLERANCE, e.g. rf=1% or "
                              "cf=normal:2%", parameter="tol")
        tolerances[name.strip().replace("-", "_")] = spec.strip()
    for text in args.spec or ():
        figure, condition = parse_constraint(text)
        specs[figure] = condition
    if not tolerances or not specs:
        raise UsageError("photorx tolerance: give at least one --tol NAME=TOLERANCE and one "
                         "--spec FIGURE>=VALUE (or [tolerances] and [specs] in the design "
                         "file; see 'photorx template')")
    temperatures = (None if args.temperature is None
                    else parse_axis("temperature", args.temperature))
    figures = ([] if args.figures is None else None if args.figures.strip() == "all"
               else [f.strip() for f in args.figures.split(",") if f.strip()])
    study = tolerance_study(rx, tolerances, specs, n=args.n, temperatures=temperatures,
                            seed=args.seed, chunk_size=args.chunk_size, figures=figures,
                            progress=not args.quiet)
    low, high = study.yield_interval
    lines = [f"yield: {100 * study.yield_fraction:.2f} % (95 % Wilson interval "
             f"{100 * low:.2f} .. {100 * high:.2f} %) of {study.n} units"
             + ("" if study.temperatures is None else
                f" at {len(study.temperatures)} temperature corners"),
             "pass fraction per spec:"]
    for label, row in study.by_spec.iterrows():
        lines.append(f"  {label}: {100 * row.pass_fraction:.2f} % ({row.failures} failing)")
    lines.append("drivers (Spearman rank correlation of each tolerance with "
                 + ("failure" if study.drivers["measure"].iloc[0] == "failure"
                    else "the worst spec margin; no unit fails") + "):")
    for name, row in study.drivers.iterrows():
        rho = "n/a" if not np.isfinite(row.rho) else f"{row.rho:+.3f}"
        lines.append(f"  {name}: rho {rho}, share {100 * np.nan_to_num(row.share):.0f} % "
                     f"({row.tolerance})")
    if study.by_temperature is not None:
        lines.append("yield by temperature:")
        for t, row in study.by_temperature.iterrows():
            lines.append(f"  {format_eng(t - 273.15, 'degC')} ({format_eng(t, 'K')}): "
                         f"{100 * row['yield']:.2f} %")
    print("\n".join(lines))
    if args.output:
        frame = study.samples.replace([np.inf, -np.inf], np.nan)
        _write_or_print(frame.to_csv(index=False, lineterminator="\n", na_rep="none"),
                        args.output)
    return EXIT_OK


def _cmd_demos(args) -> int:
    from .designfile import DEFAULT_DESIGN, DEMO_DESIGNS

    for name, text in DEMO_DESIGNS.items():
        print(f"{name:18s} {text}{' [default]' if name == DEFAULT_DESIGN else ''}")
    return EXIT_OK


_EYE_IMAGE_FORMATS = ("png", "svg", "pdf")


def _cmd_eye(args) -> int:
    """Eye figures of a design at a bit rate; the density eye to an image with --output."""
    from .units import format_eng

    rx = _load(args.design)
    rate = _quantity(args.bit_rate, "bit_rate") if args.bit_rate is not None else rx.bit_rate
    if rate is None:
        raise DesignError("bit_rate is not set in the design: give --bit-rate (e.g. 10G); "
                          "valid range: 1 bit/s to 1e12 bit/s", parameter="bit_rate")
    if args.output not in (None, "-"):
        suffix = Path(args.output).suffix.lower().lstrip(".")
        if suffix not in _EYE_IMAGE_FORMATS:
            raise UsageError(f"photorx eye: --output {args.output}: the image type comes from "
                             f"the suffix; valid: {', '.join('.' + s for s in _EYE_IMAGE_FORMATS)}")
    eye = rx.eye(bit_rate=rate, pattern=args.pattern, modulation=args.modulation)
    rows = [("bit rate", format_eng(eye.bit_rate, "bit/s")),
            ("pattern", f"{eye.modulation.upper()} {eye.pattern.upper()}"),
            ("vertical eye opening (fraction of ideal)", f"{eye.opening:.4f}"),
            ("worst-case pattern opening", f"{eye.worst_case_opening:.4f}"),
            (f"eye height at BER {eye.target_ber:g}", format_eng(eye.height, "V")),
            (f"eye width at BER {eye.target_ber:g}", format_eng(eye.width, "s")),
            ("ISI jitter, peak to peak", format_eng(eye.jitter_pp, "s")),
            ("sensitivity, noise only", f"{10 * np.log10(eye.sensitivity_noise_only / 1e-3):.2f} dBm"),
            ("sensitivity with ISI", f"{eye.sensitivity_dbm:.2f} dBm"),
            ("ISI power penalty", f"{eye.isi_penalty_db:.3f} dB"),
            ("worst-case ISI penalty", f"{eye.worst_case_penalty_db:.3f} dB"),
            ("Personick I2, I3", f"{eye.personick_i2:.4f}, {eye.personick_i3:.4f}")]
    width = max(len(k) for k, _ in rows)
    sys.stdout.write("".join(f"{k:<{width}}  {v}\n" for k, v in rows))
    if args.output not in (None, "-"):
        import io

        from ._files import atomic_write_bytes

        buffer = io.BytesIO()
        eye.plot().savefig(buffer, format=Path(args.output).suffix.lower().lstrip("."), dpi=120)
        atomic_write_bytes(args.output, buffer.getvalue())  # never a partly written image
        print(f"wrote {args.output}", file=sys.stderr)
    return EXIT_OK


def _add_eye_parser(sub, design_help) -> None:
    p = sub.add_parser("eye", help="eye diagram, ISI penalty and sensitivity at a bit rate",
                       description="Eye figures of a design for a PRBS pattern at a bit rate "
                                   "(pulse response of the whole chain and Gaussian noise), "
                                   "and the density eye as an image.")
    p.add_argument("design", nargs="?", help=design_help)
    p.add_argument("--bit-rate", metavar="RATE",
                   help="bit rate, e.g. 10G or '2.5 Gbit/s' (default: the design's)")
    p.add_argument("--pattern", default="prbs7",
                   help="prbs7 (default), prbs9, prbs10, prbs11 or prbs15")
    p.add_argument("--modulation", default="nrz", choices=["nrz", "pam4"],
                   help="nrz (default) or pam4 (two bits per symbol)")
    p.add_argument("-o", "--output", help="image file for the eye (.png, .svg or .pdf)")
    p.set_defaults(func=_cmd_eye)


# ------------------------------------------------------------------------------------------
# parser
# ------------------------------------------------------------------------------------------
def build_parser() -> argparse.ArgumentParser:
    from . import __version__

    parser = _Parser(prog="photorx", description=(
        "Optical-receiver design from the photodiode junction up: bias, speed, stability and "
        "noise budgets of a design file (default: the embedded 1310 nm InGaAs PIN demo)."),
        epilog="Results are model estimates; verify on hardware. Exit status: 0 ok, 1 failed, "
               "2 bad usage or design.")
    parser.add_argument("--version", action="version", version=f"photorx {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    design_help = "design file (TOML) or demo name; default: the embedded demo"

    p = sub.add_parser("budget", help="print or export the receiver budget of a design",
                       description="Print the budget tables of a design, or export them.")
    p.add_argument("design", nargs="?", help=design_help)
    p.add_argument("-f", "--format", choices=["text", "csv", "md", "markdown", "latex", "tex",
                                              "html", "json"],
                   help="output format (default: text, or from the --output suffix)")
    p.add_argument("-o", "--output", help="write to FILE instead of standard output")
    p.set_defaults(func=_cmd_budget)

    p = sub.add_parser("sweep", help="sweep design parameters on a cartesian grid to CSV",
                       description="Evaluate the design over a cartesian grid of parameters "
                                   "and write one CSV row per point. Axes: START:STOP:N, "
                                   "START:STOP:N:log or a comma list; values in SI or with "
                                   "units ('1 kohm:100 kohm:21:log').",
                       epilog="Each CSV header names its column's SI unit, "
                              "'bandwidth [Hz]', 'nep [W/rtHz]' (bare for ratios, flags and "
                              "text); values are SI numbers without prefixes, 'none' where a "
                              "figure does not exist; noise_* are input-referred rms "
                              "currents in A. Read back with photorx.views.read_sweep_csv. "
                              "Negative values may follow the option directly "
                              "(--temperature -20degC:60degC:9).")
    p.add_argument("design", nargs="?", help=design_help)
    for name in _AXIS_OPTIONS:
        p.add_argument(f"--{name.replace('_', '-')}", dest=name, metavar="SPEC",
                       help=f"values of {name}")
    p.add_argument("--axis", action="append", metavar="NAME=SPEC",
                   help="any other parameter (field name or dotted path), repeatable")
    p.add_argument("--columns", help="comma-separated result columns to keep (default: all)")
    p.add_argument("-o", "--output", help="CSV file (default: standard output)")
    p.add_argument("-q", "--quiet", action="store_true",
                   help="no progress bar (shown on sweeps that run longer than a second)")
    p.add_argument("--max-points", type=_at_least(1), default=MAX_POINTS, metavar="N",
                   help=f"largest grid to evaluate (default: {MAX_POINTS:,}; a point takes "
                        "about a kilobyte while it is evaluated)")
    p.add_argument("--progress-threshold", type=int, default=None, help=argparse.SUPPRESS)
    p.set_defaults(func=_cmd_sweep)

    p = sub.add_parser("optimize", help="optimise parameters under constraints",
                       description="Find the parameters that optimise an objective figure "
                                   "subject to constraints on other figures.")
    p.add_argument("design", nargs="?", help=design_help)
    p.add_argument("--vary", action="append", metavar="NAME=LOW:HIGH",
                   help="parameter and its bounds, repeatable (e.g. reverse_bias=0:20)")
    p.add_argument("--objective", default="snr", type=_objective,
                   help="figure to optimise, e.g. snr, nep, sensitivity_dbm, or max:NAME / "
                        "min:NAME (default: snr)")
    p.add_argument("--constraint", action="append", metavar="FIGURE>=VALUE",
                   help="e.g. 'bandwidth>=1 GHz', 'phase_margin>=60', repeatable")
    p.add_argument("--grid-points", type=_at_least(2), default=2000,
                   help="size of the coarse grid searched before refinement (default: 2000)")
    p.add_argument("--save", metavar="FILE", help="write the optimised design to a design file")
    p.add_argument("--trade-curve", metavar="FILE", help="write the trade curve against bias (CSV)")
    p.set_defaults(func=_cmd_optimize)

    p = sub.add_parser("template", help="write a commented template design file",
                       description="Write a commented template design file.")
    p.add_argument("-o", "--output", help="file to write (default: standard output)")
    p.add_argument("--force", action="store_true", help="overwrite an existing file")
    p.set_defaults(func=_cmd_template)

    p = sub.add_parser("report", help="write a self-contained HTML report of a design",
                       description="Write one HTML file with the budget, plots and cautions.")
    p.add_argument("design", nargs="?", help=design_help)
    p.add_argument("-o", "--output", default="photorx-report.html",
                   help="HTML file (default: photorx-report.html)")
    p.add_argument("--title", help="report title")
    p.add_argument("--tolerance", type=_at_least(1), metavar="N",
                   help="add a yield section: N units drawn from the design file's "
                        "[tolerances], checked against its [specs]")
    p.set_defaults(func=_cmd_report)

    p = sub.add_parser("tolerance", help="Monte Carlo yield over tolerances and temperatures",
                       description="Draw built units from component tolerances, evaluate each "
                                   "at every temperature corner and report the yield against "
                                   "the specs, the pass fraction of each spec and the "
                                   "tolerances that drive the failures. Tolerances and specs "
                                   "add to the design file's [tolerances] and [specs].",
                       epilog="TOLERANCE: 'P%%' (uniform within +-P %% of nominal), "
                              "'normal:SIGMA' (relative, e.g. normal:2%%), "
                              "'uniform:LOW:HIGH' (with units), 'lognormal:SIGMA' (of ln "
                              "value). The CSV holds one row per unit and corner: sample, "
                              "the sampled parameters, the spec figures (SI) and pass.")
    p.add_argument("design", nargs="?", help=design_help)
    p.add_argument("--n", type=_at_least(1), default=10_000, metavar="N",
                   help="built units to draw (default: 10,000)")
    p.add_argument("--tol", action="append", metavar="NAME=TOLERANCE",
                   help="a parameter's tolerance, repeatable (e.g. rf=1%%, cf=normal:2%%)")
    p.add_argument("--spec", action="append", metavar="FIGURE>=VALUE",
                   help="a spec every unit must meet, repeatable (e.g. 'bandwidth>=900 MHz')")
    p.add_argument("--temperature", metavar="SPEC",
                   help="temperature corners, a comma list or START:STOP:N "
                        "(e.g. -40degC,25degC,85degC); default: the design's temperature")
    p.add_argument("--seed", type=_at_least(0), default=0, help="random seed (default: 0)")
    p.add_argument("--chunk-size", type=_at_least(1), default=None, metavar="UNITS",
                   help="units per dask task (default: about 1024 design points per task)")
    p.add_argument("--figures", metavar="LIST",
                   help="figures to write besides the spec figures, comma-separated, or 'all'")
    p.add_argument("-o", "--output", help="CSV file of every unit and corner")
    p.add_argument("-q", "--quiet", action="store_true",
                   help="no progress bar (shown on studies that run longer than a second)")
    p.set_defaults(func=_cmd_tolerance)

    p = sub.add_parser("demos", help="list the shipped demo designs",
                       description="List the demo designs shipped with photorx.")
    p.set_defaults(func=_cmd_demos)
    _add_eye_parser(sub, design_help)
    return parser


def main(argv=None) -> int:
    """Run the command line; returns the exit status (the console script exits with it).

    Parameters
    ----------
    argv : sequence of str, optional
        Command-line arguments without the program name; default None reads
        ``sys.argv[1:]``.
    """
    _CURRENT["design"] = None
    try:
        parser = build_parser()
        args = parser.parse_args(_join_negative_values(sys.argv[1:] if argv is None
                                                       else list(argv)))
        if args.command is None:
            parser.print_help()
            return EXIT_USAGE
        _check_outputs(args)
        with warnings.catch_warnings(), np.errstate(all="ignore"):
            # numpy's floating-point warnings are not for the user: a figure that is not
            # finite is refused by the engine itself; photorx's own warnings get one line
            warnings.simplefilter("ignore", RuntimeWarning)
            warnings.showwarning = _show_warning
            code = args.func(args)
            sys.stdout.flush()  # a closed pipe shows here, inside the handler below
            return code
    except BrokenPipeError:  # the reader left (``photorx budget | head -1``): stop quietly
        _discard_stdout()
        return EXIT_BROKEN_PIPE
    except SystemExit as exc:  # --help and --version
        return exc.code if isinstance(exc.code, int) else EXIT_OK
    except UsageError as exc:
        print(f"{exc}", file=sys.stderr)
        return EXIT_USAGE
    except DesignError as exc:
        message = _one_line(exc)
        if _CURRENT["design"] is not None:  # the file loaded; evaluating it failed
            hint = _EVALUATION_HINTS.get(getattr(exc, "parameter", None))
            message = (f"design {_CURRENT['design']}: {message}"
                       + (f"; {hint}" if hint else ""))
        print(f"photorx: error: {message}", file=sys.stderr)
        return EXIT_USAGE
    except OSError as exc:
        where = f" {exc.filename}:" if getattr(exc, "filename", None) else ""
        print(f"photorx: error:{where} {exc.strerror or exc}", file=sys.stderr)
        return EXIT_FAILURE
    except KeyboardInterrupt:
        print("photorx: interrupted", file=sys.stderr)
        return 130
    except Exception as exc:  # a bug: still one line, unless debugging
        if os.environ.get("PHOTORX_DEBUG"):
            raise
        print(f"photorx: internal error: {type(exc).__name__}: {_one_line(exc)} "
              "(set PHOTORX_DEBUG=1 for details)", file=sys.stderr)
        return EXIT_FAILURE


def _discard_stdout() -> None:
    """Point standard output at the null device so the exit-time flush cannot fail again."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        os.close(devnull)
    except (OSError, ValueError, AttributeError):  # not a real file (captured in tests)
        pass


def _show_warning(message, category, filename, lineno, file=None, line=None):
    print(f"photorx: warning: {_one_line(message)}", file=sys.stderr)


def _check_outputs(args) -> None:
    """An output path that is a directory is a usage error naming the path as given."""
    for option in ("output", "save", "trade_curve"):
        path = getattr(args, option, None)
        if path not in (None, "-") and Path(path).is_dir():
            raise UsageError(f"photorx {args.command}: --{option.replace('_', '-')} {path}: is "
                             "a directory; give a file name")


def _join_negative_values(argv: list) -> list:
    """``--reverse-bias -5:0:11`` -> ``--reverse-bias=-5:0:11``.

    argparse takes a value starting with '-' for an option unless it is a plain negative
    number, so forward-bias ranges and negative bounds would need the ``=`` form.
    """
    out, i = [], 0
    while i < len(argv):
        arg = argv[i]
        nxt = argv[i + 1] if i + 1 < len(argv) else None
        if (arg.startswith("--") and "=" not in arg and nxt is not None
                and re.match(r"^-\.?\d", nxt)):
            out.append(f"{arg}={nxt}")
            i += 2
            continue
        out.append(arg)
        i += 1
    return out


def _one_line(exc) -> str:
    return " ".join(str(exc).split())


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
