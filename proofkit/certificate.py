"""The certificate (format 2): writing it from exact data, and reading it as typed views.

The format is specified in DEVELOPERS.md, "Contracts between the stages".
In short: ``model`` carries the source and its SHA-256, the states, the
parameters, the field over the states and the uncertain parameters (fixed
parameters substituted), the domain and the conditions where the field is
defined; each claim entry carries the structural claim (kind, equilibrium
name and point, set, scope), the source line, the status and, for a proved or
refuted claim, method, theorem and evidence. Numbers are exact strings
``"p/q"`` or pairs ``["a", "b"]`` meaning ``a + b sqrt(d)``.

:func:`claim_structure` is the one place that turns a model's claim into its
structure; provenance compares it with the certificate's. :func:`read` gives
read-only views for the report, provenance and the API.

This module builds and reads certificates; it never decides validity (that
is :mod:`proofkit.audit`, which it must not import) and never evaluates user
text.
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Iterable, Mapping, Sequence
from dataclasses import dataclass
from fractions import Fraction
from types import MappingProxyType
from typing import TYPE_CHECKING, Any

import sympy as sp

from proofkit import __version__

if TYPE_CHECKING:
    from proofkit.model import Claim, Model

__all__ = [
    "FORMAT_VERSION",
    "CertificateView",
    "ClaimView",
    "MalformedCertificate",
    "ModelView",
    "NotRepresentable",
    "certificate_from_sos",
    "claim_entry",
    "claim_number_field",
    "claim_scope",
    "claim_structure",
    "dumps",
    "exact_number",
    "loads",
    "model_section",
    "new_certificate",
    "nonnegative_entry",
    "not_proved_entry",
    "number_json",
    "poly_json",
    "quadratic_field",
    "read",
    "sha256_text",
    "sos_evidence",
]

FORMAT_VERSION = 2


class NotRepresentable(ValueError):
    """A value the certificate format cannot carry exactly (e.g. degree > 2 algebraic)."""


class MalformedCertificate(ValueError):
    """The text is not a certificate this module can read (the audit says why in detail)."""


def sha256_text(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()


# --- numbers -----------------------------------------------------------------
def _sqrt_radicands(value: sp.Expr) -> set[int] | None:
    """Integer radicands of the square roots in ``value``; None if other irrationals occur."""
    found: set[int] = set()
    for atom in sp.preorder_traversal(value):
        if isinstance(atom, sp.Pow) and atom.exp == sp.S.Half and atom.base.is_Integer:
            found.add(int(atom.base))
            continue
        bad_pow = isinstance(atom, sp.Pow) and not atom.exp.is_Integer
        bad_atom = atom.is_Atom and not atom.is_Rational
        if bad_pow or bad_atom or isinstance(atom, sp.Function):
            return None
    return found


def quadratic_field(values: Iterable[sp.Expr]) -> int | None:
    """0 when all values are rational, ``d`` when all lie in Q(sqrt(d)), else None."""
    radicands: set[int] = set()
    for v in values:
        r = _sqrt_radicands(sp.radsimp(sp.expand(v)))
        if r is None:
            return None
        radicands |= r
    if len(radicands) > 1:
        return None
    return radicands.pop() if radicands else 0


def _rational_text(value: Fraction | sp.Rational | int) -> str:
    f = Fraction(int(value.p), int(value.q)) if isinstance(value, sp.Rational) else Fraction(value)
    return str(f)


def number_json(value: sp.Expr | Fraction | int, d: int = 0) -> str | list[str]:
    """The exact certificate form: ``"p/q"``, or ``["a", "b"]`` for ``a + b sqrt(d)``."""
    if isinstance(value, Fraction | int):
        return str(Fraction(value))
    v = sp.expand(sp.radsimp(sp.expand(value)))
    if v.is_Rational:
        return _rational_text(v)
    if d:
        b = v.coeff(sp.sqrt(d))
        a = sp.expand(v - b * sp.sqrt(d))
        if a.is_Rational and b.is_Rational and b != 0:
            return [_rational_text(a), _rational_text(b)]
    raise NotRepresentable(f"{value} is not in Q(sqrt({d}))" if d else f"{value} is not rational")


def exact_number(value: Any, d: int = 0) -> sp.Expr:
    """The sympy value of a certificate number (``"p/q"`` or ``["a", "b"]``)."""
    try:
        if isinstance(value, list) and len(value) == 2:
            return sp.Rational(Fraction(value[0])) + sp.Rational(Fraction(value[1])) * sp.sqrt(d)
        return sp.Rational(Fraction(str(value)))
    except (ValueError, ZeroDivisionError, TypeError) as exc:
        raise MalformedCertificate(f"not an exact number: {str(value)[:60]!r}") from exc


def poly_json(expr: sp.Expr, variables: Sequence[sp.Symbol]) -> list[Any]:
    """Sparse ``[[exponents], "coefficient"]`` list of a polynomial with rational coefficients."""
    try:
        poly = sp.Poly(sp.expand(expr), *variables)
    except sp.PolynomialError as exc:
        raise NotRepresentable(f"not a polynomial in {list(variables)}: {exc}") from None
    out = []
    for monom, coeff in sorted(poly.terms(), reverse=True):
        if coeff == 0:  # the zero polynomial is the empty list
            continue
        if not coeff.is_Rational:
            raise NotRepresentable(f"coefficient {coeff} is not rational")
        out.append([list(monom), _rational_text(coeff)])
    return out


# --- the model section ---------------------------------------------------------
def _exact_text(value: sp.Expr) -> str | None:
    """A rational as ``"p/q"``; anything else (pi, sqrt(2)) as null: the audit takes no text."""
    return _rational_text(value) if value.is_Rational else None


def _fixed_values(model: Model) -> dict[sp.Symbol, sp.Expr]:
    return {p.symbol: p.nominal for p in model.params if not p.is_uncertain}


def _num_den(expr: sp.Expr, xs: Sequence[sp.Symbol]) -> tuple[sp.Expr, sp.Expr]:
    if expr.is_polynomial(*xs):
        return sp.expand(expr), sp.Integer(1)
    num, den = sp.fraction(sp.together(expr))
    return sp.expand(num), sp.expand(den)


def _field_section(model: Model) -> tuple[dict[str, Any] | None, str | None, list[Any]]:
    """The field over states + uncertain parameters, its note, and its conditions."""
    fixed = _fixed_values(model)
    uncertain = [p.symbol for p in model.params if p.is_uncertain]
    xs = [*model.state_symbols, *uncertain]
    try:
        nums, dens = [], []
        for rhs in model.field:
            num, den = _num_den(rhs.subs(fixed), xs)
            nums.append(poly_json(num, xs))
            dens.append(poly_json(den, xs))
    except (NotRepresentable, sp.PolynomialError) as exc:
        return None, f"not a polynomial or rational field: {exc}", []
    variables = [*model.states, *(str(p) for p in uncertain)]
    one = poly_json(sp.Integer(1), xs)
    polynomial = all(d == one for d in dens)
    field = {
        "variables": variables,
        "numerators": nums,
        "denominators": None if polynomial else dens,
    }
    try:
        conditions = _conditions(model, xs, fixed, [] if polynomial else dens)
    except (NotRepresentable, sp.PolynomialError) as exc:
        return None, f"where the field is defined is not polynomial: {exc}", []
    return field, None, conditions


def _conditions(
    model: Model, xs: Sequence[sp.Symbol], fixed: dict[sp.Symbol, sp.Expr], dens: list[Any]
) -> list[dict[str, Any]]:
    """Where the field is defined (``Model.definedness``, and every denominator nonzero)."""
    out: list[dict[str, Any]] = []
    for d in getattr(model, "definedness", ()):
        e = sp.expand(d.expr.subs(fixed))
        if not e.free_symbols:
            continue  # a constant condition: the language has decided it already
        g = sp.expand(e**2) if d.relation == "!=" else e
        out.append({"g": poly_json(g, xs), "strict": d.relation != ">="})
    for rhs in model.field if dens else ():
        den = _num_den(rhs.subs(fixed), xs)[1]
        if den != 1:
            out.append({"g": poly_json(sp.expand(den**2), xs), "strict": True})
    unique: list[dict[str, Any]] = []
    for c in out:
        if c not in unique:
            unique.append(c)
    return unique


def _expressions(model: Model) -> dict[str, Any] | None:
    """A non-rational field as expression trees (``model.expressions``), or None."""
    from proofkit.analysis.enclosure import NotExpressible, expression_json

    fixed = _fixed_values(model)
    uncertain = [p.symbol for p in model.params if p.is_uncertain]
    xs = [*model.state_symbols, *uncertain]
    try:
        components = [expression_json(rhs.subs(fixed), xs) for rhs in model.field]
    except NotExpressible:
        return None
    return {"variables": [*model.states, *(str(p) for p in uncertain)], "components": components}


def model_section(model: Model) -> dict[str, Any]:
    """The ``model`` object of format 2 (see DEVELOPERS.md)."""
    section: dict[str, Any] = {
        "name": model.name,
        "file": model.file,
        "source": model.source,
        "source_sha256": sha256_text(model.source),
        "states": list(model.states),
        "parameters": [
            {
                "name": p.name,
                "nominal": _exact_text(p.nominal),
                "range": None if p.low is None else [_exact_text(p.low), _exact_text(p.high)],
            }
            for p in model.params
        ],
    }
    field, note, conditions = _field_section(model)
    section["field"] = field
    if note is not None:
        section["field_note"] = note
        expressions = _expressions(model)
        if expressions is not None:
            section["expressions"] = expressions
    section["domain"] = None
    if model.domain is not None:
        try:
            section["domain"] = _set_json(model.domain, model, nominal=False)
        except NotRepresentable as exc:
            section["domain_note"] = f"not written as polynomials ({exc}); see the source"
    section["conditions"] = conditions
    section["equilibria"] = [_declared(model, eq.name) for eq in model.equilibria]
    return section


def _declared(model: Model, name: str) -> dict[str, Any]:
    """A declared equilibrium: its point with fixed parameters substituted (null if it moves)."""
    coords = model.equilibrium(name).as_dict()
    exprs = [sp.expand(coords[s].subs(_fixed_values(model))) for s in model.states]
    uncertain = {p.symbol for p in model.params if p.is_uncertain}
    d = None if any(e.free_symbols & uncertain for e in exprs) else quadratic_field(exprs)
    try:
        point = None if d is None else [number_json(e, d) for e in exprs]
    except NotRepresentable:
        point, d = None, None
    return {"name": name, "point": point, "number_field": {"sqrt": str(d)} if d else None}


def _set_json(region: Any, model: Model, *, nominal: bool) -> list[dict[str, Any]]:
    values = model.nominal_values() if nominal else _fixed_values(model)
    xs = model.state_symbols
    return [
        {"g": poly_json(sp.expand(g.subs(values)), xs), "strict": bool(strict)}
        for g, strict in region.nonnegative_forms()
    ]


# --- claims ---------------------------------------------------------------------
def claim_scope(model: Model, claim: Claim) -> str:
    """``nominal`` if the claim says ``at nominal`` or every parameter is fixed, else ``range``."""
    if claim.at_nominal or not any(p.is_uncertain for p in model.params):
        return "nominal"
    return "range"


def _point(model: Model, claim: Claim, scope: str) -> tuple[dict[str, Any], int | None]:
    """The equilibrium entry and its number field (None: not representable)."""
    name = claim.target or ""
    entry: dict[str, Any] = {"name": name, "point": None}
    try:
        coords = model.equilibrium(name).as_dict()
    except KeyError:
        return entry, None
    values = model.nominal_values() if scope == "nominal" else _fixed_values(model)
    exprs = [sp.expand(coords[s].subs(values)) for s in model.states]
    uncertain = [p.symbol for p in model.params if p.is_uncertain]
    if any(e.free_symbols & set(uncertain) for e in exprs):
        from proofkit.analysis.parametric import moving_point_json  # the ranges room's format

        moving = moving_point_json(model, name)
        if moving is None:
            return entry, None
        entry["moving"] = moving
        del entry["point"]
        return entry, 0
    d = quadratic_field(exprs)
    if d is None:
        _exact_point(model, exprs, entry)
        return entry, None
    try:
        entry["point"] = [number_json(e, d) for e in exprs]
    except NotRepresentable:
        return entry, None
    return entry, d


def _exact_point(model: Model, exprs: list[sp.Expr], entry: dict[str, Any]) -> None:
    """A non-polynomial field's point such as ``pi/3`` as expression trees (key ``exact``)."""
    if model.is_polynomial() or any(e.free_symbols for e in exprs):
        return
    from proofkit.analysis.enclosure import NotExpressible, expression_json

    try:
        entry["exact"] = [expression_json(e, []) for e in exprs]
    except NotExpressible:
        return


