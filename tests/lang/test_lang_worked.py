"""The claims written in worked/*.pk are true (computed: numpy eigenvalues, scipy solve_ivp).

These are numerical cross-checks of the demo files with reference libraries,
not proofs: a wrong claim in a demo would mislead every later stage.
Uncertain parameters are checked at both ends of their range and at the
nominal value (unless the claim says ``at nominal``).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import sympy as sp
from scipy.integrate import solve_ivp

from proofkit import load
from proofkit.model import Claim, Model, Region

WORKED = Path(__file__).resolve().parents[2] / "worked"
FILES = sorted(WORKED.glob("*.pk"))


def parameter_cases(model: Model, claim: Claim) -> list[dict[sp.Symbol, sp.Expr]]:
    cases = [model.nominal_values()]
    if not claim.at_nominal:
        for p in model.params:
            if p.is_uncertain:
                for end in (p.low, p.high):
                    case = dict(model.nominal_values())
                    case[p.symbol] = end
                    cases.append(case)
    return cases


def numeric_field(model: Model, values: dict[sp.Symbol, sp.Expr]):  # type: ignore[no-untyped-def]
    xs = model.state_symbols
    f = sp.lambdify(xs, [sp.expand(e.rhs.subs(values)) for e in model.equations], "numpy")
    return lambda t, z: np.array(f(*z), dtype=float)


def inside(region: Region, xs: tuple[sp.Symbol, ...], values: dict) -> object:
    forms = [
        (sp.lambdify(xs, g.subs(values), "numpy"), strict)
        for g, strict in region.nonnegative_forms()
    ]
    return lambda z: all((g(*z) > 0) if s else (g(*z) >= 0) for g, s in forms)


def sample(region: Region, model: Model, values: dict, n: int, seed: int) -> list[np.ndarray]:
    test = inside(region, model.state_symbols, values)
    rng = np.random.default_rng(seed)
    points: list[np.ndarray] = []
    for _ in range(20000):
        z = rng.uniform(-3, 3, size=len(model.states))
        if test(z):
            points.append(z)
            if len(points) == n:
                break
    assert len(points) == n, "could not sample the claimed set"
    return points


def point_of(model: Model, name: str, values: dict) -> np.ndarray:
    return np.array([float(v.subs(values)) for _, v in model.equilibrium(name).point])


@pytest.mark.parametrize("path", FILES, ids=lambda p: p.name)
def test_worked_claims_hold_numerically(path: Path) -> None:
    model = load(path)
    xs = model.state_symbols
    jac = sp.Matrix(model.field).jacobian(xs)
    assert model.claims, "a worked model states what should be proven"
    for claim in model.claims:
        for values in parameter_cases(model, claim):
            f = numeric_field(model, values)
            if claim.kind in ("stable", "unstable"):
                assert claim.target is not None
                point = dict(
                    zip(
                        xs,
                        (v.subs(values) for _, v in model.equilibrium(claim.target).point),
                        strict=True,
                    )
                )
                a = np.array(jac.subs(values).subs(point).tolist(), dtype=float)
                top = max(np.linalg.eigvals(a).real)
                assert (top < 0) if claim.kind == "stable" else (top > 0), (claim.text, top)
            elif claim.kind == "attracts":
                assert claim.target is not None and claim.region is not None
                target = point_of(model, claim.target, values)
                for z in sample(claim.region, model, values, 8, seed=1):
                    sol = solve_ivp(f, (0, 60), z, rtol=1e-8, atol=1e-10)
                    assert np.linalg.norm(sol.y[:, -1] - target) < 1e-4, (claim.text, z)
            elif claim.kind == "cycle":
                assert claim.region is not None
                test = inside(claim.region, xs, values)
                rests = [point_of(model, q.name, values) for q in model.equilibria]
                for z in sample(claim.region, model, values, 2, seed=2):
                    sol = solve_ivp(f, (0, 40), z, rtol=1e-8, atol=1e-10, dense_output=True)
                    late = sol.sol(np.linspace(20, 40, 300)).T
                    assert all(test(p) for p in late), claim.text
                    assert min(np.linalg.norm(late - r, axis=1).min() for r in rests) > 0.1
            elif claim.kind == "no cycle":
                # Bendixson: the divergence keeps one sign on the set (grid check)
                assert claim.region is not None
                div = sp.lambdify(
                    xs,
                    sum(sp.diff(e, s) for e, s in zip(model.field, xs, strict=True)).subs(values),
                )
                signs = {np.sign(div(*z)) for z in sample(claim.region, model, values, 200, 3)}
                assert len(signs) == 1 and 0 not in signs, claim.text
            else:  # pragma: no cover - no worked file claims global stability
                pytest.fail(f"no numerical check for {claim.kind}")
