"""The sentence the audit prints for a claim, rendered from the claim's structure.

The audit never prints the certificate's ``statement`` as if it had been
checked: it says in its own words what the checked structure means (kind,
equilibrium name and point, set, scope), e.g. "origin (x = 0, y = 0) is
locally asymptotically stable, for every value of k in [1/2, 2]".

This module must never import anything outside the standard library and
:mod:`proofkit.audit`.
"""

from __future__ import annotations

from proofkit.audit.algebra import poly_str
from proofkit.audit.read import Condition, escape
from proofkit.audit.schemas import ClaimData, ModelData

__all__ = ["scope_words", "sentence", "set_words", "tree_str"]

MAX_SHOWN = 300  # characters of one polynomial in a sentence


def _short(text: str) -> str:
    return text if len(text) <= MAX_SHOWN else text[: MAX_SHOWN - 3] + "..."


def set_words(conditions: tuple[Condition, ...], names: tuple[str, ...]) -> str:
    """``{g1 >= 0, g2 > 0}`` with the polynomials written in the state names."""
    if not conditions:
        return "the whole state space"
    parts = [
        f"{_short(poly_str(g, names))} {'>' if strict else '>='} 0" for g, strict in conditions
    ]
    return "{" + ", ".join(parts) + "}"


def _q(x: object) -> str:
    return "(not rational)" if x is None else str(x)


def scope_words(model: ModelData, scope: str) -> str:
    """How far the claim reaches over the parameters, or "" when every parameter is fixed."""
    uncertain = model.uncertain
    if not uncertain:
        return ""
    if scope == "nominal":
        values = ", ".join(f"{p.name} = {_q(p.nominal)}" for p in uncertain)
        return f", at the nominal parameter values ({values})"
    ranges = " and ".join(
        f"{p.name} in [{_q(p.range[0])}, {_q(p.range[1])}]" for p in uncertain if p.range
    )
    return f", for every value of {ranges}"


def tree_str(expr: tuple[object, ...]) -> str:
    """A constant expression tree (``claim.exact``) in plain notation, e.g. ``pi*1/3``."""
    op, args = expr[0], expr[1:]
    if op == "c":
        return str(args[0])
    if op == "pi":
        return "pi"
    if op == "var":
        return f"v{args[0]}"
    if op == "^":
        return f"({tree_str(args[0])})^{args[1]}"  # type: ignore[arg-type]
    if op in ("+", "*"):
        return "(" + f" {op} ".join(tree_str(a) for a in args) + ")"  # type: ignore[arg-type]
    return f"{op}({tree_str(args[0])})"  # type: ignore[arg-type]


def _point(model: ModelData, claim: ClaimData) -> str:
    name = claim.name or "?"
    if claim.exact is not None:
        coords = ", ".join(
            f"{s} = {_short(tree_str(t))}" for s, t in zip(model.states, claim.exact, strict=True)
        )
        return f"the equilibrium {name} ({coords})"
    if claim.point is not None:
        coords = ", ".join(f"{s} = {v}" for s, v in zip(model.states, claim.point, strict=True))
        return f"the equilibrium {name} ({coords})"
    if claim.moving is not None:
        return f"the equilibrium {name} (moving with the parameters)"
    return f"the equilibrium {name} (point not stated)"


def sentence(model: ModelData, claim: ClaimData) -> str:
    """The claim in the audit's own words, escaped for printing."""
    states = model.states
    where = set_words(claim.set, states) if claim.set is not None else "a set (not stated)"
    kind = claim.kind
    if kind == "nonnegative":
        variables = claim.evidence.get("variables") if claim.evidence else None
        names = ", ".join(map(str, variables)) if isinstance(variables, list) else "its variables"
        return escape(f"the stated polynomial p is >= 0 for every real value of {names}")
    if kind in ("stable", "unstable", "globally stable", "attracts"):
        point = _point(model, claim)
        text = {
            "stable": f"{point} is locally asymptotically stable",
            "unstable": f"{point} is unstable",
            "globally stable": f"{point} is globally asymptotically stable"
            + (" in the domain" if model.domain is not None else ""),
            "attracts": f"every trajectory that starts in {where} converges to {point}",
        }[kind]
    elif kind == "no cycle":
        text = f"no periodic orbit lies entirely in {where}"
    else:
        text = f"{where} contains a periodic orbit"
    return escape(text + scope_words(model, claim.scope))
