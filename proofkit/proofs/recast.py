"""Lyapunov and region-of-attraction proofs for fields with sin, cos and exp, by recasting.

Recasting (A. Papachristodoulou and S. Prajna, "Analysis of non-polynomial
systems using the sum of squares decomposition", Positive Polynomials in
Control, LNCIS 312, Springer 2005): every ``sin``/``cos``/``exp`` atom of the
field gets new variables (``S = sin(delta)``, ``C = cos(delta) - 1``,
``E = exp(delta) - 1``) with their exact derivative rules along the flow, the
equality ``S^2 + C^2 + 2C = 0`` and Taylor bounds that hold for every real
argument; a reciprocal ``1/q`` gets ``R = 1/q - 1/q(x*)`` with ``(R + r0) q = 1``
and obligations keeping ``sign(q(x*)) q >= eps_q`` on the sublevel set and the
claim's set (searched without R, see :mod:`proofkit.proofs._recast_recip`);
the Lyapunov conditions are then sums of squares on that
semialgebraic set (free multipliers for the equalities, sum-of-squares
multipliers for the inequalities). A field with constants in Q(sqrt d) is
handled at both ends of a rational enclosure of sqrt d (the Lie derivative
is affine in it). Never a truncated Taylor polynomial in place of the field.

Public: :func:`attempt` (the prover interface of :mod:`proofkit.proofs`) and
:func:`region_search` (the region-of-attraction search towards given
sample points, e.g. a simulated region, in rounds of the bilinear
iteration; the identities are matched modulo the circle relations, see
:mod:`proofkit.proofs._recast_nf`). Searching is numerical; the entry
is exact and only the audit (schemas ``recast-lyapunov-local``,
``recast-region-of-attraction``) decides. This module never marks a claim
proved by itself.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass
from fractions import Fraction
from math import isqrt
from typing import TYPE_CHECKING, Any

import flint
import numpy as np

from proofkit.certificate import claim_entry, claim_scope, claim_structure, model_section
from proofkit.proofs._recast_exact import exact_evidence, fraction, poly_json, round_poly
from proofkit.proofs._recast_recip import Reduction, lift_evidence, reduce_system
from proofkit.proofs._recast_search import Obligation, SearchData, hint_step, numeric, shape_step
from proofkit.proofs._recast_system import RecastSystem, Unsupported, build_system, field_inputs

if TYPE_CHECKING:
    from proofkit.model import Claim, Model
    from proofkit.proofs import ProofAttempt

__all__ = ["RecastResult", "attempt", "region_search"]

EPS = Fraction(1, 1000)
ENCLOSURE_BITS = 48
LEVELS = (1.0, 0.9, 0.7, 0.5)
MARGIN = 3e-5  # smallest Gram eigenvalue kept by the shape step (room for rounding) ...
MIN_MARGIN = 1e-6  # ... divided by 3 after a round that gained less than SLOW_GAIN, down to this
SLOW_GAIN = 0.01
ATTEMPT_ROUNDS = 6  # inside prove: rounds until the first certificate; the outcome depends
ATTEMPT_SECONDS = 150.0  # on the rounds, not the machine: this is only a safety net


@dataclass(frozen=True)
class RecastResult:
    """An exact evidence object (or None with the reason) and the numerical V it came from."""

    evidence: dict[str, Any] | None
    reason: str
    v: dict[tuple[int, ...], float] | None = None
    system: RecastSystem | None = None


def _q(x: Fraction) -> flint.fmpq:
    return flint.fmpq(x.numerator, x.denominator)


def _enclosure(d: int) -> tuple[Fraction, Fraction] | None:
    if d == 0:
        return None
    k = ENCLOSURE_BITS
    lo = Fraction(isqrt(d * 4**k), 2**k)
    return lo, lo + Fraction(1, 2**k)


def _state_poly(system: RecastSystem, data: list[Any]) -> flint.fmpq_mpoly:
    """A POLY over the states at ``x* + y``, in the z context."""
    ctx = system.ctx
    acc = ctx.constant(0)
    g = ctx.gens()
    for exps, coef in data:
        term = ctx.constant(_q(Fraction(coef)))
        for i, k in enumerate(exps):
            if k:
                term = term * (g[i] + ctx.constant(_q(system.point[i]))) ** k
        acc = acc + term
    return acc


def _lie(v: flint.fmpq_mpoly, fld: list[flint.fmpq_mpoly], ctx: Any) -> flint.fmpq_mpoly:
    return sum((v.derivative(i) * fi for i, fi in enumerate(fld)), ctx.constant(0))


@dataclass
class _Problem:
    system: RecastSystem
    sets: list[tuple[flint.fmpq_mpoly, bool]]
    domain: list[tuple[flint.fmpq_mpoly, bool]]
    enclosure: tuple[Fraction, Fraction] | None
    order: int
    reduction: Reduction | None = None  # a reciprocal atom: searched without R

    def weighted_norm(self) -> flint.fmpq_mpoly:
        """``|y|^2``, times the weight ``q^K`` of the reduced decrease obligation."""
        return self.norm() * (self.reduction.weight if self.reduction else 1)

    def eps_q(self) -> Fraction:
        """The margin of the denominators: 1/16 of the smallest |q(x*)|."""
        zero = tuple([0] * self.system.nz)
        consts = [
            fraction(dict(zip(map(tuple, q.monoms()), q.coeffs(), strict=True))[zero])
            for _lbl, q in self.system.poles
        ]
        return min(consts, default=Fraction(1)) / 16

    def pole_obligations(self, with_set: bool) -> list[Obligation]:
        """``denominator k`` (and ``set denominator k``) for the search."""
        zero = tuple([0] * self.system.nz)
        tay = [(lbl, numeric(g)) for lbl, g in self.taylor()]
        sets = [(f"set {i + 1}", numeric(g)) for i, (g, _st) in enumerate(self.sets)]
        out = []
        for label, q in self.system.poles:
            base = numeric(q)
            base[zero] = base.get(zero, 0.0) - float(self.eps_q())
            out.append(Obligation(label, base, [("level", {}), *tay], extra=2))
            if with_set:
                out.append(Obligation(f"set {label}", dict(base), [*sets, *tay], extra=2))
        return out

    def norm(self) -> flint.fmpq_mpoly:
        g = self.system.ctx.gens()
        return sum((g[i] ** 2 for i in range(self.system.n)), self.system.ctx.constant(0))

    def taylor(self) -> list[tuple[str, flint.fmpq_mpoly]]:
        return list(self.system.inequalities)

    def search_data(self, attracts: bool, level: float, inside: bool = True) -> SearchData:
        """The numerical obligations; without ``inside`` the claim's set is left to the samples."""
        s, eps = self.system, float(EPS) * 1.5
        neg_norm = {e: -eps * c for e, c in numeric(self.norm()).items()}
        neg_wnorm = {e: -eps * c for e, c in numeric(self.weighted_norm()).items()}
        tay = [(lbl, numeric(g)) for lbl, g in self.taylor()]
        obs = [
            Obligation("positive", neg_norm, tay, v_sign=1.0),
            Obligation("decrease", neg_wnorm, [("level", {}), *tay], lie=True, extra=2),
            *self.pole_obligations(attracts and inside),
        ]
        if attracts:
            zero = tuple([0] * s.nz)
            sets = [(f"set {i + 1}", numeric(g)) for i, (g, _st) in enumerate(self.sets)]
            if inside:
                obs.append(Obligation("inside", {zero: level}, [*sets, *tay], v_sign=-1.0))
            for j, (h, strict) in enumerate(self.domain):
                base = numeric(h)
                if strict:
                    base[zero] = base.get(zero, 0.0) - float(EPS)
                obs.append(Obligation(f"domain {j + 1}", base, [("level", {}), *tay], extra=2))
        pairs = [(k, k + 1) for k in range(s.n, s.n + 2 * len(s.equalities), 2)]
        return SearchData(s.nz, s.n, s.numeric_field(), pairs, obs)

    def exact_bases(self, v: flint.fmpq_mpoly, level: Fraction, attracts: bool) -> dict:
        ctx, eps = self.system.ctx, ctx_const(self.system.ctx, EPS)
        gap = ctx_const(ctx, level) - v
        tay = self.taylor()
        out = {"positive": (v - eps * self.norm(), tay)}
        for label, fld in self.system.vertex_fields(self.enclosure):
            name = f"decrease {label}".strip()
            out[name] = (-_lie(v, fld, ctx) - eps * self.weighted_norm(), [("level", gap), *tay])
        eps_q = ctx_const(ctx, self.eps_q())
        sets = [(f"set {i + 1}", g) for i, (g, _st) in enumerate(self.sets)]
        for label, q in self.system.poles:
            out[label] = (q - eps_q, [("level", gap), *tay])
        if attracts:
            out["inside"] = (gap, [*sets, *tay])
            for j, (h, strict) in enumerate(self.domain):
                out[f"domain {j + 1}"] = (h - eps if strict else h, [("level", gap), *tay])
            for label, q in self.system.poles:
                out[f"set {label}"] = (q - eps_q, [*sets, *tay])
        return out