def claim_structure(model: Model, claim: Claim) -> dict[str, Any]:
    """The structural claim: kind, equilibrium (name, point), set, scope.

    A part that the format cannot carry exactly is ``null`` (a point of
    algebraic degree above 2, a set that is not polynomial); such a claim can
    only be "not proved".
    """
    scope = claim_scope(model, claim)
    equilibrium = None
    if claim.kind in ("stable", "unstable", "globally stable", "attracts"):
        equilibrium = _point(model, claim, scope)[0]
    region = None
    if claim.region is not None:
        try:
            region = _set_json(claim.region, model, nominal=scope == "nominal")
        except (NotRepresentable, sp.PolynomialError):
            region = None
    return {"kind": claim.kind, "equilibrium": equilibrium, "set": region, "scope": scope}


def claim_number_field(model: Model, claim: Claim) -> int | None:
    """The radicand d of the claim's point (0 for Q, None when not representable)."""
    if claim.kind not in ("stable", "unstable", "globally stable", "attracts"):
        return 0
    return _point(model, claim, claim_scope(model, claim))[1]


def claim_entry(model: Model, claim: Claim, status: str, **fields: Any) -> dict[str, Any]:
    """A claim entry: structure, source line, status, then ``fields`` (method, evidence, ...)."""
    entry: dict[str, Any] = {
        "claim": claim_structure(model, claim),
        "statement": claim.text,
        "status": status,
    }
    if status != "not proved" and "number_field" not in fields:
        d = claim_number_field(model, claim)
        fields = {"number_field": {"sqrt": str(d)} if d else None, **fields}
    entry.update(fields)
    return entry


