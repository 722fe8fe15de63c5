"""The field of a non-polynomial model written out, and interval-enclosure claim sections.

- The model's field written out: numerators over denominators, or the
  expression trees of ``model.expressions`` (sin, cos, exp, ..., pi).
- ``linearization-enclosure``: the box, the Krawczyk condition, the
  Jacobian enclosure and the Routh signs as a reviewer reads them;
  ``range-enclosure``: the same on each piece of a tiling of the parameter box.

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
from proofkit.report._claims_sos import _q
from proofkit.report._math import latex_matrix, latex_name, latex_number, latex_poly

__all__ = ["enclosure_blocks", "field_blocks", "range_enclosure_blocks", "tree_sympy"]

_FUNCTIONS = {
    "sin": sp.sin,
    "cos": sp.cos,
    "tan": sp.tan,
    "exp": sp.exp,
    "log": sp.log,
    "sqrt": sp.sqrt,
    "tanh": sp.tanh,
}


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


def range_enclosure_blocks(
    claim: Any, model: Any, exact: Sequence[Any] | None = None
) -> list[Block]:
    """Enclosure evidence over parameter boxes: one row per piece of the tiling."""
    ev = claim.evidence
    states = list(model.states) if model is not None else []
    pieces = list(ev.get("pieces") or [])
    out = _point_blocks(claim, states, exact)
    out.append(
        para(
            t(
                f"Interval arithmetic on rationals (grid 2^-{ev.get('precision')}) over state "
                "box times parameter box, "
                + (
                    "at the one parameter value below (inside the ranges, checked by the "
                    "audit). There the Krawczyk test "
                    if "at-a-value" in (claim.theorem or "")
                    else "on each of the pieces below (which tile the declared parameter "
                    "ranges, checked by the audit). On each piece the parametric Krawczyk test "
                )
            ),
            m("K(X, P) = m - Y f(m, P) + (I - Y J(X, P))(X - m)"),
            t(
                " lies strictly inside X: for every parameter value p in P the box X holds "
                "exactly one equilibrium; the stated Jacobian enclosure contains the audit's "
                "own over X x P, and the Routh first column over it has the stated signs, each "
                "decided for every matrix in the enclosure (Routh's theorem)."
            ),
        )
    )
    rows = []
    for k, piece in enumerate(pieces):
        params = " \\times ".join(_interval(b) for b in piece.get("parameters") or [])
        box = " \\times ".join(_interval(b) for b in piece.get("box") or [])
        signs = ", ".join("+" if x > 0 else "-" for x in piece.get("routh_signs") or [])
        rows.append(((t(str(k + 1)),), (m(params),), (m(box),), (t(signs),)))
    header = ("piece", "parameters P", "state box X", "Routh signs")
    out.append(Block("table", header=header, rows=tuple(rows)))
    return out
