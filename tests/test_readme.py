"""The README's tour runs as written, and its Quick start block holds exactly two commands."""

import re
from pathlib import Path

import numpy as np

README = Path(__file__).resolve().parents[1] / "README.md"


def test_tour_runs():
    text = README.read_text(encoding="utf-8")
    namespace = {}
    for code in re.findall(r"```python\n(.*?)```", text, re.S):  # every Python block, in order
        exec(compile(code, "README.md", "exec"), namespace)  # noqa: S102 - our own documentation
    rx = namespace["rx"]
    result = rx.evaluate()
    assert result.stable and np.isfinite(result.bandwidth)
    assert callable(namespace["f3db"])


def test_quick_start_has_two_commands():
    text = README.read_text(encoding="utf-8")
    section = re.search(r"^#+\s*Quick\s*start.*?$(.*?)(?=^#+\s|\Z)", text, re.M | re.S | re.I).group(1)
    block = re.search(r"```(?:bash|sh|console|shell)?\n(.*?)```", section, re.S).group(1)
    lines = [line for line in block.splitlines() if line.strip() and not line.startswith("#")]
    assert len(lines) == 2
    assert "photorx budget" in lines[0] and "pytest" in lines[1]
