"""Every equilibrium of a polynomial vector field, exactly, with a completeness statement.

Method (all exact, over Q):

1. split: each f_i is factored over Q and the system is split into the
   systems "one irreducible factor of each f_i vanishes" (their varieties
   cover V(f));
2. each split system gets a grevlex Groebner basis (sympy); a
   positive-dimensional one is a curve/surface of equilibria (reported, the
   list is then incomplete); a zero-dimensional one is solved in its
   quotient algebra: multiplication matrices (python-flint ``fmpq_mat``), the
   radical by Seidenberg's lemma (add the squarefree part of each
   coordinate's minimal polynomial), a separating linear form t whose
   characteristic polynomial is squarefree, and every coordinate written as
   a polynomial in t (the shape of the radical ideal);
3. each irreducible factor of t's characteristic polynomial gives its real
   roots by exact isolation; every equilibrium is a point with coordinates
   in Q(alpha) for one real algebraic alpha;
4. a point of a zero-dimensional piece that lies on a positive-dimensional
   piece is not isolated and is left out (said in the reason).

Limits (Bezout bound, size of the quotient algebra, Groebner time) are
guarded; hitting one is reported, never silently ignored.

May import: python-flint, sympy, ``analysis.algebraic``.
This module must never accept a floating-point root as an equilibrium.
"""

from __future__ import annotations

import itertools
import signal
import threading
from collections.abc import Iterator, Sequence
from contextlib import contextmanager
from dataclasses import dataclass, field
from typing import Any

import flint
import sympy as sp

from proofkit.analysis.algebraic import AlgNum, RealAlgebraicField

__all__ = ["FoundPoint", "Limits", "PolynomialSolution", "solve_polynomial_system"]


@dataclass(frozen=True)
class Limits:
    """Guards on the symbolic work."""

    max_bezout: int = 4096
    max_quotient_dim: int = 400
    max_splits: int = 64
    groebner_seconds: float = 60.0


@dataclass(frozen=True, eq=False)
class FoundPoint:
    """One equilibrium: exact coordinates in a real field, or a certified box."""

    point: dict[str, sp.Expr]
    numeric: dict[str, float]
    field: RealAlgebraicField | None = None
    coords: tuple[AlgNum, ...] | None = None
    enclosure: tuple[tuple[sp.Rational, sp.Rational], ...] | None = None
    exact: bool = True


@dataclass(frozen=True)
class PolynomialSolution:
    points: tuple[FoundPoint, ...]
    complete: bool
    reason: str
    components: tuple[str, ...] = field(default=())
    timings: dict[str, float] = field(default_factory=dict, compare=False)


class _Timeout(Exception):
    pass


@contextmanager
def _deadline(seconds: float) -> Iterator[None]:
    """Raise _Timeout after ``seconds`` (only in the main thread; elsewhere no time guard)."""
    if threading.current_thread() is not threading.main_thread() or seconds <= 0:
        yield
        return

    def handler(signum: int, frame: object) -> None:
        raise _Timeout

    import time

    old = signal.signal(signal.SIGALRM, handler)
    outer_delay, outer_interval = signal.setitimer(signal.ITIMER_REAL, seconds)
    t0 = time.monotonic()
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, old)
        if outer_delay > 0:  # give back a timer the caller had armed
            left = max(outer_delay - (time.monotonic() - t0), 1e-3)
            signal.setitimer(signal.ITIMER_REAL, left, outer_interval)


class LimitHit(Exception):
    """A guard on the symbolic work was reached (message says which)."""


def _dimension(lms: Sequence[tuple[int, ...]], n: int) -> int:
    """Krull dimension from the leading monomials: the largest independent set of variables."""
    for size in range(n, -1, -1):
        for subset in itertools.combinations(range(n), size):
            s = set(subset)
            if not any(all(i in s for i, e in enumerate(m) if e) for m in lms):
                return size
    return 0  # pragma: no cover


def _fq(c: object) -> flint.fmpq:
    r = sp.Rational(c)
    return flint.fmpq(int(r.p), int(r.q))


class _Quotient:
    """The quotient algebra Q[x]/I of a zero-dimensional ideal given by a grevlex basis."""

    def __init__(self, basis: list, ring: sp.polys.rings.PolyRing, n: int, limits: Limits):
        self.ring, self.n, self.basis = ring, n, basis
        lms = [g.LM for g in basis]
        bounds = []
        for i in range(n):
            pure = [m[i] for m in lms if m[i] > 0 and sum(m) == m[i]]
            bounds.append(min(pure))
        monos = [
            m
            for m in itertools.product(*[range(b) for b in bounds])
            if not any(all(m[k] >= lm[k] for k in range(n)) for lm in lms)
        ]
        if len(monos) > limits.max_quotient_dim:
            raise LimitHit(
                f"quotient algebra of dimension {len(monos)} exceeds the limit "
                f"{limits.max_quotient_dim}"
            )
        self.monos = monos
        self.pos = {m: k for k, m in enumerate(monos)}
        self.D = len(monos)
        self.mats = [self._mult_matrix(i) for i in range(n)]

    def vector(self, f: sp.polys.rings.PolyElement) -> list[flint.fmpq]:
        r = f.rem(self.basis)
        v = [flint.fmpq(0)] * self.D
        for m, c in r.terms():
            v[self.pos[m]] = _fq(c)
        return v

    def _mult_matrix(self, i: int) -> flint.fmpq_mat:
        D = self.D
        cols = []
        for m in self.monos:
            mm = list(m)
            mm[i] += 1
            cols.append(self.vector(self.ring({tuple(mm): 1})))
        return flint.fmpq_mat(D, D, [cols[j][r] for r in range(D) for j in range(D)])


