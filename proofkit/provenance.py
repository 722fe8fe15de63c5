"""Provenance: is the certificate about the model its embedded source defines?

The trusted audit (:mod:`proofkit.audit`) checks the mathematics on the
certificate's own data. This separate step closes the gap to the model text:
it checks the SHA-256 of the embedded source, re-parses that source with the
parser, and compares the states, parameters, nominal vector field, domain,
claims and the declared equilibrium points with what the certificate states.

It needs the parser, which is why it lives outside the audit package. It
never changes the certificate and never evaluates the source as Python.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from proofkit.certificate import model_section, number_json, sha256_text
from proofkit.errors import InputError

__all__ = ["ProvenanceReport", "check_provenance"]


@dataclass(frozen=True)
class ProvenanceReport:
    ok: bool
    checked: tuple[str, ...] = ()
    problems: tuple[str, ...] = field(default_factory=tuple)


def _norm_poly(p: Any) -> Any:
    if not isinstance(p, list):
        return p
    try:
        return sorted((tuple(t[0]), t[1]) for t in p)
    except (TypeError, IndexError, KeyError):
        return p


def _norm_section(sec: dict[str, Any]) -> dict[str, Any]:
    vf = sec.get("vector_field")
    dom = sec.get("domain")
    return {
        "states": sec.get("states"),
        "parameters": sec.get("parameters"),
        "vector_field": [_norm_poly(p) for p in vf] if isinstance(vf, list) else vf,
        "domain": [
            (_norm_poly(c.get("g")), c.get("strict")) if isinstance(c, dict) else c for c in dom
        ]
        if isinstance(dom, list)
        else dom,
    }


def check_provenance(cert: dict[str, Any]) -> ProvenanceReport:
    """Compare the certificate with its re-parsed embedded model source."""
    from proofkit import parse

    model = cert.get("model")
    claims = cert.get("claims") or []
    if model is None:
        if any(isinstance(c, dict) and c.get("kind") != "nonnegative" for c in claims):
            return ProvenanceReport(False, (), ("claims about a system need the model source",))
        return ProvenanceReport(True, ("no model: the claims are about stated polynomials only",))
    checked: list[str] = []
    problems: list[str] = []
    source = model.get("source", "")
    if not isinstance(source, str) or sha256_text(source) != model.get("source_sha256"):
        return ProvenanceReport(False, (), ("the SHA-256 of the embedded source does not match",))
    checked.append("SHA-256 of the embedded model source matches")
    try:
        parsed = parse(source, str(model.get("file") or "<certificate>"))
    except InputError as err:
        return ProvenanceReport(
            False, tuple(checked), (f"the embedded source does not parse: {err}",)
        )
    checked.append("the embedded source parses")
    fresh = _norm_section(model_section(parsed))
    stated = _norm_section(model)
    for key, words in (
        ("states", "states and their order"),
        ("parameters", "parameter nominal values and ranges"),
        ("vector_field", "vector field at the nominal parameters"),
        ("domain", "domain"),
    ):
        if fresh[key] == stated[key]:
            checked.append(f"{words}: the same as in the source")
        else:
            problems.append(f"the {words} differ from what the source defines")
    if len(claims) != len(parsed.claims):
        problems.append(
            f"the source has {len(parsed.claims)} claims, the certificate {len(claims)}"
        )
    nominal = parsed.at_nominal()
    for k, (c, mc) in enumerate(zip(claims, parsed.claims, strict=False)):
        if not isinstance(c, dict) or c.get("statement") != mc.text or c.get("kind") != mc.kind:
            problems.append(f"claim {k + 1} is not the source's claim {mc.text!r}")
            continue
        ev = c.get("evidence")
        if isinstance(ev, dict) and "point" in ev:
            if ev.get("equilibrium") != mc.target:
                problems.append(f"claim {k + 1}: evidence is for another equilibrium")
                continue
            nf = c.get("number_field")
            d = int(nf["sqrt"]) if isinstance(nf, dict) and str(nf.get("sqrt", "")).isdigit() else 0
            try:
                declared = nominal.equilibrium(mc.target or "").as_dict()
                want = [number_json(declared[s], d) for s in parsed.states]
            except (KeyError, ValueError) as exc:
                problems.append(f"claim {k + 1}: declared point not comparable ({exc})")
                continue
            if want != ev.get("point"):
                problems.append(f"claim {k + 1}: the point is not the declared {mc.target}")
    if not problems:
        checked.append("claims and declared equilibrium points agree with the source")
    return ProvenanceReport(not problems, tuple(checked), tuple(problems))
