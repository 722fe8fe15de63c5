"""Numerical basin search: the largest sublevel set ``{V <= c}`` shown to shrink, degree by degree.

Works in the deviation from an equilibrium, in scaled coordinates ``z``
(the caller chooses the scaling, e.g. from simulation). For a fixed ``V`` the
level probe (program A) asks for a sum-of-squares multiplier ``s0`` with
``-lie(V) - eps|y|^2 - s0 (c - V)`` a sum of squares, maximising the smallest
eigenvalue of both Gram matrices (the margin exact rounding needs); the level
``c`` is a cvxpy Parameter, so the bisection re-solves one compiled program.
For fixed ``s0`` and ``c`` the shape step (program B) minimises ``V`` over a
thin ring around the current boundary (the first-order change of the volume
of ``{V <= c}``), followed by a line search on the step that is free of
solves: every convex combination of the old and new ``V`` stays feasible.
Each degree is warm-started from the previous one.

A domain ``{h_j >= 0}`` enters both programs by the S-procedure: the probe
also asks for ``t_j`` with ``h_j - t_j (c - V)`` and ``t_j`` sums of squares
(so only levels whose set lies in the domain are accepted), and the shape
step keeps those ``t_j`` fixed. For a claim's set ``{g_i >= 0}`` the claim
step (program C) fixes ``s0``, ``t_j`` and ``c`` and minimises ``gamma`` with
``gamma - V - sum_i s_i g_i`` a sum of squares, i.e. it lowers the largest
value of ``V`` on the set below the certified level: the expanding interior
idea of Jarvis-Wloszek, Feeley, Tan, Sun and Packard (CDC 2003) with the
claim's set in place of a shape ball.

Everything here is floating point: a hint for :mod:`proofkit.proofs.basin`,
which rebuilds every obligation exactly. This module never declares anything
proved and never sees the true region of attraction.
"""

from __future__ import annotations

import math
import time
import warnings
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import cvxpy as cp
import numpy as np

from proofkit.sos._ascent_maps import (
    MonoIndex,
    NumPoly,
    eval_map,
    gram_map,
    lie_map,
    monomials,
    mult_map,
)

__all__ = [
    "AscentSettings",
    "BasinIterate",
    "BasinSearch",
    "directions",
    "fit_squares",
    "ray_radii",
]

FEASIBLE = 1e-7  # smallest Gram eigenvalue that counts as a numerical yes


@dataclass(frozen=True)
class AscentSettings:
    """Knobs of the search; the defaults are the measured ones (tests/perf/bench_basin.py)."""

    s0_degree: int = 4
    backoff: float = 0.0005
    bisect_tol: float = 3e-4
    max_iterations: int = 60
    stall_iterations: int = 12
    stall_gain: float = 5e-5
    seconds_per_degree: float = 45.0
    eps: float = 1e-5
    directions: int = 256
    solver: str = "CLARABEL"
    s0_relative: int | None = -2  # s0 of degree at least deg V + this (None: s0_degree only)
    max_gram: int = 40  # s0's degree is lowered (not below 2) while the decrease Gram exceeds this
    ring_margin: float = 0.5  # shape step keeps this share of the level probe's margin
    steps: tuple[float, ...] = (1.0, 0.5, 0.25, 0.125)  # line search on the shape step


@dataclass
class BasinIterate:
    """A numerically certified level of one ``V`` (scaled coordinates)."""

    degree: int
    v: NumPoly
    level: float
    s0_basis: np.ndarray
    s0_gram: np.ndarray
    dec_basis: np.ndarray
    dec_gram: np.ndarray
    margin: float
    volume: float
    history: list[tuple[int, float, float, float]] = field(default_factory=list)
    t_grams: list[np.ndarray] = field(default_factory=list)  # domain multipliers t_j


def directions(nvars: int, count: int, seed: int = 7) -> np.ndarray:
    """Unit vectors: equally spaced angles in the plane, fixed pseudo-random ones above."""
    if nvars == 1:
        return np.array([[1.0], [-1.0]])
    if nvars == 2:
        th = (np.arange(count) + 0.5) * 2 * np.pi / count
        return np.column_stack([np.cos(th), np.sin(th)])
    g = np.random.default_rng(seed).standard_normal((count, nvars))
    return g / np.linalg.norm(g, axis=1, keepdims=True)


