"""Portrait data from a model and its survey, or from a certificate (for the documents).

The field is evaluated by walking the model's exact sympy tree into numpy
operations (no ``lambdify``, no generated code, nothing evaluated from text).
Verdicts and equilibrium types come from the exact survey; certified regions
come from an audited certificate. Models with more than two states are shown
on a chosen plane through a point: the other states are held fixed.

Display only: nothing computed here is ever evidence.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from fractions import Fraction
from typing import TYPE_CHECKING, Any

from proofkit.errors import InputError
from proofkit.report.figures import (
    Field,
    PortraitData,
    PortraitPoint,
    PortraitRegion,
    Scalar,
    _box,
    _jacobian,
    region_extents,
)

if TYPE_CHECKING:
    import sympy as sp

    from proofkit.analysis.surveying import Survey
    from proofkit.model import Model

__all__ = ["certificate_data", "model_portrait_data", "numpy_function"]

_FUNCS = {
    "sin": "sin",
    "cos": "cos",
    "tan": "tan",
    "exp": "exp",
    "log": "log",
    "tanh": "tanh",
    "Abs": "abs",
    "sqrt": "sqrt",
}


def _compile(e: Any, index: Mapping[str, int]) -> Callable[[Sequence[Any]], Any]:
    """A closure computing ``e`` from a list of arrays (the sympy tree is walked once)."""
    import numpy as np
    import sympy as sp

    if e.is_Symbol:
        k = index[e.name]
        return lambda v: v[k]
    if e.is_Number or e.is_NumberSymbol:
        c = float(e)
        return lambda v: c
    parts = [_compile(a, index) for a in e.args]
    if isinstance(e, sp.Add):
        return lambda v: sum((p(v) for p in parts[1:]), parts[0](v))
    if isinstance(e, sp.Mul):
        return lambda v: _product([p(v) for p in parts])
    if isinstance(e, sp.Pow):
        base, exp = parts[0], e.args[1]
        if exp.is_Integer and int(exp) >= 0:
            n = int(exp)
            return lambda v: base(v) ** n
        if exp.is_Integer:
            n = -int(exp)
            return lambda v: 1.0 / base(v) ** n
        power = parts[1]
        return lambda v: np.power(base(v), power(v))
    fn = _FUNCS.get(type(e).__name__)
    if fn is not None and len(parts) == 1:
        op, arg = getattr(np, fn), parts[0]
        return lambda v: op(arg(v))
    raise ValueError(f"cannot draw the expression {type(e).__name__}")


def _product(values: list[Any]) -> Any:
    out = values[0]
    for x in values[1:]:
        out = out * x
    return out


def numpy_function(expr: sp.Expr, names: Sequence[str]) -> Callable[..., Any]:
    """A vectorised numpy function of ``names`` built from the exact expression tree."""
    import numpy as np

    run = _compile(expr, {n: k for k, n in enumerate(names)})

    def f(*values: Any) -> Any:
        with np.errstate(all="ignore"):
            return run(values)

    return f


def _plane(model: Model, plane: Sequence[str] | None) -> tuple[int, int]:
    states = list(model.states)
    if len(states) < 2:
        raise InputError("a phase portrait needs at least two states")
    chosen = list(plane) if plane else states[:2]
    if len(chosen) != 2 or chosen[0] == chosen[1]:
        raise InputError("the plane must name two different states, as in --plane x,y")
    for name in chosen:
        if name not in states:
            raise InputError(f"{name!r} is not a state of the model (states: {', '.join(states)})")
    return states.index(chosen[0]), states.index(chosen[1])


def _slice_values(
    model: Model, survey: Survey | None, at: Mapping[str, float] | None, i: int, j: int
) -> dict[str, float]:
    """Values of the states held fixed: ``at``, else the first equilibrium, else 0."""
    rest = [s for k, s in enumerate(model.states) if k not in (i, j)]
    base = dict(survey.equilibria[0].numeric) if survey and survey.equilibria else {}
    values = {s: float(base.get(s, 0.0)) for s in rest}
    for name, value in (at or {}).items():
        if name not in values:
            raise InputError(f"--at {name}: not a state held fixed (fixed: {', '.join(rest)})")
        values[name] = float(value)
    return values


def _points(
    survey: Survey | None, names: tuple[str, str], fixed: Mapping[str, float]
) -> tuple[PortraitPoint, ...]:
    out = []
    for e in survey.equilibria if survey else ():
        if any(abs(e.numeric[s] - v) > 1e-9 * (1 + abs(v)) for s, v in fixed.items()):
            continue  # not on the plane shown
        verdict = "saddle" if e.type == "saddle" else e.verdict
        out.append(PortraitPoint(e.name, (e.numeric[names[0]], e.numeric[names[1]]), verdict))
    return tuple(out)


def _domain_fn(model: Model, names: tuple[str, str], fixed: Mapping[str, float]) -> Any:
    if model.at_nominal().domain is None:
        return None
    forms = model.at_nominal().domain.nonnegative_forms()
    fns = [(numpy_function(g, model.states), strict) for g, strict in forms]
    order = list(model.states)

    def inside(x: Any, y: Any) -> Any:
        vals = [fixed.get(s, 0.0) for s in order]
        vals[order.index(names[0])], vals[order.index(names[1])] = x, y
        ok = True
        for fn, strict in fns:
            g = fn(*vals)
            ok = ok & ((g > 0) if strict else (g >= 0))
        return ok

    return inside


def model_portrait_data(
    model: Model,
    survey: Survey | None = None,
    certificate: Mapping[str, Any] | None = None,
    plane: Sequence[str] | None = None,
    at: Mapping[str, float] | None = None,
    cycles: Sequence[Any] = (),
) -> PortraitData:
    """Portrait data of ``model`` at its nominal parameters on the plane ``plane``."""
    m = model.at_nominal()
    i, j = _plane(m, plane)
    names = (m.states[i], m.states[j])
    fixed = _slice_values(m, survey, at, i, j)
    fns = [numpy_function(m.field[k], m.states) for k in (i, j)]
    order = list(m.states)

    def field(x: Any, y: Any) -> tuple[Any, Any]:
        vals = [fixed.get(s, 0.0) for s in order]
        vals[i], vals[j] = x, y
        return fns[0](*vals) + 0.0 * x, fns[1](*vals) + 0.0 * x

    points = _points(survey, names, fixed)
    regions: tuple[PortraitRegion, ...] = ()
    outlines: tuple[PortraitRegion, ...] = ()
    if certificate is not None and len(m.states) == 2:
        drawn = certificate_data(dict(certificate))
        regions = drawn.regions if drawn is not None else ()
        outlines = drawn.outlines if drawn is not None else ()
    domain = _domain_fn(m, names, fixed)
    box = _box(points, domain, [*cycles, *region_extents(regions, points)])
    where = ", ".join(f"{s} = {v:g}" for s, v in fixed.items())
    note = "streamlines and curves: floating-point integration, for illustration"
    if where:
        note = f"plane through {where}; " + note
    if m is not model:
        note = "nominal parameter values; " + note
    title = f"phase portrait of {model.name or 'the model'}"
    return PortraitData(
        title,
        names,
        field,
        box,
        points,
        regions,
        tuple(cycles),
        note,
        domain=domain,
        outlines=outlines,
    )


# --- portrait data from a certificate (documents) ------------------------------
def _q(v: Any, d: int = 0) -> float:
    if isinstance(v, list):
        return float(Fraction(v[0])) + float(Fraction(v[1])) * (d**0.5)
    return float(Fraction(v))


def _poly_fn(terms: list[Any], fixed: Sequence[float] = (), shift: Sequence[float] = ()) -> Scalar:
    """A certificate POLY as a numpy function of two plane variables (extra variables fixed).

    The coefficients (extra variables substituted) go into one matrix ``C`` with
    ``C[i, j]`` the coefficient of ``x^i y^j``, evaluated by numpy's ``polyval2d``.
    """
    import numpy as np
    from numpy.polynomial.polynomial import polyval2d

    size = 1 + max((max(e[0], e[1] if len(e) > 1 else 0) for e, _c in terms), default=0)
    table = np.zeros((size, size))
    for exps, c in terms:
        value = _q(c)
        for v, e in zip(fixed, exps[2:], strict=False):
            value *= v**e
        table[exps[0], exps[1] if len(exps) > 1 else 0] += value
    sx, sy = (shift[0], shift[1]) if shift else (0.0, 0.0)

    def f(x: Any, y: Any) -> Any:
        return polyval2d(np.asarray(x, dtype=float) - sx, np.asarray(y, dtype=float) - sy, table)

    return f


def _cert_field(model: dict[str, Any]) -> Field | None:
    states = model.get("states") or []
    if len(states) != 2:
        return None
    if model.get("vector_field") is not None:  # format 1
        num, den, fixed = model["vector_field"], None, []
    elif isinstance(model.get("field"), dict):  # format 2
        fld = model["field"]
        fixed = _nominal_of(model, (fld.get("variables") or states)[2:])
        num, den = fld.get("numerators"), fld.get("denominators")
    elif isinstance(model.get("expressions"), dict):  # non-polynomial: expression trees
        return _tree_field(model)
    else:
        return None
    if not num or len(num) != 2:
        return None
    fs = [_poly_fn(p, fixed) for p in num]
    ds = [_poly_fn(p, fixed) for p in den] if den else None

    def field_fn(x: Any, y: Any) -> tuple[Any, Any]:
        u, v = fs[0](x, y), fs[1](x, y)
        if ds is not None:
            u, v = u / ds[0](x, y), v / ds[1](x, y)
        return u, v

    return field_fn


def _nominal_of(model: dict[str, Any], names: Sequence[str]) -> list[float]:
    """Nominal values of the named parameters (0 when a value is not rational: not drawn)."""
    nominal = {
        p["name"]: _q(p["nominal"])
        for p in model.get("parameters") or []
        if p.get("nominal") is not None
    }
    return [nominal.get(v, 0.0) for v in names]


def _tree_field(model: dict[str, Any]) -> Field | None:
    from proofkit.report._trees import numpy_tree

    ex = model["expressions"]
    comps = ex.get("components") or []
    if len(comps) != 2:
        return None
    fixed = _nominal_of(model, (ex.get("variables") or [])[2:])
    fs = [numpy_tree(c, 2, fixed) for c in comps]

    def field_fn(x: Any, y: Any) -> tuple[Any, Any]:
        return fs[0](x, y) + 0.0 * x, fs[1](x, y) + 0.0 * x

    return field_fn


def _cert_point(entry: dict[str, Any]) -> tuple[str | None, tuple[float, float]] | None:
    nf = entry.get("number_field") or {}
    d = int(Fraction(nf["sqrt"])) if nf.get("sqrt") else 0
    claim = entry.get("claim") if isinstance(entry.get("claim"), dict) else None
    eq = (claim or {}).get("equilibrium") or {}
    ev = entry.get("evidence") or {}
    point = eq.get("point") or ev.get("point")
    if not isinstance(point, list) or len(point) != 2:
        return None
    return eq.get("name") or ev.get("equilibrium"), (_q(point[0], d), _q(point[1], d))


def _outside(conds: list[Any]) -> Scalar:
    """``max_i -g_i``: at most 0 exactly on the set ``{g_i >= 0 for all i}``."""
    gs = [_poly_fn(c["g"]) for c in conds]

    def f(x: Any, y: Any) -> Any:
        import numpy as np

        return np.max(np.stack([np.broadcast_to(-g(x, y), np.shape(x)) for g in gs]), axis=0)

    return f


def _cert_regions(
    entry: dict[str, Any], xy: tuple[float, float] | None, model: dict[str, Any] | None = None
) -> list[PortraitRegion]:
    ev = entry.get("evidence") or {}
    nums = ev.get("numbers") or {}
    claim = entry.get("claim") if isinstance(entry.get("claim"), dict) else {}
    kind = claim.get("kind") if claim else entry.get("kind")
    if entry.get("status") != "proved":
        return []
    if kind == "cycle" and "W" in ev and "inner" in nums and "outer" in nums:
        return [
            PortraitRegion(
                "certified trapping annulus (holds a periodic orbit)",
                _poly_fn(ev["W"]),
                _q(nums["inner"]),
                _q(nums["outer"]),
            )
        ]
    conds = claim.get("set") if claim else None
    if kind == "no cycle" and conds:
        return [PortraitRegion("certified free of periodic orbits", _outside(conds), 0.0)]
    found = _sublevel_set(entry, xy, model or {})
    return [] if found is None else [found]


def _claim_outline(entry: dict[str, Any]) -> list[PortraitRegion]:
    """The set of a proved ``attracts`` claim, to outline (``{max_i -g_i <= 0}``)."""
    claim = entry.get("claim") if isinstance(entry.get("claim"), dict) else {}
    conds = claim.get("set") if claim else None
    if entry.get("status") != "proved" or claim.get("kind") != "attracts" or not conds:
        return []
    return [PortraitRegion("the claim's set", _outside(conds), 0.0)]


def _sublevel_set(
    entry: dict[str, Any], xy: tuple[float, float] | None, model: dict[str, Any]
) -> PortraitRegion | None:
    """``{W <= level}`` of a Lyapunov-type proof, drawn in the states.

    ``W`` is ``V(x - x*)`` for a polynomial proof (over a parameter range: at the
    nominal values), the reparametrized ``V`` of a rational field, and
    ``V(x - x*, recast(x))`` for a recast proof. A ``V`` over variables the
    picture cannot evaluate is not drawn.
    """
    ev = entry.get("evidence") or {}
    if entry.get("method") == "sublevel-set-rational":
        ev = ev.get("reparametrized") or {}
    nums = ev.get("numbers") or {}
    v = ev.get("V")
    if not isinstance(v, list) or not v or "level" not in nums or xy is None:
        return None
    width, func = len(v[0][0]), None
    extra = _parameter_names(model)
    if width == 2:
        func = _poly_fn(v, shift=xy)
    elif entry.get("method") == "recast":
        func = _recast_fn(v, model, entry, xy)
    elif width == 2 + len(extra):  # over a parameter range: drawn at the nominal values
        func = _poly_fn(v, fixed=_nominal_of(model, extra), shift=xy)
    if func is None:
        return None
    name = (((entry.get("claim") or {}).get("equilibrium")) or {}).get("name", "")
    return PortraitRegion(
        f"certified region of attraction of {name}".rstrip(), func, _q(nums["level"])
    )


def _parameter_names(model: dict[str, Any]) -> list[str]:
    fld = model.get("field") or model.get("expressions") or {}
    return list(fld.get("variables") or [])[2:] if isinstance(fld, dict) else []


def _recast_fn(
    v: list[Any], model: dict[str, Any], entry: dict[str, Any], xy: tuple[float, float]
) -> Scalar | None:
    """``W(x) = V(x - x*, S1, C1, ..., E1, ...)`` with the recast variables of the trees."""
    import numpy as np

    from proofkit.report._trees import recast_values, recast_view

    ex = model.get("expressions") or {}
    point = ((entry.get("claim") or {}).get("equilibrium") or {}).get("point")
    names = _parameter_names(model)
    nominal = [p["nominal"] for n in names for p in model.get("parameters") or []
               if p["name"] == n]  # fmt: skip
    if not isinstance(point, list) or len(nominal) != len(names) or None in nominal:
        return None
    view = recast_view(ex.get("components") or [], 2, point, nominal)
    if view is None or 2 + len(view.names) != len(v[0][0]):
        return None
    terms = [(tuple(e), _q(c)) for e, c in v]

    def f(x: Any, y: Any) -> Any:
        ys = [np.asarray(x, dtype=float) - xy[0], np.asarray(y, dtype=float) - xy[1]]
        zs = ys + recast_values(view, ys)
        acc = np.zeros(np.broadcast(*ys).shape)
        with np.errstate(all="ignore"):
            for e, c in terms:
                term = c
                for z, k in zip(zs, e, strict=True):
                    term = term * z**k if k else term
                acc = acc + term
        return acc

    return f


def certificate_data(cert: dict[str, Any]) -> PortraitData | None:
    """Portrait data from a certificate (planar field); None when it cannot be drawn."""
    model = cert.get("model") or {}
    fld = _cert_field(model)
    if fld is None:
        return None
    verdicts: dict[tuple[float, float], tuple[str | None, str]] = {}
    regions: list[PortraitRegion] = []
    outlines: list[PortraitRegion] = []
    for entry in cert.get("claims", []):
        found = _cert_point(entry)
        xy = found[1] if found else None
        regions += _cert_regions(entry, xy, model)
        outlines += _claim_outline(entry)
        if found is None:
            continue
        kind = entry["claim"]["kind"] if isinstance(entry.get("claim"), dict) else entry.get("kind")
        word = kind if entry.get("status") == "proved" and kind in ("stable", "unstable") else None
        old = verdicts.get(found[1], (found[0], "undecided"))
        verdicts[found[1]] = (found[0], word or old[1])
    points = tuple(
        PortraitPoint(name, xy, _display_type(fld, xy, v)) for xy, (name, v) in verdicts.items()
    )
    domain = _cert_domain(model)
    box = _box(points, domain, region_extents(regions, points))
    title = f"phase portrait of {model.get('name') or 'the model'} (illustration, not evidence)"
    return PortraitData(
        title,
        tuple(model["states"]),
        fld,
        box,
        points,
        tuple(regions),
        note="marks: verdicts the audit accepted in this certificate",
        domain=domain,
        outlines=tuple(outlines),
    )


def _cert_domain(model: dict[str, Any]) -> Scalar | None:
    conds = model.get("domain")
    if not conds:
        return None
    gs = [_poly_fn(c["g"] if isinstance(c, dict) else c) for c in conds]

    def inside(x: Any, y: Any) -> Any:
        ok = True
        for g in gs:
            ok = ok & (g(x, y) >= 0)
        return ok

    return inside


def _display_type(f: Field, xy: tuple[float, float], verdict: str) -> str:
    """An unstable point with real eigenvalues of both signs is drawn as a saddle (display)."""
    import numpy as np

    if verdict != "unstable":
        return verdict
    vals = np.linalg.eigvals(_jacobian(f, xy, 1e-6 * max(1.0, abs(xy[0]) + abs(xy[1]))))
    real = np.abs(vals.imag).max() < 1e-9
    return "saddle" if real and vals.real.min() < 0 < vals.real.max() else verdict
