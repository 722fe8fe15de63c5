"""Sum-of-squares programs for cycle claims, and their exact evidence.

One program per theorem schema of :mod:`proofkit.audit.cycles` (index
argument, Bendixson–Dulac, Poincaré–Bendixson annulus), built with
:class:`proofkit.sos.SearchProgram` so that every obligation of the schema is
one identity ``target == Gram form``; :func:`proofkit.exact.solve_exactly`
rounds and checks exactly. The evidence is written from the exact solution
only, under the obligation names the audit expects.

This module proposes evidence; it never decides that a claim is proved (the
audit does), and never evaluates model text.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

import flint
import sympy as sp

from proofkit.exact import solve_exactly
from proofkit.sos import SearchProgram, full_basis
from proofkit.sos.program import SosPoly, Unknown

__all__ = [
    "AnnulusData",
    "Found",
    "Planar",
    "annulus_program",
    "dulac_program",
    "index_program",
    "positive_program",
]


@dataclass(frozen=True)
class Planar:
    """A planar polynomial field and the sets of a cycle claim (exact sympy)."""

    xs: tuple[sp.Symbol, sp.Symbol]
    f: tuple[sp.Expr, sp.Expr]
    conditions: tuple[tuple[sp.Expr, bool], ...]  # the claim's set: g >= 0 (> 0 if strict)
    domain: tuple[tuple[sp.Expr, bool], ...] = ()

    def degree(self, p: sp.Expr) -> int:
        return int(sp.Poly(p, *self.xs).total_degree()) if p != 0 else 0

    @property
    def norm2(self) -> sp.Expr:
        return sp.expand(self.f[0] ** 2 + self.f[1] ** 2)


@dataclass
class Found:
    """Exact evidence for one schema (JSON-ready), or the reason there is none."""

    evidence: dict[str, Any] | None
    reason: str = ""


def _even(k: int) -> int:
    return k + (k % 2)


def _frac(q: flint.fmpq) -> str:
    return str(Fraction(int(q.p), int(q.q)))


def _poly_json(p: flint.fmpq_mpoly) -> list[Any]:
    terms = [[list(map(int, e)), _frac(c)] for e, c in zip(p.monoms(), p.coeffs(), strict=True)]
    return sorted(terms, key=lambda t: t[0], reverse=True)


def _gram_json(u: SosPoly, value: Sequence[Sequence[flint.fmpq]]) -> dict[str, Any]:
    return {
        "basis": [list(map(int, row)) for row in u.basis],
        "gram": [[_frac(x) for x in row] for row in value],
    }


def _sos(prog: SearchProgram, name: str, degree: int) -> SosPoly:
    return prog.sos(name, full_basis(2, max(degree, 0) // 2))


def _exact(prog: SearchProgram) -> tuple[Any, str]:
    out = solve_exactly(prog)
    if not out.found:
        return None, out.reason or "no exact solution"
    return out.exact, ""


def _write(
    prog: SearchProgram, exact: Any, multipliers: Sequence[str], free: Sequence[str] = ()
) -> dict[str, Any]:
    """``multipliers``, ``free`` and ``squares`` entries of the evidence from the exact values."""
    from proofkit.exact.rounding import unknown_poly

    by_name: dict[str, Unknown] = {u.name: u for u in prog.unknowns}
    squares = {}
    for u in prog.unknowns:
        if isinstance(u, SosPoly):
            squares[u.name] = _gram_json(u, exact.values[u.name])
    poly = {
        k: _poly_json(unknown_poly(prog.space, by_name[k], exact.values[k])) for k in multipliers
    }
    ev: dict[str, Any] = {"multipliers": poly, "squares": squares}
    if free:
        ev["free"] = {
            k: _poly_json(unknown_poly(prog.space, by_name[k], exact.values[k])) for k in free
        }
    return ev


def _set_multipliers(
    prog: SearchProgram, pl: Planar, target_degree: int, prefix: str = "s"
) -> tuple[list[SosPoly], int]:
    """One SOS multiplier per set condition; returns them and the target's degree."""
    degree = _even(max([target_degree] + [pl.degree(g) for g, _s in pl.conditions]))
    mults = [
        _sos(prog, f"{prefix}{i + 1}", degree - pl.degree(g))
        for i, (g, _s) in enumerate(pl.conditions)
    ]
    return mults, degree


def _on_the_set(prog: SearchProgram, pl: Planar, target: Any, degree: int, name: str) -> list:
    """Require ``target - sum_i s_i g_i`` to be a sum of squares (S-procedure over the set's
    conditions ``g_i >= 0``, multipliers ``s_i`` sums of squares); the multipliers."""
    mults, _deg = _set_multipliers(prog, pl, degree)
    for s, (g, _strict) in zip(mults, pl.conditions, strict=True):
        target = target - s * g
    prog.require_sos(target, name)
    return mults


def index_program(pl: Planar, eps: Fraction) -> Found:
    """``apart``: |f|^2 - eps - sum s_i g_i is a sum of squares, s_i too."""
    prog = SearchProgram(pl.xs)
    target = prog.poly(pl.norm2) - sp.Rational(eps.numerator, eps.denominator)
    mults = _on_the_set(prog, pl, target, pl.degree(pl.norm2), "apart")
    exact, why = _exact(prog)
    if exact is None:
        return Found(None, why)
    ev = {"numbers": {"eps": str(eps)}, **_write(prog, exact, [s.name for s in mults])}
    return Found(ev)


