"""Lyapunov and region-of-attraction proofs for sin/cos/exp fields by Taylor models.

A Taylor model of an atom is its Taylor polynomial plus a rigorously bounded
remainder: ``sin(delta) = T_k(delta) + delta^(k+1)/(k+1)! u`` with
``|u| <= 1`` for every real ``delta`` (Lagrange's remainder; every derivative
of sin and cos is at most 1), the same for cos; ``exp(delta) = T_k(delta) +
r delta^(k+1) w`` with ``0 <= w <= 1`` where ``delta <= D``, a bound certified on
the set with its own obligation (``r >= e^D/(k+1)!``). The field becomes a
polynomial in the deviation ``y`` and the remainders ``u``, affine in each
``u``; the remainders are a bounded uncertainty, handled by requiring the
decrease at every *vertex field* (each ``u = +-1``; ``sqrt d`` at both ends
of a rational enclosure when constants lie in Q(sqrt d)) with the level's
S-procedure multiplier. ``V`` is a polynomial in ``y`` only, so the
certified set ``{V <= level}`` is a plain sublevel set in the states. Never a
truncated Taylor polynomial treated as the field.

Public: :func:`attempt` (the prover interface of :mod:`proofkit.proofs`,
tried after the recast) and :func:`region_search` (one region-of-attraction
search towards given sample points, e.g. a simulated region). Searching is
numerical (:mod:`proofkit.proofs._taylor_search`, cvxpy + Clarabel); the
entry is exact (:mod:`proofkit.proofs._taylor_exact`) and only the audit
(schemas ``taylor-model-lyapunov-local``, ``taylor-model-region-of-attraction``)
decides. This module never marks a claim proved by itself.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass
from fractions import Fraction
from math import ceil, log2
from typing import TYPE_CHECKING, Any

import flint
import numpy as np

from proofkit.certificate import claim_entry, claim_scope, claim_structure, model_section
from proofkit.proofs._recast_system import field_inputs
from proofkit.proofs._taylor_exact import ExactProblem, exact_evidence
from proofkit.proofs._taylor_search import Hint, TaylorSearch
from proofkit.proofs._taylor_system import Unsupported, taylor_system

if TYPE_CHECKING:
    from proofkit.model import Claim, Model
    from proofkit.proofs import ProofAttempt

__all__ = ["TaylorResult", "attempt", "region_search"]

EPS = Fraction(1, 1000)
METHOD = "taylor-model"
UNSUPPORTED = "no Taylor model of this field: "
NumPoly = dict[tuple[int, ...], float]


@dataclass(frozen=True)
class TaylorResult:
    """Exact evidence (or None with the reason), the numerical V (in y) and the rounds run."""

    evidence: dict[str, Any] | None
    reason: str
    rounds: int = 0


def _q(x: Fraction) -> flint.fmpq:
    return flint.fmpq(x.numerator, x.denominator)


def _state_poly(ctx: Any, point: tuple[Fraction, ...], data: list[Any]) -> flint.fmpq_mpoly:
    """A POLY over the states, at ``x* + y``."""
    g = ctx.gens()
    acc = ctx.constant(0)
    for exps, coef in data:
        term = ctx.constant(_q(Fraction(coef)))
        for i, k in enumerate(exps):
            if k:
                term = term * (g[i] + ctx.constant(_q(point[i]))) ** k
        acc = acc + term
    return acc


def _problem(
    model: Model,
    claim: Claim,
    orders: tuple[int, int],
    scale: tuple[Fraction, ...] | None,
    exp_bound: Fraction = Fraction(1),
) -> ExactProblem | str:
    if claim.kind not in ("stable", "attracts"):
        return "Taylor models prove stable and attracts claims"
    if claim_scope(model, claim) != "nominal":
        return "Taylor models prove claims at the nominal parameter values only"
    inputs = field_inputs(model, claim, "Taylor models")
    if isinstance(inputs, str):
        return inputs
    trees, point, nominal = inputs
    section = model_section(model)
    try:
        system = taylor_system(trees, point, nominal, orders, exp_bound)
    except Unsupported as exc:
        return f"{UNSUPPORTED}{exc}"
    ctx, pnt = system.ctx, system.point
    structure = claim_structure(model, claim)
    sets = tuple(_state_poly(ctx, pnt, c["g"]) for c in structure.get("set") or [])
    domain = (section.get("domain") or []) if claim.kind == "attracts" else []  # as the schemas
    dom = tuple((_state_poly(ctx, pnt, c["g"]), c["strict"]) for c in domain)
    bounds = tuple(
        ctx.constant(_q(b)) - delta for _f, delta, _k, _r, b in system.atoms if b is not None
    )
    return ExactProblem(system, scale or tuple([Fraction(1)] * len(point)), EPS, sets, dom, bounds)


def _to_z(p: flint.fmpq_mpoly, scale: np.ndarray, divide: float = 1.0) -> NumPoly:
    return {
        tuple(map(int, e)): float(c) * float(np.prod(scale ** np.array(e, float))) / divide
        for e, c in p.terms()
    }


def _search_problem(prob: ExactProblem, degree: int) -> TaylorSearch:
    d = np.array([float(x) for x in prob.scale])
    n = prob.system.n
    fields = [  # the "hi" end of an enclosure is 2^-48 away: its hint is the "lo" one's
        (lbl, [_to_z(fi, d, d[i]) for i, fi in enumerate(fld)])
        for lbl, fld in prob.system.vertices
        if not lbl.startswith("hi ")
    ]
    slack = 1.5 * float(EPS)  # the search asks a little more than the certificate states
    norm = {tuple(2 * int(i == j) for j in range(n)): slack * d[i] ** 2 for i in range(n)}
    sets = [_to_z(g, d) for g in prob.sets]
    dom = []
    for h, strict in prob.domain:
        hz = _to_z(h, d)
        if strict:
            zero = tuple([0] * n)
            hz[zero] = hz.get(zero, 0.0) - float(EPS)
        dom.append(hz)
    bounds = [_to_z(b, d) for b in prob.bounds]
    return TaylorSearch(n, fields, norm, sets, dom, degree, bounds)


def _initial_v(search: TaylorSearch) -> NumPoly | None:
    """``z' P z`` with ``A' P + P A = -I`` for the linear part (a hint only)."""
    from scipy.linalg import solve_continuous_lyapunov

    n = search.n
    a = np.zeros((n, n))
    for i, fi in enumerate(search.fields[0][1]):
        for j in range(n):
            a[i, j] = fi.get(tuple(int(k == j) for k in range(n)), 0.0)
    if np.max(np.linalg.eigvals(a).real) >= 0:
        return None
    p = solve_continuous_lyapunov(a.T, -np.eye(n))
    v: NumPoly = {}
    for i in range(n):
        for j in range(n):
            e = tuple(int(k == i) + int(k == j) for k in range(n))
            v[e] = v.get(e, 0.0) + float(p[i, j])
    return v


def _exp_bound(prob: ExactProblem, samples_y: np.ndarray) -> Fraction:
    """A bound D for the exp arguments: their largest sampled value, with room, in 1/8."""
    top = 0.0
    for function, delta, _k, _r, _b in prob.system.atoms:
        if function == "exp" and len(samples_y):
            dn = _to_z(delta, np.ones(prob.system.n))
            exps = np.array(list(dn), dtype=np.int64).reshape(-1, prob.system.n)
            feats = np.prod(samples_y[:, None, :] ** exps[None, :, :], axis=2)
            top = max(top, float(np.max(feats @ np.array(list(dn.values())))))
    return min(Fraction(16), Fraction(ceil(8 * (1.25 * top + 0.125)), 8))


def _scale(samples_y: np.ndarray) -> tuple[Fraction, ...]:
    top = np.max(np.abs(samples_y), axis=0) if len(samples_y) else np.ones(samples_y.shape[1])
    return tuple(Fraction(2) ** ceil(log2(max(float(t), 2.0**-10))) for t in top)


@dataclass
class _Best:
    cover: float = -1.0
    v: NumPoly | None = None
    hint: Hint | None = None


def _iterate(
    search: TaylorSearch,
    samples_z: np.ndarray,
    rounds: int,
    say: Callable[[str], None],
    start: tuple[NumPoly, float],
    best: _Best,
    deadline: float,
) -> tuple[NumPoly, float]:
    """V-s rounds at one degree from ``start`` = (V, level guess); updates ``best``."""
    v, c_hint = start
    history: list[float] = []
    for k in range(rounds):
        hint = search.level(v, c_hint)
        if hint is None:
            break
        exps = np.array(list(v), dtype=np.int64)
        feats = np.prod(samples_z[:, None, :] ** exps[None, :, :], axis=2)
        cover = float(np.mean(feats @ np.array(list(v.values())) <= hint.c))
        say(
            f"taylor-model: degree {search.v_degree}, round {k + 1}: level {hint.c:.4g}, "
            f"{100 * cover:.1f} % of the samples"
        )
        if cover > best.cover:
            best.cover, best.v, best.hint = cover, v, hint
        history.append(cover)
        stalled = len(history) > 3 and history[-1] < history[-4] + 0.005
        if k + 1 == rounds or cover >= 1.0 or stalled or time.monotonic() > deadline:
            break
        nxt = search.shape(hint, samples_z)
        if nxt is None:
            break
        v, c_hint = nxt, hint.c
    return v, c_hint


def _certify(
    prob: ExactProblem, search: TaylorSearch, v: NumPoly, hint: Hint, say: Callable[[str], None]
) -> dict[str, Any] | str:
    why = "no level could be certified"
    for shrink in (1.0, 0.9, 0.7):
        level = Fraction(hint.c * shrink).limit_denominator(1000)
        say(f"taylor-model: exact certificate at level {level}")
        h = search.hint(v, float(level))
        if h is None:
            why = f"no multipliers with a positive margin at level {level}"
            continue
        inside = None
        if prob.sets:
            inside = search.inside_hint(v, float(level))
            if inside is None:
                return f"the claim's set does not lie in the certified level set {{V <= {level}}}"
        out = exact_evidence(prob, v, level, h, inside)
        if isinstance(out, dict):
            return out
        why = out
    return why


def region_search(
    model: Model,
    claim: Claim,
    samples_x: np.ndarray,
    *,
    degree: int = 6,
    orders: tuple[int, int] = (6, 7),
    rounds: int = 6,
    progress: Callable[[str], None] | None = None,
    seconds: float = 600.0,
) -> TaylorResult:
    """V of ``degree`` towards ``{V <= level}`` holding the sample points; exact evidence.

    ``orders`` are the Taylor orders of the sin and cos models; ``rounds`` the
    V-s iterations per degree (degree ladder 4, 6, ... warm-started); no new
    round starts after ``seconds``. The evidence (when found) follows the audit's
    ``taylor-model-*`` schema for this claim; only the audit decides.
    """
    say = progress or (lambda _m: None)
    deadline = time.monotonic() + seconds
    first = _problem(model, claim, orders, None)
    if isinstance(first, str):
        return TaylorResult(None, first)
    point = np.array([float(x) for x in first.system.point])
    samples_y = np.asarray(samples_x, float) - point
    prob = _problem(model, claim, orders, _scale(samples_y), _exp_bound(first, samples_y))
    assert not isinstance(prob, str)
    d = np.array([float(x) for x in prob.scale])
    search = _search_problem(prob, degree)
    v0 = _initial_v(search)
    if v0 is None:
        reason = "the linearization is not Hurwitz (a strict Lyapunov function cannot exist)"
        return TaylorResult(None, reason)
    best, state = _Best(), (v0, 1.0)
    for deg in [k for k in (2, 4, 6, 8) if min(4, degree) <= k < degree] + [degree]:
        search = _search_problem(prob, deg)  # warm start from the lower degree's V
        state = _iterate(search, samples_y / d, rounds, say, state, best, deadline)
    if best.v is None or best.hint is None:
        return TaylorResult(None, "no decreasing level found for the numerical V")
    v, hint = best.v, best.hint
    out = _certify(prob, search, v, hint, say)
    if isinstance(out, str):
        return TaylorResult(None, out, rounds)
    return TaylorResult(out, f"certified at level {out['numbers']['level']}", rounds)


def _samples(prob: ExactProblem, claim: Claim, count: int = 300) -> np.ndarray:
    """Points of the claim's set (attracts) or of a small box (stable) around the point."""
    n = prob.system.n
    center = np.array([float(x) for x in prob.system.point])
    rng = np.random.default_rng(11)
    if claim.kind == "stable":
        return center + 0.05 * rng.uniform(-1, 1, (count, n))
    for half in (4.0, 1.0, 0.25, 0.0625):  # shrink the box until the set is well sampled
        y = rng.uniform(-half, half, (count * 20, n))
        keep = np.ones(len(y), bool)
        for g in prob.sets:
            gz = _to_z(g, np.ones(n))
            exps = np.array(list(gz), dtype=np.int64).reshape(-1, n)
            vals = np.prod(y[:, None, :] ** exps[None, :, :], axis=2) @ np.array(list(gz.values()))
            keep &= vals >= 0
        if keep.sum() >= count // 4:
            break
    return center + (y[keep][:count] if keep.any() else np.zeros((1, n)))


