"""Shared result types: the reproducibility signature every score carries.

A signature lists, in a fixed order, every setting and version that a score depends on. It
prints as one line (easy to paste into a paper or a bug report) and serialises to JSON with the
same facts as separate keys.
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
    """Every setting and version behind one score.

    One line of text, e.g. ``coverage(model=smollm2-135m@b179c952, dtype=float32, keywords=40)
    on boildown 0.1.0, torch 2.13.0``: the scorer's name, its settings in brackets in the
    scorer's own order, then the versions of boildown and of the libraries the score depends
    on. JSON carries the same facts as separate keys: ``{"name", "settings", "versions", "text"}``.
    """

    name: str
    settings: tuple[tuple[str, str], ...]
    versions: tuple[tuple[str, str], ...] = ()

    @classmethod
    def build(cls, name: str, settings: dict, libraries: tuple[str, ...] = ()) -> "Signature":
        """Settings in the caller's order; boildown's version, then each library's."""
        versions = (("boildown", project_version()),) + tuple((lib, package_version(lib)) for lib in libraries)
        return cls(name, tuple((key, _fmt(value)) for key, value in settings.items()), versions)

    def __str__(self) -> str:
        inside = ", ".join(f"{key}={_quote(value)}" for key, value in self.settings)
        line = f"{self.name}({inside})"
        if self.versions:
            line += " on " + ", ".join(f"{lib} {version}" for lib, version in self.versions)
        return line

    def to_dict(self) -> dict:
        return {"name": self.name, "settings": dict(self.settings), "versions": dict(self.versions), "text": str(self)}


def _quote(value: str) -> str:
    """A value as the one-line form prints it: quoted when it holds a separator or a bracket."""
    return f'"{value}"' if not value or any(ch in value for ch in ',()= "') else value


def _fmt(value) -> str:
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, float):
        return f"{value:g}"
    return str(value)
