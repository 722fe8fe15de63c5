"""Numerical search for Taylor-model Lyapunov certificates (floating point, never evidence).

The vertex fields of :mod:`proofkit.proofs._taylor_system` are plain
polynomial fields in the deviation ``y``; one ``V(y)`` must decrease along
all of them on ``{V <= c}``. Work is in scaled coordinates ``z = y / D``.
Two semidefinite programs alternate (a V-s iteration):

* :meth:`TaylorSearch.level`: ``V`` fixed, the largest level ``c`` (a cvxpy
  Parameter, bisected on one compiled problem) with a sum-of-squares
  multiplier per vertex field and per domain condition, maximising the
  smallest Gram eigenvalue (the margin exact rounding needs);
* :meth:`TaylorSearch.shape`: the multipliers and ``c`` fixed, a new ``V``
  that keeps part of that margin and puts as many sample points as possible
  inside ``{V <= c}`` (hinge loss, plus a small pull on the mean of ``V``).

Everything here is a hint for :mod:`proofkit.proofs.taylor_model`, which
rebuilds every obligation exactly; this module never decides anything.
"""

from __future__ import annotations

import warnings
from dataclasses import dataclass, field
from typing import Any

import cvxpy as cp
import numpy as np

from proofkit.proofs._recast_lin import Affine, NumPoly, Unknown, free_unknown, gram_unknown
from proofkit.proofs._recast_search import numeric_lie
from proofkit.sos.basis import full_basis

__all__ = ["Hint", "TaylorSearch"]

FEASIBLE = 1e-7


def _deg(p: NumPoly) -> int:
    return max((sum(e) for e in p), default=0)


def _gram_poly(basis: np.ndarray, q: np.ndarray) -> NumPoly:
    out: NumPoly = {}
    for i, bi in enumerate(basis):
        for j, bj in enumerate(basis):
            e = tuple(int(a + b) for a, b in zip(bi, bj, strict=True))
            out[e] = out.get(e, 0.0) + float(q[i, j])
    return out


def _solve(prob: cp.Problem) -> bool:
    for solver in ("CLARABEL", "SCS"):
        try:
            with warnings.catch_warnings():  # an inaccurate answer is only a hint anyway
                warnings.simplefilter("ignore")
                prob.solve(solver=solver)
        except (cp.error.SolverError, ArithmeticError, ValueError):
            continue
        if prob.status in ("optimal", "optimal_inaccurate"):
            return True
        if prob.status in ("infeasible", "unbounded"):
            return False  # a definite answer: no second solver
    return False


@dataclass
class Hint:
    """A numerical certificate at level ``c``: multipliers and Gram matrices (z coordinates)."""

    c: float
    margin: float
    mult: dict[str, tuple[np.ndarray, np.ndarray]]  # obligation -> (basis, Gram) of its multiplier
    grams: dict[str, tuple[np.ndarray, np.ndarray]]  # obligation -> (basis, Gram)


