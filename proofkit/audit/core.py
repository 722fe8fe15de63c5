"""The trusted checker: read a certificate (format 2) and check every claim's schema.

Reading order for a reviewer: :func:`audit_certificate` reads the model
section (states, parameters, the field over states and uncertain parameters,
domain; the SHA-256 of the embedded source is recomputed), then each claim's
structure (kind, equilibrium, set, scope). It renders the sentence it prints
from that structure itself (:mod:`proofkit.audit.sentences`), finds the
registered schema for (kind, method), checks that the evidence covers the
claim's scope (nominal evidence only for nominal-scope claims), and runs the
schema. Any failed hypothesis rejects the claim and names the step.

What this module must never do: import the parser, the search code, any
solver, sympy, or anything outside the standard library and
:mod:`proofkit.audit`; use floating point; trust a stated number without
recomputing it.
"""

from __future__ import annotations

import hashlib
import importlib
import json
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Any

from proofkit.audit.algebra import WorkLimit, deadline
from proofkit.audit.numbers import FormatError, parse_radicand
from proofkit.audit.read import (
    MAX_CLAIMS,
    MAX_VARIABLES,
    escape,
    get,
    only_keys,
    read_number,
    read_poly,
    read_set,
    read_vector,
)
from proofkit.audit.schemas import (
    REFUTATIONS,
    SCHEMAS,
    Checks,
    ClaimData,
    ModelData,
    Parameter,
    Rejected,
)
from proofkit.audit.sentences import sentence

__all__ = [
    "FORMAT_VERSION",
    "KINDS",
    "NOT_CHECKED_WITHOUT_PROVENANCE",
    "THEOREMS",
    "AuditReport",
    "ClaimVerdict",
    "FormatError",
    "audit_certificate",
    "audit_text",
    "certificate_digest",
]

FORMAT_VERSION = 2
TIME_LIMIT = 8.0  # seconds of checking per certificate; later claims are rejected, never accepted
# Schema modules of this package; a module not present yet is skipped.
SCHEMA_MODULES = (
    "linear",
    "lyapunov",
    "polynomial",
    "ranges",
    "cycles",
    "enclosures",
    "recast",
    "taylor_model",
)
for _name in SCHEMA_MODULES:
    try:
        importlib.import_module(f"proofkit.audit.{_name}")
    except ModuleNotFoundError as _exc:
        if _exc.name != f"proofkit.audit.{_name}":
            raise
# (claim kind, method) -> theorem, for the proofs the audit knows.
THEOREMS = {key: value[0] for key, value in SCHEMAS.items()}
KINDS = ("stable", "unstable", "globally stable", "attracts", "no cycle", "cycle", "nonnegative")
NEEDS_POINT = {"stable", "unstable", "globally stable", "attracts"}
NEEDS_SET = {"attracts", "no cycle", "cycle"}
MODEL_KEYS = {
    "name",
    "file",
    "source",
    "source_sha256",
    "states",
    "parameters",
    "field",
    "field_note",
    "expressions",
    "domain",
    "domain_note",
    "conditions",
    "equilibria",
}
ENTRY_KEYS = {
    "claim",
    "statement",
    "status",
    "reason",
    "method",
    "theorem",
    "number_field",
    "evidence",
    "counterexample",
}
NOT_CHECKED_WITHOUT_PROVENANCE = (
    "not checked by the core: that the field, the parameters, the domain and the claims "
    "are those of the embedded model source (provenance does that)"
)


@dataclass(frozen=True)
class ClaimVerdict:
    """The audit's decision on one claim, with the sentence it rendered itself.

    ``status``: "proved" (the proof was checked), "refuted" (evidence that the
    claim is false was checked), "not proved" (nothing claimed), or "rejected"
    (the evidence failed; the claim counts as not proved).
    """

    statement: str  # the source line (not checked by the core; shown for orientation)
    sentence: str  # what was checked, rendered by the audit from the claim's structure
    status: str
    kind: str = ""
    scope: str = "nominal"
    method: str | None = None
    theorem: str | None = None
    checked: tuple[str, ...] = ()  # each verified hypothesis, in words
    failed_step: str | None = None
    message: str | None = None
    hint: str | None = None  # e.g. an attached simulation, which the audit does not check


@dataclass(frozen=True)
class AuditReport:
    claims: tuple[ClaimVerdict, ...] = field(default_factory=tuple)
    model_file: str | None = None
    source_sha256: str | None = None  # recomputed from the embedded source
    certificate_digest: str | None = None  # binds the report to the certificate it audited

    @property
    def accepted(self) -> bool:
        """True when no claim was rejected (claims marked "not proved" claim nothing)."""
        return all(c.status != "rejected" for c in self.claims)


