"""Schemas for Lyapunov's indirect method over parameter ranges (scope ``range``).

``range-indirect-method-stability``: the claim's equilibrium is a point for
every value ``p`` of the uncertain parameters in their box, written
``x_i = a_i(p) + b_i(p) r`` with ``r = sqrt(g(p)) >= 0`` (the ``moving``
structure; ``g`` is the radicand, absent when there is no square root). The
audit checks ``f(x(p), p) = 0`` identically in ``Q[p][r]/(r^2 - g)``, recomputes
the Jacobian and ``det(sI - J(p))`` in that ring (Faddeev–LeVerrier: divisions
by integers only), then the Hurwitz conditions ``Delta_1 .. Delta_{n-1}`` (leading
minors of the Hurwitz matrix, Laplace expansion: no division) and ``a_n``. The
evidence lists sub-boxes with a sign for each condition; for each sub-box the
audit recomputes the Bernstein coefficients (Garloff 1986) of every signed
condition and checks they all have that sign strictly, so the condition has that
sign on the whole closed sub-box; with ``r`` it checks the stated enclosure
``[r_lo, r_hi]`` from ``r_lo >= 0`` and the radicand's Bernstein bounds
``r_lo^2 <= g <= r_hi^2`` (so ``g >= 0`` and the point is real on the box). The
sub-boxes must tile the box: each lies inside it, their interiors are pairwise
disjoint and their volumes add up to its volume (a closed union of full volume
is the whole box). The first column of the Routh array is ``1, Delta_1,
Delta_2/Delta_1, ..., a_n Delta_{n-1}/Delta_{n-1}``: all conditions positive on
every sub-box means every root has negative real part for every ``p``
(stability); ``a_n < 0``, or all signs fixed with a sign change in that column,
means a root with positive real part (instability, ``range-indirect-method-
instability``). Optional ``margins`` are covers of a wider interval of one
parameter with the others at nominal, checked the same way.

Refutation at one value (``indirect-method-*-at-a-value``): a rational ``p*`` in
the box, the radical's value ``r* = c sqrt(d)`` with ``c^2 d = g(p*)``, and the
equilibrium there; the audit substitutes ``p*`` exactly and checks the Routh
array of ``(s+1)^k q(s + h)`` as Lyapunov's indirect method requires.

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, and never use floating point.
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from fractions import Fraction
from itertools import pairwise, product
from math import comb
from typing import Any

from proofkit.audit.algebra import (
    poly_eval,
)
from proofkit.audit.numbers import FormatError, Num
from proofkit.audit.read import (
    get,
    only_keys,
    read_poly,
    read_vector,
)
from proofkit.audit.schemas import Checks, ClaimData, ModelData, require, schema

__all__ = [
    "MAX_BERNSTEIN",
    "MAX_BOXES",
    "METHOD",
    "bernstein",
    "range_stable",
    "range_unstable",
]

METHOD = "range-linearization"
MAX_BOXES = 5000  # sub-boxes of one cover
MAX_WORK_TERMS = 20000  # terms of any polynomial the audit forms in the parameters
MAX_BERNSTEIN = 2_000_000  # Bernstein coefficients computed for one cover
MAX_STATES = 8  # the Hurwitz minors are expanded without division
MAX_POWER = 4
Q = dict[tuple[int, ...], Fraction]  # a polynomial over (parameters..., r)
Box = list[tuple[Fraction, Fraction]]


# --- polynomials over the parameters and the radical ---------------------------------
def _add(p: Q, q: Q, k: Fraction = Fraction(1)) -> Q:
    out = dict(p)
    for e, c in q.items():
        out[e] = out.get(e, Fraction(0)) + k * c
    return {e: c for e, c in out.items() if c}


def _mul(p: Q, q: Q, g: Q | None) -> Q:
    """``p q`` reduced mod ``r^2 - g`` (``r`` is the last variable when ``g`` is given)."""
    out: Q = {}
    for e1, c1 in p.items():
        for e2, c2 in q.items():
            e = tuple(a + b for a, b in zip(e1, e2, strict=True))
            out[e] = out.get(e, Fraction(0)) + c1 * c2
    require(len(out) <= MAX_WORK_TERMS, "size", f"more than {MAX_WORK_TERMS} terms in a product")
    return _reduce({e: c for e, c in out.items() if c}, g)


def _reduce(p: Q, g: Q | None) -> Q:
    if g is None or all(e[-1] <= 1 for e in p):
        return p
    out: Q = {}
    for e, c in p.items():
        term: Q = {(*e[:-1], e[-1] % 2): c}
        for _ in range(e[-1] // 2):
            term = _mul(term, g, None)
        out = _add(out, term)
    return out


def _derivative(p: Q, i: int) -> Q:
    return {(*e[:i], e[i] - 1, *e[i + 1 :]): c * e[i] for e, c in p.items() if e[i]}


def _const(c: Fraction, nv: int) -> Q:
    return {(0,) * nv: c} if c else {}


def _rational(p: dict[tuple[int, ...], Num], where: str) -> Q:
    out = {}
    for e, c in p.items():
        require(c.b == 0, "field", f"{where}: coefficients must be rational")
        out[e] = c.a
    return out


def _value(p: Q, point: Sequence[Num]) -> Num:
    return poly_eval({e: Num.of(c) for e, c in p.items()}, point)


# --- the system: point, field, characteristic polynomial, Hurwitz conditions -------------
class _System:
    """The claim's equilibrium as polynomials in (parameters, r) and its linearization."""

    def __init__(self, model: ModelData, claim: ClaimData, sigma: int | None = None) -> None:
        require(model.numerators is not None, "field", "the certificate states no vector field")
        require(
            sigma is None or model.denominators is not None,
            "field",
            "denominator_sign is given but the field is polynomial",
        )
        self.sigma = sigma
        self.dens = [_rational(d, "denominator") for d in model.denominators or ()]
        self.defined = [_rational(g, "condition") for g, _strict in model.conditions]
        self.n, self.m = len(model.states), len(model.uncertain)
        require(1 <= self.n <= MAX_STATES, "size", f"at most {MAX_STATES} states here")
        self.params = [p.name for p in model.uncertain]
        self.box: Box = [p.range for p in model.uncertain if p.range is not None]
        self.nominal = [p.nominal for p in model.uncertain]
        self.g, coords = self._point(claim)
        self.nv = self.m + (1 if self.g is not None else 0)
        self.coords = [_reduce(c, self.g) for c in coords]
        self.field = [_rational(f, "field") for f in model.numerators or ()]

    def _point(self, claim: ClaimData) -> tuple[Q | None, list[Q]]:
        w = f"{claim.where}.claim.equilibrium"
        m = self.m
        if claim.moving is None:
            require(claim.point is not None, "equilibrium", "the claim states no point")
            pts = claim.point or ()
            if claim.d == 0:
                return None, [_const(x.a, m) for x in pts]
            g = _const(Fraction(claim.d), m + 1)
            return g, [_add(_const(x.a, m + 1), {(0,) * m + (1,): x.b}) for x in pts]
        mv = claim.moving
        only_keys(mv, {"coordinates", "radicand"}, f"{w}.moving")
        g = None
        if mv.get("radicand") is not None:
            raw = read_poly(mv["radicand"], m, 0, f"{w}.moving.radicand")
            g = {(*e, 0): c.a for e, c in raw.items()}
        nv = m + (g is not None)
        data = get(mv, "coordinates", list, f"{w}.moving")
        if len(data) != self.n:
            raise FormatError(f"{w}.moving.coordinates: one polynomial per state")
        return g, [
            _rational(read_poly(c, nv, 0, f"{w}.moving.coordinates[{i}]"), "point")
            for i, c in enumerate(data)
        ]

    def substitute(self, f: dict[tuple[int, ...], Any]) -> Q:
        """``f(x(p), p)`` for a polynomial over (states, parameters)."""
        n, nv = self.n, self.nv
        powers: dict[tuple[int, int], Q] = {}

        def power(i: int, k: int) -> Q:
            if (i, k) not in powers:
                powers[i, k] = (
                    _const(Fraction(1), nv)
                    if k == 0
                    else _mul(power(i, k - 1), self.coords[i], self.g)
                )
            return powers[i, k]

        out: Q = {}
        for e, c in f.items():
            term: Q = {(*e[n:], *([0] * (nv - self.m))): c}
            for i in range(n):
                if e[i]:
                    term = _mul(term, power(i, e[i]), self.g)
            out = _add(out, term)
        return out

    def _scales(self) -> tuple[list[Q], list[Q]]:
        """Row factors ``sigma Q / D_i`` at the point, and the conditions that must be
        positive there: ``sigma Q`` (rational fields) and the field's own conditions.

        ``Q`` is the product of the distinct denominators. Where ``sigma Q > 0`` the
        Jacobian of ``N / D`` at a zero of ``N`` is ``B / (sigma Q)`` with ``B_ij =
        (sigma Q / D_i) dN_i/dx_j``: the eigenvalues of J and B lie in the same half plane.
        """
        one = _const(Fraction(1), self.nv)
        defined = [self.substitute(c) for c in self.defined]
        if self.sigma is None:
            return [one] * self.n, defined
        distinct: list[Q] = []
        for d in self.dens:
            if d not in distinct:
                distinct.append(d)
        at = [self.substitute(d) for d in distinct]
        sign = _const(Fraction(self.sigma), self.nv)
        rows = []
        for d in self.dens:
            row = sign
            for k, other in enumerate(distinct):
                if other != d:
                    row = _mul(row, at[k], self.g)
            rows.append(row)
        q = sign
        for a in at:
            q = _mul(q, a, self.g)
        return rows, [q, *defined]

    def linearization(self) -> tuple[list[Q], list[Q]]:
        """(characteristic polynomial, conditions), after checking the equilibrium.

        The conditions are those that must be positive (see :meth:`_scales`), then
        the Hurwitz conditions of ``det(sI - B)``.
        """
        for i, f in enumerate(self.field):
            require(
                not self.substitute(f),
                "equilibrium",
                f"f{i + 1} does not vanish at the point for every parameter value",
            )
        n, g = self.n, self.g
        require(
            self.sigma is not None or not self.dens,
            "field",
            "a rational field needs denominator_sign (+1 or -1)",
        )
        rows, positive = self._scales()
        jac = [
            [_mul(rows[i], self.substitute(_derivative(f, j)), g) for j in range(n)]
            for i, f in enumerate(self.field)
        ]
        one = _const(Fraction(1), self.nv)
        mat = [[one if i == j else {} for j in range(n)] for i in range(n)]
        cp = [one]
        for k in range(1, n + 1):  # Faddeev–LeVerrier: c_k = -tr(A M_k)/k, M_{k+1} = A M_k + c_k I
            am = [
                [_sum([_mul(jac[i][t], mat[t][j], g) for t in range(n)]) for j in range(n)]
                for i in range(n)
            ]
            c = {e: -v / k for e, v in _sum([am[i][i] for i in range(n)]).items()}
            cp.append(c)
            mat = [[_add(am[i][j], c) if i == j else am[i][j] for j in range(n)] for i in range(n)]
        self.lead = len(positive)
        return cp, [*positive, *(_minor(cp, k, g) for k in range(1, n)), cp[n]]


