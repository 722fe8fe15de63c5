"""Exact evidence from numerical hints: rational rounding, projection, LDL', checks.

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
``face_candidates``, ``exact_least_norm``
    facial reduction for singular Gram matrices: an exact range basis from the
    numerical kernel, the reduced Gram matrix moved exactly onto the identity.

Everything here is exact rational arithmetic; solver output only chooses
where to look.
"""

from __future__ import annotations

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

__all__ = [
    "DENOMINATOR_LADDER",
    "ExactSolution",
    "GramCheck",
    "LdlResult",
    "check_gram",
    "exact_least_norm",
    "face_candidates",
    "ldl_psd",
    "peyrl_parrilo_projection",
    "round_program",
    "round_to",
    "squares_from_ldl",
    "verify_exact",
]
