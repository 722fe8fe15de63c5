"""The registration interface of theorem schemas, and the helpers every schema uses.

A *schema* is a short function that checks one theorem's hypotheses for one
claim: it reads the claim's evidence, builds every polynomial that the theorem
needs to be a sum of squares ITSELF (from the model's field, the claim's
equilibrium, set and scope, and the evidence's function, numbers and
multipliers), hands them to :func:`check_squares`, and states each hypothesis
in words through ``checks.ok``. It raises :class:`Rejected` when a hypothesis
fails and :class:`FormatError` when the evidence is malformed.

Registering (in a module of this package listed in ``core.SCHEMA_MODULES``)::

    @schema("stable", "lyapunov", "lyapunov-local")
    def lyapunov_local(model: ModelData, claim: ClaimData, checks: Checks) -> None: ...

``scopes`` says which claim scopes the evidence covers (nominal evidence:
``("nominal",)``); ``refutes=True`` registers evidence that the claim is false.

This module must never import anything outside the standard library and
:mod:`proofkit.audit`, and never use floating point.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Any

from proofkit.audit.algebra import (
    Poly,
    gram_form,
    poly_add,
    poly_constant,
    poly_eval,
    poly_scale,
    poly_substitute,
    psd_reason,
    transpose,
)
from proofkit.audit.numbers import Num
from proofkit.audit.read import (
    MAX_GRAM,
    MAX_SQUARES,
    Condition,
    get,
    only_keys,
    read_matrix,
    read_monomial,
    read_number,
    read_poly,
)

__all__ = [
    "REFUTATIONS",
    "SCHEMAS",
    "Checks",
    "ClaimData",
    "ModelData",
    "Parameter",
    "Rejected",
    "Schema",
    "check_squares",
    "equilibrium_point",
    "nominal_field",
    "read_function",
    "read_multipliers",
    "read_numbers",
    "require",
    "schema",
    "shifted_field",
    "sum_of_squares_norm",
]


class Rejected(Exception):
    """A stated fact did not survive recomputation, or a hypothesis is not met."""

    def __init__(self, step: str, message: str) -> None:
        super().__init__(f"{step}: {message}")
        self.step, self.message = step, message


def require(cond: bool, step: str, message: str) -> None:
    """Reject at ``step`` with ``message`` unless ``cond`` holds."""
    if not cond:
        raise Rejected(step, message)


@dataclass(frozen=True)
class Parameter:
    name: str
    nominal: Fraction | None  # None: not rational (the certificate cannot carry it)
    range: tuple[Fraction | None, Fraction | None] | None  # None: fixed (substituted)


@dataclass(frozen=True)
class ModelData:
    """The model section as the audit read it (all exact)."""

    states: tuple[str, ...]
    parameters: tuple[Parameter, ...]
    variables: tuple[str, ...]  # the field's variables: states, then uncertain parameters
    numerators: tuple[Poly, ...] | None  # None: no field representable
    denominators: tuple[Poly, ...] | None
    conditions: tuple[Condition, ...]  # over the field's variables
    domain: tuple[Condition, ...] | None  # over the states
    equilibria: dict[str, tuple[Num, ...] | None] = field(default_factory=dict)  # declared
    expressions: tuple[Any, ...] | None = None  # a non-rational field as expression trees

    @property
    def uncertain(self) -> tuple[Parameter, ...]:
        return tuple(p for p in self.parameters if p.range is not None)


@dataclass(frozen=True)
class ClaimData:
    """One claim's structure and evidence as the audit read them."""

    kind: str
    name: str | None  # the equilibrium's name
    point: tuple[Num, ...] | None  # a fixed equilibrium point (in Q or Q(sqrt d))
    moving: Any  # a point that moves with the parameters (raw; range schemas read it)
    set: tuple[Condition, ...] | None  # over the states
    scope: str  # "nominal" | "range"
    method: str
    d: int  # radicand of the claim's number field, 0 for Q
    evidence: dict[str, Any]
    where: str
    exact: tuple[Any, ...] | None = None  # a point such as pi/3 as expression trees


