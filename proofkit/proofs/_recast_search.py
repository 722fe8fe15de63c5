"""Numerical search for recast Lyapunov certificates (floating point, never evidence).

Two semidefinite programs over the recast variables ``z``
(:mod:`proofkit.proofs._recast_system`), every identity matched modulo the
circle relations (normal forms, :mod:`proofkit.proofs._recast_nf`; Gram bases
with each ``S`` of degree at most 1, no free multiplier per relation):

* :func:`shape_step`: the multiplier of ``level - V`` fixed, find ``V`` with
  the ``positive`` and ``decrease`` identities (sums of squares modulo the
  circle relations and the Taylor bounds) that keeps as many sample points
  as possible inside ``{V <= 1}`` (hinge loss on the samples); every
  obligation's Gram matrix keeps a margin above zero so that the exact step
  has room;
* :func:`hint_step`: ``V`` fixed, every obligation of the audit's schema
  with its multipliers free, maximising the smallest Gram eigenvalue.

Alternating the two is the usual bilinear iteration for regions of
attraction (e.g. Jarvis-Wloszek, Packard et al., 2003; Topcu, Packard and
Seiler, 2008). Obligation and multiplier names are the audit's
(``"<obligation> * <inequality>"``). Nothing here decides anything;
:mod:`proofkit.proofs._recast_exact` makes the result exact and checks it.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import cvxpy as cp
import numpy as np

from proofkit.proofs._recast_lin import Affine, NumPoly, free_unknown, gram_unknown, poly_mul
from proofkit.proofs._recast_nf import CircleReduction, normal_mask
from proofkit.sos.basis import full_basis

__all__ = [
    "Obligation",
    "SearchData",
    "hint_step",
    "numeric",
    "numeric_lie",
    "shape_step",
    "v_support",
]


def numeric(p: object) -> NumPoly:
    """A flint polynomial as a float dictionary."""
    pairs = zip(p.monoms(), p.coeffs(), strict=True)  # type: ignore[attr-defined]
    return {tuple(int(x) for x in e): float(c) for e, c in pairs}


@dataclass
class Obligation:
    """One obligation: base target, inequalities (label, g), whether the level multiplies."""

    name: str
    base: NumPoly
    ineqs: list[tuple[str, NumPoly]]
    lie: bool = False  # -lie(V) is part of the target
    v_sign: float = 0.0  # + v_sign * V is part of the target
    extra: int = 0  # the target's degree is deg V + extra


@dataclass
class SearchData:
    nz: int
    n: int
    field: list[NumPoly]
    pairs: list[tuple[int, int]]  # (S index, C index) of each circle relation
    obligations: list[Obligation] = field(default_factory=list)

    def reducer(self) -> CircleReduction:
        return CircleReduction(self.nz, self.pairs)

    def basis(self, degree: int, low: int) -> np.ndarray:
        """Gram basis: monomials of degree ``low..degree`` in normal form."""
        b = full_basis(self.nz, max(degree, low), low)
        return b[normal_mask(b, self.pairs)]


def _deg(p: NumPoly) -> int:
    return max((sum(e) for e in p), default=0)


def v_support(data: SearchData, degree: int) -> np.ndarray:
    """Monomials of V: degree 1..degree in normal form; of degree 1 only the C's.

    V has a minimum at the point, so its terms linear in ``y`` (and in ``S``
    and ``E``, which are ``y`` to first order) vanish; ``-C = 1 - cos(delta)``
    is quadratic in ``y`` and stays.
    """
    b = data.basis(degree, 1)
    keep = b.sum(axis=1) > 1
    for _s, c in data.pairs:
        keep |= b[:, c] == 1
    return b[keep]


def numeric_lie(v: NumPoly, fld: list[NumPoly]) -> NumPoly:
    """grad V . f for polynomials as {exponents: float} (the search side)."""
    out: NumPoly = {}
    for e, c in v.items():
        for i, fi in enumerate(fld):
            if e[i] == 0:
                continue
            de = list(e)
            de[i] -= 1
            for e2, c2 in fi.items():
                k = tuple(a + b for a, b in zip(de, e2, strict=True))
                out[k] = out.get(k, 0.0) + c * e[i] * c2
    return out


def _gap(v: NumPoly, level: float, nz: int) -> NumPoly:
    gv = {e: -c for e, c in v.items()}
    zero = tuple([0] * nz)
    gv[zero] = gv.get(zero, 0.0) + level
    return gv


def _obligation(data: SearchData, ob: Obligation, v: object, degree: int, level: float, s0):
    """The affine target of one obligation and its multipliers (V unknown or fixed)."""
    nz = data.nz
    one = {tuple([0] * nz): 1.0}
    top = degree + ob.extra
    aff = Affine(nz).add_const(ob.base)
    fixed = isinstance(v, dict)
    if ob.lie:
        if fixed:
            aff.add_const(numeric_lie(v, data.field), -1.0)
        else:
            aff.add_lie(v, data.field, -1.0)
    if ob.v_sign:
        _ = aff.add_const(v, ob.v_sign) if fixed else aff.add_product(v, one, ob.v_sign)
    mults = {}
    for label, g in ob.ineqs:
        key = f"{ob.name} * {label}"
        if label == "level":
            if s0 is not None and key in s0:
                if fixed:
                    aff.add_const(poly_mul(s0[key], _gap(v, level, nz)), -1.0)
                else:
                    aff.add_const(s0[key], -level).add_product(v, s0[key], 1.0)
                continue
            if not fixed:
                continue
            g = _gap(v, level, nz)
        elif _deg(g) > top:
            continue  # a bound of higher degree than the target: no room for it
        half = max(0, (top - _deg(g)) // 2)
        low = 1 if (label == "level" and ob.lie) else 0  # decrease vanishes at the point
        u = gram_unknown(_safe(key), data.basis(half, low))
        aff.add_product(u, g, -1.0)
        mults[key] = u
    low = 0 if any(sum(e) == 0 for e in aff.const) else 1
    q = gram_unknown(_safe(ob.name) + "_Q", data.basis(top // 2, low))
    aff.add_product(q, one, -1.0)
    return aff, q, mults


def _build(data: SearchData, v: object, degree: int, level: float, s0: dict | None):
    """Affine targets of every obligation with free multipliers; V unknown or fixed."""
    affs, grams, mults = {}, {}, {}
    for ob in data.obligations:
        aff, q, m = _obligation(data, ob, v, degree, level, s0)
        affs[ob.name], grams[ob.name] = aff, q
        mults.update(m)
    return affs, grams, mults


def _safe(name: str) -> str:
    return "".join(ch if ch.isalnum() else "_" for ch in name)


def _solve(prob: cp.Problem, fallback: bool = True) -> bool:
    """Clarabel, then (``fallback``, after an error or an unclear status) SCS; True if solved."""
    tries = (("CLARABEL", {}), ("SCS", {"max_iters": 20000, "eps_abs": 1e-7}))
    for solver, opts in tries if fallback else tries[:1]:
        try:
            with warnings.catch_warnings():  # an inaccurate answer is only a hint anyway
                warnings.simplefilter("ignore")
                prob.solve(solver=solver, **opts)
        except (cp.error.SolverError, ArithmeticError, ValueError):
            continue
        if prob.status in ("optimal", "optimal_inaccurate"):
            return True
        if prob.status in ("infeasible", "unbounded", "infeasible_inaccurate"):
            return False  # a clear verdict: no second solver
    return False


def shape_step(
    data: SearchData,
    degree: int,
    s0: dict[str, NumPoly],
    samples: np.ndarray,
    margin: float = 0.0,
    fallback: bool = True,
) -> NumPoly | None:
    """V with the obligations at level 1 (the level multipliers fixed), samples inside.

    ``fallback``: a second solver after an error of the first (see :func:`_solve`).
    """
    supp = v_support(data, degree)
    v = free_unknown("V", supp)
    affs, grams, _m = _build(data, v, degree, 1.0, s0)
    red = data.reducer()
    cons = [a.constraint(red) for a in affs.values()]
    if margin > 0:
        cons += [q.var - margin * np.eye(q.var.shape[0]) >> 0 for q in grams.values()]
    feats = np.prod(samples[:, None, :] ** supp[None, :, :], axis=2)
    objective = cp.Minimize(cp.sum(cp.pos(feats @ v.var - 1.0)) / max(len(samples), 1))
    prob = cp.Problem(objective, cons)
    if not _solve(prob, fallback) or v.var.value is None:
        return None
    return {tuple(int(x) for x in e): float(c) for e, c in zip(supp, v.var.value, strict=True)}


def hint_step(data: SearchData, v: NumPoly, degree: int, level: float) -> dict | None:
    """Every multiplier and Gram matrix for a fixed V, with the largest eigenvalue margin."""
    affs, grams, mults = _build(data, v, degree, level, None)
    red = data.reducer()
    t = cp.Variable()
    cons = [a.constraint(red) for a in affs.values()]
    for q in grams.values():
        m = q.var.shape[0]
        cons.append(q.var - t * np.eye(m) >> 0)
    cons.append(t <= 1.0)
    prob = cp.Problem(cp.Maximize(t), cons)
    if not _solve(prob) or t.value is None or t.value <= 0:
        return None
    return {
        "margin": float(t.value),
        "grams": {k: (q.basis, np.asarray(q.var.value)) for k, q in grams.items()},
        "sos": {k: (u.basis, np.asarray(u.var.value)) for k, u in mults.items()},
    }
