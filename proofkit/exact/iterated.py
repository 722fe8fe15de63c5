"""Iterated facial reduction for one Gram identity ``p = b' Q b`` without an interior point.

When ``p`` has real zeros every Gram matrix is singular, and the solver's ``Q``
is accurate only to about the square root of its tolerance. Here, repeatedly:

1. solve ``p = c' G c`` with ``c = W' b`` for the current exact range basis
   ``W'`` (rows, start: the identity), maximising the margin of ``G``;
2. refine ``G`` by Gauss–Newton on a low-rank factor (:mod:`proofkit.sos.refine`)
   and choose its numerical rank at the largest eigenvalue gap;
3. if the kernel is empty, round ``G`` and move it exactly onto the identity
   (:func:`proofkit.exact.facial.range_candidates`);
4. otherwise replace ``W'`` by ``C W'``, where the rows of ``C`` are exact
   rational vectors orthogonal to the numerical kernel: unit vectors for
   coordinates the kernel does not touch, then integer relations (LLL) among
   the others (rational Gram matrices vanish on every conjugate of an
   irrational kernel vector, so they live on the rational face), or an RREF
   basis of the numerical range with bounded denominators; and repeat.

This is the classical facial reduction (Borwein & Wolkowicz 1981; for sums
of squares, Permenter & Parrilo, "Partial facial reduction", Math. Prog. 2018)
with the numerical face recovered exactly. Everything it yields is a
proposal for the exact check in :mod:`proofkit.exact.check`; it never decides.
"""

from __future__ import annotations

import itertools
import math
import time
import warnings
from collections.abc import Iterator, Sequence
from fractions import Fraction

import flint
import numpy as np

from proofkit.exact.facial import FaceRestriction, range_candidates
from proofkit.sos.poly import PolySpace
from proofkit.sos.refine import refine_low_rank
from proofkit.sos.zeros import real_zeros, zero_relations

__all__ = ["face_gap_rank", "iterated_faces", "newton_face_kernel", "rational_complement"]

_MAX_DEPTH = 5


def face_gap_rank(w: np.ndarray, small: float = 1e-5, min_gap: float = 2.5) -> int:
    """Kernel size for ascending eigenvalues ``w``: the largest gap (decades) below ``small``."""
    top = float(w.max(initial=0.0))
    if top <= 0:
        return len(w)
    logs = np.log10(np.maximum(w / top, 1e-18))
    best, k = 0.0, 0
    for i in range(len(w) - 1):
        if w[i] / top > small:
            break
        gap = logs[i + 1] - logs[i]
        if gap > best:
            best, k = gap, i + 1
    return k if best >= min_gap else 0


def _relations(kernel: np.ndarray, accuracy: float, max_entry: int = 2000) -> np.ndarray:
    """Independent small integer rows ``r`` with ``r' K ~ 0``, unit vectors first."""
    n = kernel.shape[0]
    norms = np.abs(kernel).max(axis=1)
    units = [j for j in range(n) if norms[j] < accuracy]
    rest = [j for j in range(n) if norms[j] >= accuracy]
    rows = [np.eye(n, dtype=np.int64)[j] for j in units]
    if len(rest) > 1:
        sub = kernel[rest]
        scale = 1.0 / accuracy
        big = np.rint(sub * scale).astype(object)
        m = len(rest)
        lat = [[int(i == j) for j in range(m)] + [int(v) for v in big[i]] for i in range(m)]
        red = flint.fmpz_mat(lat).lll()
        # Chance relations have length about (1/accuracy)^(k/m); keep the clearly shorter.
        limit = 0.25 * (1.0 / accuracy) ** (kernel.shape[1] / m)
        found: list[tuple[float, np.ndarray]] = []
        for i in range(red.nrows()):
            r = np.array([int(red[i, j]) for j in range(m)], dtype=np.int64)
            if not r.any() or np.abs(r).max() > max_entry:
                continue
            size = float(np.linalg.norm(r))
            res = float(np.abs(r.astype(float) @ sub).max()) / size
            if res < accuracy and size < limit:
                found.append((size, r))
        found.sort(key=lambda it: it[0])
        for _size, r in found:
            full = np.zeros(n, dtype=np.int64)
            full[rest] = r
            rows.append(full)
    keep: list[np.ndarray] = []
    for r in rows:
        if np.linalg.matrix_rank(np.array([*keep, r], dtype=float)) > len(keep):
            keep.append(r)
    return np.array(keep, dtype=np.int64).reshape(len(keep), n)


