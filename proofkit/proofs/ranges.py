"""Claims ``E stable`` / ``E unstable`` over the parameter ranges: proved for every value,
or refuted at one.

Method ``range-linearization``: the exact characteristic polynomial of the
equilibrium as polynomials in the uncertain parameters (also at a moving point
with a square root, computed in Q[p][r]/(r^2 - g)), and a cover of the
parameter box by sub-boxes on which exact Bernstein coefficients fix the sign
of every Hurwitz condition (:mod:`proofkit.analysis.parametric`). When the
claim fails somewhere, a rational value where the exact Routh array
contradicts it is reported instead ("it breaks at rho = 25"). For a proved
claim, the stability margin per parameter (others at nominal) is found by
bisection on covers and carried in the evidence, so the audit checks it too.

Why Bernstein and not sums of squares with box multipliers: the Hurwitz
conditions of these claims are polynomials of low degree in one to three
parameters; Bernstein covers need no solver and no rounding, their evidence is
a list of boxes (a few hundred bytes), the audit re-derives every coefficient
with integer-sized rational arithmetic, and they find the refuting values as a
by-product. Measured in tests/perf/bench_ranges.py.

This module never reports "proved" itself: the audit decides.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

from proofkit.analysis.parametric import (
    Box,
    Cover,
    RangeSystem,
    cover_box,
    moving_point_json,
    range_system,
)
from proofkit.model import Claim, Model

__all__ = [
    "METHOD",
    "RangeAttempt",
    "attempt",
    "equilibrium_json",
    "margins_of",
    "stability_margin",
]

METHOD = "range-linearization"
THEOREM = {
    "stable": "range-indirect-method-stability",
    "unstable": "range-indirect-method-instability",
}
REFUTING = {
    "stable": "indirect-method-instability-at-a-value",
    "unstable": "indirect-method-stability-at-a-value",
}


@dataclass(frozen=True)
class RangeAttempt:
    """A certificate claim entry and a one-line detail for the user."""

    entry: dict[str, Any]
    detail: str
    trace: Any = None


def _poly(p: Any) -> list[Any]:
    return [[[int(k) for k in e], str(c)] for e, c in sorted(p.to_dict().items(), reverse=True)]


def _iv(lo: Fraction, hi: Fraction) -> list[str]:
    return [str(lo), str(hi)]


def equilibrium_json(model: Model, name: str) -> dict[str, Any] | None:
    """The claim's equilibrium when it moves with the parameters (``moving``), else None:
    a fixed point keeps the ``point`` that :func:`certificate.claim_structure` writes."""
    values = [v for _, v in model.equilibrium(name).point]
    uncertain = {p.symbol for p in model.params if p.is_uncertain}
    if not any(v.free_symbols & uncertain for v in values):
        return None
    moving = moving_point_json(model, name)
    return None if moving is None else {"name": name, "moving": moving}


def _set_point(entry: dict[str, Any], model: Model, claim: Claim) -> None:
    moving = equilibrium_json(model, claim.target or "")
    if moving is not None:
        entry["claim"]["equilibrium"] = moving


def _cover_json(cover: Cover) -> list[dict[str, Any]]:
    return [
        {"box": [_iv(lo, hi) for lo, hi in leaf.box], "signs": list(leaf.signs)}
        for leaf in cover.leaves
    ]


def _entry(model: Model, claim: Claim, status: str, **fields: Any) -> dict[str, Any]:
    from proofkit.certificate import claim_entry

    return claim_entry(model, claim, status, **fields)


def _not_proved(model: Model, claim: Claim, reason: str) -> RangeAttempt:
    return RangeAttempt(_entry(model, claim, "not proved", reason=reason), reason)


def _show(system: RangeSystem, pt: tuple[Fraction, ...]) -> str:
    return ", ".join(f"{n} = {v}" for n, v in zip(system.params, pt, strict=True))


def attempt(
    model: Model, claim: Claim, progress: Callable[[str], None] | None = None
) -> RangeAttempt | None:
    """Prove or refute a claim of scope ``range`` (stable, unstable, globally stable); None
    for nominal-scope claims and kinds without an equilibrium."""
    say = progress or (lambda _m: None)
    if claim.at_nominal or not any(p.is_uncertain for p in model.params):
        return None
    if claim.kind == "attracts" and claim.target in {e.name for e in model.equilibria}:
        return _by_lyapunov(model, claim, say, "")
    if claim.kind not in ("stable", "unstable", "globally stable", "attracts") or not claim.target:
        return None
    if claim.target not in {e.name for e in model.equilibria}:
        return _not_proved(model, claim, f"no declared equilibrium named {claim.target!r}")
    if claim.kind == "globally stable":
        if model.domain is not None:
            return _not_proved(
                model,
                claim,
                "the model declares a domain; a global claim needs "
                "the domain shown forward invariant, which is not certified yet",
            )
        return _by_lyapunov(model, claim, say, "")
    from proofkit.proofs._ranges_enclosure import attempt_enclosure

    by_enclosure = attempt_enclosure(model, claim, say)
    if by_enclosure is not None:
        return RangeAttempt(*by_enclosure)
    system = range_system(model, claim.target)
    if isinstance(system, str):
        result = _not_proved(model, claim, f"over the parameter ranges: {system}")
    else:
        say(f"{claim.text}: Bernstein cover of the parameter box")
        result = _from_cover(model, claim, system, cover_box(system, claim.kind), say)
    if claim.kind == "stable" and result.entry["status"] == "not proved" and _nonlinear(model):
        # a linear field with a root on the imaginary axis has no strict Lyapunov function
        return _by_lyapunov(model, claim, say, result.detail)
    return result


def _nonlinear(model: Model) -> bool:
    """Some right-hand side has a term of degree >= 2 in the states."""
    return model.is_polynomial() and model.degree() >= 2


def _by_lyapunov(model: Model, claim: Claim, say, before: str) -> RangeAttempt:
    """One Lyapunov function for the whole box (sums of squares with box multipliers)."""
    from proofkit.proofs._ranges_lyapunov import METHOD as LYAP
    from proofkit.proofs._ranges_lyapunov import THEOREM as LYAP_THEOREM
    from proofkit.proofs._ranges_lyapunov import search_range_lyapunov

    if claim.kind == "attracts":
        from proofkit.proofs._ranges_basin import search_range_basin

        evidence, detail = search_range_basin(model, claim, say)
    else:
        evidence, detail = search_range_lyapunov(model, claim, say)
    if evidence is None:
        reason = f"{before}; {detail}" if before else detail
        return _not_proved(model, claim, reason)
    entry = _entry(
        model, claim, "proved", method=LYAP, theorem=LYAP_THEOREM[claim.kind], evidence=evidence
    )
    if equilibrium_json(model, claim.target or "") is not None:
        entry["number_field"] = None
    _set_point(entry, model, claim)
    return RangeAttempt(entry, detail)


def _refuted(model: Model, claim: Claim, system: RangeSystem, point: Any) -> RangeAttempt:
    """Exact evidence that the claim fails at the parameter value ``point`` (a sub-box's)."""
    from proofkit.proofs._ranges_point import value_evidence

    kind = claim.kind
    at = _show(system, point)
    found = value_evidence(system, kind, point)
    if found is None:
        return _not_proved(
            model,
            claim,
            f"the claim fails at {at}, but no regular Routh array was found there to show it",
        )
    evidence, d = found
    entry = _entry(
        model,
        claim,
        "refuted",
        method=METHOD,
        theorem=REFUTING[kind],
        number_field={"sqrt": str(d)} if d else None,
        evidence=evidence,
    )
    _set_point(entry, model, claim)
    what = "a root in the right half plane" if kind == "stable" else "all roots in the left"
    return RangeAttempt(entry, f"it breaks at {at}: the linearization has {what} there")


def _from_cover(model: Model, claim: Claim, system: RangeSystem, cover: Cover, say) -> RangeAttempt:
    kind = claim.kind
    if cover.status == "fails":
        assert cover.point is not None
        return _refuted(model, claim, system, cover.point)
    if cover.status == "undecided":
        return _not_proved(model, claim, f"over the parameter ranges: {cover.reason}")
    evidence: dict[str, Any] = {
        "variables": list(system.variables),
        "characteristic_polynomial": [_poly(c) for c in system.charpoly],
        "conditions": [_poly(c) for c in system.conditions],
        "cover": _cover_json(cover),
    }
    if system.denominator_sign is not None:
        evidence["denominator_sign"] = system.denominator_sign
    say(f"{claim.text}: stability margins")
    margins = [stability_margin(system, kind, j) for j in range(len(system.params))]
    evidence["margins"] = [  # one per parameter, null when none was found
        None
        if m is None
        else {"parameter": system.params[j], "range": _iv(*m[0]), "cover": _cover_json(m[1])}
        for j, m in enumerate(margins)
    ]
    entry = _entry(
        model,
        claim,
        "proved",
        method=METHOD,
        theorem=THEOREM[kind],
        evidence=evidence,
    )
    if equilibrium_json(model, claim.target or "") is not None:
        entry["number_field"] = None  # a moving point carries its radical itself
    _set_point(entry, model, claim)
    ranges = ", ".join(
        f"{n} in [{lo}, {hi}]" for n, (lo, hi) in zip(system.params, system.box, strict=True)
    )
    count = len(cover.leaves)
    detail = (
        f"{'stable' if kind == 'stable' else 'unstable'} for every {ranges}: exact Bernstein "
        f"signs of the Hurwitz conditions on {count} sub-box{'es' if count != 1 else ''}"
    )
    shown = [_margin_text(system, j, m[0]) for j, m in enumerate(margins) if m is not None]
    if shown:
        detail += "; margin (the same holds, others at nominal): " + ", ".join(shown)
    return RangeAttempt(entry, detail)


# --- stability margins ------------------------------------------------------------------
def _covered(system: RangeSystem, kind: str, j: int, lo: Fraction, hi: Fraction) -> Cover:
    box: Box = tuple((lo, hi) if i == j else (v, v) for i, v in enumerate(system.nominal))
    return cover_box(system, kind, box=box, budget=400, seconds=1.0)  # type: ignore[arg-type]


DOUBLINGS = 7  # the margin search widens the declared range at most 2^7 - 1 times


def _search_limit(system: RangeSystem, j: int, sign: int) -> Fraction:
    lo, hi = system.box[j]
    width = max(hi - lo, Fraction(1, 1000))
    return (hi if sign > 0 else lo) + sign * width * (2**DOUBLINGS - 1)


def _margin_text(system: RangeSystem, j: int, ends: tuple[Fraction, Fraction]) -> str:
    lo, hi = ends
    tags = [
        " (search limit)" if end == _search_limit(system, j, sign) else ""
        for end, sign in ((lo, -1), (hi, 1))
    ]
    return f"{system.params[j]} in [{float(lo):.6g}{tags[0]}, {float(hi):.6g}{tags[1]}]"


def _extend(system: RangeSystem, kind: str, j: int, sign: int, seconds: float) -> Fraction:
    """The farthest end (above nominal for sign +1, below for -1) that still gets a cover."""
    nom = system.nominal[j]
    lo, hi = system.box[j]
    good = hi if sign > 0 else lo
    width = max(hi - lo, Fraction(1, 1000))
    deadline = time.monotonic() + seconds

    def ok(end: Fraction) -> bool:
        a, b = (nom, end) if sign > 0 else (end, nom)
        return _covered(system, kind, j, a, b).status == "covered"

    bad = None
    for k in range(DOUBLINGS):  # widen by doubling until a cover fails
        trial = good + sign * width * 2**k
        if time.monotonic() > deadline or not ok(trial):
            bad = trial
            break
        good = trial
    if bad is None:
        return good
    for _ in range(12):  # bisection between the last end covered and the first that was not
        if time.monotonic() > deadline:
            break
        mid = (good + bad) / 2
        if ok(mid):
            good = mid
        else:
            bad = mid
    return good


def stability_margin(
    system: RangeSystem, kind: str, j: int, seconds: float = 2.0
) -> tuple[tuple[Fraction, Fraction], Cover] | None:
    """The widest interval of parameter ``j`` around nominal (others at nominal) that a cover
    proves, by doubling then bisection; with its cover. None when none was found."""
    lo = _extend(system, kind, j, -1, seconds / 2)
    hi = _extend(system, kind, j, +1, seconds / 2)
    cover = _covered(system, kind, j, lo, hi)
    if cover.status != "covered":
        return None
    return (lo, hi), cover


def margins_of(entry: dict[str, Any]) -> list[dict[str, Any]]:
    """``[{"parameter", "range"}]`` of a proved range claim's entry (for --json and documents)."""
    ev = entry.get("evidence") or {}
    return [
        {"parameter": m["parameter"], "range": m["range"]} for m in ev.get("margins") or [] if m
    ]
