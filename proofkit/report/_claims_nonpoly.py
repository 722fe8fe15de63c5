"""Claim sections of the non-polynomial steps: rational fields and interval enclosures.

- The model's field written out: numerators over denominators, or the
  expression trees of ``model.expressions`` (sin, cos, exp, ..., pi).
- ``linearization-rational``: why the Jacobian of ``N_i / D_i`` at the point
  is that of the polynomial field ``N_i / D_i(x*)``.
- ``sublevel-set-rational``: ``Q`` (the product of the distinct
  denominators, signed positive at the point), ``G = f Q``, the time
  reparametrisation, the region-of-attraction evidence for ``G`` and the
  certificate that ``Q > 0`` on the sublevel set.
- ``linearization-enclosure``: the box, the Krawczyk condition, the
  Jacobian enclosure and the Routh signs as a reviewer reads them.

Everything is rendered from the certificate's data (polynomials and trees
re-expanded exactly with sympy, as the Lie derivatives are) and the audit's
verdict. May import: sympy, ``report._*``. Must never import
``proofkit.audit``, call a prover, or decide validity.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from fractions import Fraction
from itertools import pairwise
from typing import Any

import sympy as sp

from proofkit.report._blocks import Block, m, para, t
from proofkit.report._claims_linear import linearization_blocks
from proofkit.report._claims_sos import SosView, _expr, _q, sos_blocks
from proofkit.report._math import latex_matrix, latex_name, latex_number, latex_poly
from proofkit.report._theorems import OBLIGATIONS

__all__ = [
    "enclosure_blocks",
    "field_blocks",
    "rational_basin_blocks",
    "rational_linearization_blocks",
    "tree_sympy",
]

_FUNCTIONS = {
    "sin": sp.sin,
    "cos": sp.cos,
    "tan": sp.tan,
    "exp": sp.exp,
    "log": sp.log,
    "sqrt": sp.sqrt,
    "tanh": sp.tanh,
}


_QUOTIENT_RULE = (
    "\\partial f_i / \\partial x_j (x^*) = \\partial N_i / \\partial x_j (x^*) / D_i(x^*)"
)


def tree_sympy(tree: Any, symbols: Sequence[sp.Expr], atom: Any = None) -> sp.Expr:
    """An expression tree of the certificate as an exact sympy expression (no text parsed).

    ``atom(op, argument_tree)``, when given, returns the replacement of a
    ``sin``/``cos``/``exp``/``tanh`` node (the recast substitution) or None to keep it.
    """
    if isinstance(tree, str):
        return _q(tree)
    op = tree[0]
    if op == "var":
        return symbols[int(tree[1])]
    if op == "pi":
        return sp.pi
    if op in ("+", "*"):
        parts = [tree_sympy(a, symbols, atom) for a in tree[1:]]
        return sp.Add(*parts) if op == "+" else sp.Mul(*parts)
    if op == "^":
        return tree_sympy(tree[1], symbols, atom) ** int(tree[2])
    if atom is not None and op in ("sin", "cos", "exp", "tanh"):
        found = atom(op, tree[1])
        if found is not None:
            return found
    return _FUNCTIONS[op](tree_sympy(tree[1], symbols, atom))


def _symbols(names: Sequence[str]) -> list[sp.Symbol]:
    return [sp.Symbol(n) for n in names]  # as the sum-of-squares sections name them


def _latex(expr: sp.Expr, names: Sequence[str]) -> str:
    syms = {s: latex_name(s.name) for s in expr.free_symbols if isinstance(s, sp.Symbol)}
    return sp.latex(expr, symbol_names=syms)


def field_blocks(model: Any, expressions: Mapping[str, Any] | None) -> list[Block]:
    """The model's field when it is not polynomial: N/D, or the expression trees."""
    states = list(model.states)
    fld = model.field
    lines: list[str] = []
    if fld is not None and fld.get("denominators") is not None:
        names = list(fld["variables"])
        for s, num, den in zip(states, fld["numerators"], fld["denominators"], strict=True):
            lines.append(
                f"\\dot{{{latex_name(s)}}} &= \\frac{{{latex_poly(num, names)}}}"
                f"{{{latex_poly(den, names)}}}"
            )
        what = "a rational field, each component a numerator over a denominator"
    elif expressions:
        names = list(expressions.get("variables") or states)
        syms = _symbols(names)
        for s, tree in zip(states, expressions.get("components") or [], strict=False):
            lines.append(f"\\dot{{{latex_name(s)}}} &= {_latex(tree_sympy(tree, syms), names)}")
        what = "elementary functions, as the certificate's expression trees state it"
    if not lines:
        note = model.field_note or "not representable"
        return [para(t(f"The vector field is not polynomial with rational coefficients ({note})."))]
    return [
        para(t(f"The vector field is not polynomial ({what}); exactly, with fixed parameters:")),
        Block("math", "\\begin{aligned} " + " \\\\ ".join(lines) + " \\end{aligned}"),
    ]


