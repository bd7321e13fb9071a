"""The one table of document formats: each format's name, file extensions, reader module and
input kind, plus the conversion hints for extensions that are not supported.

``FORMATS``, ``EXTENSIONS`` and the "supported: ..." text in messages are derived from
``TABLE``, so a new format is one row here and one module beside this one that defines
``parse(content, name) -> list[Block]`` (``content`` is the decoded, newline-normalised text,
or the raw bytes when the row says ``binary``; ``name`` is how messages name the document).
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass


@dataclass(frozen=True)
class Format:
    """One readable format."""

    name: str  # the value of ``format=`` and ``Document.format``
    label: str  # what messages call it
    extensions: tuple[str, ...]  # lower-case, with the dot; "" = a file with no extension
    module: str  # the module of this package whose ``parse`` reads it
    binary: bool = False  # ``parse`` gets the bytes (True) or the decoded text (False)
    meta_charset: bool = False  # the bytes may declare their charset (<meta charset=...>)


TABLE = (
    Format("txt", "plain text", ("", ".txt", ".text"), "txt"),
    Format("md", "Markdown", (".md", ".markdown"), "markdown"),
    Format("html", "HTML", (".html", ".htm"), "html", meta_charset=True),
    Format("pdf", "PDF", (".pdf",), "pdf", binary=True),
    Format("docx", "DOCX", (".docx",), "docx", binary=True),
)

CONVERT_HINTS = {
    ".doc": "save it as .docx first",
    ".rtf": "save it as .docx or .txt first",
    ".odt": "save it as .docx first",
    ".pages": "export it as .docx or .pdf first",
    ".xhtml": "rename it to .html",
    ".mdown": "rename it to .md",
    ".mkd": "rename it to .md",
}
"""What to do with a file whose extension is not in ``TABLE`` (a common neighbour format)."""

BY_NAME = {row.name: row for row in TABLE}
FORMATS = tuple(BY_NAME)
EXTENSIONS = {suffix: row.name for row in TABLE for suffix in row.extensions}
TEXT_FORMATS = tuple(row.name for row in TABLE if not row.binary)


def _supported() -> str:
    listed = ", ".join(suffix for suffix in EXTENSIONS if suffix)
    bare = [row.label for row in TABLE if "" in row.extensions]
    return f"{listed} (no extension = {bare[0]})" if bare else listed


SUPPORTED = _supported()
"""The supported extensions as messages list them."""


def parser(row: Format):
    """The ``parse`` function of a format's module (imported on first use)."""
    return importlib.import_module(f"{__package__}.{row.module}").parse
