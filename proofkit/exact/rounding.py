"""From a floating-point program solution to an exact rational one, then check it exactly.

Steps for one denominator ``D`` of a ladder (small first, so certificates stay short):

1. Every identity gets, if it has one, a *pivot*: a Gram unknown that occurs
   only there, once, with a constant multiplier.
2. All other unknowns are rounded to multiples of ``1/D`` (Gram matrices
   symmetrised).
3. Identities without a pivot are repaired by the exact least-norm change of
   their free and scalar unknowns (``fmpq_mat``).
4. Each pivot Gram matrix is projected orthogonally onto its
   coefficient-matching affine space (Peyrl & Parrilo, "Computing sum of
   squares decompositions with rational coefficients", TCS 409 (2008)): in a
   monomial basis every entry occurs in exactly one coefficient equation, so
   entry ``(i, j)`` of monomial ``m`` moves by ``(p_m - sum_m Q) / n_m``.
5. :func:`verify_exact` re-expands every identity from the program's
   expressions with exact polynomial arithmetic (not from the assembled
   matrices) and runs the exact LDL' on every Gram matrix.

Only :func:`verify_exact` decides; the rest just proposes. Never returns
``ok=True`` without it.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

import flint
import numpy as np
import sympy as sp

from proofkit.exact.ldl import LdlResult, ldl_psd
from proofkit.sos.poly import PolySpace, encode_exponents
from proofkit.sos.program import FreePoly, Identity, Scalar, SearchProgram, SosPoly, Unknown

if TYPE_CHECKING:
    from proofkit.sos.solve import NumericSolution

__all__ = [
    "DENOMINATOR_LADDER",
    "ExactSolution",
    "compact_denominators",
    "peyrl_parrilo_projection",
    "round_program",
    "round_to",
    "verify_exact",
]

DENOMINATOR_LADDER: tuple[int, ...] = tuple(2**k for k in (6, 10, 14, 18, 24, 30))

ExactValue = flint.fmpq | list[flint.fmpq] | list[list[flint.fmpq]]


@dataclass
class ExactSolution:
    """Exact values of every unknown and the verdict of the exact checks."""

    program: SearchProgram
    values: dict[str, ExactValue]
    ok: bool = False
    reason: str | None = None
    denominator: int | None = None
    ldl: dict[str, LdlResult] = field(default_factory=dict)

    def polynomial(self, u: Unknown) -> sp.Expr:
        """The exact value of an unknown as a sympy polynomial."""
        return self.program.space.to_sympy(unknown_poly(self.program.space, u, self.values[u.name]))

    def gram(self, u: SosPoly) -> sp.Matrix:
        return sp.Matrix(
            [[sp.Rational(int(x.p), int(x.q)) for x in r] for r in self.values[u.name]]
        )

    def scalar(self, u: Scalar) -> sp.Rational:
        v = self.values[u.name]
        return sp.Rational(int(v.p), int(v.q))


def round_to(values: np.ndarray, den: int) -> list:
    """Nearest multiples of ``1/den`` as ``fmpq`` (nested lists follow the array shape)."""
    arr = np.asarray(values, dtype=float)
    ints = np.rint(arr * den)
    flat = [flint.fmpq(int(v), den) for v in ints.ravel()]
    if arr.ndim == 0:
        return flat[0]
    if arr.ndim == 1:
        return flat
    n, m = arr.shape
    return [flat[i * m : (i + 1) * m] for i in range(n)]


def unknown_poly(space: PolySpace, u: Unknown, value: ExactValue) -> flint.fmpq_mpoly:
    """Exact polynomial of an unknown's value (the Gram form ``b'Qb`` for SOS unknowns)."""
    if isinstance(u, Scalar):
        return space.const(value)
    if isinstance(u, FreePoly):
        return space.from_arrays(u.support, value)  # type: ignore[arg-type]
    assert isinstance(u, SosPoly)
    b = u.basis
    n = u.size
    exps = (b[:, None, :] + b[None, :, :]).reshape(n * n, space.nvars)
    entries = [x for row in value for x in row]  # type: ignore[union-attr]
    return space.from_arrays(exps, entries)


def _expr_poly(program: SearchProgram, expr, values: dict[str, ExactValue], skip: Unknown | None):
    space = program.space
    total = expr.const
    cache: dict[int, flint.fmpq_mpoly] = {}
    for part in expr.parts:
        if part.unknown is None:
            term = part.mult
        else:
            if part.unknown is skip:
                continue
            u = part.unknown
            if u.uid not in cache:
                cache[u.uid] = unknown_poly(space, u, values[u.name])
            term = cache[u.uid]
            if part.dvar is not None:
                term = term.derivative(part.dvar)
            term = term * part.mult
        if part.level is not None:
            term = term * flint.fmpq(part.level.value.numerator, part.level.value.denominator)
        total = total + term
    return total


def verify_exact(
    program: SearchProgram, values: dict[str, ExactValue]
) -> tuple[bool, str | None, dict]:
    """Exact check: every identity expands to 0 and every Gram matrix passes LDL'."""
    for ident in program.identities:
        res = _expr_poly(program, ident.expr, values, None)
        if not res.is_zero():
            return (
                False,
                f"{ident.name}: exact identity fails ({len(res)} nonzero coefficients)",
                {},
            )
    ldls: dict[str, LdlResult] = {}
    for u in program.unknowns:
        if isinstance(u, SosPoly):
            r = ldl_psd(values[u.name], lambda i, b=u.basis: str(program.space.monomial(b[i])))
            ldls[u.name] = r
            if not r.psd:
                return False, f"{u.name}: Gram matrix not PSD: {r.reason}", ldls
    return True, None, ldls


