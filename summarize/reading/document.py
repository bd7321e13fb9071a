"""What reading produces and how it fails: ``Block`` and ``Document`` (the parsed result),
``ReadError`` (the one-line, user-facing reason a document can't be read), and the rule
every block's text follows (``clean``: single spaces, no invisible characters), applied by
the ``Sink`` each parser collects its blocks in.

Word counting has one rule in the whole project: whitespace-separated tokens, the same as
``wc -w`` (``Document.word_count``). Every block's text is already normalised to single
spaces, so counting a block, a section or the whole document gives consistent numbers.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

from scoring.text import count_words
from summarize.reading.formats import FORMATS

BLOCK_KINDS = ("heading", "paragraph", "item")

INVISIBLE = dict.fromkeys(map(ord, "\u00ad\u200b\u200c\u200d\u2060\ufeff\x00"), None)
"""Soft hyphen, zero-width characters, byte-order mark and NUL: dropped from all text."""


class ReadError(ValueError):
    """One-line, user-facing reason a file can't be read."""

    def __init__(self, message: str):
        super().__init__(" ".join(str(message).split()))


def reason(exc: BaseException) -> str:
    """A library exception as a short phrase for a ``ReadError`` message."""
    text = " ".join(str(exc).split()) or type(exc).__name__
    return text if len(text) <= 120 else text[:117] + "..."


def format_size(n: int) -> str:
    """A byte count as messages show it: "12 bytes", "3.4 KB", "51.0 MB"."""
    if n >= 1024 * 1024:
        return f"{n / (1024 * 1024):.1f} MB"
    if n >= 1024:
        return f"{n / 1024:.1f} KB"
    return f"{n} bytes"


@dataclass(frozen=True)
class Block:
    """One unit of document structure.

    ``kind`` is "heading", "paragraph" or "item"; ``text`` has no markup and single spaces;
    ``level`` is 1..6 for headings, the list nesting depth (1 = top level) for items, and 0
    for paragraphs.
    """

    kind: str
    text: str
    level: int = 0

    def __post_init__(self):
        if self.kind not in BLOCK_KINDS:
            raise ValueError(f"Block kind {self.kind!r} is unknown; use one of {', '.join(BLOCK_KINDS)}")
        if not isinstance(self.text, str):
            raise ValueError(f"Block text must be a str, not {type(self.text).__name__}")
        if self.kind == "heading" and not 1 <= self.level <= 6:
            raise ValueError(f"heading level {self.level} is out of range; use 1..6")
        if self.kind == "item" and self.level < 1:
            raise ValueError(f"item level {self.level} is out of range; use 1 or more")
        if self.kind == "paragraph" and self.level != 0:
            raise ValueError(f"paragraph level must be 0, not {self.level}")


@dataclass(frozen=True)
class Document:
    """A parsed document: its blocks in reading order plus where they came from.

    Documents returned by ``read_document`` and ``parse_text`` always have at least one block.
    """

    blocks: tuple[Block, ...]
    source: str | None = None
    format: str = "txt"
    encoding: str | None = None

    def __post_init__(self):
        if not isinstance(self.blocks, tuple):
            object.__setattr__(self, "blocks", tuple(self.blocks))
        if self.format not in FORMATS:
            raise ValueError(f"Document format {self.format!r} is unknown; use one of {', '.join(FORMATS)}")

    @functools.cached_property
    def text(self) -> str:
        """Block texts joined by a blank line."""
        return "\n\n".join(b.text for b in self.blocks)

    @functools.cached_property
    def word_count(self) -> int:
        """Whitespace-separated tokens, as ``wc -w`` counts them."""
        return count_words(self.text)

    def sections(self) -> list[tuple[Block | None, list[Block]]]:
        """Split at every heading: ``(heading, blocks under it)`` pairs in order.

        Text before the first heading comes first with ``None`` as its heading (only when
        there is such text). Headings are not nested: a level-2 heading starts a new section
        just as a level-1 heading does; use ``Block.level`` to rebuild a hierarchy.
        """
        result: list[tuple[Block | None, list[Block]]] = []
        heading: Block | None = None
        body: list[Block] = []
        for block in self.blocks:
            if block.kind == "heading":
                if heading is not None or body:
                    result.append((heading, body))
                heading, body = block, []
            else:
                body.append(block)
        if heading is not None or body:
            result.append((heading, body))
        return result


def clean(text: str) -> str:
    """Collapse all whitespace to single spaces and drop invisible characters."""
    return " ".join(text.translate(INVISIBLE).split())


class Sink:
    """Collects blocks, dropping those whose text is empty after cleaning."""

    def __init__(self):
        self.blocks: list[Block] = []

    def add(self, kind: str, text: str, level: int = 0) -> None:
        text = clean(text)
        if not text:
            return
        if kind == "heading":
            level = min(max(level, 1), 6)
        elif kind == "item":
            level = max(level, 1)
        else:
            level = 0
        self.blocks.append(Block(kind, text, level))

    @property
    def last_kind(self) -> str | None:
        return self.blocks[-1].kind if self.blocks else None