def _sqfree(p: flint.fmpq_poly) -> flint.fmpq_poly:
    g = p.gcd(p.derivative())
    return p if g.degree() == 0 else p / g


def _groebner(gens: list[sp.Expr], xs: Sequence[sp.Symbol], limits: Limits) -> sp.GroebnerBasis:
    try:
        with _deadline(limits.groebner_seconds):
            return sp.groebner(gens, *xs, order="grevlex", domain=sp.QQ)
    except _Timeout:
        raise LimitHit(
            f"Groebner basis computation exceeded {limits.groebner_seconds:g} s"
        ) from None


def _solve_zero_dim(
    G: sp.GroebnerBasis, xs: Sequence[sp.Symbol], limits: Limits
) -> list[tuple[RealAlgebraicField, tuple[AlgNum, ...]]]:
    n = len(xs)
    R = sp.ring(list(xs), sp.QQ, order="grevlex")[0]

    def to_ring(polys: Sequence[sp.Poly]) -> list:
        return [R.from_dict({m: c for m, c in p.as_dict().items()}) for p in polys]

    Qa = _Quotient(to_ring(G.polys), R, n, limits)
    minpolys = [M.minpoly() for M in Qa.mats]
    if any(_sqfree(m).degree() < m.degree() for m in minpolys):
        extra = []
        for x, m in zip(xs, minpolys, strict=True):
            s = _sqfree(m)
            terms = [sp.Rational(int(c.p), int(c.q)) * x**k for k, c in enumerate(s.coeffs())]
            extra.append(sp.Add(*terms))
        G = _groebner([*G.exprs, *extra], xs, limits)
        Qa = _Quotient(to_ring(G.polys), R, n, limits)
    D = Qa.D
    # a separating linear form: squarefree characteristic polynomial (the ideal is radical)
    Mt = chi = None
    for k in range(1, 60):
        cs = [k**i for i in range(n)]
        Mt = sum((M * c for M, c in zip(Qa.mats[1:], cs[1:], strict=True)), Qa.mats[0] * cs[0])
        chi = Mt.charpoly()
        if chi.gcd(chi.derivative()).degree() == 0:
            break
    else:  # pragma: no cover - a separating form among these always exists for small D
        raise LimitHit("no separating linear form found")
    one = Qa.vector(R.one)
    cols = [one]
    v = flint.fmpq_mat(D, 1, one)
    for _ in range(D - 1):
        v = Mt * v
        cols.append([v[i, 0] for i in range(D)])
    V = flint.fmpq_mat(D, D, [cols[j][r] for r in range(D) for j in range(D)])
    shapes = []
    for i in range(n):
        b = flint.fmpq_mat(D, 1, Qa.vector(R.gens[i]))
        sol = V.solve(b)
        shapes.append(flint.fmpq_poly([sol[k, 0] for k in range(D)]))
    out = []
    _c, factors = chi.factor()
    for f_int, _mult in factors:
        f = flint.fmpq_poly(f_int)
        f = f / f.leading_coefficient()
        if f.degree() == 1:
            r = -f.coeffs()[0]
            K = RealAlgebraicField()
            out.append((K, tuple(K(g(r)) for g in shapes)))
            continue
        for K in RealAlgebraicField.real_roots_of(f):
            out.append((K, tuple(AlgNum(K, g % f) for g in shapes)))
    return out


def _eval_poly_at(poly: sp.Poly, coords: Sequence[AlgNum], K: RealAlgebraicField) -> AlgNum:
    total = K.zero
    powers: dict[tuple[int, int], AlgNum] = {}
    for monom, coeff in poly.terms():
        term = K(_fq(coeff))
        for i, e in enumerate(monom):
            if e:
                key = (i, e)
                if key not in powers:
                    powers[key] = coords[i] ** e
                term = term * powers[key]
        total = total + term
    return total


def _point_key(K: RealAlgebraicField, coords: Sequence[AlgNum]) -> tuple:
    return tuple(K.locate(c.p) for c in coords)


