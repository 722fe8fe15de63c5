"""The proof document as a list of blocks, built from a certificate and its audit report.

:func:`build_document` takes the certificate, the :class:`AuditReport` that the
proving run (or ``proofkit audit``) produced for exactly that certificate, and
a :class:`DocumentMeta`; it refuses a report that does not belong to the
certificate (digest, claim count, statements, statuses) and never re-audits.
Each claim section comes from ``_claims`` (generic over proof kinds); the
Markdown and LaTeX writers only lay the blocks out.

May import: ``proofkit.certificate`` (typed views), ``proofkit.audit`` (the
``AuditReport`` type and ``certificate_digest``), ``report._claims``,
``report._blocks``, ``report._math``. Must never import
``proofkit.audit.algebra`` or ``proofkit.audit.numbers``, read solver output,
or render a claim as proved that the audit did not accept.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from proofkit.audit import AuditReport, certificate_digest
from proofkit.certificate import CertificateView, ModelView, read
from proofkit.report._blocks import Block, Seg, m, para, t
from proofkit.report._claims import THEOREMS, claim_blocks
from proofkit.report._math import latex_name, latex_number, latex_poly

__all__ = ["CAUTIONS", "Block", "DocumentMeta", "Seg", "build_document"]

THEOREM_NAMES = {k: v[0] for k, v in THEOREMS.items()}  # for callers that show names only


@dataclass(frozen=True)
class DocumentMeta:
    command: str
    certificate_sha256: str
    version: str
    figure: str | None = None  # file name of the phase portrait, if drawn
    certificate_name: str = "certificate.json"


CAUTIONS = (
    "The proof covers the model as written, not the physical plant. Unmodelled dynamics, "
    "sampling, time delays, actuator saturation, quantisation and parameter drift can void it.",
    "Local results (Lyapunov's indirect method) say nothing about how large the region of "
    "attraction is; do not read them as a margin.",
    "Where parameters are uncertain, results marked at nominal hold for the nominal values only.",
    "Counterexamples found by simulation are numerical evidence; their start points are exact.",
    "This document supports, and does not replace, the applicable safety standards, local "
    "codes and a qualified engineering review.",
)


def _check_consistent(cert: dict[str, Any], view: CertificateView, audit: AuditReport) -> None:
    if audit.certificate_digest != certificate_digest(cert) or len(view.claims) != len(
        audit.claims
    ):
        raise ValueError("the audit report does not belong to this certificate")
    for c, v in zip(view.claims, audit.claims, strict=True):
        if v.statement != c.statement or c.status != v.status:
            raise ValueError(f"claim {c.statement!r} was not accepted by the audit")


def _model_blocks(model: ModelView, expressions: Any = None) -> list[Block]:
    states = list(model.states)
    out = [
        Block("heading", "The model", 2),
        para(
            t(f"Model {model.name or '(unnamed)'!r}, file {model.file}. States, in vector order: "),
            m(", ".join(latex_name(s) for s in states)),
            t("."),
        ),
        Block("code", model.source),
    ]
    fld = model.field
    if fld is None or fld.get("denominators") is not None:
        from proofkit.report._claims_nonpoly import field_blocks

        out += field_blocks(model, expressions)
    else:
        names = list(fld["variables"])
        out.append(para(t("Exact equations (uncertain parameters kept as symbols):")))
        lines = [
            f"\\dot{{{latex_name(s)}}} &= {latex_poly(p, names)}"
            for s, p in zip(states, fld["numerators"], strict=True)
        ]
        out.append(Block("math", "\\begin{aligned} " + " \\\\ ".join(lines) + " \\end{aligned}"))
    return out + _assumption_blocks(model)


def _assumption_blocks(model: ModelView) -> list[Block]:
    out = [Block("heading", "Domain, parameters and assumptions", 2)]
    if model.parameters:
        rows = tuple(
            (
                (m(latex_name(p["name"])),),
                (m(latex_number(p["nominal"])),),
                (t(f"[{p['range'][0]}, {p['range'][1]}]" if p.get("range") else "fixed"),),
            )
            for p in model.parameters
        )
        out.append(Block("table", header=("parameter", "nominal", "range"), rows=rows))
    else:
        out.append(para(t("The model has no parameters.")))
    if model.domain:
        ge = {True: ">", False: "\\ge"}
        conds = [
            f"{latex_poly(c['g'], list(model.states))} {ge[bool(c['strict'])]} 0"
            for c in model.domain
        ]
        out.append(para(t("Domain (where the model is trusted): "), m(",\\; ".join(conds)), t(".")))
    else:
        out.append(para(t("No domain is declared: the model is taken on the whole state space.")))
    out.append(
        para(
            t(
                "Assumptions: the vector field is exactly as written; a claim holds at the "
                "nominal parameter values unless its section says it holds over the ranges."
            )
        )
    )
    return out


def _summary(view: CertificateView, audit: AuditReport) -> list[Block]:
    rows = tuple(
        ((t(c.statement),), (t(v.status),), (t(c.method or "-"),))
        for c, v in zip(view.claims, audit.claims, strict=True)
    )
    return [
        para(
            t(
                "Every result below was re-derived by the proofkit audit with exact "
                "arithmetic from the certificate file; the document shows what it checked."
            )
        ),
        Block("table", header=("claim", "result", "method"), rows=rows),
    ]


def _closing(meta: DocumentMeta, model: ModelView | None, appendix: list[Block]) -> list[Block]:
    out: list[Block] = []
    if meta.figure:
        out.append(Block("heading", "Phase portrait", 2))
        out.append(
            para(
                t(
                    "Illustration only (floating-point streamlines and trajectories); not "
                    "evidence. Shaded: the certified sets of the claims the audit accepted, "
                    "drawn by evaluating the certified function in floating point (for a "
                    "recast proof W(x) = V(x - x*, recast(x))); dashed: the claims' sets; "
                    "dotted: the domain."
                )
            )
        )
        out.append(Block("figure", meta.figure))
    out.append(Block("heading", "Cautions", 2))
    out.append(Block("items", items=tuple((t(c),) for c in CAUTIONS)))
    out.append(Block("heading", "Reproducibility", 2))
    repro = [(t(f"proofkit version {meta.version}"),), (t("command: "), t(meta.command))]
    if model is not None:
        repro.append((t("SHA-256 of the model source: " + model.source_sha256),))
    repro.append((t(f"SHA-256 of {meta.certificate_name}: " + meta.certificate_sha256),))
    repro.append((t(f"re-check with: proofkit audit {meta.certificate_name}"),))
    out.append(Block("items", items=tuple(repro)))
    if appendix:
        out.append(Block("heading", "Appendix: large Gram matrices and long expansions", 2))
        out += appendix
    return out


def _exact_point(entries: list[Any], k: int) -> Any:
    """The claim's exactly known point (expression trees), if it states one."""
    entry = entries[k] if k < len(entries) and isinstance(entries[k], dict) else {}
    claim = entry.get("claim") if isinstance(entry.get("claim"), dict) else {}
    eq = claim.get("equilibrium") if isinstance(claim.get("equilibrium"), dict) else {}
    return eq.get("exact")