@dataclass
class Checks:
    """The list of hypotheses checked so far, in words."""

    log: list[str] = field(default_factory=list)

    def ok(self, text: str) -> None:
        self.log.append(text)


Schema = Callable[[ModelData, ClaimData, Checks], None]
# (claim kind, method) -> (theorem, schema, scopes the evidence covers)
SCHEMAS: dict[tuple[str, str], tuple[str, Schema, tuple[str, ...]]] = {}
# (claim kind, method) -> (theorem, schema, scopes): evidence that the claim is false
REFUTATIONS: dict[tuple[str, str], tuple[str, Schema, tuple[str, ...]]] = {}


def schema(
    kind: str,
    method: str,
    theorem: str,
    *,
    scopes: tuple[str, ...] = ("nominal",),
    refutes: bool = False,
) -> Callable[[Schema], Schema]:
    """Register ``fn`` as the schema of ``theorem`` for claims ``kind`` proved by ``method``."""

    def register(fn: Schema) -> Schema:
        table = REFUTATIONS if refutes else SCHEMAS
        if (kind, method) in table:
            raise RuntimeError(f"two schemas registered for {(kind, method)}")
        table[(kind, method)] = (theorem, fn, scopes)
        return fn

    return register


# --- the field ----------------------------------------------------------------------
def nominal_field(model: ModelData, near: list[Num] | None = None) -> list[Poly]:
    """The polynomial field over the states, uncertain parameters at their nominal values.

    Rejects a rational field, and a field with conditions where it is defined
    unless ``near`` is given and every condition holds strictly there (then, by
    continuity, in a neighbourhood of ``near``: enough for local theorems).
    """
    require(model.numerators is not None, "field", "the certificate states no vector field")
    require(model.denominators is None, "field", "the field has denominators; not supported here")
    if model.conditions:
        require(near is not None, "field", "the field is defined only under conditions")
        at = [*(near or []), *(Num.of(p.nominal or 0) for p in model.uncertain)]
        for g, _strict in model.conditions:
            value = poly_eval({e: Num(c.a, c.b, at[0].d if at else 0) for e, c in g.items()}, at)
            require(value.sign() > 0, "field", "a condition where the field is defined fails here")
    n = len(model.states)
    values = [{tuple(int(i == j) for j in range(n)): Num.of(1)} for i in range(n)]
    unknown = [p.name for p in model.uncertain if p.nominal is None]
    require(not unknown, "field", f"the nominal value of {unknown} is not rational")
    values += [poly_constant(Num.of(p.nominal or 0), n) for p in model.uncertain]
    return [poly_substitute(f, values, n) for f in model.numerators or ()]


def equilibrium_point(
    model: ModelData, claim: ClaimData, *, rational: bool, local: bool = False
) -> list[Num]:
    """The claim's fixed point, checked to be an exact zero of the nominal field.

    ``local``: conditions where the field is defined may exist if they hold strictly there.
    """
    require(claim.point is not None, "equilibrium", "the claim names no fixed equilibrium point")
    point = list(claim.point or ())
    if rational:
        require(claim.d == 0, "equilibrium", "this theorem needs a rational equilibrium point")
    lifted = [Num(c.a, c.b, claim.d) for c in point]
    for i, fi in enumerate(nominal_field(model, lifted if local else None)):
        lifted = {e: Num(c.a, c.b, claim.d) for e, c in fi.items()}
        r = poly_eval(lifted, point)
        require(r.is_zero(), "equilibrium", f"f{i + 1} = {r} at the point, not 0")
    return point


def shifted_field(model: ModelData, point: list[Num]) -> list[Poly]:
    """``g(y) = f(x* + y)`` over the deviation ``y`` (same state names), nominal values."""
    n = len(model.states)
    values = [
        poly_add({tuple(int(i == j) for j in range(n)): Num.of(1)}, poly_constant(point[i], n))
        for i in range(n)
    ]
    return [poly_substitute(f, values, n) for f in nominal_field(model)]