# --- rational fields -------------------------------------------------------------------
def _rational_parts(model: Any) -> tuple[list[sp.Symbol], list[sp.Expr], list[sp.Expr]] | None:
    """States, numerators and denominators at the nominal parameter values."""
    fld = model.field if model is not None else None
    if not fld or fld.get("denominators") is None:
        return None
    names = list(fld["variables"])
    xs = _symbols(names)
    nominal = {p["name"]: p.get("nominal") for p in model.parameters}
    if any(nominal.get(v, "") is None for v in names):
        return None
    subs = {x: _q(nominal[v]) for x, v in zip(xs, names, strict=True) if v in nominal}
    nums = [_expr(p, xs).subs(subs) for p in fld["numerators"]]
    dens = [_expr(p, xs).subs(subs) for p in fld["denominators"]]
    return xs[: len(model.states)], nums, dens


def rational_linearization_blocks(claim: Any, model: Any) -> list[Block]:
    """Why the linearization of N/D at the point is that of a polynomial field."""
    parts = _rational_parts(model)
    out: list[Block] = []
    if parts is not None and claim.point is not None:
        xs, _nums, dens = parts
        at = dict(zip(xs, (_q(c) for c in claim.point), strict=True))
        values = ",\\; ".join(
            f"D_{{{i + 1}}}(x^*) = {sp.latex(sp.expand(d.subs(at)))}" for i, d in enumerate(dens)
        )
        out.append(
            para(
                t("Each component is a quotient "),
                m("f_i = N_i / D_i"),
                t(". At the point the denominators are nonzero: "),
                m(values),
                t(", and every numerator vanishes, "),
                m("N_i(x^*) = 0"),
                t(
                    ". Hence the partial derivatives there are those of the numerators divided "
                    "by these constants, "
                ),
                m(_QUOTIENT_RULE),
                t(
                    ": the Jacobian below is that of the polynomial field "
                    "N_i / D_i(x*), which has the same zero and the same linearization."
                ),
            )
        )
    return out + linearization_blocks(claim, list(model.states) if model is not None else [])


def _q_and_g(model: Any, point: Sequence[Any]) -> tuple[list[sp.Symbol], sp.Expr, list[sp.Expr]]:
    """Q (distinct denominators multiplied, signed positive at the point) and G = f Q."""
    parts = _rational_parts(model)
    if parts is None:
        raise ValueError("not a rational field")
    xs, nums, dens = parts
    distinct: list[sp.Expr] = []
    for d in dens:
        if not any(sp.expand(d - e) == 0 for e in distinct):
            distinct.append(d)
    q = sp.expand(sp.Mul(*distinct))
    at = dict(zip(xs, (_q(c) for c in point), strict=True))
    sign = 1 if q.subs(at) > 0 else -1
    g = [
        sp.expand(sign * n * sp.Mul(*[e for e in distinct if sp.expand(e - d) != 0]))
        for n, d in zip(nums, dens, strict=True)
    ]
    return xs, sp.expand(sign * q), g


def _poly_terms(expr: sp.Expr, xs: Sequence[sp.Symbol]) -> list[list[Any]]:
    poly = sp.Poly(sp.expand(expr), *xs)
    return [[list(e), str(c)] for e, c in poly.terms() if c != 0]


