"""Numerical location of periodic orbits: exploration, shooting, Floquet multipliers.

:func:`find_cycles` simulates a grid of starts forward and backward in time
(vectorised fixed-step Runge–Kutta; trajectories that leave a large ball are
frozen), groups the trajectories whose tails share a limit set, and refines
one candidate per group by Newton's method on the Poincaré return map: the
unknowns are a point ``x`` and the period ``T`` with ``phi(T, x) = x`` and the
phase condition ``f(x0) . (x - x0) = 0`` (the section through ``x0`` normal
to the flow). The Jacobian of the shooting system comes from the
variational equations ``M' = J(x) M``; at convergence ``M(T)`` is the
monodromy matrix, whose eigenvalues are the Floquet multipliers. Cycles found
backward in time (repelling ones) are refined in reversed time, where they
attract, and their multipliers inverted.

Everything here is a numerical finding in floating point: it is a hint for
the provers, never evidence, and this module must never call a cycle proved.
It never evaluates model text (the field is compiled from the parsed sympy
expressions).
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field

import numpy as np

from proofkit.errors import ModelError
from proofkit.model import Model

__all__ = ["Cycle", "NumericField", "OrbitSearch", "find_cycles", "numeric_field", "refine_cycle"]

MAX_STATES = 6
MAX_CYCLES = 12
_ESCAPE = 20.0  # trajectories beyond this multiple of the box are frozen
MAX_EVALUATIONS = 60_000  # field evaluations per integration in the shooting method
Progress = Callable[[str], None]


@dataclass(frozen=True)
class NumericField:
    """The vector field and its Jacobian as float functions of ``x`` (shape (n,) or (n, N))."""

    states: tuple[str, ...]
    f: Callable[[np.ndarray], np.ndarray]
    jac: Callable[[np.ndarray], np.ndarray]

    @property
    def n(self) -> int:
        return len(self.states)


@dataclass(frozen=True)
class Cycle:
    """One periodic orbit found numerically (floating point; not a proof)."""

    period: float
    point: tuple[float, ...]  # a point on the orbit (on the Poincaré section)
    amplitude: tuple[float, ...]  # per state: the largest |x_i| on the orbit
    multipliers: tuple[complex, ...]  # Floquet multipliers, the trivial one (near 1) first
    stable: bool  # every nontrivial multiplier inside the unit circle
    residual: float  # |phi(T, x) - x| at the returned point
    orbit: np.ndarray = field(repr=False, compare=False)  # shape (n, m): one period, sampled
    times: np.ndarray = field(repr=False, compare=False)

    @property
    def hyperbolic(self) -> bool:
        """No nontrivial multiplier on the unit circle (1e-6): the cycle is isolated."""
        return all(abs(abs(m) - 1.0) > 1e-6 for m in self.multipliers[1:])

    def as_json(self, states: Sequence[str]) -> dict[str, object]:
        return {
            "period": self.period,
            "amplitude": dict(zip(states, self.amplitude, strict=True)),
            "multipliers": [_mult_json(m) for m in self.multipliers],
            "stable": self.stable,
            "hyperbolic": self.hyperbolic,
            "point": dict(zip(states, self.point, strict=True)),
            "residual": self.residual,
        }


def _mult_json(m: complex) -> float | list[float]:
    return float(m.real) if abs(m.imag) <= 1e-12 * max(1.0, abs(m)) else [m.real, m.imag]


@dataclass(frozen=True)
class OrbitSearch:
    """Every cycle found, and how the search was set up."""

    states: tuple[str, ...]
    cycles: tuple[Cycle, ...]
    box: tuple[tuple[float, float], ...]
    starts: int
    notes: tuple[str, ...] = ()

    def as_json(self) -> dict[str, object]:
        return {
            "cycles": [c.as_json(self.states) for c in self.cycles],
            "search": {"box": [list(b) for b in self.box], "starts": self.starts},
            "notes": list(self.notes),
            "numerical": "numerical findings in floating point, not proofs",
        }


def numeric_field(model: Model) -> NumericField:
    """Float functions for ``f`` and ``df/dx`` at the nominal parameter values."""
    import sympy as sp

    nominal = model.at_nominal()
    xs = list(nominal.state_symbols)
    exprs = list(nominal.field)
    if len(xs) > MAX_STATES:
        raise ModelError(f"orbit search handles up to {MAX_STATES} states, not {len(xs)}")
    free = set().union(*(e.free_symbols for e in exprs)) - set(xs)
    if free:
        names = ", ".join(sorted(str(s) for s in free))
        raise ModelError(f"the vector field depends on {names} besides the states")
    jac = sp.Matrix(exprs).jacobian(xs)
    # lambdify compiles the parsed sympy trees (never user text) into numpy code.
    f_raw = sp.lambdify([xs], exprs, "numpy")
    j_raw = sp.lambdify([xs], jac.tolist(), "numpy")
    n = len(xs)

    def f(x: np.ndarray) -> np.ndarray:
        out = np.empty(np.shape(x), dtype=float)
        for i, v in enumerate(f_raw(x)):
            out[i] = v  # broadcasts constant components
        return out

    def j(x: np.ndarray) -> np.ndarray:
        return np.array(j_raw(x), dtype=float).reshape(n, n)

    return NumericField(tuple(model.states), f, j)


# --- exploration -------------------------------------------------------------------
def _rk4(nf: NumericField, x: np.ndarray, dt: float, steps: int, bound: float) -> np.ndarray:
    """Advance every column of ``x``; columns that leave the ball or blow up are frozen."""
    alive = np.all(np.isfinite(x), axis=0)
    with np.errstate(all="ignore"):
        for _ in range(steps):
            k1 = nf.f(x)
            k2 = nf.f(x + 0.5 * dt * k1)
            k3 = nf.f(x + 0.5 * dt * k2)
            k4 = nf.f(x + dt * k3)
            new = x + dt / 6.0 * (k1 + 2 * k2 + 2 * k3 + k4)
            ok = alive & np.all(np.isfinite(new), axis=0) & (np.abs(new).max(axis=0) < bound)
            x = np.where(ok, new, x)
            alive = ok
    x[:, ~alive] = np.nan
    return x


def _tails(
    nf: NumericField, x0: np.ndarray, sign: float, horizon: float, tail: float, bound: float
) -> tuple[np.ndarray, float]:
    """Samples (n, N, K) of each trajectory over its last ``tail`` time units."""
    dt = 0.02
    signed = NumericField(nf.states, lambda x: sign * nf.f(x), nf.jac)
    x = _rk4(signed, x0.copy(), dt, int((horizon - tail) / dt), bound)
    stride = 2
    samples = [x.copy()]
    for _ in range(int(tail / (dt * stride))):
        x = _rk4(signed, x, dt, stride, bound)
        samples.append(x.copy())
    return np.stack(samples, axis=2), dt * stride


def _period_guess(tail: np.ndarray, dt: float) -> float | None:
    """First return of a tail (n, K) to its last point, or None when it does not recur."""
    end = tail[:, -1]
    d = np.linalg.norm(tail - end[:, None], axis=0)[::-1]  # distance going back in time
    size = float(np.ptp(tail, axis=1).max())
    if not np.isfinite(size) or size < 1e-7:
        return None
    away = np.nonzero(d > 0.3 * d.max())[0]
    if len(away) == 0 or d.max() < 0.05 * size:
        return None
    k0 = int(away[0])
    back = np.nonzero(d[k0:] < 0.1 * size)[0]
    if len(back) == 0:
        return None
    k = k0 + int(back[0])
    seg = d[k : k + max(3, k // 2)]
    k += int(np.argmin(seg))
    return k * dt


def _group(tails: np.ndarray, scale: float) -> list[int]:
    """One representative column per group of trajectories with a common limit set."""
    _n, count, _k = tails.shape
    ends = tails[:, :, -1]
    reps: list[int] = []
    for i in range(count):
        if not np.all(np.isfinite(tails[:, i, :])):
            continue
        near = False
        for r in reps:
            gap = np.linalg.norm(tails[:, r, :] - ends[:, i][:, None], axis=0).min()
            if gap < 0.05 * scale:
                near = True
                break
        if not near:
            reps.append(i)
    return reps


def _starts(
    box: Sequence[tuple[float, float]], per_axis: int, extra: Sequence[Sequence[float]]
) -> np.ndarray:
    axes = [np.linspace(lo, hi, per_axis) for lo, hi in box]
    mesh = np.meshgrid(*axes, indexing="ij")
    pts = np.stack([m.ravel() for m in mesh])
    rng = np.random.default_rng(13)
    pts = pts + 1e-3 * rng.standard_normal(pts.shape)  # off symmetry lines and equilibria
    if extra:
        pts = np.hstack([pts, np.array(extra, dtype=float).T])
    return pts


# --- shooting ------------------------------------------------------------------
class _TooLong(Exception):
    """An integration used up its budget of field evaluations (stiff or escaping)."""


def _budgeted(f: Callable[[np.ndarray], np.ndarray]) -> Callable[[float, np.ndarray], np.ndarray]:
    """``f`` as an ODE right-hand side that raises ``_TooLong`` after MAX_EVALUATIONS calls."""
    calls = [0]

    def rhs(_t: float, z: np.ndarray) -> np.ndarray:
        calls[0] += 1
        if calls[0] > MAX_EVALUATIONS:
            raise _TooLong
        return f(z)

    return rhs


def _flow(nf: NumericField, x: np.ndarray, t: float, sign: float, tol: float):
    """``phi(t, x)`` and the monodromy ``M`` (variational equations) for the signed field."""
    from scipy.integrate import solve_ivp

    n = nf.n

    def variational(z: np.ndarray) -> np.ndarray:
        y = z[:n]
        m = z[n:].reshape(n, n)
        return np.concatenate([sign * nf.f(y), (sign * nf.jac(y) @ m).ravel()])

    rhs = _budgeted(variational)

    z0 = np.concatenate([x, np.eye(n).ravel()])
    try:
        with np.errstate(all="ignore"):
            sol = solve_ivp(rhs, (0.0, t), z0, method="DOP853", rtol=tol, atol=tol * 1e-1)
    except _TooLong:
        return None
    if not sol.success or not np.all(np.isfinite(sol.y[:, -1])):
        return None
    z = sol.y[:, -1]
    return z[:n], z[n:].reshape(n, n)


def refine_cycle(
    nf: NumericField, x0: np.ndarray, period: float, sign: float = 1.0, iterations: int = 14
) -> Cycle | None:
    """Newton's method on ``phi(T, x) = x`` with the section ``f(x0).(x - x0) = 0``.

    ``sign = -1`` refines in reversed time (for repelling cycles). Returns None
    when Newton does not converge or the orbit degenerates to an equilibrium.
    """
    n = nf.n
    x, t = np.asarray(x0, dtype=float).copy(), float(period)
    normal = sign * nf.f(x0)
    if not np.all(np.isfinite(normal)) or np.linalg.norm(normal) < 1e-9:
        return None
    normal = normal / np.linalg.norm(normal)
    scale = max(1.0, float(np.abs(x0).max()))
    tol, res = 1e-8, np.inf
    for _ in range(iterations):
        out = _flow(nf, x, t, sign, tol)
        if out is None:
            return None
        xt, m = out
        res = float(np.linalg.norm(xt - x))
        big = np.zeros((n + 1, n + 1))
        big[:n, :n] = m - np.eye(n)
        big[:n, n] = sign * nf.f(xt)
        big[n, :n] = normal
        rhs = -np.concatenate([xt - x, [normal @ (x - x0)]])
        step = np.linalg.lstsq(big, rhs, rcond=None)[0]
        size = float(np.abs(step[:n]).max()) / scale
        if size > 0.2:
            step = step * (0.2 / size)
        x, t = x + step[:n], t + step[n]
        if not (np.isfinite(t) and t > 1e-6):
            return None
        if tol <= 1e-12 and res < 1e-9 * scale and np.abs(step).max() < 1e-11 * max(scale, t):
            break
        tol = max(1e-12, min(tol, res * 1e-4))
    else:
        if res > 1e-8 * scale:
            return None
    return _finish(nf, x, t, sign, scale)


def _finish(nf: NumericField, x: np.ndarray, t: float, sign: float, scale: float) -> Cycle | None:
    """Monodromy, multipliers, amplitudes and samples of the converged orbit."""
    from scipy.integrate import solve_ivp

    out = _flow(nf, x, t, sign, 1e-12)
    if out is None:
        return None
    xt, m = out
    residual = float(np.linalg.norm(xt - x))
    if residual > 1e-7 * scale:
        return None
    n = nf.n
    rhs = _budgeted(nf.f)

    events = [_extremum_event(nf, i) for i in range(n)]
    direction = 1.0 if sign > 0 else -1.0
    span = (0.0, direction * t)
    try:
        sol = solve_ivp(
            rhs, span, x, method="DOP853", rtol=1e-12, atol=1e-13, events=events, dense_output=True
        )
    except _TooLong:
        return None
    if not sol.success:
        return None
    times = np.linspace(0.0, t, 801)
    samples = sol.sol(direction * times)
    speed = np.linalg.norm(nf.f(samples), axis=0)
    if float(np.ptp(samples, axis=1).max()) < 1e-6 * scale or speed.min() < 1e-8 * scale:
        return None  # a degenerate "orbit": an equilibrium
    amp = np.abs(samples).max(axis=1)
    for i, ys in enumerate(sol.y_events):
        if len(ys):
            amp[i] = max(amp[i], float(np.abs(ys[:, i]).max()))
    mults = np.linalg.eigvals(m)
    if sign < 0:
        mults = 1.0 / mults
    order = np.argsort(np.abs(mults - 1.0))
    mults = mults[order]
    stable = bool(np.all(np.abs(mults[1:]) < 1.0 - 1e-9))
    return Cycle(
        period=float(t),
        point=tuple(float(v) for v in x),
        amplitude=tuple(float(a) for a in amp),
        multipliers=tuple(complex(v) for v in mults),
        stable=stable,
        residual=residual,
        orbit=samples,
        times=times,
    )


def _extremum_event(nf: NumericField, i: int) -> Callable[[float, np.ndarray], float]:
    def event(_t: float, y: np.ndarray) -> float:
        return float(nf.f(y)[i])

    return event


def _same(c: Cycle, other: Cycle) -> bool:
    if abs(c.period - other.period) > 1e-5 * max(c.period, other.period):
        return False
    size = float(np.ptp(other.orbit, axis=1).max())
    gap = np.linalg.norm(other.orbit - np.array(c.point)[:, None], axis=0).min()
    return bool(gap < 0.02 * size)


# --- the search ------------------------------------------------------------------
def default_box(model: Model, half_width: float | None = None) -> tuple[tuple[float, float], ...]:
    """The box of starts: centred at the origin, half-width 3 (or ``half_width``)."""
    w = 3.0 if half_width is None else float(half_width)
    return tuple((-w, w) for _ in model.states)


def find_cycles(
    model: Model,
    *,
    box: Sequence[tuple[float, float]] | None = None,
    per_axis: int | None = None,
    horizon: float = 90.0,
    budget: float = 60.0,
    progress: Progress | None = None,
) -> OrbitSearch:
    """Locate the periodic orbits reached from a grid of starts, forward and backward.

    ``budget`` bounds the seconds spent refining candidates (Newton's method);
    when it runs out the search stops and says so in its notes.
    """
    say = progress or (lambda _m: None)
    deadline = time.perf_counter() + budget
    nf = numeric_field(model)
    n = nf.n
    box = tuple(box) if box is not None else default_box(model)
    if per_axis is None:
        per_axis = {1: 9, 2: 9, 3: 4}.get(n, 3)
    scale = max(max(abs(lo), abs(hi)) for lo, hi in box)
    bound = _ESCAPE * scale
    starts = _starts(box, per_axis, _near_equilibria(model, scale))
    notes: list[str] = []
    if n < 2:
        return OrbitSearch(nf.states, (), box, 0, ("a one-state system has no periodic orbit",))
    found: list[Cycle] = []
    for sign, word in ((1.0, "forward"), (-1.0, "backward")):
        say(f"orbit: simulating {starts.shape[1]} starts {word} in time")
        tails, dt = _tails(nf, starts, sign, horizon, min(40.0, horizon / 2), bound)
        for r in _group(tails, scale):
            if len(found) >= MAX_CYCLES:
                notes.append(f"stopped after {MAX_CYCLES} cycles")
                break
            if time.perf_counter() > deadline:
                notes.append(f"time budget of {budget:g} s used up; some candidates not refined")
                break
            tail = tails[:, r, :]
            guess = _period_guess(tail, dt)
            if guess is None:
                continue
            point = tail[:, -1]
            if np.abs(point).max() > 0.5 * bound or any(_near_orbit(point, c) for c in found):
                continue
            say(f"orbit: Newton on the return map from {np.round(point, 3).tolist()}")
            cyc = refine_cycle(nf, point, guess, sign)
            if cyc is not None and not any(_same(cyc, c) for c in found):
                found.append(cyc)
    if any(not c.hyperbolic for c in found):
        notes.append("some cycles are not hyperbolic (a multiplier on the unit circle)")
    if n > 2:
        notes.append("saddle-type cycles (neither attracting nor repelling) are not searched")
    found.sort(key=lambda c: (max(c.amplitude), c.period))
    notes = list(dict.fromkeys(notes))
    return OrbitSearch(nf.states, tuple(found), box, int(starts.shape[1]), tuple(notes))


def _near_orbit(point: np.ndarray, c: Cycle) -> bool:
    size = float(np.ptp(c.orbit, axis=1).max())
    return bool(np.linalg.norm(c.orbit - point[:, None], axis=0).min() < 0.02 * size)


def _near_equilibria(model: Model, scale: float) -> list[list[float]]:
    """Starts just off each declared equilibrium (cycles often surround one)."""
    out = []
    nominal = model.at_nominal()
    for eq in nominal.equilibria:
        try:
            base = [float(v) for _s, v in eq.point]
        except TypeError:
            continue
        for k in range(len(base)):
            p = list(base)
            p[k] += 1e-2 * scale
            out.append(p)
    return out
