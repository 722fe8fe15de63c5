"""One section per claim of a proof document, rendered generically from its evidence.

Every proof kind is shown from what its certificate entry carries: a
linearization (``_claims_linear``), a sum-of-squares proof (``_claims_sos``),
the non-polynomial steps (``_claims_nonpoly``: recasting, rational fields,
interval enclosures), parameter-range covers, counterexamples with their start
point and a plot-ready trace, and for a method no module knows, its evidence
listed honestly. Then the theorem, its hypotheses as ticked by the audit, and
the conclusion.

May import: sympy (through the section modules), ``proofkit.certificate``,
``report._math``, ``report._blocks``, ``report._theorems``. Must never re-audit,
import ``proofkit.audit.algebra`` or ``proofkit.audit.numbers``, or decide
validity: the audit's verdict is handed in.
"""

from __future__ import annotations

from collections.abc import Mapping, Sequence
from typing import Any

from proofkit.report._blocks import Block, m, para, t
from proofkit.report._claims_linear import linearization_blocks, range_blocks
from proofkit.report._claims_sos import APPENDIX_SIZE, sos_blocks
from proofkit.report._math import latex_name, latex_number
from proofkit.report._theorems import THEOREMS

__all__ = ["APPENDIX_SIZE", "THEOREMS", "claim_blocks"]

MAX_TRACE_ROWS = 12
RATIONAL_CYCLES = ("no-equilibrium-rational", "dulac-rational", "annulus-rational")


