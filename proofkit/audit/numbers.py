"""Exact numbers for the audit: rationals and elements of one quadratic field.

A certificate writes a rational as the string ``"p/q"`` (or ``"n"``) and an
element ``a + b*sqrt(d)`` of the field Q(sqrt(d)) as the pair ``["a", "b"]``;
``d`` is declared once per claim. Arithmetic is exact (stdlib ``fractions``);
the sign of ``a + b*sqrt(d)`` is decided exactly by comparing squares.

This module must never use floating point, and never import anything beyond
the standard library.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from fractions import Fraction
from math import isqrt

__all__ = [
    "MAX_DIGITS",
    "FormatError",
    "Num",
    "parse_number",
    "parse_radicand",
    "write_number",
]

_RATIONAL = re.compile(r"-?(0|[1-9][0-9]*)(/[1-9][0-9]*)?")
MAX_DIGITS = 1000  # a certificate number longer than this is refused, not parsed


class FormatError(ValueError):
    """The certificate is malformed (wrong structure, a number that is not exact)."""


@dataclass(frozen=True, slots=True)
class Num:
    """``a + b*sqrt(d)`` with rational ``a, b``; ``d == 0`` means a plain rational."""

    a: Fraction
    b: Fraction = Fraction(0)
    d: int = 0

    @staticmethod
    def of(value: int | Fraction, d: int = 0) -> Num:
        return Num(Fraction(value), Fraction(0), d)

    def _field(self, other: Num) -> int:
        if self.d == other.d or other.b == 0:
            return self.d
        if self.b == 0:
            return other.d
        raise FormatError(f"numbers from two fields Q(sqrt({self.d})), Q(sqrt({other.d})) mixed")

    def __add__(self, other: Num) -> Num:
        return Num(self.a + other.a, self.b + other.b, self._field(other))

    def __sub__(self, other: Num) -> Num:
        return Num(self.a - other.a, self.b - other.b, self._field(other))

    def __neg__(self) -> Num:
        return Num(-self.a, -self.b, self.d)

    def __mul__(self, other: Num) -> Num:
        if not self.b and not other.b:  # both rational: the common case
            return Num(self.a * other.a, self.b, self.d or other.d)
        d = self._field(other)
        return Num(self.a * other.a + d * self.b * other.b, self.a * other.b + self.b * other.a, d)

    def __truediv__(self, other: Num) -> Num:
        # (a + b r)/(c + e r) = (a + b r)(c - e r)/(c^2 - d e^2); the denominator is
        # nonzero for a nonzero divisor because d is not a perfect square.
        d = self._field(other)
        norm = other.a * other.a - d * other.b * other.b
        if norm == 0:
            raise ZeroDivisionError("division by zero")
        conj = Num(other.a / norm, -other.b / norm, d)
        return self * conj

    def is_zero(self) -> bool:
        return self.a == 0 and self.b == 0

    def sign(self) -> int:
        """Exact sign of ``a + b*sqrt(d)``: compare ``a^2`` with ``b^2 d`` when signs differ."""
        sa, sb = _sgn(self.a), _sgn(self.b)
        if sb == 0 or sa == sb:
            return sa if sa != 0 else sb
        if sa == 0:
            return sb
        return sa if self.a * self.a > self.b * self.b * self.d else sb

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, Num):
            return NotImplemented
        return self.a == other.a and self.b == other.b and (self.b == 0 or self.d == other.d)

    def __hash__(self) -> int:
        return hash((self.a, self.b))

    def __str__(self) -> str:
        if self.b == 0:
            return _short(self.a)
        b = _short(abs(self.b))
        root = f"sqrt({self.d})" if abs(self.b) == 1 else f"{b}*sqrt({self.d})"
        if self.a == 0:
            return root if self.b > 0 else f"-{root}"
        return f"{_short(self.a)} {'+' if self.b > 0 else '-'} {root}"


def _short(x: Fraction) -> str:
    """``x`` as text, or its size only when it is too long to show (or to convert)."""
    bits = x.numerator.bit_length() + x.denominator.bit_length()
    if bits > 600:
        return f"(a rational of about {int(bits * 0.30103)} digits)"
    return str(x)


def _sgn(x: Fraction) -> int:
    return (x > 0) - (x < 0)


def _rational(text: object, where: str) -> Fraction:
    if isinstance(text, str) and len(text) - text.count("-") - text.count("/") > MAX_DIGITS:
        raise FormatError(
            f"{where}: a number of {len(text)} characters; at most {MAX_DIGITS} digits"
        )
    if not isinstance(text, str) or not _RATIONAL.fullmatch(text):
        shown = repr(text)[:60].encode("ascii", "backslashreplace").decode()
        raise FormatError(f'{where}: expected an exact rational like "3/4", got {shown}')
    value = Fraction(text)
    if str(value) != text:
        raise FormatError(f"{where}: rational {text[:60]!r} is not in lowest terms")
    return value


def parse_radicand(value: object, where: str) -> int:
    """The ``d`` of Q(sqrt(d)): an integer >= 2 that is not a perfect square."""
    d = _rational(value, where)
    if d.denominator != 1 or d < 2 or isqrt(int(d)) ** 2 == d:
        raise FormatError(f"{where}: sqrt({str(value)[:60]}) does not define a quadratic field")
    return int(d)


def parse_number(value: object, d: int, where: str) -> Num:
    """Read ``"p/q"`` or, when the claim declares Q(sqrt(d)), ``["a", "b"]``."""
    if isinstance(value, list):
        if d == 0:
            raise FormatError(f"{where}: a pair [a, b] needs a declared number field")
        if len(value) != 2:
            raise FormatError(f"{where}: expected a pair [a, b] meaning a + b*sqrt({d})")
        b = _rational(value[1], where)
        if b == 0:
            raise FormatError(f'{where}: write a rational as a string, not as a pair [a, "0"]')
        return Num(_rational(value[0], where), b, d)
    return Num(_rational(value, where), Fraction(0), d)


def write_number(x: Num) -> str | list[str]:
    """The certificate form of ``x`` (inverse of :func:`parse_number`)."""
    if x.b == 0:
        return str(x.a)
    return [str(x.a), str(x.b)]
