"""Schemas for Lyapunov's indirect method by enclosures over parameter ranges.

Method ``range-enclosure`` (scope ``range``; theorems
``range-indirect-method-stability-by-enclosure`` / ``-instability-``): a field
given as expression trees (``sin cos tan exp log sqrt tanh``), uncertain
parameters in their declared box, and an equilibrium whose point does not move
with them (a rational point, or an exact one such as ``pi/3``). The evidence
lists pieces that tile the parameter box; each piece states a parameter
sub-box ``P``, a state box ``X`` holding the claim's point, a preconditioner
``Y`` and a Jacobian enclosure with Routh signs, exactly as the nominal
``linearization-enclosure`` evidence, but everything is enclosed over ``X x P``:

- the field is defined on ``X x P`` (its conditions by interval bounds, every
  function by the enclosure arithmetic);
- ``K(X, P) = m - Y f(m, P) + (I - Y J(X, P))(X - m)`` lies strictly inside
  ``X``: for every ``p`` in ``P``, ``X`` holds exactly one zero of ``f(., p)``
  (the parametric Krawczyk test; Neumaier, *Interval Methods for Systems of
  Equations*, 1990, ch. 5);
- the stated Jacobian enclosure contains the audit's own enclosure of
  ``df/dx`` over ``X x P``, and the interval Routh first column over it has the
  stated, decided signs.

Then for every ``p`` in the box the one equilibrium in ``X`` (the declared
point) has that many eigenvalues in the right half plane. The pieces must lie
in the declared box and tile it (:func:`proofkit.audit.ranges.tiles`).

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, and never use floating point.
"""

from __future__ import annotations

import itertools
from fractions import Fraction
from typing import Any

from proofkit.audit.enclosures import piece_signs, read_precision
from proofkit.audit.numbers import FormatError
from proofkit.audit.ranges import tiles
from proofkit.audit.read import get, only_keys, read_vector
from proofkit.audit.schemas import Checks, ClaimData, ModelData, require, schema

__all__ = [
    "MAX_PIECES",
    "METHOD",
    "range_enclosure_refute_stable",
    "range_enclosure_refute_unstable",
    "range_enclosure_stable",
    "range_enclosure_unstable",
]

METHOD = "range-enclosure"
MAX_PIECES = 256
Interval = tuple[Fraction, Fraction]


def _read_parameters(data: Any, box: list[Interval], where: str) -> list[Interval]:
    if not isinstance(data, list) or len(data) != len(box):
        raise FormatError(f"{where}: one interval [lo, hi] per uncertain parameter")
    out = []
    for i, (iv, (lo, hi)) in enumerate(zip(data, box, strict=True)):
        a, b = (x.a for x in read_vector(iv, 0, f"{where}[{i}]", 2))
        require(a <= b, "parameters", f"{where}[{i}]: empty interval")
        require(lo <= a and b <= hi, "parameters", f"{where}[{i}]: outside the declared range")
        out.append((a, b))
    return out


