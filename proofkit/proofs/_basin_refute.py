"""Counterexamples to ``claim E attracts SET``: another equilibrium in SET, or a simulation.

An equilibrium other than ``E`` that lies in SET (checked exactly) stays where
it is, so it never converges to ``E``. Otherwise start points of SET are
simulated (:mod:`proofkit.proofs._basin_sim`); a trajectory that leaves a
large ball or settles at another equilibrium refutes the claim, shown with its
exact rational start point (checked exactly to lie in SET) and its samples.
Simulation is numerical evidence and is labelled so. When a claim was proved,
the same search must find nothing; if it does, that is an internal error.
"""

from __future__ import annotations

from typing import Any

import flint
import numpy as np

from proofkit.certificate import claim_entry, not_proved_entry
from proofkit.model import Claim, Model
from proofkit.proofs import ProofAttempt
from proofkit.proofs._basin_sim import Counterexample, find_counterexample

__all__ = ["DisagreementError", "refute"]

THEOREM = "counterexample-by-simulation"


class DisagreementError(RuntimeError):
    """A proved sublevel set and a simulation disagree: a bug, reported loudly."""


def _equilibrium_in_set(model: Model, claim: Claim, setup: Any) -> Counterexample | None:
    """A declared equilibrium other than the claim's, lying in SET exactly."""
    nominal = model.nominal_values()
    for eq in model.equilibria:
        if eq.name == claim.target:
            continue
        vals = [eq.as_dict()[s].subs(nominal) if nominal else eq.as_dict()[s] for s in model.states]
        if not all(v.is_Rational for v in vals):
            continue
        y = [flint.fmpq(int(v.p), int(v.q)) - flint.fmpq(p.numerator, p.denominator)
             for v, p in zip(vals, setup.point, strict=True)]  # fmt: skip
        if all((g(*y) > 0) if strict else (g(*y) >= 0) for g, strict in setup.setting.set_conds):
            from fractions import Fraction

            start = tuple(Fraction(int(v.p), int(v.q)) for v in vals)
            x = np.array([[float(v) for v in vals]] * 2)
            return Counterexample(
                start,
                f"is the equilibrium {eq.name}: f vanishes there exactly, the state never moves",
                "equilibrium", 0.0, np.array([0.0, 1.0]), x,
            )  # fmt: skip
    return None


def refute(
    model: Model, claim: Claim, setup: Any, must_fail: bool = False, seed: int = 11
) -> ProofAttempt | None:
    """A refuted entry with its counterexample, or None; ``must_fail``: the claim was proved."""
    cx = None if must_fail else _equilibrium_in_set(model, claim, setup)
    if cx is None:
        reach = max(float(s) for s in setup.setting.scale)
        cx = find_counterexample(
            setup.field_y, setup.point, setup.setting.set_conds, reach, seed=seed
        )
    if cx is None:
        return None
    if must_fail:
        raise DisagreementError(
            f"internal error: {claim.text!r} was certified, but the trajectory from "
            f"{[str(c) for c in cx.start]} {cx.what}; please report this bug"
        )
    if cx.kind == "equilibrium":  # exact evidence: the audit re-checks it
        method, theorem = "equilibrium-in-set", "another-equilibrium-in-the-set"
        evidence: dict[str, Any] = {"point": [str(c) for c in cx.start]}
    else:
        method, theorem = "simulation", THEOREM
        evidence = {"start": [str(c) for c in cx.start], "kind": cx.kind}
    entry = claim_entry(
        model, claim, "refuted", method=method, theorem=theorem,
        evidence=evidence, counterexample=cx.as_json(),
    )  # fmt: skip
    start = ", ".join(f"{s} = {c}" for s, c in zip(model.states, cx.start, strict=True))
    detail = f"the claim is false: the trajectory from {start} {cx.what}"
    if not _audit_accepts(model, entry):  # a simulation: numerical, not audited
        reason = (
            f"{detail} (numerical evidence: the audit cannot re-check a simulation; "
            "re-simulate from the exact start point to confirm)"
        )
        entry = not_proved_entry(model, claim, reason)
        entry["counterexample"] = cx.as_json()
        return ProofAttempt(entry, reason, cx)
    return ProofAttempt(entry, detail, cx)


def _audit_accepts(model: Model, entry: dict[str, Any]) -> bool:
    from proofkit.audit import audit_certificate
    from proofkit.certificate import model_section, new_certificate

    report = audit_certificate(new_certificate(model_section(model), [entry]))
    return report.claims[0].status == "refuted"
