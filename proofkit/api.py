"""The Python API: one front door for scripts and notebooks.

Every function takes a :class:`~proofkit.model.Model` or the path of a
``.pk`` file and returns a result object with ``to_json()`` (the same facts
as the matching command's ``--json``), ``_repr_markdown_()`` and
``_repr_latex_()`` for notebook display (math in ``$...$``), and, where a
picture helps, ``_repr_png_()`` (a phase portrait). Model text reaches the
library only through :func:`parse` and :func:`load`.

Soundness: a claim is "proved" only when the trusted audit accepted its
exact certificate; the result objects report statuses, they never decide
them. This module imports only the standard library at import time, so that
``import proofkit`` stays light; sympy, numpy and matplotlib are loaded by the
functions that need them. It never evaluates model text.
"""

from __future__ import annotations

import json
import os
from collections.abc import Callable, Mapping, Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any

from proofkit.errors import ProofkitError
from proofkit.results import (
    AuditResult,
    BasinResult,
    Inspection,
    OrbitResult,
    Portrait,
    ProofResult,
    _certificate_text,
    _portrait_data,
)

if TYPE_CHECKING:
    from proofkit.model import Model

__all__ = [
    "AuditResult",
    "BasinResult",
    "Inspection",
    "NotAvailable",
    "OrbitResult",
    "Portrait",
    "ProofResult",
    "audit",
    "basin",
    "inspect",
    "load",
    "orbit",
    "parse",
    "portrait",
    "prove",
]

Progress = Callable[[str], None]


class NotAvailable(ProofkitError):
    """A method whose implementation is not part of this installation yet."""


# --- the front door ------------------------------------------------------------
def parse(text: str, name: str | None = None) -> Model:
    """Parse model text (language version 2); ``name`` labels the text in error messages.

    >>> import proofkit
    >>> m = proofkit.parse("state x\\ndx/dt = -x^3")
    >>> m.states
    ('x',)
    """
    from proofkit.lang import _parse_model

    return _parse_model(text, file=name or "<model>")


def load(path: str | os.PathLike[str]) -> Model:
    """Read and parse a ``.pk`` file (UTF-8, at most 1 MiB).

    >>> import proofkit, pathlib, tempfile
    >>> f = pathlib.Path(tempfile.mkdtemp()) / "decay.pk"
    >>> _ = f.write_text("system decay\\nstate x\\ndx/dt = -x\\n")
    >>> proofkit.load(f).name
    'decay'
    """
    from proofkit.lang import _load_model

    return _load_model(path)


def _model(model: Model | str | os.PathLike[str]) -> Model:
    if isinstance(model, (str, os.PathLike)):
        return load(model)
    from proofkit.model import Model

    if not isinstance(model, Model):
        raise TypeError(f"expected a Model or the path of a .pk file, not {type(model).__name__}")
    return model


def inspect(model: Model | str | os.PathLike[str]) -> Inspection:
    """Find every equilibrium exactly and classify it (Lyapunov's indirect method).

    >>> import proofkit
    >>> m = proofkit.parse("state x, y\\ndx/dt = y\\ndy/dt = -x - y")
    >>> [(e.verdict, e.type) for e in proofkit.inspect(m).equilibria]
    [('stable', 'stable focus')]
    """
    from proofkit.analysis.surveying import survey
    from proofkit.errors import ModelError

    m = _model(model)
    try:
        return Inspection(m, survey(m))
    except ModelError as err:
        return Inspection(m, None, str(err))


def prove(
    model: Model | str | os.PathLike[str],
    *,
    progress: Progress | None = None,
) -> ProofResult:
    """Prove every claim of the model; "proved" only where the audit accepted the certificate.

    >>> import proofkit
    >>> m = proofkit.parse("state x, y\\ndx/dt = y\\ndy/dt = -x - y\\n"
    ...                    "equilibrium o at x = 0, y = 0\\nclaim o stable")
    >>> [(o.claim, o.status) for o in proofkit.prove(m).outcomes]
    [('o stable', 'proved')]
    """
    from proofkit.proofs import prove_model

    m = _model(model)
    return ProofResult(m, prove_model(m, progress))