def ctx_const(ctx: Any, x: Fraction) -> flint.fmpq_mpoly:
    return ctx.constant(_q(x))


def _problem(model: Model, claim: Claim, order: int) -> _Problem | str:
    if claim.kind not in ("stable", "attracts"):
        return "recasting proves stable and attracts claims"
    if claim_scope(model, claim) != "nominal":
        return "recasting proves claims at the nominal parameter values only"
    inputs = field_inputs(model, claim, "recasting")
    if isinstance(inputs, str):
        return inputs
    trees, pt, nominal = inputs
    section, structure = model_section(model), claim_structure(model, claim)
    try:
        system = build_system(trees, pt, nominal, order, reciprocal=True)
    except Unsupported as exc:
        return f"the field cannot be recast: {exc}"
    reduction = None
    if system.poles:
        reduced = reduce_system(system)
        if isinstance(reduced, str):
            return f"the field cannot be recast: {reduced}"
        system, reduction = reduced
    sets = [(_state_poly(system, c["g"]), c["strict"]) for c in structure.get("set") or []]
    dom = [(_state_poly(system, c["g"]), c["strict"]) for c in section.get("domain") or []]
    return _Problem(system, sets, dom, _enclosure(system.d), order, reduction)


def _initial_s0(data: SearchData, scale: float) -> dict[str, dict[tuple[int, ...], float]]:
    sq = {tuple(2 * int(i == j) for j in range(data.nz)): scale for i in range(data.nz)}
    return {
        f"{ob.name} * level": sq
        for ob in data.obligations
        if ob.ineqs and ob.ineqs[0][0] == "level"
    }