def _homogeneous_parts(v: NumPoly, dirs: np.ndarray) -> np.ndarray:
    """``a[j, k]``: the degree-k part of ``V`` at direction j, so ``V(r u_j) = sum_k a r^k``."""
    deg = v.exps.sum(axis=1)
    vals = eval_map(dirs, v.exps) * v.coeffs[None, :]
    out = np.zeros((dirs.shape[0], int(deg.max(initial=0)) + 1))
    for k in range(out.shape[1]):
        out[:, k] = vals[:, deg == k].sum(axis=1)
    return out


def ray_radii(v: NumPoly, level: float, dirs: np.ndarray, r_max: float) -> np.ndarray:
    """First radius where ``V(r u) = level`` along each direction (``r_max`` if none)."""
    a = _homogeneous_parts(v, dirs)
    powers = np.arange(a.shape[1])
    grid = np.geomspace(r_max * 1e-4, r_max, 400)
    vals = (a[:, None, :] * grid[None, :, None] ** powers[None, None, :]).sum(axis=2)
    above = vals >= level
    first = np.where(above.any(axis=1), above.argmax(axis=1), len(grid) - 1)
    hi = grid[first]
    lo = np.where(first > 0, grid[np.maximum(first - 1, 0)], 0.0)
    for _ in range(40):
        mid = 0.5 * (lo + hi)
        f = (a * mid[:, None] ** powers[None, :]).sum(axis=1)
        up = f >= level
        hi = np.where(up, mid, hi)
        lo = np.where(up, lo, mid)
    return hi


