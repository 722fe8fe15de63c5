"""Numerical solution of a :class:`SearchProgram` with cvxpy (Clarabel or SCS).

One vectorised equality constraint per identity (``sum A_u @ vec(u) == b``),
one PSD constraint per Gram matrix, optionally with a common margin ``t``
(``Q - t I`` PSD, ``t`` maximised, capped) to land strictly inside the cone so
that exact rounding can succeed. The result reports the solver's status
honestly: solved, inaccurate, infeasible (also when the best margin is
negative: no PSD Gram matrices exist), unbounded or failed. The compiled cvxpy
problem is cached on the program (levels are cvxpy Parameters), so a
bisection over a level re-solves without rebuilding.

Floating-point output is a hint for :mod:`proofkit.exact`, never evidence;
this module must never report that anything is proved, and never import
:mod:`proofkit.exact`.
"""

from __future__ import annotations

import time
import warnings
from dataclasses import dataclass, field

import cvxpy as cp
import numpy as np

from proofkit.sos.program import Identity, Scalar, SearchProgram, SosPoly

__all__ = [
    "AUTO_CLARABEL_MAX_GRAM",
    "DEFAULT_SOLVER",
    "MARGIN_INFEASIBLE",
    "SOLVER_SETTINGS",
    "NumericSolution",
    "pick_solver",
    "solve_program",
]

#: Chosen from tests/perf/bench_sos.py (see tests/perf/README.md).
#: "auto": Clarabel (interior point, accurate on degenerate programs) while the largest
#: Gram matrix is small, SCS (first order, far faster on big PSD blocks) above that.
DEFAULT_SOLVER = "auto"
AUTO_CLARABEL_MAX_GRAM = 20

#: Accuracy settings per solver (tight: rounding needs accurate interior points).
SOLVER_SETTINGS: dict[str, dict[str, object]] = {
    "clarabel": {
        "tol_gap_abs": 1e-9,
        "tol_gap_rel": 1e-9,
        "tol_feas": 1e-9,
        "max_iter": 200,
    },
    "scs": {"eps_abs": 1e-9, "eps_rel": 1e-9, "max_iters": 20000, "acceleration_lookback": 10},
}


def pick_solver(program: SearchProgram, solver: str | None = None) -> str:
    """The concrete solver for ``solver`` (``None``/"auto" chooses by Gram size)."""
    name = (solver or DEFAULT_SOLVER).lower()
    if name != "auto":
        return name
    biggest = max((u.size for u in program.unknowns if isinstance(u, SosPoly)), default=0)
    return "clarabel" if biggest <= AUTO_CLARABEL_MAX_GRAM else "scs"


_STATUS = {
    cp.OPTIMAL: "solved",
    cp.OPTIMAL_INACCURATE: "inaccurate",
    cp.INFEASIBLE: "infeasible",
    cp.INFEASIBLE_INACCURATE: "infeasible",
    cp.UNBOUNDED: "unbounded",
    cp.UNBOUNDED_INACCURATE: "unbounded",
}


@dataclass
class NumericSolution:
    """What the solver returned, in the program's own unknowns (floats)."""

    status: str  # solved | inaccurate | infeasible | unbounded | failed
    solver: str
    values: dict[str, np.ndarray] = field(default_factory=dict)
    margin: float | None = None
    objective: float | None = None
    message: str = ""
    assembly_time: float = 0.0
    build_time: float = 0.0  # building the cvxpy expressions
    compile_time: float = 0.0  # cvxpy canonicalisation and solver set-up
    solve_time: float = 0.0

    @property
    def usable(self) -> bool:
        """Values are present and finite (worth trying to round, whatever the status)."""
        return bool(self.values) and all(np.all(np.isfinite(v)) for v in self.values.values())


def _identity_constraint(
    ident: Identity, var: dict[int, cp.Expression], par: dict[int, cp.Parameter]
):
    lhs = 0
    rhs = 0
    for blk in ident.blocks:
        if blk.unknown is None:
            col = -np.asarray(blk.matrix.todense()).ravel()
            rhs = rhs + (col if blk.level is None else par[blk.level.lid] * col)
            continue
        if blk.unknown.ncols == 0:
            continue
        term = blk.matrix @ var[blk.unknown.uid]
        lhs = lhs + (term if blk.level is None else par[blk.level.lid] * term)
    if isinstance(lhs, int):
        if isinstance(rhs, int) or not np.any(rhs if isinstance(rhs, np.ndarray) else 1):
            return None
        lhs = cp.Constant(np.zeros(ident.monomials.shape[0]))
    if isinstance(rhs, int):
        rhs = np.zeros(ident.monomials.shape[0])
    return lhs == rhs


#: A maximised margin below this, relative to the largest Gram entry (at least 1),
#: means no PSD Gram matrices exist (numerically). Programs without an interior
#: point are solved only to about the square root of the solver tolerance.
MARGIN_INFEASIBLE = -1e-7


def _negative_margin(program: SearchProgram, out: NumericSolution) -> bool:
    if out.margin is None:
        return False
    scale = 1.0
    for u in program.unknowns:
        v = out.values.get(u.name)
        if isinstance(u, SosPoly) and v is not None and v.size:
            scale = max(scale, float(np.abs(v).max()))
    return out.margin < MARGIN_INFEASIBLE * scale


@dataclass
class _Compiled:
    """A cvxpy problem built once per program structure; levels are its Parameters."""

    problem: cp.Problem
    mats: dict[int, cp.Variable]
    margin: cp.Variable | None
    params: dict[int, cp.Parameter]


