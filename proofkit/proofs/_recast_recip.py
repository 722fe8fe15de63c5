"""Reciprocal atoms on the search side: the search without R, the certificate with R.

A field with a reciprocal atom ``1/q`` is recast (:mod:`proofkit.proofs._recast_system`,
``reciprocal=True``) with ``R = 1/q - r0`` and the equality ``h = (R + r0) q - 1``.
Searching with ``R`` in the Gram bases does not work: the square of every basis
monomial containing ``R`` must be matched through ``lambda h``, whose top-degree
terms again hold ``R^2`` (the rows of ``R`` are forced to be singular). So the
search runs on the *reduced* system: V over the other variables only, and the
field rows multiplied by the weight ``(sign(q(x*)) q)^K`` (``K`` the highest power of
``R + r0`` in them; ``(R + r0) -> 1/q`` makes them polynomials). The decrease
obligation found there, ``D' = q^K (-lie(V) - eps|y|^2) = s gap + sum s_t g_t +
sum lambda_c circle_c + b'Gb``, becomes the audit's by a factor ``W`` equal to
``(sign(q(x*)) q)^-K`` on the recast set and a sum of squares: for K odd and
``sign(q(x*)) q`` a sum of squares (Gram ``G_q``) ``W = (sigma q (R + r0)^2)^K`` (Gram
``G_q (x) [[1, r0], [r0, r0^2]]`` to the K-th Kronecker power); otherwise K is raised
to the next even number P and ``W = ((R + r0)^(P/2))^2`` (rank one). Every
multiplier and Gram matrix is multiplied by ``W`` (Kronecker products, equal
basis monomials merged: a congruence, PSD kept), and the exact remainder
``T - M`` is divided by ``h`` (the free multiplier ``decrease * reciprocal 1``;
a nonzero remainder is a reason, never an entry). One denominator is the scope
here; more give a reason.

Floating point only to find the Gram matrix of q (then exact: projection and LDL').
Nothing here decides anything; the audit (``recast-*`` schemas) does.
"""

from __future__ import annotations

import json
from dataclasses import dataclass, replace
from math import comb
from typing import Any

import cvxpy as cp
import flint
import numpy as np

from proofkit.exact import ldl_psd, peyrl_parrilo_projection
from proofkit.proofs._basin_exact import BITS, gram_form, poly_json, round_matrix
from proofkit.proofs._recast_system import RecastSystem

__all__ = ["Reduction", "lift_evidence", "reduce_system"]

MAX_GRAM = 120  # rows of one Gram matrix that the audit reads

Gram = list[list[flint.fmpq]]


@dataclass(frozen=True)
class Reduction:
    """The full system (with R), the weight ``q^K`` and the Gram of ``W`` over z."""

    full: RecastSystem
    weight: Any  # q^K over the reduced context
    power: int  # K
    w_basis: np.ndarray  # basis of W over z
    w_gram: Gram


def _terms(p: Any) -> dict[tuple[int, ...], Any]:
    return {tuple(int(x) for x in e): c for e, c in zip(p.monoms(), p.coeffs(), strict=True)}


def _drop(p: Any, ctx: Any) -> Any:
    """A polynomial over z without R into the reduced context."""
    terms = _terms(p)
    if any(e[-1] for e in terms):
        raise ValueError("R in a polynomial of the reduced system")
    return ctx.from_dict({e[:-1]: c for e, c in terms.items()})


def _by_u(p: Any, full: RecastSystem) -> dict[int, Any]:
    """``p`` as ``sum_j c_j (R + r0)^j`` over the reduced variables: {j: c_j (z terms)}."""
    g = full.ctx.gens()
    r0 = _r0(full)
    shifted = p.compose(*g[:-1], g[-1] - full.ctx.constant(r0))
    out: dict[int, dict] = {}
    for e, c in _terms(shifted).items():
        out.setdefault(e[-1], {})[e[:-1]] = c
    return out


def _r0(full: RecastSystem) -> flint.fmpq:
    h = _terms(full.reciprocals[0][1])  # (R + r0) q - 1: the coefficient of R is q
    q0 = h[(*tuple([0] * (full.nz - 1)), 1)]
    return 1 / q0