def _certify(
    prob: _Problem, v_num: dict, degree: int, in_set: np.ndarray | None, say: Callable
) -> tuple[RecastResult, dict | None]:
    """Exact evidence for ``V`` at the first level of LEVELS that works, and its hint.

    ``in_set``: lifted points of the claim's set (attracts; None for stable); a
    level below V at one of them cannot hold the set and is not tried.
    """
    ctx = prob.system.ctx
    attracts = in_set is not None
    v = round_poly(ctx, v_num, 30)
    v_float = numeric(v)
    top = _values(v_float, in_set).max(initial=0.0) if attracts else 0.0
    why = "no level of the found V could be certified"
    for level_f in LEVELS:
        level = Fraction(level_f).limit_denominator(1000)
        if level_f < top:
            why = f"V exceeds {level} on the claim's set"
            continue
        say(f"recast: exact certificate at level {level}")
        data = prob.search_data(attracts, float(level))
        hint = hint_step(data, v_float, degree, float(level))
        if hint is None:
            why = f"no multipliers with a positive margin at level {level}"
            continue
        bases = prob.exact_bases(v, level, attracts)
        out = exact_evidence(ctx, bases, list(prob.system.equalities), hint)
        if isinstance(out, str):
            why = out
            say(f"recast: {out}")
            continue
        sos, free, squares = out
        enc = prob.enclosure
        v_out = v
        if prob.reduction is not None:
            lifted_ev = lift_evidence(prob.reduction, out, v, (_q(level), _q(EPS)), enc)
            if isinstance(lifted_ev, str):
                why = lifted_ev
                say(f"recast: {why}")
                continue
            sos, free, squares = lifted_ev
            full = prob.reduction.full
            v_out = full.ctx.from_dict(
                {(*map(int, e), 0): c for e, c in zip(v.monoms(), v.coeffs(), strict=True)}
            )
        evidence = {
            "recast": {
                "taylor_order": prob.order,
                "enclosure": None if enc is None else [str(enc[0]), str(enc[1])],
            },
            "V": poly_json(v_out),
            "numbers": {"eps": str(EPS), "level": str(level)}
            | ({"eps_q": str(prob.eps_q())} if prob.system.poles else {}),
            "multipliers": sos,
            "free": free,
            "squares": squares,
        }
        res = RecastResult(evidence, f"certified at level {level}", v_float, prob.system)
        return res, hint
    return RecastResult(None, why, v_num, prob.system), None


