"""Small builders of Models straight from sympy (no parser needed)."""

from __future__ import annotations

import sympy as sp

from proofkit.model import Equation, Equilibrium, Model, Param


def sym(*names: str) -> tuple[sp.Symbol, ...]:
    return tuple(sp.Symbol(n, real=True) for n in names)


def model(
    states: str,
    rhs: list[sp.Expr],
    equilibria: dict[str, dict[str, sp.Expr]] | None = None,
    params: tuple[Param, ...] = (),
) -> Model:
    names = tuple(states.split())
    eqs = tuple(
        Equilibrium(name, tuple((s, sp.sympify(pt[s])) for s in names))
        for name, pt in (equilibria or {}).items()
    )
    return Model(
        "test",
        names,
        tuple(Equation(n, sp.sympify(r)) for n, r in zip(names, rhs, strict=True)),
        params=params,
        equilibria=eqs,
    )