def sum_of_squares_norm(n: int) -> Poly:
    """``|y|^2 = y_1^2 + ... + y_n^2``."""
    return {tuple(2 * int(i == j) for j in range(n)): Num.of(1) for i in range(n)}


# --- the evidence -------------------------------------------------------------------
def read_function(evidence: dict[str, Any], key: str, nvars: int, where: str) -> Poly:
    """The evidence's function ``V`` / ``B`` / ``W`` (a rational polynomial)."""
    return read_poly(get(evidence, key, list, where), nvars, 0, f"{where}.{key}")


def read_numbers(
    evidence: dict[str, Any], names: set[str], where: str, optional: set[str] | None = None
) -> dict[str, Fraction]:
    """``evidence["numbers"]``: exactly ``names`` (plus any of ``optional``), rationals."""
    data = get(evidence, "numbers", dict, where)
    only_keys(data, names | (optional or set()), f"{where}.numbers")
    out = {}
    for k in sorted(names):
        require(k in data, "numbers", f"the number {k!r} is missing")
    for k, v in data.items():
        out[k] = read_number(v, 0, f"{where}.numbers.{k}").a
    return out


def read_multipliers(
    evidence: dict[str, Any], names: list[str], nvars: int, where: str
) -> dict[str, Poly]:
    """``evidence["multipliers"]``: exactly ``names``, rational polynomials."""
    data = get(evidence, "multipliers", dict, where)
    only_keys(data, set(names), f"{where}.multipliers")
    missing = [k for k in names if k not in data]
    require(not missing, "multipliers", f"missing multiplier(s) {missing}")
    return {k: read_poly(data[k], nvars, 0, f"{where}.multipliers.{k}") for k in names}


def check_squares(
    targets: dict[str, Poly], evidence: dict[str, Any], nvars: int, checks: Checks, where: str
) -> None:
    """Each target equals ``z' G z`` with ``G`` symmetric PSD (exact LDL'); names must match.

    ``targets`` are the polynomials the schema built; ``evidence["squares"]``
    must name exactly these obligations, no more and no fewer.
    """
    data = get(evidence, "squares", dict, where)
    require(len(data) <= MAX_SQUARES, "squares", f"more than {MAX_SQUARES} obligations")
    missing = sorted(set(targets) - set(data))
    extra = sorted(set(data) - set(targets))
    require(not missing, "squares", f"no Gram matrix for obligation(s) {missing}")
    require(not extra, "squares", f"obligation(s) {extra[:5]} are not hypotheses of the theorem")
    for name in targets:
        w = f"{where}.squares.{name}"
        item = data[name]
        only_keys(item, {"basis", "gram"}, w)
        raw = get(item, "basis", list, w)
        require(len(raw) <= MAX_GRAM, "squares", f"{name}: more than {MAX_GRAM} basis monomials")
        basis = [read_monomial(b, nvars, f"{w}.basis[{i}]") for i, b in enumerate(raw)]
        require(len(set(basis)) == len(basis), "squares", f"{name}: repeated basis monomial")
        gram = read_matrix(get(item, "gram", list, w), 0, f"{w}.gram", len(basis))
        require(gram == transpose(gram) if gram else True, "squares", f"{name}: G not symmetric")
        res = psd_reason(gram)
        require(res is None, "squares", f"{name}: G is not PSD: {res}")
        diff = poly_add(targets[name], poly_scale(gram_form(basis, gram), Num.of(-1)))
        require(
            not diff,
            "squares",
            f"{name}: the target differs from z'Gz in {len(diff)} coefficient(s)",
        )
    checks.ok(
        f"{len(targets)} obligation(s) ({', '.join(targets)}) each equal z'Gz with G "
        "symmetric positive semidefinite (exact LDL'), so each is a sum of squares"
    )
