"""Build models from sympy, run the range prover on their claims, audit the certificate."""

from __future__ import annotations

import json
from dataclasses import replace
from typing import Any

import sympy as sp

from proofkit.audit import audit_text
from proofkit.certificate import dumps, model_section, new_certificate
from proofkit.model import Claim, Equation, Equilibrium, Model, Param
from proofkit.proofs.ranges import attempt

RHO = sp.Symbol("rho", real=True)
X, Y, Z = (sp.Symbol(n, real=True) for n in "xyz")


def build(
    states: str,
    rhs: list[Any],
    params: tuple[Param, ...],
    equilibria: dict[str, dict[str, Any]],
    claims: list[tuple[str, str]],
) -> Model:
    """A model; ``claims`` are (kind, equilibrium name) pairs over the ranges."""
    names = tuple(states.split())
    eqs = tuple(
        Equilibrium(n, tuple((s, sp.sympify(pt[s])) for s in names)) for n, pt in equilibria.items()
    )
    m = Model(
        "test",
        names,
        tuple(Equation(n, sp.sympify(r)) for n, r in zip(names, rhs, strict=True)),
        params=params,
        equilibria=eqs,
    )
    return replace(m, claims=tuple(Claim(k, f"{e} {k}", target=e) for k, e in claims))


def convection(lo: Any, hi: Any, nominal: Any = None, claims=(("stable", "cp"),)) -> Model:
    """The convection loop with sigma = 10, beta = 8/3 and rho uncertain in [lo, hi]."""
    b = sp.Rational(8, 3)
    lo, hi = sp.Rational(lo), sp.Rational(hi)
    nom = lo if nominal is None else sp.Rational(nominal)
    root = sp.sqrt(b * (RHO - 1))
    return build(
        "x y z",
        [10 * (Y - X), X * (RHO - Z) - Y, X * Y - b * Z],
        (Param("rho", nom, lo, hi),),
        {
            "cp": {"x": root, "y": root, "z": RHO - 1},
            "cm": {"x": -root, "y": -root, "z": RHO - 1},
            "origin": {"x": 0, "y": 0, "z": 0},
        },
        list(claims),
    )


def certify(model: Model) -> tuple[str, list[Any], list[Any]]:
    """(certificate text, prover attempts, audit verdicts) for every claim of ``model``."""
    attempts = [attempt(model, c) for c in model.claims]
    assert all(a is not None for a in attempts)
    text = dumps(new_certificate(model_section(model), [a.entry for a in attempts]))
    return text, attempts, list(audit_text(text).claims)


def reaudit(cert: dict[str, Any]) -> list[Any]:
    return list(audit_text(json.dumps(cert)).claims)