def _next_s0(hint: dict, level: float, fallback: dict) -> dict[str, dict[tuple[int, ...], float]]:
    """The hint's level multipliers, rescaled for ``V / level`` at level 1."""
    out = {}
    for key, (basis, q) in hint["sos"].items():
        if key.endswith("* level"):
            exps = (basis[:, None, :] + basis[None, :, :]).reshape(-1, basis.shape[1])
            poly: dict[tuple[int, ...], float] = {}
            for e, c in zip(map(tuple, exps.tolist()), (q * level).ravel().tolist(), strict=True):
                poly[e] = poly.get(e, 0.0) + c
            out[key] = poly
    return out or fallback


def _values(v: dict[tuple[int, ...], float], lifted: np.ndarray) -> np.ndarray:
    exps = np.array(list(v.keys()), np.int64).reshape(-1, lifted.shape[1])
    coef = np.array(list(v.values()))
    return np.prod(lifted[:, None, :] ** exps[None, :, :], axis=2) @ coef


def _inside(res: RecastResult, lifted: np.ndarray) -> float:
    """Fraction of the (lifted) sample points in the certified ``{V <= level}``."""
    assert res.evidence is not None and res.v is not None
    level = float(Fraction(res.evidence["numbers"]["level"]))
    return float(np.mean(_values(res.v, lifted) <= level)) if len(lifted) else 0.0


def _shape(
    datas: tuple[SearchData, SearchData], degree: int, s0: dict, lifted: np.ndarray, margin: float
) -> dict | None:
    """The shape step with every obligation, else with the claim's set left to the samples."""
    full, soft = datas
    v_num = shape_step(full, degree, s0, lifted, margin, fallback=soft is full)
    if v_num is None and soft is not full:
        v_num = shape_step(soft, degree, s0, lifted, margin)
    return v_num


def region_search(
    model: Model,
    claim: Claim,
    samples_x: np.ndarray,
    *,
    degree: int = 4,
    order: int = 1,
    rounds: int = 1,
    margin: float = MARGIN,
    time_limit: float | None = None,
    first: bool = False,
    s0_scale: float = 0.1,
    progress: Callable[[str], None] | None = None,
) -> RecastResult:
    """V towards ``{V <= 1}`` holding the sample points, then exact evidence; ``rounds`` passes.

    Each round looks for a V that keeps more sample points inside with the
    level multipliers of the last hint fixed (the bilinear iteration; the
    claim's set is left to the samples there), then certifies it exactly with
    every obligation. The certificate with the most sample points inside is
    kept (``first``: the first certificate ends the search). ``res.v`` is the
    certified V as floats over the recast variables. ``time_limit`` (seconds)
    stops starting new rounds.
    """
    say = progress or (lambda _m: None)
    prob = _problem(model, claim, order)
    if isinstance(prob, str):
        return RecastResult(None, prob)
    attracts = claim.kind == "attracts"
    data = prob.search_data(attracts, 1.0)
    soft = prob.search_data(attracts, 1.0, inside=False) if attracts else data
    lifted = prob.system.lift(samples_x)
    in_set = prob.system.lift(_set_points(prob)) if attracts else None
    start = _initial_s0(data, s0_scale)
    s0, best, score = start, RecastResult(None, "the numerical search found no V"), -1.0
    clock = time.monotonic()
    for r in range(rounds):
        if time_limit is not None and r and time.monotonic() - clock > time_limit:
            say(f"recast: time limit of {time_limit:g} s reached after {r} round(s)")
            break
        say(f"recast: round {r + 1}: V of degree {degree} in {', '.join(prob.system.names)}")
        v_num = _shape((data, soft), degree, s0, lifted, margin)
        if v_num is None:
            break
        res, hint = _certify(prob, v_num, degree, in_set, say)
        if res.evidence is None or hint is None:
            best = best if best.evidence is not None else res
            hint = hint_step(soft, v_num, degree, 1.0)  # carry on with the other obligations
            if hint is None:
                break
            s0 = _next_s0(hint, 1.0, start)
            continue
        frac = _inside(res, lifted)
        say(f"recast: round {r + 1}: {100 * frac:.1f} % of the sample points certified")
        if frac - score < SLOW_GAIN:  # small steps: let the shape step go closer to the edge
            margin = max(margin / 3, MIN_MARGIN)
        if frac > score:
            best, score = res, frac
        if first:
            break
        s0 = _next_s0(hint, float(Fraction(res.evidence["numbers"]["level"])), start)
    return best


