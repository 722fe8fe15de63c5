"""Regions of attraction: ``claim E attracts SET`` and the largest certified basin.

Theorem (``region-of-attraction``, DEVELOPERS.md): with ``y = x - x*``, if
``V - eps|y|^2``, ``-lie(V) - eps|y|^2 - s0 (level - V)``, ``level - V - sum_i
s_i g_i`` (SET = {g_i >= 0}), ``h_j - t_j (level - V)`` (domain) and every
multiplier are sums of squares, then ``{V <= level}`` is compact, forward
invariant, inside the domain, contains SET, and every trajectory in it tends
to ``x*`` (Lyapunov; the S-procedure for the multipliers).

The search (:mod:`proofkit.sos.ascent`) starts from the linearization's
quadratic ``V`` (Lyapunov equation), maximises the level by bisection and
improves ``V`` degree by degree; the coordinates are scaled from simulation.
The result is made exact (:mod:`proofkit.proofs._basin_exact`); a level that
fails exact rounding is stepped back, never reported. A false claim gets a
counterexample found by simulation (:mod:`proofkit.proofs._basin_sim`).

This module never marks a claim proved by itself: the audit decides. It never
uses the true region of attraction, and simulation never overrides a proof:
if both disagree it raises an internal error.
"""

from __future__ import annotations

import math
import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace
from fractions import Fraction
from typing import Any

import flint
import numpy as np
import sympy as sp

from proofkit.certificate import claim_entry, claim_scope, claim_structure, not_proved_entry
from proofkit.errors import ModelError
from proofkit.model import Claim, Model
from proofkit.proofs import ProofAttempt
from proofkit.proofs._basin_exact import (
    ExactSetting,
    check_evidence,
    fit_gram,
    gram_poly,
    poly_json,
    psd_gram,
    round_poly,
    z_gram_to_y,
)

__all__ = [
    "DEGREES",
    "BasinCertificate",
    "BasinSetup",
    "attempt",
    "certify",
    "estimate_basin",
    "run_search",
    "setup_basin",
]

METHOD, THEOREM = "sublevel-set", "region-of-attraction"
DEGREES = (2, 4, 6, 8)
MAX_STATES = 6
MAX_GRAM = 120  # rows of one Gram matrix (the audit's limit too): bounds each solve
CLAIM_BUDGET = 30.0  # seconds of search per attracts claim
CLAIM_MAX_DEGREE = 6  # degree 8 costs ~30 s a round on 2 cores and rarely decides a claim
DOMAIN_STEPS = 8  # levels tried (each 0.7 of the last) to fit {V <= level} into the domain
Say = Callable[[str], None]


@dataclass
class BasinSetup:
    """Everything the search and the exact step share for one equilibrium."""

    name: str
    point: tuple[Fraction, ...]
    setting: ExactSetting
    field_y: list[Any]  # numerical shifted field (NumPoly), deviation coordinates
    field_z: list[Any]  # the same in scaled coordinates


@dataclass
class BasinCertificate:
    """An exact certificate of one sublevel set, checked exactly here (the audit decides)."""

    degree: int
    v: flint.fmpq_mpoly  # over the deviation y
    level: Fraction
    evidence: dict[str, Any]
    volume_z: float
    history: list[tuple[int, int, float, float]] = field(default_factory=list)


def _rational_point(model: Model, claim_or_name: Claim | str) -> tuple[Fraction, ...] | str:
    name = claim_or_name if isinstance(claim_or_name, str) else claim_or_name.target
    try:
        eq = model.equilibrium(name or "")
    except (KeyError, ModelError):
        return f"no declared equilibrium named {name!r}"
    values = [eq.as_dict()[s] for s in model.states]
    nominal = model.nominal_values()
    out = []
    for v in values:
        v = sp.simplify(v.subs(nominal)) if nominal else v
        if not v.is_Rational:
            return (
                f"the equilibrium {name} is not a rational point ({v}); region-of-attraction "
                "certificates need rational coordinates (quadratic fields are not supported yet)"
            )
        out.append(Fraction(int(v.p), int(v.q)))
    return tuple(out)


def _conditions(space: Any, region: Any, point: Sequence[Fraction], model: Model) -> tuple:
    if region is None:
        return ()
    xs = model.state_symbols
    subs = {x: x + sp.Rational(p.numerator, p.denominator) for x, p in zip(xs, point, strict=True)}
    nominal = model.nominal_values()
    out = []
    for g, strict in region.nonnegative_forms():
        g = g.subs(nominal) if nominal else g
        out.append((space.coerce(sp.expand(g.subs(subs, simultaneous=True))), bool(strict)))
    return tuple(out)