# --- the model section ----------------------------------------------------------------
def _names(data: Any, where: str) -> list[str]:
    if not isinstance(data, list) or not all(isinstance(s, str) and s for s in data):
        raise FormatError(f"{where}: expected a list of names")
    if len(set(data)) != len(data):
        raise FormatError(f"{where}: repeated name")
    return data


def _maybe_number(value: Any, where: str) -> Fraction | None:
    """A rational, or None where the model's value is not rational (written null)."""
    return None if value is None else read_number(value, 0, where).a


def _parameters(data: Any) -> tuple[Parameter, ...]:
    if not isinstance(data, list) or len(data) > MAX_VARIABLES * 4:
        raise FormatError("model.parameters: expected a list")
    out = []
    for k, par in enumerate(data):
        w = f"model.parameters[{k}]"
        only_keys(par, {"name", "nominal", "range"}, w)
        nominal = _maybe_number(get(par, "nominal", (str, type(None)), w), f"{w}.nominal")
        rng = par.get("range")
        bounds = None
        if rng is not None:
            if not isinstance(rng, list) or len(rng) != 2:
                raise FormatError(f"{w}.range: expected null or [low, high]")
            lo, hi = (_maybe_number(x, f"{w}.range[{i}]") for i, x in enumerate(rng))
            known = [x for x in (lo, nominal, hi) if x is not None]
            if (lo, nominal, hi) == tuple(known) and not lo <= nominal <= hi:
                raise FormatError(f"{w}: the nominal value lies outside the range")
            bounds = (lo, hi)
        out.append(Parameter(get(par, "name", str, w), nominal, bounds))
    return tuple(out)


def _field(model: dict[str, Any], states: list[str], params: tuple[Parameter, ...]) -> Any:
    data = model.get("field")
    if data is None:
        get(model, "field_note", str, "model")
        return (), None, None
    w = "model.field"
    only_keys(data, {"variables", "numerators", "denominators"}, w)
    variables = _names(get(data, "variables", list, w), f"{w}.variables")
    want = [*states, *(p.name for p in params if p.range is not None)]
    if variables != want:
        raise FormatError(f"{w}.variables: expected the states, then the uncertain parameters")
    nv = len(variables)
    nums = get(data, "numerators", list, w)
    if len(nums) != len(states):
        raise FormatError(f"{w}.numerators: one polynomial per state")
    numerators = tuple(read_poly(p, nv, 0, f"{w}.numerators[{i}]") for i, p in enumerate(nums))
    dens = data.get("denominators")
    denominators = None
    if dens is not None:
        if not isinstance(dens, list) or len(dens) != len(states):
            raise FormatError(f"{w}.denominators: null or one polynomial per state")
        denominators = tuple(
            read_poly(p, nv, 0, f"{w}.denominators[{i}]") for i, p in enumerate(dens)
        )
    return tuple(variables), numerators, denominators


def _model(model: dict[str, Any]) -> ModelData:
    only_keys(model, MODEL_KEYS, "model")
    states = _names(get(model, "states", list, "model"), "model.states")
    if not states:
        raise FormatError("model.states: at least one state")
    params = _parameters(get(model, "parameters", list, "model"))
    if len(states) + len(params) > MAX_VARIABLES * 4 or len(states) > MAX_VARIABLES:
        raise FormatError(f"model: more than {MAX_VARIABLES} states")
    variables, numerators, denominators = _field(model, states, params)
    if len(variables) > MAX_VARIABLES:
        raise FormatError(f"model.field: more than {MAX_VARIABLES} variables")
    conditions = read_set(model.get("conditions", []), len(variables), "model.conditions")
    domain = model.get("domain")
    dom = None if domain is None else tuple(read_set(domain, len(states), "model.domain"))
    for key in ("source", "source_sha256"):
        get(model, key, str, "model")
    declared = _equilibria(get(model, "equilibria", list, "model"), len(states))
    expressions = None
    if model.get("expressions") is not None:  # a non-rational field as expression trees
        from proofkit.audit.enclosures import read_expressions

        uncertain = [p.name for p in params if p.range is not None]
        expressions = read_expressions(model["expressions"], states, uncertain)
    return ModelData(
        tuple(states), params, variables, numerators, denominators, tuple(conditions), dom,
        declared, expressions,
    )  # fmt: skip


def _equilibria(data: Any, n: int) -> dict[str, tuple[Any, ...] | None]:
    """The declared equilibria: name -> point (None when it moves or is not representable)."""
    if not isinstance(data, list) or len(data) > MAX_CLAIMS:
        raise FormatError("model.equilibria: expected a list")
    out: dict[str, tuple[Any, ...] | None] = {}
    for k, eq in enumerate(data):
        w = f"model.equilibria[{k}]"
        only_keys(eq, {"name", "point", "number_field"}, w)
        name = get(eq, "name", str, w)
        if name in out:
            raise FormatError(f"{w}: equilibrium {escape(name)[:40]!r} declared twice")
        d = _number_field(eq, w)
        point = eq.get("point")
        out[name] = None if point is None else tuple(read_vector(point, d, f"{w}.point", n))
    return out


