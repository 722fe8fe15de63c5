"""Lyapunov functions over parameter ranges: one ``V`` for the whole box, by sums of squares.

The uncertain parameters become extra variables of the sum-of-squares
programs, kept in their box by multipliers of ``box_j = (p_j - lo_j)(hi_j - p_j)``
(the S-procedure). ``V`` is sought first in the deviation ``y`` alone (one
``V`` for every value), then with terms linear in the parameters. Claims:
``globally stable`` (theorem ``lyapunov-global-over-range``) and ``stable``
(``lyapunov-local-over-range``, here with a global certificate: ``s0 = 0``,
level 1), for a fixed rational point or a moving point polynomial in the
parameters. Region-of-attraction claims over ranges are not attempted.

This module never marks a claim proved and never imports the audit's
arithmetic; only the audit decides.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from fractions import Fraction
from typing import Any

import flint
import numpy as np
import sympy as sp

from proofkit.model import Claim, Model

__all__ = ["METHOD", "THEOREM", "search_range_lyapunov"]

METHOD = "lyapunov-range"
THEOREM = {
    "globally stable": "lyapunov-global-over-range",
    "stable": "lyapunov-local-over-range",
    "attracts": "region-of-attraction-over-range",
}
EPS = Fraction(1, 100)
MAX_GRAM = 120
DEGREES = (2, 4)
BUDGET = 30.0  # seconds per claim


def _setup(model: Model, name: str) -> tuple[Any, list[Any], list[tuple[Fraction, Fraction]]] | str:
    """(polynomial space over y and p, shifted field g(y, p), box), or why not."""
    from proofkit.sos import PolySpace

    uncertain = [p for p in model.params if p.is_uncertain]
    fixed = {p.symbol: p.nominal for p in model.params if not p.is_uncertain}
    syms = [p.symbol for p in uncertain]
    box = []
    for p in uncertain:
        lo, hi = sp.Rational(p.low), sp.Rational(p.high)
        if not (lo.is_Rational and hi.is_Rational):
            return "a parameter range is not rational"
        box.append((Fraction(int(lo.p), int(lo.q)), Fraction(int(hi.p), int(hi.q))))
    xs = model.state_symbols
    point = [sp.expand(v.subs(fixed)) for _, v in model.equilibrium(name).point]
    if not all(v.is_polynomial(*syms) and v.free_symbols <= set(syms) for v in point):
        return "the equilibrium is not polynomial in the parameters (a radical or worse)"
    space = PolySpace([*xs, *syms])
    shift = {x: x + v for x, v in zip(xs, point, strict=True)}
    try:
        g = [
            space.coerce(sp.expand(f.subs(fixed).subs(shift, simultaneous=True)))
            for f in model.field
        ]
    except (ValueError, TypeError, sp.PolynomialError) as exc:
        return f"the field is not polynomial with rational coefficients: {exc}"
    n = len(xs)
    for gi in g:
        if any(not any(e[:n]) for e in gi.monoms()):
            return "the point is not an equilibrium for every parameter value"
    return space, g, box


def _basis(n: int, m: int, max_deg: int, min_y: int, max_p: int) -> np.ndarray:
    """Monomials in (y, p) of total degree <= max_deg, y-degree >= min_y, p-degree <= max_p."""
    from proofkit.sos import full_basis

    rows = [
        r for r in full_basis(n + m, max_deg, 0) if r[:n].sum() >= min_y and r[n:].sum() <= max_p
    ]
    return np.array(rows, dtype=np.int64).reshape(len(rows), n + m)


def _program(space: Any, g: list[Any], box: list, n: int, degree: int, mp: int, vp: int):
    """The search program: V (y-degree 2..degree, p-degree <= vp), a_j, b_j."""
    from proofkit.sos import SearchProgram

    m = len(box)
    prog = SearchProgram(space.variables)
    v = prog.free("V", _basis(n, m, degree + vp, 2, vp))
    eps = space.const(EPS)
    norm = sum((space.gen(i) ** 2 for i in range(n)), space.zero())
    boxes = [
        (space.gen(n + j) - space.const(lo)) * (space.const(hi) - space.gen(n + j))
        for j, (lo, hi) in enumerate(box)
    ]
    deg_f = max((gi.total_degree() for gi in g), default=1)
    top = max(degree + vp + max(deg_f, 1) - 1, 2 * mp)
    top += top % 2
    half = max((top - 2) // 2, mp)
    pos_expr = v - norm * eps
    a = []
    if vp:
        a = [prog.sos(f"a{j + 1}", _basis(n, m, degree // 2 + vp, 1, vp)) for j in range(m)]
        for aj, bj in zip(a, boxes, strict=True):
            pos_expr = pos_expr - aj * bj
    b = [prog.sos(f"b{j + 1}", _basis(n, m, half, mp, half)) for j in range(m)]
    dec_expr = -v.lie([*g, *([space.zero()] * m)]) - norm**mp * eps
    for bj, bx in zip(b, boxes, strict=True):
        dec_expr = dec_expr - bj * bx
    pos = prog.require_sos(pos_expr, "positive")
    dec = prog.require_sos(dec_expr, "decrease")
    return prog, v, pos, dec, a, b


def _poly_json(p: flint.fmpq_mpoly) -> list[Any]:
    return [[list(map(int, e)), str(c)] for e, c in zip(p.monoms(), p.coeffs(), strict=True)]


def _gram_json(basis: np.ndarray, gram: Any) -> dict[str, Any]:
    return {
        "basis": [list(map(int, r)) for r in basis],
        "gram": [[str(x) for x in row] for row in gram],
    }


def _zero_square(nv: int) -> dict[str, Any]:
    return {"basis": [[0] * nv], "gram": [["0"]]}


def _evidence(space: Any, found: tuple, m: int, mp: int, local: bool) -> dict[str, Any]:
    from proofkit.exact.rounding import unknown_poly

    ex, v, pos, dec, a, b = found
    nv = space.nvars
    squares = {
        "positive": _gram_json(pos.basis, ex.values[pos.name]),
        "decrease": _gram_json(dec.basis, ex.values[dec.name]),
    }
    multipliers = {}
    for j in range(m):
        for name, group in ((f"a{j + 1}", a), (f"b{j + 1}", b)):
            u = group[j] if group else None
            if u is None:
                multipliers[name], squares[name] = [], _zero_square(nv)
            else:
                multipliers[name] = _poly_json(unknown_poly(space, u, ex.values[u.name]))
                squares[name] = _gram_json(u.basis, ex.values[u.name])
    numbers = {"eps": str(EPS)}
    if local:
        numbers["level"] = "1"
        multipliers["s0"], squares["s0"] = [], _zero_square(nv)
    return {
        "V": _poly_json(unknown_poly(space, v, ex.values["V"])),
        "numbers": numbers,
        "margin_power": mp,
        "multipliers": multipliers,
        "squares": squares,
    }


def search_range_lyapunov(
    model: Model, claim: Claim, say: Callable[[str], None], budget: float = BUDGET
) -> tuple[dict[str, Any] | None, str]:
    """(evidence, detail) for the claim over the ranges, or (None, why not)."""
    from proofkit.exact import solve_exactly

    setup = _setup(model, claim.target or "")
    if isinstance(setup, str):
        return None, setup
    space, g, box = setup
    n, m = len(model.states), len(box)
    deadline = time.perf_counter() + budget
    for vp in (0, 1):
        for degree in DEGREES:
            for mp in (1, 2):
                if time.perf_counter() > deadline:
                    return None, "time budget used up"
                say(f"lyapunov over the ranges: V of degree {degree} in y, {vp} in p, m = {mp}")
                prog, v, pos, dec, a, b = _program(space, g, box, n, degree, mp, vp)
                if max(pos.size, dec.size) > MAX_GRAM:
                    continue
                res = solve_exactly(prog)
                if res.found:
                    ev = _evidence(
                        space, (res.exact, v, pos, dec, a, b), m, mp, claim.kind == "stable"
                    )
                    what = "one V for every value" if vp == 0 else "V linear in the parameters"
                    return ev, f"Lyapunov function of degree {degree} over the box ({what})"
    return None, (
        "no sum-of-squares Lyapunov function over the parameter box was found "
        f"(V of degree {', '.join(map(str, DEGREES))} in y, at most linear in p)"
    )