def not_proved_entry(model: Model, claim: Claim, reason: str) -> dict[str, Any]:
    return claim_entry(model, claim, "not proved", reason=reason)


def new_certificate(model: dict[str, Any] | None, claims: list[dict[str, Any]]) -> dict[str, Any]:
    return {
        "proofkit_certificate": FORMAT_VERSION,
        "generator": {"program": "proofkit", "version": __version__},
        "model": model,
        "claims": claims,
    }


# --- text ---------------------------------------------------------------------------
def _compact(value: Any, indent: int) -> str:
    """JSON with objects indented and short lists of scalars kept on one line."""
    pad, inner = " " * indent, " " * (indent + 1)
    if isinstance(value, dict) and value:
        items = [f"{inner}{json.dumps(k)}: {_compact(v, indent + 1)}" for k, v in value.items()]
        return "{\n" + ",\n".join(items) + "\n" + pad + "}"
    if isinstance(value, list) and value:
        flat = json.dumps(value, ensure_ascii=True)
        if len(flat) <= 96 or not any(isinstance(v, dict | list) for v in value):
            return flat
        return "[\n" + ",\n".join(inner + _compact(v, indent + 1) for v in value) + "\n" + pad + "]"
    return json.dumps(value, ensure_ascii=True)


def dumps(cert: dict[str, Any]) -> str:
    """Deterministic JSON text (the bytes whose SHA-256 the documents quote)."""
    return _compact(cert, 0) + "\n"


