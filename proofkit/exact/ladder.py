"""Exact answers for any search program: the ladder ``solve_exactly``.

Rungs: a margin-maximising solve (default solver), exact rounding with a
denominator ladder (:func:`proofkit.exact.rounding.round_program`), then a
reduction that drops Gram basis monomials whose diagonal the solution shows
forced to zero (:func:`proofkit.sos.reduce.drop_monomials`, a NEW program;
the caller's program is never changed) and a re-solve, then the other solver.
A solution of a reduced program is lifted back to the caller's program and
checked again there by :func:`proofkit.exact.rounding.verify_exact`.

``found`` is true only after the exact check on the caller's own program
passed. Solver output only chooses where to look.
"""

from __future__ import annotations

import time
from collections.abc import Sequence
from dataclasses import dataclass, field

import flint
import numpy as np

from proofkit.exact.rounding import DENOMINATOR_LADDER, ExactSolution, round_program, verify_exact
from proofkit.sos.program import SearchProgram, SosPoly
from proofkit.sos.reduce import Reduction, drop_monomials, forced_zero_masks
from proofkit.sos.solve import SOLVER_SETTINGS, NumericSolution, pick_solver, solve_program

__all__ = ["Attempt", "ProgramOutcome", "solve_exactly"]

# Relative diagonal sizes treated as forced zeros, tried in turn: degenerate programs
# are solved only to about the square root of the solver tolerance.
_DIAG_ZERO = (1e-7, 1e-5, 1e-3)


@dataclass(frozen=True)
class Attempt:
    """One rung of the ladder: solver, basis size, solver status, margin, outcome."""

    solver: str
    basis_size: int
    status: str
    margin: float | None
    outcome: str


@dataclass
class ProgramOutcome:
    """Result of :func:`solve_exactly`: ``exact`` is set only when the exact checks passed.

    ``numerics`` holds each usable numerical solution with the Gram bases it
    was computed on (a reduced program's bases may be smaller).
    """

    exact: ExactSolution | None
    reason: str | None
    attempts: list[Attempt] = field(default_factory=list)
    timings: dict[str, float] = field(default_factory=dict)
    numerics: list[tuple[NumericSolution, dict[str, np.ndarray]]] = field(default_factory=list)

    @property
    def found(self) -> bool:
        return self.exact is not None and self.exact.ok


def _size(program: SearchProgram) -> int:
    return sum(u.size for u in program.unknowns if isinstance(u, SosPoly))


def _shapes_match(program: SearchProgram, sol: NumericSolution) -> bool:
    for u in program.unknowns:
        v = sol.values.get(u.name)
        if v is None:
            return False
        want = (u.size, u.size) if isinstance(u, SosPoly) else (u.ncols,)
        if np.shape(v) != want and not (u.kind == "scalar" and np.size(v) == 1):
            return False
    return True


def _sanitise(program: SearchProgram, sol: NumericSolution) -> None:
    """Values of the wrong shape or non-finite ones make the answer ``failed``."""
    if sol.usable and not _shapes_match(program, sol):
        sol.status = "failed"
        sol.message += "; values do not match the unknowns' shapes"
        sol.values = {}
    if not sol.usable and sol.status in ("solved", "inaccurate"):
        sol.message = f"solver said {sol.status} but gave no usable (finite) values"
        sol.status = "failed"


def _lift(red: Reduction, exact: ExactSolution) -> ExactSolution:
    """The reduced program's exact values on the original program, checked exactly there."""
    values = dict(exact.values)
    for name in red.keep:
        values[name] = red.lift_matrix(name, values[name], flint.fmpq(0))  # type: ignore[arg-type]
    ok, reason, ldls = verify_exact(red.original, values)
    return ExactSolution(red.original, values, ok, reason, exact.denominator, ldls)