def _pieces(
    model: ModelData, claim: ClaimData, checks: Checks, tiling: bool = True
) -> list[list[int]]:
    """Check every piece; the Routh signs of each, in order. ``tiling``: the pieces must
    tile the parameter box; otherwise (a refutation) one piece at one parameter value."""
    ev, w = claim.evidence, f"{claim.where}.evidence"
    only_keys(ev, {"precision", "pieces"}, w)
    require(claim.moving is None, "equilibrium", "the point must not move with the parameters")
    box = [p.range for p in model.uncertain if p.range is not None]
    require(bool(box), "parameters", "the model has no uncertain parameter")
    prec = read_precision(model, ev, w)
    data = get(ev, "pieces", list, w)
    if not data or len(data) > MAX_PIECES:
        raise FormatError(f"{w}.pieces: 1 to {MAX_PIECES} pieces")
    subs, signs = [], []
    for k, piece in enumerate(data):
        pw = f"{w}.pieces[{k}]"
        only_keys(piece, {"parameters", "box", "preconditioner", "jacobian", "routh_signs"}, pw)
        sub = _read_parameters(get(piece, "parameters", list, pw), box, f"{pw}.parameters")
        signs.append(piece_signs(model, claim, piece, prec, sub, checks, pw))
        subs.append(sub)
    if not tiling:
        one = len(subs) == 1 and all(lo == hi for lo, hi in subs[0])
        require(one, "value", "a refutation states one piece at one parameter value")
        at = ", ".join(
            f"{p.name} = {v}" for p, (v, _) in zip(model.uncertain, subs[0], strict=True)
        )
        checks.ok(
            f"at {at} (inside the ranges) the field is defined on X, K(X) lies strictly inside "
            "X (one equilibrium in X, the claim's point lies in X), the stated Jacobian "
            "enclosure contains the audit's own and its Routh signs are decided"
        )
        return signs
    require(tiles(subs, box), "cover", "the pieces do not tile the parameter box")
    names = ", ".join(
        f"{p.name} in [{lo}, {hi}]" for p, (lo, hi) in zip(model.uncertain, box, strict=True)
    )
    count = "1 piece" if len(subs) == 1 else f"{len(subs)} pieces"
    checks.ok(
        f"{count} tile the parameter box {names}; on each, with the parameters over its "
        "sub-box P, the field is defined on X x P, K(X, P) lies strictly inside X "
        "(parametric Krawczyk: one equilibrium in X for every p in P, and the claim's point "
        "lies in X), the stated Jacobian enclosure contains the audit's own over X x P, "
        "and its interval Routh first column has the stated, decided signs"
    )
    return signs


@schema("stable", METHOD, "range-indirect-method-stability-by-enclosure", scopes=("range",))
def range_enclosure_stable(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """Every Jacobian over every piece is Hurwitz: stable for every parameter value."""
    for signs in _pieces(model, claim, checks):
        require(all(s > 0 for s in signs), "theorem", "a first-column sign is not positive")
    checks.ok(
        "every first-column sign is positive on every piece: for every parameter value the "
        "equilibrium has every eigenvalue in the open left half plane"
    )


@schema("unstable", METHOD, "range-indirect-method-instability-by-enclosure", scopes=("range",))
def range_enclosure_unstable(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """A fixed sign change on every piece: unstable for every parameter value."""
    for signs in _pieces(model, claim, checks):
        changes = sum(1 for a, b in itertools.pairwise(signs) if a != b)
        require(changes >= 1, "theorem", "a piece shows no root in the right half plane")
    checks.ok(
        "every piece has a sign change in the first column: for every parameter value the "
        "equilibrium has an eigenvalue with positive real part"
    )


@schema(
    "stable",
    METHOD,
    "indirect-method-instability-at-a-value-by-enclosure",
    scopes=("range",),
    refutes=True,
)
def range_enclosure_refute_stable(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """At one parameter value an eigenvalue has positive real part: not stable for all."""
    (signs,) = _pieces(model, claim, checks, tiling=False)
    changes = sum(1 for a, b in itertools.pairwise(signs) if a != b)
    require(changes >= 1, "theorem", "no sign change: no root in the right half plane shown")
    checks.ok(
        f"{changes} eigenvalue(s) with positive real part there: the equilibrium is unstable "
        "at that value, so not stable for every value"
    )


@schema(
    "unstable",
    METHOD,
    "indirect-method-stability-at-a-value-by-enclosure",
    scopes=("range",),
    refutes=True,
)
def range_enclosure_refute_unstable(model: ModelData, claim: ClaimData, checks: Checks) -> None:
    """At one parameter value every eigenvalue has negative real part."""
    (signs,) = _pieces(model, claim, checks, tiling=False)
    require(all(s > 0 for s in signs), "theorem", "a first-column sign is not positive")
    checks.ok(
        "every first-column sign is positive there: the equilibrium is stable at that value, "
        "so not unstable for every value"
    )
