"""Reading documents: turn a file (.txt, .md, .html, .pdf, .docx) or in-memory text into a
``Document``, an ordered tuple of headings, paragraphs and list items with plain,
whitespace-normalised text.

This module owns everything between "a path the user typed" and "clean blocks of text":
file checks (missing, directory, permission, size, empty, binary), text decoding (BOMs,
UTF-8, a charset guess), one parser per format, and the one-line ``ReadError`` that explains
what went wrong and how to fix it. No library traceback escapes ``read_document``.

Word counting has one rule in the whole project: whitespace-separated tokens, the same as
``wc -w`` (``Document.word_count``). Every block's text is already normalised to single
spaces, so counting a block, a section or the whole document gives consistent numbers.

The plain-text and PDF layouts carry no markup, so headings, list items and paragraph
breaks are recovered with rules of thumb (documented on ``_parse_plain``); Markdown, HTML
and DOCX carry structure and are parsed from it.
"""

from __future__ import annotations

import codecs
import contextlib
import functools
import html
import os
import re
import unicodedata
from dataclasses import dataclass
from pathlib import Path

MAX_BYTES = 50 * 1024 * 1024
"""Files larger than this are refused (read at call time, so tests may lower it)."""

BLOCK_KINDS = ("heading", "paragraph", "item")
FORMATS = ("txt", "md", "html", "pdf", "docx")

EXTENSIONS = {
    "": "txt",
    ".txt": "txt",
    ".text": "txt",
    ".md": "md",
    ".markdown": "md",
    ".html": "html",
    ".htm": "html",
    ".pdf": "pdf",
    ".docx": "docx",
}
_SUPPORTED = ".txt, .text, .md, .markdown, .html, .htm, .pdf, .docx (no extension = plain text)"
_CONVERT_HINTS = {
    ".doc": "save it as .docx first",
    ".rtf": "save it as .docx or .txt first",
    ".odt": "save it as .docx first",
    ".pages": "export it as .docx or .pdf first",
    ".xhtml": "rename it to .html",
    ".mdown": "rename it to .md",
    ".mkd": "rename it to .md",
}

_BINARY_SNIFF = 8192
_CONTROL_SHARE_LIMIT = 0.10  # more than 10% control characters in the first 8 KB = binary

ENGLISH_THRESHOLD = 0.12
"""``looks_english`` says yes when at least this share of word tokens are common English
function words (a list of about 140). Ordinary English prose scores about 0.25-0.45, even
reports dense with names and figures; French, German, Spanish, Dutch or Polish prose scores
below 0.05. A rule of thumb, not language
identification: lists of names, numbers or very short texts can fall either way."""
_ENGLISH_SAMPLE = 2000
_ENGLISH_MIN_TOKENS = 20


class ReadError(ValueError):
    """One-line, user-facing reason a file can't be read."""

    def __init__(self, message: str):
        super().__init__(" ".join(str(message).split()))


# --------------------------------------------------------------------------------------------
# Result types
# --------------------------------------------------------------------------------------------


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
        return len(self.text.split())

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


# --------------------------------------------------------------------------------------------
# Public entry points
# --------------------------------------------------------------------------------------------


def read(source, format: str | None = None, *, name: str | None = None) -> Document:
    """Read a document from a path or from bytes already in memory.

    ``format`` ("txt", "md", "html", "pdf", "docx") chooses the parser; without it the
    extension of the path, or of ``name`` for bytes, decides (no extension = plain text).
    ``name`` is what messages and ``Document.source`` call the bytes (e.g. a path relative to
    a batch folder). Raises ``ReadError`` as ``read_document`` does.
    """
    if not isinstance(source, (bytes, bytearray, memoryview)):
        return read_document(source, format=format)
    label = name if name is not None else "the data"
    fmt = format or _format_of(Path(label).suffix.lower() if name is not None else "", f"'{label}'")
    data = bytes(source)
    if len(data) > MAX_BYTES:
        raise ReadError(f"'{label}' is too large ({format_size(len(data))}, limit {format_size(MAX_BYTES)}); "
                        "split it or trim it first")
    return _from_bytes(data, fmt, name, f"'{label}'")


def _format_of(suffix: str, name: str) -> str:
    fmt = EXTENSIONS.get(suffix)
    if fmt is None:
        hint = _CONVERT_HINTS.get(suffix, "convert it to one of those")
        raise ReadError(f"{name} has an unsupported file type '{suffix}'; supported: {_SUPPORTED}; {hint}")
    return fmt


def read_document(path, format: str | None = None) -> Document:
    """Read a file into a ``Document``, choosing the parser by ``format`` or else the file's extension.

    Raises ``ReadError`` (one line, naming the file, the problem and the fix) for a missing
    file, a directory, a permission problem, an empty, binary, oversized or undecodable file,
    an unsupported extension, and a damaged, encrypted or image-only PDF or DOCX.
    """
    source = os.fspath(path)
    if isinstance(source, bytes):
        source = os.fsdecode(source)
    p = Path(source)
    name = f"'{source}'"
    try:
        if not p.exists():
            raise ReadError(f"{name} was not found; check the path and the spelling")
        if p.is_dir():
            raise ReadError(f"{name} is a directory, not a file; give the path of one document ({_SUPPORTED})")
        if not p.is_file():
            raise ReadError(f"{name} is not a regular file; give the path of a saved document")
        fmt = format or _format_of(p.suffix.lower(), name)
        limit = MAX_BYTES
        size = p.stat().st_size
        if size > limit:
            raise ReadError(f"{name} is too large ({format_size(size)}, limit {format_size(limit)}); split it or trim it first")
        with open(p, "rb") as fh:
            data = fh.read(limit + 1)
    except ReadError:
        raise
    except PermissionError:
        raise ReadError(f"{name} cannot be opened: permission denied; check the file's permissions") from None
    except ValueError as exc:  # e.g. a NUL character in the path
        raise ReadError(f"{name} is not a usable path ({_reason(exc)}); check the path") from None
    except OSError as exc:
        raise ReadError(f"{name} cannot be read ({_reason(exc)}); check the path and the disk") from None
    if len(data) > limit:
        raise ReadError(f"{name} is too large (over {format_size(limit)}); split it or trim it first")
    return _from_bytes(data, fmt, source, name)


def _from_bytes(data: bytes, fmt: str, source: str | None, name: str) -> Document:
    """Parse a document's bytes in a known format; ``name`` is how messages name it."""
    if fmt not in FORMATS:
        raise ReadError(f"{name}: unknown format {fmt!r}; choose one of {', '.join(FORMATS)}")
    if not data.strip():
        raise ReadError(f"{name} is empty; give a file that contains text")
    if fmt == "pdf":
        return Document(_read_pdf(data, name), source=source, format="pdf")
    if fmt == "docx":
        return Document(_read_docx(data, name), source=source, format="docx")

    hint = _html_declared_charset(data) if fmt == "html" else None
    text, encoding = _decode(data, name, hint)
    return _parse(text, fmt, source, encoding, name)


def parse_text(text: str, format: str = "txt", source=None) -> Document:
    """Parse text already in memory. ``format`` is "txt", "md" or "html".

    Raises ``ReadError`` when the text is empty or has no readable content.
    """
    if not isinstance(text, str):
        raise ReadError(f"parse_text needs a str, not {type(text).__name__}; decode bytes with decode_bytes first")
    if format not in ("txt", "md", "html"):
        raise ReadError(
            f"parse_text cannot parse format {format!r}; use 'txt', 'md' or 'html' "
            "(read PDF and DOCX files with read_document)"
        )
    if source is None or isinstance(source, str):
        src = source
    elif isinstance(source, (bytes, os.PathLike)):
        src = os.fsdecode(source)
    else:
        src = str(source)
    name = f"'{src}'" if src is not None else "the input text"
    return _parse(text, format, src, None, name)


