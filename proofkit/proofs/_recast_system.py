"""The recast polynomial system on the search side (python-flint), from the field's trees.

Recasting after Papachristodoulou and Prajna (2005): the model section's
expression trees (``model.expressions``) are walked depth first; every
``sin``/``cos`` of an argument ``a(x) + q pi`` and every ``exp(a(x))`` whose
polynomial part ``a`` vanishes at the equilibrium gets new variables
(``S = sin(delta)``, ``C = cos(delta) - 1`` per distinct ``delta = a(x* + y)``,
``E = exp(delta) - 1``, then ``T = tanh(delta)``), in order of first appearance,
so that the variables are those the audit derives on its own. Constants live in Q(sqrt d): a
polynomial is a pair ``(A, B)`` meaning ``A + sqrt(d) B``. With ``reciprocal=True``
every negative power ``q^-k`` of a rational polynomial (``q(x*) != 0``, no atom
inside) becomes ``(R + r0)^k``, ``R = 1/q(x* + y) - r0``, after the ``tanh``
atoms: ``dR/dt = -(R + r0)^2 grad q . f``, equality ``reciprocal k``:
``(R + r0) q - 1`` (kept apart from the circle relations), pole
``denominator k``: ``sign(q(x*)) q``.

This module builds exact polynomials only for the prover's own checks and
for the numerical search; it decides nothing, and it must never import
:mod:`proofkit.audit` (the audit derives the same system independently).
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction
from math import factorial, isqrt
from typing import Any

import flint
import numpy as np
import sympy as sp

__all__ = ["RecastSystem", "Unsupported", "build_system", "field_inputs"]

Pair = tuple[flint.fmpq_mpoly, flint.fmpq_mpoly]


class Unsupported(ValueError):
    """The field cannot be recast by this method (the reason is the message)."""


@dataclass(frozen=True)
class RecastSystem:
    n: int
    nz: int
    names: tuple[str, ...]
    ctx: Any  # flint.fmpq_mpoly_ctx over z
    field: tuple[Pair, ...]  # over z: A + sqrt(d) B, states then S, C pairs then E
    d: int
    equalities: tuple[tuple[str, flint.fmpq_mpoly], ...]
    inequalities: tuple[tuple[str, flint.fmpq_mpoly], ...]
    deltas: tuple[tuple[str, flint.fmpq_mpoly], ...]  # ("trig" | "exp", delta over z)
    point: tuple[Fraction, ...]
    reciprocals: tuple[tuple[str, flint.fmpq_mpoly], ...] = ()  # (R + r0) q - 1
    poles: tuple[tuple[str, flint.fmpq_mpoly], ...] = ()  # ("denominator k", sign(q(x*)) q)

    def vertex_fields(self, enclosure: tuple[Fraction, Fraction] | None) -> list[tuple[str, list]]:
        """The rational fields at the ends of the enclosure of sqrt(d) (or the field itself)."""
        if self.d == 0:
            return [("", [a for a, _b in self.field])]
        assert enclosure is not None
        out = []
        for label, r in zip(("lo", "hi"), enclosure, strict=True):
            c = self.ctx.constant(flint.fmpq(r.numerator, r.denominator))
            out.append((label, [a + c * b for a, b in self.field]))
        return out

    def numeric_field(self) -> list[dict[tuple[int, ...], float]]:
        r = float(np.sqrt(self.d)) if self.d else 0.0
        out = []
        for a, b in self.field:
            acc: dict[tuple[int, ...], float] = {}
            for p, scale in ((a, 1.0), (b, r)):
                for e, c in zip(p.monoms(), p.coeffs(), strict=True):
                    key = tuple(int(x) for x in e)
                    acc[key] = acc.get(key, 0.0) + scale * float(c)
            out.append({e: c for e, c in acc.items() if c != 0.0})
        return out

    def lift(self, x: np.ndarray) -> np.ndarray:
        """Points ``x`` (rows, original states) to ``z`` (y, then S, C, E per atom)."""
        y = x - np.array([float(v) for v in self.point])
        cols = [y[:, i] for i in range(self.n)]
        for kind, delta in self.deltas:
            dv = _eval(delta, y, self.nz)
            if kind == "trig":
                cols += [np.sin(dv), np.cos(dv) - 1.0]
            elif kind == "tanh":
                cols.append(np.tanh(dv))
            elif kind == "reciprocal":  # R = 1/q - 1/q(x*)
                q0 = _eval(delta, np.zeros((1, self.n)), self.nz)[0]
                with np.errstate(divide="ignore"):
                    cols.append(1.0 / dv - 1.0 / q0)
            else:
                cols.append(np.expm1(dv))
        return np.stack(cols, axis=1)


def _eval(p: flint.fmpq_mpoly, y: np.ndarray, nz: int) -> np.ndarray:
    out = np.zeros(len(y))
    for e, c in zip(p.monoms(), p.coeffs(), strict=True):
        term = np.full(len(y), float(c))
        for i, k in enumerate(e[: y.shape[1]]):
            if k:
                term = term * y[:, i] ** int(k)
        out += term
    return out


class _Walker:
    def __init__(self, n: int, point: list[Fraction], nominal: list[Fraction]) -> None:
        self.n, self.point, self.nominal = n, point, nominal
        self.trig: list[flint.fmpq_mpoly] = []  # deltas over y (ctx of n variables)
        self.exps: list[flint.fmpq_mpoly] = []
        self.tanhs: list[flint.fmpq_mpoly] = []
        self.recips: list[flint.fmpq_mpoly] = []  # q(x* + y) per reciprocal atom
        self.reciprocal = False
        self.small = flint.fmpq_mpoly_ctx.get(tuple(f"y{i}" for i in range(n)), "lex")
        self.d = 0
        self.ctx: Any = None  # the z context, set after pass 1

    def q(self, x: Fraction) -> flint.fmpq:
        return flint.fmpq(x.numerator, x.denominator)

    def const(self, a: Fraction, b: Fraction = Fraction(0)) -> Pair:
        ctx = self.ctx or self.small
        return ctx.constant(self.q(a)), ctx.constant(self.q(b))

    def add(self, u: Pair, v: Pair) -> Pair:
        return u[0] + v[0], u[1] + v[1]

    def mul(self, u: Pair, v: Pair) -> Pair:
        dd = self.ctx.constant(self.d) if self.ctx else self.small.constant(self.d)
        return u[0] * v[0] + dd * u[1] * v[1], u[0] * v[1] + u[1] * v[0]

    def walk(self, t: Any) -> Pair:
        if isinstance(t, str):
            return self.const(Fraction(t))
        op, args = t[0], t[1:]
        ctx = self.ctx or self.small
        if op == "var":
            i = args[0]
            if i >= self.n:
                return self.const(self.nominal[i - self.n])
            return ctx.gens()[i] + ctx.constant(self.q(self.point[i])), ctx.constant(0)
        if op in ("+", "*"):
            acc = self.walk(args[0])
            for a in args[1:]:
                acc = self.add(acc, self.walk(a)) if op == "+" else self.mul(acc, self.walk(a))
            return acc
        if op == "^":
            if args[1] < 0:
                return self._reciprocal(args[0], -args[1])
            acc = self.const(Fraction(1))
            base = self.walk(args[0])
            for _ in range(args[1]):
                acc = self.mul(acc, base)
            return acc
        if op == "sqrt" and isinstance(args[0], str):
            return self._root(Fraction(args[0]))
        if op in ("sin", "cos", "exp", "tanh"):
            return self._atom(op, args[0])
        raise Unsupported(f"{op} is not recast here")

    def _reciprocal(self, base: Any, k: int) -> Pair:
        """``q^-k`` as ``(R + r0)^k`` (a constant ``q``: its exact inverse)."""
        if not self.reciprocal:
            raise Unsupported("a negative power (rational terms are not recast here)")
        if self.trig_used(base):
            raise Unsupported("an atom inside an atom (in a denominator)")
        saved, self.ctx = self.ctx, None
        try:
            a, b = self.walk(base)
        finally:
            self.ctx = saved
        if not b.is_zero():
            raise Unsupported("an irrational denominator")
        terms = dict(zip(map(tuple, a.monoms()), a.coeffs(), strict=True))
        q0 = terms.get(tuple([0] * self.n), flint.fmpq(0))
        if q0 == 0:
            raise Unsupported("a denominator vanishes at the equilibrium")
        r0 = Fraction(int(q0.q), int(q0.p))
        if len(terms) == 1:
            return self.const(r0**k)
        if a not in self.recips:
            self.recips.append(a)
        if self.ctx is None:
            return self.const(Fraction(0))
        j = self.n + 2 * len(self.trig) + len(self.exps) + len(self.tanhs)
        rr = self.ctx.gens()[j + self.recips.index(a)] + self.ctx.constant(self.q(r0))
        return rr**k, self.ctx.constant(0)

    def _root(self, c: Fraction) -> Pair:
        if c <= 0 or c.denominator != 1:
            raise Unsupported("sqrt of a constant other than a positive integer")
        k = isqrt(int(c))
        if k * k == c:
            return self.const(Fraction(k))
        if self.d not in (0, int(c)):
            raise Unsupported("constants from two fields Q(sqrt d)")
        self.d = int(c)
        return self.const(Fraction(0), Fraction(1))

    def _angle(self, t: Any) -> tuple[flint.fmpq_mpoly, Fraction]:
        """Argument as (polynomial over y, rational multiple of pi), on the small context."""
        pis = Fraction(0)
        terms = t[1:] if isinstance(t, list) and t[0] == "+" else [t]
        rest = []
        for term in terms:
            q = _pi_multiple(term)
            if q is None:
                rest.append(term)
            else:
                pis += q
        saved, self.ctx = self.ctx, None
        try:
            acc = self.small.constant(0)
            for term in rest:
                a, b = self.walk(term)
                if not b.is_zero() or self.trig_used(term):
                    raise Unsupported("an argument must be a rational polynomial in the states")
                acc = acc + a
        finally:
            self.ctx = saved
        if any(sum(e) == 0 for e in acc.monoms()):
            raise Unsupported("an atom's argument must vanish at the equilibrium (up to pi)")
        return acc, pis

    def trig_used(self, t: Any) -> bool:
        if isinstance(t, list):
            if t[0] == "^" and isinstance(t[2], int) and t[2] < 0:
                return True
            return t[0] in ("sin", "cos", "exp", "tan", "log", "tanh") or any(
                self.trig_used(a) for a in t[1:]
            )
        return False

    def _atom(self, op: str, arg: Any) -> Pair:
        delta, q = self._angle(arg)
        ctx = self.ctx
        if op == "tanh":
            if q != 0:
                raise Unsupported("tanh of an argument with pi")
            if delta not in self.tanhs:
                self.tanhs.append(delta)
            if ctx is None:
                return self.const(Fraction(0))
            k = self.n + 2 * len(self.trig) + len(self.exps) + self.tanhs.index(delta)
            return ctx.gens()[k], ctx.constant(0)
        if op == "exp":
            if q != 0:
                raise Unsupported("exp of an argument with pi")
            if delta not in self.exps:
                self.exps.append(delta)
            if ctx is None:
                return self.const(Fraction(0))
            k = self.n + 2 * len(self.trig) + self.exps.index(delta)
            return ctx.gens()[k] + ctx.constant(1), ctx.constant(0)
        if delta not in self.trig:
            self.trig.append(delta)
        if ctx is None:
            return self.const(Fraction(0))
        k = self.n + 2 * self.trig.index(delta)
        s, c1 = ctx.gens()[k], ctx.gens()[k + 1] + ctx.constant(1)
        sq, cq = _exact(sp.sin(q * sp.pi)), _exact(sp.cos(q * sp.pi))
        for _a, b, d in (sq, cq):
            if b:
                if self.d not in (0, d):
                    raise Unsupported("constants from two fields Q(sqrt d)")
                self.d = d
        sin_q = self.const(sq[0], sq[1])
        cos_q = self.const(cq[0], cq[1])
        sv, cv = (s, ctx.constant(0)), (c1, ctx.constant(0))
        if op == "sin":
            return self.add(self.mul(sin_q, cv), self.mul(cos_q, sv))
        return self.add(self.mul(cos_q, cv), self.mul(self.const(-sq[0], -sq[1]), sv))


def _pi_multiple(t: Any) -> Fraction | None:
    if isinstance(t, list) and t == ["pi"]:
        return Fraction(1)
    if isinstance(t, list) and t[0] == "*" and len(t) == 3:
        a, b = t[1], t[2]
        if isinstance(a, str) and b == ["pi"]:
            return Fraction(a)
    return None


def _exact(v: sp.Expr) -> tuple[Fraction, Fraction, int]:
    """``a + b sqrt(d)`` of an exact sine or cosine value."""
    v = sp.nsimplify(v) if not v.is_Rational else v
    if v.is_Rational:
        return Fraction(int(v.p), int(v.q)), Fraction(0), 0
    coeff, rad = v.as_coeff_Mul()
    if isinstance(rad, sp.Pow) and rad.exp == sp.Rational(1, 2) and rad.base.is_Integer:
        return Fraction(0), Fraction(int(coeff.p), int(coeff.q)), int(rad.base)
    raise Unsupported(f"sin/cos at a multiple of pi with no value in Q(sqrt d): {v}")


def _series(delta: Any, terms: int, shift: int, odd: bool, one: Any) -> Any:
    acc = one * 0
    for k in range(terms):
        m = 2 * k + (1 if odd else 0)
        acc = acc + delta ** (m + shift) * flint.fmpq((-1) ** k, factorial(m))
    return acc


def _taylor(kind: str, delta: Any, var: Any, c1: Any, order: int, one: Any) -> list[Any]:
    """Inequalities ``g >= 0`` valid for every real delta, in the audit's order."""
    out = []
    for j in range(1, order + 1):
        if kind == "trig":
            ds = delta * var
            out += [
                c1 - _series(delta, 2 * j, 0, False, one),
                _series(delta, 2 * j + 1, 0, False, one) - c1,
                ds - _series(delta, 2 * j, 1, True, one),
                _series(delta, 2 * j - 1, 1, True, one) - ds,
            ]
        elif kind == "tanh":  # x tanh x >= x^2 - x^4/3 (the audit's order)
            out.append(delta * var - delta**2 + delta**4 * flint.fmpq(1, 3))
        else:
            acc = one * 0
            for k in range(2 * j):
                acc = acc + delta**k * flint.fmpq(1, factorial(k))
            out.append(c1 - acc)
    return out


