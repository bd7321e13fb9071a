"""Markdown: CommonMark-like block parsing (headings, paragraphs, nested list items, block
quotes, tables) and inline markup stripped to plain text; code, comments, raw HTML blocks and
front matter are dropped.
"""

from __future__ import annotations

import html
import re

from summarize.reading.document import Block, Sink, clean

# Block structure, one line at a time. Content that is skipped: fenced code, raw HTML blocks
# whose text is not prose, comments (which may span lines).
_FENCE_RE = re.compile(r"^\s*(`{3,}|~{3,})(.*)$")
_RAW_BLOCK_RE = re.compile(r"^ {0,3}<(script|style|pre|textarea)(?:\s|>|$)", re.IGNORECASE)
# Headings (ATX "# Title {#id}", setext underlines), breaks, list items, quotes, tables and
# link or footnote definitions.
_ATX_RE = re.compile(r"^ {0,3}(#{1,6})(?:[ \t]+(.*?))?(?:[ \t]+#+)?[ \t]*$")
_SETEXT_RE = re.compile(r"^ {0,3}(=+|-+)[ \t]*$")
_HEADING_ID_RE = re.compile(r"\s*\{#[^}]*\}\s*$")
_HR_RE = re.compile(r"^ {0,3}([-*_])(?:[ \t]*\1){2,}[ \t]*$")
_MD_ITEM_RE = re.compile(r"^(?P<indent> *)(?P<marker>[-*+]|\d{1,9}[.)])(?:[ \t]+(?P<text>.*))?$")
_TASK_RE = re.compile(r"^\[[ xX]\]\s+")
_QUOTE_RE = re.compile(r"(?: {0,3}> ?)*")  # every quote marker at a line's start, in one match
_TABLE_DELIM_RE = re.compile(r"^\s*\|?\s*:?-+:?\s*(?:\|\s*:?-+:?\s*)*\|?\s*$")
_LINKDEF_RE = re.compile(r"^ {0,3}\[[^\]^]+\]:\s*\S+")
_FOOTDEF_RE = re.compile(r"^ {0,3}\[\^[^\]]+\]:\s*")

# Inline markup, removed in this order by _md_inline.
_PROTECTED = (  # text kept verbatim and hidden from the later steps: (pattern, the group holding it)
    (re.compile(r"(`+)(.+?)(?<!`)\1(?!`)"), 2),  # code spans first: no escapes inside
    (re.compile(r"\\([!\"#$%&'()*+,\-./:;<=>?@\[\\\]^_`{|}~])"), 1),  # backslash escapes
    (re.compile(r"<((?:https?|ftp|mailto):[^\s<>]+|[^\s<>@]+@[^\s<>@]+\.[A-Za-z]+)>"), 1),  # autolinks
)
_DROPPED = (  # images, footnote references
    re.compile(r"!\[[^\[\]]*\](?:\((?:[^()\s]|\([^()]*\))*(?:\s+[\"'(][^\n]*?[\"')])?\s*\)|\[[^\[\]]*\])"),
    re.compile(r"\[\^[^\[\]]+\]"),
)
_LINKS = (  # inline and reference links: their text (group 1) stays
    re.compile(r"\[([^\[\]]*)\]\((?:[^()\s]|\([^()]*\))*(?:\s+[\"'(][^\n]*?[\"')])?\s*\)"),
    re.compile(r"\[([^\[\]]+)\]\[[^\[\]]*\]"),
)
_MD_TAG_RE = re.compile(r"</?[A-Za-z][A-Za-z0-9-]*(?:\s[^<>]*)?/?>")
# Emphasis: (delimiter, opener condition, closer condition). A span's content is 1 to 500
# characters on one line, its first and last characters not spaces; the shortest span from each
# opener wins, as a lazy regular expression would take it. ``_strip_emphasis`` finds it with one
# scan of the openers and a binary search among the closers, so the time stays linear in the
# text's length however many markers never close (a bounded regex would cost 500 steps a marker).
_SPAN_MAX = 500
_MD_EMPHASIS = (
    ("**", re.compile(r"(?=\*\*\S)"), re.compile(r"(?<=\S)(?=\*\*)")),
    ("__", re.compile(r"(?<!\w)(?=__\S)"), re.compile(r"(?<=\S)(?=__(?!\w))")),
    ("*", re.compile(r"(?<![*\w])(?=\*[^\s*])"), re.compile(r"(?<=[^\s*])(?=\*(?![*\w]))")),
    ("_", re.compile(r"(?<![_\w])(?=_[^\s_])"), re.compile(r"(?<=[^\s_])(?=_(?![_\w]))")),
    ("~~", re.compile(r"(?=~~\S)"), re.compile(r"(?<=\S)(?=~~)")),
)