def decode_bytes(data: bytes) -> tuple[str, str]:
    """Decode file bytes to text; returns ``(text, encoding)``.

    Order: a byte-order mark (UTF-32, UTF-8, UTF-16) wins; then strict UTF-8; then
    charset-normalizer's best guess. Binary data (a NUL byte in the first 8 KB, or more than
    10% control characters) and undecodable data raise ``ReadError``.
    """
    return _decode(bytes(data), "the data", None)


def looks_english(text: str) -> bool:
    """Cheap rule of thumb: is ``text`` probably English?

    Looks at the first ~2000 word tokens and measures the share that are very common English
    function words (a stop list of about 140 words). True when that share is at least
    ``ENGLISH_THRESHOLD`` (0.12). Texts with fewer than 20 word tokens give True, since there
    is too little evidence to refuse them. Not a language identifier: use it to warn.
    """
    tokens = []
    for match in _WORD_RE.finditer(text):
        tokens.append(match.group(0).lower().replace("\u2019", "'"))
        if len(tokens) >= _ENGLISH_SAMPLE:
            break
    if len(tokens) < _ENGLISH_MIN_TOKENS:
        return True
    hits = sum(1 for t in tokens if t in _ENGLISH_FUNCTION_WORDS)
    return hits / len(tokens) >= ENGLISH_THRESHOLD


ASCII_SHARE_MIN = 0.5
"""A file that is not valid UTF-8 is decoded with a guessed legacy encoding; when fewer than
half of the resulting non-space characters are ASCII the guess produced something that is not
English (English in cp1252 or Latin-1 is about 97-100% ASCII; random bytes read as big5 or
cp1251 score under 10%), and the record says so instead of summarizing noise."""

_UTF = frozenset({"utf-8", "utf-8-sig", "utf-16", "utf-32", "ascii"})


def text_problem(document: "Document", name: str, any_language: bool) -> tuple[str | None, list[str]]:
    """Whether boildown's English-only models can use a document's text: (the one-line reason
    to refuse it or None, warnings). ``name`` is how the message names the document. Text read
    with a guessed legacy encoding gets a warning, and is refused when the guess gave mostly
    non-ASCII text; text that does not look English is refused unless ``any_language``."""
    text = document.text
    warnings = []
    guessed = document.encoding is not None and document.encoding.lower() not in _UTF
    if guessed:
        visible = [c for c in text[:20000] if not c.isspace()]
        share = sum(1 for c in visible if c.isascii()) / max(1, len(visible))
        if share < ASCII_SHARE_MIN and not any_language:
            return (f"{name} is not valid UTF-8, and read as {document.encoding} (the closest guess) it does not "
                    "look like English text; re-save it as UTF-8 (or pass --any-language to use it anyway)"), warnings
        warnings.append(f"not valid UTF-8: read as {document.encoding} (a guess); check accented characters")
    if not any_language and not looks_english(text):
        read_as = f" (read as {document.encoding}: it is not valid UTF-8)" if guessed else ""
        return (f"{name} does not look like English text{read_as}; boildown's models are English-only "
                "(pass --any-language to use it anyway)"), warnings
    return None, warnings


_WORD_RE = re.compile(r"[^\W\d_]+(?:['\u2019][^\W\d_]+)*")
# Function words that are frequent in English and rare as whole words in the other major
# Latin-script languages (so "a", "i", "in", "on", "is", "as", "an", "do", "no", "so", "also",
# "will", "was", "over" are left out).
_ENGLISH_FUNCTION_WORDS = frozenset(
    """
    the of and to that for with by at from this be are were been being have has had having
    it its it's they them their there these those him his she her hers we our ours you your
    yours my mine what which who whom whose when where why how not nor or but if then than
    because while though although would should could can shall may might must does did done
    any all some each every other such only very more into onto upon about after before
    between through during against without within up out off again further here just now
    one two both few many much own same too until yet whether however therefore itself
    themselves himself herself ourselves yourself isn't aren't wasn't weren't don't doesn't
    didn't won't can't couldn't shouldn't wouldn't i'm we're they're you're that's there's
    """.split()
)


# --------------------------------------------------------------------------------------------
# Decoding
# --------------------------------------------------------------------------------------------

_BOMS = (
    (codecs.BOM_UTF32_LE, "utf-32"),
    (codecs.BOM_UTF32_BE, "utf-32"),
    (codecs.BOM_UTF8, "utf-8-sig"),
    (codecs.BOM_UTF16_LE, "utf-16"),
    (codecs.BOM_UTF16_BE, "utf-16"),
)
_ALLOWED_CONTROLS = frozenset("\t\n\r\f\v")


def _decode(data: bytes, name: str, hint: str | None) -> tuple[str, str]:
    if not data:
        return "", "utf-8"
    for bom, encoding in _BOMS:
        if data.startswith(bom):
            try:
                text = data.decode(encoding)
            except UnicodeDecodeError:
                raise ReadError(
                    f"{name} starts with a {encoding.upper()} byte-order mark but is not valid {encoding.upper()}; "
                    "re-save it as UTF-8"
                ) from None
            _refuse_control_heavy(text[:_BINARY_SNIFF], name)
            return text, encoding

    head = data[:_BINARY_SNIFF]
    if b"\x00" in head:
        raise ReadError(f"{name} looks like a binary file (it contains NUL bytes), not text; give a text document")
    controls = sum(1 for b in head if (b < 32 and chr(b) not in _ALLOWED_CONTROLS) or b == 127)
    if controls > _CONTROL_SHARE_LIMIT * len(head):
        raise ReadError(f"{name} looks like a binary file (many control characters), not text; give a text document")

    try:
        return data.decode("utf-8"), "utf-8"
    except UnicodeDecodeError:
        pass

    if hint:
        for candidate in _charset_candidates(hint):
            try:
                return data.decode(candidate), candidate
            except (UnicodeDecodeError, LookupError):
                continue

    try:
        guess = _guess_encoding(data)
    except Exception as exc:  # a library failure must not escape as a traceback
        raise ReadError(f"{name} could not be decoded ({_reason(exc)}); re-save it as UTF-8") from None
    if guess is None:
        raise ReadError(f"{name} is not in a text encoding that could be recognised; re-save it as UTF-8")
    text, encoding = guess
    _refuse_control_heavy(text[:_BINARY_SNIFF], name)
    return text, encoding


def _guess_encoding(data: bytes) -> tuple[str, str] | None:
    """charset-normalizer's best guess, with one correction: on short Western European text
    it often ties cp1250/cp1257 with cp1252 (or decodes to identical text), and then
    picks an Eastern European label; Windows-1252 is far more common, so it wins ties."""
    from charset_normalizer import from_bytes

    matches = list(from_bytes(data))
    if not matches:
        return None
    best = matches[0]
    text = str(best)
    try:
        western = data.decode("cp1252")
    except UnicodeDecodeError:
        western = None
    if western is not None and best.encoding != "cp1252":
        tied = any(
            m.encoding == "cp1252" and m.chaos <= best.chaos + 0.01 and m.coherence >= best.coherence - 0.05
            for m in matches
        )
        if tied or western == text:
            return western, "cp1252"
    return text, best.encoding


