"""Proofs of ``claim E stable`` / ``claim E unstable`` by Lyapunov's indirect method.

Builds the exact evidence the audit re-derives: the equilibrium point (in Q or
one quadratic field Q(sqrt(d))), the Jacobian, the characteristic polynomial,
a regular Routh array (of ``p(s)`` for stability; of ``(s+1)^k p(s+h)``,
``h >= 0``, for instability, to step around the special cases), and for
stability the solution P of ``A'P + PA = -I``.

Floating point is used only to choose the shift ``h`` (a hint); every stated
number is exact. This module never decides validity: the audit does.
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction
from typing import Any

import numpy as np
import sympy as sp

from proofkit.audit.algebra import (
    Matrix,
    Poly,
    char_poly,
    poly_derivative,
    poly_eval,
    routh_rows,
    shift_and_multiply,
    sign_changes,
)
from proofkit.audit.core import THEOREMS
from proofkit.audit.numbers import Num, write_number
from proofkit.certificate import NotRepresentable, num_from_sympy, quadratic_field
from proofkit.model import Claim, Model

__all__ = ["LinearizationResult", "prove_by_linearization", "solve_lyapunov_exact"]


@dataclass(frozen=True)
class LinearizationResult:
    """A certificate claim entry, plus a one-line detail for the user."""

    entry: dict[str, Any]
    detail: str


def _num_float(x: Num) -> float:
    return float(x.a) + float(x.b) * (x.d**0.5 if x.d else 0.0)


def _json_matrix(m: Matrix) -> list[list[Any]]:
    return [[write_number(x) for x in r] for r in m]


def solve_lyapunov_exact(a: Matrix, q: Matrix) -> Matrix | None:
    """Exact symmetric P with A'P + PA = -Q (Gaussian elimination over Num); None if singular."""
    n = len(a)
    idx = [(i, j) for i in range(n) for j in range(i, n)]
    pos = {ij: k for k, ij in enumerate(idx)}
    zero, m = Num.of(0), len(idx)

    def var(i: int, j: int) -> int:
        return pos[(min(i, j), max(i, j))]

    rows: list[list[Num]] = []
    for i, j in idx:  # entry (i, j) of A'P + PA = sum_k a_ki p_kj + p_ik a_kj
        row = [zero] * (m + 1)
        for k in range(n):
            row[var(k, j)] = row[var(k, j)] + a[k][i]
            row[var(i, k)] = row[var(i, k)] + a[k][j]
        row[m] = -q[i][j]
        rows.append(row)
    for col in range(m):
        piv = next((r for r in range(col, m) if not rows[r][col].is_zero()), None)
        if piv is None:
            return None
        rows[col], rows[piv] = rows[piv], rows[col]
        inv = Num.of(1) / rows[col][col]
        rows[col] = [x * inv for x in rows[col]]
        for r in range(m):
            if r != col and not rows[r][col].is_zero():
                f = rows[r][col]
                rows[r] = [x - f * y for x, y in zip(rows[r], rows[col], strict=True)]
    p = [[zero] * n for _ in range(n)]
    for (i, j), k in pos.items():
        p[i][j] = p[j][i] = rows[k][m]
    return p


def _routh_entry(q: list[Num], rows: Matrix, shift: Num, power: int) -> dict[str, Any]:
    return {
        "shift": write_number(shift),
        "multiplier_power": power,
        "polynomial": [write_number(c) for c in q],
        "rows": _json_matrix(rows),
        "sign_changes": sign_changes([r[0] for r in rows]),
    }


def _instability_routh(cp: list[Num]) -> dict[str, Any] | None:
    """A regular Routh array showing a root with Re s > h >= 0, or None."""
    roots = np.roots([_num_float(c) for c in cp]) if len(cp) > 1 else np.array([])
    max_re = float(max(roots.real)) if len(roots) else 0.0
    shifts = [Fraction(0)]
    if max_re > 1e-9:
        h = Fraction(max_re / 2).limit_denominator(1000)
        shifts += [h / 2**k for k in range(6) if h > 0]
    for h in shifts:
        for power in (0, 1, 2):
            q = shift_and_multiply(cp, Num.of(h, cp[0].d), power)
            rows = routh_rows(q)
            if rows is not None and sign_changes([r[0] for r in rows]) >= 1:
                return _routh_entry(q, rows, Num.of(h), power)
    return None


