"""Benchmark of the sum-of-squares engine (a script, not a collected test).

    /work/venv/bin/python tests/perf/bench_sos.py [--quick] [--solvers clarabel,scs]
    /work/venv/bin/python tests/perf/bench_sos.py --bisection

For random SOS targets ``p = b' (R R' + I/10) b`` (R with small rational entries,
full half-degree basis, so the Gram matrix is strictly feasible) on a grid of
2..8 variables and degrees 2..6 it prints, per program and solver: the basis
size, assembly time, cvxpy build+compile time, solver time, rounding plus exact
check time, the ratio of everything but the solver to the solver time, and
whether an exact certificate came out. For small and medium sizes it also
builds the same program the naive way (sympy ``expand`` of ``b'Qb`` with
symbolic entries, one cvxpy constraint per monomial) in the same run.
"""

from __future__ import annotations

import argparse
import random
import sys
import time
import warnings
from fractions import Fraction

import cvxpy as cp
import flint
import numpy as np
import sympy as sp

from proofkit.exact import round_program
from proofkit.sos import SearchProgram, full_basis, solve_program
from proofkit.sos.poly import PolySpace

GRID = [
    (2, 2),
    (2, 4),
    (2, 6),
    (3, 4),
    (3, 6),
    (4, 4),
    (4, 6),
    (5, 6),
    (6, 4),
    (6, 6),
    (8, 4),
    (8, 6),
]
QUICK = [(2, 4), (3, 6), (4, 6), (6, 4)]
NAIVE_MAX_BASIS = 36  # the naive build takes minutes beyond this
CLARABEL_MAX_BASIS = 90  # Clarabel's dense PSD steps take tens of minutes beyond this


def random_target(space: PolySpace, basis: np.ndarray, seed: int) -> flint.fmpq_mpoly:
    """``b' (R R' + I/10) b`` with R entries k/4, k in -4..4, built with FLINT arithmetic."""
    rng = random.Random(seed)
    n = basis.shape[0]
    mono = [space.from_arrays(e.reshape(1, -1), [1]) for e in basis]
    p = space.zero()
    for _ in range(n):
        q = space.zero()
        for i in range(n):
            c = rng.randint(-4, 4)
            if c:
                q += mono[i] * flint.fmpq(c, 4)
        p += q * q
    for m in mono:
        p += m * m * flint.fmpq(1, 10)
    return p