def _refuse_control_heavy(sample: str, name: str) -> None:
    if not sample:
        return
    if "\x00" in sample:
        raise ReadError(f"{name} looks like a binary file (it contains NUL characters), not text; give a text document")
    controls = sum(
        1 for c in sample if c not in _ALLOWED_CONTROLS and unicodedata.category(c) == "Cc"
    )
    if controls > _CONTROL_SHARE_LIMIT * len(sample):
        raise ReadError(f"{name} looks like a binary file (many control characters), not text; give a text document")


def _charset_candidates(label: str) -> list[str]:
    label = label.strip().lower()
    # As browsers do: Latin-1 and ASCII labels mean Windows-1252 in practice.
    if label in ("iso-8859-1", "iso8859-1", "latin1", "latin-1", "l1", "us-ascii", "ascii", "windows-1252", "cp1252"):
        return ["cp1252", "latin-1"]
    try:
        return [codecs.lookup(label).name]
    except LookupError:
        return []


_META_CHARSET_RE = re.compile(rb"""<meta[^>]+charset\s*=\s*["']?\s*([A-Za-z0-9_.:-]+)""", re.IGNORECASE)


def _html_declared_charset(data: bytes) -> str | None:
    match = _META_CHARSET_RE.search(data[:4096])
    return match.group(1).decode("ascii", "ignore") if match else None


# --------------------------------------------------------------------------------------------
# Shared text helpers
# --------------------------------------------------------------------------------------------

_INVISIBLE = dict.fromkeys(map(ord, "\u00ad\u200b\u200c\u200d\u2060\ufeff\x00"), None)


def _clean(text: str) -> str:
    """Collapse all whitespace to single spaces and drop invisible characters."""
    return " ".join(text.translate(_INVISIBLE).split())


def _prepare(text: str) -> str:
    """Normalise newlines, Unicode composition and invisible characters before parsing."""
    text = text.replace("\r\n", "\n").replace("\r", "\n").replace("\f", "\n\n")
    text = text.replace("\u2028", "\n").replace("\u2029", "\n\n")
    return unicodedata.normalize("NFC", text.translate(_INVISIBLE))


class _Sink:
    """Collects blocks, dropping those whose text is empty after cleaning."""

    def __init__(self):
        self.blocks: list[Block] = []

    def add(self, kind: str, text: str, level: int = 0) -> None:
        text = _clean(text)
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


def _parse(text: str, fmt: str, source: str | None, encoding: str | None, name: str) -> Document:
    if not text.strip():
        raise ReadError(f"{name} is empty; give text to read")
    try:
        if fmt == "md":
            blocks = _parse_markdown(_prepare(text))
        elif fmt == "html":
            blocks = _parse_html(_prepare(text))
        else:
            blocks = _parse_plain(_prepare(text))
    except ReadError:
        raise
    except RecursionError:
        raise ReadError(f"{name} is nested too deeply to parse; simplify or convert it to plain text") from None
    except Exception as exc:  # never let a parser traceback escape
        raise ReadError(f"{name} could not be parsed as {fmt} ({_reason(exc)}); try saving it as plain text") from None
    if not blocks:
        raise ReadError(f"{name} contains no readable text (only markup, code or hidden content)")
    return Document(tuple(blocks), source=source, format=fmt, encoding=encoding)


def _reason(exc: BaseException) -> str:
    text = " ".join(str(exc).split()) or type(exc).__name__
    return text if len(text) <= 120 else text[:117] + "..."


def format_size(n: int) -> str:
    if n >= 1024 * 1024:
        return f"{n / (1024 * 1024):.1f} MB"
    if n >= 1024:
        return f"{n / 1024:.1f} KB"
    return f"{n} bytes"


# --------------------------------------------------------------------------------------------
# Plain text (also used for text extracted from PDFs)
# --------------------------------------------------------------------------------------------

_SEPARATOR_RE = re.compile(r"^(?:([=\-_*~#+])\1{2,}|(?:[*\-_] ){2,}[*\-_])$")
_BULLET_RE = re.compile(
    r"^(?P<indent>\s*)(?P<marker>[-*\u2022\u25e6\u2023\u25aa\u2013\u00b7]|\(?[a-z]\)|\(?[ivx]{2,4}\)|\(?\d{1,3}\)|\d{1,3}\.)"
    r"\s+(?P<text>\S.*)$"
)
_MULTI_NUMBER_RE = re.compile(r"^(?P<num>\d{1,3}(?:\.\d{1,3})+)\.?\s+(?P<text>\S.*)$")
_SENTENCE_END_RE = re.compile(r"[.!?:;][\"'\u201d\u2019)\]]*$")
_HEADING_BAD_END = (".", ",", ";", "!", "?")


def _alpha_share(s: str) -> float:
    visible = [c for c in s if not c.isspace()]
    return sum(c.isalpha() for c in visible) / len(visible) if visible else 0.0


def _is_caps_heading(s: str) -> bool:
    letters = [c for c in s if c.isalpha()]
    return (
        len(letters) >= 3
        and any(c.isupper() for c in letters)
        and not any(c.islower() for c in letters)
        and len(s.split()) <= 12
        and len(s) <= 100
        and not s.endswith(_HEADING_BAD_END)
        and _alpha_share(s) >= 0.5
    )


def _title_ok(t: str, max_words: int = 12) -> bool:
    """Could ``t`` (the words after a section number) be a heading title?"""
    t = t.strip()
    return (
        bool(t)
        and t[0].isupper()
        and len(t.split()) <= max_words
        and len(t) <= 100
        and not t.endswith(_HEADING_BAD_END)
        and _alpha_share(t) >= 0.5
    )


def _generic_heading_ok(s: str) -> bool:
    """A short unmarked line that may be a heading when it stands on its own."""
    return (
        _title_ok(s, max_words=10)
        and len(s) <= 80
        and not s.endswith(":")
        and ": " not in s
        and not _BULLET_RE.match(s)
        and not _SEPARATOR_RE.match(s)
    )


def _split_blank(text: str) -> list[list[str]]:
    blocks: list[list[str]] = []
    current: list[str] = []
    for line in text.split("\n"):
        line = line.expandtabs(4).rstrip()
        if line.strip():
            current.append(line)
        elif current:
            blocks.append(current)
            current = []
    if current:
        blocks.append(current)
    return blocks


def _first_word(s: str) -> str:
    parts = s.split(None, 1)
    return parts[0] if parts else ""


