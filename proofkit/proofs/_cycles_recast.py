"""``no cycle in SET`` for planar sin/cos/exp/tanh fields: a Dulac function in recast variables.

Recasting (Papachristodoulou and Prajna, 2005) around a rational zero of the
field (:func:`proofkit.proofs._recast_system.build_system`): ``z = (y, S, C,
..., E, ..., T, ...)`` with ``f_i(x) = F_i(z(x))``. A polynomial ``B`` over
``z`` is searched with ``P - 1 - sum s_i g_i - sum lambda_k circle_k`` a sum of
squares, where ``P`` is ``div(B(z(x)) f(x))`` written by the chain rule
(``dS/dx_i = (C + 1) d delta/dy_i``, ``dC/dx_i = -S d delta/dy_i``, ``dE/dx_i
= (E + 1) d delta/dy_i``, ``dT/dx_i = (1 - T^2) d delta/dy_i``), ``g_i`` the
claim set's conditions and ``circle_k = S_k^2 + C_k^2 + 2 C_k`` (free
multipliers ``lambda_k``); with constants in Q(sqrt d) once per end of a
rational enclosure of sqrt d (``P`` is affine in it). Multipliers are named
``"<obligation> * <label>"``. The audit schema ``bendixson-dulac-recast``
(``proofkit/audit/_recast_cycles.py``) derives the recast system and ``P``
itself.

This module proposes evidence only (the audit decides) and never evaluates user text.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from fractions import Fraction
from math import isqrt
from typing import Any

import sympy as sp

from proofkit.certificate import claim_entry, claim_structure, model_section, not_proved_entry
from proofkit.model import Claim, Model
from proofkit.proofs import ProofAttempt

__all__ = ["B_DEGREES", "METHOD", "THEOREM", "attempt", "dulac_search", "enclosure"]

METHOD = "dulac-recast"
THEOREM = "bendixson-dulac-recast"
B_DEGREES = (0, 1, 2)
MAX_RECAST_VARIABLES = 6  # states plus recast variables (bounded program size)
TIME_BUDGET = 60.0  # seconds per claim: no higher degree is started after it
Progress = Callable[[str], None]


def _sym(p: Any, zs: list[sp.Symbol]) -> sp.Expr:
    """A flint polynomial over z as a sympy expression."""
    out = sp.Integer(0)
    for e, c in zip(p.monoms(), p.coeffs(), strict=True):
        q = Fraction(int(c.p), int(c.q))
        out += sp.Rational(q.numerator, q.denominator) * sp.Mul(
            *[z**k for z, k in zip(zs, e, strict=False)]
        )
    return out


def _poly(terms: list[Any], xs: list[sp.Expr]) -> sp.Expr:
    out = sp.Integer(0)
    for exps, c in terms:
        q = Fraction(c)
        out += sp.Rational(q.numerator, q.denominator) * sp.Mul(
            *[x**k for x, k in zip(xs, exps, strict=True)]
        )
    return out


def _origins(section: dict[str, Any]) -> list[list[Fraction]]:
    """Declared rational equilibria, then the origin of the state space."""
    out = []
    for eq in section.get("equilibria") or []:
        pt = eq.get("point")
        if pt is not None and all(isinstance(c, str) for c in pt):
            out.append([Fraction(c) for c in pt])
    zero = [Fraction(0)] * len(section["states"])
    return [*out, zero] if zero not in out else out


def _rules(system: Any, zs: list[sp.Symbol]) -> list[tuple[int, sp.Expr, sp.Expr]]:
    """(index in z, derivative rule, delta over z) per recast variable, in z order."""
    n, out, k = system.n, [], system.n
    for kind, dz in system.deltas:
        delta = _sym(dz, zs)
        if kind == "trig":
            s, c = zs[k], zs[k + 1]
            out += [(k, c + 1, delta), (k + 1, -s, delta)]
            k += 2
        elif kind == "exp":
            out.append((k, zs[k] + 1, delta))
            k += 1
        else:
            out.append((k, 1 - zs[k] ** 2, delta))
            k += 1
    assert k == system.nz and n == len(system.point)
    return out


def enclosure(d: int, bits: int = 30) -> tuple[Fraction, Fraction] | None:
    """``lo <= sqrt(d) <= hi`` with ``hi - lo = 2^-bits`` (None for rational fields)."""
    if d == 0:
        return None
    r = isqrt(d << (2 * bits))
    return Fraction(r, 1 << bits), Fraction(r + 1, 1 << bits)


def _divergence(b: Any, field: list[sp.Expr], rules: list, zs: list[sp.Symbol]) -> Any:
    """``div(B f)`` in recast variables by the chain rule (an expression affine in B)."""
    div = None
    for i, fi in enumerate(field):
        h = b * fi
        term = h.diff(i)
        for j, rule, delta in rules:
            dd = sp.expand(sp.diff(delta, zs[i]) * rule)
            if dd != 0:
                term = term + h.diff(j) * dd
        div = term if div is None else div + term
    return div


def dulac_search(system: Any, conds: list[sp.Expr], degree: int) -> dict[str, Any] | str:
    """Exact evidence for ``div(B f) >= 1`` on the set in recast variables, or the reason.

    With constants in Q(sqrt d), one obligation per end of the enclosure of sqrt d.
    """
    from proofkit.exact import solve_exactly
    from proofkit.exact.rounding import unknown_poly
    from proofkit.proofs._cycles_search import _poly_json, _write
    from proofkit.sos import SearchProgram, full_basis

    nz, n = system.nz, system.n
    zs = list(sp.symbols(f"z0:{nz}", real=True))
    prog = SearchProgram(zs)
    b = prog.free("B", full_basis(nz, degree))
    rules = _rules(system, zs)
    enc = enclosure(system.d)
    mults, free = [], []
    for label, fld in system.vertex_fields(enc):
        name = f"divergence {label}".strip()
        field = [_sym(a, zs) for a in fld[:n]]
        target = _divergence(b, field, rules, zs) - 1
        fdeg = max(sp.Poly(f, *zs).total_degree() for f in field if f != 0)
        top = 2 * ((degree + fdeg + 2) // 2)
        for i, g in enumerate(conds):
            gdeg = sp.Poly(g, *zs).total_degree()
            s = prog.sos(f"{name} * set {i + 1}", full_basis(nz, max(top - gdeg, 0) // 2))
            target = target - s * g
            mults.append(s.name)
        for circle, h in system.equalities:
            lam = prog.free(f"{name} * {circle}", full_basis(nz, max(top - 2, 0)))
            target = target - lam * _sym(h, zs)
            free.append(lam.name)
        prog.require_sos(target, name)
    out = solve_exactly(prog)
    if not out.found:
        return out.reason or "no exact solution"
    bpoly = unknown_poly(prog.space, b, out.exact.values["B"])
    if bpoly.is_zero():
        return "the Dulac function came out zero"
    ev = {"B": _poly_json(bpoly), "numbers": {"eps": "1"}}
    recast = {"taylor_order": 0, "enclosure": None if enc is None else [str(v) for v in enc]}
    return {"recast": recast, **ev, **_write(prog, out.exact, mults, free)}


def attempt(model: Model, claim: Claim, progress: Progress | None = None) -> ProofAttempt | None:
    """Evidence for ``no cycle in SET`` on a planar sin/cos/exp/tanh field, or None."""
    if claim.kind != "no cycle":
        return None
    section = model_section(model)
    trees = (section.get("expressions") or {}).get("components")
    if not trees:
        return None
    why = _problem(model, claim)
    if why:
        return ProofAttempt(not_proved_entry(model, claim, why), why)
    return _search(model, claim, section, trees, progress or (lambda _m: None))


def _problem(model: Model, claim: Claim) -> str:
    from proofkit.certificate import claim_scope

    if claim_scope(model, claim) != "nominal":
        return "cycle claims are proved at the nominal parameter values only"
    if len(model.states) != 2:
        return "cycle claims are proved for planar systems (two states) only"
    if any(not p.nominal.is_Rational for p in model.params if p.is_uncertain):
        return "a nominal parameter value is not rational"
    if claim_structure(model, claim).get("set") is None:
        return "the claim's set is not given by polynomial conditions"
    return ""


def _search(
    model: Model, claim: Claim, section: dict[str, Any], trees: list[Any], say: Progress
) -> ProofAttempt:
    from proofkit.proofs._cycles_search import Planar
    from proofkit.proofs._recast_system import Unsupported, build_system
    from proofkit.proofs.cycles import _convex

    nominal = [Fraction(int(p.nominal.p), int(p.nominal.q)) for p in model.params if p.is_uncertain]
    raw = claim_structure(model, claim)["set"]
    xs = list(sp.symbols("x0:2", real=True))
    conds = [(_poly(c["g"], xs), bool(c["strict"])) for c in raw]
    why = _convex(Planar((xs[0], xs[1]), (sp.Integer(0), sp.Integer(0)), tuple(conds)))
    if why is not None:
        return ProofAttempt(not_proved_entry(model, claim, why), why)
    notes, t0 = [], time.perf_counter()
    for origin in _origins(section):
        try:
            system = build_system(trees, origin, nominal, 0)
        except Unsupported as exc:
            notes.append(f"around {tuple(map(str, origin))}: {exc}")
            continue
        if system.nz > MAX_RECAST_VARIABLES:
            notes.append(
                f"{system.nz} recast variables; the Dulac search takes at most "
                f"{MAX_RECAST_VARIABLES}"
            )
            break
        zs = list(sp.symbols(f"z0:{system.nz}", real=True))
        shift = {
            x: z + sp.Rational(o.numerator, o.denominator)
            for x, z, o in zip(xs, zs, origin, strict=False)
        }
        shifted = [sp.expand(g.subs(shift, simultaneous=True)) for g, _s in conds]
        for degree in B_DEGREES:
            if time.perf_counter() - t0 > TIME_BUDGET:
                notes.append(f"time budget of {TIME_BUDGET:.0f} s used up")
                break
            say(f"no cycle: Dulac function of degree {degree} in {', '.join(system.names)}")
            found = dulac_search(system, shifted, degree)
            if isinstance(found, dict):
                evidence = {"origin": [str(o) for o in origin], **found}
                entry = claim_entry(
                    model, claim, "proved", method=METHOD, theorem=THEOREM, evidence=evidence
                )
                detail = f"Dulac function B(z) of degree {degree} in {', '.join(system.names)}"
                return ProofAttempt(entry, detail)
        notes.append(f"no Dulac function of degree <= {degree} in the recast variables found")
        break
    reason = "; ".join(notes[-2:]) or "no rational zero of the field to recast around"
    return ProofAttempt(not_proved_entry(model, claim, reason), reason)
