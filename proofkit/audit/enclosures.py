"""Schemas for the linearization of rational and non-polynomial fields at a rational point.

Two methods, both nominal evidence (they prove nominal-scope claims and refute
claims of either scope, like :mod:`proofkit.audit.linear`):

``linearization-rational`` (theorems ``indirect-method-stability`` /
``-instability``): the field is ``N_i / D_i`` (``model.field.numerators`` and
``denominators``). At the claim's rational point the audit checks
``D_i(x*) != 0`` and ``N_i(x*) = 0`` exactly; there ``df_i/dx = (dN_i/dx) /
D_i(x*)``, which is the Jacobian of the polynomial field ``N_i / D_i(x*)``,
so the exact Routh (and Lyapunov) checks of :mod:`proofkit.audit.linear` run
on that polynomial field.

``linearization-enclosure`` (theorems ``indirect-method-stability-by-enclosure``
/ ``indirect-method-instability-by-enclosure``): the field is given as
expression trees (``model.expressions``, with ``sin cos tan exp log sqrt tanh``
and ``pi``). The evidence states a rational box ``X`` holding the claim's
point, a rational preconditioner ``Y`` and an enclosure of the Jacobian over
``X`` whose bounds lie on the grid ``2^-precision``. The audit re-computes, in
its own rational interval arithmetic (:mod:`proofkit.audit._intervals`):
the Krawczyk operator ``K = m - Y f(m) + (I - Y J(X))(X - m)`` and requires
``K`` strictly inside ``X`` (so ``X`` holds exactly one zero of ``f``, and the
field is defined on all of ``X``); its own enclosure of ``J(X)`` and requires
the stated one to contain it; the characteristic polynomial and the Routh
first column over the stated enclosure, and requires every sign to be decided.
Then every Jacobian at a point of ``X`` (in particular at the one
equilibrium in ``X``) has that many roots in the right half plane.

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, and never use floating point.
"""

from __future__ import annotations

import itertools
from fractions import Fraction
from typing import Any

from proofkit.audit._intervals import (
    Dual,
    Interval,
    Undefined,
    d_add,
    d_apply,
    d_mul,
    d_pow,
    d_round,
    iv_add,
    iv_div,
    iv_mul,
    iv_neg,
    iv_pow,
    pi_interval,
    point,
)
from proofkit.audit.algebra import Poly, poly_constant, poly_eval, poly_scale, poly_substitute, tick
from proofkit.audit.linear import linear_stable, linear_unstable
from proofkit.audit.numbers import FormatError, Num
from proofkit.audit.read import get, only_keys, read_number
from proofkit.audit.schemas import Checks, ClaimData, ModelData, Rejected, require, schema

__all__ = [
    "FUNCTIONS",
    "MAX_NODES",
    "MAX_PRECISION",
    "evaluate",
    "jacobian_enclosure",
    "read_expressions",
    "read_point",
]

FUNCTIONS = ("sin", "cos", "tan", "exp", "log", "sqrt", "tanh")
MAX_NODES = 4000  # nodes of all expression trees of one field
MAX_DEPTH = 200
MAX_POWER = 64
MAX_PRECISION = 512  # bits of the grid of stated bounds
MAX_STATES = 8
GUARD = 48  # the audit computes 48 bits finer than the stated grid
BOTH = ("nominal", "range")
Expr = tuple[Any, ...]


# --- reading expression trees ---------------------------------------------------------
def _read_expr(data: Any, nvars: int, where: str, count: list[int], depth: int) -> Expr:
    count[0] += 1
    if count[0] > MAX_NODES or depth > MAX_DEPTH:
        raise FormatError(f"{where}: more than {MAX_NODES} nodes or deeper than {MAX_DEPTH}")
    if isinstance(data, str):
        return ("c", read_number(data, 0, where).a)
    if not isinstance(data, list) or not data or not isinstance(data[0], str):
        raise FormatError(f"{where}: an expression is a number or [operator, arguments...]")
    op, args = data[0], data[1:]
    if op == "var":
        ok = len(args) == 1 and isinstance(args[0], int) and not isinstance(args[0], bool)
        if not ok or not 0 <= args[0] < nvars:
            raise FormatError(f"{where}: ['var', i] with 0 <= i < {nvars}")
        return ("var", args[0])
    if op == "pi" and not args:
        return ("pi",)
    if op == "^":
        k = args[1] if len(args) == 2 else None
        if not isinstance(k, int) or isinstance(k, bool) or abs(k) > MAX_POWER:
            raise FormatError(f"{where}: ['^', base, k] with an integer |k| <= {MAX_POWER}")
        return ("^", _read_expr(args[0], nvars, f"{where}[1]", count, depth + 1), k)
    if op in ("+", "*") and args:
        return (
            op,
            *(
                _read_expr(a, nvars, f"{where}[{i + 1}]", count, depth + 1)
                for i, a in enumerate(args)
            ),
        )
    if op in FUNCTIONS and len(args) == 1:
        return (op, _read_expr(args[0], nvars, f"{where}[1]", count, depth + 1))
    raise FormatError(f"{where}: unknown operator {str(op)[:20]!r} or wrong number of arguments")


