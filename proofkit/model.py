"""The immutable, exact `Model`: what a `.pk` file says, as sympy objects.

Built only by :mod:`proofkit.lang` (or by tests from sympy objects directly).
Every number in it is exact (sympy ``Integer``/``Rational`` or an exact
constant such as ``pi``); no float ever enters. Constants and ``let``
shorthands are already substituted into equations, sets and points;
parameters stay symbolic in the field until :meth:`Model.with_fixed` (fixed
parameters substituted) or :meth:`Model.at_nominal` (every parameter).
Equilibrium points have the fixed parameters substituted already; a point
that still contains uncertain parameters moves with them.
``Model.definedness`` keeps where the field is defined (log arguments
positive, denominators nonzero, ...), recorded before sympy's automatic
evaluation could remove a singularity (``0/x``, ``exp(log(x))``).

This module must never parse text, call a solver, or evaluate user strings.
"""

from __future__ import annotations

from collections.abc import Iterator, Mapping
from dataclasses import dataclass, field, replace
from typing import Literal

import sympy as sp

from proofkit.errors import ModelError, SourceSpan

__all__ = [
    "ELEMENTARY",
    "Claim",
    "ClaimKind",
    "Condition",
    "Constant",
    "Definedness",
    "Equation",
    "Equilibrium",
    "Let",
    "Model",
    "Param",
    "Region",
]

# The elementary functions a field may contain (sympy's classes), with their names in the
# language; ``sqrt`` is a power in sympy and so is not listed.
ELEMENTARY: dict[type, str] = {
    sp.sin: "sin",
    sp.cos: "cos",
    sp.tan: "tan",
    sp.exp: "exp",
    sp.log: "log",
    sp.tanh: "tanh",
    sp.Abs: "abs",
}

ClaimKind = Literal["stable", "unstable", "globally stable", "attracts", "no cycle", "cycle"]
Relation = Literal["<=", "<", ">=", ">"]


@dataclass(frozen=True)
class Constant:
    name: str
    value: sp.Expr
    span: SourceSpan | None = field(default=None, compare=False)


@dataclass(frozen=True)
class Param:
    """A parameter: nominal value and, if uncertain, the closed range ``[low, high]``."""

    name: str
    nominal: sp.Expr
    low: sp.Expr | None = None
    high: sp.Expr | None = None
    span: SourceSpan | None = field(default=None, compare=False)

    @property
    def symbol(self) -> sp.Symbol:
        return sp.Symbol(self.name, real=True)

    @property
    def is_uncertain(self) -> bool:
        return self.low is not None


@dataclass(frozen=True)
class Let:
    """A shorthand; ``expr`` has earlier constants and lets substituted."""

    name: str
    expr: sp.Expr
    span: SourceSpan | None = field(default=None, compare=False)


@dataclass(frozen=True)
class Equation:
    """``dstate/dt = rhs``; ``rhs`` is in state and parameter symbols only."""

    state: str
    rhs: sp.Expr
    span: SourceSpan | None = field(default=None, compare=False)


@dataclass(frozen=True)
class Definedness:
    """Where an expression is defined: ``expr relation 0``.

    ``relation`` is ``>`` (log arguments, bases of negative fractional powers),
    ``>=`` (sqrt arguments, bases of positive fractional powers) or ``!=``
    (denominators, and ``cos(u)`` for ``tan(u)``); ``origin`` names the
    construct that needs it ("the argument of log", ...).
    """

    expr: sp.Expr
    relation: Literal[">", ">=", "!="]
    origin: str = field(default="", compare=False)
    span: SourceSpan | None = field(default=None, compare=False)

    def subs(self, mapping: Mapping[sp.Symbol, sp.Expr]) -> Definedness:
        return replace(self, expr=self.expr.subs(mapping))


@dataclass(frozen=True)
class Condition:
    """One condition ``lhs op rhs`` of a set."""

    lhs: sp.Expr
    op: Relation
    rhs: sp.Expr
    span: SourceSpan | None = field(default=None, compare=False)

    def as_nonnegative(self) -> tuple[sp.Expr, bool]:
        """Return ``(g, strict)``: the condition is ``g >= 0`` (``g > 0`` when strict)."""
        g = self.rhs - self.lhs if self.op in ("<=", "<") else self.lhs - self.rhs
        return sp.expand(g), self.op in ("<", ">")


@dataclass(frozen=True)
class Region:
    """A conjunction of conditions (a basic semialgebraic set when polynomial)."""

    conditions: tuple[Condition, ...]
    span: SourceSpan | None = field(default=None, compare=False)

    def __iter__(self) -> Iterator[Condition]:
        return iter(self.conditions)

    def nonnegative_forms(self) -> tuple[tuple[sp.Expr, bool], ...]:
        return tuple(c.as_nonnegative() for c in self.conditions)

    def subs(self, mapping: Mapping[sp.Symbol, sp.Expr]) -> Region:
        return Region(
            tuple(replace(c, lhs=c.lhs.subs(mapping), rhs=c.rhs.subs(mapping)) for c in self),
            self.span,
        )