def rational_basin_blocks(claim: Any, model: Any, appendix: list[Block]) -> list[Block]:
    """Q, G = f Q, the reparametrized region of attraction, and Q > 0 on the sublevel set."""
    ev = claim.evidence
    inner, den = ev.get("reparametrized") or {}, ev.get("denominator") or {}
    states = list(model.states)
    try:
        xs, q, g = _q_and_g(model, claim.point or ())
    except (ValueError, TypeError):
        return _listing(claim)
    names = [x.name for x in xs]
    g_lines = " \\\\ ".join(
        f"G_{{{i + 1}}} &= {latex_poly(_poly_terms(gi, xs), names)}" for i, gi in enumerate(g)
    )
    out = [
        para(
            t(
                "Multiplying through by the denominators. Let Q be the product of the distinct "
                "denominators at the nominal parameter values, its sign chosen so that "
            ),
            m("Q(x^*) > 0"),
            t(", and "),
            m("G = f\\,Q"),
            t(" (each component's own denominator cancels, so G is a polynomial field):"),
        ),
        Block("math", f"Q = {latex_poly(_poly_terms(q, xs), names)}"),
        Block("math", "\\begin{aligned} " + g_lines + " \\end{aligned}"),
        para(
            t(
                "The audit builds Q and G itself from the certificate's numerators and "
                "denominators. Where Q > 0 the two fields point the same way: "
            ),
            m("f = G / Q"),
            t(
                " differs from G by the positive factor 1/Q, so the orbits of f are those of G "
                "traversed at another (positive) speed: time is reparametrised by "
            ),
            m("d\\tau = dt / Q(x(t))"),
            t(
                ". Sets invariant for one are invariant for the other, and a trajectory of G "
                "that converges to the point is, reparametrised, one of f (1/Q is bounded on a "
                "compact set where Q >= eps > 0)."
            ),
        ),
        para(t("Region of attraction for G (the evidence under reparametrized):")),
    ]
    shifted = [
        gi.subs({x: x + _q(c) for x, c in zip(xs, claim.point, strict=True)}, simultaneous=True)
        for gi in g
    ]
    view = SosView(
        evidence=inner,
        names=states,
        field=shifted,
        field_text="G(x^* + y)",
        field_words="G (the field multiplied through by Q)",
        targets=OBLIGATIONS["region-of-attraction"],
    )
    out += sos_blocks(claim, model, appendix, view)
    out += _denominator_blocks(claim, model, den, inner, appendix)
    return out


def _denominator_blocks(
    claim: Any, model: Any, den: Mapping[str, Any], inner: Mapping[str, Any], appendix: list[Block]
) -> list[Block]:
    eps = (den.get("numbers") or {}).get("eps", "?")
    level = (inner.get("numbers") or {}).get("level", "?")
    out = [
        para(
            t("Q is positive on the sublevel set (the evidence under denominator): with "),
            m(f"\\varepsilon_Q = {latex_number(eps)}"),
            t(" and the level "),
            m(latex_number(level)),
            t(" of V above, the obligation "),
            m("Q(x^* + y) - \\varepsilon_Q - t\\,(\\mathrm{level} - V)"),
            t(" and the multiplier t are sums of squares. Where "),
            m("V \\le \\mathrm{level}"),
            t(" this gives "),
            m("Q \\ge \\varepsilon_Q + t\\,(\\mathrm{level} - V) \\ge \\varepsilon_Q > 0"),
            t(": no denominator vanishes on the certified set, and f = G/Q there."),
        )
    ]
    targets = {"denominator": "Q(x^* + y) - \\varepsilon_Q - t\\,(\\mathrm{level} - V)"}
    part = {k: v for k, v in den.items() if k != "numbers"}  # eps_Q is stated above
    view = SosView(evidence=part, names=list(model.states), targets=targets)
    return out + sos_blocks(claim, model, appendix, view)


# --- interval enclosures ---------------------------------------------------------------
def _interval(pair: Sequence[Any]) -> str:
    lo, hi = (Fraction(str(x)) for x in pair)
    return (
        f"[{latex_number(str(lo))}, {latex_number(str(hi))}] "
        f"\\approx [{float(lo):.12g}, {float(hi):.12g}]"
    )


