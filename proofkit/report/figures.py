"""Phase portraits: streamlines, equilibria by verdict, separatrices, basins and cycles.

One drawing routine, :func:`draw_portrait`, renders a :class:`PortraitData`
(plain floats and numpy callables). The data come either from a model and its
survey (:func:`model_portrait_data`, for ``proofkit portrait``, the shell and
the Python API) or from a certificate (:func:`certificate_portrait_data`, for
the proof documents). Equilibria are marked by verdict with distinct marker
shapes and a legend in words; every equilibrium marker is one ``Line2D``
whose ``gid`` is ``"equilibrium <verdict> <name>"`` so that tests and tools
can read what was drawn.

Illustration only: every curve here comes from floating-point integration and
is never used as evidence; verdicts and regions are taken from the exact
survey or from an audited certificate, never decided here. Uses matplotlib's
Agg canvas without pyplot (no display, no global state); matplotlib and numpy
are imported only when a figure is drawn. Model text is never evaluated: the
field is evaluated by walking the exact sympy tree or the certificate's
polynomial data.
"""

from __future__ import annotations

import io
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

__all__ = [
    "FORMATS",
    "PortraitData",
    "PortraitPoint",
    "PortraitRegion",
    "certificate_portrait_data",
    "draw_portrait",
    "phase_portrait",
    "portrait_bytes",
    "save_portrait",
]

FORMATS = ("png", "svg", "pdf")
Field = Callable[[Any, Any], tuple[Any, Any]]
Scalar = Callable[[Any, Any], Any]

# verdict -> (marker, face colour, legend words); shapes differ, not only colours
_MARKERS: dict[str, tuple[str, str, str]] = {
    "stable": ("o", "black", "stable (asymptotically)"),
    "unstable": ("s", "none", "unstable"),
    "saddle": ("X", "tab:red", "saddle (unstable)"),
    "inconclusive": ("D", "none", "not decided by linearization"),
    "undecided": ("P", "none", "no verdict certified here"),
}


@dataclass(frozen=True)
class PortraitPoint:
    """An equilibrium to mark: its plane coordinates and its verdict word."""

    name: str | None
    xy: tuple[float, float]
    verdict: str  # stable | unstable | saddle | inconclusive


@dataclass(frozen=True)
class PortraitRegion:
    """The set ``{func <= level}`` (or the band ``level <= func <= upper``) to shade."""

    label: str
    func: Scalar
    level: float
    upper: float | None = None


@dataclass(frozen=True)
class PortraitData:
    """Everything a portrait shows, as floats and vectorised callables."""

    title: str
    names: tuple[str, str]
    field: Field
    box: tuple[float, float, float, float]  # xmin, xmax, ymin, ymax
    points: tuple[PortraitPoint, ...] = ()
    regions: tuple[PortraitRegion, ...] = ()
    cycles: tuple[Any, ...] = ()  # closed polylines, arrays of shape (n, 2)
    note: str = ""
    trajectories: int = 4
    domain: Scalar | None = None  # True inside the model's domain (outlined when bounded)
    outlines: tuple[PortraitRegion, ...] = ()  # claims' sets: boundary only, dashed
    extra: dict[str, Any] = field(default_factory=dict, compare=False)


# --- numerics (display only) --------------------------------------------------
def _direction(f: Field, x: Any, y: Any) -> tuple[Any, Any, Any]:
    import numpy as np

    u, v = f(x, y)
    speed = np.hypot(u, v)
    with np.errstate(all="ignore"):
        return u / speed, v / speed, speed


def _arc_paths(f: Field, seeds: Any, step: float, count: int, box: Sequence[float]) -> Any:
    """Streamline points from each seed along the direction field (arc length), both ways."""
    import numpy as np

    out = []
    for sign in (1.0, -1.0):
        pts = np.empty((count, len(seeds), 2))
        p = seeds.astype(float).copy()
        for k in range(count):
            pts[k] = p
            ux, uy, _ = _direction(f, p[:, 0], p[:, 1])
            mx, my = p[:, 0] + 0.5 * step * sign * ux, p[:, 1] + 0.5 * step * sign * uy
            vx, vy, _ = _direction(f, mx, my)
            p = p + step * sign * np.stack([vx, vy], axis=1)
        out.append(pts)
    back = out[1][::-1]
    paths = np.concatenate([back[:-1], out[0]], axis=0)  # (2 count - 1, seeds, 2)
    xmin, xmax, ymin, ymax = box
    inside = (
        (paths[..., 0] >= xmin)
        & (paths[..., 0] <= xmax)
        & (paths[..., 1] >= ymin)
        & (paths[..., 1] <= ymax)
        & np.isfinite(paths).all(axis=-1)
    )
    return paths, inside


