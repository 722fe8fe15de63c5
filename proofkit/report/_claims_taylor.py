"""Claim sections of Taylor-model proofs (method ``taylor-model``), line by line (sin, cos, exp).

Each ``sin``/``cos`` atom of the field is replaced by its Taylor polynomial
plus a remainder carried as a bounded uncertainty: ``sin(delta) = T_k(delta) +
r delta^(k+1) u`` with ``|u| <= 1`` and ``r >= 1/(k+1)!`` (Lagrange's
remainder; every derivative of sin and cos is at most 1 in absolute value),
the same for ``cos``. The section shows the stated models, the field
``F(y, u)`` they give, why checking the vertex fields (each ``u = +-1``, and
``sqrt d`` at both ends of its enclosure) suffices, then V (a polynomial in
the deviation only), the level and each obligation with its multipliers.

Rendered from the certificate (the models as stated, the expression trees)
and the audit's verdict; the audit derives the atoms itself and checks every
stated coefficient. May import: sympy, ``report._*``. Must never import
``proofkit.audit``, call a prover, or decide validity.
"""

from __future__ import annotations

from collections.abc import Mapping
from fractions import Fraction
from math import factorial
from typing import Any

import sympy as sp

from proofkit.report._blocks import Block, m, para, t
from proofkit.report._claims_nonpoly import tree_sympy
from proofkit.report._claims_recast import (
    _enclosure_blocks,
    _latex,
    _obligation_table,
    _poly_latex,
    _System,
)
from proofkit.report._claims_sos import SosView, _expr, _q, sos_blocks
from proofkit.report._math import latex_name, latex_number
from proofkit.report._trees import recast_view

__all__ = ["taylor_model_blocks"]

_VERTICES = (
    "Why the vertex fields suffice. The field with the models, F(y, u), is affine in each "
    "remainder u_i (the audit checks it) and in the square root of the constants, so at every "
    "state the true field f(x* + y) is a convex combination of the vertex fields F_v (each "
    "u_i = +1 or -1, for exp u_i = 1 or 0, the square root at either end of its enclosure). "
    "V depends on y only, so "
    "dV/dt = grad V . f(x* + y) is the same convex combination of the values grad V . F_v, "
    "and is at most the largest of them: where every vertex obligation gives grad V . F_v <= "
    "-eps|y|^2 (on V <= level), so does the true derivative."
)
_MEANING = (
    "What this proves for the states: V(x - x*) >= eps|x - x*|^2 and dV/dt <= -eps|x - x*|^2 "
    "along the true field wherever V <= level, so {V <= level} is compact and forward "
    "invariant and every trajectory starting in it converges to the equilibrium (Lyapunov's "
    "theorem); for a region of attraction the claim's set lies in it (inside) and it lies in "
    "the domain (domain j). The certified set is a plain sublevel set in the states."
)


def _atom_rows(atoms: list[Mapping[str, Any]], states: list[str]) -> tuple[Any, ...]:
    rows = []
    ys = [sp.Symbol(s, real=True) for s in states]
    for i, atom in enumerate(atoms):
        k = int(atom.get("order", 0))
        d = sp.Symbol(f"delta_{i + 1}", real=True)
        poly = sum(_q(c) * d**j for j, c in enumerate(atom.get("polynomial") or []))
        arg = _poly_latex(_expr(atom.get("argument") or [], ys), ys)
        r = latex_number(atom.get("remainder", "0"))
        least = latex_number(str(Fraction(1, factorial(k + 1))))
        u = f"u_{{{i + 1}}}"
        if atom.get("function") == "exp":
            bound = latex_number(atom.get("bound", "0"))
            rest = (
                f"{r}\\, \\delta_{{{i + 1}}}^{{{k + 1}}} {u},\\; 0 \\le {u} \\le 1,\\; "
                f"\\text{{where }} \\delta_{{{i + 1}}} \\le D = {bound};\\; {r} \\ge M\\,{least}"
            )
        else:
            rest = (
                f"{r}\\, \\delta_{{{i + 1}}}^{{{k + 1}}} {u},\\; |{u}| \\le 1,\\; {r} \\ge {least}"
            )
        rows.append(
            (
                (m(f"\\{atom.get('function')} \\delta_{{{i + 1}}}"),),
                (m(f"\\delta_{{{i + 1}}} = {arg}"),),
                (m(_latex(poly)),),
                (m(rest),),
            )
        )
    return tuple(rows)


