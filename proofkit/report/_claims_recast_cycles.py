"""Claim sections of ``no cycle`` proofs on recast fields (method ``dulac-recast``).

A Dulac function ``b(x) = B(z(x))`` in the recast variables around a rational
zero ``origin`` of the field (Papachristodoulou and Prajna, 2005, for the
recasting; Bendixson–Dulac for the conclusion). The section shows the recast
system (as for the Lyapunov proofs), the divergence ``div(b f)(x) = P(z(x))``
by the chain rule with ``P`` expanded exactly, the obligations with their
multipliers, and why ``P >= eps`` on the recast set rules out periodic orbits
in the convex claim set.

Rendered from the certificate (the expression trees, ``B``, the numbers, the
multipliers) and the audit's verdict. May import: sympy, ``report._*``. Must
never import ``proofkit.audit``, call a prover, or decide validity.
"""

from __future__ import annotations

from collections.abc import Mapping
from typing import Any

import sympy as sp

from proofkit.report._blocks import Block, m, para, t
from proofkit.report._claims_recast import (
    _obligation_table,
    _poly_latex,
    _System,
    recast_intro,
)
from proofkit.report._claims_sos import SosView, _expr, sos_blocks
from proofkit.report._math import latex_name, latex_number

__all__ = ["recast_dulac_blocks"]

_WHY = (
    "Why this rules out periodic orbits. At z = z(x) every circle constraint is 0 and every "
    "Taylor bound is >= 0, and the claim's conditions hold on the set, so each divergence "
    "obligation gives P(z(x)) >= eps > 0 there (at both ends of the enclosure when constants "
    "lie in Q(sqrt d); P is affine in sqrt d, so also at the true value). Hence div(b f) > 0 "
    "on the convex, so simply connected, claim set, and by the Bendixson–Dulac criterion "
    "(Green's theorem) no periodic orbit lies in it."
)


def _rule(sys: _System, j: int) -> tuple[int, sp.Expr]:
    """The atom of recast variable j and d z_j / d delta (S: C + 1, C: -S, E: E + 1, T: 1 - T^2)."""
    i = 0
    for k, (kind, _d) in enumerate(sys.view.atoms):
        s, c = sys.variable(k)
        width = 2 if kind == "trig" else 1
        if j < i + width:
            if kind == "trig":
                return k, (c + 1) if j == i else -s
            return k, (s + 1) if kind == "exp" else (1 - s**2)
        i += width
    raise IndexError(j)


def divergence(sys: _System, field: list[sp.Expr], b: sp.Expr) -> sp.Expr:
    """``P`` with ``div(B(z(x)) f(x)) = P(z(x))`` (chain rule through the recast variables)."""
    n = len(sys.ys)
    out = sp.Integer(0)
    for i, y in enumerate(sys.ys):
        flux = b * field[i]
        out += sp.diff(flux, y)
        for j, z in enumerate(sys.zs):
            k, rule = _rule(sys, j)
            out += sp.diff(flux, z) * rule * sp.diff(sys.deltas[k], y)
    return sp.expand(out) if n else out


def recast_dulac_blocks(
    claim: Any, model: Any, appendix: list[Block], expressions: Mapping[str, Any] | None
) -> list[Block]:
    """The section of a ``dulac-recast`` claim."""
    from proofkit.report._claims import generic_blocks

    ev = claim.evidence
    origin = ev.get("origin")
    found = recast_intro(claim, model, expressions, origin, what="B")
    if found is None:
        return generic_blocks(claim)
    sys, field, out = found
    names = list(sys.names)
    shown = ", ".join(
        f"{latex_name(s)} = {latex_number(v)}" for s, v in zip(model.states, origin, strict=True)
    )
    out.insert(0, para(t("The recast system is built around the zero "), m(shown), t(".")))
    syms = sys.ys + sys.zs
    p = divergence(sys, field[: len(sys.ys)], _expr(ev.get("B") or [], syms))
    appendix.append(Block("heading", f"Divergence P of b f: {claim.statement}", 3))
    appendix.append(Block("math", "P(z) = " + _poly_latex(p, syms)))
    out.append(
        para(
            t("The Dulac function "),
            m("b(x) = B(z(x))"),
            t(" with B over z (written with the state and recast names); by the chain rule "),
            m(
                "\\operatorname{div}(b f)(x) = P(z(x)),\\; P = \\sum_i \\Big[\\partial_{y_i}"
                "(B F_i) + \\sum_j \\partial_{z_j}(B F_i)\\, \\rho_j\\, \\partial_{y_i} "
                "\\delta_{k(j)}\\Big]"
            ),
            t(
                ", where rho_j is the derivative rule of z_j (C + 1 for S, -S for C, E + 1 for E, "
                "1 - T^2 for T). P, expanded exactly, is in the appendix."
            ),
        )
    )
    table, targets = _obligation_table(ev, model.domain)
    out += [
        para(
            t(
                "Obligations: each target, minus its multipliers times the constraints named in "
                "its row (set i: the claim's condition at origin + y), equals z'Gz with G "
                "positive semidefinite:"
            )
        ),
        table,
    ]
    out += sos_blocks(claim, model, appendix, SosView(names=names, targets=targets))
    out.append(para(t(_WHY)))
    return out