def _streamlines(f: Field, box: Sequence[float], density: int = 15) -> list[Any]:
    """Evenly spread streamlines: each is cut where it enters a cell another one took."""
    import numpy as np

    xmin, xmax, ymin, ymax = box
    gx, gy = np.meshgrid(
        np.linspace(xmin, xmax, density + 2)[1:-1], np.linspace(ymin, ymax, density + 2)[1:-1]
    )
    seeds = np.stack([gx.ravel(), gy.ravel()], axis=1)
    step = max(xmax - xmin, ymax - ymin) / 90.0
    paths, inside = _arc_paths(f, seeds, step, 70, box)
    cells = 2 * density
    fx = np.nan_to_num((paths[..., 0] - xmin) / (xmax - xmin) * cells)
    fy = np.nan_to_num((paths[..., 1] - ymin) / (ymax - ymin) * cells)
    ix = np.clip(fx, 0, cells - 1).astype(int)
    iy = np.clip(fy, 0, cells - 1).astype(int)
    owner = np.full((cells, cells), -1)
    lines, mid = [], paths.shape[0] // 2
    for s in range(paths.shape[1]):
        if owner[iy[mid, s], ix[mid, s]] >= 0:
            continue
        ok = inside[:, s]
        taken = (owner[iy[:, s], ix[:, s]] >= 0) & (owner[iy[:, s], ix[:, s]] != s)
        bad = ~ok | taken
        lo = mid - np.argmax(bad[mid::-1]) + 1 if bad[: mid + 1].any() else 0
        hi = mid + np.argmax(bad[mid:]) if bad[mid:].any() else paths.shape[0]
        if hi - lo < 4:
            continue
        owner[iy[lo:hi, s], ix[lo:hi, s]] = s
        lines.append(paths[lo:hi, s])
    return lines


def _rk4(
    f: Field, start: Any, dt: float, steps: int, box: Sequence[float], signs: Any = None
) -> Any:
    """Trajectories in time from the rows of ``start`` (fixed step), cut on leaving the box.

    ``signs`` (one per row, +1 or -1) runs some rows backward in time.
    """
    import numpy as np

    p = np.array(start, dtype=float)
    sg = np.ones(len(p)) if signs is None else np.asarray(signs, dtype=float)
    pts = [p]
    xmin, xmax, ymin, ymax = box
    wx, wy = (xmax - xmin) * 0.5, (ymax - ymin) * 0.5

    def g(q: Any) -> Any:
        u, v = f(q[:, 0], q[:, 1])
        return np.stack([sg * u, sg * v], axis=1)

    with np.errstate(all="ignore"):
        for _ in range(steps):
            k1 = g(p)
            k2 = g(p + 0.5 * dt * k1)
            k3 = g(p + 0.5 * dt * k2)
            k4 = g(p + dt * k3)
            p = p + dt / 6.0 * (k1 + 2 * k2 + 2 * k3 + k4)
            far = (p[:, 0] < xmin - wx) | (p[:, 0] > xmax + wx)
            far |= (p[:, 1] < ymin - wy) | (p[:, 1] > ymax + wy)
            p = np.where(far[:, None] | ~np.isfinite(p), np.nan, p)
            pts.append(p)
    return np.stack(pts, axis=1)  # (starts, steps + 1, 2)


def _jacobian(f: Field, xy: tuple[float, float], h: float) -> Any:
    import numpy as np

    x, y = xy
    ux1, vx1 = f(np.array([x + h]), np.array([y]))
    ux0, vx0 = f(np.array([x - h]), np.array([y]))
    uy1, vy1 = f(np.array([x]), np.array([y + h]))
    uy0, vy0 = f(np.array([x]), np.array([y - h]))
    rows = [[ux1 - ux0, uy1 - uy0], [vx1 - vx0, vy1 - vy0]]
    return np.array([[float(np.ravel(c)[0]) / (2 * h) for c in row] for row in rows])


