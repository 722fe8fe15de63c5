"""proofkit: exact, independently audited stability proofs for nonlinear systems.

The public API (see :mod:`proofkit.api`): read a model with :func:`load` or
:func:`parse` (the one front door for model text), then :func:`inspect`,
:func:`prove`, :func:`basin`, :func:`orbit`, :func:`audit` and
:func:`portrait`; each returns a result object with ``to_json()`` and notebook
display. For example::

    import proofkit
    model = proofkit.load("worked/valve_latch.pk")
    proofkit.inspect(model)          # every equilibrium, exactly, with its verdict
    result = proofkit.prove(model)   # "proved" only where the audit accepted it
    result.write("out/")             # certificate.json, proof.md, proof.tex, portrait

``import proofkit`` stays light: it loads the standard-library audit package
and nothing heavy (no sympy, numpy, cvxpy or matplotlib); those are imported
by the functions that need them.

``proofkit.audit`` is both the audit package (``proofkit.audit.audit_text``,
the trusted checker) and, called, the API function :func:`proofkit.api.audit`:
the package module is given a callable module type below. The audit package
itself is unchanged by this and still imports nothing of proofkit.
"""

from __future__ import annotations

import importlib
import types
from typing import TYPE_CHECKING, Any

from proofkit.errors import (
    CertificateRejected,
    InputError,
    LimitError,
    ModelError,
    NumericalError,
    ProofkitError,
)

if TYPE_CHECKING:
    from proofkit.model import Model

__version__ = "0.1.0"

from proofkit.api import (
    AuditResult,
    BasinResult,
    Inspection,
    OrbitResult,
    Portrait,
    ProofResult,
    basin,
    inspect,
    load,
    orbit,
    parse,
    portrait,
    prove,
)

__all__ = [
    "AuditResult",
    "BasinResult",
    "CertificateRejected",
    "InputError",
    "Inspection",
    "LimitError",
    "Model",
    "ModelError",
    "NumericalError",
    "OrbitResult",
    "Portrait",
    "ProofResult",
    "ProofkitError",
    "__version__",
    "audit",
    "basin",
    "inspect",
    "load",
    "orbit",
    "parse",
    "portrait",
    "prove",
]


class _CallableAuditModule(types.ModuleType):
    """The audit package, callable as the API function ``proofkit.audit(certificate)``."""

    def __call__(self, certificate: Any, *, core_only: bool = False) -> AuditResult:
        from proofkit.api import audit as run_audit

        return run_audit(certificate, core_only=core_only)


# the audit package is standard library only and light to import
importlib.import_module("proofkit.audit").__class__ = _CallableAuditModule


def __getattr__(name: str) -> object:
    # ``Model`` (and with it sympy) is imported on first use, so that the light
    # audit path (``proofkit audit --core-only``) starts without sympy.
    if name == "Model":
        from proofkit.model import Model

        return Model
    raise AttributeError(f"module 'proofkit' has no attribute {name!r}")
