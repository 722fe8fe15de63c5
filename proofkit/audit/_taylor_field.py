"""Taylor models of a field's sin, cos and exp atoms, derived and checked by the audit itself.

A Taylor model of an atom is its Taylor polynomial plus a remainder bounded
rigorously. For ``sin`` and ``cos`` every derivative is bounded by 1, so by
Lagrange's form of the remainder, for EVERY real ``delta``::

    sin(delta) = T_k(delta) + r delta^(k+1) u,   cos(delta) = T_k(delta) + r delta^(k+1) u

with ``T_k`` the Taylor polynomial of degree ``k`` at 0, any stated
``r >= 1/(k+1)!`` and some ``u`` in ``[-1, 1]`` (which depends on the point).
For ``exp`` the remainder is ``e^xi delta^(k+1)/(k+1)!`` with ``xi`` between 0
and ``delta``: where ``delta <= D`` (the schema's obligation ``bound j``),
``exp(delta) = T_k(delta) + r delta^(k+1) w`` with ``r >= M/(k+1)!``,
``M = (m/(m - D))^m >= e^D`` and ``w`` in ``[0, 1]``.
The atoms come from the model's expression trees exactly as the recast
derives them (:mod:`proofkit.audit._recast_field`: ``delta = a(x* + y)``
vanishing at the point, ``q pi`` offsets by angle addition with exact values
in Q(sqrt d)). Replacing each atom by its model turns the field into a
polynomial ``F(y, u)``; when ``F`` is affine in each ``u_i`` (checked here)
and, for constants in Q(sqrt d), affine in ``sqrt d`` (always true: ``sqrt d``
enters only through the constants), every value ``f(x* + y)`` is a convex
combination of the *vertex fields* ``F(y, u)`` with each ``u_i = +-1`` (exp:
``w_i = 0, 1``) and
``sqrt d`` at either end of a stated rational enclosure.

The certificate states each atom's model (function, argument, order,
polynomial, remainder) so that a reader sees it; the audit derives the atoms
itself and accepts a stated model only when its polynomial is exactly the
Taylor polynomial and its remainder coefficient is at least ``1/(k+1)!``.

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, never use floating point, and never take an atom, a
Taylor coefficient or a field from the certificate without checking it.
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction
from itertools import product
from math import factorial
from typing import Any

from proofkit.audit._recast_field import _enclosure, _Walk  # the recast's atom walk, reused as is
from proofkit.audit.algebra import (
    Poly,
    poly_add,
    poly_constant,
    poly_mul,
    poly_scale,
    poly_substitute,
)
from proofkit.audit.numbers import FormatError, Num
from proofkit.audit.read import MAX_VARIABLES, get, only_keys, read_number, read_poly
from proofkit.audit.schemas import require

__all__ = [
    "MAX_ORDER",
    "MAX_VERTICES",
    "TaylorModel",
    "derive_models",
    "exp_upper",
    "taylor_coefficient",
]

MAX_ORDER = 16  # degree of a Taylor polynomial
MAX_VERTICES = 16  # vertex fields (2^remainders, times 2 with an enclosure)
MAX_BOUND = Fraction(16)  # the bound D of an exp argument


def taylor_coefficient(function: str, j: int) -> Fraction:
    """The coefficient of ``delta^j`` in the Taylor series of sin, cos or exp at 0."""
    if function == "exp":
        return Fraction(1, factorial(j))
    if function == "sin":
        return Fraction(0) if j % 2 == 0 else Fraction((-1) ** (j // 2), factorial(j))
    return Fraction((-1) ** (j // 2), factorial(j)) if j % 2 == 0 else Fraction(0)


def exp_upper(bound: Fraction) -> Fraction:
    """A rational ``M >= e^D`` for ``0 <= D``: ``e^D = (e^(D/m))^m <= (m / (m - D))^m``."""
    m = 16 * max(1, -(-bound.numerator // bound.denominator))  # m >= 16 D
    return (Fraction(m) / (m - bound)) ** m


@dataclass(frozen=True)
class TaylorModel:
    """The atoms' models and the vertex fields over the deviation ``y`` (rational)."""

    n: int
    atoms: tuple[tuple[str, Poly, int, Fraction], ...]  # (function, delta over y, k, r)
    vertices: tuple[tuple[str, tuple[Poly, ...]], ...]  # (label, field over y)
    bounds: tuple[tuple[Poly, Fraction], ...]  # exp atoms: delta <= D must hold on the set
    d: int
    enclosure: tuple[Fraction, Fraction] | None