def _reflow(lines: list[str]) -> list[str]:
    """Split a run of lines (no blank lines) into paragraphs and join hard-wrapped lines.

    The block is "wrapped" when, at most breaks, the next line's first word would not have
    fitted on the line (the longest line gives the width). Wrapped blocks are joined, except
    at a break after a clearly short line (the next word would fit within 90% of the width)
    followed by a line that does not start in lower case: that is a paragraph end. Ragged
    blocks (addresses, name lists, "Key: value" lines) keep each line as its own paragraph,
    unless the next line starts in lower case (a continuation).
    """
    stripped = [line.strip() for line in lines]
    if len(stripped) == 1:
        return stripped
    width = max(len(s) for s in stripped)
    indents = [len(line) - len(line.lstrip()) for line in lines]
    base_indent = min(indents)

    def fits(cur: str, nxt: str, slack: float) -> bool:
        return len(cur) + 1 + len(_first_word(nxt)) <= width * slack

    breaks = len(stripped) - 1
    fitting = sum(1 for i in range(breaks) if fits(stripped[i], stripped[i + 1], 1.0))
    # Wrapped prose nearly always has some break inside a sentence; a column of lines that
    # all start with a capital and end cleanly is a list, even when the lines are long.
    soft = sum(1 for i in range(breaks) if _soft_break(stripped[i], stripped[i + 1]))
    wrapped = width >= 30 and fitting * 2 <= breaks and (breaks < 2 or soft > 0)

    paragraphs: list[list[str]] = [[stripped[0]]]
    for i in range(breaks):
        cur, nxt = stripped[i], stripped[i + 1]
        if _soft_break(cur, nxt):
            hard = False  # a continuation, whatever the layout
        elif wrapped:
            hard = (fits(cur, nxt, 0.9) and not nxt[:1].islower()) or (
                indents[i + 1] > base_indent and indents[i] == base_indent and _SENTENCE_END_RE.search(cur) is not None
            )
        else:
            hard = True
        if hard:
            paragraphs.append([nxt])
        else:
            paragraphs[-1].append(nxt)
    return [_join_lines(p) for p in paragraphs]


def _join_lines(lines: list[str]) -> str:
    """Join wrapped lines with spaces; a line ending in a hyphen after a letter is joined to
    a next line starting with a letter without a space ("long-" + "term" = "long-term")."""
    out = lines[0]
    for line in lines[1:]:
        if len(out) >= 2 and out[-1] == "-" and out[-2].isalpha() and line[:1].isalpha():
            out += line
        else:
            out += " " + line
    return out


_CONTINUES_RE = re.compile(r"(?:[,\-\u2013\u2014(/&]|\b(?:and|or|of|the|a|an|to|in|for|with|by|on|at|from|that|which))$")


def _soft_break(cur: str, nxt: str) -> bool:
    """Does the line break fall inside a sentence (next word lower case, or the line ends
    with a comma, dash or a word that cannot end a sentence)?"""
    return nxt[:1].islower() or _CONTINUES_RE.search(cur) is not None


def _parse_plain(text: str) -> list[Block]:
    """Plain-text rules of thumb (also applied to text extracted from PDFs).

    * Blocks are separated by blank lines; lines of ===, ---, *** etc. are dropped, except
      that === / --- under a line turns it into a heading (level 1 / 2).
    * Headings: ALL-CAPS short lines (level 1); numbered lines "1. Title" (level 1) or
      "2.3 Title" (level = number of parts) whose title starts with a capital and has no final
      full stop; and a short line with no final punctuation standing alone between blank
      lines, or starting a block whose remaining lines are a wrapped paragraph (level 2).
      A "1. Title" line is a list item instead when it continues a numbered list or the next
      line is a list item.
    * Items: lines starting with -, *, bullet characters, "1." / "1)" / "a)" / "(a)" /
      "(iv)"; nesting depth from indentation; following unmarked lines continue the item.
    * Everything else is paragraphs, with hard-wrapped lines joined (see ``_reflow``).
    """
    sink = _Sink()
    raw_blocks = _split_blank(text)
    stack: list[int] = []  # marker indents of the open list levels
    last_number: list[int | None] = [None]  # number of the last numbered item emitted

    def item_level(indent: int) -> int:
        while stack and indent < stack[-1]:
            stack.pop()
        if not stack or indent > stack[-1]:
            stack.append(indent)
        return len(stack)

    for bi, lines in enumerate(raw_blocks):
        has_next = bi + 1 < len(raw_blocks)
        next_first = raw_blocks[bi + 1][0].strip() if has_next else ""
        pending: list[str] = []
        item: list | None = None  # [level, parts]

        def flush_pending():
            if pending:
                for para in _reflow(pending):
                    sink.add("paragraph", para)
                pending.clear()
                stack.clear()
                last_number[0] = None

        def flush_item():
            nonlocal item
            if item is not None:
                sink.add("item", _join_lines(item[1]), item[0])
                item = None

        def heading(text_: str, level: int):
            flush_item()
            flush_pending()
            sink.add("heading", text_, level)
            stack.clear()
            last_number[0] = None

        start = 0
        first = lines[0].strip()
        if (
            _generic_heading_ok(first)
            and not _is_caps_heading(first)
            and not _MULTI_NUMBER_RE.match(first)
            and (len(lines) == 1 and has_next or len(lines) > 1 and _rest_is_body(lines[1:], first))
        ):
            heading(first, 2)
            start = 1

        for li in range(start, len(lines)):
            line = lines[li]
            s = line.strip()
            nxt = lines[li + 1].strip() if li + 1 < len(lines) else None
            at_break = (item is None and not pending) or (
                bool(pending) and _SENTENCE_END_RE.search(pending[-1]) is not None and item is None
            )

            if _SEPARATOR_RE.match(s):
                if s[0] in "=-" and item is None and pending and len(pending[-1].split()) <= 15 and not pending[-1].strip().endswith("."):
                    title = pending.pop().strip()
                    heading(title, 1 if s[0] == "=" else 2)
                else:
                    flush_item()
                    flush_pending()
                continue

            multi = _MULTI_NUMBER_RE.match(s)
            if multi and at_break and _title_ok(multi.group("text")):
                heading(s, min(multi.group("num").count(".") + 1, 6))
                continue

            bullet = _BULLET_RE.match(line)
            if bullet:
                marker, body = bullet.group("marker"), bullet.group("text")
                number = int(marker[:-1]) if marker.endswith(".") and marker[:-1].isdigit() else None
                if number is not None and at_break and _title_ok(body):
                    next_is_item = bool(_BULLET_RE.match(nxt)) if nxt is not None else (
                        li == len(lines) - 1 and _numbered_next(next_first, number)
                    )
                    continues_list = last_number[0] == number - 1 and (sink.last_kind == "item" or item is not None)
                    if not next_is_item and not continues_list:
                        heading(s, 1)
                        continue
                flush_item()
                flush_pending()
                item = [item_level(len(bullet.group("indent"))), [body]]
                last_number[0] = number
                continue

            if at_break and _is_caps_heading(s):
                heading(s, 1)
                continue

            if item is not None:
                item[1].append(s)
            else:
                pending.append(line)

        flush_item()
        flush_pending()
    return sink.blocks


def _numbered_next(next_first: str, number: int) -> bool:
    m = _BULLET_RE.match(next_first)
    return bool(m) and m.group("marker") == f"{number + 1}."


def _rest_is_body(rest: list[str], first: str) -> bool:
    """Do the lines after a candidate heading look like a paragraph of running text?"""
    stripped = [r.strip() for r in rest]
    if _BULLET_RE.match(stripped[0]) or _is_caps_heading(stripped[0]):
        return False
    width = max(len(s) for s in stripped)
    if width < 2 * len(first) or width < 40:
        return False
    if len(stripped) == 1:
        return _SENTENCE_END_RE.search(stripped[0]) is not None
    paras = _reflow(rest)
    return len(paras) < len(stripped)


# --------------------------------------------------------------------------------------------
# Markdown
# --------------------------------------------------------------------------------------------

