"""DOCX: body paragraphs and tables in order via python-docx, with headings and list items
taken from paragraph styles, outline levels and numbering.
"""

from __future__ import annotations

import re

from summarize.reading.document import Block, ReadError, Sink, clean, format_size, reason

_DOCX_HEADING_RE = re.compile(r"^heading\s*(\d)$", re.IGNORECASE)
_DOCX_LIST_LEVEL_RE = re.compile(r"(\d)\s*$")
MAX_UNPACKED = 256 * 1024 * 1024
"""A DOCX whose parts would unpack to more than this is refused before any is unpacked (the
sizes come from the ZIP directory, and Python's zipfile never inflates past a declared size):
a decompression bomb costs nothing. Ordinary documents unpack to a few MB."""


def parse(data: bytes, name: str) -> list[Block]:
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
        unpacked = sum(info.file_size for info in zipfile.ZipFile(io.BytesIO(data)).infolist())
    except (zipfile.BadZipFile, ValueError, OSError) as exc:
        raise ReadError(f"{name} is damaged or not a valid DOCX file ({reason(exc)}); re-save it from the word "
                        "processor") from None
    if unpacked > MAX_UNPACKED:
        raise ReadError(f"{name} would unpack to {format_size(unpacked)} (limit {format_size(MAX_UNPACKED)}), far "
                        "more than a document's text; check the file (a decompression bomb?) or save it again")
    try:
        import docx
        from docx.table import Table
        from docx.text.paragraph import Paragraph
    except ImportError as exc:  # pragma: no cover - dependency is declared
        raise ReadError(f"cannot read {name}: python-docx is not installed ({reason(exc)}); reinstall boildown") from None

    sink = Sink()
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
                        cell_text = clean(cell.text)
                        if cell_text:
                            texts.append(cell_text)
                    sink.add("paragraph", "; ".join(texts))
    except (ReadError, MemoryError):
        raise  # MemoryError: the caller's memory limit words it
    except Exception as exc:
        raise ReadError(f"{name} is damaged or not a valid DOCX file ({reason(exc)}); re-save it from the word processor") from None
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