@dataclass
class TaylorSearch:
    """The scaled problem: vertex fields, norm, claim set and domain, all over ``z``."""

    n: int
    fields: list[tuple[str, list[NumPoly]]]  # (vertex label, F(Dz)/D)
    norm: NumPoly  # eps |D z|^2
    sets: list[NumPoly]  # claim-set conditions g_i(x* + D z) >= 0
    domain: list[NumPoly]  # domain conditions (minus eps when strict)
    v_degree: int
    bounds: list[NumPoly] = field(default_factory=list)  # D - delta per exp atom

    def _halves(self, dv: int) -> tuple[int, int]:
        """Half degrees of the decrease Gram basis and of its level multiplier for deg V = dv."""
        top = max(_deg(fi) for _l, fld in self.fields for fi in fld)
        half = (dv - 1 + top + 1) // 2
        return half, max(1, (2 * half - dv) // 2)

    def _obligations(
        self, v: NumPoly | Unknown, c: cp.Parameter | float, fixed: dict | None, margin: Any
    ) -> tuple[dict[str, Affine], dict[str, Unknown], dict[str, Unknown]]:
        """Affine targets (decrease per vertex, domain j) with multipliers free or fixed.

        ``margin``: a scalar unknown ``t`` (maximised) or a fixed number; each
        Gram matrix is then ``Q + margin I`` with ``Q`` PSD.
        """
        n, one = self.n, {tuple([0] * self.n): 1.0}
        dv = _deg(v) if isinstance(v, dict) else self.v_degree
        hq, hs = self._halves(dv)
        affs, grams, mults = {}, {}, {}
        items = [(f"decrease {lbl}", fld, None) for lbl, fld in self.fields]
        items += [(f"domain {j + 1}", None, h) for j, h in enumerate(self.domain)]
        items += [(f"bound {j + 1}", None, h) for j, h in enumerate(self.bounds)]
        for name, fld, h in items:
            aff = Affine(n)
            if fld is not None:
                aff.add_const(self.norm, -1.0)
                if isinstance(v, dict):
                    aff.add_const(numeric_lie(v, fld), -1.0)
                else:
                    aff.add_lie(v, fld, -1.0)
                q = gram_unknown(_safe(name), full_basis(n, hq, 1))
            else:
                aff.add_const(h)
                hd = max(dv, _deg(h) + 1) // 2 + 1
                q = gram_unknown(_safe(name), full_basis(n, hd, 0))
            low = 1 if fld is not None else 0
            if fixed is not None:  # multiplier fixed, V unknown, c a number
                s = fixed[name]
                aff.add_const(s, -float(c))
                aff.add_product(v, s, 1.0)
            else:
                top = hs if fld is not None else max(0, (2 * hd - dv) // 2)
                s_u = gram_unknown(_safe(name) + "_m", full_basis(n, top, low))
                aff.add_product(s_u, one, -1.0, param=c)
                aff.add_product(s_u, v, 1.0)
                mults[name] = s_u
            aff.add_product(q, one, -1.0)
            affs[name], grams[name] = aff, q
            self._margin(aff, q, margin)
        if fixed is None and isinstance(v, dict):  # V fixed: its positivity too
            pos = Affine(n).add_const(v).add_const(self.norm, -1.0)
            q = gram_unknown("positive", full_basis(n, dv // 2, 1))
            affs["positive"], grams["positive"] = pos.add_product(q, one, -1.0), q
            self._margin(pos, q, margin)
        return affs, grams, mults

    @staticmethod
    def _margin(aff: Affine, q: Unknown, margin: Any) -> None:
        """``- margin * sum b_i^2`` (no extra cone for the margin)."""
        sq: NumPoly = {}
        for b in q.basis:
            e = tuple(int(2 * x) for x in b)
            sq[e] = sq.get(e, 0.0) + 1.0
        if isinstance(margin, Unknown):
            aff.add_product(margin, sq, -1.0)
        else:
            aff.add_const(sq, -float(margin))

    def _program(self, v: NumPoly) -> tuple[cp.Problem, cp.Parameter, Unknown, dict, dict]:
        c = cp.Parameter(nonneg=True)
        t = free_unknown("t", np.zeros((1, self.n), np.int64))
        affs, grams, mults = self._obligations(v, c, None, t)
        cons = [a.constraint() for a in affs.values()]
        prob = cp.Problem(cp.Maximize(t.var[0]), [*cons, t.var[0] <= 1.0])
        return prob, c, t, grams, mults

    def level(
        self, v: NumPoly, c_hint: float, steps: int = 5, backoff: float = 0.99
    ) -> Hint | None:
        """The largest level with a margin (bisection on a cvxpy Parameter), and its hint."""
        parts = self._program(v)
        prob, c, t = parts[:3]

        def ok(x: float) -> bool:
            c.value = x
            return _solve(prob) and t.var.value is not None and t.var.value[0] > FEASIBLE

        lo, hi = 0.0, c_hint
        while ok(hi) and hi < 1e6:
            lo, hi = hi, 2 * hi
        if lo == 0.0:
            hi_try = c_hint
            for _ in range(30):
                hi_try /= 2
                if ok(hi_try):
                    lo, hi = hi_try, 2 * hi_try
                    break
            else:
                return None
        for _ in range(steps):
            mid = (lo * hi) ** 0.5
            lo, hi = (mid, hi) if ok(mid) else (lo, mid)
        return self.hint(v, backoff * lo, parts)

    def hint(self, v: NumPoly, level: float, parts: tuple | None = None) -> Hint | None:
        """Multipliers and Gram matrices at a fixed level with the largest margin."""
        prob, c, t, grams, mults = parts or self._program(v)
        c.value = level
        if not _solve(prob) or t.var.value is None or t.var.value[0] <= FEASIBLE:
            return None
        tv = float(t.var.value[0])
        return Hint(
            level,
            tv,
            {k: (u.basis, np.asarray(u.var.value)) for k, u in mults.items()},
            {
                k: (q.basis, np.asarray(q.var.value) + tv * np.eye(len(q.basis)))
                for k, q in grams.items()
            },
        )

    def shape(self, hint: Hint, samples: np.ndarray, keep: float = 0.05) -> NumPoly | None:
        """A new V, feasible at the hint's level with its multipliers, samples inside."""
        n = self.n
        supp = full_basis(n, self.v_degree, 2)
        v = free_unknown("V", supp)
        fixed = {k: _gram_poly(b, q) for k, (b, q) in hint.mult.items()}
        mu = keep * hint.margin
        affs, _grams, _m = self._obligations(v, hint.c, fixed, mu)
        hp = self.v_degree // 2
        pos = Affine(n).add_const(self.norm, -1.0).add_product(v, {tuple([0] * n): 1.0})
        qp = gram_unknown("positive", full_basis(n, hp, 1))
        pos.add_product(qp, {tuple([0] * n): 1.0}, -1.0)
        self._margin(pos, qp, mu)
        cons = [a.constraint() for a in affs.values()] + [pos.constraint()]
        cons += self._inside(v, hint.c)
        feats = np.prod(samples[:, None, :] ** supp[None, :, :], axis=2)
        vals = feats @ v.var
        objective = cp.sum(cp.pos(vals - hint.c)) / len(samples) + 1e-3 * cp.sum(vals) / len(
            samples
        )
        prob = cp.Problem(cp.Minimize(objective), cons)
        if not _solve(prob) or v.var.value is None:
            return None
        return {tuple(int(x) for x in e): float(c) for e, c in zip(supp, v.var.value, strict=True)}

    def _inside(self, v: Unknown, c: float) -> list[cp.Constraint]:
        """The claim set inside {V <= c}: c - V - sum m_i g_i a sum of squares."""
        if not self.sets:
            return []
        n, one = self.n, {tuple([0] * self.n): 1.0}
        aff = Affine(n).add_const(one, c).add_product(v, one, -1.0)
        hp = self.v_degree // 2
        for i, g in enumerate(self.sets):
            m = gram_unknown(f"inside_m{i}", full_basis(n, max(0, (self.v_degree - _deg(g)) // 2)))
            aff.add_product(m, g, -1.0)
        q = gram_unknown("inside", full_basis(n, hp, 0))
        aff.add_product(q, one, -1.0)
        return [aff.constraint()]

    def inside_hint(self, v: NumPoly, c: float) -> dict[str, tuple[np.ndarray, np.ndarray]] | None:
        """Multipliers and Gram matrix of ``inside`` for a fixed V and level."""
        n, one = self.n, {tuple([0] * self.n): 1.0}
        aff = Affine(n).add_const(one, c).add_const(v, -1.0)
        ms = []
        for i, g in enumerate(self.sets):
            m = gram_unknown(f"m{i}", full_basis(n, max(0, (self.v_degree - _deg(g)) // 2)))
            aff.add_product(m, g, -1.0)
            ms.append(m)
        q = gram_unknown("inside", full_basis(n, self.v_degree // 2, 0))
        aff.add_product(q, one, -1.0)
        t = cp.Variable()
        cons = [aff.constraint(), t <= 1.0]
        cons += [u.var - t * np.eye(u.var.shape[0]) >> 0 for u in [q, *ms]]
        prob = cp.Problem(cp.Maximize(t), cons)
        if not _solve(prob) or t.value is None or t.value <= FEASIBLE:
            return None
        out = {f"set {i + 1}": (m.basis, np.asarray(m.var.value)) for i, m in enumerate(ms)}
        out["inside"] = (q.basis, np.asarray(q.var.value))
        return out


def _safe(name: str) -> str:
    return "".join(ch if ch.isalnum() else "_" for ch in name)
