"""The recast system, derived by the audit itself from the field's elementary atoms.

Recasting (Papachristodoulou and Prajna, "Analysis of non-polynomial systems
using the sum of squares decomposition", in *Positive Polynomials in Control*,
LNCIS 312, Springer 2005): a field that is a polynomial in the states and in
elementary *atoms* ``sin(a(x) + q pi)``, ``cos(a(x) + q pi)``, ``exp(a(x))``
(``a`` a rational polynomial, ``q`` rational), with constants in Q(sqrt d),
becomes a polynomial field in more variables on a set cut out by polynomial
constraints. The audit reads it from the model's expression trees
(``model.expressions``, which provenance compares with the source); the
certificate states no substitution.

With ``y = x - x*`` and ``delta = a(x* + y)`` (required to vanish at the
point, so every new variable does too) the audit introduces, per distinct
trigonometric argument ``a``, the pair ``S = sin(delta)``, ``C = cos(delta) - 1``,
per exponential atom ``E = exp(delta) - 1``, and per ``tanh`` atom ``T =
tanh(delta)`` (after the exponentials; ``dT/dt = (1 - T^2) D``; inequalities
``tanh k.1``: ``delta T - T^2 >= 0`` (``|tanh x| <= |x|``, same sign) and, for
``taylor_order >= 1``, ``tanh k.2``: ``delta T - delta^2 + delta^4/3 >= 0``
(``tanh x >= x - x^3/3`` for ``x >= 0``, since its derivative ``x^2 - tanh^2 x``
is nonnegative; odd)). Substitutions (angle
addition with the exact values of sine and cosine at ``q pi`` for ``q`` a
multiple of 1/4 or 1/6, which lie in Q(sqrt 2) or Q(sqrt 3))::

    sin(a + q pi) = sin(q pi) (C + 1) + cos(q pi) S
    cos(a + q pi) = cos(q pi) (C + 1) - sin(q pi) S
    exp(a)        = E + 1

Derivative rules along the flow (chain rule, ``D = grad a . f``):
``dS/dt = (C + 1) D``, ``dC/dt = -S D``, ``dE/dt = (E + 1) D``.
Equality constraint per pair: ``S^2 + C^2 + 2 C = 0``. Inequalities that hold
for every real ``delta`` (alternating Taylor bounds of order ``j``):
``L_j(delta) <= C + 1 <= U_j(delta)`` with the cosine series cut after a
negative (L) or positive (U) term, the same for ``delta S`` against
``delta`` times the sine series, and ``E + 1 >= sum_{k < 2j} delta^k / k!``.

Reciprocal atoms (only when :func:`derive` is called with ``reciprocal=True``,
after the ``tanh`` atoms, so the order of every other variable is unchanged):
per distinct denominator ``q`` (a negative power ``q^-k`` of a rational
polynomial with ``q(x*) != 0``, no atom inside) the variable ``R = 1/q(x* + y)
- r0``, ``r0 = 1/q(x*)`` (``q^-k = (R + r0)^k``), the derivative rule ``dR/dt =
-(R + r0)^2 D`` with ``D = grad q . f`` and the equality ``reciprocal k``:
``(R + r0) q(x* + y) - 1 = 0``; ``Recast.poles`` holds ``denominator k`` =
``sign(q(x*)) q(x* + y)``, which the schemas certify bounded away from 0.
A negative power of a constant is its exact inverse.

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, never use floating point, and never take a
substitution, a derivative rule or a constraint from the certificate.
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction
from math import factorial, isqrt
from typing import Any

from proofkit.audit.algebra import (
    Poly,
    poly_add,
    poly_constant,
    poly_derivative,
    poly_mul,
    poly_scale,
)
from proofkit.audit.numbers import FormatError, Num
from proofkit.audit.read import MAX_VARIABLES, get, only_keys, read_number
from proofkit.audit.schemas import require

__all__ = ["MAX_ORDER", "Recast", "derive", "exact_trig"]

MAX_ORDER = 3  # Taylor bound order per pair / exponential
MAX_ATOMS = 8

# cos(k pi / 12) for k = 0..6 as (rational part, coefficient of sqrt d, d)
_COS = {
    0: (Fraction(1), Fraction(0), 0),
    2: (Fraction(0), Fraction(1, 2), 3),
    3: (Fraction(0), Fraction(1, 2), 2),
    4: (Fraction(1, 2), Fraction(0), 0),
    6: (Fraction(0), Fraction(0), 0),
}


def _cos12(k: int) -> Num:
    """cos(k pi / 12) exactly, for k a multiple of 2 or 3 (else Rejected)."""
    k %= 24
    sign = 1
    if k > 12:
        k = 24 - k  # cos(2 pi - t) = cos t
    if k > 6:
        k, sign = 12 - k, -1  # cos(pi - t) = -cos t
    require(k in _COS, "recast", "an angle offset that is not a multiple of pi/4 or pi/6")
    a, b, d = _COS[k]
    return Num(sign * a, sign * b, d)


def exact_trig(q: Fraction) -> tuple[Num, Num]:
    """``(sin(q pi), cos(q pi))`` exactly for ``q`` a multiple of 1/4 or 1/6."""
    k = q * 12
    require(k.denominator == 1, "recast", f"sin/cos at {q} pi is not a tabulated exact value")
    kk = int(k)
    return _cos12(6 - kk), _cos12(kk)


@dataclass(frozen=True)
class Recast:
    """The recast polynomial system over ``z = (y, S1, C1, ..., E1, ...)``."""

    n: int  # states
    nz: int
    names: tuple[str, ...]
    field: tuple[Poly, ...]  # over z, coefficients in Q(sqrt d)
    equalities: tuple[tuple[str, Poly], ...]
    inequalities: tuple[tuple[str, Poly], ...]  # valid for every real delta
    d: int  # radicand of the field's coefficients (0: rational)
    enclosure: tuple[Fraction, Fraction] | None  # lo <= sqrt(d) <= hi
    poles: tuple[tuple[str, Poly], ...] = ()  # ("denominator k", sign(q(x*)) q(x* + y)) over z
    reciprocals: tuple[str, ...] = ()  # labels of the equalities that define an R

    def vertex_fields(self) -> list[tuple[str, tuple[Poly, ...]]]:
        """The field with sqrt(d) replaced by each end of its enclosure (rational)."""
        if self.enclosure is None:
            return [("", self.field)]
        out = []
        for label, r in zip(("lo", "hi"), self.enclosure, strict=True):
            fld = tuple(
                {e: Num.of(c.a + c.b * r) for e, c in p.items() if c.a + c.b * r != 0}
                for p in self.field
            )
            out.append((label, fld))
        return out


def _var(i: int, nz: int) -> Poly:
    return {tuple(int(j == i) for j in range(nz)): Num.of(1)}


def _one(nz: int, c: int = 1) -> Poly:
    return poly_constant(Num.of(c), nz)


def _enclosure(block: dict[str, Any], d: int, where: str) -> tuple[Fraction, Fraction] | None:
    raw = block.get("enclosure")
    if d == 0:
        require(raw is None, "recast", "an enclosure is stated for a rational field")
        return None
    if not isinstance(raw, list) or len(raw) != 2:
        raise FormatError(f"{where}.enclosure: expected [lo, hi] enclosing sqrt(d)")
    lo, hi = (read_number(x, 0, f"{where}.enclosure[{i}]").a for i, x in enumerate(raw))
    require(0 <= lo < hi, "enclosure", "expected 0 <= lo < hi")
    require(lo * lo <= d <= hi * hi, "enclosure", f"[{lo}, {hi}] does not enclose sqrt({d})")
    return lo, hi


def _taylor(delta: Poly, nz: int, order: int, kind: str, s: Poly, c1: Poly) -> list[Poly]:
    """Inequalities ``g >= 0`` valid for every real delta (alternating Taylor bounds)."""

    def series(terms: int, shift: int, odd: bool) -> Poly:
        acc: Poly = {}
        for k in range(terms):
            power = 2 * k + (1 if odd else 0) + shift
            coef = Fraction((-1) ** k, factorial(2 * k + (1 if odd else 0)))
            acc = poly_add(acc, poly_scale(_pow(delta, power, nz), Num.of(coef)))
        return acc

    out = []
    for j in range(1, order + 1):
        if kind == "trig":
            ds = poly_mul(delta, s)
            out.append(poly_add(c1, poly_scale(series(2 * j, 0, False), Num.of(-1))))
            out.append(poly_add(series(2 * j + 1, 0, False), poly_scale(c1, Num.of(-1))))
            out.append(poly_add(ds, poly_scale(series(2 * j, 1, True), Num.of(-1))))
            out.append(poly_add(series(2 * j - 1, 1, True), poly_scale(ds, Num.of(-1))))
        elif kind == "tanh":  # x tanh x >= x^2 - x^4/3: tanh x >= x - x^3/3 for x >= 0, odd
            dt = poly_mul(delta, s)
            d2 = _pow(delta, 2, nz)
            low = poly_add(d2, poly_scale(_pow(delta, 4, nz), Num.of(Fraction(-1, 3))))
            out.append(poly_add(dt, poly_scale(low, Num.of(-1))))
        else:  # exp: E + 1 >= sum_{k < 2j} delta^k / k!
            acc: Poly = {}
            for k in range(2 * j):
                acc = poly_add(
                    acc, poly_scale(_pow(delta, k, nz), Num.of(Fraction(1, factorial(k))))
                )
            out.append(poly_add(c1, poly_scale(acc, Num.of(-1))))
    return out


def _pow(p: Poly, k: int, nz: int) -> Poly:
    out = _one(nz)
    for _ in range(k):
        out = poly_mul(out, p)
    return out


class _Walk:
    """Expression trees to polynomials over ``z``; pass 1 collects the atoms' arguments."""

    def __init__(self, point: list[Num], nominal: list[Fraction]) -> None:
        self.point, self.nominal = point, nominal
        self.n = len(point)
        self.pairs: list[Poly] = []  # delta of each trigonometric pair (over y)
        self.exps: list[Poly] = []  # delta of each exponential atom (over y)
        self.tanhs: list[Poly] = []  # delta of each tanh atom (over y)
        self.recips: list[Poly] = []  # q(x* + y) of each reciprocal atom (over y)
        self.reciprocal = False  # negative powers are recast (else refused)
        self.d = 0
        self.nz = self.n  # fixed after pass 1

    def _root(self, c: Fraction) -> Num:
        require(c > 0 and c.denominator == 1, "recast", "sqrt of a constant other than an integer")
        d = int(c.numerator)
        r = isqrt(d)
        if r * r == d:
            return Num.of(r)
        require(self.d in (0, d), "recast", "constants from two fields Q(sqrt d) are mixed")
        self.d = d
        return Num(Fraction(0), Fraction(1), d)

    def angle(self, e: tuple[Any, ...]) -> tuple[Poly, Fraction]:
        """An argument as (polynomial over z, rational multiple of pi)."""
        op = e[0]
        if op == "pi":
            return {}, Fraction(1)
        if op == "+":
            acc, q = {}, Fraction(0)
            for a in e[1:]:
                p, qa = self.angle(a)
                acc, q = poly_add(acc, p), q + qa
            return acc, q
        if op == "*":
            parts = [self.angle(a) for a in e[1:]]
            withpi = [i for i, (_p, qa) in enumerate(parts) if qa != 0]
            require(len(withpi) <= 1, "recast", "pi times pi in an argument")
            if not withpi:
                return self.poly(e), Fraction(0)
            i = withpi[0]
            require(not parts[i][0], "recast", "pi in an argument must be a rational multiple")
            others = [p for j, (p, _q) in enumerate(parts) if j != i]
            c = poly_constant(Num.of(1), self.nz)
            for p in others:
                c = poly_mul(c, p)
            require(all(sum(x) == 0 for x in c), "recast", "pi times a variable in an argument")
            k = c.get(tuple([0] * self.nz), Num.of(0))
            require(k.b == 0, "recast", "an irrational multiple of pi in an argument")
            return {}, k.a * parts[i][1]
        return self.poly(e), Fraction(0)

    def _delta(self, arg: tuple[Any, ...]) -> tuple[Poly, Fraction]:
        p, q = self.angle(arg)
        zero = tuple([0] * self.nz)
        c = p.get(zero, Num.of(0))
        require(c.is_zero(), "recast", "an atom's argument must vanish at the point (up to pi)")
        require(all(sum(x[self.n :]) == 0 for x in p), "recast", "an atom inside an atom")
        short = {x[: self.n]: v for x, v in p.items()}
        for v in short.values():
            require(v.b == 0, "recast", "an irrational coefficient in an argument")
        return short, q

    def poly(self, e: tuple[Any, ...]) -> Poly:
        op, nz = e[0], self.nz
        if op == "c":
            return poly_constant(Num.of(e[1]), nz) if e[1] else {}
        if op == "var":
            i = e[1]
            if i >= self.n:
                return poly_constant(Num.of(self.nominal[i - self.n]), nz)
            return poly_add(_var(i, nz), poly_constant(self.point[i], nz))
        if op == "^":
            if e[2] < 0:
                return self._reciprocal(e[1], -e[2])
            return _pow(self.poly(e[1]), e[2], nz)
        if op in ("+", "*"):
            acc = self.poly(e[1])
            for a in e[2:]:
                acc = poly_add(acc, self.poly(a)) if op == "+" else poly_mul(acc, self.poly(a))
            return acc
        if op == "sqrt" and e[1][0] == "c":
            return poly_constant(self._root(e[1][1]), nz)
        require(op in ("sin", "cos", "exp", "tanh"), "recast", f"{op} is not recast here")
        delta, q = self._delta(e[1])
        return self._atom(op, delta, q)

    def _reciprocal(self, base: tuple[Any, ...], k: int) -> Poly:
        """``q^-k`` as ``(R + r0)^k`` (a constant ``q``: its exact inverse)."""
        require(self.reciprocal, "recast", "a negative power (rational terms are not recast here)")
        require(not _has_atom(base), "recast", "an atom inside an atom (in a denominator)")
        nz, n = self.nz, self.n
        short = {x[:n]: v for x, v in self.poly(base).items()}
        require(all(v.b == 0 for v in short.values()), "recast", "an irrational denominator")
        q0 = short.get(tuple([0] * n), Num.of(0))
        require(not q0.is_zero(), "recast", "a denominator vanishes at the point")
        r0 = Num.of(1 / q0.a)
        if all(sum(x) == 0 for x in short):
            return poly_constant(Num.of(r0.a**k), nz)
        if short not in self.recips:
            self.recips.append(short)
        j = n + 2 * len(self.pairs) + len(self.exps) + len(self.tanhs) + self.recips.index(short)
        if j >= nz:  # pass 1: only collecting
            return {}
        return _pow(poly_add(_var(j, nz), poly_constant(r0, nz)), k, nz)

    def _atom(self, op: str, delta: Poly, q: Fraction) -> Poly:
        nz, n = self.nz, self.n
        if op == "tanh":
            require(q == 0, "recast", "tanh of an argument with pi")
            if delta not in self.tanhs:
                self.tanhs.append(delta)
            k = n + 2 * len(self.pairs) + len(self.exps) + self.tanhs.index(delta)
            return _var(k, nz) if k < nz else {}
        if op == "exp":
            require(q == 0, "recast", "exp of an argument with pi")
            if delta not in self.exps:
                self.exps.append(delta)
            k = n + 2 * len(self.pairs) + self.exps.index(delta)
            return poly_add(_var(k, nz), _one(nz)) if k < nz else {}
        if delta not in self.pairs:
            self.pairs.append(delta)
        k = n + 2 * self.pairs.index(delta)
        if k + 1 >= nz:  # pass 1: only collecting
            return {}
        s, c1 = _var(k, nz), poly_add(_var(k + 1, nz), _one(nz))
        sq, cq = exact_trig(q)
        for v in (sq, cq):
            if v.b:
                require(self.d in (0, v.d), "recast", "constants from two fields are mixed")
                self.d = v.d
        if op == "sin":
            return poly_add(poly_scale(c1, sq), poly_scale(s, cq))
        return poly_add(poly_scale(c1, cq), poly_scale(s, -sq))


