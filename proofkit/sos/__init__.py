"""Sum-of-squares search: sparse exact polynomials, monomial bases, program assembly, solvers.

Public names
------------
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
    returns ``NumericSolution`` with an honest ``status``: solved, inaccurate,
    infeasible (also when the best Gram margin is negative), unbounded or
    failed. The cvxpy problem is cached per program structure; a level change
    (``Level.set``) is re-solved without rebuilding it.
``drop_monomials``, ``Reduction``, ``forced_zero_masks``
    reductions returning a NEW program plus the inverse data (``lift_numeric``).
``full_basis``, ``newton_basis``, ``prune_diagonal``
    monomial bases as exponent arrays.
``PolySpace``
    sympy <-> FLINT ``fmpq_mpoly`` conversion without ``expand``.

The exact side (rounding, projection, LDL', facial reduction, checks, the
ladder ``solve_exactly`` and ``decompose``) lives in :mod:`proofkit.exact`,
which builds on this package; no module here imports it. Nothing here
declares anything proved.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING

if TYPE_CHECKING:
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
    from proofkit.sos.reduce import Reduction, drop_monomials, forced_zero_masks
    from proofkit.sos.solve import DEFAULT_SOLVER, NumericSolution, pick_solver, solve_program

# Names are loaded on first use so that importing a light sub-module (e.g.
# proofkit.sos.poly from proofkit.exact) does not pull in cvxpy.
_WHERE = {
    "full_basis": "proofkit.sos.basis",
    "newton_basis": "proofkit.sos.basis",
    "prune_diagonal": "proofkit.sos.basis",
    "PolySpace": "proofkit.sos.poly",
    "FreePoly": "proofkit.sos.program",
    "Level": "proofkit.sos.program",
    "PolyExpr": "proofkit.sos.program",
    "Scalar": "proofkit.sos.program",
    "SearchProgram": "proofkit.sos.program",
    "SosPoly": "proofkit.sos.program",
    "Unknown": "proofkit.sos.program",
    "Reduction": "proofkit.sos.reduce",
    "drop_monomials": "proofkit.sos.reduce",
    "forced_zero_masks": "proofkit.sos.reduce",
    "DEFAULT_SOLVER": "proofkit.sos.solve",
    "pick_solver": "proofkit.sos.solve",
    "NumericSolution": "proofkit.sos.solve",
    "solve_program": "proofkit.sos.solve",
}
__all__ = [
    "DEFAULT_SOLVER",
    "FreePoly",
    "Level",
    "NumericSolution",
    "PolyExpr",
    "PolySpace",
    "Reduction",
    "Scalar",
    "SearchProgram",
    "SosPoly",
    "Unknown",
    "drop_monomials",
    "forced_zero_masks",
    "full_basis",
    "newton_basis",
    "pick_solver",
    "prune_diagonal",
    "solve_program",
]


def __getattr__(name: str) -> object:
    if name in _WHERE:
        return getattr(importlib.import_module(_WHERE[name]), name)
    raise AttributeError(f"module 'proofkit.sos' has no attribute {name!r}")


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(_WHERE))
