"""The exact Gram certificate check: ``p == b' G b`` expanded exactly, and ``G`` PSD by LDL'.

This is the evidence step for a single sum-of-squares claim. It takes sympy
or flint inputs, uses only exact rational arithmetic (FLINT polynomials, the
LDL' of :mod:`proofkit.exact.ldl`), and never looks at solver output.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import sympy as sp

from proofkit.exact.ldl import LdlResult, ldl_psd
from proofkit.sos.poly import PolySpace, to_fmpq

__all__ = ["GramCheck", "check_gram", "squares_from_ldl"]


@dataclass(frozen=True)
class GramCheck:
    """Verdict of :func:`check_gram`; ``ldl`` holds the factors when ``ok``."""

    ok: bool
    reason: str | None = None
    ldl: LdlResult | None = None


def check_gram(
    p: object, variables: Sequence[sp.Symbol], basis: Sequence[sp.Expr], gram: object
) -> GramCheck:
    """Exactly check ``p == basis' * gram * basis`` and that ``gram`` is PSD."""
    space = PolySpace(variables)
    target = space.coerce(p)
    polys = [space.coerce(m) for m in basis]
    rows = gram.tolist() if hasattr(gram, "tolist") else gram
    n = len(polys)
    if len(rows) != n or any(len(r) != n for r in rows):  # type: ignore[arg-type]
        return GramCheck(False, f"Gram matrix shape does not match the basis size {n}")
    entries = [[to_fmpq(x) for x in r] for r in rows]  # type: ignore[union-attr]
    form = space.zero()
    for i in range(n):
        acc = space.zero()
        for j in range(n):
            if entries[i][j] != 0:
                acc += polys[j] * entries[i][j]
        form += polys[i] * acc
    diff = form - target
    if not diff.is_zero():
        return GramCheck(False, f"identity fails: p - b'Gb has {len(diff)} nonzero terms")
    ldl = ldl_psd(entries, [str(m) for m in basis])
    if not ldl.psd:
        return GramCheck(False, f"Gram matrix is not PSD: {ldl.reason}", ldl)
    return GramCheck(True, None, ldl)


def squares_from_ldl(basis: Sequence[sp.Expr], ldl: LdlResult) -> list[tuple[sp.Rational, sp.Expr]]:
    """``[(d_k, q_k)]``, ``q_k = sum_i L_ik b_i``, so ``b'Gb = sum d_k q_k^2`` (no zero weights)."""
    if not ldl.psd or ldl.L is None or ldl.D is None:
        raise ValueError("no LDL' factors: the matrix was not shown PSD")
    out: list[tuple[sp.Rational, sp.Expr]] = []
    n = len(basis)
    for k in range(n):
        d = ldl.D[k]
        if d == 0:
            continue
        q = sp.Add(
            *[
                sp.Rational(int(ldl.L[i][k].p), int(ldl.L[i][k].q)) * basis[i]
                for i in range(k, n)
                if ldl.L[i][k] != 0
            ]
        )
        out.append((sp.Rational(int(d.p), int(d.q)), q))
    return out