def loads(text: str) -> dict[str, Any]:
    try:
        data = json.loads(text)
    except (ValueError, RecursionError) as exc:
        raise MalformedCertificate(f"not valid JSON: {str(exc)[:200]}") from None
    if not isinstance(data, dict):
        raise MalformedCertificate("a certificate is a JSON object")
    return data


# --- typed read-only views ------------------------------------------------------------
def _frozen(value: Any) -> Any:
    if isinstance(value, dict):
        return MappingProxyType({k: _frozen(v) for k, v in value.items()})
    if isinstance(value, list):
        return tuple(_frozen(v) for v in value)
    return value


@dataclass(frozen=True)
class ClaimView:
    """One claim entry: its structure, status and evidence (JSON values, read-only)."""

    kind: str
    equilibrium: str | None
    point: tuple[Any, ...] | None
    set: tuple[Any, ...] | None
    scope: str
    statement: str
    status: str
    method: str | None
    theorem: str | None
    number_field: int
    evidence: Mapping[str, Any]
    reason: str | None
    counterexample: Mapping[str, Any] | None


@dataclass(frozen=True)
class ModelView:
    name: str | None
    file: str | None
    source: str
    source_sha256: str
    states: tuple[str, ...]
    parameters: tuple[Mapping[str, Any], ...]
    field: Mapping[str, Any] | None
    field_note: str | None
    domain: tuple[Any, ...] | None
    conditions: tuple[Any, ...]


