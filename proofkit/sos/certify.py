"""``decompose(p, variables)``: an exact sum-of-squares certificate for one polynomial, or why not.

Ladder: cheap necessary conditions (odd degree, a negative value at a
rational sample point), the Newton-polytope basis, a margin-maximising Gram
program (default solver first, then the other), exact rounding with a
denominator ladder and Peyrl–Parrilo projection, then facial reduction
(drop basis monomials whose diagonal the solution forces to zero) and retry.

``found=True`` is returned only after :func:`proofkit.exact.check.check_gram`
passed (identity expanded exactly, LDL' over QQ). This module never trusts a
float.
"""

from __future__ import annotations

import random
import time
from collections.abc import Sequence
from dataclasses import dataclass, field

import flint
import numpy as np
import sympy as sp

from proofkit.exact.check import check_gram, squares_from_ldl
from proofkit.exact.ldl import LdlResult
from proofkit.exact.rounding import DENOMINATOR_LADDER, round_program
from proofkit.sos.basis import newton_basis
from proofkit.sos.poly import PolySpace
from proofkit.sos.program import SearchProgram
from proofkit.sos.solve import DEFAULT_SOLVER, SOLVER_SETTINGS, solve_program

__all__ = ["Attempt", "Decomposition", "decompose"]

_MARGIN_NEGATIVE = -1e-7
_DIAG_ZERO = 1e-7


@dataclass(frozen=True)
class Attempt:
    """One rung of the ladder: solver, basis size, solver status, margin, outcome."""

    solver: str
    basis_size: int
    status: str
    margin: float | None
    outcome: str


@dataclass
class Decomposition:
    """Result of :func:`decompose`; ``gram`` and ``basis`` are exact and checked when ``found``."""

    found: bool
    basis: list[sp.Expr] = field(default_factory=list)
    gram: sp.Matrix | None = None
    reason: str | None = None
    attempts: list[Attempt] = field(default_factory=list)
    timings: dict[str, float] = field(default_factory=dict)
    _ldl: LdlResult | None = None

    def squares(self) -> list[tuple[sp.Rational, sp.Expr]]:
        """Weighted squares ``[(w, q)]`` from the exact LDL' with ``p == sum w * q**2``."""
        if not self.found or self._ldl is None:
            raise ValueError(f"no certificate: {self.reason}")
        return squares_from_ldl(self.basis, self._ldl)


def _sample_negative(p: flint.fmpq_mpoly, nvars: int) -> tuple[flint.fmpq, ...] | None:
    rng = random.Random(20260101)
    points = [
        tuple(flint.fmpq(0) for _ in range(nvars)),
        tuple(flint.fmpq(1) for _ in range(nvars)),
    ]
    for _ in range(24):
        points.append(
            tuple(flint.fmpq(rng.randint(-20, 20), rng.randint(1, 8)) for _ in range(nvars))
        )
    for pt in points:
        if p(*pt) < 0:
            return pt
    return None


def _not_found(reason: str, attempts: list[Attempt], timings: dict[str, float]) -> Decomposition:
    return Decomposition(False, reason=reason, attempts=attempts, timings=timings)


def decompose(
    p: object,
    variables: Sequence[sp.Symbol],
    *,
    solver: str | None = None,
    basis: Sequence[sp.Expr] | None = None,
    ladder: Sequence[int] = DENOMINATOR_LADDER,
    facial_rounds: int = 2,
) -> Decomposition:
    """Search for an exact SOS certificate of ``p`` (a sympy polynomial) in ``variables``."""
    t_start = time.perf_counter()
    space = PolySpace(variables)
    poly = space.coerce(p)
    nv = space.nvars
    attempts: list[Attempt] = []
    timings: dict[str, float] = {"assembly": 0.0, "compile": 0.0, "solve": 0.0, "exact": 0.0}
    if poly.is_zero():
        return Decomposition(True, [], sp.zeros(0, 0), _ldl=LdlResult(True, L=[], D=[]))
    if poly.total_degree() % 2:
        return _not_found(f"odd total degree {poly.total_degree()}", attempts, timings)
    neg = _sample_negative(poly, nv)
    if neg is not None:
        pt = ", ".join(f"{v}={c}" for v, c in zip(variables, neg, strict=True))
        return _not_found(f"negative at the point ({pt}): {poly(*neg)}", attempts, timings)
    exps, _coef = PolySpace.arrays(poly, nv)
    if basis is None:
        b = newton_basis(exps)
    else:
        b = np.array([space.exponents_of(m) for m in basis], np.int64).reshape(-1, nv)
    timings["basis"] = time.perf_counter() - t_start
    order = [(solver or DEFAULT_SOLVER).lower()]
    order += [s for s in SOLVER_SETTINGS if s not in order]
    reasons: list[str] = []
    for rnd in range(facial_rounds + 1):
        if b.shape[0] == 0:
            reasons.append("empty monomial basis after pruning")
            break
        prog = SearchProgram(variables)
        gram = prog.sos("gram", b)
        prog.equate(gram, poly, name="target")
        shrink = None
        for name in order:
            sol = solve_program(prog, name, margin=True)
            timings["assembly"] += sol.assembly_time
            timings["compile"] += sol.compile_time
            timings["solve"] += sol.solve_time
            if sol.status in ("infeasible", "failed", "unbounded") or not sol.usable:
                attempts.append(Attempt(name, b.shape[0], sol.status, None, sol.message))
                reasons.append(f"{name}: {sol.status} ({sol.message})")
                continue
            margin = sol.margin if sol.margin is not None else 0.0
            if margin < _MARGIN_NEGATIVE and sol.status == "solved":
                msg = (
                    f"best margin {margin:.3g} < 0: no PSD Gram matrix in this basis (numerically)"
                )
                attempts.append(Attempt(name, b.shape[0], sol.status, margin, msg))
                reasons.append(f"{name}: {msg}")
                break
            t0 = time.perf_counter()
            exact = round_program(prog, sol, ladder)
            if exact.ok:
                basis_syms = [space.monomial(e) for e in b]
                gmat = exact.gram(gram)
                verdict = check_gram(poly, variables, basis_syms, gmat)
                timings["exact"] += time.perf_counter() - t0
                if verdict.ok:
                    attempts.append(
                        Attempt(name, b.shape[0], sol.status, margin, "exact certificate")
                    )
                    timings["total"] = time.perf_counter() - t_start
                    return Decomposition(
                        True, basis_syms, gmat, None, attempts, timings, verdict.ldl
                    )
                reasons.append(f"{name}: final check refused: {verdict.reason}")
                attempts.append(Attempt(name, b.shape[0], sol.status, margin, verdict.reason or ""))
                continue
            timings["exact"] += time.perf_counter() - t0
            msg = f"rounding failed ({exact.reason})"
            if sol.status == "inaccurate":
                msg = f"solver inaccurate; {msg}"
            attempts.append(Attempt(name, b.shape[0], sol.status, margin, msg))
            reasons.append(f"{name}: {msg}")
            diag = np.diag(sol.values["gram"])
            small = diag < _DIAG_ZERO * max(1.0, float(np.abs(diag).max(initial=0.0)))
            if shrink is None and small.any() and not small.all():
                shrink = ~small
        if shrink is None:
            break
        b = b[shrink]
        reasons.append(f"facial reduction round {rnd + 1}: basis reduced to {b.shape[0]} monomials")
    timings["total"] = time.perf_counter() - t_start
    return _not_found("; ".join(reasons) or "no certificate found", attempts, timings)