def _separatrices(f: Field, saddles: Sequence[PortraitPoint], box: Sequence[float]) -> list[Any]:
    """The branches of the saddles' stable (False) and unstable (True) manifolds."""
    import numpy as np

    span = max(box[1] - box[0], box[3] - box[2])
    starts, signs, origins, fastest = [], [], [], 1.0
    for p in saddles:
        vals, vecs = np.linalg.eig(_jacobian(f, p.xy, 1e-6 * span))
        if np.iscomplexobj(vals) and np.abs(vals.imag).max() > 1e-12:
            continue
        for lam, vec in zip(vals.real, vecs.real.T, strict=True):
            if abs(lam) < 1e-9:
                continue
            fastest = max(fastest, abs(lam))
            for side in (1.0, -1.0):
                starts.append(np.array(p.xy) + side * 1e-3 * span * vec)
                signs.append(1.0 if lam > 0 else -1.0)
                origins.append(p.xy)
    if not starts:
        return []
    paths = _rk4(f, np.array(starts), min(0.05, 0.5 / fastest), 300, box, signs)
    return [
        (np.vstack([[xy], path]), sign > 0)
        for xy, path, sign in zip(origins, paths, signs, strict=True)
    ]


# --- drawing ------------------------------------------------------------------
def _grid(box: Sequence[float], n: int) -> tuple[Any, Any]:
    """An ``n`` by ``n`` mesh over ``box = (xmin, xmax, ymin, ymax)``."""
    import numpy as np

    xmin, xmax, ymin, ymax = box
    return np.meshgrid(np.linspace(xmin, xmax, n), np.linspace(ymin, ymax, n))


def _on_grid(fn: Scalar, gx: Any, gy: Any, dtype: type = float) -> Any:
    """``fn`` on the mesh, broadcast to its shape (constants too), floating errors silenced."""
    import numpy as np

    with np.errstate(all="ignore"):
        return np.broadcast_to(np.asarray(fn(gx, gy), dtype=dtype), gx.shape)


def _polyline(ax: Any, path: Any, **style: Any) -> None:
    """One curve of shape (n, 2)."""
    ax.plot(path[:, 0], path[:, 1], **style)


