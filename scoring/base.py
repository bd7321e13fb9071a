"""Shared result types: the reproducibility signature every score carries.

A signature lists, in a fixed order, every setting and version that a score depends on. It
prints as ``name|key:value|...`` (one line, easy to paste into a paper or a bug report) and
serialises to JSON with the same fields as separate keys.
"""

from __future__ import annotations

import functools
import importlib.metadata
from dataclasses import dataclass


@functools.cache
def package_version(name: str) -> str:
    """Installed version of a distribution, or "none" when it is not installed."""
    try:
        return importlib.metadata.version(name)
    except importlib.metadata.PackageNotFoundError:
        return "none"


def project_version() -> str:
    return package_version("boildown")


@dataclass(frozen=True)
class Signature:
    """Ordered settings and versions behind one score."""

    name: str
    fields: tuple[tuple[str, str], ...]

    @classmethod
    def build(cls, name: str, settings: dict, libraries: tuple[str, ...] = ()) -> "Signature":
        """Settings first, in the caller's order, then library versions, then boildown's own."""
        items = [(key, _fmt(value)) for key, value in settings.items()]
        items += [(_LIB_KEYS.get(lib, lib), package_version(lib)) for lib in libraries]
        items.append(("v", project_version()))
        return cls(name, tuple(items))

    def __str__(self) -> str:
        return "|".join([self.name] + [f"{key}:{value}" for key, value in self.fields])

    def to_dict(self) -> dict:
        return {"name": self.name, **dict(self.fields), "text": str(self)}


_LIB_KEYS = {
    "torch": "torch",
    "transformers": "hf",
    "spacy": "spacy",
    "rouge-score": "rouge",
    "bert-score": "bertscore",
    "nltk": "nltk",
}


def _fmt(value) -> str:
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)
