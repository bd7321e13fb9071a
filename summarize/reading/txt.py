"""Plain text: blocks from blank lines, hard-wrapped lines joined (reflow), and headings and
list items recovered by rules of thumb (documented on ``parse``), since plain text carries no
markup. Text extracted from PDFs is read with the same rules.
"""

from __future__ import annotations

import re

from summarize.reading.document import Block, Sink

_SEPARATOR_RE = re.compile(r"^(?:([=\-_*~#+])\1{2,}|(?:[*\-_] ){2,}[*\-_])$")
_BULLET_RE = re.compile(
    r"^(?P<indent>\s*)(?P<marker>[-*\u2022\u25e6\u2023\u25aa\u2013\u00b7]|\(?[a-z]\)|\(?[ivx]{2,4}\)|\(?\d{1,3}\)|\d{1,3}\.)"
    r"\s+(?P<text>\S.*)$"
)
_MULTI_NUMBER_RE = re.compile(r"^(?P<num>\d{1,3}(?:\.\d{1,3})+)\.?\s+(?P<text>\S.*)$")
SENTENCE_END_RE = re.compile(r"[.!?:;][\"'\u201d\u2019)\]]*$")
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
                indents[i + 1] > base_indent and indents[i] == base_indent and SENTENCE_END_RE.search(cur) is not None
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


def parse(text: str, name: str) -> list[Block]:
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
    sink = Sink()
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
                bool(pending) and SENTENCE_END_RE.search(pending[-1]) is not None and item is None
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
        return SENTENCE_END_RE.search(stripped[0]) is not None
    paras = _reflow(rest)
    return len(paras) < len(stripped)
