"""Reading certificate data for the audit, with documented limits on every size.

Every reader either returns exact values (:class:`~proofkit.audit.numbers.Num`,
sparse polynomials) or raises :class:`FormatError` naming the place in the
certificate. The limits below bound the work of the whole audit: no number,
exponent, polynomial, matrix or list may exceed them, so that any input ends
in seconds. :func:`escape` makes any text safe to print.

This module must never use floating point and imports only the standard
library and :mod:`proofkit.audit.numbers`.
"""

from __future__ import annotations

from typing import Any

from proofkit.audit.numbers import MAX_DIGITS, FormatError, Num, parse_number

__all__ = [
    "LIMITS",
    "MAX_CLAIMS",
    "MAX_DEGREE",
    "MAX_GRAM",
    "MAX_SQUARES",
    "MAX_TERMS",
    "MAX_VARIABLES",
    "Condition",
    "FormatError",
    "escape",
    "get",
    "only_keys",
    "read_matrix",
    "read_monomial",
    "read_number",
    "read_poly",
    "read_set",
    "read_vector",
]

MAX_VARIABLES = 24  # states plus uncertain parameters
MAX_DEGREE = 64  # every exponent, and the total degree of every polynomial
MAX_TERMS = 5000  # terms of one stated polynomial
MAX_GRAM = 120  # rows of one Gram matrix
MAX_SQUARES = 64  # sum-of-squares obligations of one claim
MAX_CLAIMS = 1000  # claims of one certificate
LIMITS = {
    "digits of a number (numerator and denominator together)": MAX_DIGITS,
    "variables (states plus uncertain parameters)": MAX_VARIABLES,
    "exponent or total degree": MAX_DEGREE,
    "terms of a polynomial": MAX_TERMS,
    "rows of a Gram matrix": MAX_GRAM,
    "sum-of-squares obligations of a claim": MAX_SQUARES,
    "claims of a certificate": MAX_CLAIMS,
    "seconds of checking per certificate (default; later claims are rejected)": 8,
    "terms of any intermediate polynomial": 200_000,
}

Poly = dict[tuple[int, ...], Num]
Condition = tuple[Poly, bool]  # (g, strict): g >= 0, or g > 0 when strict


def escape(text: object) -> str:
    """``text`` with control characters, lone surrogates and line breaks escaped.

    Anything the audit prints passes through here, so that no certificate text
    can move the cursor, rewrite a line of the terminal or fail to encode.
    """
    out = []
    for ch in str(text):
        code = ord(ch)
        if code < 32 or 127 <= code < 160 or 0xD800 <= code < 0xE000:
            out.append(f"\\x{code:02x}" if code < 256 else f"\\u{code:04x}")
        elif code in (0x2028, 0x2029, 0x200E, 0x200F) or 0x202A <= code <= 0x202E:
            out.append(f"\\u{code:04x}")  # line separators and bidirectional overrides
        elif 0x2066 <= code <= 0x2069 or code == 0xFEFF:
            out.append(f"\\u{code:04x}")
        else:
            out.append(ch)
    return "".join(out)


def only_keys(obj: Any, allowed: set[str], where: str) -> None:
    """Reject keys the audit does not check: no unchecked field may carry meaning."""
    if not isinstance(obj, dict):
        raise FormatError(f"{where}: expected an object")
    extra = sorted(set(obj) - allowed)
    if extra:
        names = ", ".join(escape(repr(k))[:40] for k in extra[:5])
        raise FormatError(f"{where}: unknown key(s) {names}; the audit checks no such field")


def get(obj: Any, key: str, kind: type | tuple[type, ...], where: str) -> Any:
    """``obj[key]``, which must exist and have the given JSON type."""
    if not isinstance(obj, dict) or key not in obj:
        raise FormatError(f"{where}: missing key {key!r}")
    value = obj[key]
    if not isinstance(value, kind) or (kind is int and isinstance(value, bool)):
        raise FormatError(f"{where}.{key}: wrong type {type(value).__name__}")
    return value


def read_number(value: Any, d: int, where: str) -> Num:
    """One exact number: ``"p/q"``, or ``["a", "b"]`` in the claim's field Q(sqrt d)."""
    return parse_number(value, d, where)


def read_monomial(data: Any, nvars: int, where: str) -> tuple[int, ...]:
    """An exponent vector of ``nvars`` integers in 0..MAX_DEGREE with bounded total degree."""
    if not (
        isinstance(data, list)
        and len(data) == nvars
        and all(
            isinstance(e, int) and not isinstance(e, bool) and 0 <= e <= MAX_DEGREE for e in data
        )
    ):
        raise FormatError(f"{where}: expected {nvars} exponents, integers in 0..{MAX_DEGREE}")
    if sum(data) > MAX_DEGREE:
        raise FormatError(f"{where}: total degree {sum(data)} exceeds {MAX_DEGREE}")
    return tuple(data)


def read_poly(data: Any, nvars: int, d: int, where: str) -> Poly:
    """A sparse polynomial ``[[exponents, coefficient], ...]`` with distinct, nonzero terms."""
    if not isinstance(data, list):
        raise FormatError(f"{where}: a polynomial is a list of [exponents, coefficient]")
    if len(data) > MAX_TERMS:
        raise FormatError(f"{where}: {len(data)} terms; at most {MAX_TERMS} are allowed")
    out: Poly = {}
    for k, term in enumerate(data):
        w = f"{where}[{k}]"
        if not (isinstance(term, list) and len(term) == 2):
            raise FormatError(f"{w}: expected [exponents, coefficient]")
        key = read_monomial(term[0], nvars, w)
        if key in out:
            raise FormatError(f"{w}: exponent vector {list(key)} appears twice")
        c = parse_number(term[1], d, w)
        if c.is_zero():
            raise FormatError(f"{w}: a listed coefficient must be nonzero")
        out[key] = c
    return out


def read_vector(data: Any, d: int, where: str, length: int | None = None) -> list[Num]:
    """A list of exact numbers (of the given length, when given)."""
    if not isinstance(data, list) or (length is not None and len(data) != length):
        size = f"{length} " if length is not None else ""
        raise FormatError(f"{where}: expected a list of {size}numbers")
    if len(data) > MAX_TERMS:
        raise FormatError(f"{where}: longer than {MAX_TERMS}")
    return [parse_number(x, d, f"{where}[{i}]") for i, x in enumerate(data)]


def read_matrix(data: Any, d: int, where: str, n: int) -> list[list[Num]]:
    """An ``n`` by ``n`` matrix of exact numbers."""
    if not isinstance(data, list) or len(data) != n:
        raise FormatError(f"{where}: expected {n} rows")
    return [read_vector(r, d, f"{where}[{i}]", n) for i, r in enumerate(data)]


def read_set(data: Any, nvars: int, where: str) -> list[Condition]:
    """A SET: ``[{"g": POLY, "strict": bool}, ...]`` meaning every ``g >= 0`` (``> 0``)."""
    if not isinstance(data, list) or len(data) > MAX_SQUARES:
        raise FormatError(f"{where}: expected a list of at most {MAX_SQUARES} conditions")
    out = []
    for k, cond in enumerate(data):
        w = f"{where}[{k}]"
        only_keys(cond, {"g", "strict"}, w)
        g = read_poly(get(cond, "g", list, w), nvars, 0, f"{w}.g")
        out.append((g, get(cond, "strict", bool, w)))
    return out
