"""The trusted checker: re-derive every fact of a certificate exactly.

Reading order for a reviewer: :func:`audit_certificate` checks the top-level
structure and the vector field, then each claim with the checker for its
method. A checker recomputes each stated fact from the certificate's exact
data and compares; any difference rejects the claim and names the step.

What this module must never do: import the parser, the search code, any
solver, sympy, or anything outside the standard library and
:mod:`proofkit.audit`; use floating point; trust a stated number without
recomputing it.
"""

from __future__ import annotations

import json
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

from proofkit.audit.algebra import (
    Matrix,
    Poly,
    char_poly,
    ldl_pivots,
    mat_add,
    matmul,
    poly_add,
    poly_derivative,
    poly_eval,
    poly_mul,
    poly_scale,
    routh_rows,
    shift_and_multiply,
    sign_changes,
    transpose,
)
from proofkit.audit.numbers import FormatError, Num, parse_number, parse_radicand

__all__ = [
    "FORMAT_VERSION",
    "THEOREMS",
    "AuditReport",
    "ClaimVerdict",
    "FormatError",
    "audit_certificate",
    "audit_text",
]

FORMAT_VERSION = 1
MAX_MULTIPLIER_POWER = 4
# (claim kind, method) -> the theorem whose hypotheses the checker establishes.
THEOREMS = {
    ("stable", "linearization"): "indirect-method-stability",
    ("unstable", "linearization"): "indirect-method-instability",
    ("nonnegative", "sum-of-squares"): "sum-of-squares",
}
OPPOSITE = {"stable": "unstable", "unstable": "stable"}
MODEL_KEYS = {
    "name",
    "file",
    "source",
    "source_sha256",
    "states",
    "parameters",
    "vector_field",
    "field_note",
    "domain",
    "domain_note",
}
CLAIM_KEYS = {"statement", "kind", "status", "method", "theorem", "number_field", "evidence"}
LINEARIZATION_KEYS = {
    "equilibrium",
    "point",
    "jacobian",
    "characteristic_polynomial",
    "routh",
    "lyapunov",
}
KINDS = ("stable", "unstable", "globally stable", "attracts", "no cycle", "cycle", "nonnegative")


class Rejected(Exception):
    """A stated fact did not survive recomputation."""

    def __init__(self, step: str, message: str) -> None:
        super().__init__(f"{step}: {message}")
        self.step, self.message = step, message


@dataclass(frozen=True)
class ClaimVerdict:
    """The audit's decision on one claim: accepted, rejected or not claimed."""

    statement: str
    status: (
        str  # "accepted" | "refuted" (evidence against it accepted) | "rejected" | "not claimed"
    )
    method: str | None = None
    checked: tuple[str, ...] = ()  # each verified fact, in words
    failed_step: str | None = None
    message: str | None = None


@dataclass(frozen=True)
class AuditReport:
    claims: tuple[ClaimVerdict, ...] = field(default_factory=tuple)

    @property
    def accepted(self) -> bool:
        """True when no claim was rejected (claims marked "not proved" claim nothing)."""
        return all(c.status != "rejected" for c in self.claims)


# --- reading -------------------------------------------------------------------
def _only_keys(obj: dict[str, Any], allowed: set[str], where: str) -> None:
    """Reject keys the audit does not check: no unchecked field may carry a number."""
    if not isinstance(obj, dict):
        raise FormatError(f"{where}: expected an object")
    extra = sorted(set(obj) - allowed)
    if extra:
        raise FormatError(f"{where}: unknown key(s) {extra}; the audit checks no such field")


def _get(obj: Any, key: str, kind: type | tuple[type, ...], where: str) -> Any:
    if not isinstance(obj, dict) or key not in obj:
        raise FormatError(f"{where}: missing key {key!r}")
    value = obj[key]
    if not isinstance(value, kind) or (kind is int and isinstance(value, bool)):
        raise FormatError(f"{where}.{key}: wrong type {type(value).__name__}")
    return value


def _poly(data: Any, nvars: int, d: int, where: str) -> Poly:
    if not isinstance(data, list):
        raise FormatError(f"{where}: a polynomial is a list of [exponents, coefficient]")
    out: Poly = {}
    for k, term in enumerate(data):
        w = f"{where}[{k}]"
        if not (isinstance(term, list) and len(term) == 2 and isinstance(term[0], list)):
            raise FormatError(f"{w}: expected [exponents, coefficient]")
        exps = term[0]
        if len(exps) != nvars or not all(
            isinstance(e, int) and not isinstance(e, bool) and 0 <= e <= 1000 for e in exps
        ):
            raise FormatError(f"{w}: expected {nvars} exponents, integers in 0..1000")
        key = tuple(exps)
        if key in out:
            raise FormatError(f"{w}: exponent vector {exps} appears twice")
        c = parse_number(term[1], d, w)
        if c.is_zero():
            raise FormatError(f"{w}: a listed coefficient must be nonzero")
        out[key] = c
    return out


