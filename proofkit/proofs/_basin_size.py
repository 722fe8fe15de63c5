"""Area or volume of a certified sublevel set ``{V <= level}``, with how it was estimated.

A number for the user and the benchmark, never evidence: planar sets that
are star-shaped about the equilibrium (checked along every ray) by polar
quadrature of the boundary radius (error: the change from 2048 to 4096
rays), other planar sets counted on a fine grid (error bound: the area of the
grid cells the boundary cuts), higher-dimensional ones by Monte Carlo in a
bounding box (three standard errors).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from proofkit.sos._ascent_maps import NumPoly, eval_map
from proofkit.sos.ascent import directions, ray_radii

__all__ = ["size_of"]


def _box(v: NumPoly, level: float, n: int) -> np.ndarray:
    """Half-widths of a box around the set: the ray radii along many directions, padded."""
    dirs = directions(n, 720 if n == 2 else 4000)
    lo = float(np.min(v.coeffs[v.exps.sum(axis=1) == 2], initial=1e-6))
    r = ray_radii(v, level, dirs, math.sqrt(level / max(abs(lo), 1e-9)) * 100)
    return 1.2 * np.max(np.abs(dirs) * r[:, None], axis=0)


def _star_area(v: NumPoly, level: float, half: np.ndarray) -> dict[str, Any] | None:
    """Polar quadrature ``1/2 int r(theta)^2`` when every ray leaves the set only once."""
    r_max = 2 * float(np.linalg.norm(half))
    areas = []
    for count in (2048, 4096):
        dirs = directions(2, count)
        r = ray_radii(v, level, dirs, r_max)
        for k in np.linspace(1.0005, 2.0, 40):  # star-shaped: V stays above the level outside
            if np.any(eval_map(dirs * (r * k)[:, None], v.exps) @ v.coeffs <= level):
                return None
        areas.append(0.5 * float(np.mean(r**2)) * 2 * math.pi)
    return {
        "value": round(areas[1], 6),
        "kind": "area",
        "method": "polar quadrature of the boundary radius on 4096 rays (the set is "
        "star-shaped about the equilibrium: checked on every ray to twice the radius)",
        "error": round(max(abs(areas[1] - areas[0]), 1e-6 * areas[1]), 6),
    }


def size_of(v: NumPoly, level: float, cells: int = 1000, samples: int = 200_000) -> dict[str, Any]:
    """``{"value", "kind", "method", "error"}`` for ``{y : V(y) <= level}`` (deviation coords)."""
    n = v.exps.shape[1]
    half = _box(v, level, n)
    if n == 2 and (star := _star_area(v, level, half)) is not None:
        return star
    if n == 2:
        xs = np.linspace(-half[0], half[0], cells + 1)
        ys = np.linspace(-half[1], half[1], cells + 1)
        inside = np.empty((len(xs), len(ys)), dtype=bool)
        for i, x in enumerate(xs):  # one column at a time keeps memory small
            pts = np.column_stack([np.full_like(ys, x), ys])
            inside[i] = eval_map(pts, v.exps) @ v.coeffs <= level
        corners = inside[:-1, :-1].astype(int) + inside[1:, :-1] + inside[:-1, 1:] + inside[1:, 1:]
        cell = (xs[1] - xs[0]) * (ys[1] - ys[0])
        full = int((corners == 4).sum())
        cut = int(((corners > 0) & (corners < 4)).sum())
        return {
            "value": round((full + 0.5 * cut) * cell, 6),
            "kind": "area",
            "method": f"grid count on {cells} x {cells} cells of the bounding box",
            "error": round(0.5 * cut * cell, 6),
        }
    rng = np.random.default_rng(5)
    hits = 0
    for _ in range(samples // 20_000):
        pts = rng.uniform(-1, 1, size=(20_000, n)) * half[None, :]
        hits += int(np.sum(eval_map(pts, v.exps) @ v.coeffs <= level))
    frac = hits / (samples // 20_000 * 20_000)
    box = float(np.prod(2 * half))
    err = 3 * math.sqrt(max(frac * (1 - frac), 1e-12) / samples) * box
    return {
        "value": round(frac * box, 6),
        "kind": "length" if n == 1 else "volume",
        "method": f"Monte Carlo, {samples} uniform points in the bounding box",
        "error": round(err, 6),
    }