def _split_systems(polys: list[sp.Poly], limits: Limits) -> list[list[sp.Expr]]:
    """The systems to solve: one per choice of an irreducible factor of each equation."""
    bezout = 1
    for p in polys:
        if not p.is_zero:
            bezout *= max(p.total_degree(), 1)
    if bezout > limits.max_bezout:
        raise LimitHit(f"Bezout bound {bezout} exceeds the limit {limits.max_bezout}")
    factor_lists = []
    for p in polys:
        if p.is_zero:
            continue
        _c, fl = p.factor_list()
        factor_lists.append([f.as_expr() for f, _m in fl] or [sp.Integer(1)])
    n_splits = 1
    for fl in factor_lists:
        n_splits *= len(fl)
    if n_splits > limits.max_splits:
        return [[p.as_expr() for p in polys if not p.is_zero]]
    return list({frozenset(c): list(c) for c in itertools.product(*factor_lists)}.values())


_ZeroDim = list[tuple[RealAlgebraicField, tuple[AlgNum, ...]]]
_Positive = list[tuple[Any, int]]


def _solve_pieces(
    systems: list[list[sp.Expr]], xs: Sequence[sp.Symbol], limits: Limits, timings: dict
) -> tuple[_ZeroDim, _Positive]:
    """Points of the finite pieces, and (basis, dimension) of the positive-dimensional ones."""
    import time

    zero_dim: _ZeroDim = []
    positive: _Positive = []
    for gens in systems:
        t0 = time.perf_counter()
        G = _groebner(gens or [sp.Integer(0)], xs, limits)
        timings["groebner"] += time.perf_counter() - t0
        if G.exprs == [1]:
            continue
        if G.exprs == [] or G.exprs == [0]:
            positive.append((G, len(xs)))
        elif G.is_zero_dimensional:
            t0 = time.perf_counter()
            zero_dim.extend(_solve_zero_dim(G, xs, limits))
            timings["solve"] += time.perf_counter() - t0
        else:
            lms = [sp.Poly(g, *xs).monoms(order="grevlex")[0] for g in G.exprs]
            positive.append((G, _dimension(lms, len(xs))))
    return zero_dim, positive


def _isolated_points(
    zero_dim: _ZeroDim, positive: _Positive, names: Sequence[str], dedupe: bool
) -> tuple[list[FoundPoint], int]:
    """Distinct points not lying on a positive-dimensional piece, and how many were dropped."""
    seen: set[tuple] = set()
    points: list[FoundPoint] = []
    dropped = 0
    for K, coords in zero_dim:
        if dedupe:  # the points of one zero-dimensional system are distinct
            key = _point_key(K, coords)
            if key in seen:
                continue
            seen.add(key)
        if any(all(_eval_poly_at(p, coords, K).is_zero() for p in G.polys) for G, _d in positive):
            dropped += 1
            continue
        points.append(
            FoundPoint(
                point={nm: c.to_sympy() for nm, c in zip(names, coords, strict=True)},
                numeric={nm: float(c) for nm, c in zip(names, coords, strict=True)},
                field=K,
                coords=tuple(coords),
            )
        )
    points.sort(key=lambda fp: tuple(fp.numeric[nm] for nm in names))
    return points, dropped


def _finite_reason(count: int) -> str:
    if count == 0:
        what = "no real equilibria"
    elif count == 1:
        what = "the only real equilibrium found exactly"
    else:
        what = f"all {count} real equilibria found exactly"
    return f"zero-dimensional system: {what} (Groebner basis, real root isolation)"


def solve_polynomial_system(
    fs: Sequence[sp.Expr], xs: Sequence[sp.Symbol], names: Sequence[str], limits: Limits
) -> PolynomialSolution:
    """All real solutions of fs = 0 (rational polynomial coefficients), exactly."""
    import time

    timings = {"groebner": 0.0, "solve": 0.0}
    systems = _split_systems([sp.Poly(f, *xs, domain=sp.QQ) for f in fs], limits)
    zero_dim, positive = _solve_pieces(systems, xs, limits, timings)
    t0 = time.perf_counter()
    points, dropped = _isolated_points(zero_dim, positive, names, dedupe=len(systems) > 1)
    timings["points"] = time.perf_counter() - t0
    components = []
    for G, d in positive:
        what = {1: "a curve", 2: "a surface"}.get(d, f"a {d}-dimensional set")
        eqs = ", ".join(f"{sp.sstr(g)} = 0" for g in G.exprs) if G.exprs else "the whole space"
        components.append(f"{what} of equilibria (complex dimension {d}): {eqs}")
    if not components:
        return PolynomialSolution(tuple(points), True, _finite_reason(len(points)), (), timings)
    reason = "not a finite set: " + "; ".join(components)
    reason += f"; {len(points)} isolated equilibria listed"
    if dropped:
        reason += f"; {dropped} point(s) of finite pieces lie on these sets and are not listed"
    return PolynomialSolution(tuple(points), False, reason, tuple(components), timings)
