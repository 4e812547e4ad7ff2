"""Fuzzing the design-file path: mutated shipped designs and template through ``photorx budget``.

Run: python tests/benchmarks/fuzz_designs.py [N] [--deadline SECONDS] [--show OUTCOME]

Generates N mutants (default 2000; the same ones on every run: hypothesis derandomised)
with the strategies of ``tests/design_mutants.py`` and prints how many ended in each
outcome (exit status 2 naming the key, a valid budget, NaN/inf in a budget, a leaked
warning, a traceback, a hang, ...) and a few examples of each bad outcome. Asserts
nothing; ``tests/test_design_fuzz.py`` is the bounded CI share that does assert.
"""

from __future__ import annotations

import argparse
import collections
import os
import sys
import time

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))

from hypothesis import HealthCheck, Phase, given, settings  # noqa: E402

import design_mutants as dm  # noqa: E402

GOOD = ("exit2_key", "valid")


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("n", nargs="?", type=int, default=2000, help="number of mutants")
    parser.add_argument("--deadline", type=float, default=20.0, help="seconds per mutant")
    parser.add_argument("--show", action="append", default=[],
                        help="print every case of this outcome (repeatable)")
    parser.add_argument("--examples", type=int, default=5, help="examples per bad outcome")
    parser.add_argument("--save", metavar="DIR", help="write the design of every bad case here")
    args = parser.parse_args(argv)

    dm.warm_up()
    docs = dm.sources()
    counts = collections.Counter()
    examples = collections.defaultdict(list)
    t0 = time.perf_counter()

    @settings(max_examples=args.n, database=None, derandomize=True, deadline=None,
              phases=[Phase.generate], suppress_health_check=list(HealthCheck))
    @given(dm.mutants(docs))
    def one(case):
        source, text, names, steps = case
        outcome, detail = dm.run_mutant(text, names, deadline=args.deadline)
        counts[outcome] += 1
        if args.save and outcome not in GOOD:
            os.makedirs(args.save, exist_ok=True)
            name = os.path.join(args.save, f"{outcome}-{counts[outcome]:04d}.toml")
            with open(name, "w", encoding="utf-8") as fh:
                fh.write(f"# {source}: {'; '.join(steps)}\n# -> {detail[:300]!r}\n{text}")
        if outcome in args.show or (outcome not in GOOD
                                    and len(examples[outcome]) < args.examples):
            examples[outcome].append(f"{source}: {'; '.join(steps)} -> {detail}")

    one()
    elapsed = time.perf_counter() - t0
    total = sum(counts.values())
    print(f"{total} mutants in {elapsed:.0f} s ({elapsed / max(total, 1) * 1e3:.0f} ms each), "
          f"load average {os.getloadavg()[0]:.2f}")
    for outcome in dm.OUTCOMES:
        print(f"  {outcome:12s} {counts[outcome]:6d}")
    for outcome in dm.OUTCOMES:
        for line in examples.get(outcome, ()):
            print(f"[{outcome}] {line[:400]}")


if __name__ == "__main__":
    main()