def setup_basin(
    model: Model, name: str, region: Any = None, say: Say | None = None
) -> BasinSetup | str:
    """Shift to the equilibrium, scale from simulation, or say why this cannot be done."""
    from proofkit.proofs._basin_sim import coordinate_scale, numeric
    from proofkit.proofs.lyapunov import shifted_field
    from proofkit.sos import PolySpace

    if not model.is_polynomial():
        return "the vector field is not polynomial; certificates cover polynomial fields for now"
    if len(model.states) > MAX_STATES:
        return f"more than {MAX_STATES} states"
    point = _rational_point(model, name)
    if isinstance(point, str):
        return point
    try:
        g = shifted_field(model, point)
    except ModelError as exc:
        return f"the vector field is not a polynomial with rational coefficients here: {exc}"
    space = PolySpace(model.at_nominal().state_symbols)
    n = len(model.states)
    field_y = numeric(g, n)
    if say:
        say(f"simulating to scale the coordinates around {name}")
    domain = _conditions(space, model.domain, point, model)
    scale = _domain_capped(coordinate_scale(field_y), [h for h, _ in domain], n)
    d2 = max(float(s) ** 2 for s in scale)
    eps = Fraction(1, 2 ** max(0, math.ceil(math.log2(1e5 * d2))))
    setting = ExactSetting(
        space, g, scale, eps, _conditions(space, region, point, model), domain
    )  # fmt: skip
    field_z = []
    for gi, di in zip(g, scale, strict=True):  # dz/dt = g(D z) / D
        gz = setting.to_z(gi)
        field_z.append(type(gz)(gz.exps, gz.coeffs / float(di)))
    return BasinSetup(name, point, setting, field_y, field_z)


def _domain_capped(scale: tuple[Fraction, ...], domain: list, n: int) -> tuple[Fraction, ...]:
    """The simulated scale, cut per axis to the domain's reach from the point (a hint).

    Along ``+-e_i`` the first sampled radius where some ``h_j < 0``; the larger side.
    """
    from proofkit.proofs._basin_sim import numeric

    if not domain:
        return scale
    hs = numeric(domain, n)
    out = []
    for i, d in enumerate(scale):
        reach = 0.0
        for side in (1.0, -1.0):
            r = np.linspace(0.0, float(d), 401)[1:]
            pts = np.zeros((r.size, n))
            pts[:, i] = side * r
            bad = np.zeros(r.size, dtype=bool)
            for h in hs:
                bad |= h(pts) < 0
            reach = max(reach, float(r[bad.argmax()]) if bad.any() else float(d))
        out.append(min(d, Fraction(reach).limit_denominator(64) or Fraction(1, 64)))
    return tuple(out)


def _lyapunov_start(setup: BasinSetup) -> Any:
    """``z' P z`` with ``A' P + P A = -I`` for the linear part in scaled coordinates."""
    from scipy.linalg import solve_continuous_lyapunov

    from proofkit.sos._ascent_maps import NumPoly, monomials

    n = len(setup.field_z)
    a = np.zeros((n, n))
    for i, g in enumerate(setup.field_z):
        for e, c in zip(g.exps, g.coeffs, strict=True):
            if e.sum() == 1:
                a[i, int(np.argmax(e))] += c
    if np.max(np.linalg.eigvals(a).real) >= -1e-9:
        return None
    p = solve_continuous_lyapunov(a.T, -np.eye(n))
    exps = monomials(n, 2, 2)
    coeffs = np.array([p[i, j] * (1 if i == j else 2) for i, j in (_pair(e) for e in exps)])
    return NumPoly(exps, coeffs)


def _pair(e: np.ndarray) -> tuple[int, int]:
    idx = [i for i, k in enumerate(e) for _ in range(int(k))]
    return idx[0], idx[1]