def _set_points(prob: _Problem, count: int = 400) -> np.ndarray:
    """Points of the claim's set (random, in boxes of shrinking size around the point)."""
    n = prob.system.n
    center = np.array([float(x) for x in prob.system.point])
    rng = np.random.default_rng(11)
    found = [center[None, :]]
    for half in (4.0, 1.0, 0.25, 0.0625):
        y = rng.uniform(-half, half, (count * 10, n))
        keep = np.ones(len(y), bool)
        for g, strict in prob.sets:
            val = np.zeros(len(y))
            for e, c in zip(g.monoms(), g.coeffs(), strict=True):
                val += float(c) * np.prod(y ** np.array([int(x) for x in e[:n]]), axis=1)
            keep &= val > 0 if strict else val >= 0
        found.append(center + y[keep])
        if sum(len(f) for f in found) > count:
            break
    return np.vstack(found)[:count]


def _samples(claim: Claim, prob: _Problem, count: int = 400) -> np.ndarray:
    """Points of the claim's set (attracts) or of a small ball (stable) around the point."""
    if claim.kind == "attracts":
        return _set_points(prob, count)
    center = np.array([float(x) for x in prob.system.point])
    rng = np.random.default_rng(11)
    return center + 0.05 * rng.uniform(-1, 1, (count, prob.system.n))


def attempt(model: Model, claim: Claim, progress: Callable[[str], None]) -> ProofAttempt | None:
    """The prover interface: an audited-to-be entry for stable/attracts claims, or None."""
    from proofkit.proofs import ProofAttempt

    prob = _problem(model, claim, 1)
    if isinstance(prob, str):
        return None
    conditions = model.at_nominal().definedness
    if prob.reduction is not None and all(
        d.relation == "!=" and d.origin == "a denominator" for d in conditions
    ):  # every denominator is the reciprocal atom, kept away from 0 by the certificate
        conditions = ()
    if conditions:  # the recast certificate states the field everywhere; no such condition
        from proofkit.certificate import not_proved_entry

        shown = ", ".join(f"{d.expr} {d.relation} 0" for d in conditions[:3])
        reason = (
            f"the field is defined only where {shown}; recast certificates state the field "
            "on the whole space and cannot carry these conditions yet"
        )
        return ProofAttempt(not_proved_entry(model, claim, reason), reason)
    theorem = "recast-lyapunov-local" if claim.kind == "stable" else "recast-region-of-attraction"
    why = "no recast certificate found"
    for degree, order in ((4, 1),):
        if order != prob.order:
            prob2 = _problem(model, claim, order)
            if isinstance(prob2, str):
                break
            prob = prob2
        res = region_search(
            model,
            claim,
            _samples(claim, prob),
            degree=degree,
            order=order,
            rounds=ATTEMPT_ROUNDS,
            time_limit=ATTEMPT_SECONDS,
            first=True,
            progress=progress,
        )
        if res.evidence is not None:
            entry = claim_entry(
                model, claim, "proved", method="recast", theorem=theorem, evidence=res.evidence
            )
            return ProofAttempt(entry, f"recast: V of degree {degree}, {res.reason}")
        why = res.reason
    from proofkit.certificate import not_proved_entry

    reason = f"recasting found no certificate: {why}"
    return ProofAttempt(not_proved_entry(model, claim, reason), reason)
