"""The largest certified region of attraction of one equilibrium (``proofkit basin``).

Runs the basin search degree by degree, makes the best iterate exact, writes
the certified set back into the model as a claim line (``claim E attracts
V(x - x*) <= level``, appended to the source so that provenance can check
it), builds the certificate and audits that exact text. "proved" comes only
from the audit's verdict together with the provenance check. The area or
volume is a numerical estimate with its method and error bound.

Rational fields ``f_i = N_i / D_i``: the search runs on ``G = f Q`` (``Q`` the
product of the distinct denominators, positive at the point;
:func:`proofkit.proofs._nonpoly_basin.reparametrized_model`), and ``Q > 0`` on
the certified set is shown by a sum of squares
(``Q(x* + y) - eps - t (level - V)``); the certificate uses the method
``sublevel-set-rational`` with the same claim line ``V(x - x*) <= level``.

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
DENOMINATOR_STEPS = 4  # levels tried (each 0.8 of the last) to show Q > 0 on the set
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


def _audited(
    model: Model, name: str, cert: Any, point: tuple[Fraction, ...], den: dict | None = None
) -> BasinRun:
    from proofkit.audit import audit_text
    from proofkit.certificate import (
        claim_entry,
        dumps,
        model_section,
        new_certificate,
        not_proved_entry,
    )
    from proofkit.proofs import _nonpoly_basin, basin
    from proofkit.provenance import check_provenance

    v_x = _v_in_states(model, cert.v, point)
    aug, claim = _augmented(model, name, v_x, cert.level)
    method, theorem, evidence = basin.METHOD, basin.THEOREM, cert.evidence
    if den is not None:  # a rational field: the evidence for G = f Q, and Q > 0 on the set
        method, theorem = _nonpoly_basin.METHOD, _nonpoly_basin.THEOREM
        evidence = {"reparametrized": cert.evidence, "denominator": den}
    entry = claim_entry(aug, claim, "proved", method=method, theorem=theorem, evidence=evidence)
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


def _certify_best(
    setup: Any, found: list[tuple[Any, Any]], say: Say, rational: Any = None
) -> tuple[Any, Any, str]:
    """The exact certificate of the last iterate that rounds exactly (latest degree first).

    With ``rational = (model, Q)`` also the evidence that ``Q > 0`` on the set (the
    level is stepped back when it cannot be shown); otherwise that evidence is None.
    """
    from proofkit.proofs.basin import BasinCertificate, certify

    why = "no sublevel set was found"
    for search, it in reversed(found):
        for k in range(DENOMINATOR_STEPS if rational else 1):
            step = replace(it, level=it.level * 0.8**k)
            say(f"exact rounding of the degree-{it.degree} set (level {step.level:.6g})")
            cert = certify(setup, search, step, set_from_level=True)
            if not isinstance(cert, BasinCertificate):
                why = f"degree {it.degree}: {cert}"
                break
            if rational is None:
                return cert, None, ""
            den = _positive_denominator(rational, setup, cert)
            if den is not None:
                return cert, den, ""
            why = (
                f"degree {it.degree}: the denominators were not shown positive on the "
                "certified set (the level was stepped back)"
            )
    return None, None, why


def _positive_denominator(rational: Any, setup: Any, cert: Any) -> dict | None:
    """Evidence that ``Q(x* + y) - eps - t (level - V)`` and ``t`` are sums of squares."""
    from proofkit.proofs._basin_exact import poly_json
    from proofkit.proofs._nonpoly_basin import _denominator_evidence

    model, q = rational
    ev = {"V": poly_json(cert.v), "numbers": {"level": str(cert.level)}}
    return _denominator_evidence(q, model, list(setup.point), ev)


def _natural_domain(setup: Any, q: sp.Expr) -> tuple[Any, Any]:
    """(search setup, certify setup): the search also keeps the set in ``Q >= Q(x*)/16``.

    The natural domain of a rational field bounds the search (so the level does not
    run past a pole); the certificate does not state it: ``Q > 0`` on the set is
    shown by its own sum of squares. Both setups share the scaled coordinates.
    """
    from proofkit.proofs.basin import _domain_capped

    st = setup.setting
    xs = list(st.space.variables)
    shift = {
        x: x + sp.Rational(p.numerator, p.denominator) for x, p in zip(xs, setup.point, strict=True)
    }
    q_y = st.space.coerce(sp.expand(q.subs(shift, simultaneous=True)))
    q0 = q_y.coeffs()[q_y.monoms().index((0,) * st.n)]
    h = q_y - st.space.const(q0 / 16)
    scale = _domain_capped(st.scale, [d for d, _ in st.domain] + [h], st.n)
    exact = replace(st, scale=scale)
    field_z = []
    for gi, di in zip(st.g, scale, strict=True):  # dz/dt = g(D z) / D, as setup_basin
        gz = exact.to_z(gi)
        field_z.append(type(gz)(gz.exps, gz.coeffs / float(di)))
    search = replace(setup, setting=replace(exact, domain=(*st.domain, (h, False))))
    return replace(search, field_z=field_z), replace(setup, setting=exact, field_z=field_z)


def _rational_field(model: Model, name: str, say: Say) -> tuple[Model, Any] | str | None:
    """``(G = f Q as a model, Q)`` for a rational field, a reason it cannot be, or None."""
    from proofkit.certificate import model_section

    if model.is_polynomial():
        return None
    field_json = model_section(model).get("field")
    if field_json is None or field_json.get("denominators") is None:
        return (
            "the vector field is neither polynomial nor rational; 'proofkit basin' covers "
            "polynomial and rational fields (for sin, cos, exp fields state an 'attracts' "
            "claim and run 'proofkit prove')"
        )
    from proofkit.proofs._nonpoly_basin import reparametrized_model
    from proofkit.proofs.basin import _rational_point

    point = _rational_point(model, name)
    if isinstance(point, str):
        return point
    g_model, q = reparametrized_model(model, list(point))
    say(f"multiplying through by the denominators: Q = {q} (positive at {name})")
    return g_model, q


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
    rational = _rational_field(model, name, say)
    if isinstance(rational, str):
        return BasinRun(name, degree, "not proved", reason=rational)
    prefix = "on the field multiplied by its denominators: " if rational else ""

    def fail(reason: str) -> BasinRun:
        took = time.perf_counter() - t0
        return BasinRun(name, degree, "not proved", reason=prefix + reason, seconds=took)

    setup = setup_basin(rational[0] if rational else model, name, None, say)
    if isinstance(setup, str):
        return fail(setup)
    exact_setup = setup
    if rational:
        setup, exact_setup = _natural_domain(setup, rational[1])
    if _lyapunov_start(setup) is None:
        return fail(
            f"the linearization at {name} has an eigenvalue with real part >= 0 (numerically): "
            "no quadratic Lyapunov function to start from, no region of attraction searched"
        )
    degrees = tuple(range(2, degree + 1, 2))
    found, solver = [], 0.0
    for search, it in run_search(setup, degrees, say, seconds_per_degree):
        found.append((search, it))
        solver = search.solver_seconds
    if not found:
        return fail(
            "no sublevel set was found: the linearization is not Hurwitz, no level of the "
            f"quadratic V was feasible, or the programs exceed {MAX_GRAM} rows"
        )
    rat = (model, rational[1]) if rational else None
    cert, den, why = _certify_best(exact_setup, found, say, rat)
    if cert is None:
        return fail(why)
    say("auditing the certificate")
    run = _audited(model, name, cert, setup.point, den)
    if run.status == "proved":
        say("estimating the size of the certified set")
        v_num = numeric([cert.v], len(model.states))[0]
        run.size = size_of(v_num, float(cert.level))
    run.history = list(cert.history)
    run.seconds = time.perf_counter() - t0
    run.solver_seconds = solver
    return replace(run, degree=cert.degree)