def peyrl_parrilo_projection(
    basis: np.ndarray, gram: Sequence[Sequence[flint.fmpq]], target: flint.fmpq_mpoly
) -> list[list[flint.fmpq]] | str:
    """Orthogonal projection of a rational Gram matrix onto ``{Q : b'Qb = target}``.

    Returns the projected matrix, or a reason when some target monomial is not
    a product of two basis monomials.
    """
    n, nvars = basis.shape
    if n == 0:
        return [] if target.is_zero() else "target is nonzero but the basis is empty"
    pairs = (basis[:, None, :] + basis[None, :, :]).reshape(n * n, nvars)
    texps, tcoef = PolySpace.arrays(target, nvars)
    radix = int(max(pairs.max(initial=0), texps.max(initial=0))) + 1
    pkeys = encode_exponents(pairs, radix)
    ukeys, inverse, counts = np.unique(pkeys, return_inverse=True, return_counts=True)
    tkeys = encode_exponents(texps, radix)
    pos = np.searchsorted(ukeys, tkeys)
    pos_c = np.minimum(pos, len(ukeys) - 1)
    bad = ukeys[pos_c] != tkeys
    if bad.any():
        e = texps[int(np.argmax(bad))]
        return (
            f"target monomial with exponents {tuple(int(v) for v in e)} is outside the basis square"
        )
    want = [flint.fmpq(0)] * len(ukeys)
    for p, c in zip(pos_c.tolist(), tcoef, strict=True):
        want[p] = c
    flat = [x for row in gram for x in row]
    sums = [flint.fmpq(0)] * len(ukeys)
    for k, x in zip(inverse.tolist(), flat, strict=True):
        sums[k] += x
    delta = [(w - s) / int(c) for w, s, c in zip(want, sums, counts.tolist(), strict=True)]
    out = [x + delta[k] for k, x in zip(inverse.tolist(), flat, strict=True)]
    return [out[i * n : (i + 1) * n] for i in range(n)]


