"""Benchmark: the survey of a 6-state polynomial model with several equilibria.

Run on purpose (not collected by pytest):
    /work/venv/bin/python tests/perf/bench_equilibria.py [--k 1/10] [--h 1/20] [--repeat 3]

Model (invented for timing only): two double-well oscillators with spring
coupling k and a bias h (h != 0 breaks the symmetry, so the equilibria
have coordinates of high algebraic degree), and a two-state filter,
    da/dt = b,  db/dt = a - a^3 - b/2 + k (c - a) + h,
    dc/dt = d,  dd/dt = c - c^3 - d/2 + k (a - c),
    de/dt = -e + a c,  df/dt = -2 f + e - b.
It prints where the time goes: Groebner bases, the quotient-algebra solve,
real root isolation, exact points, Jacobians, characteristic polynomials,
Routh arrays, Lyapunov equations; each as seconds and share of the total.
"""

from __future__ import annotations

import argparse
import time
from collections import defaultdict
from collections.abc import Callable
from typing import Any

import sympy as sp

import proofkit.analysis.equilibria as eqm
import proofkit.analysis.surveying as sv
from proofkit.analysis.algebraic import RealAlgebraicField
from proofkit.model import Equation, Model

SPENT: dict[str, float] = defaultdict(float)
CALLS: dict[str, int] = defaultdict(int)


def _timed(label: str, fn: Callable[..., Any]) -> Callable[..., Any]:
    def wrapper(*args: Any, **kwargs: Any) -> Any:
        t0 = time.perf_counter()
        try:
            return fn(*args, **kwargs)
        finally:
            SPENT[label] += time.perf_counter() - t0
            CALLS[label] += 1

    return wrapper


def instrument() -> None:
    eqm._groebner = _timed("groebner bases", eqm._groebner)
    eqm._Quotient._mult_matrix = _timed(
        "normal forms / multiplication matrices", eqm._Quotient._mult_matrix
    )
    RealAlgebraicField.real_roots_of = classmethod(
        _timed("real root isolation", RealAlgebraicField.real_roots_of.__func__)
    )
    eqm._solve_zero_dim = _timed("zero-dimensional solve (total)", eqm._solve_zero_dim)
    sv._eval_poly_at = _timed("jacobians at the points", sv._eval_poly_at)
    sv._charpoly_in = _timed("characteristic polynomials", sv._charpoly_in)
    sv.routh_array_in = _timed("routh arrays (incl. exact counts)", sv.routh_array_in)
    sv.solve_lyapunov_in = _timed("lyapunov equations", sv.solve_lyapunov_in)
    sv._find = _timed("find equilibria (total)", sv._find)  # surveying's own reference


def bench_model(k: sp.Rational, h: sp.Rational) -> Model:
    names = ("a", "b", "c", "d", "e", "f")
    a, b, c, d, e, f = (sp.Symbol(n, real=True) for n in names)
    half = sp.Rational(1, 2)
    rhs = [
        b,
        a - a**3 - half * b + k * (c - a) + h,
        d,
        c - c**3 - half * d + k * (a - c),
        -e + a * c,
        -2 * f + e - b,
    ]
    return Model("bench6", names, tuple(Equation(n, r) for n, r in zip(names, rhs, strict=True)))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--k", default="1/10", help="coupling (exact rational), default 1/10")
    ap.add_argument("--h", default="1/20", help="bias (exact rational), default 1/20")
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()

    def rational(text: str) -> sp.Rational:
        num, _, den = text.partition("/")
        return sp.Rational(int(num), int(den or 1))

    k, h = rational(args.k), rational(args.h)
    instrument()
    model = bench_model(k, h)
    walls = []
    s = None
    for _ in range(args.repeat):
        t0 = time.perf_counter()
        s = sv.survey(model)
        walls.append(time.perf_counter() - t0)
    assert s is not None
    total = sum(walls)
    print(f"6-state model, k = {k}, h = {h}: {len(s.equilibria)} equilibria, complete={s.complete}")
    degrees = sorted(e_.field_degree for e_ in s.equilibria)
    print(f"  degrees over Q of the fields of the points: {degrees}")
    print(f"  {s.complete_reason}")
    for e in s.equilibria:
        pt = ", ".join(f"{n}={v:.4g}" for n, v in e.numeric.items())
        print(f"  ({pt})  {e.verdict:12s} {e.type}")
    print(
        f"wall time per survey: min {min(walls):.3f} s, mean {total / len(walls):.3f} s "
        f"({args.repeat} runs)"
    )
    print("where the time goes (all runs; nested rows overlap their totals):")
    for label, sec in sorted(SPENT.items(), key=lambda t: -t[1]):
        print(f"  {label:42s} {sec:8.3f} s  {100 * sec / total:5.1f} %  ({CALLS[label]} calls)")


if __name__ == "__main__":
    main()
