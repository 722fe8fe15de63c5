"""Candidate ``V(y, p)`` for a region of attraction over a parameter box: alternating search.

The parameters ``p`` are extra variables kept in their box by multipliers of
``box_j = (p_j - lo_j)(hi_j - p_j)`` (the S-procedure). Two convex steps
alternate, the classic V–s iteration of sum-of-squares region-of-attraction
estimation (Jarvis-Wloszek, Packard et al., "Some controls applications of
sum of squares programming", CDC 2003):

* level step (``V`` fixed): the largest level ``c`` with ``-lie(V) - eps|y|^2 -
  s0 (c - V) - sum_j b_j box_j`` a sum of squares (bisection on a solver
  parameter), and the smallest level ``gamma`` whose sublevel set holds the
  claim's set; the multipliers ``s0``, ``t_i`` at ``c`` are kept;
* shape step (``s0``, ``t_i``, ``c`` fixed): a new ``V``, free in ``y`` (degree 2..d)
  and in ``p`` (degree <= 1), still decreasing on ``{V <= c}`` and inside the
  domain, that minimises ``gamma`` (the largest value of ``V`` on the claim's set).

The ratio ``c / gamma`` grows; once it exceeds 1 the current ``V`` is handed to the
caller, which certifies it exactly over the whole box. Everything here is
floating point rounded to rationals: a hint, never evidence. This module never
marks a claim proved and never imports the audit.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Iterator
from fractions import Fraction
from typing import Any

import numpy as np

__all__ = ["alternate"]

ROUNDS = 12
BACKOFF = Fraction(97, 100)
DENOMINATOR = 10**6
STEPS = 8  # bisection steps per level (the ratio needs no more)
SPAN = 8  # the set's level may exceed the decrease level by at most 2^SPAN


def _to_poly(space: Any, u: Any, value: np.ndarray) -> Any:
    """A float value of an unknown as a polynomial with small rational coefficients."""
    from proofkit.exact.rounding import unknown_poly

    vals = np.asarray(value, dtype=float)
    exact = [[_q(x) for x in row] for row in vals] if vals.ndim == 2 else [_q(x) for x in vals]
    return unknown_poly(space, u, exact)


def _q(x: float) -> Fraction:
    return Fraction(float(x)).limit_denominator(DENOMINATOR)


def _normalise(space: Any, v: Any, n: int) -> Any:
    """``V`` scaled so that its quadratic part in ``y`` has trace 1 (p = 0), rounded."""
    tr = sum(
        (float(c) for e, c in zip(v.monoms(), v.coeffs(), strict=True) if _is_square(e, n)),
        0.0,
    )
    if tr <= 0:
        return v
    terms = {e: _q(float(c) / tr) for e, c in zip(v.monoms(), v.coeffs(), strict=True)}
    return space.from_terms({e: c for e, c in terms.items() if c})


def _is_square(e: tuple, n: int) -> bool:
    return sum(e[:n]) == 2 and max(e[:n]) == 2 and not any(e[n:])


def _level_step(ctx: dict, v: Any, deadline: float) -> tuple[Fraction, Fraction, dict] | str:
    """(decrease level c, inside level gamma, numeric multipliers at c) for a fixed ``V``."""
    from proofkit.proofs._ranges_basin import _bisect, _feasible, _programs
    from proofkit.sos import solve_program

    space, g, box, sets, doms, n = ctx["args"]
    progs = _programs(space, g, box, v, sets, doms, n)
    low = Fraction(1, 10**6)
    if not _feasible(progs["decrease"], low):
        return "V does not decrease on any sublevel set over the whole box"
    hi = Fraction(1)
    while _feasible(progs["decrease"], hi) and hi < 10**6:
        low, hi = hi, hi * 4
    top = _bisect(progs["decrease"], low, hi, True, deadline, STEPS)
    gamma_lo, gamma_hi = Fraction(0), top
    while not _feasible(progs["inside"], gamma_hi):
        if gamma_hi > top * 2**SPAN:
            return "the claim's set is far outside every sublevel set where V decreases"
        gamma_lo, gamma_hi = gamma_hi, gamma_hi * 4
    gamma = _bisect(progs["inside"], gamma_lo, gamma_hi, False, deadline, STEPS)
    prog, level, obl = progs["decrease"]
    c = Fraction(float(top * BACKOFF)).limit_denominator(DENOMINATOR)
    level.set(c)
    sol = solve_program(prog, "CLARABEL")
    if sol.status not in ("solved", "inaccurate") or not sol.usable:
        return f"the multipliers at level {float(c):.4g} were not found ({sol.status})"
    mults = {k: _to_poly(space, u, sol.values[u.name]) for k, u in obl.items() if k[0] in "st"}
    return c, gamma, mults


def _shape_step(ctx: dict, c: Fraction, mults: dict) -> Any | None:
    """A new ``V`` decreasing on ``{V <= c}`` (fixed ``s0``, ``t_i``) with the least ``gamma``."""
    from proofkit.proofs._ranges_lyapunov import EPS, _basis
    from proofkit.sos import SearchProgram, solve_program

    space, g, box, sets, doms, n = ctx["args"]
    m = len(box)
    half = ctx["half"]
    prog = SearchProgram(space.variables)
    v = prog.free("V", _basis(n, m, ctx["degree"] + 1, 2, 1))
    gamma = prog.scalar("gamma")
    eps = space.const(EPS)
    norm = sum((space.gen(i) ** 2 for i in range(n)), space.zero())
    boxes = [
        (space.gen(n + j) - space.const(lo)) * (space.const(hi) - space.gen(n + j))
        for j, (lo, hi) in enumerate(box)
    ]
    cq = space.const(c)
    s0 = mults["s0"]
    pos = v - norm * eps
    dec = -v.lie([*g, *([space.zero()] * m)]) - norm * eps - s0 * cq + v * s0
    ins = gamma - v
    for j, bx in enumerate(boxes):
        pos = pos - prog.sos(f"a{j + 1}", _basis(n, m, ctx["degree"] // 2 + 1, 1, 1)) * bx
        dec = dec - prog.sos(f"b{j + 1}", _basis(n, m, half, 1, 1)) * bx
        ins = ins - prog.sos(f"c{j + 1}", _basis(n, m, half, 0, 1)) * bx
    for i, gi in enumerate(sets):
        ins = ins - prog.sos(f"s{i + 1}", _basis(n, m, half, 0, 1)) * gi
    for i, (h, strict) in enumerate(doms):
        t = mults[f"t{i + 1}"]
        dom = prog.poly(h - eps if strict else h) - t * cq + v * t
        for j, bx in enumerate(boxes):
            dom = dom - prog.sos(f"d{i + 1}_{j + 1}", _basis(n, m, half, 0, 1)) * bx
        prog.require_sos(dom, f"domain {i + 1}")
    prog.require_sos(pos, "positive")
    prog.require_sos(dec, "decrease")
    prog.require_sos(ins, "inside")
    prog.minimize({gamma: 1})
    sol = solve_program(prog, "CLARABEL")  # interior point: faster and sharper here than SCS
    if sol.status not in ("solved", "inaccurate") or not sol.usable:
        return None
    return _normalise(space, _to_poly(space, v, sol.values["V"]), n)


def alternate(
    args: tuple, v0: Any, degree: int, say: Callable[[str], None], deadline: float
) -> Iterator[Any]:
    """Yield ``V``'s whose decrease level exceeds the level the claim's set needs.

    ``args`` = (space, shifted field g(y, p), box, set conditions, domain conditions, n).
    ``v0``: the starting ``V`` (e.g. quadratic from the linearization); ``degree``: the
    largest degree of ``V`` in ``y``.
    """
    space, g, _box, _sets, _doms, n = args
    top = max(degree + 1 + max(gi.total_degree() for gi in g) - 1, 2 * 2)
    ctx = {"args": args, "degree": degree, "half": (top + top % 2) // 2}
    v = _normalise(space, v0, n)
    best = 0.0
    for r in range(ROUNDS):
        if time.perf_counter() > deadline:
            return
        step = _level_step(ctx, v, deadline)
        if isinstance(step, str):
            say(f"alternating search, degree {degree}, round {r + 1}: {step}")
            return
        c, gamma, mults = step
        ratio = float(c / gamma) if gamma else float("inf")
        say(f"alternating search, degree {degree}, round {r + 1}: decrease/set levels {ratio:.3f}")
        if ratio > 1.02:
            yield v
            return
        if ratio < best * 1.005 and r >= 3:
            return  # stalled
        best = max(best, ratio)
        if time.perf_counter() > deadline:
            return
        new = _shape_step(ctx, c, mults)
        if new is None:
            say(f"alternating search, degree {degree}: the shape step failed (round {r + 1})")
            return
        v = new