def _sum(items: list[Q]) -> Q:
    out: Q = {}
    for q in items:
        out = _add(out, q)
    return out


def _minor(cp: list[Q], k: int, g: Q | None) -> Q:
    """Delta_k: the leading k x k minor of the Hurwitz matrix H_ij = a_{2j-i} (Laplace)."""
    n = len(cp) - 1
    memo: dict[tuple[int, frozenset[int]], Q] = {}

    def entry(i: int, j: int) -> Q:
        idx = 2 * (j + 1) - (i + 1)
        return cp[idx] if 0 <= idx <= n else {}

    def det(row: int, cols: frozenset[int]) -> Q:
        if row == k:
            return _const(Fraction(1), len(next(iter(cp[0]))))
        if (row, cols) not in memo:
            total: Q = {}
            for pos, c in enumerate(sorted(cols)):
                e = entry(row, c)
                if e:
                    sign = Fraction(-1 if pos % 2 else 1)
                    total = _add(total, _mul(e, det(row + 1, cols - {c}), g), sign)
            memo[row, cols] = total
        return memo[row, cols]

    return det(0, frozenset(range(k)))


# --- Bernstein coefficients and covers --------------------------------------------------
def bernstein(p: Q, box: Sequence[tuple[Fraction, Fraction]]) -> list[Fraction]:
    """Bernstein coefficients of ``p`` on ``box`` for the degrees of ``p`` in each variable."""
    nv = len(box)
    degs = [max((e[i] for e in p), default=0) for i in range(nv)]
    grid: dict[tuple[int, ...], Fraction] = {}
    for e, c in p.items():  # p(lo + w t), term by term with the binomial theorem
        parts = []
        for i in range(nv):
            lo, hi = box[i]
            w = hi - lo
            parts.append([(j, comb(e[i], j) * lo ** (e[i] - j) * w**j) for j in range(e[i] + 1)])
        for combo in product(*parts):
            key = tuple(j for j, _ in combo)
            v = c
            for _, f in combo:
                v *= f
            grid[key] = grid.get(key, Fraction(0)) + v
    for axis, d in enumerate(degs):  # b_I = sum_{J <= I} prod C(I, J) / C(d, J) a_J
        new: dict[tuple[int, ...], Fraction] = {}
        for key, c in grid.items():
            j = key[axis]
            for i in range(j, d + 1):
                k2 = (*key[:axis], i, *key[axis + 1 :])
                new[k2] = new.get(k2, Fraction(0)) + c * comb(i, j) / comb(d, j)
        grid = new
    size = 1
    for d in degs:
        size *= d + 1
    return [*grid.values(), *([Fraction(0)] if len(grid) < size else [])]