def read_expressions(data: Any, states: list[str], uncertain: list[str]) -> tuple[Expr, ...]:
    """``model.expressions``: ``{"variables": [...], "components": [EXPR, one per state]}``."""
    w = "model.expressions"
    only_keys(data, {"variables", "components"}, w)
    variables = get(data, "variables", list, w)
    if variables != [*states, *uncertain]:
        raise FormatError(f"{w}.variables: expected the states, then the uncertain parameters")
    comps = get(data, "components", list, w)
    if len(comps) != len(states):
        raise FormatError(f"{w}.components: one expression per state")
    count = [0]
    return tuple(
        _read_expr(c, len(variables), f"{w}.components[{i}]", count, 0) for i, c in enumerate(comps)
    )


def read_point(data: Any, n: int, where: str) -> tuple[Expr, ...]:
    """A point given exactly by constant expression trees (``pi/3``), one per state."""
    if not isinstance(data, list) or len(data) != n:
        raise FormatError(f"{where}: expected {n} constant expressions")
    count = [0]
    return tuple(_read_expr(e, 0, f"{where}[{i}]", count, 0) for i, e in enumerate(data))


def _point_enclosure(claim: ClaimData, bits: int) -> list[Interval]:
    """The claim's point: a rational one exactly, an exact one (pi/3) by enclosure."""
    if claim.point is not None:
        require(claim.d == 0, "equilibrium", "needs a rational point or an exact point")
        return [point(c.a) for c in claim.point]
    require(claim.exact is not None, "equilibrium", "the claim states no point")
    try:
        return [evaluate(e, [Dual(point(Fraction(0)), ())], bits).v for e in claim.exact or ()]
    except Undefined as exc:
        raise Rejected("equilibrium", f"the exact point is not defined: {exc}") from None


# --- evaluating with derivatives ------------------------------------------------------
def evaluate(expr: Expr, xs: list[Dual], bits: int) -> Dual:
    """Value and partial derivatives of ``expr`` over the interval arguments ``xs``."""
    tick()
    zero = tuple(point(Fraction(0)) for _ in xs[0].d)
    op = expr[0]
    if op == "c":
        return Dual(point(expr[1]), zero)
    if op == "var":
        return xs[expr[1]]
    if op == "pi":
        return Dual(pi_interval(bits), zero)
    if op == "^":
        return d_round(d_pow(evaluate(expr[1], xs, bits), expr[2]), bits)
    if op in ("+", "*"):
        acc = evaluate(expr[1], xs, bits)
        for e in expr[2:]:
            b = evaluate(e, xs, bits)
            acc = d_add(acc, b) if op == "+" else d_mul(acc, b)
            acc = d_round(acc, bits)
        return acc
    return d_round(d_apply(op, evaluate(expr[1], xs, bits), bits), bits)


def _inputs(
    box: list[Interval], model: ModelData, params: list[Interval] | None = None
) -> list[Dual]:
    n = len(box)
    unit = [tuple(point(Fraction(int(i == j))) for j in range(n)) for i in range(n)]
    xs = [Dual(b, unit[i]) for i, b in enumerate(box)]
    if params is not None:  # the uncertain parameters over intervals (no derivative)
        require(len(params) == len(model.uncertain), "parameters", "one interval each")
        return xs + [Dual(p, tuple(point(Fraction(0)) for _ in box)) for p in params]
    for p in model.uncertain:
        require(p.nominal is not None, "field", f"the nominal value of {p.name} is not rational")
        xs.append(Dual(point(p.nominal or Fraction(0)), tuple(point(Fraction(0)) for _ in box)))
    return xs


def jacobian_enclosure(
    model: ModelData, box: list[Interval], bits: int, params: list[Interval] | None = None
) -> tuple[list[Interval], list[list[Interval]]]:
    """Enclosures of ``f`` and of ``df/dx`` over ``box`` (nominal parameter values, or the
    uncertain parameters over the intervals ``params``)."""
    exprs = model_expressions(model)
    try:
        duals = [evaluate(e, _inputs(box, model, params), bits) for e in exprs]
    except Undefined as exc:
        raise Rejected("definedness", f"the field cannot be enclosed on the box: {exc}") from None
    return [d.v for d in duals], [list(d.d) for d in duals]


