"""Bytes to text: byte-order marks, strict UTF-8, a declared HTML charset, a charset guess
(charset-normalizer, with Windows-1252 winning ties), refusal of binary data, and the
normalisation every text format gets before parsing (``prepare``: newlines, Unicode NFC,
invisible characters dropped).
"""

from __future__ import annotations

import codecs
import re
import unicodedata

from summarize.reading.document import INVISIBLE, ReadError, reason

_BINARY_SNIFF = 8192
_CONTROL_SHARE_LIMIT = 0.10  # more than 10% control characters in the first 8 KB = binary

_BOMS = (
    (codecs.BOM_UTF32_LE, "utf-32"),
    (codecs.BOM_UTF32_BE, "utf-32"),
    (codecs.BOM_UTF8, "utf-8-sig"),
    (codecs.BOM_UTF16_LE, "utf-16"),
    (codecs.BOM_UTF16_BE, "utf-16"),
)
_ALLOWED_CONTROLS = frozenset("\t\n\r\f\v")
# As browsers do: Latin-1 and ASCII labels mean Windows-1252 in practice.
_WESTERN_LABELS = frozenset(
    "iso-8859-1 iso8859-1 latin1 latin-1 l1 us-ascii ascii windows-1252 cp1252".split()
)
_META_CHARSET_RE = re.compile(rb"""<meta[^>]+charset\s*=\s*["']?\s*([A-Za-z0-9_.:-]+)""", re.IGNORECASE)


def decode_bytes(data: bytes) -> tuple[str, str]:
    """Decode file bytes to text; returns ``(text, encoding)``.

    Order: a byte-order mark (UTF-32, UTF-8, UTF-16) wins; then strict UTF-8; then
    charset-normalizer's best guess. Binary data (a NUL byte in the first 8 KB, or more than
    10% control characters) and undecodable data raise ``ReadError``.
    """
    return decode(bytes(data), "the data", None)


def decode(data: bytes, name: str, hint: str | None) -> tuple[str, str]:
    """``decode_bytes`` with ``name`` (how messages name the data) and ``hint`` (a charset the
    data declares, tried after UTF-8 and before the guess)."""
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
        _refuse_binary(name, "it contains NUL bytes")
    if _too_many_controls(head.decode("ascii", "replace")):  # bytes >= 128 become U+FFFD, not controls
        _refuse_binary(name, "many control characters")

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
        raise ReadError(f"{name} could not be decoded ({reason(exc)}); re-save it as UTF-8") from None
    if guess is None:
        raise ReadError(f"{name} is not in a text encoding that could be recognised; re-save it as UTF-8")
    text, encoding = guess
    _refuse_control_heavy(text[:_BINARY_SNIFF], name)
    return text, encoding


def html_declared_charset(data: bytes) -> str | None:
    """The charset an HTML page names in a <meta> tag within its first 4 KB, if any."""
    match = _META_CHARSET_RE.search(data[:4096])
    return match.group(1).decode("ascii", "ignore") if match else None


def prepare(text: str) -> str:
    """Normalise newlines, Unicode composition and invisible characters before parsing."""
    text = text.replace("\r\n", "\n").replace("\r", "\n").replace("\f", "\n\n")
    text = text.replace("\u2028", "\n").replace("\u2029", "\n\n")
    return unicodedata.normalize("NFC", text.translate(INVISIBLE))


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


def _too_many_controls(sample: str) -> bool:
    """More than 10% of ``sample`` is control characters other than whitespace."""
    controls = sum(1 for c in sample if c not in _ALLOWED_CONTROLS and unicodedata.category(c) == "Cc")
    return controls > _CONTROL_SHARE_LIMIT * len(sample)


def _refuse_binary(name: str, evidence: str) -> None:
    raise ReadError(f"{name} looks like a binary file ({evidence}), not text; give a text document")


def _refuse_control_heavy(sample: str, name: str) -> None:
    if not sample:
        return
    if "\x00" in sample:
        _refuse_binary(name, "it contains NUL characters")
    if _too_many_controls(sample):
        _refuse_binary(name, "many control characters")


def _charset_candidates(label: str) -> list[str]:
    label = label.strip().lower()
    if label in _WESTERN_LABELS:
        return ["cp1252", "latin-1"]
    try:
        return [codecs.lookup(label).name]
    except LookupError:
        return []