def naive_build(variables, basis: np.ndarray, target_sym: sp.Expr) -> tuple[float, float, float]:
    """Naive way: symbolic Q, sympy expand, one cvxpy constraint per monomial.

    Returns (assembly seconds, cvxpy build+compile+solve seconds, solver seconds).
    """
    t0 = time.perf_counter()
    n = basis.shape[0]
    syms = sp.symbols(f"q0:{n * n}")
    b = [sp.Mul(*[v ** int(e) for v, e in zip(variables, row, strict=True)]) for row in basis]
    form = sp.expand(sum(syms[i * n + j] * b[i] * b[j] for i in range(n) for j in range(n)))
    diff = sp.Poly(form - target_sym, *variables)
    q = cp.Variable((n, n), symmetric=True)
    index = {s: k for k, s in enumerate(syms)}
    cons = [q >> 0]
    for _monom, coeff in diff.terms():
        lin = 0
        const = 0
        for term in sp.Add.make_args(coeff):
            c, rest = term.as_coeff_Mul()
            if rest in index:
                k = index[rest]
                lin = lin + float(c) * q[k // n, k % n]
            else:
                const += float(term)
        cons.append(lin + const == 0)
    t_asm = time.perf_counter() - t0
    t1 = time.perf_counter()
    prob = cp.Problem(cp.Minimize(0), cons)
    prob.solve(solver=cp.CLARABEL)
    total = time.perf_counter() - t1
    return t_asm, total, float(prob.solver_stats.solve_time or 0.0)


def run(grid, solvers, naive: bool) -> list[dict]:
    rows = []
    for nv, deg in grid:
        xs = sp.symbols(f"x0:{nv}", real=True)
        space = PolySpace(xs)
        basis = full_basis(nv, deg // 2)
        p = random_target(space, basis, seed=1000 * nv + deg)
        for solver in solvers:
            if solver == "clarabel" and basis.shape[0] > CLARABEL_MAX_BASIS:
                print(f"| {nv} | {deg} | {basis.shape[0]} | - | clarabel | not run (too slow) |")
                continue
            prog = SearchProgram(xs)
            g = prog.sos("gram", basis)
            prog.equate(g, p)
            t0 = time.perf_counter()
            prog.assemble()
            t_asm = time.perf_counter() - t0
            sol = solve_program(prog, solver, margin=True)
            t1 = time.perf_counter()
            ex = round_program(prog, sol)
            t_exact = time.perf_counter() - t1
            compile_t = sol.build_time + sol.compile_time
            overhead = t_asm + compile_t + t_exact
            row = {
                "nvars": nv,
                "degree": deg,
                "basis": basis.shape[0],
                "monomials": prog.identities[0].monomials.shape[0],
                "solver": solver,
                "status": sol.status,
                "assembly": t_asm,
                "compile": compile_t,
                "solve": sol.solve_time,
                "exact": t_exact,
                "ratio": overhead / sol.solve_time if sol.solve_time else float("inf"),
                "share": overhead / (overhead + sol.solve_time),
                "certified": ex.ok,
                "den": ex.denominator,
            }
            if naive and solver == solvers[-1] and basis.shape[0] <= NAIVE_MAX_BASIS:
                n_asm, n_total, n_solve = naive_build(xs, basis, space.to_sympy(p))
                row["naive_assembly"] = n_asm
                row["naive_compile"] = n_total - n_solve
                row["speedup"] = n_asm / t_asm if t_asm else float("inf")
            rows.append(row)
            print(fmt(row), flush=True)
    return rows


HEADER = (
    "| vars | deg | basis | monos | solver | status | assembly s | compile s | solve s "
    "| round+check s | non-solver/solver | non-solver share | exact | naive assembly s "
    "| naive compile s | assembly speed-up |"
)


def fmt(r: dict) -> str:
    naive = (
        f"{r['naive_assembly']:.3f} | {r['naive_compile']:.3f} | {r['speedup']:.0f}x"
        if "naive_assembly" in r
        else "not run | not run | -"
    )
    exact = f"yes (1/{r['den']})" if r["certified"] else "no"
    return (
        f"| {r['nvars']} | {r['degree']} | {r['basis']} | {r['monomials']} | {r['solver']} "
        f"| {r['status']} | {r['assembly']:.4f} | {r['compile']:.3f} | {r['solve']:.3f} "
        f"| {r['exact']:.3f} | {r['ratio']:.2f} | {100 * r['share']:.0f} % | {exact} | {naive} |"
    )


def _level_program(degree: int) -> tuple[SearchProgram, object]:
    """Reversed-time oscillator, fixed quadratic V (REFERENCES.md), level c as a parameter."""
    x, y = sp.symbols("x y", real=True)
    f = [-y, x + (x**2 - 1) * y]
    v = sp.Rational(3, 2) * x**2 - x * y + y**2
    prog = SearchProgram([x, y])
    c = prog.level("c", 1)
    s0 = prog.sos_of_degree("s0", degree)
    vdot = sp.diff(v, x) * f[0] + sp.diff(v, y) * f[1]
    prog.require_sos(-vdot - (x**2 + y**2) / 1000 - s0 * c + s0 * v, "decrease")
    return prog, c


def bisection(levels: int = 12, degree: int = 4) -> None:
    """Per level: a fresh program (build, assemble, compile, solve) against a reused one."""
    values = [Fraction(k, levels) * 3 for k in range(1, levels + 1)]
    fresh, reused = [], []
    prog, c = _level_program(degree)
    solve_program(prog, "clarabel")  # warm-up and the one compile of the reused problem
    for lv in values:
        t0 = time.perf_counter()
        p2, c2 = _level_program(degree)
        c2.set(lv)
        a = solve_program(p2, "clarabel")
        fresh.append(time.perf_counter() - t0)
        t0 = time.perf_counter()
        c.set(lv)
        b = solve_program(prog, "clarabel")
        reused.append(time.perf_counter() - t0)
        assert a.status == b.status, (lv, a.status, b.status)
    mf, mr = float(np.median(fresh)), float(np.median(reused))
    print(f"bisection, s0 of degree {degree}, {levels} levels (clarabel): ")
    print(f"  fresh program per level: median {1000 * mf:.1f} ms")
    print(f"  reused program, level as a cvxpy Parameter: median {1000 * mr:.1f} ms")
    print(f"  rebuild / re-solve: {mf / mr:.1f}x")


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="a few small sizes only")
    ap.add_argument("--solvers", default="clarabel,scs")
    ap.add_argument("--no-naive", action="store_true")
    ap.add_argument(
        "--bisection", action="store_true", help="only: rebuild vs re-solve of a level program"
    )
    args = ap.parse_args(argv)
    warnings.filterwarnings("ignore")
    if args.bisection:
        bisection()
        return 0
    print(HEADER)
    print("|" + "---|" * (HEADER.count("|") - 1))
    run(QUICK if args.quick else GRID, args.solvers.split(","), not args.no_naive)
    return 0


if __name__ == "__main__":
    sys.exit(main())
