"""Linearization over a parameter box: exact characteristic polynomials and Bernstein covers.

For an equilibrium that is a point for every value of the uncertain parameters
``p`` (fixed, or moving as ``x_i = a_i(p) + b_i(p) sqrt(g(p))``), the Jacobian
and the characteristic polynomial ``det(sI - J(p))`` are computed exactly in
``Q[p][r]/(r^2 - g(p))`` with ``r = sqrt(g(p))``, so the radical cancels where
it does. The Hurwitz conditions are the leading Hurwitz determinants
``Delta_1 .. Delta_{n-1}`` and the constant coefficient ``a_n`` (whose sign
with that of ``Delta_{n-1}`` gives ``Delta_n = a_n Delta_{n-1}``): the first
column of the Routh array is ``1, Delta_1, Delta_2/Delta_1, ..., Delta_n/Delta_{n-1}``.

Signs over the box come from exact Bernstein expansion with bisection: on a
sub-box, a polynomial whose Bernstein coefficients are all positive is positive
on the whole closed sub-box (Garloff 1986; Zettler and Garloff 1998). A cover
is a list of sub-boxes that tile the box, each with the proven sign of every
condition (and, when a radical is present, a rational enclosure of ``r``). The
expansion and the covers live in the private ``_parametric_cover``; their public
names are re-exported here.

This module must never accept a floating-point evaluation as evidence: every
sign it reports is an exact rational fact. It decides nothing about claims;
:mod:`proofkit.proofs.ranges` writes certificates, the audit decides.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any, Literal

import flint
import sympy as sp

from proofkit.analysis._parametric_cover import (
    Box,
    Cover,
    Leaf,
    bernstein,
    bernstein_sign,
    contradicts,
    cover_box,
    simplest_between,
    to_sympy,
)
from proofkit.model import Model

__all__ = [
    "Box",
    "Cover",
    "Leaf",
    "ParametricResult",
    "RangeSystem",
    "bernstein",
    "bernstein_sign",
    "contradicts",
    "cover_box",
    "hurwitz_determinants",
    "moving_point_json",
    "parametric_stability",
    "range_system",
    "simplest_between",
]


Mpoly = flint.fmpq_mpoly
MAX_STATES = 8  # as the audit: Hurwitz minors are expanded without division
MAX_PARAMS = 6
MAX_GRID = 100_000  # Bernstein coefficients of all conditions on one sub-box
_RADICAL = "sqrt_g"


@dataclass(frozen=True)
class RangeSystem:
    """The linearization of one equilibrium as exact polynomials in the uncertain parameters.

    Variables of every polynomial: ``params`` then, when ``radicand`` is set, ``radical``
    (``r = sqrt(radicand)``, always ``>= 0``). ``point[i] = (a_i, b_i)``: the i-th coordinate
    is ``a_i + b_i r`` (``b_i = 0`` without a radical). ``charpoly`` is highest degree first
    (leading 1) and ``conditions`` are ``Delta_1 .. Delta_{n-1}, a_n``, all reduced mod
    ``r^2 - radicand`` (degree <= 1 in ``r``).
    """

    params: tuple[str, ...]
    radical: str | None
    box: Box
    nominal: tuple[Fraction, ...]
    ctx: flint.fmpq_mpoly_ctx
    radicand: Mpoly | None
    point: tuple[tuple[Mpoly, Mpoly], ...]
    charpoly: tuple[Mpoly, ...]
    conditions: tuple[Mpoly, ...]
    positives: int = 0  # leading conditions that must be positive (where f is defined)
    denominator_sign: int | None = None  # sigma of a rational field (see range_system)

    @property
    def condition_names(self) -> tuple[str, ...]:
        n = len(self.charpoly) - 1
        lead = tuple(
            "sigma Q" if k == 0 and self.denominator_sign else f"defined_{k + 1}"
            for k in range(self.positives)
        )
        return (*lead, *(f"Delta_{k}" for k in range(1, n)), f"a_{n}")

    @property
    def variables(self) -> tuple[str, ...]:
        return self.params + ((self.radical,) if self.radical else ())


# --- building the system --------------------------------------------------------------
def _frac(v: sp.Expr) -> Fraction | None:
    v = sp.nsimplify(v) if isinstance(v, sp.Float) else v
    return Fraction(int(v.p), int(v.q)) if isinstance(v, sp.Rational) else None


def _to_mpoly(expr: sp.Expr, syms: Sequence[sp.Symbol], ctx: flint.fmpq_mpoly_ctx) -> Mpoly:
    poly = sp.Poly(sp.expand(expr), *syms)
    terms = {}
    for monom, c in poly.terms():
        if not c.is_Rational:
            raise ValueError(f"coefficient {c} is not rational")
        terms[tuple(monom)] = flint.fmpq(int(c.p), int(c.q))
    return ctx.from_dict(terms) if terms else ctx.constant(0)


def reduce_radical(p: Mpoly, radicand: Mpoly | None) -> Mpoly:
    """Replace ``r^2`` by the radicand (``r`` is the last variable) until r-degree <= 1."""
    if radicand is None:
        return p
    ctx = p.context()
    k = ctx.nvars() - 1
    if p.degrees()[k] <= 1:
        return p
    out = ctx.constant(0)
    for monom, c in p.to_dict().items():
        e = monom[k]
        rest = ctx.from_dict({(*monom[:k], e % 2): c})
        out += rest * radicand ** (e // 2)
    return out


def _radical_form(
    values: Sequence[sp.Expr], syms: Sequence[sp.Symbol]
) -> tuple[sp.Expr | None, list[sp.Expr]] | str:
    """``(g, [a_i + b_i R])`` with a symbol R = sqrt(g), or why the point has another form."""
    bases: list[sp.Expr] = []
    for v in values:
        for atom in sp.preorder_traversal(v):
            if isinstance(atom, sp.Pow) and not atom.exp.is_Integer:
                if atom.exp != sp.S.Half:
                    return f"the point has the power {atom}; only square roots are supported"
                bases.append(sp.expand(atom.base))
            elif isinstance(atom, sp.Function) or (
                atom.is_Atom and atom.is_number and not atom.is_Rational
            ):
                return f"the point contains {atom}; it must be polynomial in the parameters"
    if not bases:
        return None, list(values)
    g = next((b for b in bases if not b.is_number), bases[0])
    big_r = sp.Symbol(_RADICAL)
    repl = {}
    for b in set(bases):
        q = sp.cancel(b / g)
        if not (q.is_Rational and q > 0 and sp.sqrt(q).is_Rational):
            return "the point has two different square roots; one radical per point is supported"
        repl[sp.sqrt(b)] = sp.sqrt(q) * big_r
    return g, [sp.expand(v.xreplace(repl)) for v in values]


def _parameter_box(
    model: Model, uncertain: list[Any]
) -> list[tuple[Fraction, Fraction, Fraction]] | str:
    """``(low, high, nominal)`` of each uncertain parameter, exactly, or why not."""
    if not uncertain:
        return "the model has no uncertain parameter"
    if len(model.states) > MAX_STATES or len(uncertain) > MAX_PARAMS:
        return (
            f"more than {MAX_STATES} states or {MAX_PARAMS} uncertain parameters "
            "(the limits of range linearization)"
        )
    ends = [(_frac(p.low), _frac(p.high), _frac(p.nominal)) for p in uncertain]
    if any(v is None for e in ends for v in e):
        return "a parameter range or nominal value is not rational"
    return ends  # type: ignore[return-value]


def range_system(model: Model, name: str) -> RangeSystem | str:
    """The exact linearization of equilibrium ``name`` over the parameter box, or why not."""
    uncertain = [p for p in model.params if p.is_uncertain]
    ends = _parameter_box(model, uncertain)
    if isinstance(ends, str):
        return ends
    fixed = {p.symbol: p.nominal for p in model.params if not p.is_uncertain}
    syms = [p.symbol for p in uncertain]
    box = tuple((lo, hi) for lo, hi, _ in ends)
    xs = model.state_symbols
    values = [sp.expand(v.subs(fixed)) for _, v in model.equilibrium(name).point]
    if any(not v.free_symbols <= set(syms) for v in values):
        return "the point depends on something other than the uncertain parameters"
    for v in values:
        radical = any(
            isinstance(a, sp.Pow) and not a.exp.is_Integer for a in sp.preorder_traversal(v)
        )
        if not radical and not v.is_polynomial(*syms):
            return (
                f"the point ({v}) is not polynomial in the uncertain parameters; such a point "
                "is proved at the nominal values only (end the claim with 'at nominal')"
            )
    form = _radical_form(values, syms)
    if isinstance(form, str):
        return form
    g, coords = form
    radical = None
    if g is not None:
        radical = _RADICAL
        while radical in {p.name for p in model.params}:
            radical += "_"
    names = tuple(p.name for p in uncertain) + ((radical,) if radical else ())
    ctx = flint.fmpq_mpoly_ctx.get(names, "lex")
    big_r = sp.Symbol(_RADICAL)
    vsyms = [*syms, big_r] if radical else syms
    parts = _rational_parts(model, fixed, [*xs, *syms])
    if isinstance(parts, str):
        return parts
    nums, dens, defined = parts
    try:
        radicand = _to_mpoly(g, [*syms, big_r], ctx) if radical else None
        point = tuple(_to_mpoly(c, vsyms, ctx) for c in coords)
        sub = dict(zip(xs, coords, strict=True))

        def at_point(e: sp.Expr) -> Mpoly:
            return reduce_radical(_to_mpoly(sp.expand(e).subs(sub), vsyms, ctx), radicand)

        residual = [at_point(f) for f in nums]
        distinct = list(dict.fromkeys(dens))
        sigma = _denominator_sign(distinct, model, sub, syms) if distinct != [1] else None
        if isinstance(sigma, str):
            return sigma
        scale = [sp.Mul(*[d for d in distinct if d != den]) * (sigma or 1) for den in dens]
        jm = [[at_point(scale[i] * sp.diff(f, x)) for x in xs] for i, f in enumerate(nums)]
        positive = [at_point(sp.Mul(*distinct) * sigma)] if sigma else []
        positive += [at_point(c) for c in defined]
    except (ValueError, sp.PolynomialError) as exc:
        return f"not exact polynomials in the parameters: {exc}"
    if any(not r.is_zero() for r in residual):
        return f"{name} is not an equilibrium for every parameter value (f does not vanish)"
    split = tuple(_split_radical(c, radicand) for c in point)
    cp = charpoly(jm, radicand)
    conditions = [*positive, *hurwitz_conditions(cp, radicand)]
    grid = sum(_grid(c) for c in [*conditions, *([radicand] if radicand is not None else [])])
    if grid > MAX_GRID:
        return (
            f"the Hurwitz conditions have {grid} Bernstein coefficients per sub-box "
            f"(at most {MAX_GRID}): too many parameters or too high degrees"
        )
    return RangeSystem(
        tuple(p.name for p in uncertain),
        radical,
        box,
        tuple(nominal for _, _, nominal in ends),
        ctx,
        radicand,
        split,
        tuple(cp),
        tuple(conditions),
        len(positive),
        sigma,
    )


def _rational_parts(
    model: Model, fixed: dict[Any, Any], syms: Sequence[sp.Symbol]
) -> tuple[list[sp.Expr], list[sp.Expr], list[sp.Expr]] | str:
    """Numerators, denominators and definedness conditions (``g > 0``) of the field.

    The same split as the certificate's model section (``together``, then numerator
    and denominator expanded; nothing cancelled), so the audit rebuilds the same
    polynomials from the certificate.
    """
    nums, dens, defined = [], [], []
    try:
        for f in model.field:
            e = f.subs(fixed)
            num, den = (e, sp.Integer(1)) if e.is_polynomial(*syms) else sp.fraction(sp.together(e))
            num, den = sp.expand(num), sp.expand(den)
            if not (num.is_polynomial(*syms) and den.is_polynomial(*syms)):
                return "the vector field is not rational in the states and uncertain parameters"
            nums.append(num)
            dens.append(den)
        for d in getattr(model, "definedness", ()):
            e = sp.expand(d.expr.subs(fixed))
            if e.free_symbols:
                defined.append(sp.expand(e**2) if d.relation == "!=" else e)
        if any(d != 1 for d in dens):
            defined += [sp.expand(d**2) for d in dens if d != 1]
    except sp.PolynomialError as exc:
        return f"not exact polynomials in the parameters: {exc}"
    return nums, dens, list(dict.fromkeys(defined))


def _denominator_sign(
    distinct: list[sp.Expr], model: Model, sub: dict[Any, Any], syms: Sequence[sp.Symbol]
) -> int | str:
    """sigma = the sign of Q = (product of the distinct denominators) at the nominal point.

    Where sigma Q > 0 the Jacobian is J = B / (sigma Q) with B = diag(sigma Q / D_i) J_N,
    so J and B have their eigenvalues in the same half plane.
    """
    nominal = {p.symbol: p.nominal for p in model.params if p.is_uncertain}
    value = sp.Mul(*distinct).subs(sub).subs(nominal)
    if not value.is_number or value == 0:
        return "a denominator of the field vanishes at the equilibrium (nominal values)"
    return 1 if value > 0 else -1


def _poly_json(expr: sp.Expr, syms: Sequence[sp.Symbol]) -> list[Any]:
    terms = sp.Poly(sp.expand(expr), *syms).terms()
    return [[list(m), str(sp.Rational(c))] for m, c in sorted(terms, reverse=True) if c != 0]


def moving_point_json(model: Model, name: str) -> dict[str, Any] | None:
    """The certificate's ``moving`` structure of equilibrium ``name`` (see DEVELOPERS.md):
    ``{"coordinates": [POLY]}`` over the uncertain parameters, plus ``"radicand"`` (a POLY
    over them) when the point has a square root ``r``, which is then the last variable.
    None when the point is not of the form ``a(p) + b(p) sqrt(g(p))`` with rational
    polynomial ``a, b, g``."""
    uncertain = [p for p in model.params if p.is_uncertain]
    fixed = {p.symbol: p.nominal for p in model.params if not p.is_uncertain}
    syms = [p.symbol for p in uncertain]
    values = [sp.expand(v.subs(fixed)) for _, v in model.equilibrium(name).point]
    form = _radical_form(values, syms)
    if isinstance(form, str) or any(not v.free_symbols <= set(syms) for v in values):
        return None
    g, coords = form
    big_r = sp.Symbol(_RADICAL)
    try:
        if g is None:
            return {"coordinates": [_poly_json(c, syms) for c in coords]}
        return {
            "coordinates": [_poly_json(c, [*syms, big_r]) for c in coords],
            "radicand": _poly_json(g, syms),
        }
    except (sp.PolynomialError, TypeError):
        return None


def _grid(p: Mpoly) -> int:
    size = 1
    for d in p.degrees():
        size *= max(int(d), 0) + 1
    return size


def _split_radical(c: Mpoly, radicand: Mpoly | None) -> tuple[Mpoly, Mpoly]:
    ctx = c.context()
    if radicand is None:
        return c, ctx.constant(0)
    k = ctx.nvars() - 1
    a, b = {}, {}
    for monom, v in c.to_dict().items():
        (b if monom[k] else a)[(*monom[:k], 0)] = v
    return ctx.from_dict(a) if a else ctx.constant(0), ctx.from_dict(b) if b else ctx.constant(0)


def charpoly(a: list[list[Mpoly]], radicand: Mpoly | None) -> list[Mpoly]:
    """``det(sI - A)`` highest first by Faddeev–LeVerrier (divides by integers only)."""
    n = len(a)
    ctx = a[0][0].context()
    zero, one = ctx.constant(0), ctx.constant(1)
    m = [[one if i == j else zero for j in range(n)] for i in range(n)]
    coeffs = [one]
    for k in range(1, n + 1):
        am = [
            [
                reduce_radical(sum((a[i][t] * m[t][j] for t in range(n)), zero), radicand)
                for j in range(n)
            ]
            for i in range(n)
        ]
        c = -sum((am[i][i] for i in range(n)), zero) / k
        coeffs.append(c)
        m = am
        for i in range(n):
            m[i][i] = m[i][i] + c
    return coeffs


def hurwitz_conditions(cp: Sequence[Mpoly], radicand: Mpoly | None) -> list[Mpoly]:
    """``Delta_1 .. Delta_{n-1}`` (leading minors of the Hurwitz matrix) and ``a_n``."""
    n = len(cp) - 1
    zero = cp[0].context().constant(0)

    def h(i: int, j: int) -> Mpoly:  # Hurwitz matrix entry a_{2j - i} (1-based)
        k = 2 * (j + 1) - (i + 1)
        return cp[k] if 0 <= k <= n else zero

    out = [_minor(h, k, radicand) for k in range(1, n)]
    return [*out, cp[n]]


def _minor(h, k: int, radicand: Mpoly | None) -> Mpoly:
    """det of the leading k x k block by Laplace expansion along rows (memo on columns)."""
    memo: dict[tuple[int, frozenset[int]], Mpoly] = {}

    def det(row: int, cols: frozenset[int]) -> Mpoly:
        if row == k:
            return h(0, 0).context().constant(1)
        key = (row, cols)
        if key not in memo:
            total = h(0, 0).context().constant(0)
            free = sorted(cols)
            for pos, c in enumerate(free):
                e = h(row, c)
                if not e.is_zero():
                    term = reduce_radical(e * det(row + 1, cols - {c}), radicand)
                    total = total - term if pos % 2 else total + term
            memo[key] = total
        return memo[key]

    return det(0, frozenset(range(k)))


def hurwitz_determinants(coeffs: Sequence[sp.Expr]) -> tuple[sp.Expr, ...]:
    """Delta_1..Delta_n of a_0 s^n + ... + a_n (coefficients highest first), as sympy."""
    n = len(coeffs) - 1

    def a(k: int) -> sp.Expr:
        return coeffs[k] if 0 <= k <= n else sp.Integer(0)

    H = sp.Matrix(n, n, lambda i, j: a(2 * (j + 1) - (i + 1)))
    return tuple(sp.expand(H[:k, :k].det(method="berkowitz")) for k in range(1, n + 1))


# --- the analysis view ------------------------------------------------------------------------
@dataclass(frozen=True)
class ParametricResult:
    """``holds``: stable for every parameter value in the box (Bernstein cover); ``fails``: a
    value where the linearization has a root in the open right half plane; ``unknown``."""

    status: Literal["holds", "fails", "unknown"]
    reason: str
    params: tuple[str, ...]
    box: tuple[tuple[sp.Rational, sp.Rational], ...]
    charpoly: tuple[sp.Expr, ...]
    determinants: tuple[sp.Expr, ...]
    counterexample: dict[str, sp.Rational] | None = None
    boxes: int = 0


def parametric_stability(model: Model, name: str, budget: int = 4000) -> ParametricResult:
    """Is the declared equilibrium ``name`` stable for every value in the parameter ranges?"""
    system = range_system(model, name)
    uncertain = [p for p in model.params if p.is_uncertain]
    params = tuple(p.name for p in uncertain)
    box_q = tuple((sp.Rational(p.low), sp.Rational(p.high)) for p in uncertain)
    if isinstance(system, str):
        return ParametricResult("unknown", system, params, box_q, (), ())
    cp = tuple(to_sympy(c) for c in system.charpoly)
    dets = tuple(to_sympy(c) for c in system.conditions)
    cover = cover_box(system, "stable", budget=budget)
    if cover.status == "covered":
        ranges = ", ".join(
            f"{n} in [{lo}, {hi}]" for n, (lo, hi) in zip(params, system.box, strict=True)
        )
        return ParametricResult(
            "holds",
            f"every Hurwitz determinant is positive for {ranges} (exact Bernstein "
            f"cover, {len(cover.leaves)} boxes): Lyapunov's indirect method at every value",
            params,
            box_q,
            cp,
            dets,
            None,
            len(cover.leaves),
        )
    if cover.status == "fails":
        assert cover.point is not None
        at = {
            n: sp.Rational(v.numerator, v.denominator)
            for n, v in zip(params, cover.point, strict=True)
        }
        text = ", ".join(f"{n} = {v}" for n, v in zip(params, cover.point, strict=True))
        return ParametricResult(
            "fails",
            f"at {text} the linearization has a root in the open right half plane",
            params,
            box_q,
            cp,
            dets,
            at,
        )
    at = (
        None
        if cover.point is None
        else {
            n: sp.Rational(v.numerator, v.denominator)
            for n, v in zip(params, cover.point, strict=True)
        }
    )
    return ParametricResult("unknown", cover.reason, params, box_q, cp, dets, at)