def build_document(cert: dict[str, Any], audit: AuditReport, meta: DocumentMeta) -> list[Block]:
    """The proof document; raises ValueError if ``audit`` is not this certificate's report."""
    view = read(cert)
    _check_consistent(cert, view, audit)  # the audit report of this very certificate
    title = (view.model.name if view.model else None) or "polynomial certificate"
    blocks = [Block("heading", f"Proof document: {title}", 1), *_summary(view, audit)]
    if view.model is not None:
        blocks += _model_blocks(view.model, (cert.get("model") or {}).get("expressions"))
    appendix: list[Block] = []
    raw_model = cert.get("model") if isinstance(cert.get("model"), dict) else {}
    entries = cert.get("claims") or []
    for k, (c, v) in enumerate(zip(view.claims, audit.claims, strict=True)):
        blocks.append(Block("heading", f"Claim {k + 1}: {c.statement}", 2))
        lead = {"refuted": "The audit checked that this is false: ", "proved": "Checked: "}
        blocks.append(para(t(lead.get(v.status, "Statement (nothing checked): ")), t(v.sentence)))
        raw = {"expressions": raw_model.get("expressions"), "exact": _exact_point(entries, k)}
        blocks += claim_blocks(c, v, view.model, appendix, raw)
    return blocks + _closing(meta, view.model, appendix)