def reduce_system(full: RecastSystem) -> tuple[RecastSystem, Reduction] | str:
    """The system without R (field times ``q^K``) and the data to lift a certificate."""
    if len(full.poles) != 1:
        return "only one distinct denominator is recast here"
    nz = full.nz - 1
    ctx = flint.fmpq_mpoly_ctx.get(tuple(f"z{i}" for i in range(nz)), "lex")
    q = _drop(full.poles[0][1], ctx)  # sign(q(x*)) q
    sigma = 1 if _r0(full) > 0 else -1
    rows = [[_by_u(a, full), _by_u(b, full)] for a, b in full.field[:nz]]
    power = max(max(max(part, default=0) for part in row) for row in rows)
    gram = _sos_gram(q, full.n, ctx) if power % 2 else "an even power"
    if isinstance(gram, str):  # W = (R + r0)^P, P even: the square of (R + r0)^(P/2)
        power += power % 2
        w_basis, w_gram = _w_square(full, power // 2)
    else:
        w_basis, w_gram = _w_gram(full, gram, power)
    field = []
    for row in rows:
        pair = []
        for part in row:
            acc = ctx.constant(0)
            for j, terms in part.items():
                acc = acc + ctx.from_dict(terms) * sigma**j * q ** (power - j)
            pair.append(acc)
        field.append(tuple(pair))
    red = replace(
        full,
        nz=nz,
        names=full.names[:nz],
        ctx=ctx,
        field=tuple(field),
        equalities=tuple((lbl, _drop(h, ctx)) for lbl, h in full.equalities),
        inequalities=tuple((lbl, _drop(g, ctx)) for lbl, g in full.inequalities),
        deltas=tuple((k, _drop(d, ctx)) for k, d in full.deltas if k != "reciprocal"),
        reciprocals=(),
        poles=((full.poles[0][0], q),),
    )
    return red, Reduction(full, q**power, power, w_basis, w_gram)


def _sos_gram(q: Any, n: int, ctx: Any) -> tuple[np.ndarray, Gram] | str:
    """An exact PSD Gram matrix of ``q`` (a polynomial in the states), or why not."""
    top = max((sum(e) for e in _terms(q)), default=0)
    if top % 2:
        return "the denominator (sign-normalised) is not a sum of squares (odd degree)"
    b = np.array([(*e, *[0] * (ctx.nvars() - n)) for e in _monomials(n, top // 2)], np.int64)
    m = len(b)
    g = cp.Variable((m, m), PSD=True)
    t = cp.Variable()
    coef: dict[tuple[int, ...], Any] = {}
    for i in range(m):
        for j in range(m):
            k = tuple(int(x) for x in b[i] + b[j])
            coef[k] = coef.get(k, 0) + g[i, j]
    target = {e: float(c) for e, c in _terms(q).items()}
    cons = [coef[k] == target.get(k, 0.0) for k in coef]
    cons += [g - t * np.eye(m) >> 0, t <= 1]
    if any(k not in coef for k in target):
        return "the denominator (sign-normalised) is not a sum of squares"
    try:
        cp.Problem(cp.Maximize(t), cons).solve(solver="CLARABEL")
    except cp.error.SolverError:
        return "no Gram matrix of the denominator"
    if g.value is None or t.value is None or t.value <= 0:
        return "the denominator (sign-normalised) is not a sum of squares"
    for bits in BITS:
        proj = peyrl_parrilo_projection(b, round_matrix(g.value, bits), q)
        if not isinstance(proj, str) and ldl_psd(proj).psd:
            return b, proj
    return "the Gram matrix of the denominator did not round to a PSD one"


def _monomials(n: int, d: int) -> list[tuple[int, ...]]:
    out = [tuple([0] * n)]
    for _ in range(d):
        grown = {tuple(e[k] + (k == i) for k in range(n)) for e in out for i in range(n)}
        out = sorted(grown | set(out))
    return out


def _kron(b1: np.ndarray, g1: Gram, b2: np.ndarray, g2: Gram) -> tuple[np.ndarray, Gram]:
    """Basis and Gram of the product of two squares, equal monomials merged (congruence)."""
    rows = [tuple(int(x) for x in u + v) for u in b1 for v in b2]
    keys = sorted(set(rows))
    index = {k: i for i, k in enumerate(keys)}
    out = [[flint.fmpq(0)] * len(keys) for _ in keys]
    m2 = len(b2)
    for i, ri in enumerate(rows):
        for j, rj in enumerate(rows):
            c = g1[i // m2][j // m2] * g2[i % m2][j % m2]
            if c != 0:
                out[index[ri]][index[rj]] += c
    return np.array(keys, np.int64), out


def _w_square(full: RecastSystem, m: int) -> tuple[np.ndarray, Gram]:
    """``W = ((R + r0)^m)^2`` as a square over z (rank one)."""
    r0 = _r0(full)
    basis = np.zeros((m + 1, full.nz), np.int64)
    basis[:, -1] = np.arange(m + 1)
    coef = [flint.fmpq(comb(m, j)) * r0 ** (m - j) for j in range(m + 1)]
    return basis, [[a * b for b in coef] for a in coef]


def _w_gram(full: RecastSystem, gq: tuple[np.ndarray, Gram], power: int) -> tuple[np.ndarray, Gram]:
    """``W = (q (R + r0)^2)^K`` as a square over z."""
    bq = np.hstack([gq[0], np.zeros((len(gq[0]), 1), np.int64)])
    r0 = _r0(full)
    unit = np.zeros((2, full.nz), np.int64)
    unit[0, -1] = 1  # R, then 1
    one = (unit, [[flint.fmpq(1), r0], [r0, r0 * r0]])
    base = _kron(bq, gq[1], *one)
    acc = (np.zeros((1, full.nz), np.int64), [[flint.fmpq(1)]])
    for _ in range(power):
        acc = _kron(*acc, *base)
    return acc


def _embed(p: Any, full: RecastSystem) -> Any:
    return full.ctx.from_dict({(*e, 0): c for e, c in _terms(p).items()})


def _read(data: list[Any], ctx: Any) -> Any:
    return ctx.from_dict({tuple(e): flint.fmpq(*_pq(c)) for e, c in data})


def _pq(c: str) -> tuple[int, int]:
    from fractions import Fraction

    f = Fraction(c)
    return f.numerator, f.denominator


def _square_z(item: dict[str, Any], red: Reduction, weighted: bool) -> tuple[np.ndarray, Gram]:
    basis = np.array([[*list(r), 0] for r in item["basis"]], np.int64)
    gram = [[flint.fmpq(*_pq(x)) for x in row] for row in item["gram"]]
    if not weighted:
        return basis, gram
    return _kron(basis, gram, red.w_basis, red.w_gram)


def _json_square(basis: np.ndarray, gram: Gram) -> dict[str, Any]:
    return {"basis": basis.tolist(), "gram": [[str(x) for x in r] for r in gram]}


def lift_evidence(
    red: Reduction,
    parts: tuple[dict, dict, dict],
    v: Any,
    numbers: tuple[Any, Any],
    enclosure: Any,
) -> tuple[dict, dict, dict] | str:
    """The reduced ``(multipliers, free, squares)`` as the audit's, over z (with R)."""
    full, ctx = red.full, red.full.ctx
    sos, free, squares = (json.loads(json.dumps(x)) for x in parts)
    w_poly = gram_form(ctx, red.w_basis, red.w_gram)
    out_sos, out_free, out_sq = {}, {}, {}
    for key, item in squares.items():
        weighted = key.startswith("decrease")
        b, g = _square_z(item, red, weighted)
        if len(b) > MAX_GRAM:
            return (
                f"the lifted Gram matrix of {key!r} has {len(b)} rows (the audit reads {MAX_GRAM})"
            )
        out_sq[key] = _json_square(b, g)
        if key in sos:
            out_sos[key] = poly_json(gram_form(ctx, b, g))
    for key, data in free.items():
        lam = _embed(_read(data, red.weight.context()), full)
        out_free[key] = poly_json(lam * w_poly if key.startswith("decrease") else lam)
    vz = _embed(v, full)
    level, eps = (ctx.constant(x) for x in numbers)
    g = ctx.gens()
    norm = sum((g[i] ** 2 for i in range(full.n)), ctx.constant(0))
    labels = {"level": level - vz, **dict(full.inequalities), **dict(full.equalities)}
    h = full.reciprocals[0]
    for label, fld in full.vertex_fields(enclosure):
        name = f"decrease {label}".strip()
        rest = -sum((vz.derivative(i) * fi for i, fi in enumerate(fld)), ctx.constant(0))
        rest = rest - eps * norm
        for key in [*out_sos, *out_free]:
            obl, _, lbl = key.partition(" * ")
            if obl == name:
                data = out_sos.get(key) or out_free[key]
                rest = rest - _read(data, ctx) * labels[lbl]
        rest = rest - gram_form(ctx, np.array(out_sq[name]["basis"]), _gram(out_sq[name]))
        quot, rem = divmod(rest, h[1])
        if not rem.is_zero():
            return f"the obligation {name!r} does not reduce to a multiple of {h[0]!r}"
        if not quot.is_zero():
            out_free[f"{name} * {h[0]}"] = poly_json(quot)
    return out_sos, out_free, out_sq


def _gram(item: dict[str, Any]) -> Gram:
    return [[flint.fmpq(*_pq(x)) for x in row] for row in item["gram"]]