def _grid_size(p: Q, nv: int) -> int:
    size = 1
    for i in range(nv):
        size *= 1 + max((e[i] for e in p), default=0)
    return size


def tiles(boxes: list[Box], full: Box) -> bool:
    """The closed boxes lie in ``full``, have disjoint interiors and full total volume."""
    axes = [i for i, (lo, hi) in enumerate(full) if hi > lo]

    def volume(b: Box) -> Fraction:
        v = Fraction(1)
        for i in axes:
            v *= b[i][1] - b[i][0]
        return v

    for b in boxes:
        for (lo, hi), (flo, fhi) in zip(b, full, strict=True):
            if not flo <= lo <= hi <= fhi:
                return False
    if sum((volume(b) for b in boxes), Fraction(0)) != volume(full):
        return False
    if not axes:
        return bool(boxes)
    k = axes[0]
    order = sorted(range(len(boxes)), key=lambda i: boxes[i][k][0])
    active: list[int] = []
    for i in order:
        b = boxes[i]
        active = [j for j in active if boxes[j][k][1] > b[k][0]]
        for j in active:
            if all(boxes[j][a][0] < b[a][1] and b[a][0] < boxes[j][a][1] for a in axes):
                return False
        active.append(i)
    return True


def _first_column_changes(signs: Sequence[int]) -> int:
    """Sign changes of the Routh first column ``1, D1, D2/D1, ..., D_{n-1}/D_{n-2}, a_n``
    (``D_n / D_{n-1} = a_n``) from the signs of ``D1 .. D_{n-1}, a_n``."""
    ratios = [signs[k] * signs[k - 1] for k in range(1, len(signs) - 1)]
    first = [1, signs[0], *ratios, *(signs[-1:] if len(signs) > 1 else [])]
    return sum(1 for a, b in pairwise(first) if a != b)


