"""Where the equilibria are: the exact polynomial solver, or the certified box search.

:func:`find_equilibria` picks the method: a polynomial field with rational
coefficients goes to the exact solver (``equilibria``); anything else, or a
polynomial system past a symbolic limit, to the box search (``boxsearch``)
over the box the domain gives (``search_box``), else ``DEFAULT_BOX``.

May import: sympy, the model and the analysis modules above it.
This module must never list a point that neither method certified.
"""

from __future__ import annotations

import sympy as sp

from proofkit.analysis.boxsearch import _arb_to_q, box_search
from proofkit.analysis.equilibria import FoundPoint, LimitHit, Limits, solve_polynomial_system
from proofkit.analysis.intervals import arb_value
from proofkit.model import Model

__all__ = ["DEFAULT_BOX", "find_equilibria", "search_box"]

DEFAULT_BOX = (sp.Integer(-10), sp.Integer(10))


def _rational_polynomial(fs: tuple[sp.Expr, ...], xs: tuple[sp.Symbol, ...]) -> bool:
    for f in fs:
        if not f.is_polynomial(*xs):
            return False
        if not all(isinstance(c, sp.Rational) for c in sp.Poly(f, *xs).coeffs()):
            return False
    return True


def _outer_rational(v: sp.Expr, up: bool) -> sp.Rational | None:
    if isinstance(v, sp.Rational):
        return v
    try:
        lo, hi = _arb_to_q(arb_value(v, 128))
    except Exception:
        return None
    return sp.Rational(int((hi if up else lo).p), int((hi if up else lo).q))


def search_box(model: Model) -> tuple[list[tuple[sp.Rational, sp.Rational]], str]:
    """The box to search: bounds read from the domain where it gives them, else DEFAULT_BOX."""
    xs = model.state_symbols
    lo: dict[sp.Symbol, sp.Rational] = {}
    hi: dict[sp.Symbol, sp.Rational] = {}
    if model.domain is not None:
        for g, _strict in model.domain.nonnegative_forms():
            # g >= 0 with g = a*x + b (a bound) or g = c - x^2 (a symmetric bound)
            free = g.free_symbols
            if len(free) != 1 or not free <= set(xs):
                continue
            (x,) = free
            if not g.is_polynomial(x):
                continue
            p = sp.Poly(g, x)
            cs = p.all_coeffs()
            if p.degree() == 1:
                a, b = cs
                bound = _outer_rational(-b / a, up=a < 0)
                if bound is None:
                    continue
                if a > 0:
                    lo[x] = max(lo.get(x, bound), bound)
                else:
                    hi[x] = min(hi.get(x, bound), bound)
            elif p.degree() == 2 and cs[0] < 0 and cs[1] == 0 and cs[2] >= 0:
                r = _outer_rational(sp.sqrt(-cs[2] / cs[0]), up=True)
                if r is None:
                    continue
                hi[x] = min(hi.get(x, r), r)
                lo[x] = max(lo.get(x, -r), -r)
    box, defaulted = [], []
    for x in xs:
        a = lo.get(x, DEFAULT_BOX[0])
        b = hi.get(x, DEFAULT_BOX[1])
        if x not in lo or x not in hi:
            defaulted.append(x.name)
        box.append((a, b))
    note = (
        f"default bounds [{DEFAULT_BOX[0]}, {DEFAULT_BOX[1]}] for {', '.join(defaulted)}"
        if defaulted
        else "bounds from the domain"
    )
    return box, note


def find_equilibria(
    model: Model, limits: Limits | None = None
) -> tuple[tuple[FoundPoint, ...], bool, str]:
    """Every equilibrium of ``model.at_nominal()``: (points, complete, reason)."""
    pts, complete, reason, _method, _t = _find(model.at_nominal(), limits or Limits())
    return pts, complete, reason


def _find(m: Model, limits: Limits) -> tuple[tuple[FoundPoint, ...], bool, str, str, dict]:
    xs, names, fs = m.state_symbols, m.states, m.field
    limit_note = ""
    if _rational_polynomial(fs, xs):
        try:
            sol = solve_polynomial_system(fs, xs, names, limits)
            return sol.points, sol.complete, sol.reason, "groebner", sol.timings
        except LimitHit as hit:
            limit_note = f"limit reached in the exact solver ({hit}); "
    box, note = search_box(m)
    res = box_search(fs, xs, box)
    points = []
    for root in res.roots:
        lo_hi = root.box
        mids = {nm: float((a + b) / 2) for nm, (a, b) in zip(names, lo_hi, strict=True)}
        if root.exact is not None:
            point = dict(zip(names, root.exact, strict=True))
            exact = True
            if not root.unique:
                mids = {nm: float(arb_value(v, 64).mid()) for nm, v in point.items()}
                points.append(FoundPoint(point=point, numeric=mids, exact=True))
                continue
        else:
            point = {nm: (a + b) / 2 for nm, (a, b) in zip(names, lo_hi, strict=True)}
            exact = False
        points.append(FoundPoint(point=point, numeric=mids, enclosure=lo_hi, exact=exact))
    points.sort(key=lambda fp: tuple(fp.numeric[nm] for nm in names))
    complete = res.complete and not limit_note
    reason = limit_note + res.reason + f" ({note})"
    if res.complete and limit_note:
        reason += "; equilibria outside the box are not excluded"
    return tuple(points), complete, reason, "box search", {}