def _rref_range(rng: np.ndarray, max_den: int) -> np.ndarray | None:
    """Rational RREF rows spanning the column space of ``rng`` (n x r), as an object array."""
    import scipy.linalg as sla

    r = rng.shape[1]
    _, _, piv = sla.qr(rng.T, pivoting=True)
    piv = np.sort(piv[:r])
    coef = np.linalg.solve(rng.T[:, piv], rng.T)
    out = np.empty((r, rng.shape[0]), dtype=object)
    for i in range(r):
        for j in range(rng.shape[0]):
            out[i, j] = Fraction(float(coef[i, j])).limit_denominator(max_den)
        for k, j in enumerate(piv):
            out[i, j] = Fraction(int(k == i))
    return out


def rational_complement(kernel: np.ndarray, rng: np.ndarray) -> Iterator[np.ndarray]:
    """Exact row bases (object arrays of Fractions/ints) of guesses for the rational range."""
    n = kernel.shape[0]
    seen: set[tuple] = set()
    for acc in (1e-13, 1e-11, 1e-9, 1e-7):
        rel = _relations(kernel, acc)
        if 0 < rel.shape[0] < n:
            key = tuple(map(tuple, rel.tolist()))
            if key not in seen:
                seen.add(key)
                yield rel.astype(object)
    for den in (100, 10**4):
        rows = _rref_range(rng, den)
        if rows is not None:
            key = tuple(map(tuple, rows.tolist()))
            if key not in seen:
                seen.add(key)
                yield rows