def _read_box(data: Any, nv: int, where: str) -> Box:
    if not isinstance(data, list) or len(data) != nv:
        raise FormatError(f"{where}: expected {nv} intervals [lo, hi]")
    out = []
    for i, iv in enumerate(data):
        lo, hi = read_vector(iv, 0, f"{where}[{i}]", 2)
        require(lo.a <= hi.a, "cover", f"{where}[{i}]: empty interval")
        out.append((lo.a, hi.a))
    return out


def _check_cover(
    sys: _System, conds: list[Q], g: Q | None, full: Box, data: Any, good: Callable, where: str
) -> int:
    """Every sub-box proves its signs; the sub-boxes tile ``full`` (parameters only)."""
    if not isinstance(data, list) or not data or len(data) > MAX_BOXES:
        raise FormatError(f"{where}: expected 1 to {MAX_BOXES} sub-boxes")
    work = len(data) * sum(_grid_size(c, sys.nv) for c in [*conds, g or {}])
    require(work <= MAX_BERNSTEIN, "size", f"{work} Bernstein coefficients exceed {MAX_BERNSTEIN}")
    boxes = []
    for k, item in enumerate(data):
        w = f"{where}[{k}]"
        only_keys(item, {"box", "signs"}, w)
        box = _read_box(get(item, "box", list, w), sys.nv, f"{w}.box")
        signs = get(item, "signs", list, w)
        if len(signs) != len(conds) or not all(
            s in (-1, 0, 1) and s is not True and s is not False for s in signs
        ):
            raise FormatError(f"{w}.signs: one of -1, 0, 1 per condition")
        require(good(signs), "cover", f"sub-box {k + 1}: the signs {signs} do not give the claim")
        if g is not None:
            rlo, rhi = box[-1]
            gb = bernstein(g, box)
            require(
                rlo >= 0 and rlo * rlo <= min(gb) and max(gb) <= rhi * rhi,
                "radical",
                f"sub-box {k + 1}: [{rlo}, {rhi}] does not enclose sqrt(g) there",
            )
        for c, s in zip(conds, signs, strict=True):
            if s:
                require(
                    all(s * b > 0 for b in bernstein(c, box)),
                    "cover",
                    f"sub-box {k + 1}: a Bernstein coefficient has the wrong sign",
                )
        boxes.append(box[: sys.m])
    require(tiles(boxes, full), "cover", "the sub-boxes do not tile the parameter box")
    return len(boxes)