def _has_atom(e: tuple[Any, ...]) -> bool:
    """Whether a tree holds an elementary atom or a negative power."""
    if e[0] in ("sin", "cos", "exp", "tanh", "tan", "log"):
        return True
    if e[0] == "^":
        return e[2] < 0 or _has_atom(e[1])
    return e[0] in ("+", "*") and any(_has_atom(a) for a in e[1:])


def _embed(p: Poly, nz: int) -> Poly:
    return {x + tuple([0] * (nz - len(x))): v for x, v in p.items()}


def _grad_dot(delta: Poly, f: list[Poly], n: int, nz: int) -> Poly:
    """``D = grad delta . f`` (delta over y, f over z)."""
    out: Poly = {}
    for i in range(n):
        out = poly_add(out, poly_mul(_embed(poly_derivative(delta, i), nz), f[i]))
    return out


def derive(
    exprs: tuple[Any, ...],
    point: list[Num],
    nominal: list[Fraction],
    block: Any,
    where: str,
    reciprocal: bool = False,
) -> Recast:
    """The recast system of the field ``exprs`` at ``point``; ``block`` = evidence.recast.

    ``reciprocal``: negative powers become reciprocal atoms (else they are refused).
    """
    if not isinstance(block, dict):
        raise FormatError(f"{where}: expected an object")
    only_keys(block, {"enclosure", "taylor_order"}, where)
    order = get(block, "taylor_order", int, where)
    require(0 <= order <= MAX_ORDER, "recast", f"taylor_order must be 0..{MAX_ORDER}")
    n = len(point)
    walk = _Walk(point, nominal)
    walk.reciprocal = reciprocal
    for e in exprs:  # pass 1: the atoms
        walk.poly(e)
    nz = n + 2 * len(walk.pairs) + len(walk.exps) + len(walk.tanhs) + len(walk.recips)
    require(nz > n, "recast", "the field has no sin, cos, exp, tanh or 1/q to recast")
    require(nz <= MAX_VARIABLES, "recast", f"more than {MAX_VARIABLES} recast variables")
    walk.nz = nz
    counts = (len(walk.pairs), len(walk.exps), len(walk.tanhs), len(walk.recips))
    f = [walk.poly(e) for e in exprs]
    again = (len(walk.pairs), len(walk.exps), len(walk.tanhs), len(walk.recips))
    require(counts == again, "recast", "an atom inside an atom")
    zero = tuple([0] * nz)
    require(
        all(zero not in fi for fi in f), "equilibrium", "the recast field is not 0 at the point"
    )
    names = [f"y{i + 1}" for i in range(n)]
    full, eqs, ineqs = list(f), [], []
    for k, delta in enumerate(walk.pairs):
        names += [f"S{k + 1}", f"C{k + 1}"]
        s, c = _var(n + 2 * k, nz), _var(n + 2 * k + 1, nz)
        dd = _grad_dot(delta, f, n, nz)
        full.append(poly_mul(poly_add(c, _one(nz)), dd))
        full.append(poly_scale(poly_mul(s, dd), Num.of(-1)))
        circle = poly_add(poly_add(poly_mul(s, s), poly_mul(c, c)), poly_scale(c, Num.of(2)))
        eqs.append((f"circle {k + 1}", circle))
        bounds = _taylor(_embed(delta, nz), nz, order, "trig", s, poly_add(c, _one(nz)))
        ineqs += [(f"taylor {k + 1}.{i + 1}", g) for i, g in enumerate(bounds)]
    for k, delta in enumerate(walk.exps):
        names.append(f"E{k + 1}")
        e = _var(n + 2 * len(walk.pairs) + k, nz)
        full.append(poly_mul(poly_add(e, _one(nz)), _grad_dot(delta, f, n, nz)))
        bounds = _taylor(_embed(delta, nz), nz, order, "exp", e, poly_add(e, _one(nz)))
        ineqs += [(f"exp {k + 1}.{i + 1}", g) for i, g in enumerate(bounds)]
    base = n + 2 * len(walk.pairs) + len(walk.exps)
    for k, delta in enumerate(walk.tanhs):  # T = tanh(delta): dT/dt = (1 - T^2) D
        names.append(f"T{k + 1}")
        t = _var(base + k, nz)
        one_minus = poly_add(_one(nz), poly_scale(poly_mul(t, t), Num.of(-1)))
        full.append(poly_mul(one_minus, _grad_dot(delta, f, n, nz)))
        dz = _embed(delta, nz)
        sector = poly_add(poly_mul(dz, t), poly_scale(poly_mul(t, t), Num.of(-1)))
        bounds = [sector, *_taylor(dz, nz, min(order, 1), "tanh", t, t)]  # vanish at y = 0
        ineqs += [(f"tanh {k + 1}.{i + 1}", g) for i, g in enumerate(bounds)]
    poles = _reciprocals(walk, f, full, names, eqs)
    enc = _enclosure(block, walk.d, where)
    labels = tuple(f"reciprocal {k + 1}" for k in range(len(poles)))
    return Recast(
        n, nz, tuple(names), tuple(full), tuple(eqs), tuple(ineqs), walk.d, enc, poles, labels
    )


def _reciprocals(
    walk: _Walk, f: list[Poly], full: list[Poly], names: list[str], eqs: list
) -> tuple[tuple[str, Poly], ...]:
    """R = 1/q - r0 per reciprocal atom: dR/dt = -(R + r0)^2 D, (R + r0) q - 1 = 0."""
    n, nz = walk.n, walk.nz
    base = n + 2 * len(walk.pairs) + len(walk.exps) + len(walk.tanhs)
    poles = []
    for k, q in enumerate(walk.recips):
        names.append(f"R{k + 1}")
        q0 = q[tuple([0] * n)].a
        rr = poly_add(_var(base + k, nz), poly_constant(Num.of(1 / q0), nz))
        full.append(poly_scale(poly_mul(poly_mul(rr, rr), _grad_dot(q, f, n, nz)), Num.of(-1)))
        qz = _embed(q, nz)
        eqs.append((f"reciprocal {k + 1}", poly_add(poly_mul(rr, qz), _one(nz, -1))))
        poles.append((f"denominator {k + 1}", poly_scale(qz, Num.of(1 if q0 > 0 else -1))))
    return tuple(poles)
