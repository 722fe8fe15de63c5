"""The certificate: its JSON form, and building it from exact proof data.

A certificate is a JSON object (described by ``certificate.schema.json``):

- ``proofkit_certificate``: the format version (1);
- ``generator``: program name and version;
- ``model``: the model source text and its SHA-256, the states in vector
  order, the parameters (nominal value, range), the vector field at the
  nominal parameters as sparse polynomials (``null`` when not polynomial,
  with ``field_note`` saying why), the domain as polynomials ``g >= 0``;
- ``claims``: one entry per claim of the model, in file order, each with
  ``statement``, ``kind``, ``status`` ("proved", "refuted" or "not proved"),
  and for a proved or refuted claim ``method``, ``theorem``, ``number_field``
  and ``evidence`` (every fact the audit re-derives); otherwise ``reason``.

Numbers are exact strings ``"p/q"``; an element ``a + b*sqrt(d)`` of the field
declared by a claim's ``number_field`` ``{"sqrt": "d"}`` is the pair
``["a", "b"]``. A polynomial is a list of ``[exponents, coefficient]`` over a
declared variable order. Sum-of-squares evidence (``variables``,
``polynomials``, ``gram_matrices``, ``identities``) states identities
``sum c_i P_i = sum M_j (z_j' G_j z_j)``; later proof kinds add claim methods,
not new formats.

Scope: certificates cover polynomial vector fields with rational coefficients
at the nominal parameter values. The claims of a non-polynomial model (sin,
exp, ...) are written "not proved" with that reason for now, and a claim over
an uncertain parameter range is "not proved" unless it ends with ``at nominal``.

This module builds and reads certificates; it never decides validity (that is
:mod:`proofkit.audit`) and never evaluates user text.
"""

from __future__ import annotations

import hashlib
import json
from collections.abc import Iterable, Sequence
from fractions import Fraction
from typing import TYPE_CHECKING, Any

import sympy as sp

from proofkit import __version__
from proofkit.audit.numbers import FormatError, Num, write_number

if TYPE_CHECKING:
    from proofkit.model import Claim, Model

__all__ = [
    "NotRepresentable",
    "certificate_from_sos",
    "dumps",
    "loads",
    "model_section",
    "new_certificate",
    "not_proved_entry",
    "num_from_sympy",
    "number_json",
    "poly_json",
    "quadratic_field",
    "sha256_text",
]


class NotRepresentable(ValueError):
    """A value the certificate format cannot carry exactly (e.g. degree > 2 algebraic)."""


def sha256_text(text: str) -> str:
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


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


def num_from_sympy(value: sp.Expr, d: int) -> Num:
    """The exact ``Num`` of a sympy rational or an element of Q(sqrt(d))."""
    v = sp.expand(sp.radsimp(sp.expand(value)))
    if v.is_Rational:
        return Num(Fraction(int(v.p), int(v.q)), Fraction(0), d)
    if d:
        b = v.coeff(sp.sqrt(d))
        a = sp.expand(v - b * sp.sqrt(d))
        if a.is_Rational and b.is_Rational:
            return Num(Fraction(int(a.p), int(a.q)), Fraction(int(b.p), int(b.q)), d)
    raise NotRepresentable(f"{value} is not in Q(sqrt({d}))" if d else f"{value} is not rational")


def number_json(value: sp.Expr | Num, d: int = 0) -> str | list[str]:
    return write_number(value if isinstance(value, Num) else num_from_sympy(value, d))


def poly_json(expr: sp.Expr, variables: Sequence[sp.Symbol]) -> list[Any]:
    """Sparse ``[[exponents], "coefficient"]`` list of a polynomial with rational coefficients."""
    poly = sp.Poly(sp.expand(expr), *variables)
    out = []
    for monom, coeff in sorted(poly.terms(), reverse=True):
        if coeff == 0:  # the zero polynomial is the empty list
            continue
        if not coeff.is_Rational:
            raise NotRepresentable(f"coefficient {coeff} is not rational")
        out.append([list(monom), str(sp.Rational(coeff))])
    return out


