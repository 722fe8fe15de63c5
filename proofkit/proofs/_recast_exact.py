"""Exact recast evidence from numerical hints: rounding, division, projection, exact LDL'.

``V`` is rounded to dyadic rationals and fixed; each sum-of-squares
multiplier's Gram matrix is rounded and shown PSD by exact LDL' (the
multiplier is then ``b' G b`` exactly). Every obligation's target is rebuilt
exactly from the recast system (:mod:`proofkit.proofs._recast_system`, the
field at each end of the enclosure of sqrt d); the search matched it only
modulo the circle relations, so for a rounded Gram matrix ``G0`` the exact
difference ``target - b' G0 b`` is divided by the relations
(:func:`proofkit.proofs._recast_nf.divide_circles`): the quotients become
the certificate's free multipliers and the small remainder is absorbed by
the orthogonal projection of ``G0`` (Peyrl–Parrilo), after which ``G`` is
shown PSD. The result follows the audit's ``recast-*`` schemas. Nothing here
reads a float as evidence: a hint that does not survive the exact checks
gives a reason instead.
"""

from __future__ import annotations

from fractions import Fraction
from typing import Any

import flint
import numpy as np

from proofkit.exact import ldl_psd, peyrl_parrilo_projection
from proofkit.proofs._basin_exact import BITS, Gram, dyadic, gram_form, poly_json, round_matrix
from proofkit.proofs._recast_nf import divide_circles

__all__ = ["BITS", "exact_evidence", "poly_json", "round_poly"]

Circles = list[tuple[str, flint.fmpq_mpoly]]


def round_poly(ctx: Any, p: dict[tuple[int, ...], float], bits: int = 30) -> flint.fmpq_mpoly:
    top = max((abs(c) for c in p.values()), default=0.0)
    terms = {e: dyadic(c, bits, top) for e, c in p.items()}
    return ctx.from_dict({e: c for e, c in terms.items() if c != 0})


def _psd(q: np.ndarray) -> Gram | None:
    for bits in BITS:
        g = _factor_round(q, bits)
        if ldl_psd(g).psd:
            return g
    return None


def _factor_round(q: np.ndarray, bits: int) -> Gram:
    """``R R'`` with ``R`` a rounded square root of ``q``: PSD by construction."""
    w, u = np.linalg.eigh(0.5 * (q + q.T))
    r = u * np.sqrt(np.clip(w, 0.0, None))[None, :]
    top = float(np.abs(r).max(initial=0.0))
    n = q.shape[0]
    rr = flint.fmpq_mat(n, n, [dyadic(float(x), bits, top) for x in r.ravel()])
    g = rr * rr.transpose()
    return [[g[i, j] for j in range(n)] for i in range(n)]


def _repair(
    ctx: Any, target: flint.fmpq_mpoly, basis: np.ndarray, circles: Circles
) -> tuple[flint.fmpq_mpoly, dict[str, flint.fmpq_mpoly]]:
    """Cancel target terms outside the basis square exactly with the circle multipliers.

    The relation ``S^2 + C^2 + 2 C`` has the term ``2 C``: a stray term ``r m`` with
    ``C | m`` is removed by adding ``(r / 2)(m / C)`` to that relation's multiplier
    (e.g. a lone ``C``, which a basis without the constant reaches only through
    ``S * S``).
    """
    b = np.asarray(basis, np.int64)
    square = {
        tuple(int(v) for v in r) for r in (b[:, None, :] + b[None, :, :]).reshape(-1, b.shape[1])
    }
    fixes: dict[str, flint.fmpq_mpoly] = {}
    for _round in range(4):
        terms = zip(target.monoms(), target.coeffs(), strict=True)
        stray = [(tuple(int(v) for v in e), c) for e, c in terms]
        stray = [(e, c) for e, c in stray if e not in square]
        if not stray:
            break
        for e, c in stray:
            for label, h in circles:
                lin = [m for m in h.monoms() if sum(m) == 1]
                if not lin:
                    continue
                k = int(np.argmax(lin[0]))
                if e[k] == 0:
                    continue
                quot = list(e)
                quot[k] -= 1
                two = dict(zip(map(tuple, h.monoms()), h.coeffs(), strict=True))[tuple(lin[0])]
                add = ctx.from_dict({tuple(quot): c / two})
                fixes[label] = fixes.get(label, ctx.constant(0)) + add
                target = target - add * h
                break
    return target, fixes


