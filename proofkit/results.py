"""Result objects of the Python API: each with ``to_json()`` and notebook display.

Every result has ``to_json()`` (the facts of the matching command's ``--json``),
``_repr_markdown_()`` and ``_repr_latex_()`` (math in ``$...$``) and, where a
picture helps, ``_repr_png_()`` (a phase portrait). The objects report what the
library computed and what the trusted audit accepted; they never decide a
status themselves. Only the standard library is imported at import time;
sympy and matplotlib are loaded by the methods that draw or print math.
"""

from __future__ import annotations

import json
import os
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

if TYPE_CHECKING:
    from proofkit.analysis.surveying import Survey
    from proofkit.model import Model

__all__ = [
    "AuditResult",
    "BasinResult",
    "Inspection",
    "OrbitResult",
    "Portrait",
    "ProofResult",
]


# --- shared display helpers ----------------------------------------------------
def _md_table(head: Sequence[str], rows: Sequence[Sequence[str]]) -> str:
    def cell(s: str) -> str:
        return s.replace("|", "\\|").replace("\n", " ")

    lines = ["| " + " | ".join(head) + " |", "|" + "---|" * len(head)]
    lines += ["| " + " | ".join(cell(c) for c in r) + " |" for r in rows]
    return "\n".join(lines)


def _tex(expr: Any) -> str:
    import sympy as sp

    return sp.latex(expr)


_TEX_SPECIAL = {
    "\\": r"\textbackslash{}",
    "_": r"\_",
    "%": r"\%",
    "&": r"\&",
    "#": r"\#",
    "$": r"\$",
    "{": r"\{",
    "}": r"\}",
    "^": r"\^{}",
    "~": r"\~{}",
}


def _text_tex(s: str) -> str:
    return "".join(_TEX_SPECIAL.get(ch, ch) for ch in s)


def _equations_math(model: Model) -> list[str]:
    import sympy as sp

    return [
        rf"$\frac{{d{sp.latex(sp.Symbol(e.state))}}}{{dt}} = {_tex(e.rhs)}$"
        for e in model.equations
    ]


def _png(data: Any) -> bytes | None:
    from proofkit.report.figures import portrait_bytes

    return portrait_bytes(data) if data is not None else None


# --- inspect -------------------------------------------------------------------
@dataclass(frozen=True, eq=False)
class Inspection:
    """A model, every equilibrium found exactly, and each one's linear verdict."""

    model: Model
    survey: Survey | None
    reason: str = ""  # why there is no survey

    @property
    def equilibria(self) -> tuple[Any, ...]:
        return self.survey.equilibria if self.survey else ()

    def to_json(self) -> dict[str, Any]:
        """The object printed by ``proofkit inspect --json``."""
        from proofkit.analysis.display import equilibria_json
        from proofkit.cli import inspect_cmd

        if self.survey is None:
            return inspect_cmd.inspect_report(self.model)
        return {
            "file": self.model.file,
            "model": inspect_cmd._model_dict(self.model),
            **equilibria_json(self.survey),
        }

    def _rows(self) -> list[tuple[str, str, str, str]]:
        import sympy as sp

        rows = []
        for e in self.equilibria:
            point = "$" + ", ".join(f"{_tex(sp.Symbol(k))} = {_tex(v)}" for k, v in e.point.items())
            point += "$"
            if not e.exact:
                point = "near " + ", ".join(f"{k} ~ {v:.6g}" for k, v in e.numeric.items())
            rows.append((e.name or "-", point, e.verdict, e.type))
        return rows

    def _repr_markdown_(self) -> str:
        head = f"**model {self.model.name or '(unnamed)'}**, states " + ", ".join(
            f"${s}$" for s in self.model.states
        )
        parts = [head, "", "<br>".join(_equations_math(self.model)), ""]
        if self.survey is None:
            return "\n".join([*parts, f"equilibria: not analysed ({self.reason})"])
        table = _md_table(("equilibrium", "point", "verdict", "type"), self._rows())
        done = "complete: " if self.survey.complete else "not complete: "
        return "\n".join([*parts, table, "", done + self.survey.complete_reason])

    def _repr_latex_(self) -> str:
        lines = [rf"\textbf{{model {_text_tex(self.model.name or '(unnamed)')}}}\\"]
        lines += [eq + r"\\" for eq in _equations_math(self.model)]
        for name, point, verdict, kind in self._rows():
            lines.append(rf"{_text_tex(name)}: {point}, {verdict} ({_text_tex(kind)})\\")
        return "\n".join(lines)

    def _repr_png_(self) -> bytes | None:
        if len(self.model.states) < 2:
            return None
        return _png(_portrait_data(self.model, self.survey))

    def __repr__(self) -> str:
        verdicts = ", ".join(f"{e.name or '-'}: {e.verdict}" for e in self.equilibria)
        return f"<Inspection of {self.model.name or self.model.file}: {verdicts or 'none'}>"


