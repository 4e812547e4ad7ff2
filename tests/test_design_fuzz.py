"""Mutated design files through ``photorx budget``: a one-line error naming the key, or a sound budget.

Hypothesis mutates the shipped designs and the template (wrong types, units, signs, sizes,
nesting, hostile unit expressions, deleted and unknown keys; ``tests/design_mutants.py``)
and every mutant must end in exit status 2 with one stderr line naming a mutated key, or
in a valid budget without NaN or infinity; never a traceback, a leaked warning or a hang.
Each case runs ``photorx.cli.main`` in a forked child of this (warm) process with captured
output and a per-case deadline, so a hang is a finding rather than a stuck suite.

The CI share is bounded (``MAX_EXAMPLES`` cases, about 30 s on two cores);
``tests/benchmarks/fuzz_designs.py`` runs thousands and prints the outcome counts.
The classifier itself is tested first, so that this test can fail.
"""

from __future__ import annotations

import copy
import datetime
import json
import time

import pytest
from hypothesis import HealthCheck, Phase, given, settings

import design_mutants as dm

#: Mutants per CI run (derandomised: the same ones every run; the benchmark runs more).
MAX_EXAMPLES = 300

#: Seconds one mutant may take before it counts as a hang (a budget takes well under one;
#: generous for a loaded two-core runner).
CASE_DEADLINE = 20.0

GOOD = ("exit2_key", "valid")

DOCS = dm.sources()


@pytest.fixture(scope="module", autouse=True)
def _warm():
    dm.warm_up()  # forked children start with photorx imported and its caches filled


# -- the classifier can tell bad from good ---------------------------------------------------
def _budget_json(display="1.00 GHz", quantity="bandwidth"):
    return json.dumps({"tables": {"speed": [{"quantity": quantity, "value": 1e9,
                                             "display": display, "unit": "Hz"}]}})


def test_classifier_flags_what_must_not_happen():
    trace = 'Traceback (most recent call last):\n  File "x.py"\nZeroDivisionError: x\n'
    assert dm.classify(1, "", trace, ["gbw"])[0] == "traceback"
    assert dm.classify(1, "", "photorx: internal error: KeyError: 'x'\n", ["x"])[0] \
        == "traceback"
    assert dm.classify(0, _budget_json(), "x.py:3: RuntimeWarning: overflow\n", [])[0] \
        == "warning"
    assert dm.classify(0, _budget_json("nan Hz"), "", [])[0] == "nan_inf"
    assert dm.classify(0, _budget_json("inf Hz"), "", [])[0] == "nan_inf"
    assert dm.classify(0, "not json", "", [])[0] == "nan_inf"
    # exit 2 is only good with one line that names the mutated key (as a word)
    assert dm.classify(2, "", "photorx: error: bad value\n", ["gbw"])[0] == "exit2_other"
    assert dm.classify(2, "", "photorx: error: gbw bad\nsecond line\n", ["gbw"])[0] \
        == "exit2_other"
    assert dm.classify(2, "", "photorx: error: gbw_max bad\n", ["gbw"])[0] == "exit2_other"
    assert dm.classify(1, "", "photorx: error: no\n", ["gbw"])[0] == "other"


def test_classifier_accepts_what_is_fine():
    assert dm.classify(2, "", "photorx: error: [amplifier] gbw = '3 V': not a frequency\n",
                       ["gbw"]) == ("exit2_key", "photorx: error: [amplifier] gbw = '3 V': "
                                                 "not a frequency")
    assert dm.classify(0, _budget_json(), "", []) == ("valid", "")
    # an infinite gain margin is "no phase crossover", a real none
    assert dm.classify(0, _budget_json("inf", "gain margin"), "", [])[0] == "valid"


def _sleeps(path, conn):
    time.sleep(60)


def _raises(path, conn):
    raise MemoryError("boom")  # the child dies without sending an answer


def test_runner_reports_a_hang_and_a_dead_child(monkeypatch):
    monkeypatch.setattr(dm, "_budget_in_child", _sleeps)
    t0 = time.perf_counter()
    assert dm.run_mutant("", [], deadline=0.5)[0] == "hang"
    assert time.perf_counter() - t0 < 10
    monkeypatch.setattr(dm, "_budget_in_child", _raises)
    assert dm.run_mutant("", [], deadline=20)[0] == "traceback"


def test_runner_on_known_designs():
    text = dm.dumps_toml(DOCS["template"])
    assert dm.run_mutant(text, [], CASE_DEADLINE) == ("valid", "")
    bad = copy.deepcopy(DOCS["template"])
    bad["amplifier"]["gbw"] = "3 V"
    outcome, detail = dm.run_mutant(dm.dumps_toml(bad), ["gbw"], CASE_DEADLINE)
    assert outcome == "exit2_key", detail


def test_toml_writer_round_trips_the_sources():
    import tomllib

    for name, doc in DOCS.items():
        assert tomllib.loads(dm.dumps_toml(doc)) == doc, name
    deep = {"a": [[[[1]]]], "d": datetime.date(2020, 1, 1), "s": "q\"\x7f"}
    assert tomllib.loads(dm.dumps_toml(deep)) == deep


# -- the fuzz test ---------------------------------------------------------------------------
@settings(max_examples=MAX_EXAMPLES, database=None, derandomize=True, phases=[Phase.generate],
          deadline=datetime.timedelta(seconds=2 * CASE_DEADLINE),
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large,
                                 HealthCheck.filter_too_much])
@given(dm.mutants(DOCS))
def test_mutated_designs_fail_cleanly_or_give_a_sound_budget(case):
    source, text, names, steps = case
    outcome, detail = dm.run_mutant(text, names, deadline=CASE_DEADLINE)
    assert outcome in GOOD, f"{source}: {'; '.join(steps)} -> {outcome}: {detail}"
