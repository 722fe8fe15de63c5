"""Exact region-of-attraction evidence from the numerical basin search.

Turns floating-point hints (``V``, Gram matrices in scaled coordinates
``z = y / D``) into exact rational data in the deviation ``y = x - x*``:
``V`` rounded to dyadic rationals, each multiplier's Gram matrix rounded and
shown PSD by exact LDL', each obligation's target rebuilt exactly from the
shifted field, then the obligation's Gram matrix rounded, projected exactly
onto the target (Peyrl–Parrilo) and shown PSD by exact LDL'. The evidence
follows the ``region-of-attraction`` schema (DEVELOPERS.md): obligations
``positive``, ``decrease``, ``s0``, ``inside``, ``s1..sk``, ``domain j``,
``t1..tm``; numbers ``eps`` and ``level``; ``margin_power`` 1.

:func:`check_evidence` re-derives every target from the evidence alone and
checks it exactly; it is the prover's own check before the audit, never a
replacement for it. Nothing here reads a float as evidence.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

import flint
import numpy as np

from proofkit.exact import ldl_psd, peyrl_parrilo_projection
from proofkit.sos._ascent_maps import NumPoly

__all__ = [
    "BITS",
    "ExactSetting",
    "check_evidence",
    "dyadic",
    "fit_gram",
    "gram_form",
    "gram_poly",
    "poly_json",
    "psd_gram",
    "round_matrix",
    "round_poly",
]

BITS = (24, 34, 44)  # relative precisions tried when rounding a Gram matrix
Gram = list[list[flint.fmpq]]


@dataclass(frozen=True)
class ExactSetting:
    """The exact data one basin certificate lives in (deviation coordinates ``y``)."""

    space: Any  # proofkit.sos.PolySpace over the state symbols (read as y)
    g: list[flint.fmpq_mpoly]  # shifted field f(x* + y)
    scale: tuple[Fraction, ...]  # z = y / scale
    eps: Fraction
    set_conds: tuple[tuple[flint.fmpq_mpoly, bool], ...]  # claim set g_i(x* + y) >= 0
    domain: tuple[tuple[flint.fmpq_mpoly, bool], ...]  # domain h_j(x* + y) >= 0

    @property
    def n(self) -> int:
        return int(self.space.nvars)

    def norm(self) -> flint.fmpq_mpoly:
        sp_ = self.space
        return sum((sp_.gen(i) ** 2 for i in range(self.n)), sp_.zero())

    def lie(self, v: flint.fmpq_mpoly) -> flint.fmpq_mpoly:
        return sum((v.derivative(i) * gi for i, gi in enumerate(self.g)), self.space.zero())

    def monomial_scale(self, exps: np.ndarray) -> np.ndarray:
        """``prod_i D_i^(-e_i)`` per exponent row: a z-monomial in y units."""
        d = np.array([float(x) for x in self.scale])
        return np.prod(d[None, :] ** (-np.asarray(exps, dtype=float)), axis=1)

    def to_z(self, p: flint.fmpq_mpoly) -> NumPoly:
        """``p(D z)`` as a numerical polynomial."""
        exps = np.array(p.monoms(), dtype=np.int64).reshape(-1, self.n)
        coeffs = np.array([float(c) for c in p.coeffs()])
        return NumPoly(exps, coeffs / self.monomial_scale(exps))


def dyadic(x: float, bits: int, top: float) -> flint.fmpq:
    """``x`` rounded to a multiple of ``2^-k`` with ``2^-k`` about ``top * 2^-bits``."""
    k = bits - int(np.floor(np.log2(top))) if top > 0 else bits
    den = 2**k if k >= 0 else 1
    num = round(x * den) if k >= 0 else round(x / 2 ** (-k)) * 2 ** (-k)
    return flint.fmpq(num, den)


def round_poly(
    setting: ExactSetting, v: NumPoly, bits: int = 40, in_z: bool = True
) -> flint.fmpq_mpoly:
    """A numerical polynomial (in ``z`` when ``in_z``) rounded to an exact one in ``y``."""
    coeffs = v.coeffs * (setting.monomial_scale(v.exps) if in_z else 1.0)
    top = float(np.abs(coeffs).max(initial=0.0))
    terms: dict[tuple[int, ...], flint.fmpq] = {}
    for row, c in zip(v.exps.tolist(), coeffs.tolist(), strict=True):
        q = dyadic(c, bits, top)
        if q != 0:
            terms[tuple(row)] = terms.get(tuple(row), flint.fmpq(0)) + q
    return setting.space.ctx.from_dict({k: c for k, c in terms.items() if c != 0})


def round_matrix(q: np.ndarray, bits: int) -> Gram:
    """The symmetric part of ``q``, rounded entrywise to dyadic rationals."""
    q = 0.5 * (q + q.T)
    top = float(np.abs(q).max(initial=0.0))
    n = q.shape[0]
    out = [[flint.fmpq(0)] * n for _ in range(n)]
    for i in range(n):
        for j in range(i, n):
            out[i][j] = out[j][i] = dyadic(float(q[i, j]), bits, top)
    return out


def z_gram_to_y(setting: ExactSetting, basis: np.ndarray, q: np.ndarray) -> np.ndarray:
    s = setting.monomial_scale(basis)
    return q * s[:, None] * s[None, :]


def gram_poly(setting: ExactSetting, basis: np.ndarray, gram: Gram) -> flint.fmpq_mpoly:
    """``b' G b`` exactly."""
    return gram_form(setting.space.ctx, basis, gram)