def _basis_size(n: int, top: int) -> int:
    """Monomials of degree 1..top/2 in n variables."""
    return math.comb(n + top // 2, n) - 1


def _ball_volume(n: int) -> float:
    return math.pi ** (n / 2) / math.gamma(n / 2 + 1)


def _degree(p: NumPoly) -> int:
    return int(p.exps.sum(axis=1).max(initial=0))


def _normalised(p: NumPoly) -> NumPoly:
    top = float(np.abs(p.coeffs).max(initial=0.0))
    return NumPoly(p.exps, p.coeffs / top) if top > 0 else p


def _s_bases(p_degree: int, term_degree: int, n: int) -> tuple[np.ndarray, np.ndarray]:
    """Bases of the multiplier ``t`` and of the Gram matrix of ``p - t * term``."""
    top = max(term_degree, p_degree)
    top += top % 2
    return monomials(n, (top - term_degree) // 2, 0), monomials(n, top // 2, 0)


def _degree_of(exps: np.ndarray) -> int:
    return int(exps.sum(axis=1).max(initial=0))


def _one(n: int) -> NumPoly:
    return NumPoly(np.zeros((1, n), dtype=np.int64), np.ones(1))


def _index_of(basis: np.ndarray) -> MonoIndex:
    return MonoIndex(basis.shape[1], 2 * int(basis.sum(axis=1).max(initial=0)))


def _embed(exps: np.ndarray, index: MonoIndex) -> Any:
    """Coefficients over ``exps`` -> the same polynomial over ``index``."""
    return mult_map(_one(index.nvars), exps, index)


class BasinSearch:
    """Alternating level/shape search for one vector field (scaled deviation coordinates)."""

    def __init__(
        self,
        field_z: list[NumPoly],
        settings: AscentSettings | None = None,
        eps_weights: np.ndarray | None = None,
        progress: Callable[[str], None] | None = None,
        domain: list[NumPoly] | None = None,
        claim_set: list[NumPoly] | None = None,
    ) -> None:
        """``domain`` and ``claim_set``: polynomials ``h_j``, ``g_i`` (``>= 0``), in ``z``."""
        self.field = field_z
        self.domain = [_normalised(h) for h in domain or ()]
        self.claim_set = [_normalised(g) for g in claim_set or ()]
        self.n = len(field_z)
        self.cfg = settings or AscentSettings()
        self.say = progress or (lambda _m: None)
        self.field_degree = max(int(g.exps.sum(axis=1).max(initial=1)) for g in field_z)
        w = np.ones(self.n) if eps_weights is None else np.asarray(eps_weights, float)
        self.eps_poly = NumPoly(2 * np.eye(self.n, dtype=np.int64), self.cfg.eps * w)
        self.dirs = directions(self.n, self.cfg.directions)
        self.solver_seconds = 0.0
        self.solves = 0

    # --- structure of one degree ------------------------------------------------------
    def shapes(self, degree: int) -> dict[str, object]:
        ds0 = max(self.cfg.s0_degree, 2 * math.ceil((self.field_degree - 1) / 2))
        if self.cfg.s0_relative is not None:
            ds0 = max(ds0, degree + self.cfg.s0_relative)
        need = 2 * math.ceil((self.field_degree - 1) / 2)  # s0 V must reach the top of lie(V)
        while (
            ds0 > max(need, 2) and _basis_size(self.n, self._top(degree, ds0)) > self.cfg.max_gram
        ):
            ds0 -= 2  # a smaller multiplier keeps large state spaces affordable
        top = self._top(degree, ds0)
        index = MonoIndex(self.n, top)
        return {
            "index": index,
            "v_support": monomials(self.n, degree, 2),
            "s0_basis": monomials(self.n, ds0 // 2, 1),
            "dec_basis": monomials(self.n, top // 2, 1),
            "pos_basis": monomials(self.n, degree // 2, 1),
            "domain": [_s_bases(_degree(h), degree, self.n) for h in self.domain],
            "set": [_s_bases(degree, _degree(g), self.n) for g in self.claim_set],
        }

    def _top(self, degree: int, ds0: int) -> int:
        top = max(degree + self.field_degree - 1, degree + ds0)
        return top + top % 2

    def _solve(self, prob: cp.Problem) -> bool:
        t0 = time.perf_counter()
        try:
            with warnings.catch_warnings():  # "inaccurate" is in prob.status already
                warnings.simplefilter("ignore", UserWarning)
                prob.solve(solver=self.cfg.solver)
        except cp.error.SolverError:
            return False
        finally:
            self.solver_seconds += time.perf_counter() - t0
            self.solves += 1
        return prob.status in ("optimal", "optimal_inaccurate")

    # --- program A: the level probe ------------------------------------------------------
    def level_program(self, v: NumPoly, sh: dict) -> tuple[cp.Problem, cp.Parameter, dict]:
        index: MonoIndex = sh["index"]
        b0, b1 = sh["s0_basis"], sh["dec_basis"]
        k0, k1 = b0.shape[0], b1.shape[0]
        s0_map = gram_map(b0, index)
        s0_index = MonoIndex(self.n, 2 * int(b0.sum(axis=1).max()))
        s0v_map = mult_map(v, s0_index.exps, index) @ gram_map(b0, s0_index)
        lie = lie_map(self.field, v.exps, index) @ v.coeffs
        rhs = -lie - index.vector(self.eps_poly)
        q0 = cp.Variable((k0, k0), symmetric=True)
        q1 = cp.Variable((k1, k1), symmetric=True)
        lam = cp.Variable()
        c = cp.Parameter(nonneg=True, value=1.0)
        g1 = gram_map(b1, index)
        lhs = g1 @ cp.vec(q1, order="F") + c * (s0_map @ cp.vec(q0, order="F"))
        lhs = lhs - s0v_map @ cp.vec(q0, order="F")
        cons = [lhs == rhs, q1 - lam * np.eye(k1) >> 0, q0 - lam * np.eye(k0) >> 0, lam <= 1]
        ts = []
        for h, (bt, bg) in zip(self.domain, sh["domain"], strict=True):
            t = cp.Variable((bt.shape[0], bt.shape[0]), symmetric=True)
            gj = cp.Variable((bg.shape[0], bg.shape[0]), symmetric=True)
            idx, tid = _index_of(bg), _index_of(bt)
            tvec = gram_map(bt, tid) @ cp.vec(t, order="F")
            lhs_j = gram_map(bg, idx) @ cp.vec(gj, order="F") + c * (_embed(tid.exps, idx) @ tvec)
            lhs_j = lhs_j - mult_map(v, tid.exps, idx) @ tvec  # h - t (c - V) = b' G b
            cons += [lhs_j == idx.vector(h), t - lam * np.eye(bt.shape[0]) >> 0]
            cons.append(gj - lam * np.eye(bg.shape[0]) >> 0)
            ts.append(t)
        prob = cp.Problem(cp.Maximize(lam), cons)
        return prob, c, {"q0": q0, "q1": q1, "lam": lam, "t": ts}

    @staticmethod
    def _values(var: dict) -> dict:
        out = {"q0": var["q0"].value.copy(), "q1": var["q1"].value.copy()}
        out["t"] = [t.value.copy() for t in var["t"]]
        return out

    def probe(self, prob: cp.Problem, c: cp.Parameter, var: dict, level: float) -> float | None:
        """Margin of the level probe at ``level``, or None when not feasible."""
        c.value = level
        if not self._solve(prob) or var["lam"].value is None:
            return None
        lam = float(var["lam"].value)
        return lam if lam > FEASIBLE else None

    def best_level(self, v: NumPoly, sh: dict, start: float) -> tuple[float, float, dict] | None:
        """Bisection for the largest feasible level, backed off; (level, margin, Gram values)."""
        prob, c, var = self.level_program(v, sh)
        lo, hi = 0.0, math.inf
        x = start
        for _ in range(40):  # bracket
            if self.probe(prob, c, var, x) is not None:
                lo, x = x, x * 2
                if hi < math.inf or x > 1e6 * start:
                    break
            else:
                hi, x = x, x / 2
                if lo > 0 or x < 1e-8 * start:
                    break
        if lo == 0.0:
            return None
        while hi < math.inf and hi / lo > 1 + self.cfg.bisect_tol:
            mid = math.sqrt(lo * hi)
            if self.probe(prob, c, var, mid) is not None:
                lo = mid
            else:
                hi = mid
        level = lo * (1 - self.cfg.backoff)
        margin = self.probe(prob, c, var, level)
        if margin is None:
            return None
        return level, margin, self._values(var)

    def at_level(self, v: NumPoly, degree: int, level: float) -> tuple[float, dict] | None:
        """Margin and Gram matrices of the level probe of ``v`` at one given level."""
        sh = self.shapes(degree)
        prob, c, var = self.level_program(self._pad(v, sh["v_support"]), sh)
        margin = self.probe(prob, c, var, level)
        if margin is None:
            return None
        return margin, self._values(var)

    # --- program B: the shape step ------------------------------------------------------
    def _fixed_multiplier_constraints(self, it: BasinIterate, sh: dict, vv: cp.Variable) -> list:
        """Decrease (``s0``, ``c`` fixed), positivity and domain (``t_j`` fixed): linear in V."""
        index: MonoIndex = sh["index"]
        supp, b1, bp = sh["v_support"], sh["dec_basis"], sh["pos_basis"]
        s0 = _gram_poly(it.s0_basis, it.s0_gram)
        q1 = cp.Variable((b1.shape[0], b1.shape[0]), symmetric=True)
        qp = cp.Variable((bp.shape[0], bp.shape[0]), symmetric=True)
        lie = lie_map(self.field, supp, index)
        s0v = mult_map(s0, supp, index)
        rhs = -index.vector(self.eps_poly) - it.level * index.vector(s0)
        lhs = gram_map(b1, index) @ cp.vec(q1, order="F") + lie @ vv - s0v @ vv
        pos = gram_map(bp, index) @ cp.vec(qp, order="F") - _embed(supp, index) @ vv
        mu = self.cfg.ring_margin * it.margin
        cons = [
            lhs == rhs,
            pos == -index.vector(self.eps_poly),
            q1 - mu * np.eye(b1.shape[0]) >> 0,
            qp >> 0,
        ]
        for h, (bt, bg), tg in zip(self.domain, sh["domain"], it.t_grams, strict=True):
            t = _gram_poly(bt, tg)  # h - t (c - V) = b' G b with t fixed
            idx = _index_of(bg)
            gj = cp.Variable((bg.shape[0], bg.shape[0]), symmetric=True)
            lhs_j = gram_map(bg, idx) @ cp.vec(gj, order="F") - mult_map(t, supp, idx) @ vv
            cons += [lhs_j == idx.vector(h) - it.level * idx.vector(t)]
            cons.append(gj - mu * np.eye(bg.shape[0]) >> 0)
        return cons

    def shape_step(self, it: BasinIterate, sh: dict, ring: np.ndarray, w: np.ndarray) -> NumPoly:
        supp = sh["v_support"]
        vv = cp.Variable(supp.shape[0])
        cons = self._fixed_multiplier_constraints(it, sh, vv)
        phi = w @ eval_map(ring, supp)
        prob = cp.Problem(cp.Minimize(phi @ vv), cons)
        if not self._solve(prob) or vv.value is None:
            return it.v
        return NumPoly(supp, np.asarray(vv.value, dtype=float))

    # --- program C: the claim step ------------------------------------------------------
    def claim_step(self, it: BasinIterate, sh: dict) -> tuple[NumPoly, float] | None:
        """``V`` and the least ``gamma`` with the claim's set inside ``{V <= gamma}``.

        ``s0``, ``t_j`` and the level stay fixed, so the new ``V`` still decreases on
        ``{V <= level}`` and that set stays in the domain; ``gamma < level`` means the
        claim's set lies inside it.
        """
        supp = sh["v_support"]
        vv = cp.Variable(supp.shape[0])
        gamma = cp.Variable()
        cons = self._fixed_multiplier_constraints(it, sh, vv)
        top = max([_degree_of(supp)] + [_degree(g) + _degree(g) % 2 for g in self.claim_set])
        top += top % 2
        bin_ = monomials(self.n, top // 2, 0)
        idx = MonoIndex(self.n, top)
        lhs = gram_map(bin_, idx) @ cp.vec(self._psd(bin_, cons), order="F")
        lhs = lhs + _embed(supp, idx) @ vv - gamma * idx.vector(_one(self.n))
        for g, (bs, _bg) in zip(self.claim_set, sh["set"], strict=True):
            sid = _index_of(bs)
            s_i = gram_map(bs, sid) @ cp.vec(self._psd(bs, cons), order="F")
            lhs = lhs + mult_map(g, sid.exps, idx) @ s_i  # gamma - V - sum s_i g_i = b' Q b
        cons.append(lhs == 0)
        prob = cp.Problem(cp.Minimize(gamma), cons)
        if not self._solve(prob) or vv.value is None or gamma.value is None:
            return None
        return NumPoly(supp, np.asarray(vv.value, dtype=float)), float(gamma.value)

    @staticmethod
    def _psd(basis: np.ndarray, cons: list) -> cp.Variable:
        q = cp.Variable((basis.shape[0], basis.shape[0]), symmetric=True)
        cons.append(q >> 0)
        return q

    def volume(self, v: NumPoly, level: float) -> tuple[float, np.ndarray]:
        r_max = math.sqrt(level / self.cfg.eps)
        r = ray_radii(v, level, self.dirs, r_max)
        return _ball_volume(self.n) * float(np.mean(r**self.n)), r

    def ring(self, v: NumPoly, level: float) -> tuple[np.ndarray, np.ndarray]:
        """Boundary points and weights ``r^(n-1) / (dV/dr)``: the first-order volume change."""
        _vol, r = self.volume(v, level)
        a = _homogeneous_parts(v, self.dirs)
        k = np.arange(a.shape[1])
        dvdr = (a[:, 1:] * k[None, 1:] * r[:, None] ** (k[None, 1:] - 1)).sum(axis=1)
        w = r ** (self.n - 1) / np.maximum(dvdr, 1e-12)
        return self.dirs * r[:, None], w / w.sum()

    # --- the alternation ------------------------------------------------------------------
    def _pad(self, v: NumPoly, supp: np.ndarray) -> NumPoly:
        index = MonoIndex(self.n, int(supp.sum(axis=1).max()))
        coeffs = np.zeros(supp.shape[0])
        vec = index.vector(v)
        coeffs[:] = vec[index.rows(supp)]
        return NumPoly(supp, coeffs)

    def _radial(self, degree: int, weight: float) -> NumPoly:
        """``weight * (sum z_i^2)^(degree/2)`` expanded."""
        exps = monomials(self.n, degree, degree)
        exps = exps[(exps % 2 == 0).all(axis=1)]
        half = exps // 2
        coeffs = np.array(
            [
                math.factorial(degree // 2) / math.prod(math.factorial(int(e)) for e in h)
                for h in half
            ]
        )
        return NumPoly(exps, weight * coeffs)

    def level_of(self, v: NumPoly, degree: int, start: float = 1.0) -> BasinIterate | None:
        sh = self.shapes(degree)
        v = self._pad(v, sh["v_support"])
        got = self.best_level(v, sh, start)
        if got is None:
            return None
        level, margin, grams = got
        vol, _ = self.volume(v, level)
        return BasinIterate(
            degree, v, level, sh["s0_basis"], grams["q0"], sh["dec_basis"], grams["q1"],
            margin, vol, t_grams=grams["t"],
        )  # fmt: skip

    def raise_degree(self, it: BasinIterate, degree: int) -> BasinIterate | None:
        """``it`` as a start at a higher degree, at its best level there (warm start).

        A small ``|z|^degree`` term keeps the top-degree Gram block definite.
        """
        sh = self.shapes(degree)
        r_top = float(self.volume(it.v, it.level)[1].max())
        top = self._radial(degree, 1e-3 * it.level / r_top**degree)
        top = self._pad(top, sh["v_support"])
        padded = self._pad(it.v, sh["v_support"])
        start = NumPoly(padded.exps, padded.coeffs + top.coeffs)
        nxt = self.level_of(start, degree, it.level)
        if nxt is not None:
            nxt.history = it.history
        return nxt

    def improve(self, it: BasinIterate, degree: int, t_start: float | None = None) -> BasinIterate:
        """Alternate shape steps and level probes at ``degree`` from ``it`` (warm start)."""
        t0 = time.perf_counter() if t_start is None else t_start
        sh = self.shapes(degree)
        if it.degree != degree:
            nxt = self.raise_degree(it, degree)
            if nxt is None:
                return it
            it = nxt
        stall = 0
        for k in range(1, self.cfg.max_iterations + 1):
            if time.perf_counter() - t0 > self.cfg.seconds_per_degree:
                break
            ring, w = self.ring(it.v, it.level)
            cand = self.shape_step(it, sh, ring, w)
            best_v, best_vol = it.v, it.volume
            for t in self.cfg.steps:
                vt = NumPoly(it.v.exps, it.v.coeffs + t * (cand.coeffs - it.v.coeffs))
                vol, _ = self.volume(vt, it.level)
                if vol > best_vol:
                    best_v, best_vol = vt, vol
            if best_v is it.v:
                break  # the shape step found nothing better: the next round would repeat this one
            scale = it.level
            v_norm = NumPoly(best_v.exps, best_v.coeffs / scale)
            nxt = self.level_of(v_norm, degree, 1.0)
            if nxt is None or nxt.volume < it.volume * (1 + 1e-9):
                stall += 1
                if nxt is None or stall >= self.cfg.stall_iterations:
                    break
                if nxt.volume < it.volume:
                    continue
            gain = nxt.volume / it.volume - 1
            stall = stall + 1 if gain < self.cfg.stall_gain else 0
            nxt.history = [*it.history, (degree, k, nxt.level, nxt.volume)]
            it = nxt
            self.say(
                f"degree {degree}, iteration {k}: level {it.level:.6g}, "
                f"size {it.volume:.6g}, {time.perf_counter() - t0:.1f} s"
            )
            if stall >= self.cfg.stall_iterations:
                break
        return it


def fit_squares(
    p0: NumPoly,
    terms: list[tuple[NumPoly, np.ndarray]],
    basis: np.ndarray,
    solver: str = "CLARABEL",
) -> tuple[list[np.ndarray], np.ndarray, float] | None:
    """Gram matrices with ``p0 + sum_i q_i (b_i' M_i b_i) = b' Q b``, all PSD, maximal margin.

    ``terms`` pairs each fixed polynomial ``q_i`` with the basis of its
    multiplier. Returns the multiplier Gram matrices, ``Q`` and the smallest
    eigenvalue reached, or None when no positive margin was found.
    """
    n = basis.shape[1]
    top = 2 * int(basis.sum(axis=1).max(initial=0))
    for q, b in terms:
        top = max(top, int(q.exps.sum(axis=1).max(initial=0)) + 2 * int(b.sum(axis=1).max()))
    index = MonoIndex(n, top)
    qv = cp.Variable((basis.shape[0], basis.shape[0]), symmetric=True)
    lam = cp.Variable()
    lhs = gram_map(basis, index) @ cp.vec(qv, order="F")
    mults, cons = [], []
    for q, b in terms:
        m = cp.Variable((b.shape[0], b.shape[0]), symmetric=True)
        mid = MonoIndex(n, 2 * int(b.sum(axis=1).max()))
        lhs = lhs - mult_map(q, mid.exps, index) @ gram_map(b, mid) @ cp.vec(m, order="F")
        cons.append(m - lam * np.eye(b.shape[0]) >> 0)
        mults.append(m)
    cons += [lhs == index.vector(p0), qv - lam * np.eye(basis.shape[0]) >> 0, lam <= 1]
    prob = cp.Problem(cp.Maximize(lam), cons)
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", UserWarning)
            prob.solve(solver=solver)
    except cp.error.SolverError:
        return None
    if prob.status not in ("optimal", "optimal_inaccurate") or lam.value is None:
        return None
    if float(lam.value) <= FEASIBLE * 1e-2:
        return None
    return [m.value for m in mults], qv.value, float(lam.value)


def _gram_poly(basis: np.ndarray, gram: np.ndarray) -> NumPoly:
    """``b' G b`` as a numerical polynomial."""
    top = int(basis.sum(axis=1).max()) * 2
    index = MonoIndex(basis.shape[1], top)
    coeffs = gram_map(basis, index) @ gram.ravel(order="F")
    keep = np.abs(coeffs) > 0
    return NumPoly(index.exps[keep], coeffs[keep])
