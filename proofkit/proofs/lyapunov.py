"""Lyapunov-function proofs by sums of squares: ``claim E globally stable`` and ``claim E stable``.

Lyapunov's direct method (A. M. Lyapunov, 1892) with sum-of-squares
certificates (Parrilo 2000): in the deviation ``y = x - x*`` from a rational
equilibrium, with the shifted field ``g(y) = f(x* + y)`` and ``|y|^2 = sum y_i^2``,

* ``lyapunov-global`` (claim ``globally stable``, no domain):
  ``positive``: ``V - eps|y|^2`` and ``decrease``: ``-lie(V) - eps (|y|^2)^m``
  are sums of squares, ``V`` of degree 2, 4, 6, 8 in turn;
* ``lyapunov-local`` (claim ``stable``, for when the linearization is
  inconclusive): ``positive`` as above, ``decrease``:
  ``-lie(V) - eps (|y|^2)^m - s0 (level - V)`` and ``s0`` sums of squares
  (S-procedure). A global certificate serves with ``s0 = 0``; otherwise ``V``
  is found with the decrease on a ball (a linear program in ``V`` and a
  multiplier), made exact, and then fixed while ``s0`` is found for a level
  below the ball (the level is a solver parameter, re-solved without rebuilding).

The evidence follows the schema table in DEVELOPERS.md (obligation names,
``margin_power``, ``numbers``); every certificate is checked here exactly
(:func:`check_evidence`, exact re-expansion and LDL' from
:mod:`proofkit.exact`) before it is handed on, and only the audit decides.
An equilibrium whose linearization has an eigenvalue with positive real part
(exact Routh count) is not searched: no Lyapunov function exists. A point in
``Q(sqrt d)`` is "not proved" with that reason.

This module must never mark a claim proved by itself, never read a float as
evidence, and never import the audit's arithmetic.
"""

from __future__ import annotations

import time
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Any

import flint
import numpy as np
import sympy as sp

from proofkit.certificate import (
    claim_entry,
    claim_number_field,
    claim_scope,
    claim_structure,
    not_proved_entry,
)
from proofkit.errors import ModelError
from proofkit.model import Claim, Model
from proofkit.proofs import ProofAttempt

__all__ = [
    "DEGREES",
    "EPS",
    "TIME_BUDGET",
    "LyapunovCertificate",
    "SearchSetup",
    "attempt",
    "check_evidence",
    "evidence_json",
    "search",
    "shifted_field",
]

METHOD = "lyapunov"
THEOREM = {"globally stable": "lyapunov-global", "stable": "lyapunov-local"}
DEGREES = (2, 4, 6, 8)
EPS = Fraction(1, 100)
TIME_BUDGET = 90.0  # seconds of search per claim
MAX_STATES = 6
MAX_GRAM = 120  # rows of one Gram matrix (the audit's limit)
BALL_RADII2 = (Fraction(1), Fraction(1, 16))
LEVEL_FRACTIONS = (Fraction(1, 2), Fraction(1, 8), Fraction(1, 32))


@dataclass
class LyapunovCertificate:
    """Exact data of one certificate: ``V``, numbers and the Gram matrix of every obligation."""

    v: flint.fmpq_mpoly
    margin_power: int
    level: Fraction | None = None  # local only
    s0: flint.fmpq_mpoly | None = None  # local only
    squares: dict[str, tuple[np.ndarray, list[list[flint.fmpq]]]] = field(default_factory=dict)
    degree: int = 0


@dataclass
class SearchSetup:
    """The shifted field over the deviation, in a polynomial space of the states."""

    space: Any  # proofkit.sos.PolySpace
    g: list[flint.fmpq_mpoly]
    norm: flint.fmpq_mpoly
    margin_powers: tuple[int, ...]


