"""Exact real algebraic numbers: the field Q, or Q(alpha) for one real root alpha.

An element of Q(alpha) is a rational polynomial in alpha reduced modulo the
(monic, irreducible) minimal polynomial q of alpha; alpha itself is pinned
down by a rational isolating interval [lo, hi] containing exactly one root of
q. Equality is exact (polynomial identity modulo q); the sign of an element
g(alpha) is decided exactly: an exact rational interval enclosure of g over
[lo, hi] is computed (Horner in interval arithmetic with rational endpoints)
and the interval is bisected, with exact sign tests of q, until the enclosure
excludes 0. Since g(alpha) != 0 and the enclosure shrinks to g(alpha), this
terminates. No floating-point number is ever used to decide anything here.

May import: python-flint, sympy (conversion only).
This module must never decide a sign or an equality from floating point.
"""

from __future__ import annotations

from collections.abc import Iterable, Sequence
from fractions import Fraction

import flint
import sympy as sp

__all__ = ["AlgNum", "RealAlgebraicField", "field_of_exprs", "monic_fmpq_poly"]

_X = sp.Symbol("x")
_ROOTS_CACHE: dict[tuple[str, ...], list[RealAlgebraicField]] = {}


def _fq(value: object) -> flint.fmpq:
    """An exact flint rational from an int, Fraction, fmpq or sympy Rational."""
    if isinstance(value, flint.fmpq):
        return value
    if isinstance(value, int):
        return flint.fmpq(value)
    if isinstance(value, Fraction):
        return flint.fmpq(value.numerator, value.denominator)
    if isinstance(value, sp.Rational):
        return flint.fmpq(int(value.p), int(value.q))
    raise TypeError(f"not an exact rational: {value!r}")


def monic_fmpq_poly(coeffs_low_first: Sequence[object]) -> flint.fmpq_poly:
    """A monic flint polynomial from exact coefficients (lowest degree first)."""
    p = flint.fmpq_poly([_fq(c) for c in coeffs_low_first])
    if p.is_zero():
        raise ValueError("zero polynomial")
    return p / p.leading_coefficient()


def _interval_range(p: flint.fmpq_poly, lo: flint.fmpq, hi: flint.fmpq) -> tuple:
    """An exact rational enclosure of p over [lo, hi] (interval Horner)."""
    coeffs = p.coeffs()
    a = b = coeffs[-1]
    for c in reversed(coeffs[:-1]):
        prods = (a * lo, a * hi, b * lo, b * hi)
        a, b = min(prods) + c, max(prods) + c
    return a, b


def _sgn(v: flint.fmpq) -> int:
    return (v > 0) - (v < 0)


