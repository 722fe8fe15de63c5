"""Taylor models of a field's sin/cos atoms on the search side, and the vertex fields.

The atoms are found exactly as the recast finds them
(:func:`proofkit.proofs._recast_system.build_system`: ``S = sin(delta)``,
``C = cos(delta) - 1`` per distinct argument ``delta = a(x* + y)``, ``q pi``
offsets by angle addition, constants in Q(sqrt d)). Each atom that occurs is
replaced by its Taylor polynomial of order ``k`` plus ``delta^(k+1)/(k+1)! u``
with ``|u| <= 1`` (Lagrange remainder; every derivative of sin and cos is at
most 1). When the resulting field is affine in each ``u``, the true field is
a convex combination of the vertex fields (``u = +-1``, ``sqrt d`` at either
end of a rational enclosure), which are plain polynomial fields in ``y``.

Exact polynomials (python-flint) for the prover's own targets and floats
for the search; this module decides nothing and never imports
:mod:`proofkit.audit` (the audit derives the same models independently).
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction
from itertools import product
from math import factorial, isqrt
from typing import Any

import flint

from proofkit.proofs._recast_system import Unsupported, build_system

__all__ = [
    "TaylorSystem",
    "Unsupported",
    "coefficient",
    "enclosure",
    "exp_remainder",
    "taylor_system",
]

ENCLOSURE_BITS = 48
MAX_VERTICES = 16


def coefficient(function: str, j: int) -> Fraction:
    """The coefficient of ``delta^j`` in the Taylor series of sin or cos at 0."""
    if function == "exp":
        return Fraction(1, factorial(j))
    odd = j % 2 == 1
    if (function == "sin") != odd:
        return Fraction(0)
    return Fraction((-1) ** (j // 2), factorial(j))


def enclosure(d: int) -> tuple[Fraction, Fraction] | None:
    """A rational interval of width ``2^-48`` around ``sqrt d`` (None for d = 0)."""
    if d == 0:
        return None
    lo = Fraction(isqrt(d * 4**ENCLOSURE_BITS), 2**ENCLOSURE_BITS)
    return lo, lo + Fraction(1, 2**ENCLOSURE_BITS)


def _q(x: Fraction) -> flint.fmpq:
    return flint.fmpq(x.numerator, x.denominator)


@dataclass(frozen=True)
class TaylorSystem:
    """The vertex fields over ``y`` (exact) and the atoms' models, in the audit's order."""

    n: int
    ctx: Any  # fmpq_mpoly_ctx over y
    atoms: tuple[tuple[str, flint.fmpq_mpoly, int, Fraction, Fraction | None], ...]
    # (function, delta over y, order, remainder coefficient, bound D of delta for exp)
    vertices: tuple[tuple[str, tuple[flint.fmpq_mpoly, ...]], ...]
    d: int
    enclosure: tuple[Fraction, Fraction] | None
    point: tuple[Fraction, ...]

    def evidence_block(self) -> dict[str, Any]:
        """The certificate's ``taylor_model`` object."""
        atoms = []
        for function, delta, k, r, bound in self.atoms:
            item = {
                "function": function,
                "argument": [[list(map(int, e)), str(c)] for e, c in delta.terms()],
                "order": k,
                "polynomial": [str(coefficient(function, j)) for j in range(k + 1)],
                "remainder": str(r),
            }
            if bound is not None:
                item["bound"] = str(bound)
            atoms.append(item)
        enc = self.enclosure
        return {"atoms": atoms, "enclosure": None if enc is None else [str(x) for x in enc]}

    def numeric_vertices(self) -> list[dict[tuple[int, ...], float]]:
        """Each vertex field as float polynomials (for the search only)."""
        out = []
        for _label, fld in self.vertices:
            out.append([{tuple(map(int, e)): float(c) for e, c in p.terms()} for p in fld])
        return out