def _draw_flow(ax: Any, data: PortraitData) -> None:
    import numpy as np
    from matplotlib.collections import LineCollection

    lines = _streamlines(data.field, data.box)
    if not lines:
        return
    speeds = [np.log1p(_direction(data.field, ln[:, 0], ln[:, 1])[2]) for ln in lines]
    segs = np.concatenate([np.stack([ln[:-1], ln[1:]], axis=1) for ln in lines])
    colour = np.concatenate([s[:-1] for s in speeds])
    coll = LineCollection(segs, cmap="viridis", linewidths=0.7, zorder=1)
    coll.set_array(np.nan_to_num(colour))
    coll.set_gid("streamlines")
    ax.add_collection(coll)
    mids = np.array([ln[len(ln) // 2] for ln in lines])
    u, v, _ = _direction(data.field, mids[:, 0], mids[:, 1])
    ax.quiver(
        mids[:, 0],
        mids[:, 1],
        u,
        v,
        color="0.35",
        angles="xy",
        pivot="mid",
        scale=40,
        width=0.004,
        headwidth=5,
        zorder=2,
    )


def _draw_domain(ax: Any, data: PortraitData) -> list[Any]:
    from matplotlib.lines import Line2D

    if data.domain is None:
        return []
    gx, gy = _grid(data.box, 200)
    inside = _on_grid(data.domain, gx, gy)
    if inside.min() == inside.max():
        return []
    ax.contour(
        gx, gy, inside, levels=[0.5], colors=["0.3"], linestyles=[":"], linewidths=1.5, zorder=3
    )
    return [Line2D([], [], color="0.3", ls=":", lw=1.5, label="domain (claims hold inside)")]


def _draw_regions(ax: Any, data: PortraitData) -> list[Any]:
    import numpy as np
    from matplotlib.patches import Patch

    gx, gy = _grid(data.box, 160)
    handles, colours = [], ("tab:green", "tab:purple", "tab:orange", "tab:cyan")
    for i, r in enumerate(data.regions):
        colour = colours[i % len(colours)]
        z = _on_grid(r.func, gx, gy)
        if not np.isfinite(z).any():
            continue
        bottom, top = (r.level, r.upper) if r.upper is not None else (-np.inf, r.level)
        inside = (z >= bottom) & (z <= top)
        if not inside.any():
            continue
        filled = ax.contourf(
            gx,
            gy,
            inside.astype(float),
            levels=[0.5, 1.5],
            colors=[colour],
            alpha=0.18,
            hatches=["//"],
            zorder=0,
        )
        filled.set_gid("region " + r.label)
        ax.contour(
            gx,
            gy,
            z,
            levels=sorted({r.level, *([r.upper] if r.upper else [])}),
            colors=[colour],
            linewidths=1.4,
            zorder=3,
        )
        handles.append(
            Patch(facecolor=colour, alpha=0.35, hatch="//", edgecolor=colour, label=r.label)
        )
    return handles + _draw_outlines(ax, data, gx, gy)


def _draw_outlines(ax: Any, data: PortraitData, gx: Any, gy: Any) -> list[Any]:
    """Boundaries of the outlined sets (claims' sets), dashed, with one legend entry each."""
    import numpy as np
    from matplotlib.lines import Line2D

    handles = []
    for r in data.outlines:
        z = _on_grid(r.func, gx, gy)
        if not np.isfinite(z).any() or not (z <= r.level).any() or not (z > r.level).any():
            continue
        cs = ax.contour(
            gx, gy, z, levels=[r.level], colors=["black"], linestyles=["--"], linewidths=1.3
        )
        cs.set_gid("outline " + r.label)
        cs.set_zorder(5)
        handles.append(Line2D([], [], color="black", ls="--", lw=1.3, label=r.label))
    return handles


def _draw_curves(ax: Any, data: PortraitData) -> None:
    import numpy as np

    first = {True: "unstable separatrix of a saddle", False: "stable separatrix of a saddle"}
    saddles = [p for p in data.points if p.verdict == "saddle"]
    for path, unstable in _separatrices(data.field, saddles, data.box):
        _polyline(
            ax,
            path,
            color="tab:red",
            lw=1.5,
            zorder=4,
            ls="-" if unstable else "--",
            label=first.pop(unstable, "_nolegend_"),
            gid="separatrix",
        )
    starts = _trajectory_starts(data)
    if len(starts):
        paths = _rk4(data.field, starts, 0.04, 300, data.box)
        for k, path in enumerate(paths):
            _polyline(
                ax,
                path,
                color="0.15",
                lw=0.9,
                zorder=4,
                gid="trajectory",
                label="sample trajectories (numerical)" if k == 0 else "_nolegend_",
            )
            ax.plot(*path[0], marker=".", color="0.15", ms=5, zorder=4)
    for k, cyc in enumerate(data.cycles):
        _polyline(
            ax,
            np.asarray(cyc, dtype=float),
            color="tab:blue",
            lw=2.2,
            zorder=5,
            gid="cycle",
            label="located periodic orbit (numerical)" if k == 0 else "_nolegend_",
        )


def _trajectory_starts(data: PortraitData) -> Any:
    import numpy as np

    xmin, xmax, ymin, ymax = data.box
    ring = [(0.1, 0.9), (0.9, 0.1), (0.35, 0.95), (0.65, 0.05), (0.05, 0.4), (0.95, 0.6)]
    pts = [(xmin + a * (xmax - xmin), ymin + b * (ymax - ymin)) for a, b in ring]
    return np.array(pts[: data.trajectories]).reshape(-1, 2)


def _draw_points(ax: Any, data: PortraitData) -> None:
    seen: set[str] = set()
    for p in data.points:
        marker, face, words = _MARKERS.get(p.verdict, _MARKERS["inconclusive"])
        label = words if p.verdict not in seen else "_nolegend_"
        seen.add(p.verdict)
        ax.plot(
            [p.xy[0]],
            [p.xy[1]],
            linestyle="none",
            marker=marker,
            markersize=9,
            markerfacecolor=face,
            markeredgecolor="black",
            markeredgewidth=1.4,
            color="black",
            zorder=6,
            label=label,
            gid=f"equilibrium {p.verdict} {p.name}",
        )
        if p.name:
            ax.annotate(
                p.name, p.xy, textcoords="offset points", xytext=(6, 6), fontsize=9, zorder=7
            )


def draw_portrait(data: PortraitData) -> Any:
    """The portrait as a matplotlib ``Figure`` (Agg canvas attached, no pyplot)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=(6.4, 5.6), dpi=100)
    FigureCanvasAgg(fig)
    ax = fig.add_subplot()
    xmin, xmax, ymin, ymax = data.box
    _draw_flow(ax, data)
    region_handles = _draw_regions(ax, data) + _draw_domain(ax, data)
    _draw_curves(ax, data)
    _draw_points(ax, data)
    ax.set_xlim(xmin, xmax)
    ax.set_ylim(ymin, ymax)
    ax.set_xlabel(data.names[0])
    ax.set_ylabel(data.names[1])
    ax.set_title(data.title, fontsize=10)
    if data.note:
        fig.text(0.01, 0.005, data.note, fontsize=7, color="0.3", va="bottom")
    handles, _ = ax.get_legend_handles_labels()
    if handles or region_handles:
        ax.legend(
            handles=handles + region_handles,
            loc="upper center",
            fontsize=7,
            bbox_to_anchor=(0.5, -0.1),
            ncol=2,
            frameon=False,
        )
    fig.subplots_adjust(left=0.11, right=0.97, top=0.93, bottom=0.27)
    return fig


def _format_of(path: Path | str, fmt: str | None) -> str:
    fmt = (fmt or Path(path).suffix.lstrip(".") or "png").lower()
    if fmt not in FORMATS:
        raise ValueError(f"unknown picture format {fmt!r}; use one of: {', '.join(FORMATS)}")
    return fmt


def save_portrait(data: PortraitData, path: Path | str, fmt: str | None = None) -> Path:
    """Draw and write the portrait; the format follows the suffix (png, svg, pdf)."""
    kind = _format_of(path, fmt)
    fig = draw_portrait(data)
    fig.savefig(path, format=kind, metadata={"Creator": "proofkit"} if kind != "png" else None)
    return Path(path)


def portrait_bytes(data: PortraitData, fmt: str = "png") -> bytes:
    """The portrait as file bytes (PNG by default), e.g. for notebook display."""
    buf = io.BytesIO()
    draw_portrait(data).savefig(buf, format=_format_of("x." + fmt, None))
    return buf.getvalue()


def _box(
    points: Sequence[PortraitPoint], inside: Scalar | None, curves: Sequence[Any] = ()
) -> tuple[float, ...]:
    """Axes: the bounded domain when there is one, else a margin around the equilibria
    and the located cycles (``curves``: polylines of shape (n, 2))."""
    import numpy as np

    xs = [p.xy[0] for p in points]
    ys = [p.xy[1] for p in points]
    for c in curves:
        arr = np.asarray(c, dtype=float).reshape(-1, 2)
        if len(arr) and np.isfinite(arr).all():
            xs += [float(arr[:, 0].min()), float(arr[:, 0].max())]
            ys += [float(arr[:, 1].min()), float(arr[:, 1].max())]
    xs, ys = xs or [0.0], ys or [0.0]
    half = max(2.0, 0.75 * max(max(xs) - min(xs), max(ys) - min(ys)) + 1.0)
    cx, cy = (max(xs) + min(xs)) / 2, (max(ys) + min(ys)) / 2
    if inside is not None:
        big = 8 * half
        gx, gy = _grid((cx - big, cx + big, cy - big, cy + big), 241)
        ok = _on_grid(inside, gx, gy, bool)
        edge = ok[0].any() or ok[-1].any() or ok[:, 0].any() or ok[:, -1].any()
        if ok.any() and not edge:
            x0, x1, y0, y1 = gx[ok].min(), gx[ok].max(), gy[ok].min(), gy[ok].max()
            mx, my = 0.08 * (x1 - x0) + 1e-9, 0.08 * (y1 - y0) + 1e-9
            return (x0 - mx, x1 + mx, y0 - my, y1 + my)
    return (cx - half, cx + half, cy - half, cy + half)


def region_extents(regions: Sequence[PortraitRegion], points: Sequence[PortraitPoint]) -> list[Any]:
    """Bounding boxes (as two-point curves for :func:`_box`) of the bounded shaded sets.

    A set is sampled on a wide grid around the equilibria; one that reaches the
    grid's edge is taken as unbounded and left out, so the axes never run away.
    """
    import numpy as np

    xs = [p.xy[0] for p in points] or [0.0]
    ys = [p.xy[1] for p in points] or [0.0]
    cx, cy = (max(xs) + min(xs)) / 2, (max(ys) + min(ys)) / 2
    big = 8 * max(2.0, max(xs) - min(xs), max(ys) - min(ys))
    gx, gy = _grid((cx - big, cx + big, cy - big, cy + big), 241)
    out = []
    for region in regions:
        vals = _on_grid(region.func, gx, gy)
        ok = vals <= (region.upper if region.upper is not None else region.level)
        edge = ok[0].any() or ok[-1].any() or ok[:, 0].any() or ok[:, -1].any()
        if ok.any() and not edge:
            out.append(np.array([[gx[ok].min(), gy[ok].min()], [gx[ok].max(), gy[ok].max()]]))
    return out


def certificate_portrait_data(cert: dict[str, Any]) -> PortraitData | None:
    """Portrait data from a certificate (planar field); None when it cannot be drawn."""
    from proofkit.report._portrait_data import certificate_data

    return certificate_data(cert)


def phase_portrait(cert: dict[str, Any], path: Path | str) -> bool:
    """Draw the portrait of a certificate's planar model into ``path``; False if not planar."""
    data = certificate_portrait_data(cert)
    if data is None:
        return False
    save_portrait(data, path)
    return True
