"""What every scorer shares: the reproducibility signature, the scorer protocol, result columns.

A signature lists, in a fixed order, every setting and version that a score depends on. It
prints as one line (easy to paste into a paper or a bug report) and serialises to JSON with the
same facts as separate keys.
"""

from __future__ import annotations

import functools
import importlib.metadata
from collections.abc import Callable, Sequence
from dataclasses import dataclass, fields
from typing import ClassVar, Protocol, runtime_checkable


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


# --------------------------------------------------------------------------- the scorer shape

NEEDS = ("source", "pool", "references")
"""What a scorer reads beside each summary: its source, the other candidates of the same source
(the pool), or human reference summaries (it runs only when some are given)."""

KINDS = ("pct", "num2", "num3", "num4", "signed2", "int", "words")  # signed2: a z-score sum (+0.53)
"""How a column's value is printed: a percentage, a number to 2/3/4 places, a whole number, a list of words."""


@dataclass(frozen=True)
class Column:
    """One column a scorer adds to the result rows (the CSV, the terminal table, the page).

    ``get`` takes the scorer's result and returns the value; ``header`` is the terminal table's
    heading and ``title`` the page's (empty: the column is in the CSV only)."""

    key: str
    get: Callable[[object], object]
    kind: str = "num4"
    header: str = ""
    title: str = ""

    def __post_init__(self):
        if self.kind not in KINDS:
            raise ValueError(f"column {self.key!r}: kind must be one of {KINDS}, got {self.kind!r}")


@runtime_checkable
class Scorer(Protocol):
    """What every scorer offers (see ``scoring.registry`` for the list of them).

    Class attributes: ``name`` (the registry key and the JSON key of its results), ``label``
    (a heading), ``description`` (one sentence saying what the number means: the help, the
    tables' legends and the page print it), ``needs`` (one of ``NEEDS``), ``Config`` (its frozen
    config dataclass, validated when built) and ``columns`` (what it adds to the result rows).
    Results are frozen dataclasses with ``value``, their evidence, ``signature`` and ``to_dict()``.
    """

    name: ClassVar[str]
    label: ClassVar[str]
    description: ClassVar[str]
    needs: ClassVar[str]
    Config: ClassVar[type]
    columns: ClassVar[tuple[Column, ...]]
    config: object

    def signature(self) -> Signature: ...

    def score_many(self, summaries: Sequence[str], *, source: str | None = None,
                   references: Sequence[str] | None = None) -> list: ...


def result_dict(result, **derived) -> dict:
    """A result dataclass as JSON-ready data: its fields in order (``derived`` replaces or adds
    entries), then its signature's dict last."""
    out = {f.name: getattr(result, f.name) for f in fields(result) if f.name != "signature"}
    out.update(derived)
    out["signature"] = result.signature.to_dict()
    return out


class Result:
    """The common part of every result dataclass: ``unit`` (its value in [0, 1], what a combined
    score weighs; ``value`` unless a result says otherwise) and ``to_dict``."""

    @property
    def unit(self) -> float:
        return self.value

    def to_dict(self) -> dict:
        return result_dict(self)


class BaseScorer:
    """The common part of every scorer: its registry facts, declared on the class line, and its
    config (the default one unless given). The class docstring is the ``description`` users read
    (what the number means: the help, the tables' legends and the page print it)::

        class MyScorer(BaseScorer, name="mine", label="Mine", needs="source", config=MyConfig):
            '''What the number means, in one or two plain sentences.'''

            columns = (Column("mine", lambda r: r.value, "num3", "mine", "Mine"),)
    """

    name: ClassVar[str]
    label: ClassVar[str]
    needs: ClassVar[str]
    Config: ClassVar[type]
    description: ClassVar[str] = ""
    columns: ClassVar[tuple[Column, ...]] = ()

    def __init_subclass__(cls, *, name: str, label: str, needs: str, config: type, **kwargs):
        super().__init_subclass__(**kwargs)
        if needs not in NEEDS:
            raise ValueError(f"scorer {name!r}: needs must be one of {NEEDS}, got {needs!r}")
        if not getattr(config, "__dataclass_params__", None) or not config.__dataclass_params__.frozen:
            raise ValueError(f"scorer {name!r}: its config must be a frozen dataclass")
        cls.name, cls.label, cls.needs, cls.Config = name, label, needs, config
        cls.description = " ".join((cls.__doc__ or "").split())
        if not cls.description:
            raise ValueError(f"scorer {name!r}: its docstring says what its number means (help and reports print it)")

    def __init__(self, config=None):
        self.config = config if config is not None else self.Config()


def check_choice(field: str, value, choices) -> None:
    """A config value must be one of ``choices`` (a clear ValueError otherwise)."""
    if value not in choices:
        raise ValueError(f"{field} must be one of {', '.join(map(str, choices))}, got {value!r}")


def check_positive(config, *names: str) -> None:
    """Whole-number settings that must be at least 1."""
    for name in names:
        if getattr(config, name) < 1:
            raise ValueError(f"{name} must be at least 1, got {getattr(config, name)}")
