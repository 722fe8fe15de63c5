"""Schemas for Lyapunov functions and certified regions of attraction (sums of squares).

Every target polynomial is built here, from the certificate's ``V``, numbers and
multipliers and the model's field shifted to the claim's equilibrium
(``g(y) = f(x* + y)``, ``y`` the deviation); the certificate supplies only
those and one Gram matrix per obligation (see DEVELOPERS.md, "The theorem
schemas and their obligation names"). Rational equilibria only.

``lyapunov-global`` (Lyapunov's theorem with a radially unbounded ``V``):
V >= eps|y|^2 and lie(V) <= -eps (|y|^2)^m everywhere imply global asymptotic
stability. ``lyapunov-local``: the same decrease on the sublevel set
{V <= level} (S-procedure multiplier s0 >= 0) gives local asymptotic
stability. ``region-of-attraction``: moreover the claim's set lies in
{V <= level} and {V <= level} lies in the domain; {V <= level} is compact and
forward invariant and every trajectory in it tends to the equilibrium, so the
set lies in the region of attraction. ``lyapunov-global-in-domain``: the
domain is forward invariant (strict Nagumo condition on each face, by the
S-procedure with the face as an equality) and the two Lyapunov inequalities
hold on it, so every trajectory starting in the domain tends to the point.

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, and never use floating point.
"""

from __future__ import annotations

from fractions import Fraction

from proofkit.audit.algebra import (
    Poly,
    poly_add,
    poly_constant,
    poly_derivative,
    poly_eval,
    poly_mul,
    poly_pow,
    poly_scale,
    poly_substitute,
)
from proofkit.audit.numbers import Num
from proofkit.audit.read import Condition, get, only_keys, read_vector
from proofkit.audit.schemas import (
    Checks,
    ClaimData,
    ModelData,
    check_squares,
    equilibrium_point,
    nominal_field,
    read_function,
    read_multipliers,
    read_numbers,
    require,
    schema,
    shifted_field,
    sum_of_squares_norm,
)

__all__ = [
    "another_equilibrium",
    "invariance_names",
    "lie_derivative",
    "lyapunov_global",
    "lyapunov_in_domain",
    "lyapunov_local",
    "region_of_attraction",
]

EVIDENCE_KEYS = {"V", "numbers", "multipliers", "squares", "margin_power"}
MAX_MARGIN_POWER = 4


def lie_derivative(v: Poly, field: list[Poly]) -> Poly:
    """``lie(V) = sum_i dV/dy_i * g_i``."""
    out: Poly = {}
    for i, gi in enumerate(field):
        out = poly_add(out, poly_mul(poly_derivative(v, i), gi))
    return out


def _neg(p: Poly) -> Poly:
    return poly_scale(p, Num.of(-1))


def _const(c: Fraction, n: int) -> Poly:
    return poly_constant(Num.of(c), n)


class _Setup:
    """What all three schemas share: the shifted field, V, eps, m and the first targets."""

    def __init__(self, model: ModelData, claim: ClaimData, checks: Checks, numbers: set[str]):
        ev, self.w = claim.evidence, f"{claim.where}.evidence"
        only_keys(ev, EVIDENCE_KEYS, self.w)
        self.n = n = len(model.states)
        self.point = equilibrium_point(model, claim, rational=True)
        self.g = shifted_field(model, self.point)
        checks.ok("the point is an exact zero of the field; the field is shifted to it exactly")
        self.v = read_function(ev, "V", n, self.w)
        require(
            all(sum(e) >= 2 for e in self.v), "V", "V has a term of degree below 2 in y = x - x*"
        )
        self.num = read_numbers(ev, numbers, self.w)
        for k, x in self.num.items():
            require(x > 0, "numbers", f"{k} = {x} must be positive")
        m = ev.get("margin_power", 1)
        require(
            isinstance(m, int) and not isinstance(m, bool) and 1 <= m <= MAX_MARGIN_POWER,
            "margin_power",
            f"margin_power must be an integer 1..{MAX_MARGIN_POWER}",
        )
        eps = Num.of(self.num["eps"])
        norm = sum_of_squares_norm(n)
        self.lie = lie_derivative(self.v, self.g)
        self.targets: dict[str, Poly] = {
            "positive": poly_add(self.v, poly_scale(norm, -eps)),
            "decrease": poly_add(_neg(self.lie), poly_scale(poly_pow(norm, m, n), -eps)),
        }
        checks.ok(f"positive: V - eps|y|^2 with eps = {self.num['eps']} (V positive definite)")

    def unshift(self, p: Poly) -> Poly:
        """``p(x* + y)`` for a polynomial ``p`` over the states."""
        n = self.n
        values = [
            poly_add({tuple(int(i == j) for j in range(n)): Num.of(1)}, poly_constant(c, n))
            for i, c in enumerate(self.point)
        ]
        return poly_substitute(p, values, n)

    def level_gap(self) -> Poly:
        """``level - V``."""
        return poly_add(_const(self.num["level"], self.n), _neg(self.v))


