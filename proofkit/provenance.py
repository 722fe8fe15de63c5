"""Provenance: is the certificate about the model its embedded source defines?

The trusted audit (:mod:`proofkit.audit`) checks the mathematics on the
certificate's own data and renders each claim from its structure. This
separate step closes the gap to the model text: it checks the SHA-256 of the
embedded source, parses that source (or reuses the model already parsed from
the same text), and compares the states, parameters, field, domain,
conditions and every claim's structure (kind, equilibrium and point, set,
scope) and number field with what the certificate states.

It needs the parser, which is why it lives outside the audit package; it
must never be mistaken for the trusted core. It never changes the certificate
and never evaluates the source as Python.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

from proofkit.certificate import (
    MalformedCertificate,
    claim_number_field,
    claim_structure,
    loads,
    model_section,
    sha256_text,
)
from proofkit.errors import ProofkitError

if TYPE_CHECKING:
    from proofkit.model import Model

__all__ = ["ProvenanceReport", "check_provenance"]

COMPARED = (
    ("states", "states and their order"),
    ("parameters", "parameter nominal values and ranges"),
    ("field", "vector field (fixed parameters substituted)"),
    ("expressions", "vector field's expression trees (non-rational fields)"),
    ("domain", "domain"),
    ("conditions", "conditions where the field is defined"),
    ("equilibria", "declared equilibria and their points"),
)


@dataclass(frozen=True)
class ProvenanceReport:
    ok: bool
    checked: tuple[str, ...] = ()
    problems: tuple[str, ...] = field(default_factory=tuple)


def _is_term(t: Any) -> bool:
    return isinstance(t, list) and len(t) == 2 and isinstance(t[0], list)


def _norm(value: Any) -> Any:
    """Polynomials compared as sets of terms; everything else as is."""
    if isinstance(value, dict):
        return {k: _norm(v) for k, v in value.items()}
    if isinstance(value, list):
        if value and all(
            isinstance(t, list) and len(t) == 2 and isinstance(t[0], list) for t in value
        ):
            try:
                return sorted((tuple(t[0]), str(t[1])) for t in value)
            except TypeError:
                return value
        return [_norm(v) for v in value]
    return value


def _parsed(model: dict[str, Any], given: Model | None) -> tuple[Model | None, str]:
    source = model.get("source", "")
    if given is not None and given.source == source:
        return given, "the model already parsed from this exact source text is reused"
    from proofkit import parse

    try:
        return parse(
            source, str(model.get("file") or "<certificate>")
        ), "the embedded source parses"
    except ProofkitError as err:
        return None, f"the embedded source does not parse: {err}"


def _claims(cert: dict[str, Any], parsed: Model, problems: list[str]) -> None:
    claims = cert.get("claims") or []
    if len(claims) != len(parsed.claims):
        problems.append(
            f"the source has {len(parsed.claims)} claims, the certificate {len(claims)}"
        )
    for k, (c, mc) in enumerate(zip(claims, parsed.claims, strict=False)):
        if not isinstance(c, dict) or c.get("statement") != mc.text:
            problems.append(f"claim {k + 1} is not the source's claim {mc.text!r}")
            continue
        if _norm(c.get("claim")) != _norm(claim_structure(parsed, mc)):
            problems.append(
                f"claim {k + 1}: its structure (kind, equilibrium, set or scope) is not "
                f"what the source's claim {mc.text!r} says"
            )
            continue
        if c.get("status") != "not proved":
            d = claim_number_field(parsed, mc)
            want = {"sqrt": str(d)} if d else None
            if c.get("number_field") != want:
                problems.append(f"claim {k + 1}: the number field is not the point's")


def check_provenance(cert: str | dict[str, Any], model: Model | None = None) -> ProvenanceReport:
    """Compare the certificate with its embedded model source.

    ``model``: a model already parsed; reused only when its source text is
    exactly the certificate's embedded source.
    """
    try:
        data = loads(cert) if isinstance(cert, str) else cert
    except MalformedCertificate as exc:
        return ProvenanceReport(False, (), (str(exc),))
    section = data.get("model")
    claims = data.get("claims") or []
    if section is None:
        if any(not isinstance(c, dict) or (c.get("claim") or {}).get("kind") != "nonnegative"
               for c in claims):  # fmt: skip
            return ProvenanceReport(False, (), ("claims about a system need the model source",))
        return ProvenanceReport(True, ("no model: the claims are about stated polynomials only",))
    source = section.get("source")
    if not isinstance(source, str) or sha256_text(source) != section.get("source_sha256"):
        return ProvenanceReport(False, (), ("the SHA-256 of the embedded source does not match",))
    checked = ["SHA-256 of the embedded model source matches"]
    parsed, note = _parsed(section, model)
    if parsed is None:
        return ProvenanceReport(False, tuple(checked), (note,))
    checked.append(note)
    problems: list[str] = []
    try:
        fresh = model_section(parsed)
        for key, words in COMPARED:
            if _norm(fresh.get(key)) == _norm(section.get(key)):
                checked.append(f"{words}: the same as in the source")
            else:
                problems.append(f"the {words} differ from what the source defines")
        _claims(data, parsed, problems)
    except (AttributeError, TypeError, KeyError, ValueError) as exc:
        problems.append(f"the certificate could not be compared with the source: {exc}")
    if not problems:
        checked.append("every claim's structure, scope and number field agree with the source")
    return ProvenanceReport(not problems, tuple(checked), tuple(problems))