_FENCE_RE = re.compile(r"^\s*(`{3,}|~{3,})(.*)$")
_ATX_RE = re.compile(r"^ {0,3}(#{1,6})(?:[ \t]+(.*?))?(?:[ \t]+#+)?[ \t]*$")
_SETEXT_RE = re.compile(r"^ {0,3}(=+|-+)[ \t]*$")
_HR_RE = re.compile(r"^ {0,3}([-*_])(?:[ \t]*\1){2,}[ \t]*$")
_MD_ITEM_RE = re.compile(r"^(?P<indent> *)(?P<marker>[-*+]|\d{1,9}[.)])(?:[ \t]+(?P<text>.*))?$")
_TASK_RE = re.compile(r"^\[[ xX]\]\s+")
_TABLE_DELIM_RE = re.compile(r"^\s*\|?\s*:?-+:?\s*(?:\|\s*:?-+:?\s*)*\|?\s*$")
_LINKDEF_RE = re.compile(r"^ {0,3}\[[^\]^]+\]:\s*\S+")
_FOOTDEF_RE = re.compile(r"^ {0,3}\[\^[^\]]+\]:\s*")
_RAW_BLOCK_RE = re.compile(r"^ {0,3}<(script|style|pre|textarea)(?:\s|>|$)", re.IGNORECASE)
_QUOTE_RE = re.compile(r"^ {0,3}> ?")
_COMMENT_RE = re.compile(r"<!--.*?-->", re.DOTALL)
_HEADING_ID_RE = re.compile(r"\s*\{#[^}]*\}\s*$")

_MD_ESCAPE_RE = re.compile(r"\\([!\"#$%&'()*+,\-./:;<=>?@\[\\\]^_`{|}~])")
_MD_CODE_RE = re.compile(r"(`+)(.+?)(?<!`)\1(?!`)")
_MD_AUTOLINK_RE = re.compile(r"<((?:https?|ftp|mailto):[^\s<>]+|[^\s<>@]+@[^\s<>@]+\.[A-Za-z]+)>")
_MD_IMAGE_RE = re.compile(r"!\[[^\[\]]*\](?:\((?:[^()\s]|\([^()]*\))*(?:\s+[\"'(][^\n]*?[\"')])?\s*\)|\[[^\[\]]*\])")
_MD_LINK_RE = re.compile(r"\[([^\[\]]*)\]\((?:[^()\s]|\([^()]*\))*(?:\s+[\"'(][^\n]*?[\"')])?\s*\)")
_MD_REFLINK_RE = re.compile(r"\[([^\[\]]+)\]\[[^\[\]]*\]")
_MD_FOOTREF_RE = re.compile(r"\[\^[^\[\]]+\]")
_MD_TAG_RE = re.compile(r"</?[A-Za-z][A-Za-z0-9-]*(?:\s[^<>]*)?/?>")
# Spans are bounded (500 characters) so that unmatched markers cannot make this quadratic.
_MD_EMPHASIS = (
    re.compile(r"\*\*(?=\S)(.{1,500}?)(?<=\S)\*\*"),
    re.compile(r"(?<!\w)__(?=\S)(.{1,500}?)(?<=\S)__(?!\w)"),
    re.compile(r"(?<![*\w])\*(?=[^\s*])(.{1,500}?)(?<=[^\s*])\*(?![*\w])"),
    re.compile(r"(?<![_\w])_(?=[^\s_])(.{1,500}?)(?<=[^\s_])_(?![_\w])"),
    re.compile(r"~~(?=\S)(.{1,500}?)(?<=\S)~~"),
)


def _md_inline(text: str) -> str:
    """Strip inline Markdown: code backticks, emphasis, links (keep text), images (drop)."""
    saved: list[str] = []

    def keep(s: str) -> str:
        saved.append(s)
        return f"\x00{len(saved) - 1}\x00"

    text = _MD_CODE_RE.sub(lambda m: keep(m.group(2).strip()), text)  # code spans first: no escapes inside
    text = _MD_ESCAPE_RE.sub(lambda m: keep(m.group(1)), text)
    text = _MD_AUTOLINK_RE.sub(lambda m: keep(m.group(1)), text)
    text = _MD_IMAGE_RE.sub("", text)
    text = _MD_FOOTREF_RE.sub("", text)
    for _ in range(3):  # links may contain emphasis and vice versa
        text = _MD_LINK_RE.sub(r"\1", text)
        text = _MD_REFLINK_RE.sub(r"\1", text)
    text = _MD_TAG_RE.sub(lambda m: " " if m.group(0).lower().startswith("<br") else "", text)
    for _ in range(4):
        before = text
        for pattern in _MD_EMPHASIS:
            text = pattern.sub(r"\1", text)
        if text == before:
            break
    text = html.unescape(text)
    for _ in range(3):  # an autolink may hold an escaped character's placeholder
        if "\x00" not in text:
            break
        text = re.sub(r"\x00(\d+)\x00", lambda m: saved[int(m.group(1))], text)
    return _clean(text)


def _strip_front_matter(lines: list[str]) -> list[str]:
    if lines and lines[0].strip() in ("---", "+++"):
        closers = ("---", "...") if lines[0].strip() == "---" else ("+++",)
        for j in range(1, min(len(lines), 500)):
            if lines[j].strip() in closers:
                return lines[j + 1 :]
    return lines


def _split_cells(row: str) -> list[str]:
    row = row.strip()
    if row.startswith("|"):
        row = row[1:]
    if row.endswith("|") and not row.endswith("\\|"):
        row = row[:-1]
    return [cell.replace("\\|", "|") for cell in re.split(r"(?<!\\)\|", row)]


