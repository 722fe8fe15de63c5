"""The largest certified region of attraction of one equilibrium (``proofkit basin``).

Runs the basin search degree by degree, makes the best iterate exact, writes
the certified set back into the model as a claim line (``claim E attracts
V(x - x*) <= level``, appended to the source so that provenance can check
it), builds the certificate and audits that exact text. "proved" comes only
from the audit's verdict together with the provenance check. The area or
volume is a numerical estimate with its method and error bound.

This module never reports a level the audit did not accept.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from fractions import Fraction
from typing import Any

import flint
import sympy as sp

from proofkit.model import Model

__all__ = ["BasinRun", "estimate_basin"]

Say = Callable[[str], None]
SECONDS_PER_DEGREE = 40.0
NOT_ATTEMPTED = "not attempted: 'proofkit basin' certifies only the region of attraction"


@dataclass
class BasinRun:
    """The outcome of one basin run; ``status`` is the audit's ("proved") or "not proved"."""

    equilibrium: str
    degree: int
    status: str
    reason: str = ""
    v_text: str | None = None  # sympy-readable, in the state names
    level: Fraction | None = None
    certificate: dict[str, Any] | None = None
    text: str | None = None
    audit: Any = None
    provenance: Any = None
    size: dict[str, Any] | None = None
    seconds: float = 0.0
    solver_seconds: float = 0.0
    history: list[tuple[int, int, float, float]] = field(default_factory=list)
    certificate_path: str | None = None

    def as_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {
            "equilibrium": self.equilibrium,
            "status": self.status,
            "degree": self.degree,
            "V": self.v_text,
            "level": str(self.level) if self.level is not None else None,
            "set": f"{self.v_text} <= {self.level}" if self.v_text else None,
            "certificate": self.certificate_path,
            "audited": self.status == "proved",
            "size": self.size,
            "seconds": round(self.seconds, 3),
            "solver_seconds": round(self.solver_seconds, 3),
            "iterations": [
                {"degree": d, "iteration": k, "level": round(c, 8), "scaled_size": round(s, 8)}
                for d, k, c, s in self.history
            ],
        }
        if self.reason:
            out["reason"] = self.reason
        return out

    to_json = as_json


def _v_in_states(model: Model, v: flint.fmpq_mpoly, point: tuple[Fraction, ...]) -> sp.Expr:
    """``V(x - x*)`` expanded, over the state symbols."""
    xs = model.state_symbols
    terms = []
    for exps, c in zip(v.monoms(), v.coeffs(), strict=True):
        mono = sp.Mul(
            *[(x - sp.Rational(p.numerator, p.denominator)) ** int(e)
              for x, p, e in zip(xs, point, exps, strict=True)]
        )  # fmt: skip
        terms.append(sp.Rational(int(c.p), int(c.q)) * mono)
    return sp.expand(sp.Add(*terms))


def _augmented(model: Model, name: str, v_x: sp.Expr, level: Fraction) -> tuple[Model, Any]:
    """The model with the certified claim appended to its source (and that claim)."""
    import proofkit
    from proofkit.lang import format_expr

    nominal = " at nominal" if any(p.is_uncertain for p in model.params) else ""
    line = f"claim {name} attracts {format_expr(v_x)} <= {level}{nominal}"
    text = model.source.rstrip("\n") + "\n\n# certified by proofkit basin\n" + line + "\n"
    aug = proofkit.parse(text, name=model.file)
    return aug, aug.claims[-1]


def _audited(model: Model, name: str, cert: Any, point: tuple[Fraction, ...]) -> BasinRun:
    from proofkit.audit import audit_text
    from proofkit.certificate import (
        claim_entry,
        dumps,
        model_section,
        new_certificate,
        not_proved_entry,
    )
    from proofkit.proofs.basin import METHOD, THEOREM
    from proofkit.provenance import check_provenance

    v_x = _v_in_states(model, cert.v, point)
    aug, claim = _augmented(model, name, v_x, cert.level)
    entry = claim_entry(
        aug, claim, "proved", method=METHOD, theorem=THEOREM, evidence=cert.evidence
    )
    others = [not_proved_entry(aug, c, NOT_ATTEMPTED) for c in aug.claims[:-1]]
    certificate = new_certificate(model_section(aug), [*others, entry])
    text = dumps(certificate)
    report = audit_text(text)
    prov = check_provenance(text, aug)
    verdict = report.claims[-1]
    ok = verdict.status == "proved" and prov.ok
    reason = "" if ok else (verdict.message or "; ".join(prov.problems) or verdict.status)
    return BasinRun(
        name, cert.degree, "proved" if ok else "not proved",
        reason=f"the audit refused it: {reason}" if reason else "",
        v_text=str(v_x), level=cert.level, certificate=certificate, text=text,
        audit=report, provenance=prov,
    )  # fmt: skip


def _certify_best(setup: Any, found: list[tuple[Any, Any]], say: Say) -> tuple[Any, str]:
    """The exact certificate of the last iterate that rounds exactly (latest degree first)."""
    from proofkit.proofs.basin import BasinCertificate, certify

    why = "no sublevel set was found"
    for search, it in reversed(found):
        say(f"exact rounding of the degree-{it.degree} set (level {it.level:.6g})")
        cert = certify(setup, search, it, set_from_level=True)
        if isinstance(cert, BasinCertificate):
            return cert, ""
        why = f"degree {it.degree}: {cert}"
    return None, why


def estimate_basin(
    model: Model,
    equilibrium: str | None = None,
    *,
    degree: int = 4,
    progress: Say | None = None,
    seconds_per_degree: float = SECONDS_PER_DEGREE,
) -> BasinRun:
    """The largest audited ``{V <= level}`` of this degree around ``equilibrium``."""
    from proofkit.proofs._basin_sim import numeric
    from proofkit.proofs._basin_size import size_of
    from proofkit.proofs.basin import MAX_GRAM, _lyapunov_start, run_search, setup_basin

    say = progress or (lambda _m: None)
    t0 = time.perf_counter()
    name = equilibrium or (model.equilibria[0].name if model.equilibria else "")
    setup = setup_basin(model, name, None, say)
    if isinstance(setup, str):
        return BasinRun(name, degree, "not proved", reason=setup)
    if _lyapunov_start(setup) is None:
        reason = (
            f"the linearization at {name} has an eigenvalue with real part >= 0 (numerically): "
            "no quadratic Lyapunov function to start from, no region of attraction searched"
        )
        return BasinRun(name, degree, "not proved", reason=reason, seconds=time.perf_counter() - t0)
    degrees = tuple(range(2, degree + 1, 2))
    found, solver = [], 0.0
    for search, it in run_search(setup, degrees, say, seconds_per_degree):
        found.append((search, it))
        solver = search.solver_seconds
    if not found:
        reason = (
            "no sublevel set was found: the linearization is not Hurwitz, no level of the "
            f"quadratic V was feasible, or the programs exceed {MAX_GRAM} rows"
        )
        return BasinRun(name, degree, "not proved", reason=reason, seconds=time.perf_counter() - t0)
    cert, why = _certify_best(setup, found, say)
    if cert is None:
        return BasinRun(name, degree, "not proved", reason=why, seconds=time.perf_counter() - t0)
    say("auditing the certificate")
    run = _audited(model, name, cert, setup.point)
    if run.status == "proved":
        say("estimating the size of the certified set")
        v_num = numeric([cert.v], len(model.states))[0]
        run.size = size_of(v_num, float(cert.level))
    run.history = list(cert.history)
    run.seconds = time.perf_counter() - t0
    run.solver_seconds = solver
    return replace(run, degree=cert.degree)
