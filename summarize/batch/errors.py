"""How a batch run says no: the one-line error a run that cannot start raises, and the one-line
reason an unexpected exception becomes in a record or a message."""

from __future__ import annotations


class BatchError(ValueError):
    """A one-line, user-facing reason a batch run cannot start."""


def one_line(exc: BaseException) -> str:
    """The exception's message on one line (its class name when it has none)."""
    text = " ".join(str(exc).split())
    return text or type(exc).__name__