def shifted_field(model: Model, point: Sequence[Fraction]) -> list[flint.fmpq_mpoly]:
    """``g(y) = f(x* + y)`` at nominal parameter values, over the states (as ``y``).

    Raises :class:`ModelError` when the field is not a polynomial with rational
    coefficients, or when ``g(0) != 0`` (the point is not an equilibrium).
    """
    from proofkit.sos import PolySpace

    nominal = model.at_nominal()
    xs = nominal.state_symbols
    space = PolySpace(xs)
    subs = {x: x + sp.Rational(p.numerator, p.denominator) for x, p in zip(xs, point, strict=True)}
    g = [space.coerce(rhs.subs(subs, simultaneous=True)) for rhs in nominal.field]
    origin = [flint.fmpq(0)] * len(xs)
    for i, gi in enumerate(g):
        if gi(*origin) != 0:
            raise ModelError(f"d{xs[i]}/dt is {gi(*origin)} at the point, not 0")
    return g


def _linear_part(space: Any, g: list[flint.fmpq_mpoly]) -> list[list[Any]]:
    """The Jacobian of ``g`` at ``y = 0`` as exact rationals (elements of ``Q``)."""
    from proofkit.analysis.linear import quadratic_field

    Q = quadratic_field(0)
    n = space.nvars
    rows = []
    for gi in g:
        row = [Q.zero] * n
        for exps, c in zip(gi.monoms(), gi.coeffs(), strict=True):
            if sum(exps) == 1:
                row[list(exps).index(1)] = Q(c)
        rows.append(row)
    return rows


def _margin_powers(space: Any, g: list[flint.fmpq_mpoly]) -> tuple[int, ...] | str:
    """Margin powers worth trying, or why no Lyapunov function exists (exact Routh counts)."""
    from proofkit.analysis.linear import characteristic_polynomial, quadratic_field, routh_array_in

    Q = quadratic_field(0)
    routh = routh_array_in(characteristic_polynomial(_linear_part(space, g), Q), Q)
    if routh.rhp_count:
        return (
            f"the linearization has {routh.rhp_count} eigenvalue(s) with positive real part "
            "(exact Routh count), so the equilibrium is unstable and no Lyapunov function exists"
        )
    return (1, 2) if routh.hurwitz else (2, 3, 4)


def _exact_gram(exact: Any, u: Any) -> tuple[np.ndarray, list[list[flint.fmpq]]]:
    return u.basis.copy(), exact.values[u.name]


def _exact_v(
    prog: Any, setup: SearchSetup, v: Any, m: int, degree: int, squares: dict[str, Any]
) -> LyapunovCertificate | None:
    """Solve ``prog`` exactly; ``V`` and the exact Gram matrices of ``squares``, or None."""
    from proofkit.exact import solve_exactly
    from proofkit.exact.rounding import unknown_poly

    res = solve_exactly(prog)
    if not res.found:
        return None
    ex = res.exact
    cert = LyapunovCertificate(unknown_poly(setup.space, v, ex.values["V"]), m, degree=degree)
    cert.squares = {name: _exact_gram(ex, u) for name, u in squares.items()}
    return cert


def _positive_v(setup: SearchSetup, degree: int) -> tuple[Any, Any, Any, Any]:
    """A program with free ``V`` (terms of degree 2..degree) and ``positive``: V - eps|y|^2."""
    from proofkit.sos import SearchProgram, full_basis

    space = setup.space
    prog = SearchProgram(space.variables)
    v = prog.free("V", full_basis(space.nvars, degree, 2))
    eps = space.const(EPS)
    return prog, v, eps, prog.require_sos(v - setup.norm * eps, "positive")


def _global(setup: SearchSetup, degree: int, m: int) -> LyapunovCertificate | None:
    """V with ``V - eps|y|^2`` and ``-lie(V) - eps (|y|^2)^m`` sums of squares."""
    prog, v, eps, pos = _positive_v(setup, degree)
    dec = prog.require_sos(-v.lie(setup.g) - setup.norm**m * eps, "decrease")
    if max(pos.size, dec.size) > MAX_GRAM:
        return None
    return _exact_v(prog, setup, v, m, degree, {"positive": pos, "decrease": dec})


