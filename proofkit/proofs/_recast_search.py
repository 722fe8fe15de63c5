"""Numerical search for recast Lyapunov certificates (floating point, never evidence).

Two semidefinite programs over the recast variables ``z``
(:mod:`proofkit.proofs._recast_system`):

* :func:`shape_step`: the multiplier of ``level - V`` fixed, find ``V`` with
  the ``positive`` and ``decrease`` identities (sums of squares modulo the
  circle constraints and the Taylor bounds) that keeps as many sample points
  as possible inside ``{V <= 1}`` (hinge loss on the samples);
* :func:`hint_step`: ``V`` fixed, every obligation of the audit's schema
  with its multipliers free, maximising the smallest Gram eigenvalue so that
  rounding and the exact projection have room.

Obligation names and multiplier names are the audit's
(``"<obligation> * <inequality>"``, ``"<obligation> * circle k"``).
Nothing here decides anything; :mod:`proofkit.proofs._recast_exact` makes
the result exact and checks it.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field

import cvxpy as cp
import numpy as np

from proofkit.proofs._recast_lin import Affine, NumPoly, free_unknown, gram_unknown
from proofkit.sos.basis import full_basis, newton_basis

__all__ = ["Obligation", "SearchData", "hint_step", "numeric", "shape_step"]


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
    equalities: list[tuple[str, NumPoly]]
    obligations: list[Obligation] = field(default_factory=list)


def _deg(p: NumPoly) -> int:
    return max((sum(e) for e in p), default=0)


def _support(aff: Affine, nz: int) -> np.ndarray:
    rows = [np.array(list(aff.const.keys()), np.int64).reshape(-1, nz)]
    rows += [p[1] for p in aff.parts]
    return np.unique(np.vstack(rows), axis=0)


def v_support(nz: int, n: int, degree: int) -> np.ndarray:
    """Monomials of V: degree 1..degree, at most linear in each S (the circle gives S^2)."""
    b = full_basis(nz, degree, 1)
    mask = np.ones(len(b), bool)
    for k in range(n, nz - 1, 2):  # S variables sit at n, n + 2, ... (E's have no circle)
        mask &= b[:, k] <= 1
    return b[mask]


def _build(data: SearchData, v: object, degree: int, level: float, s0: dict[str, NumPoly] | None):
    """Affine targets of every obligation with free multipliers; V unknown or fixed."""
    nz = data.nz
    one = {tuple([0] * nz): 1.0}
    affs, grams, mults = {}, {}, {}
    for ob in data.obligations:
        top = degree + ob.extra
        aff = Affine(nz).add_const(ob.base)
        if isinstance(v, dict):
            if ob.lie:
                aff.add_const(_lie(v, data.field), -1.0)
            if ob.v_sign:
                aff.add_const(v, ob.v_sign)
        else:
            if ob.lie:
                aff.add_lie(v, data.field, -1.0)
            if ob.v_sign:
                aff.add_product(v, one, ob.v_sign)
        for label, g in ob.ineqs:
            key = f"{ob.name} * {label}"
            if label == "level":
                if s0 is not None and key in s0:
                    lv = {e: -c for e, c in (v.items() if isinstance(v, dict) else [])}
                    if isinstance(v, dict):
                        lv[tuple([0] * nz)] = lv.get(tuple([0] * nz), 0.0) + level
                        aff.add_const(_mul(s0[key], lv), -1.0)
                    else:
                        aff.add_const(s0[key], -level).add_product(v, s0[key], 1.0)
                    continue
                if not isinstance(v, dict):
                    continue
                gv = {e: -c for e, c in v.items()}
                gv[tuple([0] * nz)] = gv.get(tuple([0] * nz), 0.0) + level
                g = gv
            if label != "level" and _deg(g) > top:
                continue  # a bound of higher degree than the target: no room for it
            half = max(0, (top - _deg(g)) // 2)
            low = 1 if (label == "level" and ob.lie) else 0  # decrease vanishes at the point
            u = gram_unknown(_safe(key), full_basis(nz, max(half, low), low))
            aff.add_product(u, g, -1.0)
            mults[key] = u
        for label, h in data.equalities:
            key = f"{ob.name} * {label}"
            lam = free_unknown(_safe(key), full_basis(nz, max(0, top - 2), 0))
            aff.add_product(lam, h, -1.0)
            mults[key] = lam
        affs[ob.name] = aff
    for name, aff in affs.items():
        b = newton_basis(_support(aff, nz))
        b = b[b.sum(axis=1) > 0] if not any(sum(e) == 0 for e in aff.const) else b
        q = gram_unknown(_safe(name) + "_Q", b)
        aff.add_product(q, one, -1.0)
        grams[name] = q
    return affs, grams, mults


def _safe(name: str) -> str:
    return "".join(ch if ch.isalnum() else "_" for ch in name)


def _mul(p: NumPoly, q: NumPoly) -> NumPoly:
    out: NumPoly = {}
    for e1, c1 in p.items():
        for e2, c2 in q.items():
            k = tuple(a + b for a, b in zip(e1, e2, strict=True))
            out[k] = out.get(k, 0.0) + c1 * c2
    return out


def _lie(v: NumPoly, fld: list[NumPoly]) -> NumPoly:
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


def _solve(prob: cp.Problem) -> bool:
    for solver, opts in (("CLARABEL", {}), ("SCS", {"max_iters": 20000, "eps_abs": 1e-7})):
        try:
            with warnings.catch_warnings():  # an inaccurate answer is only a hint anyway
                warnings.simplefilter("ignore")
                prob.solve(solver=solver, **opts)
        except (cp.error.SolverError, ArithmeticError, ValueError):
            continue
        if prob.status in ("optimal", "optimal_inaccurate"):
            return True
    return False


def shape_step(
    data: SearchData, degree: int, s0: dict[str, NumPoly], samples: np.ndarray
) -> NumPoly | None:
    """V with the obligations at level 1 (the level multipliers fixed), samples inside."""
    supp = v_support(data.nz, data.n, degree)
    v = free_unknown("V", supp)
    affs, _grams, _m = _build(data, v, degree, 1.0, s0)
    feats = np.prod(samples[:, None, :] ** supp[None, :, :], axis=2)
    objective = cp.Minimize(cp.sum(cp.pos(feats @ v.var - 1.0)) / max(len(samples), 1))
    prob = cp.Problem(objective, [a.constraint() for a in affs.values()])
    if not _solve(prob) or v.var.value is None:
        return None
    return {tuple(int(x) for x in e): float(c) for e, c in zip(supp, v.var.value, strict=True)}


def hint_step(data: SearchData, v: NumPoly, degree: int, level: float) -> dict | None:
    """Every multiplier and Gram matrix for a fixed V, with the largest eigenvalue margin."""
    affs, grams, mults = _build(data, v, degree, level, None)
    t = cp.Variable()
    cons = [a.constraint() for a in affs.values()]
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
        "sos": {
            k: (u.basis, np.asarray(u.var.value)) for k, u in mults.items() if u.basis is not None
        },
        "free": {k: (u.exps, np.asarray(u.var.value)) for k, u in mults.items() if u.basis is None},
    }