def model_expressions(model: ModelData) -> tuple[Expr, ...]:
    exprs = getattr(model, "expressions", None)
    require(bool(exprs), "field", "the certificate states no expression trees of the field")
    return tuple(exprs or ())


# --- rational fields: exact ----------------------------------------------------------------
def _polynomial_view(model: ModelData, claim: ClaimData, checks: Checks) -> ModelData:
    """The polynomial field N_i / D_i(x*) that has the same zero and Jacobian at x*."""
    require(model.numerators is not None, "field", "the certificate states no vector field")
    require(model.denominators is not None, "field", "the field has no denominators")
    require(claim.point is not None and claim.d == 0, "equilibrium", "needs a rational point")
    n = len(model.states)
    values = [{tuple(int(i == j) for j in range(n)): Num.of(1)} for i in range(n)]
    unknown = [p.name for p in model.uncertain if p.nominal is None]
    require(not unknown, "field", f"the nominal value of {unknown} is not rational")
    values += [poly_constant(Num.of(p.nominal or 0), n) for p in model.uncertain]
    x = list(claim.point or ())
    nums: list[Poly] = []
    conditions = tuple((poly_substitute(g, values, n), s) for g, s in model.conditions)
    for i, (num, den) in enumerate(
        zip(model.numerators or (), model.denominators or (), strict=True)
    ):
        dval = poly_eval(poly_substitute(den, values, n), x)
        require(not dval.is_zero(), "definedness", f"denominator {i + 1} is 0 at the point")
        nums.append(poly_scale(poly_substitute(num, values, n), Num.of(1) / dval))
    checks.ok("every denominator is nonzero at the point (exact), so the field is defined near it")
    return ModelData(  # the linear schema checks the conditions strictly at the point
        model.states, (), model.states, tuple(nums), None, conditions, model.domain,
        model.equilibria,
    )  # fmt: skip