@dataclass(frozen=True)
class CertificateView:
    version: int
    model: ModelView | None
    claims: tuple[ClaimView, ...]
    data: Mapping[str, Any]


def _claim_view(entry: Any) -> ClaimView:
    c = entry.get("claim") or {}
    eq = c.get("equilibrium") or {}
    nf = entry.get("number_field")
    sqrt = nf.get("sqrt") if isinstance(nf, dict) else None
    d = int(sqrt) if isinstance(sqrt, str) and sqrt.isascii() and sqrt.isdigit() else 0
    return ClaimView(
        kind=str(c.get("kind", "")),
        equilibrium=eq.get("name"),
        point=_frozen(eq.get("point")),
        set=_frozen(c.get("set")),
        scope=str(c.get("scope", "nominal")),
        statement=str(entry.get("statement", "")),
        status=str(entry.get("status", "")),
        method=entry.get("method"),
        theorem=entry.get("theorem"),
        number_field=d if len(str(sqrt or "")) < 20 else 0,
        evidence=_frozen(entry.get("evidence") or {}),
        reason=entry.get("reason"),
        counterexample=_frozen(entry.get("counterexample")),
    )


def read(text: str | Mapping[str, Any]) -> CertificateView:
    """Read-only typed views of a certificate (shape only: the audit decides validity)."""
    data = loads(text) if isinstance(text, str) else dict(text)
    try:
        raw = data.get("model")
        model = None
        if raw is not None:
            model = ModelView(
                name=raw.get("name"),
                file=raw.get("file"),
                source=str(raw.get("source", "")),
                source_sha256=str(raw.get("source_sha256", "")),
                states=tuple(raw.get("states") or ()),
                parameters=_frozen(raw.get("parameters") or []),
                field=_frozen(raw.get("field")),
                field_note=raw.get("field_note"),
                domain=_frozen(raw.get("domain")),
                conditions=_frozen(raw.get("conditions") or []),
            )
        claims = tuple(_claim_view(e) for e in data.get("claims") or [])
    except (AttributeError, TypeError) as exc:
        raise MalformedCertificate(f"not a format-2 certificate: {exc}") from None
    return CertificateView(int(data.get("proofkit_certificate", 0)), model, claims, _frozen(data))


# --- stand-alone sum-of-squares certificates ------------------------------------------
def sos_evidence(
    p: sp.Expr, variables: Sequence[sp.Symbol], basis: Sequence[sp.Expr], gram: sp.Matrix
) -> dict[str, Any]:
    """Evidence ``p = z' G z`` for the claim "p >= 0" (schema ``sum-of-squares``)."""

    def exps(m: sp.Expr) -> list[int]:
        return list(sp.Poly(m, *variables).monoms()[0])

    return {
        "variables": [str(v) for v in variables],
        "p": poly_json(p, variables),
        "squares": {
            "p": {
                "basis": [exps(m) for m in basis],
                "gram": [
                    [number_json(gram[i, j]) for j in range(gram.cols)] for i in range(gram.rows)
                ],
            }
        },
    }


def nonnegative_entry(statement: str, status: str, **fields: Any) -> dict[str, Any]:
    structure = {"kind": "nonnegative", "equilibrium": None, "set": None, "scope": "nominal"}
    return {"claim": structure, "statement": statement, "status": status, **fields}


def certificate_from_sos(p: sp.Expr, variables: Sequence[sp.Symbol], result: Any) -> dict[str, Any]:
    """A stand-alone certificate that ``p >= 0`` on R^n from a ``decompose`` result.

    ``result`` needs ``found``, ``basis`` and ``gram``; when ``found`` is false the
    claim is written as not proved with ``result.reason``.
    """
    names = ", ".join(str(v) for v in variables)
    statement = f"p >= 0 for all real {names}"
    if not getattr(result, "found", False):
        reason = str(getattr(result, "reason", "no decomposition found"))
        entry = nonnegative_entry(statement, "not proved", reason=reason)
    else:
        evidence = sos_evidence(p, variables, list(result.basis), result.gram)
        entry = nonnegative_entry(
            statement,
            "proved",
            method="sum-of-squares",
            theorem="sum-of-squares",
            number_field=None,
            evidence=evidence,
        )
    return new_certificate(None, [entry])
