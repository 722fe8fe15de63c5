"""Bernstein expansion and covers of a parameter box (the search side of range proofs).

On a sub-box, a polynomial whose Bernstein coefficients are all positive is
positive on the whole closed sub-box (Garloff 1986; Zettler and Garloff 1998).
:func:`cover_box` bisects the box until every Hurwitz condition of a
:class:`~proofkit.analysis.parametric.RangeSystem` has a proven sign on each
sub-box (a cover), or finds a rational value where the claim is contradicted
exactly (an unstable Routh array, by :mod:`proofkit.analysis.routh`), choosing
values with small denominators ("it breaks at rho = 25").

This module must never accept a floating-point evaluation as evidence; it is
private to :mod:`proofkit.analysis.parametric`, which re-exports its public names.
"""

from __future__ import annotations

import itertools
import time
from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from math import comb, isqrt
from typing import TYPE_CHECKING, Literal

import flint
import sympy as sp

if TYPE_CHECKING:
    from proofkit.analysis.parametric import RangeSystem

__all__ = [
    "Box",
    "Cover",
    "Leaf",
    "bernstein",
    "bernstein_sign",
    "contradicts",
    "cover_box",
    "radical_interval",
    "simplest_between",
    "to_sympy",
]

Mpoly = flint.fmpq_mpoly
Box = tuple[tuple[Fraction, Fraction], ...]


# --- Bernstein expansion ---------------------------------------------------------------------
def bernstein(p: Mpoly, box: Sequence[tuple[Fraction, Fraction]]) -> list[flint.fmpq]:
    """The Bernstein coefficients of ``p`` over ``box`` (tensor degrees = p's degrees)."""
    if p.is_zero():  # flint gives the zero polynomial degree -1: its one coefficient is 0
        return [flint.fmpq(0)]
    ctx = p.context()
    gens = ctx.gens()
    shifted = p.compose(
        *[
            ctx.constant(flint.fmpq(lo.numerator, lo.denominator))
            + flint.fmpq((hi - lo).numerator, (hi - lo).denominator) * t
            for (lo, hi), t in zip(box, gens, strict=True)
        ]
    )
    degs = p.degrees()
    grid = dict(shifted.to_dict())
    for axis, d in enumerate(degs):
        if d == 0:
            continue
        new: dict[tuple[int, ...], flint.fmpq] = {}
        for key, c in grid.items():
            j = key[axis]
            for i in range(j, d + 1):
                k2 = (*key[:axis], i, *key[axis + 1 :])
                v = c * comb(i, j) / comb(d, j)
                new[k2] = new[k2] + v if k2 in new else v
        grid = new
    size = 1
    for d in degs:
        size *= d + 1
    out = list(grid.values())
    if len(out) < size:
        out.append(flint.fmpq(0))  # a missing grid entry is a zero coefficient
    return out


def bernstein_sign(p: Mpoly, box: Sequence[tuple[Fraction, Fraction]], strict: bool = True) -> int:
    """+1 / -1 when every Bernstein coefficient is > 0 / < 0 (>= 0 / <= 0 if not strict), else 0."""
    coeffs = bernstein(p, box)
    if strict:
        if all(c > 0 for c in coeffs):
            return 1
        return -1 if all(c < 0 for c in coeffs) else 0
    if all(c >= 0 for c in coeffs):
        return 1
    return -1 if all(c <= 0 for c in coeffs) else 0


def _sqrt_bounds(q: flint.fmpq, bits: int = 24) -> tuple[Fraction, Fraction]:
    """Rationals ``lo <= sqrt(q) <= hi`` for ``q >= 0``."""
    num, den = int(q.p), int(q.q)
    scale = 1 << bits
    s = isqrt(num * den * scale * scale)
    lo = Fraction(s, den * scale)
    return lo, lo if s * s == num * den * scale * scale else Fraction(s + 1, den * scale)


def radical_interval(radicand: Mpoly, pbox: Box) -> tuple[Fraction, Fraction] | None:
    """A rational enclosure of ``sqrt(radicand)`` over ``pbox``; None if not shown real there."""
    cs = bernstein(radicand, (*pbox, (Fraction(0), Fraction(1))))  # no r in the radicand
    lo, hi = min(cs), max(cs)
    if lo < 0:
        return None
    return _sqrt_bounds(lo)[0], _sqrt_bounds(hi)[1]


# --- covers ---------------------------------------------------------------------------------
@dataclass(frozen=True)
class Leaf:
    """A sub-box (parameters, then the radical's enclosure) and the proven sign of each
    condition."""

    box: Box
    signs: tuple[int, ...]  # +1 / -1 proven, 0 not asserted


