"""PDF: each page's text via pypdf (with paragraph gaps from line positions, page numbers,
ligatures and hyphenated line breaks handled), then the plain-text rules of ``txt``; damaged,
encrypted and image-only PDFs give a ``ReadError``.
"""

from __future__ import annotations

import contextlib
import re

from summarize.reading import txt
from summarize.reading.decode import prepare
from summarize.reading.document import Block, ReadError, clean, reason

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


def parse(data: bytes, name: str) -> list[Block]:
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
        raise ReadError(f"cannot read {name}: pypdf is not installed ({reason(exc)}); reinstall boildown") from None

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
        except (ReadError, MemoryError):
            raise  # MemoryError: the caller's memory limit words it
        except FileNotDecryptedError:
            raise ReadError(f"{name} is password-protected; remove the password (save an unlocked copy) and try again") from None
        except DependencyError:
            raise ReadError(aes) from None
        except Exception as exc:
            raise ReadError(f"{name} is damaged or not a valid PDF ({reason(exc)}); re-export it or try another copy") from None
        if count == 0:
            raise ReadError(f"{name} has no pages; re-export it or try another copy")
        for number in range(count):
            try:
                page_text = _pdf_page_text(reader.pages[number])
            except FileNotDecryptedError:
                raise ReadError(f"{name} is password-protected; remove the password and try again") from None
            except DependencyError:
                raise ReadError(aes) from None
            except MemoryError:
                raise
            except Exception as exc:
                raise ReadError(
                    f"{name}: text on page {number + 1} could not be extracted ({reason(exc)}); the PDF may be damaged"
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
        if combined and not txt.SENTENCE_END_RE.search(combined.rstrip()) and page.lstrip()[:1].islower():
            combined = combined.rstrip() + "\n" + page.lstrip()
        else:
            combined = (combined + "\n\n" + page) if combined else page
    blocks = txt.parse(prepare(combined), name)
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
    if clean("".join(t for t, _ in chunks)) != clean(plain):
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