def exp_remainder(bound: Fraction, k: int) -> Fraction:
    """``r >= e^D/(k+1)!``: ``e^D <= (m/(m - D))^m`` with ``m = 16 ceil(D)``, rounded up."""
    m = 16 * max(1, -(-bound.numerator // bound.denominator))
    upper = (Fraction(m) / (m - bound)) ** m
    scaled = upper * 2**40
    return Fraction(-(-scaled.numerator // scaled.denominator), 2**40 * factorial(k + 1))


def _model(function: str, k: int, dz: Any, u: Any, one: Any, r: Fraction) -> Any:
    acc = one * 0
    for j in range(k + 1):  # cos - 1 (C) and exp - 1 (E): shifted by one
        c = coefficient(function, j) - (1 if function != "sin" and j == 0 else 0)
        if c:
            acc = acc + dz**j * _q(c)
    return acc + dz ** (k + 1) * _q(r) * u


def taylor_system(
    trees: list[Any],
    point: list[Fraction],
    nominal: list[Fraction],
    orders: tuple[int, int],
    exp_bound: Fraction = Fraction(1),
) -> TaylorSystem:
    """Vertex fields at a rational point; ``orders`` = (order of sin, order of cos and exp).

    An exp model holds where its argument is at most ``exp_bound`` (an obligation).
    """
    rs = build_system(trees, point, nominal, 0)
    if any(kind not in ("trig", "exp") for kind, _d in rs.deltas):
        raise Unsupported("atoms other than sin, cos and exp are not covered")
    pairs = sum(kind == "trig" for kind, _d in rs.deltas)
    n, nz, ctx = rs.n, rs.nz, rs.ctx
    states = rs.field[:n]  # the recast's derivative rules for S, C are not needed here
    monoms = [e for a, b in states for e in a.monoms() + b.monoms()]
    used = [i for i in range(n, nz) if any(e[i] for e in monoms)]
    g = ctx.gens()
    one = ctx.constant(1)
    subs = list(g)
    atoms = []
    ctx_y = flint.fmpq_mpoly_ctx.get(tuple(f"y{i + 1}" for i in range(n)), "lex")
    gy = ctx_y.gens()
    down = [*gy, *([ctx_y.constant(0)] * (nz - n))]
    boxes = []
    for idx in used:
        if idx >= n + 2 * pairs:
            function, dz, k = "exp", rs.deltas[idx - n - pairs][1], orders[1]
            r, bound = exp_remainder(exp_bound, k), exp_bound
        else:
            pair, is_cos = divmod(idx - n, 2)
            function = "cos" if is_cos else "sin"
            k, dz = (orders[1] if is_cos else orders[0]), rs.deltas[pair][1]
            r, bound = Fraction(1, factorial(k + 1)), None
        subs[idx] = _model(function, k, dz, g[idx], one, r)
        atoms.append((function, dz.compose(*down, ctx=ctx_y), k, r, bound))
        boxes.append((idx, (1, 0) if function == "exp" else (1, -1)))
    full = [(a.compose(*subs, ctx=ctx), b.compose(*subs, ctx=ctx)) for a, b in states]
    for idx in used:
        if any(e[idx] > 1 for a, b in full for e in a.monoms() + b.monoms()):
            raise Unsupported("the field is not affine in each remainder (a power of one atom)")
    enc = enclosure(rs.d)
    count = 2 ** len(used) * (1 if enc is None else 2)
    if count > MAX_VERTICES:
        raise Unsupported(f"{count} vertex fields; at most {MAX_VERTICES}")
    ends = [("", None)] if enc is None else [("lo ", enc[0]), ("hi ", enc[1])]
    vertices = []
    for label, end in ends:
        for signs in product(*[box for _i, box in boxes]):
            vals = list(down)
            for (idx, _box), s in zip(boxes, signs, strict=True):
                vals[idx] = ctx_y.constant(s)
            fld = []
            for a, b in full:
                p = a.compose(*vals, ctx=ctx_y)
                if end is not None:
                    p = p + b.compose(*vals, ctx=ctx_y) * _q(end)
                fld.append(p)
            name = ", ".join({1: "+1", -1: "-1", 0: "0"}[s] for s in signs)
            vertices.append((f"{label}({name})", tuple(fld)))
    return TaylorSystem(n, ctx_y, tuple(atoms), tuple(vertices), rs.d, enc, tuple(point))