@dataclass(frozen=True)
class Equilibrium:
    """A declared equilibrium; ``point`` lists ``(state, value)`` in state order."""

    name: str
    point: tuple[tuple[str, sp.Expr], ...]
    span: SourceSpan | None = field(default=None, compare=False)

    def as_dict(self) -> dict[str, sp.Expr]:
        return dict(self.point)

    @property
    def moves_with_parameters(self) -> bool:
        """True when the point is written in uncertain parameters (it moves with them)."""
        return any(v.free_symbols for _, v in self.point)

    @property
    def parameter_symbols(self) -> frozenset[sp.Symbol]:
        """The uncertain-parameter symbols the point depends on."""
        return frozenset().union(*(v.free_symbols for _, v in self.point))


@dataclass(frozen=True)
class Claim:
    """A statement to prove, exactly as the file states it.

    ``target`` names the equilibrium (``None`` for cycle claims); ``region``
    is the set of ``attracts``, ``no cycle`` and ``cycle`` claims; ``text``
    is the claim as written (without the leading ``claim``).
    """

    kind: ClaimKind
    text: str
    target: str | None = None
    region: Region | None = None
    at_nominal: bool = False
    span: SourceSpan | None = field(default=None, compare=False)


@dataclass(frozen=True)
class Model:
    """One continuous-time system ``dx/dt = f(x, p)`` and its claims."""

    name: str | None
    states: tuple[str, ...]
    equations: tuple[Equation, ...]
    params: tuple[Param, ...] = ()
    constants: tuple[Constant, ...] = ()
    lets: tuple[Let, ...] = ()
    domain: Region | None = None
    equilibria: tuple[Equilibrium, ...] = ()
    claims: tuple[Claim, ...] = ()
    definedness: tuple[Definedness, ...] = field(default=(), compare=False)
    source: str = field(default="", compare=False)
    file: str = field(default="<model>", compare=False)

    def __post_init__(self) -> None:
        if tuple(e.state for e in self.equations) != self.states:
            raise ModelError("equations must be given one per state, in state order")

    # --- symbols -----------------------------------------------------------
    @property
    def state_symbols(self) -> tuple[sp.Symbol, ...]:
        return tuple(sp.Symbol(s, real=True) for s in self.states)

    @property
    def param_symbols(self) -> tuple[sp.Symbol, ...]:
        return tuple(p.symbol for p in self.params)

    @property
    def field(self) -> tuple[sp.Expr, ...]:
        """The vector field ``f`` in state order (parameters symbolic)."""
        return tuple(e.rhs for e in self.equations)

    def equilibrium(self, name: str) -> Equilibrium:
        for eq in self.equilibria:
            if eq.name == name:
                return eq
        raise KeyError(name)

    # --- derived models ----------------------------------------------------
    @property
    def uncertain_params(self) -> tuple[Param, ...]:
        """The parameters with a range, in declaration order."""
        return tuple(p for p in self.params if p.is_uncertain)

    @property
    def fixed_params(self) -> tuple[Param, ...]:
        """The parameters without a range (fixed at their value)."""
        return tuple(p for p in self.params if not p.is_uncertain)

    def nominal_values(self) -> dict[sp.Symbol, sp.Expr]:
        return {p.symbol: p.nominal for p in self.params}

    def fixed_values(self) -> dict[sp.Symbol, sp.Expr]:
        return {p.symbol: p.nominal for p in self.fixed_params}

    def at_nominal(self) -> Model:
        """The same model with every parameter replaced by its nominal value."""
        return self._substituted(self.nominal_values(), keep=())

    def with_fixed(self) -> Model:
        """The same model with the fixed parameters substituted; uncertain ones stay symbols."""
        return self._substituted(self.fixed_values(), keep=self.uncertain_params)

    def _substituted(self, values: dict[sp.Symbol, sp.Expr], keep: tuple[Param, ...]) -> Model:
        if not values:
            return self

        def sub(e: sp.Expr) -> sp.Expr:
            return sp.expand(e.subs(values))

        defined = (d.subs(values) for d in self.definedness)
        return replace(
            self,
            params=keep,
            definedness=tuple(d for d in defined if d.expr.free_symbols),
            equations=tuple(replace(e, rhs=sub(e.rhs)) for e in self.equations),
            domain=self.domain.subs(values) if self.domain else None,
            equilibria=tuple(
                replace(q, point=tuple((s, v.subs(values)) for s, v in q.point))
                for q in self.equilibria
            ),
            claims=tuple(
                replace(c, region=c.region.subs(values)) if c.region else c for c in self.claims
            ),
        )

    # --- structure ---------------------------------------------------------
    def is_polynomial(self) -> bool:
        """True when every right-hand side is a polynomial in the states.

        Parameters may enter in any way (they are fixed numbers for the field).
        """
        xs = self.state_symbols
        return all(e.rhs.is_polynomial(*xs) for e in self.equations)

    def degree(self) -> int:
        """Total degree of the polynomial field in the states."""
        if not self.is_polynomial():
            raise ModelError("the vector field is not polynomial in the states")
        xs = self.state_symbols
        return max((sp.Poly(e.rhs, *xs).total_degree() for e in self.equations), default=0)