def _parse_markdown(text: str) -> list[Block]:
    """CommonMark-like block parsing for the constructs documents use.

    Kept: ATX and setext headings, paragraphs, list items (nesting from the marker's
    indentation: deeper than the parent's marker = child), block quotes (as ordinary text),
    tables (one paragraph per row, cells joined by "; ", header row included).
    Dropped: front matter, fenced and indented code, HTML comments, raw <script>, <style>,
    <pre> and <textarea> blocks, thematic breaks, link reference definitions.
    """
    sink = _Sink()
    lines = _strip_front_matter(text.split("\n"))
    para: list[str] = []
    item: dict | None = None
    stack: list[int] = []
    fence: tuple[str, int] | None = None
    raw_close: str | None = None
    in_comment = False
    in_code = False
    prev_blank = True
    item_blank = False

    def flush_para():
        if para:
            sink.add("paragraph", _md_inline(" ".join(p.strip().rstrip("\\") for p in para)))
            para.clear()

    def flush_item():
        nonlocal item
        if item is not None:
            sink.add("item", _md_inline(" ".join(item["parts"])), item["level"])
            item = None

    def end_list():
        flush_item()
        stack.clear()

    i = 0
    n = len(lines)
    while i < n:
        raw = lines[i].expandtabs(4)
        i += 1

        if fence is not None:
            m = _FENCE_RE.match(raw)
            if m and m.group(1)[0] == fence[0] and len(m.group(1)) >= fence[1] and not m.group(2).strip():
                fence = None
            continue
        if raw_close is not None:
            if raw_close in raw.lower():
                raw_close = None
            continue
        if in_comment:
            end = raw.find("-->")
            if end < 0:
                continue
            in_comment = False
            raw = raw[end + 3 :]
            if not raw.strip():
                continue
        if "<!--" in raw:
            raw = _COMMENT_RE.sub("", raw)
            if "<!--" in raw:
                raw = raw[: raw.index("<!--")]
                in_comment = True
            if not raw.strip():
                continue

        line = raw
        while True:
            m = _QUOTE_RE.match(line)
            if not m:
                break
            line = line[m.end() :]
        stripped = line.strip()
        indent = len(line) - len(line.lstrip(" "))

        if not stripped:
            flush_para()
            prev_blank = True
            item_blank = item is not None or item_blank
            continue

        if in_code:
            if indent >= 4:
                continue
            in_code = False
        if indent >= 4 and prev_blank and not para and item is None and not stack:
            in_code = True
            continue

        if _FENCE_RE.match(line) and (indent <= 3 or item is not None or stack):
            m = _FENCE_RE.match(line)
            if m.group(1)[0] == "`" and "`" in m.group(2):
                pass  # an inline code span at the start of a line, not a fence
            else:
                flush_para()
                flush_item()
                fence = (m.group(1)[0], len(m.group(1)))
                prev_blank = False
                continue

        m = _RAW_BLOCK_RE.match(line)
        if m:
            flush_para()
            end_list()
            tag = m.group(1).lower()
            if f"</{tag}>" not in line.lower():
                raw_close = f"</{tag}>"
            prev_blank = False
            continue

        m = _ATX_RE.match(line)
        if m:
            flush_para()
            end_list()
            title = _HEADING_ID_RE.sub("", m.group(2) or "")
            sink.add("heading", _md_inline(title), len(m.group(1)))
            prev_blank = False
            continue

        if para and item is None and _SETEXT_RE.match(line):
            title = " ".join(p.strip() for p in para)
            para.clear()
            sink.add("heading", _md_inline(_HEADING_ID_RE.sub("", title)), 1 if stripped[0] == "=" else 2)
            prev_blank = False
            continue

        if _HR_RE.match(line):
            flush_para()
            end_list()
            prev_blank = False
            continue

        if "|" in stripped and i < n and "|" in lines[i] and _TABLE_DELIM_RE.match(lines[i]):
            flush_para()
            end_list()
            header = _split_cells(stripped)
            if len(header) >= 1:
                sink.add("paragraph", "; ".join(c for c in (_md_inline(x) for x in header) if c))
                i += 1
                while i < n and lines[i].strip() and "|" in lines[i]:
                    cells = [_md_inline(x) for x in _split_cells(lines[i])]
                    sink.add("paragraph", "; ".join(c for c in cells if c))
                    i += 1
                prev_blank = False
                continue

        if not para and _LINKDEF_RE.match(line) and not _FOOTDEF_RE.match(line):
            continue
        if _FOOTDEF_RE.match(line):
            line = _FOOTDEF_RE.sub("", line)
            stripped = line.strip()

        m = _MD_ITEM_RE.match(line)
        if m and para:
            # CommonMark: only a non-empty bullet or an ordered item starting at 1 interrupts a paragraph
            marker = m.group("marker")
            if not (m.group("text") or "").strip() or (marker[0].isdigit() and marker[:-1] != "1"):
                m = None
        if m:
            flush_para()
            flush_item()
            marker_indent = len(m.group("indent"))
            while stack and marker_indent < stack[-1]:
                stack.pop()
            if not stack or marker_indent > stack[-1]:
                stack.append(marker_indent)
            body = _TASK_RE.sub("", (m.group("text") or "").strip())
            item = {"level": len(stack), "indent": marker_indent, "parts": [body] if body else []}
            item_blank = False
            prev_blank = False
            continue

        if item is not None:
            if not item_blank or indent > item["indent"]:
                item["parts"].append(stripped)
                item_blank = False
                prev_blank = False
                continue
            end_list()
        elif stack and prev_blank:
            if indent > stack[-1]:
                # a later paragraph of the previous item: keep it as its own paragraph
                pass
            else:
                stack.clear()
        item_blank = False
        para.append(line)
        prev_blank = False

    flush_para()
    flush_item()
    return sink.blocks


# --------------------------------------------------------------------------------------------
# HTML
# --------------------------------------------------------------------------------------------

_HTML_DROP = frozenset(
    """script style noscript nav header footer aside form template svg math iframe object embed
    canvas video audio map button select option optgroup textarea input label datalist dialog
    head title meta link base img picture source track area""".split()
)
_HTML_DROP_ROLES = frozenset({"navigation", "banner", "contentinfo", "complementary", "search", "dialog", "alertdialog"})
_HTML_BLOCKS = frozenset(
    """address article blockquote body center dd details div dl dt fieldset figcaption figure h1 h2
    h3 h4 h5 h6 header hgroup html legend li main menu ol p pre section summary ul caption td th
    tr table tbody thead tfoot""".split()
)
_HTML_LISTS = frozenset({"ul", "ol", "menu"})
_HTML_LAYOUT_INSIDE = [
    "p", "div", "ul", "ol", "table", "h1", "h2", "h3", "h4", "h5", "h6",
    "blockquote", "section", "article", "li", "pre", "dl",
]
_HIDDEN_STYLE_RE = re.compile(r"display\s*:\s*none|visibility\s*:\s*hidden", re.IGNORECASE)
_BR = "\x01"
_BR_SPLIT_RE = re.compile(r"\s*" + _BR + r"(?:\s*" + _BR + r")+\s*")


def _parse_html(text: str) -> list[Block]:
    """HTML via BeautifulSoup's stdlib "html.parser" backend.

    Dropped: script, style, noscript, nav, header (except inside <main>/<article>, where it
    usually holds the title), footer, aside, form and form controls, template, svg, media,
    and anything with the ``hidden`` attribute, ``aria-hidden="true"``, an inline
    ``display:none`` / ``visibility:hidden`` style, or a navigation/banner/footer ARIA role.
    Only <main> is read when present, else the top-level <article> elements, else <body>.
    h1-h6 are headings; li are items (depth = number of enclosing lists); p, blockquote,
    dt/dd, captions and loose text in div/section are paragraphs; two <br> in a row split a
    paragraph. Data tables give one paragraph per row, cells joined by "; " (header cells
    included); tables whose cells hold paragraphs or lists are treated as page layout and
    read like divs. <pre> holding <code> is dropped as code.
    """
    from bs4 import BeautifulSoup

    soup = BeautifulSoup(text, "html.parser")
    roots = _html_roots(soup)
    blocks = _html_walk(roots)
    body = soup.body or soup
    if not blocks and not (len(roots) == 1 and roots[0] is body):
        blocks = _html_walk([body])  # <main>/<article> held nothing readable
    return blocks


def _html_hidden(tag) -> bool:
    if tag.has_attr("hidden"):
        return True
    if str(tag.get("aria-hidden", "")).strip().lower() == "true":
        return True
    style = tag.get("style")
    if style and _HIDDEN_STYLE_RE.search(str(style)):
        return True
    role = str(tag.get("role", "")).strip().lower()
    return role in _HTML_DROP_ROLES


def _html_skip(tag) -> bool:
    name = (tag.name or "").lower()
    if _html_hidden(tag):
        return True
    if name == "header":
        return tag.find_parent(["main", "article"]) is None and tag.find_parent(attrs={"role": "main"}) is None
    return name in _HTML_DROP


def _html_usable(tag) -> bool:
    if _html_skip(tag):
        return False
    return not any(_html_skip(parent) for parent in tag.parents if parent.name not in (None, "[document]"))


def _html_roots(soup) -> list:
    for tag in soup.find_all(lambda t: t.name == "main" or str(t.get("role", "")).lower() == "main"):
        if _html_usable(tag):
            return [tag]
    articles = [
        a for a in soup.find_all("article") if a.find_parent("article") is None and _html_usable(a)
    ]
    if articles:
        return articles
    return [soup.body or soup]


