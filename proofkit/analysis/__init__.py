"""Exact equilibria, linearization, Routh–Hurwitz and the Lyapunov equation.

``survey(model)`` is the entry point: every equilibrium of
``model.at_nominal()`` with its exact Jacobian, characteristic polynomial,
Routh array, verdict (Lyapunov's indirect method), type, and for stable
points the exact quadratic Lyapunov function; plus a completeness statement.

Nothing here decides a sign, an equality or a verdict from floating point.
"""

from proofkit.analysis.equilibria import FoundPoint, Limits
from proofkit.analysis.lyapunov import LyapunovSolution, solve_lyapunov
from proofkit.analysis.parametric import ParametricResult, parametric_stability
from proofkit.analysis.routh import RouthArray, routh_array
from proofkit.analysis.surveying import (
    ClaimCheck,
    EquilibriumReport,
    Survey,
    check_claim,
    find_equilibria,
    survey,
)

__all__ = [
    "ClaimCheck",
    "EquilibriumReport",
    "FoundPoint",
    "Limits",
    "LyapunovSolution",
    "ParametricResult",
    "RouthArray",
    "Survey",
    "check_claim",
    "find_equilibria",
    "parametric_stability",
    "routh_array",
    "solve_lyapunov",
    "survey",
]