def dulac_program(
    pl: Planar, degree: int, eps: Fraction = Fraction(1), fixed: sp.Expr | None = None
) -> Found:
    """``divergence``: div(B f) - eps - sum s_i g_i is a sum of squares.

    ``B`` is free of ``degree``, or the given polynomial ``fixed`` (a Dulac
    function found by hand; then only the multipliers and Gram matrices are searched).
    """
    prog = SearchProgram(pl.xs)
    if fixed is not None:
        b = prog.poly(sp.expand(fixed))
        degree = pl.degree(fixed)
    else:
        b = prog.free("B", full_basis(2, degree))
    div = (b * pl.f[0]).diff(0) + (b * pl.f[1]).diff(1)
    fdeg = max(pl.degree(fi) for fi in pl.f)
    target = div - sp.Rational(eps.numerator, eps.denominator)
    mults = _on_the_set(prog, pl, target, degree + fdeg - 1, "divergence")
    exact, why = _exact(prog)
    if exact is None:
        return Found(None, why)
    from proofkit.exact.rounding import unknown_poly

    if fixed is not None:
        bpoly = prog.space.coerce(sp.expand(fixed))
    else:
        bpoly = unknown_poly(prog.space, b, exact.values["B"])
    if bpoly.is_zero():
        return Found(None, "the Dulac function came out zero")
    ev = {
        "B": _poly_json(bpoly),
        "numbers": {"eps": str(eps)},
        **_write(prog, exact, [s.name for s in mults]),
    }
    return Found(ev)


@dataclass(frozen=True)
class AnnulusData:
    """A fixed rational ``W`` with levels, the witness and ``eps``."""

    w: sp.Expr
    inner: Fraction
    outer: Fraction
    witness: tuple[Fraction, Fraction]
    eps: Fraction


def annulus_program(pl: Planar, a: AnnulusData, extra: int = 0) -> Found:
    """Every obligation of ``poincare-bendixson`` with ``W`` fixed; multipliers searched.

    ``extra`` (even) raises the degree of the boundary multipliers ``p_o``, ``p_i``.
    """
    prog = SearchProgram(pl.xs)
    x, y = pl.xs
    q = lambda v: sp.Rational(v.numerator, v.denominator)  # noqa: E731
    eps, inner, outer = q(a.eps), q(a.inner), q(a.outer)
    w = sp.expand(a.w)
    dw = pl.degree(w)
    lie = sp.expand(sp.diff(w, x) * pl.f[0] + sp.diff(w, y) * pl.f[1])
    dlie = _even(max(pl.degree(lie), dw)) + extra
    p_o = prog.free("p_o", full_basis(2, dlie - dw))
    p_i = prog.free("p_i", full_basis(2, dlie - dw))
    offset = prog.scalar("offset")
    prog.require_sos(prog.poly(w - eps * (x**2 + y**2)) + offset, "bounded")
    prog.require_sos(prog.poly(-lie - eps) + p_o * (w - outer), "outer")
    prog.require_sos(prog.poly(lie - eps) + p_i * (w - inner), "inner")
    dapart = _even(max(pl.degree(pl.norm2), dw)) + 2
    a1, a2 = _sos(prog, "a1", dapart - dw), _sos(prog, "a2", dapart - dw)
    prog.require_sos(prog.poly(pl.norm2 - eps) - a1 * (w - inner) - a2 * (outer - w), "apart")
    names = ["a1", "a2"]
    for label, conds, letter in (("within", pl.conditions, "b"), ("domain", pl.domain, "c")):
        for i, (g, strict) in enumerate(conds):
            deg = _even(max(pl.degree(g), dw)) + 2
            m1 = _sos(prog, f"{letter}{i + 1}_1", deg - dw)
            m2 = _sos(prog, f"{letter}{i + 1}_2", deg - dw)
            base = prog.poly(g - eps if strict else g)
            prog.require_sos(base - m1 * (w - inner) - m2 * (outer - w), f"{label} {i + 1}")
            names += [m1.name, m2.name]
    exact, why = _exact(prog)
    if exact is None:
        return Found(None, why)
    off = exact.values["offset"]
    ev = {
        "W": _poly_json(prog.space.coerce(w)),
        "numbers": {
            "eps": str(a.eps),
            "inner": str(a.inner),
            "outer": str(a.outer),
            "offset": _frac(off if isinstance(off, flint.fmpq) else flint.fmpq(off)),
        },
        "witness": [str(v) for v in a.witness],
        **_write(prog, exact, names, free=["p_o", "p_i"]),
    }
    return Found(ev)


def positive_program(
    pl: Planar, q: sp.Expr, eps: Fraction, conditions: Sequence[sp.Expr], extra: int = 0
) -> Found:
    """``denominator``: ``q - eps - sum_i t_i c_i`` and the ``t_i`` are sums of squares.

    Shows ``q >= eps`` where every ``c_i >= 0`` (the set of a claim, or an annulus
    ``W - inner >= 0``, ``outer - W >= 0``); ``extra`` raises the multipliers' degree.
    """
    prog = SearchProgram(pl.xs)
    degree = _even(max([pl.degree(q)] + [pl.degree(c) for c in conditions])) + extra
    target = prog.poly(sp.expand(q)) - sp.Rational(eps.numerator, eps.denominator)
    names = []
    for i, c in enumerate(conditions):
        t = _sos(prog, f"t{i + 1}", degree - pl.degree(c))
        target = target - t * c
        names.append(t.name)
    prog.require_sos(target, "denominator")
    exact, why = _exact(prog)
    if exact is None:
        return Found(None, why)
    return Found({"numbers": {"eps": str(eps)}, **_write(prog, exact, names)})