def _vector(data: Any, d: int, where: str, length: int | None = None) -> list[Num]:
    if not isinstance(data, list) or (length is not None and len(data) != length):
        raise FormatError(f"{where}: expected a list of {length if length else ''} numbers")
    return [parse_number(x, d, f"{where}[{i}]") for i, x in enumerate(data)]


def _matrix(data: Any, d: int, where: str, n: int) -> Matrix:
    if not isinstance(data, list) or len(data) != n:
        raise FormatError(f"{where}: expected {n} rows")
    return [_vector(r, d, f"{where}[{i}]", n) for i, r in enumerate(data)]


def _field_of(claim: dict[str, Any], where: str) -> int:
    nf = claim.get("number_field")
    if nf is None:
        return 0
    radicand = parse_radicand(_get(nf, "sqrt", str, f"{where}.number_field"), where)
    _only_keys(nf, {"sqrt"}, f"{where}.number_field")
    return radicand


# --- the checkers, one per method --------------------------------------------------
@dataclass
class _Context:
    states: list[str]
    vector_field: list[Poly] | None
    log: list[str]

    def ok(self, text: str) -> None:
        self.log.append(text)


def _require(cond: bool, step: str, message: str) -> None:
    if not cond:
        raise Rejected(step, message)


def _check_linearization(claim: dict[str, Any], kind: str, ctx: _Context, where: str) -> None:
    """Lyapunov's indirect method from an exact Jacobian and an exact Routh array."""
    _require(ctx.vector_field is not None, "vector field", "no polynomial vector field")
    f: list[Poly] = ctx.vector_field or []
    n = len(ctx.states)
    d = _field_of(claim, where)
    ev = _get(claim, "evidence", dict, where)
    w = f"{where}.evidence"
    _only_keys(ev, LINEARIZATION_KEYS, w)
    point = _vector(_get(ev, "point", list, w), d, f"{w}.point", n)
    for i, fi in enumerate(f):
        r = poly_eval({e: Num(c.a, c.b, d) for e, c in fi.items()}, point)
        _require(r.is_zero(), "equilibrium", f"f{i + 1} = {r} at the point, not 0")
    ctx.ok("the point is an exact zero of every component of the vector field")

    jac_stated = _matrix(_get(ev, "jacobian", list, w), d, f"{w}.jacobian", n)
    jac = [[poly_eval(poly_derivative(fi, j), point) for j in range(n)] for fi in f]
    _require(jac == jac_stated, "jacobian", "the stated Jacobian differs from df/dx at the point")
    ctx.ok("the Jacobian equals df/dx at the point (recomputed)")

    cp_stated = _vector(_get(ev, "characteristic_polynomial", list, w), d, f"{w}.cp", n + 1)
    cp = char_poly(jac)
    _require(cp == cp_stated, "characteristic polynomial", "differs from det(sI - J)")
    ctx.ok("the characteristic polynomial equals det(sI - J) (recomputed)")

    ro = _get(ev, "routh", dict, w)
    _only_keys(ro, {"shift", "multiplier_power", "polynomial", "rows", "sign_changes"}, w)
    shift = parse_number(_get(ro, "shift", (str, list), f"{w}.routh"), d, f"{w}.routh.shift")
    power = _get(ro, "multiplier_power", int, f"{w}.routh")
    _require(0 <= power <= MAX_MULTIPLIER_POWER, "routh", f"multiplier power {power} not allowed")
    _require(shift.sign() >= 0, "routh", "the shift must be >= 0")
    q = shift_and_multiply(cp, shift, power)
    q_stated = _vector(_get(ro, "polynomial", list, f"{w}.routh"), d, f"{w}.routh.p", n + 1 + power)
    _require(q == q_stated, "routh", "the stated polynomial is not (s+1)^k p(s + shift)")
    rows = routh_rows(q)
    _require(rows is not None, "routh", "the Routh array is not regular (a zero in column one)")
    assert rows is not None
    rows_stated = [
        _vector(r, d, f"{w}.routh.rows[{i}]")
        for i, r in enumerate(_get(ro, "rows", list, f"{w}.routh"))
    ]
    _require(rows == rows_stated, "routh", "the stated Routh array differs from the recomputed one")
    changes = sign_changes([r[0] for r in rows])
    _require(
        changes == _get(ro, "sign_changes", int, f"{w}.routh"),
        "routh",
        f"the first column has {changes} sign changes, not the stated number",
    )
    ctx.ok(
        f"the Routh array of the degree-{len(q) - 1} polynomial is regular; its first column "
        f"has {changes} sign changes (recomputed)"
    )

    if kind == "stable":
        _require(shift.is_zero() and power == 0, "theorem", "stability needs the array of p itself")
        _require(
            all(r[0].sign() > 0 for r in rows),
            "theorem",
            "a first-column entry is not positive: the Jacobian is not Hurwitz",
        )
        ctx.ok("all first-column entries are positive: every eigenvalue has negative real part")
        if "lyapunov" in ev:
            _check_lyapunov_matrices(ev["lyapunov"], jac, d, n, ctx, f"{w}.lyapunov")
    else:
        _require(changes >= 1, "theorem", "no sign change: no root in the right half plane shown")
        where_roots = "> 0" if shift.is_zero() else f"> {shift} > 0"
        ctx.ok(f"{changes} root(s) of det(sI - J) have real part {where_roots}: J is not stable")
        _require("lyapunov" not in ev, "evidence", "a Lyapunov matrix belongs to stability claims")