def build_system(
    trees: list[Any],
    point: list[Fraction],
    nominal: list[Fraction],
    order: int,
    reciprocal: bool = False,
) -> RecastSystem:
    """The recast system of the field's expression trees at a rational point.

    ``reciprocal``: negative powers become reciprocal atoms (else Unsupported).
    """
    n = len(point)
    w = _Walker(n, point, nominal)
    w.reciprocal = reciprocal
    for t in trees:  # pass 1: collect the atoms
        w.walk(t)
    if not w.trig and not w.exps and not w.tanhs and not w.recips:
        raise Unsupported("the field has no sin, cos, exp or tanh to recast")
    nz = n + 2 * len(w.trig) + len(w.exps) + len(w.tanhs) + len(w.recips)
    names = [f"y{i + 1}" for i in range(n)]
    for k in range(len(w.trig)):
        names += [f"S{k + 1}", f"C{k + 1}"]
    names += [f"E{k + 1}" for k in range(len(w.exps))]
    names += [f"T{k + 1}" for k in range(len(w.tanhs))]
    names += [f"R{k + 1}" for k in range(len(w.recips))]
    ctx = flint.fmpq_mpoly_ctx.get(tuple(f"z{i}" for i in range(nz)), "lex")
    w.ctx = ctx
    counts = (len(w.trig), len(w.exps), len(w.tanhs), len(w.recips))
    f = [w.walk(t) for t in trees]
    if counts != (len(w.trig), len(w.exps), len(w.tanhs), len(w.recips)):
        raise Unsupported("an atom inside an atom")
    g = ctx.gens()
    one = ctx.constant(1)

    def up(p: Any) -> Any:  # a polynomial over y into the z context
        return p.compose(*g[:n], ctx=ctx) if n else ctx.constant(p)

    full: list[Pair] = list(f)
    eqs, ineqs, deltas = [], [], []
    for k, delta in enumerate(w.trig):
        s, c = g[n + 2 * k], g[n + 2 * k + 1]
        dz = up(delta)
        da = sum((up(delta.derivative(i)) * f[i][0] for i in range(n)), ctx.constant(0))
        db = sum((up(delta.derivative(i)) * f[i][1] for i in range(n)), ctx.constant(0))
        full += [((c + one) * da, (c + one) * db), (-s * da, -s * db)]
        eqs.append((f"circle {k + 1}", s * s + c * c + 2 * c))
        bounds = _taylor("trig", dz, s, c + one, order, one)
        ineqs += [(f"taylor {k + 1}.{i + 1}", b) for i, b in enumerate(bounds)]
        deltas.append(("trig", dz))
    for k, delta in enumerate(w.exps):
        e = g[n + 2 * len(w.trig) + k]
        dz = up(delta)
        da = sum((up(delta.derivative(i)) * f[i][0] for i in range(n)), ctx.constant(0))
        db = sum((up(delta.derivative(i)) * f[i][1] for i in range(n)), ctx.constant(0))
        full.append(((e + one) * da, (e + one) * db))
        bounds = _taylor("exp", dz, e, e + one, order, one)
        ineqs += [(f"exp {k + 1}.{i + 1}", b) for i, b in enumerate(bounds)]
        deltas.append(("exp", dz))
    base = n + 2 * len(w.trig) + len(w.exps)
    for k, delta in enumerate(w.tanhs):  # T = tanh(delta): dT/dt = (1 - T^2) D
        t = g[base + k]
        dz = up(delta)
        da = sum((up(delta.derivative(i)) * f[i][0] for i in range(n)), ctx.constant(0))
        db = sum((up(delta.derivative(i)) * f[i][1] for i in range(n)), ctx.constant(0))
        full.append(((one - t * t) * da, (one - t * t) * db))
        bounds = [dz * t - t * t, *_taylor("tanh", dz, t, t, min(order, 1), one)]
        ineqs += [(f"tanh {k + 1}.{i + 1}", b) for i, b in enumerate(bounds)]
        deltas.append(("tanh", dz))
    recips, poles = _reciprocals(w, f, full, deltas, up)
    for a, b in f:
        if any(sum(e) == 0 for e in a.monoms()) or any(sum(e) == 0 for e in b.monoms()):
            raise Unsupported("the recast field is not zero at the equilibrium")
    return RecastSystem(
        n, nz, tuple(names), ctx, tuple(full), w.d, tuple(eqs), tuple(ineqs), tuple(deltas),
        tuple(point), recips, poles,
    )  # fmt: skip