def _power(p: Poly, k: int, nvars: int) -> Poly:
    out = poly_constant(Num.of(1), nvars)
    for _ in range(k):
        out = poly_mul(out, p)
    return out


def _read_atom(item: Any, function: str, delta: Poly, n: int, where: str) -> tuple[int, Fraction]:
    """Check one stated model against the audit's own atom; return (order, remainder).

    exp: ``e^delta = T_k + e^xi delta^(k+1)/(k+1)!`` with ``xi`` between 0 and
    ``delta``; where ``delta <= D`` (an obligation of the schema), ``0 < e^xi <=
    e^D <= M``, so ``r >= M/(k+1)!`` and a remainder factor ``w`` in ``[0, 1]``.
    """
    only_keys(item, {"function", "argument", "order", "polynomial", "remainder", "bound"}, where)
    stated = get(item, "function", str, where)
    require(stated == function, "taylor model", f"{where}: the atom is {function}, not {stated}")
    arg = read_poly(get(item, "argument", list, where), n, 0, f"{where}.argument")
    require(arg == delta, "taylor model", f"{where}: the argument is not the field's")
    k = get(item, "order", int, where)
    require(1 <= k <= MAX_ORDER, "taylor model", f"{where}: order must be 1..{MAX_ORDER}")
    coefs = get(item, "polynomial", list, where)
    require(len(coefs) == k + 1, "taylor model", f"{where}: expected {k + 1} coefficients")
    for j, c in enumerate(coefs):
        value = read_number(c, 0, f"{where}.polynomial[{j}]").a
        want = taylor_coefficient(function, j)
        require(
            value == want,
            "taylor model",
            f"{where}: coefficient of delta^{j} is {value}, the Taylor coefficient is {want}",
        )
    r = read_number(get(item, "remainder", (str, list), where), 0, f"{where}.remainder").a
    least = Fraction(1, factorial(k + 1))
    if function == "exp":  # |e^xi| <= e^max(0, D) where delta <= D
        bound = read_number(get(item, "bound", (str, list), where), 0, f"{where}.bound").a
        require(0 <= bound <= MAX_BOUND, "taylor model", f"{where}: bound must be 0..{MAX_BOUND}")
        least = exp_upper(bound) * least
    else:
        require("bound" not in item, "taylor model", f"{where}: a bound for {function}")
    require(
        r >= least,
        "taylor model",
        f"{where}: remainder coefficient {r} is below 1/({k + 1})! = {least}",
    )
    return k, r


def _only_trig(walk: _Walk) -> None:
    """Refuse any atom other than sin/cos/exp (tanh, and kinds the walk may learn later)."""
    skip = {"pairs", "exps", "point", "nominal"}
    other = sorted(k for k, v in vars(walk).items() if isinstance(v, list) and k not in skip and v)
    require(not other, "taylor model", f"atoms other than sin, cos, exp ({other}) are not covered")


def _field(walk: _Walk, exprs: tuple[Any, ...], n: int) -> tuple[list[Poly], int]:
    for e in exprs:  # pass 1: the atoms
        walk.poly(e)
    _only_trig(walk)
    nz = n + 2 * len(walk.pairs) + len(walk.exps)
    require(nz > n, "taylor model", "the field has no sin, cos or exp")
    require(nz <= MAX_VARIABLES, "taylor model", f"more than {MAX_VARIABLES} variables")
    walk.nz = nz
    count = (len(walk.pairs), len(walk.exps))
    f = [walk.poly(e) for e in exprs]
    require(count == (len(walk.pairs), len(walk.exps)), "taylor model", "an atom inside an atom")
    _only_trig(walk)
    zero = tuple([0] * nz)
    require(all(zero not in fi for fi in f), "equilibrium", "the field is not 0 at the point")
    return f, nz