# (degree of V, (order of sin, order of cos), rounds): tried in turn by attempt
ATTEMPT_SECONDS = 60.0  # inside prove: no new search round after this
SETTINGS = {"stable": ((2, (2, 3), 1),), "attracts": ((4, (4, 5), 3), (6, (6, 7), 3))}


def attempt(model: Model, claim: Claim, progress: Callable[[str], None]) -> ProofAttempt | None:
    """The prover interface: an entry to be audited for stable/attracts claims, or None."""
    from proofkit.certificate import not_proved_entry
    from proofkit.proofs import ProofAttempt

    first = _problem(model, claim, (2, 3), None)
    if isinstance(first, str):
        if not first.startswith(UNSUPPORTED):
            return None  # not a claim or field of this method
        return ProofAttempt(not_proved_entry(model, claim, first), first)
    if model.at_nominal().definedness:
        reason = "Taylor-model certificates state the field on the whole space (no conditions)"
        return ProofAttempt(not_proved_entry(model, claim, reason), reason)
    theorem = (
        "taylor-model-lyapunov-local"
        if claim.kind == "stable"
        else "taylor-model-region-of-attraction"
    )
    samples = _samples(first, claim)
    why = "no certificate found"
    deadline = time.monotonic() + ATTEMPT_SECONDS
    for degree, orders, rounds in SETTINGS[claim.kind]:
        left = deadline - time.monotonic()
        if left <= 0:
            why += f" within {ATTEMPT_SECONDS:.0f} s"
            break
        res = region_search(
            model, claim, samples, degree=degree, orders=orders, rounds=rounds,
            progress=progress, seconds=left,
        )  # fmt: skip
        if res.evidence is not None:
            entry = claim_entry(
                model, claim, "proved", method=METHOD, theorem=theorem, evidence=res.evidence
            )
            detail = f"taylor-model: V of degree {degree}, orders {orders}, {res.reason}"
            return ProofAttempt(entry, detail)
        why = res.reason
    reason = f"Taylor models found no certificate: {why}"
    return ProofAttempt(not_proved_entry(model, claim, reason), reason)
