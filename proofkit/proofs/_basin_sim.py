"""Simulation for region-of-attraction work: coordinate scaling and counterexamples.

Everything here is numerical (numpy fixed-step RK4 on batches, scipy
``solve_ivp`` for the one trajectory that is shown to the user). It chooses
the scaling of the coordinates for the basin search, and it looks for a
start point of a claim's set whose trajectory does not converge to the
equilibrium. It never turns a proof into a non-proof and never decides a
"proved"; a counterexample carries its exact rational start point, checked
to lie in the set exactly, and the trajectory as plot-ready samples.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

import flint
import numpy as np

from proofkit.sos._ascent_maps import NumPoly

__all__ = [
    "Counterexample",
    "batch_converges",
    "coordinate_scale",
    "find_counterexample",
    "numeric",
    "time_scale",
    "trajectory",
]

Field = Callable[[np.ndarray], np.ndarray]


def numeric(polys: Sequence[flint.fmpq_mpoly], nvars: int) -> list[NumPoly]:
    out = []
    for p in polys:
        exps = np.array(p.monoms(), dtype=np.int64).reshape(-1, nvars)
        out.append(NumPoly(exps, np.array([float(c) for c in p.coeffs()])))
    return out


def _rhs(field: list[NumPoly]) -> Field:
    """The field on a batch of rows: one evaluation of the union of monomials per call."""
    n = len(field)
    exps = np.unique(np.vstack([g.exps for g in field]), axis=0)
    coef = np.zeros((exps.shape[0], n))
    for i, g in enumerate(field):
        for e, c in zip(g.exps, g.coeffs, strict=True):
            coef[np.flatnonzero((exps == e).all(axis=1))[0], i] += c
    top = int(exps.max(initial=0))

    def f(y: np.ndarray) -> np.ndarray:
        powers = [[np.ones(y.shape[0])] for _ in range(n)]
        for i in range(n):
            for _ in range(top):
                powers[i].append(powers[i][-1] * y[:, i])
        cols = [np.prod([powers[i][e[i]] for i in range(n)], axis=0) for e in exps]
        return np.column_stack(cols) @ coef

    return f


def time_scale(field: list[NumPoly]) -> tuple[float, float]:
    """(horizon, step) from the linear part: 20 slowest time constants, 1/5 of the fastest."""
    n = len(field)
    a = np.zeros((n, n))
    for i, g in enumerate(field):
        for e, c in zip(g.exps, g.coeffs, strict=True):
            if e.sum() == 1:
                a[i, int(np.argmax(e))] += c
    lam = np.linalg.eigvals(a)
    slow = max(float(np.min(np.abs(lam.real))), 1e-3)
    fast = max(float(np.max(np.abs(lam))), 1e-3)
    return min(20.0 / slow, 400.0), min(0.05, 0.2 / fast)


def _rk4(
    f: Field, y: np.ndarray, horizon: float, dt: float, blow: float, settle: float = 0.0
) -> np.ndarray:
    """Fixed-step RK4 on a batch; rows leaving ``|y| <= blow`` or inside ``settle`` freeze."""
    y = y.copy()
    alive = np.ones(y.shape[0], dtype=bool)
    steps = math.ceil(horizon / dt)
    with np.errstate(all="ignore"):
        for _ in range(steps):
            if not alive.any():
                break
            ya = y[alive]
            k1 = f(ya)
            k2 = f(ya + 0.5 * dt * k1)
            k3 = f(ya + 0.5 * dt * k2)
            k4 = f(ya + dt * k3)
            ya = ya + dt / 6 * (k1 + 2 * k2 + 2 * k3 + k4)
            norm = np.linalg.norm(ya, axis=1)
            bad = ~np.isfinite(ya).all(axis=1) | (norm > blow)
            done = norm < settle
            ya[bad] = np.inf
            ya[done] = 0.0
            y[alive] = ya
            alive[np.flatnonzero(alive)[bad | done]] = False
    return y


def batch_converges(field: list[NumPoly], starts: np.ndarray, tol: float) -> np.ndarray:
    """Which starts (deviation coordinates) end within ``tol`` of the equilibrium (RK4)."""
    horizon, dt = time_scale(field)
    blow = 1e3 * max(1.0, float(np.abs(starts).max(initial=1.0)))
    end = _rk4(_rhs(field), starts, horizon, dt, blow, settle=0.5 * tol)
    return np.linalg.norm(end, axis=1) < tol


def coordinate_scale(field: list[NumPoly], ndirs: int = 32) -> tuple[Fraction, ...]:
    """Per-coordinate extent of the simulated region of attraction (a hint, rounded to Q)."""
    from proofkit.sos.ascent import directions

    n = len(field)
    dirs = directions(n, ndirs) if n == 2 else np.vstack([np.eye(n), -np.eye(n), directions(n, 24)])
    radii = np.geomspace(1e-2, 1e3, 41)
    pts = (dirs[:, None, :] * radii[None, :, None]).reshape(-1, n)
    ok = batch_converges(field, pts, 1e-4).reshape(len(dirs), len(radii))
    first_bad = np.where((~ok).any(axis=1), (~ok).argmax(axis=1), len(radii))
    lo = radii[np.maximum(first_bad - 1, 0)]
    hi = np.where(first_bad < len(radii), radii[np.minimum(first_bad, len(radii) - 1)], lo)
    fine = np.linspace(0, 1, 12)[None, :] * (hi - lo)[:, None] + lo[:, None]
    pts = (dirs[:, None, :] * fine[:, :, None]).reshape(-1, n)
    ok = batch_converges(field, pts, 1e-4).reshape(len(dirs), fine.shape[1])
    last = np.where(ok.all(axis=1), fine.shape[1] - 1, np.maximum((~ok).argmax(axis=1) - 1, 0))
    reach = fine[np.arange(len(dirs)), last]
    extent = np.max(np.abs(dirs) * reach[:, None], axis=0)
    extent = np.maximum(extent, 1e-2)
    return tuple(Fraction(float(e)).limit_denominator(16) or Fraction(1, 16) for e in extent)


def trajectory(
    f_num: list[NumPoly], start: np.ndarray, horizon: float, ball: float
) -> tuple[np.ndarray, np.ndarray, str]:
    """``solve_ivp`` (tight tolerances) from ``start``; samples, times and how it ended."""
    from scipy.integrate import solve_ivp

    rhs = _rhs(f_num)

    def fun(_t: float, y: np.ndarray) -> np.ndarray:
        return rhs(y[None, :])[0]

    def leave(_t: float, y: np.ndarray) -> float:
        return ball - float(np.linalg.norm(y))

    leave.terminal = True  # type: ignore[attr-defined]
    sol = solve_ivp(fun, (0.0, horizon), start, rtol=1e-9, atol=1e-12, events=leave,
                    dense_output=False, max_step=horizon / 200)  # fmt: skip
    end = "left" if sol.status == 1 else "ran"
    return sol.y.T, sol.t, end


@dataclass(frozen=True)
class Counterexample:
    """A start point in the claim's set (exact) whose simulated trajectory does not converge."""

    start: tuple[Fraction, ...]  # in the states x (not the deviation)
    what: str
    kind: str  # "escaped" | "settled" (at another point) | "equilibrium" (exact)
    horizon: float
    times: np.ndarray
    samples: np.ndarray  # in the states x

    def as_json(self) -> dict[str, Any]:
        step = max(1, len(self.times) // 400)
        return {
            "start": [str(c) for c in self.start],
            "what_happened": self.what,
            "kind": self.kind,
            "time_horizon": round(self.horizon, 6),
            "trajectory": {
                "t": [round(float(t), 6) for t in self.times[::step]],
                "x": [[float(f"{v:.8g}") for v in row] for row in self.samples[::step]],
            },
            "note": "simulation (scipy solve_ivp, rtol 1e-9): numerical evidence, not a proof",
        }


def _sample_set(
    conds: Sequence[tuple[NumPoly, bool]], n: int, reach: float, rng: np.random.Generator
) -> np.ndarray:
    """Points of the set (deviation coordinates), from boxes of growing size."""
    out = []
    for half in (0.1 * reach, reach, 4 * reach, 30 * reach):
        pts = rng.uniform(-half, half, size=(1500, n))
        keep = np.ones(len(pts), dtype=bool)
        for g, strict in conds:
            val = g(pts)
            keep &= val > 0 if strict else val >= 0
        out.append(pts[keep][:300])
    return np.vstack(out)


def find_counterexample(
    field: list[NumPoly],
    point: Sequence[Fraction],
    conds: Sequence[tuple[flint.fmpq_mpoly, bool]],
    reach: float,
    seed: int = 11,
) -> Counterexample | None:
    """A start in the set (conditions over the deviation ``y``) that does not converge to 0."""
    n = len(field)
    num_conds = [(numeric([g], n)[0], strict) for g, strict in conds]
    pts = _sample_set(num_conds, n, reach, np.random.default_rng(seed))
    if len(pts) == 0:
        return None
    scale = max(reach, float(np.abs(pts).max()))
    ok = batch_converges(field, pts, 1e-3 * max(reach, 1e-3))
    order = np.argsort(np.linalg.norm(pts, axis=1))
    horizon, _dt = time_scale(field)
    for i in [int(k) for k in order if not ok[k]][:5]:
        start = tuple(Fraction(float(c)).limit_denominator(1000) for c in pts[i])
        q = [flint.fmpq(s.numerator, s.denominator) for s in start]
        if not all((g(*q) > 0) if strict else (g(*q) >= 0) for g, strict in conds):
            continue
        ball = 100 * scale
        ys, ts, end = trajectory(field, np.array([float(s) for s in start]), horizon, ball)
        last = ys[-1]
        speed = float(np.linalg.norm(_rhs(field)(last[None, :])[0]))
        if end == "left":
            kind, what = "escaped", f"left the ball |x - x*| <= {ball:.4g} at t = {ts[-1]:.4g}"
        elif np.linalg.norm(last) > 1e-2 * max(reach, 1e-3) and speed < 1e-6:
            where = ", ".join(f"{float(p) + v:.6g}" for p, v in zip(point, last, strict=True))
            kind, what = "settled", f"settled at ({where}), another equilibrium (speed {speed:.2g})"
        else:
            continue  # converging, or too slow to tell: not a counterexample
        shift = np.array([float(p) for p in point])
        start_x = tuple(p + s for p, s in zip(point, start, strict=True))
        return Counterexample(start_x, what, kind, float(ts[-1]), ts, ys + shift[None, :])
    return None