def _boxes(count: int) -> str:
    return "1 sub-box" if count == 1 else f"{count} sub-boxes"


def _good(kind: str, lead: int) -> Callable[[Sequence[int]], bool]:
    """The claim's signs; the first ``lead`` conditions (where f is defined) positive."""
    if kind == "stable":
        return lambda s: all(v == 1 for v in s)

    def unstable(s: Sequence[int]) -> bool:
        h = s[lead:]
        return all(v == 1 for v in s[:lead]) and (
            h[-1] == -1 or (all(h) and _first_column_changes(h) >= 1)
        )

    return unstable


def _check_range(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    ev, w = claim.evidence, f"{claim.where}.evidence"
    keys = {"variables", "characteristic_polynomial", "conditions", "cover", "margins"}
    only_keys(ev, keys | {"denominator_sign"}, w)
    if claim.moving is not None:
        require(claim.d == 0, "number field", "a moving point carries its radical itself")
    sigma = ev.get("denominator_sign")
    if sigma not in (None, 1, -1) or isinstance(sigma, bool):
        raise FormatError(f"{w}.denominator_sign: +1 or -1")
    sys = _System(model, claim, sigma)
    names = get(ev, "variables", list, w)
    ok = (
        len(names) == sys.nv
        and names[: sys.m] == sys.params
        and all(isinstance(v, str) and v.isidentifier() for v in names)
    )
    require(
        ok and len(set(names)) == len(names) and not set(names) & set(model.states),
        "variables",
        "the variables must be the uncertain parameters, then the radical",
    )
    cp, conds = sys.linearization()
    ranges = " and ".join(
        f"{p} in [{lo}, {hi}]" for p, (lo, hi) in zip(sys.params, sys.box, strict=True)
    )
    checks.ok(
        f"the point is an exact zero of the field for every {ranges}"
        + (" (in Q[p][r]/(r^2 - g))" if sys.g is not None else "")
    )
    stated = [
        read_poly(c, sys.nv, 0, f"{w}.characteristic_polynomial[{i}]")
        for i, c in enumerate(get(ev, "characteristic_polynomial", list, w))
    ]
    require(
        [_rational(c, "cp") for c in stated] == cp,
        "characteristic polynomial",
        "differs from det(sI - J(p)) recomputed over the parameters",
    )
    stated = [
        read_poly(c, sys.nv, 0, f"{w}.conditions[{i}]")
        for i, c in enumerate(get(ev, "conditions", list, w))
    ]
    require(
        [_rational(c, "conditions") for c in stated] == conds,
        "hurwitz",
        "the stated Hurwitz conditions differ from the recomputed ones",
    )
    names = [*(f"Delta_{k}" for k in range(1, sys.n)), f"a_{sys.n}"]
    if sys.sigma is not None:
        checks.ok(
            "rational field N/D: with Q the product of the distinct denominators and "
            f"sigma = {sys.sigma}, J = B / (sigma Q) where B_ij = (sigma Q / D_i) dN_i/dx_j; "
            "sigma Q and the field's conditions at the point are required positive, so J and "
            "B have their eigenvalues in the same half plane"
        )
    elif sys.defined:
        checks.ok("the field's conditions at the point are required positive")
    checks.ok(
        f"det(sI - {'B' if sys.sigma else 'J'}) and the Hurwitz conditions {', '.join(names)} "
        "recomputed as polynomials in the parameters"
    )
    good = _good(claim.kind, sys.lead)
    count = _check_cover(sys, conds, sys.g, sys.box, ev.get("cover"), good, f"{w}.cover")
    what = (
        "every condition is positive"
        if claim.kind == "stable"
        else "the Routh first column has a fixed sign change (or a_n < 0)"
    )
    checks.ok(
        f"the parameter box is the union of {_boxes(count)} with disjoint interiors; on each, "
        "by exact Bernstein "
        f"coefficients, {what}" + (" and sqrt(g) is real" if sys.g is not None else "")
    )
    margins = get(ev, "margins", list, w)  # one per parameter, in order; null: none found
    if len(margins) != sys.m:
        raise FormatError(f"{w}.margins: one entry (or null) per uncertain parameter")
    for k, mg in enumerate(margins):
        if mg is not None:
            _check_margin(sys, conds, mg, good, checks, f"{w}.margins[{k}]", k)


def _check_margin(
    sys: _System, conds: list[Q], data: Any, good: Callable, checks: Checks, where: str, j: int
) -> None:
    only_keys(data, {"parameter", "range", "cover"}, where)
    name = get(data, "parameter", str, where)
    require(name == sys.params[j], "margin", f"margin {j + 1} must be about {sys.params[j]}")
    lo, hi = (x.a for x in read_vector(get(data, "range", list, where), 0, f"{where}.range", 2))
    require(lo <= sys.nominal[j] <= hi, "margin", "the margin must contain the nominal value")
    full = [(v, v) for v in sys.nominal]
    full[j] = (lo, hi)
    count = _check_cover(sys, conds, sys.g, full, data.get("cover"), good, f"{where}.cover")
    checks.ok(
        f"stability margin: the same holds for {name} in [{lo}, {hi}] with the other "
        f"parameters at nominal ({_boxes(count)})"
    )


@schema("stable", METHOD, "range-indirect-method-stability", scopes=("range",))
def range_stable(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """Hypothesis: Delta_1..Delta_{n-1} and a_n are positive on the whole parameter box."""
    _check_range(model, claim, checks)
    checks.ok("so every root of det(sI - J(p)) has negative real part for every p in the box")


@schema("unstable", METHOD, "range-indirect-method-instability", scopes=("range",))
def range_unstable(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """Hypothesis: on every sub-box a root with positive real part is shown by the signs."""
    _check_range(model, claim, checks)
    checks.ok("so det(sI - J(p)) has a root with positive real part for every p in the box")


# Refutation at one parameter value, and Lyapunov functions over the ranges (sums of
# squares with box multipliers), live in helper modules; importing them registers their
# schemas alongside these.
from proofkit.audit import _ranges_lyapunov, _ranges_value  # noqa: E402, F401
