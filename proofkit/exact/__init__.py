"""Exact evidence from numerical hints: rational rounding, projection, LDL', checks.

This package builds on :mod:`proofkit.sos` (search) and never the other way.

Public names
------------
``ldl_psd(Q)``
    exact LDL' over QQ: ``LdlResult`` with ``psd``, ``L``, ``D`` or ``reason``.
``check_gram(p, variables, basis, gram)``
    ``p == b'Gb`` expanded exactly and ``G`` PSD; ``squares_from_ldl``.
``round_program(program, numeric)``
    exact ``ExactSolution`` of a :class:`proofkit.sos.SearchProgram` (rounding
    ladder, exact least-norm repair, Peyrl–Parrilo projection, then
    ``verify_exact``); ``peyrl_parrilo_projection``, ``round_to``.
``solve_exactly(program)``
    the ladder for any program (solve, round, drop forced-zero monomials in a
    new program, other solver); ``ProgramOutcome`` with ``found``, ``exact``,
    ``reason``, ``attempts``, ``timings``. The caller's program is never changed.
``decompose(p, variables)``
    exact SOS certificate of one polynomial (``Decomposition`` with ``found``,
    ``basis``, ``gram``, ``squares()``, ``reason``, ``attempts``, ``timings``),
    with iterated facial reduction when no Gram matrix is positive definite.
``face_candidates``, ``exact_least_norm``
    facial reduction for singular Gram matrices: an exact range basis from the
    numerical kernel, the reduced Gram matrix moved exactly onto the identity.

Everything here is exact rational arithmetic; solver output only chooses
where to look. ``solve_exactly`` and ``decompose`` load cvxpy on first use.
"""

from __future__ import annotations

import importlib
from typing import TYPE_CHECKING

from proofkit.exact.check import GramCheck, check_gram, squares_from_ldl
from proofkit.exact.facial import exact_least_norm, face_candidates
from proofkit.exact.ldl import LdlResult, ldl_psd
from proofkit.exact.rounding import (
    DENOMINATOR_LADDER,
    ExactSolution,
    peyrl_parrilo_projection,
    round_program,
    round_to,
    verify_exact,
)

if TYPE_CHECKING:
    from proofkit.exact.decomposition import Decomposition, decompose
    from proofkit.exact.ladder import Attempt, ProgramOutcome, solve_exactly

_LAZY = {
    "Attempt": "ladder",
    "ProgramOutcome": "ladder",
    "solve_exactly": "ladder",
    "Decomposition": "decomposition",
    "decompose": "decomposition",
}

__all__ = [
    "DENOMINATOR_LADDER",
    "Attempt",
    "Decomposition",
    "ExactSolution",
    "GramCheck",
    "LdlResult",
    "ProgramOutcome",
    "check_gram",
    "decompose",
    "exact_least_norm",
    "face_candidates",
    "ldl_psd",
    "peyrl_parrilo_projection",
    "round_program",
    "round_to",
    "solve_exactly",
    "squares_from_ldl",
    "verify_exact",
]


def __getattr__(name: str) -> object:
    if name in _LAZY:
        return getattr(importlib.import_module(f"proofkit.exact.{_LAZY[name]}"), name)
    raise AttributeError(f"module 'proofkit.exact' has no attribute {name!r}")
