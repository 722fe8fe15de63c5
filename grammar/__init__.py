"""The model grammar, shipped as the package ``proofkit.grammar``."""

from importlib.resources import files

__all__ = ["grammar_text"]


def grammar_text() -> str:
    """The lark grammar of the model language."""
    return files(__name__).joinpath("model.lark").read_text(encoding="utf-8")
