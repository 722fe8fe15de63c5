"""``proofkit inspect FILE [--json]``: show what proofkit understood from a model file.

Text mode writes the model back in readable mathematical form (name, states,
parameters with nominal values and ranges, constants, equations, domain,
declared equilibria, claims); ``--json`` prints one JSON object whose
``"model"`` entry holds the same facts with exact numbers as text ("1/3").
The JSON is built only by :func:`inspect_report` and the text only by
:func:`inspect_text`, so later stages can add their findings in one place.

For fields that are not polynomial the equilibria come from a certified box
search over the box the domain gives (else a default box); ``--budget
SECONDS`` bounds its time (default 20 s) and its progress goes to stderr once
a second unless ``--quiet``. The result says which box was covered and
whether the list is complete.

Top-level imports are stdlib only; this module never evaluates model text.
"""

from __future__ import annotations

import argparse
import json
import sys
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from proofkit.model import Model

__all__ = ["inspect_report", "inspect_text", "register", "run"]

EXAMPLE = """example:
  proofkit inspect swing.pk --budget 5
  proofkit inspect chemostat.pk --json --quiet
"""


def register(subparsers: Any) -> None:
    p = subparsers.add_parser(
        "inspect",
        help="show the model as proofkit understood it",
        description="Read a model file, check it, and show it back in readable mathematical "
        "form: states, parameters (nominal value and range), constants, equations, domain, "
        "declared equilibria and claims. Exit 0 when the file is a valid model, 2 when not.",
        epilog=EXAMPLE,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    p.add_argument("file", metavar="FILE", help="model file (.pk); '-' reads standard input")
    p.add_argument(
        "--json",
        action="store_true",
        help="print one JSON object (key 'model') instead of text; exact numbers as 'p/q'",
    )
    p.add_argument(
        "--budget",
        type=float,
        default=20.0,
        metavar="SECONDS",
        help="time for the certified equilibrium search of a non-polynomial field (20)",
    )
    p.add_argument("--quiet", action="store_true", help="no progress on stderr")
    p.set_defaults(func=run)


def _model_dict(model: Model) -> dict[str, Any]:
    from proofkit.lang import format_condition, format_expr

    def rng(p: Any) -> list[str] | None:
        return None if p.low is None else [format_expr(p.low), format_expr(p.high)]

    polynomial = model.is_polynomial()
    return {
        "name": model.name,
        "states": list(model.states),
        "parameters": [  # the certificate's key and shape: fixed ones have range null
            {"name": p.name, "nominal": format_expr(p.nominal), "range": rng(p)}
            for p in model.params
        ],
        "constants": {c.name: format_expr(c.value) for c in model.constants},
        "lets": {let.name: format_expr(let.expr) for let in model.lets},
        "equations": {e.state: format_expr(e.rhs) for e in model.equations},
        "domain": [format_condition(c) for c in model.domain] if model.domain else None,
        "equilibria": {q.name: {s: format_expr(v) for s, v in q.point} for q in model.equilibria},
        "moving_equilibria": [q.name for q in model.equilibria if q.moves_with_parameters],
        "conditions": [  # where the field is defined, as recorded before simplification
            {"expression": format_expr(d.expr), "relation": d.relation, "why": d.origin}
            for d in model.definedness
        ],
        "claims": [c.text for c in model.claims],
        "polynomial": polynomial,
        "degree": model.degree() if polynomial else None,
    }


def inspect_report(model: Model) -> dict[str, Any]:
    """The JSON object printed by ``inspect --json`` (later stages add keys here)."""
    from proofkit.analysis.display import model_equilibria_json

    return {"file": model.file, "model": _model_dict(model), **model_equilibria_json(model)}


def _table(rows: list[tuple[str, str]], indent: str = "  ") -> list[str]:
    width = max((len(a) for a, _ in rows), default=0)
    return [f"{indent}{a.ljust(width)}  {b}".rstrip() for a, b in rows]


def inspect_text(model: Model) -> str:
    """The readable text printed by ``inspect`` (later stages add sections here)."""
    from proofkit.lang import format_condition, format_expr

    out: list[str] = [f"model {model.name or '(unnamed)'}  ({model.file})", ""]
    out.append(f"states ({len(model.states)}): " + ", ".join(model.states))
    if model.params:
        out.append("parameters:")
        rows = []
        for p in model.params:
            where = (
                f"uncertain, in [{format_expr(p.low)}, {format_expr(p.high)}]"
                if p.low is not None
                else "fixed"
            )
            rows.append((f"{p.name} = {format_expr(p.nominal)}", where))
        out += _table(rows)
    if model.constants:
        out.append("constants:")
        out += [f"  {c.name} = {format_expr(c.value)}" for c in model.constants]
    if model.lets:
        out.append("shorthands (substituted below):")
        out += [f"  {let.name} = {format_expr(let.expr)}" for let in model.lets]
    out.append("equations:")
    out += _table([(f"d{e.state}/dt", f"= {format_expr(e.rhs)}") for e in model.equations])
    if model.is_polynomial():
        out.append(f"  (a polynomial vector field of degree {model.degree()})")
    else:
        out.append("  (not polynomial in the states)")
    if model.domain is not None:
        out.append("domain (claims are proven inside it):")
        out += [f"  {format_condition(c)}" for c in model.domain]
    else:
        out.append("domain: the whole state space")
    if model.definedness:
        out.append("the field is defined only where:")
        out += _table(
            [(f"{format_expr(d.expr)} {d.relation} 0", f"({d.origin})") for d in model.definedness]
        )
    if model.equilibria:
        out.append("declared equilibria (f vanishes exactly at each):")
        out += _table([(q.name, _point_text(q)) for q in model.equilibria])
    if model.claims:
        out.append("claims:")
        for i, c in enumerate(model.claims, 1):
            note = ""
            if any(p.is_uncertain for p in model.params):
                note = (
                    "  (at the nominal parameters)"
                    if c.at_nominal
                    else ("  (for every parameter value in the ranges)")
                )
            out.append(f"  {i}. {c.text}{note}")
    else:
        out.append("claims: none")
    from proofkit.analysis.display import model_equilibria_lines

    out += model_equilibria_lines(model)
    return "\n".join(out)


def _point_text(q: Any) -> str:
    from proofkit.lang import format_expr

    text = "at " + ", ".join(f"{s} = {format_expr(v)}" for s, v in q.point)
    if q.moves_with_parameters:
        names = ", ".join(sorted(str(p) for p in q.parameter_symbols))
        text += f"  (moves with {names}; checked over the ranges)"
    return text


def _read(args: argparse.Namespace) -> Model:
    import proofkit

    if args.file == "-":
        data = sys.stdin.buffer.read()
        try:
            text = data.decode("utf-8")
        except UnicodeDecodeError:
            from proofkit.errors import InputError

            raise InputError("<stdin>: the input is not UTF-8 text") from None
        return proofkit.parse(text, name="<stdin>")
    return proofkit.load(args.file)


def run(args: argparse.Namespace) -> int:
    budget = getattr(args, "budget", 20.0)
    if not 0 < budget <= 3600:
        from proofkit.errors import InputError

        raise InputError(f"--budget {budget}: expected seconds in (0, 3600]")
    model = _read(args)
    from proofkit.analysis.boxsearch import search_settings

    def progress(msg: str) -> None:
        if not getattr(args, "quiet", False):
            print(f"proofkit: {msg}", file=sys.stderr, flush=True)

    with search_settings(seconds=budget, progress=progress):
        text = json.dumps(inspect_report(model), indent=2) if args.json else inspect_text(model)
    print(text)
    return 0
