"""``proofkit orbit FILE``: locate periodic orbits numerically (not a proof).

Reports each orbit's period, each state's amplitude (largest absolute value
on the orbit), the Floquet multipliers of the monodromy matrix and the
orbital-stability verdict; ``--json`` prints ``{"cycles": [...]}`` (each cycle:
``period``, ``amplitude`` and ``point`` per state, ``multipliers`` with the
trivial one first and a complex one as ``[re, im]``, ``stable``, ``hyperbolic``,
``residual``), with ``search``, ``notes`` and ``numerical`` beside it;
``--out DIR`` draws the orbits on the shared phase portrait
(``report.figures``: ``orbits.png``) and the time series of one period
(``period.png``) on matplotlib's Agg canvas without pyplot, imported only
there. Every number is a floating-point finding, never a proof: ``proofkit
prove`` with ``claim cycle in SET`` certifies one.

Exit 0 when the search ran, 2 on bad input. Top-level imports are stdlib only.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path
from typing import Any

from proofkit.cli._common import add_command, model_file, progress_printer

__all__ = ["register", "run"]

EXAMPLE = """example:
  proofkit orbit worked/duct_whistle.pk
  proofkit orbit oscillator.pk --json --box 4 --out figures/

The cycles are numerical findings (Poincare section, Newton's method on the
return map, tolerances 1e-12), not proofs.

limits: at most 6 states; at most 12 cycles; 60 s for refining candidates;
trajectories beyond 20 box half-widths are dropped; saddle-type cycles of
systems with more than two states are not searched.
"""
NOT_PROOF = "numerical findings in floating point, not proofs"


def register(subparsers: Any) -> None:
    p = add_command(
        subparsers,
        "orbit",
        summary="locate periodic orbits numerically (period, amplitude, Floquet multipliers)",
        description="Locate the periodic orbits of a model numerically: simulations from a grid "
        "of starts (forward and backward in time), then Newton's method on the Poincare return "
        "map. Reports period, amplitudes, Floquet multipliers and orbital stability. "
        "Numerical findings, not proofs.",
        epilog=EXAMPLE,
        func=run,
        json_help='print {"cycles": [...]} as JSON',
    )
    p.add_argument("--out", metavar="DIR", help="write orbits.png and period.png into DIR")
    p.add_argument(
        "--box",
        metavar="W",
        type=float,
        default=3.0,
        help="starts fill the box [-W, W] in every state (default 3, at most 1e6)",
    )


def run(args: argparse.Namespace) -> int:
    from proofkit.api import load
    from proofkit.errors import InputError, ModelError

    if not (0 < args.box <= 1e6):
        raise InputError(f"--box {args.box}: expected a half-width in (0, 1e6]")
    if args.out == "":
        raise InputError("--out: expected a directory name, not an empty string")
    model_file(args.file)
    model = load(args.file)
    say = progress_printer(args.quiet)
    from proofkit.analysis.orbits import find_cycles

    box = tuple((-args.box, args.box) for _ in model.states)
    try:
        search = find_cycles(model, box=box, progress=say)
    except ModelError as err:
        raise InputError(f"{args.file}: {err}") from None
    written = _draw(search, model, Path(args.out)) if args.out else []
    try:
        _print(args, search, written)
    except BrokenPipeError:  # the reader went away (e.g. | head): nothing left to say
        import os

        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
    return 0


def _print(args: argparse.Namespace, search: Any, written: list[Path]) -> None:
    if args.json:
        data = {"file": args.file, **search.as_json()}
        if written:
            data["figures"] = [str(p) for p in written]
        print(json.dumps(data, indent=2))
    else:
        print(_text(search, args.file))
        for p in written:
            print(f"wrote {p}")


def _fmt(m: Any) -> str:
    if isinstance(m, list):
        return f"{m[0]:.6g}{m[1]:+.6g}i"
    return f"{m:.6g}"


def _text(search: Any, file: str) -> str:
    out = [f"periodic orbits of {file} ({NOT_PROOF})"]
    if not search.cycles:
        out.append(f"  none found from {search.starts} starts in the box {list(search.box)}")
    for k, c in enumerate(search.cycles, 1):
        d = c.as_json(search.states)
        verdict = "orbitally stable" if c.stable else "not orbitally stable"
        out.append(f"  cycle {k}: period {c.period:.12g}, {verdict}")
        out.append(
            "    amplitude  " + ", ".join(f"{s} {a:.12g}" for s, a in d["amplitude"].items())
        )
        out.append("    multipliers " + ", ".join(_fmt(m) for m in d["multipliers"]))
        out.append("    point      " + ", ".join(f"{s} = {v:.12g}" for s, v in d["point"].items()))
    out += [f"  note: {n}" for n in search.notes]
    if search.cycles:
        out.append("  to prove one exists: claim cycle in SET, then proofkit prove FILE")
    return "\n".join(out)


def _draw(search: Any, model: Any, out: Path) -> list[Path]:
    """The orbits on the shared phase portrait, and one period of each as time series."""
    from dataclasses import replace

    from proofkit.report.figures import save_portrait
    from proofkit.results import _portrait_data

    out.mkdir(parents=True, exist_ok=True)
    paths = [out / "orbits.png", out / "period.png"]
    data = _portrait_data(model, None, cycles=search.cycles)
    title = f"periodic orbits of {model.name or 'the model'} located numerically (not a proof)"
    save_portrait(replace(data, title=title), paths[0])
    _draw_periods(search, paths[1])
    return paths


def _draw_periods(search: Any, path: Path) -> None:
    """Each state over one period, one panel per cycle (Agg canvas, no pyplot)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    rows = max(1, len(search.cycles))
    fig = Figure(figsize=(6, 2.2 * rows), dpi=120)
    FigureCanvasAgg(fig)
    axes = fig.subplots(rows, 1, squeeze=False)
    for ax, c in zip(axes[:, 0], search.cycles, strict=False):
        for i, name in enumerate(search.states):
            ax.plot(c.times, c.orbit[i], label=name)
        ax.set_xlabel("t over one period")
        ax.legend(loc="best", fontsize=8)
    fig.tight_layout()
    fig.savefig(path)
