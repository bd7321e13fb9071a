"""The entry points: ``read`` (a path or bytes in memory), ``read_document`` (a path) and
``parse_text`` (text in memory) turn their input into a ``Document``.

This module owns the checks between "a path the user typed" and "bytes of a known format"
(missing, directory, permission, size, empty, unsupported extension) and hands the bytes to
the format's reader (``formats.TABLE``); text formats are decoded first (``decode``). No
library traceback escapes: every failure is a one-line ``ReadError``.
"""

from __future__ import annotations

import os
from pathlib import Path

from summarize.reading import decode, formats
from summarize.reading.document import Document, ReadError, format_size, reason


def _max_bytes() -> int:
    """``summarize.reading.MAX_BYTES``, read at call time so tests may lower it."""
    from summarize import reading

    return reading.MAX_BYTES


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
    limit = _max_bytes()
    if len(data) > limit:
        raise ReadError(f"'{label}' is too large ({format_size(len(data))}, limit {format_size(limit)}); "
                        "split it or trim it first")
    return _from_bytes(data, fmt, name, f"'{label}'")


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
            raise ReadError(f"{name} is a directory, not a file; give the path of one document ({formats.SUPPORTED})")
        if not p.is_file():
            raise ReadError(f"{name} is not a regular file; give the path of a saved document")
        fmt = format or _format_of(p.suffix.lower(), name)
        limit = _max_bytes()
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
        raise ReadError(f"{name} is not a usable path ({reason(exc)}); check the path") from None
    except OSError as exc:
        raise ReadError(f"{name} cannot be read ({reason(exc)}); check the path and the disk") from None
    if len(data) > limit:
        raise ReadError(f"{name} is too large (over {format_size(limit)}); split it or trim it first")
    return _from_bytes(data, fmt, source, name)


def parse_text(text: str, format: str = "txt", source=None) -> Document:
    """Parse text already in memory. ``format`` is "txt", "md" or "html".

    Raises ``ReadError`` when the text is empty or has no readable content.
    """
    if not isinstance(text, str):
        raise ReadError(f"parse_text needs a str, not {type(text).__name__}; decode bytes with decode_bytes first")
    if format not in formats.TEXT_FORMATS:
        names = [repr(f) for f in formats.TEXT_FORMATS]
        binary = " and ".join(row.label for row in formats.TABLE if row.binary)
        raise ReadError(
            f"parse_text cannot parse format {format!r}; use {', '.join(names[:-1])} or {names[-1]} "
            f"(read {binary} files with read_document)"
        )
    if source is None or isinstance(source, str):
        src = source
    elif isinstance(source, (bytes, os.PathLike)):
        src = os.fsdecode(source)
    else:
        src = str(source)
    name = f"'{src}'" if src is not None else "the input text"
    return _parse_text(text, format, src, None, name)


def _format_of(suffix: str, name: str) -> str:
    fmt = formats.EXTENSIONS.get(suffix)
    if fmt is None:
        hint = formats.CONVERT_HINTS.get(suffix, "convert it to one of those")
        raise ReadError(f"{name} has an unsupported file type '{suffix}'; supported: {formats.SUPPORTED}; {hint}")
    return fmt


def _from_bytes(data: bytes, fmt: str, source: str | None, name: str) -> Document:
    """Parse a document's bytes in a known format; ``name`` is how messages name it."""
    row = formats.BY_NAME.get(fmt)
    if row is None:
        raise ReadError(f"{name}: unknown format {fmt!r}; choose one of {', '.join(formats.FORMATS)}")
    if not data.strip():
        raise ReadError(f"{name} is empty; give a file that contains text")
    if row.binary:
        return Document(formats.parser(row)(data, name), source=source, format=fmt)
    hint = decode.html_declared_charset(data) if row.meta_charset else None
    text, encoding = decode.decode(data, name, hint)
    return _parse_text(text, fmt, source, encoding, name)


def _parse_text(text: str, fmt: str, source: str | None, encoding: str | None, name: str) -> Document:
    """Parse decoded text in a text format, turning any parser failure into a ``ReadError``."""
    if not text.strip():
        raise ReadError(f"{name} is empty; give text to read")
    try:
        blocks = formats.parser(formats.BY_NAME[fmt])(decode.prepare(text), name)
    except (ReadError, MemoryError):
        raise  # MemoryError: the caller's memory limit words it
    except RecursionError:
        raise ReadError(f"{name} is nested too deeply to parse; simplify or convert it to plain text") from None
    except Exception as exc:  # never let a parser traceback escape
        raise ReadError(f"{name} could not be parsed as {fmt} ({reason(exc)}); try saving it as plain text") from None
    if not blocks:
        raise ReadError(f"{name} contains no readable text (only markup, code or hidden content)")
    return Document(tuple(blocks), source=source, format=fmt, encoding=encoding)