def audit(certificate: Any, *, core_only: bool = False) -> AuditResult:
    """Re-verify a certificate (a path, a dict or a :class:`ProofResult`) exactly.

    >>> import proofkit
    >>> m = proofkit.parse("state x, y\\ndx/dt = y\\ndy/dt = -x - y\\n"
    ...                    "equilibrium o at x = 0, y = 0\\nclaim o stable")
    >>> proofkit.audit(proofkit.prove(m)).accepted
    True
    """
    from proofkit.audit import FormatError, audit_text

    text, source = _certificate_text(certificate)
    try:
        report = audit_text(text)
    except FormatError as exc:
        from proofkit.errors import InputError

        raise InputError(f"{source}: malformed certificate: {exc}") from None
    prov = None
    if not core_only:
        from proofkit.provenance import check_provenance

        prov = check_provenance(json.loads(text))
    return AuditResult(source, report, prov)


def orbit(
    model: Model | str | os.PathLike[str],
    *,
    box: float = 3.0,
    progress: Progress | None = None,
) -> OrbitResult:
    """Locate periodic orbits numerically (shooting; Floquet multipliers). Not a proof.

    Starts fill the box ``[-box, box]`` in every state (as ``proofkit orbit --box``).
    The example is the circle of radius 1, period ``2 pi`` (by hand, in polar form).

    >>> import proofkit
    >>> m = proofkit.parse("state x, y\\ndx/dt = -y + x*(1 - x^2 - y^2)\\n"
    ...                    "dy/dt = x + y*(1 - x^2 - y^2)")
    >>> r = proofkit.orbit(m)
    >>> len(r.cycles), round(r.cycles[0].period, 3)
    (1, 6.283)
    """
    from proofkit.errors import InputError, ModelError

    m = _model(model)
    if not 0 < box <= 1e6:
        raise InputError(f"box {box}: expected a half-width in (0, 1e6]")
    try:
        from proofkit.analysis.orbits import find_cycles
    except ImportError:
        raise NotAvailable("locating periodic orbits is not available yet") from None
    try:
        found = find_cycles(m, box=tuple((-box, box) for _ in m.states), progress=progress)
    except ModelError as err:
        raise InputError(f"{m.file}: {err}") from None
    return OrbitResult(m, found)


def basin(
    model: Model | str | os.PathLike[str],
    equilibrium: str | None = None,
    *,
    degree: int = 4,
    progress: Progress | None = None,
) -> BasinResult:
    """The largest region of attraction of ``equilibrium`` certified with ``V`` of ``degree``.

    ``equilibrium`` names a declared equilibrium (default: the first declared).
    A sum-of-squares search; the set counts as certified only after the audit
    accepted its certificate (``result.certified``). Slow (seconds to minutes).
    Polynomial and rational fields (rational ones are searched multiplied through
    by their denominators, which are certified positive on the set).

    >>> import proofkit
    >>> m = proofkit.parse("state x\\ndx/dt = -x + x^3\\nequilibrium o at x = 0")
    >>> r = proofkit.basin(m, "o", degree=2)
    >>> r.certified
    True
    """
    from proofkit.errors import InputError

    m = _model(model)
    names = [e.name for e in m.equilibria]
    if (equilibrium or (names[0] if names else None)) not in names:
        known = ", ".join(names) or "none declared"
        what = f"named {equilibrium!r}" if equilibrium else "to start from"
        raise InputError(
            f"{m.file}: no declared equilibrium {what} (declared: {known})",
            hint="declare it: equilibrium NAME at x = ..., y = ...",
        )
    if degree not in (2, 4, 6, 8, 10):
        raise InputError(f"degree {degree}: expected 2, 4, 6, 8 or 10")
    try:
        from proofkit.proofs.basin import estimate_basin
    except ImportError:
        raise NotAvailable("estimating regions of attraction is not available yet") from None
    return BasinResult(m, estimate_basin(m, equilibrium, degree=degree, progress=progress))


def portrait(
    model: Model | str | os.PathLike[str],
    path: str | os.PathLike[str] | None = None,
    *,
    certificate: Any = None,
    plane: Sequence[str] | None = None,
    at: Mapping[str, float] | None = None,
    cycles: bool = False,
) -> Portrait:
    """Draw a phase portrait (planar models; a chosen plane otherwise); write it to ``path``.

    >>> import proofkit
    >>> m = proofkit.parse("state x, y\\ndx/dt = y\\ndy/dt = x - x^3 - y")
    >>> [(p.name, p.verdict, p.xy) for p in proofkit.portrait(m).data.points][:1]
    [(None, 'stable', (-1.0, 0.0))]
    """
    m = _model(model)
    found: Sequence[Any] = ()
    if cycles:
        try:
            found = orbit(m).cycles
        except NotAvailable:
            found = ()
    data = _portrait_data(m, None, certificate=certificate, cycles=found, plane=plane, at=at)
    result = Portrait(m, data, Path(path) if path else None)
    if path is not None:
        result.save(path)
    return result
