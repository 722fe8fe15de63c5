"""Exact sum-of-squares certificates of one polynomial: ``decompose``.

``decompose(p, variables)`` adds to the ladder of :func:`proofkit.exact.ladder.solve_exactly`
cheap necessary conditions (odd degree, a negative value at a rational
sample point) and the Newton-polytope basis, and, when the ladder fails on a
program with no interior point, iterated facial reduction
(:mod:`proofkit.exact.iterated`: exact faces from high-precision real zeros
and Newton-polytope faces) and then the single-step kernel reduction
(:mod:`proofkit.exact.facial`), within one shared time budget.

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

from proofkit.exact.check import GramCheck, check_gram, squares_from_ldl
from proofkit.exact.facial import face_candidates, integer_relations, range_candidates
from proofkit.exact.iterated import iterated_faces
from proofkit.exact.ladder import Attempt, ProgramOutcome, solve_exactly
from proofkit.exact.ldl import LdlResult
from proofkit.exact.rounding import DENOMINATOR_LADDER
from proofkit.sos.basis import newton_basis
from proofkit.sos.poly import PolySpace
from proofkit.sos.program import SearchProgram
from proofkit.sos.refine import gram_system, numerical_kernel, refine_low_rank, solve_on_range
from proofkit.sos.solve import NumericSolution

__all__ = ["Decomposition", "decompose"]

_FACE_BUDGET = 12.0  # seconds for all facial reduction after the ladder in decompose
_ITERATED_SHARE = 8.0  # of which at most this for iterated facial reduction


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


def _face_hints(space, poly, b, q, ladder):
    """Candidate exact Gram matrices on faces guessed from the numerical ``q`` (basis ``b``)."""
    prog = SearchProgram(space.variables)  # the one identity p == b'Qb on this basis
    gram = prog.sos("gram", b)
    prog.equate(gram, poly, name="target")
    system = gram_system(prog, gram)
    refined = refine_low_rank(*system, q) if system else None
    if refined is not None:
        kernel = numerical_kernel(refined)
        if 0 < kernel.shape[1] < len(b):
            tried: set[bytes] = set()
            for acc in (1e-7, 1e-6, 1e-5):
                rel = integer_relations(kernel, acc)
                top = min(rel.shape[0], len(b) - kernel.shape[1] - 1)
                for j in range(top, max(top - 3, 0), -1):  # leading subsets, largest first
                    sub = rel[:j]
                    if sub.tobytes() in tried:
                        continue
                    tried.add(sub.tobytes())
                    g0 = solve_on_range(*system, sub)
                    if g0 is not None and np.linalg.eigvalsh(g0).min() > 0:
                        wt = [[flint.fmpq(int(v)) for v in row] for row in sub]
                        yield from range_candidates(space, b, poly, wt, g0, ladder)
        yield from face_candidates(space, b, poly, refined, ladder)
    yield from face_candidates(space, b, poly, q, ladder)


def _check_candidate(
    cand: Sequence[Sequence[flint.fmpq]],
    poly: flint.fmpq_mpoly,
    variables: Sequence[sp.Symbol],
    basis_syms: list[sp.Expr],
) -> tuple[sp.Matrix, GramCheck]:
    """An exact Gram candidate as a sympy matrix, and the exact verdict on it."""
    gmat = sp.Matrix([[sp.Rational(int(x.p), int(x.q)) for x in row] for row in cand])
    return gmat, check_gram(poly, variables, basis_syms, gmat)


def _accepted(
    cand: Sequence[Sequence[flint.fmpq]] | None,
    note: str,
    poly: flint.fmpq_mpoly,
    variables: Sequence[sp.Symbol],
    basis_syms: list[sp.Expr],
    notes: list[str],
) -> tuple[sp.Matrix, GramCheck] | None:
    """The candidate and its exact verdict when the exact check accepts it; else why not
    (appended to ``notes``). A candidate ``None`` is a note only."""
    if cand is None:
        notes.append(note)
        return None
    gmat, verdict = _check_candidate(cand, poly, variables, basis_syms)
    if verdict.ok:
        return gmat, verdict
    notes.append(f"{note}: {verdict.reason}")
    return None


def _decomposition(
    res: ProgramOutcome,
    basis_syms: list[sp.Expr],
    checked: tuple[sp.Matrix, GramCheck],
    att: Attempt,
    t0: float,
) -> Decomposition:
    """The exact decomposition of an accepted candidate (its time counted as exact work)."""
    res.timings["exact"] = res.timings.get("exact", 0.0) + time.perf_counter() - t0
    gmat, verdict = checked
    return Decomposition(True, basis_syms, gmat, None, [*res.attempts, att], {}, verdict.ldl)


def _try_face(
    space: PolySpace,
    poly: flint.fmpq_mpoly,
    variables: Sequence[sp.Symbol],
    res: ProgramOutcome,
    ladder: Sequence[int],
    budget: float = _FACE_BUDGET,
) -> Decomposition | None:
    """Facial reduction by the numerical kernel (see :mod:`proofkit.exact.facial`)."""
    t0 = time.perf_counter()
    notes = []
    ranked = sorted(res.numerics, key=lambda it: it[0].status != "solved")
    for sol, bases in ranked:
        if not sol.usable or sol.status == "infeasible":
            continue
        b = bases["gram"]
        basis_syms = [space.monomial(e) for e in b]
        cands = _face_hints(space, poly, b, sol.values["gram"], ladder)
        for cand, note in cands:
            if time.perf_counter() - t0 > budget:
                notes.append(f"time budget of {budget:.1f} s for facial reduction used up")
                break
            checked = _accepted(cand, note, poly, variables, basis_syms, notes)
            if checked is not None:
                att = Attempt(sol.solver, len(b), sol.status, sol.margin, f"exact ({note})")
                return _decomposition(res, basis_syms, checked, att, t0)
    res.timings["exact"] = res.timings.get("exact", 0.0) + time.perf_counter() - t0
    if notes:
        res.reason = f"{res.reason}; kernel facial reduction: {notes[-1]}"
    return None


def _try_iterated(
    space: PolySpace,
    poly: flint.fmpq_mpoly,
    variables: Sequence[sp.Symbol],
    res: ProgramOutcome,
    ladder: Sequence[int],
    b: np.ndarray,
) -> Decomposition | None:
    """Iterated facial reduction (:mod:`proofkit.exact.iterated`) on ``b``; checked exactly."""
    if b.shape[0] == 0:
        return None

    # Only for the signature of a missing interior point: a usable solution, margin ~ 0.
    def near_psd(sol: NumericSolution) -> bool:
        q = np.asarray(sol.values.get("gram", np.zeros((0, 0))), dtype=float)
        if q.size == 0 or not np.all(np.isfinite(q)):
            return False
        w = np.linalg.eigvalsh((q + q.T) / 2)
        return float(w.min()) >= -1e-6 * max(1.0, float(np.abs(w).max()))

    hints = [s for s, _b in res.numerics if s.usable and s.status != "infeasible" and near_psd(s)]
    if not hints:
        return None
    prog = SearchProgram(variables)
    gram = prog.sos("gram", b)
    prog.equate(gram, poly, name="target")
    system = gram_system(prog, gram)
    if system is None:
        return None
    t0 = time.perf_counter()
    basis_syms = [space.monomial(e) for e in b]
    notes: list[str] = []
    for cand, note in iterated_faces(space, b, poly, *system, ladder, t0 + _ITERATED_SHARE):
        checked = _accepted(cand, note, poly, variables, basis_syms, notes)
        if checked is not None:
            att = Attempt("clarabel", len(b), "solved", None, f"exact ({note})")
            return _decomposition(res, basis_syms, checked, att, t0)
        if time.perf_counter() - t0 > _ITERATED_SHARE:
            notes.append("time budget for iterated facial reduction used up")
            break
    res.timings["exact"] = res.timings.get("exact", 0.0) + time.perf_counter() - t0
    if notes:
        res.reason = f"{res.reason}; iterated facial reduction: {notes[-1]}"
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
    facial_rounds: int = 3,
) -> Decomposition:
    """Search for an exact SOS certificate of ``p`` (a sympy polynomial) in ``variables``."""
    t_start = time.perf_counter()
    space = PolySpace(variables)
    poly = space.coerce(p)
    nv = space.nvars
    timings: dict[str, float] = {}
    if poly.is_zero():
        return Decomposition(True, [], sp.zeros(0, 0), _ldl=LdlResult(True, _L=[], D=[]))
    if poly.total_degree() % 2:
        return _not_found(f"odd total degree {poly.total_degree()}", [], timings)
    neg = _sample_negative(poly, nv)
    if neg is not None:
        pt = ", ".join(f"{v}={c}" for v, c in zip(variables, neg, strict=True))
        return _not_found(f"negative at the point ({pt}): {poly(*neg)}", [], timings)
    exps, _coef = PolySpace.arrays(poly, nv)
    if basis is None:
        b = newton_basis(exps)
    else:
        b = np.array([space.exponents_of(m) for m in basis], np.int64).reshape(-1, nv)
    timings["basis"] = time.perf_counter() - t_start
    if b.shape[0] == 0:
        return _not_found("empty monomial basis after Newton-polytope pruning", [], timings)
    prog = SearchProgram(variables)
    gram = prog.sos("gram", b)
    prog.equate(gram, poly, name="target")
    res = solve_exactly(prog, solver=solver, ladder=ladder, facial_rounds=facial_rounds)
    timings.update(res.timings)
    if res.exact is None:
        t_face = time.perf_counter()
        found = _try_iterated(space, poly, variables, res, ladder, b)
        if found is None:
            left = max(2.0, _FACE_BUDGET - (time.perf_counter() - t_face))
            found = _try_face(space, poly, variables, res, ladder, left)
        timings["total"] = time.perf_counter() - t_start
        if found is not None:
            found.timings = timings
            return found
        return _not_found(res.reason or "no certificate", res.attempts, timings)
    t0 = time.perf_counter()
    basis_syms = [space.monomial(e) for e in gram.basis]
    gmat = res.exact.gram(gram)
    verdict = check_gram(poly, variables, basis_syms, gmat)
    timings["check"] = time.perf_counter() - t0
    timings["total"] = time.perf_counter() - t_start
    if not verdict.ok:  # cannot happen unless the two exact checks disagree
        return _not_found(f"final exact check refused: {verdict.reason}", res.attempts, timings)
    return Decomposition(True, basis_syms, gmat, None, res.attempts, timings, verdict.ldl)
