"""Failure rate of ``decompose`` on random low-rank sums of squares (a script, not a test).

Cases: 1-4 weighted squares of random rational polynomials, 2-4 variables,
degree <= 6, WITHOUT an added interior term, so the squares' common real zeros
(and zeros at infinity) usually leave no positive definite Gram matrix.
Fixed seeds make the case lists reproducible:

    /work/venv/bin/python tests/sos/measure_low_rank.py SEED COUNT

prints every failure and a summary line (failures, median and max time).
"""

from __future__ import annotations

import random
import sys
import time

import sympy as sp

from proofkit.exact import decompose
from proofkit.sos import full_basis

SYMS = sp.symbols("a b c d", real=True)


def random_case(rng: random.Random) -> tuple[sp.Expr, list[sp.Symbol]]:
    """One random sum of squares (same distribution as the property test's strategy)."""
    nv = rng.randint(2, 4)
    half = rng.randint(1, 3)
    xs = list(SYMS[:nv])
    monos = [sp.Mul(*[v**e for v, e in zip(xs, row, strict=True)]) for row in full_basis(nv, half)]
    total = sp.Integer(0)
    for _ in range(rng.randint(1, 4)):
        picks = rng.sample(monos, rng.randint(1, min(5, len(monos))))
        q = sum(sp.Rational(rng.randint(-6, 6), rng.randint(1, 4)) * m for m in picks)
        total += sp.Rational(rng.randint(1, 5), rng.randint(1, 3)) * q**2
    return sp.expand(total), xs


def main(seed: int, count: int) -> int:
    rng = random.Random(seed)
    fails = 0
    times = []
    for i in range(count):
        p, xs = random_case(rng)
        t0 = time.perf_counter()
        res = decompose(p, xs)
        times.append(time.perf_counter() - t0)
        if not res.found:
            fails += 1
            print(f"FAIL case {i} ({times[-1]:.1f} s) in {xs}: {p}\n  {res.reason}", flush=True)
    times.sort()
    print(
        f"seed {seed}: {fails}/{count} not certified; time median {times[count // 2]:.2f} s, "
        f"max {times[-1]:.2f} s, total {sum(times):.0f} s"
    )
    return fails


if __name__ == "__main__":
    main(int(sys.argv[1]), int(sys.argv[2]))
