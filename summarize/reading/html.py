"""HTML: the main content of a page (via BeautifulSoup's stdlib "html.parser" backend) as
headings, paragraphs, list items and table rows; navigation, scripts, forms and hidden
elements are dropped.
"""

from __future__ import annotations

import functools
import re

from summarize.reading.document import Block, Sink, clean

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


def parse(text: str, name: str) -> list[Block]:
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
    return clean("".join(parts))


def _html_walk(roots: list) -> list[Block]:
    from bs4.element import Tag

    sink = Sink()
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