def _check_lyapunov_matrices(
    data: Any, jac: Matrix, d: int, n: int, ctx: _Context, where: str
) -> None:
    """A'P + PA = -Q with P and Q symmetric positive definite (exact LDL')."""
    if not isinstance(data, dict):
        raise FormatError(f"{where}: expected an object with P and Q")
    _only_keys(data, {"P", "Q"}, where)
    p = _matrix(_get(data, "P", list, where), d, f"{where}.P", n)
    q = _matrix(_get(data, "Q", list, where), d, f"{where}.Q", n)
    for name, m in (("P", p), ("Q", q)):
        _require(m == transpose(m), "lyapunov", f"{name} is not symmetric")
        res = ldl_pivots(m)
        _require(not isinstance(res, str), "lyapunov", f"{name} is not positive definite: {res}")
        assert not isinstance(res, str)
        _require(all(x.sign() > 0 for x in res[0]), "lyapunov", f"{name} is singular")
    lhs = mat_add(matmul(transpose(jac), p), matmul(p, jac))
    _require(lhs == [[-x for x in r] for r in q], "lyapunov", "A'P + PA differs from -Q")
    ctx.ok("A'P + PA = -Q holds exactly with P > 0 and Q > 0 (exact LDL')")


def _check_sos(claim: dict[str, Any], kind: str, ctx: _Context, where: str) -> None:
    """The claimed polynomial ``p`` equals a Gram form with a PSD Gram matrix."""
    ev = _get(claim, "evidence", dict, where)
    w = f"{where}.evidence"
    _only_keys(ev, {"variables", "polynomials", "gram_matrices", "identities"}, w)
    if claim.get("number_field") is not None:
        raise FormatError(f"{where}.number_field: sum-of-squares evidence is rational")
    polys, identities = _read_identities(ev, ctx, w)
    wanted = "p >= 0 for all real " + ", ".join(ev["variables"])
    _require(claim["statement"] == wanted, "statement", f"the statement must read {wanted!r}")
    _require("p" in polys, "evidence", "no polynomial named p")
    ok = any(
        len(ident["target"]) == 1
        and ident["target"][0] == (Num.of(1), "p")
        and all(t[0] is None for t in ident["sum"])
        for ident in identities
    )
    _require(ok, "theorem", "no identity p = sum of Gram forms")
    ctx.ok("p equals a sum of Gram forms with PSD Gram matrices, hence p >= 0 everywhere")