# --- prove ---------------------------------------------------------------------
def _status_rows(outcomes: Sequence[Any]) -> list[tuple[str, str, str, str]]:
    return [(o.claim, o.status, o.method or "-", o.detail) for o in outcomes]


@dataclass(frozen=True, eq=False)
class ProofResult:
    """The claims of a model, each proved (the audit accepted it), refuted or not proved."""

    model: Model
    run: Any  # proofkit.proofs.ProveRun: certificate, its exact text, audit and provenance

    @property
    def outcomes(self) -> tuple[Any, ...]:
        return tuple(self.run.outcomes)

    @property
    def certificate(self) -> dict[str, Any]:
        return self.run.certificate

    @property
    def all_proved(self) -> bool:
        return bool(self.run.all_proved)

    def to_json(self) -> dict[str, Any]:
        """The object printed by ``proofkit prove --json``, plus the audited certificate."""
        return {
            "claims": [o.as_json() for o in self.outcomes],
            "all_proved": self.all_proved,
            "certificate": self.certificate,
        }

    def write(self, directory: str | os.PathLike[str]) -> list[Path]:
        """Write certificate.json, proof.md, proof.tex (and the portrait) into ``directory``."""
        from proofkit.cli.prove_cmd import write_outputs

        return write_outputs(self.run, Path(directory), f"proofkit.prove({self.model.file!r})")

    def _repr_markdown_(self) -> str:
        proved = sum(o.status == "proved" for o in self.outcomes)
        head = (
            f"**{self.model.name or self.model.file}**: {proved} of {len(self.outcomes)} "
            "claim(s) proved; certificate audited exactly"
        )
        table = _md_table(("claim", "status", "method", "detail"), _status_rows(self.outcomes))
        return head + "\n\n" + table

    def _repr_latex_(self) -> str:
        lines = [rf"\textbf{{{_text_tex(self.model.name or 'model')}}}\\"]
        for o in self.outcomes:
            lines.append(rf"{_text_tex(o.claim)}: \emph{{{o.status}}} ({_text_tex(o.detail)})\\")
        return "\n".join(lines)

    def _repr_png_(self) -> bytes | None:
        if len(self.model.states) != 2:
            return None
        return _png(_portrait_data(self.model, None, certificate=self.certificate))

    def __repr__(self) -> str:
        words = ", ".join(f"{o.claim}: {o.status}" for o in self.outcomes)
        return f"<ProofResult {self.model.name or self.model.file}: {words or 'no claims'}>"


# --- audit ---------------------------------------------------------------------
_ACCEPTED = ("proved", "accepted")


@dataclass(frozen=True, eq=False)
class AuditResult:
    """The trusted audit's verdict on each claim of a certificate, and provenance."""

    source: str
    report: Any  # proofkit.audit.AuditReport
    provenance: Any = None  # proofkit.provenance.ProvenanceReport, None with core_only

    @property
    def accepted(self) -> bool:
        return bool(self.report.accepted) and (self.provenance is None or self.provenance.ok)

    def to_json(self) -> dict[str, Any]:
        """Close to ``proofkit audit --json``: the core's verdicts, then provenance."""
        claims = [
            {
                "statement": c.statement,
                "status": c.status,
                "method": c.method,
                "failed_step": c.failed_step,
                "message": c.message,
                "checked": list(c.checked),
            }
            for c in self.report.claims
        ]
        prov = self.provenance
        return {
            "certificate": self.source,
            "accepted": self.accepted,
            "core": {"accepted": self.report.accepted, "claims": claims},
            "provenance": None
            if prov is None
            else {"ok": prov.ok, "checked": list(prov.checked), "problems": list(prov.problems)},
        }

    def _repr_markdown_(self) -> str:
        rows = [
            (c.statement, c.status, c.method or "-", c.message or f"{len(c.checked)} checks")
            for c in self.report.claims
        ]
        word = "accepted" if self.accepted else "REJECTED"
        prov = (
            "skipped"
            if self.provenance is None
            else ("ok" if self.provenance.ok else "; ".join(self.provenance.problems))
        )
        table = _md_table(("claim", "audit", "method", "detail"), rows)
        return f"**certificate {word}** (provenance: {prov})\n\n{table}"

    def _repr_latex_(self) -> str:
        lines = [rf"\textbf{{certificate {'accepted' if self.accepted else 'rejected'}}}\\"]
        lines += [rf"{_text_tex(c.statement)}: \emph{{{c.status}}}\\" for c in self.report.claims]
        return "\n".join(lines)

    def __repr__(self) -> str:
        return f"<AuditResult {self.source}: {'accepted' if self.accepted else 'rejected'}>"


