"""Exact LDL' positivity check of a symmetric rational matrix.

``ldl_psd(Q)`` decides exactly whether ``Q`` is positive semidefinite and, if
so, returns ``L`` (unit lower triangular) and ``D`` (nonnegative diagonal)
over QQ with ``Q = L diag(D) L'``; otherwise the reason (a negative pivot, or
a zero pivot whose column is not zero), naming the row.

Fast path: the matrix is scaled to integers and factored fraction-free by
FLINT (``fmpz_mat`` fflu = Bareiss elimination). When no row exchange was
needed its pivots are the leading principal minors ``M_k`` and
``d_k = M_k / M_{k-1}``, ``L_ik = a^(k)_ik / M_k``. Otherwise a plain rational
LDL' with the zero-pivot rule runs. This module must never use floats.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import flint
import numpy as np

from proofkit.sos.poly import to_fmpq

__all__ = ["LdlResult", "ldl_psd"]


@dataclass
class LdlResult:
    """Outcome of the exact check; ``L``/``D`` only when ``psd`` (``L`` built on first use)."""

    psd: bool
    _L: list[list[flint.fmpq]] | None = None
    D: list[flint.fmpq] | None = None
    reason: str | None = None
    row: int | None = None
    _fflu: tuple[object, list] | None = field(default=None, repr=False)

    @property
    def L(self) -> list[list[flint.fmpq]] | None:
        if self._L is None and self._fflu is not None:
            lu, minors = self._fflu
            n = len(minors)
            one, zero = flint.fmpq(1), flint.fmpq(0)
            self._L = [
                [flint.fmpq(lu[i, k], minors[k]) for k in range(i)] + [one] + [zero] * (n - i - 1)
                for i in range(n)
            ]
        return self._L

    @property
    def positive_definite(self) -> bool:
        return self.psd and self.D is not None and all(d > 0 for d in self.D)


def _as_rows(q: object) -> list[list[flint.fmpq]]:
    if isinstance(q, flint.fmpq_mat):
        return [[q[i, j] for j in range(q.ncols())] for i in range(q.nrows())]
    if hasattr(q, "tolist") and not isinstance(q, np.ndarray):  # sympy Matrix
        return [[to_fmpq(x) for x in row] for row in q.tolist()]
    return [[to_fmpq(x) for x in row] for row in q]  # type: ignore[union-attr]


def ldl_psd(q: object, names: Sequence[str] | Callable[[int], str] | None = None) -> LdlResult:
    """Exact PSD decision with factors; ``names`` label rows in the reason (e.g. monomials).

    ``names`` may be a callable ``row -> name`` so that names are made only when needed.
    """
    rows = _as_rows(q)
    n = len(rows)
    if any(len(r) != n for r in rows):
        return LdlResult(False, reason="matrix is not square")
    if callable(names):
        label = lambda i: f"row {i} ({names(i)})"  # noqa: E731
    elif names:
        label = lambda i: f"row {i} ({names[i]})"  # noqa: E731
    else:
        label = lambda i: f"row {i}"  # noqa: E731
    if n == 0:
        return LdlResult(True, _L=[], D=[])
    mq = flint.fmpq_mat(rows)
    if mq != mq.transpose():
        for i in range(n):
            for j in range(i):
                if rows[i][j] != rows[j][i]:
                    return LdlResult(False, reason=f"matrix is not symmetric at {label(i)}", row=i)
    mz, den = mq.numer_denom()  # integer matrix over one common denominator
    lu, _d, perm, rank = mz._fflu()
    if list(perm) == list(range(n)) and rank == n:
        minors = [lu[k, k] for k in range(n)]
        for k, m in enumerate(minors):
            if m < 0:
                return LdlResult(False, reason=f"negative pivot at {label(k)}", row=k)
        dvals = [flint.fmpq(minors[0], den)] + [
            flint.fmpq(minors[k], minors[k - 1] * den) for k in range(1, n)
        ]
        return LdlResult(True, D=dvals, _fflu=(lu, minors))
    return _ldl_plain(rows, label)


def _ldl_plain(rows: list[list[flint.fmpq]], label) -> LdlResult:
    """Rational LDL' without pivoting, skipping zero pivots whose column is zero."""
    n = len(rows)
    s = np.array(rows, dtype=object)
    lmat = [[flint.fmpq(int(i == k)) for k in range(n)] for i in range(n)]
    dvals: list[flint.fmpq] = []
    zero = flint.fmpq(0)
    for k in range(n):
        p = s[k, k]
        col = s[k + 1 :, k]
        if p < 0:
            return LdlResult(False, reason=f"negative pivot at {label(k)}", row=k)
        if p == 0:
            if any(c != 0 for c in col):
                return LdlResult(
                    False, reason=f"zero pivot with nonzero column at {label(k)}", row=k
                )
            dvals.append(zero)
            continue
        dvals.append(p)
        ratio = col / p
        for i, r in enumerate(ratio):
            lmat[k + 1 + i][k] = r
        s[k + 1 :, k + 1 :] = s[k + 1 :, k + 1 :] - np.outer(ratio, col)
    return LdlResult(True, _L=lmat, D=dvals)