def gram_form(ctx: Any, basis: np.ndarray, gram: Gram) -> flint.fmpq_mpoly:
    """``b' G b`` exactly, in the polynomial context ``ctx``."""
    acc: dict[tuple[int, ...], flint.fmpq] = {}
    rows = [tuple(int(e) for e in r) for r in np.asarray(basis).tolist()]
    for i, bi in enumerate(rows):
        for j, bj in enumerate(rows):
            c = gram[i][j]
            if c != 0:
                key = tuple(a + b for a, b in zip(bi, bj, strict=True))
                acc[key] = acc.get(key, flint.fmpq(0)) + c
    return ctx.from_dict({k: c for k, c in acc.items() if c != 0})


def psd_gram(q_y: np.ndarray) -> Gram | None:
    """A rational PSD matrix near ``q_y`` (exact LDL'), or None."""
    for bits in BITS:
        g = round_matrix(q_y, bits)
        if ldl_psd(g).psd:
            return g
    return None


def fit_gram(target: flint.fmpq_mpoly, basis: np.ndarray, q_y: np.ndarray) -> Gram | str:
    """Exact PSD ``G`` with ``b' G b == target``: rounding, projection, exact LDL'; else why not."""
    why = "no Gram matrix"
    for bits in BITS:
        proj = peyrl_parrilo_projection(basis, round_matrix(q_y, bits), target)
        if isinstance(proj, str):
            return proj
        ldl = ldl_psd(proj)
        if ldl.psd:
            return proj
        why = f"the projected Gram matrix is not PSD ({ldl.reason})"
    return why


def poly_json(p: flint.fmpq_mpoly) -> list[Any]:
    return [[list(map(int, e)), str(c)] for e, c in zip(p.monoms(), p.coeffs(), strict=True)]


def _read_poly(setting: ExactSetting, data: Sequence[Any]) -> flint.fmpq_mpoly:
    terms = {tuple(int(x) for x in e): flint.fmpq(Fraction(c).numerator, Fraction(c).denominator)
             for e, c in data}  # fmt: skip
    return setting.space.ctx.from_dict({k: c for k, c in terms.items() if c != 0})


def targets_of(setting: ExactSetting, evidence: dict[str, Any]) -> dict[str, flint.fmpq_mpoly]:
    """Every obligation's target, rebuilt from ``V``, the numbers and the multipliers."""
    sp_ = setting.space
    v = _read_poly(setting, evidence["V"])
    eps = Fraction(evidence["numbers"]["eps"])
    level = Fraction(evidence["numbers"]["level"])
    m = int(evidence.get("margin_power", 1))
    mult = {k: _read_poly(setting, p) for k, p in evidence.get("multipliers", {}).items()}
    q = lambda x: sp_.const(flint.fmpq(x.numerator, x.denominator))  # noqa: E731
    gap = q(level) - v
    out = {
        "positive": v - setting.norm() * q(eps),
        "decrease": -setting.lie(v) - setting.norm() ** m * q(eps) - mult["s0"] * gap,
        "s0": mult["s0"],
    }
    inside = gap
    for i, (gi, _strict) in enumerate(setting.set_conds):
        inside -= mult[f"s{i + 1}"] * gi
        out[f"s{i + 1}"] = mult[f"s{i + 1}"]
    out["inside"] = inside
    for j, (hj, strict) in enumerate(setting.domain):
        t = mult[f"t{j + 1}"]
        out[f"domain {j + 1}"] = hj - t * gap - (q(eps) if strict else sp_.zero())
        out[f"t{j + 1}"] = t
    return out


def check_evidence(setting: ExactSetting, evidence: dict[str, Any]) -> tuple[bool, str]:
    """Exact check of every obligation of ``evidence`` (identity and LDL'), from its data alone."""
    v = _read_poly(setting, evidence["V"])
    if any(sum(e) < 2 for e in v.monoms()):
        return False, "V has a term of degree below 2"
    if Fraction(evidence["numbers"]["eps"]) <= 0 or Fraction(evidence["numbers"]["level"]) <= 0:
        return False, "eps and level must be positive"
    try:
        targets = targets_of(setting, evidence)
    except KeyError as exc:
        return False, f"missing multiplier {exc}"
    if set(targets) != set(evidence["squares"]):
        return False, f"obligations {sorted(evidence['squares'])}, expected {sorted(targets)}"
    for name, target in targets.items():
        item = evidence["squares"][name]
        basis = np.array(item["basis"], dtype=np.int64).reshape(-1, setting.n)
        gram = [[flint.fmpq(Fraction(x).numerator, Fraction(x).denominator) for x in r]
                for r in item["gram"]]  # fmt: skip
        if gram_poly(setting, basis, gram) != target:
            return False, f"{name}: the identity target == b'Gb fails"
        ldl = ldl_psd(gram)
        if not ldl.psd:
            return False, f"{name}: Gram matrix not PSD ({ldl.reason})"
    return True, ""
