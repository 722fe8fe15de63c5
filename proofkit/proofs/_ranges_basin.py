"""``claim E attracts SET`` over parameter ranges: one sublevel set ``{V <= level}`` for the box.

Candidates for ``V``, in order: the quadratic Lyapunov function of the nominal
linearization (``A'P + PA = -I``, the classic choice), a quadratic ``V`` affine in
the parameters that decreases along the linearization over the whole box, then
``V``'s of degree 2 and 4 in the deviation (affine in the parameters) from the
alternating level/shape search of :mod:`proofkit.proofs._ranges_basin_iter`. Each
candidate is fixed; the parameters are extra variables under box multipliers.
Two monotone questions are bisected numerically on the level (a solver
parameter, re-solved without rebuilding): the largest level where ``V``
decreases on ``{V <= level}`` and it stays in the domain, and the smallest level
whose sublevel set contains the claim's set. A level between them is made exact
with every obligation at once (:func:`proofkit.exact.solve_exactly`); only the
audit decides (``region-of-attraction-over-range``). One time budget (``BUDGET``
seconds) bounds the whole search.

This module never marks a claim proved and never imports the audit's arithmetic.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from fractions import Fraction
from typing import Any

import flint
import sympy as sp

from proofkit.model import Claim, Model
from proofkit.proofs._ranges_lyapunov import (
    EPS,
    _basis,
    _gram_json,
    _poly_json,
    _setup,
)

__all__ = ["search_range_basin"]

BUDGET = 60.0
SOLVER = "CLARABEL"  # interior point: sharper than SCS for the level probes here
MAX_BISECT = 14
ALTERNATE_DEGREES = (2, 4)


def _nominal_v(model: Model, space: Any, g: list[Any], box: list) -> Any | None:
    """``y' P y`` with ``A'P + PA = -I`` at the nominal values (rounded P, exact V).

    The Hurwitz test and ``P`` come from the exact kernel (:mod:`proofkit.analysis.linear`);
    rounding ``P`` to small denominators keeps ``V`` short (it is only a candidate).
    """
    from proofkit.analysis.linear import (
        characteristic_polynomial,
        quadratic_field,
        routh_array_in,
        solve_lyapunov_in,
    )

    n = len(model.states)
    K = quadratic_field(0)
    nominal = [_fmpq(sp.Rational(p.nominal)) for p in model.params if p.is_uncertain]
    at = [flint.fmpq(0)] * n + nominal
    a = [[K(gi.derivative(j)(*at)) for j in range(n)] for gi in g]
    if not routh_array_in(characteristic_polynomial(a, K), K).hurwitz:
        return None
    identity = [[K.one if i == j else K.zero for j in range(n)] for i in range(n)]
    p, _minors = solve_lyapunov_in(a, identity, K)
    v = space.zero()
    for i in range(n):
        for j in range(n):
            q = p[i][j].rational()
            c = Fraction(int(q.p), int(q.q)).limit_denominator(1000)
            v += space.gen(i) * space.gen(j) * space.const(c)
    return v


def _fmpq(r: sp.Rational) -> flint.fmpq:
    return flint.fmpq(int(r.p), int(r.q))


def _programs(space: Any, g: list, box: list, v: Any, sets: list, doms: list, n: int) -> dict:
    """Three programs sharing the level: decrease (+ domain), inside, and all together."""
    from proofkit.sos import SearchProgram

    m = len(box)
    eps = space.const(EPS)
    norm = sum((space.gen(i) ** 2 for i in range(n)), space.zero())
    boxes = [
        (space.gen(n + j) - space.const(lo)) * (space.const(hi) - space.gen(n + j))
        for j, (lo, hi) in enumerate(box)
    ]
    lie = sum((v.derivative(i) * gi for i, gi in enumerate(g)), space.zero())
    top = max(v.total_degree() + max(gi.total_degree() for gi in g) - 1, 2)
    top += top % 2
    half = max((top - 2) // 2, 1)
    if any(any(e[n:]) for e in v.monoms()):  # V depends on p: room for p in the multipliers
        half += 1

    def build(parts: set[str]) -> tuple[Any, Any, dict]:
        prog = SearchProgram(space.variables)
        level = prog.level("level", 1)
        obl: dict[str, Any] = {}
        pos = prog.poly(v - norm * eps)
        if "decrease" in parts and any(any(e[n:]) for e in v.monoms()):
            for j, bx in enumerate(boxes):  # V depends on p: positive only on the box
                aj = prog.sos(f"a{j + 1}", _basis(n, m, 2, 1, 1))
                pos = pos - aj * bx
                obl[f"a{j + 1}"] = aj
        if "decrease" in parts:
            s0 = prog.sos("s0", _basis(n, m, half, 1, 1))
            dec = prog.poly(-lie - norm * eps) + s0 * v - s0 * level
            for j, bx in enumerate(boxes):
                bj = prog.sos(f"b{j + 1}", _basis(n, m, half, 1, 1))
                dec = dec - bj * bx
                obl[f"b{j + 1}"] = bj
            obl["decrease"], obl["s0"] = prog.require_sos(dec, "decrease"), s0
            obl["positive"] = prog.require_sos(pos, "positive")
            for i, (h, strict) in enumerate(doms):
                ti = prog.sos(f"t{i + 1}", _basis(n, m, half, 0, 1))
                target = prog.poly(h - eps if strict else h) - ti * level + ti * v
                for j, bx in enumerate(boxes):
                    dj = prog.sos(f"d{i + 1}_{j + 1}", _basis(n, m, half, 0, 1))
                    target = target - dj * bx
                    obl[f"d{i + 1}_{j + 1}"] = dj
                obl[f"domain {i + 1}"], obl[f"t{i + 1}"] = prog.require_sos(target, f"dom{i}"), ti
        if "inside" in parts:
            target = prog.poly(-v) + prog.poly(space.const(1)) * level
            for i, gi in enumerate(sets):
                si = prog.sos(f"s{i + 1}", _basis(n, m, half, 0, 1))
                target = target - si * gi
                obl[f"s{i + 1}"] = si
            for j, bx in enumerate(boxes):
                cj = prog.sos(f"c{j + 1}", _basis(n, m, half, 0, 1))
                target = target - cj * bx
                obl[f"c{j + 1}"] = cj
            obl["inside"] = prog.require_sos(target, "inside")
        return prog, level, obl

    return {
        "decrease": build({"decrease"}),
        "inside": build({"inside"}),
        "all": build({"decrease", "inside"}),
    }


def _feasible(entry: tuple, value: Fraction) -> bool:
    from proofkit.sos import solve_program

    prog, level, _ = entry
    level.set(value)
    return solve_program(prog, SOLVER).status == "solved"


def _bisect(
    entry: tuple, lo: Fraction, hi: Fraction, upward: bool, deadline: float, steps: int = MAX_BISECT
) -> Fraction:
    """The feasible end nearest the other side: largest (upward) or smallest feasible level."""
    for _ in range(steps):
        if time.perf_counter() > deadline:
            break
        mid = (lo + hi) / 2
        if _feasible(entry, mid) == upward:
            lo = mid
        else:
            hi = mid
    return lo if upward else hi


def search_range_basin(
    model: Model, claim: Claim, say: Callable[[str], None], budget: float = BUDGET
) -> tuple[dict[str, Any] | None, str]:
    """(evidence, detail) for ``attracts SET`` over the ranges, or (None, why not)."""
    from proofkit.exact.rounding import unknown_poly

    setup = _setup(model, claim.target or "")
    if isinstance(setup, str):
        return None, setup
    space, g, box = setup
    n = len(model.states)
    xs = model.state_symbols
    fixed = {p.symbol: p.nominal for p in model.params if not p.is_uncertain}
    point = [sp.expand(e.subs(fixed)) for _, e in model.equilibrium(claim.target or "").point]
    shift = {x: x + e for x, e in zip(xs, point, strict=True)}

    def lift(expr: sp.Expr) -> Any:
        return space.coerce(sp.expand(expr.subs(fixed).subs(shift, simultaneous=True)))

    try:
        sets = [lift(gx) for gx, _ in (claim.region.nonnegative_forms() if claim.region else ())]
        doms = [(lift(h), s) for h, s in (model.domain.nonnegative_forms() if model.domain else ())]
    except (ValueError, TypeError, sp.PolynomialError) as exc:
        return None, f"the set or the domain is not polynomial: {exc}"
    deadline = time.perf_counter() + budget
    why = "the nominal linearization is not Hurwitz: no quadratic V to start from"
    args = (space, g, box, sets, doms, n)
    for label, v in _candidates(model, args, deadline, say):
        if v is None or time.perf_counter() > deadline:
            continue
        say(f"region of attraction over the ranges: {label}, bisection on the level")
        found, why = _at_levels(space, g, box, v, sets, doms, n, deadline)
        if found is not None:
            level, obl, exact = found
            ev = _evidence(space, v, level, obl, exact, unknown_poly, len(box))
            return ev, f"sublevel set {{V <= {level}}} of a degree-{_y_degree(v, n)} V ({label})"
    return None, why


def _y_degree(v: Any, n: int) -> int:
    return max((sum(e[:n]) for e in v.monoms()), default=0)


def _candidates(model: Model, args: tuple, deadline: float, say: Callable[[str], None]):
    """V's to try: the nominal Lyapunov equation's, one quadratic V affine in p that
    decreases along the linearization at every value of the box (a sum-of-squares search),
    then V's of higher degree from the alternating search started at the latter."""
    from proofkit.proofs._ranges_basin_iter import alternate

    space, g, box, _sets, _doms, n = args
    yield "V from the nominal Lyapunov equation", _nominal_v(model, space, g, box)
    start = _linear_range_v(space, g, box, n)
    yield "V affine in the parameters", start
    if start is None:
        return
    for degree in ALTERNATE_DEGREES:
        for v in alternate(args, start, degree, say, deadline):
            yield f"V of degree {degree} from the alternating search", v