@schema("globally stable", "lyapunov", "lyapunov-global")
def lyapunov_global(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """V >= eps|y|^2 and -lie(V) >= eps|y|^(2m) everywhere: global asymptotic stability."""
    require(
        model.domain is None,
        "domain",
        "the model declares a domain; a global claim needs the domain shown forward invariant",
    )
    s = _Setup(model, claim, checks, {"eps"})
    require(not claim.evidence.get("multipliers"), "multipliers", "this theorem has none")
    checks.ok("decrease: -lie(V) - eps (|y|^2)^m (V strictly decreases away from the point)")
    check_squares(s.targets, claim.evidence, s.n, checks, s.w)
    checks.ok("V is radially unbounded (V >= eps|y|^2): every trajectory tends to the point")


@schema("stable", "lyapunov", "lyapunov-local")
def lyapunov_local(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """V >= eps|y|^2, and -lie(V) >= eps|y|^(2m) on {V <= level}: local asymptotic stability."""
    s = _Setup(model, claim, checks, {"eps", "level"})
    mult = read_multipliers(claim.evidence, ["s0"], s.n, s.w)
    s.targets["decrease"] = poly_add(
        s.targets["decrease"], _neg(poly_mul(mult["s0"], s.level_gap()))
    )
    s.targets["s0"] = mult["s0"]
    checks.ok(
        f"decrease: -lie(V) - eps (|y|^2)^m - s0 (level - V) with level = {s.num['level']} "
        "and s0 a sum of squares (S-procedure): lie(V) < 0 on {V <= level} away from the point"
    )
    check_squares(s.targets, claim.evidence, s.n, checks, s.w)


def invariance_names(m: int) -> list[str]:
    """Multiplier names of ``lyapunov-global-in-domain`` for ``m`` domain conditions."""
    names = [f"{x}{j + 1}" for x in ("p", "q", "u") for j in range(m)]
    return names + [f"r{j + 1}_{k + 1}" for j in range(m) for k in range(m)]


@schema("globally stable", "lyapunov-domain", "lyapunov-global-in-domain")
def lyapunov_in_domain(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """D = {h_j >= 0} forward invariant; V >= eps|y|^2 and -lie(V) >= eps|y|^(2m) on D.

    Forward invariance (Nagumo's condition, strict): at a first exit time T some
    ``h_j(x(T)) = 0`` while every ``h_k >= 0``; there ``lie(h_j) >= eps > 0``, so
    every active ``h_j`` grows and the others stay positive just after T: no exit.
    Then V decreases along every trajectory in D and ``V >= eps|y|^2`` bounds it,
    so the trajectory exists for all time and ``y -> 0`` (the decrease is
    integrable and the derivative of ``|y|^2`` bounded on the bounded orbit).
    ``m`` is the evidence's ``margin_power`` (1..4, absent: 1); ``m >= 2`` serves
    equilibria that are not exponentially stable (``dx/dt = -x^3``), the argument
    is the same with ``|y|^(2m)``.
    """
    require(model.domain is not None, "domain", "this theorem needs a declared domain")
    s = _Setup(model, claim, checks, {"eps"})
    dom = model.domain or ()
    m = len(dom)
    mult = read_multipliers(claim.evidence, invariance_names(m), s.n, s.w)
    hs = [s.unshift(h) for h, _strict in dom]
    eps = Num.of(s.num["eps"])
    for j, h in enumerate(hs):
        s.targets["positive"] = poly_add(
            s.targets["positive"], _neg(poly_mul(mult[f"p{j + 1}"], h))
        )
        s.targets["decrease"] = poly_add(
            s.targets["decrease"], _neg(poly_mul(mult[f"q{j + 1}"], h))
        )
        target = poly_add(lie_derivative(h, s.g), poly_constant(-eps, s.n))
        target = poly_add(target, poly_mul(mult[f"u{j + 1}"], h))
        for k, hk in enumerate(hs):
            target = poly_add(target, _neg(poly_mul(mult[f"r{j + 1}_{k + 1}"], hk)))
        s.targets[f"invariant {j + 1}"] = target
    s.targets.update(mult)
    power = claim.evidence.get("margin_power", 1)  # checked by _Setup: an integer 1..4
    checks.ok(
        f"positive: V - eps|y|^2 - sum p_j h_j, decrease: -lie(V) - eps (|y|^2)^m - sum q_j h_j "
        f"with m = {power}, over the {m} domain condition(s), p_j, q_j sums of squares: on the "
        "domain V >= eps|y|^2 and V strictly decreases away from the point"
    )
    checks.ok(
        "invariant j: lie(h_j) - eps + u_j h_j - sum_k r_jk h_k with u_j, r_jk sums of "
        "squares: lie(h_j) >= eps > 0 where h_j = 0 in the domain, so no trajectory leaves it"
    )
    check_squares(s.targets, claim.evidence, s.n, checks, s.w)
    checks.ok("every trajectory starting in the domain stays there and tends to the point")


def _set_multipliers(conditions: tuple[Condition, ...], prefix: str) -> list[str]:
    return [f"{prefix}{i + 1}" for i in range(len(conditions))]


@schema("attracts", "sublevel-set", "region-of-attraction")
def region_of_attraction(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """{V <= level} is forward invariant, inside the domain, contains the set, and V decreases."""
    require(claim.set is not None, "set", "the claim has no set")
    s = _Setup(model, claim, checks, {"eps", "level"})
    cset, dom = claim.set or (), model.domain or ()
    names = ["s0", *_set_multipliers(cset, "s"), *_set_multipliers(dom, "t")]
    mult = read_multipliers(claim.evidence, names, s.n, s.w)
    gap = s.level_gap()
    s.targets["decrease"] = poly_add(s.targets["decrease"], _neg(poly_mul(mult["s0"], gap)))
    inside = gap
    for i, (g, _strict) in enumerate(cset):
        inside = poly_add(inside, _neg(poly_mul(mult[f"s{i + 1}"], s.unshift(g))))
    s.targets["inside"] = inside
    eps = Num.of(s.num["eps"])
    for j, (h, strict) in enumerate(dom):
        t = mult[f"t{j + 1}"]
        target = poly_add(s.unshift(h), _neg(poly_mul(t, gap)))
        if strict:
            target = poly_add(target, poly_constant(-eps, s.n))
        s.targets[f"domain {j + 1}"] = target
    for k in names:
        s.targets[k] = mult[k]
    checks.ok(
        f"decrease: -lie(V) - eps (|y|^2)^m - s0 (level - V), level = {s.num['level']}: "
        "lie(V) < 0 on {V <= level} away from the point, so {V <= level} is forward invariant"
    )
    checks.ok(
        f"inside: level - V - sum s_i g_i over the set's {len(cset)} condition(s): "
        "the claim's set lies in {V <= level}"
    )
    if dom:
        checks.ok(
            f"domain j: h_j - t_j (level - V) (minus eps when strict) for the {len(dom)} "
            "domain condition(s): {V <= level} lies in the domain"
        )
    check_squares(s.targets, claim.evidence, s.n, checks, s.w)
    checks.ok("every multiplier is a sum of squares; {V <= level} is compact (V >= eps|y|^2)")


def _holds(conditions: tuple[Condition, ...], point: list[Num]) -> bool:
    signs = [(poly_eval(g, point).sign(), strict) for g, strict in conditions]
    return all(s > 0 or (s == 0 and not strict) for s, strict in signs)


@schema(
    "attracts", "equilibrium-in-set", "another-equilibrium-in-the-set",
    scopes=("nominal", "range"), refutes=True,
)  # fmt: skip
@schema(
    "globally stable", "equilibrium-in-set", "another-equilibrium-in-the-set",
    scopes=("nominal", "range"), refutes=True,
)  # fmt: skip
def another_equilibrium(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """A second equilibrium in the set (and the domain) never moves, so it never converges.

    Evidence ``{"point": [NUMBER...]}``: an exact zero of the field at the nominal
    values (which lie in every range), different from the claim's point, where
    every condition of the claim's set and of the domain holds.
    """
    ev, w = claim.evidence, f"{claim.where}.evidence"
    only_keys(ev, {"point"}, w)
    own = equilibrium_point(model, claim, rational=False)
    other = read_vector(get(ev, "point", list, w), claim.d, f"{w}.point", len(model.states))
    require(other != own, "point", "the point is the claim's own equilibrium")
    for i, fi in enumerate(nominal_field(model)):
        value = poly_eval({e: Num(c.a, c.b, claim.d) for e, c in fi.items()}, other)
        require(value.is_zero(), "point", f"f{i + 1} = {value} there, not 0: not an equilibrium")
    checks.ok("the point is an exact zero of the field, other than the claim's equilibrium")
    require(_holds(claim.set or (), other), "set", "the point is not in the claim's set")
    require(_holds(model.domain or (), other), "domain", "the point is not in the domain")
    checks.ok("it lies in the claim's set and the domain (exact signs): it stays there forever")