class RealAlgebraicField:
    """Q (``q is None``) or Q(alpha), alpha the ``index``-th real root of q (ascending)."""

    def __init__(
        self,
        q: flint.fmpq_poly | None = None,
        lo: object = 0,
        hi: object = 0,
        index: int = 0,
    ) -> None:
        if q is not None and q.degree() < 2:
            raise ValueError("use q=None for the rational field")
        self.q = q
        self.lo, self.hi = _fq(lo), _fq(hi)
        self.index = index
        self._sign_lo = _sgn(q(self.lo)) if q is not None else 0
        self._sympy_gen: sp.Expr | None = None
        self._sympy_cache: dict[str, sp.Expr] = {}

    # --- construction --------------------------------------------------------
    @property
    def degree(self) -> int:
        return 1 if self.q is None else self.q.degree()

    @property
    def is_rational(self) -> bool:
        return self.q is None

    def __repr__(self) -> str:
        if self.q is None:
            return "QQ"
        return f"QQ(root {self.index} of {self.q} in [{self.lo}, {self.hi}])"

    def __call__(self, value: object) -> AlgNum:
        if isinstance(value, AlgNum):
            if value.K is not self:
                raise ValueError("element of another field")
            return value
        if isinstance(value, flint.fmpq_poly):
            return AlgNum(self, value)
        return AlgNum(self, flint.fmpq_poly([_fq(value)]))

    @property
    def zero(self) -> AlgNum:
        return self(0)

    @property
    def one(self) -> AlgNum:
        return self(1)

    @property
    def gen(self) -> AlgNum:
        if self.q is None:
            raise ValueError("Q has no generator")
        return AlgNum(self, flint.fmpq_poly([0, 1]))

    @classmethod
    def real_roots_of(cls, q: flint.fmpq_poly) -> list[RealAlgebraicField]:
        """One field per real root of the irreducible q (degree >= 2), in ascending order.

        Cached per polynomial: the same root is always the same field object.
        """
        qm = q / q.leading_coefficient()
        key = tuple(str(c) for c in qm.coeffs())
        hit = _ROOTS_CACHE.get(key)
        if hit is None:
            coeffs = [sp.Rational(int(c.p), int(c.q)) for c in qm.coeffs()]
            poly = sp.Poly(list(reversed(coeffs)), _X, domain=sp.QQ)
            ivs = sorted(poly.intervals(), key=lambda t: t[0][0])
            hit = [cls(qm, a, b, k) for k, ((a, b), _m) in enumerate(ivs)]
            if len(_ROOTS_CACHE) > 4096:
                _ROOTS_CACHE.clear()
            _ROOTS_CACHE[key] = hit
        return list(hit)

    # --- exact decisions ---------------------------------------------------
    def reduce(self, p: flint.fmpq_poly) -> flint.fmpq_poly:
        if self.q is None:
            return p
        return p % self.q if p.degree() >= self.q.degree() else p

    def _bisect(self) -> None:
        assert self.q is not None
        m = (self.lo + self.hi) / 2
        s = _sgn(self.q(m))
        if s == 0:  # impossible for an irreducible q of degree >= 2
            raise ArithmeticError("isolating interval hit a rational root")
        if s == self._sign_lo:
            self.lo = m
        else:
            self.hi = m

    def sign(self, p: flint.fmpq_poly) -> int:
        """The exact sign of p(alpha) (p already reduced)."""
        if p.degree() <= 0:
            return _sgn(p.coeffs()[0]) if p.degree() == 0 else 0
        assert self.q is not None
        for _ in range(100_000):
            a, b = _interval_range(p, self.lo, self.hi)
            if a > 0:
                return 1
            if b < 0:
                return -1
            self._bisect()
        raise ArithmeticError("sign refinement did not terminate")  # pragma: no cover

    def enclosure(self, p: flint.fmpq_poly, width: object = Fraction(1, 2**60)) -> tuple:
        """Rational bounds (lo, hi) with lo <= p(alpha) <= hi and hi - lo <= width."""
        w = _fq(width)
        if p.degree() <= 0 or self.q is None:
            v = p.coeffs()[0] if p.degree() == 0 else flint.fmpq(0)
            return v, v
        for _ in range(100_000):
            a, b = _interval_range(p, self.lo, self.hi)
            if b - a <= w:
                return a, b
            self._bisect()
        raise ArithmeticError("enclosure refinement did not terminate")  # pragma: no cover

    # --- output --------------------------------------------------------------
    def sympy_generator(self) -> sp.Expr:
        """alpha as an exact sympy number (radical for degree 2, else CRootOf)."""
        if self._sympy_gen is None:
            assert self.q is not None
            c = [sp.Rational(int(v.p), int(v.q)) for v in self.q.coeffs()]
            if self.q.degree() == 2:
                b, cc = c[1], c[0]
                disc = b * b - 4 * cc
                # alpha > -b/2 exactly when it is the larger root
                s = self.sign(flint.fmpq_poly([_fq(b / 2), 1]))
                self._sympy_gen = -b / 2 + s * sp.sqrt(disc) / 2
            else:
                poly = sp.Poly(list(reversed(c)), _X, domain=sp.QQ).as_expr()
                self._sympy_gen = sp.CRootOf(poly, self.index)
        return self._sympy_gen

    def locate(self, p: flint.fmpq_poly) -> tuple[tuple[str, ...], int]:
        """A canonical key of p(alpha): (its minimal polynomial's coefficients, root index).

        Two elements of any two fields are equal exactly when their keys agree.
        """
        m = self.minimal_polynomial(p)
        key = tuple(str(c) for c in m.coeffs())
        if m.degree() == 1:
            return key, 0
        for sub in RealAlgebraicField.real_roots_of(m):
            below = self.sign(self.reduce(p - flint.fmpq_poly([sub.lo])))
            above = self.sign(self.reduce(flint.fmpq_poly([sub.hi]) - p))
            if below > 0 and above > 0:
                return key, sub.index
        raise ArithmeticError("value not located among the roots of its minimal polynomial")

    def to_sympy(self, p: flint.fmpq_poly) -> sp.Expr:
        """An exact sympy expression for p(alpha): rational, a + b*sqrt(d), or via CRootOf."""
        key = str(p)
        hit = self._sympy_cache.get(key)
        if hit is None:
            hit = self._to_sympy(p)
            self._sympy_cache[key] = hit
        return hit

    def _to_sympy(self, p: flint.fmpq_poly) -> sp.Expr:
        if p.degree() <= 0:
            v = p.coeffs()[0] if p.degree() == 0 else flint.fmpq(0)
            return sp.Rational(int(v.p), int(v.q))
        if self.q is not None and self.q.degree() == 2:  # a + b*alpha with alpha a radical
            c0, c1 = (sp.Rational(int(v.p), int(v.q)) for v in p.coeffs())
            return sp.expand(c0 + c1 * self.sympy_generator())
        if self.q is not None and sp.isprime(self.q.degree()):
            # a field of prime degree has no subfield but Q: p(alpha) has full degree
            r = self.sympy_generator()
            return sp.Add(
                *[sp.Rational(int(v.p), int(v.q)) * r**k for k, v in enumerate(p.coeffs())]
            )
        m = self.minimal_polynomial(p)
        if m.degree() == 1:
            v = -m.coeffs()[0]
            return sp.Rational(int(v.p), int(v.q))
        if self.q is not None and m.degree() == self.q.degree() and m.degree() > 2:
            r = self.sympy_generator()
            cs = p.coeffs()
            return sp.Add(*[sp.Rational(int(v.p), int(v.q)) * r**k for k, v in enumerate(cs)])
        # a quadratic or smaller subfield: the value is a root of its own minimal polynomial
        _key, index = self.locate(p)
        return RealAlgebraicField.real_roots_of(m)[index].sympy_generator()

    def minimal_polynomial(self, p: flint.fmpq_poly) -> flint.fmpq_poly:
        """The monic minimal polynomial over Q of p(alpha)."""
        if self.q is None or p.degree() <= 0:
            v = p.coeffs()[0] if p.degree() == 0 else flint.fmpq(0)
            return flint.fmpq_poly([-v, 1])
        d = self.q.degree()
        cols = []
        for j in range(d):
            r = (p * flint.fmpq_poly([0] * j + [1])) % self.q
            cs = r.coeffs() + [flint.fmpq(0)] * (d - len(r.coeffs()))
            cols.append(cs)
        mat = flint.fmpq_mat(d, d, [cols[j][i] for i in range(d) for j in range(d)])
        chi = mat.charpoly()
        _c, factors = chi.factor()
        assert len(factors) == 1, "charpoly of a field element is a power of one irreducible"
        f = flint.fmpq_poly(factors[0][0])
        return f / f.leading_coefficient()