def _linear_range_v(space: Any, g: list, box: list, n: int) -> Any | None:
    from proofkit.exact import solve_exactly
    from proofkit.exact.rounding import unknown_poly
    from proofkit.proofs._ranges_lyapunov import _program

    lin = []
    for gi in g:
        terms = {e: c for e, c in zip(gi.monoms(), gi.coeffs(), strict=True) if sum(e[:n]) == 1}
        lin.append(space.from_terms(terms) if terms else space.zero())
    prog, v, *_ = _program(space, lin, box, n, 2, 1, 1)
    res = solve_exactly(prog)
    return unknown_poly(space, v, res.exact.values["V"]) if res.found else None


def _at_levels(space, g, box, v, sets, doms, n, deadline):
    """((level, obligations, exact values), "") or (None, why not) for one fixed V."""
    from proofkit.exact import solve_exactly

    progs = _programs(space, g, box, v, sets, doms, n)
    hi = Fraction(1)
    while _feasible(progs["decrease"], hi) and hi < 10**6:
        hi *= 4
    if not _feasible(progs["decrease"], Fraction(1, 10**6)):
        return None, "V does not decrease on any sublevel set over the whole box"
    top = _bisect(progs["decrease"], Fraction(1, 10**6), hi, True, deadline)
    if not _feasible(progs["inside"], top):
        return None, (
            f"the largest sublevel set {{V <= {float(top):.4g}}} where V decreases "
            "for every parameter value does not contain the claim's set"
        )
    low = _bisect(progs["inside"], Fraction(0), top, False, deadline)
    for frac in (Fraction(1, 2), Fraction(1, 4), Fraction(3, 4), Fraction(1, 10), Fraction(9, 10)):
        level = Fraction(float(low + (top - low) * frac)).limit_denominator(10**4)
        prog, lv, obl = progs["all"]
        lv.set(level)
        res = solve_exactly(prog)
        if res.found:
            return (level, obl, res.exact), ""
    return None, "no exact certificate at the levels tried between the set and the decrease"


def _evidence(
    space: Any, v: Any, level: Fraction, obl: dict, ex: Any, unknown_poly: Any, m: int
) -> dict:
    """The evidence in the names of ``region-of-attraction-over-range``."""
    nv = space.nvars
    zero = {"basis": [[0] * nv], "gram": [["0"]]}
    targets = {"decrease", "positive", "inside"}
    squares, multipliers = {}, {}
    for k, u in obl.items():
        squares[k] = _gram_json(u.basis, ex.values[u.name])
        if k not in targets and not k.startswith("domain"):
            multipliers[k] = _poly_json(unknown_poly(space, u, ex.values[u.name]))
            if not multipliers[k]:
                squares[k] = zero
    for j in range(m):  # V does not depend on the parameters: a zero multiplier for positive
        if f"a{j + 1}" not in multipliers:
            multipliers[f"a{j + 1}"], squares[f"a{j + 1}"] = [], zero
    return {
        "V": _poly_json(v),
        "numbers": {"eps": str(EPS), "level": str(level)},
        "margin_power": 1,
        "multipliers": multipliers,
        "squares": squares,
    }
