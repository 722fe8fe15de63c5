"""Reductions of search programs, each returning a NEW program plus its inverse data.

A reduction is a step in the manner of compiler passes: it never changes the
caller's program; it returns ``Reduction(program, original, keep)`` where
``program`` is the smaller program and ``lift_numeric`` maps a solution of it
back to the original's unknowns. The one reduction here drops Gram basis
monomials whose diagonal a solution shows forced to zero (the simplest facial
reduction: a PSD matrix with a zero diagonal entry has a zero row). Exact
face restrictions (``Q = W G W'``) live in :mod:`proofkit.exact`.

Floats only choose which monomials to drop; this module decides nothing and
must never import :mod:`proofkit.exact`.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field

import numpy as np

from proofkit.sos.program import SearchProgram, SosPoly

__all__ = ["Reduction", "drop_monomials", "forced_zero_masks"]


@dataclass(frozen=True)
class Reduction:
    """A reduced program and the data to map its solutions back to ``original``.

    ``keep[name]`` is the boolean mask of the original basis of Gram unknown
    ``name`` that survives in ``program``; unknowns not named are unchanged.
    """

    program: SearchProgram
    original: SearchProgram
    keep: Mapping[str, np.ndarray] = field(default_factory=dict)

    def lift_numeric(self, values: Mapping[str, np.ndarray]) -> dict[str, np.ndarray]:
        """Original-sized values: reduced Gram matrices padded with zero rows and columns."""
        out = dict(values)
        for name, mask in self.keep.items():
            full = np.zeros((len(mask), len(mask)))
            idx = np.flatnonzero(mask)
            full[np.ix_(idx, idx)] = np.asarray(values[name], dtype=float)
            out[name] = full
        return out

    def lift_matrix(self, name: str, rows: list[list[object]], zero: object) -> list[list[object]]:
        """An exact reduced Gram matrix (nested lists) padded with ``zero`` to the original size."""
        mask = self.keep.get(name)
        if mask is None:
            return rows
        idx = np.flatnonzero(mask).tolist()
        n = len(mask)
        full = [[zero] * n for _ in range(n)]
        for a, i in enumerate(idx):
            for b, j in enumerate(idx):
                full[i][j] = rows[a][b]
        return full


def drop_monomials(program: SearchProgram, keep: Mapping[str, np.ndarray]) -> Reduction:
    """A new program whose Gram unknowns keep only the basis rows ``keep[name]`` (masks)."""
    grams = {u.name: u for u in program.unknowns if isinstance(u, SosPoly)}
    masks: dict[str, np.ndarray] = {}
    bases: dict[str, np.ndarray] = {}
    for name, mask in keep.items():
        m = np.asarray(mask, dtype=bool)
        if name not in grams or m.shape != (grams[name].size,):
            raise ValueError(f"mask for {name!r} does not match a Gram unknown's basis")
        masks[name] = m
        bases[name] = grams[name].basis[m]
    return Reduction(program.with_bases(bases), program, masks)


def forced_zero_masks(
    program: SearchProgram, values: Mapping[str, np.ndarray], tol: float
) -> dict[str, np.ndarray]:
    """Per Gram unknown, the basis monomials to keep: those whose diagonal exceeds ``tol``.

    Only unknowns with at least one (relatively) vanishing diagonal entry appear.
    """
    out: dict[str, np.ndarray] = {}
    for u in program.unknowns:
        if isinstance(u, SosPoly) and u.size and u.name in values:
            diag = np.diag(np.asarray(values[u.name], dtype=float))
            scale = max(1.0, float(np.abs(diag).max(initial=0.0)))
            mask = diag > tol * scale
            if not mask.all():
                out[u.name] = mask
    return out