def _obligation(setting: ExactSetting, p0: Any, terms: list, basis: np.ndarray):
    """Numerical fit in z, then exact multipliers and Gram in y: (multipliers, Gram) or why."""
    from proofkit.sos.ascent import fit_squares

    if max([basis.shape[0]] + [b.shape[0] for _q, b in terms]) > MAX_GRAM:
        return f"its Gram matrix would exceed {MAX_GRAM} rows"

    num_terms = [(setting.to_z(q), b) for q, b in terms]
    got = fit_squares(setting.to_z(p0), num_terms, basis)
    if got is None:
        return "no numerical certificate"
    mgrams, q, _lam = got
    mults = []
    target = p0
    for (qpoly, b), mg in zip(terms, mgrams, strict=True):
        exact = psd_gram(z_gram_to_y(setting, b, mg))
        if exact is None:
            return "a multiplier's Gram matrix did not round to a PSD matrix"
        s = gram_poly(setting, b, exact)
        mults.append((s, b, exact))
        target = target + qpoly * s
    gram = fit_gram(target, basis, z_gram_to_y(setting, basis, q))
    if isinstance(gram, str):
        return gram
    return mults, gram


def _sq(basis: np.ndarray, gram: Any) -> dict[str, Any]:
    return {
        "basis": [list(map(int, r)) for r in basis],
        "gram": [[str(x) for x in r] for r in gram],
    }