def _compose(program: SearchProgram, red: Reduction, masks: dict[str, np.ndarray]) -> Reduction:
    """Drop more monomials: ``masks`` are relative to ``red.program``; result from ``program``."""
    full: dict[str, np.ndarray] = {k: v.copy() for k, v in red.keep.items()}
    for u in program.unknowns:
        if isinstance(u, SosPoly) and u.name in masks:
            base = full.get(u.name, np.ones(u.size, dtype=bool))
            idx = np.flatnonzero(base)
            base = np.zeros(u.size, dtype=bool)
            base[idx[masks[u.name]]] = True
            full[u.name] = base
    return drop_monomials(program, full)


def _next_masks(red: Reduction, sol: NumericSolution, start: int) -> tuple[dict, int]:
    """Forced-zero masks at the first tolerance from ``start`` that finds any."""
    for k in range(start, len(_DIAG_ZERO)):
        masks = forced_zero_masks(red.program, sol.values, _DIAG_ZERO[k])
        if masks:
            return masks, k
    return {}, len(_DIAG_ZERO)


def _add_times(out: ProgramOutcome, sol: NumericSolution) -> None:
    out.timings["assembly"] += sol.assembly_time
    out.timings["compile"] += sol.build_time + sol.compile_time
    out.timings["solve"] += sol.solve_time


def solve_exactly(
    program: SearchProgram,
    *,
    solver: str | None = None,
    ladder: Sequence[int] = DENOMINATOR_LADDER,
    facial_rounds: int = 3,
) -> ProgramOutcome:
    """Solve numerically, round exactly, reduce and retry; ``program`` itself is never changed."""
    order = [pick_solver(program, solver)]
    order += [s for s in SOLVER_SETTINGS if s not in order]
    out = ProgramOutcome(None, None)
    out.timings = {"assembly": 0.0, "compile": 0.0, "solve": 0.0, "exact": 0.0}
    reasons: list[str] = []
    red = Reduction(program, program, {})
    rounds = tol = k = 0
    while k < len(order):
        name = order[k]
        cur = red.program
        sol = solve_program(cur, name, margin=True)
        _add_times(out, sol)
        _sanitise(cur, sol)
        if sol.status in ("infeasible", "unbounded") or not sol.usable:
            out.attempts.append(Attempt(name, _size(cur), sol.status, sol.margin, sol.message))
            if red.keep and sol.status == "infeasible":
                reasons.append(f"{name}: reduced bases infeasible ({sol.message}); undone")
                red, rounds = Reduction(program, program, {}), facial_rounds
            else:
                reasons.append(f"{name}: {sol.status} ({sol.message})")
                if sol.status == "infeasible":
                    break
            k += 1
            continue
        margin = sol.margin if sol.margin is not None else 0.0
        bases = {u.name: u.basis.copy() for u in cur.unknowns if isinstance(u, SosPoly)}
        out.numerics.append((sol, bases))
        t0 = time.perf_counter()
        exact = round_program(cur, sol, ladder)
        if exact.ok and red.keep:
            exact = _lift(red, exact)
        out.timings["exact"] += time.perf_counter() - t0
        if exact.ok:
            out.attempts.append(Attempt(name, _size(cur), sol.status, margin, "exact solution"))
            out.exact = exact
            return out
        msg = f"rounding failed ({exact.reason})"
        if sol.status == "inaccurate":
            msg = f"solver inaccurate; {msg}"
        out.attempts.append(Attempt(name, _size(cur), sol.status, margin, msg))
        reasons.append(f"{name}: {msg}")
        masks: dict[str, np.ndarray] = {}
        if rounds < facial_rounds:
            masks, tol = _next_masks(red, sol, tol)
        if masks:
            rounds += 1
            red = _compose(program, red, masks)
            size = _size(red.program)
            reasons.append(f"facial reduction {rounds}: Gram bases now {size} monomials in all")
            continue
        k += 1
    out.reason = "; ".join(reasons) or "no solution found"
    return out