def _counterexample(claim: Any, states: list[str]) -> list[Block]:
    cx = claim.counterexample
    out = []
    start = ", ".join(
        f"{latex_name(s)} = {latex_number(v)}" for s, v in zip(states, cx["start"], strict=True)
    )
    out.append(
        para(
            t("Counterexample: the trajectory starting exactly at "),
            m(start),
            t(f" {cx.get('what_happened', '')}."),
        )
    )
    trace = cx.get("trajectory") or {}
    ts, xs = list(trace.get("t") or []), list(trace.get("x") or [])
    if ts and xs:
        step = max(1, len(ts) // MAX_TRACE_ROWS)
        picks = list(range(0, len(ts), step))
        if picks[-1] != len(ts) - 1:
            picks.append(len(ts) - 1)
        rows = tuple(((t(f"{ts[i]:.4g}"),), *((t(f"{v:.6g}"),) for v in xs[i])) for i in picks)
        out.append(
            para(
                t(
                    f"Trace ({len(ts)} samples in the certificate's counterexample.trajectory, "
                    "plot-ready as t and x columns; a selection):"
                )
            )
        )
        out.append(Block("table", header=("t", *states), rows=rows))
    if cx.get("note"):
        out.append(para(t(str(cx["note"]) + ".")))
    return out


def _nonpoly_section(claim: Any, model: Any, raw: Mapping[str, Any]) -> Any:
    """The section builder of a non-polynomial method (a function of the appendix), or None."""
    from proofkit.report import _claims_nonpoly as nonpoly
    from proofkit.report import _claims_rational as rational

    method, ev = claim.method, claim.evidence
    trees, exact = raw.get("expressions"), raw.get("exact")
    if method == "recast":
        from proofkit.report._claims_recast import recast_blocks

        return lambda app: recast_blocks(claim, model, app, trees)
    if method == "dulac-recast":
        from proofkit.report._claims_recast_cycles import recast_dulac_blocks

        return lambda app: recast_dulac_blocks(claim, model, app, trees)
    if method == "taylor-model":
        from proofkit.report._claims_taylor import taylor_model_blocks

        return lambda app: taylor_model_blocks(claim, model, app, trees)
    if method in ("sublevel-set-rational", "lyapunov-domain-rational"):
        return lambda app: rational.rational_basin_blocks(claim, model, app)
    if method in RATIONAL_CYCLES:
        return lambda app: rational.rational_cycle_blocks(claim, model, app)
    if method == "linearization-enclosure":
        return lambda _app: nonpoly.enclosure_blocks(claim, model, exact)
    if method == "range-enclosure" and "pieces" in ev:
        return lambda _app: nonpoly.range_enclosure_blocks(claim, model, exact)
    if method == "linearization-rational" and "jacobian" in ev:
        return lambda _app: rational.rational_linearization_blocks(claim, model)
    return None


def generic_blocks(claim: Any) -> list[Block]:
    """The evidence of a method no section knows: listed as it stands, with its obligations."""
    ev = claim.evidence
    items = []
    for key, value in ev.items():
        text = str(_plain(value))
        items.append((t(f"{key}: {text if len(text) <= 200 else text[:200] + ' ...'}"),))
    out = [
        para(
            t(
                f"Method {claim.method or '(none)'}, theorem {claim.theorem or '(none)'}. This "
                "document has no line-by-line section for this method; the audit's hypotheses "
                "below say what it checked, and the certificate holds every entry."
            )
        )
    ]
    names = sorted(_obligation_names(ev))
    if names:
        out.append(
            para(
                t(
                    "Obligations (each equal to z'Gz with G positive semidefinite, checked by "
                    "the audit with an exact LDL'): " + ", ".join(names) + "."
                )
            )
        )
    out.append(para(t("Evidence (see the certificate for every entry):")))
    return [*out, Block("items", items=tuple(items))]


def _obligation_names(ev: Any, prefix: str = "") -> set[str]:
    """Names of every ``squares`` entry in the evidence, nested parts included."""
    out: set[str] = set()
    if isinstance(ev, Mapping):
        for key, value in ev.items():
            if key == "squares" and isinstance(value, Mapping):
                out |= {prefix + str(k) for k in value}
            elif isinstance(value, Mapping):
                out |= _obligation_names(value, f"{prefix}{key}: ")
    return out


def _plain(value: Any) -> Any:
    if isinstance(value, Mapping):
        return {k: _plain(v) for k, v in value.items()}
    if isinstance(value, list | tuple):
        return [_plain(v) for v in value]
    return value


def _theorem(claim: Any, checked: Sequence[str], refuted: bool, model: Any) -> list[Block]:
    name, text = THEOREMS.get(claim.theorem or "", (claim.theorem or "", ""))
    out = [
        para(
            t("Theorem applied: "),
            t(name),
            t(". "),
            t(text),
            t(" Its hypotheses, each re-checked by the audit:"),
        ),
        Block("checks", items=tuple((t(s),) for s in checked)),
    ]
    if refuted:
        end = "the claim is false; the evidence above proves the opposite statement."
    elif model is None:
        end = "the claim holds for every real point."
    elif claim.scope == "range":
        end = "the claim holds for the model as written, for every parameter value in its range."
    else:
        end = "the claim holds for the model as written (parameters at their nominal values)."
    out.append(para(t("Conclusion: " + end)))
    return out


def claim_blocks(
    claim: Any,
    verdict: Any,
    model: Any,
    appendix: list[Block],
    raw: Mapping[str, Any] | None = None,
) -> list[Block]:
    """The section of one claim (a ``ClaimView``), given the audit's ``ClaimVerdict`` for it.

    ``raw``: what the typed views do not carry, from the certificate's JSON:
    ``expressions`` (the model's expression trees) and ``exact`` (the claim's
    exactly known point as trees).
    """
    states = list(model.states) if model is not None else []
    if verdict.status == "not proved":
        return [para(t("Not proved: "), t(claim.reason or verdict.message or ""))]
    out = _evidence_blocks(claim, model, appendix, raw or {})
    if claim.counterexample is not None:
        out += _counterexample(claim, states)
    return out + _theorem(claim, verdict.checked, verdict.status == "refuted", model)


def _evidence_blocks(
    claim: Any, model: Any, appendix: list[Block], raw: Mapping[str, Any]
) -> list[Block]:
    from sympy.polys.polyerrors import PolynomialError

    ev, states = claim.evidence, list(model.states) if model is not None else []
    section = _nonpoly_section(claim, model, raw) if model is not None else None
    if section is not None:
        part: list[Block] = []
        try:
            out = section(part)
        except (ArithmeticError, LookupError, PolynomialError, TypeError, ValueError) as exc:
            # the audit accepted this entry; only the line-by-line description failed
            note = f"The line-by-line description of this method could not be rebuilt ({exc})."
            return [para(t(note)), *generic_blocks(claim)]
        appendix += part
        return out
    if "jacobian" in ev and "routh" in ev:
        return linearization_blocks(claim, states)
    if "squares" in ev and (claim.theorem in THEOREMS or claim.theorem is None):
        return sos_blocks(claim, model, appendix)
    if "cover" in ev:
        return range_blocks(claim)
    if claim.method == "equilibrium-in-set" and isinstance(ev.get("point"), list | tuple):
        shown = ", ".join(
            f"{latex_name(s)} = {latex_number(v, claim.number_field)}"
            for s, v in zip(states, ev["point"], strict=False)
        )
        return [
            para(
                t("Another equilibrium, exactly: "),
                m(shown),
                t(
                    ". The field vanishes there and it lies in the claim's set (and the domain), "
                    "with exact signs; the audit rechecked both."
                ),
            )
        ]
    if claim.counterexample is None:
        return generic_blocks(claim)
    return []
