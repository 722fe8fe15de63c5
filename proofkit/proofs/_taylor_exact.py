"""Exact Taylor-model evidence from a numerical hint: rounding, projection, exact LDL'.

``V`` (found in scaled coordinates ``z = y / D``, ``D`` powers of two) is
written exactly in ``y`` and rounded to dyadic rationals; each multiplier's
Gram matrix is rounded and shown PSD by exact LDL' (the multiplier is then
``b' G b`` exactly); every obligation's target is rebuilt exactly from the
vertex fields (:mod:`proofkit.proofs._taylor_system`), then its Gram matrix
is rounded, projected exactly onto the target (Peyrl–Parrilo) and shown PSD.
The names follow the audit's ``taylor-model-*`` schemas. Nothing here reads
a float as evidence: a hint that does not survive the exact checks gives a
reason string instead.
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction
from typing import Any

import flint
import numpy as np

from proofkit.proofs._basin_exact import dyadic, fit_gram, gram_form, poly_json, psd_gram
from proofkit.proofs._taylor_search import Hint
from proofkit.proofs._taylor_system import TaylorSystem

__all__ = ["ExactProblem", "exact_evidence"]


def _q(x: Fraction) -> flint.fmpq:
    return flint.fmpq(x.numerator, x.denominator)


@dataclass(frozen=True)
class ExactProblem:
    """Exact data of one claim: the vertex fields, the claim set and the domain over ``y``."""

    system: TaylorSystem
    scale: tuple[Fraction, ...]  # z = y / scale
    eps: Fraction
    sets: tuple[flint.fmpq_mpoly, ...]
    domain: tuple[tuple[flint.fmpq_mpoly, bool], ...]
    bounds: tuple[flint.fmpq_mpoly, ...] = ()  # D - delta per exp atom (held on the set)

    def norm(self) -> flint.fmpq_mpoly:
        g = self.system.ctx.gens()
        return sum((x**2 for x in g), self.system.ctx.constant(0))

    def y_scale(self, exps: np.ndarray) -> np.ndarray:
        """``prod_i D_i^(-e_i)``: a z-monomial's coefficient factor in y."""
        d = np.array([float(x) for x in self.scale])
        return np.prod(d[None, :] ** (-np.asarray(exps, dtype=float)), axis=1)

    def v_exact(self, v_z: dict[tuple[int, ...], float], bits: int = 40) -> flint.fmpq_mpoly:
        exps = np.array(list(v_z), dtype=np.int64).reshape(-1, self.system.n)
        coeffs = np.array(list(v_z.values())) * self.y_scale(exps)
        top = float(np.abs(coeffs).max(initial=0.0))
        terms = {
            tuple(map(int, e)): dyadic(float(c), bits, top)
            for e, c in zip(exps, coeffs, strict=True)
        }
        return self.system.ctx.from_dict({e: c for e, c in terms.items() if c != 0})

    def to_y(self, basis: np.ndarray, q: np.ndarray) -> np.ndarray:
        s = self.y_scale(basis)
        return q * s[:, None] * s[None, :]


def _lie(v: flint.fmpq_mpoly, fld: tuple[flint.fmpq_mpoly, ...], ctx: Any) -> flint.fmpq_mpoly:
    return sum((v.derivative(i) * fi for i, fi in enumerate(fld)), ctx.constant(0))


def _square(basis: np.ndarray, gram: list[list[flint.fmpq]]) -> dict[str, Any]:
    return {"basis": np.asarray(basis).tolist(), "gram": [[str(x) for x in r] for r in gram]}


def _targets(
    prob: ExactProblem, v: flint.fmpq_mpoly, level: Fraction, hint: Hint, inside: dict | None
) -> tuple[dict[str, Any], dict[str, Any], dict[str, tuple]] | str:
    """Exact multipliers (JSON, squares) and every obligation's (target, basis, y-Gram hint)."""
    ctx = prob.system.ctx
    eps = ctx.constant(_q(prob.eps))
    gap = ctx.constant(_q(level)) - v
    mult_json: dict[str, Any] = {}
    squares: dict[str, Any] = {}
    todo: dict[str, tuple] = {}
    items: list[tuple[str, Any, Any]] = [
        (f"decrease {lbl}", fld, None) for lbl, fld in prob.system.vertices
    ]
    items += [
        (f"domain {j + 1}", None, h - eps if strict else h)
        for j, (h, strict) in enumerate(prob.domain)
    ]
    items += [(f"bound {j + 1}", None, b) for j, b in enumerate(prob.bounds)]
    for name, fld, other in items:
        key = name.replace("decrease hi ", "decrease lo ")  # the search ran on the lo end
        basis, q = hint.mult[key]
        g = psd_gram(prob.to_y(basis, q))
        if g is None:
            return f"the multiplier of {name!r} did not round to a PSD Gram matrix"
        m = gram_form(ctx, basis, g)
        base = -_lie(v, fld, ctx) - eps * prob.norm() if fld is not None else other
        if not m.is_zero():
            mult_json[f"{name} * level"] = poly_json(m)
            squares[f"{name} * level"] = _square(basis, g)
        gb, gq = hint.grams[key]
        todo[name] = (base - m * gap, gb, prob.to_y(gb, gq))
    if inside is not None:
        target = gap
        for i, gi in enumerate(prob.sets):
            basis, q = inside[f"set {i + 1}"]
            g = psd_gram(prob.to_y(basis, q))
            if g is None:
                return f"the multiplier of set {i + 1} did not round to a PSD Gram matrix"
            m = gram_form(ctx, basis, g)
            if not m.is_zero():
                target = target - m * gi
                mult_json[f"inside * set {i + 1}"] = poly_json(m)
                squares[f"inside * set {i + 1}"] = _square(basis, g)
        basis, q = inside["inside"]
        todo["inside"] = (target, basis, prob.to_y(basis, q))
    return mult_json, squares, todo


def exact_evidence(
    prob: ExactProblem,
    v_z: dict[tuple[int, ...], float],
    level: Fraction,
    hint: Hint,
    inside: dict | None,
) -> dict[str, Any] | str:
    """The ``taylor-model`` evidence object, or why the hint did not survive rounding."""
    v = prob.v_exact(v_z)
    out = _targets(prob, v, level, hint, inside)
    if isinstance(out, str):
        return out
    mult_json, squares, todo = out
    gb, gq = hint.grams["positive"]
    todo["positive"] = (v - ctx_eps(prob) * prob.norm(), gb, prob.to_y(gb, gq))
    for name, (target, basis, q_y) in todo.items():
        gram = fit_gram(target, basis, q_y)
        if isinstance(gram, str):
            return f"the obligation {name!r} has no exact PSD Gram matrix near the hint: {gram}"
        squares[name] = _square(basis, gram)
    return {
        "taylor_model": prob.system.evidence_block(),
        "V": poly_json(v),
        "numbers": {"eps": str(prob.eps), "level": str(level)},
        "multipliers": mult_json,
        "squares": squares,
    }


def ctx_eps(prob: ExactProblem) -> flint.fmpq_mpoly:
    return prob.system.ctx.constant(_q(prob.eps))
