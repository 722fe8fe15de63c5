"""proofkit: exact, independently audited stability proofs for nonlinear systems.

The public API is small: read a model with :func:`load` or :func:`parse`,
then hand the :class:`Model` to the analysis and proof functions.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

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

__all__ = [
    "CertificateRejected",
    "InputError",
    "LimitError",
    "Model",
    "ModelError",
    "NumericalError",
    "ProofkitError",
    "__version__",
    "load",
    "parse",
]


def __getattr__(name: str) -> object:
    # ``Model`` (and with it sympy) is imported on first use, so that the light
    # audit path (``proofkit audit --core-only``) starts without sympy.
    if name == "Model":
        from proofkit.model import Model

        return Model
    raise AttributeError(f"module 'proofkit' has no attribute {name!r}")


def parse(text: str, name: str | None = None) -> Model:
    """Parse model text; ``name`` is the file name used in error messages."""
    from proofkit.lang import parse_model

    return parse_model(text, file=name or "<model>")


def load(path: str) -> Model:
    """Read and parse a ``.pk`` file."""
    from proofkit.lang import load_model

    return load_model(path)