def enclosure_blocks(claim: Any, model: Any, exact: Sequence[Any] | None = None) -> list[Block]:
    """Box, Krawczyk condition, Jacobian enclosure and Routh signs of an enclosure proof."""
    ev = claim.evidence
    states = list(model.states) if model is not None else []
    box, jac = ev.get("box") or [], ev.get("jacobian") or []
    signs = list(ev.get("routh_signs") or [])
    out = _point_blocks(claim, states, exact)
    out.append(
        para(
            t(
                f"Interval arithmetic on rationals (grid 2^-{ev.get('precision')}): the audit "
                "encloses the field and its partial derivatives over the box X below with "
                "Taylor series and explicit remainder bounds; no floating point is used."
            ),
        )
    )
    rows = tuple(
        ((m(latex_name(s)),), (m(_interval(b)),)) for s, b in zip(states, box, strict=False)
    )
    out.append(Block("table", header=("state", "box X"), rows=rows))
    out.append(
        para(
            t(
                "Krawczyk condition: with m the midpoint of X and the preconditioner Y stated by "
                "the certificate, "
            ),
            m("K(X) = m - Y f(m) + (I - Y J(X))(X - m)"),
            t(
                " lies strictly inside X (the audit computes it). By Krawczyk's theorem (Krawczyk "
                "1969; Moore 1977) X then holds exactly one zero of f, the field is defined on X, "
                "and as the claim's point lies in X that zero is the claim's equilibrium. Y:"
            ),
        ),
    )
    out.append(Block("math", f"Y = {latex_matrix(ev.get('preconditioner') or [[]])}"))
    rows = tuple(
        ((m(f"\\partial f_{{{i + 1}}} / \\partial {latex_name(states[j])}"),), (m(_interval(c)),))
        for i, row in enumerate(jac)
        for j, c in enumerate(row)
        if j < len(states)
    )
    out.append(
        para(
            t(
                "Jacobian enclosure J(X) stated by the certificate; the audit's own enclosure of "
                "each partial derivative over X (48 bits finer) lies inside each interval:"
            )
        )
    )
    out.append(Block("table", header=("entry", "enclosure"), rows=rows))
    out += _routh_sign_blocks(jac, signs)
    return out


def _point_blocks(claim: Any, states: list[str], exact: Sequence[Any] | None) -> list[Block]:
    if claim.point is not None:
        shown = ", ".join(
            f"{latex_name(s)} = {latex_number(v)}" for s, v in zip(states, claim.point, strict=True)
        )
    elif exact:
        shown = ", ".join(
            f"{latex_name(s)} = {sp.latex(tree_sympy(e, []))}"
            for s, e in zip(states, exact, strict=True)
        )
    else:
        return []
    return [para(t(f"Equilibrium {claim.equilibrium}: "), m(shown), t("."))]


def _routh_sign_blocks(jac: Sequence[Any], signs: list[int]) -> list[Block]:
    words = ", ".join("+" if s > 0 else "-" for s in signs)
    changes = sum(1 for a, b in pairwise(signs) if a * b < 0)
    out = [
        para(
            t(
                "Routh signs: for every matrix J in the enclosure, the first column of the Routh "
                f"array of det(sI - J) has the signs [{words}], each decided over the whole "
                "enclosure by interval arithmetic; "
            ),
            t(
                f"{changes} sign change(s), so {changes} eigenvalue(s) in the open right half "
                "plane at the equilibrium (Routh's theorem)."
            ),
        )
    ]
    if len(jac) == 2:
        (a, b), (c, d) = ([[Fraction(str(x)) for x in e] for e in r] for r in jac)
        tr = (-(a[1] + d[1]), -(a[0] + d[0]))
        prods = [x * y for x in a for y in d]
        cross = [x * y for x in b for y in c]
        det = (min(prods) - max(cross), max(prods) - min(cross))
        out.append(
            para(
                t("For two states the column is "),
                m("1,\\; -(J_{11} + J_{22}),\\; J_{11} J_{22} - J_{12} J_{21}"),
                t("; over the enclosure (interval arithmetic on its bounds) these lie in "),
                m(f"{_interval(tr)}"),
                t(" and "),
                m(f"{_interval(det)}"),
                t("."),
            )
        )
    return out


# --- an evidence kind no section knows ---------------------------------------------------
def _listing(claim: Any) -> list[Block]:
    from proofkit.report._claims import generic_blocks

    return generic_blocks(claim)