def _read_identities(
    ev: dict[str, Any], ctx: _Context, w: str
) -> tuple[dict[str, Poly], list[dict[str, Any]]]:
    """Check every identity ``sum c_i P_i == sum M_j * (z_j' G_j z_j)``, each G_j PSD."""
    names = _get(ev, "variables", list, w)
    if not all(isinstance(v, str) and v.isidentifier() for v in names) or len(set(names)) != len(
        names
    ):
        raise FormatError(f"{w}.variables: expected distinct variable names")
    nv = len(names)
    polys = {
        k: _poly(v, nv, 0, f"{w}.polynomials.{k}")
        for k, v in _get(ev, "polynomials", dict, w).items()
    }
    for k in polys:  # "1" and "lie(NAME)" are computed by the audit, never stated
        if not k.isidentifier():
            raise FormatError(f"{w}.polynomials: {k!r} is not a plain name")
    polys["1"] = {(0,) * nv: Num.of(1)}

    def resolve(name: str) -> Poly:
        if name in polys:
            return polys[name]
        if name.startswith("lie(") and name.endswith(")") and name[4:-1] in polys:
            _require(
                ctx.vector_field is not None and names == ctx.states,
                "identity",
                "a Lie derivative needs the model's vector field over its states",
            )
            base = polys[name[4:-1]]
            out: Poly = {}
            for i, fi in enumerate(ctx.vector_field or []):
                out = poly_add(out, poly_mul(poly_derivative(base, i), fi))
            return out
        raise Rejected("identity", f"unknown polynomial {name!r}")

    def combination(data: Any, where: str) -> tuple[list[tuple[Num, str]], Poly]:
        if not isinstance(data, list) or not data:
            raise FormatError(f"{where}: expected a list of [coefficient, polynomial name]")
        terms, total = [], {}
        for i, t in enumerate(data):
            if not (isinstance(t, list) and len(t) == 2 and isinstance(t[1], str)):
                raise FormatError(f"{where}[{i}]: expected [coefficient, name]")
            c = parse_number(t[0], 0, f"{where}[{i}]")
            terms.append((c, t[1]))
            total = poly_add(total, poly_scale(resolve(t[1]), c))
        return terms, total

    grams: dict[str, Poly] = {}
    for gname, g in _get(ev, "gram_matrices", dict, w).items():
        gw = f"{w}.gram_matrices.{gname}"
        basis = _get(g, "basis", list, gw)
        _only_keys(g, {"basis", "matrix"}, gw)
        mons = [tuple(_monomial(b, nv, f"{gw}.basis[{i}]")) for i, b in enumerate(basis)]
        _require(len(set(mons)) == len(mons), "gram", f"{gname}: repeated basis monomial")
        m = _matrix(_get(g, "matrix", list, gw), 0, f"{gw}.matrix", len(mons))
        _require(m == transpose(m), "gram", f"{gname} is not symmetric")
        res = ldl_pivots(m)
        _require(not isinstance(res, str), "gram", f"{gname} is not PSD: {res}")
        form: Poly = {}  # z' G z = sum over i, j of G_ij z_i z_j
        for i, mi in enumerate(mons):
            for j, mj in enumerate(mons):
                e = tuple(a + b for a, b in zip(mi, mj, strict=True))
                form[e] = form[e] + m[i][j] if e in form else m[i][j]
        grams[gname] = poly_add(form, {})  # drops the coefficients that cancelled
    ctx.ok(f"{len(grams)} Gram matrix(es) symmetric and PSD by exact LDL'")

    identities = []
    for k, ident in enumerate(_get(ev, "identities", list, w)):
        iw = f"{w}.identities[{k}]"
        target_terms, target = combination(_get(ident, "target", list, iw), f"{iw}.target")
        _only_keys(ident, {"target", "sum"}, iw)
        rhs: Poly = {}
        sum_terms = []
        for j, term in enumerate(_get(ident, "sum", list, iw)):
            gname = _get(term, "gram", str, f"{iw}.sum[{j}]")
            _only_keys(term, {"gram", "multiplier"}, f"{iw}.sum[{j}]")
            _require(gname in grams, "identity", f"unknown Gram matrix {gname!r}")
            mult = None
            part = grams[gname]
            if "multiplier" in term:
                mult, mpoly = combination(term["multiplier"], f"{iw}.sum[{j}].multiplier")
                part = poly_mul(mpoly, part)
            rhs = poly_add(rhs, part)
            sum_terms.append((mult, gname))
        diff = poly_add(target, poly_scale(rhs, Num.of(-1)))
        _require(not diff, "identity", f"identity {k + 1} fails: {len(diff)} coefficients differ")
        identities.append({"target": target_terms, "sum": sum_terms})
    ctx.ok(f"{len(identities)} polynomial identity(ies) hold coefficient by coefficient")
    return polys, identities


def _monomial(b: Any, nv: int, where: str) -> list[int]:
    if not (
        isinstance(b, list)
        and len(b) == nv
        and all(isinstance(e, int) and not isinstance(e, bool) and 0 <= e <= 500 for e in b)
    ):
        raise FormatError(f"{where}: expected {nv} exponents")
    return b


CHECKERS: dict[str, Callable[[dict[str, Any], str, _Context, str], None]] = {
    "linearization": _check_linearization,
    "sum-of-squares": _check_sos,
}


