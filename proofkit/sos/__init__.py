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
    cvxpy with ``"clarabel"``, ``"scs"`` or ``"auto"`` (default, see ``pick_solver``);
    returns ``NumericSolution`` with an
    honest ``status``: solved, inaccurate, infeasible, unbounded or failed.
``solve_exactly(program)``
    the rounding/facial-reduction ladder for any program; ``ProgramOutcome``
    with ``found``, ``exact`` (an :class:`proofkit.exact.ExactSolution`),
    ``reason``, ``attempts``, ``timings``.
``full_basis``, ``newton_basis``, ``prune_diagonal``
    monomial bases as exponent arrays.
``PolySpace``
    sympy <-> FLINT ``fmpq_mpoly`` conversion without ``expand``.

The exact side (rounding, projection, LDL', checks) lives in
:mod:`proofkit.exact`. Nothing here declares anything proved: only
:mod:`proofkit.exact` checks do.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from proofkit.sos.basis import full_basis, newton_basis, prune_diagonal
    from proofkit.sos.certify import (
        Attempt,
        Decomposition,
        ProgramOutcome,
        decompose,
        solve_exactly,
    )
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
    from proofkit.sos.solve import DEFAULT_SOLVER, NumericSolution, pick_solver, solve_program

# Names are loaded on first use so that importing a light sub-module (e.g.
# proofkit.sos.poly from proofkit.exact) does not pull in cvxpy.
_WHERE = {
    "full_basis": "basis",
    "newton_basis": "basis",
    "prune_diagonal": "basis",
    "Attempt": "certify",
    "Decomposition": "certify",
    "ProgramOutcome": "certify",
    "decompose": "certify",
    "solve_exactly": "certify",
    "PolySpace": "poly",
    "FreePoly": "program",
    "Level": "program",
    "PolyExpr": "program",
    "Scalar": "program",
    "SearchProgram": "program",
    "SosPoly": "program",
    "Unknown": "program",
    "DEFAULT_SOLVER": "solve",
    "pick_solver": "solve",
    "NumericSolution": "solve",
    "solve_program": "solve",
}

__all__ = [
    "DEFAULT_SOLVER",
    "Attempt",
    "Decomposition",
    "FreePoly",
    "Level",
    "NumericSolution",
    "PolyExpr",
    "PolySpace",
    "ProgramOutcome",
    "Scalar",
    "SearchProgram",
    "SosPoly",
    "Unknown",
    "decompose",
    "full_basis",
    "newton_basis",
    "pick_solver",
    "prune_diagonal",
    "solve_exactly",
    "solve_program",
]


def __getattr__(name: str) -> object:
    if name in _WHERE:
        return getattr(importlib.import_module(f"proofkit.sos.{_WHERE[name]}"), name)
    raise AttributeError(f"module 'proofkit.sos' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_WHERE))