def _reciprocals(w: _Walker, f: list[Pair], full: list[Pair], deltas: list, up: Any) -> tuple:
    """R = 1/q - r0 per reciprocal atom: field rows, equalities and poles (audit's order)."""
    n, ctx = w.n, w.ctx
    base = n + 2 * len(w.trig) + len(w.exps) + len(w.tanhs)
    recips, poles = [], []
    for k, q in enumerate(w.recips):
        terms = dict(zip(map(tuple, q.monoms()), q.coeffs(), strict=True))
        q0 = terms[tuple([0] * n)]
        rr = ctx.gens()[base + k] + ctx.constant(1 / q0)
        qz = up(q)
        da = sum((up(q.derivative(i)) * f[i][0] for i in range(n)), ctx.constant(0))
        db = sum((up(q.derivative(i)) * f[i][1] for i in range(n)), ctx.constant(0))
        full.append((-(rr * rr) * da, -(rr * rr) * db))
        recips.append((f"reciprocal {k + 1}", rr * qz - ctx.constant(1)))
        poles.append((f"denominator {k + 1}", qz if q0 > 0 else -qz))
        deltas.append(("reciprocal", qz))
    return tuple(recips), tuple(poles)


def field_inputs(
    model: Any, claim: Any, method: str
) -> tuple[list, list[Fraction], list[Fraction]] | str:
    """The field's expression trees, the claim's rational point and the nominal values of
    the uncertain parameters (as the certificate states them), or why ``method`` cannot
    start: the inputs of every recast-family prover."""
    from proofkit.certificate import claim_structure, model_section

    trees = (model_section(model).get("expressions") or {}).get("components")
    if not trees:
        return "the field is polynomial or rational, or has no expression trees"
    eq = claim_structure(model, claim).get("equilibrium") or {}
    pt = eq.get("point")
    if pt is None or not all(isinstance(x, str) for x in pt):
        return f"{method} needs a rational equilibrium point"
    nominal = []
    for p in model.params:
        if p.is_uncertain:
            if not p.nominal.is_Rational:
                return f"the nominal value of {p.name} is not rational"
            nominal.append(Fraction(int(p.nominal.p), int(p.nominal.q)))
    return trees, [Fraction(x) for x in pt], nominal
