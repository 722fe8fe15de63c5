"""Real zeros of a nonnegative polynomial, to high precision, and the relations they force.

If ``p = b' Q b`` with ``Q`` PSD and ``p(z) = 0`` then ``Q b(z) = 0``; a rational
``Q`` also kills ``b`` at every conjugate of ``z``. So every rational Gram matrix
has its range among the integer vectors ``r`` with ``r . b(z) = 0``. Those are
found by LLL on ``b(z)`` computed to 60 digits, where true relations (residual
near 1e-55) and chance ones (residual near 1e-40) are far apart; a Gram
kernel read off a floating-point solution is accurate only to about 1e-7 on
programs of singularity degree two, far too coarse for that.

Zeros are located by local minimisation from fixed random starts (floats),
then polished by Newton's method on the gradient in ``mpmath`` (with the
Hessian's pseudo-inverse, so a point on a curve of zeros is reached too; a
polynomial vanishing at a random point of an irreducible curve vanishes on all
of it). Everything here is a hint for the exact
check in :mod:`proofkit.exact.check`; nothing is evidence.
"""

from __future__ import annotations

from collections.abc import Sequence

import flint
import mpmath
import numpy as np
import sympy as sp

from proofkit.sos.poly import PolySpace

__all__ = ["real_zeros", "zero_relations"]

_DPS = 60
_SCALE = 40  # decimal digits kept for LLL


def real_zeros(space: PolySpace, target: flint.fmpq_mpoly, starts: int = 24) -> list[list]:
    """Isolated real zeros of ``target`` (assumed nonnegative) as ``mpmath`` vectors."""
    from scipy.optimize import minimize

    xs = list(space.variables)
    expr = space.to_sympy(target)
    grad = [sp.diff(expr, v) for v in xs]
    f = sp.lambdify([xs], expr, "numpy")
    g = sp.lambdify([xs], grad, "numpy")
    coef = max(abs(float(c)) for c in target.coeffs())
    rng = np.random.default_rng(7)
    cands: list[np.ndarray] = []
    for s in range(starts):
        x0 = rng.normal(size=len(xs)) * (0.5 + s % 4)
        with np.errstate(all="ignore"):
            res = minimize(
                f, x0, jac=lambda x: np.array(g(x), dtype=float), method="BFGS",
                options={"gtol": 1e-10, "maxiter": 400},
            )
        near = np.all(np.isfinite(res.x)) and abs(float(res.fun)) < 1e-7 * coef
        if near and all(np.linalg.norm(res.x - c) > 1e-4 * (1 + np.linalg.norm(c)) for c in cands):
            cands.append(res.x)
            if len(cands) >= 6:
                break
    if not cands:
        return []
    hess = sp.hessian(expr, xs)
    with mpmath.workdps(_DPS):
        fm = sp.lambdify([xs], expr, "mpmath")
        gm = sp.lambdify([xs], grad, "mpmath")
        hm = sp.lambdify([xs], hess, "mpmath")
        out: list[list] = []
        for c in cands:
            z = mpmath.matrix([mpmath.mpf(float(v)) for v in c])
            ok = False
            for _ in range(25):
                gz = mpmath.matrix(gm(list(z)))
                if mpmath.norm(gz) < mpmath.mpf(10) ** (-(_DPS - 8)) * coef:
                    ok = True
                    break
                # Newton with the pseudo-inverse of the Hessian: converges to a point of
                # a zero manifold too (curves of zeros, variables that do not occur).
                ev, vec = mpmath.eigsy(mpmath.matrix(hm(list(z))))
                big = max(abs(e) for e in ev)
                if big == 0:
                    break
                proj = vec.T * gz
                for i in range(len(xs)):
                    e = ev[i]
                    proj[i] = proj[i] / e if abs(e) > big * mpmath.mpf(10) ** (-25) else 0
                z = z - vec * proj
            if ok and abs(fm(list(z))) < mpmath.mpf(10) ** (-(_DPS - 12)) * coef:
                out.append([z[i] for i in range(len(xs))])
    return out


def zero_relations(
    basis: np.ndarray, wrows: Sequence[Sequence[object]], zeros: list[list]
) -> np.ndarray | None:
    """Integer rows ``C`` with ``C W b(z) = 0`` for every zero (rows of ``W`` = ``wrows``).

    Returns ``None`` when the zeros force nothing on this face.
    """
    r = len(wrows)
    if not zeros or r == 0:
        return None
    with mpmath.workdps(_DPS):
        w = [[mpmath.mpf(int(x.numerator)) / int(x.denominator) if hasattr(x, "numerator")
              else mpmath.mpf(x) for x in row] for row in wrows]
        cols = []
        for z in zeros:
            bz = [mpmath.fprod(z[i] ** int(e) for i, e in enumerate(row) if e) for row in basis]
            u = [mpmath.fsum(wi * bi for wi, bi in zip(wrow, bz, strict=True)) for wrow in w]
            top = max(abs(x) for x in u)
            if top < mpmath.mpf(10) ** -12 * max(1, *(abs(x) for x in bz)):
                continue  # b(z) ~ 0 on this face: its direction is noise
            cols.append([x / top for x in u])
        if not cols:
            return None
        scale = mpmath.mpf(10) ** _SCALE
        lat = [
            [int(i == j) for j in range(r)] + [int(mpmath.nint(col[i] * scale)) for col in cols]
            for i in range(r)
        ]
        red = flint.fmpz_mat(lat).lll()
        keep: list[np.ndarray] = []
        tiny = mpmath.mpf(10) ** (-(_DPS - 15))
        for i in range(red.nrows()):
            rel = [int(red[i, j]) for j in range(r)]
            if not any(rel) or max(abs(v) for v in rel) > 10**6:
                continue
            if all(abs(mpmath.fsum(c * x for c, x in zip(rel, col, strict=True))) < tiny
                   for col in cols):
                arr = np.array(rel, dtype=np.int64)
                if np.linalg.matrix_rank(np.array([*keep, arr], dtype=float)) > len(keep):
                    keep.append(arr)
    if not keep or len(keep) == r:
        return None
    return np.array(keep, dtype=np.int64)
