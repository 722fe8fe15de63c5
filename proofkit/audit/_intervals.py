"""Rational interval arithmetic for the audit, with elementary functions and their derivatives.

An interval is a pair ``(lo, hi)`` of :class:`fractions.Fraction` with
``lo <= hi``; every operation returns an interval that contains every value
of the exact operation on the arguments (outward rounding to the grid
``2^-bits`` keeps the numbers short). Elementary functions are computed from
their Taylor series with explicit remainder bounds:

- ``exp(y)`` for ``|y| <= 1/2``: ``sum_{k<N} y^k/k!`` plus ``|R| <= 2|y|^N/N!``,
  then squared back (``exp(x) = exp(x/2^s)^(2^s)``);
- ``log(m)`` for ``m`` in ``[1, 2)``: ``2 atanh((m-1)/(m+1))`` with
  ``|R| <= z^(2N+1) / ((2N+1)(1 - z^2))``; ``log 2 = 2 atanh(1/3)``;
- ``pi = 16 atan(1/5) - 4 atan(1/239)`` (Machin), alternating series;
- ``sin``/``cos`` after reduction by ``pi/2``: alternating series with the
  first omitted term as the bound, then widened by the radius of the reduced
  argument (both are 1-Lipschitz); on a wide interval the extrema at
  ``pi/2 + k pi`` are added;
- ``sqrt`` by exact integer square roots; ``tan = sin/cos``;
  ``tanh(x) = 1 - 2/(exp(2x) + 1)`` (increasing).

Forward-mode differentiation (:class:`Dual`) carries an interval value and
interval partial derivatives through the same operations.

This module must never use floating point and imports only the standard
library and :mod:`proofkit.audit`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from fractions import Fraction

from proofkit.audit.algebra import tick

__all__ = ["Dual", "Interval", "Undefined", "iv_add", "iv_div", "iv_mul", "iv_neg", "iv_pow"]

Interval = tuple[Fraction, Fraction]
MAX_MAGNITUDE = Fraction(2**12)  # arguments of exp, sin, cos, tan, tanh beyond this are refused


class Undefined(ArithmeticError):
    """A function was applied where it may be undefined (a pole, log of <= 0, ...)."""


def _down(x: Fraction, bits: int) -> Fraction:
    return Fraction(math.floor(x * 2**bits), 2**bits)


def _up(x: Fraction, bits: int) -> Fraction:
    return Fraction(math.ceil(x * 2**bits), 2**bits)


MAX_VALUE = Fraction(2**4096)  # a larger intermediate value is refused (bounded work)


def rounded(a: Interval, bits: int) -> Interval:
    """``a`` widened outward to the grid ``2^-bits``; refused when beyond ``2^4096``."""
    if max(abs(a[0]), abs(a[1])) > MAX_VALUE:
        raise Undefined("an intermediate value exceeds 2^4096")
    return _down(a[0], bits), _up(a[1], bits)


def point(x: Fraction) -> Interval:
    return x, x


def iv_add(a: Interval, b: Interval) -> Interval:
    return a[0] + b[0], a[1] + b[1]


def iv_neg(a: Interval) -> Interval:
    return -a[1], -a[0]


def iv_mul(a: Interval, b: Interval) -> Interval:
    ps = (a[0] * b[0], a[0] * b[1], a[1] * b[0], a[1] * b[1])
    return min(ps), max(ps)


def iv_div(a: Interval, b: Interval) -> Interval:
    if b[0] <= 0 <= b[1]:
        raise Undefined("division by an interval that contains 0 (a pole may be inside)")
    return iv_mul(a, (1 / b[1], 1 / b[0]))


def iv_pow(a: Interval, k: int) -> Interval:
    if k < 0:
        return iv_div((Fraction(1), Fraction(1)), iv_pow(a, -k))
    if k == 0:
        return Fraction(1), Fraction(1)
    lo, hi = a[0] ** k, a[1] ** k
    if k % 2 == 0:
        if a[0] <= 0 <= a[1]:
            return Fraction(0), max(lo, hi)
        return min(lo, hi), max(lo, hi)
    return lo, hi


def _contains_zero(a: Interval) -> bool:
    return a[0] <= 0 <= a[1]


# --- constants and functions at a rational point ------------------------------------
def _atan_series(z: Fraction, bits: int) -> Interval:
    """atan(z) for 0 < z < 1 by the alternating series (partial sums bracket it)."""
    total, term, k = Fraction(0), z, 0
    eps = Fraction(1, 2**bits)
    while True:
        tick()
        t = term / (2 * k + 1)
        if t < eps:
            return (total - t, total) if k % 2 == 1 else (total, total + t)
        total += t if k % 2 == 0 else -t
        term *= z * z
        k += 1


_PI: dict[int, Interval] = {}


def pi_interval(bits: int) -> Interval:
    """An enclosure of pi of width about 2^-bits (Machin's formula)."""
    if bits not in _PI:
        a = _atan_series(Fraction(1, 5), bits + 8)
        b = _atan_series(Fraction(1, 239), bits + 8)
        _PI[bits] = rounded(
            iv_add(iv_mul(point(Fraction(16)), a), iv_neg(iv_mul(point(4), b))), bits + 4
        )
    return _PI[bits]


def _exp_small(y: Fraction, bits: int) -> Interval:
    """exp(y) for |y| <= 1/2."""
    total, term, k = Fraction(0), Fraction(1), 0
    eps = Fraction(1, 2**bits)
    while abs(term) >= eps:
        tick()
        total += term
        k += 1
        term = term * y / k
    r = 2 * abs(term)  # |R_k| <= 2 |y|^k / k! since exp(|y|) <= 2
    return _down(total - r, bits + 4), _up(total + r, bits + 4)


def exp_point(x: Fraction, bits: int) -> Interval:
    if abs(x) > MAX_MAGNITUDE:
        raise Undefined("exp of an argument beyond 2^12")
    s = 0
    while abs(x) / 2**s > Fraction(1, 2):
        s += 1
    guard = bits + 2 * s + 8 + max(0, math.ceil(abs(x)) * 2)
    lo, hi = _exp_small(x / 2**s, guard)
    for _ in range(s):
        tick()
        lo, hi = _down(lo * lo, guard), _up(hi * hi, guard)
    return lo, hi


def _atanh_series(z: Fraction, bits: int) -> Interval:
    """atanh(z) for 0 <= z <= 1/3: positive series, tail <= next / (1 - z^2)."""
    total, term, k = Fraction(0), z, 0
    eps = Fraction(1, 2**bits)
    while True:
        tick()
        t = term / (2 * k + 1)
        if t < eps:
            return total, total + t / (1 - z * z)
        total += t
        term *= z * z
        k += 1


def log_point(x: Fraction, bits: int) -> Interval:
    if x <= 0:
        raise Undefined("log of a number <= 0")
    e = x.numerator.bit_length() - x.denominator.bit_length()
    m = x / Fraction(2) ** e
    while m >= 2:
        m, e = m / 2, e + 1
    while m < 1:
        m, e = m * 2, e - 1
    guard = bits + 8 + abs(e).bit_length()
    ln2 = iv_mul(point(Fraction(2)), _atanh_series(Fraction(1, 3), guard))
    lm = iv_mul(point(Fraction(2)), _atanh_series((m - 1) / (m + 1), guard))
    return rounded(iv_add(iv_mul(point(Fraction(e)), ln2), lm), bits + 4)


def sqrt_point(x: Fraction, bits: int) -> Interval:
    if x < 0:
        raise Undefined("sqrt of a negative number")
    n, d = x.numerator, x.denominator
    r = math.isqrt(n * d * 4**bits)
    den = d * 2**bits
    return Fraction(r, den), Fraction(r + 1, den)


def _sin_cos_small(y: Fraction, bits: int, cosine: bool) -> Interval:
    """sin(y) or cos(y) for |y| <= 1: alternating series, the next term bounds the rest."""
    term = Fraction(1) if cosine else y
    k = 0 if cosine else 1
    total = Fraction(0)
    eps = Fraction(1, 2**bits)
    while abs(term) >= eps:
        tick()
        total += term
        term = -term * y * y / ((k + 1) * (k + 2))
        k += 2
    r = abs(term)
    return _down(total - r, bits + 4), _up(total + r, bits + 4)


def sin_point(x: Fraction, bits: int, cosine: bool = False) -> Interval:
    """sin(x) (or cos(x)) at a rational x, reduced by a multiple of pi/2."""
    if abs(x) > MAX_MAGNITUDE:
        raise Undefined("sin or cos of an argument beyond 2^12")
    guard = bits + 8 + math.ceil(abs(x)).bit_length()
    plo, phi = pi_interval(guard + 8)
    k = math.floor(x / (plo / 2) + Fraction(1, 2))
    red = iv_add(point(x), iv_neg(iv_mul(point(Fraction(k)), (plo / 2, phi / 2))))
    mid, rad = (red[0] + red[1]) / 2, (red[1] - red[0]) / 2
    quarter = (k + (1 if cosine else 0)) % 4  # cos(x) = sin(x + pi/2)
    base = _sin_cos_small(mid, guard, cosine=quarter % 2 == 1)
    base = (base[0] - rad, base[1] + rad)
    out = base if quarter < 2 else iv_neg(base)
    return max(out[0], Fraction(-1)), min(out[1], Fraction(1))


# --- functions on intervals -----------------------------------------------------
def _monotone(f: object, a: Interval, bits: int) -> Interval:
    lo = f(a[0], bits)  # type: ignore[operator]
    hi = lo if a[0] == a[1] else f(a[1], bits)  # type: ignore[operator]
    return lo[0], hi[1]


def iv_exp(a: Interval, bits: int) -> Interval:
    return _monotone(exp_point, a, bits)


def iv_log(a: Interval, bits: int) -> Interval:
    if a[0] <= 0:
        raise Undefined("log of an interval that reaches 0 or below")
    return _monotone(log_point, a, bits)


def iv_sqrt(a: Interval, bits: int) -> Interval:
    if a[0] < 0:
        raise Undefined("sqrt of an interval that reaches below 0")
    return _monotone(sqrt_point, a, bits)


def iv_tanh(a: Interval, bits: int) -> Interval:
    def at(x: Fraction, b: int) -> Interval:
        e = exp_point(2 * x, b + 8)
        return iv_add(point(Fraction(1)), iv_neg(iv_div(point(Fraction(2)), iv_add(e, point(1)))))

    return _monotone(at, a, bits)


def iv_sin(a: Interval, bits: int, cosine: bool = False) -> Interval:
    """sin (cos) on an interval: endpoints, plus +-1 where an extremum may lie inside."""
    lo_v = sin_point(a[0], bits, cosine)
    hi_v = lo_v if a[0] == a[1] else sin_point(a[1], bits, cosine)
    lo, hi = min(lo_v[0], hi_v[0]), max(lo_v[1], hi_v[1])
    if a[0] == a[1]:
        return lo, hi
    if a[1] - a[0] > 7:
        return Fraction(-1), Fraction(1)
    plo, phi = pi_interval(bits + 8)
    # extrema of sin at pi/2 + j pi (cos: at j pi); j pi/2 .. spans a conservative range
    offset = Fraction(0) if cosine else Fraction(1, 2)
    j0 = math.floor(min(a[0] / plo, a[0] / phi)) - 2
    j1 = math.ceil(max(a[1] / plo, a[1] / phi)) + 2
    for j in range(j0, j1 + 1):
        c = iv_mul(point(j + offset), (plo, phi))
        if c[1] >= a[0] and c[0] <= a[1]:  # the extremum may be inside
            if j % 2 == 0:
                hi = Fraction(1)
            else:
                lo = Fraction(-1)
    return lo, hi


# --- forward-mode derivatives -------------------------------------------------------
@dataclass(frozen=True)
class Dual:
    """An interval value and interval partial derivatives."""

    v: Interval
    d: tuple[Interval, ...]

    def scale(self, k: Interval) -> tuple[Interval, ...]:
        return tuple(iv_mul(k, x) for x in self.d)


def d_add(a: Dual, b: Dual) -> Dual:
    return Dual(iv_add(a.v, b.v), tuple(iv_add(x, y) for x, y in zip(a.d, b.d, strict=True)))


def d_mul(a: Dual, b: Dual) -> Dual:
    d = tuple(iv_add(x, y) for x, y in zip(a.scale(b.v), b.scale(a.v), strict=True))
    return Dual(iv_mul(a.v, b.v), d)


def d_pow(a: Dual, k: int) -> Dual:
    if k == 0:
        return Dual(iv_pow(a.v, 0), tuple((Fraction(0), Fraction(0)) for _ in a.d))
    if k < 0 and _contains_zero(a.v):
        raise Undefined("a negative power of an interval that contains 0 (a pole may be inside)")
    inner = iv_mul(point(Fraction(k)), iv_pow(a.v, k - 1))
    return Dual(iv_pow(a.v, k), a.scale(inner))


def d_apply(name: str, a: Dual, bits: int) -> Dual:
    """An elementary function of ``a`` with the chain rule."""
    if name == "sin":
        return Dual(iv_sin(a.v, bits), a.scale(iv_sin(a.v, bits, cosine=True)))
    if name == "cos":
        return Dual(iv_sin(a.v, bits, cosine=True), a.scale(iv_neg(iv_sin(a.v, bits))))
    if name == "exp":
        e = iv_exp(a.v, bits)
        return Dual(e, a.scale(e))
    if name == "log":
        return Dual(iv_log(a.v, bits), a.scale(iv_div(point(Fraction(1)), a.v)))
    if name == "sqrt":
        s = iv_sqrt(a.v, bits)
        if s[0] <= 0:
            raise Undefined("sqrt is not differentiable where its argument may be 0")
        return Dual(s, a.scale(iv_div(point(Fraction(1)), iv_mul(point(Fraction(2)), s))))
    if name == "tan":
        c = iv_sin(a.v, bits, cosine=True)
        t = iv_div(iv_sin(a.v, bits), c)
        return Dual(t, a.scale(iv_div(point(Fraction(1)), iv_pow(c, 2))))
    if name == "tanh":
        t = iv_tanh(a.v, bits)
        return Dual(t, a.scale(iv_add(point(Fraction(1)), iv_neg(iv_pow(t, 2)))))
    raise Undefined(f"unknown function {name!r}")


def d_round(a: Dual, bits: int) -> Dual:
    return Dual(rounded(a.v, bits), tuple(rounded(x, bits) for x in a.d))