def _check_model_shape(model: dict[str, Any], nvars: int) -> None:
    """Shapes of the fields that the provenance step compares with the source."""
    for k, par in enumerate(_get(model, "parameters", list, "model")):
        w = f"model.parameters[{k}]"
        _only_keys(par, {"name", "nominal", "range"}, w)
        _get(par, "name", str, w)
        _get(par, "nominal", str, w)
        rng = par.get("range")
        if rng is not None and not (
            isinstance(rng, list) and len(rng) == 2 and all(isinstance(x, str) for x in rng)
        ):
            raise FormatError(f"{w}.range: expected null or [low, high]")
    domain = model.get("domain")
    if domain is not None:
        if not isinstance(domain, list):
            raise FormatError("model.domain: expected null or a list of conditions")
        for k, cond in enumerate(domain):
            w = f"model.domain[{k}]"
            _only_keys(cond, {"g", "strict"}, w)
            _poly(_get(cond, "g", list, w), nvars, 0, f"{w}.g")
            _get(cond, "strict", bool, w)
    for key in ("source", "source_sha256"):
        _get(model, key, str, "model")


# --- the whole certificate ----------------------------------------------------------
def audit_certificate(data: Any) -> AuditReport:
    """Audit a parsed certificate; raises :class:`FormatError` when it is malformed."""
    if not isinstance(data, dict):
        raise FormatError("a certificate is a JSON object")
    version = _get(data, "proofkit_certificate", int, "certificate")
    _only_keys(data, {"proofkit_certificate", "generator", "model", "claims"}, "certificate")
    generator = _get(data, "generator", dict, "certificate")
    _only_keys(generator, {"program", "version"}, "generator")
    _get(generator, "program", str, "generator")
    _get(generator, "version", str, "generator")
    if version != FORMAT_VERSION:
        raise FormatError(f"certificate format {version} is not supported (expected 1)")
    model = data.get("model")
    states: list[str] = []
    vf: list[Poly] | None = None
    if model is not None:
        _only_keys(model, MODEL_KEYS, "model")
        states = _get(model, "states", list, "model")
        if not states or not all(isinstance(s, str) for s in states):
            raise FormatError("model.states: expected a list of names")
        raw = model.get("vector_field")
        if raw is not None:
            if not isinstance(raw, list) or len(raw) != len(states):
                raise FormatError("model.vector_field: one polynomial per state")
            vf = [_poly(p, len(states), 0, f"model.vector_field[{i}]") for i, p in enumerate(raw)]
        _check_model_shape(model, len(states))
    verdicts = []
    status_word = {"proved": "accepted", "refuted": "refuted"}
    for k, claim in enumerate(_get(data, "claims", list, "certificate")):
        where = f"claims[{k}]"
        statement = _get(claim, "statement", str, where)
        kind = _get(claim, "kind", str, where)
        if kind not in KINDS:
            raise FormatError(f"{where}.kind: unknown claim kind {kind!r}")
        status = _get(claim, "status", str, where)
        if status == "not proved":
            _get(claim, "reason", str, where)
            _only_keys(claim, {"statement", "kind", "status", "reason"}, where)
            if "evidence" in claim:
                raise FormatError(f"{where}: a claim not proved carries no evidence")
            verdicts.append(ClaimVerdict(statement, "not claimed", message=claim["reason"]))
            continue
        if status not in ("proved", "refuted"):
            raise FormatError(f"{where}.status: expected 'proved', 'refuted' or 'not proved'")
        method = _get(claim, "method", str, where)
        _only_keys(claim, CLAIM_KEYS, where)
        ctx = _Context(states, vf, [])
        # A refuted claim carries evidence for the opposite statement.
        shown = kind if status == "proved" else OPPOSITE.get(kind, "")
        try:
            theorem = THEOREMS.get((shown, method))
            _require(theorem is not None, "method", f"method {method!r} cannot prove {kind!r}")
            _require(
                claim.get("theorem") == theorem,
                "theorem",
                f"the theorem for this method is {theorem!r}",
            )
            CHECKERS[method](claim, shown, ctx, where)
        except Rejected as rej:
            verdicts.append(
                ClaimVerdict(statement, "rejected", method, tuple(ctx.log), rej.step, rej.message)
            )
            continue
        except (ZeroDivisionError, RecursionError) as exc:
            verdicts.append(
                ClaimVerdict(statement, "rejected", method, tuple(ctx.log), "arithmetic", str(exc))
            )
            continue
        verdicts.append(ClaimVerdict(statement, status_word[status], method, tuple(ctx.log)))
    return AuditReport(tuple(verdicts))


def audit_text(text: str) -> AuditReport:
    """Parse JSON text and audit it; raises :class:`FormatError` on bad JSON."""
    try:
        data = json.loads(text)
    except (json.JSONDecodeError, RecursionError) as exc:
        raise FormatError(f"not valid JSON: {exc}") from None
    return audit_certificate(data)
