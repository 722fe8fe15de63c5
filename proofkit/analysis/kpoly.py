"""Dense univariate polynomials over an exact real field (lists of AlgNum, lowest degree first).

Used for the exact root counts behind the Routh–Hurwitz verdicts: gcd of
p(s) and p(-s), the Cauchy index by Sturm sequences, counts of negative
real roots with multiplicity. Every comparison is an exact sign.

May import: ``analysis.algebraic`` only.
This module must never use floating point.
"""

from __future__ import annotations

import itertools
from collections.abc import Sequence

from proofkit.analysis.algebraic import AlgNum, RealAlgebraicField

__all__ = [
    "KPoly",
    "cauchy_index",
    "count_negative_roots",
    "rhp_imag_counts",
]

KPoly = list[AlgNum]


def trim(p: Sequence[AlgNum]) -> KPoly:
    out = list(p)
    while out and out[-1].is_zero():
        out.pop()
    return out


def deg(p: KPoly) -> int:
    return len(p) - 1


def sub(p: KPoly, q: KPoly, K: RealAlgebraicField) -> KPoly:
    n = max(len(p), len(q))
    z = K.zero
    return trim([(p[i] if i < len(p) else z) - (q[i] if i < len(q) else z) for i in range(n)])


def mul(p: KPoly, q: KPoly, K: RealAlgebraicField) -> KPoly:
    if not p or not q:
        return []
    out = [K.zero] * (len(p) + len(q) - 1)
    for i, a in enumerate(p):
        if a.is_zero():
            continue
        for j, b in enumerate(q):
            out[i + j] = out[i + j] + a * b
    return trim(out)


def divmod_(p: KPoly, q: KPoly, K: RealAlgebraicField) -> tuple[KPoly, KPoly]:
    q = trim(q)
    if not q:
        raise ZeroDivisionError("polynomial division by zero")
    r = trim(p)
    if len(r) < len(q):
        return [], r
    quo = [K.zero] * (len(r) - len(q) + 1)
    inv_lc = q[-1].inverse()
    while len(r) >= len(q) and r:
        c = r[-1] * inv_lc
        k = len(r) - len(q)
        quo[k] = c
        for i, b in enumerate(q):
            r[i + k] = r[i + k] - c * b
        r = trim(r[:-1]) if r[-1].is_zero() else trim(r)
    return trim(quo), r


def monic(p: KPoly) -> KPoly:
    inv = p[-1].inverse()
    return [c * inv for c in p]


def gcd(p: KPoly, q: KPoly, K: RealAlgebraicField) -> KPoly:
    a, b = trim(p), trim(q)
    while b:
        a, b = b, divmod_(a, b, K)[1]
    return monic(a) if a else []


def derivative(p: KPoly) -> KPoly:
    return trim([c * k for k, c in enumerate(p)][1:])


def _sign_at(p: KPoly, where: str) -> int:
    """Sign of p at -inf, +inf or 0."""
    if not p:
        return 0
    if where == "0":
        return p[0].sign()
    s = p[-1].sign()
    return s if where == "+inf" or deg(p) % 2 == 0 else -s


def _variations(signs: Sequence[int]) -> int:
    nz = [s for s in signs if s != 0]
    return sum(1 for a, b in itertools.pairwise(nz) if a != b)


def sturm_sequence(f0: KPoly, f1: KPoly, K: RealAlgebraicField) -> list[KPoly]:
    seq = [trim(f0), trim(f1)]
    while seq[-1]:
        r = divmod_(seq[-2], seq[-1], K)[1]
        seq.append([-c for c in r])
    return seq[:-1]


def cauchy_index(num: KPoly, den: KPoly, K: RealAlgebraicField) -> int:
    """The Cauchy index of num/den over the whole real line (Sturm's theorem)."""
    seq = sturm_sequence(den, num, K)
    return _variations([_sign_at(f, "-inf") for f in seq]) - _variations(
        [_sign_at(f, "+inf") for f in seq]
    )


def squarefree_parts(p: KPoly, K: RealAlgebraicField) -> list[tuple[KPoly, int]]:
    """Yun's squarefree decomposition over a field of characteristic 0: [(a_i, i)]."""
    p = monic(trim(p))
    out: list[tuple[KPoly, int]] = []
    if deg(p) < 1:
        return out
    dp = derivative(p)
    a = gcd(p, dp, K)
    b = divmod_(p, a, K)[0]
    c = divmod_(dp, a, K)[0]
    d = sub(c, derivative(b), K)
    i = 1
    while deg(b) >= 1:
        a_i = gcd(b, d, K)
        if deg(a_i) >= 1:
            out.append((a_i, i))
        b = divmod_(b, a_i, K)[0]
        c = divmod_(d, a_i, K)[0]
        d = sub(c, derivative(b), K)
        i += 1
    return out


def count_negative_roots(p: KPoly, K: RealAlgebraicField) -> int:
    """Real roots of p in (-inf, 0), with multiplicity; requires p(0) != 0."""
    total = 0
    for a, mult in squarefree_parts(p, K):
        seq = sturm_sequence(a, derivative(a), K)
        n = _variations([_sign_at(f, "-inf") for f in seq]) - _variations(
            [_sign_at(f, "0") for f in seq]
        )
        total += n * mult
    return total


def _reflect(p: KPoly) -> KPoly:
    """p(-s)."""
    return [c if k % 2 == 0 else -c for k, c in enumerate(p)]


def _rhp_no_symmetric_roots(p: KPoly, K: RealAlgebraicField) -> int:
    """Open right-half-plane roots of a monic p with no roots r, -r both (none on the axis).

    With p(i w) = U(w) + i V(w), the argument of p(i w) grows by
    pi (n_left - n_right) as w runs over the reals; that growth is
    pi Ind(U/V) when deg V > deg U and -pi Ind(V/U) otherwise.
    """
    m = deg(p)
    if m == 0:
        return 0
    u = [K.zero] * (m + 1)
    v = [K.zero] * (m + 1)
    for j, c in enumerate(p):
        if j % 2 == 0:
            u[j] = c if (j // 2) % 2 == 0 else -c
        else:
            v[j] = c if ((j - 1) // 2) % 2 == 0 else -c
    u, v = trim(u), trim(v)
    winding = cauchy_index(u, v, K) if deg(v) > deg(u) else -cauchy_index(v, u, K)
    n_r2 = m - winding
    assert n_r2 % 2 == 0 and 0 <= n_r2 // 2 <= m, "inconsistent Cauchy index"
    return n_r2 // 2


def rhp_imag_counts(p: KPoly, K: RealAlgebraicField) -> tuple[int, int, KPoly]:
    """(roots in the open right half plane, roots on the imaginary axis, d = gcd(p(s), p(-s))).

    Both counts are with multiplicity. d collects every root whose mirror
    image -r is also a root (so every imaginary-axis root); p/d is counted
    by the Cauchy index, d from its structure d(s) = s^k e(s^2).
    """
    p = monic(trim(p))
    d = gcd(p, _reflect(p), K)
    rest = divmod_(p, d, K)[0]
    n_rest = _rhp_no_symmetric_roots(monic(rest), K)
    k = 0
    while k < len(d) and d[k].is_zero():
        k += 1
    e_coeffs = d[k:]
    # d(s) / s^k is even: e(z) with z = s^2
    e = [e_coeffs[j] for j in range(0, len(e_coeffs), 2)]
    imag = k + 2 * count_negative_roots(e, K) if deg(e) >= 1 else k
    n_d = (deg(d) - imag) // 2
    return n_rest + n_d, imag, d