@functools.cache
def _string_types() -> tuple[type, tuple[type, ...]]:
    from bs4 import element

    excluded = (element.PreformattedString,) + tuple(
        getattr(element, n) for n in ("Script", "Stylesheet", "TemplateString", "RubyParenthesisString") if hasattr(element, n)
    )
    return element.NavigableString, excluded


def _is_text_node(node) -> bool:
    """Visible text: not a comment, doctype, CDATA-like declaration, script or style string."""
    text_type, excluded = _string_types()
    return isinstance(node, text_type) and not isinstance(node, excluded)


def _html_inline_text(root) -> str:
    """Text of an element, skipping dropped parts; <br> and block boundaries become spaces."""
    from bs4.element import Tag

    parts: list[str] = []
    stack = [root]
    while stack:
        node = stack.pop()
        if isinstance(node, Tag):
            if node is not root and _html_skip(node):
                continue
            if node.name == "br" or node.name in _HTML_BLOCKS:
                parts.append(" ")
            stack.extend(reversed(node.contents))
        elif _is_text_node(node):
            parts.append(str(node))
    return _clean("".join(parts))


def _html_walk(roots: list) -> list[Block]:
    from bs4.element import Tag

    sink = _Sink()
    buf: list[str] = []
    contexts: list[tuple[str, int]] = [("paragraph", 0)]
    list_depth = 0

    def flush():
        if not buf:
            return
        raw = "".join(buf)
        buf.clear()
        kind, level = contexts[-1]
        if kind == "paragraph":
            for part in _BR_SPLIT_RE.split(raw):
                sink.add("paragraph", part.replace(_BR, " "))
        else:
            sink.add(kind, raw.replace(_BR, " "), level)

    root_ids = {id(r) for r in roots}
    stack: list[tuple[bool, object]] = [(False, r) for r in reversed(roots)]
    while stack:
        is_exit, node = stack.pop()
        if is_exit:
            name = node.name
            if name in _HTML_LISTS:
                list_depth -= 1
            if name in _HTML_BLOCKS:
                flush()
                contexts.pop()
            continue
        if not isinstance(node, Tag):
            if _is_text_node(node):
                buf.append(str(node))
            continue
        name = (node.name or "").lower()
        if id(node) not in root_ids and _html_skip(node):
            continue
        if name == "br":
            buf.append(_BR)
            continue
        if name == "hr":
            flush()
            continue
        if name == "pre" and node.find("code") is not None:
            continue
        if name == "table" and node.find(_HTML_LAYOUT_INSIDE) is None:
            flush()
            caption = node.find("caption")
            if caption is not None and not _html_skip(caption):
                sink.add("paragraph", _html_inline_text(caption))
            for row in node.find_all("tr"):
                if _html_skip(row) or (row.parent is not node and _html_skip(row.parent)):
                    continue
                cells = [
                    _html_inline_text(c) for c in row.find_all(["td", "th"], recursive=False) if not _html_skip(c)
                ]
                sink.add("paragraph", "; ".join(c for c in cells if c))
            continue
        if name in _HTML_BLOCKS:
            flush()
            if name in ("h1", "h2", "h3", "h4", "h5", "h6"):
                contexts.append(("heading", int(name[1])))
            elif name == "li":
                contexts.append(("item", max(list_depth, 1)))
            else:
                contexts.append(("paragraph", 0))
        if name in _HTML_LISTS:
            list_depth += 1
        stack.append((True, node))
        stack.extend((False, child) for child in reversed(node.contents))
    flush()
    return sink.blocks


# --------------------------------------------------------------------------------------------
# PDF
# --------------------------------------------------------------------------------------------

_LIGATURES = str.maketrans({"\ufb00": "ff", "\ufb01": "fi", "\ufb02": "fl", "\ufb03": "ffi", "\ufb04": "ffl", "\ufb05": "st", "\ufb06": "st"})
_HYPHEN_BREAK_RE = re.compile(r"(\w)[-\u00ad][ \t]*\n[ \t]*(?=[a-z])")
_PAGE_NUMBER_RE = re.compile(r"^(?:page\s+)?\d{1,4}(?:\s*(?:of|/)\s*\d{1,4})?$|^[-\u2013]\s*\d{1,4}\s*[-\u2013]$", re.IGNORECASE)


@contextlib.contextmanager
def _quiet_pypdf():
    """pypdf logs warnings about sloppy PDFs; keep them off the user's terminal."""
    import logging
    import warnings

    logger = logging.getLogger("pypdf")
    old = logger.level
    logger.setLevel(logging.ERROR)
    try:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            yield
    finally:
        logger.setLevel(old)


def _read_pdf(data: bytes, name: str) -> list[Block]:
    """Text of each page via pypdf, page-number lines dropped, hyphenated line breaks
    joined ("wa-/ter" -> "water", only before a lower-case letter), then the plain-text
    rules. A paragraph cut by a page break is rejoined when the page ends mid-sentence and
    the next starts in lower case."""
    import io

    if b"%PDF-" not in data[:1024]:
        raise ReadError(f"{name} is not a valid PDF (no PDF header); check that the file is really a PDF")
    try:
        from pypdf import PdfReader
        from pypdf.errors import DependencyError, FileNotDecryptedError
    except ImportError as exc:  # pragma: no cover - dependency is declared
        raise ReadError(f"cannot read {name}: pypdf is not installed ({_reason(exc)}); reinstall boildown") from None

    aes = (
        f"{name} is encrypted with AES, which needs the 'cryptography' package; "
        "install it (pip install cryptography) or save an unlocked copy"
    )
    pages: list[str] = []
    with _quiet_pypdf():
        try:
            reader = PdfReader(io.BytesIO(data), strict=False)
            if reader.is_encrypted:
                try:
                    ok = reader.decrypt("")
                except DependencyError:
                    raise ReadError(aes) from None
                except Exception:
                    ok = 0
                if not ok:
                    raise ReadError(f"{name} is password-protected; remove the password (save an unlocked copy) and try again")
            count = len(reader.pages)
        except ReadError:
            raise
        except FileNotDecryptedError:
            raise ReadError(f"{name} is password-protected; remove the password (save an unlocked copy) and try again") from None
        except DependencyError:
            raise ReadError(aes) from None
        except Exception as exc:
            raise ReadError(f"{name} is damaged or not a valid PDF ({_reason(exc)}); re-export it or try another copy") from None
        if count == 0:
            raise ReadError(f"{name} has no pages; re-export it or try another copy")
        for number in range(count):
            try:
                page_text = _pdf_page_text(reader.pages[number])
            except FileNotDecryptedError:
                raise ReadError(f"{name} is password-protected; remove the password and try again") from None
            except DependencyError:
                raise ReadError(aes) from None
            except Exception as exc:
                raise ReadError(
                    f"{name}: text on page {number + 1} could not be extracted ({_reason(exc)}); the PDF may be damaged"
                ) from None
            pages.append(_clean_pdf_page(page_text))

    if not any(p.strip() for p in pages):
        raise ReadError(
            f"{name} has no extractable text (scanned image?); run OCR on it first or use a text version"
        )
    combined = ""
    for page in pages:
        if not page.strip():
            continue
        if combined and not _SENTENCE_END_RE.search(combined.rstrip()) and page.lstrip()[:1].islower():
            combined = combined.rstrip() + "\n" + page.lstrip()
        else:
            combined = (combined + "\n\n" + page) if combined else page
    blocks = _parse_plain(_prepare(combined))
    if not blocks:
        raise ReadError(f"{name} has no extractable text (scanned image?); run OCR on it first or use a text version")
    return blocks


