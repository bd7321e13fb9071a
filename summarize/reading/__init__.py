"""Reading documents: turn a file (.txt, .md, .html, .pdf, .docx), bytes in memory or text into
a ``Document``, an ordered tuple of headings, paragraphs and list items with plain,
whitespace-normalised text. Every failure is a one-line ``ReadError`` naming the document, the
problem and the fix; no library traceback escapes.

    >>> from summarize.reading import read
    >>> doc = read("report.pdf")                     # or read(data, name="notes.md")
    >>> doc.blocks[0].kind, doc.word_count

The package, one concern a module:

- ``entry``: ``read``, ``read_document``, ``parse_text`` (file checks, then the format's reader)
- ``formats``: the table of formats (name, extensions, reader, bytes or text)
- ``document``: ``Block``, ``Document``, ``ReadError`` and block-text cleaning
- ``decode``: bytes to text (byte-order marks, UTF-8, charset guess, binary refusal)
- ``txt``, ``markdown``, ``html``, ``pdf``, ``docx``: one reader per format, each
  ``parse(content, name) -> list[Block]``
- ``language``: ``looks_english`` and ``text_problem`` (can the English-only models use it)
- ``candidates``: ``read_candidates`` (summaries to score, from files, stdin or JSON lines)
"""

from __future__ import annotations

from summarize.reading.candidates import candidate_warnings, read_candidates
from summarize.reading.decode import decode_bytes
from summarize.reading.document import BLOCK_KINDS, Block, Document, ReadError, format_size
from summarize.reading.entry import parse_text, read, read_document
from summarize.reading.formats import EXTENSIONS, FORMATS
from summarize.reading.language import ASCII_SHARE_MIN, ENGLISH_THRESHOLD, looks_english, text_problem

MAX_BYTES = 50 * 1024 * 1024
"""Files larger than this are refused (read at call time, so tests may lower it)."""

__all__ = [
    "ASCII_SHARE_MIN",
    "BLOCK_KINDS",
    "Block",
    "candidate_warnings",
    "Document",
    "ENGLISH_THRESHOLD",
    "EXTENSIONS",
    "FORMATS",
    "MAX_BYTES",
    "ReadError",
    "decode_bytes",
    "format_size",
    "looks_english",
    "parse_text",
    "read",
    "read_candidates",
    "read_document",
    "text_problem",
]