@dataclass(frozen=True)
class Cover:
    """``covered``: leaves tile the box; ``fails``: at ``point`` the opposite can be shown;
    ``undecided``: neither (reason)."""

    status: Literal["covered", "fails", "undecided"]
    leaves: tuple[Leaf, ...] = ()
    point: tuple[Fraction, ...] | None = None
    reason: str = ""


def _value(p: Mpoly, values: Sequence[Fraction]) -> flint.fmpq:
    return p(*[flint.fmpq(v.numerator, v.denominator) for v in values])


def _good(signs: Sequence[int], kind: str, lead: int = 0) -> bool:
    """The claim's sign pattern; the first ``lead`` conditions (where f is defined) must be
    positive in every case."""
    if any(s <= 0 for s in signs[:lead]):
        return False
    signs = signs[lead:]
    if kind == "stable":
        return all(s > 0 for s in signs)
    if signs[-1] < 0:  # a_n < 0: a real root s > 0
        return True
    # the Routh first column: 1, D1, D2/D1, ..., D_{n-1}/D_{n-2}, and D_n/D_{n-1} = a_n
    ratios = [signs[k] * signs[k - 1] for k in range(1, len(signs) - 1)]
    first = [1, signs[0], *ratios, *(signs[-1:] if len(signs) > 1 else [])]
    return all(signs) and any(a != b for a, b in itertools.pairwise(first))


def _bad(signs: Sequence[int], kind: str, lead: int = 0) -> bool:
    """The box certainly contradicts the claim (for instability: Hurwitz everywhere in it)."""
    if any(s <= 0 for s in signs[:lead]):
        return False  # f is not shown defined at the point: nothing follows
    signs = signs[lead:]
    if kind == "stable":
        return any(s < 0 for s in signs)
    return all(s > 0 for s in signs)


def _bisect(box: Box, widths: Sequence[Fraction]) -> tuple[Box, Box]:
    k = max(range(len(box)), key=lambda i: (box[i][1] - box[i][0]) / widths[i] if widths[i] else 0)
    lo, hi = box[k]
    mid = (lo + hi) / 2
    return (*box[:k], (lo, mid), *box[k + 1 :]), (*box[:k], (mid, hi), *box[k + 1 :])


def cover_box(
    system: RangeSystem,
    kind: Literal["stable", "unstable"],
    box: Box | None = None,
    conditions: Sequence[Mpoly] | None = None,
    budget: int = 4000,
    seconds: float = 8.0,
) -> Cover:
    """Tile ``box`` (default: the declared ranges) with sub-boxes on which the claim's sign
    pattern is proven, or find a point where the opposite holds.

    Candidate points (vertices, centres, the simplest point of a box of the wrong sign) are
    decided exactly by :func:`contradicts`.
    """
    box = box or system.box
    conds = list(conditions or system.conditions)
    widths = [hi - lo for lo, hi in box]
    stack, leaves = [box], []
    touched: list | None = None
    deadline = time.monotonic() + seconds
    used = 0
    while stack:
        if used >= budget or time.monotonic() > deadline:
            if touched:
                return Cover("undecided", point=touched[0], reason=touched[1])
            return Cover("undecided", reason=f"the bisection budget ran out ({used} boxes)")
        pbox = stack.pop()
        used += 1
        full = pbox
        if system.radicand is not None:
            riv = radical_interval(system.radicand, pbox)
            if riv is None:
                centre = tuple((lo + hi) / 2 for lo, hi in pbox)
                if _value(system.radicand, (*centre, Fraction(0))) < 0:
                    return Cover(
                        "undecided",
                        reason="the radicand of the point is negative at "
                        + _show(system.params, centre),
                    )
                stack.extend(_bisect(pbox, widths))
                continue
            full = (*pbox, riv)
        signs = tuple(bernstein_sign(c, full) for c in conds)
        if _good(signs, kind, system.positives):
            leaves.append(Leaf(full, signs))
            continue
        verdict = _probe_box(system, pbox, full, conds, kind, signs)
        if isinstance(verdict, tuple):
            return Cover("fails", point=_simpler(system, kind, box, verdict))
        if verdict:
            touched = touched or verdict
            continue  # a condition vanishes at a point of this box: it can never be covered
        stack.extend(_bisect(pbox, widths))
    if touched:
        return Cover("undecided", point=touched[0], reason=touched[1])
    return Cover("covered", tuple(leaves))


def _show(names: Sequence[str], point: Sequence[Fraction]) -> str:
    return ", ".join(f"{n} = {v}" for n, v in zip(names, point, strict=True))


