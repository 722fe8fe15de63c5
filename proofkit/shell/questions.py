"""The shell's questions about the model: equilibria, linearization, claims, basins, cycles.

Each command is a thin layer over the Python API (:mod:`proofkit.api`), so the
shell, the command line and scripts give the same answers. A claim tried in
place is parsed as a ``claim`` statement of the current model (errors point
into the typed claim) and proved alone; "proved" is reported only when the
audit accepted the certificate. Long work reports progress on stderr and
stops at Ctrl-C without ending the session.

It must never mark a claim proved itself.
"""

from __future__ import annotations

from pathlib import Path

from proofkit.errors import InputError
from proofkit.shell.commands import COMMANDS, command, unknown
from proofkit.shell.model_text import Statement
from proofkit.shell.session import INPUT, Session, _relocated

__all__ = ["COMMANDS", "unknown"]


def _survey(s: Session) -> object:
    from proofkit.api import inspect

    s.progress("finding the equilibria exactly")
    found = inspect(s.need_model())
    if found.survey is None:
        raise InputError(f"the equilibria cannot be analysed: {found.reason}")
    return found


@command("equilibria", "equilibria", "list every equilibrium with its verdict and type")
def _equilibria(s: Session, args: str) -> None:
    from proofkit.analysis.display import equilibria_json, equilibria_lines

    found = _survey(s)
    for line in equilibria_lines(found.survey, nominal_note=bool(s.need_model().params)):
        s.say(line)
    s.attach(**equilibria_json(found.survey))


@command("linearize", "linearize NAME|N", "Jacobian, characteristic polynomial, Routh verdict")
def _linearize(s: Session, args: str) -> None:
    from proofkit.analysis.display import equilibria_json, exact_text

    found = _survey(s)
    eqs = found.equilibria
    pick = None
    if args.isdigit() and 0 < int(args) <= len(eqs):
        pick = eqs[int(args) - 1]
    else:
        pick = next((e for e in eqs if e.name == args), None)
    if pick is None:
        names = ", ".join(e.name or str(k) for k, e in enumerate(eqs, 1))
        raise InputError(f"no equilibrium '{args}'", hint=f"name one of: {names}")
    point = ", ".join(f"{k} = {exact_text(v)}" for k, v in pick.point.items())
    entry = equilibria_json(found.survey)["equilibria"][list(eqs).index(pick)]
    s.attach(equilibrium=entry, characteristic_polynomial=[exact_text(c) for c in pick.charpoly])
    s.say(f"equilibrium {pick.name or args} at {point}")
    s.say("Jacobian:")
    for i in range(pick.jacobian.rows):
        row = [exact_text(pick.jacobian[i, j]) for j in range(pick.jacobian.cols)]
        s.say("  [ " + ", ".join(row) + " ]")
    s.say(
        "characteristic polynomial coefficients (highest power first): "
        + ", ".join(exact_text(c) for c in pick.charpoly)
    )
    r = pick.routh
    s.say(
        f"Routh array: first column signs {list(r.first_column_signs)}; "
        f"{r.rhp_count} root(s) in the right half plane, {r.imag_count} on the axis"
    )
    eig = ", ".join(f"{z.real:.4g}{z.imag:+.4g}i" for z in pick.eigenvalues)
    s.say(f"verdict: {pick.verdict} ({pick.type}); eigenvalues (display only): {eig}")


def _outcomes(s: Session, result: object) -> None:
    s.attach(claims=[o.as_json() for o in result.outcomes])
    for o in result.outcomes:
        method = f" [{o.method}]" if o.method else ""
        s.say(f"{o.status:>10}  {o.claim}{method}: {o.detail}")


@command("try", "try CLAIM", "prove one claim typed in place, e.g. try open stable")
def _try(s: Session, args: str) -> None:
    from proofkit import parse
    from proofkit.api import prove

    s.need_model()
    body = args[len("claim ") :] if args.startswith("claim ") else args
    if not body:
        raise InputError("try needs a claim", hint="try open stable")
    text = f"claim {body}"
    trial = s.statements.copy()
    for key in [k for k in trial.key_list() if k[0] == "claim"]:
        trial.drop(key)
    key = ("claim", body)
    trial.put(Statement(key, text))
    try:
        model = parse(trial.text(), name=INPUT)
    except InputError as err:
        if err.span is not None and err.span.line == trial.line_of(key):
            raise _relocated(err, text) from None
        raise
    result = prove(model, progress=s.progress)
    s.remember("certificate", result.certificate)
    _outcomes(s, result)


