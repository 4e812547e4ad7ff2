"""Tolerance studies: Monte Carlo over component tolerances and temperature corners, on dask.

A designer signs a receiver off when built units meet the specification over their
component tolerances and the temperature range, not at the nominal point.
:func:`tolerance_study` draws ``n`` units (each tolerance independently, see
:mod:`photorx.analysis.tolerance_distributions`), evaluates every unit at every
temperature corner with the vectorised engine
(:func:`~photorx.analysis.sweep.evaluate_points`), and checks the specs, written as
:func:`~photorx.analysis.optimize.optimize` constraints. The chunks of units are dask
tasks: the local threaded scheduler by default, any ``dask.distributed`` client when a
study outgrows one machine; the result does not depend on the scheduler (the samples are
drawn before any chunk runs) and, for a given ``chunk_size``, is the same bit for bit.
The statistics live on :class:`~photorx.analysis.tolerance_result.ToleranceResult`.
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd

from ..errors import DesignError
from .optimize import _column, _parse_constraints
from .parameters import get_parameter, resolve_parameter
from .sweep import CHUNK, evaluate_points
from .tolerance_distributions import parse_tolerance, parameter_unit
from .tolerance_result import ToleranceResult

__all__ = ["tolerance_study", "parse_study", "ToleranceResult"]

#: Largest number of units a study draws.
MAX_SAMPLES = 10**8
#: Schedulers of dask's local machine that a study may name.
SCHEDULERS = ("threads", "processes", "synchronous")
#: Design-file section names accepted in front of a parameter (``amplifier.gbw``).
_SECTION_PATHS = {"amplifier": "tia.amp", "feedback": "tia", "operating_point": "",
                  "signal": "", "limits": "", "analysis": "", "post_filter": "post_filter",
                  "photodiode": "photodiode", "photodiode.junction": "photodiode.junction"}


def tolerance_study(receiver, tolerances, specs, n=10_000, temperatures=None, seed=0,
                    client=None, chunk_size=None, figures=None, require_stable=True,
                    scheduler="threads", progress=True) -> ToleranceResult:
    """Monte Carlo yield of a receiver over component tolerances and temperature corners.

    Parameters
    ----------
    receiver : Receiver
        The nominal design.
    tolerances : dict
        Parameter (any name or dotted path :func:`~photorx.analysis.sweep.sweep`
        accepts, e.g. ``"rf"``, ``"cf"``, ``"gbw"``, ``"tia.amp.gbw"``, or a design-file
        section path such as ``"amplifier.gbw"``) -> distribution: ``"1 %"`` (uniform
        within +-1 % of nominal), ``("normal", sigma_relative)``, ``("uniform", low,
        high)`` [SI] or ``("lognormal", sigma)``; see
        :mod:`~photorx.analysis.tolerance_distributions`. Parameters are independent.
    specs : dict or sequence of str
        Figure -> condition in :func:`~photorx.analysis.optimize.optimize` constraint
        syntax: ``">= 900 MHz"``, ``(">=", 9e8)``, ``{"min": a, "max": b}`` or a list of
        such strings; or a sequence of full conditions (``"bandwidth >= 900 MHz"``).
    n : int
        Number of built units drawn, 1 to 10^8; default 10 000.
    temperatures : sequence or tuple, optional
        Temperature corners [K, or strings with units such as ``"-40 degC"``] at which
        every unit is evaluated (a unit passes when it passes at all of them); or a
        distribution of the operating temperature in the tolerance forms (``("uniform",
        233.15, 358.15)``). Default None: the design's temperature.
    seed : int
        Seed of the random streams, >= 0; the same seed gives the same samples whatever
        ``chunk_size``, ``client`` or ``scheduler``.
    client : dask.distributed.Client, optional
        Run the chunks on this cluster instead of the local scheduler.
    chunk_size : int, optional
        Units per dask task (each evaluated at every corner in one vectorised call);
        default about 1024 design points per task. The figures agree to rounding
        (about 1e-15 relative) between chunk sizes and bit for bit between schedulers.
    figures : sequence of str, optional
        Figures to keep in :attr:`ToleranceResult.samples` besides the spec figures;
        default None keeps every figure (about 0.6 kB per row: give a short list for
        studies of 10^6 rows).
    require_stable : bool
        A unit whose loop is unstable fails (the spec ``stable``); default True.
    scheduler : str
        dask's local scheduler when no client is given: ``"threads"`` (default),
        ``"processes"`` or ``"synchronous"``.
    progress : bool
        Show a progress bar (terminal or Jupyter) once the study has run for a second;
        default True.

    Returns
    -------
    ToleranceResult
        Samples, yield with its Wilson interval, pass fraction per spec, drivers, worst
        units and plots.

    Raises
    ------
    DesignError
        Unknown parameters or figures, bad distributions, specs or temperatures, ``n``
        out of range; the message names the parameter, its value and the valid range.

    Examples
    --------
    >>> import photorx as prx
    >>> rx = prx.demo_receiver()
    >>> study = prx.tolerance_study(rx, {"rf": "1 %"}, {"bandwidth": ">= 1 Hz"}, n=100,
    ...                             progress=False)
    >>> study.yield_fraction
    1.0
    """
    n = _count(n)
    if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or seed < 0:
        raise DesignError.out_of_range("seed", seed, "", "an integer >= 0")
    if scheduler not in SCHEDULERS:
        raise DesignError(f"scheduler = {scheduler!r} is invalid; valid: {', '.join(SCHEDULERS)}",
                          parameter="scheduler")
    tols, paths, cons, corners = parse_study(receiver, tolerances, specs, temperatures)
    nominal = evaluate_points(receiver, {})
    nominal_frame = pd.DataFrame({k: np.atleast_1d(v) for k, v in nominal.items()})
    for c in cons:
        _column(nominal_frame, c["figure"])  # names the figure if unknown or not numeric
    keep = list(dict.fromkeys(_keep(figures, nominal_frame) + [c["figure"] for c in cons]
                              + ["stable", "temperature"]))

    drawn = {t.parameter: t.sample(n, seed) for t in tols}
    columns = {paths[name].replace(".", "__"): values for name, values in drawn.items()}
    size = _chunk_size(chunk_size, 1 if corners is None else len(corners))
    raw = _run(receiver, columns, corners, keep, size, n, client, scheduler, progress)
    frame = _frame(raw, drawn, corners, n, keep)
    result = ToleranceResult(samples=frame, tolerances=tuple(tols), specs=tuple(cons), n=n,
                             temperatures=corners, seed=int(seed), chunk_size=size,
                             nominal={k: np.atleast_1d(v)[0] for k, v in nominal.items()},
                             require_stable=bool(require_stable))
    # each row's verdict at its corner: every spec met (and the loop stable when required)
    ok = (result.margins.to_numpy() >= 0).all(axis=1)
    if require_stable:
        ok &= frame["stable"].to_numpy(dtype=bool)
    frame["pass"] = ok
    frame.attrs["units"]["pass"] = ""
    return result


def parse_study(receiver, tolerances, specs, temperatures=None) -> tuple:
    """Check and parse a study's tolerances, specs and temperatures without evaluating.

    Parameters
    ----------
    receiver : Receiver
        The nominal design (parameter names resolve against it).
    tolerances : dict
        As :func:`tolerance_study` takes them.
    specs : dict or sequence of str
        As :func:`tolerance_study` takes them.
    temperatures : sequence or tuple, optional
        As :func:`tolerance_study` takes them.

    Returns
    -------
    tuple
        ``(tolerances, paths, specs, corners)``: the list of
        :class:`~photorx.analysis.tolerance_distributions.Tolerance`, their dotted paths
        by name, the specs as optimize constraints, the temperature corners [K] or None.

    Raises
    ------
    DesignError
        As :func:`tolerance_study`.
    """
    from .result import FIGURES

    if not isinstance(tolerances, dict) or not tolerances:
        raise DesignError("tolerances must be a non-empty dict, e.g. {'rf': '1 %'}",
                          parameter="tolerances")
    corners, temperature_spec = _temperatures(temperatures)
    items = dict(tolerances)
    if corners is not None and any(_path(receiver, k) == "temperature" for k in items):
        raise DesignError("temperature has a tolerance and temperature corners; give one "
                          "(a distribution can go to temperatures=)", parameter="temperature")
    if temperature_spec is not None:
        if any(_path(receiver, k) == "temperature" for k in items):
            raise DesignError("temperature has a tolerance and a temperatures= distribution; "
                              "give one", parameter="temperature")
        items["temperature"] = temperature_spec
    tols = []
    for name, spec in items.items():
        path = _path(receiver, name)
        tols.append(parse_tolerance(str(name), spec, _scalar(get_parameter(receiver, path), name)))
    paths = {t.parameter: _path(receiver, t.parameter) for t in tols}
    if len(set(paths.values())) < len(paths):
        raise DesignError(f"two tolerances name the same parameter: {', '.join(paths)}",
                          parameter="tolerances")
    cons = _specs(specs)
    for c in cons:
        if c["figure"] not in FIGURES and not c["figure"].startswith("noise_"):
            raise DesignError(f"unknown receiver figure {c['figure']!r} in the specs; known: "
                              f"{', '.join(FIGURES)}", parameter=c["figure"])
    return tols, paths, cons, corners


def _count(n) -> int:
    if isinstance(n, bool) or not isinstance(n, (int, np.integer, float)) or n != int(n) \
            or not 1 <= n <= MAX_SAMPLES:
        raise DesignError.out_of_range("n", n, "", f"an integer from 1 to {MAX_SAMPLES:.0e}")
    return int(n)


def _path(receiver, name) -> str:
    text = str(name).replace("__", ".")
    head, _, leaf = text.rpartition(".")
    if head in _SECTION_PATHS and head:
        base = _SECTION_PATHS[head]
        text = f"{base}.{leaf}" if base else leaf
    return resolve_parameter(receiver, text)


def _scalar(value, name) -> float:
    arr = np.asarray(value)
    if arr.ndim != 0 or arr.dtype.kind not in "biuf":
        raise DesignError(f"tolerances[{name!r}]: the parameter's value {value!r} is not a "
                          "single number; a tolerance needs a scalar parameter", parameter=str(name))
    return float(arr)


def _temperatures(temperatures):
    """(corners array or None, distribution spec or None)."""
    from ..units import parse_quantity

    if temperatures is None:
        return None, None
    if isinstance(temperatures, str) or (isinstance(temperatures, (tuple, list)) and temperatures
                                         and isinstance(temperatures[0], str)
                                         and temperatures[0].strip().lower()
                                         in ("uniform", "normal", "lognormal")):
        if isinstance(temperatures, str) and ("," in temperatures or not (
                ":" in temperatures or "%" in temperatures)):
            temperatures = temperatures.split(",")  # "-40 degC,85 degC" or one corner
        else:
            return None, temperatures
    try:
        values = [parse_quantity(t, "K") if isinstance(t, str) else float(t) for t in temperatures]
    except (TypeError, ValueError) as exc:
        raise DesignError(f"temperatures = {temperatures!r}: {exc}; valid: a sequence of "
                          "temperatures in K (or '-40 degC') or a distribution",
                          parameter="temperatures") from None
    corners = np.asarray(values, dtype=float)
    if corners.ndim != 1 or corners.size == 0 or not np.all(np.isfinite(corners)) \
            or np.any(corners <= 0):
        raise DesignError.out_of_range("temperatures", corners, "K",
                                       "a non-empty sequence of finite temperatures > 0 K")
    if len(np.unique(corners)) < corners.size:
        raise DesignError.out_of_range("temperatures", corners, "K", "distinct corners")
    return corners, None


_SPEC = re.compile(r"^\s*([A-Za-z_][\w.]*)\s*((?:>=|<=).*)$")


def _specs(specs) -> list[dict]:
    """Specs as optimize constraints; a sequence of ``"FIGURE>=VALUE"`` texts is grouped
    by figure first."""
    if isinstance(specs, str):
        specs = [specs]
    if not isinstance(specs, dict):
        grouped: dict[str, list] = {}
        for text in specs or ():
            m = _SPEC.match(str(text))
            if not m:
                raise DesignError(f"spec {text!r} is invalid; write FIGURE>=VALUE or "
                                  "FIGURE<=VALUE, e.g. 'bandwidth>=900 MHz'", parameter="specs")
            grouped.setdefault(m.group(1), []).append(m.group(2))
        specs = grouped
    if not specs:
        raise DesignError("specs must name at least one figure, e.g. {'bandwidth': '>= 900 MHz'}",
                          parameter="specs")
    return _parse_constraints(specs)


def _keep(figures, nominal_frame) -> list[str]:
    if figures is None:
        return list(nominal_frame.columns)
    if isinstance(figures, str):
        figures = [figures]
    for name in figures:
        if name not in nominal_frame.columns:
            raise DesignError(f"figures: unknown receiver figure {name!r}; known: "
                              f"{', '.join(nominal_frame.columns)}", parameter=str(name))
    return list(figures)


def _chunk_size(chunk_size, corners: int) -> int:
    if chunk_size is None:
        return max(1, CHUNK // corners)
    if isinstance(chunk_size, bool) or not isinstance(chunk_size, (int, np.integer)) \
            or chunk_size < 1:
        raise DesignError.out_of_range("chunk_size", chunk_size, "", "an integer >= 1")
    return int(chunk_size)


def _evaluate_chunk(receiver, columns: dict, corners, keep: list) -> dict:
    """Every kept figure of one chunk of units, at every corner (rows unit-major)."""
    if corners is not None:
        m = len(next(iter(columns.values())))
        columns = {k: np.repeat(v, len(corners)) for k, v in columns.items()}
        columns["temperature"] = np.tile(corners, m)
    with np.errstate(all="ignore"):  # a figure that does not exist is NaN, counted as failing
        figures = evaluate_points(receiver, columns)
    return {k: figures[k] for k in keep}


def _run(receiver, columns, corners, keep, size, n, client, scheduler, progress) -> list:
    """The chunks as dask tasks on the local scheduler or ``client``; results in order."""
    import dask

    rx = dask.delayed(receiver, traverse=False)
    token = dask.base.tokenize(sorted(columns), n, size, keep, None if corners is None
                               else corners.tolist())
    tasks, rows = [], {}
    for i, start in enumerate(range(0, n, size)):
        chunk = {k: np.array(v[start:start + size]) for k, v in columns.items()}
        name = f"photorx-tolerance-{token}-{i}"
        tasks.append(dask.delayed(_evaluate_chunk, pure=True)(
            rx, chunk, corners, keep, dask_key_name=name))
        rows[name] = len(next(iter(chunk.values())))
    from .tolerance_progress import progress_bar

    with progress_bar(n, enabled=progress) as bar:
        if client is None:
            with bar.dask_callback(rows):
                return list(dask.compute(*tasks, scheduler=scheduler))
        from distributed import as_completed

        futures = client.compute(tasks)
        for future in as_completed(futures):
            bar.update(rows.get(future.key, 0))
        return client.gather(futures)


def _frame(raw, drawn, corners, n, keep) -> pd.DataFrame:
    """One DataFrame: unit index, the sampled parameters, the kept figures."""
    from .result import FIGURES

    reps = 1 if corners is None else len(corners)
    data = {"sample": np.repeat(np.arange(n), reps)}
    for name, values in drawn.items():
        if name not in keep:
            data[name] = np.repeat(values, reps)
    for name in keep:
        parts = [r[name] for r in raw]
        values = np.concatenate(parts) if parts else np.empty(0)
        data[name] = pd.Categorical(values) if values.dtype.kind in "USO" else values
    frame = pd.DataFrame(data, copy=False)
    units = {"sample": ""}
    for name in frame.columns:
        if name in FIGURES:
            units[name] = FIGURES[name][0]
        elif name in drawn:
            units[name] = parameter_unit(name) or ""
        elif name.startswith("noise_"):
            units[name] = "A"
    frame.attrs["units"] = units
    return frame