def _fit(
    ctx: Any, target: flint.fmpq_mpoly, basis: np.ndarray, q: np.ndarray, circles: Circles
) -> tuple[Gram, dict[str, flint.fmpq_mpoly]] | str:
    """PSD ``G`` and free multipliers ``lam`` with ``target = b' G b + sum lam_k h_k``."""
    why = "no Gram matrix"
    for bits in BITS:
        g0 = round_matrix(q, bits)
        quot, _rest = divide_circles(target - gram_form(ctx, basis, g0), circles)
        moved = target
        for label, h in circles:
            if label in quot:
                moved = moved - quot[label] * h
        moved, fixes = _repair(ctx, moved, basis, circles)
        for label, add in fixes.items():
            quot[label] = quot.get(label, ctx.constant(0)) + add
        proj = peyrl_parrilo_projection(basis, g0, moved)
        if isinstance(proj, str):
            return proj
        ldl = ldl_psd(proj)
        if ldl.psd:
            return proj, {k: p for k, p in quot.items() if not p.is_zero()}
        why = f"the projected Gram matrix is not PSD ({ldl.reason})"
    return why


def _square(basis: np.ndarray, gram: Gram) -> dict[str, Any]:
    return {"basis": np.asarray(basis).tolist(), "gram": [[str(x) for x in r] for r in gram]}


def _multipliers(ctx: Any, hint: dict[str, Any]) -> dict[str, tuple[Any, dict]] | str:
    out = {}
    for key, (basis, q) in hint["sos"].items():
        if np.abs(q).max(initial=0.0) < 1e-10:
            continue
        g = _psd(q)
        if g is None:
            return f"the multiplier {key!r} did not round to a PSD Gram matrix"
        p = gram_form(ctx, basis, g)
        if not p.is_zero():
            out[key] = (p, _square(basis, g))
    return out


def exact_evidence(
    ctx: Any,
    bases: dict[str, tuple[flint.fmpq_mpoly, list[tuple[str, flint.fmpq_mpoly]]]],
    circles: Circles,
    hint: dict[str, Any],
) -> tuple[dict[str, Any], dict[str, Any], dict[str, Any]] | str:
    """``(multipliers, free, squares)`` JSON, or why not.

    ``bases``: obligation name -> (exact base target, its inequalities (label, g)).
    """
    sos_json: dict[str, Any] = {}
    free_json: dict[str, Any] = {}
    squares: dict[str, Any] = {}
    exact_sos = _multipliers(ctx, hint)
    if isinstance(exact_sos, str):
        return exact_sos
    for name, (base, ineqs) in bases.items():
        plain = name.removesuffix(" lo").removesuffix(" hi")
        target = base
        for label, g in ineqs:
            found = exact_sos.get(f"{plain} * {label}")
            if found is not None:
                target = target - found[0] * g
                sos_json[f"{name} * {label}"] = poly_json(found[0])
                squares[f"{name} * {label}"] = found[1]
        basis, q = hint["grams"][plain]
        fitted = _fit(ctx, target, basis, q, circles)
        if isinstance(fitted, str):
            return f"the obligation {name!r} has no exact PSD Gram matrix near the hint: {fitted}"
        gram, free = fitted
        for label, lam in free.items():
            free_json[f"{name} * {label}"] = poly_json(lam)
        squares[name] = _square(basis, gram)
    return sos_json, free_json, squares


def fraction(q: flint.fmpq) -> Fraction:
    return Fraction(int(q.p), int(q.q))
