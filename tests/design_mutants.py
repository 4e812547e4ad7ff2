"""Mutated design files for the fuzz test and the fuzz benchmark: strategies and one runner.

A mutant starts from a shipped design (``photorx/designs/*.toml``) or the ``photorx template``
text and changes one to three things: a value's type, unit, sign or size, nesting (lists
and tables up to 1,200 deep), unit expressions that would overflow or hang a parser,
deleted keys, unknown keys and sections. :func:`run_mutant` runs ``photorx budget`` on it
in a forked child with a deadline and classifies the outcome:

``exit2_key``   exit status 2, one line on stderr that names a mutated key (or section)
``exit2_other`` exit status 2 but the line names no mutated key, or more than one line
``valid``       exit status 0, a budget with no NaN or infinity
``nan_inf``     exit status 0 but a figure reads NaN or infinite (beyond those whose
                infinite value means "none": gain margin, an open shunt)
``warning``     a Python warning (such as numpy's RuntimeWarning) reached stderr
``traceback``   an exception escaped, or the command reported an internal error
``hang``        no answer within the deadline
``other``       anything else (exit status 1, ...)

Used by ``tests/test_design_fuzz.py`` (a bounded CI share) and
``tests/benchmarks/fuzz_designs.py`` (a longer run that prints the counts).
"""

from __future__ import annotations

import copy
import datetime
import io
import json
import math
import multiprocessing
import os
import re
import sys
import tempfile
import tomllib
import warnings
from contextlib import redirect_stderr, redirect_stdout

from hypothesis import strategies as st

OUTCOMES = ("exit2_key", "exit2_other", "valid", "nan_inf", "warning", "traceback", "hang",
            "other")

#: Budget rows whose infinite value is a real "none" (no phase crossover; an open shunt).
INFINITE_OK = frozenset({"gain margin", "shunt resistance", "leakage resistance"})


# ----------------------------------------------------------------------------------------------
# sources
# ----------------------------------------------------------------------------------------------
def sources() -> dict[str, dict]:
    """The shipped demo designs and the template, parsed: ``{name: TOML document}``."""
    from photorx.designfile import DEMO_DESIGNS, demo_design_path, design_template

    docs = {name: tomllib.loads(demo_design_path(name).read_text(encoding="utf-8"))
            for name in DEMO_DESIGNS}
    docs["template"] = tomllib.loads(design_template())
    return docs


def _paths(doc: dict, prefix=()) -> list[tuple]:
    """Every key path of a document (sections and values)."""
    out = []
    for key, value in doc.items():
        out.append(prefix + (key,))
        if isinstance(value, dict):
            out += _paths(value, prefix + (key,))
    return out


# ----------------------------------------------------------------------------------------------
# TOML writer (enough for mutants: tables, inline arrays and tables, any scalar)
# ----------------------------------------------------------------------------------------------
def _key(k: str) -> str:
    return k if re.fullmatch(r"[A-Za-z0-9_-]+", k) else json.dumps(k, ensure_ascii=False)


def _value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):  # JSON escapes are TOML escapes; TOML also forbids a raw DEL
        return json.dumps(v, ensure_ascii=False).replace("\x7f", "\\u007f")
    if isinstance(v, (datetime.datetime, datetime.date, datetime.time)):
        return v.isoformat()
    if isinstance(v, list):
        depth = 0  # deep single-item nesting written without recursion
        while isinstance(v, list) and len(v) == 1 and isinstance(v[0], list):
            v, depth = v[0], depth + 1
        inner = "[" + ", ".join(_value(x) for x in v) + "]"
        return "[" * depth + inner + "]" * depth
    if isinstance(v, dict):
        return "{" + ", ".join(f"{_key(k)} = {_value(x)}" for k, x in v.items()) + "}"
    raise TypeError(type(v))


def dumps_toml(doc: dict) -> str:
    """TOML text of a document (tables as ``[a.b]`` headers, everything else inline)."""
    lines: list[str] = []

    def table(d: dict, path: tuple):
        scalars = {k: v for k, v in d.items() if not isinstance(v, dict)}
        tables = {k: v for k, v in d.items() if isinstance(v, dict)}
        if path:
            lines.append("[" + ".".join(_key(p) for p in path) + "]")
        lines.extend(f"{_key(k)} = {_value(v)}" for k, v in scalars.items())
        lines.append("")
        for k, v in tables.items():
            table(v, path + (k,))

    table(doc, ())
    return "\n".join(lines)


# ----------------------------------------------------------------------------------------------
# mutations
# ----------------------------------------------------------------------------------------------
_UNITS = ["", "V", "mV", "m", "um", "nm", "um^2", "mm^2", "cm^-3", "cm^-4", "F", "pF", "fF",
          "ohm", "kohm", "Gohm", "Hz", "MHz", "GHz", "bit/s", "Gbit/s", "s", "ns", "us", "A",
          "nA", "pA", "W", "mW", "dBm", "dB", "K", "degC", "A/W", "V/rtHz", "nV/rtHz",
          "pA/rtHz", "rtHz", "Hz^0.5", "furlong/fortnight", "kg", "k", "p", "%", "deg"]