def _certificate_text(certificate: Any) -> tuple[str, str]:
    if isinstance(certificate, ProofResult):
        return certificate.run.text, "<prove result>"
    if isinstance(certificate, Mapping):
        from proofkit.certificate import dumps

        return dumps(dict(certificate)), "<certificate>"
    if isinstance(certificate, (str, os.PathLike)):
        path = Path(certificate)
        try:
            return path.read_text(encoding="utf-8"), str(certificate)
        except (OSError, UnicodeDecodeError) as exc:
            from proofkit.errors import InputError

            raise InputError(f"{certificate}: cannot read the certificate ({exc})") from None
    raise TypeError(f"expected a certificate path, dict or ProofResult, not {type(certificate)}")


# --- orbit ---------------------------------------------------------------------
@dataclass(frozen=True, eq=False)
class OrbitResult:
    """Periodic orbits located numerically (hints for the provers, never proofs)."""

    model: Model
    search: Any  # proofkit.analysis.orbits.OrbitSearch

    @property
    def cycles(self) -> tuple[Any, ...]:
        return tuple(self.search.cycles)

    def to_json(self) -> dict[str, Any]:
        return dict(self.search.as_json())

    def _rows(self) -> list[tuple[str, str, str, str]]:
        rows = []
        for k, c in enumerate(self.cycles, 1):
            point = ", ".join(
                f"{s} ~ {v:.4g}" for s, v in zip(self.search.states, c.point, strict=True)
            )
            mults = ", ".join(f"{abs(z):.4g}" for z in c.multipliers[1:])
            rows.append(
                (
                    str(k),
                    f"{c.period:.5g}",
                    point,
                    ("attracting" if c.stable else "not attracting") + f"; |mult| {mults}",
                )
            )
        return rows

    def _repr_markdown_(self) -> str:
        head = (
            f"**{len(self.cycles)} periodic orbit(s) located numerically** "
            "(floating point: hints, not proofs)"
        )
        table = _md_table(
            ("cycle", "period", "point on the orbit", "Floquet multipliers"), self._rows()
        )
        return head + "\n\n" + table

    def _repr_latex_(self) -> str:
        lines = [rf"{len(self.cycles)} periodic orbit(s) located numerically\\"]
        lines += [rf"cycle {r[0]}: period $T \approx {r[1]}$\\" for r in self._rows()]
        return "\n".join(lines)

    def _repr_png_(self) -> bytes | None:
        if len(self.model.states) < 2:
            return None
        return _png(_portrait_data(self.model, None, cycles=self.cycles))

    def __repr__(self) -> str:
        return f"<OrbitResult {self.model.name or self.model.file}: {len(self.cycles)} cycle(s)>"


