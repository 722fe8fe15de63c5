"""Claim sections of rational fields ``f_i = N_i / D_i``: multiplied through by a denominator.

- ``linearization-rational``: why the Jacobian of ``N_i / D_i`` at the point
  is that of the polynomial field ``N_i / D_i(x*)``.
- ``sublevel-set-rational``: ``Q`` (the product of the distinct
  denominators, signed positive at the point), ``G = f Q``, the time
  reparametrisation, the region-of-attraction evidence for ``G`` and the
  certificate that ``Q > 0`` on the sublevel set.
- ``no-equilibrium-rational``, ``dulac-rational``, ``annulus-rational``: ``Q``
  (each denominator scaled to coefficient 1 at its largest exponent, times the
  stated sign), ``G = f Q``, the polynomial cycle evidence for ``G`` and
  ``Q > 0`` on the claim's set or on the annulus.

Rendered from the certificate's numerators and denominators (re-expanded
exactly with sympy, as the Lie derivatives are) and the audit's verdict. May
import: sympy, ``report._*``. Must never import ``proofkit.audit``, call a
prover, or decide validity.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

import sympy as sp

from proofkit.report._blocks import Block, m, para, t
from proofkit.report._claims_linear import linearization_blocks
from proofkit.report._claims_sos import SosView, _expr, _q, sos_blocks
from proofkit.report._math import latex_number, latex_poly
from proofkit.report._theorems import OBLIGATIONS

__all__ = ["rational_basin_blocks", "rational_cycle_blocks", "rational_linearization_blocks"]

_QUOTIENT_RULE = (
    "\\partial f_i / \\partial x_j (x^*) = \\partial N_i / \\partial x_j (x^*) / D_i(x^*)"
)


def _symbols(names: Sequence[str]) -> list[sp.Symbol]:
    return [sp.Symbol(n) for n in names]  # as the sum-of-squares sections name them


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


def _q_and_g(
    model: Any, point: Sequence[Any] | None, sign: int | None = None
) -> tuple[list[sp.Symbol], sp.Expr, list[sp.Expr]]:
    """Q and G = f Q as the audit builds them.

    With a ``point`` (region of attraction): Q is the product of the distinct
    denominators, signed positive at the point. With a ``sign`` (cycle kinds): each
    denominator is first scaled to coefficient 1 at its largest exponent tuple, and
    Q = sign * their distinct product.
    """
    parts = _rational_parts(model)
    if parts is None:
        raise ValueError("not a rational field")
    xs, nums, dens = parts
    scale = [sp.Integer(1)] * len(dens)
    if sign is not None:
        scale = [_leading(d, xs) for d in dens]
        dens = [sp.expand(d / c) for d, c in zip(dens, scale, strict=True)]
    distinct: list[sp.Expr] = []
    for d in dens:
        if not any(sp.expand(d - e) == 0 for e in distinct):
            distinct.append(d)
    q = sp.expand(sp.Mul(*distinct))
    if sign is None:
        at = dict(zip(xs, (_q(c) for c in point or ()), strict=True))
        sign = 1 if q.subs(at) > 0 else -1
    g = [
        sp.expand(sign * n / c * sp.Mul(*[e for e in distinct if sp.expand(e - d) != 0]))
        for n, d, c in zip(nums, dens, scale, strict=True)
    ]
    return xs, sp.expand(sign * q), g


def _leading(p: sp.Expr, xs: Sequence[sp.Symbol]) -> sp.Expr:
    """The coefficient of the largest exponent tuple (the audit's scaling of a denominator)."""
    terms = dict(sp.Poly(p, *xs).terms())
    return terms[max(terms)]


def _poly_terms(expr: sp.Expr, xs: Sequence[sp.Symbol]) -> list[list[Any]]:
    poly = sp.Poly(sp.expand(expr), *xs)
    return [[list(e), str(c)] for e, c in poly.terms() if c != 0]


def rational_basin_blocks(claim: Any, model: Any, appendix: list[Block]) -> list[Block]:
    """Q, G = f Q, the reparametrized evidence, and Q > 0 on the sublevel set (or domain)."""
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
        para(t("The polynomial evidence for G (under reparametrized):")),
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
        targets=OBLIGATIONS[_inner_theorem(claim)],
    )
    out += sos_blocks(claim, model, appendix, view)
    out += _denominator_blocks(claim, model, den, inner, appendix)
    return out


def _inner_theorem(claim: Any) -> str:
    """The polynomial theorem the reparametrized evidence is checked against."""
    if claim.method == "lyapunov-domain-rational":
        return "lyapunov-global-in-domain"
    return "region-of-attraction"


def _denominator_blocks(
    claim: Any, model: Any, den: Mapping[str, Any], inner: Mapping[str, Any], appendix: list[Block]
) -> list[Block]:
    if claim.method == "lyapunov-domain-rational":
        return _domain_denominator_blocks(claim, model, den, appendix)
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


