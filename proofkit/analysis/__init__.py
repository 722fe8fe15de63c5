"""Exact equilibria, linearization, Routh–Hurwitz and the Lyapunov equation.

``survey(model)`` is the entry point: every equilibrium of
``model.at_nominal()`` with its exact Jacobian, characteristic polynomial,
Routh array, verdict (Lyapunov's indirect method), type, and for stable
points the exact quadratic Lyapunov function; plus a completeness statement.

Modules: ``algebraic`` (exact real fields Q(alpha), exact signs), ``kpoly``
(polynomials over them: gcd, Sturm, Cauchy index), ``routh`` (the Routh array
with both special cases, exact root counts), ``lyapunov`` (A'P + PA = -Q),
``equilibria`` (Groebner bases and the quotient algebra), ``intervals`` and
``boxsearch`` (certified ball arithmetic, Krawczyk), ``finding`` (which
method, which box), ``surveying`` (the survey), ``claims`` (claim checks),
``parametric`` (stability over parameter boxes), ``display`` (inspect's
table and JSON).

``linear`` is the one exact kernel outside the audit (characteristic
polynomial, Routh array, Lyapunov equation over Q and Q(sqrt d)); the
survey and the linearization prover both use it.

May import: sympy, python-flint, numpy (display only), the model. Nothing here
imports ``proofkit.audit`` or decides a sign, an equality or a verdict from
floating point.
"""

from proofkit.analysis.claims import ClaimCheck, check_claim
from proofkit.analysis.equilibria import FoundPoint, Limits
from proofkit.analysis.finding import find_equilibria
from proofkit.analysis.lyapunov import LyapunovSolution, solve_lyapunov
from proofkit.analysis.parametric import ParametricResult, parametric_stability
from proofkit.analysis.routh import RouthArray, routh_array
from proofkit.analysis.surveying import EquilibriumReport, Survey, survey

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