def _model_field(
    claim: Any, model: Any, atoms: list[Mapping[str, Any]], expressions: Mapping[str, Any]
) -> list[sp.Expr] | None:
    """The field in y with each stated atom replaced by its Taylor model (display)."""
    states = list(model.states)
    comps = expressions.get("components") or []
    view = recast_view(comps, len(states), claim.point or (), [])
    if view is None or view.tanhs:
        return None
    sys = _System(view, states, claim.point, [])
    f = [sp.expand(tree_sympy(c, sys.at, sys.atom)) for c in comps]
    subs: dict[sp.Symbol, sp.Expr] = {}
    for i, atom in enumerate(atoms):
        delta = sp.expand(_expr(atom.get("argument") or [], sys.ys))
        k = int(atom.get("order", 0))
        u = sp.Symbol(f"u{i + 1}", real=True)
        value = sum(_q(c) * delta**j for j, c in enumerate(atom.get("polynomial") or []))
        value += _q(atom.get("remainder", "0")) * delta ** (k + 1) * u
        for p in range(len(sys.deltas)):
            s, c = sys.variable(p)
            if sp.expand(sys.deltas[p] - delta) != 0:
                continue
            kind = sys.kind(p)[0]
            if kind == "exp" and atom.get("function") == "exp":
                subs[s] = value - 1
            elif kind == "trig" and atom.get("function") == "sin":
                subs[s] = value
            elif kind == "trig" and atom.get("function") == "cos" and c is not None:
                subs[c] = value - 1
    if any(sym not in subs for fi in f for sym in fi.free_symbols if sym in sys.zs):
        return None
    return [sp.expand(fi.subs(subs, simultaneous=True)) for fi in f]


def taylor_model_blocks(
    claim: Any, model: Any, appendix: list[Block], expressions: Mapping[str, Any] | None
) -> list[Block]:
    """The Taylor-model section of a claim."""
    ev, states = claim.evidence, list(model.states)
    block = ev.get("taylor_model") or {}
    atoms = [a for a in block.get("atoms") or [] if isinstance(a, Mapping)]
    out = [
        para(
            t(
                "Taylor models: each sin, cos or exp atom of the field is its Taylor polynomial "
                "plus "
                "a remainder carried as a bounded uncertainty u, |u| <= 1, never the truncated "
                "polynomial alone. By Lagrange's form of the remainder, "
            ),
            m("\\sin\\delta - T_k(\\delta) = \\sin^{(k+1)}(\\xi)\\, \\delta^{k+1}/(k+1)!"),
            t(
                " with every derivative of sin and cos at most 1 in absolute value, so the "
                "stated remainder coefficient r >= 1/(k+1)! covers every real argument. For exp "
                "the remainder is e^xi delta^(k+1)/(k+1)! with xi between 0 and delta: where "
                "delta <= D (the obligation bound j) it is r delta^(k+1) u with 0 <= u <= 1 and "
                "r >= M/(k+1)!, M = (m/(m - D))^m >= e^D, m = 16 ceil(D). The audit derives "
                "the atoms from the model's expression trees and checks each stated "
                "coefficient:"
            ),
        ),
        Block(
            "table",
            header=("atom", "argument", "Taylor polynomial", "remainder"),
            rows=_atom_rows(atoms, states),
        ),
    ]
    field = _model_field(claim, model, atoms, expressions or {})
    if field is not None:
        names = states + [f"u{i + 1}" for i in range(len(atoms))]
        syms = [sp.Symbol(n, real=True) for n in names]
        rows = [
            f"\\dot{{{latex_name(s)}}} &= {_poly_latex(f, syms)}"
            for s, f in zip(states, field, strict=True)
        ]
        out.append(para(t("The field in the deviation y with the models, F(y, u):")))
        out.append(Block("math", "\\begin{aligned} " + " \\\\ ".join(rows) + " \\end{aligned}"))
    d = _radicand_of(field)
    out += _enclosure_blocks(block, d) if d else []
    out.append(para(t(_VERTICES)))
    table, targets = _obligation_table(ev, model.domain, "y")
    out += [
        para(
            t(
                "Obligations: each target, minus its multipliers times the constraints named in "
                "its row (level: level - V >= 0; set i: the claim's condition at x* + y), equals "
                "z'Gz with G positive semidefinite:"
            )
        ),
        table,
    ]
    out += sos_blocks(claim, model, appendix, SosView(names=states, targets=targets))
    out.append(para(t(_MEANING)))
    return out


def _radicand_of(field: list[sp.Expr] | None) -> int:
    roots = {
        int(p.base)
        for f in field or []
        for p in f.atoms(sp.Pow)
        if p.exp == sp.Rational(1, 2) and p.base.is_Integer
    }
    return roots.pop() if len(roots) == 1 else 0
