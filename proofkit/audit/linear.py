"""Schemas for Lyapunov's indirect method: an exact Jacobian and an exact Routh array.

``indirect-method-stability``: if every eigenvalue of the Jacobian at an
equilibrium has negative real part, the equilibrium is locally exponentially
stable. ``indirect-method-instability``: if some eigenvalue has positive real
part, it is unstable. Routh's theorem counts the roots in the right half plane
when the array is regular. Both are nominal evidence: they prove nominal-scope
claims, and refute a claim of either scope (the nominal values lie in every
range).

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, and never use floating point.
"""

from __future__ import annotations

from proofkit.audit.algebra import (
    Matrix,
    char_poly,
    ldl_pivots,
    mat_add,
    matmul,
    poly_derivative,
    poly_eval,
    routh_rows,
    shift_and_multiply,
    sign_changes,
    transpose,
)
from proofkit.audit.numbers import FormatError, Num
from proofkit.audit.read import get, only_keys, read_matrix, read_number, read_vector
from proofkit.audit.schemas import (
    Checks,
    ClaimData,
    ModelData,
    equilibrium_point,
    nominal_field,
    require,
    schema,
)

__all__ = ["MAX_MULTIPLIER_POWER", "linear_stable", "linear_unstable"]

MAX_MULTIPLIER_POWER = 4
EVIDENCE_KEYS = {"jacobian", "characteristic_polynomial", "routh", "lyapunov"}
BOTH = ("nominal", "range")


def _routh(claim: ClaimData, model: ModelData, checks: Checks) -> tuple[Matrix, Num, int, Matrix]:
    """The shared part: point, Jacobian, characteristic polynomial, Routh array."""
    ev, w, d = claim.evidence, f"{claim.where}.evidence", claim.d
    only_keys(ev, EVIDENCE_KEYS, w)
    n = len(model.states)
    point = equilibrium_point(model, claim, rational=False, local=True)
    checks.ok("the point is an exact zero of every component of the vector field")
    if model.conditions:
        checks.ok("every condition where the field is defined holds strictly at the point")
    field = [{e: Num(c.a, c.b, d) for e, c in fi.items()} for fi in nominal_field(model, point)]
    jac_stated = read_matrix(get(ev, "jacobian", list, w), d, f"{w}.jacobian", n)
    jac = [[poly_eval(poly_derivative(fi, j), point) for j in range(n)] for fi in field]
    require(jac == jac_stated, "jacobian", "the stated Jacobian differs from df/dx at the point")
    checks.ok("the Jacobian equals df/dx at the point (recomputed)")
    cp_stated = read_vector(get(ev, "characteristic_polynomial", list, w), d, f"{w}.cp", n + 1)
    cp = char_poly(jac)
    require(cp == cp_stated, "characteristic polynomial", "differs from det(sI - J)")
    checks.ok("the characteristic polynomial equals det(sI - J) (recomputed)")
    ro, rw = get(ev, "routh", dict, w), f"{w}.routh"
    only_keys(ro, {"shift", "multiplier_power", "polynomial", "rows", "sign_changes"}, rw)
    shift = read_number(get(ro, "shift", (str, list), rw), d, f"{rw}.shift")
    power = get(ro, "multiplier_power", int, rw)
    require(0 <= power <= MAX_MULTIPLIER_POWER, "routh", f"multiplier power {power} not allowed")
    require(shift.sign() >= 0, "routh", "the shift must be >= 0")
    q = shift_and_multiply(cp, shift, power)
    q_stated = read_vector(get(ro, "polynomial", list, rw), d, f"{rw}.polynomial", n + 1 + power)
    require(q == q_stated, "routh", "the stated polynomial is not (s+1)^k p(s + shift)")
    rows = routh_rows(q)
    require(rows is not None, "routh", "the Routh array is not regular (a zero in column one)")
    assert rows is not None
    stated_rows = get(ro, "rows", list, rw)
    require(len(stated_rows) == len(rows), "routh", "the stated Routh array has the wrong size")
    rows_stated = [read_vector(r, d, f"{rw}.rows[{i}]") for i, r in enumerate(stated_rows)]
    require(rows == rows_stated, "routh", "the stated Routh array differs from the recomputed one")
    changes = sign_changes([r[0] for r in rows])
    require(
        changes == get(ro, "sign_changes", int, rw),
        "routh",
        f"the first column has {changes} sign changes, not the stated number",
    )
    checks.ok(
        f"the Routh array of the degree-{len(q) - 1} polynomial is regular; its first column "
        f"has {changes} sign changes (recomputed)"
    )
    return jac, shift, power, rows


def _lyapunov_matrices(data: object, jac: Matrix, d: int, checks: Checks, where: str) -> None:
    """A'P + PA = -Q with P and Q symmetric positive definite (exact LDL')."""
    if not isinstance(data, dict):
        raise FormatError(f"{where}: expected an object with P and Q")
    only_keys(data, {"P", "Q"}, where)
    n = len(jac)
    p = read_matrix(get(data, "P", list, where), d, f"{where}.P", n)
    q = read_matrix(get(data, "Q", list, where), d, f"{where}.Q", n)
    for name, m in (("P", p), ("Q", q)):
        require(m == transpose(m), "lyapunov", f"{name} is not symmetric")
        res = ldl_pivots(m)
        require(not isinstance(res, str), "lyapunov", f"{name} is not positive definite: {res}")
        assert not isinstance(res, str)
        require(all(x.sign() > 0 for x in res[0]), "lyapunov", f"{name} is singular")
    lhs = mat_add(matmul(transpose(jac), p), matmul(p, jac))
    require(lhs == [[-x for x in r] for r in q], "lyapunov", "A'P + PA differs from -Q")
    checks.ok("A'P + PA = -Q holds exactly with P > 0 and Q > 0 (exact LDL')")


@schema("stable", "linearization", "indirect-method-stability")
@schema("unstable", "linearization", "indirect-method-stability", scopes=BOTH, refutes=True)
def linear_stable(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """Hypothesis: every root of det(sI - J) has negative real part (Routh–Hurwitz)."""
    jac, shift, power, rows = _routh(claim, model, checks)
    require(shift.is_zero() and power == 0, "theorem", "stability needs the array of p itself")
    require(
        all(r[0].sign() > 0 for r in rows),
        "theorem",
        "a first-column entry is not positive: the Jacobian is not Hurwitz",
    )
    checks.ok("all first-column entries are positive: every eigenvalue has negative real part")
    if "lyapunov" in claim.evidence:
        w = f"{claim.where}.evidence.lyapunov"
        _lyapunov_matrices(claim.evidence["lyapunov"], jac, claim.d, checks, w)


@schema("unstable", "linearization", "indirect-method-instability")
@schema("stable", "linearization", "indirect-method-instability", scopes=BOTH, refutes=True)
def linear_unstable(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """Hypothesis: some root of det(sI - J) has positive real part (Routh's count)."""
    require("lyapunov" not in claim.evidence, "evidence", "a Lyapunov matrix proves stability")
    _, shift, _, rows = _routh(claim, model, checks)
    changes = sign_changes([r[0] for r in rows])
    require(changes >= 1, "theorem", "no sign change: no root in the right half plane shown")
    where_roots = "> 0" if shift.is_zero() else f"> {shift} > 0"
    checks.ok(f"{changes} root(s) of det(sI - J) have real part {where_roots}: J is not stable")
