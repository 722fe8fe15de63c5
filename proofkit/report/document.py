"""The proof document as a list of blocks, built only from an audited certificate.

:func:`build_document` refuses a certificate whose audit report does not
match it (a claim stated proved that the audit did not accept). The Markdown
and LaTeX writers only lay these blocks out.

This module never reads solver output or floats; every number shown comes
from the certificate's exact data.
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction
from typing import Any

from proofkit.audit import AuditReport, certificate_digest
from proofkit.certificate import exact_number
from proofkit.report._math import latex_matrix, latex_name, latex_number, latex_poly

__all__ = ["Block", "DocumentMeta", "build_document"]

Seg = tuple[str, str]  # ("t", plain text) or ("m", inline LaTeX math)


@dataclass(frozen=True)
class Block:
    kind: str  # heading | para | math | code | items | checks | table | figure
    text: str = ""
    level: int = 2
    segs: tuple[Seg, ...] = ()
    items: tuple[tuple[Seg, ...], ...] = ()
    header: tuple[str, ...] = ()
    rows: tuple[tuple[tuple[Seg, ...], ...], ...] = ()


@dataclass(frozen=True)
class DocumentMeta:
    command: str
    certificate_sha256: str
    version: str
    figure: str | None = None  # file name of the phase portrait, if drawn
    certificate_name: str = "certificate.json"


MAX_MATRIX_COLUMNS = 14  # wider Gram matrices are listed entry by entry

THEOREM_NAMES = {
    "indirect-method-stability": "Lyapunov's indirect method (linearization), "
    "with the Routh–Hurwitz criterion",
    "indirect-method-instability": "Lyapunov's indirect method (instability), "
    "with Routh's count of right-half-plane roots",
    "sum-of-squares": "sum-of-squares decomposition with a positive semidefinite Gram matrix",
    "lyapunov-global": "Lyapunov's theorem with a radially unbounded Lyapunov function",
    "lyapunov-local": "Lyapunov's theorem on a sublevel set (S-procedure)",
    "region-of-attraction": "a forward-invariant sublevel set of a Lyapunov function",
}

_ROUTH = (
    "Routh's theorem: when no first-column entry of the Routh array is zero, the number of "
    "sign changes in the first column equals the number of roots in the open right half plane."
)
THEOREM_TEXT = {
    "indirect-method-stability": "If every eigenvalue of the Jacobian at an equilibrium has "
    "negative real part, the equilibrium of the nonlinear system is locally exponentially "
    "stable. " + _ROUTH,
    "indirect-method-instability": "If some eigenvalue of the Jacobian at an equilibrium has "
    "positive real part, the equilibrium of the nonlinear system is unstable. " + _ROUTH,
    "sum-of-squares": "If p = z'Gz with G positive semidefinite, then p = sum of d_k (l_k' z)^2 "
    "with d_k >= 0 (LDL'), so p >= 0 at every real point.",
}

CAUTIONS = (
    "The proof covers the model as written, not the physical plant. Unmodelled dynamics, "
    "sampling, time delays, actuator saturation, quantisation and parameter drift can void it.",
    "Local results (Lyapunov's indirect method) say nothing about how large the region of "
    "attraction is; do not read them as a margin.",
    "Where parameters are uncertain, results marked at nominal hold for the nominal values only.",
    "This document supports, and does not replace, the applicable safety standards, local "
    "codes and a qualified engineering review.",
)


def t(text: str) -> Seg:
    return ("t", text)


def m(latex: str) -> Seg:
    return ("m", latex)


def para(*segs: Seg) -> Block:
    return Block("para", segs=segs)


def _field(claim: dict[str, Any]) -> int:
    nf = claim.get("number_field")
    return int(nf["sqrt"]) if isinstance(nf, dict) else 0


def _check_consistent(cert: dict[str, Any], audit: AuditReport) -> None:
    claims = cert.get("claims", [])
    if audit.certificate_digest != certificate_digest(cert) or len(claims) != len(audit.claims):
        raise ValueError("the audit report does not belong to this certificate")
    for c, v in zip(claims, audit.claims, strict=True):
        if v.statement != c.get("statement") or c.get("status") != v.status:
            raise ValueError(f"claim {c.get('statement')!r} was not accepted by the audit")


def _model_blocks(model: dict[str, Any]) -> list[Block]:
    states = model["states"]
    out = [Block("heading", "The model", 2)]
    out.append(
        para(
            t("Model "),
            t(repr(model.get("name") or "(unnamed)")),
            t(", file "),
            t(str(model.get("file"))),
            t(". States, in vector order: "),
            m(", ".join(latex_name(s) for s in states)),
            t("."),
        )
    )
    out.append(Block("code", model.get("source", "")))
    fld = model.get("field")
    vf = fld["numerators"] if fld and fld.get("denominators") is None else None
    names = fld["variables"] if fld else states
    if vf is None:
        out.append(
            para(
                t("The vector field is not polynomial with rational coefficients ("),
                t(str(model.get("field_note", ""))),
                t("); no certificate covers it."),
            )
        )
    else:
        out.append(para(t("Exact equations at the nominal parameter values:")))
        lines = [
            f"\\dot{{{latex_name(s)}}} &= {latex_poly(p, names)}"
            for s, p in zip(states, vf, strict=True)
        ]
        out.append(Block("math", "\\begin{aligned} " + " \\\\ ".join(lines) + " \\end{aligned}"))
    out.append(Block("heading", "Domain, parameters and assumptions", 2))
    params = model.get("parameters") or []
    if params:
        rows = []
        for p in params:
            rng = p.get("range")
            rows.append(
                (
                    (m(latex_name(p["name"])),),
                    (t(p["nominal"]),),
                    (t(f"[{rng[0]}, {rng[1]}]" if rng else "fixed"),),
                )
            )
        out.append(Block("table", header=("parameter", "nominal", "range"), rows=tuple(rows)))
    else:
        out.append(para(t("The model has no parameters.")))
    dom = model.get("domain")
    if dom:
        ge = {True: ">", False: "\\ge"}
        conds = [f"{latex_poly(c['g'], states)} {ge[bool(c['strict'])]} 0" for c in dom]
        out.append(para(t("Domain (where the model is trusted): "), m(",\\; ".join(conds)), t(".")))
    else:
        out.append(para(t("No domain is declared: the model is taken on the whole state space.")))
    out.append(
        para(
            t(
                "Assumptions: the vector field is exactly as written; the results for "
                "parameters hold at the nominal values unless stated otherwise."
            )
        )
    )
    return out


def _linearization_blocks(claim: dict[str, Any], states: list[str]) -> list[Block]:
    d, ev = _field(claim), claim["evidence"]
    eq = claim["claim"]["equilibrium"]
    out = []
    if d:
        out.append(
            para(
                t("Numbers below lie in the field "),
                m(f"\\mathbb{{Q}}(\\sqrt{{{d}}})"),
                t("; signs are decided exactly by comparing squares."),
            )
        )
    pt = ", ".join(
        f"{latex_name(s)} = {latex_number(v, d)}" for s, v in zip(states, eq["point"], strict=True)
    )
    out.append(
        para(
            t(f"Equilibrium {eq.get('name')}: "),
            m(pt),
            t(". Every component of the vector field vanishes there exactly."),
        )
    )
    out.append(para(t("Jacobian at the equilibrium and its characteristic polynomial:")))
    cp = ev["characteristic_polynomial"]
    n = len(cp) - 1
    cp_terms = [[[n - k], c] for k, c in enumerate(cp) if c != "0"]
    out.append(
        Block(
            "math",
            f"J = {latex_matrix(ev['jacobian'], d)}, \\qquad "
            f"\\det(sI - J) = {latex_poly(cp_terms, ['s'], d)}",
        )
    )
    ro = ev["routh"]
    shift, power = ro["shift"], ro["multiplier_power"]
    if shift != "0" or power:
        poly_terms = [
            [[len(ro["polynomial"]) - 1 - k], c] for k, c in enumerate(ro["polynomial"]) if c != "0"
        ]
        h = latex_number(shift, d)
        out.append(
            para(
                t("To step around a special case of the Routh array, it is built for "),
                m(f"q(s) = (s+1)^{{{power}}}\\, p(s + {h})"),
                t(", whose roots are those of p moved left by "),
                m(h),
                t(", plus roots at -1:"),
            )
        )
        out.append(Block("math", f"q(s) = {latex_poly(poly_terms, ['s'], d)}"))
    deg = len(ro["rows"]) - 1
    rows = tuple(
        ((m(f"s^{{{deg - k}}}"),), *((m(latex_number(x, d)),) for x in r))
        for k, r in enumerate(ro["rows"])
    )
    header = ("row", *(f"column {i + 1}" for i in range(len(ro["rows"][0]))))
    out.append(para(t("The Routh array, computed exactly:")))
    out.append(Block("table", header=header, rows=rows))
    out.append(
        para(t(f"The first column of the Routh array has {ro['sign_changes']} sign change(s)."))
    )
    if "lyapunov" in ev:
        p, q = ev["lyapunov"]["P"], ev["lyapunov"]["Q"]
        out.append(
            para(
                t("A quadratic Lyapunov function of the linearization, "),
                m("V = x^T P x"),
                t(", solves "),
                m("J^T P + P J = -Q"),
                t(" with:"),
            )
        )
        out.append(Block("math", f"P = {latex_matrix(p, d)}, \\qquad Q = {latex_matrix(q, d)}"))
    return out


def _sos_blocks(claim: dict[str, Any], appendix: list[Block], states: list[str]) -> list[Block]:
    from proofkit.exact import ldl_psd

    ev = claim["evidence"]
    names = ev.get("variables") or states
    out = []
    if "p" in ev:
        out.append(para(t("The polynomial: "), m("p = " + latex_poly(ev["p"], names))))
    if "V" in ev:
        out.append(para(t("The Lyapunov function: "), m("V = " + latex_poly(ev["V"], names))))
    for gname, g in ev["squares"].items():
        basis = [latex_poly([[b, "1"]], names) for b in g["basis"]]
        z = "\\begin{pmatrix} " + " \\\\ ".join(basis) + " \\end{pmatrix}"
        g = {"basis": g["basis"], "matrix": g["gram"]}
        found = ldl_psd([[exact_number(x) for x in r] for r in g["matrix"]]) if basis else None
        res = (found.D, found.L) if found is not None and found.psd else "not PSD"
        target = out if len(basis) <= 6 else appendix
        if len(basis) > 6:
            out.append(
                para(
                    t(
                        f"Gram matrix {gname} ({len(basis)}x{len(basis)}) is listed in "
                        "the appendix; the certificate file is the authority."
                    )
                )
            )
            appendix.append(Block("heading", f"Gram matrix {gname}", 3))
        target.append(para(t(f"Gram matrix {gname} with basis "), m("z = " + z), t(":")))
        if len(basis) <= MAX_MATRIX_COLUMNS:
            target.append(Block("math", f"{gname} = {latex_matrix(g['matrix'])}"))
        else:  # too wide for one matrix: list the nonzero entries on and above the diagonal
            entries = tuple(
                ((t(str(i + 1)),), (t(str(j + 1)),), (m(latex_number(x)),))
                for i, r in enumerate(g["matrix"])
                for j, x in enumerate(r)
                if j >= i and x != "0"
            )
            target.append(Block("table", header=("row", "column", "entry"), rows=entries))
        if not isinstance(res, str):
            piv, low = res
            squares = []
            for k, dk in enumerate(piv):
                if dk == 0:
                    continue
                comb = [[g["basis"][i], _w(low[i][k])] for i in range(len(basis)) if low[i][k] != 0]
                comb = _merge(comb)
                weight = "" if _w(dk) == "1" else latex_number(_w(dk))
                squares.append(f"{weight}\\left({latex_poly(comb, names)}\\right)^2")
            target.append(para(t("Its exact LDL' factorisation gives the squares:")))
            target.append(Block("math", "z^T G z = " + " + ".join(squares)))
    return out


def _w(x: Any) -> str:
    return str(Fraction(int(x.p), int(x.q)))


def _merge(terms: list[Any]) -> list[Any]:
    from fractions import Fraction

    acc: dict[tuple[int, ...], Fraction] = {}
    for e, c in terms:
        acc[tuple(e)] = acc.get(tuple(e), Fraction(0)) + Fraction(c)
    return [[list(e), str(c)] for e, c in acc.items() if c != 0]


def build_document(cert: dict[str, Any], audit: AuditReport, meta: DocumentMeta) -> list[Block]:
    """The proof document; raises ValueError if ``audit`` is not this certificate's report."""
    _check_consistent(cert, audit)  # the audit report of this very certificate text
    model = cert.get("model")
    title = (model or {}).get("name") or "polynomial certificate"
    blocks = [Block("heading", f"Proof document: {title}", 1)]
    rows = []
    word = {"proved": "proved", "refuted": "refuted", "not proved": "not proved"}
    for c, v in zip(cert["claims"], audit.claims, strict=True):
        rows.append(((t(c["statement"]),), (t(word[v.status]),), (t(c.get("method") or "-"),)))
    blocks.append(
        para(
            t(
                "Every result below was re-derived by the proofkit audit with exact "
                "rational arithmetic from the certificate file."
            )
        )
    )
    blocks.append(Block("table", header=("claim", "result", "method"), rows=tuple(rows)))
    states: list[str] = []
    if model is not None:
        states = model["states"]
        blocks += _model_blocks(model)
    appendix: list[Block] = []
    for k, (c, v) in enumerate(zip(cert["claims"], audit.claims, strict=True)):
        blocks.append(Block("heading", f"Claim {k + 1}: {c['statement']}", 2))
        if v.status == "not proved":
            blocks.append(para(t("Not proved: "), t(c.get("reason", ""))))
            continue
        if c["method"] == "linearization":
            blocks += _linearization_blocks(c, states)
        elif "squares" in c["evidence"]:
            blocks += _sos_blocks(c, appendix, states)
        blocks.append(
            para(
                t("Theorem applied: "),
                t(THEOREM_NAMES.get(c["theorem"], c["theorem"])),
                t(". "),
                t(THEOREM_TEXT.get(c["theorem"], "")),
                t(" Its hypotheses, each re-checked by the audit:"),
            )
        )
        blocks.append(Block("checks", items=tuple((t(s),) for s in v.checked)))
        if v.status == "refuted":
            blocks.append(
                para(
                    t(
                        "Conclusion: the claim is false; the evidence above proves the "
                        "opposite statement."
                    )
                )
            )
        else:
            scope = "for the model as written" if model is not None else "for every real point"
            blocks.append(para(t(f"Conclusion: the claim holds {scope}.")))
    if meta.figure:
        blocks.append(Block("heading", "Phase portrait", 2))
        blocks.append(para(t("Illustration only (floating-point streamlines); not evidence.")))
        blocks.append(Block("figure", meta.figure))
    blocks.append(Block("heading", "Cautions", 2))
    blocks.append(Block("items", items=tuple((t(c),) for c in CAUTIONS)))
    blocks.append(Block("heading", "Reproducibility", 2))
    repro = [(t(f"proofkit version {meta.version}"),), (t("command: "), t(meta.command))]
    if model is not None:
        repro.append((t("SHA-256 of the model source: " + model["source_sha256"]),))
    repro.append((t(f"SHA-256 of {meta.certificate_name}: " + meta.certificate_sha256),))
    repro.append((t(f"re-check with: proofkit audit {meta.certificate_name}"),))
    blocks.append(Block("items", items=tuple(repro)))
    if appendix:
        blocks.append(Block("heading", "Appendix: large Gram matrices", 2))
        blocks += appendix
    return blocks