def prove_by_linearization(model: Model, field: list[Poly], claim: Claim) -> LinearizationResult:
    """Evidence for ``claim`` (kind stable/unstable) at its named equilibrium.

    ``model`` is at nominal parameters and ``field`` is its vector field as
    exact polynomials. A claim the linearization contradicts gets a "refuted"
    entry carrying the exact evidence for the opposite statement.
    """
    base = {"statement": claim.text, "kind": claim.kind}
    point_expr = model.equilibrium(claim.target or "").as_dict()
    values = [point_expr[s] for s in model.states]
    d = quadratic_field(values)
    if d is None:
        reason = (
            "the equilibrium is not in Q or a single quadratic field Q(sqrt(d)); "
            "higher-degree algebraic points are not supported by the certificate format"
        )
        return LinearizationResult({**base, "status": "not proved", "reason": reason}, reason)
    try:
        point = [num_from_sympy(v, d) for v in values]
    except NotRepresentable as exc:
        return LinearizationResult({**base, "status": "not proved", "reason": str(exc)}, str(exc))
    n = len(point)
    jac = [[poly_eval(poly_derivative(fi, j), point) for j in range(n)] for fi in field]
    cp = char_poly(jac)
    evidence: dict[str, Any] = {
        "equilibrium": claim.target,
        "point": [write_number(x) for x in point],
        "jacobian": _json_matrix(jac),
        "characteristic_polynomial": [write_number(c) for c in cp],
    }
    rows = routh_rows(cp)
    hurwitz = rows is not None and all(r[0].sign() > 0 for r in rows)
    instability = None if hurwitz else _instability_routh(cp)
    if hurwitz:
        assert rows is not None
        evidence["routh"] = _routh_entry(cp, rows, Num.of(0), 0)
        eye = [[Num.of(int(i == j)) for j in range(n)] for i in range(n)]
        p = solve_lyapunov_exact(jac, eye)
        if p is not None:
            evidence["lyapunov"] = {"P": _json_matrix(p), "Q": _json_matrix(eye)}
        shown, detail = "stable", "all roots of det(sI - J) have negative real part"
    elif instability is not None:
        evidence["routh"] = instability
        shown = "unstable"
        detail = f"{instability['sign_changes']} root(s) of det(sI - J) have positive real part"
    else:
        reason = (
            "the linearization does not decide: no root in the open right half plane "
            "was shown and not all roots lie in the open left half plane (eigenvalues "
            "on the imaginary axis); a nonlinear proof is needed"
        )
        return LinearizationResult({**base, "status": "not proved", "reason": reason}, reason)
    entry = {
        **base,
        "status": "proved" if shown == claim.kind else "refuted",
        "method": "linearization",
        "theorem": THEOREMS[(shown, "linearization")],
        "number_field": {"sqrt": str(d)} if d else None,
        "evidence": evidence,
    }
    if shown != claim.kind:
        detail = f"the claim is false: {detail}, so {claim.target} is {shown}"
    return LinearizationResult(entry, detail)


def field_polys(model: Model) -> list[Poly]:
    """The nominal vector field as exact sparse polynomials (rational coefficients)."""
    xs = model.state_symbols
    out = []
    for rhs in model.field:
        poly = sp.Poly(sp.expand(rhs), *xs)
        terms: Poly = {}
        for monom, c in poly.terms():
            if c == 0:
                continue
            if not c.is_Rational:
                raise NotRepresentable(f"coefficient {c} is not rational")
            terms[tuple(monom)] = Num(Fraction(int(c.p), int(c.q)))
        out.append(terms)
    return out