class AlgNum:
    """An element of a :class:`RealAlgebraicField` (immutable)."""

    __slots__ = ("K", "p")

    def __init__(self, K: RealAlgebraicField, p: flint.fmpq_poly) -> None:
        self.K = K
        self.p = K.reduce(p)

    def _co(self, other: object) -> flint.fmpq_poly:
        if isinstance(other, AlgNum):
            if other.K is not self.K:
                raise ValueError("elements of different fields")
            return other.p
        return flint.fmpq_poly([_fq(other)])

    def __add__(self, o: object) -> AlgNum:
        return AlgNum(self.K, self.p + self._co(o))

    __radd__ = __add__

    def __sub__(self, o: object) -> AlgNum:
        return AlgNum(self.K, self.p - self._co(o))

    def __rsub__(self, o: object) -> AlgNum:
        return AlgNum(self.K, self._co(o) - self.p)

    def __neg__(self) -> AlgNum:
        return AlgNum(self.K, -self.p)

    def __mul__(self, o: object) -> AlgNum:
        return AlgNum(self.K, self.p * self._co(o))

    __rmul__ = __mul__

    def inverse(self) -> AlgNum:
        if self.p.is_zero():
            raise ZeroDivisionError("division by an exact zero")
        if self.p.degree() == 0:
            return AlgNum(self.K, flint.fmpq_poly([1 / self.p.coeffs()[0]]))
        assert self.K.q is not None
        g, s, _t = self.p.xgcd(self.K.q)
        return AlgNum(self.K, s / g)

    def __truediv__(self, o: object) -> AlgNum:
        other = o if isinstance(o, AlgNum) else self.K(o)
        return self * other.inverse()

    def __rtruediv__(self, o: object) -> AlgNum:
        return self.K(o) * self.inverse()

    def __pow__(self, k: int) -> AlgNum:
        if k < 0:
            return self.inverse() ** (-k)
        out, base = self.K.one, self
        while k:
            if k & 1:
                out = out * base
            base = base * base
            k >>= 1
        return out

    def is_zero(self) -> bool:
        return self.p.is_zero()

    def sign(self) -> int:
        return self.K.sign(self.p)

    def __eq__(self, o: object) -> bool:
        if isinstance(o, AlgNum):
            return o.K is self.K and self.p == o.p
        try:
            return self.p == self._co(o)
        except TypeError:
            return NotImplemented

    def __hash__(self) -> int:
        return hash(str(self.p))

    def is_rational(self) -> bool:
        return self.p.degree() <= 0

    def rational(self) -> flint.fmpq:
        if not self.is_rational():
            raise ValueError("irrational element")
        return self.p.coeffs()[0] if self.p.degree() == 0 else flint.fmpq(0)

    def to_sympy(self) -> sp.Expr:
        return self.K.to_sympy(self.p)

    def __float__(self) -> float:
        a, b = self.K.enclosure(self.p)
        return float(Fraction(int(a.p), int(a.q)) / 2 + Fraction(int(b.p), int(b.q)) / 2)

    def __repr__(self) -> str:
        return f"AlgNum({self.p} in {self.K!r})"