_PARAGRAPH_GAP = 1.6  # a vertical gap this many times the usual line spacing = blank line


def _pdf_page_text(page) -> str:
    """A page's text, with a blank line wherever the vertical gap between two lines is
    clearly larger than the page's usual line spacing (pypdf itself emits no blank lines).
    Falls back to pypdf's plain text when the positioned pieces do not add up to it."""
    chunks: list[tuple[str, float]] = []

    def visit(text, cm, tm, font_dict, font_size):
        if text:
            chunks.append((text, tm[4] * cm[1] + tm[5] * cm[3] + cm[5]))

    plain = page.extract_text(visitor_text=visit) or ""
    if _clean("".join(t for t, _ in chunks)) != _clean(plain):
        return plain
    lines: list[tuple[str, float | None]] = []
    text_so_far, y_start = "", None
    for text, y in chunks:
        for k, part in enumerate(text.split("\n")):
            if k > 0:
                lines.append((text_so_far, y_start))
                text_so_far, y_start = "", None
            if part and not text_so_far and y_start is None and k == 0:
                y_start = y
            text_so_far += part
    if text_so_far:
        lines.append((text_so_far, y_start))
    gaps: list[float | None] = [None]
    for (_, y0), (_, y1) in zip(lines, lines[1:]):
        gaps.append(y0 - y1 if y0 is not None and y1 is not None else None)
    usual = sorted(g for g in gaps if g is not None and g > 0)
    if not usual:
        return plain
    spacing = usual[len(usual) // 2]
    out: list[str] = []
    for (text, _), gap in zip(lines, gaps):
        if gap is not None and gap > _PARAGRAPH_GAP * spacing and out:
            out.append("")
        out.append(text)
    return "\n".join(out)


def _clean_pdf_page(text: str) -> str:
    text = text.translate(_LIGATURES).replace("\r\n", "\n").replace("\r", "\n")
    lines = text.split("\n")
    while lines and (not lines[0].strip() or _PAGE_NUMBER_RE.match(lines[0].strip())):
        lines.pop(0)
    while lines and (not lines[-1].strip() or _PAGE_NUMBER_RE.match(lines[-1].strip())):
        lines.pop()
    return _HYPHEN_BREAK_RE.sub(r"\1", "\n".join(lines))


# --------------------------------------------------------------------------------------------
# DOCX
# --------------------------------------------------------------------------------------------

_DOCX_HEADING_RE = re.compile(r"^heading\s*(\d)$", re.IGNORECASE)
_DOCX_LIST_LEVEL_RE = re.compile(r"(\d)\s*$")


def _read_docx(data: bytes, name: str) -> list[Block]:
    """Body paragraphs and tables in order via python-docx.

    Styles "Title" and "Heading N" (or a style based on one, or an outline level) give
    headings; paragraphs with list numbering or a "List ..." style give items (depth from the
    numbering level or the style's trailing digit); tables give one paragraph per row, cells
    joined by "; " (merged cells counted once). Headers, footers, footnotes, comments and text
    boxes are not read.
    """
    import io
    import zipfile

    if not zipfile.is_zipfile(io.BytesIO(data)):
        raise ReadError(f"{name} is not a valid DOCX file (not a ZIP package); re-save it from the word processor as .docx")
    try:
        import docx
        from docx.table import Table
        from docx.text.paragraph import Paragraph
    except ImportError as exc:  # pragma: no cover - dependency is declared
        raise ReadError(f"cannot read {name}: python-docx is not installed ({_reason(exc)}); reinstall boildown") from None

    sink = _Sink()
    try:
        document = docx.Document(io.BytesIO(data))
        for part in document.iter_inner_content():
            if isinstance(part, Paragraph):
                kind, level = _docx_kind(part)
                sink.add(kind, part.text, level)
            elif isinstance(part, Table):
                for row in part.rows:
                    seen: list = []
                    texts: list[str] = []
                    for cell in row.cells:
                        if any(cell._tc is s for s in seen):
                            continue
                        seen.append(cell._tc)
                        cell_text = _clean(cell.text)
                        if cell_text:
                            texts.append(cell_text)
                    sink.add("paragraph", "; ".join(texts))
    except ReadError:
        raise
    except Exception as exc:
        raise ReadError(f"{name} is damaged or not a valid DOCX file ({_reason(exc)}); re-save it from the word processor") from None
    if not sink.blocks:
        raise ReadError(f"{name} contains no text; check that it is the right document")
    return sink.blocks


def _docx_kind(paragraph) -> tuple[str, int]:
    from docx.oxml.ns import qn

    style = paragraph.style
    depth = 0
    while style is not None and depth < 8:
        style_name = (style.name or "").strip()
        if style_name.lower() == "title":
            return "heading", 1
        m = _DOCX_HEADING_RE.match(style_name) or _DOCX_HEADING_RE.match(style.style_id or "")
        if m and m.group(1) != "0":
            return "heading", min(int(m.group(1)), 6)
        style = style.base_style
        depth += 1

    p_pr = paragraph._p.pPr
    if p_pr is not None:
        outline = p_pr.find(qn("w:outlineLvl"))
        if outline is not None:
            value = outline.get(qn("w:val"))
            if value is not None and value.isdigit() and int(value) < 6:
                return "heading", int(value) + 1
        num_pr = p_pr.numPr
        if num_pr is not None and num_pr.numId is not None and num_pr.numId.val != 0:
            ilvl = num_pr.ilvl.val if num_pr.ilvl is not None else 0
            return "item", int(ilvl) + 1

    style_name = (paragraph.style.name or "") if paragraph.style is not None else ""  # the loop above walked base styles
    if style_name.lower().startswith("list"):
        m = _DOCX_LIST_LEVEL_RE.search(style_name)
        return "item", int(m.group(1)) if m else 1
    return "paragraph", 0


def read_candidates(specs, stdin_text: str | None = None) -> list[tuple[str, str]]:
    """Candidate summaries as (name, text): files of any readable format, "-" for standard
    input, or a .jsonl file with one JSON object per line holding "text" (or "summary") and
    optionally "name" (or "id"). Empty candidates are kept (they score zero)."""
    import json

    out: list[tuple[str, str]] = []
    for spec in specs:
        spec = str(spec)
        if spec == "-":
            text = stdin_text or ""
            out.append(("stdin", " ".join(text.split()) and parse_text(text).text))
            continue
        if spec.lower().endswith(".jsonl"):
            path = Path(spec)
            if not path.is_file():
                raise ReadError(f"'{spec}' does not exist; give a path to a JSON-lines file of candidates")
            for n, line in enumerate(path.read_text(encoding="utf-8", errors="replace").splitlines(), 1):
                if not line.strip():
                    continue
                try:
                    record = json.loads(line)
                    text = record.get("text", record.get("summary"))
                except (ValueError, AttributeError):
                    record, text = None, None
                if not isinstance(text, str):
                    raise ReadError(
                        f"'{spec}' line {n} is not a JSON object with a \"text\" field; "
                        'write one {"name": ..., "text": ...} per line'
                    )
                name = str(record.get("name", record.get("id", f"{path.stem}:{n}")))
                out.append((name, " ".join(text.split())))
            continue
        try:
            out.append((Path(spec).name, read_document(spec).text))
        except ReadError as exc:
            if "is empty" in str(exc):
                out.append((Path(spec).name, ""))
            else:
                raise
    return out