def _strip_emphasis(text: str, delim: str, opener: re.Pattern, closer: re.Pattern) -> str:
    """``re.sub(delim (?=\\S) (.{1,500}?) (?<=\\S) delim, r"\\1", text)`` (with each form's word
    conditions) in linear time: the same matches, left to right, never overlapping."""
    if delim not in text:
        return text
    import bisect

    closers = [m.start() for m in closer.finditer(text)]
    if not closers:
        return text
    breaks = [m.start() for m in re.finditer("\n", text)]
    width = len(delim)
    out: list[str] = []
    pos = 0
    for m in opener.finditer(text):
        start = m.start()
        if start < pos:
            continue
        body = start + width
        k = bisect.bisect_left(closers, body + 1)
        if k == len(closers) or closers[k] - body > _SPAN_MAX:
            continue
        end = closers[k]
        b = bisect.bisect_left(breaks, body)
        if b < len(breaks) and breaks[b] < end:
            continue  # "." does not cross a line end
        out += (text[pos:start], text[body:end])
        pos = end + width
    out.append(text[pos:])
    return "".join(out)


def _md_inline(text: str) -> str:
    """Strip inline Markdown: code backticks, emphasis, links (keep text), images (drop)."""
    saved: list[str] = []

    def keep(s: str) -> str:
        saved.append(s)
        return f"\x00{len(saved) - 1}\x00"

    for pattern, group in _PROTECTED:
        text = pattern.sub(lambda m, g=group: keep(m.group(g).strip()), text)
    for pattern in _DROPPED:
        text = pattern.sub("", text)
    for _ in range(3):  # links may contain emphasis and vice versa
        for pattern in _LINKS:
            text = pattern.sub(r"\1", text)
    text = _MD_TAG_RE.sub(lambda m: " " if m.group(0).lower().startswith("<br") else "", text)
    for _ in range(4):
        before = text
        for delim, opener, closer in _MD_EMPHASIS:
            text = _strip_emphasis(text, delim, opener, closer)
        if text == before:
            break
    text = html.unescape(text)
    for _ in range(3):  # an autolink may hold an escaped character's placeholder
        if "\x00" not in text:
            break
        text = re.sub(r"\x00(\d+)\x00", lambda m: saved[int(m.group(1))], text)
    return clean(text)


def _strip_comments(line: str) -> tuple[str, bool]:
    """The line without its HTML comments, and whether a comment stays open at its end. One
    left-to-right scan with ``str.find`` (a ``<!--.*?-->`` regex is quadratic when many comments
    open and none closes)."""
    parts = []
    pos = 0
    while True:
        start = line.find("<!--", pos)
        if start < 0:
            parts.append(line[pos:])
            return "".join(parts), False
        parts.append(line[pos:start])
        end = line.find("-->", start + 4)
        if end < 0:
            return "".join(parts), True
        pos = end + 3


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


def parse(text: str, name: str) -> list[Block]:
    """CommonMark-like block parsing for the constructs documents use.

    Kept: ATX and setext headings, paragraphs, list items (nesting from the marker's
    indentation: deeper than the parent's marker = child), block quotes (as ordinary text),
    tables (one paragraph per row, cells joined by "; ", header row included).
    Dropped: front matter, fenced and indented code, HTML comments, raw <script>, <style>,
    <pre> and <textarea> blocks, thematic breaks, link reference definitions.
    """
    sink = Sink()
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
            raw, in_comment = _strip_comments(raw)
            if not raw.strip():
                continue

        line = raw[_QUOTE_RE.match(raw).end() :]
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