#: Unit expressions that overflow or stall a naive parser, and other hostile strings.
_HOSTILE = ["(9**9**9 um)^2", "(10**1000 um)^2", "1e300 dB", "1e-300 dB", "-1e300 dB", "1e400",
            "(1e200 um)^2", "(1e-200 um)^2", "((((((((((1 um))))))))))", "(1 um)^(1/0)",
            "(1 um)^1e9", "(2 um)^-1e9", "(1 um)^nan", "(inf um)^2", "(nan um)^2", "nan V",
            "inf V", "-inf F", "1e308 GHz", "1e-320 pF", "1 um * " * 200 + "1 um", "(" * 300,
            "(" * 300 + "1 um" + ")" * 300, "1" * 5000 + " V", "0x10 V", "1_000 V", "1e5e5 V",
            "(1 um)**(2**64)", "(1 um)**-(2**64)", "(1 um)**2**2**2**2**2", "", " ", "--5 V",
            "5 V V", "5 VV", "5 kilo", "10 dBm dBm", "1.2 bit/s", "3 Bq", "3 Hz/bit", "5 um/s",
            "1 mol", "1e15 cm^-3 * cm^-3", "2 ** 3 V", "__import__('os')", "5 V # comment",
            "1e9999999999 V", "1e-9999999999 V", "(1e-300 mm)^2", "1e30 W", "1e300 s",
            "(1 um)^0.5", "(1 m)^0", "\u00b5F", "5 \u03a9", "5 k\u03a9", "5 nV/\u221aHz"]


def _number_of(value) -> float:
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        return float(value)
    if isinstance(value, str):
        m = re.match(r"\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)", value)
        if m:
            return float(m.group(1))
    return 1.0


def _unit_of(value) -> str:
    if isinstance(value, str):
        m = re.match(r"\s*[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?\s*(.*)$", value)
        if m:
            return m.group(1)
    return ""


@st.composite
def _replacement(draw, old):
    """A new value for a key whose current value is ``old``."""
    number, unit = _number_of(old), _unit_of(old)
    how = draw(st.sampled_from(["type", "unit", "unit", "sign", "size", "size", "size", "bare",
                                "bare", "nest", "hostile", "float", "text"]))
    if how == "type":
        return draw(st.sampled_from([True, False, 0, 1, -1, 2**63 - 1, 10**30, [], {}, "",
                                     [1, 2], ["1 V", "2 V"], {"value": old},
                                     datetime.date(2020, 1, 1),
                                     datetime.datetime(2020, 1, 1, 12, 0)]))
    if how == "unit":
        return f"{number:g} {draw(st.sampled_from(_UNITS))}".strip()
    if how == "sign":
        return f"{-number:g} {unit}".strip() if isinstance(old, str) else -number
    if how == "size":
        exponent = draw(st.one_of(st.integers(-6, 6), st.integers(-40, 40),
                                  st.integers(-400, 400)))
        text = f"{number:g}e{exponent}" if "e" not in f"{number:g}" else f"1e{exponent}"
        return f"{text} {unit}".strip() if draw(st.booleans()) else f"{text}"
    if how == "bare":  # the number without its unit, as string or float
        return f"{number:g}" if draw(st.booleans()) else number
    if how == "nest":
        depth = draw(st.sampled_from([1, 2, 5, 50, 500, 1000, 1200]))
        value = old
        for _ in range(depth):
            value = [value] if draw(st.booleans()) or depth > 50 else {"x": value}
        return value
    if how == "hostile":
        return draw(st.sampled_from(_HOSTILE))
    if how == "float":
        return draw(st.floats(allow_nan=True, allow_infinity=True, width=64))
    return draw(st.text(alphabet=st.characters(codec="utf-8", exclude_categories=("Cs",)),
                        max_size=20))


@st.composite
def mutants(draw, docs: dict):
    """A mutated document: ``(source name, TOML text, names the error may cite, steps)``."""
    name = draw(st.sampled_from(sorted(docs)))
    doc = copy.deepcopy(docs[name])
    names, steps = set(), []
    for _ in range(draw(st.integers(1, 3))):
        paths = _paths(doc)
        op = draw(st.sampled_from(["replace"] * 6 + ["delete", "add_key", "add_section",
                                                     "move_section"]))
        if not paths:
            op = "add_section"
        if op in ("replace", "delete", "move_section"):
            path = draw(st.sampled_from(paths))
            parent = doc
            for p in path[:-1]:
                parent = parent[p]
            key = path[-1]
            if op == "replace":
                parent[key] = draw(_replacement(parent[key]))
            elif op == "delete":
                del parent[key]
            else:  # the table (or value) moved under another table
                targets = [p for p in paths if isinstance(_get(doc, p), dict)
                           and p[:len(path)] != path]
                if not targets:
                    continue
                target = draw(st.sampled_from(targets))
                _get(doc, target)[key] = parent.pop(key)
            names.add(key)  # the error must name the key (or section) that changed
            steps.append(f"{op} {'.'.join(path)}")
        elif op == "add_key":
            tables = [p for p in paths if isinstance(_get(doc, p), dict)] + [()]
            where = draw(st.sampled_from(tables))
            key = draw(st.sampled_from(["extra", "gbw", "rf", "area", "Area", "voltage-noise",
                                        "cutoff", "x" * 300, "k\u00e9y", "model"]))
            _get(doc, where)[key] = draw(st.sampled_from(["1 V", 1.0, "5 pF", [1], True]))
            names.add(key)
            steps.append(f"add key {'.'.join(where + (key,))}")
        else:
            section = draw(st.sampled_from(["extras", "amplifier2", "photodiode.junk",
                                            "limits.more", "signals"]))
            parts = section.split(".")
            target = doc
            for p in parts[:-1]:
                target = target.setdefault(p, {}) if isinstance(target.get(p, {}), dict) else {}
            target[parts[-1]] = {"a": "1 V"}
            names.add(parts[-1])
            steps.append(f"add section {section}")
    return name, dumps_toml(doc), sorted(str(n) for n in names), steps


