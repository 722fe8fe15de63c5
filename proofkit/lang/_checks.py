"""Whole-model exact checks: equilibria, where the field is defined, parameter ranges.

A declared equilibrium must make ``f`` vanish exactly: at the values of the
fixed parameters, and for every value of the uncertain ones in their ranges
(a point may move with them). Its own radicands must stay nonnegative over the
ranges, the field must be defined there (``Model.definedness``) and it must lie
in the declared domain. The field must be defined wherever the domain or a
claim set says the model is used (checked on a grid of exact points, so a
failure comes with the point). Each check is exact and shares one budget of
time for the whole model; when the budget is spent the model is refused with
that reason, never accepted on numerical evidence.

This module must never call ``simplify`` or evaluate model text.
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

import flint
import sympy as sp

from proofkit.errors import InputError
from proofkit.lang._diagnostics import Located, make_error
from proofkit.lang._exact import (
    Box,
    Budget,
    Decision,
    ball_of,
    holds_on,
    qinterval,
    zero_test,
)
from proofkit.lang._expr import MAX_TERMS, estimate_terms, show
from proofkit.model import Definedness, Equation, Equilibrium, Param, Region

__all__ = ["CHECK_SECONDS", "ModelChecker"]

CHECK_SECONDS = 5.0  # exact checks of one model (equilibria, definedness, ranges)
_GRID = [Fraction(v) for v in ("0", "1", "-1", "1/2", "-1/2", "2", "-2", "3", "-3", "1/4", "3/2")]
_MAX_GRID_POINTS = 600
_NEEDS = {">": "> 0", ">=": ">= 0", "!=": "!= 0"}


def _exact_arb(x: flint.arb) -> Fraction:
    m, e = x.man_exp()
    return Fraction(int(m)) * Fraction(2) ** int(e)


def _rational_bounds(e: sp.Expr) -> tuple[Fraction, Fraction]:
    """Exact bounds of a constant; irrational ones are enclosed outward by a ball."""
    if e.is_Rational:
        v = Fraction(int(e.p), int(e.q))
        return v, v
    b = ball_of(e)
    if b is None:  # pragma: no cover - constants are checked finite and real when built
        raise ValueError(f"no enclosure of {e}")
    return _exact_arb(b.lower()), _exact_arb(b.upper())


def _box(params: Sequence[Param]) -> dict[sp.Symbol, tuple[Fraction, Fraction]]:
    out = {}
    for p in params:
        if p.is_uncertain:
            assert p.low is not None and p.high is not None
            out[p.symbol] = (_rational_bounds(p.low)[0], _rational_bounds(p.high)[1])
    return out


def _at(point: dict[sp.Symbol, Fraction]) -> str:
    return ", ".join(f"{s} = {v}" for s, v in sorted(point.items(), key=lambda t: str(t[0])))


@dataclass
class ModelChecker:
    """The exact checks of one model, sharing one budget."""

    where: Located
    equations: tuple[Equation, ...]
    params: Sequence[Param]
    definedness: Sequence[Definedness]
    domain: Region | None

    def __post_init__(self) -> None:
        self.budget = Budget(CHECK_SECONDS, 200_000)
        self.fixed = {p.symbol: p.nominal for p in self.params if not p.is_uncertain}
        self.box: Box = _box(self.params)

    def err(self, msg: str, meta: Any, hint: str | None = None, limit: bool = False) -> InputError:
        end = meta.end_column if getattr(meta, "end_line", meta.line) == meta.line else None
        return make_error(self.where, msg, meta.line, meta.column, end, hint=hint, limit=limit)

    def undecided(self, what: str, meta: Any, d: Decision, hint: str) -> InputError:
        if d.spent:
            return self.err(
                f"{what}: the exact check stopped at its time limit "
                f"({CHECK_SECONDS:g} s for the whole model)",
                meta,
                hint=hint,
                limit=True,
            )
        return self.err(what, meta, hint=hint)

    # --- conditions -----------------------------------------------------------------
    def require(self, d: Definedness, expr: sp.Expr, meta: Any, what: str) -> None:
        """``expr`` (``d.expr`` with values substituted) must satisfy ``d`` over the box."""
        if estimate_terms(expr) > MAX_TERMS:
            raise self.err(f"{what}: the condition is too large to check", meta, limit=True)
        decision = holds_on(expr, self.box, d.relation, self.budget)
        if decision.holds is True:
            return
        needs = f"{d.origin} ({show(d.expr)}) must be {_NEEDS[d.relation]}"
        hint = f"that expression is at {d.span}" if d.span is not None else None
        if decision.holds is False:
            assert decision.witness is not None
            at = f" at {_at(decision.witness)}" if decision.witness else " there"
            raise self.err(f"{what}: {needs}, but it is {decision.value}{at}", meta, hint=hint)
        raise self.undecided(
            f"{what}: could not show exactly that {needs}", meta, decision, hint=hint or ""
        )

    def parameters_only(self) -> None:
        """Conditions in the parameters alone must hold over the ranges."""
        for d in self.definedness:
            expr = d.expr.subs(self.fixed)
            if expr.free_symbols <= set(self.box) and d.span is not None:
                self.require(d, expr, d.span, "the field is not defined for every parameter value")

    # --- equilibria -----------------------------------------------------------------
    def equilibrium(self, eq: Equilibrium, meta: Any, own: Sequence[Definedness]) -> None:
        """Radicands, definedness, vanishing residual and the domain at one point."""
        point = {sp.Symbol(s, real=True): v for s, v in eq.point}
        moving = "for every parameter value" if eq.moves_with_parameters else "there"
        for d in own:
            self.require(d, d.expr, meta, f"the point '{eq.name}' is not defined {moving}")
        for d in self.definedness:
            expr = d.expr.subs(self.fixed).subs(point)
            self.require(d, expr, meta, f"the field is not defined at '{eq.name}'")
        self.residuals(eq, meta, point)
        if self.domain is not None:
            for c in self.domain:
                g, strict = c.as_nonnegative()
                g = g.subs(self.fixed).subs(point)
                verdict = holds_on(g, self.box, ">" if strict else ">=", self.budget)
                if verdict.holds is not True:
                    at = f" at {_at(verdict.witness)}" if verdict.witness else ""
                    shown = f"{show(c.lhs)} {c.op} {show(c.rhs)}"
                    raise self.err(
                        f"'{eq.name}' lies outside the declared domain: {shown} "
                        + ("fails there" + at if verdict.holds is False else "is not shown there"),
                        meta,
                        hint="an equilibrium must lie in the domain; change the point or "
                        "widen the domain",
                    )

    def residuals(self, eq: Equilibrium, meta: Any, point: dict[sp.Symbol, sp.Expr]) -> None:
        shown: list[str] = []
        failed: Decision | None = None
        failed_state = ""
        open_: Decision | None = None
        for e in self.equations:
            r = e.rhs.subs(self.fixed).subs(point)
            if estimate_terms(r) > MAX_TERMS:
                raise self.err(
                    f"checking '{eq.name}' would expand a residual of more than {MAX_TERMS} terms",
                    meta,
                    hint="give the point in a simpler exact form",
                    limit=True,
                )
            d = zero_test(r, self.box, self.budget)
            shown.append(f"d{e.state}/dt = {show(sp.expand(r), 200)}")
            if d.holds is False and failed is None:
                failed, failed_state = d, e.state
            elif d.holds is None and open_ is None:
                open_ = d
        text = ", ".join(shown)
        if failed is not None:
            assert failed.witness is not None
            some = (
                f" (at {_at(failed.witness)}, d{failed_state}/dt is {failed.value})"
                if failed.witness
                else ""
            )
            raise self.err(
                f"'{eq.name}' is not an equilibrium: f does not vanish there; "
                f"residual {text}{some}",
                meta,
                hint="an equilibrium needs every right-hand side to be exactly 0 at the point, "
                "at the fixed parameter values and for every value of the uncertain ones "
                "(a point may move with them, e.g. x = k)",
            )
        if open_ is not None:
            raise self.undecided(
                f"could not show exactly that f vanishes at '{eq.name}': residual {text}",
                meta,
                open_,
                hint="give the point in a simpler exact form",
            )

    # --- sets -----------------------------------------------------------------------
    def defined_on(self, region: Region, states: Sequence[str], what: str, meta: Any) -> None:
        """Refuse a set that contains an exact grid point where the field is undefined."""
        if not self.definedness:
            return
        nominal = {p.symbol: p.nominal for p in self.params}
        xs = [sp.Symbol(s, real=True) for s in states]
        per_axis = max(2, int(_MAX_GRID_POINTS ** (1 / max(1, len(xs)))))
        conds = [(g.subs(nominal), strict) for g, strict in region.nonnegative_forms()]
        needs = [(d, d.expr.subs(nominal)) for d in self.definedness]
        for values in itertools.islice(
            itertools.product(_GRID[:per_axis], repeat=len(xs)), _MAX_GRID_POINTS
        ):
            self.budget.used += 1
            at = dict(zip(xs, values, strict=True))
            box = {s: (v, v) for s, v in at.items()}
            if not all(_sure(g, box, strict) for g, strict in conds):
                continue
            for d, expr in needs:
                qi = qinterval(expr, box)
                if qi is not None and _violates(qi[0], d.relation):
                    raise self.err(
                        f"the field is not defined everywhere in {what}: {d.origin} "
                        f"({show(d.expr)}) must be {_NEEDS[d.relation]}, but it is {qi[0]} at "
                        f"{_at(at)}, a point of the set",
                        meta,
                        hint="exclude the singular points from the set"
                        + (f" (the expression is at {d.span})" if d.span else ""),
                    )


def _sure(g: sp.Expr, box: Box, strict: bool) -> bool:
    qi = qinterval(g, box)
    return qi is not None and (qi[0] > 0 if strict else qi[0] >= 0)


def _violates(v: Fraction, relation: str) -> bool:
    return (
        (relation == ">" and v <= 0)
        or (relation == ">=" and v < 0)
        or (relation == "!=" and v == 0)
    )