def _declared_point(model: ModelData, claim: ClaimData) -> None:
    """The claim's equilibrium must be declared, at the declared point."""
    if claim.name is None:
        return
    if claim.name not in model.equilibria:
        raise Rejected(
            "equilibrium", f"no equilibrium named {escape(claim.name)[:40]!r} is declared"
        )
    declared = model.equilibria[claim.name]
    if declared is not None and claim.point is not None and declared != claim.point:
        raise Rejected("equilibrium", f"the point is not the declared point of {claim.name}")


# --- one claim -------------------------------------------------------------------------
def _number_field(entry: dict[str, Any], where: str) -> int:
    nf = entry.get("number_field")
    if nf is None:
        return 0
    only_keys(nf, {"sqrt"}, f"{where}.number_field")
    return parse_radicand(get(nf, "sqrt", str, f"{where}.number_field"), where)


def _structure(entry: dict[str, Any], model: ModelData, where: str) -> ClaimData:
    """The claim's structure: kind, equilibrium, set, scope (checked for shape)."""
    w = f"{where}.claim"
    c = get(entry, "claim", dict, where)
    only_keys(c, {"kind", "equilibrium", "set", "scope"}, w)
    kind = get(c, "kind", str, w)
    if kind not in KINDS:
        raise FormatError(f"{w}.kind: unknown claim kind {escape(kind)[:40]!r}")
    scope = get(c, "scope", str, w)
    if scope not in ("nominal", "range"):
        raise FormatError(f"{w}.scope: expected 'nominal' or 'range'")
    if scope == "range" and not model.uncertain:
        raise FormatError(f"{w}.scope: 'range' needs an uncertain parameter")
    d = _number_field(entry, where)
    name, point, moving, exact = None, None, None, None
    eq = c.get("equilibrium")
    if (eq is None) == (kind in NEEDS_POINT):
        raise FormatError(f"{w}.equilibrium: required exactly for kinds {sorted(NEEDS_POINT)}")
    if eq is not None:
        only_keys(eq, {"name", "point", "moving", "exact"}, f"{w}.equilibrium")
        name = get(eq, "name", str, f"{w}.equilibrium")
        if eq.get("point") is not None:
            n = len(model.states)
            point = tuple(read_vector(eq["point"], d, f"{w}.equilibrium.point", n))
        moving = eq.get("moving")
        if eq.get("exact") is not None:  # a point such as pi/3, as expression trees
            from proofkit.audit.enclosures import read_point

            exact = read_point(eq["exact"], len(model.states), f"{w}.equilibrium.exact")
            if point is not None:
                raise FormatError(f"{w}.equilibrium: either a point or an exact point, not both")
    raw_set = c.get("set")
    if (raw_set is None) == (kind in NEEDS_SET):
        raise FormatError(f"{w}.set: required exactly for kinds {sorted(NEEDS_SET)}")
    cset = None if raw_set is None else tuple(read_set(raw_set, len(model.states), f"{w}.set"))
    method = entry.get("method") or ""
    evidence = entry.get("evidence") or {}
    return ClaimData(kind, name, point, moving, cset, scope, method, d, evidence, where, exact)


def _check_claim(entry: dict[str, Any], model: ModelData, where: str) -> ClaimVerdict:
    only_keys(entry, ENTRY_KEYS, where)
    statement = get(entry, "statement", str, where)
    status = get(entry, "status", str, where)
    claim = _structure(entry, model, where)
    text = sentence(model, claim)
    base = {"statement": statement, "sentence": text, "kind": claim.kind, "scope": claim.scope}
    if entry.get("counterexample") is not None:
        base["hint"] = (
            "a counterexample found by simulation is attached; the audit did not check it"
        )
    if status == "not proved":
        reason = get(entry, "reason", str, where)
        for key in ("evidence", "method", "theorem"):
            if key in entry:
                raise FormatError(f"{where}: a claim not proved carries no {key}")
        return ClaimVerdict(**base, status="not proved", message=reason)
    if status not in ("proved", "refuted"):
        raise FormatError(f"{where}.status: expected 'proved', 'refuted' or 'not proved'")
    if "reason" in entry:
        raise FormatError(f"{where}: only a claim not proved carries a reason")
    method = get(entry, "method", str, where)
    get(entry, "evidence", dict, where)
    checks = Checks()
    theorem = (SCHEMAS if status == "proved" else REFUTATIONS).get((claim.kind, method), ("",))[0]
    step, message = _run_schema(entry, model, claim, status, checks)
    if step is not None:
        return ClaimVerdict(
            **base, status="rejected", method=method, theorem=theorem or None,
            checked=tuple(checks.log), failed_step=step, message=message,
        )  # fmt: skip
    return ClaimVerdict(
        **base, status=status, method=method, theorem=theorem, checked=tuple(checks.log)
    )