@schema("stable", "linearization-rational", "indirect-method-stability")
@schema(
    "unstable", "linearization-rational", "indirect-method-stability", scopes=BOTH, refutes=True
)
def rational_stable(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """Routh–Hurwitz on the exact Jacobian of N/D at the point."""
    linear_stable(_polynomial_view(model, claim, checks), claim, checks)


@schema("unstable", "linearization-rational", "indirect-method-instability")
@schema(
    "stable", "linearization-rational", "indirect-method-instability", scopes=BOTH, refutes=True
)
def rational_unstable(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """Routh's count of right-half-plane roots of the exact Jacobian of N/D at the point."""
    linear_unstable(_polynomial_view(model, claim, checks), claim, checks)


# --- elementary functions: enclosures ------------------------------------------------------
def _interval_char_poly(a: list[list[Interval]]) -> list[Interval]:
    """Enclosures of the coefficients of det(sI - A), highest first (Faddeev–LeVerrier)."""
    n = len(a)
    zero, one = point(Fraction(0)), point(Fraction(1))
    coeffs = [one]
    m = [[zero] * n for _ in range(n)]
    for k in range(1, n + 1):
        c_prev = coeffs[-1]
        m = [
            [iv_add(_dot(a[i], [r[j] for r in m]), c_prev if i == j else zero) for j in range(n)]
            for i in range(n)
        ]
        am = [[_dot(a[i], [r[j] for r in m]) for j in range(n)] for i in range(n)]
        tr = zero
        for i in range(n):
            tr = iv_add(tr, am[i][i])
        coeffs.append(iv_mul(point(Fraction(-1, k)), tr))
    return coeffs


def _dot(u: list[Interval], v: list[Interval]) -> Interval:
    acc = point(Fraction(0))
    for x, y in zip(u, v, strict=True):
        acc = iv_add(acc, iv_mul(x, y))
    return acc


def _sign(a: Interval) -> int:
    return 1 if a[0] > 0 else -1 if a[1] < 0 else 0


def _interval_routh(coeffs: list[Interval]) -> list[int]:
    """Signs of the Routh first column over coefficient enclosures; 0 where undecided."""
    width = len(coeffs) // 2 + 1
    zero = point(Fraction(0))
    rows = [coeffs[0::2], coeffs[1::2]]
    rows = [r + [zero] * (width - len(r)) for r in rows]
    while len(rows) < len(coeffs):
        tick()
        r0, r1 = rows[-2], rows[-1]
        if _sign(r1[0]) == 0:
            return [_sign(r[0]) for r in rows] + [0] * (len(coeffs) - len(rows))
        nxt = [
            iv_div(iv_add(iv_mul(r1[0], r0[j + 1]), iv_neg(iv_mul(r0[0], r1[j + 1]))), r1[0])
            for j in range(width - 1)
        ] + [zero]
        rows.append(nxt)
    return [_sign(r[0]) for r in rows]


def _read_interval(data: Any, grid: int | None, where: str) -> Interval:
    if not isinstance(data, list) or len(data) != 2:
        raise FormatError(f"{where}: expected [low, high]")
    lo, hi = (read_number(x, 0, f"{where}[{i}]").a for i, x in enumerate(data))
    if lo > hi:
        raise FormatError(f"{where}: low > high")
    if grid is not None and any((v * 2**grid).denominator != 1 for v in (lo, hi)):
        raise FormatError(f"{where}: bounds must be multiples of 2^-{grid}")
    return lo, hi


def _conditions_on_box(
    model: ModelData, box: list[Interval], params: list[Interval] | None = None
) -> None:
    """Every condition where the field is defined holds on all of the box (interval bound);
    the uncertain parameters at nominal, or over ``params``."""
    if params is not None:
        box = [*box, *params]
    n = len(box)
    values = [{tuple(int(i == j) for j in range(n)): Num.of(1)} for i in range(n)]
    if params is None:
        values += [poly_constant(Num.of(p.nominal or 0), n) for p in model.uncertain]
    for k, (g, strict) in enumerate(model.conditions):
        acc = point(Fraction(0))
        if len(model.variables) != len(values):  # no field variables: constant conditions
            require(all(not any(e) for e in g), "definedness", "a condition has no variables")
            g = {tuple(0 for _ in range(len(values))): c for c in g.values()}
        for e, c in poly_substitute(g, values, n).items():
            term = point(c.a)
            for x, power in zip(box, e, strict=True):
                term = iv_mul(term, iv_pow(x, power)) if power else term
            acc = iv_add(acc, term)
        ok = acc[0] > 0 if strict else acc[0] >= 0
        require(ok, "definedness", f"condition {k + 1} where the field is defined may fail in X")


def _krawczyk(
    model: ModelData,
    box: list[Interval],
    y: list[list[Fraction]],
    bits: int,
    params: list[Interval] | None = None,
) -> None:
    """K(X) strictly inside X: exactly one zero of f in X (Krawczyk 1969, Moore 1977); with
    ``params``, K(X, P) inside X gives exactly one zero in X for every p in P."""
    n = len(box)
    mid = [(lo + hi) / 2 for lo, hi in box]
    fm, _ = jacobian_enclosure(model, [point(m) for m in mid], bits, params)
    _, jx = jacobian_enclosure(model, box, bits, params)
    for i in range(n):
        k = point(mid[i])
        for j in range(n):
            k = iv_add(k, iv_neg(iv_mul(point(y[i][j]), fm[j])))
            c = point(Fraction(int(i == j)))
            for m in range(n):
                c = iv_add(c, iv_neg(iv_mul(point(y[i][m]), jx[m][j])))
            k = iv_add(k, iv_mul(c, (box[j][0] - mid[j], box[j][1] - mid[j])))
        inside = box[i][0] < k[0] and k[1] < box[i][1]
        require(inside, "krawczyk", f"K(X) is not strictly inside X in coordinate {i + 1}")


def _enclosure_signs(model: ModelData, claim: ClaimData, checks: Checks) -> list[int]:
    ev, w = claim.evidence, f"{claim.where}.evidence"
    only_keys(ev, {"precision", "box", "preconditioner", "jacobian", "routh_signs"}, w)
    prec = read_precision(model, ev, w)
    return piece_signs(model, claim, ev, prec, None, checks, w)


def read_precision(model: ModelData, ev: dict[str, Any], w: str) -> int:
    require(len(model.states) <= MAX_STATES, "size", f"at most {MAX_STATES} states")
    prec = get(ev, "precision", int, w)
    require(8 <= prec <= MAX_PRECISION, "precision", f"precision must be in 8..{MAX_PRECISION}")
    return prec


def piece_signs(
    model: ModelData,
    claim: ClaimData,
    ev: dict[str, Any],
    prec: int,
    params: list[Interval] | None,
    checks: Checks,
    w: str,
) -> list[int]:
    """Check one enclosure (box, preconditioner, Jacobian, Routh signs) and return the
    signs; the uncertain parameters at nominal, or over ``params``."""
    n = len(model.states)
    bits = prec + GUARD
    x = _point_enclosure(claim, bits)
    raw_box = get(ev, "box", list, w)
    require(len(raw_box) == n, "box", "one interval per state")
    box = [_read_interval(b, None, f"{w}.box[{i}]") for i, b in enumerate(raw_box)]
    inside = all(lo < v[0] and v[1] < hi for v, (lo, hi) in zip(x, box, strict=True))
    require(inside, "box", "the claim's point is not inside the box")
    raw_y = get(ev, "preconditioner", list, w)
    require(
        len(raw_y) == n and all(isinstance(r, list) and len(r) == n for r in raw_y),
        "preconditioner",
        f"expected {n} rows of {n} numbers",
    )
    y = [[read_number(v, 0, f"{w}.preconditioner").a for v in r] for r in raw_y]
    _conditions_on_box(model, box, params)
    _krawczyk(model, box, y, bits, params)
    if params is not None:  # one line for all the pieces, written by the range schema
        _, jx = jacobian_enclosure(model, box, bits, params)
        return _stated_signs(ev, prec, jx, n, w)
    checks.ok(
        "the field is defined on the box X and K(X) lies strictly inside X (Krawczyk): "
        "X holds exactly one equilibrium, and the claim's point lies in X"
    )
    _, jx = jacobian_enclosure(model, box, bits)
    signs = _stated_signs(ev, prec, jx, n, w)
    checks.ok(
        f"the stated Jacobian enclosure (bounds on the grid 2^-{prec}) contains the "
        "audit's own interval enclosure of df/dx over X (Taylor series with remainder "
        "bounds, rational arithmetic)"
    )
    checks.ok(
        f"over the enclosure, det(sI - J) has Routh first-column signs {signs}, each "
        "decided for every matrix in the enclosure (interval arithmetic)"
    )
    return signs


def _stated_signs(
    ev: dict[str, Any], prec: int, jx: list[list[Interval]], n: int, w: str
) -> list[int]:
    """The stated Jacobian enclosure contains ``jx``; its Routh signs are the stated ones."""
    raw_j = get(ev, "jacobian", list, w)
    require(
        len(raw_j) == n and all(isinstance(r, list) and len(r) == n for r in raw_j),
        "jacobian",
        f"expected {n} rows of {n} intervals",
    )
    stated = [
        [_read_interval(v, prec, f"{w}.jacobian[{i}]") for v in r] for i, r in enumerate(raw_j)
    ]
    for i in range(n):
        for j in range(n):
            (slo, shi), (lo, hi) = stated[i][j], jx[i][j]
            require(
                slo <= lo and hi <= shi,
                "jacobian",
                f"the stated enclosure of df{i + 1}/dx{j + 1} does not contain the audit's "
                "own enclosure over the box",
            )
    signs = _interval_routh(_interval_char_poly(stated))
    require(
        signs == get(ev, "routh_signs", list, w),
        "routh",
        f"the Routh first column over the enclosure has signs {signs}, not the stated ones",
    )
    require(0 not in signs, "routh", "a Routh first-column sign is not decided by the enclosure")
    return signs


@schema("stable", "linearization-enclosure", "indirect-method-stability-by-enclosure")
@schema(
    "unstable",
    "linearization-enclosure",
    "indirect-method-stability-by-enclosure",
    scopes=BOTH,
    refutes=True,
)
def enclosure_stable(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """Every Jacobian in the enclosure is Hurwitz, so the one equilibrium in X is stable."""
    signs = _enclosure_signs(model, claim, checks)
    require(all(s > 0 for s in signs), "theorem", "a first-column sign is not positive")
    checks.ok(
        "all first-column signs are positive: at the equilibrium in X every eigenvalue "
        "has negative real part"
    )


@schema("unstable", "linearization-enclosure", "indirect-method-instability-by-enclosure")
@schema(
    "stable",
    "linearization-enclosure",
    "indirect-method-instability-by-enclosure",
    scopes=BOTH,
    refutes=True,
)
def enclosure_unstable(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """Some Jacobian eigenvalue has positive real part at the equilibrium in X."""
    signs = _enclosure_signs(model, claim, checks)
    changes = sum(1 for a, b in itertools.pairwise(signs) if a != b)
    require(changes >= 1, "theorem", "no sign change: no root in the right half plane shown")
    checks.ok(
        f"{changes} sign change(s): that many eigenvalues with positive real part at the "
        "equilibrium in X"
    )


# The region of attraction of rational fields and the enclosures over parameter ranges
# register their schemas on import.
from proofkit.audit import _ranges_enclosure, _rational_basin  # noqa: E402, F401