def _half_basis(n: int, top: int, low: int = 0) -> np.ndarray:
    from proofkit.sos._ascent_maps import monomials

    return monomials(n, max(top // 2, low), low)


def _degree(p: flint.fmpq_mpoly) -> int:
    return max((sum(e) for e in p.monoms()), default=0)


def _set_obligations(setting: ExactSetting, v: Any, level: Fraction, ev: dict) -> str | None:
    """``inside`` with s1..sk and ``domain j`` with t1..tm, written into ``ev``."""
    sp_ = setting.space
    n, dv = setting.n, _degree(v)
    gap = sp_.const(flint.fmpq(level.numerator, level.denominator)) - v
    terms = []
    for gi, _strict in setting.set_conds:
        top = max(dv, _degree(gi) + (_degree(gi) % 2))
        terms.append((-gi, _half_basis(n, top - _degree(gi))))
    if len(terms) == 1 and terms[0][0] == -gap:  # the set is {V <= level} itself
        one = sp_.const(1)
        zero_basis = np.zeros((1, n), dtype=np.int64)
        fit = ([(one, zero_basis, [[flint.fmpq(1)]])], [[flint.fmpq(0)]])
        basis = zero_basis
    else:
        top = max([dv] + [_degree(g) for g, _ in setting.set_conds])
        basis = _half_basis(n, top + top % 2)
        fit = _obligation(setting, gap, terms, basis)
        if isinstance(fit, str):
            return f"the set is not shown inside {{V <= level}}: {fit}"
    for i, (s, b, g) in enumerate(fit[0]):
        ev["multipliers"][f"s{i + 1}"] = poly_json(s)
        ev["squares"][f"s{i + 1}"] = _sq(b, g)
    ev["squares"]["inside"] = _sq(basis, fit[1])
    for j, (hj, strict) in enumerate(setting.domain):
        eps = sp_.const(flint.fmpq(setting.eps.numerator, setting.eps.denominator))
        p0 = hj - eps if strict else hj
        top = max(dv, _degree(hj))
        top += top % 2  # as the level probe's domain blocks (sos/ascent.py)
        fit = _obligation(setting, p0, [(-gap, _half_basis(n, top - dv))], _half_basis(n, top))
        if isinstance(fit, str):
            return f"{{V <= level}} is not shown inside domain condition {j + 1}: {fit}"
        ((t, b, g),) = fit[0]
        ev["multipliers"][f"t{j + 1}"] = poly_json(t)
        ev["squares"][f"t{j + 1}"] = _sq(b, g)
        ev["squares"][f"domain {j + 1}"] = _sq(_half_basis(n, top), fit[1])
    return None


def _core_evidence(setup: BasinSetup, search: Any, it: Any) -> tuple[dict, Any, Fraction] | str:
    """``positive``, ``decrease``, ``s0``; the level stepped back until exact rounding works."""
    from proofkit.sos._ascent_maps import NumPoly

    st = setup.setting
    sp_ = st.space
    v = round_poly(st, it.v, bits=24)
    v_z = st.to_z(v)
    eps_q = sp_.const(flint.fmpq(st.eps.numerator, st.eps.denominator))
    why = "no level"
    for k in range(5):
        level_f = it.level * (1 - 0.001 * (2**k - 1))
        level = Fraction(math.floor(level_f * 1e7), 10**7)
        probe = search.at_level(NumPoly(v_z.exps, v_z.coeffs), it.degree, float(level))
        if probe is None:
            why = "the level probe failed after rounding V"
            continue
        _margin, grams = probe
        s0g = psd_gram(z_gram_to_y(st, it.s0_basis, grams["q0"]))
        if s0g is None:
            why = "s0 did not round to a PSD Gram matrix"
            continue
        s0 = gram_poly(st, it.s0_basis, s0g)
        gap = sp_.const(flint.fmpq(level.numerator, level.denominator)) - v
        target = -st.lie(v) - st.norm() * eps_q - s0 * gap
        dec = fit_gram(target, it.dec_basis, z_gram_to_y(st, it.dec_basis, grams["q1"]))
        if isinstance(dec, str):
            why = f"decrease: {dec}"
            continue
        break
    else:
        return f"exact rounding failed at every stepped-back level ({why})"
    pos_basis = _half_basis(st.n, it.degree, 1)
    pos = _obligation(st, v - st.norm() * eps_q, [], pos_basis)
    if isinstance(pos, str):
        return f"positive: {pos}"
    ev = {
        "V": poly_json(v),
        "numbers": {"eps": str(st.eps), "level": str(level)},
        "margin_power": 1,
        "multipliers": {"s0": poly_json(s0)},
        "squares": {
            "positive": _sq(pos_basis, pos[1]),
            "decrease": _sq(it.dec_basis, dec),
            "s0": _sq(it.s0_basis, s0g),
        },
    }
    return ev, v, level


def certify(
    setup: BasinSetup, search: Any, it: Any, set_from_level: bool = False
) -> BasinCertificate | str:
    """Exact evidence for one numerical iterate, checked exactly here; or why it failed.

    ``set_from_level``: the claim's set is ``{V <= level}`` itself (``proofkit basin``).
    """
    for k in range(DOMAIN_STEPS if setup.setting.domain else 1):
        core = _core_evidence(setup, search, replace(it, level=it.level * 0.7**k))
        if isinstance(core, str):
            return core
        ev, v, level = core
        setting = setup.setting
        if set_from_level:
            gap = setting.space.const(flint.fmpq(level.numerator, level.denominator)) - v
            setting = replace(setting, set_conds=((gap, False),))
        why = _set_obligations(setting, v, level, ev)
        if not why or "domain" not in why:  # a set outside the domain: try a lower level
            break
    if why:
        return why
    ok, reason = check_evidence(setting, ev)
    if not ok:
        raise RuntimeError(f"internal: exact re-check refused basin evidence: {reason}")
    return BasinCertificate(it.degree, v, level, ev, it.volume, list(it.history))


def run_search(
    setup: BasinSetup, degrees: Sequence[int], say: Say, budget: float, first: bool = False
):
    """Yield ``(search, iterate)`` after each degree (numerical; warm-started).

    ``first``: also yield the quadratic ``V`` of the Lyapunov equation at its best level.
    """
    search, it = start_search(setup, say, budget)
    if it is None:
        return
    if first:
        yield search, it
    for d in degrees:
        if _too_large(search, d, say):
            return
        it = search.improve(it, d)
        yield search, it


def start_search(
    setup: BasinSetup, say: Say, budget: float, with_set: bool = False
) -> tuple[Any, Any]:
    """The search (domain-aware; with the claim's set when ``with_set``) and its first
    iterate: the quadratic ``V`` of the Lyapunov equation at its best level (or None)."""
    from proofkit.sos.ascent import AscentSettings, BasinSearch

    st = setup.setting
    d2 = np.array([float(s) ** 2 for s in st.scale])
    cfg = AscentSettings(eps=float(st.eps), seconds_per_degree=budget)
    search = BasinSearch(
        setup.field_z, cfg, eps_weights=d2, progress=say,
        domain=[st.to_z(h) for h, _strict in st.domain],
        claim_set=[st.to_z(g) for g, _strict in st.set_conds] if with_set else None,
    )  # fmt: skip
    start = _lyapunov_start(setup)
    if start is None or _too_large(search, 2, say):
        return search, None
    it = search.level_of(start, 2)
    if it is not None:
        say(f"degree 2 from the Lyapunov equation: level {it.level:.6g}")
    return search, it


def _too_large(search: Any, degree: int, say: Say) -> bool:
    """Bounded cost: no degree whose decrease Gram matrix would exceed MAX_GRAM rows."""
    rows = int(search.shapes(degree)["dec_basis"].shape[0])
    if rows > MAX_GRAM:
        say(f"degree {degree} skipped: its Gram matrix would have {rows} rows (limit {MAX_GRAM})")
    return rows > MAX_GRAM


def _not_proved(model: Model, claim: Claim, reason: str) -> ProofAttempt:
    return ProofAttempt(not_proved_entry(model, claim, reason), reason)


def attempt(model: Model, claim: Claim, progress: Say | None = None) -> ProofAttempt | None:
    """Evidence for ``claim E attracts SET``: a certified sublevel set containing SET.

    None when another prover is responsible (scope over ranges, a field that is not
    polynomial), so that its reason is the one the user sees.
    """
    say = progress or (lambda _m: None)
    if claim.kind == "globally stable":  # inside a domain (without one: proofs/lyapunov.py)
        from proofkit.proofs._basin_invariant import attempt as in_domain

        return in_domain(model, claim, say)
    if claim.kind != "attracts" or claim_scope(model, claim) != "nominal":
        return None
    if not model.is_polynomial():
        return None  # rational fields: proofs/_nonpoly_basin.py; elementary functions: recast
    if claim_structure(model, claim).get("set") is None:
        return _not_proved(model, claim, "the claim's set is not polynomial")
    setup = setup_basin(model, claim.target or "", claim.region, say)
    if isinstance(setup, str):
        return _not_proved(model, claim, setup)
    from proofkit.proofs._basin_refute import DisagreementError, refute

    refuted = refute(model, claim, setup)  # cheap, and a false claim needs no long search
    if refuted is not None:
        for search, it in run_search(setup, (), say, 1.0, first=True):  # the quick proof only
            if isinstance(certify(setup, search, it), BasinCertificate):
                raise DisagreementError(
                    f"internal error: {claim.text!r} has a certificate and a simulated "
                    f"counterexample ({refuted.detail}); please report this bug"
                )
        return refuted
    return _search_claim(model, claim, setup, say)


def _search_claim(model: Model, claim: Claim, setup: BasinSetup, say: Say) -> ProofAttempt:
    """The Lyapunov-equation ``V`` first, then the claim-directed search, within CLAIM_BUDGET."""
    from proofkit.proofs._basin_claim import ClaimLog, claim_iterates, set_leaves_domain
    from proofkit.proofs._basin_refute import refute

    leaves = set_leaves_domain(setup, model.states)
    if leaves:
        return _not_proved(model, claim, leaves)
    t0 = time.perf_counter()
    search, it = start_search(setup, say, CLAIM_BUDGET, with_set=True)
    if it is None:
        return _not_proved(
            model, claim, "no level of the Lyapunov-equation V was certified numerically "
            "(the linearization is not Hurwitz, or no sublevel set fits the domain)",
        )  # fmt: skip
    cert = certify(setup, search, it)
    tried = f"the Lyapunov-equation V at its best level ({it.level:.4g} scaled): {cert}"
    log = ClaimLog()
    left = CLAIM_BUDGET - (time.perf_counter() - t0)
    if not isinstance(cert, BasinCertificate):
        degrees = tuple(d for d in DEGREES if d <= CLAIM_MAX_DEGREE)
        for nxt in claim_iterates(search, it, degrees, left, log, say):
            cert = certify(setup, search, nxt)
            if isinstance(cert, BasinCertificate):
                break
            tried = f"{tried}; degree {nxt.degree}: {cert}"
    if not isinstance(cert, BasinCertificate):
        took = time.perf_counter() - t0
        return _not_proved(model, claim, f"tried {tried}; {log.summary()} ({took:.1f} s)")
    refute(model, claim, setup, must_fail=True, seed=12)
    entry = claim_entry(
        model, claim, "proved", method=METHOD, theorem=THEOREM, evidence=cert.evidence
    )
    detail = f"sublevel set of a degree-{cert.degree} V at level {cert.level}"
    return ProofAttempt(entry, detail, trace=cert)


def estimate_basin(
    model: Model,
    equilibrium: str | None = None,
    *,
    degree: int = 4,
    progress: Say | None = None,
    seconds_per_degree: float | None = None,
) -> Any:
    """The largest audited region of attraction of this degree (see :mod:`._basin_run`)."""
    from proofkit.proofs._basin_run import SECONDS_PER_DEGREE
    from proofkit.proofs._basin_run import estimate_basin as run

    budget = seconds_per_degree or SECONDS_PER_DEGREE
    return run(model, equilibrium, degree=degree, progress=progress, seconds_per_degree=budget)