def _variables(program: SearchProgram, t: cp.Variable | None) -> tuple[dict, dict, list]:
    var: dict[int, cp.Expression] = {}
    mats: dict[int, cp.Variable] = {}
    cons: list = []
    for u in program.unknowns:
        if isinstance(u, SosPoly):
            if u.size == 0:
                continue
            q = cp.Variable((u.size, u.size), symmetric=True, name=u.name)
            mats[u.uid] = q
            var[u.uid] = cp.vec(q, order="F")
            cons.append(q - t * np.eye(u.size) >> 0 if t is not None else q >> 0)
        elif isinstance(u, Scalar):
            v = cp.Variable(name=u.name)
            mats[u.uid] = v
            var[u.uid] = cp.reshape(v, (1,), order="F")
        else:
            v = cp.Variable(u.ncols, name=u.name)
            mats[u.uid] = v
            var[u.uid] = v
    return var, mats, cons


def _compile(program: SearchProgram, margin: bool, cap: float, weight: float) -> _Compiled:
    """The cvxpy problem of ``program``: identities, PSD cones, objective, margin."""
    t = cp.Variable(name="margin") if margin else None
    var, mats, cons = _variables(program, t)
    par = {lv.lid: cp.Parameter(name=lv.name, value=float(lv.value)) for lv in program.levels}
    for ident in program.identities:
        c = _identity_constraint(ident, var, par)
        if c is not None:
            cons.append(c)
    user = 0
    if program.objective is not None:
        sense, weights = program.objective
        user = sum(float(w) * mats[uid] for uid, w in weights.items())
        if sense == "max":
            user = -user
    if t is None:
        obj = cp.Minimize(user)
    elif program.objective is not None:
        # the objective may not trade PSD-ness for a better value: margin >= 0
        cons += [t <= cap, t >= 0]
        obj = cp.Minimize(user - weight * t)
    else:
        cons.append(t <= cap)
        obj = cp.Minimize(-t)
    return _Compiled(cp.Problem(obj, cons), mats, t, par)


def _read_values(program: SearchProgram, comp: _Compiled, out: NumericSolution) -> None:
    """Copy the solver's values into ``out`` (status ``failed`` when any is missing)."""
    for u in program.unknowns:
        if u.uid not in comp.mats:
            out.values[u.name] = np.zeros((0, 0))
            continue
        val = comp.mats[u.uid].value
        if val is None:
            out.status = "failed"
            out.message += f"; no value for {u.name}"
            out.values = {}
            return
        shape = (u.size, u.size) if isinstance(u, SosPoly) else (-1,)
        out.values[u.name] = np.array(val, dtype=float).reshape(shape)


def _invoke(prob: cp.Problem, solver: str, opts: dict, out: NumericSolution) -> bool:
    """Run the solver; fill status, message and times. True when values are worth reading."""
    t0 = time.perf_counter()
    try:
        with warnings.catch_warnings():  # "inaccurate" is reported in the status instead
            warnings.simplefilter("ignore", UserWarning)
            prob.solve(solver={"clarabel": cp.CLARABEL, "scs": cp.SCS}[solver], **opts)
    except (cp.error.SolverError, ValueError, ArithmeticError) as exc:
        out.message = f"solver error: {exc}"
        out.solve_time = time.perf_counter() - t0
        return False
    total = time.perf_counter() - t0
    stats = prob.solver_stats
    out.solve_time = float(stats.solve_time) if stats and stats.solve_time else total
    out.compile_time = max(0.0, total - out.solve_time)
    out.status = _STATUS.get(prob.status, "failed")
    out.message = f"cvxpy status {prob.status}"
    return out.status in ("solved", "inaccurate")


def solve_program(
    program: SearchProgram,
    solver: str | None = None,
    *,
    margin: bool = True,
    margin_cap: float = 1.0,
    margin_weight: float = 1e-3,
    settings: dict[str, object] | None = None,
) -> NumericSolution:
    """Assemble (if needed) and solve numerically; never raises for solver trouble.

    The cvxpy problem is cached on the program per structure (``program.version``)
    and margin options; a program whose only change is a level value (bisection)
    is re-solved with new Parameter values, without rebuilding. Without an
    objective the smallest Gram eigenvalue margin is maximised, and a best
    margin below ``MARGIN_INFEASIBLE`` (relative) is reported as ``infeasible``; with an
    objective the margin is kept nonnegative, so every answer has PSD Gram
    matrices up to the solver's tolerance.
    """
    solver = pick_solver(program, solver)
    if solver not in SOLVER_SETTINGS:
        raise ValueError(f"unknown solver {solver!r}; choose one of {sorted(SOLVER_SETTINGS)}")
    asm = program.assemble()
    t_build = time.perf_counter()
    key = ("cvxpy", program.version, margin, margin_cap, margin_weight)
    comp = program.solver_cache.get(key)
    if not isinstance(comp, _Compiled):
        comp = _compile(program, margin, margin_cap, margin_weight)
        program.solver_cache[key] = comp
    for lv in program.levels:
        comp.params[lv.lid].value = float(lv.value)
    opts = dict(SOLVER_SETTINGS[solver])
    opts.update(settings or {})
    out = NumericSolution(status="failed", solver=solver, assembly_time=asm)
    out.build_time = time.perf_counter() - t_build
    if _invoke(comp.problem, solver, opts, out):
        _read_values(program, comp, out)
        if comp.margin is not None and comp.margin.value is not None:
            out.margin = float(comp.margin.value)
        prob = comp.problem
        out.objective = float(prob.value) if prob.value is not None else None
        if out.status != "failed" and not out.usable:
            out.status = "failed"
            out.message += "; non-finite values"
    solved = out.status in ("solved", "inaccurate")
    if solved and program.objective is None and _negative_margin(program, out):
        out.message = (
            f"best margin {out.margin:.3g} < 0: no PSD Gram matrices with these bases "
            f"(numerically; {out.message})"
        )
        out.status = "infeasible"
    return out