def compact_denominators(
    basis: np.ndarray, gram: Sequence[Sequence[flint.fmpq]], den: int
) -> list[list[flint.fmpq]]:
    """Same coefficient sums as ``gram``, entries on the grid ``1/den`` except one per monomial.

    The orthogonal projection divides by the pair counts ``n_m``, so its common
    denominator grows like ``lcm(n_m)``, which makes the exact LDL' slow on big
    bases. Here every upper-triangle entry is rounded to ``1/den`` and, for each
    monomial, one entry (a diagonal one when there is one) takes up the
    difference, so every identity still holds exactly. The change per entry is
    of the order ``n_m / den``.
    """
    n = basis.shape[0]
    iu, ju = np.triu_indices(n)
    keys = encode_exponents(basis[iu] + basis[ju], int(2 * basis.max(initial=0)) + 1)
    order = np.lexsort((iu != ju, keys))  # group by monomial, diagonal entries first
    out = [list(row) for row in gram]
    start = 0
    m = len(order)
    while start < m:
        stop = start
        while stop < m and keys[order[stop]] == keys[order[start]]:
            stop += 1
        group = order[start:stop]
        sink = int(group[0])
        si, sj = int(iu[sink]), int(ju[sink])
        total = flint.fmpq(0)
        for k in group.tolist():
            i, j = int(iu[k]), int(ju[k])
            total += gram[i][j] * (1 if i == j else 2)
        rest = flint.fmpq(0)
        for k in group.tolist()[1:]:
            i, j = int(iu[k]), int(ju[k])
            x = gram[i][j]
            if x.q > den:  # nearest multiple of 1/den
                x = flint.fmpq((2 * x.p * den + x.q) // (2 * x.q), den)
            y = x
            out[i][j] = out[j][i] = y
            rest += y * (1 if i == j else 2)
        out[si][sj] = out[sj][si] = (total - rest) / (1 if si == sj else 2)
        start = stop
    return out


def _pivots(program: SearchProgram) -> dict[int, SosPoly]:
    """Identity number -> its pivot Gram unknown (see module docstring)."""
    seen: dict[int, list[tuple[int, object]]] = {}
    for k, ident in enumerate(program.identities):
        for part in ident.expr.parts:
            if part.unknown is not None:
                seen.setdefault(part.unknown.uid, []).append((k, part))
    out: dict[int, SosPoly] = {}
    for u in program.unknowns:
        occ = seen.get(u.uid, [])
        if not isinstance(u, SosPoly) or len(occ) != 1:
            continue
        k, part = occ[0]
        simple = part.dvar is None and part.level is None and part.mult.is_constant()
        if simple and k not in out and not part.mult.is_zero():
            out[k] = u
    return out


def _repair_free(program: SearchProgram, idents: list[Identity], values: dict) -> str | None:
    """Exact least-norm correction of free/scalar unknowns so that ``idents`` hold."""
    cols: list[tuple[Unknown, int]] = []
    index: dict[tuple[int, int], int] = {}
    for ident in idents:
        for blk in ident.blocks:
            u = blk.unknown
            if isinstance(u, FreePoly | Scalar):
                for c in range(u.ncols):
                    if (u.uid, c) not in index:
                        index[(u.uid, c)] = len(cols)
                        cols.append((u, c))
    rows_a: list[list[flint.fmpq]] = []
    rhs: list[flint.fmpq] = []
    nv = program.space.nvars
    for ident in idents:
        res = _expr_poly(program, ident.expr, values, None)
        m = ident.monomials.shape[0]
        radix = int(max(ident.monomials.max(initial=0), 0)) + 2
        keys = encode_exponents(ident.monomials, radix)
        rexps, rcoef = PolySpace.arrays(res, nv)
        r = [flint.fmpq(0)] * m
        if len(rcoef):
            pos = np.searchsorted(keys, encode_exponents(rexps, radix))
            for p, c in zip(pos.tolist(), rcoef, strict=True):
                r[p] = c
        block = [[flint.fmpq(0)] * len(cols) for _ in range(m)]
        for blk in ident.blocks:
            u = blk.unknown
            if not isinstance(u, FreePoly | Scalar):
                continue
            lv = blk.level.value if blk.level is not None else 1
            lvq = flint.fmpq(lv.numerator, lv.denominator)
            for rr, cc, f, t in zip(blk.rows, blk.cols, blk.factor, blk.tidx, strict=True):
                block[int(rr)][index[(u.uid, int(cc))]] += int(f) * blk.gcoef[int(t)] * lvq
        rows_a.extend(block)
        rhs.extend(-x for x in r)
    if all(x == 0 for x in rhs):
        return None
    if not cols:
        return "an identity without Gram pivot fails and has no free unknown to adjust"
    a = flint.fmpq_mat(rows_a)
    _rref, rank = a.transpose().rref()
    piv: list[int] = []
    rr = _rref
    for i in range(rank):
        for j in range(rr.ncols()):
            if rr[i, j] != 0:
                piv.append(j)
                break
    ai = flint.fmpq_mat([rows_a[j] for j in piv])
    bi = flint.fmpq_mat([[rhs[j]] for j in piv])
    y = (ai * ai.transpose()).solve(bi)
    delta = ai.transpose() * y
    full = a * delta
    if any(full[i, 0] != rhs[i] for i in range(len(rhs))):
        return "the identities without Gram pivot are inconsistent after rounding"
    for k, (u, c) in enumerate(cols):
        if isinstance(u, Scalar):
            values[u.name] = values[u.name] + delta[k, 0]
        else:
            values[u.name][c] = values[u.name][c] + delta[k, 0]
    return None


def round_program(
    program: SearchProgram,
    numeric: NumericSolution,
    ladder: Sequence[int] = DENOMINATOR_LADDER,
) -> ExactSolution:
    """Try each denominator of the ladder; the first that passes :func:`verify_exact` wins."""
    if not numeric.usable:
        return ExactSolution(program, {}, reason=f"no usable numerical values ({numeric.status})")
    program.assemble()
    pivots = _pivots(program)
    last = "empty denominator ladder"
    for den in ladder:
        values: dict[str, ExactValue] = {}
        for u in program.unknowns:
            v = numeric.values[u.name]
            if isinstance(u, SosPoly):
                v = (v + v.T) / 2
            values[u.name] = round_to(v if not isinstance(u, Scalar) else v.reshape(()), den)
        pivotless = [ident for k, ident in enumerate(program.identities) if k not in pivots]
        why = _repair_free(program, pivotless, values) if pivotless else None
        if why is not None:
            last = f"denominator {den}: {why}"
            continue
        failed = None
        projected: dict[str, list[list[flint.fmpq]]] = {}
        for k, u in pivots.items():
            ident = program.identities[k]
            part = next(p for p in ident.expr.parts if p.unknown is u)
            rest = _expr_poly(program, ident.expr, values, u)
            target = rest * (-1 / part.mult.coeffs()[0])
            proj = peyrl_parrilo_projection(u.basis, values[u.name], target)
            if isinstance(proj, str):
                failed = f"{u.name}: {proj}"
                break
            values[u.name] = proj
            projected[u.name] = proj
        if failed:
            last = f"denominator {den}: {failed}"
            if "outside the basis" in failed:
                break
            continue
        if projected:  # short denominators first (faster LDL', shorter certificates)
            short = dict(values)
            for name, proj in projected.items():
                u = next(x for x in program.unknowns if x.name == name)
                short[name] = compact_denominators(u.basis, proj, den)
            ok, reason, ldls = verify_exact(program, short)
            if ok:
                return ExactSolution(program, short, ok=True, denominator=den, ldl=ldls)
        ok, reason, ldls = verify_exact(program, values)
        if ok:
            return ExactSolution(program, values, ok=True, denominator=den, ldl=ldls)
        last = f"denominator {den}: {reason}"
    return ExactSolution(program, {}, reason=last)