def _domain_denominator_blocks(
    claim: Any, model: Any, den: Mapping[str, Any], appendix: list[Block]
) -> list[Block]:
    eps = (den.get("numbers") or {}).get("eps", "?")
    target = "Q(x^* + y) - \\varepsilon_Q - \\sum_j w_j\\, h_j(x^* + y)"
    out = [
        para(
            t("Q is positive on the domain (the evidence under denominator): with "),
            m(f"\\varepsilon_Q = {latex_number(eps)}"),
            t(", the obligation "),
            m(target),
            t(" and the multipliers w_j are sums of squares, so "),
            m("Q \\ge \\varepsilon_Q > 0"),
            t(
                " wherever every domain condition h_j >= 0 holds: no denominator vanishes on "
                "the domain, f = G/Q there, the domain stays forward invariant for f and every "
                "trajectory starting in it tends to the point (1/Q is bounded on its bounded "
                "orbit)."
            ),
        )
    ]
    part = {k: v for k, v in den.items() if k != "numbers"}  # eps_Q is stated above
    view = SosView(evidence=part, names=list(model.states), targets={"denominator": target})
    return out + sos_blocks(claim, model, appendix, view)


# --- an evidence kind no section knows ---------------------------------------------------
def _listing(claim: Any) -> list[Block]:
    from proofkit.report._claims import generic_blocks

    return generic_blocks(claim)


_INNER = {  # the polynomial theorem applied to G, and what it gives for f
    "index-no-equilibrium-rational-field": (
        "index-no-equilibrium",
        "G has no zero on the convex set, and where Q > 0 the zeros of f are those of G: f "
        "has no equilibrium there, so no periodic orbit of f lies in the set (it would "
        "enclose one).",
    ),
    "bendixson-dulac-rational-field": (
        "bendixson-dulac",
        "B G = (B Q) f with B Q smooth where Q > 0, so div((B Q) f) = div(B G) > 0 on the "
        "set: B Q is a Dulac function for f there.",
    ),
    "poincare-bendixson-rational-field": (
        "poincare-bendixson",
        "lie_f(W) = lie_G(W) / Q has the sign of lie_G(W) on the annulus, so the annulus "
        "traps the orbits of f as it traps those of G, and f has no zero there.",
    ),
}


def rational_cycle_blocks(claim: Any, model: Any, appendix: list[Block]) -> list[Block]:
    """Q, G = f Q, the polynomial cycle evidence for G, and Q > 0 on the set or annulus."""
    ev = claim.evidence
    inner, den = ev.get("reparametrized") or {}, ev.get("denominator") or {}
    base, meaning = _INNER.get(claim.theorem or "", ("", ""))
    try:
        xs, q, g = _q_and_g(model, None, int(den.get("sign", 1)))
    except (ValueError, TypeError):
        return _listing(claim)
    names = [x.name for x in xs]
    g_lines = " \\\\ ".join(
        f"G_{{{i + 1}}} &= {latex_poly(_poly_terms(gi, xs), names)}" for i, gi in enumerate(g)
    )
    out = [
        para(
            t(
                "Multiplying through by the denominators. Each denominator is scaled to "
                "coefficient 1 at its largest exponent, Q is the product of the distinct ones "
                f"times the sign {int(den.get('sign', 1)):+d} stated by the certificate, and "
            ),
            m("G = f\\,Q"),
            t(" is a polynomial field (the audit builds both from the model):"),
        ),
        Block("math", f"Q = {latex_poly(_poly_terms(q, xs), names)}"),
        Block("math", "\\begin{aligned} " + g_lines + " \\end{aligned}"),
        para(t(_SAME_ORBITS + " " + meaning)),
        para(t("The polynomial evidence for G (under reparametrized):")),
    ]
    view = SosView(
        evidence=inner,
        names=names,
        field=g,
        field_text="G(x)",
        field_words="G (the field multiplied through by Q)",
        targets=OBLIGATIONS.get(base, {}),
    )
    out += sos_blocks(claim, model, appendix, view)
    annulus = "W" in inner
    where = "on the annulus" if annulus else "on the claim's set"
    target = (
        "Q - \\varepsilon_Q - t_1 (W - \\mathrm{inner}) - t_2 (\\mathrm{outer} - W)"
        if annulus
        else "Q - \\varepsilon_Q - \\sum_i t_i g_i"
    )
    eps = (den.get("numbers") or {}).get("eps", "?")
    out.append(
        para(
            t(f"Q is positive {where} (under denominator): with "),
            m(f"\\varepsilon_Q = {latex_number(eps)}"),
            t(", the obligation "),
            m(target),
            t(" and its multipliers t are sums of squares, so "),
            m("Q \\ge \\varepsilon_Q > 0"),
            t(f" {where}: no pole lies there and f = G/Q."),
        )
    )
    part = {k: v for k, v in den.items() if k not in ("numbers", "sign")}
    out += sos_blocks(claim, model, appendix, SosView(part, names, targets={"denominator": target}))
    return out


_SAME_ORBITS = (
    "Where Q > 0 the fields f = G/Q and G differ by the positive factor 1/Q: their orbits are "
    "the same curves, traversed at another (positive) speed (time reparametrised by "
    "d tau = dt / Q)."
)