def poly_from_num_dict(p: dict[tuple[int, ...], Num]) -> list[Any]:
    return [[list(e), write_number(c)] for e, c in sorted(p.items(), reverse=True)]


# --- sections ------------------------------------------------------------------
def _exact_text(value: sp.Expr) -> str:
    return str(value) if not value.is_Rational else str(sp.Rational(value))


def model_section(model: Model) -> dict[str, Any]:
    """The ``model`` object: source and hash, states, parameters, nominal field, domain."""
    nominal = model.at_nominal()
    xs = nominal.state_symbols
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
        "vector_field": None,
    }
    try:
        if not nominal.is_polynomial():
            raise NotRepresentable("the vector field is not polynomial in the states")
        section["vector_field"] = [poly_json(rhs, xs) for rhs in nominal.field]
    except (NotRepresentable, sp.PolynomialError) as exc:
        section["field_note"] = str(exc)
    section["domain"] = None
    if nominal.domain is not None:
        try:
            section["domain"] = [
                {"g": poly_json(g, xs), "strict": strict}
                for g, strict in nominal.domain.nonnegative_forms()
            ]
        except (NotRepresentable, sp.PolynomialError) as exc:
            section["domain_note"] = f"not written as polynomials ({exc}); see the source"
    return section


def not_proved_entry(claim: Claim, reason: str) -> dict[str, Any]:
    return {"statement": claim.text, "kind": claim.kind, "status": "not proved", "reason": reason}


def new_certificate(model: dict[str, Any] | None, claims: list[dict[str, Any]]) -> dict[str, Any]:
    return {
        "proofkit_certificate": 1,
        "generator": {"program": "proofkit", "version": __version__},
        "model": model,
        "claims": claims,
    }


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
    except (json.JSONDecodeError, RecursionError) as exc:
        raise FormatError(f"not valid JSON: {exc}") from None
    if not isinstance(data, dict):
        raise FormatError("a certificate is a JSON object")
    return data


# --- sum-of-squares certificates ------------------------------------------------------
def sos_evidence(
    p: sp.Expr, variables: Sequence[sp.Symbol], basis: Sequence[sp.Expr], gram: sp.Matrix
) -> dict[str, Any]:
    """Evidence ``p = z' G z`` for the claim "p >= 0" in the identity format."""

    def exps(m: sp.Expr) -> list[int]:
        return list(sp.Poly(m, *variables).monoms()[0])

    return {
        "variables": [str(v) for v in variables],
        "polynomials": {"p": poly_json(p, variables)},
        "gram_matrices": {
            "G": {
                "basis": [exps(m) for m in basis],
                "matrix": [
                    [number_json(gram[i, j]) for j in range(gram.cols)] for i in range(gram.rows)
                ],
            }
        },
        "identities": [{"target": [["1", "p"]], "sum": [{"gram": "G"}]}],
    }


def certificate_from_sos(p: sp.Expr, variables: Sequence[sp.Symbol], result: Any) -> dict[str, Any]:
    """A stand-alone certificate that ``p >= 0`` on R^n from a ``decompose`` result.

    ``result`` needs ``found``, ``basis`` and ``gram``; when ``found`` is false the
    claim is written as not proved with ``result.reason``.
    """
    names = ", ".join(str(v) for v in variables)
    statement = f"p >= 0 for all real {names}"
    if not getattr(result, "found", False):
        entry = {
            "statement": statement,
            "kind": "nonnegative",
            "status": "not proved",
            "reason": str(getattr(result, "reason", "no decomposition found")),
        }
    else:
        entry = {
            "statement": statement,
            "kind": "nonnegative",
            "status": "proved",
            "method": "sum-of-squares",
            "theorem": "sum-of-squares",
            "number_field": None,
            "evidence": sos_evidence(p, variables, list(result.basis), result.gram),
        }
    return new_certificate(None, [entry])