@command("prove", "prove", "prove every claim of the model (audited)")
def _prove(s: Session, args: str) -> None:
    from proofkit.api import prove

    result = prove(s.need_model(), progress=s.progress)
    s.remember("certificate", result.certificate)
    _outcomes(s, result)
    proved = sum(o.status == "proved" for o in result.outcomes)
    s.say(f"{proved} of {len(result.outcomes)} claim(s) proved; certificate audited exactly")


@command("basin", "basin NAME [DEGREE]", "certify the largest region of attraction (V of degree 4)")
def _basin(s: Session, args: str) -> None:
    from proofkit.api import basin

    words = args.split()
    if not words or len(words) > 2 or (len(words) == 2 and not words[1].isdigit()):
        raise InputError(
            "basin needs an equilibrium name and may take a degree", hint="basin origin 4"
        )
    degree = int(words[1]) if len(words) == 2 else 4
    if degree not in (2, 4, 6, 8, 10):
        raise InputError(f"degree {degree}: expected 2, 4, 6, 8 or 10")
    model = s.need_model()
    if words[0] not in {e.name for e in model.equilibria}:
        known = ", ".join(e.name for e in model.equilibria) or "none declared"
        raise InputError(f"no declared equilibrium '{words[0]}'", hint=f"declared: {known}")
    result = basin(model, words[0], degree=degree, progress=s.progress)
    s.attach(basin=result.to_json())
    if result.certified:
        s.remember("certificate", result.result.certificate)
    head, extra = result._summary()
    s.say(head + ("" if result.certified else f": {extra}"))
    if result.certified:
        s.say(f"  {{ {result.result.v_text} <= {result.result.level} }}")
        s.say(f"  {extra}; certificate audited")


@command("cycles", "cycles", "locate periodic orbits numerically (hints, not proofs)")
def _cycles(s: Session, args: str) -> None:
    from proofkit.api import orbit

    result = orbit(s.need_model(), progress=s.progress)
    s.attach(**result.to_json())
    s.remember("cycles", result.cycles)
    if not result.cycles:
        s.say("no periodic orbit located (numerical search; not a proof)")
    for row in result._rows():
        s.say(f"cycle {row[0]}: period {row[1]}, through {row[2]}; {row[3]}")
    for note in result.search.notes:
        s.say(f"note: {note}")


@command("write", "write DIR", "prove, then write certificate, proof.md, proof.tex and portrait")
def _write(s: Session, args: str) -> None:
    from proofkit.api import prove

    if not args:
        raise InputError("write needs a directory", hint="write out/")
    result = prove(s.need_model(), progress=s.progress)
    s.remember("certificate", result.certificate)
    _outcomes(s, result)
    written = result.write(args)
    s.attach(written=[str(p) for p in written])
    for path in written:
        s.say(f"wrote {path}")


@command("portrait", "portrait [FILE]", "draw the phase portrait, with what was found so far")
def _portrait(s: Session, args: str) -> None:
    from dataclasses import replace

    from proofkit.report._portrait_data import certificate_data
    from proofkit.results import Portrait, _audited, _portrait_data

    model = s.need_model()
    out = Path(args or f"{model.name or 'portrait'}.png")
    if out.suffix.lstrip(".").lower() not in ("png", "svg", "pdf"):
        raise InputError(f"{out}: unknown picture format", hint="name it FILE.png, .svg or .pdf")
    s.progress("drawing the phase portrait")
    cycles = [c for found in s.recall("cycles") for c in found]
    data = _portrait_data(model, None, cycles=cycles)
    regions = list(data.regions)
    for cert in s.recall("certificate"):  # only claims the audit accepts are drawn
        drawn = certificate_data(_audited(cert, model)) if len(model.states) == 2 else None
        regions += [r for r in (drawn.regions if drawn else ()) if r not in regions]
    result = Portrait(model, replace(data, regions=tuple(regions)), out)
    result.save(out)
    s.attach(portrait=result.to_json())
    marks = ", ".join(f"{p.name or '-'} ({p.verdict})" for p in result.data.points)
    s.say(f"wrote {out}: {marks}")
    for label in [r.label for r in regions] + ["located periodic orbit"] * len(cycles):
        s.say(f"  drawn: {label}")