def _int_rows(rows: Sequence[Sequence[object]]) -> list[list[int]]:
    """Each rational row scaled to a primitive integer row."""
    out = []
    for row in rows:
        fr = [Fraction(x) for x in row]  # type: ignore[arg-type]
        den = math.lcm(*(x.denominator for x in fr)) if fr else 1
        ints = [int(x * den) for x in fr]
        g = math.gcd(*ints) or 1
        out.append([v // g for v in ints])
    return out


def _nullspace(rows: Sequence[Sequence[object]], n: int) -> list[list[int]]:
    """Integer basis of ``{x : R x = 0}`` for rational rows ``R`` of length ``n``."""
    if not rows:
        return [[int(i == j) for j in range(n)] for i in range(n)]
    mat, nullity = flint.fmpz_mat(_int_rows(rows)).nullspace()
    cols = [[int(mat[i, j]) for i in range(n)] for j in range(nullity)]
    return _int_rows(cols)


def newton_face_kernel(
    space: PolySpace, basis: np.ndarray, target: flint.fmpq_mpoly, deadline: float
) -> list[list[int]]:
    """Exact kernel vectors forced by faces of the Newton polytope (padded to the full basis).

    For a face ``t`` of the Newton polytope, the Gram block of the basis monomials in
    ``t/2`` is a Gram matrix of the face polynomial ``p_t`` on its own (Reznick 1978).
    When ``p_t`` has real zeros in the torus that block is singular, and any ``x``
    with ``x' Q x = 0`` satisfies ``Q x = 0`` for PSD ``Q``. Those small
    problems are well conditioned, so their kernels are recovered reliably.
    Faces are those exposed by directions in ``{-1, 0, 1}^n``.
    """
    from proofkit.sos.program import SearchProgram
    from proofkit.sos.refine import gram_system

    n, nv = basis.shape
    texp, tcoef = PolySpace.arrays(target, nv)
    seen: set[tuple[int, ...]] = set()
    kernel_rows: list[list[int]] = []
    dirs = [np.array(d) for d in itertools.product((-1, 0, 1), repeat=nv) if any(d)]
    for c in dirs:
        if time.perf_counter() > deadline:
            break
        vals = basis @ c
        idx = tuple(np.flatnonzero(vals == vals.max()).tolist())
        if len(idx) < 2 or len(idx) >= n or idx in seen:
            continue
        seen.add(idx)
        on = texp @ c == 2 * vals.max()
        sub_t = space.from_arrays(texp[on], [x for x, k in zip(tcoef, on, strict=True) if k])
        sub_b = basis[list(idx)]
        prog = SearchProgram(space.variables)
        g = prog.sos("face", sub_b)
        prog.equate(g, sub_t, name="face")
        system = gram_system(prog, g)
        if system is None:
            continue
        solved = _solve_face(*system)
        if solved is None:
            continue
        gm, margin = solved
        if margin > 1e-6 * max(1.0, float(np.abs(gm).max())):
            continue
        ident = np.eye(len(idx), dtype=np.int64).astype(object)
        from_zeros = zero_relations(sub_b, ident.tolist(), real_zeros(space, sub_t))
        guess = _face_guess(system, gm, from_zeros)
        if guess is None:
            continue
        for kv in _nullspace(guess.tolist(), len(idx)):
            full = [0] * n
            for j, val in zip(idx, kv, strict=True):
                full[j] = val
            kernel_rows.append(full)
    return kernel_rows


def _face_guess(
    system: tuple[np.ndarray, np.ndarray], gm: np.ndarray, from_zeros: np.ndarray | None
) -> np.ndarray | None:
    """The first exact range guess for a face block on which a PSD Gram matrix still exists."""
    a, b = system

    def guesses() -> Iterator[np.ndarray]:
        if from_zeros is not None:
            yield from_zeros.astype(object)
        ref = refine_low_rank(a, b, gm)
        w, v = np.linalg.eigh(ref if ref is not None else gm)
        k = face_gap_rank(w)
        # Only a rational kernel read off the numbers is trusted here (a guess on a
        # smaller face would over-restrict the whole problem); zeros cover the rest.
        if k:
            for guess in rational_complement(v[:, :k], v[:, k:]):
                if len(guess) == len(w) - k:
                    yield guess

    for guess in guesses():
        solved = _solve_face(*FaceRestriction.of(guess).system(a, b))
        if solved is not None and solved[1] > -1e-7 * max(1.0, float(np.abs(solved[0]).max())):
            return guess
    return None


def _solve_face(a_face: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, float] | None:
    import cvxpy as cp

    m = round(float(np.sqrt(a_face.shape[1])))
    g = cp.Variable((m, m), symmetric=True)
    t = cp.Variable()
    cons = [a_face @ cp.vec(g, order="F") == b, g - t * np.eye(m) >> 0, t <= 1]
    prob = cp.Problem(cp.Maximize(t), cons)
    try:
        with warnings.catch_warnings():  # a hint only: inaccuracy shows in the exact check
            warnings.simplefilter("ignore")
            prob.solve(solver=cp.CLARABEL)
    except cp.error.SolverError:
        return None
    if g.value is None or prob.status not in (cp.OPTIMAL, cp.OPTIMAL_INACCURATE):
        return None
    gv = np.array(g.value)
    return (gv + gv.T) / 2, float(t.value)


def iterated_faces(
    space: PolySpace,
    basis: np.ndarray,
    target: flint.fmpq_mpoly,
    a: np.ndarray,
    b: np.ndarray,
    ladder: Sequence[int],
    deadline: float,
) -> Iterator[tuple[list[list[flint.fmpq]] | None, str]]:
    """Candidates ``(Q, note)`` on faces found by iterated exact facial reduction."""
    n = basis.shape[0]
    stack: list[tuple[np.ndarray, int]] = [(np.eye(n, dtype=np.int64).astype(object), 0)]
    zeros = real_zeros(space, target)
    restricted: set[int] = set()
    faces_done = False
    while stack or not faces_done:
        if not stack:  # second phase: kernels forced by faces of the Newton polytope
            faces_done = True
            kernel = newton_face_kernel(space, basis, target, deadline)
            rows = _nullspace(kernel, n) if kernel else []
            if not rows:
                continue
            stack.append((np.array(rows, dtype=object), 1))
        if time.perf_counter() > deadline:
            yield None, "time budget for iterated facial reduction used up"
            return
        wrows, depth = stack.pop()
        if zeros and id(wrows) not in restricted:
            rel = zero_relations(basis, wrows.tolist(), zeros)
            if rel is not None:
                wrows = _compose(rel.astype(object), wrows)
            restricted.add(id(wrows))
        face = FaceRestriction.of(wrows)  # a NEW system on the face; lifted by range_candidates
        r = face.dim
        a_face, _b = face.system(a, b)
        solved = _solve_face(a_face, b)
        if solved is None:
            yield None, f"face of dimension {r}: solver failed"
            continue
        g, margin = solved
        if margin < -1e-6 * max(1.0, float(np.abs(g).max())):
            yield None, f"face of dimension {r}: no PSD Gram matrix (margin {margin:.3g})"
            continue
        ref = refine_low_rank(a_face, b, g)
        gr = ref if ref is not None else g
        w, v = np.linalg.eigh(gr)
        k = face_gap_rank(w)
        if k == 0 or depth >= _MAX_DEPTH:
            wt = [
                [flint.fmpq(int(Fraction(x).numerator), int(Fraction(x).denominator)) for x in row]
                for row in wrows
            ]
            for cand, note in range_candidates(space, basis, target, wt, g, ladder):
                yield cand, f"{note} (facial reduction depth {depth})"
            if k == 0:
                continue
        if depth >= _MAX_DEPTH:
            continue
        kernel, rng = v[:, :k], v[:, k:]
        guesses = list(rational_complement(kernel, rng))
        for c in reversed(guesses):  # first guess is explored first
            new = _compose(c, wrows)
            restricted.add(id(new))  # already orthogonal to the zeros
            stack.append((new, depth + 1))


def _compose(c: np.ndarray, wrows: np.ndarray) -> np.ndarray:
    """Exact product ``C W`` of rational (object) arrays."""
    return np.array(
        [
            [
                sum(
                    (Fraction(ci) * Fraction(wj) for ci, wj in zip(crow, col, strict=True)),
                    Fraction(0),
                )
                for col in wrows.T
            ]
            for crow in c
        ],
        dtype=object,
    )