def _run_schema(
    entry: dict[str, Any], model: ModelData, claim: ClaimData, status: str, checks: Checks
) -> tuple[str | None, str | None]:
    """Run the registered schema; (None, None) when it accepts, else (step, message)."""
    found = (SCHEMAS if status == "proved" else REFUTATIONS).get((claim.kind, claim.method))
    try:
        if found is None:
            verb = "prove" if status == "proved" else "refute"
            raise Rejected(
                "method", f"no theorem lets {claim.method!r} {verb} a {claim.kind!r} claim"
            )
        theorem, schema_fn, scopes = found
        _declared_point(model, claim)
        if entry.get("theorem") != theorem:
            raise Rejected("theorem", f"the theorem for this method is {theorem!r}")
        if claim.scope not in scopes:
            raise Rejected(
                "scope",
                f"{theorem} is evidence at the nominal parameter values only; the claim must "
                "hold for every value in the ranges",
            )
        schema_fn(model, claim, checks)
    except FormatError:
        raise
    except Rejected as rej:
        return rej.step, rej.message
    except WorkLimit as exc:
        return "work limit", str(exc)
    except (TypeError, KeyError, IndexError, AttributeError, ValueError) as exc:
        return "evidence", f"the evidence does not have the shape its theorem reads ({exc!r:.80})"
    except (ZeroDivisionError, RecursionError, OverflowError, MemoryError) as exc:
        return "arithmetic", f"{exc!r:.80}"
    return None, None


NO_MODEL = ModelData((), (), (), None, None, (), None)


# --- the whole certificate -------------------------------------------------------------
def audit_certificate(data: Any, time_limit: float = TIME_LIMIT) -> AuditReport:
    """Audit a parsed certificate; raises :class:`FormatError` when it is malformed.

    Claims still unchecked after ``time_limit`` seconds are rejected ("work limit").
    """
    with deadline(time_limit):
        return _audit(data)


def _audit(data: Any) -> AuditReport:
    if not isinstance(data, dict):
        raise FormatError("a certificate is a JSON object")
    version = get(data, "proofkit_certificate", int, "certificate")
    only_keys(data, {"proofkit_certificate", "generator", "model", "claims"}, "certificate")
    generator = get(data, "generator", dict, "certificate")
    only_keys(generator, {"program", "version"}, "generator")
    get(generator, "program", str, "generator")
    get(generator, "version", str, "generator")
    if version != FORMAT_VERSION:
        raise FormatError(f"certificate format {version} is not supported (expected 2)")
    raw_model = data.get("model")
    model, file, digest = NO_MODEL, None, None
    if raw_model is not None:
        model = _model(raw_model)
        digest = hashlib.sha256(raw_model["source"].encode("utf-8", "surrogatepass")).hexdigest()
        if digest != raw_model["source_sha256"]:
            raise FormatError("model.source_sha256 is not the SHA-256 of model.source")
        file = raw_model.get("file") if isinstance(raw_model.get("file"), str) else None
    claims = get(data, "claims", list, "certificate")
    if len(claims) > MAX_CLAIMS:
        raise FormatError(f"certificate: {len(claims)} claims; at most {MAX_CLAIMS}")
    verdicts = []
    for k, entry in enumerate(claims):
        where = f"claims[{k}]"
        if raw_model is None and get(entry, "claim", dict, where).get("kind") != "nonnegative":
            raise FormatError(f"{where}: a claim about a system needs the model section")
        verdicts.append(_check_claim(entry, model, where))
    return AuditReport(tuple(verdicts), file, digest, certificate_digest(data))


def certificate_digest(data: Any) -> str:
    """SHA-256 of the certificate's canonical JSON (keys sorted): which data a report is of."""
    text = json.dumps(data, sort_keys=True, ensure_ascii=True)
    return hashlib.sha256(text.encode("ascii")).hexdigest()


def audit_text(text: str, time_limit: float = TIME_LIMIT) -> AuditReport:
    """Parse JSON text and audit it; raises :class:`FormatError` on bad JSON."""
    try:
        data = json.loads(text)
    except (ValueError, RecursionError) as exc:  # includes integers past Python's digit limit
        raise FormatError(f"not valid JSON: {escape(exc)[:200]}") from None
    return audit_certificate(data, time_limit)