def _vertices(
    g: list[Poly], used: list[tuple[int, tuple[int, int]]], n: int, nz: int, enc: Any
) -> list[tuple[str, tuple[Poly, ...]]]:
    """The field at every vertex of the remainders' box (sin/cos: +-1, exp: 1, 0) and end of
    the enclosure."""
    ends = [("", None)] if enc is None else [("lo ", enc[0]), ("hi ", enc[1])]
    out = []
    for label, end in ends:
        for signs in product(*[box for _i, box in used]):
            values = [poly_constant(Num.of(0), n) for _ in range(nz)]
            for i in range(n):
                values[i] = {tuple(int(j == i) for j in range(n)): Num.of(1)}
            for (idx, _box), s in zip(used, signs, strict=True):
                values[idx] = poly_constant(Num.of(s), n)
            fld = []
            for gi in g:
                p = poly_substitute(gi, values, n)
                if end is not None:
                    p = {e: Num.of(c.a + c.b * end) for e, c in p.items() if c.a + c.b * end}
                fld.append(p)
            name = ", ".join({1: "+1", -1: "-1", 0: "0"}[s] for s in signs)
            out.append((f"{label}({name})", tuple(fld)))
    return out


def derive_models(
    exprs: tuple[Any, ...], point: list[Num], nominal: list[Fraction], block: Any, where: str
) -> TaylorModel:
    """The checked Taylor models and vertex fields of ``exprs`` at ``point``."""
    if not isinstance(block, dict):
        raise FormatError(f"{where}: expected an object")
    only_keys(block, {"atoms", "enclosure"}, where)
    n = len(point)
    walk = _Walk(point, nominal)
    f, nz = _field(walk, exprs, n)
    used = [i for i in range(n, nz) if any(e[i] for fi in f for e in fi)]
    stated = get(block, "atoms", list, where)
    require(
        len(stated) == len(used),
        "taylor model",
        f"the field has {len(used)} atom(s); {len(stated)} model(s) are stated",
    )
    values: list[Poly] = [{tuple(int(j == i) for j in range(nz)): Num.of(1)} for i in range(nz)]
    atoms, bounds, boxes = [], [], []
    first_exp = n + 2 * len(walk.pairs)
    for t, idx in enumerate(used):
        if idx >= first_exp:
            function, delta = "exp", walk.exps[idx - first_exp]
        else:
            pair, is_cos = divmod(idx - n, 2)
            function, delta = ("cos" if is_cos else "sin"), walk.pairs[pair]
        k, r = _read_atom(stated[t], function, delta, n, f"{where}.atoms[{t}]")
        dz = {e + tuple([0] * (nz - n)): c for e, c in delta.items()}
        model: Poly = {}
        for j in range(k + 1):  # the variable is cos - 1 (C) or exp - 1 (E): shift by 1
            c = taylor_coefficient(function, j) - (1 if (function != "sin" and j == 0) else 0)
            if c:
                model = poly_add(model, poly_scale(_power(dz, j, nz), Num.of(c)))
        u = {tuple(int(j == idx) for j in range(nz)): Num.of(r)}
        values[idx] = poly_add(model, poly_mul(_power(dz, k + 1, nz), u))
        atoms.append((function, delta, k, r))
        boxes.append((idx, (1, 0) if function == "exp" else (1, -1)))
        if function == "exp":
            bounds.append((delta, read_number(stated[t]["bound"], 0, "bound").a))
    g = [poly_substitute(fi, values, nz) for fi in f]
    for idx in used:
        require(
            all(e[idx] <= 1 for gi in g for e in gi),
            "taylor model",
            "the field is not affine in each remainder (a power of one atom): not covered",
        )
    enc = _enclosure(block, walk.d, where)
    count = 2 ** len(used) * (1 if enc is None else 2)
    require(count <= MAX_VERTICES, "taylor model", f"{count} vertex fields; at most {MAX_VERTICES}")
    verts = _vertices(g, boxes, n, nz, enc)
    return TaylorModel(n, tuple(atoms), tuple(verts), tuple(bounds), walk.d, enc)
