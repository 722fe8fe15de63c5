"""A polynomial ``W`` whose level sets follow a numerically located cycle (a linear program).

Given an attracting cycle of a planar field (from :mod:`proofkit.analysis.orbits`),
:func:`fit_annulus` looks for ``W`` of a given degree, in coordinates centred and
scaled to the cycle, with, at the points of a grid around it (``d`` the
distance to the cycle):

* outside the cycle: ``W - 1 >= delta d`` and ``-lie(W) >= delta d``;
* inside, away from the equilibria: ``1 - W >= delta d`` and ``lie(W) >= delta d``;
* near the equilibria inside: ``W <= 1/4``; on the cycle ``|W - 1| <= 1/50``;
* the top-degree form of ``W`` at least ``delta`` on the unit circle (coercive),

maximising ``delta`` (scipy's HiGHS). Then every level set ``W = c`` with ``c``
a little below or above 1 is crossed by the flow in the direction the
Poincaré–Bendixson annulus needs; :func:`choose_levels` picks the inner and
outer levels by checking the crossings on a fine grid. ``W`` is rounded to
rationals before any exact step.

Everything here is floating point and only proposes a ``W``; the exact
obligations are checked by :mod:`proofkit.exact` and, finally, the audit.

It must never be taken as evidence: nothing here is exact.
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction

import numpy as np
import sympy as sp

from proofkit.analysis.orbits import Cycle, NumericField

__all__ = ["FittedW", "choose_levels", "fit_annulus"]

_BALL = 0.25  # W below this near the equilibria
_GRID = 35


@dataclass(frozen=True)
class FittedW:
    """``W(x) = sum c_j u^a v^b`` with ``(u, v) = (x - centre) / scale`` (floats)."""

    degree: int
    monomials: tuple[tuple[int, int], ...]
    coefficients: np.ndarray
    centre: tuple[float, float]
    scale: float
    delta: float

    def u(self, x: np.ndarray) -> np.ndarray:
        return (x - np.array(self.centre)[:, None]) / self.scale

    def value(self, x: np.ndarray) -> np.ndarray:
        return _features(self.monomials, self.u(x)) @ self.coefficients

    def lie(self, nf: NumericField, x: np.ndarray) -> np.ndarray:
        return _lie_features(self.monomials, self.u(x), nf.f(x) / self.scale) @ self.coefficients

    def rational(self, xs: tuple[sp.Symbol, sp.Symbol], bits: int = 24) -> sp.Expr:
        """``W`` over the states, each coefficient rounded to ``2^-bits`` of the largest."""
        x, y = xs
        cx, cy = (_rat(v, 1 << 10) for v in self.centre)
        r = _rat(self.scale, 1 << 10)
        u, v = (x - cx) / r, (y - cy) / r
        terms = (
            sp.Float(c, 17) * u**a * v**b
            for (a, b), c in zip(self.monomials, self.coefficients, strict=True)
        )
        poly = sp.Poly(sp.expand(sum(terms, sp.Integer(0))), x, y)
        big = max(abs(float(c)) for c in poly.coeffs())
        den = 1 << max(0, bits - int(np.ceil(np.log2(big))))
        out = sp.Integer(0)
        for mono, c in poly.terms():
            out += _rat(float(c), den) * x ** mono[0] * y ** mono[1]
        return out


def _rat(v: float, den: int) -> sp.Rational:
    q = Fraction(round(float(v) * den), den)
    return sp.Rational(q.numerator, q.denominator)


def _monomials(degree: int) -> tuple[tuple[int, int], ...]:
    return tuple((a, d - a) for d in range(degree + 1) for a in range(d, -1, -1))


def _features(mons: tuple[tuple[int, int], ...], u: np.ndarray) -> np.ndarray:
    return np.stack([u[0] ** a * u[1] ** b for a, b in mons], axis=-1)


def _lie_features(mons: tuple[tuple[int, int], ...], u: np.ndarray, fu: np.ndarray) -> np.ndarray:
    cols = []
    for a, b in mons:
        du = a * u[0] ** max(a - 1, 0) * u[1] ** b if a else np.zeros_like(u[0])
        dv = b * u[0] ** a * u[1] ** max(b - 1, 0) if b else np.zeros_like(u[0])
        cols.append(du * fu[0] + dv * fu[1])
    return np.stack(cols, axis=-1)


def _inside(points: np.ndarray, loop: np.ndarray) -> np.ndarray:
    """Winding number test of each point (2, N) against the closed polygon ``loop`` (2, K)."""
    dx = loop[0][None, :] - points[0][:, None]
    dy = loop[1][None, :] - points[1][:, None]
    ang = np.arctan2(dy, dx)
    turn = np.diff(np.concatenate([ang, ang[:, :1]], axis=1), axis=1)
    turn = (turn + np.pi) % (2 * np.pi) - np.pi
    return np.abs(turn.sum(axis=1)) > np.pi


def _distance(points: np.ndarray, loop: np.ndarray) -> np.ndarray:
    d = (points[0][:, None] - loop[0][None, :]) ** 2 + (points[1][:, None] - loop[1][None, :]) ** 2
    return np.sqrt(d.min(axis=1))


def _cloud(
    nf: NumericField, loop: np.ndarray, centre: np.ndarray, scale: float, grid_size: int = _GRID
) -> np.ndarray:
    """Scaled points: a grid around the cycle and points on its normals at small distances."""
    ticks = np.linspace(-2.5, 2.5, grid_size)
    grid = np.stack([g.ravel() for g in np.meshgrid(ticks, ticks, indexing="ij")])
    u_loop = (loop - centre[:, None]) / scale
    sub = u_loop[:, ::4]
    tang = nf.f(loop[:, ::4])
    normal = np.stack([tang[1], -tang[0]]) / np.linalg.norm(tang, axis=0)
    offsets = [s * k for s in (0.03, 0.06, 0.1, 0.15, 0.22) for k in (1, -1)]
    near = np.hstack([sub + o * normal for o in offsets])
    return np.hstack([grid, near])


def fit_annulus(
    nf: NumericField,
    cycle: Cycle,
    degree: int,
    reach: float | None = None,
    grid_size: int = _GRID,
) -> FittedW | None:
    """The linear program of the module docstring; None when ``delta`` is not positive.

    ``reach``: the flow conditions outside the cycle are asked only within this
    (scaled) distance of it, for cycles with equilibria outside them (the value
    conditions stay on the whole grid; :func:`choose_levels` checks the crossings);
    ``grid_size``: points per axis of the grid.
    """
    from scipy.optimize import linprog

    loop = cycle.orbit[:, :-1]
    centre = loop.mean(axis=1)
    scale = float(np.abs(loop - centre[:, None]).max())
    mons = _monomials(degree)
    u_loop = (loop - centre[:, None]) / scale
    gu = _cloud(nf, loop, centre, scale, grid_size)
    pts = centre[:, None] + scale * gu
    speed = float(np.median(np.linalg.norm(nf.f(loop), axis=0)))
    fu = nf.f(pts) / (scale * speed)
    dist = _distance(gu, u_loop)
    inside = _inside(gu, u_loop)
    slow = np.linalg.norm(fu, axis=0) * scale < 0.2
    band = dist < 0.02
    ball = inside & (slow | (dist > 0.7 * dist[inside].max(initial=0.0)))
    outer = ~inside & ~band
    inner = inside & ~band & ~ball
    feat, lie = _features(mons, gu), _lie_features(mons, gu, fu)
    m = len(mons)
    rows, rhs = [], []

    def add(a: np.ndarray, b: np.ndarray, d: np.ndarray | None) -> None:
        # a @ c + d * delta <= b
        dcol = np.zeros((a.shape[0], 1)) if d is None else d[:, None]
        rows.append(np.hstack([a, dcol]))
        rhs.append(b)

    add(-feat[outer], -np.ones(outer.sum()), dist[outer])
    flow = outer if reach is None else outer & (dist < reach)
    add(lie[flow], np.zeros(flow.sum()), dist[flow])
    add(feat[inner], np.ones(inner.sum()), dist[inner])
    add(-lie[inner], np.zeros(inner.sum()), dist[inner])
    add(feat[ball], np.full(ball.sum(), _BALL), None)
    add(-feat[ball], np.full(ball.sum(), 1.0), None)  # W >= -1 there
    on = _features(mons, u_loop[:, ::4])
    add(on, np.full(on.shape[0], 1.02), None)
    add(-on, np.full(on.shape[0], -0.98), None)
    theta = np.linspace(0, 2 * np.pi, 48, endpoint=False)
    top = _features(mons, np.stack([np.cos(theta), np.sin(theta)]))
    top[:, [sum(mn) != degree for mn in mons]] = 0.0
    add(-top, np.zeros(len(theta)), np.ones(len(theta)))
    cost = np.zeros(m + 1)
    cost[-1] = -1.0
    bounds = [(-50.0, 50.0)] * m + [(None, 1.0)]
    res = linprog(
        cost, A_ub=np.vstack(rows), b_ub=np.concatenate(rhs), bounds=bounds, method="highs-ipm"
    )
    if res.status != 0 or res.x[-1] <= 1e-6:
        return None
    return FittedW(degree, mons, res.x[:m], (float(centre[0]), float(centre[1])), scale, res.x[-1])


def _grid(w: FittedW, nf: NumericField, n: int = 201) -> tuple[np.ndarray, np.ndarray]:
    """``W`` and ``lie(W)`` on an n x n grid around the cycle (2.5 scales each way)."""
    ticks = np.linspace(-2.5, 2.5, n)
    gu = np.stack([g.ravel() for g in np.meshgrid(ticks, ticks, indexing="ij")])
    pts = np.array(w.centre)[:, None] + w.scale * gu
    return w.value(pts).reshape(n, n), w.lie(nf, pts).reshape(n, n)


def _crossings(val: np.ndarray, lie: np.ndarray, level: float) -> np.ndarray | None:
    """lie(W) where the grid crosses ``W = level``; None if the level set meets the edge."""
    val = val - level
    edge = np.concatenate([val[0], val[-1], val[:, 0], val[:, -1]])
    if np.any(edge <= 0):
        return None
    cross_a = np.sign(val[1:, :]) != np.sign(val[:-1, :])
    cross_b = np.sign(val[:, 1:]) != np.sign(val[:, :-1])
    both = np.concatenate([lie[1:, :][cross_a], lie[:-1, :][cross_a]])
    return np.concatenate([both, lie[:, 1:][cross_b], lie[:, :-1][cross_b]])


def choose_levels(w: FittedW, nf: NumericField) -> list[tuple[Fraction, Fraction]]:
    """Pairs (inner, outer), best first, whose level curves the flow crosses the right way."""
    val, lie = _grid(w, nf)
    inners, outers = [], []
    for c in (Fraction(k, 20) for k in range(7, 20)):
        vals = _crossings(val, lie, float(c))
        if vals is not None and len(vals) and vals.min() > 0:
            inners.append((float(vals.min()), c))
    for c in (Fraction(k, 20) for k in range(21, 34)):
        vals = _crossings(val, lie, float(c))
        if vals is not None and len(vals) and vals.max() < 0:
            outers.append((float(-vals.max()), c))
    inners.sort(reverse=True)
    outers.sort(reverse=True)
    return [(a[1], b[1]) for a, b in zip(inners[:3], outers[:3], strict=False)]
