"""Sum-of-squares search: sparse exact polynomials, monomial bases, program assembly, solvers.

Public names
------------
``decompose(p, variables)``
    exact SOS certificate of one polynomial (``Decomposition`` with ``found``,
    ``basis``, ``gram``, ``squares()``, ``reason``, ``attempts``, ``timings``).
``SearchProgram``
    programs whose unknowns are polynomials: ``free``/``free_of_degree``
    (free polynomials), ``sos``/``sos_of_degree``/``require_sos`` (Gram
    unknowns), ``scalar``, ``level`` (a fixed rational the solver receives as a
    parameter, e.g. a sublevel value per bisection step), ``equate`` (linear
    polynomial identities), ``minimize``/``maximize``. Expressions
    (``PolyExpr``) support ``+ - *`` with fixed polynomials and levels,
    ``diff`` and ``lie`` (Lie derivative along a vector field).
``solve_program(program, solver)``
    cvxpy with ``"clarabel"`` or ``"scs"``; returns ``NumericSolution`` with an
    honest ``status``: solved, inaccurate, infeasible, unbounded or failed.
``full_basis``, ``newton_basis``, ``prune_diagonal``
    monomial bases as exponent arrays.
``PolySpace``
    sympy <-> FLINT ``fmpq_mpoly`` conversion without ``expand``.

The exact side (rounding, projection, LDL', checks) lives in
:mod:`proofkit.exact`. Nothing here declares anything proved: only
:mod:`proofkit.exact` checks do.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from proofkit.sos.basis import full_basis, newton_basis, prune_diagonal
from proofkit.sos.poly import PolySpace
from proofkit.sos.program import (
    FreePoly,
    Level,
    PolyExpr,
    Scalar,
    SearchProgram,
    SosPoly,
    Unknown,
)
from proofkit.sos.solve import DEFAULT_SOLVER, NumericSolution, solve_program

if TYPE_CHECKING:  # imported lazily below: decompose depends on proofkit.exact
    from proofkit.sos.certify import Attempt, Decomposition, decompose

__all__ = [
    "DEFAULT_SOLVER",
    "Attempt",
    "Decomposition",
    "FreePoly",
    "Level",
    "NumericSolution",
    "PolyExpr",
    "PolySpace",
    "Scalar",
    "SearchProgram",
    "SosPoly",
    "Unknown",
    "decompose",
    "full_basis",
    "newton_basis",
    "prune_diagonal",
    "solve_program",
]

_LAZY = {"Attempt", "Decomposition", "decompose"}


def __getattr__(name: str) -> object:
    if name in _LAZY:
        import importlib

        _mod = importlib.import_module("proofkit.sos.certify")

        return getattr(_mod, name)
    raise AttributeError(f"module 'proofkit.sos' has no attribute {name!r}")