def _ball(setup: SearchSetup, degree: int, m: int, r2: Fraction) -> LyapunovCertificate | None:
    """V positive, and decreasing on ``{|y|^2 <= r2}`` (multiplier s1); exact ``V``."""
    from proofkit.sos import full_basis

    space = setup.space
    prog, v, eps, pos = _positive_v(setup, degree)
    top = max(_lie_degree(setup, degree), 2 * m)
    # a multiplier of (r2 - |y|^2) must vanish to the order of the margin term
    s1 = prog.sos("s1", full_basis(space.nvars, max(m, (top - 2) // 2), m))
    gap = space.const(r2) - setup.norm
    dec = prog.require_sos(-v.lie(setup.g) - setup.norm**m * eps - s1 * gap, "ball")
    if max(pos.size, dec.size, s1.size) > MAX_GRAM:
        return None
    return _exact_v(prog, setup, v, m, degree, {"positive": pos})


def _lie_degree(setup: SearchSetup, degree: int) -> int:
    deg_f = max((gi.total_degree() for gi in setup.g), default=1)
    top = degree + max(deg_f, 1) - 1
    return top + top % 2


def _level_guess(space: Any, v: flint.fmpq_mpoly, r2: Fraction) -> float:
    """About the smallest value of ``V`` on the sphere ``|y|^2 = r2`` (a hint, sampled)."""
    rng = np.random.default_rng(11)
    u = rng.normal(size=(4000, space.nvars))
    u *= np.sqrt(float(r2)) / np.linalg.norm(u, axis=1, keepdims=True)
    exps, coefs = space.arrays(v, space.nvars)
    c = np.array([float(x) for x in coefs])
    vals = (np.prod(u[:, None, :] ** exps[None, :, :], axis=2) * c).sum(axis=1)
    return float(vals.min())


def _with_level(setup: SearchSetup, cert: LyapunovCertificate, r2: Fraction) -> bool:
    """Fix V; find ``s0`` and a level below the ball with the local decrease; fills ``cert``."""
    from proofkit.exact import solve_exactly
    from proofkit.exact.rounding import unknown_poly
    from proofkit.sos import SearchProgram, full_basis

    space, v, m = setup.space, cert.v, cert.margin_power
    guess = _level_guess(space, v, r2)
    if not guess > 0:
        return False
    top = max(_lie_degree(setup, cert.degree), 2 * m)
    prog = SearchProgram(space.variables)
    level = prog.level("level", 1)
    # s0 (level - V) near 0 is about level * s0: s0 must vanish to the margin's order
    s0 = prog.sos("s0", full_basis(space.nvars, max(m, (top - cert.degree) // 2), m))
    lie = sum((v.derivative(i) * gi for i, gi in enumerate(setup.g)), space.zero())
    target = -lie - setup.norm**m * space.const(EPS) + s0 * v
    dec = prog.require_sos(target - s0 * level, "decrease")
    for frac in LEVEL_FRACTIONS:
        value = Fraction(guess * float(frac)).limit_denominator(1000)
        if value <= 0:
            continue
        level.set(value)
        res = solve_exactly(prog)
        if res.found:
            ex = res.exact
            cert.level, cert.s0 = value, unknown_poly(space, s0, ex.values["s0"])
            cert.squares["decrease"] = _exact_gram(ex, dec)
            cert.squares["s0"] = _exact_gram(ex, s0)
            return True
    return False


def _as_local(setup: SearchSetup, cert: LyapunovCertificate) -> LyapunovCertificate:
    """A global certificate as a local one: ``s0 = 0``, level 1."""
    zero = np.zeros((1, setup.space.nvars), dtype=np.int64)
    cert.level, cert.s0 = Fraction(1), setup.space.zero()
    cert.squares["s0"] = (zero, [[flint.fmpq(0)]])
    return cert


def _too_big(setup: SearchSetup, degree: int) -> bool:
    """Would the decrease Gram basis (all monomials up to half its degree) exceed MAX_GRAM?"""
    from math import comb

    n = setup.space.nvars
    return comb(n + _lie_degree(setup, degree) // 2, n) > MAX_GRAM


def search(
    setup: SearchSetup, local: bool, deadline: float, say: Callable[[str], None]
) -> tuple[LyapunovCertificate | None, str]:
    """Degrees 2, 4, 6, 8 in turn; the first exact certificate, or why none was found."""
    tried = []
    for degree in DEGREES:
        if degree > 2 and _too_big(setup, degree):
            break
        for m in setup.margin_powers:
            if 2 * m > _lie_degree(setup, degree):
                continue
            if time.perf_counter() > deadline:
                return None, f"time budget used up after {', '.join(tried) or 'no attempt'}"
            say(f"lyapunov: V of degree {degree}, margin power {m}")
            tried.append(f"degree {degree} (m = {m})")
            cert = _global(setup, degree, m)
            if cert is not None:
                return (_as_local(setup, cert) if local else cert), ""
            if not local:
                continue
            for r2 in BALL_RADII2:
                cert = _ball(setup, degree, m, r2)
                if cert is not None and _with_level(setup, cert, r2):
                    return cert, ""
    degrees = sorted({int(t.split()[1]) for t in tried})
    shown = ", ".join(map(str, degrees)) or "none (the programs would exceed the size limit)"
    return None, f"no sum-of-squares Lyapunov function found with V of degree {shown}"


# --- evidence ------------------------------------------------------------------------
def _poly_json(p: flint.fmpq_mpoly) -> list[Any]:
    return [[list(map(int, e)), str(c)] for e, c in zip(p.monoms(), p.coeffs(), strict=True)]


def evidence_json(cert: LyapunovCertificate, local: bool) -> dict[str, Any]:
    """The claim's ``evidence`` object in the schema's names (DEVELOPERS.md)."""
    numbers = {"eps": str(EPS)}
    if local:
        numbers["level"] = str(cert.level)
    ev: dict[str, Any] = {"V": _poly_json(cert.v), "numbers": numbers}
    ev["margin_power"] = cert.margin_power
    if local:
        assert cert.s0 is not None
        ev["multipliers"] = {"s0": _poly_json(cert.s0)}
    ev["squares"] = {
        name: {
            "basis": [list(map(int, row)) for row in basis],
            "gram": [[str(x) for x in row] for row in gram],
        }
        for name, (basis, gram) in cert.squares.items()
    }
    return ev


def _read_poly(space: Any, data: list[Any]) -> flint.fmpq_mpoly:
    return space.from_terms({tuple(e): Fraction(c) for e, c in data})


def check_evidence(
    model: Model, point: Sequence[Fraction], evidence: dict[str, Any], local: bool
) -> tuple[bool, str]:
    """Exact check of ``evidence`` against the schema's targets, built here from the model.

    Independent of the search: targets are rebuilt from ``V``, the numbers and
    the multipliers, then each is matched with its Gram matrix and the Gram
    matrix passes the exact LDL' (:func:`proofkit.exact.check_gram`).
    """
    from proofkit.exact import check_gram

    g = shifted_field(model, point)
    space = _space(model)
    n = space.nvars
    norm = sum((space.gen(i) ** 2 for i in range(n)), space.zero())
    v = _read_poly(space, evidence["V"])
    if any(sum(e) < 2 for e in v.monoms()):
        return False, "V has a term of degree below 2"
    eps = Fraction(evidence["numbers"]["eps"])
    m = int(evidence.get("margin_power", 1))
    lie = sum((v.derivative(i) * gi for i, gi in enumerate(g)), space.zero())
    targets = {
        "positive": v - norm * space.const(eps),
        "decrease": -lie - norm**m * space.const(eps),
    }
    if local:
        level = Fraction(evidence["numbers"]["level"])
        s0 = _read_poly(space, evidence["multipliers"]["s0"])
        targets["decrease"] -= s0 * (space.const(level) - v)
        targets["s0"] = s0
        if level <= 0:
            return False, "level must be positive"
    if eps <= 0:
        return False, "eps must be positive"
    if set(targets) != set(evidence["squares"]):
        return False, f"obligations {sorted(evidence['squares'])}, expected {sorted(targets)}"
    for name, target in targets.items():
        item = evidence["squares"][name]
        basis = [space.monomial(e) for e in item["basis"]]
        gram = [[Fraction(x) for x in row] for row in item["gram"]]
        verdict = check_gram(space.to_sympy(target), space.variables, basis, gram)
        if not verdict.ok:
            return False, f"{name}: {verdict.reason}"
    return True, ""


def _space(model: Model) -> Any:
    from proofkit.sos import PolySpace

    return PolySpace(model.at_nominal().state_symbols)


# --- the prover ----------------------------------------------------------------------
def _rational_point(model: Model, claim: Claim) -> list[Fraction] | str:
    """The claim's equilibrium as rationals, or why the schemas cannot use it."""
    d = claim_number_field(model, claim)
    eq = claim_structure(model, claim)["equilibrium"] or {}
    if d is None or (d == 0 and eq.get("point") is None):
        return (
            "the equilibrium is not a fixed point in Q or Q(sqrt(d)); "
            "Lyapunov certificates need a rational equilibrium point"
        )
    if d:
        return (
            f"the equilibrium lies in Q(sqrt({d})), not in Q; the Lyapunov schemas need a "
            "rational equilibrium point (shifting by an irrational point is not supported)"
        )
    return [Fraction(str(c)) for c in eq["point"]]


def _setup(model: Model, point: list[Fraction]) -> SearchSetup | str:
    try:
        g = shifted_field(model, point)
    except ModelError as exc:
        return f"the vector field is not a polynomial with rational coefficients here: {exc}"
    space = _space(model)
    powers = _margin_powers(space, g)
    if isinstance(powers, str):
        return powers
    norm = sum((space.gen(i) ** 2 for i in range(space.nvars)), space.zero())
    return SearchSetup(space, g, norm, powers)


def _not_proved(model: Model, claim: Claim, reason: str) -> ProofAttempt:
    return ProofAttempt(not_proved_entry(model, claim, reason), reason)


def attempt(
    model: Model,
    claim: Claim,
    progress: Callable[[str], None] | None = None,
    *,
    budget: float = TIME_BUDGET,
) -> ProofAttempt | None:
    """A Lyapunov certificate for ``stable`` / ``globally stable``, or None if n/a."""
    say = progress or (lambda _msg: None)
    if claim.kind not in THEOREM or claim_scope(model, claim) != "nominal":
        return None
    local = claim.kind == "stable"
    if not model.is_polynomial() or (not local and model.domain is not None):
        return None  # other provers: rational/recast fields, forward-invariant domains
    if len(model.states) > MAX_STATES:
        return _not_proved(model, claim, f"more than {MAX_STATES} states")
    point = _rational_point(model, claim)
    if isinstance(point, str):
        return _not_proved(model, claim, point)
    setup = _setup(model, point)
    if isinstance(setup, str):
        return _not_proved(model, claim, setup)
    cert, why = search(setup, local, time.perf_counter() + budget, say)
    if cert is None:
        return _not_proved(model, claim, why)
    evidence = evidence_json(cert, local)
    ok, reason = check_evidence(model, point, evidence, local)
    if not ok:  # the search's own exact checks passed, so this is a bug: say so
        return _not_proved(model, claim, f"internal: the exact re-check refused it: {reason}")
    entry = claim_entry(
        model, claim, "proved", method=METHOD, theorem=THEOREM[claim.kind], evidence=evidence
    )
    detail = f"Lyapunov function of degree {cert.degree} (margin power {cert.margin_power})"
    return ProofAttempt(entry, detail)