# --- basin ---------------------------------------------------------------------
@dataclass(frozen=True, eq=False)
class BasinResult:
    """The largest certified region of attraction found for an equilibrium (audited)."""

    model: Model
    result: Any  # proofkit.proofs._basin_run.BasinRun (status, V, level, certificate, size)

    @property
    def certified(self) -> bool:
        return getattr(self.result, "status", None) == "proved"

    def to_json(self) -> dict[str, Any]:
        """The object printed by ``proofkit basin --json``."""
        return dict(self.result.as_json())

    def _summary(self) -> tuple[str, str]:
        r = self.result
        if not self.certified:
            return f"no region certified for {r.equilibrium}", getattr(r, "reason", "")
        size = r.size or {}
        extra = f"{size['kind']} about {size['value']:.4g}" if size else ""
        return f"certified region of attraction of {r.equilibrium} (degree {r.degree})", extra

    def _repr_markdown_(self) -> str:
        head, extra = self._summary()
        if not self.certified:
            return f"**{head}**: {extra}"
        return f"**{head}**: $V \\le {self.result.level}$ with\n\n`V = {self.result.v_text}`" + (
            f"\n\n{extra} (audited certificate)" if extra else ""
        )

    def _repr_latex_(self) -> str:
        head, extra = self._summary()
        if not self.certified:
            return _text_tex(f"{head}: {extra}")
        return (
            _text_tex(head)
            + rf": $\{{V \le {self.result.level}\}}$, "
            + (rf"\texttt{{V = {_text_tex(self.result.v_text)}}}")
        )

    def _repr_png_(self) -> bytes | None:
        cert = getattr(self.result, "certificate", None)
        if len(self.model.states) != 2:
            return None
        return _png(_portrait_data(self.model, None, certificate=cert))

    def __repr__(self) -> str:
        return f"<BasinResult {self._summary()[0]}>"


# --- portrait ------------------------------------------------------------------
@dataclass(frozen=True, eq=False)
class Portrait:
    """A phase portrait (illustration, never evidence): streamlines, equilibria, regions."""

    model: Model
    data: Any  # proofkit.report.figures.PortraitData
    path: Path | None = None
    extra: dict[str, Any] = field(default_factory=dict)

    def save(self, path: str | os.PathLike[str]) -> Path:
        """Write the portrait; the format follows the suffix (png, svg, pdf)."""
        from proofkit.report.figures import save_portrait

        return save_portrait(self.data, path)

    def figure(self) -> Any:
        """The matplotlib ``Figure`` (Agg canvas)."""
        from proofkit.report.figures import draw_portrait

        return draw_portrait(self.data)

    def to_json(self) -> dict[str, Any]:
        d = self.data
        return {
            "file": str(self.path) if self.path else None,
            "plane": list(d.names),
            "box": list(d.box),
            "equilibria": [
                {"name": p.name, "verdict": p.verdict, "point": list(p.xy)} for p in d.points
            ],
            "regions": [r.label for r in d.regions],
            "cycles": len(d.cycles),
            "note": d.note,
        }

    def _repr_png_(self) -> bytes | None:
        return _png(self.data)

    def _repr_markdown_(self) -> str:
        marks = ", ".join(f"{p.name or '-'} ({p.verdict})" for p in self.data.points)
        return f"**{self.data.title}** in $({self.data.names[0]}, {self.data.names[1]})$: {marks}"

    def _repr_latex_(self) -> str:
        return _text_tex(self.data.title)


def _audited(certificate: Any, model: Model) -> dict[str, Any]:
    """The certificate with only the claims the trusted audit accepted (regions to draw)."""
    from proofkit.audit import audit_text
    from proofkit.certificate import model_section
    from proofkit.errors import InputError

    text, source = _certificate_text(certificate)
    cert = json.loads(text)
    ours, theirs = model_section(model), cert.get("model") or {}
    keys = ("states", "parameters", "field", "domain")
    if any(ours.get(k) != theirs.get(k) for k in keys):
        raise InputError(
            f"{source}: the certificate is about another model than {model.file} "
            "(its states, parameters, field or domain differ)"
        )
    report = audit_text(text)
    kept = [
        c
        for c, v in zip(cert.get("claims", []), report.claims, strict=False)
        if v.status in _ACCEPTED
    ]
    return {**cert, "claims": kept}


def _portrait_data(
    model: Model,
    survey: Survey | None,
    *,
    certificate: Any = None,
    cycles: Sequence[Any] = (),
    plane: Sequence[str] | None = None,
    at: Mapping[str, float] | None = None,
) -> Any:
    from proofkit.report._portrait_data import model_portrait_data

    if survey is None:
        from proofkit.analysis.surveying import survey as run_survey
        from proofkit.errors import ModelError

        try:
            survey = run_survey(model)
        except ModelError:
            survey = None
    cert = _audited(certificate, model) if certificate is not None else None
    states = list(model.states)
    names = list(plane) if plane else states[:2]
    lines = []
    for c in cycles:
        if all(s in states for s in names):
            orb = c.orbit
            lines.append(
                list(zip(orb[states.index(names[0])], orb[states.index(names[1])], strict=True))
            )
    return model_portrait_data(model, survey, cert, plane, at, lines)