def _get(doc, path):
    for p in path:
        doc = doc[p]
    return doc


# ----------------------------------------------------------------------------------------------
# running one mutant
# ----------------------------------------------------------------------------------------------
def _budget_in_child(path: str, conn) -> None:
    out, err = io.StringIO(), io.StringIO()
    try:
        from photorx.cli import main

        with warnings.catch_warnings():
            warnings.simplefilter("always")  # a warning must not hide behind the once-filter
            with redirect_stdout(out), redirect_stderr(err):
                code = main(["budget", path, "-f", "json"])
        conn.send(("done", code, out.getvalue(), err.getvalue()))
    except BaseException as exc:  # noqa: BLE001 - anything escaping main is the finding
        conn.send(("raised", f"{type(exc).__name__}: {exc}"[:500], out.getvalue(),
                   err.getvalue()))
    finally:
        conn.close()


def classify(code, stdout: str, stderr: str, names) -> tuple[str, str]:
    """Outcome of one finished run and a short detail line."""
    lines = [ln for ln in stderr.splitlines() if ln.strip()]
    if "Traceback" in stderr or "internal error" in stderr:
        return "traceback", stderr.strip()[-300:]
    if re.search(r"\w+Warning\b", stderr):
        return "warning", stderr.strip()[-300:]
    if code == 2:
        line = lines[0] if lines else ""
        if len(lines) == 1 and any(re.search(rf"(?<![\w]){re.escape(n)}(?![\w])", line)
                                   for n in names):
            return "exit2_key", line
        return "exit2_other", " | ".join(lines)[:300]
    if code == 0:
        bad = _non_finite(stdout)
        return ("nan_inf", bad) if bad else ("valid", "")
    return "other", f"exit {code}: {' | '.join(lines)[:300]}"


def _non_finite(text: str) -> str:
    """The first budget entry that reads NaN or (where that is not "none") infinity."""
    try:
        doc = json.loads(text)
    except ValueError as exc:
        return f"unreadable JSON ({exc})"
    for table, rows in doc["tables"].items():
        for row in rows:
            display = str(row.get("display", ""))
            if re.search(r"\bnan\b", display, re.I):
                return f"{table}: {row.get('quantity')} = {display}"
            if re.search(r"\binf\b", display, re.I) and row.get("quantity") not in INFINITE_OK:
                return f"{table}: {row.get('quantity')} = {display}"
            for column, value in row.items():
                if column == "limit" and value is None and row.get("ok") == "no limit set":
                    continue  # a check whose limit the design does not set: JSON null, as asked
                if value is None and column != "value":
                    return f"{table}: {row.get('quantity', row.get('source'))} {column} = null"
    return ""


def run_mutant(text: str, names, deadline: float = 20.0) -> tuple[str, str]:
    """Run ``photorx budget`` on a design text in a forked child; ``(outcome, detail)``."""
    ctx = multiprocessing.get_context("fork")
    fd, path = tempfile.mkstemp(suffix=".toml", prefix="mutant-")
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as fh:
            fh.write(text)
        receive, send = ctx.Pipe(duplex=False)
        child = ctx.Process(target=_budget_in_child, args=(path, send), daemon=True)
        child.start()
        send.close()
        if not receive.poll(deadline):
            child.kill()
            child.join()
            return "hang", f"no answer within {deadline:g} s"
        try:
            kind, code, out, err = receive.recv()
        except EOFError:
            child.join()
            return "traceback", f"child died (exit {child.exitcode})"
        child.join()
        if kind == "raised":
            return "traceback", code
        return classify(code, out, err, names)
    finally:
        os.unlink(path)


def warm_up() -> None:
    """Import and run once in this process so that forked children start warm."""
    with redirect_stdout(io.StringIO()), redirect_stderr(io.StringIO()):
        from photorx.cli import main

        main(["budget", "-f", "json"])


if __name__ == "__main__":  # pragma: no cover - quick manual check
    sys.exit("run tests/benchmarks/fuzz_designs.py")
