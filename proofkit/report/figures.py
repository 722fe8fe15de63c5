"""Figures for proof documents: a phase portrait of a planar polynomial model.

Illustration only: streamlines are drawn from floating-point evaluation of the
certificate's vector field and are never used as evidence. Uses matplotlib's
Agg backend (no display needed).
"""

from __future__ import annotations

from fractions import Fraction
from pathlib import Path
from typing import Any

__all__ = ["phase_portrait"]


def _evaluate(poly: list[Any], x: Any, y: Any) -> Any:
    total = 0.0 * x
    for (i, j), c in poly:
        coeff = float(Fraction(c)) if isinstance(c, str) else 0.0
        total = total + coeff * x**i * y**j
    return total


def _to_float(v: Any, nf: Any) -> float:
    if isinstance(v, list):
        return float(Fraction(v[0])) + float(Fraction(v[1])) * float(nf["sqrt"]) ** 0.5
    return float(Fraction(v))


def phase_portrait(cert: dict[str, Any], path: Path) -> bool:
    """Draw the phase portrait of a planar model; False when the model is not planar."""
    model = cert.get("model") or {}
    field = model.get("vector_field")
    states = model.get("states") or []
    if field is None or len(states) != 2:
        return False
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt
    import numpy as np

    points = []
    for c in cert.get("claims", []):
        ev = c.get("evidence") or {}
        if "point" in ev:
            pt = [_to_float(v, c.get("number_field")) for v in ev["point"]]
            points.append((pt, ev.get("equilibrium"), c.get("status")))
    span = max([2.0] + [abs(v) + 1.5 for p, _, _ in points for v in p])
    xs = np.linspace(-span, span, 40)
    gx, gy = np.meshgrid(xs, xs)
    u, v = _evaluate(field[0], gx, gy), _evaluate(field[1], gx, gy)
    fig, ax = plt.subplots(figsize=(5, 5), dpi=110)
    speed = np.hypot(u, v)
    ax.streamplot(
        gx,
        gy,
        u,
        v,
        density=0.9,
        color=np.log1p(speed),
        cmap="viridis",
        linewidth=0.7,
        arrowsize=0.8,
    )
    for pt, name, _status in points:
        ax.plot(pt[0], pt[1], "o", color="crimson", markersize=6)
        if name:
            ax.annotate(name, (pt[0], pt[1]), textcoords="offset points", xytext=(5, 5))
    ax.set_xlabel(states[0])
    ax.set_ylabel(states[1])
    ax.set_title("phase portrait (illustration, not evidence)")
    ax.set_xlim(-span, span)
    ax.set_ylim(-span, span)
    fig.tight_layout()
    fig.savefig(path)
    plt.close(fig)
    return True