def _is_rational_expr(e: sp.Expr) -> bool:
    return isinstance(e, sp.Rational)


def field_of_exprs(exprs: Iterable[sp.Expr]) -> tuple[RealAlgebraicField, list[AlgNum]]:
    """One real field containing every given real algebraic sympy number, and the numbers in it.

    Raises ValueError for a number that is not real algebraic (e.g. pi, or a
    non-real number) or a symbol.
    """
    from proofkit.analysis.intervals import arb_value

    values = [
        sp.Rational(e.numerator, e.denominator) if isinstance(e, int | Fraction) else e
        for e in exprs
    ]
    for v in values:
        if v.free_symbols:
            raise ValueError(f"not a number: {v}")
    irr = [v for v in values if not _is_rational_expr(v)]
    if not irr:
        K = RealAlgebraicField()
        return K, [K(v) for v in values]
    for v in irr:
        if v.is_algebraic is False:
            raise ValueError(f"not an algebraic number: {v}")
        if v.is_real is False:
            raise ValueError(f"not a real number: {v}")
    from sympy.polys.numberfields.subfield import primitive_element

    uniq = list(dict.fromkeys(irr))
    try:
        g, coeffs, reps = primitive_element(uniq, _X, ex=True)
    except (sp.polys.polyerrors.NotAlgebraic, NotImplementedError) as err:
        raise ValueError(f"not real algebraic numbers: {uniq}") from err
    gpoly = sp.Poly(g, _X, domain=sp.QQ)
    if gpoly.degree() == 1:
        raise ValueError("internal: irrational numbers with a rational primitive element")
    theta = sp.Add(*[c * u for c, u in zip(coeffs, uniq, strict=True)])
    q = monic_fmpq_poly(list(reversed(gpoly.all_coeffs())))
    candidates = RealAlgebraicField.real_roots_of(q)
    if not candidates:
        raise ValueError("the numbers are not all real")
    prec = 64
    while True:
        ball = arb_value(theta, prec)
        hits = [K for K in candidates if ball.overlaps(flint.arb(K.lo).union(flint.arb(K.hi)))]
        if len(hits) == 1:
            K = hits[0]
            break
        if not hits or prec > 20000:
            raise ValueError("could not locate a primitive element among real roots")
        prec *= 2
        for K in candidates:
            for _ in range(8):
                K._bisect()
    table = {}
    for u, rep in zip(uniq, reps, strict=True):
        table[u] = AlgNum(K, flint.fmpq_poly([_fq(sp.Rational(c)) for c in reversed(rep)]))
    return K, [K(v) if _is_rational_expr(v) else table[v] for v in values]