def simplest_between(lo: Fraction, hi: Fraction) -> Fraction:
    """The rational with the smallest denominator in ``[lo, hi]`` (continued fractions)."""
    if lo > hi:
        lo, hi = hi, lo
    if lo <= 0 <= hi:
        return Fraction(0)
    if hi < 0:
        return -simplest_between(-hi, -lo)
    fl = lo.numerator // lo.denominator
    if fl == lo or fl + 1 <= hi:
        return Fraction(fl) if fl == lo else Fraction(fl + 1)
    return fl + 1 / simplest_between(1 / (hi - fl), 1 / (lo - fl))


def _simpler(
    system: RangeSystem, kind: str, box: Box, pt: tuple[Fraction, ...]
) -> tuple[Fraction, ...]:
    """A contradicting value with small denominators near ``pt`` ("it breaks at rho = 25"):
    the simplest rational of windows of half, a quarter, ... of the box around ``pt``."""
    widths = [hi - lo for lo, hi in box]
    for k in range(1, 9):
        cand = tuple(
            simplest_between(max(lo, x - w / 2**k), min(hi, x + w / 2**k))
            for (lo, hi), x, w in zip(box, pt, widths, strict=True)
        )
        if cand == pt:
            return pt
        if sum(v.denominator for v in cand) <= sum(v.denominator for v in pt) and contradicts(
            system, kind, cand
        ):
            return cand
    return pt


def linearization_at(system: RangeSystem, pt: Sequence[Fraction]):
    """The exact Routh array (analysis.routh, with special cases) at one parameter value."""
    from proofkit.analysis.routh import routh_array

    values = [sp.Rational(v.numerator, v.denominator) for v in pt]
    if system.radicand is not None:
        g = _value(system.radicand, (*pt, Fraction(0)))
        if g < 0:
            return None
        values.append(sp.sqrt(sp.Rational(int(g.p), int(g.q))))
    coeffs = [
        sp.expand(to_sympy(c).subs(dict(zip(_syms(system), values, strict=True))))
        for c in system.charpoly
    ]
    return routh_array(coeffs)


def _syms(system: RangeSystem) -> list[sp.Symbol]:
    return [sp.Symbol(n, real=True) for n in system.variables]


def contradicts(system: RangeSystem, kind: str, pt: Sequence[Fraction]) -> bool:
    """Exactly: at ``pt`` the linearization has a root with Re s > 0 (claim stable), or
    every root has Re s < 0 (claim unstable)."""
    ra = linearization_at(system, pt)
    if ra is None or not _defined_at(system, pt):
        return False
    return ra.rhp_count > 0 if kind == "stable" else ra.hurwitz


def _defined_at(system: RangeSystem, pt: Sequence[Fraction]) -> bool:
    """The leading conditions (sigma Q, where f is defined) are positive at ``pt``."""
    if not system.positives:
        return True
    values = [sp.Rational(v.numerator, v.denominator) for v in pt]
    if system.radicand is not None:
        g = _value(system.radicand, (*pt, Fraction(0)))
        values.append(sp.sqrt(sp.Rational(int(g.p), int(g.q))))
    at = dict(zip(_syms(system), values, strict=True))
    return all(sp.expand(to_sympy(c).subs(at)) > 0 for c in system.conditions[: system.positives])


def _probe_box(system, pbox, full, conds, kind, signs):
    """A contradicting point (tuple), a touching point and reason (list), or None."""
    candidates = []
    if _bad(signs, kind, system.positives):  # the whole box has the wrong sign: a simple point
        candidates.append(tuple(simplest_between(lo, hi) for lo, hi in pbox))
    candidates += [tuple(v) for v in itertools.product(*pbox)]
    candidates.append(tuple((lo + hi) / 2 for lo, hi in pbox))
    for pt in candidates:
        if contradicts(system, kind, pt):
            return pt
    if kind != "stable":
        return None
    for pt in candidates:
        ra = linearization_at(system, pt)
        if ra is not None and ra.imag_count > 0:
            return [
                pt,
                f"at {_show(system.params, pt)} the linearization has a root on the "
                "imaginary axis, so it decides nothing at that value",
            ]
    return None


def to_sympy(p: Mpoly) -> sp.Expr:
    syms = [sp.Symbol(n, real=True) for n in p.context().names()]
    return sp.Add(
        *[
            sp.Rational(int(c.p), int(c.q))
            * sp.Mul(*[s ** int(e) for s, e in zip(syms, m, strict=True)])
            for m, c in p.to_dict().items()
        ]
    )
