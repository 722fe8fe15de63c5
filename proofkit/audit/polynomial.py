"""Schema ``sum-of-squares``: a stated polynomial is nonnegative on R^n.

For certificates without a model (``proofkit`` as a sum-of-squares checker):
the evidence is ``{"variables": [...], "p": POLY, "squares": {"p": {basis,
gram}}}`` and the one obligation is ``p`` itself. If ``p = z'Gz`` with ``G``
positive semidefinite, then ``p`` is a sum of squares, hence ``p >= 0``.

This module must never import anything outside the standard library and
:mod:`proofkit.audit`.
"""

from __future__ import annotations

from proofkit.audit.numbers import FormatError
from proofkit.audit.read import MAX_VARIABLES, get, only_keys
from proofkit.audit.schemas import (
    Checks,
    ClaimData,
    ModelData,
    check_squares,
    read_function,
    require,
    schema,
)

__all__ = ["nonnegative"]


@schema("nonnegative", "sum-of-squares", "sum-of-squares")
def nonnegative(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """Hypothesis: p equals z'Gz with G symmetric positive semidefinite."""
    ev, w = claim.evidence, f"{claim.where}.evidence"
    only_keys(ev, {"variables", "p", "squares"}, w)
    names = get(ev, "variables", list, w)
    if not (
        0 < len(names) <= MAX_VARIABLES
        and all(isinstance(v, str) and v.isidentifier() for v in names)
        and len(set(names)) == len(names)
    ):
        raise FormatError(f"{w}.variables: expected distinct variable names")
    require(claim.d == 0, "number field", "sum-of-squares evidence is rational")
    p = read_function(ev, "p", len(names), w)
    check_squares({"p": p}, ev, len(names), checks, w)
    checks.ok("p is a sum of squares, hence p >= 0 at every real point")
