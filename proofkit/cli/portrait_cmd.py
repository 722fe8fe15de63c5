"""``proofkit portrait FILE [-o OUT]``: draw a phase portrait of a model.

Streamlines, the equilibria marked by their exact verdict (distinct marker
shapes and a legend in words), saddle separatrices, sample trajectories,
optionally located periodic orbits (``--cycles``) and the regions an audited
certificate certifies (``--certificate``). Planar models are drawn in their
plane; larger models on a chosen plane (``--plane x,z``) through a point
(``--at y=0``; default: the first equilibrium). Headless (Agg).

Exit 0 when the picture was written, 2 on bad input. The portrait is an
illustration: nothing drawn is evidence. Top-level imports are stdlib only.
"""

from __future__ import annotations

import argparse
import json
import sys
from fractions import Fraction
from pathlib import Path
from typing import Any

from proofkit.cli._common import add_command, model_file, progress_printer

__all__ = ["register", "run"]

EXAMPLE = """example:
  proofkit portrait worked/valve_latch.pk -o latch.png
  proofkit portrait worked/pump_basin.pk --certificate out/certificate.json -o basin.svg
  proofkit portrait model3d.pk --plane x,z --at y=0 -o slice.pdf
"""


def register(subparsers: Any) -> None:
    p = add_command(
        subparsers,
        "portrait",
        summary="draw a phase portrait (PNG, SVG or PDF)",
        description="Draw the phase portrait of a model: streamlines, equilibria marked by "
        "verdict, saddle separatrices, sample trajectories, certified regions from an audited "
        "certificate and, with --cycles, located periodic orbits. An illustration, not evidence.",
        epilog=EXAMPLE,
        func=run,
        json_help="print what was drawn as JSON",
    )
    p.add_argument(
        "-o",
        "--output",
        metavar="OUT",
        help="picture to write: OUT.png, OUT.svg or OUT.pdf (default: FILE's name with .png)",
    )
    p.add_argument(
        "--certificate",
        metavar="CERT",
        help="draw the regions certified by this certificate (only claims the audit accepts)",
    )
    p.add_argument("--plane", metavar="X,Y", help="the two states to draw (default: the first two)")
    p.add_argument(
        "--at",
        metavar="NAME=VALUE",
        action="append",
        default=[],
        help="value of a state held fixed off the plane (repeatable; exact numbers like 1/2)",
    )
    p.add_argument("--cycles", action="store_true", help="locate periodic orbits and draw them")


def _fixed(items: list[str]) -> dict[str, float]:
    from proofkit.errors import InputError

    out: dict[str, float] = {}
    for item in items:
        name, sep, value = item.partition("=")
        try:
            if not sep:
                raise ValueError
            out[name.strip()] = float(Fraction(value.strip()))
        except (ValueError, ZeroDivisionError):
            raise InputError(
                f"--at {item}: expected NAME=VALUE with an exact number (as in y=1/2)"
            ) from None
    return out


def _output(args: argparse.Namespace) -> Path:
    from proofkit.errors import InputError
    from proofkit.report.figures import FORMATS

    out = Path(args.output) if args.output else Path(Path(args.file).stem + ".png")
    if out.suffix.lstrip(".").lower() not in FORMATS:
        raise InputError(
            f"{out}: unknown picture format {out.suffix or '(none)'}",
            hint="name the output OUT.png, OUT.svg or OUT.pdf",
        )
    return out


def run(args: argparse.Namespace) -> int:
    from proofkit.api import portrait

    say = progress_printer(args.quiet)

    model_file(args.file)
    out = _output(args)
    plane = [s.strip() for s in args.plane.split(",")] if args.plane else None
    say("surveying the equilibria and drawing")
    try:
        result = portrait(
            args.file,
            out,
            certificate=args.certificate,
            plane=plane,
            at=_fixed(args.at),
            cycles=args.cycles,
        )
    except OSError as exc:
        print(f"error: cannot write {out}: {exc.strerror or exc}", file=sys.stderr)
        return 2
    say(f"wrote {out}")
    if args.json:
        print(json.dumps(result.to_json(), indent=2))
    else:
        for p in result.data.points:
            x, y = (0.0 if abs(v) < 1e-12 else v for v in p.xy)  # display only
            print(f"{p.verdict:>12}  {p.name or '-'}  at ({x:.6g}, {y:.6g})")
        for label in [r.label for r in result.data.regions]:
            print(f"      region  {label}")
        if result.data.cycles:
            print(f"      cycles  {len(result.data.cycles)} located numerically")
        print(f"wrote {out}")
    return 0
