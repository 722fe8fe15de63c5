"""Portrait data from a model and its exact survey (``proofkit portrait``, shell, Python API).

The field is evaluated by walking the model's exact sympy tree into numpy
operations (no ``lambdify``, no generated code, nothing evaluated from text).
Verdicts and equilibrium types come from the exact survey; certified regions
come from an audited certificate. Models with more than two states are shown
on a chosen plane through a point: the other states are held fixed.

Display only: nothing computed here is ever evidence.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping, Sequence
from typing import TYPE_CHECKING, Any

from proofkit.errors import InputError
from proofkit.report.figures import (
    PortraitData,
    PortraitPoint,
    PortraitRegion,
    _box,
    certificate_portrait_data,
)

if TYPE_CHECKING:
    import sympy as sp

    from proofkit.analysis.surveying import Survey
    from proofkit.model import Model

__all__ = ["model_portrait_data", "numpy_function"]

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
    if certificate is not None and len(m.states) == 2:
        drawn = certificate_portrait_data(dict(certificate))
        regions = drawn.regions if drawn is not None else ()
    box = _box(points, _domain_fn(m, names, fixed))
    where = ", ".join(f"{s} = {v:g}" for s, v in fixed.items())
    note = "streamlines and curves: floating-point integration, for illustration"
    if where:
        note = f"plane through {where}; " + note
    if m is not model:
        note = "nominal parameter values; " + note
    title = f"phase portrait of {model.name or 'the model'}"
    return PortraitData(title, names, field, box, points, regions, tuple(cycles), note)
