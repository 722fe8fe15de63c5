"""Proofs about periodic orbits of planar polynomial systems: ``no cycle in SET``, ``cycle in SET``.

``no cycle in SET`` (SET convex: linear or concave quadratic conditions),
tried in turn:

* ``no-equilibrium`` (theorem ``index-no-equilibrium``): ``|f|^2 - eps -
  sum s_i g_i`` and the ``s_i`` are sums of squares, so SET holds no
  equilibrium; a periodic orbit would enclose one (index theory);
* ``dulac`` (theorem ``bendixson-dulac``, Bendixson 1901, Dulac 1937): a
  polynomial ``B`` of degree 0..4 with ``div(B f) - eps - sum s_i g_i`` a sum
  of squares (``eps = 1`` fixes the scale of ``B``).

``cycle in SET`` (theorem ``poincare-bendixson``): an attracting cycle is
located numerically (:mod:`proofkit.analysis.orbits`), a polynomial ``W``
whose level sets follow it is fitted by a linear program
(:mod:`proofkit.proofs._cycles_fit`), and with ``W`` fixed the annulus
``{inner <= W <= outer}`` is certified: compact, crossed inward on both
boundary curves, free of equilibria, inside SET and the domain
(:mod:`proofkit.proofs._cycles_search`). A repelling cycle is not certified
(the schema's annulus is positively invariant).

Evidence follows DEVELOPERS.md's schema table; the entries go to the audit,
which alone decides. This module never marks a claim proved by itself and
never evaluates model text.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from fractions import Fraction
from typing import Any

import sympy as sp

from proofkit.certificate import claim_entry, claim_scope, not_proved_entry
from proofkit.model import Claim, Model
from proofkit.proofs import ProofAttempt
from proofkit.proofs._cycles_search import (
    AnnulusData,
    Planar,
    annulus_program,
    dulac_program,
    index_program,
)

__all__ = ["DULAC_DEGREES", "TIME_BUDGET", "attempt", "planar_problem"]

DULAC_DEGREES = (0, 1, 2, 3, 4)
W_DEGREES = (2, 4, 6, 8)
FIT_REACH = 0.35  # scaled distance: flow conditions outside the cycle when the full fit fails
FIT_GRID = 61  # grid points per axis of that second fit
TIME_BUDGET = 90.0  # seconds per claim
Progress = Callable[[str], None]


def attempt(model: Model, claim: Claim, progress: Progress | None = None) -> ProofAttempt | None:
    """A certificate entry for a ``no cycle`` / ``cycle`` claim (None for other kinds)."""
    if claim.kind not in ("no cycle", "cycle"):
        return None
    from proofkit.proofs._nonpoly_cycles import applies

    if applies(model):  # a rational field: proofs/_nonpoly_cycles.py multiplies it through
        return None
    say = progress or (lambda _m: None)
    prep = planar_problem(model, claim)
    if isinstance(prep, str):
        return ProofAttempt(not_proved_entry(model, claim, prep), prep)
    if claim.kind == "no cycle":
        return _no_cycle(model, claim, prep, say)
    return _cycle(model, claim, prep, say)


def _rational_poly(expr: sp.Expr, xs: tuple[sp.Symbol, ...]) -> sp.Expr | None:
    try:
        poly = sp.Poly(sp.expand(expr), *xs)
    except sp.PolynomialError:
        return None
    if not all(c.is_Rational for c in poly.coeffs()):
        return None
    return poly.as_expr()


def _conditions(region: Any, values: dict, xs: tuple) -> tuple[tuple[sp.Expr, bool], ...] | None:
    out = []
    for g, strict in region.nonnegative_forms():
        p = _rational_poly(sp.expand(g.subs(values)), xs)
        if p is None:
            return None
        out.append((p, bool(strict)))
    return tuple(out)


def planar_problem(model: Model, claim: Claim) -> Planar | str:
    """The exact planar problem of a cycle claim, or the reason it cannot be posed."""
    if claim_scope(model, claim) != "nominal":
        return (
            "cycle claims are proved at the nominal parameter values only; "
            "end the claim with 'at nominal'"
        )
    if len(model.states) != 2:
        return "cycle claims are proved for planar systems (two states) only"
    nominal = model.at_nominal()
    xs = nominal.state_symbols
    field = [_rational_poly(e, xs) for e in nominal.field]
    if any(f is None for f in field):
        return "the vector field is not polynomial with rational coefficients"
    values = model.nominal_values()
    conds = _conditions(claim.region, values, xs) if claim.region is not None else None
    if conds is None:
        return "the claim's set is not given by polynomial conditions with rational coefficients"
    dom: tuple[tuple[sp.Expr, bool], ...] = ()
    if model.domain is not None and claim.kind == "cycle":
        dom_c = _conditions(model.domain, values, xs)
        if dom_c is None:
            return "the domain is not given by polynomial conditions with rational coefficients"
        dom = dom_c
    return Planar((xs[0], xs[1]), (field[0], field[1]), conds, dom)  # type: ignore[arg-type]


def _convex(pl: Planar) -> str | None:
    """None when every condition is linear or concave quadratic, else the reason."""
    for k, (g, _strict) in enumerate(pl.conditions):
        d = pl.degree(g)
        if d <= 1:
            continue
        if d > 2 or not sp.hessian(g, pl.xs).is_negative_semidefinite:
            return (
                f"condition {k + 1} of the set is not linear or concave quadratic, so the set "
                "is not shown convex (simply connected)"
            )
    return None


_THEOREMS = {
    "no-equilibrium": "index-no-equilibrium",
    "dulac": "bendixson-dulac",
    "annulus": "poincare-bendixson",
}


def _found(
    model: Model,
    claim: Claim,
    method: str,
    evidence: dict[str, Any],
    detail: str,
    trace: dict[str, Any] | None = None,
) -> ProofAttempt:
    """The entry for evidence found by ``method`` (the audit decides whether it proves)."""
    entry = claim_entry(
        model, claim, "proved", method=method, theorem=_THEOREMS[method], evidence=evidence
    )
    return ProofAttempt(entry, detail, trace=trace)


def _no_cycle(model: Model, claim: Claim, pl: Planar, say: Progress) -> ProofAttempt:
    why = _convex(pl)
    if why is not None:
        return ProofAttempt(not_proved_entry(model, claim, why), why)
    notes = []
    for eps in (Fraction(1, 100), Fraction(1, 10000)):
        say(f"no cycle: |f|^2 >= {eps} on the set (index argument)")
        found = index_program(pl, eps)
        if found.evidence is not None:
            detail = f"no equilibrium in the set: |f|^2 >= {eps} there"
            return _found(model, claim, "no-equilibrium", found.evidence, detail)
        notes.append(f"index argument (eps {eps}): {found.reason}")
    for degree in DULAC_DEGREES:
        say(f"no cycle: Dulac function of degree {degree}")
        found = dulac_program(pl, degree)
        if found.evidence is not None:
            detail = f"Dulac function B of degree {degree}: div(B f) >= 1"
            return _found(model, claim, "dulac", found.evidence, detail)
    notes.append(f"no Dulac function of degree <= {DULAC_DEGREES[-1]} found")
    reason = "; ".join(notes[-2:])
    hint = _cycle_hint(model, pl)
    return ProofAttempt(not_proved_entry(model, claim, reason + hint), reason + hint)


def _inside(pl: Planar, pts: Any, conds: tuple[tuple[sp.Expr, bool], ...]) -> bool:
    import numpy as np

    for g, _strict in conds:
        fn = sp.lambdify([pl.xs], g, "numpy")  # parsed sympy tree, never user text
        vals = np.broadcast_to(np.asarray(fn(pts), dtype=float), pts.shape[1:])
        if not np.all(vals > 0):
            return False
    return True


def _cycle_hint(model: Model, pl: Planar) -> str:
    """A note when the numerical search finds a periodic orbit inside the set."""
    from proofkit.analysis.orbits import find_cycles

    try:
        cycles = find_cycles(model).cycles
    except (ArithmeticError, ValueError):
        return ""
    for c in cycles:
        if _inside(pl, c.orbit, pl.conditions):
            return (
                f" (numerically, a periodic orbit of period {c.period:.6g} lies in the set: "
                "the claim looks false, and no certificate can exist)"
            )
    return ""


def _cycle(model: Model, claim: Claim, pl: Planar, say: Progress) -> ProofAttempt:
    from proofkit.analysis.orbits import find_cycles, numeric_field

    t0 = time.perf_counter()
    say("cycle: locating periodic orbits numerically")
    search = find_cycles(model, progress=say)
    nf = numeric_field(model)
    inside = [c for c in search.cycles if _inside(pl, c.orbit, pl.conditions + pl.domain)]
    stable = [c for c in inside if c.stable]
    if not stable:
        what = "a repelling cycle only" if inside else "no periodic orbit"
        reason = (
            f"the numerical search found {what} in the set; an annulus proof needs an "
            "attracting cycle there"
        )
        return ProofAttempt(not_proved_entry(model, claim, reason), reason)
    notes = []
    for cyc in stable[:2]:
        for degree in W_DEGREES:
            if time.perf_counter() - t0 > TIME_BUDGET:
                notes.append(f"time budget of {TIME_BUDGET:.0f} s used up")
                break
            result = _annulus_for(pl, nf, cyc, degree, say)
            if isinstance(result, dict):
                detail = (
                    f"annulus {result['numbers']['inner']} <= W <= {result['numbers']['outer']} "
                    f"around the cycle of period {cyc.period:.6g} (W of degree {degree})"
                )
                return _found(model, claim, "annulus", result, detail, trace={"cycle": cyc})
            notes.append(result)
    reason = (
        "no annulus certified (the annulus around the cycle must lie in the set; a set with "
        "more room around the cycle may help): " + "; ".join(notes[-3:])
    )
    return ProofAttempt(not_proved_entry(model, claim, reason), reason)


def _annulus_for(pl: Planar, nf: Any, cyc: Any, degree: int, say: Progress) -> dict | str:
    from proofkit.proofs._cycles_fit import choose_levels, fit_annulus

    say(f"cycle: fitting W of degree {degree} to the cycle of period {cyc.period:.6g}")
    fit = fit_annulus(nf, cyc, degree)
    levels = choose_levels(fit, nf) if fit is not None else []
    if not levels:  # flow conditions near the cycle only, on a finer grid
        fit = fit_annulus(nf, cyc, degree, reach=FIT_REACH, grid_size=FIT_GRID) or fit
        levels = choose_levels(fit, nf) if fit is not None else []
    if fit is None:
        return f"degree {degree}: no W follows the cycle (linear program)"
    if not levels:
        return f"degree {degree}: no level curves crossed the right way"
    w = fit.rational(pl.xs)
    witness = _witness(w, pl, cyc, levels[0])
    last = ""
    for inner, outer in levels[:2]:
        if witness is None:
            return f"degree {degree}: no rational witness point in the annulus"
        say(f"cycle: certifying {inner} <= W <= {outer}")
        data = AnnulusData(w, inner, outer, witness, Fraction(1, 1000))
        found = annulus_program(pl, data)
        if found.evidence is None:  # boundary multipliers of higher degree
            found = annulus_program(pl, data, extra=2)
        if found.evidence is not None:
            return found.evidence
        last = f"degree {degree}, levels {inner}, {outer}: {found.reason}"
    return last


def _witness(w: sp.Expr, pl: Planar, cyc: Any, levels: tuple[Fraction, Fraction]) -> Any:
    """A rational point of the cycle with inner <= W <= outer (exact check)."""
    lo, hi = (sp.Rational(v.numerator, v.denominator) for v in levels)
    for den in (1 << 10, 1 << 20):
        pt = tuple(Fraction(round(v * den), den) for v in cyc.point)
        val = w.subs(
            {
                pl.xs[0]: sp.Rational(*pt[0].as_integer_ratio()),
                pl.xs[1]: sp.Rational(*pt[1].as_integer_ratio()),
            }
        )
        if lo <= val <= hi:
            return pt
    return None
